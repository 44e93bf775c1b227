//! The vocabulary: a column's distinct values with their row counts, and for
//! every row the index of its value.
//!
//! This is where descry's central promise lives: rules run once per distinct
//! value, and rows only gather the per-value results through [`Vocabulary::codes`].

use std::hash::BuildHasher;

use hashbrown::HashMap;

/// The code a null row carries in [`Vocabulary::codes`].
pub const NULL_CODE: u32 = u32::MAX;

/// Rows below which a lookup or a gather runs on the calling thread: a
/// streamed morsel (about 100,000 rows) is one task, since polars already
/// describes several morsels at once, and waking a second pool for it costs
/// more than it saves. A whole table in memory is still split.
pub const PARALLEL_MIN_ROWS: usize = 1 << 18;

/// The code [`GrowingVocabulary::known_codes`] gives a value it does not
/// know yet; no value ever gets it.
pub const UNKNOWN_CODE: u32 = u32::MAX - 1;

/// Distinct values of one column, in order of first appearance.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct Vocabulary {
    /// Distinct non-null values, exactly as read.
    pub values: Vec<String>,
    /// Rows holding each value (same order as `values`).
    pub counts: Vec<u64>,
    /// Rows that are null.
    pub null_rows: u64,
    /// For every row, the index of its value in `values`, or [`NULL_CODE`].
    pub codes: Vec<u32>,
}

impl Vocabulary {
    /// Build the vocabulary of a sequence of rows.
    ///
    /// ```
    /// use descry::Vocabulary;
    /// let v = Vocabulary::build([Some("6 spd"), None, Some("6 spd"), Some("cvt")]);
    /// assert_eq!(v.values, vec!["6 spd", "cvt"]);
    /// assert_eq!(v.counts, vec![2, 1]);
    /// assert_eq!(v.null_rows, 1);
    /// assert_eq!(v.codes, vec![0, descry::vocabulary::NULL_CODE, 0, 1]);
    /// ```
    pub fn build<'a>(rows: impl IntoIterator<Item = Option<&'a str>>) -> Vocabulary {
        let mut builder = VocabularyBuilder::default();
        for row in rows {
            builder.push(row);
        }
        builder.finish()
    }

    /// Number of rows, null rows included.
    pub fn rows(&self) -> u64 {
        self.counts.iter().sum::<u64>() + self.null_rows
    }

    pub fn distinct(&self) -> usize {
        self.values.len()
    }
}

/// Builds a [`Vocabulary`] row by row; batches of a large file can be pushed
/// one after another.
#[derive(Debug, Default)]
pub struct VocabularyBuilder {
    index: HashMap<String, u32>,
    values: Vec<String>,
    counts: Vec<u64>,
    null_rows: u64,
    codes: Vec<u32>,
}

impl VocabularyBuilder {
    pub fn push(&mut self, row: Option<&str>) {
        let code = match row {
            None => {
                self.null_rows += 1;
                NULL_CODE
            }
            Some(value) => self.code_of(value),
        };
        self.codes.push(code);
    }

    /// The code of a value, adding it on first sight.
    pub fn code_of(&mut self, value: &str) -> u32 {
        if let Some(&code) = self.index.get(value) {
            self.counts[code as usize] += 1;
            return code;
        }
        let code = self.values.len() as u32;
        assert!(code < NULL_CODE, "more than 4 billion distinct values");
        self.index.insert(value.to_owned(), code);
        self.values.push(value.to_owned());
        self.counts.push(1);
        code
    }

    pub fn finish(self) -> Vocabulary {
        Vocabulary {
            values: self.values,
            counts: self.counts,
            null_rows: self.null_rows,
            codes: self.codes,
        }
    }
}

/// A vocabulary that grows batch by batch without keeping any row codes:
/// the memory it holds is proportional to the distinct values only.
#[derive(Debug, Default, Clone)]
pub struct GrowingVocabulary {
    index: KeyIndex,
    /// Distinct non-null values in order of first appearance.
    pub values: Vec<String>,
    pub counts: Vec<u64>,
    pub null_rows: u64,
    pub rows: u64,
}

impl GrowingVocabulary {
    /// Codes for one batch of rows; values seen for the first time are
    /// appended to `values` in row order (so the order does not depend on
    /// how the work is split between threads).
    pub fn codes_for<'a>(&mut self, rows: &[Option<&'a str>]) -> Vec<u32> {
        let (mut codes, unknown) = self.known_codes(rows);
        if unknown {
            self.add_unknown(rows, &mut codes);
        }
        for (&code, row) in codes.iter().zip(rows) {
            match row {
                None => self.null_rows += 1,
                Some(_) => self.counts[code as usize] += 1,
            }
        }
        self.rows += rows.len() as u64;
        codes
    }

    /// The code of every row among the values known so far: [`NULL_CODE`]
    /// for a null, [`UNKNOWN_CODE`] for a value not in the vocabulary yet;
    /// and whether any value was unknown. Rows are not counted. It only
    /// reads, so several batches can be looked up at once.
    pub fn known_codes(&self, rows: &[Option<&str>]) -> (Vec<u32>, bool) {
        self.known_codes_of(rows.len(), |i| rows[i])
    }

    /// [`GrowingVocabulary::known_codes`] of the rows `row(0..n)`, for
    /// callers that can reach a row by its index (a text column of a table)
    /// without gathering them first.
    pub fn known_codes_of<'a>(
        &self,
        n: usize,
        row: impl Fn(usize) -> Option<&'a str> + Sync,
    ) -> (Vec<u32>, bool) {
        use rayon::prelude::*;
        let codes: Vec<u32> = (0..n)
            .into_par_iter()
            .with_min_len(PARALLEL_MIN_ROWS)
            .map(|i| match row(i) {
                None => NULL_CODE,
                Some(v) => self.index.get(v).unwrap_or(UNKNOWN_CODE),
            })
            .collect();
        let unknown = codes.contains(&UNKNOWN_CODE);
        (codes, unknown)
    }

    /// Give the rows that [`GrowingVocabulary::known_codes`] left unknown
    /// their codes, appending their values in row order. Rows are not
    /// counted.
    pub fn add_unknown(&mut self, rows: &[Option<&str>], codes: &mut [u32]) {
        self.add_unknown_of(|i| rows[i], codes)
    }

    /// [`GrowingVocabulary::add_unknown`] for the rows `row(0..codes.len())`.
    pub fn add_unknown_of<'a>(
        &mut self,
        row: impl Fn(usize) -> Option<&'a str>,
        codes: &mut [u32],
    ) {
        for (i, code) in codes.iter_mut().enumerate() {
            if let (UNKNOWN_CODE, Some(v)) = (*code, row(i)) {
                *code = self.insert(v);
            }
        }
    }

    fn insert(&mut self, value: &str) -> u32 {
        if let Some(c) = self.index.get(value) {
            return c;
        }
        let code = self.values.len() as u32;
        assert!(code < UNKNOWN_CODE, "more than 4 billion distinct values");
        self.index.insert(value, code);
        self.values.push(value.to_owned());
        self.counts.push(0);
        code
    }

    pub fn distinct(&self) -> usize {
        self.values.len()
    }

    /// Forget the row counts but keep the values and their codes (after a
    /// first pass that only collected the values).
    pub fn reset_counts(&mut self) {
        self.counts.iter_mut().for_each(|c| *c = 0);
        self.null_rows = 0;
        self.rows = 0;
    }

    /// The same numbers as a [`Vocabulary`], without row codes.
    pub fn to_vocabulary(&self) -> Vocabulary {
        Vocabulary {
            values: self.values.clone(),
            counts: self.counts.clone(),
            null_rows: self.null_rows,
            codes: Vec::new(),
        }
    }
}

/// The codes of distinct strings, for the lookup every row goes through:
/// the keys' bytes lie in one buffer and the table holds only codes, so a
/// lookup touches few cache lines (a table of `String` keys sends each
/// comparison to a separate allocation).
#[derive(Debug, Default, Clone)]
struct KeyIndex {
    table: hashbrown::HashTable<u32>,
    hasher: hashbrown::DefaultHashBuilder,
    bytes: Vec<u8>,
    /// Where key `code` ends in `bytes` (it starts where `code - 1` ends).
    ends: Vec<usize>,
}

fn key_of<'a>(bytes: &'a [u8], ends: &[usize], code: u32) -> &'a [u8] {
    let i = code as usize;
    let start = if i == 0 { 0 } else { ends[i - 1] };
    &bytes[start..ends[i]]
}

/// `a == b`, for the short keys of a vocabulary: word-sized comparisons
/// inline instead of a call to `memcmp` (a key found in the table almost
/// always equals the value looked up, so every byte is compared).
#[inline]
fn same_bytes(a: &[u8], b: &[u8]) -> bool {
    let n = a.len();
    if n != b.len() {
        return false;
    }
    if n >= 8 {
        let word = |s: &[u8], i: usize| u64::from_ne_bytes(s[i..i + 8].try_into().unwrap());
        let mut i = 0;
        while i + 8 < n {
            if word(a, i) != word(b, i) {
                return false;
            }
            i += 8;
        }
        // The last 8 bytes, overlapping those already compared.
        return word(a, n - 8) == word(b, n - 8);
    }
    if n >= 4 {
        let word = |s: &[u8], i: usize| u32::from_ne_bytes(s[i..i + 4].try_into().unwrap());
        return word(a, 0) == word(b, 0) && word(a, n - 4) == word(b, n - 4);
    }
    a.iter().zip(b).all(|(x, y)| x == y)
}

impl KeyIndex {
    fn get(&self, value: &str) -> Option<u32> {
        let value = value.as_bytes();
        let hash = self.hasher.hash_one(value);
        self.table
            .find(hash, |&c| {
                same_bytes(key_of(&self.bytes, &self.ends, c), value)
            })
            .copied()
    }

    /// Add `value`, which must not be in the index yet, as `code`, the
    /// number of keys so far.
    fn insert(&mut self, value: &str, code: u32) {
        debug_assert_eq!(code as usize, self.ends.len());
        let value = value.as_bytes();
        self.bytes.extend_from_slice(value);
        self.ends.push(self.bytes.len());
        let (bytes, ends, hasher) = (&self.bytes, &self.ends, &self.hasher);
        self.table
            .insert_unique(hasher.hash_one(value), code, |&c| {
                hasher.hash_one(key_of(bytes, ends, c))
            });
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn growing_vocabulary_codes_values_in_order_of_first_appearance() {
        let mut v = GrowingVocabulary::default();
        // The empty string is a value; keys that are prefixes of each other
        // must not be confused in the shared byte buffer.
        let first = v.codes_for(&[Some("ab"), Some(""), None, Some("a"), Some("ab")]);
        assert_eq!(first, vec![0, 1, NULL_CODE, 2, 0]);
        let (known, unknown) = v.known_codes(&[Some("a"), Some("abc"), Some("")]);
        assert_eq!(known, vec![2, UNKNOWN_CODE, 1]);
        assert!(unknown);
        let second = v.codes_for(&[Some("abc"), Some("b"), Some("abc"), Some("ab")]);
        assert_eq!(second, vec![3, 4, 3, 0]);
        assert_eq!(v.values, vec!["ab", "", "a", "abc", "b"]);
        assert_eq!(v.counts, vec![3, 1, 1, 2, 1]);
        assert_eq!((v.null_rows, v.rows), (1, 9));
    }

    #[test]
    fn same_bytes_agrees_with_slice_equality_at_every_length() {
        // Lengths on both sides of the 4- and 8-byte word paths, equal keys
        // and keys that differ in one byte at every position.
        for n in 0..40 {
            let a: Vec<u8> = (0..n as u8).map(|i| b'a' + i % 26).collect();
            assert!(same_bytes(&a, &a.clone()), "length {n}");
            for at in 0..n {
                let mut b = a.clone();
                b[at] ^= 0x20;
                assert!(!same_bytes(&a, &b), "length {n}, byte {at}");
            }
            assert!(!same_bytes(&a, &a[..n.saturating_sub(1)]) || n == 0);
        }
    }

    #[test]
    fn growing_vocabulary_agrees_with_the_built_one_over_many_values() {
        // Enough values for the table to grow several times.
        let rows: Vec<String> = (0..50_000)
            .map(|i| format!("v{}", (i * 7919) % 20_011))
            .collect();
        let rows: Vec<Option<&str>> = rows.iter().map(|r| Some(r.as_str())).collect();
        let mut grown = GrowingVocabulary::default();
        let mut codes = grown.codes_for(&rows[..20_000]);
        codes.extend(grown.codes_for(&rows[20_000..]));
        let built = Vocabulary::build(rows.iter().copied());
        assert_eq!(codes, built.codes);
        assert_eq!(grown.values, built.values);
        assert_eq!(grown.counts, built.counts);
    }
}
