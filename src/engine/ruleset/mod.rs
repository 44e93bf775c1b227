//! Rulesets: how a column becomes features.
//!
//! A ruleset is read from TOML ([`Ruleset::from_path`], [`Ruleset::from_toml`]),
//! checked as a whole, and compiled once. The format is documented in
//! `docs/rulesets.md`; `spec.rs` mirrors it key by key and `compile.rs`
//! checks it and builds the matchers.

mod compile;
pub mod spec;

use std::path::Path;

use hashbrown::{HashMap, HashSet};

use crate::error::{Error, RulesetError};
use crate::normalize::Normalizer;
use crate::numbers::DecimalMark;
use crate::pattern::{Literals, MatchError, Matcher, Pattern};
pub use spec::{Combine, Precision};

/// A compiled ruleset for one source column.
#[derive(Debug, Clone)]
pub struct Ruleset {
    /// Where the ruleset came from (a path, or `<inline>`).
    pub file: String,
    /// The source column named in the file, if any.
    pub column: Option<String>,
    pub prefix: String,
    pub decimal: DecimalMark,
    pub normalizer: Normalizer,
    /// Normalized whole values that mean "no information": every feature
    /// of such a value is null.
    pub placeholders: HashSet<String>,
    /// A pattern that marks a whole normalized value as a placeholder.
    pub placeholder_pattern: Option<Pattern>,
    /// Features in the order they are declared in the file.
    pub features: Vec<Feature>,
    pub examples: Vec<Example>,
    /// Things in the file that load but are probably not what was meant.
    pub warnings: Vec<RulesetWarning>,
}

/// A likely slip in a ruleset: it loads, but probably does not do what its
/// author meant (an `any` literal that looks like a pattern).
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize)]
pub struct RulesetWarning {
    pub file: String,
    pub line: usize,
    pub rule: String,
    pub message: String,
}

impl std::fmt::Display for RulesetWarning {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "{}:{}: rule {}: {}",
            self.file, self.line, self.rule, self.message
        )
    }
}

/// What a normalized value is, before any rule looks at it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ValueKind {
    /// A value the rules describe.
    Considered,
    /// Empty after normalization.
    Blank,
    /// One of the ruleset's `placeholders`, or matched by its
    /// `placeholder_pattern`.
    Placeholder,
}

/// `unless_any` / `unless_pattern`: where either matches, the rule or case
/// does not fire.
#[derive(Debug, Clone, Default)]
pub struct Unless {
    pub literals: Option<Literals>,
    pub pattern: Option<Pattern>,
}

impl Unless {
    /// Whether the value holds one of the exceptions.
    pub fn matches(&self, text: &str) -> Result<bool, MatchError> {
        if self
            .literals
            .as_ref()
            .is_some_and(|l| l.find(text).is_some())
        {
            return Ok(true);
        }
        match &self.pattern {
            Some(p) => p.is_match(text),
            None => Ok(false),
        }
    }
}

/// One output column and the rule that fills it.
#[derive(Debug, Clone)]
pub struct Feature {
    /// The name as written in the ruleset.
    pub name: String,
    /// The output column name: prefix + name.
    pub output: String,
    /// 1-based line of the rule's `name` in the file.
    pub line: usize,
    pub rule: Rule,
}

/// The four rule kinds.
#[derive(Debug, Clone)]
pub enum Rule {
    Flag(FlagRule),
    Count(CountRule),
    Measure(MeasureRule),
    Label(LabelRule),
}

impl Rule {
    /// The kind's name as written in the ruleset (`[[flag]]` etc.).
    pub fn kind(&self) -> &'static str {
        match self {
            Rule::Flag(_) => "flag",
            Rule::Count(_) => "count",
            Rule::Measure(_) => "measure",
            Rule::Label(_) => "label",
        }
    }
}

#[derive(Debug, Clone)]
pub struct FlagRule {
    pub matcher: Matcher,
    pub unless: Option<Unless>,
}

#[derive(Debug, Clone)]
pub struct CountRule {
    pub pattern: Pattern,
    pub range: Option<(i64, i64)>,
    pub missing: Option<i64>,
    pub unless: Option<Unless>,
}

#[derive(Debug, Clone)]
pub struct MeasureRule {
    pub pattern: Pattern,
    /// The target unit every value is converted to.
    pub unit: String,
    /// Unit spelling (normalized) -> factor to the target unit.
    pub units: Vec<(String, f64)>,
    /// Capture group index (0-based into `Found::groups`) candidates for the number.
    pub number_groups: Vec<usize>,
    /// Capture group candidates for the unit.
    pub unit_groups: Vec<usize>,
    pub precision: Precision,
    /// How several matches in one value are read.
    pub combine: Combine,
    pub range: Option<(f64, f64)>,
    pub missing: Option<f64>,
    pub unless: Option<Unless>,
}

impl MeasureRule {
    /// The factor for a unit as captured; `None` for an unknown unit.
    pub fn factor(&self, unit: &str) -> Option<f64> {
        let unit = unit_key(unit);
        self.units.iter().find(|(u, _)| u == unit).map(|(_, f)| *f)
    }
}

/// A unit spelling as compared: trimmed, without a trailing period, so
/// that `cc.` is `cc` and `h.p.` (a spelling) meets `h.p` (a capture that
/// stopped before the period).
pub fn unit_key(spelling: &str) -> &str {
    spelling.trim().trim_end_matches('.')
}

#[derive(Debug, Clone)]
pub struct LabelRule {
    /// The categories, in the order the output column declares them.
    pub categories: Vec<String>,
    pub default: Option<u32>,
    /// Normalized value -> category index, consulted before the cases.
    pub map: HashMap<String, u32>,
    pub cases: Vec<LabelCase>,
}

#[derive(Debug, Clone)]
pub struct LabelCase {
    pub label: u32,
    pub matcher: Matcher,
    pub unless: Option<Unless>,
}

/// A `[[example]]`: a value and the features it must give.
#[derive(Debug, Clone)]
pub struct Example {
    pub value: String,
    pub line: usize,
    /// (feature index, expected value)
    pub expect: Vec<(usize, Expected)>,
}

/// An expected feature value in an example.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
#[serde(untagged)]
pub enum Expected {
    Bool(bool),
    Int(i64),
    Float(f64),
    Text(String),
}

impl Ruleset {
    /// Read and compile a ruleset file.
    pub fn from_path(path: &Path) -> Result<Ruleset, Error> {
        let text = Ruleset::read_text(path)?;
        Ok(Ruleset::from_toml(&text, &path.display().to_string())?)
    }

    /// The text of a ruleset file, read up to 16 MiB (a ruleset is a short
    /// TOML file, and a path like /dev/zero must not fill memory).
    pub fn read_text(path: &Path) -> Result<String, Error> {
        use std::io::Read;
        const MAX_RULESET_BYTES: u64 = 16 << 20;
        let refused = |message: String| Error::Input {
            path: path.to_owned(),
            message,
        };
        let file = std::fs::File::open(path).map_err(|e| {
            refused(format!(
                "cannot read the ruleset: {e}; check the path given to --rules"
            ))
        })?;
        let mut bytes = Vec::new();
        file.take(MAX_RULESET_BYTES + 1)
            .read_to_end(&mut bytes)
            .map_err(|e| refused(format!("cannot read the ruleset: {e}")))?;
        if bytes.len() as u64 > MAX_RULESET_BYTES {
            return Err(refused(format!(
                "longer than {} MiB, so not a ruleset; give the TOML file of the rules",
                MAX_RULESET_BYTES >> 20
            )));
        }
        String::from_utf8(bytes).map_err(|e| {
            refused(format!(
                "the ruleset is not UTF-8 text (byte {})",
                e.utf8_error().valid_up_to()
            ))
        })
    }

    /// Compile a ruleset from TOML text; `file` names it in errors.
    ///
    /// ```
    /// let rules = descry::Ruleset::from_toml(r#"
    ///     [[flag]]
    ///     name = "turbo"
    ///     any = ["turbo"]
    /// "#, "<inline>").unwrap();
    /// assert_eq!(rules.features[0].output, "turbo");
    /// ```
    pub fn from_toml(text: &str, file: &str) -> Result<Ruleset, RulesetError> {
        compile::compile(text, file)
    }

    /// What a normalized value is: blank, a placeholder, or a value the
    /// rules describe.
    pub fn kind_of(&self, normalized: &str) -> ValueKind {
        if normalized.is_empty() {
            return ValueKind::Blank;
        }
        let pattern = || {
            self.placeholder_pattern
                .as_ref()
                .is_some_and(|p| p.is_match(normalized).unwrap_or(false))
        };
        if self.placeholders.contains(normalized) || pattern() {
            ValueKind::Placeholder
        } else {
            ValueKind::Considered
        }
    }

    /// The index of a feature by its name or its output name.
    pub fn feature_index(&self, name: &str) -> Option<usize> {
        self.features
            .iter()
            .position(|f| f.name == name || f.output == name)
    }
}
