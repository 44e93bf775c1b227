//! One file per command. Each starts with its usage text, then its arguments,
//! then one `run` function. Shared plumbing (reading tables, loading rulesets,
//! rendering) lives in the library or in `common.rs`.

pub mod apply;
pub mod check;
pub mod cluster;
pub mod common;
pub mod demo;
pub mod explain;
pub mod lookup;
pub mod propose;
pub mod survey;

use std::process::ExitCode;

use clap::{Parser, Subcommand};

/// descry: turn messy free-text categorical columns into compact model features.
///
/// Rules are tested once per distinct value of a column (its vocabulary), never
/// once per row; rows only gather the results.
#[derive(Debug, Parser)]
#[command(name = "descry", version, about, long_about = None, propagate_version = true)]
pub struct Cli {
    /// Worker threads for evaluation and IO (default: one per core). Output
    /// is byte-identical whatever the count.
    #[arg(long, global = true)]
    pub threads: Option<usize>,
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Test a ruleset on every distinct value of a column; report coverage.
    #[command(long_about = check::ABOUT)]
    Check(check::Args),
    /// Write a table's columns plus the features of one or more rulesets.
    #[command(long_about = apply::ABOUT)]
    Apply(apply::Args),
    /// Show what every rule does to given values.
    #[command(long_about = explain::ABOUT)]
    Explain(explain::Args),
    /// Draft a ruleset from a column's distinct values, tested on all of them.
    #[command(long_about = propose::ABOUT)]
    Propose(propose::Args),
    /// Write one row per distinct value with its rows and features, to join.
    #[command(long_about = lookup::ABOUT)]
    Lookup(lookup::Args),
    /// Write the demo marketplace listings and their true features.
    #[command(long_about = demo::ABOUT)]
    Demo(demo::Args),
    /// Profile a column: counts, frequent values, shapes, anomalies, tokens.
    #[command(long_about = survey::ABOUT)]
    Survey(survey::Args),
    /// Group near-duplicate values and propose canonical spellings.
    #[command(long_about = cluster::ABOUT)]
    Cluster(cluster::Args),
}

pub fn run(cli: Cli) -> anyhow::Result<ExitCode> {
    descry::write::remove_partials_on_signals()?;
    if let Some(n) = cli.threads {
        set_threads(n)?;
    }
    match cli.command {
        Command::Check(args) => check::run(args),
        Command::Apply(args) => apply::run(args),
        Command::Explain(args) => explain::run(args),
        Command::Propose(args) => propose::run(args),
        Command::Lookup(args) => lookup::run(args),
        Command::Demo(args) => demo::run(args),
        Command::Survey(args) => survey::run(args),
        Command::Cluster(args) => cluster::run(args),
    }
}

/// Threads per core at most: more only adds switching and memory.
const THREADS_PER_CORE: usize = 4;

/// One thread count for descry's own pool and for polars' pool, at most
/// [`THREADS_PER_CORE`] per core.
fn set_threads(asked: usize) -> anyhow::Result<()> {
    if asked == 0 {
        anyhow::bail!("--threads must be at least 1");
    }
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    let n = asked.min(THREADS_PER_CORE * cores);
    if n < asked {
        eprintln!(
            "descry: note: --threads {asked} is more than {THREADS_PER_CORE} per core ({cores} cores); using {n}"
        );
    }
    std::env::set_var("POLARS_MAX_THREADS", n.to_string());
    rayon::ThreadPoolBuilder::new()
        .num_threads(n)
        .build_global()?;
    Ok(())
}
