//! The floor through descry's own build: polars' streaming scan of a CSV
//! into Parquet, the input columns only, through descry's reader
//! (`StreamedTable`) and writer (`sink_table`) with no feature work. Set
//! beside `apply_compare.sh`'s floor (Python polars), it separates what the
//! Rust build of polars costs from what descry's features cost.
//!
//! `cargo run --release --example stream_floor -- INPUT.csv OUTPUT.parquet COLUMN...`
//! (the columns are read as text, as `apply` reads the described columns).

use std::path::Path;
use std::time::Instant;

use descry::read::{ReadOptions, StreamedTable};
use descry::write::{sink_table, OutputFormat, ROW_GROUP_ROWS};

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let [input, output, columns @ ..] = args.as_slice() else {
        eprintln!("usage: stream_floor INPUT.csv OUTPUT.parquet COLUMN...");
        std::process::exit(2);
    };
    let columns: Vec<&str> = columns.iter().map(String::as_str).collect();
    let started = Instant::now();
    let table = StreamedTable::open(Path::new(input), &columns, None, &ReadOptions::default())
        .unwrap_or_else(|e| panic!("{e}"));
    let read_error = |e| table.read_error(e);
    sink_table(
        table.lazy.clone(),
        Path::new(output),
        OutputFormat::Parquet,
        ROW_GROUP_ROWS,
        read_error,
    )
    .unwrap_or_else(|e| panic!("{e}"));
    println!("{:.3}", started.elapsed().as_secs_f64());
}
