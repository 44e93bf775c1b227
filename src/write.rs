//! Writing tables atomically: the output appears whole or not at all.
//!
//! A temporary file is written in the output's folder, flushed to disk,
//! then renamed over the output. An existing output is replaced only when
//! everything succeeded; the input is never opened for writing.

use std::fs::File;
use std::io::Write;
use std::path::{Path, PathBuf};

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
    synced_bytes: u64,
}

/// Written-but-unsynced bytes allowed before the sink flushes them to disk.
/// Dirty pages count against a memory-capped process, so a large output
/// must not pile them up.
const SYNC_EVERY_BYTES: u64 = 32 << 20;

impl TableSink {
    pub fn create(
        output: &Path,
        format: OutputFormat,
        schema: &Schema,
    ) -> Result<TableSink, Error> {
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
        // Unbuffered: polars writes in large blocks, and an error on the last
        // flush must not be lost in a buffer's drop.
        let write = batch_writer(file, format, schema)
            .map_err(|e| out_err(format!("cannot start writing: {e}")))?;
        Ok(TableSink {
            output: output.to_owned(),
            temp,
            write,
            rows: 0,
            synced_bytes: 0,
        })
    }

    pub fn write(&mut self, batch: &mut DataFrame) -> Result<(), Error> {
        let out_err = |message: String| Error::Output {
            path: self.output.clone(),
            message,
        };
        self.rows += batch.height() as u64;
        (self.write)(Some(batch)).map_err(|e| out_err(format!("cannot write: {e}")))?;
        let written = self.temp.as_file().metadata().map(|m| m.len()).unwrap_or(0);
        if written >= self.synced_bytes + SYNC_EVERY_BYTES {
            self.temp
                .as_file()
                .sync_data()
                .map_err(|e| out_err(format!("cannot flush to disk: {e}")))?;
            self.synced_bytes = written;
        }
        Ok(())
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
        let folder = parent_folder(&self.output);
        self.temp.persist(&self.output).map_err(|e| {
            out_err(format!(
                "cannot move the finished file into place: {}",
                e.error
            ))
        })?;
        sync_folder(&folder);
        Ok(())
    }
}

/// A [`TableSink`] on its own thread: [`BackgroundSink::write`] hands a batch
/// over and returns at once, so the next batch is read and described while
/// this one is encoded, compressed and written. At most one batch waits in
/// between. Batches are written in the order given, so the output is the
/// same as a [`TableSink`]'s. Dropping it without [`BackgroundSink::finish`]
/// waits for the thread and removes the temporary file, as a dropped
/// [`TableSink`] does.
pub struct BackgroundSink {
    output: PathBuf,
    send: Option<std::sync::mpsc::SyncSender<DataFrame>>,
    thread: Option<std::thread::JoinHandle<Result<Option<TableSink>, Error>>>,
}

impl BackgroundSink {
    /// Start the writing thread; the file is created with the first batch's
    /// schema.
    pub fn start(output: &Path, format: OutputFormat) -> BackgroundSink {
        let (send, receive) = std::sync::mpsc::sync_channel::<DataFrame>(1);
        let output_path = output.to_owned();
        let output = output.to_owned();
        let thread = std::thread::spawn(move || {
            let mut sink: Option<TableSink> = None;
            for mut batch in receive {
                let sink = match sink.as_mut() {
                    Some(sink) => sink,
                    None => {
                        sink.insert(TableSink::create(&output, format, &batch.schema().clone())?)
                    }
                };
                sink.write(&mut batch)?;
            }
            Ok(sink)
        });
        BackgroundSink {
            output: output_path,
            send: Some(send),
            thread: Some(thread),
        }
    }

    /// Queue a batch; waits only while the previous one is still queued.
    pub fn write(&mut self, batch: DataFrame) -> Result<(), Error> {
        let send = self.send.as_ref().expect("open until finished");
        if send.send(batch).is_err() {
            // The thread stopped on an error: report it.
            self.send = None;
            self.join()?;
            return Err(self.stopped());
        }
        Ok(())
    }

    /// Write what is queued and move the file into place. `Ok(false)`: no
    /// batch was ever written, so there is no file.
    pub fn finish(mut self) -> Result<bool, Error> {
        self.send = None;
        match self.join()? {
            Some(sink) => sink.finish().map(|_| true),
            None => Ok(false),
        }
    }

    fn join(&mut self) -> Result<Option<TableSink>, Error> {
        let thread = self.thread.take().expect("joined once");
        thread.join().unwrap_or_else(|_| Err(self.stopped()))
    }

    fn stopped(&self) -> Error {
        Error::Output {
            path: self.output.clone(),
            message: "the writer stopped unexpectedly".to_owned(),
        }
    }
}

impl Drop for BackgroundSink {
    fn drop(&mut self) {
        self.send = None;
        if self.thread.is_some() {
            // An unfinished sink: its temporary file goes with it.
            let _ = self.join();
        }
    }
}

fn batch_writer(w: File, format: OutputFormat, schema: &Schema) -> PolarsResult<BatchFn> {
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
