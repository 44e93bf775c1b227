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

/// Spellings of the things people count in descriptions, written after the
/// number (common practice of English specification sheets). A count whose
/// markers hold one of them reads the others too, as a measure reads every
/// spelling of its unit: drafted where gears are written `6-speed`, it
/// still reads `6 gears` and `19 ratios` in the next drop.
const COUNT_NOUNS: &[&[&str]] = &[
    &["speed", "speeds", "spd", "gear", "gears", "ratio", "ratios"],
    &["cylinder", "cylinders", "cyl", "cyls"],
    &["phase", "phases"],
    &["pole", "poles"],
    &["door", "doors"],
    &["seat", "seats", "seater"],
    &["valve", "valves"],
    &["axle", "axles"],
    &["wheel", "wheels"],
    &["blade", "blades"],
    &["burner", "burners"],
    &["port", "ports"],
    &["core", "cores"],
    &["bedroom", "bedrooms", "bed", "beds"],
];

/// The count nouns of the sets that hold one of `spellings`, not already
/// among them.
fn kindred_count_nouns(spellings: &[&str]) -> Vec<&'static str> {
    COUNT_NOUNS
        .iter()
        .filter(|set| set.iter().any(|n| spellings.contains(n)))
        .flat_map(|set| set.iter().copied())
        .filter(|n| !spellings.contains(n))
        .collect()
}

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
    /// A bound word in front of the number (`up to 44 lbs`, `over 44 lbs`).
    bound: Option<Bound>,
    /// A number with no unit right after a foot mark (`7` in `5'7`): read in
    /// the smaller unit of the compound, `unit` is the mark's.
    tail: bool,
}

/// Which end of a quantity a bound word gives.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Bound {
    /// `up to`, `under`, `<`: the value is at most the number.
    Upper,
    /// `over`, `at least`, `>`: the value is at least the number.
    Lower,
}

/// Bound words in front of a number (common practice), longest first.
const UPPER_WORDS: &[&str] = &[
    "less than",
    "no more than",
    "maximum",
    "up to",
    "below",
    "under",
    "max",
    "<=",
    "≤",
    "<",
];
const LOWER_WORDS: &[&str] = &[
    "more than",
    "at least",
    "minimum",
    "above",
    "over",
    "min",
    ">=",
    "≥",
    ">",
];

/// The bound word right in front of a number, if any.
fn bound_before(before: &str) -> Option<Bound> {
    let text = before.trim_end();
    let ends_with_word = |w: &str| {
        text.strip_suffix(w).is_some_and(|rest| {
            !w.starts_with(|c: char| c.is_alphabetic())
                || !rest.ends_with(|c: char| c.is_alphanumeric())
        })
    };
    if UPPER_WORDS.iter().any(|w| ends_with_word(w)) {
        Some(Bound::Upper)
    } else if LOWER_WORDS.iter().any(|w| ends_with_word(w)) {
        Some(Bound::Lower)
    } else {
        None
    }
}

/// Foot marks: a number right after one, with no unit of its own, is the
/// inches of a compound length (`5'7`).
const FOOT_MARKS: &[char] = &['\'', '′', '’'];

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
        // The digit of a unit just read (`cm3`, `in³` after NFKC) is no number.
        if m.start() < unit_end {
            continue;
        }
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
                bound: bound_before(before),
                tail: false,
            });
            unit_end = m.end() + u.end();
            continue;
        }
        // `5'7`: the inches after a foot mark, written without their mark.
        let after_mark = unit_end > 0
            && before[..unit_end].ends_with(FOOT_MARKS)
            && before[unit_end..].trim().is_empty();
        if after_mark && !rest.trim_start().starts_with(|c: char| c.is_alphanumeric()) {
            let mark = units.last().map_or(0, |u| u.unit);
            units.push(UnitSeen {
                entry,
                unit: mark,
                value: number,
                bound: None,
                tail: true,
            });
            continue;
        }
        // Three digits or more glued to letters are part of a code
        // (`qz-418`, `612x`), never a count.
        let glued_after = rest.starts_with(|c: char| c.is_alphabetic());
        let glued_before = before
            .strip_suffix('-')
            .unwrap_or(before)
            .ends_with(|c: char| c.is_alphabetic());
        let digits = text.chars().take_while(char::is_ascii_digit).count();
        if digits >= 3 && (glued_after || glued_before) {
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
    /// Rows of each marker, in the order of `marks`.
    mark_rows: Vec<u64>,
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
        self.mark_rows.extend(other.mark_rows);
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
    let bare = bare_numbers(corpus, opts.decimal);
    let measures = measures(corpus, &units, &bare, min_rows, opts);
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

/// Values that are only a number (`67`, `1.7`), with that number.
fn bare_numbers(corpus: &Corpus, decimal: DecimalMark) -> Vec<(u32, f64)> {
    let number_regex = match decimal {
        DecimalMark::Point => &NUMBER_POINT,
        DecimalMark::Comma => &NUMBER_COMMA,
    };
    corpus
        .normalized
        .iter()
        .enumerate()
        .filter_map(|(e, v)| {
            let m = number_regex.find(v)?;
            (m.start() == 0 && m.end() == v.len())
                .then(|| parse_number(v, decimal))
                .flatten()
                .map(|x| (e as u32, x))
        })
        .collect()
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
    // A column most of whose rows are one token (`ASLT4`, `DWI`) is a code
    // column: there a number glued to letters is part of the code.
    let one_token: u64 = (0..corpus.len())
        .filter(|&e| !corpus.normalized[e].contains(char::is_whitespace))
        .map(|e| corpus.rows[e])
        .sum();
    let code_column = one_token * 2 >= corpus.total_rows;
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
        // In a code column, a number glued to letters in a value that is
        // nothing else (`aslt4`, `dwi2`) is part of a code, not a count of
        // anything; elsewhere `dct7` is seven gears.
        let glued = matches!(mark, Mark::After(_) | Mark::Before(_));
        let code_rows: u64 = entries
            .iter()
            .filter(|&&e| is_code_token(&corpus.normalized[e as usize]))
            .map(|&e| corpus.rows[e as usize])
            .sum();
        if glued && code_column && code_rows as f64 >= 0.8 * rows as f64 {
            continue;
        }
        readings.sort_unstable();
        readings.dedup();
        nodes.push(Node {
            marks: vec![(*mark).clone()],
            mark_rows: vec![rows],
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
    merge_concepts(corpus, &mut nodes, min_rows);

    let mut out = Vec::new();
    // A count needs numbers that vary while the marker stays: a marker read
    // with one number only is part of a name (`412` in `model 412`).
    for node in nodes
        .into_iter()
        .filter(|n| n.rows >= min_rows && n.values.len() >= 2)
    {
        for m in &node.marks {
            if let Mark::After(w) | Mark::Before(w) | Mark::Ahead(w) = m {
                marker_words.insert(w.clone());
            }
        }
        out.push(count_proposal(corpus, &node, opts));
    }
    out
}

/// A value that is one token of letters glued to digits (`aslt4`, `qz418`).
fn is_code_token(value: &str) -> bool {
    value.chars().all(|c| c.is_alphanumeric() || c == '-')
        && value.chars().filter(|c| c.is_alphabetic()).count() >= 2
        && value.chars().any(|c| c.is_ascii_digit())
}

/// A word marker of at least two letters on one side (`spd` after, `dct`
/// before): two nodes with such words that are not spellings of each other
/// are one count only if both are common enough to be proposed alone (`6
/// spd` and `6 fwd`); a rare word reading the same small numbers is no
/// evidence (`2 projections`, `2 canvases`).
fn word_markers(node: &Node) -> impl Iterator<Item = &Mark> {
    node.marks.iter().filter(|m| match m {
        Mark::After(w) | Mark::Before(w) => w.chars().count() >= 2,
        _ => false,
    })
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
fn merge_concepts(corpus: &Corpus, nodes: &mut Vec<Node>, min_rows: u64) {
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
                let both_words = word_markers(&nodes[i]).any(|a| {
                    word_markers(&nodes[j]).any(|b| {
                        matches!(
                            (a, b),
                            (Mark::After(_), Mark::After(_)) | (Mark::Before(_), Mark::Before(_))
                        )
                    })
                });
                if both_words && nodes[j].rows < min_rows {
                    continue;
                }
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

/// A counted noun written before its number with a times sign: `cyl x4`,
/// `seats × 5` (common practice).
fn times_alternative(spellings: &[&str]) -> String {
    let alt = spellings
        .iter()
        .map(|s| regex::escape(s))
        .collect::<Vec<_>>()
        .join("|");
    format!(r"(?:^|[^\p{{L}}])(?:{alt})\.?\s?[x×]\s?({{count}})(?:[^\d.,]|[.,]\D|[.,]?$)")
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
    let all: Vec<&str> = after.iter().chain(&before).chain(&ahead).copied().collect();
    let kindred = kindred_count_nouns(&all);
    after.extend(kindred.iter().copied());
    // Longest spellings first, so `speed` is tried before `sp`.
    for list in [&mut after, &mut before, &mut ahead] {
        list.sort_by(|a, b| b.len().cmp(&a.len()).then_with(|| a.cmp(b)));
    }
    let mut parts = Vec::new();
    if !after.is_empty() {
        parts.push(alternative(&Mark::After(String::new()), &after));
        // The same nouns before the number with a times sign (`cyl x4`).
        let nouns: Vec<&str> = after
            .iter()
            .copied()
            .filter(|w| w.chars().count() >= 3)
            .collect();
        if !nouns.is_empty() {
            parts.push(times_alternative(&nouns));
        }
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
    if !kindred.is_empty() {
        notes.push(format!(
            "also reads the other spellings of this count (common practice): {}",
            kindred.join(", ")
        ));
    }
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

/// The name of a concept: its full spelling with the most rows (a full
/// spelling abbreviates no other: `speed`, not `spd`; `automatic`, not the
/// rarer `atuomatic`).
fn best_spelling(node: &Node) -> Option<String> {
    let mut rows: Vec<(&str, u64)> = Vec::new();
    for (m, &r) in node.marks.iter().zip(&node.mark_rows) {
        if let Mark::After(w) | Mark::Before(w) | Mark::Ahead(w) = m {
            if w.chars().count() < 2 {
                continue;
            }
            match rows.iter_mut().find(|(x, _)| x == w) {
                Some(entry) => entry.1 += r,
                None => rows.push((w.as_str(), r)),
            }
        }
    }
    let none = |_: &str| false;
    fn most<'a>(pool: &[(&'a str, u64)]) -> Option<(&'a str, u64)> {
        pool.iter()
            .copied()
            .max_by(|a, b| a.1.cmp(&b.1).then_with(|| b.0.cmp(a.0)))
    }
    // The marker written most often, then the full spelling of its group.
    let (top, _) = most(&rows)?;
    let spellings: Vec<(&str, u64)> = rows
        .iter()
        .copied()
        .filter(|(w, _)| same_word(w, top, &none))
        .collect();
    let full: Vec<(&str, u64)> = spellings
        .iter()
        .copied()
        .filter(|(w, _)| {
            !spellings
                .iter()
                .any(|(o, _)| super::words::abbreviates(w, o, &none))
        })
        .collect();
    most(if full.is_empty() { &spellings } else { &full }).map(|(w, _)| w.to_string())
}

/// A measure's reading of one value: the first number with a unit, or
/// with a compound (`5 ft 6 in`, `5'7`) the sum, in the target unit.
fn reading(list: &[&UnitSeen], compound: bool, target: &super::units::UnitSpelling) -> f64 {
    let one = |u: &UnitSeen| {
        if u.tail {
            u.value
        } else {
            u.value * UNITS[u.unit].factor / target.factor
        }
    };
    if compound {
        list.iter().map(|u| one(u)).sum()
    } else {
        one(list[0])
    }
}

/// A factor written at the precision of its sources (12 significant
/// digits): `0.3048 / 0.0254` is 12, not 12.000000000000002.
fn rounded(x: f64) -> f64 {
    format!("{x:.11e}").parse().unwrap_or(x)
}

fn measures(
    corpus: &Corpus,
    units: &[UnitSeen],
    bare: &[(u32, f64)],
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
        let mut per_entry: BTreeMap<u32, Vec<&UnitSeen>> = BTreeMap::new();
        for u in &seen {
            per_entry.entry(u.entry).or_default().push(u);
        }
        // A compound: a larger unit followed by a smaller one in one value
        // (`5 ft 6 in`), or a number after a foot mark (`5'7`). The smaller
        // unit written most often is then the target, and readings add up.
        let mut smaller: HashMap<usize, u64> = HashMap::new();
        let (mut compound_values, mut tails) = (0, false);
        for (&e, list) in &per_entry {
            let mut is_compound = false;
            for w in list.windows(2) {
                if w[1].tail {
                    tails = true;
                    is_compound = true;
                } else if UNITS[w[0].unit].factor > UNITS[w[1].unit].factor {
                    *smaller.entry(w[1].unit).or_default() += corpus.rows[e as usize];
                    is_compound = true;
                }
            }
            compound_values += usize::from(is_compound);
        }
        let compound = compound_values >= 2 && !smaller.is_empty();
        // Rows per spelling; the spelling written most often gives the target unit.
        let mut per_unit: HashMap<usize, Vec<u32>> = HashMap::new();
        for u in seen.iter().filter(|u| !u.tail) {
            per_unit.entry(u.unit).or_default().push(u.entry);
        }
        let mut spellings: Vec<(usize, u64)> = per_unit
            .into_iter()
            .map(|(u, mut es)| {
                es.sort_unstable();
                es.dedup();
                (u, corpus.rows_of(&es))
            })
            .collect();
        spellings.sort_by(|a, b| {
            b.1.cmp(&a.1)
                .then_with(|| UNITS[a.0].spelling.cmp(UNITS[b.0].spelling))
        });
        let target_index = if compound {
            let mut best: Vec<(usize, u64)> = smaller.into_iter().collect();
            best.sort_by(|a, b| {
                b.1.cmp(&a.1)
                    .then_with(|| UNITS[a.0].spelling.cmp(UNITS[b.0].spelling))
            });
            best[0].0
        } else {
            spellings[0].0
        };
        let target = &UNITS[target_index];
        // A bare number after a foot mark is read in the target unit, so
        // only when that unit is the inch.
        let tails = compound && tails && target.unit == "inch";
        let readings: Vec<(u32, f64)> = per_entry
            .iter()
            .map(|(&e, list)| {
                let list: Vec<&UnitSeen> =
                    list.iter().copied().filter(|u| tails || !u.tail).collect();
                (e, reading(&list, compound, target))
            })
            .filter(|r| r.1.is_finite())
            .collect();
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
                factor: rounded(UNITS[u].factor / target.factor),
                unit: UNITS[u].unit.to_owned(),
                source: UNITS[u].source.to_owned(),
                seen: seen_units.contains(&u),
            })
            .collect();
        let lo = readings.iter().map(|r| r.1).fold(f64::INFINITY, f64::min);
        let hi = readings
            .iter()
            .map(|r| r.1)
            .fold(f64::NEG_INFINITY, f64::max);
        let alt =
            spelling_alternation(seen_units.iter().chain(&unseen).map(|&u| UNITS[u].spelling));
        let mut notes = vec![format!(
            "target unit: {} ({}), {}; values seen: {} to {} {}",
            unit_word(target_index),
            target.unit,
            if compound {
                "the smaller unit of the compounds written"
            } else {
                "the unit written most often"
            },
            short(lo),
            short(hi),
            unit_word(target_index)
        )];
        let (pattern, combine, fancy) = if compound {
            notes.push(format!(
                "{compound_values} values write a compound (`5 ft 6 in`): every number with a unit is read and the readings are added up"
            ));
            // Look-arounds instead of consumed neighbours, so that the next
            // number of a compound can still be matched.
            let mut p = format!(r"(?<![\d.,/])({{num}})\s?-?\s?({alt})\.?(?!\p{{L}})");
            if tails {
                notes.push(format!(
                    "a number right after a foot mark, with no unit of its own (`5'7`), is read in {}",
                    unit_word(target_index)
                ));
                p.push_str(r#"|(?<=['′’])\s*({num})(?![\d.,'′’"”])(?!\s*\p{L})"#);
            }
            (p, Some("sum".to_owned()), true)
        } else {
            (
                format!(r"(?:^|[^\d.,/])({{num}})\s?-?\s?({alt})\.?(?:[^\p{{L}}]|$)"),
                None,
                false,
            )
        };
        let name = format!(
            "{}_{}",
            quantity.stem(),
            unit_name(target.spelling, target.unit)
        );
        out.push(Proposal {
            name: name.clone(),
            rule: ProposedRule::Measure {
                pattern,
                unit: unit_word(target_index).to_owned(),
                units: factors,
                combine,
                fancy,
            },
            distinct: entries.len() as u64,
            rows,
            examples: corpus.examples(&entries, opts.examples),
            notes,
        });
        out.extend(bound_flags(
            corpus, &seen, &name, rows, &alt, min_rows, opts,
        ));
        let written: Vec<(u64, f64)> = readings
            .iter()
            .map(|&(e, r)| (corpus.rows[e as usize], r * target.factor))
            .collect();
        out.extend(bare_measures(
            corpus, quantity, &written, bare, min_rows, opts,
        ));
    }
    out
}

/// The target unit as a word: the spelling, or for a mark (`"`) the
/// unit's first spelling in letters (`inch`).
fn unit_word(unit: usize) -> &'static str {
    let u = &UNITS[unit];
    if u.spelling.chars().any(char::is_alphanumeric) {
        return u.spelling;
    }
    UNITS
        .iter()
        .find(|o| o.unit == u.unit && o.spelling.chars().all(char::is_alphabetic))
        .map_or(u.spelling, |o| o.spelling)
}

/// A rule name for a unit: its spelling, or its name when the spelling is
/// a mark (`'`, `"`).
fn unit_name(spelling: &str, unit: &str) -> String {
    if spelling.chars().any(char::is_alphanumeric) {
        rule_name(spelling).replace('_', "")
    } else {
        rule_name(unit).replace('_', "")
    }
}

/// Flags for the bound words in front of a measure's numbers (`up to 44
/// lbs`, `over 44 lbs`): the measure reads 44 in both, the flags say which
/// end it is.
fn bound_flags(
    corpus: &Corpus,
    seen: &[&UnitSeen],
    measure: &str,
    measure_rows: u64,
    alt: &str,
    min_rows: u64,
    opts: &ProposeOptions,
) -> Vec<Proposal> {
    let mut out = Vec::new();
    for (bound, words, suffix, what) in [
        (Bound::Upper, UPPER_WORDS, "upper", "at most"),
        (Bound::Lower, LOWER_WORDS, "lower", "at least"),
    ] {
        let mut entries: Vec<u32> = seen
            .iter()
            .filter(|u| u.bound == Some(bound))
            .map(|u| u.entry)
            .collect();
        entries.sort_unstable();
        entries.dedup();
        // Any bound the measure reads often enough to matter is flagged:
        // without the flag `up to 44` and `over 44` are one reading.
        let rows = corpus.rows_of(&entries);
        if entries.is_empty() || rows * 20 < measure_rows.min(min_rows * 20) {
            continue;
        }
        let words: Vec<String> = words.iter().map(|w| regex::escape(w)).collect();
        out.push(Proposal {
            name: format!("{measure}_{suffix}"),
            rule: ProposedRule::Flag {
                any: Vec::new(),
                pattern: Some(format!(
                    r"(?:^|[^\p{{L}}])(?:{})\s?[0-9.,]*[0-9]\s?-?\s?(?:{alt})\.?(?:[^\p{{L}}]|$)",
                    words.join("|")
                )),
            },
            distinct: entries.len() as u64,
            rows,
            examples: corpus.examples(&entries, opts.examples),
            notes: vec![format!(
                "`{measure}` is a bound here: the value is {what} the number read (bound words: {})",
                (if bound == Bound::Upper { UPPER_WORDS } else { LOWER_WORDS }).join(", ")
            )],
        });
    }
    out
}

/// Bare numbers (a value that is only a number) in a column that writes a
/// quantity with units elsewhere: each unit of the quantity in which a bare
/// number falls among the lengths (masses, ...) written with a unit is a
/// reading of it. A unit is proposed when it alone explains enough bare
/// numbers (`67` as inches and `170` as centimetres in a column of heights
/// written `5'7"` and `170 cm`), with the range of the numbers it explains.
fn bare_measures(
    corpus: &Corpus,
    quantity: Quantity,
    written: &[(u64, f64)],
    bare: &[(u32, f64)],
    min_rows: u64,
    opts: &ProposeOptions,
) -> Vec<Proposal> {
    let bare_rows: u64 = bare.iter().map(|&(e, _)| corpus.rows[e as usize]).sum();
    if written.len() < 3 || bare_rows < min_rows {
        return Vec::new();
    }
    // The 5th to 95th percentile of the written readings (by rows), widened
    // by a third on either side.
    let mut sorted = written.to_vec();
    sorted.sort_by(|a, b| a.1.total_cmp(&b.1));
    let total: u64 = sorted.iter().map(|w| w.0).sum();
    let at = |share: f64| {
        let mut acc = 0;
        for w in &sorted {
            acc += w.0;
            if acc as f64 >= share * total as f64 {
                return w.1;
            }
        }
        sorted[sorted.len() - 1].1
    };
    let (lo, hi) = (at(0.05) / WIDEN, at(0.95) * WIDEN);
    if lo <= 0.0 {
        return Vec::new();
    }
    // One spelling per unit: the first of the table.
    let mut candidates: Vec<usize> = Vec::new();
    for (i, u) in UNITS.iter().enumerate() {
        let first = !candidates.iter().any(|&c| UNITS[c].unit == u.unit);
        if u.quantity == quantity && first && u.spelling.chars().all(char::is_alphabetic) {
            candidates.push(i);
        }
    }
    let fits = |u: usize, x: f64| (lo..=hi).contains(&(x * UNITS[u].factor));
    let mut out = Vec::new();
    for &u in &candidates {
        // Numbers this unit explains, and no other.
        let mut mine: Vec<(u32, f64)> = bare
            .iter()
            .copied()
            .filter(|&(_, x)| fits(u, x) && candidates.iter().all(|&o| o == u || !fits(o, x)))
            .collect();
        mine.sort_by(|a, b| a.1.total_cmp(&b.1));
        let rows: u64 = mine.iter().map(|&(e, _)| corpus.rows[e as usize]).sum();
        if mine.len() < 3 || rows < min_rows {
            continue;
        }
        let (first, last) = (
            mine[0].1.floor() as u64,
            mine[mine.len() - 1].1.floor() as u64,
        );
        let mark = regex::escape(&opts.decimal.decimal().to_string());
        let pattern = format!(r"^((?:{})(?:{mark}[0-9]+)?)$", range_regex(first, last));
        let mut entries: Vec<u32> = mine.iter().map(|m| m.0).collect();
        entries.sort_unstable();
        let spelling = UNITS[u].spelling;
        out.push(Proposal {
            name: format!("{}_{}_bare", quantity.stem(), unit_name(spelling, UNITS[u].unit)),
            rule: ProposedRule::Measure {
                pattern,
                unit: spelling.to_owned(),
                units: Vec::new(),
                combine: None,
                fancy: false,
            },
            distinct: entries.len() as u64,
            rows,
            examples: corpus.examples(&entries, opts.examples),
            notes: vec![format!(
                "values that are only a number, {first} to {last}: read as {} ({}), because in that unit they fall among the values written with a unit ({} to {} {}); no other unit does",
                spelling,
                UNITS[u].unit,
                short(lo / UNITS[u].factor),
                short(hi / UNITS[u].factor),
                spelling
            )],
        });
    }
    out
}

/// How far bare numbers may lie outside the written readings' 5th to 95th
/// percentile (a factor).
const WIDEN: f64 = 1.35;

/// A regex matching the whole numbers `lo..=hi` (no leading zeros).
fn range_regex(lo: u64, hi: u64) -> String {
    let mut parts = Vec::new();
    let mut start = lo;
    while start <= hi {
        let digits = start.to_string().len() as u32;
        let end = hi.min(10u64.pow(digits) - 1);
        same_length(
            &start.to_string(),
            &end.to_string(),
            &mut String::new(),
            &mut parts,
        );
        start = end + 1;
    }
    parts.join("|")
}

/// Alternatives matching the numbers from `a` to `b`, both of one length,
/// each after `prefix`.
fn same_length(a: &str, b: &str, prefix: &mut String, parts: &mut Vec<String>) {
    if a.is_empty() {
        parts.push(prefix.clone());
        return;
    }
    let (a0, b0) = (a.as_bytes()[0], b.as_bytes()[0]);
    let (ra, rb) = (&a[1..], &b[1..]);
    let any = |n: usize| {
        if n == 0 {
            String::new()
        } else if n == 1 {
            "[0-9]".to_owned()
        } else {
            format!("[0-9]{{{n}}}")
        }
    };
    let class = |x: u8, y: u8| {
        if x == y {
            (x as char).to_string()
        } else {
            format!("[{}-{}]", x as char, y as char)
        }
    };
    if a0 == b0 {
        prefix.push(a0 as char);
        same_length(ra, rb, prefix, parts);
        prefix.pop();
        return;
    }
    let low_full = ra.bytes().all(|c| c == b'0');
    let high_full = rb.bytes().all(|c| c == b'9');
    let from = if low_full { a0 } else { a0 + 1 };
    let to = if high_full { b0 } else { b0 - 1 };
    if !low_full {
        let mut p = prefix.clone();
        p.push(a0 as char);
        same_length(ra, &"9".repeat(ra.len()), &mut p, parts);
    }
    if from <= to {
        parts.push(format!("{prefix}{}{}", class(from, to), any(ra.len())));
    }
    if !high_full {
        let mut p = prefix.clone();
        p.push(b0 as char);
        same_length(&"0".repeat(rb.len()), rb, &mut p, parts);
    }
}

fn short(x: f64) -> String {
    let s = format!("{x:.4}");
    s.trim_end_matches('0').trim_end_matches('.').to_owned()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_count_noun_brings_its_other_spellings() {
        let k = kindred_count_nouns(&["spd", "speed"]);
        for w in ["gear", "gears", "ratios"] {
            assert!(k.contains(&w), "{w} in {k:?}");
        }
        assert!(!k.contains(&"speed") && !k.contains(&"cyl"), "{k:?}");
        assert!(kindred_count_nouns(&["fwd", "rev"]).is_empty());
        let times = Regex::new(&times_alternative(&["cyl"]).replace("{count}", r"\d+")).unwrap();
        assert_eq!(&times.captures("turbo, cyl x4, 65hp").unwrap()[1], "4");
        assert_eq!(&times.captures("cyl × 6").unwrap()[1], "6");
        assert!(!times.is_match("bicycle x4"));
    }

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
    fn numbers_inside_codes_are_no_counts() {
        // Three digits glued to letters name a model, they count nothing.
        assert!(
            marks("qz-418 pump").is_empty(),
            "{:?}",
            marks("qz-418 pump")
        );
        assert!(marks("612x").is_empty(), "{:?}", marks("612x"));
        assert!(is_code_token("aslt4") && is_code_token("dwi2"));
        assert!(!is_code_token("v8") && !is_code_token("6 spd"));
    }

    #[test]
    fn range_regexes_match_exactly_their_range() {
        for (lo, hi) in [(50, 84), (120, 214), (5, 7), (1, 1000), (99, 101)] {
            let re = Regex::new(&format!("^(?:{})$", range_regex(lo, hi))).unwrap();
            for n in 0..1200u64 {
                assert_eq!(
                    re.is_match(&n.to_string()),
                    (lo..=hi).contains(&n),
                    "{n} in {lo}..={hi}"
                );
            }
        }
    }

    #[test]
    fn bound_words_in_front_of_a_number() {
        assert_eq!(bound_before("mixed (up to "), Some(Bound::Upper));
        assert_eq!(bound_before("under "), Some(Bound::Upper));
        assert_eq!(bound_before("over "), Some(Bound::Lower));
        assert_eq!(bound_before(">"), Some(Bound::Lower));
        // `clover` does not end with the word `over`.
        assert_eq!(bound_before("clover "), None);
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
