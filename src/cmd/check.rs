//! `descry check`: test one or more rulesets on every distinct value of
//! their columns and report coverage, with gates for each new data drop.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::{bail, Context};
use serde::Serialize;

use descry::pipeline::lookup_table_evaluated;
use descry::render::{check_text, escaped};
use descry::report::drift::{drift, read_baseline, write_baseline, BaselineFigures, Drop};
use descry::report::html::{check_html, HtmlOptions};
use descry::report::{DriftLimits, Gate};
use descry::ruleset::ValueKind;
use descry::write::{check_not_an_input, check_output_file, write_text_atomically};
use descry::{CoverageReport, Ruleset};

use super::common::{
    column_notes, emit, json_out, load_descriptions, parse_share, print_notes,
    read_table_vocabularies, ruleset_text, taken_outputs, InputArgs,
};

pub const ABOUT: &str = "\
Test rulesets on every distinct value of their columns and report coverage.

Prints the rows, distinct values, nulls, blanks and placeholders; the share
of the rows with text (not null, blank or a placeholder) and of distinct
values on which at least one rule fires; for each rule the values and rows
it hits and the values it could not read; the unmatched values, most rows
first; conflicting label cases; rules that hit nothing; likely slips in the
ruleset; and the ruleset's [[example]] self-tests.

Gates turn the report into a check of a new data drop:
  --min-coverage 0.95         at least 95% of the rows with text covered
  --require turbo=0.02        the rule `turbo` (or its output column,
                              e.g. eng_turbo) fires on at least 2% of them
A gate fails, with a one-line reason, when its share is below the threshold
or when there is nothing to measure (no rows with text). A failing
[[example]] fails too.

Several rulesets (-r A.toml -r B.toml) are checked in one read of the
table. The JSON report is then one object of schema \"descry.checks/1\"
holding a \"descry.check/1\" report for each ruleset and every gate.

--format html writes one self-contained page (no network fetches): coverage
at a glance, a bar per rule, the unmatched values as a sortable, filterable
table, the examples and, with --baseline, the labels before and after, the
drift figures and the new values. -o FILE writes the report (any format) to
FILE, atomically, instead of standard output.

Exit codes: 0 when every gate passes; 1 when a gate or an example fails;
2 on any error (bad file, bad ruleset, a --require naming no rule).

Memory: proportional to the number of distinct values. The table is read
in batches and only the vocabulary is kept (JSON is loaded whole, one
column).

Examples:
  descry check samples/listings.csv -r rulesets/engine.toml --min-coverage 0.95
  descry check drop.parquet -r rulesets/engine.toml -r rulesets/transmission.toml \\
      --require eng_turbo=0.05 --format json
  descry check drop.csv -r rulesets/engine.toml --baseline last.parquet \\
      --format html -o report.html";

#[derive(Debug, clap::Args)]
#[command(long_about = ABOUT)]
pub struct Args {
    #[command(flatten)]
    pub input: InputArgs,
    /// A ruleset (TOML; see docs/rulesets.md); repeat to check several
    /// columns in one read.
    #[arg(long, short = 'r', required = true)]
    pub rules: Vec<PathBuf>,
    /// The column to describe, when a single ruleset is given; overrides its `column`.
    #[arg(long, short = 'c')]
    pub column: Option<String>,
    /// Report format: human text, JSON (schema "descry.check/1"; with
    /// several rulesets "descry.checks/1"), or one self-contained HTML page.
    #[arg(long, value_enum, default_value_t = ReportFormat::Text)]
    pub format: ReportFormat,
    /// Write the report to FILE (atomically) instead of standard output.
    /// Never an input, the baseline, or the file --save-baseline writes.
    #[arg(long, short = 'o', value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Fail (exit 1) when the share of covered rows with text is below this
    /// fraction, e.g. 0.95; applies to each ruleset.
    #[arg(long, value_parser = parse_share)]
    pub min_coverage: Option<f64>,
    /// Fail (exit 1) when FEATURE (a rule's name or its output column)
    /// fires on less than SHARE of the rows with text, e.g. turbo=0.02.
    /// Repeatable.
    #[arg(long, value_name = "FEATURE=SHARE", value_parser = parse_requirement)]
    pub require: Vec<(String, f64)>,
    /// Store what this run saw as a baseline for the next drop: the lookup
    /// table (each distinct value, its rows, its features) with the ruleset's
    /// SHA-256 and the coverage in its Parquet metadata. With several
    /// rulesets, a folder of RULESET-STEM.parquet files.
    #[arg(long, value_name = "PATH")]
    pub save_baseline: Option<PathBuf>,
    /// Compare with a baseline saved by an earlier --save-baseline: new and
    /// gone values, rule shares, label shares (PSI), count and measure
    /// distributions. With several rulesets, the folder --save-baseline wrote.
    #[arg(long, value_name = "PATH")]
    pub baseline: Option<PathBuf>,
    /// Fail (exit 1) when more than this share of the rows with text hold
    /// values the baseline never saw (needs --baseline).
    #[arg(long, value_parser = parse_share, requires = "baseline")]
    pub max_new_share: Option<f64>,
    /// Fail (exit 1) when more than this share of the rows with text hold
    /// new values that no rule covers (needs --baseline).
    #[arg(long, value_parser = parse_share, requires = "baseline")]
    pub max_new_uncovered_share: Option<f64>,
    /// Fail (exit 1) when a label's population stability index is above
    /// this, e.g. 0.25 (needs --baseline).
    #[arg(long, value_parser = parse_psi, requires = "baseline")]
    pub max_psi: Option<f64>,
    /// Fail (exit 1) when a rule's share of the rows with text moved by
    /// more than this, e.g. 0.05 for 5 points (needs --baseline).
    #[arg(long, value_parser = parse_share, requires = "baseline")]
    pub max_shift: Option<f64>,
    /// How many unmatched values, placeholders, issues and conflicts the
    /// text report lists (JSON lists all, the HTML page up to 1,000); 0
    /// leaves those sections out of the text.
    #[arg(long, default_value_t = 20)]
    pub top: usize,
    /// Print no notes on standard error.
    #[arg(long, short = 'q')]
    pub quiet: bool,
}

/// `check`'s report formats.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum ReportFormat {
    Text,
    Json,
    Html,
}

/// How many values each table of the HTML page lists (the JSON lists all).
const HTML_VALUES: usize = 1000;

fn parse_psi(s: &str) -> Result<f64, String> {
    match s.parse::<f64>() {
        Ok(x) if x.is_finite() && x >= 0.0 => Ok(x),
        _ => Err(format!(
            "{s:?} is not a PSI limit (a number, 0 or more, e.g. 0.25)"
        )),
    }
}

fn parse_requirement(s: &str) -> Result<(String, f64), String> {
    let Some((feature, share)) = s.rsplit_once('=') else {
        return Err(format!(
            "{s:?}: write FEATURE=SHARE, e.g. turbo=0.02 (the rule fires on at least 2% of the rows)"
        ));
    };
    if feature.trim().is_empty() {
        return Err(format!("{s:?}: the feature before `=` is empty"));
    }
    Ok((feature.trim().to_owned(), parse_share(share.trim())?))
}

/// The JSON of several rulesets' checks.
#[derive(Serialize)]
struct Checks<'a> {
    schema: &'static str,
    reports: &'a [CoverageReport],
    /// Every ruleset's gates, each with its ruleset.
    gates: Vec<RulesetGate<'a>>,
    passed: bool,
}

#[derive(Serialize)]
struct RulesetGate<'a> {
    ruleset: &'a str,
    #[serde(flatten)]
    gate: &'a Gate,
}

pub const CHECKS_SCHEMA: &str = "descry.checks/1";

pub fn run(args: Args) -> anyhow::Result<ExitCode> {
    let (rulesets, columns): (Vec<Ruleset>, Vec<String>) =
        load_descriptions(&args.rules, args.column.as_deref())?
            .into_iter()
            .map(|d| (d.rules, d.column))
            .unzip();
    let required = resolve_requirements(&rulesets, &args.require)?;
    let limits = DriftLimits {
        max_new_share: args.max_new_share,
        max_new_uncovered_share: args.max_new_uncovered_share,
        max_psi: args.max_psi,
        max_shift: args.max_shift,
    };
    let baselines = baseline_paths(args.baseline.as_deref(), &args.rules, false)?;
    let saves = baseline_paths(args.save_baseline.as_deref(), &args.rules, true)?;
    // No command writes over one of its inputs: the table, a ruleset, or
    // the baseline it compares with.
    let inputs: Vec<&Path> = std::iter::once(args.input.input.as_path())
        .chain(args.rules.iter().map(PathBuf::as_path))
        .chain(baselines.iter().flatten().map(PathBuf::as_path))
        .collect();
    for save in saves.iter().flatten() {
        check_not_an_input(save, &inputs)?;
    }
    if let Some(output) = &args.output {
        check_output_file(output)?;
        check_not_an_input(output, &inputs)?;
        if let Some(save) = saves.iter().flatten().find(|s| same_file(s, output)) {
            bail!(
                "{}: is also where --save-baseline writes {}; choose another report file",
                output.display(),
                save.display()
            );
        }
    }
    let names: Vec<&str> = columns.iter().map(String::as_str).collect();
    let (vocabs, table_columns) = read_table_vocabularies(&args.input, &names, args.quiet)?;
    // What `apply` would refuse on this table is said here (a feature may
    // replace its described column, with `apply --drop-source`). Not an
    // error: checking `apply`'s own output with its rulesets is fine.
    if let Some(table_columns) = &table_columns {
        let taken = taken_outputs(&rulesets, table_columns, |output| {
            !columns.iter().any(|c| c == output)
        });
        let notes: Vec<String> = taken
            .into_iter()
            .map(|m| format!("{m} (`apply` on this table refuses it)"))
            .collect();
        print_notes(&notes, args.quiet);
    }
    let mut reports = Vec::new();
    for ((rules, column), vocab) in rulesets.iter().zip(&columns).zip(&vocabs) {
        print_notes(
            &column_notes(vocab.rows(), vocab.distinct(), column),
            args.quiet,
        );
        let eval = rules.evaluate_all(&vocab.values);
        let mut report = CoverageReport::build(rules, column, vocab, &eval);
        let mine: Vec<(usize, f64)> = required
            .iter()
            .filter(|(r, _, _)| std::ptr::eq(*r, rules))
            .map(|&(_, f, share)| (f, share))
            .collect();
        report.judge(rules, args.min_coverage, &mine);
        if args.save_baseline.is_some() || args.baseline.is_some() {
            let path = &args.rules[reports.len()];
            let drop = this_drop(rules, vocab, &eval, &report, path)?;
            if let Some(base) = &baselines[reports.len()] {
                let (table, figures) = read_baseline(base)?;
                if figures.column != *column {
                    bail!(
                        "{}: the baseline describes column {}, and this check describes column {}; give the \
                         baseline saved with this ruleset",
                        base.display(),
                        escaped(&figures.column),
                        escaped(column)
                    );
                }
                let old = Drop { table, figures };
                let classify = |i: usize| {
                    let considered = rules.kind_of(&eval.normalized[i]) == ValueKind::Considered;
                    (
                        considered,
                        considered && eval.outcomes[i].iter().any(|o| o.fired),
                    )
                };
                report.drift = Some(drift(
                    &base.display().to_string(),
                    &old,
                    &drop,
                    rules,
                    classify,
                )?);
                report.judge_drift(&limits);
            }
            if let Some(save) = &saves[reports.len()] {
                write_baseline(save, drop.table, &drop.figures)?;
            }
        }
        reports.push(report);
    }
    let passed = reports.iter().all(|r| r.passed);
    let report = match args.format {
        ReportFormat::Text => {
            let text: Vec<String> = reports.iter().map(|r| check_text(r, args.top)).collect();
            text.join("\n")
        }
        ReportFormat::Html => check_html(
            &reports,
            &HtmlOptions {
                max_values: HTML_VALUES,
            },
        ),
        ReportFormat::Json if reports.len() == 1 => json_out(&reports[0])? + "\n",
        ReportFormat::Json => {
            let gates = reports
                .iter()
                .flat_map(|r| {
                    r.gates.iter().map(|g| RulesetGate {
                        ruleset: &r.ruleset,
                        gate: g,
                    })
                })
                .collect();
            let all = Checks {
                schema: CHECKS_SCHEMA,
                reports: &reports,
                gates,
                passed,
            };
            json_out(&all)? + "\n"
        }
    };
    match &args.output {
        Some(path) => write_text_atomically(path, &report)?,
        None => emit(&report)?,
    }
    if !args.quiet {
        for r in &reports {
            for g in r.gates.iter().filter(|g| !g.passed) {
                let reason = g.reason.as_deref().unwrap_or("failed");
                if reports.len() > 1 {
                    eprintln!("descry: gate failed: {}: {reason}", r.ruleset);
                } else {
                    eprintln!("descry: gate failed: {reason}");
                }
            }
        }
    }
    Ok(if passed {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    })
}

/// Whether two paths name one file: the same path, or the same file on disk.
fn same_file(a: &Path, b: &Path) -> bool {
    use std::os::unix::fs::MetadataExt;
    a == b
        || matches!(
            (std::fs::metadata(a), std::fs::metadata(b)),
            (Ok(x), Ok(y)) if x.dev() == y.dev() && x.ino() == y.ino()
        )
}

/// A drop as the drift sees it: its lookup table and its figures.
fn this_drop(
    rules: &Ruleset,
    vocab: &descry::Vocabulary,
    eval: &descry::Evaluation,
    report: &CoverageReport,
    ruleset_path: &Path,
) -> anyhow::Result<Drop> {
    let table = lookup_table_evaluated(vocab, &[(rules, eval)])?;
    let figures = BaselineFigures::of(report, ruleset_text(ruleset_path)?.as_bytes());
    Ok(Drop { table, figures })
}

/// The baseline file of each ruleset: `path` itself for one ruleset; for
/// several, `path` is a folder (created when `create`) holding one file per
/// ruleset, named after the ruleset file's stem.
fn baseline_paths(
    path: Option<&Path>,
    rules: &[PathBuf],
    create: bool,
) -> anyhow::Result<Vec<Option<PathBuf>>> {
    let Some(path) = path else {
        return Ok(vec![None; rules.len()]);
    };
    if rules.len() == 1 {
        if create {
            check_output_file(path)?;
            if !path
                .extension()
                .is_some_and(|e| e.eq_ignore_ascii_case("parquet"))
            {
                bail!(
                    "{}: a baseline is a Parquet file; name it *.parquet",
                    path.display()
                );
            }
        }
        return Ok(vec![Some(path.to_owned())]);
    }
    if create && path.exists() && !path.is_dir() {
        bail!(
            "{}: is a file; with several rulesets the baseline is a folder of RULESET-STEM.parquet files",
            path.display()
        );
    }
    if create {
        std::fs::create_dir_all(path)
            .with_context(|| format!("{}: cannot create the baseline folder", path.display()))?;
    } else if !path.is_dir() {
        bail!(
            "{}: with several rulesets, the baseline is a folder of RULESET-STEM.parquet files (what \
             --save-baseline wrote); this is not a folder",
            path.display()
        );
    }
    let mut out: Vec<Option<PathBuf>> = Vec::new();
    for r in rules {
        let stem = r
            .file_stem()
            .map_or("ruleset".into(), |s| s.to_string_lossy().into_owned());
        let file = path.join(format!("{stem}.parquet"));
        if out.iter().any(|p| p.as_deref() == Some(file.as_path())) {
            bail!(
                "two rulesets are named {stem:?}; their baselines would share {}",
                file.display()
            );
        }
        if create {
            check_output_file(&file)?;
        }
        out.push(Some(file));
    }
    Ok(out)
}

/// Each `--require FEATURE=SHARE` as (its ruleset, feature index, share).
/// FEATURE is an output column or a rule name; a rule name that more than
/// one ruleset uses must be given as its output column.
fn resolve_requirements<'a>(
    rulesets: &'a [Ruleset],
    require: &[(String, f64)],
) -> anyhow::Result<Vec<(&'a Ruleset, usize, f64)>> {
    let mut out = Vec::new();
    for (name, share) in require {
        let matching =
            |same: &dyn Fn(&descry::ruleset::Feature) -> bool| -> Vec<(&Ruleset, usize)> {
                rulesets
                    .iter()
                    .flat_map(|r| r.features.iter().enumerate().map(move |(i, f)| (r, i, f)))
                    .filter(|(_, _, f)| same(f))
                    .map(|(r, i, _)| (r, i))
                    .collect()
            };
        let by_output = matching(&|f| f.output == *name);
        let found = if by_output.is_empty() {
            matching(&|f| f.name == *name)
        } else {
            by_output
        };
        match found.as_slice() {
            [(r, i)] => out.push((*r, *i, *share)),
            [] => {
                let known: Vec<String> = rulesets
                    .iter()
                    .flat_map(|r| r.features.iter().map(|f| escaped(&f.output)))
                    .collect();
                bail!(
                    "--require {}: no rule has that name or output column; the output columns are: {}",
                    escaped(name),
                    known.join(", ")
                )
            }
            several => {
                let outputs: Vec<String> = several
                    .iter()
                    .map(|(r, i)| format!("{} ({})", escaped(&r.features[*i].output), r.file))
                    .collect();
                bail!(
                    "--require {}: several rulesets have a rule of that name; name its output column instead: {}",
                    escaped(name),
                    outputs.join(", ")
                )
            }
        }
    }
    Ok(out)
}
