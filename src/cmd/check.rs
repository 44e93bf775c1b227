//! `descry check`: test a ruleset on every distinct value of a column and
//! report coverage.

use std::process::ExitCode;

use descry::render::check_text;
use descry::CoverageReport;

use super::common::{
    column_notes, emit, json_out, load_ruleset, parse_share, print_notes, read_vocabulary,
    source_column, Format, InputArgs,
};

pub const ABOUT: &str = "\
Test a ruleset on every distinct value of a column and report coverage.

Prints the rows, distinct values, nulls and blanks; the share of non-blank
rows and of distinct values on which at least one rule fires; for each rule
the values and rows it hits and the values it could not read; the unmatched
values, most rows first; conflicting label cases; rules that hit nothing;
and the ruleset's [[example]] self-tests.

Exit codes: 0 when all is well; 1 when an example fails, or when coverage
of rows is below --min-coverage; 2 on any error (bad file, bad ruleset).

Memory: proportional to the number of distinct values. CSV, Parquet and
Arrow IPC files are read in batches and only the vocabulary is kept;
standard input and NDJSON are read whole.

Example:
  descry check samples/listings.csv --rules rulesets/engine.toml --min-coverage 0.95";

#[derive(Debug, clap::Args)]
#[command(long_about = ABOUT)]
pub struct Args {
    #[command(flatten)]
    pub input: InputArgs,
    /// The ruleset (TOML); see rulesets/README.md for the format.
    #[arg(long, short = 'r')]
    pub rules: std::path::PathBuf,
    /// The column to describe; overrides the ruleset's `column`.
    #[arg(long, short = 'c')]
    pub column: Option<String>,
    /// Report format: human text, or JSON (schema "descry.check/1").
    #[arg(long, value_enum, default_value_t = Format::Text)]
    pub format: Format,
    /// Fail (exit 1) when the share of covered non-blank rows is below this
    /// fraction, e.g. 0.95.
    #[arg(long, value_parser = parse_share)]
    pub min_coverage: Option<f64>,
    /// How many unmatched values, issues and conflicts the text report lists
    /// (JSON lists all).
    #[arg(long, default_value_t = 20)]
    pub top: usize,
    /// Print no notes on standard error.
    #[arg(long, short = 'q')]
    pub quiet: bool,
}

pub fn run(args: Args) -> anyhow::Result<ExitCode> {
    let rules = load_ruleset(&args.rules)?;
    let column = source_column(args.column.as_deref(), &rules)?;
    let vocab = read_vocabulary(&args.input, &column, args.quiet)?;
    print_notes(
        &column_notes(vocab.rows(), vocab.distinct(), &column),
        args.quiet,
    );
    let eval = rules.evaluate_all(&vocab.values);
    let report = CoverageReport::build(&rules, &column, &vocab, &eval);
    match args.format {
        Format::Text => emit(&check_text(&report, args.top))?,
        Format::Json => emit(&(json_out(&report)? + "\n"))?,
    }
    let passes = report.passes(args.min_coverage);
    if !passes && !args.quiet {
        if let Some(min) = args.min_coverage.filter(|m| report.coverage.row_share < *m) {
            eprintln!(
                "descry: gate failed: coverage {:.2}% is below --min-coverage {:.2}%",
                report.coverage.row_share * 100.0,
                min * 100.0
            );
        }
        if report.examples_failed > 0 {
            eprintln!(
                "descry: gate failed: {} example(s) failed",
                report.examples_failed
            );
        }
    }
    Ok(if passes {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    })
}
