//! What a ruleset does to one value, rule by rule: the structure behind
//! `descry explain --format json` and the Python package's
//! `Ruleset.explain`.

use serde::Serialize;

use super::cell_json;
use crate::evaluate::{Issue, Step};
use crate::ruleset::{Ruleset, ValueKind};

/// One value explained.
#[derive(Debug, Serialize)]
pub struct Explained {
    pub value: String,
    pub normalized: String,
    /// `considered`, `blank` or `placeholder`.
    pub kind: &'static str,
    pub features: Vec<FeatureTrace>,
}

/// What one rule did to the value.
#[derive(Debug, Serialize)]
pub struct FeatureTrace {
    pub output: String,
    pub kind: &'static str,
    pub fired: bool,
    pub value: serde_json::Value,
    pub issue: Option<Issue>,
    pub steps: Vec<Step>,
}

/// The trace of every rule on `value` (only the rules that fired, when
/// `fired_only`).
pub fn explain(rules: &Ruleset, value: &str, fired_only: bool) -> Explained {
    let normalized = rules.normalizer.apply(value);
    let features = rules
        .features
        .iter()
        .zip(rules.explain(&normalized))
        .filter(|(_, t)| !fired_only || t.outcome.fired)
        .map(|(f, t)| FeatureTrace {
            output: f.output.clone(),
            kind: f.rule.kind(),
            fired: t.outcome.fired,
            value: cell_json(f, t.outcome.cell),
            issue: t.outcome.issue,
            steps: t.steps,
        })
        .collect();
    let kind = match rules.kind_of(&normalized) {
        ValueKind::Considered => "considered",
        ValueKind::Blank => "blank",
        ValueKind::Placeholder => "placeholder",
    };
    Explained {
        value: value.to_owned(),
        kind,
        normalized,
        features,
    }
}
