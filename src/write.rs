//! Writing tables atomically: the output appears whole or not at all.
//!
//! A temporary file is written in the output's folder, flushed to disk,
//! then renamed over the output. An existing output is replaced only when
//! everything succeeded; the input is never opened for writing.

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

use polars::prelude::*;

use crate::error::Error;

/// An output format, chosen from the output path's extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum OutputFormat {
    Parquet,
    Ipc,
    Csv { delimiter: u8 },
}

impl OutputFormat {
    pub fn of(path: &Path) -> Result<OutputFormat, Error> {
        let ext = path.extension().and_then(|e| e.to_str()).unwrap_or("").to_ascii_lowercase();
        match ext.as_str() {
            "parquet" | "pq" => Ok(OutputFormat::Parquet),
            "arrow" | "ipc" | "feather" => Ok(OutputFormat::Ipc),
            "csv" => Ok(OutputFormat::Csv { delimiter: b',' }),
            "tsv" => Ok(OutputFormat::Csv { delimiter: b'\t' }),
            _ => Err(Error::Output {
                path: path.to_owned(),
                message: "unknown output format; use .parquet, .arrow/.ipc/.feather, .csv or .tsv".to_owned(),
            }),
        }
    }
}

/// Refuse outputs that would overwrite an input, or land in a missing folder.
pub fn check_output_path(output: &Path, inputs: &[&Path]) -> Result<OutputFormat, Error> {
    let format = OutputFormat::of(output)?;
    let folder = parent_folder(output);
    if !folder.is_dir() {
        return Err(Error::Output {
            path: output.to_owned(),
            message: format!("the folder {} does not exist; create it first", folder.display()),
        });
    }
    let out_id = std::fs::canonicalize(output).ok();
    for input in inputs {
        let same = out_id.is_some() && std::fs::canonicalize(input).ok() == out_id;
        if same {
            return Err(Error::Output {
                path: output.to_owned(),
                message: "is also the input; descry never overwrites its input, choose another -o".to_owned(),
            });
        }
    }
    Ok(format)
}

fn parent_folder(path: &Path) -> PathBuf {
    match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_owned(),
        _ => PathBuf::from("."),
    }
}

/// Write `frame` to `output` atomically.
pub fn write_table(frame: &mut DataFrame, output: &Path, format: OutputFormat) -> Result<(), Error> {
    let out_err = |message: String| Error::Output { path: output.to_owned(), message };
    let folder = parent_folder(output);
    let temp = tempfile::Builder::new()
        .prefix(".descry-")
        .suffix(".partial")
        .tempfile_in(&folder)
        .map_err(|e| out_err(format!("cannot create a temporary file in {}: {e}", folder.display())))?;
    {
        let file: &File = temp.as_file();
        let mut buffered = BufWriter::with_capacity(1 << 20, file);
        write_frame(frame, &mut buffered, format).map_err(|e| out_err(format!("cannot write: {e}")))?;
        buffered.flush().map_err(|e| out_err(format!("cannot write: {e}")))?;
    }
    temp.as_file().sync_all().map_err(|e| out_err(format!("cannot flush to disk: {e}")))?;
    temp.persist(output).map_err(|e| out_err(format!("cannot move the finished file into place: {}", e.error)))?;
    sync_folder(&folder);
    Ok(())
}

fn write_frame<W: Write>(frame: &mut DataFrame, w: &mut W, format: OutputFormat) -> PolarsResult<()> {
    match format {
        OutputFormat::Parquet => ParquetWriter::new(w).finish(frame).map(|_| ()),
        OutputFormat::Ipc => IpcWriter::new(w).finish(frame),
        OutputFormat::Csv { delimiter } => CsvWriter::new(w).with_separator(delimiter).finish(frame),
    }
}

/// Make the rename itself durable; best effort (not every platform can).
fn sync_folder(folder: &Path) {
    if let Ok(dir) = File::open(folder) {
        let _ = dir.sync_all();
    }
}
