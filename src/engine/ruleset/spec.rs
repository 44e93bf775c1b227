//! The ruleset file as written: serde structures that mirror the TOML.
//! Nothing here is checked beyond types and key names; `compile.rs` turns a
//! [`RulesetSpec`] into a usable [`crate::Ruleset`].

use indexmap::IndexMap;
use serde::Deserialize;
use toml::Spanned;

use crate::normalize::Normalizer;
use crate::numbers::DecimalMark;

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RulesetSpec {
    pub column: Option<String>,
    #[serde(default)]
    pub prefix: String,
    #[serde(default)]
    pub decimal: DecimalMark,
    pub description: Option<String>,
    /// Normalized whole values that mean "no information".
    pub placeholders: Option<Vec<String>>,
    /// A pattern that marks a whole normalized value as a placeholder.
    pub placeholder_pattern: Option<String>,
    #[serde(default)]
    pub normalize: Normalizer,
    #[serde(default)]
    pub flag: Vec<FlagSpec>,
    #[serde(default)]
    pub count: Vec<CountSpec>,
    #[serde(default)]
    pub measure: Vec<MeasureSpec>,
    #[serde(default)]
    pub label: Vec<LabelSpec>,
    #[serde(default)]
    pub example: Vec<ExampleSpec>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FlagSpec {
    pub name: Spanned<String>,
    pub description: Option<String>,
    pub any: Option<Vec<String>>,
    pub pattern: Option<String>,
    #[serde(default)]
    pub fancy: bool,
    pub unless_any: Option<Vec<String>>,
    pub unless_pattern: Option<String>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CountSpec {
    pub name: Spanned<String>,
    pub description: Option<String>,
    pub pattern: Option<String>,
    #[serde(default)]
    pub fancy: bool,
    pub range: Option<[i64; 2]>,
    pub missing: Option<i64>,
    pub unless_any: Option<Vec<String>>,
    pub unless_pattern: Option<String>,
}

#[derive(Debug, Deserialize, Clone, Copy, PartialEq, Eq, Default)]
#[serde(rename_all = "lowercase")]
pub enum Precision {
    #[default]
    F32,
    F64,
}

/// How a measure reads a value with several matches of its pattern.
#[derive(Debug, Deserialize, Clone, Copy, PartialEq, Eq, Default)]
#[serde(rename_all = "lowercase")]
pub enum Combine {
    /// The first match only.
    #[default]
    First,
    /// The sum of every match (`5 ft 6 in`, `2 h 30 min`).
    Sum,
    /// The smallest of every match.
    Min,
    /// The largest of every match (`208-230/460v`).
    Max,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MeasureSpec {
    pub name: Spanned<String>,
    pub description: Option<String>,
    pub pattern: Option<String>,
    #[serde(default)]
    pub fancy: bool,
    pub unit: Option<String>,
    pub units: Option<IndexMap<Spanned<String>, f64>>,
    #[serde(default)]
    pub precision: Precision,
    #[serde(default)]
    pub combine: Combine,
    pub range: Option<[f64; 2]>,
    pub missing: Option<f64>,
    pub unless_any: Option<Vec<String>>,
    pub unless_pattern: Option<String>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LabelSpec {
    pub name: Spanned<String>,
    pub description: Option<String>,
    pub default: Option<String>,
    pub categories: Option<Vec<String>>,
    #[serde(default)]
    pub map: IndexMap<Spanned<String>, String>,
    #[serde(default)]
    pub case: Vec<CaseSpec>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CaseSpec {
    pub label: Option<Spanned<String>>,
    pub any: Option<Vec<String>>,
    pub pattern: Option<String>,
    #[serde(default)]
    pub fancy: bool,
    pub unless_any: Option<Vec<String>>,
    pub unless_pattern: Option<String>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ExampleSpec {
    pub value: Spanned<String>,
    pub expect: IndexMap<String, toml::Value>,
}
