//! The batch pipeline: features for a table that arrives in pieces.
//!
//! A [`Describer`] keeps, for each described column, only its growing
//! vocabulary and the per-value results; every batch of rows is turned into
//! value codes, the values seen for the first time are normalized and
//! evaluated (in parallel), and the features are gathered for the batch's
//! rows. A whole table in memory is simply one batch, so both paths run the
//! same code. [`with_features`] puts a describer into a polars streaming
//! query, so that reading, describing, encoding and writing overlap.

use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::{Arc, OnceLock, RwLock, RwLockReadGuard, RwLockWriteGuard};

use polars::prelude::*;

use crate::encode::Encoder;
use crate::read::text_of;
use crate::ruleset::Ruleset;
use crate::vocabulary::{GrowingVocabulary, NULL_CODE};

/// A ruleset and the column it describes.
#[derive(Debug, Clone)]
pub struct Description {
    pub rules: Ruleset,
    pub column: String,
}

struct ColumnState {
    description: Description,
    /// The vocabulary and the cells of its values; written only when a
    /// batch brings values not seen before.
    known: RwLock<Known>,
    rows: AtomicU64,
    null_rows: AtomicU64,
}

struct Known {
    vocab: GrowingVocabulary,
    /// Values `0..evaluated` have their cells in the encoder; the full
    /// outcomes are not kept (only `check` needs them).
    evaluated: usize,
    encoder: Encoder,
}

impl ColumnState {
    fn read(&self) -> PolarsResult<RwLockReadGuard<'_, Known>> {
        self.known.read().map_err(|_| poisoned())
    }

    fn write(&self) -> PolarsResult<RwLockWriteGuard<'_, Known>> {
        self.known.write().map_err(|_| poisoned())
    }
}

fn poisoned() -> PolarsError {
    polars_err!(ComputeError: "describing a batch failed before")
}

/// Rows of one described column seen so far.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Tally {
    pub rows: u64,
    pub null_rows: u64,
    pub distinct: usize,
}

/// Turns batches of rows into feature columns, remembering what it has
/// already evaluated. Batches may be described from several threads at
/// once: looking values up and gathering their cells only read what is
/// known, and values seen for the first time are added under a write lock.
pub struct Describer {
    columns: Vec<ColumnState>,
}

impl Describer {
    /// `full_vocabularies[i]`, when given, is the complete vocabulary of
    /// column `i` (from a first pass over the file): it fixes the types of
    /// counts that have no `range`, and its values are evaluated up front.
    pub fn new(
        descriptions: Vec<Description>,
        full_vocabularies: Vec<Option<GrowingVocabulary>>,
    ) -> Describer {
        let columns = descriptions
            .into_iter()
            .zip(full_vocabularies.into_iter().chain(std::iter::repeat(None)))
            .map(|(description, full)| {
                let mut vocab = full.unwrap_or_default();
                vocab.reset_counts();
                let eval = description.rules.evaluate_all(&vocab.values);
                let mut encoder = Encoder::new(&description.rules, &eval);
                encoder.add_values(&eval, 0);
                let known = Known {
                    evaluated: vocab.distinct(),
                    vocab,
                    encoder,
                };
                ColumnState {
                    description,
                    known: RwLock::new(known),
                    rows: AtomicU64::new(0),
                    null_rows: AtomicU64::new(0),
                }
            })
            .collect();
        Describer { columns }
    }

    /// Whether the rulesets fix every output type, so that one pass over
    /// the file is enough.
    pub fn one_pass(descriptions: &[Description]) -> bool {
        descriptions
            .iter()
            .all(|d| Encoder::types_fixed_by_ruleset(&d.rules))
    }

    /// The feature columns for one batch (a described column that is not
    /// text is described by its text rendering).
    pub fn features(&self, batch: &DataFrame) -> PolarsResult<Vec<Column>> {
        let mut out = Vec::new();
        for state in &self.columns {
            let rules = &state.description.rules;
            let text = text_of(batch.column(&state.description.column)?)?;
            // Chunk by chunk, so that a table of many chunks is not copied.
            let chunks: Vec<_> = text.downcast_iter().collect();
            let mut codes = Vec::with_capacity(text.len());
            let mut unknown = false;
            {
                let known = state.read()?;
                for chunk in &chunks {
                    let (c, u) = known.vocab.known_codes_of(chunk.len(), |i| chunk.get(i));
                    codes.extend(c);
                    unknown |= u;
                }
            }
            if unknown {
                let mut known = state.write()?;
                let known = &mut *known;
                // Another batch may have added some of them meanwhile.
                let mut from = 0;
                for chunk in &chunks {
                    let to = from + chunk.len();
                    known
                        .vocab
                        .add_unknown_of(|i| chunk.get(i), &mut codes[from..to]);
                    from = to;
                }
                if known.vocab.distinct() > known.evaluated {
                    let fresh = rules.evaluate_all(&known.vocab.values[known.evaluated..]);
                    known.encoder.add_values(&fresh, 0);
                    known.evaluated = known.vocab.distinct();
                }
            }
            let nulls = codes.iter().filter(|&&c| c == NULL_CODE).count();
            state.rows.fetch_add(codes.len() as u64, Ordering::Relaxed);
            state.null_rows.fetch_add(nulls as u64, Ordering::Relaxed);
            out.extend(state.read()?.encoder.encode(rules, &codes)?);
        }
        Ok(out)
    }

    /// Per column: its description and the rows seen so far.
    pub fn results(&self) -> impl Iterator<Item = (&Description, Tally)> {
        self.columns.iter().map(|s| {
            let tally = Tally {
                rows: s.rows.load(Ordering::Relaxed),
                null_rows: s.null_rows.load(Ordering::Relaxed),
                distinct: s.read().map(|k| k.vocab.distinct()).unwrap_or(0),
            };
            (&s.description, tally)
        })
    }
}

/// The feature columns of a whole table held in memory, computed as one
/// batch: the route of the Python package. A count with no `range` is typed
/// by the column's whole vocabulary, as `apply`'s first pass types it.
pub fn features_in_memory(
    table: &DataFrame,
    descriptions: Vec<Description>,
) -> PolarsResult<Vec<Column>> {
    let full = if Describer::one_pass(&descriptions) {
        Vec::new()
    } else {
        descriptions
            .iter()
            .map(|d| {
                let text = text_of(table.column(&d.column)?)?;
                let rows: Vec<Option<&str>> = text.iter().collect();
                let mut vocab = GrowingVocabulary::default();
                vocab.codes_for(&rows);
                Ok(Some(vocab))
            })
            .collect::<PolarsResult<_>>()?
    };
    Describer::new(descriptions, full).features(table)
}

/// The lookup table of a column: one row per distinct non-null value of
/// `vocab`, with the columns `value`, `rows` and the features of every
/// ruleset, typed as `apply` types them (a count with no `range` is typed
/// by the values of the whole vocabulary, as `apply`'s first pass does).
/// Joined to the rows on `value`, it gives what `apply` writes.
pub fn lookup_table(vocab: &crate::Vocabulary, rulesets: &[&Ruleset]) -> PolarsResult<DataFrame> {
    let evaluations: Vec<crate::Evaluation> = rulesets
        .iter()
        .map(|r| r.evaluate_all(&vocab.values))
        .collect();
    let pairs: Vec<(&Ruleset, &crate::Evaluation)> =
        rulesets.iter().copied().zip(&evaluations).collect();
    lookup_table_evaluated(vocab, &pairs)
}

/// [`lookup_table`] from evaluations already made: each ruleset with its
/// evaluation of `vocab.values`, in order.
pub fn lookup_table_evaluated(
    vocab: &crate::Vocabulary,
    evaluated: &[(&Ruleset, &crate::Evaluation)],
) -> PolarsResult<DataFrame> {
    let height = vocab.values.len();
    let codes: Vec<u32> = (0..height as u32).collect();
    let mut out = vec![
        Column::new(LOOKUP_VALUE.into(), &vocab.values),
        Column::new(LOOKUP_ROWS.into(), &vocab.counts),
    ];
    for (rules, eval) in evaluated {
        let mut encoder = Encoder::new(rules, eval);
        encoder.add_values(eval, 0);
        out.extend(encoder.encode(rules, &codes)?);
    }
    DataFrame::new(height, out)
}

/// The columns of a lookup table besides the features.
pub const LOOKUP_VALUE: &str = "value";
pub const LOOKUP_ROWS: &str = "rows";

/// `lazy` with each morsel passed through `finish(morsel, features)`, the
/// features being those `describer` computes for the morsel. Run with
/// polars' streaming engine, morsels are read, finished, encoded and
/// written in parallel, and a sink keeps them in row order. The output
/// schema is what `finish` makes of an empty morsel. The second result
/// holds the message of the first error raised while describing or
/// finishing a morsel, so that a failed query can be told apart from a
/// failed read.
pub fn with_features<F>(
    lazy: LazyFrame,
    describer: Arc<Describer>,
    finish: F,
) -> PolarsResult<(LazyFrame, Arc<OnceLock<String>>)>
where
    F: Fn(DataFrame, Vec<Column>) -> PolarsResult<DataFrame> + Send + Sync + 'static,
{
    let mut lazy = lazy;
    let empty = DataFrame::empty_with_schema(lazy.collect_schema()?.as_ref());
    let schema = finish(empty.clone(), describer.features(&empty)?)?
        .schema()
        .clone();
    let failure = Arc::new(OnceLock::new());
    let first_failure = failure.clone();
    let udf = move |morsel: DataFrame| {
        describer
            .features(&morsel)
            .and_then(|columns| finish(morsel, columns))
            .inspect_err(|e| {
                let _ = first_failure.set(e.to_string());
            })
    };
    let lazy = lazy.map(
        udf,
        OptFlags::STREAMING,
        Some(Arc::new(move |_: &Schema| Ok(schema.clone()))),
        Some("descry features"),
    );
    Ok((lazy, failure))
}
