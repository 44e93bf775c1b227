//! Running a ruleset on one normalized value.
//!
//! [`Ruleset::evaluate`] gives each feature's value and whether its rule
//! fired; [`Ruleset::explain`] gives the same with every step shown. Both go
//! through the same functions, so what `explain` shows is what `apply` does.

use std::ops::Range;

use serde::Serialize;

use crate::numbers::{parse_integer, parse_number};
use crate::pattern::{Found, MatchError, Pattern};
use crate::ruleset::{
    Combine, CountRule, Feature, LabelRule, MeasureRule, Precision, Rule, Ruleset, Unless,
    ValueKind,
};

/// A feature's value for one distinct value.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Cell {
    Null,
    Bool(bool),
    Int(i64),
    Float(f64),
    /// Index into the label rule's categories.
    Label(u32),
}

/// Something worth reporting about one value and one rule.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Issue {
    /// A count or measure outside the rule's `range`.
    OutOfRange {
        value: f64,
    },
    /// Captured text that is not a number (or not a whole number, for counts).
    Unparsable {
        text: String,
    },
    /// A measure's unit that is not in `units`.
    UnknownUnit {
        unit: String,
    },
    /// A measure whose value is not a finite number in its column's type
    /// (a 300-digit number, or one beyond Float32's range).
    NotFinite {
        text: String,
    },
    /// A fancy pattern gave up; the feature is null for this value.
    BacktrackLimit,
    MatchFailed {
        message: String,
    },
}

impl std::fmt::Display for Issue {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Issue::OutOfRange { value } => write!(f, "{value} is out of range"),
            Issue::Unparsable { text } => write!(f, "cannot read {text:?} as a number"),
            Issue::UnknownUnit { unit } => write!(f, "unit {unit:?} is not in `units`"),
            Issue::NotFinite { text } => {
                write!(f, "{text:?} gives a value too large for the column's type")
            }
            Issue::BacktrackLimit => write!(f, "backtrack limit reached"),
            Issue::MatchFailed { message } => write!(f, "{message}"),
        }
    }
}

/// One feature's outcome on one value.
#[derive(Debug, Clone, PartialEq)]
pub struct Outcome {
    pub cell: Cell,
    /// The rule recognised something (a flag true, a number read, a label
    /// from `map` or a case). Defaults and `missing` do not count.
    pub fired: bool,
    pub issue: Option<Issue>,
    /// Labels of other cases that matched too, with a different label.
    pub conflicts: Vec<u32>,
}

impl Outcome {
    fn plain(cell: Cell, fired: bool) -> Self {
        Outcome {
            cell,
            fired,
            issue: None,
            conflicts: Vec::new(),
        }
    }

    fn issue(cell: Cell, issue: Issue) -> Self {
        Outcome {
            cell,
            fired: false,
            issue: Some(issue),
            conflicts: Vec::new(),
        }
    }
}

/// What one matcher did, for `explain`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Step {
    /// `rule` or `map` or `case "label"`.
    pub what: String,
    pub matched: bool,
    pub span: Option<Range<usize>>,
    pub text: Option<String>,
    pub captures: Vec<Option<String>>,
    pub error: Option<String>,
}

impl Step {
    fn from_match(what: String, text: &str, result: &Result<Option<Found>, MatchError>) -> Step {
        let (found, error) = match result {
            Ok(f) => (f.as_ref(), None),
            Err(e) => (None, Some(e.to_string())),
        };
        Step {
            what,
            matched: found.is_some(),
            span: found.map(|f| f.span.clone()),
            text: found.map(|f| text[f.span.clone()].to_owned()),
            captures: found
                .map(|f| {
                    f.groups
                        .iter()
                        .map(|g| g.clone().map(|r| text[r].to_owned()))
                        .collect()
                })
                .unwrap_or_default(),
            error,
        }
    }
}

/// Every step of one feature on one value.
#[derive(Debug, Clone, PartialEq)]
pub struct Trace {
    pub outcome: Outcome,
    pub steps: Vec<Step>,
}

impl Ruleset {
    /// Evaluate every feature on an already normalized value. A blank
    /// value or a placeholder gets null features, flags included.
    pub fn evaluate(&self, normalized: &str) -> Vec<Outcome> {
        if self.kind_of(normalized) != ValueKind::Considered {
            return vec![Outcome::plain(Cell::Null, false); self.features.len()];
        }
        self.features
            .iter()
            .map(|f| evaluate_feature(f, self, normalized, None))
            .collect()
    }

    /// Evaluate with every step recorded.
    pub fn explain(&self, normalized: &str) -> Vec<Trace> {
        let kind = self.kind_of(normalized);
        if kind != ValueKind::Considered {
            let what = if kind == ValueKind::Blank {
                "blank"
            } else {
                "placeholder"
            };
            let step = Step {
                what: what.to_owned(),
                matched: true,
                span: Some(0..normalized.len()),
                text: Some(normalized.to_owned()),
                captures: Vec::new(),
                error: None,
            };
            return self
                .features
                .iter()
                .map(|_| Trace {
                    outcome: Outcome::plain(Cell::Null, false),
                    steps: vec![step.clone()],
                })
                .collect();
        }
        self.features
            .iter()
            .map(|f| {
                let mut steps = Vec::new();
                let outcome = evaluate_feature(f, self, normalized, Some(&mut steps));
                Trace { outcome, steps }
            })
            .collect()
    }
}

type Steps<'a> = Option<&'a mut Vec<Step>>;

fn record(steps: &mut Steps, step: impl FnOnce() -> Step) {
    if let Some(s) = steps {
        s.push(step());
    }
}

fn evaluate_feature(f: &Feature, rules: &Ruleset, text: &str, mut steps: Steps) -> Outcome {
    match &f.rule {
        Rule::Flag(flag) => {
            let result = matched(&flag.matcher, text, &mut steps, || "rule".into())
                .and_then(|hit| Ok(hit && !suppressed(&flag.unless, text, &mut steps)?));
            match result {
                Ok(hit) => Outcome::plain(Cell::Bool(hit), hit),
                Err(e) => Outcome::issue(Cell::Null, match_issue(e)),
            }
        }
        Rule::Count(count) => evaluate_count(count, rules, text, steps),
        Rule::Measure(measure) => evaluate_measure(measure, rules, text, steps),
        Rule::Label(label) => evaluate_label(label, text, steps),
    }
}

/// Whether a matcher matches; spans are searched for only when `explain`
/// records the steps (a plain yes/no is cheaper).
fn matched(
    matcher: &crate::pattern::Matcher,
    text: &str,
    steps: &mut Steps,
    what: impl FnOnce() -> String,
) -> Result<bool, MatchError> {
    match steps {
        None => matcher.is_match(text),
        Some(s) => {
            let result = matcher.find(text);
            s.push(Step::from_match(what(), text, &result));
            result.map(|f| f.is_some())
        }
    }
}

/// Whether an `unless` exception holds in the value (recorded as a step).
fn suppressed(unless: &Option<Unless>, text: &str, steps: &mut Steps) -> Result<bool, MatchError> {
    let Some(unless) = unless else {
        return Ok(false);
    };
    let result = unless.matches(text);
    record(steps, || Step {
        what: "unless".into(),
        matched: matches!(result, Ok(true)),
        span: None,
        text: None,
        captures: Vec::new(),
        error: result.as_ref().err().map(|e| e.to_string()),
    });
    result
}

/// The matches of a count's or measure's pattern, in order: only the
/// first unless `all`. A match whose number (the first participating
/// group of `number_groups`) starts right after a digit is skipped, and
/// the search goes on from the next character: a number never starts
/// inside a run of digits (`15/32` in `115/32`).
fn number_matches(
    pattern: &Pattern,
    number_groups: &[usize],
    text: &str,
    all: bool,
) -> Result<Vec<Found>, MatchError> {
    let mut out = Vec::new();
    let mut at = 0;
    while at <= text.len() {
        let Some(found) = pattern.find_at(text, at)? else {
            break;
        };
        let number = number_group(&found, number_groups);
        let inside_digits =
            number.is_some_and(|r| r.start > 0 && text.as_bytes()[r.start - 1].is_ascii_digit());
        let next_char = |i: usize| i + text[i..].chars().next().map_or(1, char::len_utf8);
        if inside_digits {
            at = next_char(found.span.start);
            continue;
        }
        at = if found.span.is_empty() {
            next_char(found.span.end)
        } else {
            found.span.end
        };
        out.push(found);
        if !all {
            break;
        }
    }
    Ok(out)
}

/// The first participating group among `candidates` (all groups when empty).
fn number_group(found: &Found, candidates: &[usize]) -> Option<Range<usize>> {
    if candidates.is_empty() {
        return found.groups.iter().flatten().next().cloned();
    }
    candidates
        .iter()
        .filter_map(|&i| found.groups.get(i).cloned().flatten())
        .next()
}

fn record_matches(steps: &mut Steps, text: &str, found: &Result<Vec<Found>, MatchError>) {
    let Some(s) = steps else {
        return;
    };
    match found {
        Ok(list) if !list.is_empty() => {
            for (i, f) in list.iter().enumerate() {
                let what = if i == 0 {
                    "rule".to_owned()
                } else {
                    format!("rule, match {}", i + 1)
                };
                s.push(Step::from_match(what, text, &Ok(Some(f.clone()))));
            }
        }
        Ok(_) => s.push(Step::from_match("rule".into(), text, &Ok(None))),
        Err(e) => s.push(Step::from_match("rule".into(), text, &Err(e.clone()))),
    }
}

fn match_issue(e: MatchError) -> Issue {
    match e {
        MatchError::BacktrackLimit => Issue::BacktrackLimit,
        MatchError::Other(message) => Issue::MatchFailed { message },
    }
}

fn first_group<'t>(
    found: &Found,
    candidates: impl Iterator<Item = usize>,
    text: &'t str,
) -> Option<&'t str> {
    candidates
        .filter_map(|i| found.groups.get(i).cloned().flatten())
        .map(|r| &text[r])
        .next()
}

fn evaluate_count(rule: &CountRule, rules: &Ruleset, text: &str, mut steps: Steps) -> Outcome {
    let result = number_matches(&rule.pattern, &[], text, false);
    record_matches(&mut steps, text, &result);
    let missing = rule.missing.map_or(Cell::Null, Cell::Int);
    let found = match result {
        Ok(mut list) if !list.is_empty() => list.swap_remove(0),
        Ok(_) => return Outcome::plain(missing, false),
        Err(e) => return Outcome::issue(Cell::Null, match_issue(e)),
    };
    match suppressed(&rule.unless, text, &mut steps) {
        Ok(true) => return Outcome::plain(missing, false),
        Ok(false) => {}
        Err(e) => return Outcome::issue(Cell::Null, match_issue(e)),
    }
    let Some(captured) = first_group(&found, 0..found.groups.len(), text) else {
        return Outcome::plain(missing, false);
    };
    let Some(value) = parse_integer(captured, rules.decimal) else {
        return Outcome::issue(
            Cell::Null,
            Issue::Unparsable {
                text: captured.to_owned(),
            },
        );
    };
    match rule.range {
        Some((lo, hi)) if value < lo || value > hi => Outcome::issue(
            Cell::Null,
            Issue::OutOfRange {
                value: value as f64,
            },
        ),
        _ => Outcome::plain(Cell::Int(value), true),
    }
}

fn evaluate_measure(rule: &MeasureRule, rules: &Ruleset, text: &str, mut steps: Steps) -> Outcome {
    let all = rule.combine != Combine::First;
    let result = number_matches(&rule.pattern, &rule.number_groups, text, all);
    record_matches(&mut steps, text, &result);
    let missing = rule.missing.map_or(Cell::Null, Cell::Float);
    let found = match result {
        Ok(list) if !list.is_empty() => list,
        Ok(_) => return Outcome::plain(missing, false),
        Err(e) => return Outcome::issue(Cell::Null, match_issue(e)),
    };
    match suppressed(&rule.unless, text, &mut steps) {
        Ok(true) => return Outcome::plain(missing, false),
        Ok(false) => {}
        Err(e) => return Outcome::issue(Cell::Null, match_issue(e)),
    }
    let mut values = Vec::with_capacity(found.len());
    for f in &found {
        match measure_value(rule, rules, f, text) {
            Ok(Some(v)) => values.push(v),
            Ok(None) => {}
            Err(issue) => return Outcome::issue(Cell::Null, issue),
        }
    }
    if values.is_empty() {
        return Outcome::plain(missing, false);
    }
    let value = match rule.combine {
        Combine::First => values[0],
        Combine::Sum => values.iter().sum(),
        Combine::Min => values.iter().copied().fold(f64::INFINITY, f64::min),
        Combine::Max => values.iter().copied().fold(f64::NEG_INFINITY, f64::max),
    };
    let limit = match rule.precision {
        Precision::F32 => f64::from(f32::MAX),
        Precision::F64 => f64::MAX,
    };
    if !value.is_finite() || value.abs() > limit {
        let text = found
            .iter()
            .map(|f| text[f.span.clone()].to_owned())
            .collect::<Vec<_>>()
            .join(" + ");
        return Outcome::issue(Cell::Null, Issue::NotFinite { text });
    }
    match rule.range {
        Some((lo, hi)) if value < lo || value > hi => {
            Outcome::issue(Cell::Null, Issue::OutOfRange { value })
        }
        _ => Outcome::plain(Cell::Float(value), true),
    }
}

/// One match of a measure: its number times its unit's factor; `None`
/// when no number group took part.
fn measure_value(
    rule: &MeasureRule,
    rules: &Ruleset,
    found: &Found,
    text: &str,
) -> Result<Option<f64>, Issue> {
    let Some(number_text) = first_group(found, rule.number_groups.iter().copied(), text) else {
        return Ok(None);
    };
    let Some(number) = parse_number(number_text, rules.decimal) else {
        return Err(Issue::Unparsable {
            text: number_text.to_owned(),
        });
    };
    let factor = match first_group(found, rule.unit_groups.iter().copied(), text) {
        Some(unit) => rule.factor(unit).ok_or_else(|| Issue::UnknownUnit {
            unit: unit.to_owned(),
        })?,
        None => 1.0,
    };
    Ok(Some(number * factor))
}

fn evaluate_label(rule: &LabelRule, text: &str, mut steps: Steps) -> Outcome {
    if let Some(&label) = rule.map.get(text) {
        record(&mut steps, || Step {
            what: "map".into(),
            matched: true,
            span: Some(0..text.len()),
            text: Some(text.to_owned()),
            captures: Vec::new(),
            error: None,
        });
        return Outcome::plain(Cell::Label(label), true);
    }
    record(&mut steps, || Step {
        what: "map".into(),
        matched: false,
        span: None,
        text: None,
        captures: Vec::new(),
        error: None,
    });
    let mut chosen: Option<u32> = None;
    let mut conflicts = Vec::new();
    let mut issue = None;
    for case in &rule.cases {
        let result = matched(&case.matcher, text, &mut steps, || {
            format!("case \"{}\"", rule.categories[case.label as usize])
        })
        .and_then(|hit| Ok(hit && !suppressed(&case.unless, text, &mut steps)?));
        match result {
            Ok(true) => match chosen {
                None => chosen = Some(case.label),
                Some(c) if c != case.label && !conflicts.contains(&case.label) => {
                    conflicts.push(case.label)
                }
                Some(_) => {}
            },
            Ok(false) => {}
            Err(e) => issue = issue.or(Some(match_issue(e))),
        }
    }
    match chosen {
        Some(label) => Outcome {
            cell: Cell::Label(label),
            fired: true,
            issue,
            conflicts,
        },
        None => {
            let cell = rule.default.map_or(Cell::Null, Cell::Label);
            Outcome {
                cell,
                fired: false,
                issue,
                conflicts,
            }
        }
    }
}

/// A ruleset's outcomes on every distinct value of a vocabulary.
#[derive(Debug, Clone)]
pub struct Evaluation {
    /// The normalized form of each distinct value.
    pub normalized: Vec<String>,
    /// `outcomes[value][feature]`.
    pub outcomes: Vec<Vec<Outcome>>,
}

impl Evaluation {
    /// Add the results of further values (evaluated later, in order).
    pub fn append(&mut self, more: Evaluation) {
        self.normalized.extend(more.normalized);
        self.outcomes.extend(more.outcomes);
    }
}

impl Ruleset {
    /// Normalize and evaluate each distinct value once, in parallel; the
    /// result is in the order of `values` whatever the thread count.
    pub fn evaluate_all(&self, values: &[String]) -> Evaluation {
        use rayon::prelude::*;
        let (normalized, outcomes) = values
            .par_iter()
            .with_min_len(64)
            .map(|v| {
                let n = self.normalizer.apply(v);
                let o = self.evaluate(&n);
                (n, o)
            })
            .unzip();
        Evaluation {
            normalized,
            outcomes,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::Ruleset;

    fn rules(toml: &str) -> Ruleset {
        Ruleset::from_toml(toml, "<test>").unwrap()
    }

    fn cells(r: &Ruleset, value: &str) -> Vec<Cell> {
        r.evaluate(&r.normalizer.apply(value))
            .into_iter()
            .map(|o| o.cell)
            .collect()
    }

    #[test]
    fn flag_by_literals_or_pattern() {
        let r = rules("[[flag]]\nname='turbo'\nany=['turbo','T/C']\n[[flag]]\nname='auto'\npattern='auto(matic)?'");
        assert_eq!(
            cells(&r, "4 cyl TURBO"),
            vec![Cell::Bool(true), Cell::Bool(false)]
        );
        assert_eq!(
            cells(&r, "t/c automatic"),
            vec![Cell::Bool(true), Cell::Bool(true)]
        );
        assert_eq!(
            cells(&r, "turbodiesel"),
            vec![Cell::Bool(false), Cell::Bool(false)]
        );
    }

    #[test]
    fn count_first_matching_group_with_range_and_missing() {
        let r = rules("[[count]]\nname='cyl'\npattern='({int})\\s*-?\\s*cyl|v({int})'\nrange=[1,16]\nmissing=0");
        assert_eq!(cells(&r, "4-cyl"), vec![Cell::Int(4)]);
        assert_eq!(cells(&r, "V8 gas"), vec![Cell::Int(8)]);
        assert_eq!(
            cells(&r, "electric"),
            vec![Cell::Int(0)],
            "missing applies when nothing matches"
        );
        let out = r.evaluate("40 cyl");
        assert_eq!(out[0].cell, Cell::Null, "out of range is null, not missing");
        assert_eq!(out[0].issue, Some(Issue::OutOfRange { value: 40.0 }));
    }

    #[test]
    fn count_of_a_fraction_is_unparsable() {
        let r = rules("[[count]]\nname='n'\npattern='({num}) x'");
        let out = r.evaluate("2.5 x");
        assert_eq!(out[0].issue, Some(Issue::Unparsable { text: "2.5".into() }));
    }

    #[test]
    fn measure_converts_units() {
        let r = rules(
            "[[measure]]\nname='l'\npattern='({num})\\s*(l|cc|ci)\\b'\nunit='l'\nunits={l=1,cc=0.001,ci=0.016387064}",
        );
        assert_eq!(cells(&r, "4.5L"), vec![Cell::Float(4.5)]);
        assert_eq!(cells(&r, "4500 cc"), vec![Cell::Float(4.5)]);
        assert_eq!(cells(&r, "1,800cc"), vec![Cell::Float(1.8)]);
        // 1 in³ = 16.387064 cm³ exactly (NIST SP 811, Appendix B.8).
        let Cell::Float(v) = cells(&r, "100 ci")[0] else {
            panic!()
        };
        assert!((v - 1.6387064).abs() < 1e-12);
    }

    #[test]
    fn measure_without_unit_group_is_in_the_target_unit() {
        let r = rules("[[measure]]\nname='hp'\npattern='({num})\\s*hp'\nunit='hp'");
        assert_eq!(cells(&r, "7 1/2 hp"), vec![Cell::Float(7.5)]);
    }

    #[test]
    fn decimal_comma_rulesets() {
        let r = rules("decimal=','\n[[measure]]\nname='l'\npattern='({num})\\s*l'\nunit='l'");
        assert_eq!(cells(&r, "4,5 l"), vec![Cell::Float(4.5)]);
        assert_eq!(cells(&r, "1.800,5 l"), vec![Cell::Float(1800.5)]);
    }

    #[test]
    fn label_map_first_then_first_case_then_default() {
        let r = rules(
            r#"
            [[label]]
            name = "fuel"
            default = "unknown"
            map = { "dsl" = "diesel", "gas diesel" = "gasoline" }
            [[label.case]]
            label = "diesel"
            any = ["diesel", "dsl"]
            [[label.case]]
            label = "gasoline"
            pattern = 'gas(oline)?|petrol'
            "#,
        );
        let Rule::Label(l) = &r.features[0].rule else {
            panic!()
        };
        assert_eq!(l.categories, vec!["diesel", "gasoline", "unknown"]);
        assert_eq!(cells(&r, "DSL"), vec![Cell::Label(0)]);
        assert_eq!(
            cells(&r, "Gas Diesel"),
            vec![Cell::Label(1)],
            "map wins over cases"
        );
        let out = r.evaluate("diesel or gas");
        assert_eq!(out[0].cell, Cell::Label(0), "first matching case wins");
        assert_eq!(out[0].conflicts, vec![1], "and the other is reported");
        let out = r.evaluate("electric");
        assert_eq!((out[0].cell, out[0].fired), (Cell::Label(2), false));
    }

    #[test]
    fn backtrack_limit_is_an_issue_not_a_hang() {
        let r = rules("[[flag]]\nname='a'\npattern='(a+)+(?!x)$'\nfancy=true");
        let value = format!("{}b", "a".repeat(40));
        let out = r.evaluate(&value);
        assert_eq!(out[0].issue, Some(Issue::BacktrackLimit));
        assert_eq!(out[0].cell, Cell::Null);
    }

    #[test]
    fn explain_records_each_step() {
        let r = rules("[[count]]\nname='g'\npattern='({int})\\s*spd'");
        let t = &r.explain("6 spd auto")[0];
        assert_eq!(t.outcome.cell, Cell::Int(6));
        assert_eq!(t.steps[0].span, Some(0..5));
        assert_eq!(t.steps[0].captures, vec![Some("6".to_owned())]);
    }
}
