//! Reading tables: CSV/TSV, Parquet, Arrow IPC and newline-delimited JSON,
//! chosen by file extension; `-` reads CSV from standard input.
//!
//! The described column is always read as text: a numeric column is cast
//! to text, and the caller is told so through [`Table::notes`].

use std::fs::File;
use std::io::{Cursor, Read};
use std::path::{Path, PathBuf};
use std::sync::Arc;

use polars::prelude::*;

use crate::error::Error;

/// A table format, chosen from a path's extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TableFormat {
    Csv { delimiter: u8 },
    Parquet,
    Ipc,
    NdJson,
}

impl TableFormat {
    /// The format of a path, by extension; `-` is CSV on standard input.
    pub fn of(path: &Path, delimiter: Option<u8>) -> Result<TableFormat, Error> {
        if path.as_os_str() == "-" {
            return Ok(TableFormat::Csv {
                delimiter: delimiter.unwrap_or(b','),
            });
        }
        let ext = path
            .extension()
            .and_then(|e| e.to_str())
            .unwrap_or("")
            .to_ascii_lowercase();
        let format = match ext.as_str() {
            "csv" | "txt" => TableFormat::Csv { delimiter: delimiter.unwrap_or(b',') },
            "tsv" | "tab" => TableFormat::Csv { delimiter: delimiter.unwrap_or(b'\t') },
            "parquet" | "pq" => TableFormat::Parquet,
            "arrow" | "ipc" | "feather" => TableFormat::Ipc,
            "ndjson" | "jsonl" | "json" => TableFormat::NdJson,
            _ if delimiter.is_some() => TableFormat::Csv { delimiter: delimiter.unwrap_or(b',') },
            _ => {
                return Err(Error::Input {
                    path: path.to_owned(),
                    message: format!(
                        "unknown table format {:?}; descry reads .csv, .tsv, .parquet, .arrow/.ipc/.feather \
                         and .ndjson/.jsonl (or give --delimiter to read any file as CSV)",
                        if ext.is_empty() { "(no extension)".to_owned() } else { format!(".{ext}") }
                    ),
                })
            }
        };
        Ok(format)
    }
}

/// How to read an input table.
#[derive(Debug, Clone, Default)]
pub struct ReadOptions {
    /// Field delimiter for CSV; by extension when `None`.
    pub delimiter: Option<u8>,
    /// Replace invalid UTF-8 with U+FFFD instead of failing.
    pub lossy_utf8: bool,
}

/// A table read from a file, with the described columns as text.
#[derive(Debug)]
pub struct Table {
    pub path: PathBuf,
    pub frame: DataFrame,
    /// Things the user should know (e.g. a numeric column cast to text).
    pub notes: Vec<String>,
}

impl Table {
    /// Read a whole table; `text_columns` are read (or cast) as strings and
    /// must exist.
    pub fn read(path: &Path, text_columns: &[&str], opts: &ReadOptions) -> Result<Table, Error> {
        Table::read_projected(path, text_columns, None, opts)
    }

    /// Read only the given columns (as text).
    pub fn read_columns(path: &Path, columns: &[&str], opts: &ReadOptions) -> Result<Table, Error> {
        Table::read_projected(path, columns, Some(columns), opts)
    }

    fn read_projected(
        path: &Path,
        text_columns: &[&str],
        projection: Option<&[&str]>,
        opts: &ReadOptions,
    ) -> Result<Table, Error> {
        let format = TableFormat::of(path, opts.delimiter)?;
        let source = Source::open(path)?;
        let names = column_names(&source, format, opts)
            .map_err(|e| read_error(path, &source, format, opts, e))?;
        if let Some(missing) = text_columns.iter().find(|c| !names.iter().any(|n| n == *c)) {
            return Err(Error::MissingColumn {
                path: path.to_owned(),
                column: missing.to_string(),
                available: names,
            });
        }
        let frame = read_frame(&source, format, text_columns, projection, opts)
            .map_err(|e| read_error(path, &source, format, opts, e))?;
        Table::finish(path, frame, text_columns)
    }

    fn finish(path: &Path, mut frame: DataFrame, text_columns: &[&str]) -> Result<Table, Error> {
        let mut notes = Vec::new();
        for &name in text_columns {
            let Some(col) = frame.column(name).ok() else {
                return Err(missing_column(path, &frame, name));
            };
            let dtype = col.dtype().clone();
            if dtype != DataType::String {
                let text = col
                    .cast(&DataType::String)
                    .map_err(|e| input_error(path, e))?;
                frame
                    .replace(name, text)
                    .map_err(|e| input_error(path, e))?;
                if dtype != DataType::Null {
                    notes.push(format!(
                        "column \"{name}\" holds {dtype} values; they were read as text"
                    ));
                }
            }
        }
        Ok(Table {
            path: path.to_owned(),
            frame,
            notes,
        })
    }

    /// The text values of a column (which `read` made a string column).
    pub fn text(&self, column: &str) -> Result<&StringChunked, Error> {
        let col = self
            .frame
            .column(column)
            .map_err(|_| missing_column(&self.path, &self.frame, column))?;
        col.str().map_err(|e| input_error(&self.path, e))
    }

    pub fn column_names(&self) -> Vec<String> {
        self.frame
            .get_column_names()
            .iter()
            .map(|s| s.to_string())
            .collect()
    }
}

/// A file on disk, or standard input read in full.
enum Source {
    File(PathBuf),
    Bytes(Vec<u8>),
}

impl Source {
    fn open(path: &Path) -> Result<Source, Error> {
        if path.as_os_str() != "-" {
            check_readable(path)?;
            return Ok(Source::File(path.to_owned()));
        }
        let mut buf = Vec::new();
        std::io::stdin()
            .read_to_end(&mut buf)
            .map_err(|e| Error::Input {
                path: path.to_owned(),
                message: format!("cannot read standard input: {e}"),
            })?;
        if buf.is_empty() {
            return Err(Error::Input {
                path: path.to_owned(),
                message: "standard input is empty".to_owned(),
            });
        }
        Ok(Source::Bytes(buf))
    }

    fn file(&self) -> PolarsResult<File> {
        match self {
            Source::File(p) => Ok(File::open(p)?),
            Source::Bytes(_) => polars_bail!(ComputeError: "standard input holds CSV only"),
        }
    }
}

/// The names of every column of the table, read from its header or schema.
fn column_names(
    source: &Source,
    format: TableFormat,
    opts: &ReadOptions,
) -> PolarsResult<Vec<String>> {
    let names = match format {
        TableFormat::Csv { delimiter } => {
            // polars parses only the header record: its whole-file reader,
            // even when asked for no rows, splits and parses chunks ahead.
            let options = CsvReadOptions::default()
                .with_has_header(true)
                .with_parse_options(
                    CsvParseOptions::default()
                        .with_separator(delimiter)
                        .with_encoding(encoding(opts)),
                );
            let header = Source::Bytes(header_record(source)?);
            let frame = csv_reader(&header, options)?;
            frame
                .get_column_names()
                .iter()
                .map(|s| s.to_string())
                .collect()
        }
        TableFormat::Parquet => arrow_names(ParquetReader::new(source.file()?).schema()?.as_ref()),
        TableFormat::Ipc => arrow_names(IpcReader::new(source.file()?).schema()?.as_ref()),
        TableFormat::NdJson => {
            let frame = JsonReader::new(source.file()?)
                .with_json_format(JsonFormat::JsonLines)
                .infer_schema_len(std::num::NonZeroUsize::new(1000))
                .finish()?;
            frame
                .get_column_names()
                .iter()
                .map(|s| s.to_string())
                .collect()
        }
    };
    Ok(names)
}

/// The longest header record read: past it, the file has no line break
/// where one should be (another line-break convention, a quote left open).
const MAX_HEADER_BYTES: usize = 16 << 20;

/// The bytes of a CSV source up to and including the line break that ends
/// its first record (a line break inside double quotes does not), or all of
/// it when it has one record.
fn header_record(source: &Source) -> PolarsResult<Vec<u8>> {
    let mut header = Vec::new();
    let mut quoted = false;
    let mut scan = |chunk: &[u8], header: &mut Vec<u8>| {
        for (i, &b) in chunk.iter().enumerate() {
            match b {
                b'"' => quoted = !quoted,
                b'\n' if !quoted => {
                    header.extend_from_slice(&chunk[..=i]);
                    return true;
                }
                _ => {}
            }
        }
        header.extend_from_slice(chunk);
        false
    };
    match source {
        Source::Bytes(b) => {
            scan(b, &mut header);
        }
        Source::File(p) => {
            let mut file = File::open(p)?;
            let mut buf = vec![0; 64 * 1024];
            loop {
                let n = match file.read(&mut buf) {
                    Ok(n) => n,
                    Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
                    Err(e) => return Err(e.into()),
                };
                if n == 0 || scan(&buf[..n], &mut header) {
                    break;
                }
                if header.len() > MAX_HEADER_BYTES {
                    break;
                }
            }
        }
    }
    if header.len() > MAX_HEADER_BYTES {
        polars_bail!(ComputeError:
            "found no line break in the first {} MiB, so there is no header line; descry reads line breaks as \\n or \\r\\n, and a quote left open runs on to the end of the file",
            MAX_HEADER_BYTES >> 20);
    }
    Ok(header)
}

fn csv_reader(source: &Source, options: CsvReadOptions) -> PolarsResult<DataFrame> {
    match source {
        Source::File(p) => options
            .try_into_reader_with_file_path(Some(p.clone()))?
            .finish(),
        Source::Bytes(b) => options
            .into_reader_with_file_handle(Cursor::new(b.as_slice()))
            .finish(),
    }
}

fn missing_column(path: &Path, frame: &DataFrame, name: &str) -> Error {
    Error::MissingColumn {
        path: path.to_owned(),
        column: name.to_owned(),
        available: frame
            .get_column_names()
            .iter()
            .map(|s| s.to_string())
            .collect(),
    }
}

fn input_error(path: &Path, e: PolarsError) -> Error {
    let message = match &e {
        PolarsError::NoData(_) => "the file is empty: there is no header and no rows".to_owned(),
        other => format!("cannot read the table: {}", first_line(&other.to_string())),
    };
    Error::Input {
        path: path.to_owned(),
        message,
    }
}

fn first_line(s: &str) -> &str {
    s.lines().next().unwrap_or(s)
}

fn check_readable(path: &Path) -> Result<(), Error> {
    let meta = std::fs::metadata(path).map_err(|e| Error::Input {
        path: path.to_owned(),
        message: match e.kind() {
            std::io::ErrorKind::NotFound => "no such file".to_owned(),
            std::io::ErrorKind::PermissionDenied => "permission denied".to_owned(),
            _ => e.to_string(),
        },
    })?;
    if meta.is_dir() {
        return Err(Error::Input {
            path: path.to_owned(),
            message: "is a folder, not a table file".to_owned(),
        });
    }
    if meta.len() == 0 {
        return Err(Error::Input {
            path: path.to_owned(),
            message: "the file is empty: there is no header and no rows".to_owned(),
        });
    }
    Ok(())
}

fn read_frame(
    source: &Source,
    format: TableFormat,
    text_columns: &[&str],
    projection: Option<&[&str]>,
    opts: &ReadOptions,
) -> PolarsResult<DataFrame> {
    let owned = |cols: &[&str]| cols.iter().map(|s| s.to_string()).collect::<Vec<_>>();
    match format {
        TableFormat::Csv { delimiter } => {
            read_csv(source, delimiter, text_columns, projection, opts)
        }
        TableFormat::Parquet => ParquetReader::new(source.file()?)
            .with_columns(projection.map(owned))
            .finish(),
        TableFormat::Ipc => IpcReader::new(source.file()?)
            .with_columns(projection.map(owned))
            .finish(),
        TableFormat::NdJson => {
            let frame = JsonReader::new(source.file()?)
                .with_json_format(JsonFormat::JsonLines)
                .finish()?;
            match projection {
                Some(cols) => frame.select(owned(cols)),
                None => Ok(frame),
            }
        }
    }
}

fn arrow_names(schema: &ArrowSchema) -> Vec<String> {
    schema.iter_names().map(|s| s.to_string()).collect()
}

fn read_csv(
    source: &Source,
    delimiter: u8,
    text_columns: &[&str],
    projection: Option<&[&str]>,
    opts: &ReadOptions,
) -> PolarsResult<DataFrame> {
    let overwrite: Schema = text_columns
        .iter()
        .map(|c| Field::new((*c).into(), DataType::String))
        .collect();
    // Every column is parsed and the projection taken afterwards: a reader
    // limited to some columns does not notice a row with more fields than
    // the header.
    let options = CsvReadOptions::default()
        .with_has_header(true)
        .with_schema_overwrite(Some(Arc::new(overwrite)))
        .with_parse_options(
            CsvParseOptions::default()
                .with_separator(delimiter)
                .with_encoding(encoding(opts)),
        );
    let frame = csv_reader(source, options)?;
    match projection {
        Some(cols) => frame.select(cols.iter().copied()),
        None => Ok(frame),
    }
}

/// Find where a CSV file goes wrong, in words a user can act on: the
/// reader's own errors do not always say which row.
fn diagnose_csv(source: &Source, delimiter: u8, lossy_utf8: bool) -> Option<String> {
    let bytes: std::borrow::Cow<[u8]> = match source {
        Source::File(p) => std::fs::read(p).ok()?.into(),
        Source::Bytes(b) => b.as_slice().into(),
    };
    if let Some(line) = unclosed_quote_line(&bytes) {
        return Some(format!(
            "line {line}: a quoted field opens here and is never closed; close the quote or double the \" inside it"
        ));
    }
    let mut reader = csv::ReaderBuilder::new()
        .delimiter(delimiter)
        .has_headers(true)
        .from_reader(&bytes[..]);
    let header = reader.byte_headers().ok()?.clone();
    for (i, record) in reader.byte_records().enumerate() {
        let row = i + 1;
        match record {
            Err(e) => match e.kind() {
                csv::ErrorKind::UnequalLengths {
                    pos,
                    expected_len,
                    len,
                } => {
                    let line = pos.as_ref().map_or(0, |p| p.line());
                    return Some(format!(
                        "row {row} (line {line}) has {len} fields but the header has {expected_len}; \
                         fix the row, or check the delimiter (--delimiter)"
                    ));
                }
                _ => return Some(format!("row {row}: {e}")),
            },
            Ok(record) if !lossy_utf8 => {
                if let Some(field) = record.iter().position(|f| std::str::from_utf8(f).is_err()) {
                    let line = record.position().map_or(0, |p| p.line());
                    let column = header
                        .get(field)
                        .map(String::from_utf8_lossy)
                        .unwrap_or_default();
                    return Some(format!(
                        "row {row} (line {line}), column \"{column}\": invalid UTF-8; re-encode the file \
                         as UTF-8, or pass --lossy-utf8 to replace bad bytes with U+FFFD"
                    ));
                }
            }
            Ok(_) => {}
        }
    }
    None
}

/// The line where a quote opens that the file never closes, if any.
fn unclosed_quote_line(bytes: &[u8]) -> Option<usize> {
    let mut in_quotes = false;
    let mut opened_at = 0;
    for (i, &b) in bytes.iter().enumerate() {
        if b == b'"' {
            in_quotes = !in_quotes;
            if in_quotes {
                opened_at = i;
            }
        }
    }
    in_quotes.then(|| bytes[..opened_at].iter().filter(|&&b| b == b'\n').count() + 1)
}

/// The column names of a table, from its header or schema.
pub fn table_columns(path: &Path, opts: &ReadOptions) -> Result<Vec<String>, Error> {
    let format = TableFormat::of(path, opts.delimiter)?;
    let source = Source::open(path)?;
    column_names(&source, format, opts).map_err(|e| input_error(path, e))
}

/// Whether a table can be read batch by batch (files in CSV, Parquet or
/// Arrow IPC); standard input and NDJSON are read whole.
pub fn can_stream(path: &Path, opts: &ReadOptions) -> bool {
    path.as_os_str() != "-"
        && matches!(
            TableFormat::of(path, opts.delimiter),
            Ok(TableFormat::Csv { .. } | TableFormat::Parquet | TableFormat::Ipc)
        )
}

/// The rows of one text column of a batch from [`for_each_batch`]; an error
/// names the input file.
pub fn batch_text<'a>(
    batch: &'a DataFrame,
    column: &str,
    path: &Path,
) -> Result<Vec<Option<&'a str>>, Error> {
    let text = batch
        .column(column)
        .and_then(|c| c.str())
        .map_err(|e| Error::Input {
            path: path.to_owned(),
            message: e.to_string(),
        })?;
    Ok(text.iter().collect())
}

/// A table opened for streaming: a lazy scan (polars' streaming engine) of
/// a CSV, Parquet or Arrow IPC file whose described columns are cast to
/// text, with the notes for the user and what it takes to locate a read
/// error in the file.
pub struct StreamedTable {
    /// The scan; run it with `Engine::Streaming` so that only a few
    /// morsels are in memory at a time.
    pub lazy: LazyFrame,
    /// Notes for the user, as [`Table::notes`].
    pub notes: Vec<String>,
    path: PathBuf,
    source: Source,
    format: TableFormat,
    opts: ReadOptions,
}

impl StreamedTable {
    /// Open `path` (checking that it holds `text_columns`); `projection`
    /// limits the columns read.
    pub fn open(
        path: &Path,
        text_columns: &[&str],
        projection: Option<&[&str]>,
        opts: &ReadOptions,
    ) -> Result<StreamedTable, Error> {
        let format = TableFormat::of(path, opts.delimiter)?;
        let source = Source::open(path)?;
        let fail = |e| read_error(path, &source, format, opts, e);
        let names = column_names(&source, format, opts).map_err(fail)?;
        if let Some(missing) = text_columns.iter().find(|c| !names.iter().any(|n| n == *c)) {
            return Err(Error::MissingColumn {
                path: path.to_owned(),
                column: missing.to_string(),
                available: names,
            });
        }
        let mut lazy = scan(path, format, text_columns, opts).map_err(fail)?;
        if let Some(cols) = projection {
            lazy = lazy.select(cols.iter().map(|c| col(*c)).collect::<Vec<_>>());
            if matches!(format, TableFormat::Csv { .. }) {
                // A CSV scan limited to some columns does not notice a row
                // with more fields than the header; every field is parsed
                // so that such a row is reported wherever it is.
                lazy = lazy.with_projection_pushdown(false);
            }
        }
        let schema = lazy.collect_schema().map_err(fail)?;
        let notes = text_columns
            .iter()
            .filter_map(|c| {
                schema
                    .get(c)
                    .filter(|t| !matches!(t, DataType::String | DataType::Null))
                    .map(|t| (c, t))
            })
            .map(|(c, t)| format!("column \"{c}\" holds {t} values; they were read as text"))
            .collect();
        let casts: Vec<Expr> = text_columns
            .iter()
            .map(|c| col(*c).cast(DataType::String))
            .collect();
        Ok(StreamedTable {
            lazy: lazy.with_columns(casts),
            notes,
            path: path.to_owned(),
            source,
            format,
            opts: opts.clone(),
        })
    }

    /// An error of the running scan, located in the file when it is a CSV
    /// the reader rejected.
    pub fn read_error(&self, e: PolarsError) -> Error {
        read_error(&self.path, &self.source, self.format, &self.opts, e)
    }
}

/// Read a table in batches of about `batch_rows` rows, in file order, and
/// hand each to `each`. Only the batch in hand (and polars' read-ahead) is
/// in memory. `projection` limits the columns read. Returns notes for the
/// user, as [`Table::notes`].
pub fn for_each_batch(
    path: &Path,
    text_columns: &[&str],
    projection: Option<&[&str]>,
    opts: &ReadOptions,
    batch_rows: usize,
    mut each: impl FnMut(DataFrame) -> Result<(), Error>,
) -> Result<Vec<String>, Error> {
    let table = StreamedTable::open(path, text_columns, projection, opts)?;
    let (send, receive) = std::sync::mpsc::sync_channel::<DataFrame>(2);
    let sink = table
        .lazy
        .clone()
        .sink_batches(
            PlanCallback::new(move |df: DataFrame| Ok(send.send(df).is_err())),
            true,
            std::num::NonZeroUsize::new(batch_rows.max(1)),
        )
        .map_err(|e| table.read_error(e))?;
    let runner =
        std::thread::spawn(move || sink.collect_with_engine(Engine::Streaming).map(|_| ()));
    let mut failure = None;
    for batch in receive.iter() {
        if let Err(e) = each(batch) {
            failure = Some(e);
            break;
        }
    }
    drop(receive);
    let read_result = runner
        .join()
        .unwrap_or_else(|_| Err(polars_err!(ComputeError: "the reader stopped unexpectedly")));
    if let Some(e) = failure {
        return Err(e);
    }
    match read_result {
        Ok(()) => Ok(table.notes),
        Err(e) => Err(table.read_error(e)),
    }
}

fn encoding(opts: &ReadOptions) -> CsvEncoding {
    if opts.lossy_utf8 {
        CsvEncoding::LossyUtf8
    } else {
        CsvEncoding::Utf8
    }
}

/// A read error, located in the file when it is a CSV the reader rejected.
fn read_error(
    path: &Path,
    source: &Source,
    format: TableFormat,
    opts: &ReadOptions,
    e: PolarsError,
) -> Error {
    match format {
        TableFormat::Csv { delimiter } => match diagnose_csv(source, delimiter, opts.lossy_utf8) {
            Some(place) => Error::Input {
                path: path.to_owned(),
                message: format!("cannot read the table: {place}"),
            },
            None => input_error(path, e),
        },
        _ => input_error(path, e),
    }
}

fn scan(
    path: &Path,
    format: TableFormat,
    text_columns: &[&str],
    opts: &ReadOptions,
) -> PolarsResult<LazyFrame> {
    let p = PlRefPath::new(path.to_string_lossy().as_ref());
    match format {
        TableFormat::Csv { delimiter } => {
            let overwrite: Schema = text_columns
                .iter()
                .map(|c| Field::new((*c).into(), DataType::String))
                .collect();
            LazyCsvReader::new(p)
                .with_has_header(true)
                .with_separator(delimiter)
                .with_encoding(encoding(opts))
                .with_dtype_overwrite(Some(Arc::new(overwrite)))
                .finish()
        }
        TableFormat::Parquet => LazyFrame::scan_parquet(p, ScanArgsParquet::default()),
        TableFormat::Ipc => LazyFrame::scan_ipc(p, Default::default(), Default::default()),
        TableFormat::NdJson => polars_bail!(ComputeError: "NDJSON is read whole, not in batches"),
    }
}
