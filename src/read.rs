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
            return Ok(TableFormat::Csv { delimiter: delimiter.unwrap_or(b',') });
        }
        let ext = path.extension().and_then(|e| e.to_str()).unwrap_or("").to_ascii_lowercase();
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
        let names = column_names(&source, format).map_err(|e| input_error(path, e))?;
        if let Some(missing) = text_columns.iter().find(|c| !names.iter().any(|n| n == *c)) {
            return Err(Error::MissingColumn { path: path.to_owned(), column: missing.to_string(), available: names });
        }
        let frame = read_frame(&source, format, text_columns, projection, opts).map_err(|e| input_error(path, e))?;
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
                let text = col.cast(&DataType::String).map_err(|e| input_error(path, e))?;
                frame.replace(name, text).map_err(|e| input_error(path, e))?;
                if dtype != DataType::Null {
                    notes.push(format!("column \"{name}\" holds {dtype} values; they were read as text"));
                }
            }
        }
        Ok(Table { path: path.to_owned(), frame, notes })
    }

    /// The text values of a column (which `read` made a string column).
    pub fn text(&self, column: &str) -> Result<&StringChunked, Error> {
        let col = self.frame.column(column).map_err(|_| missing_column(&self.path, &self.frame, column))?;
        col.str().map_err(|e| input_error(&self.path, e))
    }

    pub fn column_names(&self) -> Vec<String> {
        self.frame.get_column_names().iter().map(|s| s.to_string()).collect()
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
            .map_err(|e| Error::Input { path: path.to_owned(), message: format!("cannot read standard input: {e}") })?;
        if buf.is_empty() {
            return Err(Error::Input { path: path.to_owned(), message: "standard input is empty".to_owned() });
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
fn column_names(source: &Source, format: TableFormat) -> PolarsResult<Vec<String>> {
    let names = match format {
        TableFormat::Csv { delimiter } => {
            let options = CsvReadOptions::default()
                .with_has_header(true)
                .with_n_rows(Some(0))
                .with_parse_options(CsvParseOptions::default().with_separator(delimiter));
            let frame = csv_reader(source, options)?;
            frame.get_column_names().iter().map(|s| s.to_string()).collect()
        }
        TableFormat::Parquet => arrow_names(ParquetReader::new(source.file()?).schema()?.as_ref()),
        TableFormat::Ipc => arrow_names(IpcReader::new(source.file()?).schema()?.as_ref()),
        TableFormat::NdJson => {
            let frame = JsonReader::new(source.file()?)
                .with_json_format(JsonFormat::JsonLines)
                .infer_schema_len(std::num::NonZeroUsize::new(1000))
                .finish()?;
            frame.get_column_names().iter().map(|s| s.to_string()).collect()
        }
    };
    Ok(names)
}

fn csv_reader(source: &Source, options: CsvReadOptions) -> PolarsResult<DataFrame> {
    match source {
        Source::File(p) => options.try_into_reader_with_file_path(Some(p.clone()))?.finish(),
        Source::Bytes(b) => options.into_reader_with_file_handle(Cursor::new(b.as_slice())).finish(),
    }
}

fn missing_column(path: &Path, frame: &DataFrame, name: &str) -> Error {
    Error::MissingColumn {
        path: path.to_owned(),
        column: name.to_owned(),
        available: frame.get_column_names().iter().map(|s| s.to_string()).collect(),
    }
}

fn input_error(path: &Path, e: PolarsError) -> Error {
    let message = match &e {
        PolarsError::NoData(_) => "the file is empty: there is no header and no rows".to_owned(),
        other => format!("cannot read the table: {}", first_line(&other.to_string())),
    };
    Error::Input { path: path.to_owned(), message }
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
        return Err(Error::Input { path: path.to_owned(), message: "is a folder, not a table file".to_owned() });
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
        TableFormat::Csv { delimiter } => read_csv(source, delimiter, text_columns, projection, opts),
        TableFormat::Parquet => ParquetReader::new(source.file()?).with_columns(projection.map(owned)).finish(),
        TableFormat::Ipc => IpcReader::new(source.file()?).with_columns(projection.map(owned)).finish(),
        TableFormat::NdJson => {
            let frame = JsonReader::new(source.file()?).with_json_format(JsonFormat::JsonLines).finish()?;
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
    let overwrite: Schema = text_columns.iter().map(|c| Field::new((*c).into(), DataType::String)).collect();
    let columns = projection.map(|p| p.iter().map(|s| PlSmallStr::from(*s)).collect::<Arc<[PlSmallStr]>>());
    let encoding = if opts.lossy_utf8 { CsvEncoding::LossyUtf8 } else { CsvEncoding::Utf8 };
    let options = CsvReadOptions::default()
        .with_has_header(true)
        .with_columns(columns)
        .with_schema_overwrite(Some(Arc::new(overwrite)))
        .with_parse_options(CsvParseOptions::default().with_separator(delimiter).with_encoding(encoding));
    csv_reader(source, options)
}
