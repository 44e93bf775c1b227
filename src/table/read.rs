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

use super::schema::{self, FileColumns};
use super::sniff;
use crate::error::Error;
use crate::render::shown;

/// A table format, chosen from a path's extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TableFormat {
    Csv { delimiter: u8 },
    Parquet,
    Ipc,
    NdJson,
    /// `.json`: one JSON array of records, or NDJSON, told apart by the
    /// first character.
    Json,
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
            "ndjson" | "jsonl" => TableFormat::NdJson,
            "json" => TableFormat::Json,
            _ if delimiter.is_some() => TableFormat::Csv { delimiter: delimiter.unwrap_or(b',') },
            _ => {
                return Err(Error::Input {
                    path: path.to_owned(),
                    message: format!(
                        "unknown table format {:?}; descry reads .csv, .tsv, .parquet, .arrow/.ipc/.feather, \
                         .ndjson/.jsonl and .json (or give --delimiter to read any file as CSV)",
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
    /// Leave the described columns of Parquet, IPC and JSON files in their
    /// own type (`apply` writes them back unchanged and describes their
    /// text, see [`text_of`]); CSV columns are text either way.
    pub keep_types: bool,
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
        Table::read_some(path, text_columns, None, opts)
    }

    /// Read only the given columns (as text).
    pub fn read_columns(path: &Path, columns: &[&str], opts: &ReadOptions) -> Result<Table, Error> {
        Table::read_some(path, columns, Some(columns), opts)
    }

    /// Read the `projection` columns (all when `None`); `text_columns`
    /// are read (or cast) as strings and must exist.
    pub fn read_some(
        path: &Path,
        text_columns: &[&str],
        projection: Option<&[&str]>,
        opts: &ReadOptions,
    ) -> Result<Table, Error> {
        let file = Opened::new(path, opts)?;
        file.check_columns(text_columns, projection)?;
        let frame = read_frame(&file, text_columns, projection, opts).map_err(|e| file.error(opts, e))?;
        Table::finish(path, frame, text_columns, opts.keep_types)
    }

    fn finish(
        path: &Path,
        mut frame: DataFrame,
        text_columns: &[&str],
        keep_types: bool,
    ) -> Result<Table, Error> {
        let mut notes = Vec::new();
        for &name in text_columns {
            let Some(col) = frame.column(name).ok() else {
                return Err(missing_column(path, &frame, name));
            };
            let dtype = col.dtype().clone();
            if dtype != DataType::String {
                notes.extend(text_note(name, &dtype, keep_types));
                if !keep_types {
                    let text = text_of(col).map_err(|e| input_error(path, e))?;
                    frame
                        .replace(name, text.into_series().into())
                        .map_err(|e| input_error(path, e))?;
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

/// The note for a described column that is not text.
fn text_note(name: &str, dtype: &DataType, kept: bool) -> Option<String> {
    let how = if kept {
        "their text was described and the column is written unchanged"
    } else {
        "they were read as text"
    };
    (*dtype != DataType::Null)
        .then(|| format!("column {} holds {dtype} values; {how}", shown(name)))
}

/// A column's values as text: a string column as it is, any other type
/// rendered by polars (the column itself is left as it was).
pub fn text_of(column: &Column) -> PolarsResult<StringChunked> {
    match column.dtype() {
        DataType::String => Ok(column.str()?.clone()),
        _ => Ok(column.cast(&DataType::String)?.str()?.clone()),
    }
}

/// A file on disk, or standard input read in full.
enum Source {
    File(PathBuf),
    Bytes(Vec<u8>),
}

impl Source {
    fn open(path: &Path, format: TableFormat) -> Result<Source, Error> {
        if path.as_os_str() != "-" {
            check_readable(path)?;
            let head = sniff::head(path).map_err(|e| Error::Input {
                path: path.to_owned(),
                message: format!("cannot read: {e}"),
            })?;
            sniff::check_head(&head, format).map_err(|message| Error::Input {
                path: path.to_owned(),
                message,
            })?;
            return Ok(Source::File(path.to_owned()));
        }
        let stdin_error = |message: String| Error::Input {
            path: path.to_owned(),
            message,
        };
        if std::io::IsTerminal::is_terminal(&std::io::stdin()) {
            return Err(stdin_error(
                "standard input is a terminal, not a table; pipe one in (e.g. `cat table.csv | descry ... -`) \
                 or give a file"
                    .to_owned(),
            ));
        }
        let mut buf = Vec::new();
        std::io::stdin()
            .read_to_end(&mut buf)
            .map_err(|e| stdin_error(format!("cannot read standard input: {e}")))?;
        if buf.is_empty() {
            return Err(stdin_error("standard input is empty".to_owned()));
        }
        sniff::check_head(&buf[..buf.len().min(16)], format).map_err(stdin_error)?;
        Ok(Source::Bytes(buf))
    }

    fn file(&self) -> PolarsResult<File> {
        match self {
            Source::File(p) => Ok(File::open(p)?),
            Source::Bytes(_) => polars_bail!(ComputeError: "standard input holds CSV only"),
        }
    }
}

/// A table file opened and looked over: its format, every column's name,
/// and, for Parquet and Arrow IPC, what polars cannot read of it.
struct Opened {
    path: PathBuf,
    source: Source,
    format: TableFormat,
    names: Vec<String>,
    file_columns: Option<FileColumns>,
}

impl Opened {
    fn new(path: &Path, opts: &ReadOptions) -> Result<Opened, Error> {
        let format = TableFormat::of(path, opts.delimiter)?;
        let source = Source::open(path, format)?;
        let fail = |e| read_error(path, &source, format, opts, e);
        let file_columns = match format {
            TableFormat::Parquet => Some(schema::parquet_columns(path).map_err(fail)?),
            TableFormat::Ipc => Some(schema::ipc_columns(path).map_err(fail)?),
            _ => None,
        };
        let names = match &file_columns {
            Some(c) => c.names.clone(),
            None => column_names(&source, format, opts).map_err(fail)?,
        };
        Ok(Opened {
            path: path.to_owned(),
            source,
            format,
            names,
            file_columns,
        })
    }

    /// Check that `text_columns` exist and that the columns to read (all
    /// when `projection` is `None`) can be told apart and read.
    fn check_columns(&self, text_columns: &[&str], projection: Option<&[&str]>) -> Result<(), Error> {
        let input = |message: String| Error::Input {
            path: self.path.clone(),
            message,
        };
        if let Some(missing) = text_columns.iter().find(|c| !self.names.iter().any(|n| n == *c)) {
            return Err(Error::MissingColumn {
                path: self.path.clone(),
                column: escaped_name(missing),
                available: self.names.iter().map(|n| escaped_name(n)).collect(),
            });
        }
        let read: Vec<&str> = match projection {
            Some(cols) => cols.to_vec(),
            None => self.names.iter().map(String::as_str).collect(),
        };
        if let Some((name, at)) = repeated_name(&self.names, &read) {
            return Err(input(format!(
                "the column name {} is given to more than one column ({}); descry cannot tell them apart: \
                 rename one",
                shown(name),
                positions(&at)
            )));
        }
        let Some(file) = &self.file_columns else {
            return Ok(());
        };
        if let Some((name, dtype)) = read.iter().find_map(|c| file.unsupported_type(c).map(|t| (c, t))) {
            return Err(input(format!(
                "column {} has the type {dtype}, which descry cannot read (its polars is built without \
                 that type); convert the column to a plain type, or leave it out (apply --only-features \
                 --keep names the columns to carry)",
                shown(name)
            )));
        }
        Ok(())
    }

    /// Whether polars can scan the whole file (a streaming scan converts
    /// every column's type, read or not).
    fn scannable(&self) -> bool {
        self.file_columns.as_ref().is_none_or(FileColumns::all_readable)
    }

    /// The file positions of `columns`.
    fn indices(&self, columns: &[&str]) -> Vec<usize> {
        columns
            .iter()
            .filter_map(|c| self.names.iter().position(|n| n == c))
            .collect()
    }

    fn error(&self, opts: &ReadOptions, e: PolarsError) -> Error {
        read_error(&self.path, &self.source, self.format, opts, e)
    }
}

/// The first of `read` whose name more than one column has, with the
/// 1-based positions of those columns.
fn repeated_name<'a>(names: &[String], read: &[&'a str]) -> Option<(&'a str, Vec<usize>)> {
    read.iter().find_map(|c| {
        let at: Vec<usize> = (0..names.len()).filter(|&i| names[i] == *c).map(|i| i + 1).collect();
        (at.len() > 1).then_some((*c, at))
    })
}

/// "columns 2 and 5", "columns 1, 3 and 4".
pub(crate) fn positions(at: &[usize]) -> String {
    let list: Vec<String> = at.iter().map(|p| p.to_string()).collect();
    match list.split_last() {
        Some((last, rest)) if !rest.is_empty() => format!("columns {} and {last}", rest.join(", ")),
        _ => format!("column {}", list.join("")),
    }
}

/// A column name as shown in a message, control characters escaped.
fn escaped_name(name: &str) -> String {
    crate::render::escaped(name)
}

/// The names of every column of a CSV or JSON table, read from its header
/// or its records.
fn column_names(
    source: &Source,
    format: TableFormat,
    opts: &ReadOptions,
) -> PolarsResult<Vec<String>> {
    let names = match format {
        TableFormat::Csv { delimiter } => {
            // polars parses only the header record: its whole-file reader,
            // even when asked for no rows, splits and parses chunks ahead.
            let header = Source::Bytes(header_record(source)?);
            if let Some((name, at)) = repeated_header(&header, delimiter) {
                polars_bail!(ComputeError:
                    "the header gives the name {} to more than one column ({}); rename one",
                    shown(&name), positions(&at));
            }
            let options = CsvReadOptions::default()
                .with_has_header(true)
                .with_parse_options(
                    CsvParseOptions::default()
                        .with_separator(delimiter)
                        .with_encoding(encoding(opts)),
                );
            let frame = csv_reader(&header, options)?;
            frame
                .get_column_names()
                .iter()
                .map(|s| s.to_string())
                .collect()
        }
        TableFormat::NdJson | TableFormat::Json => read_json(source, format)?
            .get_column_names()
            .iter()
            .map(|s| s.to_string())
            .collect(),
        TableFormat::Parquet | TableFormat::Ipc => {
            polars_bail!(ComputeError: "Parquet and IPC names come from their schema")
        }
    };
    Ok(names)
}

/// A name the CSV header record gives to more than one column, with their
/// 1-based positions.
fn repeated_header(header: &Source, delimiter: u8) -> Option<(String, Vec<usize>)> {
    let Source::Bytes(bytes) = header else {
        return None;
    };
    let bytes = bytes.strip_prefix(b"\xef\xbb\xbf").unwrap_or(bytes);
    let record = csv::ReaderBuilder::new()
        .delimiter(delimiter)
        .has_headers(false)
        .from_reader(bytes)
        .byte_records()
        .next()?
        .ok()?;
    let names: Vec<String> = record.iter().map(|f| String::from_utf8_lossy(f).into_owned()).collect();
    let all: Vec<&str> = names.iter().map(String::as_str).collect();
    repeated_name(&names, &all).map(|(n, at)| (n.to_owned(), at))
}

/// Read a JSON table whole: records one per line, or (`.json`) one array
/// of records. The schema is taken from every record, so that a key first
/// seen deep in the file is not dropped.
fn read_json(source: &Source, format: TableFormat) -> PolarsResult<DataFrame> {
    let bytes = std::fs::read(match source {
        Source::File(p) => p,
        Source::Bytes(_) => polars_bail!(ComputeError: "standard input holds CSV only"),
    })?;
    if let Some(line) = sniff::too_deep(&bytes, sniff::MAX_JSON_DEPTH) {
        polars_bail!(ComputeError:
            "line {line}: values nested deeper than {} levels; descry reads records of plain values \
             (flatten the nested fields first)", sniff::MAX_JSON_DEPTH);
    }
    let json_format = match format {
        TableFormat::Json if sniff::is_json_array(&bytes) => JsonFormat::Json,
        _ => JsonFormat::JsonLines,
    };
    if matches!(json_format, JsonFormat::JsonLines) {
        check_json_lines(&bytes)?;
    }
    JsonReader::new(Cursor::new(bytes))
        .with_json_format(json_format)
        .infer_schema_len(None)
        .finish()
}

/// Refuse, before polars parses them, NDJSON lines its reader panics on:
/// a line that holds no object (`null`), and an integer beyond Int64
/// (polars infers Int128, alone or as the supertype of UInt64 and Int64,
/// a type descry's polars is built without).
fn check_json_lines(bytes: &[u8]) -> PolarsResult<()> {
    for (i, text) in bytes.split(|&b| b == b'\n').enumerate() {
        let line = i + 1;
        let first = text.iter().find(|b| !b.is_ascii_whitespace());
        if first.is_some_and(|&b| b != b'{') {
            polars_bail!(ComputeError: "line {line}: a line of NDJSON must hold one object {{...}}");
        }
        let (mut in_string, mut escaped) = (false, false);
        let mut number = String::new();
        for &b in text.iter().chain([b' '].iter()) {
            if !in_string && (b.is_ascii_digit() || b"-+.eE".contains(&b)) {
                number.push(char::from(b));
                continue;
            }
            let integer = !number.is_empty() && !number.contains(['.', 'e', 'E']);
            if integer && number.parse::<i64>().is_err() {
                polars_bail!(ComputeError:
                    "line {line}: the integer {number} does not fit in a signed 64-bit integer; write it as a string");
            }
            number.clear();
            match b {
                _ if escaped => escaped = false,
                b'\\' if in_string => escaped = true,
                b'"' => in_string = !in_string,
                _ => {}
            }
        }
    }
    Ok(())
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
        column: escaped_name(name),
        available: frame
            .get_column_names()
            .iter()
            .map(|s| escaped_name(s))
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
    if !meta.is_file() {
        // A pipe or a device can be read only once, and descry reads a
        // file twice (its header or schema, then its rows).
        return Err(Error::Input {
            path: path.to_owned(),
            message: "is a pipe or a device, not a file; give - to read a CSV table from standard \
                      input, or save the table to a file first"
                .to_owned(),
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
    file: &Opened,
    text_columns: &[&str],
    projection: Option<&[&str]>,
    opts: &ReadOptions,
) -> PolarsResult<DataFrame> {
    // By position: a name may also belong to a column that is not read.
    let indices = projection.map(|cols| file.indices(cols));
    let source = &file.source;
    match file.format {
        TableFormat::Csv { delimiter } => {
            read_csv(source, delimiter, text_columns, projection, opts)
        }
        TableFormat::Parquet => ParquetReader::new(source.file()?)
            .with_projection(indices)
            .finish(),
        TableFormat::Ipc => IpcReader::new(source.file()?)
            .with_projection(indices)
            .finish(),
        TableFormat::NdJson | TableFormat::Json => {
            let frame = read_json(source, file.format)?;
            match projection {
                Some(cols) => frame.select(cols.iter().copied()),
                None => Ok(frame),
            }
        }
    }
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
    // When some columns are read, the others are parsed as text only to
    // check each row's length: a column inferred as integers from its first
    // rows must not fail the read at a value such as 9223372036854775808.
    let infer = if projection.is_some() { Some(0) } else { Some(100) };
    let options = CsvReadOptions::default()
        .with_has_header(true)
        .with_infer_schema_length(infer)
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
                        "row {row} (line {line}), column \"{}\": invalid UTF-8; re-encode the file \
                         as UTF-8, or pass --lossy-utf8 to replace bad bytes with U+FFFD",
                        escaped_name(&column)
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
    Ok(Opened::new(path, opts)?.names)
}

/// Whether a table can be read batch by batch: files in CSV, Parquet or
/// Arrow IPC, when polars can read every column of the file (its scan
/// converts every column's type). Standard input, JSON and files with
/// columns polars cannot hold are read whole, and only the columns asked
/// for.
pub fn can_stream(path: &Path, opts: &ReadOptions) -> bool {
    let streamable_format = path.as_os_str() != "-"
        && matches!(
            TableFormat::of(path, opts.delimiter),
            Ok(TableFormat::Csv { .. } | TableFormat::Parquet | TableFormat::Ipc)
        );
    // A file that cannot be opened streams as far as this question goes:
    // the reader then reports why.
    streamable_format && Opened::new(path, opts).is_ok_and(|f| f.scannable())
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
    file: Opened,
    opts: ReadOptions,
}

impl StreamedTable {
    /// Open `path` (checking that it holds `text_columns`); `projection`
    /// limits the columns read. The file must be one [`can_stream`] accepts.
    pub fn open(
        path: &Path,
        text_columns: &[&str],
        projection: Option<&[&str]>,
        opts: &ReadOptions,
    ) -> Result<StreamedTable, Error> {
        let file = Opened::new(path, opts)?;
        file.check_columns(text_columns, projection)?;
        let fail = |e| file.error(opts, e);
        let text_only = projection.is_some_and(|cols| cols.iter().all(|c| text_columns.contains(c)));
        let mut lazy = scan(path, text_only, file.format, text_columns, opts).map_err(fail)?;
        if let Some(cols) = projection {
            lazy = lazy.select(cols.iter().map(|c| col(*c)).collect::<Vec<_>>());
            if matches!(file.format, TableFormat::Csv { .. }) {
                // A CSV scan limited to some columns does not notice a row
                // with more fields than the header; every field is parsed
                // so that such a row is reported wherever it is.
                lazy = lazy.with_projection_pushdown(false);
            }
        }
        let schema = lazy.collect_schema().map_err(fail)?;
        let notes = text_columns
            .iter()
            .filter_map(|c| schema.get(c).map(|t| (c, t)))
            .filter(|(_, t)| **t != DataType::String)
            .filter_map(|(c, t)| text_note(c, t, opts.keep_types))
            .collect();
        if !opts.keep_types {
            let casts: Vec<Expr> = text_columns
                .iter()
                .map(|c| col(*c).cast(DataType::String))
                .collect();
            lazy = lazy.with_columns(casts);
        }
        Ok(StreamedTable {
            lazy,
            notes,
            file,
            opts: opts.clone(),
        })
    }

    /// An error of the running scan, located in the file when it is a CSV
    /// the reader rejected.
    pub fn read_error(&self, e: PolarsError) -> Error {
        self.file.error(&self.opts, e)
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

/// A lazy scan of the file at `path` itself: polars' glob expansion
/// (`data[1].csv` read as `data1.csv`, `*` as many files) and folder
/// partitioning are off, because a path names one file.
///
/// `text_only` reads every column as text, for a scan that keeps only the
/// described columns (see [`read_csv`]).
fn scan(
    path: &Path,
    text_only: bool,
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
                .with_glob(false)
                .with_has_header(true)
                .with_infer_schema_length(if text_only { Some(0) } else { Some(100) })
                .with_separator(delimiter)
                .with_encoding(encoding(opts))
                .with_dtype_overwrite(Some(Arc::new(overwrite)))
                .finish()
        }
        TableFormat::Parquet => LazyFrame::scan_parquet(
            p,
            ScanArgsParquet {
                glob: false,
                hive_options: HiveOptions::new_disabled(),
                ..ScanArgsParquet::default()
            },
        ),
        TableFormat::Ipc => LazyFrame::scan_ipc(
            p,
            Default::default(),
            UnifiedScanArgs {
                glob: false,
                hive_options: HiveOptions::new_disabled(),
                ..UnifiedScanArgs::default()
            },
        ),
        TableFormat::NdJson | TableFormat::Json => {
            polars_bail!(ComputeError: "JSON is read whole, not in batches")
        }
    }
}
