//! `descry cluster`: group the values of a column that are probably the
//! same thing spelled differently, and propose a canonical spelling.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::bail;
use clap::ValueEnum;

use descry::cluster::map::write_label_map;
use descry::cluster::review::{read_review, review_toml};
use descry::cluster::text::cluster_text;
use descry::cluster::{cluster, unmatched, Cluster, ClusterOptions, Digits, Method};
use descry::write::{check_not_an_input, check_output_file, write_text_atomically};
use descry::Ruleset;

use super::common::{check_ruleset_target, emit, json_out, read_vocabulary, Format, InputArgs};

pub const ABOUT: &str = "\
Group the distinct values of a column that are probably the same thing
spelled differently, and propose a canonical spelling for each group: the
member with the most rows (ties: the one without stray spaces, then byte
order).

Values are compared after normalization (NFKC, lower case, white space
collapsed), so values differing only in case or spacing always group.
Methods, strictest first:
  letters       equal once punctuation and spaces are dropped
                (4-cyl / 4 cyl / 4cyl.; 5.5 and 5'5 stay apart); misses
                typos and word order
  words         the same words and numbers in any order, repeats counted
                (6 speed auto / auto 6-speed); misses typos and
                abbreviations
  qgram         Jaccard similarity of character q-gram sets (--q, default 3)
                at least --threshold (default 0.7); catches typos and
                reordering in long values, weak on short ones
  levenshtein   at most --threshold edits (default 0.2): a whole number is a
                count of edits, a fraction below 1 a share of the longer
                value's length; catches typos, misses reordering
  osa           as levenshtein, and a swap of two neighbours is one edit
                (optimal string alignment); catches 'atuo'
  jaro-winkler  Jaro-Winkler similarity at least --threshold (default 0.93);
                favours values sharing their first characters

Digits are identity: values whose digit runs differ (PMP-0750 / PMP-0751,
1,800 / 1800) are never grouped, by any method, unless --digits loose. So
are letter runs of one or two characters and Roman numerals i to xx
(TQ-320 / RQ-320, MK III / MK IV, ward a / ward b), always.

The fuzzy methods are precision first. They group what letters and words
group, and add a pair only if its words agree: the words that differ must
be typos of each other (one letter lost, added or swapped; replaced only
in words of 7 letters or more; words under 6 letters exact but for a
swap), so a changed, added or dropped word (plaster / plastic, customer
service / customer service agent) keeps values apart. No chains: every
two members of a group must be within --max-diameter of each other
(default: the --threshold), in the method's units.

The fuzzy methods use an index instead of comparing all pairs: segments
for levenshtein and osa, rarest q-grams or characters for qgram and
jaro-winkler. It finds every pair --exhaustive finds, except jaro-winkler on
very large sets (about a hundred thousand values in one block, as with
--digits loose), where a faster heuristic may miss a few (under 1% in our
measurements). Long values of three words or more are searched through
their words first: between two of them the index finds every pair within
the threshold whose words agree (all that may group) and reports no other
(--pairs lists the rest with --exhaustive). The output is the same
whatever --threads is.

Review before writing. -o groups.toml writes the groups as an editable
file: each group has its canonical spelling, its members with their rows,
and keep = true. Set keep = false on a wrong group, delete a member's line,
edit a canonical spelling; then
  descry cluster --from groups.toml --write-map R.toml --label NAME
adds a [[label]] named NAME to the ruleset R.toml (created if missing) with
a map from each kept member's normalized form to its group's canonical
spelling. Comments, other rules and entries already in the map are kept;
only new spellings are added. The one-step cluster INPUT --write-map is
allowed for the exact methods (letters, words) only: fuzzy groups go
through the review file.

--rules R.toml clusters only the values that no rule of R.toml fires on
(and that are not blank or one of its placeholders): what is left to
describe.

Memory: the column's vocabulary (proportional to the number of distinct
values; the table is read in batches) and, for the
fuzzy methods, an index of about 8 bytes per character
of every distinct value.

Examples:
  descry cluster samples/listings.csv --column part_no --method letters \\
      --write-map rulesets/part.toml --label part
  descry cluster samples/listings.csv --column engine --method osa -o groups.toml
  descry cluster --from groups.toml --write-map rulesets/engine.toml --label engine";

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum MethodName {
    Letters,
    Words,
    Qgram,
    Levenshtein,
    Osa,
    JaroWinkler,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum DigitsArg {
    Strict,
    Loose,
}

#[derive(Debug, clap::Args)]
#[command(mut_arg("input", |a| a.required(false).required_unless_present("from")))]
pub struct Args {
    /// The table (not with --from).
    #[command(flatten)]
    pub input: Option<InputArgs>,
    /// The column to cluster.
    #[arg(long, short = 'c', required_unless_present = "from")]
    pub column: Option<String>,
    /// Write the groups to FILE for review (TOML; see above).
    #[arg(long, short = 'o', value_name = "FILE", conflicts_with = "from")]
    pub output: Option<PathBuf>,
    /// Read reviewed groups from FILE (written by -o) instead of a table,
    /// and write the kept ones with --write-map.
    #[arg(long, value_name = "FILE", requires = "write_map", conflicts_with_all = ["column", "rules"])]
    pub from: Option<PathBuf>,
    /// Cluster only the values no rule of this ruleset fires on.
    #[arg(long, value_name = "FILE")]
    pub rules: Option<PathBuf>,
    /// How values are grouped.
    #[arg(long, short = 'm', value_enum, default_value_t = MethodName::Letters)]
    pub method: MethodName,
    /// The method's threshold: edits (2) or a share of the length (0.2) for
    /// levenshtein and osa, a least similarity (0.9) for qgram and jaro-winkler.
    #[arg(long, short = 't')]
    pub threshold: Option<String>,
    /// q-gram length for --method qgram.
    #[arg(long, default_value_t = 3)]
    pub q: usize,
    /// strict: values with different digit runs never group; loose: digits
    /// are characters like any other.
    #[arg(long, value_enum, default_value_t = DigitsArg::Strict)]
    pub digits: DigitsArg,
    /// No two members of a group further apart than this (same units as
    /// --threshold, which is the default; fuzzy methods only).
    #[arg(long)]
    pub max_diameter: Option<String>,
    /// Add the groups to this ruleset as a label map (needs --label).
    #[arg(long, requires = "label", value_name = "FILE")]
    pub write_map: Option<PathBuf>,
    /// The label rule to create or update with --write-map.
    #[arg(long, requires = "write_map", value_name = "NAME")]
    pub label: Option<String>,
    /// Report format: human text, or JSON (schema "descry.cluster/1").
    #[arg(long, value_enum, default_value_t = Format::Text)]
    pub format: Format,
    /// How many groups the text report lists (JSON lists all).
    #[arg(long, default_value_t = 20)]
    pub top: usize,
    /// Also list every similar pair with its score (JSON only).
    #[arg(long)]
    pub pairs: bool,
    /// Compare every pair instead of using the index: quadratic time, for
    /// checking the index.
    #[arg(long)]
    pub exhaustive: bool,
    /// Print no notes on standard error.
    #[arg(long, short = 'q')]
    pub quiet: bool,
}

pub fn run(args: Args) -> anyhow::Result<ExitCode> {
    if let Some(from) = &args.from {
        return write_reviewed(from, &args);
    }
    let (Some(input), Some(column)) = (&args.input, &args.column) else {
        bail!("give a table and --column to cluster, or --from a review file");
    };
    let method = method_of(args.method, args.threshold.as_deref(), args.q)?;
    let max_diameter = match (&args.max_diameter, method) {
        (None, _) => None,
        (Some(d), Method::Fuzzy(f)) => match method_of(args.method, Some(d), args.q)? {
            Method::Fuzzy(cap) => Some(cap).filter(|_| f.name() == cap.name()),
            _ => None,
        },
        (Some(_), _) => bail!("--max-diameter applies to the fuzzy methods (qgram, levenshtein, osa, jaro-winkler); letters and words groups are exact"),
    };
    if let Some(map) = &args.write_map {
        if let Method::Fuzzy(f) = method {
            bail!(
                "--write-map with --method {} would write groups nobody has checked: write them for review \
                 with -o groups.toml, edit, then `descry cluster --from groups.toml --write-map {} --label NAME` \
                 (the one-step --write-map is for the exact methods, letters and words)",
                f.name(),
                map.display()
            );
        }
        check_ruleset_target(map, &[&input.input])?;
    }
    if let Some(out) = &args.output {
        check_output_file(out)?;
        check_not_an_input(out, &[&input.input])?;
    }
    let mut vocab = read_vocabulary(input, column, args.quiet)?;
    if let Some(path) = &args.rules {
        let rules = Ruleset::from_path(path)?;
        let all = (vocab.values.len(), vocab.rows());
        vocab = unmatched(&vocab, &rules);
        if !args.quiet {
            eprintln!(
                "descry: {}: {} of {} distinct values ({} of {} rows) left unmatched, clustered",
                path.display(),
                vocab.values.len(),
                all.0,
                vocab.counts.iter().sum::<u64>(),
                all.1 - vocab.null_rows
            );
        }
    }
    let digits = match args.digits {
        DigitsArg::Strict => Digits::Strict,
        DigitsArg::Loose => Digits::Loose,
    };
    let opts = ClusterOptions {
        digits,
        max_diameter,
        exhaustive: args.exhaustive,
        keep_pairs: args.pairs,
        ..ClusterOptions::new(method)
    };
    let report = cluster(&vocab, column, &opts);
    match args.format {
        Format::Text => emit(&cluster_text(&report, args.top))?,
        Format::Json => emit(&(json_out(&report)? + "\n"))?,
    }
    if let Some(out) = &args.output {
        write_text_atomically(out, &review_toml(&report))?;
        if !args.quiet {
            eprintln!(
                "descry: wrote {} groups to {} for review",
                report.clusters.len(),
                out.display()
            );
        }
    }
    if let (Some(path), Some(label)) = (&args.write_map, &args.label) {
        write_map(path, label, column, &report.clusters, args.quiet)?;
    }
    Ok(ExitCode::SUCCESS)
}

/// `--from`: the kept groups of a review file, written as a label map.
fn write_reviewed(from: &Path, args: &Args) -> anyhow::Result<ExitCode> {
    if args.input.is_some() {
        bail!("--from reads its groups from the review file: give no table");
    }
    let (Some(path), Some(label)) = (&args.write_map, &args.label) else {
        bail!("--from needs --write-map FILE --label NAME");
    };
    check_ruleset_target(path, &[from])?;
    let text = std::fs::read_to_string(from)
        .map_err(|e| anyhow::anyhow!("{}: cannot read the review file: {e}", from.display()))?;
    let reviewed = read_review(&text).map_err(|m| anyhow::anyhow!("{}: {m}", from.display()))?;
    if !args.quiet {
        eprintln!(
            "descry: {}: {} groups kept, {} left out",
            from.display(),
            reviewed.kept.len(),
            reviewed.left_out
        );
    }
    write_map(path, label, &reviewed.column, &reviewed.kept, args.quiet)?;
    Ok(ExitCode::SUCCESS)
}

fn write_map(
    path: &Path,
    label: &str,
    column: &str,
    clusters: &[Cluster],
    quiet: bool,
) -> anyhow::Result<()> {
    let u = write_label_map(path, label, column, clusters)?;
    if !quiet {
        let what = if u.created_file { "created" } else { "updated" };
        eprintln!(
            "descry: {what} {}: label \"{label}\": {} map entries added, {} already there with another value kept{}",
            path.display(),
            u.added,
            u.kept,
            if u.categories_added > 0 { format!(", {} categories added", u.categories_added) } else { String::new() }
        );
    }
    Ok(())
}

/// The method with its threshold (the method's default when none is given).
fn method_of(name: MethodName, threshold: Option<&str>, q: usize) -> anyhow::Result<Method> {
    let name = name
        .to_possible_value()
        .map(|v| v.get_name().to_owned())
        .unwrap_or_default();
    descry::cluster::method::method_of(&name, threshold, q).map_err(anyhow::Error::msg)
}
