//! The batch pipeline: features for a table that arrives in pieces.
//!
//! A [`Describer`] keeps, for each described column, only its growing
//! vocabulary and the per-value results; every batch of rows is turned into
//! value codes, the values seen for the first time are normalized and
//! evaluated (in parallel), and the features are gathered for the batch's
//! rows. A whole table in memory is simply one batch, so both paths run the
//! same code. [`with_features`] puts a describer into a polars streaming
//! query, so that reading, describing, encoding and writing overlap.

use std::sync::{Arc, Mutex, OnceLock};

use polars::prelude::*;

use crate::encode::Encoder;
use crate::ruleset::Ruleset;
use crate::vocabulary::{GrowingVocabulary, Vocabulary};

/// A ruleset and the column it describes.
#[derive(Debug, Clone)]
pub struct Description {
    pub rules: Ruleset,
    pub column: String,
}

struct ColumnState {
    description: Description,
    vocab: GrowingVocabulary,
    /// Values `0..evaluated` have their cells in the encoder; the full
    /// outcomes are not kept (only `check` needs them).
    evaluated: usize,
    encoder: Encoder,
}

/// Turns batches of rows into feature columns, remembering what it has
/// already evaluated.
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
                ColumnState {
                    description,
                    evaluated: vocab.distinct(),
                    vocab,
                    encoder,
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

    /// The feature columns for one batch (its described columns must be text).
    pub fn features(&mut self, batch: &DataFrame) -> PolarsResult<Vec<Column>> {
        let mut out = Vec::new();
        for state in &mut self.columns {
            let text = batch.column(&state.description.column)?.str()?.clone();
            let rows: Vec<Option<&str>> = text.iter().collect();
            let codes = state.vocab.codes_for(&rows);
            if state.vocab.distinct() > state.evaluated {
                let fresh = state
                    .description
                    .rules
                    .evaluate_all(&state.vocab.values[state.evaluated..]);
                state.encoder.add_values(&fresh, 0);
                state.evaluated = state.vocab.distinct();
            }
            out.extend(state.encoder.encode(&state.description.rules, &codes)?);
        }
        Ok(out)
    }

    /// Give back the descriptions.
    pub fn into_descriptions(self) -> Vec<Description> {
        self.columns.into_iter().map(|s| s.description).collect()
    }

    /// Per column: its description and its vocabulary so far (without row
    /// codes).
    pub fn results(&self) -> impl Iterator<Item = (&Description, Vocabulary)> {
        self.columns
            .iter()
            .map(|s| (&s.description, s.vocab.to_vocabulary()))
    }
}

/// `lazy` with each morsel passed through `finish(morsel, features)`, the
/// features being those `describer` computes for the morsel. Run with
/// polars' streaming engine, morsels are read, finished, encoded and
/// written in parallel, and a sink keeps them in row order; the describer
/// itself serves one morsel at a time. The output schema is what `finish`
/// makes of an empty morsel. The second result holds the message of the
/// first error raised while describing or finishing a morsel, so that a
/// failed query can be told apart from a failed read.
pub fn with_features<F>(
    lazy: LazyFrame,
    describer: Arc<Mutex<Describer>>,
    finish: F,
) -> PolarsResult<(LazyFrame, Arc<OnceLock<String>>)>
where
    F: Fn(DataFrame, Vec<Column>) -> PolarsResult<DataFrame> + Send + Sync + 'static,
{
    let features = move |describer: &Mutex<Describer>, morsel: &DataFrame| match describer.lock() {
        Ok(mut d) => d.features(morsel),
        Err(_) => polars_bail!(ComputeError: "describing a batch failed before"),
    };
    let mut lazy = lazy;
    let empty = DataFrame::empty_with_schema(lazy.collect_schema()?.as_ref());
    let schema = finish(empty.clone(), features(&describer, &empty)?)?
        .schema()
        .clone();
    let failure = Arc::new(OnceLock::new());
    let first_failure = failure.clone();
    let udf = move |morsel: DataFrame| {
        features(&describer, &morsel)
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
