//! `descry survey`: profile one column before writing rules for it.

use std::process::ExitCode;

use descry::survey::{survey, survey_text, SurveyOptions, DEFAULT_LONG, DEFAULT_PLACEHOLDERS};

use super::common::{emit, json_out, read_vocabulary, Format, InputArgs};

// clap turns `{n}` in help text into a line break and has no escape for
// it: the style reset between `{` and `n` keeps the braces literal. It is
// invisible on a terminal and removed when help is written elsewhere.
pub const ABOUT: &str = "\
Profile one column: what it holds, in which formats, with which defects,
made of which words. Run it first on a new column.

Prints the rows, distinct values, nulls, blanks (empty or white space only)
and placeholder-like values; the most frequent values and the share of rows
covered by the top 10, 100 and 1000 values; value shapes; anomalies, each
with counts and examples; and the most frequent tokens. Shares are of the
non-null rows.

Shapes: each value is reduced to its layout. A run of n digits is 9 written
n times (9{\x1b[0mn} above 6), a run of letters is one of a (lower case), A (upper
case), Aa (capitalized), aA (mixed), a run of any white space is one space,
and punctuation stays as it is: \"PMP-0750-3T\" has the shape \"A-9999-9A\",
\"6 SPD Auto\" has \"9 A Aa\".

Anomalies: leading, trailing or doubled spaces; no-break and other unusual
spaces; characters that NFKC normalization changes (full-width forms,
ligatures); control characters; U+FFFD replacement characters; values longer
than --long characters; values that are the same but for letter case; values
that differ only by punctuation or spacing.

Tokens: each value is normalized (NFKC, lower case, white space collapsed)
and split into runs of letters and runs of digits; each token is shown with
the share of distinct values and of rows that contain it.

Placeholder-like values are, after normalization, one of: n/a, na, n.a.,
n.a, none, null, nil, nan, unknown, unk, tbd, tba, tbc, not available,
not applicable, not known, missing, no data, -, --, ?; or made only of
punctuation and symbols. --placeholder adds to the list;
--no-default-placeholders starts from an empty one.

Memory: the column's vocabulary (proportional to the number of distinct
values); the table is read in batches (JSON is loaded whole, one column).

Example:
  descry survey samples/listings.csv --column transmission --top 30";

#[derive(Debug, clap::Args)]
pub struct Args {
    #[command(flatten)]
    pub input: InputArgs,
    /// The column to profile.
    #[arg(long, short = 'c')]
    pub column: String,
    /// Report format: human text, or JSON (schema "descry.survey/1").
    #[arg(long, value_enum, default_value_t = Format::Text)]
    pub format: Format,
    /// How many values, shapes, tokens and placeholders to list (text and JSON).
    #[arg(long, default_value_t = 20)]
    pub top: usize,
    /// How many examples to give for each anomaly.
    #[arg(long, default_value_t = 3)]
    pub examples: usize,
    /// Values longer than this many characters are reported as very long.
    #[arg(long, default_value_t = DEFAULT_LONG)]
    pub long: usize,
    /// Count this value as a placeholder too (repeatable), e.g. --placeholder "see notes".
    #[arg(long = "placeholder", value_name = "VALUE")]
    pub placeholders: Vec<String>,
    /// Use only the --placeholder values, not the built-in list.
    #[arg(long)]
    pub no_default_placeholders: bool,
    /// Print no notes on standard error.
    #[arg(long, short = 'q')]
    pub quiet: bool,
}

pub fn run(args: Args) -> anyhow::Result<ExitCode> {
    let vocab = read_vocabulary(&args.input, &args.column, args.quiet)?;
    let mut placeholders: Vec<String> = if args.no_default_placeholders {
        Vec::new()
    } else {
        DEFAULT_PLACEHOLDERS.iter().map(|s| s.to_string()).collect()
    };
    placeholders.extend(args.placeholders);
    let opts = SurveyOptions {
        placeholders,
        top: args.top,
        examples: args.examples,
        long: args.long,
        ..SurveyOptions::default()
    };
    let report = survey(&vocab, &args.column, &opts);
    match args.format {
        Format::Text => emit(&survey_text(&report))?,
        Format::Json => emit(&(json_out(&report)? + "\n"))?,
    }
    Ok(ExitCode::SUCCESS)
}
