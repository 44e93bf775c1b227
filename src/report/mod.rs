//! The coverage report: what a ruleset does to a column's vocabulary.
//!
//! The report is data ([`CoverageReport`] serializes to the documented JSON
//! schema); `render.rs` turns it into text and `html.rs` into a page. Every
//! number here is computed from the per-value outcomes and the vocabulary's
//! row counts.

pub mod drift;
pub mod explain;
pub mod html;
pub mod render;

use serde::Serialize;

use crate::evaluate::{Cell, Evaluation, Issue, Outcome};
use crate::ruleset::{Expected, Feature, Rule, Ruleset, RulesetWarning, ValueKind};
use crate::vocabulary::Vocabulary;

/// The JSON schema's name and version; bumped on any incompatible change.
pub const CHECK_SCHEMA: &str = "descry.check/1";

#[derive(Debug, Clone, Serialize)]
pub struct CoverageReport {
    pub schema: &'static str,
    pub ruleset: String,
    pub column: String,
    pub rows: u64,
    pub distinct: u64,
    pub null_rows: u64,
    /// Rows whose value is empty after normalization.
    pub blank_rows: u64,
    pub blank_distinct: u64,
    /// Rows (values) that are one of the ruleset's placeholders.
    pub placeholder_rows: u64,
    pub placeholder_distinct: u64,
    pub coverage: Coverage,
    pub rules: Vec<RuleReport>,
    /// Non-blank values on which no rule fired, most rows first.
    pub unmatched: Vec<ValueRows>,
    pub conflicts: Vec<Conflict>,
    /// Output names of rules that fired on no value.
    pub silent_rules: Vec<String>,
    /// Values a rule could not turn into a feature (out of range, ...).
    pub issues: Vec<ValueIssue>,
    pub examples: Vec<ExampleResult>,
    pub examples_failed: usize,
    /// The placeholder values found, most rows first.
    pub placeholders: Vec<ValueRows>,
    /// Likely slips in the ruleset (an `any` literal that looks like a
    /// pattern), as `file:line: rule ...: message`.
    pub warnings: Vec<String>,
    /// The gates asked for (`--min-coverage`, `--require`) and the
    /// examples, each passed or failed with its reason.
    pub gates: Vec<Gate>,
    /// Whether every gate passed.
    pub passed: bool,
    /// With `--baseline`: the drift since the baseline.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub drift: Option<drift::Drift>,
}

/// The gates on drift (`--max-new-share` and the others); `None` is no gate.
#[derive(Debug, Clone, Copy, Default)]
pub struct DriftLimits {
    pub max_new_share: Option<f64>,
    pub max_new_uncovered_share: Option<f64>,
    pub max_psi: Option<f64>,
    pub max_shift: Option<f64>,
}

impl DriftLimits {
    pub fn any(&self) -> bool {
        self.max_new_share.is_some()
            || self.max_new_uncovered_share.is_some()
            || self.max_psi.is_some()
            || self.max_shift.is_some()
    }
}

/// One gate of `check` and its outcome.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct Gate {
    /// `min_coverage`, `require` or `examples`.
    pub gate: &'static str,
    /// For `require`: the feature's output column.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub feature: Option<String>,
    /// The least share asked for (`min_coverage`, `require`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub threshold: Option<f64>,
    /// The share measured; null when there was nothing to measure.
    pub value: Option<f64>,
    pub passed: bool,
    /// Why it failed, in one line.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub reason: Option<String>,
}

/// Coverage over non-null, non-blank, non-placeholder rows and distinct
/// values.
#[derive(Debug, Clone, Copy, Serialize, PartialEq)]
pub struct Coverage {
    pub rows_considered: u64,
    pub rows_covered: u64,
    pub row_share: f64,
    pub distinct_considered: u64,
    pub distinct_covered: u64,
    pub distinct_share: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct RuleReport {
    pub name: String,
    pub output: String,
    pub kind: &'static str,
    pub line: usize,
    pub distinct_hit: u64,
    pub rows_hit: u64,
    pub out_of_range: Tally,
    pub unparsable: Tally,
    pub unknown_unit: Tally,
    pub not_finite: Tally,
    pub backtrack_limit: Tally,
}

#[derive(Debug, Clone, Copy, Default, Serialize, PartialEq, Eq)]
pub struct Tally {
    pub distinct: u64,
    pub rows: u64,
}

impl Tally {
    fn add(&mut self, rows: u64) {
        self.distinct += 1;
        self.rows += rows;
    }
}

#[derive(Debug, Clone, Serialize, PartialEq, Eq)]
pub struct ValueRows {
    pub value: String,
    pub normalized: String,
    pub rows: u64,
}

#[derive(Debug, Clone, Serialize)]
pub struct Conflict {
    pub value: String,
    pub rows: u64,
    pub rule: String,
    pub chosen: String,
    pub also: Vec<String>,
}

#[derive(Debug, Clone, Serialize)]
pub struct ValueIssue {
    pub value: String,
    pub rows: u64,
    pub rule: String,
    pub issue: Issue,
}

#[derive(Debug, Clone, Serialize)]
pub struct ExampleResult {
    pub value: String,
    pub line: usize,
    pub passed: bool,
    pub mismatches: Vec<Mismatch>,
}

#[derive(Debug, Clone, Serialize)]
pub struct Mismatch {
    pub feature: String,
    pub expected: serde_json::Value,
    pub got: serde_json::Value,
}

impl CoverageReport {
    /// Build the report of `rules` on `vocab`, given their evaluation.
    pub fn build(
        rules: &Ruleset,
        column: &str,
        vocab: &Vocabulary,
        eval: &Evaluation,
    ) -> CoverageReport {
        let mut report = CoverageReport {
            schema: CHECK_SCHEMA,
            ruleset: rules.file.clone(),
            column: column.to_owned(),
            rows: vocab.rows(),
            distinct: vocab.distinct() as u64,
            null_rows: vocab.null_rows,
            blank_rows: 0,
            blank_distinct: 0,
            placeholder_rows: 0,
            placeholder_distinct: 0,
            coverage: Coverage::default(),
            rules: rules.features.iter().map(RuleReport::new).collect(),
            unmatched: Vec::new(),
            conflicts: Vec::new(),
            silent_rules: Vec::new(),
            issues: Vec::new(),
            examples: check_examples(rules),
            examples_failed: 0,
            placeholders: Vec::new(),
            warnings: rules
                .warnings
                .iter()
                .map(RulesetWarning::to_string)
                .collect(),
            gates: Vec::new(),
            passed: true,
            drift: None,
        };
        for (i, value) in vocab.values.iter().enumerate() {
            report.add_value(
                rules,
                value,
                &eval.normalized[i],
                vocab.counts[i],
                &eval.outcomes[i],
            );
        }
        report.finish();
        report
    }

    fn add_value(
        &mut self,
        rules: &Ruleset,
        value: &str,
        normalized: &str,
        rows: u64,
        outcomes: &[Outcome],
    ) {
        match rules.kind_of(normalized) {
            ValueKind::Blank => {
                self.blank_rows += rows;
                self.blank_distinct += 1;
                return;
            }
            ValueKind::Placeholder => {
                self.placeholder_rows += rows;
                self.placeholder_distinct += 1;
                self.placeholders.push(ValueRows {
                    value: value.to_owned(),
                    normalized: normalized.to_owned(),
                    rows,
                });
                return;
            }
            ValueKind::Considered => {}
        }
        self.coverage.rows_considered += rows;
        self.coverage.distinct_considered += 1;
        let mut any_fired = false;
        for ((feature, stats), outcome) in rules.features.iter().zip(&mut self.rules).zip(outcomes)
        {
            if outcome.fired {
                any_fired = true;
                stats.distinct_hit += 1;
                stats.rows_hit += rows;
            }
            if let Some(issue) = &outcome.issue {
                stats.tally(issue).add(rows);
                self.issues.push(ValueIssue {
                    value: value.to_owned(),
                    rows,
                    rule: feature.output.clone(),
                    issue: issue.clone(),
                });
            }
            if let (Rule::Label(l), Cell::Label(chosen)) = (&feature.rule, outcome.cell) {
                if !outcome.conflicts.is_empty() {
                    self.conflicts.push(Conflict {
                        value: value.to_owned(),
                        rows,
                        rule: feature.output.clone(),
                        chosen: l.categories[chosen as usize].clone(),
                        also: outcome
                            .conflicts
                            .iter()
                            .map(|&c| l.categories[c as usize].clone())
                            .collect(),
                    });
                }
            }
        }
        if any_fired {
            self.coverage.rows_covered += rows;
            self.coverage.distinct_covered += 1;
        } else {
            self.unmatched.push(ValueRows {
                value: value.to_owned(),
                normalized: normalized.to_owned(),
                rows,
            });
        }
    }

    fn finish(&mut self) {
        let c = &mut self.coverage;
        c.row_share = share(c.rows_covered, c.rows_considered);
        c.distinct_share = share(c.distinct_covered, c.distinct_considered);
        self.unmatched
            .sort_by(|a, b| b.rows.cmp(&a.rows).then_with(|| a.value.cmp(&b.value)));
        self.placeholders
            .sort_by(|a, b| b.rows.cmp(&a.rows).then_with(|| a.value.cmp(&b.value)));
        self.conflicts
            .sort_by(|a, b| b.rows.cmp(&a.rows).then_with(|| a.value.cmp(&b.value)));
        self.issues
            .sort_by(|a, b| b.rows.cmp(&a.rows).then_with(|| a.value.cmp(&b.value)));
        self.silent_rules = self
            .rules
            .iter()
            .filter(|r| r.distinct_hit == 0)
            .map(|r| r.output.clone())
            .collect();
        self.examples_failed = self.examples.iter().filter(|e| !e.passed).count();
    }

    /// Judge the gates: coverage of rows at least `min_coverage`, each
    /// `(feature, share)` of `require` firing on at least that share of the
    /// considered rows, and every example passing. A column with nothing
    /// to cover fails a share gate: there is no share to judge. Sets
    /// `gates` and `passed`; a feature `require` names that the ruleset does
    /// not have is the caller's error to report first.
    pub fn judge(&mut self, rules: &Ruleset, min_coverage: Option<f64>, require: &[(usize, f64)]) {
        let considered = self.coverage.rows_considered;
        let nothing = || {
            format!(
                "column {} has no rows to cover ({} rows: {} null, {} blank, {} placeholder)",
                crate::render::shown(&self.column),
                self.rows,
                self.null_rows,
                self.blank_rows,
                self.placeholder_rows
            )
        };
        let mut gates = Vec::new();
        if let Some(min) = min_coverage {
            let value = (considered > 0).then_some(self.coverage.row_share);
            let reason = match value {
                None => Some(format!("--min-coverage {}: {}", percent_of(min), nothing())),
                Some(v) if v < min => {
                    let (v, m) = percents_apart(v, min);
                    Some(format!("coverage {v} of rows is below --min-coverage {m}"))
                }
                Some(_) => None,
            };
            gates.push(Gate {
                gate: "min_coverage",
                feature: None,
                threshold: Some(min),
                value,
                passed: reason.is_none(),
                reason,
            });
        }
        for &(index, min) in require {
            let feature = &rules.features[index];
            let hit = self.rules[index].rows_hit;
            let value = (considered > 0).then(|| hit as f64 / considered as f64);
            let reason = match value {
                None => Some(format!(
                    "--require {}={}: {}",
                    feature.output,
                    min,
                    nothing()
                )),
                Some(v) if v < min => {
                    let (v, m) = percents_apart(v, min);
                    Some(format!(
                        "{} fires on {v} of rows ({} of {}), below --require {}={m}",
                        feature.output, hit, considered, feature.output
                    ))
                }
                Some(_) => None,
            };
            gates.push(Gate {
                gate: "require",
                feature: Some(feature.output.clone()),
                threshold: Some(min),
                value,
                passed: reason.is_none(),
                reason,
            });
        }
        if !self.examples.is_empty() {
            let failed = self.examples_failed;
            gates.push(Gate {
                gate: "examples",
                feature: None,
                threshold: None,
                value: Some((self.examples.len() - failed) as f64 / self.examples.len() as f64),
                passed: failed == 0,
                reason: (failed > 0)
                    .then(|| format!("{failed} of {} examples failed", self.examples.len())),
            });
        }
        self.passed = gates.iter().all(|g| g.passed);
        self.gates = gates;
    }

    /// Add the drift gates to those [`CoverageReport::judge`] set; each
    /// fails when its figure is above its limit.
    pub fn judge_drift(&mut self, limits: &DriftLimits) {
        let Some(d) = &self.drift else {
            return;
        };
        let mut gates = Vec::new();
        let nothing = (self.coverage.rows_considered == 0).then(|| {
            format!(
                "column {} has no rows with text to compare ({} rows: {} null, {} blank, {} placeholder)",
                crate::render::shown(&self.column),
                self.rows,
                self.null_rows,
                self.blank_rows,
                self.placeholder_rows
            )
        });
        let mut above = |gate: &'static str, limit: Option<f64>, value: f64, what: String| {
            let Some(limit) = limit else {
                return;
            };
            let option = format!("--{}", gate.replace('_', "-"));
            if let Some(nothing) = &nothing {
                // As for --min-coverage: a gate with nothing to measure fails.
                gates.push(Gate {
                    gate,
                    feature: None,
                    threshold: Some(limit),
                    value: None,
                    passed: false,
                    reason: Some(format!("{option} {limit}: {nothing}")),
                });
                return;
            }
            gates.push(Gate {
                gate,
                feature: None,
                threshold: Some(limit),
                value: Some(value),
                passed: value <= limit,
                reason: (value > limit).then(|| format!("{what} is above {option} {limit}")),
            });
        };
        above(
            "max_new_share",
            limits.max_new_share,
            d.new_row_share,
            format!(
                "the share of rows on values the baseline never saw, {},",
                percent_of(d.new_row_share)
            ),
        );
        above(
            "max_new_uncovered_share",
            limits.max_new_uncovered_share,
            d.new_uncovered_share,
            format!(
                "the share of rows on new values no rule covers, {},",
                percent_of(d.new_uncovered_share)
            ),
        );
        let worst_label = d.labels.iter().max_by(|a, b| a.psi.total_cmp(&b.psi));
        above(
            "max_psi",
            limits.max_psi,
            worst_label.map_or(0.0, |l| l.psi),
            worst_label.map_or("no label".to_owned(), |l| {
                format!(
                    "the PSI of label {}, {:.4},",
                    crate::render::shown(&l.output),
                    l.psi
                )
            }),
        );
        let shift = |r: &drift::RuleShift| (r.share_after - r.share_before).abs();
        let worst_rule = d.rules.iter().max_by(|a, b| shift(a).total_cmp(&shift(b)));
        above(
            "max_shift",
            limits.max_shift,
            worst_rule.map_or(0.0, shift),
            worst_rule.map_or("no rule".to_owned(), |r| {
                format!(
                    "the shift of rule {} ({} to {}), {} points,",
                    crate::render::shown(&r.output),
                    percent_of(r.share_before),
                    percent_of(r.share_after),
                    format!("{:.2}", shift(r) * 100.0)
                )
            }),
        );
        self.gates.extend(gates);
        self.passed = self.gates.iter().all(|g| g.passed);
    }

    /// The gate on coverage and examples alone (see [`CoverageReport::judge`]).
    pub fn passes(&self, min_coverage: Option<f64>) -> bool {
        let coverage_ok = min_coverage
            .is_none_or(|min| self.coverage.rows_considered > 0 && self.coverage.row_share >= min);
        coverage_ok && self.examples_failed == 0
    }
}

fn percent_of(share: f64) -> String {
    format!("{:.2}%", share * 100.0)
}

/// Two shares as percentages with enough decimals to tell them apart
/// (`99.95%` and `99.96%`, not `100.00%` and `100.00%`).
pub fn percents_apart(a: f64, b: f64) -> (String, String) {
    // Enough digits that the two differ and the threshold is shown as
    // given (99.995% must not show as 100.00%).
    let exact = |x: f64, digits: usize| {
        let shown: f64 = format!("{:.*}", digits, x * 100.0)
            .parse()
            .unwrap_or(f64::NAN);
        (shown - x * 100.0).abs() < 1e-9
    };
    for digits in 2..=12 {
        let (x, y) = (
            format!("{:.*}%", digits, a * 100.0),
            format!("{:.*}%", digits, b * 100.0),
        );
        if a == b || (x != y && exact(b, digits)) {
            return (x, y);
        }
    }
    (format!("{}%", a * 100.0), format!("{}%", b * 100.0))
}

/// `part / whole`, and 1 when there is nothing to cover.
fn share(part: u64, whole: u64) -> f64 {
    if whole == 0 {
        1.0
    } else {
        part as f64 / whole as f64
    }
}

impl Default for Coverage {
    fn default() -> Self {
        Coverage {
            rows_considered: 0,
            rows_covered: 0,
            row_share: 1.0,
            distinct_considered: 0,
            distinct_covered: 0,
            distinct_share: 1.0,
        }
    }
}

impl RuleReport {
    fn new(f: &Feature) -> RuleReport {
        RuleReport {
            name: f.name.clone(),
            output: f.output.clone(),
            kind: f.rule.kind(),
            line: f.line,
            distinct_hit: 0,
            rows_hit: 0,
            out_of_range: Tally::default(),
            unparsable: Tally::default(),
            unknown_unit: Tally::default(),
            not_finite: Tally::default(),
            backtrack_limit: Tally::default(),
        }
    }

    fn tally(&mut self, issue: &Issue) -> &mut Tally {
        match issue {
            Issue::OutOfRange { .. } => &mut self.out_of_range,
            Issue::Unparsable { .. } => &mut self.unparsable,
            Issue::UnknownUnit { .. } => &mut self.unknown_unit,
            Issue::NotFinite { .. } => &mut self.not_finite,
            Issue::BacktrackLimit | Issue::MatchFailed { .. } => &mut self.backtrack_limit,
        }
    }
}

/// A feature's value as JSON: labels by name, nulls as null.
pub fn cell_json(feature: &Feature, cell: Cell) -> serde_json::Value {
    match (cell, &feature.rule) {
        (Cell::Null, _) => serde_json::Value::Null,
        (Cell::Bool(b), _) => b.into(),
        (Cell::Int(i), _) => i.into(),
        (Cell::Float(x), _) => x.into(),
        (Cell::Label(l), Rule::Label(rule)) => rule.categories[l as usize].clone().into(),
        (Cell::Label(l), _) => l.into(),
    }
}

fn check_examples(rules: &Ruleset) -> Vec<ExampleResult> {
    rules
        .examples
        .iter()
        .map(|ex| {
            let outcomes = rules.evaluate(&rules.normalizer.apply(&ex.value));
            let mismatches: Vec<Mismatch> = ex
                .expect
                .iter()
                .filter(|(idx, expected)| {
                    !agrees(&rules.features[*idx], outcomes[*idx].cell, expected)
                })
                .map(|(idx, expected)| Mismatch {
                    feature: rules.features[*idx].name.clone(),
                    expected: serde_json::to_value(expected).unwrap_or_default(),
                    got: cell_json(&rules.features[*idx], outcomes[*idx].cell),
                })
                .collect();
            ExampleResult {
                value: ex.value.clone(),
                line: ex.line,
                passed: mismatches.is_empty(),
                mismatches,
            }
        })
        .collect()
}

fn agrees(feature: &Feature, got: Cell, expected: &Expected) -> bool {
    match (got, expected) {
        (Cell::Bool(g), Expected::Bool(e)) => g == *e,
        (Cell::Int(g), Expected::Int(e)) => g == *e,
        (Cell::Float(g), Expected::Float(e)) => (g - e).abs() <= 1e-9 * e.abs().max(1.0),
        (Cell::Label(g), Expected::Text(e)) => match &feature.rule {
            Rule::Label(l) => l.categories[g as usize] == *e,
            _ => false,
        },
        _ => false,
    }
}
