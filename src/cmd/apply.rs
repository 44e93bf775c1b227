//! `descry apply`: write the input's columns plus the features of one or
//! more rulesets, in compact types.

use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::{Arc, Mutex};

use anyhow::bail;
use polars::prelude::*;

use descry::pipeline::{with_features, Describer, Description, Tally};
use descry::read::{batch_text, Input, ReadOptions};
use descry::render::{shown, thousands};
use descry::vocabulary::GrowingVocabulary;
use descry::write::{check_output_path, sink_table, OutputFormat, ROW_GROUP_ROWS};

use super::common::{
    column_notes, load_descriptions, parse_batch_rows, print_notes, taken_outputs, InputArgs,
};

pub const ABOUT: &str = "\
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

Memory: a few morsels plus the vocabulary and each distinct value's features.
Every input takes the same route through polars' streaming engine: morsels
of rows are read, described, encoded and written in parallel, and the output
keeps the input's row order, so files larger than memory work. Standard
input is first copied to a temporary file. JSON, and Parquet or Arrow IPC
files holding a column of a type polars cannot scan, have the columns read
loaded whole; so has every input with --in-memory. When a count rule has no
`range`, its type depends on every value, so the input is read twice (the
first pass keeps only the vocabulary).

Examples:
  descry apply samples/listings.csv -r rulesets/transmission.toml -r rulesets/engine.toml -o features.parquet
  descry apply listings.parquet -r rulesets/engine.toml -o eng.parquet --only-features --keep listing_id";

#[derive(Debug, clap::Args)]
#[command(long_about = ABOUT, mut_arg("counts", |a| a.hide(true)))]
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
    /// Print no summary, notes or progress.
    #[arg(long, short = 'q')]
    pub quiet: bool,
    /// Read the whole input into memory first instead of streaming it in
    /// batches (the output is the same).
    #[arg(long)]
    pub in_memory: bool,
    /// Rows per batch when streaming: Parquet row groups hold at most this
    /// many rows (and at most 262,144), and so does each batch of the first
    /// pass when a count has no `range`. Lower it to use less memory.
    #[arg(long, default_value_t = 1 << 20, hide_short_help = true, value_parser = parse_batch_rows)]
    pub batch_rows: usize,
}

pub fn run(args: Args) -> anyhow::Result<ExitCode> {
    if args.input.counts.is_some() {
        bail!(
            "apply writes one row per input row, and --counts reads a table of distinct values; \
             `descry lookup` writes one row per distinct value, to join to the rows"
        );
    }
    let descriptions = load_descriptions(&args.rules, args.column.as_deref())?;
    let inputs: Vec<&Path> = std::iter::once(args.input.input.as_path())
        .chain(args.rules.iter().map(PathBuf::as_path))
        .collect();
    let format = check_output_path(&args.output, &inputs)?;
    let input = Input::open(&args.input.input, &kept_types(&args))?;
    check_collisions(&descriptions, input.columns(), &args)?;
    let summary = apply_features(&args, &input, descriptions, format)?;
    if !args.quiet {
        for (d, tally) in &summary.columns {
            print_notes(&column_notes(tally.rows, tally.distinct, &d.column), false);
        }
        // Sizes in memory of what was written: the described columns only
        // when they are part of the output.
        let sources = if args.only_features || args.drop_source {
            String::new()
        } else {
            format!(
                ", described columns {} bytes",
                thousands(summary.source_bytes as u64)
            )
        };
        eprintln!(
            "wrote {} rows, {} features to {}; feature columns {} bytes{sources}",
            thousands(summary.rows),
            summary.features,
            args.output.display(),
            thousands(summary.feature_bytes as u64),
        );
    }
    Ok(ExitCode::SUCCESS)
}

#[derive(Default)]
struct Summary {
    rows: u64,
    features: usize,
    source_bytes: usize,
    feature_bytes: usize,
    columns: Vec<(Description, Tally)>,
}

impl Summary {
    fn add_batch(&mut self, batch: &DataFrame, sources: &[&str], features: &[Column]) {
        self.rows += batch.height() as u64;
        self.features = features.len();
        self.source_bytes += sources
            .iter()
            .filter_map(|c| batch.column(c).ok())
            .map(|c| c.as_materialized_series().estimated_size())
            .sum::<usize>();
        self.feature_bytes += features
            .iter()
            .map(|c| c.as_materialized_series().estimated_size())
            .sum::<usize>();
    }

    fn finish(mut self, describer: &Describer) -> Summary {
        self.columns = describer.results().map(|(d, v)| (d.clone(), v)).collect();
        self
    }
}

fn sources(descriptions: &[Description]) -> Vec<String> {
    descriptions.iter().map(|d| d.column.clone()).collect()
}

/// Read the input, describe it and write the output, batch by batch: the
/// one route every input takes. `--in-memory` only collects the whole
/// table before the features are computed.
fn apply_features(
    args: &Args,
    input: &Input,
    descriptions: Vec<Description>,
    format: OutputFormat,
) -> anyhow::Result<Summary> {
    let names = sources(&descriptions);
    let columns: Vec<&str> = names.iter().map(String::as_str).collect();
    let progress = Progress::new(args.quiet, &args.input.input);
    let full = if Describer::one_pass(&descriptions) {
        Vec::new()
    } else {
        progress.phase("reading the vocabulary (a count has no range)");
        first_pass(args, input, &columns)?
    };
    progress.phase("applying");
    let read = columns_read(args, &columns);
    let projection = args.only_features.then_some(read.as_slice());
    let mut table = input.scan(&columns, projection)?;
    print_notes(&table.notes, args.quiet);
    if args.in_memory {
        let whole = table
            .lazy
            .clone()
            .collect_with_engine(Engine::Streaming)
            .map_err(|e| table.read_error(e))?
            .unwrap_single();
        table.lazy = whole.lazy();
    }
    let describer = Arc::new(Describer::new(descriptions, full));
    let summary = Arc::new(Mutex::new(Summary::default()));
    let finish = {
        let (summary, bar) = (summary.clone(), progress.bar.clone());
        let (columns, args) = (names.clone(), OutputShape::of(args));
        move |batch: DataFrame, features: Vec<Column>| {
            let sources: Vec<&str> = columns.iter().map(String::as_str).collect();
            let mut summary = summary.lock().expect("summary lock");
            summary.add_batch(&batch, &sources, &features);
            bar.set_position(summary.rows);
            args.frame(batch, &sources, features)
                .map_err(|e| polars_err!(ComputeError: "{e:#}"))
        }
    };
    let (lazy, failure) = with_features(table.lazy.clone(), describer.clone(), finish)
        .map_err(|e| table.read_error(e))?;
    let row_group_rows = args.batch_rows.min(ROW_GROUP_ROWS);
    sink_table(
        lazy,
        &args.output,
        format,
        row_group_rows,
        |e| match failure.get() {
            Some(message) => output_error(args, anyhow::anyhow!("{message}")),
            None => table.read_error(e),
        },
    )?;
    progress.done();
    let summary = std::mem::take(&mut *summary.lock().expect("summary lock"));
    Ok(summary.finish(&describer))
}

/// The columns to read with --only-features: the kept and described ones
/// (a column `apply` does not write is not read, whatever its type).
fn columns_read<'a>(args: &'a Args, described: &[&'a str]) -> Vec<&'a str> {
    args.keep
        .iter()
        .map(String::as_str)
        .chain(
            described
                .iter()
                .copied()
                .filter(|c| !args.keep.iter().any(|k| k == c)),
        )
        .collect()
}

/// How `apply` reads its input: the described columns keep their type in
/// the output, and their text is what the rules see.
fn kept_types(args: &Args) -> ReadOptions {
    ReadOptions {
        keep_types: true,
        ..args.input.read_options()
    }
}

fn output_error(args: &Args, e: anyhow::Error) -> descry::Error {
    descry::Error::Output {
        path: args.output.clone(),
        message: format!("{e:#}"),
    }
}

/// The complete vocabulary of each described column, without row codes.
fn first_pass(
    args: &Args,
    input: &Input,
    columns: &[&str],
) -> anyhow::Result<Vec<Option<GrowingVocabulary>>> {
    let mut vocabs = vec![GrowingVocabulary::default(); columns.len()];
    input.keeping_types(false).for_each_batch(
        columns,
        Some(columns),
        args.batch_rows,
        |batch| {
            for (vocab, c) in vocabs.iter_mut().zip(columns) {
                vocab.codes_for(&batch_text(&batch, c, &args.input.input)?);
            }
            Ok(())
        },
    )?;
    Ok(vocabs.into_iter().map(Some).collect())
}

/// A feature may not take the name of an input column that stays in the output.
fn check_collisions(
    descriptions: &[Description],
    names: &[String],
    args: &Args,
) -> anyhow::Result<()> {
    let taken = taken_outputs(descriptions.iter().map(|d| &d.rules), names, |output| {
        let dropped = (args.drop_source && descriptions.iter().any(|d| d.column == output))
            || (args.only_features && !args.keep.iter().any(|k| k == output));
        !dropped
    });
    if let Some(first) = taken.first() {
        bail!("{first}");
    }
    if args.only_features {
        if let Some(k) = args.keep.iter().find(|k| !names.contains(k)) {
            bail!(
                "{}: --keep names no column {}; the columns are: {}",
                args.input.input.display(),
                shown(k),
                names
                    .iter()
                    .map(|n| shown(n))
                    .collect::<Vec<_>>()
                    .join(", ")
            );
        }
    }
    Ok(())
}

/// What `apply` keeps of the input columns: the input batch is reduced as
/// asked and the features are appended.
#[derive(Clone)]
struct OutputShape {
    only_features: bool,
    keep: Vec<String>,
    drop_source: bool,
}

impl OutputShape {
    fn of(args: &Args) -> OutputShape {
        OutputShape {
            only_features: args.only_features,
            keep: args.keep.clone(),
            drop_source: args.drop_source,
        }
    }

    fn frame(
        &self,
        batch: DataFrame,
        sources: &[&str],
        features: Vec<Column>,
    ) -> anyhow::Result<DataFrame> {
        let height = batch.height();
        let mut frame = if self.only_features {
            batch.select(self.keep.iter().map(|s| PlSmallStr::from(s.as_str())))?
        } else if self.drop_source {
            batch.drop_many(sources.iter().map(|s| PlSmallStr::from(*s)))
        } else {
            batch
        };
        if frame.width() == 0 {
            return Ok(DataFrame::new(height, features)?);
        }
        frame.hstack_mut(&features)?;
        Ok(frame)
    }
}

/// A progress line on standard error, shown only on a terminal.
struct Progress {
    bar: indicatif::ProgressBar,
}

impl Progress {
    fn new(quiet: bool, input: &std::path::Path) -> Progress {
        use std::io::IsTerminal;
        let bar = if quiet || !std::io::stderr().is_terminal() {
            indicatif::ProgressBar::hidden()
        } else {
            let bar = indicatif::ProgressBar::new_spinner();
            bar.set_style(
                indicatif::ProgressStyle::with_template(
                    "{spinner} {prefix} {msg}: {human_pos} rows ({per_sec}, {elapsed})",
                )
                .expect("valid template"),
            );
            bar.set_prefix(input.display().to_string());
            bar.enable_steady_tick(std::time::Duration::from_millis(200));
            bar
        };
        Progress { bar }
    }

    fn phase(&self, what: &'static str) {
        self.bar.set_message(what);
        self.bar.set_position(0);
    }

    fn done(&self) {
        self.bar.finish_and_clear();
    }
}
