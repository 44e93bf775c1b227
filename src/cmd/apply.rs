//! `descry apply`: write the input's columns plus the features of one or
//! more rulesets, in compact types.

use std::path::PathBuf;
use std::process::ExitCode;

use anyhow::bail;
use polars::prelude::*;

use descry::read::Table;
use descry::render::thousands;
use descry::write::{check_output_path, write_table};
use descry::{encode, Ruleset, Vocabulary};

use super::common::{load_ruleset, print_notes, source_column, vocabulary_of, InputArgs};

const ABOUT: &str = "\
Apply one or more rulesets to a table and write the features.

Each ruleset describes one source column. Rules run once per distinct value
of that column; rows only gather the results. The output holds the input's
columns plus one column per rule, in compact types:
  flag     Boolean
  count    the smallest of UInt8, Int8, UInt16, Int16, Int32, Int64 that holds
           the rule's `range` (or, without one, the values observed)
  measure  Float32 (Float64 with precision = \"f64\")
  label    Enum (dictionary-encoded) whose categories are the ruleset's labels
           in declaration order, the same for every data drop
Null source values give null features.

The output format follows the extension of -o: .parquet, .arrow/.ipc/.feather,
.csv/.tsv. It is written to a temporary file in the same folder and renamed
into place at the end: an existing output is replaced only on success, and
the input is never written to.

Memory: the whole input table, plus the feature columns.

Examples:
  descry apply samples/listings.csv -r rulesets/transmission.toml -r rulesets/engine.toml -o features.parquet
  descry apply listings.parquet -r rulesets/engine.toml -o eng.parquet --only-features --keep listing_id";

#[derive(Debug, clap::Args)]
#[command(long_about = ABOUT)]
pub struct Args {
    #[command(flatten)]
    pub input: InputArgs,
    /// A ruleset (TOML); repeat for several columns in one pass.
    #[arg(long, short = 'r', required = true)]
    pub rules: Vec<PathBuf>,
    /// The output table; its extension picks the format.
    #[arg(long, short = 'o')]
    pub output: PathBuf,
    /// The source column, when a single ruleset is given; overrides its `column`.
    #[arg(long, short = 'c')]
    pub column: Option<String>,
    /// Leave the described source columns out of the output.
    #[arg(long, conflicts_with = "only_features")]
    pub drop_source: bool,
    /// Write only the features (and the --keep columns).
    #[arg(long)]
    pub only_features: bool,
    /// Columns to carry into the output with --only-features, e.g. an id.
    #[arg(long, requires = "only_features", value_delimiter = ',')]
    pub keep: Vec<String>,
    /// Print no summary or notes.
    #[arg(long, short = 'q')]
    pub quiet: bool,
}

struct Described {
    rules: Ruleset,
    column: String,
}

pub fn run(args: Args) -> anyhow::Result<ExitCode> {
    if args.column.is_some() && args.rules.len() > 1 {
        bail!("--column applies to a single ruleset; with several, name each column in its ruleset");
    }
    let described = args
        .rules
        .iter()
        .map(|p| {
            let rules = load_ruleset(p)?;
            let column = source_column(args.column.as_deref(), &rules)?;
            Ok(Described { rules, column })
        })
        .collect::<anyhow::Result<Vec<_>>>()?;
    let format = check_output_path(&args.output, &[&args.input.input])?;
    let columns: Vec<&str> = described.iter().map(|d| d.column.as_str()).collect();
    let table = Table::read(&args.input.input, &columns, &args.input.read_options())?;
    print_notes(&table.notes, args.quiet);
    check_collisions(&described, &table, &args)?;

    let mut features = Vec::new();
    for d in &described {
        let vocab: Vocabulary = vocabulary_of(&table, &d.column)?;
        let eval = d.rules.evaluate_all(&vocab.values);
        features.extend(encode::encode(&d.rules, &vocab, &eval)?);
    }
    let source_bytes: usize = columns.iter().filter_map(|c| table.frame.column(c).ok()).map(|c| c.as_materialized_series().estimated_size()).sum();
    let feature_bytes: usize = features.iter().map(|c| c.as_materialized_series().estimated_size()).sum();
    let n_features = features.len();
    let mut frame = output_frame(table, &columns, features, &args)?;
    write_table(&mut frame, &args.output, format)?;
    if !args.quiet {
        eprintln!(
            "wrote {} rows, {} features to {}; source columns {} bytes, feature columns {} bytes",
            thousands(frame.height() as u64),
            n_features,
            args.output.display(),
            thousands(source_bytes as u64),
            thousands(feature_bytes as u64),
        );
    }
    Ok(ExitCode::SUCCESS)
}

/// A feature may not take the name of an input column that stays in the output.
fn check_collisions(described: &[Described], table: &Table, args: &Args) -> anyhow::Result<()> {
    let names = table.column_names();
    for d in described {
        for f in &d.rules.features {
            let dropped = (args.drop_source && described.iter().any(|d| d.column == f.output))
                || (args.only_features && !args.keep.contains(&f.output));
            if names.contains(&f.output) && !dropped {
                bail!(
                    "{}:{}: rule [[{}]] \"{}\" would write column \"{}\", which the input already has; \
                     rename the rule or set a `prefix` in the ruleset",
                    d.rules.file,
                    f.line,
                    f.rule.kind(),
                    f.name,
                    f.output
                );
            }
        }
    }
    Ok(())
}

fn output_frame(table: Table, sources: &[&str], features: Vec<Column>, args: &Args) -> anyhow::Result<DataFrame> {
    let path = table.path.clone();
    let mut frame = table.frame;
    if args.only_features {
        for k in &args.keep {
            if frame.column(k).is_err() {
                let names: Vec<String> = frame.get_column_names().iter().map(|s| s.to_string()).collect();
                bail!("{}: --keep names no column \"{k}\"; the columns are: {}", path.display(), names.join(", "));
            }
        }
        frame = frame.select(args.keep.iter().map(|s| PlSmallStr::from(s.as_str())))?;
    } else if args.drop_source {
        frame = frame.drop_many(sources.iter().map(|s| PlSmallStr::from(*s)));
    }
    let height = frame.height();
    if frame.width() == 0 {
        return Ok(DataFrame::new(height, features)?);
    }
    frame.hstack_mut(&features)?;
    Ok(frame)
}
