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

/// Refuse outputs that would overwrite an input, land in a missing folder,
/// name a folder, or replace a read-only file; before any work is done.
pub fn check_output_path(output: &Path, inputs: &[&Path]) -> Result<OutputFormat, Error> {
    check_output_file(output)?;
    let format = OutputFormat::of(output)?;
    check_not_an_input(output, inputs)?;
    Ok(format)
}

/// Refuse a path that cannot name a new or replaceable file: a folder, a
/// path ending in `/`, a missing folder, a read-only file.
pub fn check_output_file(output: &Path) -> Result<(), Error> {
    let refuse = |message: String| {
        Err(Error::Output {
            path: output.to_owned(),
            message,
        })
    };
    if output.is_dir() || output.as_os_str().as_encoded_bytes().ends_with(b"/") {
        return refuse("is a folder; name the file to write, e.g. DIR/features.parquet".to_owned());
    }
    let folder = parent_folder(output);
    if !folder.is_dir() {
        return refuse(format!(
            "the folder {} does not exist; create it first",
            folder.display()
        ));
    }
    check_replaceable(output)
}

/// Refuse to replace a file that has no write permission bit: a user who
/// made it read-only meant to keep it (root would otherwise replace it,
/// since permissions do not stop root).
pub fn check_replaceable(path: &Path) -> Result<(), Error> {
    use std::os::unix::fs::PermissionsExt;
    match std::fs::metadata(path) {
        Ok(meta) if meta.permissions().mode() & 0o222 == 0 => Err(Error::Output {
            path: path.to_owned(),
            message: format!(
                "is read-only (mode {:o}); descry does not replace a read-only file: make it \
                 writable (chmod u+w) or choose another output",
                meta.permissions().mode() & 0o7777
            ),
        }),
        _ => Ok(()),
    }
}

/// Refuse an output that is one of the inputs (the same file under any
/// name, hard links included): descry never writes over what it reads.
pub fn check_not_an_input(output: &Path, inputs: &[&Path]) -> Result<(), Error> {
    use std::os::unix::fs::MetadataExt;
    let Ok(out) = std::fs::metadata(output) else {
        return Ok(());
    };
    let same = |input: &&&Path| {
        input.as_os_str() != "-"
            && std::fs::metadata(input).is_ok_and(|m| m.dev() == out.dev() && m.ino() == out.ino())
    };
    match inputs.iter().find(same) {
        Some(input) => Err(Error::Output {
            path: output.to_owned(),
            message: format!(
                "is also the input {}; descry never overwrites its input, choose another output",
                input.display()
            ),
        }),
        None => Ok(()),
    }
}

/// Write a small text file (a ruleset) atomically: a temporary file in the
/// same folder, synced, then renamed over `path`. A crash leaves either the
/// old file or the new one, never half of one.
pub fn write_text_atomically(path: &Path, text: &str) -> Result<(), Error> {
    write_atomically(path, |file| file.write_all(text.as_bytes()))
}

/// Write a file atomically with `write`: a temporary file in the same
/// folder, synced, then renamed over `path`.
pub fn write_atomically(
    path: &Path,
    write: impl FnOnce(&mut dyn Write) -> std::io::Result<()>,
) -> Result<(), Error> {
    let err = |e: std::io::Error| Error::Output {
        path: path.to_owned(),
        message: format!("cannot write: {e}"),
    };
    check_output_file(path)?;
    let (temp, mut file) = partial_file(path)?;
    write(&mut file).map_err(err)?;
    file.flush().map_err(err)?;
    temp.as_file().sync_all().map_err(err)?;
    move_into_place(temp, path)
}

fn parent_folder(path: &Path) -> PathBuf {
    match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_owned(),
        _ => PathBuf::from("."),
    }
}

/// Write a table in memory to `output` atomically, through the same
/// writer as [`sink_table`], so that a table written whole and one
/// streamed have the same schema (the same Arrow string type, for one).
/// Write `table` as Parquet with one key-value pair in the file's metadata
/// (descry's own facts about the table, as JSON), atomically.
pub fn write_parquet_with_metadata(
    path: &Path,
    mut table: DataFrame,
    key: &str,
    value: String,
) -> Result<(), Error> {
    write_atomically(path, |file| {
        ParquetWriter::new(file)
            .with_key_value_metadata(Some(KeyValueMetadata::from_static(vec![(
                key.to_owned(),
                value,
            )])))
            .finish(&mut table)
            .map(|_| ())
            .map_err(|e| std::io::Error::other(e.to_string()))
    })
}

/// The SHA-256 of some bytes, in lower-case hex.
pub fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::Digest;
    sha2::Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

pub fn write_table(frame: DataFrame, output: &Path, format: OutputFormat) -> Result<(), Error> {
    sink_table(frame.lazy(), output, format, ROW_GROUP_ROWS, |e| {
        Error::Output {
            path: output.to_owned(),
            message: format!("cannot write: {e}"),
        }
    })
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
        // A new file's mode is 0666 less the umask, as any program's.
        .permissions(std::os::unix::fs::PermissionsExt::from_mode(0o666))
        .tempfile_in(&folder)
        .map_err(|e| {
            out_err(format!(
                "cannot create a temporary file in {}: {e}",
                folder.display()
            ))
        })?;
    if let Ok(meta) = std::fs::metadata(output) {
        // The umask may have taken bits the file it replaces had.
        std::fs::set_permissions(temp.path(), meta.permissions()).map_err(|e| {
            out_err(format!(
                "cannot give the temporary file the output's mode: {e}"
            ))
        })?;
    }
    partials().push(temp.path().to_owned());
    let file = temp
        .reopen()
        .map_err(|e| out_err(format!("cannot open the temporary file: {e}")))?;
    Ok((temp, SyncingFile::new(file)))
}

/// Rename a finished (synced) temporary file over `output` and make the
/// rename durable.
fn move_into_place(temp: tempfile::NamedTempFile, output: &Path) -> Result<(), Error> {
    // Under the lock, so that a signal arriving now finds the file either
    // still partial (and removes it) or already in place.
    let mut partials = partials();
    partials.retain(|p| p != temp.path());
    temp.persist(output).map_err(|e| Error::Output {
        path: output.to_owned(),
        message: format!("cannot move the finished file into place: {}", e.error),
    })?;
    drop(partials);
    sync_folder(&parent_folder(output));
    Ok(())
}

/// The temporary files being written. A signal ends the process without
/// running destructors, so they are removed from this list instead.
static PARTIALS: std::sync::Mutex<Vec<PathBuf>> = std::sync::Mutex::new(Vec::new());

fn partials() -> std::sync::MutexGuard<'static, Vec<PathBuf>> {
    PARTIALS
        .lock()
        .unwrap_or_else(|poisoned| poisoned.into_inner())
}

/// On SIGINT, SIGTERM or SIGHUP, remove the temporary files being written
/// and exit with 128 + the signal's number (as a shell reports a process
/// a signal ended). Any existing output stays as it was.
pub fn remove_partials_on_signals() -> std::io::Result<()> {
    use signal_hook::consts::{SIGHUP, SIGINT, SIGTERM};
    let mut signals = signal_hook::iterator::Signals::new([SIGINT, SIGTERM, SIGHUP])?;
    std::thread::spawn(move || {
        if let Some(signal) = signals.forever().next() {
            let partials = partials();
            for path in partials.iter() {
                let _ = std::fs::remove_file(path);
            }
            std::process::exit(128 + signal);
        }
    });
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
