//! The vocabulary: a column's distinct values with their row counts, and for
//! every row the index of its value.
//!
//! This is where descry's central promise lives: rules run once per distinct
//! value, and rows only gather the per-value results through [`Vocabulary::codes`].

use hashbrown::HashMap;

/// The code a null row carries in [`Vocabulary::codes`].
pub const NULL_CODE: u32 = u32::MAX;

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
        self.codes.len() as u64
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
        Vocabulary { values: self.values, counts: self.counts, null_rows: self.null_rows, codes: self.codes }
    }
}
