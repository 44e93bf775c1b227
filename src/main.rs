//! The `descry` command line: parses arguments and hands each command to its
//! own file under `src/cmd/`. Nothing here knows about rules or tables.

mod cmd;

use std::process::ExitCode;

use clap::Parser;

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
