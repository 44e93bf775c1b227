//! Encoding: per-value outcomes become row columns in compact types.
//!
//! Each feature is first laid out over the vocabulary (one slot per distinct
//! value), then gathered to rows through the vocabulary's codes. Null rows
//! give null features.

use polars::prelude::*;
use polars_arrow::array::BooleanArray;
use polars_arrow::bitmap::Bitmap;
use rayon::prelude::*;

use crate::evaluate::{Cell, Evaluation};
use crate::ruleset::{Feature, Precision, Rule, Ruleset};
use crate::vocabulary::{Vocabulary, PARALLEL_MIN_ROWS};

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
///
/// Each feature keeps, per value, its cell's native bits in one 64-bit word
/// and a validity byte. Slot 0 stands for null rows and value `c` sits in
/// slot `c + 1`, so that [`NULL_CODE`](crate::vocabulary::NULL_CODE)
/// (`u32::MAX`) wraps to slot 0: the gather is one indexed load per row,
/// without a branch.
#[derive(Debug, Clone)]
pub struct Encoder {
    count_types: Vec<Option<IntType>>,
    /// The Enum type of each label feature, made once.
    label_types: Vec<Option<DataType>>,
    /// `words[feature][slot]`: an integer or label id as `i64`/`u32` bits,
    /// a measure as `f64` bits, a flag as 0 or 1; 0 where null.
    words: Vec<Vec<u64>>,
    /// `valid[feature][slot]`: 1 where the cell is not null.
    valid: Vec<Vec<u8>>,
    /// The first count cell that does not fit its column's type, found when
    /// the cells were added: (feature, value).
    unfit: Option<(usize, i64)>,
}

/// The slot of a value code in an [`Encoder`]'s tables.
#[inline(always)]
fn slot(code: u32) -> usize {
    code.wrapping_add(1) as usize
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
        let label_types = rules
            .features
            .iter()
            .map(|f| match &f.rule {
                Rule::Label(l) => label_type(&l.categories).ok(),
                _ => None,
            })
            .collect();
        let n = rules.features.len();
        Encoder {
            count_types,
            label_types,
            words: vec![vec![0]; n],
            valid: vec![vec![0]; n],
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
        let cells = &eval.outcomes[from..];
        for (i, (words, valid)) in self.words.iter_mut().zip(&mut self.valid).enumerate() {
            for outcome in cells {
                let (word, ok) = match outcome[i].cell {
                    Cell::Null => (0, 0),
                    Cell::Bool(b) => (b as u64, 1),
                    Cell::Int(x) => (x as u64, 1),
                    Cell::Float(x) => (x.to_bits(), 1),
                    Cell::Label(x) => (x as u64, 1),
                };
                words.push(word);
                valid.push(ok);
            }
            if let (Some(ty), None) = (self.count_types[i], self.unfit) {
                self.unfit = cells
                    .iter()
                    .find_map(|o| match o[i].cell {
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
        let (words, valid) = (self.words[i].as_slice(), self.valid[i].as_slice());
        let gathered = Gathered {
            codes,
            words,
            valid,
        };
        match &f.rule {
            Rule::Flag(_) => {
                let values = gathered.bits(|w| w as u8);
                let validity = gathered.validity();
                let array = BooleanArray::new(ArrowDataType::Boolean, values, validity);
                Ok(BooleanChunked::with_chunk(name, array).into_series())
            }
            Rule::Count(_) => {
                let ty = self.count_types[i].unwrap_or(IntType::Int64);
                if let Some((_, x)) = self.unfit.filter(|&(feature, _)| feature == i) {
                    polars_bail!(ComputeError: "count {x} of \"{}\" does not fit {:?}", f.output, ty);
                }
                // Every value fits `ty` (checked above), so `as` is exact.
                Ok(match ty {
                    IntType::UInt8 => gathered.numeric::<UInt8Type>(name, |w| w as u8),
                    IntType::Int8 => gathered.numeric::<Int8Type>(name, |w| w as i8),
                    IntType::UInt16 => gathered.numeric::<UInt16Type>(name, |w| w as u16),
                    IntType::Int16 => gathered.numeric::<Int16Type>(name, |w| w as i16),
                    IntType::Int32 => gathered.numeric::<Int32Type>(name, |w| w as i32),
                    IntType::Int64 => gathered.numeric::<Int64Type>(name, |w| w as i64),
                })
            }
            Rule::Measure(m) => Ok(match m.precision {
                Precision::F64 => gathered.numeric::<Float64Type>(name, f64::from_bits),
                Precision::F32 => {
                    gathered.numeric::<Float32Type>(name, |w| f64::from_bits(w) as f32)
                }
            }),
            Rule::Label(l) => {
                let dtype = match &self.label_types[i] {
                    Some(dtype) => dtype.clone(),
                    None => label_type(&l.categories)?,
                };
                // SAFETY (for the unchecked constructors): every valid id is
                // an index into the label's categories, as evaluation gives
                // it; a null row or null cell holds id 0 under a null bit.
                let series = match dtype.cat_physical()? {
                    CategoricalPhysical::U8 => unsafe {
                        gathered.categorical::<Categorical8Type>(name, dtype, |w| w as u8)
                    },
                    CategoricalPhysical::U16 => unsafe {
                        gathered.categorical::<Categorical16Type>(name, dtype, |w| w as u16)
                    },
                    CategoricalPhysical::U32 => unsafe {
                        gathered.categorical::<Categorical32Type>(name, dtype, |w| w as u32)
                    },
                };
                Ok(series)
            }
        }
    }
}

/// Rows gathered per parallel task (a multiple of 8, so that each task
/// owns whole bytes of a bitmap).
const GATHER_CHUNK: usize = 1 << 16;

/// One feature's per-value tables and the rows' codes, ready to gather.
/// Rows are gathered in parallel chunks, in row order, so the result does
/// not depend on the thread count.
struct Gathered<'a> {
    codes: &'a [u32],
    words: &'a [u64],
    valid: &'a [u8],
}

impl Gathered<'_> {
    /// Each row's value, converted from its word (whatever the word holds
    /// where the row is null).
    fn values<T: Copy + Default + Send + Sync>(&self, convert: impl Fn(u64) -> T + Sync) -> Vec<T> {
        let mut values = vec![T::default(); self.codes.len()];
        values
            .par_chunks_mut(GATHER_CHUNK)
            .zip(self.codes.par_chunks(GATHER_CHUNK))
            .with_min_len(PARALLEL_MIN_ROWS / GATHER_CHUNK)
            .for_each(|(values, codes)| {
                for (v, &c) in values.iter_mut().zip(codes) {
                    *v = convert(self.words[slot(c)]);
                }
            });
        values
    }

    /// One bit per row: `bit` of its word (0 or 1).
    fn bits(&self, bit: impl Fn(u64) -> u8 + Sync) -> Bitmap {
        self.pack(|s| bit(self.words[s])).0
    }

    /// Which rows are valid, when some row is not.
    fn validity(&self) -> Option<Bitmap> {
        let (valid, set) = self.pack(|s| self.valid[s]);
        (set < self.codes.len()).then_some(valid)
    }

    /// One bit per row, `bit` of its slot, and how many are set.
    fn pack(&self, bit: impl Fn(usize) -> u8 + Sync) -> (Bitmap, usize) {
        let mut bytes = vec![0u8; self.codes.len().div_ceil(8)];
        let set: usize = bytes
            .par_chunks_mut(GATHER_CHUNK / 8)
            .zip(self.codes.par_chunks(GATHER_CHUNK))
            .with_min_len(PARALLEL_MIN_ROWS / GATHER_CHUNK)
            .map(|(bytes, codes)| {
                let mut set = 0;
                for (byte, codes) in bytes.iter_mut().zip(codes.chunks(8)) {
                    let mut b = 0u8;
                    for (k, &c) in codes.iter().enumerate() {
                        b |= (bit(slot(c)) & 1) << k;
                    }
                    set += b.count_ones() as usize;
                    *byte = b;
                }
                set
            })
            .sum();
        (Bitmap::from_u8_vec(bytes, self.codes.len()), set)
    }

    fn chunked<T: PolarsNumericType>(
        &self,
        name: PlSmallStr,
        convert: impl Fn(u64) -> T::Native + Sync,
    ) -> ChunkedArray<T> {
        ChunkedArray::<T>::from_vec_validity(name, self.values(convert), self.validity())
    }

    /// A label column: category ids of `T`'s width under `dtype`.
    ///
    /// # Safety
    /// Every valid id must index `dtype`'s categories.
    unsafe fn categorical<T: PolarsCategoricalType>(
        &self,
        name: PlSmallStr,
        dtype: DataType,
        convert: impl Fn(u64) -> T::Native + Sync,
    ) -> Series {
        let ids = self.chunked::<T::PolarsPhysical>(name, convert);
        // SAFETY: the caller's promise.
        unsafe { CategoricalChunked::<T>::from_cats_and_dtype_unchecked(ids, dtype).into_series() }
    }

    fn numeric<T: PolarsNumericType>(
        &self,
        name: PlSmallStr,
        convert: impl Fn(u64) -> T::Native + Sync,
    ) -> Series {
        self.chunked::<T>(name, convert).into_series()
    }
}

/// The Enum type of a label: its categories are the ruleset's labels, in
/// order, so that every data drop gets the same categories and codes.
fn label_type(categories: &[String]) -> PolarsResult<DataType> {
    let frozen = FrozenCategories::new(categories.iter().map(String::as_str))?;
    Ok(DataType::from_frozen_categories(frozen))
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
}
