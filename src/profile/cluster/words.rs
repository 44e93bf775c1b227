//! The word filter: the pairs of long values with several words, found
//! through their words before any character is compared.
//!
//! On characters, a long value is costly to search: a relative edit limit
//! of 0.2 allows 16 edits at 84 characters, so the partition filter makes
//! thousands of lookups per value, and the Jaro-Winkler prefix filter
//! visits long posting lists of common characters. But the word check
//! ([`guard`]) keeps a pair only if its words, repeats counted, take one of
//! three forms (see [`guard`]'s documentation):
//!
//! 1. the same words;
//! 2. as many words on both sides (`n`), all but at most
//!    `d = most_misspelled(n)` (1, or 2 from six words) of them shared;
//! 3. the same letters in their words: the words that differ, joined, are
//!    equal (`screen print` / `screenprint`).
//!
//! Forms 1 and 2 share at least `n − d` of their `n` words. Words numbered
//! by occurrence (`pump#1`, `pump#2`) are ranked from rarest to commonest
//! over the block, and two values of `n` words sharing `n − d` of them
//! share one of the `d + 1` rarest of each (prefix filter): every value is
//! filed under those words among the values of as many words, and looks up
//! the same. A candidate must lie in the length band the threshold allows
//! and share `n − d` words in all (counted on the two sorted lists) before
//! its characters are compared. Form 3 is found by a hash of the letters of
//! a value's words, sorted: values with equal letters but other words are
//! compared pair by pair.
//!
//! So the filter is exact for what may group: every pair of two such values
//! that is within the threshold *and* passes the word check is found. A
//! pair within the threshold that the word check rejects is not reported,
//! though it may be met: the report's pairs between two values searched
//! by words are exactly the kept ones ([`super::ClusterReport::forms_searched_by_words`]
//! counts those values). Short values and values of few words stay on the
//! character index ([`super::index`]), which finds every pair within the
//! threshold, and so do their pairs with long values.

use hashbrown::HashMap;
use rayon::prelude::*;

use super::distance::{intersection_size, Comparator};
use super::guard;
use super::index::{jaro_longest_partner, merge, occurrence_ranks, probe_all, Edge, Found};
use super::{Digits, Fuzzy};

/// The fewest words a value searched by words has: with two, the one word
/// left to share is often a common one.
pub const FEWEST_WORDS: usize = 3;
/// Levenshtein and OSA: values that may be this many edits from some
/// partner are searched by words (the partition filter's lookups grow with
/// the square of the edits).
pub const FEWEST_EDITS: usize = 6;
/// Jaro-Winkler: values of at least this many characters are searched by
/// words.
pub const SHORTEST_FOR_JARO: usize = 32;

/// What the word check needs to know about a block's values: their
/// normalized forms, in the order of the values, and the digits rule.
#[derive(Debug, Clone, Copy)]
pub struct WordCheck<'a> {
    pub texts: &'a [&'a str],
    pub digits: Digits,
}

/// Are a value's pairs with other such values searched by words? Values
/// of at least [`FEWEST_WORDS`] words that are costly on characters:
/// Levenshtein and OSA allowing at least [`FEWEST_EDITS`] edits with some
/// partner, Jaro-Winkler at [`SHORTEST_FOR_JARO`] characters or more;
/// q-gram Jaccard never (its prefix filter is cheap on long values).
pub fn searched_by_words(method: &Fuzzy, normalized: &str, digits: Digits) -> bool {
    costly_on_characters(method, normalized.chars().count())
        && guard::words(normalized, digits).len() >= FEWEST_WORDS
}

fn costly_on_characters(method: &Fuzzy, len: usize) -> bool {
    match method {
        Fuzzy::Levenshtein(limit) | Fuzzy::Osa(limit) => limit.reach(len) >= FEWEST_EDITS,
        Fuzzy::JaroWinkler { .. } => len >= SHORTEST_FOR_JARO,
        Fuzzy::QGram { .. } => false,
    }
}

/// For each value of a block, whether it is searched by words (empty when
/// none is).
pub(super) fn by_words_mask(values: &[Vec<char>], method: &Fuzzy, check: &WordCheck) -> Vec<bool> {
    let mask: Vec<bool> = values
        .iter()
        .zip(check.texts)
        .map(|(v, t)| {
            costly_on_characters(method, v.len())
                && guard::words(t, check.digits).len() >= FEWEST_WORDS
        })
        .collect();
    if mask.contains(&true) {
        mask
    } else {
        Vec::new()
    }
}

/// The longest partner a value of `len` characters may have within the
/// method's threshold.
fn longest_partner(method: &Fuzzy, len: usize) -> usize {
    match method {
        Fuzzy::Levenshtein(limit) | Fuzzy::Osa(limit) => (len..)
            .take_while(|&long| long - len <= limit.max_edits(len, long))
            .last()
            .unwrap_or(len),
        Fuzzy::JaroWinkler { min_similarity } => jaro_longest_partner(*min_similarity, len),
        Fuzzy::QGram { .. } => usize::MAX,
    }
}

/// The values searched by words, renumbered by word count then length, with
/// their words as ranks (0 = rarest; numbered by occurrence, so that shared
/// ranks count shared words with their repeats), sorted.
struct WordTable {
    /// New id -> position in the block.
    position: Vec<u32>,
    /// (word count, length) per new id, ascending.
    key: Vec<(usize, usize)>,
    ranks: Vec<Vec<u32>>,
    /// The letters of the words, sorted: equal for the third form.
    letters: Vec<String>,
    distinct: usize,
}

impl WordTable {
    fn build(values: &[Vec<char>], check: &WordCheck, by_words: &[bool]) -> WordTable {
        let mut position: Vec<u32> = (0..values.len() as u32)
            .filter(|&p| by_words[p as usize])
            .collect();
        let words: Vec<Vec<&str>> = position
            .iter()
            .map(|&p| guard::words(check.texts[p as usize], check.digits))
            .collect();
        let mut order: Vec<usize> = (0..position.len()).collect();
        order.sort_by_key(|&i| (words[i].len(), values[position[i] as usize].len(), i));
        position = order.iter().map(|&i| position[i]).collect();
        let words: Vec<&Vec<&str>> = order.iter().map(|&i| &words[i]).collect();
        let tokens = occurrence_ranks(words.iter().map(|ws| ws.iter().copied()));
        let letters = words
            .iter()
            .map(|ws| {
                let mut l: Vec<char> = ws.iter().flat_map(|w| w.chars()).collect();
                l.sort_unstable();
                l.into_iter().collect()
            })
            .collect();
        let key = words
            .iter()
            .zip(&position)
            .map(|(ws, &p)| (ws.len(), values[p as usize].len()))
            .collect();
        WordTable {
            position,
            key,
            ranks: tokens.ranks,
            letters,
            distinct: tokens.distinct,
        }
    }

    /// Do values `x` and `y` (new ids) share enough words for the first or
    /// second form, with as many words each?
    fn share_enough(&self, x: usize, y: usize) -> bool {
        let n = self.ranks[x].len();
        n == self.ranks[y].len()
            && intersection_size(&self.ranks[x], &self.ranks[y]) + guard::most_misspelled(n) >= n
    }
}

/// The words a value of `n` words is filed under and looks up: the
/// `most_misspelled(n) + 1` rarest.
fn prefix(n: usize) -> usize {
    (guard::most_misspelled(n) + 1).min(n)
}

/// The pairs between values marked in `by_words` (positions in `values`)
/// that are within the method's threshold and pass the word check.
pub(super) fn word_pairs(
    values: &[Vec<char>],
    method: &Fuzzy,
    check: &WordCheck,
    by_words: &[bool],
) -> Found {
    let table = WordTable::build(values, check, by_words);
    let m = table.position.len();
    let mut postings: Vec<Vec<u32>> = vec![Vec::new(); table.distinct];
    for (id, ranks) in table.ranks.iter().enumerate() {
        for &r in ranks.iter().take(prefix(ranks.len())) {
            postings[r as usize].push(id as u32);
        }
    }
    let compare = |x: usize, y: usize, cmp: &Comparator, found: &mut Found| {
        let (px, py) = (table.position[x] as usize, table.position[y] as usize);
        found.compared += 1;
        let Some(score) = method.verify(cmp, &values[px], &values[py]) else {
            return;
        };
        if guard::may_group(check.texts[px], check.texts[py], check.digits) {
            found.edges.push(Edge {
                a: px.min(py) as u32,
                b: px.max(py) as u32,
                score,
            });
        }
    };
    // The first and second forms: the prefix filter.
    let mut parts = vec![probe_all(m, |a, seen, found| {
        let x = a as usize;
        let (n, len) = table.key[x];
        let hi = table
            .key
            .partition_point(|&k| k <= (n, longest_partner(method, len))) as u32;
        let mut cmp: Option<Comparator> = None;
        for &r in table.ranks[x].iter().take(prefix(n)) {
            let list = &postings[r as usize];
            let start = list.partition_point(|&b| b <= a);
            for &b in list[start..].iter().take_while(|&&b| b < hi) {
                if seen[b as usize] == a {
                    continue;
                }
                seen[b as usize] = a;
                if !table.share_enough(x, b as usize) {
                    continue;
                }
                let cmp = cmp.get_or_insert_with(|| {
                    let p = table.position[x] as usize;
                    method.comparator(&values[p]).expect("a character method")
                });
                compare(x, b as usize, cmp, found);
            }
        }
    })];
    // The third form: equal letters, other words.
    let mut buckets: HashMap<&str, Vec<u32>> = HashMap::new();
    for (id, letters) in table.letters.iter().enumerate() {
        buckets.entry(letters.as_str()).or_default().push(id as u32);
    }
    let mut buckets: Vec<Vec<u32>> = buckets.into_values().filter(|b| b.len() > 1).collect();
    buckets.sort_unstable_by_key(|b| b[0]);
    parts.par_extend(buckets.par_iter().map(|bucket| {
        let mut found = Found::default();
        for (i, &x) in bucket.iter().enumerate() {
            let x = x as usize;
            let p = table.position[x] as usize;
            let cmp = method.comparator(&values[p]).expect("a character method");
            for &y in &bucket[i + 1..] {
                let y = y as usize;
                // The same words, or enough of them: the prefix filter met them.
                if table.share_enough(x, y) {
                    continue;
                }
                compare(x, y, &cmp, &mut found);
            }
        }
        found
    }));
    let mut found = merge(parts);
    found.searched_by_words = m as u64;
    found
}
