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
