//! The `descry` command line: parses arguments and hands each command to its
//! own file under `src/cmd/`. Nothing here knows about rules or tables.

mod cmd;

use std::process::ExitCode;

use clap::Parser;

/// polars allocates and frees many short-lived buffers per morsel from
/// several threads; jemalloc serves that with less contention and less
/// fragmentation than the system allocator (see benches/README.md).
#[global_allocator]
static ALLOCATOR: tikv_jemallocator::Jemalloc = tikv_jemallocator::Jemalloc;

/// jemalloc's options, read when it starts (`_RJEM_MALLOC_CONF` in the
/// environment still overrides them). Freed pages are kept for reuse
/// instead of being handed back to the kernel over time: a run allocates
/// the same morsel-sized buffers again and again, and returning them made
/// the kernel zero fresh pages for each (at 10 million rows, `apply` took
/// about 220,000 page faults with the default decay and 83,000 without,
/// and half the system time; benches/README.md).
/// The process never holds more than its peak.
#[export_name = "_rjem_malloc_conf"]
pub static JEMALLOC_OPTIONS: &[u8] = b"dirty_decay_ms:-1,muzzy_decay_ms:-1\0";

fn main() -> ExitCode {
    let cli = cmd::Cli::parse();
    match cmd::run(cli) {
        Ok(code) => code,
        Err(err) => {
            eprintln!("descry: error: {err:#}");
            ExitCode::from(2)
        }
    }
}
