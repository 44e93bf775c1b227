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
    Csv {
        delimiter: u8,
    },
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
        Input::open(path, opts)?.read(text_columns, projection)
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

/// Whether descry can describe a column of this type: read its values as
/// text. Nested values (lists, arrays, structs) have no one text, and
/// polars renders no time-zone-aware timestamp as text.
pub fn describable(dtype: &DataType) -> bool {
    !dtype.is_nested() && !matches!(dtype, DataType::Datetime(_, Some(_)))
}

/// Why a column of this type cannot be described, naming it.
pub fn not_describable(name: &str, dtype: &DataType) -> String {
    format!(
        "column {} holds {dtype} values, which descry cannot describe: it reads a described column \
         as text, one value per row; convert the column to text first (or describe another column)",
        shown(name)
    )
}

/// A column's values as text: a string column as it is, any other type
/// rendered by polars (the column itself is left as it was).
pub fn text_of(column: &Column) -> PolarsResult<StringChunked> {
    match column.dtype() {
        DataType::String => Ok(column.str()?.clone()),
        t if !describable(t) => {
            Err(polars_err!(ComputeError: "{}", not_describable(column.name(), t)))
        }
        _ => Ok(column
            .cast(&DataType::String)
            .map_err(|e| polars_err!(ComputeError: "column {}: {e}", shown(column.name())))?
            .str()?
            .clone()),
    }
}

/// A table input opened once: its format, the names of its columns, and
/// the file its rows are read from. Standard input is copied to a
/// temporary file first (deleted with the last clone of the `Input`), so
/// that every input is read by the same route, in batches.
#[derive(Clone)]
pub struct Input {
    /// The path as the user gave it (`-` for standard input), for messages.
    path: PathBuf,
    /// The file read: `path`, or the copy of standard input.
    file: PathBuf,
    _spool: Option<Arc<tempfile::TempPath>>,
    format: TableFormat,
    /// Every column's name, in file order.
    names: Vec<String>,
    /// For CSV, the names polars' reader gives the columns, where one
    /// differs from the header's (polars keeps a doubled quote `""` in a
    /// header name); the scan renames them.
    polars_names: Option<Vec<String>>,
    file_columns: Option<FileColumns>,
    opts: ReadOptions,
}

impl Input {
    /// Open a table (`-` reads CSV from standard input) and read its
    /// column names.
    pub fn open(path: &Path, opts: &ReadOptions) -> Result<Input, Error> {
        let format = TableFormat::of(path, opts.delimiter)?;
        let (file, spool) = if path.as_os_str() == "-" {
            let spool = spool_stdin(format)?;
            (spool.to_path_buf(), Some(Arc::new(spool)))
        } else {
            check_file(path, format)?;
            (path.to_owned(), None)
        };
        let mut input = Input {
            path: path.to_owned(),
            file,
            _spool: spool,
            format,
            names: Vec::new(),
            polars_names: None,
            file_columns: None,
            opts: opts.clone(),
        };
        let (names, polars_names, file_columns) = input.read_names().map_err(|e| input.error(e))?;
        input.polars_names = polars_names.filter(|theirs| *theirs != names);
        input.names = names;
        input.file_columns = file_columns;
        Ok(input)
    }

    /// Every column's name; for CSV also the names polars gives them, and
    /// for Parquet and IPC what polars can read of each column.
    #[allow(clippy::type_complexity)]
    fn read_names(&self) -> PolarsResult<(Vec<String>, Option<Vec<String>>, Option<FileColumns>)> {
        let names = |frame: DataFrame| {
            frame
                .get_column_names()
                .iter()
                .map(|s| s.to_string())
                .collect()
        };
        Ok(match self.format {
            TableFormat::Parquet => {
                let columns = schema::parquet_columns(&self.file)?;
                (columns.names.clone(), None, Some(columns))
            }
            TableFormat::Ipc => {
                let columns = schema::ipc_columns(&self.file)?;
                (columns.names.clone(), None, Some(columns))
            }
            TableFormat::Csv { delimiter } => {
                let (header, polars_names) = csv_names(&self.file, delimiter, &self.opts)?;
                (header, Some(polars_names), None)
            }
            TableFormat::NdJson | TableFormat::Json => {
                (names(read_json(&self.file, self.format)?), None, None)
            }
        })
    }

    /// The path as the user gave it.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Every column's name, in file order.
    pub fn columns(&self) -> &[String] {
        &self.names
    }

    /// The same input, read with `keep_types` as given (see
    /// [`ReadOptions::keep_types`]).
    pub fn keeping_types(&self, keep_types: bool) -> Input {
        let mut input = self.clone();
        input.opts.keep_types = keep_types;
        input
    }

    /// A lazy scan of the `projection` columns (all when `None`), checking
    /// first that `text_columns` exist; they are cast to text unless types
    /// are kept.
    pub fn scan(
        &self,
        text_columns: &[&str],
        projection: Option<&[&str]>,
    ) -> Result<StreamedTable, Error> {
        self.check_columns(text_columns, projection)?;
        let fail = |e| self.error(e);
        let text_only =
            projection.is_some_and(|cols| cols.iter().all(|c| text_columns.contains(c)));
        let mut lazy = self
            .lazy(text_only, text_columns, projection)
            .map_err(fail)?;
        if let Some(cols) = projection {
            lazy = lazy.select(cols.iter().map(|c| col(*c)).collect::<Vec<_>>());
            if matches!(self.format, TableFormat::Csv { .. }) {
                // A CSV scan limited to some columns does not notice a row
                // with more fields than the header; every field is parsed
                // so that such a row is reported wherever it is.
                lazy = lazy.with_projection_pushdown(false);
            }
        }
        let schema = lazy.collect_schema().map_err(fail)?;
        if let Some((c, t)) = text_columns
            .iter()
            .filter_map(|c| schema.get(c).map(|t| (c, t)))
            .find(|(_, t)| !describable(t))
        {
            return Err(Error::Input {
                path: self.path.clone(),
                message: not_describable(c, t),
            });
        }
        let notes = text_columns
            .iter()
            .filter_map(|c| schema.get(c).map(|t| (c, t)))
            .filter(|(_, t)| **t != DataType::String)
            .filter_map(|(c, t)| text_note(c, t, self.opts.keep_types))
            .collect();
        if !self.opts.keep_types {
            let casts: Vec<Expr> = text_columns
                .iter()
                .map(|c| col(*c).cast(DataType::String))
                .collect();
            lazy = lazy.with_columns(casts);
        }
        Ok(StreamedTable {
            lazy,
            notes,
            input: self.clone(),
        })
    }

    /// Read the `projection` columns (all when `None`) whole: the scan of
    /// [`Input::scan`], collected.
    pub fn read(&self, text_columns: &[&str], projection: Option<&[&str]>) -> Result<Table, Error> {
        let table = self.scan(text_columns, projection)?;
        let frame = table
            .lazy
            .clone()
            .collect_with_engine(Engine::Streaming)
            .map(|result| result.unwrap_single())
            .map_err(|e| table.read_error(e))?;
        Ok(Table {
            path: self.path.clone(),
            frame,
            notes: table.notes,
        })
    }

    /// Read the table in batches of about `batch_rows` rows, in file
    /// order, and hand each to `each`. Only the batch in hand (and polars'
    /// read-ahead) is in memory. Returns notes for the user, as
    /// [`Table::notes`].
    pub fn for_each_batch(
        &self,
        text_columns: &[&str],
        projection: Option<&[&str]>,
        batch_rows: usize,
        mut each: impl FnMut(DataFrame) -> Result<(), Error>,
    ) -> Result<Vec<String>, Error> {
        let table = self.scan(text_columns, projection)?;
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

    /// Check that `text_columns` exist and that the columns to read (all
    /// when `projection` is `None`) can be told apart and read.
    fn check_columns(
        &self,
        text_columns: &[&str],
        projection: Option<&[&str]>,
    ) -> Result<(), Error> {
        let input = |message: String| Error::Input {
            path: self.path.clone(),
            message,
        };
        if let Some(missing) = text_columns
            .iter()
            .find(|c| !self.names.iter().any(|n| n == *c))
        {
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
        if let Some((name, dtype)) = read
            .iter()
            .find_map(|c| file.unsupported_type(c).map(|t| (c, t)))
        {
            return Err(input(format!(
                "column {} has the type {dtype}, which descry cannot read (its polars is built without \
                 that type); convert the column to a plain type, or leave it out (apply --only-features \
                 --keep names the columns to carry)",
                shown(name)
            )));
        }
        Ok(())
    }

    /// The file as a lazy frame of every column. CSV, and Parquet and IPC
    /// files whose every column polars can hold, are scanned in batches; a
    /// Parquet or IPC file with other columns has the `projection` (which
    /// [`Input::check_columns`] found readable) read whole, and so has JSON.
    ///
    /// `text_only` reads every CSV column as text, for a scan that keeps
    /// only the described columns: a column inferred as integers from its
    /// first rows must not fail the read at a value such as
    /// 9223372036854775808.
    fn lazy(
        &self,
        text_only: bool,
        text_columns: &[&str],
        projection: Option<&[&str]>,
    ) -> PolarsResult<LazyFrame> {
        let scannable = self
            .file_columns
            .as_ref()
            .is_none_or(FileColumns::all_readable);
        // By position: a name may also belong to a column that is not read.
        let indices = projection.map(|cols| self.indices(cols));
        match self.format {
            TableFormat::Csv { delimiter } => self.scan_csv(delimiter, text_only, text_columns),
            TableFormat::Parquet | TableFormat::Ipc if scannable => scan(&self.file, self.format),
            TableFormat::Parquet => Ok(ParquetReader::new(File::open(&self.file)?)
                .with_projection(indices)
                .finish()?
                .lazy()),
            TableFormat::Ipc => Ok(IpcReader::new(File::open(&self.file)?)
                .with_projection(indices)
                .finish()?
                .lazy()),
            TableFormat::NdJson | TableFormat::Json => {
                Ok(read_json(&self.file, self.format)?.lazy())
            }
        }
    }

    /// A lazy CSV scan whose `text_columns` are read as text, its columns
    /// named as the header names them.
    fn scan_csv(
        &self,
        delimiter: u8,
        text_only: bool,
        text_columns: &[&str],
    ) -> PolarsResult<LazyFrame> {
        let polars_name = |name: &str| -> PlSmallStr {
            match (
                &self.polars_names,
                self.names.iter().position(|n| n == name),
            ) {
                (Some(theirs), Some(i)) => theirs[i].as_str().into(),
                _ => name.into(),
            }
        };
        let overwrite: Schema = text_columns
            .iter()
            .map(|c| Field::new(polars_name(c), DataType::String))
            .collect();
        let lazy = LazyCsvReader::new(PlRefPath::new(self.file.to_string_lossy().as_ref()))
            .with_glob(false)
            .with_has_header(true)
            .with_infer_schema_length(if text_only { Some(0) } else { Some(100) })
            .with_separator(delimiter)
            .with_encoding(encoding(&self.opts))
            .with_dtype_overwrite(Some(Arc::new(overwrite)))
            .finish()?;
        Ok(match &self.polars_names {
            Some(theirs) => lazy.rename(theirs, &self.names, true),
            None => lazy,
        })
    }

    /// The file positions of `columns`.
    fn indices(&self, columns: &[&str]) -> Vec<usize> {
        columns
            .iter()
            .filter_map(|c| self.names.iter().position(|n| n == c))
            .collect()
    }

    /// A read error, located in the file when it is a CSV the reader
    /// rejected.
    fn error(&self, e: PolarsError) -> Error {
        if let TableFormat::Csv { delimiter } = self.format {
            if let Some(place) = diagnose_csv(&self.file, delimiter, self.opts.lossy_utf8) {
                return Error::Input {
                    path: self.path.clone(),
                    message: format!("cannot read the table: {place}"),
                };
            }
        }
        input_error(&self.path, e)
    }
}

/// Check that `path` is a table file of `format` that can be read.
fn check_file(path: &Path, format: TableFormat) -> Result<(), Error> {
    check_readable(path)?;
    let head = sniff::head(path).map_err(|e| Error::Input {
        path: path.to_owned(),
        message: format!("cannot read: {e}"),
    })?;
    sniff::check_head(&head, format).map_err(|message| Error::Input {
        path: path.to_owned(),
        message,
    })
}

/// Copy standard input to a temporary file.
fn spool_stdin(format: TableFormat) -> Result<tempfile::TempPath, Error> {
    let stdin_error = |message: String| Error::Input {
        path: PathBuf::from("-"),
        message,
    };
    if std::io::IsTerminal::is_terminal(&std::io::stdin()) {
        return Err(stdin_error(
            "standard input is a terminal, not a table; pipe one in (e.g. `cat table.csv | descry ... -`) \
             or give a file"
                .to_owned(),
        ));
    }
    let mut spool = tempfile::NamedTempFile::new().map_err(|e| {
        stdin_error(format!(
            "cannot create a temporary file to hold standard input: {e}"
        ))
    })?;
    let copied = std::io::copy(&mut std::io::stdin().lock(), spool.as_file_mut()).map_err(|e| {
        stdin_error(format!(
            "cannot copy standard input to {}: {e}",
            spool.path().display()
        ))
    })?;
    if copied == 0 {
        return Err(stdin_error("standard input is empty".to_owned()));
    }
    let spool = spool.into_temp_path();
    let head = sniff::head(&spool).map_err(|e| stdin_error(format!("cannot read: {e}")))?;
    sniff::check_head(&head, format).map_err(stdin_error)?;
    Ok(spool)
}

/// The first of `read` whose name more than one column has, with the
/// 1-based positions of those columns.
fn repeated_name<'a>(names: &[String], read: &[&'a str]) -> Option<(&'a str, Vec<usize>)> {
    read.iter().find_map(|c| {
        let at: Vec<usize> = (0..names.len())
            .filter(|&i| names[i] == *c)
            .map(|i| i + 1)
            .collect();
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

/// The names of a CSV file's columns: as its header record gives them
/// (RFC 4180: `"c""0"` names `c"0`), and as polars' reader names them. The
/// header names are the polars ones when the two disagree in number, and
/// for an empty name.
fn csv_names(
    file: &Path,
    delimiter: u8,
    opts: &ReadOptions,
) -> PolarsResult<(Vec<String>, Vec<String>)> {
    // polars parses only the header record: its whole-file reader, even
    // when asked for no rows, splits and parses chunks ahead.
    let header = header_record(file)?;
    if !header.ends_with(b"\n") && has_bare_cr(&header) {
        polars_bail!(ComputeError:
            "the lines end with a carriage return alone (\\r); descry reads line breaks as \\n or \\r\\n: convert them first");
    }
    let line_one = header.strip_prefix(b"\xef\xbb\xbf").unwrap_or(&header);
    if !line_one.is_empty() && line_one.iter().all(|b| matches!(b, b'\r' | b'\n')) {
        polars_bail!(ComputeError:
            "line 1 is blank; the first line must be the header, naming the columns");
    }
    let options = CsvReadOptions::default()
        .with_has_header(true)
        .with_parse_options(
            CsvParseOptions::default()
                .with_separator(delimiter)
                .with_encoding(encoding(opts)),
        );
    let theirs: Vec<String> = options
        .into_reader_with_file_handle(Cursor::new(header.as_slice()))
        .finish()?
        .get_column_names()
        .iter()
        .map(|s| s.to_string())
        .collect();
    // An empty header name keeps the name polars gives it.
    let names = match header_names(&header, delimiter).filter(|ours| ours.len() == theirs.len()) {
        Some(ours) => ours
            .into_iter()
            .zip(&theirs)
            .map(|(ours, theirs)| {
                if ours.is_empty() {
                    theirs.clone()
                } else {
                    ours
                }
            })
            .collect(),
        None => theirs.clone(),
    };
    let all: Vec<&str> = names.iter().map(String::as_str).collect();
    if let Some((name, at)) = repeated_name(&names, &all) {
        polars_bail!(ComputeError:
            "the header gives the name {} to more than one column ({}); rename one",
            shown(name), positions(&at));
    }
    Ok((names, theirs))
}

/// Whether a carriage return ends a line outside double quotes (a CR
/// inside a quoted field is part of the field).
fn has_bare_cr(bytes: &[u8]) -> bool {
    let mut quoted = false;
    bytes.iter().enumerate().any(|(i, &b)| match b {
        b'"' => {
            quoted = !quoted;
            false
        }
        b'\r' => !quoted && bytes.get(i + 1) != Some(&b'\n'),
        _ => false,
    })
}

/// The names of a CSV header record, read by the `csv` crate.
fn header_names(header: &[u8], delimiter: u8) -> Option<Vec<String>> {
    let bytes = header.strip_prefix(b"\xef\xbb\xbf").unwrap_or(header);
    let record = csv::ReaderBuilder::new()
        .delimiter(delimiter)
        .has_headers(false)
        .from_reader(bytes)
        .byte_records()
        .next()?
        .ok()?;
    Some(
        record
            .iter()
            .map(|f| String::from_utf8_lossy(f).into_owned())
            .collect(),
    )
}

/// Read a JSON table whole: records one per line, or (`.json`) one array
/// of records. The schema is taken from every record, so that a key first
/// seen deep in the file is not dropped.
fn read_json(file: &Path, format: TableFormat) -> PolarsResult<DataFrame> {
    let bytes = std::fs::read(file)?;
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
fn header_record(file: &Path) -> PolarsResult<Vec<u8>> {
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
    let mut file = File::open(file)?;
    let mut buf = vec![0; 64 * 1024];
    loop {
        let n = match file.read(&mut buf) {
            Ok(n) => n,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
            Err(e) => return Err(e.into()),
        };
        if n == 0 || scan(&buf[..n], &mut header) || header.len() > MAX_HEADER_BYTES {
            break;
        }
    }
    if header.len() > MAX_HEADER_BYTES {
        polars_bail!(ComputeError:
            "found no line break in the first {} MiB, so there is no header line; descry reads line breaks as \\n or \\r\\n, and a quote left open runs on to the end of the file",
            MAX_HEADER_BYTES >> 20);
    }
    Ok(header)
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

/// Find where a CSV file goes wrong, in words a user can act on: the
/// reader's own errors do not always say which row.
fn diagnose_csv(file: &Path, delimiter: u8, lossy_utf8: bool) -> Option<String> {
    let bytes = std::fs::read(file).ok()?;
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
    Ok(Input::open(path, opts)?.names)
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

/// A lazy scan of a table's columns (see [`Input::scan`]), with the notes
/// for the user and what it takes to locate a read error in the file.
pub struct StreamedTable {
    /// The scan; run it with `Engine::Streaming` so that only a few
    /// morsels are in memory at a time.
    pub lazy: LazyFrame,
    /// Notes for the user, as [`Table::notes`].
    pub notes: Vec<String>,
    input: Input,
}

impl StreamedTable {
    /// Open `path` and scan it: [`Input::open`], then [`Input::scan`].
    pub fn open(
        path: &Path,
        text_columns: &[&str],
        projection: Option<&[&str]>,
        opts: &ReadOptions,
    ) -> Result<StreamedTable, Error> {
        Input::open(path, opts)?.scan(text_columns, projection)
    }

    /// An error of the running scan, located in the file when it is a CSV
    /// the reader rejected.
    pub fn read_error(&self, e: PolarsError) -> Error {
        self.input.error(e)
    }
}

/// Open `path` and read it in batches: [`Input::open`], then
/// [`Input::for_each_batch`].
pub fn for_each_batch(
    path: &Path,
    text_columns: &[&str],
    projection: Option<&[&str]>,
    opts: &ReadOptions,
    batch_rows: usize,
    each: impl FnMut(DataFrame) -> Result<(), Error>,
) -> Result<Vec<String>, Error> {
    Input::open(path, opts)?.for_each_batch(text_columns, projection, batch_rows, each)
}

fn encoding(opts: &ReadOptions) -> CsvEncoding {
    if opts.lossy_utf8 {
        CsvEncoding::LossyUtf8
    } else {
        CsvEncoding::Utf8
    }
}

/// A lazy scan of the Parquet or IPC file at `path` itself: polars' glob
/// expansion (`data[1].csv` read as `data1.csv`, `*` as many files) and
/// folder partitioning are off, because a path names one file. (The CSV
/// scan turns them off too.)
fn scan(path: &Path, format: TableFormat) -> PolarsResult<LazyFrame> {
    let p = PlRefPath::new(path.to_string_lossy().as_ref());
    match format {
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
        _ => polars_bail!(ComputeError: "only Parquet and IPC files are scanned here"),
    }
}
