//! Encoding: per-value outcomes become row columns in compact types.
//!
//! Each feature is first laid out over the vocabulary (one slot per distinct
//! value), then gathered to rows through the vocabulary's codes. Null rows
//! give null features.

use polars::prelude::*;
use polars_arrow::bitmap::Bitmap;
use rayon::prelude::*;

use crate::evaluate::{Cell, Evaluation};
use crate::ruleset::{Feature, Precision, Rule, Ruleset};
use crate::vocabulary::{Vocabulary, NULL_CODE, PARALLEL_MIN_ROWS};

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

    /// Whether `x` fits this type.
    pub fn holds(self, x: i64) -> bool {
        match self {
            IntType::UInt8 => u8::try_from(x).is_ok(),
            IntType::Int8 => i8::try_from(x).is_ok(),
            IntType::UInt16 => u16::try_from(x).is_ok(),
            IntType::Int16 => i16::try_from(x).is_ok(),
            IntType::Int32 => i32::try_from(x).is_ok(),
            IntType::Int64 => true,
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
    /// The first count cell that does not fit its column's type, found when
    /// the cells were added: (feature, value).
    unfit: Option<(usize, i64)>,
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
            unfit: None,
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
            let start = slots.len();
            slots.extend(eval.outcomes[from..].iter().map(|o| o[i].cell));
            if let (Some(ty), None) = (self.count_types[i], self.unfit) {
                self.unfit = slots[start..]
                    .iter()
                    .find_map(|&c| match c {
                        Cell::Int(x) if !ty.holds(x) => Some(x),
                        _ => None,
                    })
                    .map(|x| (i, x));
            }
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
                let (values, valid) = gather(codes, slots, |c| match c {
                    Cell::Bool(b) => Some(b),
                    _ => None,
                });
                let values = BooleanChunked::from_slice(name.clone(), &values);
                let array = values.downcast_as_array().clone();
                Ok(BooleanChunked::with_chunk(name, array.with_validity(valid)).into_series())
            }
            Rule::Count(_) => {
                let int = |c: Cell| match c {
                    Cell::Int(x) => Some(x),
                    _ => None,
                };
                let ty = self.count_types[i].unwrap_or(IntType::Int64);
                if let Some((_, x)) = self.unfit.filter(|&(feature, _)| feature == i) {
                    polars_bail!(ComputeError: "count {x} of \"{}\" does not fit {:?}", f.output, ty);
                }
                // Every value fits `ty` (checked above), so `as` is exact.
                Ok(match ty {
                    IntType::UInt8 => {
                        numeric::<UInt8Type>(name, codes, slots, |c| int(c).map(|x| x as u8))
                    }
                    IntType::Int8 => {
                        numeric::<Int8Type>(name, codes, slots, |c| int(c).map(|x| x as i8))
                    }
                    IntType::UInt16 => {
                        numeric::<UInt16Type>(name, codes, slots, |c| int(c).map(|x| x as u16))
                    }
                    IntType::Int16 => {
                        numeric::<Int16Type>(name, codes, slots, |c| int(c).map(|x| x as i16))
                    }
                    IntType::Int32 => {
                        numeric::<Int32Type>(name, codes, slots, |c| int(c).map(|x| x as i32))
                    }
                    IntType::Int64 => numeric::<Int64Type>(name, codes, slots, int),
                })
            }
            Rule::Measure(m) => {
                let float = |c: Cell| match c {
                    Cell::Float(x) => Some(x),
                    _ => None,
                };
                Ok(match m.precision {
                    Precision::F64 => numeric::<Float64Type>(name, codes, slots, float),
                    Precision::F32 => {
                        numeric::<Float32Type>(name, codes, slots, |c| float(c).map(|x| x as f32))
                    }
                })
            }
            Rule::Label(l) => {
                let (ids, valid) = gather(codes, slots, |c| match c {
                    Cell::Label(x) => Some(x),
                    _ => None,
                });
                label_ids_series(name, &l.categories, ids, valid)
            }
        }
    }
}

/// Rows gathered per parallel task.
const GATHER_CHUNK: usize = 1 << 16;

/// Gather per-value cells to rows, in parallel chunks, in row order: each
/// row's value (`T::default()` where null) and, when some row is null, which
/// rows are valid, as a bitmap (one bit per row, written as the rows are
/// gathered). The result does not depend on the thread count.
fn gather<T: Copy + Default + Send + Sync>(
    codes: &[u32],
    slots: &[Cell],
    get: impl Fn(Cell) -> Option<T> + Sync,
) -> (Vec<T>, Option<Bitmap>) {
    let mut values = vec![T::default(); codes.len()];
    // GATHER_CHUNK is a multiple of 8: each chunk owns whole bytes.
    let mut valid = vec![0u8; codes.len().div_ceil(8)];
    let nulls: usize = values
        .par_chunks_mut(GATHER_CHUNK)
        .zip(valid.par_chunks_mut(GATHER_CHUNK / 8))
        .zip(codes.par_chunks(GATHER_CHUNK))
        .with_min_len(PARALLEL_MIN_ROWS / GATHER_CHUNK)
        .map(|((values, valid), codes)| {
            let mut nulls = 0;
            for (i, (v, &c)) in values.iter_mut().zip(codes).enumerate() {
                let cell = if c == NULL_CODE {
                    None
                } else {
                    get(slots[c as usize])
                };
                match cell {
                    Some(x) => {
                        *v = x;
                        valid[i / 8] |= 1 << (i % 8);
                    }
                    None => nulls += 1,
                }
            }
            nulls
        })
        .sum();
    let valid = (nulls > 0).then(|| Bitmap::from_u8_vec(valid, codes.len()));
    (values, valid)
}

/// A numeric column of the gathered cells.
fn numeric<T: PolarsNumericType>(
    name: PlSmallStr,
    codes: &[u32],
    slots: &[Cell],
    get: impl Fn(Cell) -> Option<T::Native> + Sync,
) -> Series {
    let (values, valid) = gather(codes, slots, get);
    ChunkedArray::<T>::from_vec_validity(name, values, valid).into_series()
}

/// An Enum column: its categories are the ruleset's labels, in order, so
/// that every data drop gets the same categories and codes.
pub fn label_series(
    name: PlSmallStr,
    categories: &[String],
    rows: Vec<Option<u32>>,
) -> PolarsResult<Series> {
    let valid = rows
        .iter()
        .any(Option::is_none)
        .then(|| rows.iter().map(Option::is_some).collect::<Bitmap>());
    let ids = rows.into_iter().map(Option::unwrap_or_default).collect();
    label_ids_series(name, categories, ids, valid)
}

/// [`label_series`] from category ids (any value where null) and, when some
/// row is null, which rows are valid.
fn label_ids_series(
    name: PlSmallStr,
    categories: &[String],
    ids: Vec<u32>,
    valid: Option<Bitmap>,
) -> PolarsResult<Series> {
    let frozen = FrozenCategories::new(categories.iter().map(String::as_str))?;
    let dtype = DataType::from_frozen_categories(frozen);
    // Every id indexes `categories`, so it fits the physical type polars
    // chose for them.
    let series = match dtype.cat_physical()? {
        CategoricalPhysical::U8 => {
            let ids = ids.into_iter().map(|x| x as u8).collect();
            let ids = UInt8Chunked::from_vec_validity(name, ids, valid.clone());
            CategoricalChunked::<Categorical8Type>::from_cats_and_dtype(ids, dtype).into_series()
        }
        CategoricalPhysical::U16 => {
            let ids = ids.into_iter().map(|x| x as u16).collect();
            let ids = UInt16Chunked::from_vec_validity(name, ids, valid.clone());
            CategoricalChunked::<Categorical16Type>::from_cats_and_dtype(ids, dtype).into_series()
        }
        CategoricalPhysical::U32 => {
            let ids = UInt32Chunked::from_vec_validity(name, ids, valid.clone());
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
