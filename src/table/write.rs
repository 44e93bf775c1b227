//! Writing tables atomically: the output appears whole or not at all.
//!
//! A temporary file is written in the output's folder, flushed to disk,
//! then renamed over the output. An existing output is replaced only when
//! everything succeeded; the input is never opened for writing.

use std::fs::File;
use std::io::Write;
use std::path::{Path, PathBuf};

use polars::io::utils::file::{Writable, WritableTrait};
use polars::prelude::*;
use rayon::prelude::*;

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
        let ext = path
            .extension()
            .and_then(|e| e.to_str())
            .unwrap_or("")
            .to_ascii_lowercase();
        match ext.as_str() {
            "parquet" | "pq" => Ok(OutputFormat::Parquet),
            "arrow" | "ipc" | "feather" => Ok(OutputFormat::Ipc),
            "csv" => Ok(OutputFormat::Csv { delimiter: b',' }),
            "tsv" => Ok(OutputFormat::Csv { delimiter: b'\t' }),
            _ => Err(Error::Output {
                path: path.to_owned(),
                message: "unknown output format; use .parquet, .arrow/.ipc/.feather, .csv or .tsv"
                    .to_owned(),
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
            message: format!(
                "the folder {} does not exist; create it first",
                folder.display()
            ),
        });
    }
    let out_id = std::fs::canonicalize(output).ok();
    for input in inputs {
        let same = out_id.is_some() && std::fs::canonicalize(input).ok() == out_id;
        if same {
            return Err(Error::Output {
                path: output.to_owned(),
                message: "is also the input; descry never overwrites its input, choose another -o"
                    .to_owned(),
            });
        }
    }
    Ok(format)
}

/// Write a small text file (a ruleset) atomically: a temporary file in the
/// same folder, synced, then renamed over `path`. A crash leaves either the
/// old file or the new one, never half of one.
pub fn write_text_atomically(path: &Path, text: &str) -> Result<(), Error> {
    let err = |e: std::io::Error| Error::Output {
        path: path.to_owned(),
        message: format!("cannot write: {e}"),
    };
    let folder = parent_folder(path);
    if !folder.is_dir() {
        return Err(Error::Output {
            path: path.to_owned(),
            message: format!(
                "the folder {} does not exist; create it first",
                folder.display()
            ),
        });
    }
    let mut temp = tempfile::Builder::new()
        .prefix(".descry-")
        .suffix(".partial")
        .tempfile_in(&folder)
        .map_err(err)?;
    std::io::Write::write_all(&mut temp, text.as_bytes()).map_err(err)?;
    temp.as_file().sync_all().map_err(err)?;
    temp.persist(path).map_err(|e| err(e.error))?;
    Ok(())
}

fn parent_folder(path: &Path) -> PathBuf {
    match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_owned(),
        _ => PathBuf::from("."),
    }
}

/// Write `frame` to `output` atomically (one batch of a [`TableSink`]).
pub fn write_table(
    frame: &mut DataFrame,
    output: &Path,
    format: OutputFormat,
) -> Result<(), Error> {
    let mut sink = TableSink::create(output, format, &frame.schema().clone())?;
    sink.write(frame)?;
    sink.finish()
}

/// Run `lazy` with polars' streaming engine into `output`, atomically: the
/// engine reads, transforms, encodes and writes morsels in parallel (Parquet
/// row groups of at most `row_group_rows` rows, in row order) into a
/// temporary file that becomes the output only when everything succeeded.
/// `query_error` turns an error of the query itself (reading the input, a
/// transformation in the plan) into the error to report.
pub fn sink_table(
    lazy: LazyFrame,
    output: &Path,
    format: OutputFormat,
    row_group_rows: usize,
    query_error: impl FnOnce(PolarsError) -> Error,
) -> Result<(), Error> {
    let out_err = |message: String| Error::Output {
        path: output.to_owned(),
        message,
    };
    let (temp, file) = partial_file(output)?;
    let file_format = match format {
        OutputFormat::Parquet => FileWriteFormat::Parquet(Arc::new(ParquetWriteOptions {
            compression: ParquetCompression::default(),
            statistics: StatisticsOptions::default(),
            row_group_size: Some(row_group_rows.max(1)),
            data_page_size: None,
            key_value_metadata: None,
            arrow_schema: None,
            compat_level: None,
        })),
        OutputFormat::Ipc => FileWriteFormat::Ipc(IpcWriterOptions::default()),
        OutputFormat::Csv { delimiter } => {
            let serialize_options = SerializeOptions {
                separator: delimiter,
                ..SerializeOptions::default()
            };
            FileWriteFormat::Csv(CsvWriterOptions {
                check_extension: false,
                serialize_options: Arc::new(serialize_options),
                ..CsvWriterOptions::default()
            })
        }
    };
    let writable = Writable::Dyn(Box::new(file));
    let target = SinkTarget::Dyn(SpecialEq::new(Arc::new(std::sync::Mutex::new(Some(
        writable,
    )))));
    let args = UnifiedSinkArgs {
        maintain_order: true,
        sync_on_close: polars::io::utils::sync_on_close::SyncOnCloseType::All,
        ..UnifiedSinkArgs::default()
    };
    let run = lazy
        .sink(SinkDestination::File { target }, file_format, args)
        .and_then(|plan| plan.collect_with_engine(Engine::Streaming));
    if let Err(e) = run {
        return Err(match e {
            PolarsError::IO { error, .. } => out_err(format!("cannot write: {error}")),
            other => query_error(other),
        });
    }
    move_into_place(temp, output)
}

/// A temporary file in the output's folder, and the same file opened for
/// writing through a [`SyncingFile`].
fn partial_file(output: &Path) -> Result<(tempfile::NamedTempFile, SyncingFile), Error> {
    let out_err = |message: String| Error::Output {
        path: output.to_owned(),
        message,
    };
    let folder = parent_folder(output);
    let temp = tempfile::Builder::new()
        .prefix(".descry-")
        .suffix(".partial")
        .tempfile_in(&folder)
        .map_err(|e| {
            out_err(format!(
                "cannot create a temporary file in {}: {e}",
                folder.display()
            ))
        })?;
    let file = temp
        .reopen()
        .map_err(|e| out_err(format!("cannot open the temporary file: {e}")))?;
    Ok((temp, SyncingFile::new(file)))
}

/// Rename a finished (synced) temporary file over `output` and make the
/// rename durable.
fn move_into_place(temp: tempfile::NamedTempFile, output: &Path) -> Result<(), Error> {
    temp.persist(output).map_err(|e| Error::Output {
        path: output.to_owned(),
        message: format!("cannot move the finished file into place: {}", e.error),
    })?;
    sync_folder(&parent_folder(output));
    Ok(())
}

/// Make the rename itself durable; best effort (not every platform can).
fn sync_folder(folder: &Path) {
    if let Ok(dir) = File::open(folder) {
        let _ = dir.sync_all();
    }
}

/// Rows per Parquet row group at most (each batch is cut into row groups of
/// this size): polars' own default, 512².
pub const ROW_GROUP_ROWS: usize = 512 * 512;

type BatchFn = Box<dyn FnMut(Option<&mut DataFrame>) -> PolarsResult<()> + Send>;

/// An output written batch by batch (Parquet row groups, CSV lines) into a
/// temporary file that becomes the output only in [`TableSink::finish`].
/// Dropping the sink without finishing removes the temporary file and
/// leaves any existing output as it was.
pub struct TableSink {
    output: PathBuf,
    temp: tempfile::NamedTempFile,
    write: BatchFn,
    rows: u64,
}

/// Written-but-unsynced bytes allowed before an output file is flushed to
/// disk. Dirty pages count against a memory-capped process, so a large
/// output must not pile them up.
const SYNC_EVERY_BYTES: u64 = 32 << 20;

/// A file that flushes what was written to disk every [`SYNC_EVERY_BYTES`].
struct SyncingFile {
    file: File,
    unsynced: u64,
}

impl SyncingFile {
    fn new(file: File) -> SyncingFile {
        SyncingFile { file, unsynced: 0 }
    }
}

impl Write for SyncingFile {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        let n = self.file.write(buf)?;
        self.unsynced += n as u64;
        if self.unsynced >= SYNC_EVERY_BYTES {
            self.file.sync_data()?;
            self.unsynced = 0;
        }
        Ok(n)
    }

    fn flush(&mut self) -> std::io::Result<()> {
        self.file.flush()
    }
}

impl WritableTrait for SyncingFile {
    fn close(&mut self) -> std::io::Result<()> {
        self.file.flush()
    }

    fn sync_all(&self) -> std::io::Result<()> {
        self.file.sync_all()
    }

    fn sync_data(&self) -> std::io::Result<()> {
        self.file.sync_data()
    }
}

impl TableSink {
    pub fn create(
        output: &Path,
        format: OutputFormat,
        schema: &Schema,
    ) -> Result<TableSink, Error> {
        let (temp, file) = partial_file(output)?;
        // Unbuffered: polars writes in large blocks, and an error on the last
        // flush must not be lost in a buffer's drop.
        let write = batch_writer(file, format, schema).map_err(|e| Error::Output {
            path: output.to_owned(),
            message: format!("cannot start writing: {e}"),
        })?;
        Ok(TableSink {
            output: output.to_owned(),
            temp,
            write,
            rows: 0,
        })
    }

    pub fn write(&mut self, batch: &mut DataFrame) -> Result<(), Error> {
        let out_err = |message: String| Error::Output {
            path: self.output.clone(),
            message,
        };
        self.rows += batch.height() as u64;
        (self.write)(Some(batch)).map_err(|e| out_err(format!("cannot write: {e}")))
    }

    pub fn rows(&self) -> u64 {
        self.rows
    }

    /// Finish the file, flush it to disk and move it into place.
    pub fn finish(mut self) -> Result<(), Error> {
        let out_err = |message: String| Error::Output {
            path: self.output.clone(),
            message,
        };
        (self.write)(None).map_err(|e| out_err(format!("cannot finish writing: {e}")))?;
        self.temp
            .as_file()
            .sync_all()
            .map_err(|e| out_err(format!("cannot flush to disk: {e}")))?;
        move_into_place(self.temp, &self.output)
    }
}

fn batch_writer(w: SyncingFile, format: OutputFormat, schema: &Schema) -> PolarsResult<BatchFn> {
    Ok(match format {
        OutputFormat::Parquet => {
            let mut writer = Some(ParquetWriter::new(w).batched(schema)?);
            Box::new(move |batch: Option<&mut DataFrame>| match batch {
                Some(df) => {
                    df.align_chunks_par();
                    let writer = writer.as_ref().expect("open");
                    // Row groups are encoded in parallel (a single heavy
                    // column no longer holds up the batch), then written in
                    // order.
                    let parts: Vec<DataFrame> = (0..df.height())
                        .step_by(ROW_GROUP_ROWS)
                        .map(|at| df.slice(at as i64, ROW_GROUP_ROWS))
                        .collect();
                    let groups = parts
                        .par_iter()
                        .map(|part| writer.encode_and_compress(part).collect::<Vec<_>>())
                        .collect::<Vec<_>>();
                    let groups = groups
                        .into_iter()
                        .flatten()
                        .collect::<PolarsResult<Vec<_>>>()?;
                    writer.write_row_groups(groups)
                }
                None => writer.take().expect("open").finish().map(|_| ()),
            })
        }
        OutputFormat::Csv { delimiter } => {
            let mut writer = CsvWriter::new(w)
                .with_separator(delimiter)
                .batched(schema)?;
            Box::new(move |batch: Option<&mut DataFrame>| match batch {
                Some(df) => writer.write_batch(df),
                None => writer.finish(),
            })
        }
        OutputFormat::Ipc => {
            // Arrow IPC files are written whole at the end: batches are kept.
            let mut kept: Option<DataFrame> = None;
            let mut w = Some(w);
            Box::new(move |batch: Option<&mut DataFrame>| match batch {
                Some(df) => match kept.as_mut() {
                    Some(all) => all.vstack_mut(df).map(|_| ()),
                    None => {
                        kept = Some(df.clone());
                        Ok(())
                    }
                },
                None => {
                    let mut w = w.take().expect("open");
                    if let Some(mut all) = kept.take() {
                        IpcWriter::new(&mut w).finish(&mut all)?;
                    }
                    w.flush()?;
                    Ok(())
                }
            })
        }
    })
}
