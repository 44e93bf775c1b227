//! Plumbing shared by the commands: input arguments, ruleset loading,
//! output formats.

use std::collections::HashMap;
use std::path::{Path, PathBuf};

use anyhow::{bail, Context};
use clap::ValueEnum;

use descry::read::{batch_text, for_each_batch, Input, ReadOptions};
use descry::render::shown;
use descry::vocabulary::GrowingVocabulary;
use descry::write::{check_not_an_input, check_output_file};
use descry::{Ruleset, Vocabulary};

/// Where the table comes from and how to read it.
#[derive(Debug, Clone, clap::Args)]
pub struct InputArgs {
    /// The table: .csv, .tsv, .parquet, .arrow/.ipc/.feather, .ndjson/.jsonl,
    /// .json (an array of records, or one record a line), or - for CSV on
    /// standard input.
    pub input: PathBuf,
    /// Field delimiter for CSV input (one character, or "tab"); overrides the
    /// extension's default.
    #[arg(long, value_parser = parse_delimiter)]
    pub delimiter: Option<u8>,
    /// Replace invalid UTF-8 in the input with U+FFFD instead of failing.
    #[arg(long)]
    pub lossy_utf8: bool,
    /// The input is a vocabulary table: one row per distinct value of the
    /// described column, with its number of rows in COLUMN (what
    /// `SELECT col, count(*) AS rows ... GROUP BY col` gives; nulls may be
    /// one row with their count). Reports are those of the raw rows.
    #[arg(long, value_name = "COLUMN")]
    pub counts: Option<String>,
}

impl InputArgs {
    pub fn read_options(&self) -> ReadOptions {
        ReadOptions {
            delimiter: self.delimiter,
            lossy_utf8: self.lossy_utf8,
            keep_types: false,
        }
    }
}

fn parse_delimiter(s: &str) -> Result<u8, String> {
    match s {
        "tab" | "\\t" | "\t" => Ok(b'\t'),
        _ if s.len() == 1 && s.is_ascii() => Ok(s.as_bytes()[0]),
        _ => Err(format!(
            "the delimiter must be one ASCII character or \"tab\", not {s:?}"
        )),
    }
}

/// A command-line fraction between 0 and 1 (`0.95` for 95%).
pub fn parse_share(s: &str) -> Result<f64, String> {
    let v: f64 = s.parse().map_err(|_| format!("{s:?} is not a number"))?;
    if (0.0..=1.0).contains(&v) {
        Ok(v)
    } else {
        Err(format!(
            "{v} is not a fraction between 0 and 1 (write 0.95 for 95%)"
        ))
    }
}

/// Report output format.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Format {
    Text,
    Json,
}

pub fn load_ruleset(path: &Path) -> anyhow::Result<Ruleset> {
    let text = ruleset_text(path)?;
    Ok(Ruleset::from_toml(&text, &path.display().to_string())?)
}

/// The text of a ruleset file, read up to 16 MiB.
pub fn ruleset_text(path: &Path) -> anyhow::Result<String> {
    Ok(Ruleset::read_text(path)?)
}

/// Check, before any work, that a ruleset descry is about to rewrite (or
/// create) can be: not one of the `inputs`, not a folder, not read-only,
/// and, when it exists, a ruleset-sized file.
pub fn check_ruleset_target(path: &Path, inputs: &[&Path]) -> anyhow::Result<()> {
    check_output_file(path)?;
    check_not_an_input(path, inputs)?;
    if path.exists() {
        ruleset_text(path)?;
    }
    Ok(())
}

/// `--batch-rows`: a count of rows, at least 1.
pub fn parse_batch_rows(s: &str) -> Result<usize, String> {
    match s.parse::<usize>() {
        Ok(0) => Err("a batch holds at least 1 row".to_owned()),
        Ok(n) => Ok(n),
        Err(_) => Err(format!("{s:?} is not a count of rows")),
    }
}

/// The source column: `--column` wins, else the ruleset's `column`.
/// Load each ruleset with the column it describes; `column` (from
/// `--column`) overrides a single ruleset's `column`.
pub fn load_descriptions(
    rules: &[PathBuf],
    column: Option<&str>,
) -> anyhow::Result<Vec<descry::pipeline::Description>> {
    if column.is_some() && rules.len() > 1 {
        bail!(
            "--column applies to a single ruleset; with several, name each column in its ruleset"
        );
    }
    let descriptions = rules
        .iter()
        .map(|p| {
            let rules = load_ruleset(p)?;
            let column = source_column(column, &rules)?;
            Ok(descry::pipeline::Description { rules, column })
        })
        .collect::<anyhow::Result<Vec<_>>>()?;
    check_outputs_differ(&descriptions)?;
    Ok(descriptions)
}

/// Two rulesets may not write the same feature column: the second would
/// hide the first.
fn check_outputs_differ(descriptions: &[descry::pipeline::Description]) -> anyhow::Result<()> {
    let mut seen: HashMap<&str, (&str, usize, &str)> = HashMap::new();
    for d in descriptions {
        for f in &d.rules.features {
            let here = (d.rules.file.as_str(), f.line, f.name.as_str());
            if let Some((file, line, name)) = seen.insert(f.output.as_str(), here) {
                bail!(
                    "{}:{}: rule \"{}\" would write column {}, which {}:{} (rule \"{}\") writes too; \
                     rename one of the rules or give the rulesets different `prefix`es",
                    d.rules.file,
                    f.line,
                    f.name,
                    shown(&f.output),
                    file,
                    line,
                    name
                );
            }
        }
    }
    Ok(())
}

pub fn source_column(cli: Option<&str>, rules: &Ruleset) -> anyhow::Result<String> {
    match (cli, &rules.column) {
        (Some(c), _) => Ok(c.to_owned()),
        (None, Some(c)) => Ok(c.clone()),
        (None, None) => bail!(
            "{}: the ruleset names no `column`; give --column NAME or add column = \"...\" to the ruleset",
            rules.file
        ),
    }
}

/// Read one column of the input, print the reader's notes (unless
/// `quiet`) and build the column's vocabulary. The input is read in
/// batches, keeping only the vocabulary.
pub fn read_vocabulary(input: &InputArgs, column: &str, quiet: bool) -> anyhow::Result<Vocabulary> {
    Ok(read_vocabularies(input, &[column], quiet)?.remove(0))
}

/// [`read_vocabulary`] for several columns in one read of the input; a
/// column named twice gets the same vocabulary twice.
pub fn read_vocabularies(
    input: &InputArgs,
    columns: &[&str],
    quiet: bool,
) -> anyhow::Result<Vec<Vocabulary>> {
    Ok(read_table_vocabularies(input, columns, quiet)?.0)
}

/// [`read_vocabularies`], and every column name of the table (`None` for a
/// `--counts` table, which holds only the described column's values).
pub fn read_table_vocabularies(
    input: &InputArgs,
    columns: &[&str],
    quiet: bool,
) -> anyhow::Result<(Vec<Vocabulary>, Option<Vec<String>>)> {
    let mut distinct: Vec<&str> = Vec::new();
    for c in columns {
        if !distinct.contains(c) {
            distinct.push(c);
        }
    }
    if let Some(counts) = &input.counts {
        let vocab = read_counted(input, &distinct, counts, quiet)?;
        return Ok((vec![vocab; columns.len()], None));
    }
    let mut growing = vec![GrowingVocabulary::default(); distinct.len()];
    // Opened once: standard input is spooled by the open.
    let table = Input::open(&input.input, &input.read_options())?;
    let notes = table.for_each_batch(&distinct, Some(&distinct), 1 << 20, |batch| {
        for (vocab, c) in growing.iter_mut().zip(&distinct) {
            vocab.codes_for(&batch_text(&batch, c, &input.input)?);
        }
        Ok(())
    })?;
    print_notes(&notes, quiet);
    let vocabs: Vec<Vocabulary> = growing
        .iter()
        .map(GrowingVocabulary::to_vocabulary)
        .collect();
    let vocabs = columns
        .iter()
        .map(|c| vocabs[distinct.iter().position(|d| d == c).expect("listed")].clone())
        .collect();
    Ok((vocabs, Some(table.columns().to_vec())))
}

/// The rules whose feature column has the name of an input column that
/// stays in the output (`stays`): one message each, naming the rule's file
/// and line. `apply` refuses such a ruleset.
pub fn taken_outputs<'a>(
    rulesets: impl IntoIterator<Item = &'a Ruleset>,
    names: &[String],
    stays: impl Fn(&str) -> bool,
) -> Vec<String> {
    let mut out = Vec::new();
    for rules in rulesets {
        for f in &rules.features {
            if names.contains(&f.output) && stays(&f.output) {
                out.push(format!(
                    "{}:{}: rule [[{}]] \"{}\" would write column \"{}\", which the input already has; \
                     rename the rule or set a `prefix` in the ruleset",
                    rules.file,
                    f.line,
                    f.rule.kind(),
                    f.name,
                    f.output
                ));
            }
        }
    }
    out
}

/// The vocabulary of a table that holds one row per distinct value of the
/// one described column, with its row count in `counts`.
fn read_counted(
    input: &InputArgs,
    columns: &[&str],
    counts: &str,
    quiet: bool,
) -> anyhow::Result<Vocabulary> {
    let path = &input.input;
    let [column] = columns else {
        bail!(
            "{}: --counts reads a table of one column's distinct values, and the rulesets describe {} \
             columns ({}); check each column's vocabulary table on its own",
            path.display(),
            columns.len(),
            columns.iter().map(|c| shown(c)).collect::<Vec<_>>().join(", ")
        );
    };
    if counts == *column {
        bail!(
            "{}: --counts names the described column {}; name the column of row counts",
            path.display(),
            shown(column)
        );
    }
    let mut builder = CountedVocabulary::default();
    let mut row = 0u64;
    let notes = for_each_batch(
        path,
        &[column],
        Some(&[column, counts]),
        &input.read_options(),
        1 << 20,
        |batch| {
            let values = batch_text(&batch, column, path)?;
            let rows = row_counts(&batch, counts, path, row)?;
            for (value, n) in values.into_iter().zip(rows) {
                if !builder.add(value, n) {
                    return Err(descry::Error::Input {
                    path: path.to_owned(),
                    message: format!(
                        "the --counts column {} adds up to more than {} rows; the counts cannot be right",
                        shown(counts),
                        u64::MAX
                    ),
                });
                }
            }
            row += batch.height() as u64;
            Ok(())
        },
    )?;
    print_notes(&notes, quiet);
    Ok(builder.finish())
}

/// The row counts of a batch of a vocabulary table: whole numbers, 0 or
/// more. `first_row` is the batch's first row in the table (from 0), for
/// messages.
fn row_counts(
    batch: &polars::prelude::DataFrame,
    counts: &str,
    path: &Path,
    first_row: u64,
) -> Result<Vec<u64>, descry::Error> {
    use polars::prelude::DataType;
    let input_error = |message: String| descry::Error::Input {
        path: path.to_owned(),
        message,
    };
    let column = batch
        .column(counts)
        .map_err(|e| input_error(e.to_string()))?;
    if !(column.dtype().is_integer()
        || column.dtype().is_float()
        || column.dtype() == &DataType::String)
    {
        return Err(input_error(format!(
            "the --counts column {} holds {} values, not numbers of rows",
            shown(counts),
            column.dtype()
        )));
    }
    // Cast value by value: a value that is no whole number of rows
    // (negative, fractional, text) becomes null and is reported.
    let whole = column.cast(&DataType::UInt64).ok();
    let whole = whole.as_ref().and_then(|c| c.u64().ok());
    let real = column.cast(&DataType::Float64).ok();
    let real = real.as_ref().and_then(|c| c.f64().ok());
    let text = descry::read::text_of(column).map_err(|e| input_error(e.to_string()))?;
    (0..batch.height())
        .map(|i| match (whole.and_then(|w| w.get(i)), real.and_then(|r| r.get(i))) {
            (Some(n), Some(x)) if n as f64 == x => Ok(n),
            (Some(n), None) => Ok(n),
            _ => Err(input_error(format!(
                "row {} of the --counts column {} holds {}, not a number of rows (a whole number, 0 or more)",
                first_row + i as u64 + 1,
                shown(counts),
                text.get(i).map_or("null".to_owned(), shown),
            ))),
        })
        .collect()
}

/// A vocabulary built from (value, rows) pairs; a value listed twice has
/// its rows added.
#[derive(Default)]
struct CountedVocabulary {
    index: std::collections::HashMap<String, usize>,
    vocab: Vocabulary,
    total: u64,
}

impl CountedVocabulary {
    /// Add a value's rows; false when the rows of the table would no
    /// longer fit in 64 bits.
    fn add(&mut self, value: Option<&str>, rows: u64) -> bool {
        let Some(total) = self.total.checked_add(rows) else {
            return false;
        };
        self.total = total;
        let Some(value) = value else {
            self.vocab.null_rows += rows;
            return true;
        };
        match self.index.get(value) {
            Some(&i) => self.vocab.counts[i] += rows,
            None => {
                self.index.insert(value.to_owned(), self.vocab.values.len());
                self.vocab.values.push(value.to_owned());
                self.vocab.counts.push(rows);
            }
        }
        true
    }

    fn finish(self) -> Vocabulary {
        self.vocab
    }
}

/// Notes about a column that is technically fine but probably not what the
/// user meant to describe.
pub fn column_notes(rows: u64, distinct: usize, column: &str) -> Vec<String> {
    if rows == 0 {
        vec!["the table has no rows".to_owned()]
    } else if distinct == 0 {
        vec![format!("column \"{column}\" holds only nulls")]
    } else {
        Vec::new()
    }
}

pub fn print_notes(notes: &[String], quiet: bool) {
    if !quiet {
        for n in notes {
            eprintln!("descry: note: {n}");
        }
    }
}

pub fn json_out<T: serde::Serialize>(value: &T) -> anyhow::Result<String> {
    serde_json::to_string_pretty(value).context("cannot serialize the report")
}

/// Write a report to standard output. A reader that stops early (`| head`)
/// is not an error: the rest is simply not written.
pub fn emit(text: &str) -> anyhow::Result<()> {
    use std::io::Write;
    let mut out = std::io::stdout().lock();
    match out.write_all(text.as_bytes()).and_then(|_| out.flush()) {
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
        other => Ok(other.context("cannot write to standard output")?),
    }
}
