//! Finding the similar pairs among many values without comparing them all.
//!
//! Values are first renumbered by length, so that "the values whose length
//! lies in a band" is a range of numbers; every method then looks up, for
//! each value, only candidates that a necessary condition of its threshold
//! lets through, discards most of them with cheap bounds, and computes the
//! real score of the rest.
//!
//! - **Levenshtein and optimal string alignment** within k edits: by
//!   *partition* (the pigeonhole principle). A value is split into `k + 1`
//!   segments; k edits leave one of them untouched, and a counting argument
//!   narrows where it can lie in the other value (see [`partition_pairs`]).
//!   Every value is filed under its segments; every value looks up the
//!   substrings at those places. A character-count bound (an edit changes
//!   at most one count on each side) discards most candidates. Exact: no
//!   pair is missed. The number of lookups grows with the square of the edit
//!   limit; when it would exceed the number of pairs, all pairs are compared.
//! - **q-gram Jaccard** at least s, by *prefix filter*: q-grams are ranked
//!   from rarest to commonest over the whole set; two values share at least
//!   `s·|A|` of the `|A|` distinct q-grams of the smaller one, so its
//!   `|A| − ⌈s·|A|⌉ + 1` rarest q-grams include a shared one. Each value is
//!   indexed under that prefix only and looks up the same prefix. Exact.
//! - **Jaro-Winkler** at least s: the Jaro similarity is then at least
//!   `j = (s − 0.4) / 0.6`, which needs at least `m` matched characters with
//!   `m/|a| + m/|b| >= 3j − 1`, and bounds the length ratio. Matched
//!   characters are common characters, so a prefix filter over the
//!   characters numbered by occurrence (`e#1`, `e#2`, ...) finds every pair:
//!   exact. On characters (few and common) its posting lists are long, so it
//!   is used when the postings it would visit stay under
//!   [`EXACT_JARO_BUDGET`] (a few seconds of work). Above that (a large set
//!   of values, such as 100,000 in one block with `--digits loose`) a
//!   heuristic takes over (see [`large_jaro_winkler`]): the Winkler bonus
//!   grows with the common prefix, so the pairs whose common prefix is
//!   `k` characters (4 down to 1) are searched among the values beginning
//!   with the same `k` characters, group by group (exactly where a group
//!   is within the budget), for the
//!   Jaro similarity that prefix needs; the pairs that differ in their
//!   first character get no bonus and need a Jaro similarity of `s`
//!   itself, which a bigram prefix filter over all values looks for (see
//!   [`jaro_winkler_bigrams`]). The tests compare both with all pairs, and
//!   the benchmark measures the heuristic's recall on 100,000 values (see
//!   docs/cluster.md).
//!
//! Before any of these, [`similar_pairs`] hands the pairs between two long
//! values of several words to the word filter ([`super::words`]), which is
//! exact for the pairs the word check keeps; a value it searches looks here
//! only for partners it does not search.
//!
//! Cost: the indexes hold a few entries of 8 to 16 bytes per character of
//! every value; time grows with the number of values times the length of
//! the posting lists of their rarest tokens.

use hashbrown::HashMap;
use rayon::prelude::*;

use super::distance::{intersection_size, Comparator, PREFIX_WEIGHT};
use super::words::{by_words_mask, word_pairs, WordCheck};
use super::{EditLimit, Fuzzy};

/// A pair of values (`a < b`, positions in the input slice) within the
/// method's limit, and its score (a distance or a similarity).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Edge {
    pub a: u32,
    pub b: u32,
    pub score: f64,
}

/// Pairs found, how many candidate pairs were compared to find them, and
/// how many values the word filter searched.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Found {
    pub edges: Vec<Edge>,
    pub compared: u64,
    pub searched_by_words: u64,
}

/// Blocks smaller than this are compared pair by pair: an index costs more.
const SMALL_BLOCK: usize = 48;

/// The pairs of `values` within the method's limit, through the index.
/// With `words` (the values' normalized forms), the pairs between two
/// values that the word filter searches (see [`super::words`]) are only
/// those the word check keeps; every other pair within the limit is found.
pub fn similar_pairs(values: &[Vec<char>], method: &Fuzzy, words: Option<&WordCheck>) -> Found {
    let by_words = match words {
        Some(check) => by_words_mask(values, method, check),
        None => Vec::new(),
    };
    let mut parts = Vec::new();
    if let Some(check) = words.filter(|_| !by_words.is_empty()) {
        parts.push(word_pairs(values, method, check, &by_words));
    }
    parts.push(on_characters(values, method, &by_words));
    merge(parts)
}

/// The pairs within the method's limit that have a value not marked in
/// `by_words` (every pair when it is empty), through the character index.
fn on_characters(values: &[Vec<char>], method: &Fuzzy, by_words: &[bool]) -> Found {
    if values.len() < SMALL_BLOCK {
        return all_pairs_except(values, method, by_words);
    }
    match method {
        Fuzzy::Levenshtein(limit) => partition_pairs(values, *limit, false, by_words),
        Fuzzy::Osa(limit) => partition_pairs(values, *limit, true, by_words),
        Fuzzy::QGram { q, min_similarity } => jaccard_pairs(values, *q, *min_similarity),
        Fuzzy::JaroWinkler { min_similarity } => {
            jaro_winkler_pairs(values, *min_similarity, by_words)
        }
    }
}

/// All pairs of `values` within the method's limit, comparing every pair:
/// the reference the index is checked against.
pub fn all_pairs(values: &[Vec<char>], method: &Fuzzy) -> Found {
    all_pairs_except(values, method, &[])
}

/// Whether a pair is left to the word filter: both values are marked.
fn both_marked(by_words: &[bool], a: usize, b: usize) -> bool {
    !by_words.is_empty() && by_words[a] && by_words[b]
}

/// [`all_pairs`], leaving out the pairs of two values marked in `by_words`.
fn all_pairs_except(values: &[Vec<char>], method: &Fuzzy, by_words: &[bool]) -> Found {
    let n = values.len();
    let grams: Vec<Vec<u32>> = match method {
        Fuzzy::QGram { q, .. } => GramTable::build(values, *q).sets,
        _ => Vec::new(),
    };
    let per_value: Vec<Found> = (0..n)
        .into_par_iter()
        .map(|a| {
            let mut found = Found::default();
            let cmp = method.comparator(&values[a]);
            for b in a + 1..n {
                if both_marked(by_words, a, b) {
                    continue;
                }
                found.compared += 1;
                let score = match (&cmp, method) {
                    (Some(c), _) => method.verify(c, &values[a], &values[b]),
                    (None, Fuzzy::QGram { min_similarity, .. }) => {
                        jaccard_at_least(&grams[a], &grams[b], *min_similarity)
                    }
                    (None, _) => unreachable!("every other method has a comparator"),
                };
                if let Some(score) = score {
                    found.edges.push(Edge {
                        a: a as u32,
                        b: b as u32,
                        score,
                    });
                }
            }
            found
        })
        .collect();
    merge(per_value)
}

/// Parts gathered into one, edges in (a, b) order.
pub(crate) fn merge(parts: Vec<Found>) -> Found {
    let mut out = Found::default();
    for p in parts {
        out.compared += p.compared;
        out.searched_by_words += p.searched_by_words;
        out.edges.extend(p.edges);
    }
    out.edges.sort_by(|x, y| (x.a, x.b).cmp(&(y.a, y.b)));
    out
}

fn jaccard_at_least(a: &[u32], b: &[u32], min: f64) -> Option<f64> {
    let shared = intersection_size(a, b);
    let union = a.len() + b.len() - shared;
    let j = if union == 0 {
        1.0
    } else {
        shared as f64 / union as f64
    };
    (j >= min).then_some(j)
}

// ---------------------------------------------------------------------------
// Tokens and the inverted index
// ---------------------------------------------------------------------------

/// Every value's q-grams as ids ranked by rarity (0 = rarest), with their
/// positions.
struct GramTable {
    /// Per value: (rank, position) of each q-gram occurrence.
    grams: Vec<Vec<(u32, u16)>>,
    /// Per value: the distinct ranks, sorted.
    sets: Vec<Vec<u32>>,
    distinct: usize,
}

impl GramTable {
    /// `q == 1` gives single characters. A value shorter than `q` has one
    /// gram: itself.
    fn build(values: &[Vec<char>], q: usize) -> GramTable {
        let mut ids: HashMap<&[char], u32> = HashMap::new();
        let mut freq: Vec<u32> = Vec::new();
        let mut raw: Vec<Vec<(u32, u16)>> = Vec::with_capacity(values.len());
        for v in values {
            let windows: Vec<&[char]> = if v.len() < q {
                vec![&v[..]]
            } else {
                v.windows(q).collect()
            };
            let mut grams = Vec::with_capacity(windows.len());
            for (pos, w) in windows.into_iter().enumerate() {
                let next = ids.len() as u32;
                let id = *ids.entry(w).or_insert(next);
                if id == next {
                    freq.push(0);
                }
                freq[id as usize] += 1;
                grams.push((id, pos.min(u16::MAX as usize) as u16));
            }
            raw.push(grams);
        }
        // Rank: rarest first; ties by first appearance, so the order is fixed.
        let mut order: Vec<u32> = (0..freq.len() as u32).collect();
        order.sort_by_key(|&id| (freq[id as usize], id));
        let mut rank = vec![0u32; freq.len()];
        for (r, &id) in order.iter().enumerate() {
            rank[id as usize] = r as u32;
        }
        let grams: Vec<Vec<(u32, u16)>> = raw
            .into_iter()
            .map(|g| {
                let mut g: Vec<(u32, u16)> = g
                    .into_iter()
                    .map(|(id, pos)| (rank[id as usize], pos))
                    .collect();
                g.sort_unstable();
                g
            })
            .collect();
        let sets = grams
            .iter()
            .map(|g| {
                let mut s: Vec<u32> = g.iter().map(|&(r, _)| r).collect();
                s.dedup();
                s
            })
            .collect();
        GramTable {
            grams,
            sets,
            distinct: freq.len(),
        }
    }

    /// For every rank, the values holding it (ascending) with the position,
    /// each value entered only under the first `prefix(value)` of its
    /// q-grams (rarest first): `distinct` counts distinct q-grams, otherwise
    /// occurrences.
    fn prefix_postings(
        &self,
        prefix: impl Fn(usize) -> usize,
        distinct: bool,
    ) -> Vec<Vec<(u32, u16)>> {
        let mut postings: Vec<Vec<(u32, u16)>> = vec![Vec::new(); self.distinct];
        for (v, grams) in self.grams.iter().enumerate() {
            let mut last = u32::MAX;
            let mut taken = 0;
            for &(r, pos) in grams {
                if distinct && r == last {
                    continue;
                }
                last = r;
                if taken == prefix(v) {
                    break;
                }
                taken += 1;
                postings[r as usize].push((v as u32, pos));
            }
        }
        postings
    }
}

/// The part of a posting list whose values lie in `lo..hi`.
fn id_range(list: &[(u32, u16)], lo: u32, hi: u32) -> &[(u32, u16)] {
    let start = list.partition_point(|&(v, _)| v < lo);
    let end = list.partition_point(|&(v, _)| v < hi);
    &list[start..end.max(start)]
}

/// Values renumbered in order of a size (then of input position), so that
/// a size band is a range of ids.
struct BySize {
    /// New id -> input position.
    order: Vec<u32>,
    sizes: Vec<usize>,
}

impl BySize {
    fn new(sizes_in_input_order: Vec<usize>) -> BySize {
        let mut order: Vec<u32> = (0..sizes_in_input_order.len() as u32).collect();
        order.sort_by_key(|&i| (sizes_in_input_order[i as usize], i));
        let sizes = order
            .iter()
            .map(|&i| sizes_in_input_order[i as usize])
            .collect();
        BySize { order, sizes }
    }

    fn reorder<T: Clone>(&self, items: &[T]) -> Vec<T> {
        self.order
            .iter()
            .map(|&i| items[i as usize].clone())
            .collect()
    }

    /// Ids whose size lies in `lo..=hi`.
    fn ids_with_size(&self, lo: usize, hi: usize) -> (u32, u32) {
        let start = self.sizes.partition_point(|&s| s < lo) as u32;
        let end = self.sizes.partition_point(|&s| s <= hi) as u32;
        (start, end)
    }

    /// An edge between two new ids, in input positions, smaller first.
    fn edge(&self, x: u32, y: u32, score: f64) -> Edge {
        let (p, q) = (self.order[x as usize], self.order[y as usize]);
        Edge {
            a: p.min(q),
            b: p.max(q),
            score,
        }
    }
}

/// Run `probe` for every value in parallel, each with a scratch "seen"
/// array, and gather the results in a fixed order.
pub(super) fn probe_all<F>(n: usize, probe: F) -> Found
where
    F: Fn(u32, &mut Vec<u32>, &mut Found) + Sync,
{
    let parts: Vec<Found> = (0..n as u32)
        .into_par_iter()
        .map_init(
            || vec![u32::MAX; n],
            |seen, a| {
                let mut found = Found::default();
                probe(a, seen, &mut found);
                found
            },
        )
        .collect();
    merge(parts)
}

// ---------------------------------------------------------------------------
// Edit distances
// ---------------------------------------------------------------------------

/// The `τ + 1` segments of an even partition of a value of `len`
/// characters: (start, length), the longer segments last.
fn segments(len: usize, tau: usize) -> impl Iterator<Item = (usize, usize)> {
    let parts = tau + 1;
    let (base, longer) = (len / parts, len % parts);
    (0..parts).map(move |i| {
        let start = i * base + i.saturating_sub(parts - longer);
        let length = base + usize::from(i >= parts - longer);
        (start, length)
    })
}

/// The key a segment is filed under: the value's length, the edit limit the
/// partition is for, the segment's number and its characters, hashed. A
/// hash collision only adds a candidate, which verification discards.
fn segment_key(len: usize, tau: usize, segment: usize, chars: impl Iterator<Item = char>) -> u64 {
    let mut h = ((len as u64) << 42) ^ ((tau as u64) << 21) ^ segment as u64;
    h = h.wrapping_mul(0x9e37_79b9_7f4a_7c15);
    for c in chars {
        h = (h.rotate_left(23) ^ c as u64).wrapping_mul(0x9e37_79b9_7f4a_7c15);
    }
    h ^ (h >> 29)
}

/// Pairs within an edit limit, by partition (the pigeonhole principle):
/// split a value `s` into `τ + 1` segments; a value within `τ` edits of it
/// holds one of them unchanged. Which one, and where, is narrowed down: of
/// the edits, there is a segment `i` (from 0) left untouched with at most
/// `i` edits before it and at most `τ − i` after it, so it starts in the
/// other value within `i` of where it starts in `s`, and within `τ − i` of
/// that position moved by the difference in length. Every value is filed
/// under its segments (for each edit limit a longer partner may give it);
/// every value then looks up, for each shorter or equally long partner
/// length, only the substrings at those positions. Exact.
///
/// For optimal string alignment a transposition across two segments
/// changes both: counting it against the left one, the untouched segment
/// may still have its first character swapped with the character before
/// it, so that spelling is looked up too.
///
/// A value marked in `by_words` looks only for unmarked partners (the word
/// filter finds its pairs with marked ones): where a partner length holds
/// fewer unmarked values than it would make lookups, it compares them
/// directly.
fn partition_pairs(values: &[Vec<char>], limit: EditLimit, osa: bool, by_words: &[bool]) -> Found {
    let marked = |i: usize| !by_words.is_empty() && by_words[i];
    let mut unmarked_of_len = vec![0u64; values.iter().map(Vec::len).max().unwrap_or(0) + 1];
    for (i, v) in values.iter().enumerate() {
        if !marked(i) {
            unmarked_of_len[v.len()] += 1;
        }
    }
    // About (τ + 1)² / 2 lookups per shorter partner length: with long
    // values and a large limit, comparing all pairs is cheaper.
    let lookups: u64 = values
        .iter()
        .enumerate()
        .map(|(i, v)| {
            let lr = v.len();
            (0..=lr)
                .rev()
                .map(|ls| (ls, limit.max_edits(ls, lr)))
                .take_while(|&(ls, tau)| lr - ls <= tau)
                .map(|(ls, tau)| {
                    let made = segment_lookups(tau);
                    if marked(i) {
                        made.min(unmarked_of_len[ls])
                    } else {
                        made
                    }
                })
                .sum::<u64>()
        })
        .sum();
    let n = values.len() as u64;
    if lookups > n * n.saturating_sub(1) / 2 {
        let method = if osa {
            Fuzzy::Osa(limit)
        } else {
            Fuzzy::Levenshtein(limit)
        };
        return all_pairs_except(values, &method, by_words);
    }
    let by_size = BySize::new(values.iter().map(Vec::len).collect());
    let values = by_size.reorder(values);
    let by_words = if by_words.is_empty() {
        Vec::new()
    } else {
        by_size.reorder(by_words)
    };
    let marked = |i: u32| !by_words.is_empty() && by_words[i as usize];
    // The unmarked values' ids, ascending (so by length too).
    let unmarked: Vec<u32> = (0..values.len() as u32).filter(|&i| !marked(i)).collect();
    let unmarked_with_len = |len: usize| {
        let start = unmarked.partition_point(|&i| by_size.sizes[i as usize] < len);
        let end = unmarked.partition_point(|&i| by_size.sizes[i as usize] <= len);
        &unmarked[start..end]
    };
    let n = values.len();
    let comparator = |v: &[char]| {
        if osa {
            Comparator::osa(v)
        } else {
            Comparator::levenshtein(v)
        }
    };
    // Partner lengths of a value of length `short` that are at least as
    // long and within reach, with the edit limit for each.
    let longer_partners = |short: usize| {
        (short..)
            .map(move |long| (long, limit.max_edits(short, long)))
            .take_while(move |&(long, tau)| long - short <= tau)
    };
    // Every value filed under its segments, for every limit it may meet.
    let mut filed: Vec<(u64, u32)> = (0..n)
        .into_par_iter()
        .flat_map_iter(|s| {
            let v = &values[s];
            let len = v.len();
            let mut taus: Vec<usize> = longer_partners(len).map(|(_, tau)| tau).collect();
            taus.dedup();
            taus.into_iter()
                .filter(move |&tau| len > tau)
                .flat_map(move |tau| {
                    segments(len, tau).enumerate().map(move |(i, (start, l))| {
                        (
                            segment_key(len, tau, i, v[start..start + l].iter().copied()),
                            s as u32,
                        )
                    })
                })
        })
        .collect();
    filed.par_sort_unstable();
    let mut lists: HashMap<u64, (u32, u32)> = HashMap::new();
    let mut start = 0;
    while start < filed.len() {
        let key = filed[start].0;
        let end = start + filed[start..].partition_point(|&(k, _)| k == key);
        lists.insert(key, (start as u32, end as u32));
        start = end;
    }
    let ids: Vec<u32> = filed.iter().map(|&(_, id)| id).collect();
    drop(filed);
    let histograms: Vec<[u8; 32]> = values.iter().map(|v| char_histogram(v)).collect();
    let lookup = |key: u64| -> &[u32] {
        match lists.get(&key) {
            Some(&(a, b)) => &ids[a as usize..b as usize],
            None => &[],
        }
    };
    probe_all(n, |r, seen, found| {
        let rv = &values[r as usize];
        let lr = rv.len();
        let cmp = comparator(rv);
        let r_marked = marked(r);
        let mut check = |s: u32, tau: usize, found: &mut Found| {
            if s >= r || seen[s as usize] == r || (r_marked && marked(s)) {
                return;
            }
            seen[s as usize] = r;
            if fewest_edits(&histograms[r as usize], &histograms[s as usize]) > tau {
                return;
            }
            found.compared += 1;
            if let Some(d) = cmp.distance_within(&values[s as usize], tau) {
                found.edges.push(by_size.edge(s, r, d as f64));
            }
        };
        // Partners at most as long: r is their longer partner.
        for ls in (0..=lr).rev() {
            let tau = limit.max_edits(ls, lr);
            if lr - ls > tau {
                break;
            }
            if ls == 0 {
                continue;
            }
            if r_marked {
                let partners = unmarked_with_len(ls);
                if ls <= tau || partners.len() as u64 <= segment_lookups(tau) {
                    for &s in partners {
                        check(s, tau, found);
                    }
                    continue;
                }
            }
            if ls <= tau {
                // Too short to split: every value of that length.
                let (lo, hi) = by_size.ids_with_size(ls, ls);
                for s in lo..hi {
                    check(s, tau, found);
                }
                continue;
            }
            let delta = lr - ls;
            for (i, (p, l)) in segments(ls, tau).enumerate() {
                let lo = (p.saturating_sub(i)).max((p + delta).saturating_sub(tau - i));
                let hi = (p + i).min(p + delta + (tau - i)).min(lr - l);
                for x in lo..=hi {
                    let key = segment_key(ls, tau, i, rv[x..x + l].iter().copied());
                    for &s in lookup(key) {
                        check(s, tau, found);
                    }
                    if osa && i > 0 && x > 0 {
                        let swapped =
                            std::iter::once(rv[x - 1]).chain(rv[x + 1..x + l].iter().copied());
                        for &s in lookup(segment_key(ls, tau, i, swapped)) {
                            check(s, tau, found);
                        }
                    }
                }
            }
        }
    })
}

/// About how many lookups a value makes for one partner length with the
/// edit limit `tau`.
fn segment_lookups(tau: usize) -> u64 {
    ((tau + 1) * (tau + 2) / 2) as u64
}

// ---------------------------------------------------------------------------
// q-gram Jaccard
// ---------------------------------------------------------------------------

fn jaccard_pairs(values: &[Vec<char>], q: usize, min: f64) -> Found {
    let input_table = GramTable::build(values, q);
    let by_size = BySize::new(input_table.sets.iter().map(Vec::len).collect());
    let values = by_size.reorder(values);
    let table = GramTable::build(&values, q);
    let min = min.clamp(f64::MIN_POSITIVE, 1.0);
    // Both values of a pair share at least ⌈s·max(|A|, |B|)⌉ q-grams, so the
    // prefixes of both meet: the index holds prefixes only.
    let prefix_of =
        |size: usize| size - (((min * size as f64) - 1e-9).ceil().max(1.0) as usize).min(size) + 1;
    let postings = table.prefix_postings(|v| prefix_of(table.sets[v].len()), true);
    let histograms: Vec<[u8; 32]> = table
        .sets
        .iter()
        .map(|set| histogram(set.iter().copied()))
        .collect();
    let n = values.len();
    probe_all(n, |a, seen, found| {
        let set = &table.sets[a as usize];
        let size = set.len();
        let prefix = prefix_of(size);
        let largest = ((size as f64 / min) + 1e-9).floor() as usize;
        let (lo, hi) = by_size.ids_with_size(size, largest);
        for &rank in set.iter().take(prefix) {
            for &(b, _) in id_range(&postings[rank as usize], lo.max(a + 1), hi) {
                if seen[b as usize] == a {
                    continue;
                }
                seen[b as usize] = a;
                // Shared q-grams fall in the same bucket on both sides.
                let other = table.sets[b as usize].len();
                let needed = min / (1.0 + min) * (size + other) as f64 - 1e-9;
                if (common_upper_bound(&histograms[a as usize], &histograms[b as usize]) as f64)
                    < needed
                {
                    continue;
                }
                found.compared += 1;
                if let Some(j) = jaccard_at_least(set, &table.sets[b as usize], min) {
                    found.edges.push(by_size.edge(a, b, j));
                }
            }
        }
    })
}

// ---------------------------------------------------------------------------
// Jaro-Winkler
// ---------------------------------------------------------------------------

/// The least Jaro similarity that can reach Jaro-Winkler `s`: the Winkler
/// bonus adds at most `4 · 0.1 · (1 − jaro)`.
pub fn least_jaro(s: f64) -> f64 {
    least_jaro_with_prefix(s, 4)
}

/// The least number of matched characters two values of these lengths
/// need for a Jaro similarity of `(1 + tau) / 3`: `m/|a| + m/|b| >= tau`.
fn least_matches(tau: f64, la: usize, lb: usize) -> usize {
    let m = tau * (la * lb) as f64 / (la + lb) as f64;
    ((m - 1e-9).ceil().max(1.0)) as usize
}

/// Above this estimate of posting entries to visit, the exact
/// Jaro-Winkler search gives way to the bigram search.
pub const EXACT_JARO_BUDGET: u64 = 250_000_000;

/// The Jaro-Winkler pairs, leaving out those of two values marked in
/// `by_words` (a marked value probes only the unmarked values' postings).
fn jaro_winkler_pairs(values: &[Vec<char>], min: f64, by_words: &[bool]) -> Found {
    let by_size = BySize::new(values.iter().map(Vec::len).collect());
    let values = by_size.reorder(values);
    let marked = if by_words.is_empty() {
        Vec::new()
    } else {
        by_size.reorder(by_words)
    };
    // Jaro = (m/|a| + m/|b| + (m − t)/m) / 3 >= j needs m/|a| + m/|b| >= tau.
    let tau = 3.0 * least_jaro(min) - 1.0;
    if tau <= 0.0 {
        return all_pairs_except(
            &values,
            &Fuzzy::JaroWinkler {
                min_similarity: min,
            },
            &marked,
        )
        .remap(&by_size);
    }
    let tokens = occurrence_tokens(&values);
    if ExactJaro::cost(&tokens, tau, &marked) <= EXACT_JARO_BUDGET {
        ExactJaro::build(tokens, tau, &marked).pairs(&JaroSearch::new(
            &values,
            &by_size,
            tau,
            min,
            &[],
            &marked,
        ))
    } else {
        large_jaro_winkler(&values, &by_size, min, &marked)
    }
}

/// The longest partner a value of `len` characters may have at
/// Jaro-Winkler `min`.
pub(super) fn jaro_longest_partner(min: f64, len: usize) -> usize {
    longest_partner(3.0 * least_jaro(min) - 1.0, len)
}

/// The least Jaro similarity that can reach Jaro-Winkler `s` for two
/// values whose common prefix (counted up to four characters) is `shared`:
/// the Winkler bonus adds `shared · 0.1 · (1 − jaro)`.
fn least_jaro_with_prefix(s: f64, shared: usize) -> f64 {
    let bonus = shared.min(4) as f64 * PREFIX_WEIGHT;
    ((s - bonus) / (1.0 - bonus)).max(0.0)
}

/// Jaro-Winkler on a set too large for the exact search, by the common
/// prefix of a pair (the Winkler bonus counts at most four characters).
/// For `shared` from 4 down to 1, the values beginning with the same
/// `shared` characters are searched together for the pairs whose Jaro
/// similarity reaches [`least_jaro_with_prefix`]: a pair whose common
/// prefix is exactly that long is found in its group, exactly where the
/// group is small enough for the exact search. The pairs that differ in
/// their first character get no bonus, so their Jaro similarity is at
/// least `s`; the bigram search looks for them among all values.
fn large_jaro_winkler(values: &[Vec<char>], by_size: &BySize, min: f64, marked: &[bool]) -> Found {
    let mut parts: Vec<Found> = Vec::new();
    for shared in (1..=4).rev() {
        let mut groups: HashMap<&[char], Vec<u32>> = HashMap::new();
        for (i, v) in values.iter().enumerate() {
            if v.len() >= shared {
                groups.entry(&v[..shared]).or_default().push(i as u32);
            }
        }
        // A group of marked values only has nothing left to find here.
        let mut groups: Vec<Vec<u32>> = groups
            .into_values()
            .filter(|g| g.len() > 1 && !g.iter().all(|&i| is_marked(marked, i)))
            .collect();
        groups.sort_unstable_by_key(|g| g[0]);
        let jaro = least_jaro_with_prefix(min, shared);
        parts.par_extend(groups.par_iter().map(|group| {
            // Ids ascending: the members are in size order too.
            let members: Vec<Vec<char>> =
                group.iter().map(|&i| values[i as usize].clone()).collect();
            let sizes = BySize::new(members.iter().map(Vec::len).collect());
            // A pair whose next characters agree too has a longer common
            // prefix: the group for that prefix looks for it.
            let next: Vec<u32> = if shared < 4 {
                members
                    .iter()
                    .map(|v| v.get(shared).map_or(u32::MAX, |&c| c as u32))
                    .collect()
            } else {
                Vec::new()
            };
            let member_marks: Vec<bool> = if marked.is_empty() {
                Vec::new()
            } else {
                group.iter().map(|&i| marked[i as usize]).collect()
            };
            let mut found = jaro_at_least(&members, &sizes, jaro, min, false, &next, &member_marks);
            for e in &mut found.edges {
                *e = by_size.edge(group[e.a as usize], group[e.b as usize], e.score);
            }
            found
        }));
    }
    let first: Vec<u32> = values
        .iter()
        .map(|v| v.first().map_or(u32::MAX, |&c| c as u32))
        .collect();
    parts.push(jaro_at_least(
        values, by_size, min, min, true, &first, marked,
    ));
    let mut found = merge(parts);
    found.edges.dedup_by_key(|e| (e.a, e.b));
    found
}

/// The pairs of size-ordered `values` whose Jaro similarity reaches `jaro`
/// and Jaro-Winkler similarity `min`: exactly, unless the exact search
/// would cost more than [`EXACT_JARO_BUDGET`] (or `large` says the set is
/// known to be too large), then by the bigram search. Pairs of two values
/// `marked` are left out.
fn jaro_at_least(
    values: &[Vec<char>],
    by_size: &BySize,
    jaro: f64,
    min: f64,
    large: bool,
    skip: &[u32],
    marked: &[bool],
) -> Found {
    let tau = 3.0 * jaro - 1.0;
    if tau <= 0.0 {
        let all = all_pairs_except(
            values,
            &Fuzzy::JaroWinkler {
                min_similarity: min,
            },
            marked,
        );
        return all.remap(by_size);
    }
    let search = JaroSearch::new(values, by_size, tau, min, skip, marked);
    if !large {
        let tokens = occurrence_tokens(values);
        if ExactJaro::cost(&tokens, tau, marked) <= EXACT_JARO_BUDGET {
            return ExactJaro::build(tokens, tau, marked).pairs(&search);
        }
    }
    jaro_winkler_bigrams(&search)
}

/// Is value `i` marked (searched by words)?
fn is_marked(marked: &[bool], i: u32) -> bool {
    !marked.is_empty() && marked[i as usize]
}

/// The longest partner a value of length `len` may have as the shorter of
/// the pair (m <= |a| gives |b| <= |a| / (tau − 1)).
fn longest_partner(tau: f64, len: usize) -> usize {
    if tau > 1.0 {
        ((len as f64 / (tau - 1.0)) + 1e-9).floor() as usize
    } else {
        usize::MAX
    }
}

/// The exact search. Matched characters are common characters: the k-th
/// `e` of one value can only match an `e` of the other, so with every
/// character numbered by its occurrence (`e#1`, `e#2`, ...) two values
/// share at least m such tokens. Tokens are ranked rarest first, and two
/// values sharing at least t tokens share one among the first `|a| − t + 1`
/// of each (the rarest shared token is there): a value probes with its
/// prefix as the shorter of a pair (t is least with an equally long
/// partner) and is indexed with its prefix as the longer one (t is least
/// with its shortest possible partner).
///
/// A value marked as searched by words probes the postings of the unmarked
/// values only.
struct ExactJaro {
    tokens: Tokens,
    postings: Vec<Vec<(u32, u16)>>,
    /// The unmarked values' postings (empty when no value is marked).
    unmarked_postings: Vec<Vec<(u32, u16)>>,
    marked: Vec<bool>,
}

impl ExactJaro {
    /// The tokens a value of length `len` is indexed under, as the longer
    /// of a pair.
    fn index_prefix(tau: f64, len: usize) -> usize {
        let shortest_partner = if tau > 1.0 {
            (((tau - 1.0) * len as f64 - 1e-9).ceil().max(1.0) as usize).min(len)
        } else {
            1
        };
        len + 1 - least_matches(tau, shortest_partner, len).min(len)
    }

    /// Posting entries the probes would visit (ignoring lengths).
    fn cost(tokens: &Tokens, tau: f64, marked: &[bool]) -> u64 {
        let mut indexed = vec![0u64; tokens.distinct];
        let mut unmarked = vec![0u64; tokens.distinct];
        for (v, list) in tokens.ranks.iter().enumerate() {
            for &rank in list.iter().take(Self::index_prefix(tau, list.len())) {
                indexed[rank as usize] += 1;
                if !is_marked(marked, v as u32) {
                    unmarked[rank as usize] += 1;
                }
            }
        }
        tokens
            .ranks
            .iter()
            .enumerate()
            .map(|(v, list)| {
                let lists = if is_marked(marked, v as u32) {
                    &unmarked
                } else {
                    &indexed
                };
                list.iter()
                    .take(probe_prefix(tau, list.len()))
                    .map(|&rank| lists[rank as usize])
                    .sum::<u64>()
            })
            .sum()
    }

    fn build(tokens: Tokens, tau: f64, marked: &[bool]) -> ExactJaro {
        let mut postings: Vec<Vec<(u32, u16)>> = vec![Vec::new(); tokens.distinct];
        let mut unmarked_postings: Vec<Vec<(u32, u16)>> = if marked.is_empty() {
            Vec::new()
        } else {
            vec![Vec::new(); tokens.distinct]
        };
        for (v, list) in tokens.ranks.iter().enumerate() {
            for (pos, &rank) in list
                .iter()
                .take(Self::index_prefix(tau, list.len()))
                .enumerate()
            {
                postings[rank as usize].push((v as u32, pos as u16));
                if !marked.is_empty() && !marked[v] {
                    unmarked_postings[rank as usize].push((v as u32, pos as u16));
                }
            }
        }
        ExactJaro {
            tokens,
            postings,
            unmarked_postings,
            marked: marked.to_vec(),
        }
    }

    fn pairs(&self, search: &JaroSearch) -> Found {
        let (values, tau) = (search.values, search.tau);
        probe_all(values.len(), |a, seen, found| {
            let Some(probe) = search.start(a) else {
                return;
            };
            let ranks = &self.tokens.ranks[a as usize];
            let postings = if is_marked(&self.marked, a) {
                &self.unmarked_postings
            } else {
                &self.postings
            };
            for (pos, &rank) in ranks.iter().take(probe_prefix(tau, probe.len)).enumerate() {
                for &(b, bpos) in id_range(&postings[rank as usize], probe.lo, probe.hi) {
                    if seen[b as usize] == a {
                        continue;
                    }
                    seen[b as usize] = a;
                    let lb = search.lens[b as usize] as usize;
                    let needed = probe.least[lb - probe.len];
                    // This is the rarest token the two share (a rarer one
                    // would be in both prefixes and met first): only the
                    // tokens after it can add to it.
                    if 1 + (probe.len - pos - 1).min(lb - bpos as usize - 1) < needed {
                        continue;
                    }
                    search.compare(&probe, b, needed, found);
                }
            }
        })
    }
}

/// What both Jaro-Winkler searches share: the values' lengths and
/// character histograms, and how a value starts its probe and compares
/// itself with a candidate.
struct JaroSearch<'a> {
    values: &'a [Vec<char>],
    by_size: &'a BySize,
    tau: f64,
    min: f64,
    lens: Vec<u32>,
    histograms: Vec<[u8; 32]>,
    max_len: usize,
    /// A key per value (or none): pairs with equal keys are left out,
    /// another search finds them.
    skip: &'a [u32],
    /// Values searched by words (or none): pairs of two are left out.
    marked: &'a [bool],
}

/// One value's probe: the ids of its possible longer partners (`lo..hi`),
/// the least matches for each partner length from its own, and its
/// prepared comparator.
struct JaroProbe {
    a: u32,
    len: usize,
    lo: u32,
    hi: u32,
    least: Vec<usize>,
    cmp: Comparator,
}

impl<'a> JaroSearch<'a> {
    fn new(
        values: &'a [Vec<char>],
        by_size: &'a BySize,
        tau: f64,
        min: f64,
        skip: &'a [u32],
        marked: &'a [bool],
    ) -> Self {
        JaroSearch {
            values,
            by_size,
            tau,
            min,
            lens: values.iter().map(|v| v.len() as u32).collect(),
            histograms: values.iter().map(|v| char_histogram(v)).collect(),
            max_len: values.last().map_or(0, Vec::len),
            skip,
            marked,
        }
    }

    fn start(&self, a: u32) -> Option<JaroProbe> {
        let len = self.values[a as usize].len();
        if len == 0 {
            return None;
        }
        let longest = longest_partner(self.tau, len).min(self.max_len);
        let (lo, hi) = self.by_size.ids_with_size(len, longest);
        Some(JaroProbe {
            a,
            len,
            lo: lo.max(a + 1),
            hi,
            least: (len..=longest)
                .map(|lb| least_matches(self.tau, len, lb))
                .collect(),
            cmp: Comparator::jaro_winkler(&self.values[a as usize]),
        })
    }

    /// Compare the probing value with `b`, unless their characters cannot
    /// give the `needed` matches.
    fn compare(&self, probe: &JaroProbe, b: u32, needed: usize, found: &mut Found) {
        if !self.skip.is_empty() && self.skip[probe.a as usize] == self.skip[b as usize] {
            return;
        }
        if is_marked(self.marked, probe.a) && is_marked(self.marked, b) {
            return;
        }
        let bound = common_upper_bound(
            &self.histograms[probe.a as usize],
            &self.histograms[b as usize],
        );
        if (bound as usize) < needed {
            return;
        }
        found.compared += 1;
        if let Some(s) = probe
            .cmp
            .similarity_at_least(&self.values[b as usize], self.min)
        {
            found.edges.push(self.by_size.edge(probe.a, b, s));
        }
    }
}

/// The tokens a value of length `len` looks up as the shorter of a pair.
fn probe_prefix(tau: f64, len: usize) -> usize {
    len + 1 - least_matches(tau, len, len).min(len)
}

/// The bigram search, for sets too large for the exact one: a heuristic.
/// Of a value's characters at least `m` are matched when it is the shorter;
/// each unmatched one breaks at most two of its bigrams. A value is indexed
/// under, and looks up, three bigrams more than it has unmatched
/// characters (rarest first); a candidate must be met twice, by bigrams
/// within the Jaro window of each other (once, for values so short that
/// they need fewer than four matches). If two values share as many bigrams
/// as they have matched characters less two, their two rarest shared
/// bigrams are in both prefixes; most pairs above the threshold do
/// (measured: see docs/cluster.md). It can miss pairs whose letters are
/// scrambled, or whose longer value's rarest bigrams are not the shared
/// ones. Meeting a candidate twice instead of once, with one more bigram
/// each, is what keeps the number of candidates down: most values meet
/// through one common bigram only.
fn jaro_winkler_bigrams(search: &JaroSearch) -> Found {
    let (values, tau) = (search.values, search.tau);
    let table = GramTable::build(values, 2);
    let prefix_of = |len: usize| len - least_matches(tau, len, len).min(len) + 3;
    let postings: Vec<Vec<BigramPosting>> = table
        .prefix_postings(|v| prefix_of(values[v].len()), false)
        .into_iter()
        .map(|list| {
            list.into_iter()
                .map(|(value, pos)| BigramPosting {
                    value,
                    pos,
                    len: values[value as usize].len().min(u16::MAX as usize) as u16,
                })
                .collect()
        })
        .collect();
    let n = values.len();
    let parts: Vec<Found> = (0..n as u32)
        .into_par_iter()
        .map_init(
            || HitSets::new(n),
            |hits, a| {
                let mut found = Found::default();
                let Some(probe) = search.start(a) else {
                    return found;
                };
                let twice = least_matches(tau, probe.len, probe.len) >= 4;
                hits.clear(probe.lo, probe.hi);
                for &(rank, pos) in table.grams[a as usize].iter().take(prefix_of(probe.len)) {
                    let list = &postings[rank as usize];
                    let start = list.partition_point(|p| p.value < probe.lo);
                    let end = list.partition_point(|p| p.value < probe.hi);
                    for p in &list[start..end.max(start)] {
                        let lb = p.len as usize;
                        let window = (lb.max(probe.len) / 2).saturating_sub(1);
                        if p.pos.abs_diff(pos) as usize > window || !hits.hit(p.value, twice) {
                            continue;
                        }
                        let b = p.value;
                        let lb = search.lens[b as usize] as usize;
                        let needed = probe.least[lb - probe.len];
                        search.compare(&probe, b, needed, &mut found);
                    }
                }
                found
            },
        )
        .collect();
    merge(parts)
}

/// An entry of the bigram index: the value, where the bigram starts in
/// it, and its length (saturated: only a window is computed from it).
#[derive(Clone, Copy)]
struct BigramPosting {
    value: u32,
    pos: u16,
    len: u16,
}

/// The values the current probe has hit once and twice, as bit sets small
/// enough to stay in the first-level cache.
struct HitSets {
    once: Vec<u64>,
    twice: Vec<u64>,
}

impl HitSets {
    fn new(n: usize) -> Self {
        HitSets {
            once: vec![0; n.div_ceil(64)],
            twice: vec![0; n.div_ceil(64)],
        }
    }

    /// Forget the hits on values `lo..hi`, the next probe's range.
    fn clear(&mut self, lo: u32, hi: u32) {
        if lo >= hi {
            return;
        }
        let words = lo as usize / 64..(hi as usize).div_ceil(64);
        self.once[words.clone()].fill(0);
        self.twice[words].fill(0);
    }

    /// Count a hit on `v`: true the first time it reaches `twice` hits (2
    /// if `twice`, else 1).
    fn hit(&mut self, v: u32, twice: bool) -> bool {
        let (w, bit) = (v as usize / 64, 1u64 << (v % 64));
        if self.once[w] & bit == 0 {
            self.once[w] |= bit;
            return !twice;
        }
        if !twice || self.twice[w] & bit != 0 {
            return false;
        }
        self.twice[w] |= bit;
        true
    }
}

/// Every value's items (characters, words) as tokens numbered by
/// occurrence (the second `e` of a value is another token than its first),
/// ranked by how many values hold them (0 = rarest; ties by first
/// appearance, so the order is fixed), each value's ranks sorted. Shared
/// tokens count shared items with their repeats.
pub(super) struct Tokens {
    pub(super) ranks: Vec<Vec<u32>>,
    pub(super) distinct: usize,
}

fn occurrence_tokens(values: &[Vec<char>]) -> Tokens {
    occurrence_ranks(values.iter().map(|v| v.iter().copied()))
}

/// [`Tokens`] of values given as lists of items.
pub(super) fn occurrence_ranks<T, I>(values: impl Iterator<Item = I>) -> Tokens
where
    T: std::hash::Hash + Eq + Copy,
    I: Iterator<Item = T>,
{
    let mut ids: HashMap<(T, u32), u32> = HashMap::new();
    let mut freq: Vec<u32> = Vec::new();
    let mut seen_in_value: HashMap<T, u32> = HashMap::new();
    let raw: Vec<Vec<u32>> = values
        .map(|items| {
            seen_in_value.clear();
            items
                .map(|item| {
                    let k = seen_in_value.entry(item).or_insert(0);
                    *k += 1;
                    let next = ids.len() as u32;
                    let id = *ids.entry((item, *k)).or_insert(next);
                    if id == next {
                        freq.push(0);
                    }
                    freq[id as usize] += 1;
                    id
                })
                .collect()
        })
        .collect();
    let mut order: Vec<u32> = (0..freq.len() as u32).collect();
    order.sort_by_key(|&id| (freq[id as usize], id));
    let mut rank = vec![0u32; freq.len()];
    for (r, &id) in order.iter().enumerate() {
        rank[id as usize] = r as u32;
    }
    let ranks = raw
        .into_iter()
        .map(|ids| {
            let mut r: Vec<u32> = ids.into_iter().map(|id| rank[id as usize]).collect();
            r.sort_unstable();
            r
        })
        .collect();
    Tokens {
        ranks,
        distinct: freq.len(),
    }
}

/// Character counts in 32 buckets: two values have at most
/// [`common_upper_bound`] characters in common.
fn char_histogram(v: &[char]) -> [u8; 32] {
    histogram(v.iter().map(|&c| c as u32))
}

/// Counts of items in 32 buckets. A count above 254 does not fit: then
/// every bucket is 255 ("saturated"), which the bounds below allow for.
fn histogram(items: impl Iterator<Item = u32>) -> [u8; 32] {
    let mut h = [0u32; 32];
    for x in items {
        h[(x.wrapping_mul(0x9e37_79b1) >> 27) as usize] += 1;
    }
    if h.iter().any(|&c| c >= u8::MAX as u32) {
        return [u8::MAX; 32];
    }
    h.map(|c| c as u8)
}

fn saturated(h: &[u8; 32]) -> bool {
    h[0] == u8::MAX
}

/// A lower bound on the edits (Levenshtein or optimal string alignment)
/// between two values, from their character histograms: each edit changes
/// the count of at most one character on each side.
fn fewest_edits(a: &[u8; 32], b: &[u8; 32]) -> usize {
    if saturated(a) || saturated(b) {
        return 0;
    }
    let (mut more, mut fewer) = (0u32, 0u32);
    for (&x, &y) in a.iter().zip(b) {
        more += x.saturating_sub(y) as u32;
        fewer += y.saturating_sub(x) as u32;
    }
    more.max(fewer) as usize
}

/// An upper bound on the items two histograms have in common. With one
/// side saturated it is the other side's total; with both, unbounded.
fn common_upper_bound(a: &[u8; 32], b: &[u8; 32]) -> u32 {
    if saturated(a) && saturated(b) {
        return u32::MAX;
    }
    a.iter().zip(b).map(|(&x, &y)| x.min(y) as u32).sum()
}

impl Found {
    /// Edges found on size-ordered values, put back in input positions.
    fn remap(mut self, by_size: &BySize) -> Found {
        for e in &mut self.edges {
            *e = by_size.edge(e.a, e.b, e.score);
        }
        self.edges.sort_by(|x, y| (x.a, x.b).cmp(&(y.a, y.b)));
        self
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn chars(values: &[&str]) -> Vec<Vec<char>> {
        values.iter().map(|v| v.chars().collect()).collect()
    }

    /// A vocabulary big enough to use the index: spellings of a few things
    /// with typos, plus unrelated values.
    fn vocabulary() -> Vec<Vec<char>> {
        let mut v = Vec::new();
        let words = [
            "hydrostatic",
            "powershift",
            "manual",
            "automatic",
            "shuttle",
            "creeper",
            "cvt",
            "synchro",
        ];
        for (i, w) in words.iter().enumerate() {
            for (j, other) in words.iter().enumerate() {
                v.push(format!("{w} {other}"));
                v.push(format!("{w}{other}"));
                if (i + j) % 3 == 0 {
                    let mut typo: Vec<char> = w.chars().collect();
                    typo.swap(1, 2);
                    v.push(format!("{} {other}", typo.iter().collect::<String>()));
                    v.push(format!("{w} {}", &other[1..]));
                }
            }
        }
        v.extend(
            ["a", "ab", "ba", "abc", "x", "hst", "hts", "cvt", "cvtt"]
                .iter()
                .map(|s| s.to_string()),
        );
        v.sort();
        v.dedup();
        chars(&v.iter().map(String::as_str).collect::<Vec<_>>())
    }

    fn check_exact(method: Fuzzy) {
        let values = vocabulary();
        assert!(values.len() >= SMALL_BLOCK);
        let indexed = similar_pairs(&values, &method, None);
        let all = all_pairs(&values, &method);
        assert_eq!(indexed.edges, all.edges, "{method:?}");
        assert!(!all.edges.is_empty(), "{method:?} found nothing to compare");
        assert!(
            indexed.compared < all.compared,
            "{method:?}: the index compared {} pairs",
            indexed.compared
        );
    }

    #[test]
    fn levenshtein_index_misses_nothing() {
        check_exact(Fuzzy::Levenshtein(EditLimit::Edits(1)));
        check_exact(Fuzzy::Levenshtein(EditLimit::Edits(2)));
        check_exact(Fuzzy::Levenshtein(EditLimit::Ratio(0.15)));
    }

    #[test]
    fn osa_index_misses_nothing() {
        check_exact(Fuzzy::Osa(EditLimit::Edits(1)));
        check_exact(Fuzzy::Osa(EditLimit::Edits(2)));
        check_exact(Fuzzy::Osa(EditLimit::Ratio(0.2)));
    }

    #[test]
    fn jaccard_index_misses_nothing() {
        check_exact(Fuzzy::QGram {
            q: 2,
            min_similarity: 0.5,
        });
        check_exact(Fuzzy::QGram {
            q: 3,
            min_similarity: 0.7,
        });
    }

    #[test]
    fn jaro_winkler_index_misses_nothing() {
        for min_similarity in [0.8, 0.85, 0.9, 0.95] {
            check_exact(Fuzzy::JaroWinkler { min_similarity });
        }
    }

    #[test]
    fn jaro_winkler_search_for_large_sets_finds_nearly_every_pair() {
        // The heuristic for large sets, and the bigram search inside it: they
        // may miss a pair, never invent one.
        let values = vocabulary();
        let by_size = BySize::new(values.iter().map(Vec::len).collect());
        let sized = by_size.reorder(&values);
        for min_similarity in [0.85, 0.9] {
            let method = Fuzzy::JaroWinkler { min_similarity };
            let all = all_pairs(&values, &method).edges;
            let tau = 3.0 * least_jaro(min_similarity) - 1.0;
            let bigrams = jaro_winkler_bigrams(&JaroSearch::new(
                &sized,
                &by_size,
                tau,
                min_similarity,
                &[],
                &[],
            ))
            .edges;
            let large = large_jaro_winkler(&sized, &by_size, min_similarity, &[]).edges;
            for (name, found) in [("bigrams", &bigrams), ("large", &large)] {
                let recall = found.len() as f64 / all.len() as f64;
                println!(
                    "{name} {min_similarity}: {} of {} ({recall:.3})",
                    found.len(),
                    all.len()
                );
                assert!(found.iter().all(|e| all.contains(e)), "{name}");
                // Measured on this small vocabulary: bigrams 0.987 and 0.944,
                // large 1.000 and 1.000 (at 0.85 and 0.9: its groups by
                // first characters are small enough to be searched
                // exactly); the benchmark measures the large-set search
                // where it is used.
                assert!(recall >= 0.94, "{name} {min_similarity}: {recall}");
            }
        }
    }

    /// Random short strings over a small alphabet and their respellings:
    /// many pairs within a few edits, transpositions across every segment
    /// boundary.
    fn random_values(seed: u64) -> Vec<Vec<char>> {
        use rand::{Rng, SeedableRng};
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(seed);
        let alphabet: Vec<char> = "abcde -1é".chars().collect();
        let mut out: Vec<Vec<char>> = Vec::new();
        while out.len() < 400 {
            let len = rng.gen_range(1..24);
            let base: Vec<char> = (0..len)
                .map(|_| alphabet[rng.gen_range(0..alphabet.len())])
                .collect();
            out.push(base.clone());
            let mut v = base;
            for _ in 0..rng.gen_range(1..5) {
                let at = rng.gen_range(0..v.len().max(1));
                match rng.gen_range(0..4) {
                    0 => v.insert(at, alphabet[rng.gen_range(0..alphabet.len())]),
                    1 if v.len() > 1 => {
                        v.remove(at);
                    }
                    2 if !v.is_empty() => v[at] = alphabet[rng.gen_range(0..alphabet.len())],
                    _ if at + 1 < v.len() => v.swap(at, at + 1),
                    _ => {}
                }
                out.push(v.clone());
            }
        }
        out.sort();
        out.dedup();
        out
    }

    #[test]
    fn indexes_equal_all_pairs_on_random_respellings() {
        for seed in 0..3 {
            let values = random_values(seed);
            for method in [
                Fuzzy::Levenshtein(EditLimit::Edits(1)),
                Fuzzy::Levenshtein(EditLimit::Edits(3)),
                Fuzzy::Levenshtein(EditLimit::Ratio(0.3)),
                Fuzzy::Osa(EditLimit::Edits(1)),
                Fuzzy::Osa(EditLimit::Edits(2)),
                Fuzzy::Osa(EditLimit::Ratio(0.25)),
                Fuzzy::JaroWinkler {
                    min_similarity: 0.88,
                },
            ] {
                let indexed = similar_pairs(&values, &method, None);
                let all = all_pairs(&values, &method);
                assert_eq!(indexed.edges, all.edges, "seed {seed} {method:?}");
            }
        }
    }

    #[test]
    fn least_jaro_with_prefix_bounds_every_pair() {
        // Jaro 6/7 with a 3-character common prefix: 6/7 + 0.3 * 1/7 = 0.9.
        assert!((least_jaro_with_prefix(0.9, 3) - 6.0 / 7.0).abs() < 1e-12);
        assert_eq!(least_jaro_with_prefix(0.9, 0), 0.9);
        assert_eq!(least_jaro_with_prefix(0.9, 7), least_jaro(0.9));
        // Every pair at or above the threshold has at least the Jaro
        // similarity its common prefix allows.
        let values = random_values(7);
        let min = 0.85;
        let mut checked = 0;
        for a in &values {
            for b in &values {
                let (sa, sb): (String, String) = (a.iter().collect(), b.iter().collect());
                if crate::cluster::distance::jaro_winkler(&sa, &sb) < min {
                    continue;
                }
                let shared = a.iter().zip(b).take_while(|(x, y)| x == y).count();
                let jaro = rapidfuzz::distance::jaro::similarity(a.iter(), b.iter());
                assert!(
                    jaro >= least_jaro_with_prefix(min, shared) - 1e-12,
                    "{sa:?} {sb:?}"
                );
                checked += 1;
            }
        }
        assert!(checked > values.len(), "{checked}");
    }

    #[test]
    fn least_jaro_undoes_the_winkler_bonus() {
        // Jaro 0.8333 with a 4-character common prefix: 0.8333 + 0.4 * 0.1667 = 0.9.
        assert!((least_jaro(0.9) - 0.8333333).abs() < 1e-6);
    }
}
