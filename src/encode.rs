//! Encoding: per-value outcomes become row columns in compact types.
//!
//! Each feature is first laid out over the vocabulary (one slot per distinct
//! value), then gathered to rows through the vocabulary's codes. Null rows
//! give null features.

use polars::prelude::*;
use rayon::prelude::*;

use crate::evaluate::{Cell, Evaluation};
use crate::ruleset::{Feature, Precision, Rule, Ruleset};
use crate::vocabulary::{Vocabulary, NULL_CODE};

/// The integer types a count may be stored in, smallest first.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum IntType {
    UInt8,
    Int8,
    UInt16,
    Int16,
    Int32,
    Int64,
}

impl IntType {
    /// The smallest type holding every value in `lo..=hi`.
    ///
    /// ```
    /// use descry::encode::IntType;
    /// assert_eq!(IntType::for_range(1, 24), IntType::UInt8);
    /// assert_eq!(IntType::for_range(-1, 24), IntType::Int8);
    /// assert_eq!(IntType::for_range(0, 1800), IntType::UInt16);
    /// ```
    pub fn for_range(lo: i64, hi: i64) -> IntType {
        let fits = |min: i64, max: i64| lo >= min && hi <= max;
        if fits(0, u8::MAX as i64) {
            IntType::UInt8
        } else if fits(i8::MIN as i64, i8::MAX as i64) {
            IntType::Int8
        } else if fits(0, u16::MAX as i64) {
            IntType::UInt16
        } else if fits(i16::MIN as i64, i16::MAX as i64) {
            IntType::Int16
        } else if fits(i32::MIN as i64, i32::MAX as i64) {
            IntType::Int32
        } else {
            IntType::Int64
        }
    }

    pub fn dtype(self) -> DataType {
        match self {
            IntType::UInt8 => DataType::UInt8,
            IntType::Int8 => DataType::Int8,
            IntType::UInt16 => DataType::UInt16,
            IntType::Int16 => DataType::Int16,
            IntType::Int32 => DataType::Int32,
            IntType::Int64 => DataType::Int64,
        }
    }
}

/// The integer type of a count: from its declared `range` (and `missing`),
/// or else from the values observed in this vocabulary.
pub fn count_type(feature_index: usize, feature: &Feature, eval: &Evaluation) -> IntType {
    let Rule::Count(rule) = &feature.rule else {
        return IntType::Int64;
    };
    let observed = || {
        eval.outcomes
            .iter()
            .filter_map(|o| match o[feature_index].cell {
                Cell::Int(v) => Some(v),
                _ => None,
            })
    };
    let (mut lo, mut hi) = match rule.range {
        Some(range) => range,
        None => observed().fold((i64::MAX, i64::MIN), |(lo, hi), v| (lo.min(v), hi.max(v))),
    };
    if let Some(m) = rule.missing {
        (lo, hi) = (lo.min(m), hi.max(m));
    }
    if lo > hi {
        return IntType::UInt8;
    }
    IntType::for_range(lo, hi)
}

/// Build every feature column of one ruleset for the rows of `vocab`.
pub fn encode(rules: &Ruleset, vocab: &Vocabulary, eval: &Evaluation) -> PolarsResult<Vec<Column>> {
    let mut encoder = Encoder::new(rules, eval);
    encoder.add_values(eval, 0);
    encoder.encode(rules, &vocab.codes)
}

/// Turns row codes into feature columns. The column types are fixed when
/// the encoder is made, so every batch of a large file gets the same types;
/// per-value cells are appended as new values are evaluated.
#[derive(Debug, Clone)]
pub struct Encoder {
    count_types: Vec<Option<IntType>>,
    /// `slots[feature][value]`.
    slots: Vec<Vec<Cell>>,
}

impl Encoder {
    /// Fix the types: counts from their `range`, or from the values observed
    /// in `eval` (which must then cover the whole column).
    pub fn new(rules: &Ruleset, eval: &Evaluation) -> Encoder {
        let count_types = rules
            .features
            .iter()
            .enumerate()
            .map(|(i, f)| matches!(f.rule, Rule::Count(_)).then(|| count_type(i, f, eval)))
            .collect();
        Encoder {
            count_types,
            slots: vec![Vec::new(); rules.features.len()],
        }
    }

    /// Whether every type is fixed by the ruleset alone (no count without a
    /// `range`), so that a large file can be encoded in one pass.
    pub fn types_fixed_by_ruleset(rules: &Ruleset) -> bool {
        rules
            .features
            .iter()
            .all(|f| !matches!(&f.rule, Rule::Count(c) if c.range.is_none()))
    }

    /// Append the cells of values `from..` of `eval`.
    pub fn add_values(&mut self, eval: &Evaluation, from: usize) {
        for (i, slots) in self.slots.iter_mut().enumerate() {
            slots.extend(eval.outcomes[from..].iter().map(|o| o[i].cell));
        }
    }

    /// The feature columns for rows with these value codes.
    pub fn encode(&self, rules: &Ruleset, codes: &[u32]) -> PolarsResult<Vec<Column>> {
        rules
            .features
            .iter()
            .enumerate()
            .map(|(i, f)| self.encode_feature(i, f, codes).map(Column::from))
            .collect()
    }

    fn encode_feature(&self, i: usize, f: &Feature, codes: &[u32]) -> PolarsResult<Series> {
        let name: PlSmallStr = f.output.as_str().into();
        let slots = &self.slots[i];
        match &f.rule {
            Rule::Flag(_) => {
                let rows = gather(codes, slots, |c| {
                    if let Cell::Bool(b) = c {
                        Some(b)
                    } else {
                        None
                    }
                });
                Ok(BooleanChunked::from_iter_options(name, rows.into_iter()).into_series())
            }
            Rule::Count(_) => {
                let rows = gather(codes, slots, |c| {
                    if let Cell::Int(x) = c {
                        Some(x)
                    } else {
                        None
                    }
                });
                let s = Int64Chunked::from_iter_options(name, rows.into_iter()).into_series();
                s.strict_cast(&self.count_types[i].unwrap_or(IntType::Int64).dtype())
            }
            Rule::Measure(m) => {
                let rows = gather(codes, slots, |c| {
                    if let Cell::Float(x) = c {
                        Some(x)
                    } else {
                        None
                    }
                });
                let s = Float64Chunked::from_iter_options(name, rows.into_iter()).into_series();
                match m.precision {
                    Precision::F64 => Ok(s),
                    Precision::F32 => s.cast(&DataType::Float32),
                }
            }
            Rule::Label(l) => {
                let rows = gather(codes, slots, |c| {
                    if let Cell::Label(x) = c {
                        Some(x)
                    } else {
                        None
                    }
                });
                label_series(name, &l.categories, rows)
            }
        }
    }
}

/// Gather per-value cells to rows, in parallel chunks, in row order.
fn gather<T: Copy + Send + Sync>(
    codes: &[u32],
    slots: &[Cell],
    get: impl Fn(Cell) -> Option<T> + Sync,
) -> Vec<Option<T>> {
    codes
        .par_iter()
        .with_min_len(1 << 16)
        .map(|&c| {
            if c == NULL_CODE {
                None
            } else {
                get(slots[c as usize])
            }
        })
        .collect()
}

/// An Enum column: its categories are the ruleset's labels, in order, so
/// that every data drop gets the same categories and codes.
pub fn label_series(
    name: PlSmallStr,
    categories: &[String],
    rows: Vec<Option<u32>>,
) -> PolarsResult<Series> {
    let frozen = FrozenCategories::new(categories.iter().map(String::as_str))?;
    let dtype = DataType::from_frozen_categories(frozen);
    let series = match dtype.cat_physical()? {
        CategoricalPhysical::U8 => {
            let ids =
                UInt8Chunked::from_iter_options(name, rows.into_iter().map(|o| o.map(|x| x as u8)));
            CategoricalChunked::<Categorical8Type>::from_cats_and_dtype(ids, dtype).into_series()
        }
        CategoricalPhysical::U16 => {
            let ids = UInt16Chunked::from_iter_options(
                name,
                rows.into_iter().map(|o| o.map(|x| x as u16)),
            );
            CategoricalChunked::<Categorical16Type>::from_cats_and_dtype(ids, dtype).into_series()
        }
        CategoricalPhysical::U32 => {
            let ids = UInt32Chunked::from_iter_options(name, rows.into_iter());
            CategoricalChunked::<Categorical32Type>::from_cats_and_dtype(ids, dtype).into_series()
        }
    };
    Ok(series)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn type_boundaries_follow_the_arrow_integer_ranges() {
        // Apache Arrow Columnar Format specification, "Int" logical type: signed
        // and unsigned integers of bit width 8, 16, 32, 64 in two's complement,
        // so int8 holds -128..=127, uint8 0..=255, int16 -32768..=32767,
        // uint16 0..=65535.
        assert_eq!(IntType::for_range(0, 255), IntType::UInt8);
        assert_eq!(IntType::for_range(0, 256), IntType::UInt16);
        assert_eq!(IntType::for_range(-128, 127), IntType::Int8);
        assert_eq!(IntType::for_range(-129, 127), IntType::Int16);
        assert_eq!(IntType::for_range(-1, 128), IntType::Int16);
        assert_eq!(IntType::for_range(0, 65_535), IntType::UInt16);
        assert_eq!(IntType::for_range(-32_768, 32_767), IntType::Int16);
        assert_eq!(IntType::for_range(-32_769, 0), IntType::Int32);
        assert_eq!(IntType::for_range(0, 65_536), IntType::Int32);
        assert_eq!(
            IntType::for_range(-2_147_483_648, 2_147_483_647),
            IntType::Int32
        );
        assert_eq!(IntType::for_range(0, 2_147_483_648), IntType::Int64);
    }

    #[test]
    fn label_series_keeps_declared_categories_and_codes() {
        let cats = vec!["manual".to_owned(), "cvt".to_owned(), "unused".to_owned()];
        let s = label_series("kind".into(), &cats, vec![Some(1), None, Some(0)]).unwrap();
        assert!(matches!(s.dtype(), DataType::Enum(_, _)));
        let text = s.cast(&DataType::String).unwrap();
        let got: Vec<Option<&str>> = text.str().unwrap().iter().collect();
        assert_eq!(got, vec![Some("cvt"), None, Some("manual")]);
    }
}
