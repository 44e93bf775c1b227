//! `descry propose`: draft a ruleset from a column's vocabulary.

use std::path::PathBuf;
use std::process::ExitCode;

use anyhow::{bail, Context};
use serde::Serialize;

use descry::propose::{propose, propose_more, Draft, Kinds, ProposeOptions, PROPOSE_SCHEMA};
use descry::render::{shown, thousands};
use descry::write::write_text_atomically;
use descry::{CoverageReport, Ruleset};

use super::common::{
    check_ruleset_target, column_notes, emit, json_out, parse_share, print_notes,
    read_table_vocabularies, ruleset_text, Format, InputArgs,
};

pub const ABOUT: &str = "\
Draft a ruleset from a column's distinct values.

Mines every distinct value once and proposes rules, each written with the
distinct values and rows it fires on and example values as comments:
  counts    a number next to a marker: \"6 spd\", \"4-cyl\", \"v8\", \"16F/16R\",
            \"5x1\", \"(6)\"; near-duplicate markers are grouped, and markers
            that read the same thing in different values are one count;
  measures  a number and a unit of the built-in table (length, volume,
            power, voltage, current, speed of rotation, speed, mass,
            pressure), converted to the unit written most often;
  flags     words in a useful share of rows, typos and abbreviations grouped;
  labels    words that exclude each other (one of manual / automatic / cvt),
            one case each, default \"other\";
  map       near-duplicate values (same words in any order) to one spelling.
Where two proposals read the same text of a value, the draft says so. No
feature column takes the name of a column the table already has (the rule
is named `spd_2` instead, and says why).

Then it checks the draft as `descry check` would and prints its coverage,
the values left unmatched (most rows first) and the weakest proposals.
The draft loads in `check` and `apply` unchanged; edit it from there.

With --update FILE, only the values FILE's rules leave unmatched are mined,
and the proposals are appended to FILE (or written with FILE's content to
-o), which is kept byte for byte: your rules and comments stay as they are.

Memory: proportional to the number of distinct values (the file is read
in batches, keeping only the vocabulary).

Examples:
  descry propose samples/listings.csv --column engine -o engine.draft.toml
  descry propose listings.csv -c transmission -o t.toml --kinds count,label --max-rules 10
  descry propose new-drop.csv -c engine --update rulesets/engine.toml";

#[derive(Debug, clap::Args)]
#[command(long_about = ABOUT)]
pub struct Args {
    #[command(flatten)]
    pub input: InputArgs,
    /// The column to mine (with --update: defaults to the ruleset's column).
    #[arg(long, short = 'c')]
    pub column: Option<String>,
    /// Where to write the draft. Required unless --update is given (the
    /// ruleset is then updated in place).
    #[arg(long, short = 'o')]
    pub output: Option<PathBuf>,
    /// Replace an existing -o file. Without it descry refuses, so a draft
    /// you edited is never lost.
    #[arg(long)]
    pub force: bool,
    /// Extend this ruleset: propose rules for the values it leaves unmatched
    /// and append them, keeping the file's text byte for byte.
    #[arg(long)]
    pub update: Option<PathBuf>,
    /// Which kinds to propose, comma-separated: flag, count, measure, label, map.
    #[arg(long, default_value = "flag,count,measure,label,map", value_parser = Kinds::parse)]
    pub kinds: Kinds,
    /// Propose only what fires on at least this share of rows (0.005 = 0.5%).
    #[arg(long, default_value_t = 0.005, value_parser = parse_share)]
    pub min_share: f64,
    /// ... and on at most this share (a word on nearly every row tells nothing).
    #[arg(long, default_value_t = 0.95, value_parser = parse_share)]
    pub max_share: f64,
    /// At most this many rules (at least 1); the best supported are kept.
    #[arg(long, default_value_t = 40, value_parser = parse_max_rules)]
    pub max_rules: usize,
    /// At most this many entries in the proposed label map.
    #[arg(long, default_value_t = 100)]
    pub max_map: usize,
    /// The draft's prefix for output columns (default: the column name and "_").
    #[arg(long)]
    pub prefix: Option<String>,
    /// How many leftover values and weak proposals the text report lists.
    #[arg(long, default_value_t = 10)]
    pub top: usize,
    /// Report format: human text, or JSON (schema "descry.propose/1").
    #[arg(long, value_enum, default_value_t = Format::Text)]
    pub format: Format,
    /// Print no notes on standard error.
    #[arg(long, short = 'q')]
    pub quiet: bool,
}

fn parse_max_rules(s: &str) -> Result<usize, String> {
    match s.parse::<usize>() {
        Ok(0) => Err("0 would leave the draft without rules; give at least 1".to_owned()),
        Ok(n) => Ok(n),
        Err(_) => Err(format!("{s:?} is not a whole number")),
    }
}

#[derive(Serialize)]
struct Report<'a> {
    schema: &'static str,
    output: String,
    draft: &'a Draft,
    /// With --update: the values the existing rules left unmatched.
    unmatched_before: Option<(u64, u64)>,
    check: &'a CoverageReport,
}

pub fn run(args: Args) -> anyhow::Result<ExitCode> {
    if args.min_share > args.max_share {
        bail!(
            "--min-share {} is above --max-share {}",
            args.min_share,
            args.max_share
        );
    }
    let existing = match &args.update {
        Some(path) => {
            let text = ruleset_text(path)?;
            let rules = Ruleset::from_toml(&text, &path.display().to_string())?;
            Some((rules, text))
        }
        None => None,
    };
    let output = output_path(&args)?;
    let updating_in_place = args.output.is_none();
    if output.exists() && !args.force && !updating_in_place {
        bail!(
            "{} exists; descry does not overwrite a ruleset you may have edited: give --force, or another -o",
            output.display()
        );
    }
    let column = match (&args.column, &existing) {
        (Some(c), _) => c.clone(),
        (None, Some((rules, _))) => rules.column.clone().with_context(|| {
            format!(
                "{}: the ruleset names no `column`; give --column NAME",
                rules.file
            )
        })?,
        (None, None) => bail!("say which column to mine: --column NAME"),
    };

    let (mut vocabs, table_columns) =
        read_table_vocabularies(&args.input, &[column.as_str()], args.quiet)?;
    let vocab = vocabs.remove(0);
    print_notes(
        &column_notes(vocab.rows(), vocab.distinct(), &column),
        args.quiet,
    );
    let opts = ProposeOptions {
        min_share: args.min_share,
        max_share: args.max_share,
        max_rules: args.max_rules,
        kinds: args.kinds,
        max_map: args.max_map,
        prefix: args
            .prefix
            .clone()
            .unwrap_or_else(|| format!("{}_", descry::propose::rule_name(&column))),
        // A --counts table holds only the described column's values; the
        // table the draft is applied to has at least that column.
        columns: table_columns.unwrap_or_else(|| vec![column.clone()]),
        ..ProposeOptions::default()
    };
    let (draft, text, unmatched_before) = match &existing {
        Some((rules, text)) => {
            let ext = propose_more(&vocab, &column, rules, text, &opts)?;
            let before = Some((ext.unmatched_distinct, ext.unmatched_rows));
            (ext.draft, ext.text, before)
        }
        None => {
            let draft = propose(&vocab, &column, &opts)?;
            let text = draft.to_toml();
            (draft, text, None)
        }
    };
    write_text_atomically(&output, &text)?;

    // Check what was written, exactly as `descry check` would.
    let rules = Ruleset::from_path(&output)?;
    let eval = rules.evaluate_all(&vocab.values);
    let check = CoverageReport::build(&rules, &column, &vocab, &eval);
    match args.format {
        Format::Json => emit(
            &(json_out(&Report {
                schema: PROPOSE_SCHEMA,
                output: output.display().to_string(),
                draft: &draft,
                unmatched_before,
                check: &check,
            })? + "\n"),
        )?,
        Format::Text => emit(&report_text(
            &draft,
            &check,
            &output,
            unmatched_before,
            args.top,
        ))?,
    }
    Ok(ExitCode::SUCCESS)
}

/// Where the draft goes: -o, or the --update ruleset itself, which is the
/// one file `propose` may rewrite in place. Checked before any work: -o may
/// not be the input table or the --update ruleset (leave -o out to update
/// it in place), nor a folder or a read-only file.
fn output_path(args: &Args) -> anyhow::Result<PathBuf> {
    let table = args.input.input.as_path();
    match (&args.output, &args.update) {
        (Some(o), update) => {
            let mut inputs = vec![table];
            inputs.extend(update.as_deref());
            check_ruleset_target(o, &inputs)?;
            Ok(o.clone())
        }
        (None, Some(u)) => {
            check_ruleset_target(u, &[table])?;
            Ok(u.clone())
        }
        (None, None) => bail!(
            "say where to write the draft: -o draft.toml (or extend a ruleset with --update FILE)"
        ),
    }
}

fn report_text(
    draft: &Draft,
    check: &CoverageReport,
    output: &std::path::Path,
    unmatched_before: Option<(u64, u64)>,
    top: usize,
) -> String {
    use std::fmt::Write;
    let mut out = String::new();
    match unmatched_before {
        Some((distinct, rows)) => {
            let outcome = if draft.proposals.is_empty() {
                format!("{} is unchanged", output.display())
            } else {
                format!("appended to {}", output.display())
            };
            let _ = writeln!(
                out,
                "{} rules proposed for the {} values ({} rows) the existing rules left unmatched; {outcome}",
                draft.proposals.len(),
                thousands(distinct),
                thousands(rows),
            );
        }
        None => {
            let _ = writeln!(
                out,
                "{} rules proposed from {} distinct values ({} rows) of column {}; written to {}",
                draft.proposals.len(),
                thousands(draft.distinct_considered),
                thousands(draft.rows_considered),
                shown(&draft.column),
                output.display()
            );
        }
    }
    if draft.proposals.is_empty() {
        let _ = writeln!(
            out,
            "nothing to propose: no word, unit or numbered marker fires on --min-share of the rows; \
             lower --min-share, or see what the column holds with `descry survey`"
        );
    }
    let c = &check.coverage;
    let _ = writeln!(
        out,
        "coverage of the ruleset now: {:.2}% of rows ({} of {}), {:.2}% of distinct values",
        c.row_share * 100.0,
        thousands(c.rows_covered),
        thousands(c.rows_considered),
        c.distinct_share * 100.0
    );
    let _ = writeln!(out, "\nproposals (rows hit as checked):");
    for p in &draft.proposals {
        let hit = check
            .rules
            .iter()
            .find(|r| r.name == p.name)
            .map_or(0, |r| r.rows_hit);
        let _ = writeln!(
            out,
            "  {:<8} {:<24} {:>10} rows",
            p.rule.kind(),
            p.name,
            thousands(hit)
        );
    }
    let mut weakest: Vec<_> = check
        .rules
        .iter()
        .filter(|r| draft.proposals.iter().any(|p| p.name == r.name))
        .collect();
    weakest.sort_by(|a, b| {
        a.rows_hit
            .cmp(&b.rows_hit)
            .then_with(|| a.name.cmp(&b.name))
    });
    let _ = writeln!(out, "\nweakest proposals:");
    for r in weakest.iter().take(top.min(5)) {
        let _ = writeln!(
            out,
            "  {} ({}): {} rows, {} distinct values",
            r.name,
            r.kind,
            thousands(r.rows_hit),
            thousands(r.distinct_hit)
        );
    }
    if !draft.overlaps.is_empty() {
        let _ = writeln!(
            out,
            "\nproposals that read the same text (noted in the draft):"
        );
        for o in draft.overlaps.iter().take(top) {
            let _ = writeln!(
                out,
                "  {} and {}: {} values ({} rows), e.g. {}",
                o.first,
                o.second,
                thousands(o.distinct),
                thousands(o.rows),
                shown(&o.example)
            );
        }
    }
    let _ = writeln!(out, "\nleft unmatched, most rows first:");
    if check.unmatched.is_empty() {
        let _ = writeln!(out, "  (nothing)");
    }
    for v in check.unmatched.iter().take(top) {
        let _ = writeln!(out, "  {:>8}  {}", thousands(v.rows), shown(&v.value));
    }
    if check.unmatched.len() > top {
        let _ = writeln!(
            out,
            "  ... {} more (descry check lists them)",
            thousands((check.unmatched.len() - top) as u64)
        );
    }
    out
}
