//! Near-duplicate values: groups of distinct values that probably name the
//! same thing, each with a proposed canonical spelling.
//!
//! Values are compared in normalized form ([`Normalizer`]), so values that
//! differ only by case, white space or compatibility characters always fall
//! together. The methods, from strictest to loosest:
//!
//! | method | groups values whose ... | catches | misses |
//! |---|---|---|---|
//! | [`Method::Letters`] | letters and digits are equal (punctuation and spaces dropped, except between digits) | `4-cyl` / `4 cyl` / `4cyl`, `P/N 0750` / `PN0750` | typos, other word order |
//! | [`Method::Words`] | the same words, repeats counted, in any order | `6 speed auto` / `auto 6-speed` | typos, abbreviations |
//! | `qgram` | character q-gram sets overlap (Jaccard) | typos and reordering in long values | short values (few q-grams) |
//! | `levenshtein` | edit distance is small | typos, dropped or doubled letters | reordering, abbreviations |
//! | `osa` | edit distance with transpositions is small | also swapped neighbours (`atuo`) | as Levenshtein |
//! | `jaro-winkler` | Jaro-Winkler similarity is high | typos, shared beginnings (`hydro` / `hydrostat`) | differences at the start |
//!
//! **Digits are identity** unless [`Digits::Loose`]: two values whose digit
//! runs differ (`pmp-0750` / `pmp-0751`, `1,800` / `1800`) are never grouped,
//! by any method. So are letter runs of one or two characters and Roman
//! numerals up to `xx` (`tq-320` / `rq-320`, `mk iii` / `mk iv`), whatever
//! `--digits` says. It also makes the search cheaper: only values with the
//! same identity runs are compared.
//!
//! **Precision first.** A pair a fuzzy method finds is kept only if its
//! words agree: the words that differ pair up as typos, stricter on short
//! words, and a changed, added or dropped word keeps values apart (see
//! [`guard`]). Every fuzzy method also groups what the two exact methods
//! group, so it finds at least their pairs.
//!
//! **No chains.** Groups are built from the similar pairs, strongest first
//! (so the result does not depend on the thread count), and a union is
//! refused unless every two members of the new group are within
//! [`ClusterOptions::max_diameter`] (by default the method's own threshold)
//! and pass the word check: complete linkage. Members that the exact
//! methods group count as one member (any of them within the cap is
//! enough), so a reordered spelling does not keep its typos out.
//!
//! The fuzzy methods find their pairs through an index (see [`index`])
//! instead of comparing all pairs: exact (every pair all pairs would find)
//! for the edit distances, q-gram Jaccard, and Jaro-Winkler up to a work
//! budget; beyond it (hundreds of thousands of values in one block, as with
//! `--digits loose`) Jaro-Winkler uses a heuristic whose recall is measured
//! by the benchmark (see docs/cluster.md). Between two long values of three
//! words or more, the edit distances and Jaro-Winkler search through words
//! first (see [`words`]): exact for the pairs the word check keeps, the
//! only ones that may group, and blind to the others. The tests compare the
//! index with all pairs (and the word check).
//!
//! ```
//! use descry::cluster::{cluster, ClusterOptions, Method};
//! use descry::Vocabulary;
//!
//! let rows = [Some("6 spd auto"), Some("6 SPD Auto"), Some("6 SPD Auto"), Some("auto 6-spd"), Some("4 spd manual")];
//! let vocab = Vocabulary::build(rows);
//! let report = cluster(&vocab, "transmission", &ClusterOptions::new(Method::Words));
//! assert_eq!(report.clusters.len(), 1);
//! assert_eq!(report.clusters[0].canonical, "6 SPD Auto");   // most rows
//! assert_eq!(report.clusters[0].members.len(), 3);
//! ```

pub mod distance;
pub mod guard;
pub mod index;
pub mod map;
pub mod method;
pub mod review;
pub mod text;
pub mod words;

use std::cmp::Reverse;

use hashbrown::HashMap;
use rayon::prelude::*;
use serde::Serialize;

use crate::normalize::Normalizer;
use crate::shape::{class, digit_signature, CharClass};
use crate::vocabulary::Vocabulary;
use distance::Comparator;
use index::{Edge, Found};

pub const CLUSTER_SCHEMA: &str = "descry.cluster/1";

/// An edit-distance threshold.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum EditLimit {
    /// At most this many edits.
    Edits(usize),
    /// At most this share of the longer value's length, in characters
    /// (`distance <= ratio * max(|a|, |b|)`), with `0 < ratio < 1`.
    Ratio(f64),
}

impl EditLimit {
    /// The edits allowed between values of these lengths (in characters).
    pub fn max_edits(&self, len_a: usize, len_b: usize) -> usize {
        match *self {
            EditLimit::Edits(k) => k,
            EditLimit::Ratio(r) => (r * len_a.max(len_b) as f64 + 1e-9).floor() as usize,
        }
    }

    /// The most edits a value of this length may be allowed with any
    /// partner (a partner is at most `len / (1 - ratio)` long).
    pub fn reach(&self, len: usize) -> usize {
        match *self {
            EditLimit::Edits(k) => k,
            EditLimit::Ratio(r) => {
                let longest = (len as f64 / (1.0 - r) + 1e-9).floor() as usize;
                self.max_edits(len, longest)
            }
        }
    }
}

/// A fuzzy method and its threshold.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Fuzzy {
    Levenshtein(EditLimit),
    /// Optimal string alignment (restricted Damerau-Levenshtein).
    Osa(EditLimit),
    /// Jaccard similarity of character q-gram sets, at least `min_similarity`.
    QGram {
        q: usize,
        min_similarity: f64,
    },
    /// Jaro-Winkler similarity at least `min_similarity`.
    JaroWinkler {
        min_similarity: f64,
    },
}

impl Fuzzy {
    pub fn name(&self) -> &'static str {
        match self {
            Fuzzy::Levenshtein(_) => "levenshtein",
            Fuzzy::Osa(_) => "osa",
            Fuzzy::QGram { .. } => "qgram",
            Fuzzy::JaroWinkler { .. } => "jaro-winkler",
        }
    }

    /// Is the score a distance (smaller is closer) or a similarity?
    pub fn is_distance(&self) -> bool {
        matches!(self, Fuzzy::Levenshtein(_) | Fuzzy::Osa(_))
    }

    fn comparator(&self, a: &[char]) -> Option<Comparator> {
        match self {
            Fuzzy::Levenshtein(_) => Some(Comparator::levenshtein(a)),
            Fuzzy::Osa(_) => Some(Comparator::osa(a)),
            Fuzzy::JaroWinkler { .. } => Some(Comparator::jaro_winkler(a)),
            Fuzzy::QGram { .. } => None,
        }
    }

    /// The score of `a` (whose comparator this is) against `b` if within
    /// the threshold.
    fn verify(&self, cmp: &Comparator, a: &[char], b: &[char]) -> Option<f64> {
        match self {
            Fuzzy::Levenshtein(limit) | Fuzzy::Osa(limit) => {
                let k = limit.max_edits(a.len(), b.len());
                if a.len().abs_diff(b.len()) > k {
                    return None;
                }
                cmp.distance_within(b, k).map(|d| d as f64)
            }
            Fuzzy::JaroWinkler { min_similarity } => cmp.similarity_at_least(b, *min_similarity),
            Fuzzy::QGram { .. } => None,
        }
    }

    /// Is the pair within `cap` (the same kind of threshold as the method's)?
    fn within(&self, cap: &Fuzzy, a: &[char], b: &[char]) -> bool {
        match cap {
            Fuzzy::QGram { q, min_similarity } => {
                let (sa, sb): (String, String) = (a.iter().collect(), b.iter().collect());
                distance::qgram_jaccard(&sa, &sb, *q) >= *min_similarity
            }
            _ => cap
                .comparator(a)
                .and_then(|c| cap.verify(&c, a, b))
                .is_some(),
        }
    }
}

/// How values are grouped.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Method {
    /// Equal letters and digits: normalized, with white space and
    /// punctuation removed except between two digits (`5.5` is not `5'5`).
    Letters,
    /// The same words and numbers, repeats counted, in any order.
    Words,
    Fuzzy(Fuzzy),
}

impl Method {
    pub fn name(&self) -> &'static str {
        match self {
            Method::Letters => "letters",
            Method::Words => "words",
            Method::Fuzzy(f) => f.name(),
        }
    }
}

/// Whether values with different digits may be grouped.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Digits {
    /// Digit runs must be equal, in the same order.
    #[default]
    Strict,
    /// Digits are characters like any other.
    Loose,
}

#[derive(Debug, Clone)]
pub struct ClusterOptions {
    pub method: Method,
    pub digits: Digits,
    /// No two values in a group may be further apart than this (fuzzy
    /// methods only; same kind of threshold as the method's). `None`: the
    /// method's own threshold.
    pub max_diameter: Option<Fuzzy>,
    /// How values are normalized before they are compared.
    pub normalizer: Normalizer,
    /// Compare every pair instead of using the index (for checking the
    /// index; quadratic time).
    pub exhaustive: bool,
    /// Keep the similar pairs in the report.
    pub keep_pairs: bool,
}

impl ClusterOptions {
    pub fn new(method: Method) -> Self {
        ClusterOptions {
            method,
            digits: Digits::Strict,
            max_diameter: None,
            normalizer: Normalizer::default(),
            exhaustive: false,
            keep_pairs: false,
        }
    }
}

// ---------------------------------------------------------------------------
// The report
// ---------------------------------------------------------------------------

/// The method as run, for the report.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MethodUsed {
    pub name: &'static str,
    /// The threshold: edits, a share of the longer value's length, or a
    /// least similarity (see `threshold_kind`); null for letters and words.
    pub threshold: Option<f64>,
    /// `"edits"`, `"ratio"` or `"similarity"`.
    pub threshold_kind: Option<&'static str>,
    pub q: Option<usize>,
    pub digits: Digits,
    /// How far apart two members of a group may be (fuzzy methods; the
    /// threshold unless set apart).
    pub max_diameter: Option<f64>,
    /// `"exact"` (exact grouping), `"index"` or `"exhaustive"`.
    pub search: &'static str,
}

fn threshold_of(f: &Fuzzy) -> (f64, &'static str) {
    match f {
        Fuzzy::Levenshtein(EditLimit::Edits(k)) | Fuzzy::Osa(EditLimit::Edits(k)) => {
            (*k as f64, "edits")
        }
        Fuzzy::Levenshtein(EditLimit::Ratio(r)) | Fuzzy::Osa(EditLimit::Ratio(r)) => (*r, "ratio"),
        Fuzzy::QGram { min_similarity, .. } | Fuzzy::JaroWinkler { min_similarity } => {
            (*min_similarity, "similarity")
        }
    }
}

impl MethodUsed {
    fn new(opts: &ClusterOptions) -> Self {
        let (threshold, kind, q, search) = match &opts.method {
            Method::Letters | Method::Words => (None, None, None, "exact"),
            Method::Fuzzy(f) => {
                let (t, kind) = threshold_of(f);
                let q = match f {
                    Fuzzy::QGram { q, .. } => Some(*q),
                    _ => None,
                };
                (
                    Some(t),
                    Some(kind),
                    q,
                    if opts.exhaustive {
                        "exhaustive"
                    } else {
                        "index"
                    },
                )
            }
        };
        MethodUsed {
            name: opts.method.name(),
            threshold,
            threshold_kind: kind,
            q,
            digits: opts.digits,
            max_diameter: match &opts.method {
                Method::Fuzzy(f) => Some(threshold_of(&opts.max_diameter.unwrap_or(*f)).0),
                _ => None,
            },
            search,
        }
    }
}

/// One distinct value in a group.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Member {
    pub value: String,
    pub normalized: String,
    pub rows: u64,
}

/// A group of values that probably name the same thing.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Cluster {
    /// The proposed spelling: the member with the most rows (ties: a value
    /// without stray spaces, then the first in byte order), with its white
    /// space tidied.
    pub canonical: String,
    /// Rows of all members.
    pub rows: u64,
    /// Members, canonical first, then by rows.
    pub members: Vec<Member>,
}

/// Two normalized values found similar, with their score.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Pair {
    pub a: String,
    pub b: String,
    pub score: f64,
    /// Whether the words of the pair agree (see [`guard`]): only kept pairs
    /// may join groups.
    pub kept: bool,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ClusterReport {
    pub schema: &'static str,
    pub column: String,
    pub method: MethodUsed,
    pub rows: u64,
    pub null_rows: u64,
    pub blank_rows: u64,
    /// Distinct non-blank values.
    pub values: u64,
    /// Distinct normalized forms among them.
    pub normalized_forms: u64,
    /// Pairs of normalized forms compared by the fuzzy method.
    pub pairs_compared: u64,
    /// Pairs within the threshold (with equal identity runs); between two
    /// forms searched by words, only those whose words agree.
    pub pairs_found: u64,
    /// Of those, the pairs whose words agree (see [`guard`]).
    pub pairs_kept: u64,
    /// Normalized forms long enough, and of enough words, that the index
    /// found their pairs with each other through their words (see
    /// [`words`]): of those pairs, it reports only the kept ones. None with
    /// `--exhaustive`, which compares every pair.
    pub forms_searched_by_words: u64,
    pub values_clustered: u64,
    pub rows_clustered: u64,
    pub clusters: Vec<Cluster>,
    /// The similar pairs, when asked for.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub pairs: Option<Vec<Pair>>,
}

// ---------------------------------------------------------------------------
// Clustering
// ---------------------------------------------------------------------------

/// The distinct normalized forms of a vocabulary and the values behind them.
struct Forms {
    /// Sorted, distinct, non-empty.
    text: Vec<String>,
    /// Value indices per form.
    values: Vec<Vec<u32>>,
    blank_rows: u64,
}

impl Forms {
    fn build(vocab: &Vocabulary, normalizer: &Normalizer) -> Forms {
        let normalized: Vec<String> = vocab
            .values
            .par_iter()
            .map(|v| normalizer.apply(v))
            .collect();
        let mut text: Vec<String> = normalized
            .iter()
            .filter(|n| !n.is_empty())
            .cloned()
            .collect();
        text.par_sort_unstable();
        text.dedup();
        let mut values = vec![Vec::new(); text.len()];
        let mut blank_rows = 0;
        {
            let index: HashMap<&str, u32> = text
                .iter()
                .enumerate()
                .map(|(i, t)| (t.as_str(), i as u32))
                .collect();
            for (i, n) in normalized.iter().enumerate() {
                match index.get(n.as_str()) {
                    Some(&f) => values[f as usize].push(i as u32),
                    None => blank_rows += vocab.counts[i],
                }
            }
        }
        Forms {
            text,
            values,
            blank_rows,
        }
    }
}

/// Group a vocabulary's values.
pub fn cluster(vocab: &Vocabulary, column: &str, opts: &ClusterOptions) -> ClusterReport {
    let forms = Forms::build(vocab, &opts.normalizer);
    let n = forms.text.len();
    let mut groups = UnionFind::new(n);
    let mut found = Found::default();
    let mut kept: Vec<bool> = Vec::new();
    let digits = opts.digits;
    match &opts.method {
        Method::Letters => union_by_key(&mut groups, &forms.text, letters_key, digits),
        Method::Words => union_by_key(&mut groups, &forms.text, words_key, digits),
        Method::Fuzzy(method) => {
            // What the exact methods group, every fuzzy method groups.
            union_by_key(&mut groups, &forms.text, letters_key, digits);
            union_by_key(&mut groups, &forms.text, words_key, digits);
            let chars: Vec<Vec<char>> =
                forms.text.par_iter().map(|t| t.chars().collect()).collect();
            found = fuzzy_pairs(&chars, &forms.text, method, opts);
            kept = found
                .edges
                .par_iter()
                .map(|e| {
                    let (a, b) = (&forms.text[e.a as usize], &forms.text[e.b as usize]);
                    guard::may_group(a, b, digits)
                })
                .collect();
            let near = Near {
                chars: &chars,
                text: &forms.text,
                method,
                cap: &opts.max_diameter.unwrap_or(*method),
                digits,
            };
            let edges: Vec<Edge> = (found.edges.iter().zip(&kept))
                .filter(|(_, &k)| k)
                .map(|(e, _)| *e)
                .collect();
            union_capped(&mut groups, &edges, &near);
        }
    }
    let clusters = gather(vocab, &forms, &mut groups);
    let pairs = opts.keep_pairs.then(|| {
        found
            .edges
            .iter()
            .zip(&kept)
            .map(|(e, &kept)| Pair {
                a: forms.text[e.a as usize].clone(),
                b: forms.text[e.b as usize].clone(),
                score: e.score,
                kept,
            })
            .collect()
    });
    ClusterReport {
        schema: CLUSTER_SCHEMA,
        column: column.to_owned(),
        method: MethodUsed::new(opts),
        rows: vocab.rows(),
        null_rows: vocab.null_rows,
        blank_rows: forms.blank_rows,
        values: forms.values.iter().map(|v| v.len() as u64).sum(),
        normalized_forms: n as u64,
        pairs_compared: found.compared,
        pairs_found: found.edges.len() as u64,
        pairs_kept: kept.iter().filter(|&&k| k).count() as u64,
        forms_searched_by_words: found.searched_by_words,
        values_clustered: clusters.iter().map(|c| c.members.len() as u64).sum(),
        rows_clustered: clusters.iter().map(|c| c.rows).sum(),
        clusters,
        pairs,
    }
}

/// The values of a vocabulary that no rule of `rules` fires on (blanks
/// and the ruleset's placeholders left out), with their rows: what is left
/// to group once the ruleset is applied.
pub fn unmatched(vocab: &Vocabulary, rules: &crate::Ruleset) -> Vocabulary {
    let left: Vec<bool> = vocab
        .values
        .par_iter()
        .map(|v| {
            let n = rules.normalizer.apply(v);
            rules.kind_of(&n) == crate::ruleset::ValueKind::Considered
                && rules.evaluate(&n).iter().all(|o| !o.fired)
        })
        .collect();
    let mut out = Vocabulary {
        null_rows: vocab.null_rows,
        ..Vocabulary::default()
    };
    for (i, keep) in left.into_iter().enumerate() {
        if keep {
            out.values.push(vocab.values[i].clone());
            out.counts.push(vocab.counts[i]);
        }
    }
    out
}

/// The [`Method::Letters`] key: the digit runs (unless loose), then the
/// letters and digits, keeping a decimal point or comma between two digits
/// (`5.5` is not `5'5`, which is `5 5`). All letters are compared, so
/// letter runs need no identity check here (`c n a` is `cna`).
pub fn letters_key(normalized: &str, digits: Digits) -> String {
    let chars: Vec<char> = normalized.chars().collect();
    let is_digit = |i: usize| chars.get(i).is_some_and(|&c| class(c) == CharClass::Digit);
    let kept: String = chars
        .iter()
        .enumerate()
        .filter(|&(i, &c)| match class(c) {
            CharClass::Letter | CharClass::Digit => true,
            CharClass::Other => {
                matches!(c, '.' | ',') && i > 0 && is_digit(i - 1) && is_digit(i + 1)
            }
            CharClass::Space => false,
        })
        .map(|(_, &c)| c)
        .collect();
    match digits {
        Digits::Strict => format!("{}\u{0}{kept}", digit_signature(normalized)),
        Digits::Loose => kept,
    }
}

/// The [`Method::Words`] key: the identity runs in order (see [`guard`]),
/// then the words and numbers sorted, repeats kept.
pub fn words_key(normalized: &str, digits: Digits) -> String {
    let mut numbers: Vec<&str> = crate::shape::runs(normalized)
        .filter(|r| r.class == CharClass::Digit)
        .map(|r| r.text)
        .collect();
    numbers.sort_unstable();
    format!(
        "{}\u{0}{}\u{0}{}",
        guard::identity_signature(normalized, digits),
        guard::word_key(normalized, digits),
        numbers.join(" ")
    )
}

/// Group the forms whose keys are equal.
fn union_by_key(
    groups: &mut UnionFind,
    forms: &[String],
    key: impl Fn(&str, Digits) -> String + Sync,
    digits: Digits,
) {
    let keys: Vec<String> = forms.par_iter().map(|f| key(f, digits)).collect();
    let mut first: HashMap<&str, u32> = HashMap::new();
    for (i, k) in keys.iter().enumerate() {
        let i = i as u32;
        let f = *first.entry(k.as_str()).or_insert(i);
        groups.union(f, i);
    }
}

/// Similar pairs of forms (ids into `chars`), block by block.
fn fuzzy_pairs(
    chars: &[Vec<char>],
    text: &[String],
    method: &Fuzzy,
    opts: &ClusterOptions,
) -> Found {
    // Only values with the same identity runs may group: one block each.
    let mut by_identity: HashMap<String, Vec<u32>> = HashMap::new();
    for (i, t) in text.iter().enumerate() {
        by_identity
            .entry(guard::identity_signature(t, opts.digits))
            .or_default()
            .push(i as u32);
    }
    let mut blocks: Vec<Vec<u32>> = by_identity.into_values().filter(|b| b.len() > 1).collect();
    blocks.sort_unstable_by_key(|b| b[0]);
    let parts: Vec<Found> = blocks
        .par_iter()
        .map(|block| {
            let values: Vec<Vec<char>> = block.iter().map(|&i| chars[i as usize].clone()).collect();
            let texts: Vec<&str> = block.iter().map(|&i| text[i as usize].as_str()).collect();
            let check = words::WordCheck {
                texts: &texts,
                digits: opts.digits,
            };
            let mut f = if opts.exhaustive {
                index::all_pairs(&values, method)
            } else {
                index::similar_pairs(&values, method, Some(&check))
            };
            for e in &mut f.edges {
                let (a, b) = (block[e.a as usize], block[e.b as usize]);
                *e = Edge {
                    a: a.min(b),
                    b: a.max(b),
                    score: e.score,
                };
            }
            f
        })
        .collect();
    index::merge(parts)
}

/// What complete linkage needs to know about two forms.
struct Near<'a> {
    chars: &'a [Vec<char>],
    text: &'a [String],
    method: &'a Fuzzy,
    cap: &'a Fuzzy,
    digits: Digits,
}

impl Near<'_> {
    /// Are forms `x` and `y` within the cap, and do their words agree?
    fn close(&self, x: u32, y: u32) -> bool {
        let (x, y) = (x as usize, y as usize);
        self.method.within(self.cap, &self.chars[x], &self.chars[y])
            && guard::may_group(&self.text[x], &self.text[y], self.digits)
    }
}

/// Union edges strongest first, refusing a union unless every two exact
/// classes (the groups `groups` holds on entry) of the new group have
/// members that are [`Near::close`]: complete linkage over the classes.
fn union_capped(groups: &mut UnionFind, edges: &[Edge], near: &Near) {
    let n = near.chars.len();
    let mut forms_of: Vec<Vec<u32>> = vec![Vec::new(); n];
    for f in 0..n as u32 {
        forms_of[groups.find(f) as usize].push(f);
    }
    let mut classes: Vec<Vec<u32>> = (0..n as u32)
        .map(|r| {
            if forms_of[r as usize].is_empty() {
                Vec::new()
            } else {
                vec![r]
            }
        })
        .collect();
    let mut order: Vec<&Edge> = edges.iter().collect();
    let distance = near.method.is_distance();
    order.sort_by(|x, y| {
        let by_score = if distance {
            x.score.total_cmp(&y.score)
        } else {
            y.score.total_cmp(&x.score)
        };
        by_score.then((x.a, x.b).cmp(&(y.a, y.b)))
    });
    let classes_close = |x: u32, y: u32| {
        forms_of[x as usize]
            .iter()
            .any(|&p| forms_of[y as usize].iter().any(|&q| near.close(p, q)))
    };
    // Groups once refused stay refused while their roots last: a group only
    // grows, and complete linkage never admits a superset of a refusal.
    let mut refused: hashbrown::HashSet<(u32, u32)> = hashbrown::HashSet::new();
    for e in order {
        let (ra, rb) = (groups.find(e.a), groups.find(e.b));
        if ra == rb || refused.contains(&(ra.min(rb), ra.max(rb))) {
            continue;
        }
        let fits = classes[ra as usize]
            .iter()
            .all(|&x| classes[rb as usize].iter().all(|&y| classes_close(x, y)));
        if !fits {
            refused.insert((ra.min(rb), ra.max(rb)));
        }
        if fits {
            groups.union(ra, rb);
            let root = groups.find(ra);
            let (keep, gone) = if root == ra { (ra, rb) } else { (rb, ra) };
            let moved = std::mem::take(&mut classes[gone as usize]);
            classes[keep as usize].extend(moved);
        }
    }
}

/// Whether a raw value is written without stray white space.
fn is_tidy(value: &str) -> bool {
    tidy(value) == value
}

/// A value with its white space trimmed and every run made one space.
pub fn tidy(value: &str) -> String {
    value.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// The groups with two or more distinct values, largest (by rows) first.
fn gather(vocab: &Vocabulary, forms: &Forms, groups: &mut UnionFind) -> Vec<Cluster> {
    let mut by_root: HashMap<u32, Vec<u32>> = HashMap::new();
    for f in 0..forms.text.len() as u32 {
        by_root.entry(groups.find(f)).or_default().push(f);
    }
    let mut clusters: Vec<Cluster> = by_root
        .into_values()
        .filter_map(|group| {
            let mut members: Vec<Member> = group
                .iter()
                .flat_map(|&f| {
                    forms.values[f as usize].iter().map(move |&v| Member {
                        value: vocab.values[v as usize].clone(),
                        normalized: forms.text[f as usize].clone(),
                        rows: vocab.counts[v as usize],
                    })
                })
                .collect();
            if members.len() < 2 {
                return None;
            }
            members.sort_by(|x, y| {
                (Reverse(x.rows), !is_tidy(&x.value), x.value.as_bytes()).cmp(&(
                    Reverse(y.rows),
                    !is_tidy(&y.value),
                    y.value.as_bytes(),
                ))
            });
            Some(Cluster {
                canonical: tidy(&members[0].value),
                rows: members.iter().map(|m| m.rows).sum(),
                members,
            })
        })
        .collect();
    clusters.sort_by(|x, y| {
        (Reverse(x.rows), x.canonical.as_bytes()).cmp(&(Reverse(y.rows), y.canonical.as_bytes()))
    });
    clusters
}

/// Disjoint sets with path halving and union by size.
#[derive(Debug, Clone)]
pub struct UnionFind {
    parent: Vec<u32>,
    size: Vec<u32>,
}

impl UnionFind {
    pub fn new(n: usize) -> Self {
        UnionFind {
            parent: (0..n as u32).collect(),
            size: vec![1; n],
        }
    }

    pub fn find(&mut self, mut x: u32) -> u32 {
        while self.parent[x as usize] != x {
            let grand = self.parent[self.parent[x as usize] as usize];
            self.parent[x as usize] = grand;
            x = grand;
        }
        x
    }

    pub fn union(&mut self, a: u32, b: u32) {
        let (mut ra, mut rb) = (self.find(a), self.find(b));
        if ra == rb {
            return;
        }
        if self.size[ra as usize] < self.size[rb as usize] {
            std::mem::swap(&mut ra, &mut rb);
        }
        self.parent[rb as usize] = ra;
        self.size[ra as usize] += self.size[rb as usize];
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn vocab(rows: &[&str]) -> Vocabulary {
        Vocabulary::build(rows.iter().map(|r| Some(*r)))
    }

    fn groups(report: &ClusterReport) -> Vec<Vec<String>> {
        report
            .clusters
            .iter()
            .map(|c| c.members.iter().map(|m| m.value.clone()).collect())
            .collect()
    }

    #[test]
    fn letters_ignore_case_spacing_and_punctuation() {
        let v = vocab(&["4-cyl", "4 cyl", "4cyl", "4 CYL.", "6 cyl", "4-cyl"]);
        let r = cluster(&v, "engine", &ClusterOptions::new(Method::Letters));
        assert_eq!(groups(&r), vec![vec!["4-cyl", "4 CYL.", "4 cyl", "4cyl"]]);
        assert_eq!(r.clusters[0].canonical, "4-cyl");
        assert_eq!(r.clusters[0].rows, 5);
    }

    #[test]
    fn words_ignore_order_but_count_repeats() {
        let v = vocab(&[
            "6 speed auto",
            "auto 6-speed",
            "speed auto",
            "6 speed manual",
            "6 speed auto auto",
        ]);
        let r = cluster(&v, "t", &ClusterOptions::new(Method::Words));
        assert_eq!(groups(&r), vec![vec!["6 speed auto", "auto 6-speed"]]);
    }

    #[test]
    fn letters_keep_the_punctuation_between_digits() {
        let v = vocab(&["5.5", "5'5", "5 5", "55", "c n a", "cna"]);
        let r = cluster(&v, "h", &ClusterOptions::new(Method::Letters));
        assert_eq!(groups(&r), vec![vec!["5 5", "5'5"], vec!["c n a", "cna"]]);
    }

    #[test]
    fn fuzzy_methods_group_what_the_exact_methods_group() {
        let v = vocab(&[
            "etching and aquatint on paper",
            "aquatint and etching on paper",
        ]);
        let lev = Method::Fuzzy(Fuzzy::Levenshtein(EditLimit::Edits(1)));
        assert_eq!(
            cluster(&v, "m", &ClusterOptions::new(lev)).clusters.len(),
            1
        );
    }

    #[test]
    fn digits_are_identity_unless_loose() {
        let v = vocab(&["PMP-0750", "PMP-0751", "pmp 0750"]);
        let lev = Method::Fuzzy(Fuzzy::Levenshtein(EditLimit::Edits(1)));
        let strict = cluster(&v, "p", &ClusterOptions::new(lev));
        assert_eq!(groups(&strict), vec![vec!["PMP-0750", "pmp 0750"]]);
        let loose = cluster(
            &v,
            "p",
            &ClusterOptions {
                digits: Digits::Loose,
                ..ClusterOptions::new(lev)
            },
        );
        assert_eq!(loose.clusters.len(), 1);
        assert_eq!(loose.clusters[0].members.len(), 3);
        // The exact methods keep digits apart too: "1,800" and "1800" differ.
        let key = cluster(
            &vocab(&["1,800 cc", "1800 cc"]),
            "e",
            &ClusterOptions::new(Method::Letters),
        );
        assert!(key.clusters.is_empty());
    }

    #[test]
    fn chains_are_cut_by_the_default_diameter_cap() {
        // berg ~ burg ~ bury ~ bory: each step one letter, the ends two apart.
        let v = vocab(&["kaltenberg", "kaltenburg", "kaltenbury", "kaltenbory"]);
        let lev = Fuzzy::Levenshtein(EditLimit::Edits(1));
        let capped = cluster(&v, "c", &ClusterOptions::new(Method::Fuzzy(lev)));
        assert!(
            capped.clusters.iter().all(|c| c.members.len() == 2),
            "{:?}",
            groups(&capped)
        );
        assert_eq!(capped.clusters.len(), 2);
        assert_eq!(capped.method.max_diameter, Some(1.0));
    }

    #[test]
    fn letter_codes_and_numerals_never_group() {
        let v = vocab(&[
            "TQ-320", "RQ-320", "MK III", "MK IV", "KR-T", "HR-T", "P47", "K47",
        ]);
        let lev = Method::Fuzzy(Fuzzy::Levenshtein(EditLimit::Edits(2)));
        let jw = Method::Fuzzy(Fuzzy::JaroWinkler {
            min_similarity: 0.8,
        });
        for method in [lev, jw] {
            let r = cluster(&v, "c", &ClusterOptions::new(method));
            assert!(r.clusters.is_empty(), "{:?}", groups(&r));
        }
    }

    #[test]
    fn canonical_is_most_rows_then_tidy_then_byte_order() {
        let v = vocab(&["auto ", "Auto", "auto ", "Auto", "AUTO"]);
        let r = cluster(&v, "t", &ClusterOptions::new(Method::Letters));
        // "auto " and "Auto" both have 2 rows; "Auto" has no stray space.
        assert_eq!(r.clusters[0].canonical, "Auto");
        // One row each, both tidy: byte order ("B" is 0x42, "b" is 0x62).
        let v = vocab(&["b x", "a x", "B X"]);
        let r = cluster(&v, "t", &ClusterOptions::new(Method::Letters));
        assert_eq!(r.clusters[0].canonical, "B X");
    }

    #[test]
    fn blanks_are_not_values() {
        let v = Vocabulary::build([Some(" "), None, Some(""), Some("x"), Some("X")]);
        let r = cluster(&v, "t", &ClusterOptions::new(Method::Letters));
        assert_eq!(
            (r.null_rows, r.blank_rows, r.values, r.normalized_forms),
            (1, 2, 2, 1)
        );
    }

    #[test]
    fn edit_ratio_is_a_share_of_the_longer_length() {
        let r = EditLimit::Ratio(0.2);
        assert_eq!(r.max_edits(10, 9), 2);
        assert_eq!(r.max_edits(4, 4), 0);
        assert_eq!(r.max_edits(5, 3), 1);
        // A value of 8 characters may meet one of 10 (8 / 0.8): 2 edits.
        assert_eq!(r.reach(8), 2);
    }
}
