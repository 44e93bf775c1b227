//! The vocabulary: a column's distinct values with their row counts, and for
//! every row the index of its value.
//!
//! This is where descry's central promise lives: rules run once per distinct
//! value, and rows only gather the per-value results through [`Vocabulary::codes`].

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
    index: HashMap<String, u32>,
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
        use rayon::prelude::*;
        let codes: Vec<u32> = rows
            .par_iter()
            .with_min_len(PARALLEL_MIN_ROWS)
            .map(|r| match r {
                None => NULL_CODE,
                Some(v) => self.index.get(*v).copied().unwrap_or(UNKNOWN_CODE),
            })
            .collect();
        let unknown = codes.contains(&UNKNOWN_CODE);
        (codes, unknown)
    }

    /// Give the rows that [`GrowingVocabulary::known_codes`] left unknown
    /// their codes, appending their values in row order. Rows are not
    /// counted.
    pub fn add_unknown(&mut self, rows: &[Option<&str>], codes: &mut [u32]) {
        for (code, row) in codes.iter_mut().zip(rows) {
            if let (UNKNOWN_CODE, Some(v)) = (*code, row) {
                *code = self.insert(v);
            }
        }
    }

    fn insert(&mut self, value: &str) -> u32 {
        if let Some(&c) = self.index.get(value) {
            return c;
        }
        let code = self.values.len() as u32;
        assert!(code < UNKNOWN_CODE, "more than 4 billion distinct values");
        self.index.insert(value.to_owned(), code);
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
