//! Numbers and what stands next to them: counts and measures.
//!
//! Every number of every value is looked at once. A unit of the built-in
//! table right after it (`4.5 l`, `120hp`, `30 km/h`) makes it a measure of
//! that quantity. Otherwise the word glued or spaced right after it (`6 spd`,
//! `4-cyl`, `16f`), the word glued right before it (`v8`, `x4`,
//! `inline-6`), a slash and a number after it (`12/12`) or parentheses around
//! it (`(6)`) are its marker. A word is a marker only when most of its rows
//! carry it next to a number; `powershift` in `40x40 powershift` is not.
//!
//! Marker spellings are grouped like words ([`super::words::same_word`]).
//! Groups then merge into one concept when they never read two different
//! numbers of one value (two different things: `16f/4r`) and the numbers of the smaller
//! are values the larger one also reads (`v8` beside `4 cyl`, `6 spd` beside
//! `18x6`). Pairs whose numbers are distributed most alike merge first, so
//! the forms of one attribute come together before a form of another
//! attribute could slip in, and are then kept apart from it by the values
//! they share (`8 fwd 2 rev`).
//!
//! Numbers that look like parts of a code are skipped: with a leading zero
//! (`0750`), or right after a digit and a `-`, `_`, `.` or `/` (`0181-1l`).

use std::collections::BTreeMap;
use std::sync::LazyLock;

use hashbrown::{HashMap, HashSet};
use rayon::prelude::*;
use regex::Regex;

use super::units::{Quantity, UNITS};
use super::words::{same_word, WordIndex};
use super::{rule_name, union, Corpus, Proposal, ProposeOptions, ProposedRule, UnitFactor};
use crate::numbers::{parse_integer, parse_number, DecimalMark, Macro};

/// Share of a word's rows that must carry it next to a number (on either
/// side, or as a unit).
const BINDING: f64 = 0.6;
/// Two marker groups that read different numbers in more than this share of
/// the smaller one's rows describe different things.
const APART: f64 = 0.02;
/// Share of the smaller group's rows whose number the larger group also reads
/// (on at least 0.1% of its rows) for the two to be one concept.
const ALIKE: f64 = 0.8;
/// Counts are whole numbers up to this; larger numbers are codes or measures.
const MAX_COUNT: i64 = 999;

/// `{num}` with each decimal mark.
static NUMBER_POINT: LazyLock<Regex> =
    LazyLock::new(|| Regex::new(&Macro::Num.expansion(DecimalMark::Point)).expect("number regex"));
static NUMBER_COMMA: LazyLock<Regex> =
    LazyLock::new(|| Regex::new(&Macro::Num.expansion(DecimalMark::Comma)).expect("number regex"));
static WORD_AFTER: LazyLock<Regex> = LazyLock::new(|| Regex::new(r"^\s?-?\s?(\p{L}+)").unwrap());
static WORD_AHEAD: LazyLock<Regex> =
    LazyLock::new(|| Regex::new(r"(?:^|[^\p{L}])(\p{L}+) $").unwrap());
static WORD_BEFORE: LazyLock<Regex> =
    LazyLock::new(|| Regex::new(r"(?:^|[^\p{L}])(\p{L}+)-?$").unwrap());
static UNIT_AFTER: LazyLock<Regex> = LazyLock::new(|| {
    Regex::new(&format!(
        r"^\s?-?\s?({})\.?(?:[^\p{{L}}]|$)",
        spelling_alternation(UNITS.iter().map(|u| u.spelling))
    ))
    .unwrap()
});

/// Spellings as a regex alternation, longest first so `litre` wins over `l`.
fn spelling_alternation<'a>(spellings: impl Iterator<Item = &'a str>) -> String {
    let mut all: Vec<&str> = spellings.collect();
    all.sort_by(|a, b| b.len().cmp(&a.len()).then_with(|| a.cmp(b)));
    all.dedup();
    all.iter()
        .map(|s| regex::escape(s))
        .collect::<Vec<_>>()
        .join("|")
}

#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord)]
enum Mark {
    /// A word after the number (`6 spd`).
    After(String),
    /// A word glued before it (`v8`).
    Before(String),
    /// A word and one space before it (`inline 4`).
    Ahead(String),
    /// `12/12`: a slash and another number after it.
    Slash,
    /// `(6)`.
    Paren,
}

#[derive(Debug)]
struct Seen {
    entry: u32,
    mark: Mark,
    /// The number, when it is a whole number.
    whole: Option<i64>,
}

struct UnitSeen {
    entry: u32,
    /// Index into [`UNITS`].
    unit: usize,
    value: f64,
}

/// What the numbers of a column gave.
pub(crate) struct Mined {
    pub counts: Vec<Proposal>,
    pub measures: Vec<Proposal>,
    /// Words used as count markers or units: not proposed as flags.
    pub marker_words: HashSet<String>,
}

fn unit_index(spelling: &str) -> usize {
    UNITS
        .iter()
        .position(|u| u.spelling == spelling)
        .expect("a spelling of the table")
}

/// The numbers of one normalized value, written with the `decimal` mark,
/// with their markers and units.
fn scan(entry: u32, value: &str, decimal: DecimalMark) -> (Vec<Seen>, Vec<UnitSeen>) {
    let mut seen = Vec::new();
    let mut units = Vec::new();
    let mut unit_end = 0;
    let number_regex = match decimal {
        DecimalMark::Point => &NUMBER_POINT,
        DecimalMark::Comma => &NUMBER_COMMA,
    };
    let mark = decimal.decimal();
    for m in number_regex.find_iter(value) {
        let text = m.as_str();
        let before = &value[..m.start()];
        let rest = &value[m.end()..];
        let leading_zero = text.len() > 1 && text.starts_with('0') && !text[1..].starts_with(mark);
        let mut back = before.chars().rev();
        let code_like = matches!(back.next(), Some('-' | '_' | '.' | '/'))
            && back.next().is_some_and(|c| c.is_ascii_digit());
        if leading_zero || code_like {
            continue;
        }
        // `12/12` is no proper fraction, so the parser refuses it whole: it
        // is two counts, and its first number is read below.
        let leading = || {
            let cut = text.find(['/', ' ', '-'])?;
            parse_number(&text[..cut], decimal)
        };
        let Some(number) = parse_number(text, decimal).or_else(leading) else {
            continue;
        };
        if let Some(c) = UNIT_AFTER.captures(rest) {
            let u = c.get(1).expect("unit group");
            units.push(UnitSeen {
                entry,
                unit: unit_index(u.as_str()),
                value: number,
            });
            unit_end = m.end() + u.end();
            continue;
        }
        // Without a unit, `12/12` is two counts, not a fraction: read the
        // whole number in front of a `/`, `-` or space.
        let (text, rest) = match text.find(['/', ' ', '-']) {
            Some(cut) => (&text[..cut], &value[m.start() + cut..]),
            None => (text, rest),
        };
        let whole = parse_integer(text, decimal).filter(|_| !text.contains(mark));
        let mut push = |mark: Mark| seen.push(Seen { entry, mark, whole });
        if let Some(c) = WORD_AFTER.captures(rest) {
            push(Mark::After(c[1].to_owned()));
        } else if rest.starts_with('/')
            && rest[1..]
                .trim_start()
                .starts_with(|c: char| c.is_ascii_digit())
        {
            push(Mark::Slash);
        } else if before.trim_end().ends_with('(') && rest.trim_start().starts_with(')') {
            push(Mark::Paren);
        }
        if let Some(c) = WORD_BEFORE.captures(before) {
            let w = c.get(1).expect("word group");
            if w.start() >= unit_end {
                push(Mark::Before(w.as_str().to_owned()));
            }
        } else if let Some(c) = WORD_AHEAD.captures(before) {
            let w = c.get(1).expect("word group");
            if w.start() >= unit_end {
                push(Mark::Ahead(w.as_str().to_owned()));
            }
        }
    }
    (seen, units)
}

/// A set of markers read as one thing, with the numbers it read.
struct Node {
    marks: Vec<Mark>,
    entries: Vec<u32>,
    rows: u64,
    /// Whole number -> rows (ordered, so that sums do not depend on a hash).
    values: BTreeMap<i64, u64>,
    /// (entry, number read), sorted.
    readings: Vec<(u32, i64)>,
}

impl Node {
    /// Share of `self`'s rows whose number `other` also reads, on at least
    /// 0.1% of its rows (so that a stray typo does not count).
    fn read_alike(&self, other: &Node) -> f64 {
        let floor = other.rows as f64 * 0.001;
        let shared: u64 = self
            .values
            .iter()
            .filter(|(v, _)| other.values.get(*v).is_some_and(|&r| r as f64 >= floor))
            .map(|(_, r)| r)
            .sum();
        shared as f64 / self.rows.max(1) as f64
    }

    /// The overlap of the two distributions of numbers (1 when read alike).
    fn distribution_overlap(&self, other: &Node) -> f64 {
        let (a, b) = (self.rows.max(1) as f64, other.rows.max(1) as f64);
        self.values
            .iter()
            .map(|(v, &r)| (r as f64 / a).min(other.values.get(v).map_or(0.0, |&o| o as f64 / b)))
            .sum()
    }

    /// Rows of the values where the two read different numbers (`16` and
    /// `4` in `16f/4r`); reading the same number (`1` in `5f-1r`, by `f-N`
    /// and `N r`) is no conflict.
    fn disagreeing_rows(&self, other: &Node, corpus: &Corpus) -> u64 {
        let (a, b) = (&self.readings, &other.readings);
        let (mut i, mut j, mut rows) = (0, 0, 0);
        while i < a.len() && j < b.len() {
            let entry = a[i].0.min(b[j].0);
            let ea: Vec<i64> = a[i..]
                .iter()
                .take_while(|r| r.0 == entry)
                .map(|r| r.1)
                .collect();
            let eb: Vec<i64> = b[j..]
                .iter()
                .take_while(|r| r.0 == entry)
                .map(|r| r.1)
                .collect();
            i += ea.len();
            j += eb.len();
            if !ea.is_empty() && !eb.is_empty() && !ea.iter().any(|v| eb.contains(v)) {
                rows += corpus.rows[entry as usize];
            }
        }
        rows
    }

    fn absorb(&mut self, other: Node) {
        self.readings.extend(other.readings);
        self.readings.sort_unstable();
        self.readings.dedup();
        self.marks.extend(other.marks);
        self.entries = union(&self.entries, &other.entries);
        self.rows += other.rows;
        for (v, r) in other.values {
            *self.values.entry(v).or_default() += r;
        }
    }
}

pub(crate) fn mine(corpus: &Corpus, words: &WordIndex, opts: &ProposeOptions) -> Mined {
    let scanned: Vec<(Vec<Seen>, Vec<UnitSeen>)> = corpus
        .normalized
        .par_iter()
        .enumerate()
        .map(|(i, v)| scan(i as u32, v, opts.decimal))
        .collect();
    let mut seen = Vec::new();
    let mut units = Vec::new();
    for (s, u) in scanned {
        seen.extend(s);
        units.extend(u);
    }
    let total = corpus.total_rows.max(1) as f64;
    let min_rows = (opts.min_share * total).ceil().max(1.0) as u64;
    let measures = measures(corpus, &units, min_rows, opts);
    let mut marker_words: HashSet<String> = HashSet::new();
    for p in &measures {
        if let ProposedRule::Measure { units, .. } = &p.rule {
            marker_words.extend(units.iter().flat_map(|u| {
                u.spelling
                    .split(|c: char| !c.is_alphabetic())
                    .map(str::to_owned)
            }));
        }
    }
    let counts = counts(
        corpus,
        words,
        &seen,
        &units,
        min_rows,
        opts,
        &mut marker_words,
    );
    Mined {
        counts,
        measures,
        marker_words,
    }
}

fn counts(
    corpus: &Corpus,
    words: &WordIndex,
    seen: &[Seen],
    units: &[UnitSeen],
    min_rows: u64,
    opts: &ProposeOptions,
    marker_words: &mut HashSet<String>,
) -> Vec<Proposal> {
    // Per marker: its entries and numbers.
    let mut by_mark: HashMap<&Mark, (Vec<u32>, Vec<(u32, Option<i64>)>)> = HashMap::new();
    for s in seen {
        let e = by_mark.entry(&s.mark).or_default();
        e.0.push(s.entry);
        e.1.push((s.entry, s.whole.filter(|w| (0..=MAX_COUNT).contains(w))));
    }
    // Entries where a word stands next to a number, on either side or as a
    // unit (`v` in `v8` and in `48v`).
    let mut adjacent: HashMap<&str, Vec<u32>> = HashMap::new();
    for s in seen {
        if let Mark::After(w) | Mark::Before(w) | Mark::Ahead(w) = &s.mark {
            adjacent.entry(w.as_str()).or_default().push(s.entry);
        }
    }
    for u in units {
        for w in UNITS[u.unit]
            .spelling
            .split(|c: char| !c.is_alphabetic())
            .filter(|w| !w.is_empty())
        {
            adjacent.entry(w).or_default().push(u.entry);
        }
    }
    let bound_rows = |w: &str| {
        let mut es = adjacent.get(w).cloned().unwrap_or_default();
        es.sort_unstable();
        es.dedup();
        corpus.rows_of(&es)
    };
    let mut nodes: Vec<Node> = Vec::new();
    let mut marks: Vec<&&Mark> = by_mark.keys().collect();
    marks.sort();
    for mark in marks {
        let (entries, numbers) = &by_mark[*mark];
        let mut entries = entries.clone();
        entries.sort_unstable();
        entries.dedup();
        let rows = corpus.rows_of(&entries);
        // A marker must be bound to numbers and read whole counts.
        let bound = match mark {
            Mark::After(w) | Mark::Before(w) => {
                bound_rows(w) as f64 >= BINDING * words.rows(corpus, w) as f64
            }
            // A spaced word ahead is a marker only if it stands there
            // itself most of the time (`inline 4`, not `diesel 4 cyl`).
            Mark::Ahead(w) => rows as f64 >= BINDING * words.rows(corpus, w) as f64,
            Mark::Slash | Mark::Paren => true,
        };
        if !bound {
            continue;
        }
        let mut values: BTreeMap<i64, u64> = BTreeMap::new();
        let mut readings = Vec::new();
        let mut whole_rows = 0;
        let mut last = None;
        for &(entry, whole) in numbers {
            if let Some(w) = whole {
                *values.entry(w).or_default() += corpus.rows[entry as usize];
                readings.push((entry, w));
                if last != Some(entry) {
                    whole_rows += corpus.rows[entry as usize];
                }
                last = Some(entry);
            }
        }
        if (whole_rows as f64) < 0.95 * rows as f64 {
            continue;
        }
        readings.sort_unstable();
        readings.dedup();
        nodes.push(Node {
            marks: vec![(*mark).clone()],
            entries,
            rows,
            values,
            readings,
        });
    }
    group_spellings(&mut nodes, words);
    // A marker (with its spellings) must recur before it can join a concept.
    nodes.retain(|n| n.entries.len() >= 2 && n.rows * 5 >= min_rows);
    if std::env::var_os("DESCRY_DEBUG").is_some() {
        for n in &nodes {
            eprintln!("node {:?} rows {} values {:?}", n.marks, n.rows, n.values);
        }
    }
    merge_concepts(corpus, &mut nodes);

    let mut out = Vec::new();
    for node in nodes.into_iter().filter(|n| n.rows >= min_rows) {
        for m in &node.marks {
            if let Mark::After(w) | Mark::Before(w) | Mark::Ahead(w) = m {
                marker_words.insert(w.clone());
            }
        }
        out.push(count_proposal(corpus, &node, opts));
    }
    out
}

/// Spellings of one marker word on the same side become one node.
fn group_spellings(nodes: &mut Vec<Node>, words: &WordIndex) {
    let known = |w: &str| words.words.contains_key(w);
    let mut i = 0;
    while i < nodes.len() {
        let mut j = i + 1;
        while j < nodes.len() {
            let same = nodes[i].marks.iter().any(|x| {
                nodes[j].marks.iter().any(|y| match (x, y) {
                    (Mark::After(a), Mark::After(b))
                    | (Mark::Before(a), Mark::Before(b))
                    | (Mark::Ahead(a), Mark::Ahead(b)) => same_word(a, b, &known),
                    _ => false,
                })
            });
            if same {
                let other = nodes.remove(j);
                nodes[i].absorb(other);
            } else {
                j += 1;
            }
        }
        i += 1;
    }
}

/// Merge nodes that read the same thing (see the module docs).
fn merge_concepts(corpus: &Corpus, nodes: &mut Vec<Node>) {
    loop {
        let mut best: Option<(f64, usize, usize)> = None;
        for i in 0..nodes.len() {
            for j in 0..nodes.len() {
                if i == j
                    || nodes[i].rows < nodes[j].rows
                    || (nodes[i].rows == nodes[j].rows && i > j)
                {
                    continue;
                }
                // j is the smaller one.
                let apart = nodes[i].disagreeing_rows(&nodes[j], corpus);
                if apart as f64 > APART * nodes[j].rows as f64 {
                    continue;
                }
                if nodes[j].read_alike(&nodes[i]) < ALIKE {
                    continue;
                }
                let overlap = nodes[j].distribution_overlap(&nodes[i]);
                if best.is_none_or(|(b, _, _)| overlap > b) {
                    best = Some((overlap, i, j));
                }
            }
        }
        let Some((_, i, j)) = best else {
            return;
        };
        let other = nodes.remove(j);
        let i = if j < i { i - 1 } else { i };
        nodes[i].absorb(other);
    }
}

/// The regex alternative for one marker.
fn alternative(mark: &Mark, spellings: &[&str]) -> String {
    let alt = || {
        spellings
            .iter()
            .map(|s| regex::escape(s))
            .collect::<Vec<_>>()
            .join("|")
    };
    match mark {
        Mark::After(_) => format!(
            r"(?:^|[^\d.,])({{count}})\s?-?\s?(?:{})\.?(?:[^\p{{L}}]|$)",
            alt()
        ),
        Mark::Before(_) => format!(
            r"(?:^|[^\p{{L}}])(?:{})-?({{count}})(?:[^\d.,]|[.,]\D|[.,]?$)",
            alt()
        ),
        Mark::Ahead(_) => format!(
            r"(?:^|[^\p{{L}}])(?:{}) ({{count}})(?:[^\d.,]|[.,]\D|[.,]?$)",
            alt()
        ),
        Mark::Slash => r"(?:^|[^\d.,/])({count})\s?/\s?\d".to_owned(),
        Mark::Paren => r"\(\s?({count})\s?\)".to_owned(),
    }
}

fn count_proposal(corpus: &Corpus, node: &Node, opts: &ProposeOptions) -> Proposal {
    let mut after: Vec<&str> = Vec::new();
    let mut before: Vec<&str> = Vec::new();
    let mut ahead: Vec<&str> = Vec::new();
    let mut others: Vec<&Mark> = Vec::new();
    for m in &node.marks {
        match m {
            Mark::After(w) => after.push(w),
            Mark::Before(w) => before.push(w),
            Mark::Ahead(w) => ahead.push(w),
            _ => others.push(m),
        }
    }
    // Longest spellings first, so `speed` is tried before `sp`.
    for list in [&mut after, &mut before, &mut ahead] {
        list.sort_by(|a, b| b.len().cmp(&a.len()).then_with(|| a.cmp(b)));
    }
    let mut parts = Vec::new();
    if !after.is_empty() {
        parts.push(alternative(&Mark::After(String::new()), &after));
    }
    if !before.is_empty() {
        parts.push(alternative(&Mark::Before(String::new()), &before));
    }
    if !ahead.is_empty() {
        parts.push(alternative(&Mark::Ahead(String::new()), &ahead));
    }
    others.sort();
    parts.extend(others.iter().map(|m| alternative(m, &[])));
    let lo = *node.values.keys().min().unwrap_or(&0);
    let hi = *node.values.keys().max().unwrap_or(&0);
    let name = match best_spelling(node) {
        Some(word) => rule_name(&word),
        // Only one-letter markers (`16f`, `x4`): name it after the letter.
        None => node
            .marks
            .iter()
            .find_map(|m| match m {
                Mark::After(w) | Mark::Before(w) | Mark::Ahead(w) => {
                    Some(format!("{}_count", rule_name(w)))
                }
                _ => None,
            })
            .unwrap_or_else(|| "count".to_owned()),
    };
    let mut notes = vec![format!("numbers read: {lo} to {hi} (the range)")];
    let describe = |m: &Mark| match m {
        Mark::After(w) => format!("\"N {w}\""),
        Mark::Before(w) => format!("\"{w}N\""),
        Mark::Ahead(w) => format!("\"{w} N\""),
        Mark::Slash => "\"N/N\"".to_owned(),
        Mark::Paren => "\"(N)\"".to_owned(),
    };
    let mut shown: Vec<String> = node.marks.iter().map(describe).collect();
    shown.sort();
    notes.push(format!("markers: {}", shown.join(", ")));
    Proposal {
        name,
        rule: ProposedRule::Count {
            pattern: parts.join("|"),
            range: (lo, hi),
        },
        distinct: node.entries.len() as u64,
        rows: node.rows,
        examples: corpus.examples(&node.entries, opts.examples),
        notes,
    }
}

/// The name of a concept: the longest spelling of its best-supported word.
fn best_spelling(node: &Node) -> Option<String> {
    let words: Vec<&str> = node
        .marks
        .iter()
        .filter_map(|m| match m {
            Mark::After(w) | Mark::Before(w) | Mark::Ahead(w) if w.chars().count() >= 2 => {
                Some(w.as_str())
            }
            _ => None,
        })
        .collect();
    words
        .iter()
        .max_by(|a, b| a.len().cmp(&b.len()).then_with(|| b.cmp(a)))
        .map(|w| w.to_string())
}

fn measures(
    corpus: &Corpus,
    units: &[UnitSeen],
    min_rows: u64,
    opts: &ProposeOptions,
) -> Vec<Proposal> {
    let mut by_quantity: HashMap<Quantity, Vec<&UnitSeen>> = HashMap::new();
    for u in units {
        by_quantity
            .entry(UNITS[u.unit].quantity)
            .or_default()
            .push(u);
    }
    let mut quantities: Vec<_> = by_quantity.into_iter().collect();
    quantities.sort_by_key(|(q, _)| *q);
    let mut out = Vec::new();
    for (quantity, seen) in quantities {
        let mut entries: Vec<u32> = seen.iter().map(|u| u.entry).collect();
        entries.sort_unstable();
        entries.dedup();
        let rows = corpus.rows_of(&entries);
        if rows < min_rows {
            continue;
        }
        // Rows per spelling; the spelling written most often gives the target unit.
        let mut per_unit: HashMap<usize, (Vec<u32>, f64, f64)> = HashMap::new();
        for u in &seen {
            let e =
                per_unit
                    .entry(u.unit)
                    .or_insert((Vec::new(), f64::INFINITY, f64::NEG_INFINITY));
            e.0.push(u.entry);
            e.1 = e.1.min(u.value * UNITS[u.unit].factor);
            e.2 = e.2.max(u.value * UNITS[u.unit].factor);
        }
        let mut spellings: Vec<(usize, u64, f64, f64)> = per_unit
            .into_iter()
            .map(|(u, (mut es, lo, hi))| {
                es.sort_unstable();
                es.dedup();
                (u, corpus.rows_of(&es), lo, hi)
            })
            .collect();
        spellings.sort_by(|a, b| {
            b.1.cmp(&a.1)
                .then_with(|| UNITS[a.0].spelling.cmp(UNITS[b.0].spelling))
        });
        let target = &UNITS[spellings[0].0];
        // Seen spellings first (most rows first), then the table's other
        // spellings of the same quantity, so the next data drop's `ltr` or
        // `ps` is read too.
        let seen_units: Vec<usize> = spellings.iter().map(|s| s.0).collect();
        let unseen: Vec<usize> = (0..UNITS.len())
            .filter(|u| UNITS[*u].quantity == quantity && !seen_units.contains(u))
            .collect();
        // Spellings that normalize alike (`cm³` is `cm3` under NFKC) are
        // one key of `units`: the first one seen is kept.
        let mut keys = HashSet::new();
        let factors: Vec<UnitFactor> = seen_units
            .iter()
            .chain(&unseen)
            .filter(|&&u| {
                let key = opts.normalizer.apply(UNITS[u].spelling);
                keys.insert(crate::ruleset::unit_key(&key).to_owned())
            })
            .map(|&u| UnitFactor {
                spelling: UNITS[u].spelling.to_owned(),
                factor: UNITS[u].factor / target.factor,
                unit: UNITS[u].unit.to_owned(),
                source: UNITS[u].source.to_owned(),
                seen: seen_units.contains(&u),
            })
            .collect();
        let lo = spellings.iter().map(|s| s.2).fold(f64::INFINITY, f64::min) / target.factor;
        let hi = spellings
            .iter()
            .map(|s| s.3)
            .fold(f64::NEG_INFINITY, f64::max)
            / target.factor;
        let alt =
            spelling_alternation(seen_units.iter().chain(&unseen).map(|&u| UNITS[u].spelling));
        let pattern = format!(r"(?:^|[^\d.,/])({{num}})\s?-?\s?({alt})\.?(?:[^\p{{L}}]|$)");
        let name = format!(
            "{}_{}",
            quantity.stem(),
            rule_name(target.spelling).replace('_', "")
        );
        out.push(Proposal {
            name,
            rule: ProposedRule::Measure {
                pattern,
                unit: target.spelling.to_owned(),
                units: factors,
            },
            distinct: entries.len() as u64,
            rows,
            examples: corpus.examples(&entries, opts.examples),
            notes: vec![format!(
                "target unit: {} ({}), the unit written most often; values seen: {} to {} {}",
                target.spelling,
                target.unit,
                short(lo),
                short(hi),
                target.spelling
            )],
        });
    }
    out
}

fn short(x: f64) -> String {
    let s = format!("{x:.4}");
    s.trim_end_matches('0').trim_end_matches('.').to_owned()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_are_read_with_the_rulesets_decimal_mark() {
        // With `decimal = ","`, "4,5 l" is 4.5 l and "4" is no count of
        // the word ahead (a decimal comma: common practice in much of
        // continental Europe).
        let (seen, units) = scan(0, "motor 4,5 l", DecimalMark::Comma);
        assert_eq!(units.iter().map(|u| u.value).collect::<Vec<_>>(), vec![4.5]);
        assert!(seen.iter().all(|s| s.whole.is_none()), "{seen:?}");
        // Read with a decimal point, the same text is a 4 and 5 l.
        let (seen, units) = scan(0, "motor 4,5 l", DecimalMark::Point);
        assert_eq!(units.iter().map(|u| u.value).collect::<Vec<_>>(), vec![5.0]);
        assert!(seen.iter().any(|s| s.whole == Some(4)), "{seen:?}");
    }

    fn marks(value: &str) -> Vec<(Mark, Option<i64>)> {
        scan(0, value, DecimalMark::Point)
            .0
            .into_iter()
            .map(|s| (s.mark, s.whole))
            .collect()
    }

    #[test]
    fn markers_on_both_sides() {
        assert_eq!(marks("6 spd"), [(Mark::After("spd".into()), Some(6))]);
        assert_eq!(
            marks("v8 gas"),
            [
                (Mark::After("gas".into()), Some(8)),
                (Mark::Before("v".into()), Some(8))
            ]
        );
        assert_eq!(
            marks("16f/16r"),
            [
                (Mark::After("f".into()), Some(16)),
                (Mark::After("r".into()), Some(16))
            ]
        );
        assert_eq!(marks("12/12 shuttle")[0], (Mark::Slash, Some(12)));
        assert_eq!(marks("automatic (8)"), [(Mark::Paren, Some(8))]);
        assert_eq!(marks("4.5 spd"), [(Mark::After("spd".into()), None)]);
    }

    #[test]
    fn units_and_codes() {
        let (seen, units) = scan(0, "4.5 l 120hp 30 km/h", DecimalMark::Point);
        assert!(seen.is_empty());
        let spelled: Vec<&str> = units.iter().map(|u| UNITS[u.unit].spelling).collect();
        assert_eq!(spelled, ["l", "hp", "km/h"]);
        // Parts of a code are not numbers to read.
        let (seen, units) = scan(0, "vlv-0181-1l", DecimalMark::Point);
        assert!(seen.is_empty() && units.is_empty());
    }
}
