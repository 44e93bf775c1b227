//! `descry lookup`: one row per distinct value of a column, with its row
//! count and its features, for an engine that holds the rows to join.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::{bail, Context};

use descry::pipeline::{lookup_table, Description, LOOKUP_ROWS as ROWS, LOOKUP_VALUE as VALUE};
use descry::render::{shown, thousands};
use descry::write::{check_output_path, sha256_hex, write_parquet_with_metadata, write_table};

use super::common::{load_descriptions, read_vocabularies, ruleset_text, InputArgs};

pub const ABOUT: &str = "\
Write the lookup table of a column: one row per distinct non-null value,
with the columns `value` (the text as read), `rows` (how many rows hold it)
and the features of the rulesets, in the types `apply` writes.

Rules run once per distinct value, so an engine that holds the rows (a
database, a cluster) only has to count values and join: join this table to
the rows on `value` and you get exactly the features `apply` writes. A null
value has no row here; a left join gives it null features, as `apply` does.
Blank values and placeholders have rows, with null features.

The input is the raw rows, or with --counts COLUMN a vocabulary table (one
row per distinct value and its row count, as `GROUP BY` makes it).

With rulesets on several columns, -o names a folder, which is created if
needed, and each column's table is written there as COLUMN.parquet (letters,
digits, `-`, `_` and `.` kept, any other character written as `_`).

Memory: the column's vocabulary and each distinct value's features.

Examples:
  descry lookup samples/listings.csv -r rulesets/engine.toml -o engine.lookup.parquet
  descry lookup engine_counts.parquet --counts rows -r rulesets/engine.toml -o engine.lookup.parquet
  descry lookup samples/listings.csv -r rulesets/engine.toml -r rulesets/transmission.toml -o lookups/";

#[derive(Debug, clap::Args)]
#[command(long_about = ABOUT)]
pub struct Args {
    #[command(flatten)]
    pub input: InputArgs,
    /// A ruleset (TOML); repeat for several (on several columns, -o is a
    /// folder).
    #[arg(long, short = 'r', required = true)]
    pub rules: Vec<PathBuf>,
    /// The lookup table (.parquet, .arrow/.ipc/.feather, .csv, .tsv), or a
    /// folder when the rulesets describe several columns.
    #[arg(long, short = 'o')]
    pub output: PathBuf,
    /// The source column, when a single ruleset is given; overrides its `column`.
    #[arg(long, short = 'c')]
    pub column: Option<String>,
    /// Print no summary or notes.
    #[arg(long, short = 'q')]
    pub quiet: bool,
}

pub fn run(args: Args) -> anyhow::Result<ExitCode> {
    let mut columns: Vec<(String, Vec<Description>)> = Vec::new();
    for description in load_descriptions(&args.rules, args.column.as_deref())? {
        check_names(&description.rules)?;
        match columns.iter_mut().find(|(c, _)| *c == description.column) {
            Some((_, group)) => group.push(description),
            None => columns.push((description.column.clone(), vec![description])),
        }
    }
    let outputs = output_paths(&args, &columns)?;
    let names: Vec<&str> = columns.iter().map(|(c, _)| c.as_str()).collect();
    let vocabs = read_vocabularies(&args.input, &names, args.quiet)?;
    for (((column, descriptions), vocab), output) in columns.into_iter().zip(&vocabs).zip(&outputs)
    {
        let rulesets: Vec<&descry::Ruleset> = descriptions.iter().map(|d| &d.rules).collect();
        let frame = lookup_table(vocab, &rulesets)?;
        let format = descry::write::OutputFormat::of(output)?;
        let features = frame.width() - 2;
        if format == descry::write::OutputFormat::Parquet {
            let facts = lookup_facts(&column, &descriptions, &args.rules)?;
            write_parquet_with_metadata(output, frame, LOOKUP_KEY, facts)?;
        } else {
            write_table(frame, output, format)?;
        }
        if !args.quiet {
            eprintln!(
                "wrote {} values ({} rows) of column {} with {features} features to {}",
                thousands(vocab.distinct() as u64),
                thousands(vocab.counts.iter().sum()),
                shown(&column),
                output.display()
            );
        }
    }
    Ok(ExitCode::SUCCESS)
}

/// The Parquet metadata key of a lookup table's facts.
pub const LOOKUP_KEY: &str = "descry.lookup";

/// What a lookup table records about how it was made, as JSON: the column,
/// each ruleset's path and the SHA-256 of its bytes, and descry's version,
/// so that a join with another ruleset's features can be noticed.
fn lookup_facts(
    column: &str,
    descriptions: &[Description],
    paths: &[std::path::PathBuf],
) -> anyhow::Result<String> {
    let mut rulesets = Vec::new();
    for d in descriptions {
        let path = paths
            .iter()
            .find(|p| p.display().to_string() == d.rules.file)
            .context("a ruleset's path was lost")?;
        rulesets.push(serde_json::json!({
            "path": d.rules.file,
            "sha256": sha256_hex(ruleset_text(path)?.as_bytes()),
        }));
    }
    Ok(serde_json::json!({
        "schema": "descry.lookup/1",
        "column": column,
        "rulesets": rulesets,
        "descry_version": env!("CARGO_PKG_VERSION"),
    })
    .to_string())
}

/// A feature may not be named like the lookup table's own columns.
fn check_names(rules: &descry::Ruleset) -> anyhow::Result<()> {
    if let Some(f) = rules
        .features
        .iter()
        .find(|f| f.output == VALUE || f.output == ROWS)
    {
        bail!(
            "{}:{}: rule [[{}]] \"{}\" would write column \"{}\", which the lookup table uses for itself; \
             rename the rule or set a `prefix` in the ruleset",
            rules.file,
            f.line,
            f.rule.kind(),
            f.name,
            f.output
        );
    }
    Ok(())
}

/// Where each column's table goes: -o itself for one column; for several,
/// a file per column in the folder -o. Checked before anything is read.
fn output_paths(
    args: &Args,
    columns: &[(String, Vec<Description>)],
) -> anyhow::Result<Vec<PathBuf>> {
    let inputs: Vec<&Path> = std::iter::once(args.input.input.as_path())
        .chain(args.rules.iter().map(PathBuf::as_path))
        .collect();
    if columns.len() == 1 {
        check_output_path(&args.output, &inputs)?;
        return Ok(vec![args.output.clone()]);
    }
    let listed: Vec<String> = columns.iter().map(|(c, _)| shown(c)).collect();
    if !args.output.is_dir() && descry::write::OutputFormat::of(&args.output).is_ok() {
        bail!(
            "{}: the rulesets describe {} columns ({}), and lookup writes one table per column; \
             give a folder as -o (each table is then named COLUMN.parquet)",
            args.output.display(),
            columns.len(),
            listed.join(", ")
        );
    }
    if args.output.exists() && !args.output.is_dir() {
        bail!(
            "{}: is a file; with rulesets on several columns, -o names a folder (each table is written \
             there as COLUMN.parquet)",
            args.output.display()
        );
    }
    std::fs::create_dir_all(&args.output).map_err(|e| descry::Error::Output {
        path: args.output.clone(),
        message: format!("cannot create the folder: {e}"),
    })?;
    let mut paths: Vec<PathBuf> = Vec::new();
    for (column, _) in columns {
        let path = args.output.join(format!("{}.parquet", file_stem(column)));
        if let Some(i) = paths.iter().position(|p| *p == path) {
            bail!(
                "columns {} and {} would both be written to {}; rename one of them in the input",
                shown(&columns[i].0),
                shown(column),
                path.display()
            );
        }
        check_output_path(&path, &inputs)?;
        paths.push(path);
    }
    Ok(paths)
}

/// A column name as a file name: letters, digits, `-`, `_` and `.` kept,
/// anything else `_`.
fn file_stem(column: &str) -> String {
    let stem: String = column
        .chars()
        .map(|c| {
            if c.is_alphanumeric() || matches!(c, '-' | '_' | '.') {
                c
            } else {
                '_'
            }
        })
        .collect();
    match stem.trim_start_matches('.') {
        "" => "column".to_owned(),
        _ => stem,
    }
}
