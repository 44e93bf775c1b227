//! `descry demo`: write the demo scenario's listings table and, next to it,
//! the true features of every distinct value.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clap::ValueEnum;

pub const ABOUT: &str = "\
Write the demo data set: listings of a used farm-and-construction equipment
marketplace, with free-text `transmission`, `engine` and `part_no` columns,
and the true features of every distinct value under OUT_DIR/truth/.

The generator is seeded: the same --rows, --seed, --variants, --spellings
and --drift always give byte-identical files.

By default the number of distinct transmission and engine spellings grows
with the rows, as text typed by many sellers does (about 121,000 and 375,000
at a million rows). --spellings N bounds it instead: each of the two columns
draws N spellings once per seed and every row takes one of them (a few
common, most rare), plus the usual nulls, blanks and placeholders; part_no
stays a high-cardinality code column. The truth is exact either way.

--drift writes the next month's drop of a drift scenario: the same listings
as without it, row for row, except engines: a new spelling family (5% of
diesel engines written `4-banger heavy oil`) and a shifted one (15% of the
other engines stating a fuel take an earlier gasoline engine's text). Check
it against a baseline of the same options without --drift:
  descry demo -o base && descry demo -o next --drift
  descry check base/listings.csv -r rulesets/engine.toml --save-baseline base.parquet
  descry check next/listings.csv -r rulesets/engine.toml --baseline base.parquet

Memory: rows are streamed to the file; memory grows with
the number of distinct values (one truth entry each).";

#[derive(Debug, clap::Args)]
#[command(long_about = ABOUT)]
pub struct Args {
    /// Folder to write listings.csv and truth/ into (created if missing).
    #[arg(long, short = 'o', default_value = "descry-demo")]
    pub out_dir: PathBuf,
    /// Number of listing rows.
    #[arg(long, default_value_t = 4000)]
    pub rows: usize,
    /// Random seed; the same seed gives the same files.
    #[arg(long, default_value_t = 7)]
    pub seed: u64,
    /// Which spellings to draw from: `standard` (the committed sample) or
    /// `extended` (adds formats the sample does not contain, for evaluation).
    #[arg(long, value_enum, default_value_t = Variants::Standard)]
    pub variants: Variants,
    /// At most N distinct spellings in each of transmission and engine
    /// (besides blanks and placeholders), drawn once per seed; without it
    /// they grow with the rows.
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u64).range(1..))]
    pub spellings: Option<u64>,
    /// Write the drifted next drop: a new spelling family of engines and a
    /// shifted gasoline share, otherwise the same rows as without it.
    #[arg(long)]
    pub drift: bool,
}

#[derive(Debug, Clone, Copy, ValueEnum)]
pub enum Variants {
    Standard,
    Extended,
}

pub fn run(args: Args) -> anyhow::Result<ExitCode> {
    let variants = match args.variants {
        Variants::Standard => descry::demo::Variants::Standard,
        Variants::Extended => descry::demo::Variants::Extended,
    };
    let opts = descry::demo::SampleOptions {
        rows: args.rows,
        seed: args.seed,
        variants,
        spellings: args.spellings.map(|n| n as usize),
        drift: args.drift,
    };
    check_targets(&args.out_dir)?;
    descry::demo::write_sample(&args.out_dir, &opts)?;
    eprintln!(
        "wrote {} rows to {}",
        args.rows,
        args.out_dir.join("listings.csv").display()
    );
    Ok(ExitCode::SUCCESS)
}

/// The files `demo` writes in OUT_DIR.
const WRITTEN: [&str; 4] = [
    "listings.csv",
    "truth/transmission.csv",
    "truth/engine.csv",
    "truth/part_no.csv",
];

/// Refuse, before writing anything, an OUT_DIR that is a file or holds a
/// read-only file `demo` would replace.
fn check_targets(out_dir: &Path) -> anyhow::Result<()> {
    if out_dir.exists() && !out_dir.is_dir() {
        anyhow::bail!(
            "{}: is a file; -o names the folder to write listings.csv and truth/ into",
            out_dir.display()
        );
    }
    for name in WRITTEN {
        descry::write::check_replaceable(&out_dir.join(name))?;
    }
    Ok(())
}
