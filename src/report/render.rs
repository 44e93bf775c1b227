//! Text renderers over the report structures. JSON is the structures
//! themselves, serialized; nothing here computes a number.
//!
//! Values are shown through [`shown`], which escapes control characters so
//! that a value holding terminal escape sequences is printed inert.

use std::fmt::Write;

use comfy_table::{presets, CellAlignment, ContentArrangement, Table};

use crate::evaluate::{Cell, Trace};
use crate::report::{cell_json, CoverageReport};
use crate::ruleset::{Ruleset, ValueKind};
use crate::shape::is_invisible;

/// Longest value shown in full in a text report, in characters.
pub const SHOWN_MAX_CHARS: usize = 120;

/// A name (a column, a rule, a label) as shown in a message: control
/// characters and other invisibles escaped as in [`shown`], no quotes, not cut.
pub fn escaped(name: &str) -> String {
    let mut out = String::with_capacity(name.len());
    for c in name.chars() {
        if c.is_control() || is_invisible(c) {
            let _ = write!(out, "\\u{{{:x}}}", c as u32);
        } else {
            out.push(c);
        }
    }
    out
}

/// A value quoted, with control characters and other invisibles escaped,
/// and cut after [`SHOWN_MAX_CHARS`] characters (JSON reports keep it whole).
pub fn shown(value: &str) -> String {
    let mut out = String::with_capacity(value.len().min(4 * SHOWN_MAX_CHARS) + 2);
    out.push('"');
    let total = value.chars().count();
    for c in value.chars().take(SHOWN_MAX_CHARS) {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            c if c.is_control() || is_invisible(c) => {
                let _ = write!(out, "\\u{{{:x}}}", c as u32);
            }
            c => out.push(c),
        }
    }
    out.push('"');
    if total > SHOWN_MAX_CHARS {
        let _ = write!(
            out,
            "... ({} more characters)",
            thousands((total - SHOWN_MAX_CHARS) as u64)
        );
    }
    out
}

/// `1234567` as `1,234,567`.
pub fn thousands(n: u64) -> String {
    let digits = n.to_string();
    let mut out = String::new();
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(c);
    }
    out
}

fn percent(share: f64) -> String {
    format!("{:.1}%", share * 100.0)
}

fn table(header: &[&str]) -> Table {
    let mut t = Table::new();
    t.load_preset(presets::NOTHING)
        .set_content_arrangement(ContentArrangement::Disabled)
        .set_header(header.to_vec());
    t
}

fn right_align(t: &mut Table, columns: std::ops::Range<usize>) {
    for i in columns {
        if let Some(c) = t.column_mut(i) {
            c.set_cell_alignment(CellAlignment::Right);
        }
    }
}

/// The `check` report as text; `top` limits the unmatched list.
pub fn check_text(r: &CoverageReport, top: usize) -> String {
    let mut out = String::new();
    let c = &r.coverage;
    let _ = writeln!(out, "ruleset {}  column {}", r.ruleset, shown(&r.column));
    let _ = writeln!(
        out,
        "rows {}  distinct {}  null {}  blank {} ({} distinct)  placeholder {} ({} distinct)",
        thousands(r.rows),
        thousands(r.distinct),
        thousands(r.null_rows),
        thousands(r.blank_rows),
        thousands(r.blank_distinct),
        thousands(r.placeholder_rows),
        thousands(r.placeholder_distinct)
    );
    let _ = writeln!(
        out,
        "coverage {} of rows ({} of {})  {} of distinct values ({} of {})\n",
        percent(c.row_share),
        thousands(c.rows_covered),
        thousands(c.rows_considered),
        percent(c.distinct_share),
        thousands(c.distinct_covered),
        thousands(c.distinct_considered)
    );
    for w in &r.warnings {
        let _ = writeln!(out, "warning: {w}");
    }
    if !r.warnings.is_empty() {
        out.push('\n');
    }
    out.push_str(&rules_table(r));
    if top > 0 {
        placeholders_section(&mut out, r, top);
        unmatched_section(&mut out, r, top);
        issues_section(&mut out, r, top);
        conflicts_section(&mut out, r, top);
    }
    if !r.silent_rules.is_empty() {
        let _ = writeln!(
            out,
            "\nrules that hit nothing: {}",
            r.silent_rules.join(", ")
        );
    }
    examples_section(&mut out, r);
    if let Some(d) = &r.drift {
        drift_section(&mut out, d, top);
    }
    gates_section(&mut out, r);
    out
}

fn drift_section(out: &mut String, d: &crate::report::drift::Drift, top: usize) {
    let _ = writeln!(out, "\ndrift since the baseline {}", d.baseline);
    if d.ruleset_changed {
        let _ = writeln!(
            out,
            "  the ruleset changed since the baseline; compared all the same"
        );
    }
    let _ = writeln!(
        out,
        "  new values: {} ({} of rows with text; {} of their rows covered)  gone values: {}",
        thousands(d.new_values.len() as u64),
        percent(d.new_row_share),
        d.new_covered_share.map_or("-".to_owned(), percent),
        thousands(d.gone_values.len() as u64)
    );
    for v in d.new_values.iter().take(top) {
        let mark = if v.covered { "covered" } else { "unmatched" };
        let _ = writeln!(
            out,
            "  {:>9}  {mark:<9}  {}",
            thousands(v.rows),
            shown(&v.value)
        );
    }
    if !d.rules.is_empty() {
        let _ = writeln!(
            out,
            "  rule shares of rows with text (before -> after, p-value):"
        );
        for r in &d.rules {
            let _ = writeln!(
                out,
                "    {:<24} {} -> {}  p {}",
                escaped(&r.output),
                percent(r.share_before),
                percent(r.share_after),
                p_value(r.p_value)
            );
        }
    }
    for l in &d.labels {
        let _ = writeln!(
            out,
            "  label {}: PSI {:.4} ({}), chi-square p {}",
            escaped(&l.output),
            l.psi,
            psi_reading(l.psi),
            p_value(l.p_value)
        );
    }
    for (kind, shifts) in [("count", &d.counts), ("measure", &d.measures)] {
        for s in shifts.iter() {
            let _ = writeln!(
                out,
                "  {kind} {}: Kolmogorov-Smirnov D {}, p {}",
                escaped(&s.output),
                s.ks_statistic.map_or("-".to_owned(), |v| format!("{v:.4}")),
                s.p_value.map_or("-".to_owned(), p_value)
            );
        }
    }
}

/// The usual reading of a PSI (common practice: below 0.1 stable, 0.1 to
/// 0.25 a moderate shift, above 0.25 a large one).
pub(crate) fn psi_reading(psi: f64) -> &'static str {
    if psi < 0.1 {
        "stable"
    } else if psi <= 0.25 {
        "moderate shift"
    } else {
        "large shift"
    }
}

pub(crate) fn p_value(p: f64) -> String {
    if p < 1e-4 {
        "< 0.0001".to_owned()
    } else {
        format!("{p:.4}")
    }
}

fn gates_section(out: &mut String, r: &CoverageReport) {
    let asked: Vec<_> = r.gates.iter().filter(|g| g.gate != "examples").collect();
    if asked.is_empty() {
        return;
    }
    let failed = asked.iter().filter(|g| !g.passed).count();
    let _ = writeln!(
        out,
        "\ngates: {} passed, {failed} failed",
        asked.len() - failed
    );
    for g in asked {
        let threshold = g.threshold.unwrap_or(0.0);
        let what = match (&g.feature, g.gate) {
            (Some(f), _) => format!("--require {}={threshold}", escaped(f)),
            (None, gate) => format!("--{} {threshold}", gate.replace('_', "-")),
        };
        match &g.reason {
            Some(reason) => {
                let _ = writeln!(out, "  FAILED {what}: {reason}");
            }
            None => {
                let _ = writeln!(
                    out,
                    "  passed {what}: {}",
                    g.value.map_or("-".to_owned(), |v| if g.gate == "max_psi" {
                        format!("{v:.4}")
                    } else {
                        format!("{:.2}%", v * 100.0)
                    })
                );
            }
        }
    }
}

fn rules_table(r: &CoverageReport) -> String {
    let mut t = table(&[
        "rule",
        "kind",
        "line",
        "distinct",
        "rows",
        "rows %",
        "out of range",
        "unparsable",
        "unknown unit",
        "too large",
        "backtrack",
    ]);
    let considered = r.coverage.rows_considered.max(1) as f64;
    for rule in &r.rules {
        t.add_row(vec![
            escaped(&rule.output),
            rule.kind.to_owned(),
            rule.line.to_string(),
            thousands(rule.distinct_hit),
            thousands(rule.rows_hit),
            percent(rule.rows_hit as f64 / considered),
            thousands(rule.out_of_range.rows),
            thousands(rule.unparsable.rows),
            thousands(rule.unknown_unit.rows),
            thousands(rule.not_finite.rows),
            thousands(rule.backtrack_limit.rows),
        ]);
    }
    right_align(&mut t, 2..11);
    format!("{}\n", t.trim_fmt())
}

fn placeholders_section(out: &mut String, r: &CoverageReport, top: usize) {
    if r.placeholders.is_empty() {
        return;
    }
    let listed: Vec<String> = r
        .placeholders
        .iter()
        .take(top)
        .map(|p| format!("{} ({})", shown(&p.value), thousands(p.rows)))
        .collect();
    let more = r.placeholders.len().saturating_sub(top);
    let _ = writeln!(
        out,
        "\nplaceholders (every feature null, left out of coverage): {}{}",
        listed.join(", "),
        if more > 0 {
            format!(" and {more} more")
        } else {
            String::new()
        }
    );
}

fn unmatched_section(out: &mut String, r: &CoverageReport, top: usize) {
    if r.unmatched.is_empty() {
        let _ = writeln!(
            out,
            "\nevery value with text is matched by at least one rule"
        );
        return;
    }
    let shown_n = top.min(r.unmatched.len());
    let _ = writeln!(
        out,
        "\nunmatched values: {} distinct; top {} by rows",
        thousands(r.unmatched.len() as u64),
        shown_n
    );
    let mut t = table(&["rows", "value"]);
    for v in r.unmatched.iter().take(top) {
        t.add_row(vec![thousands(v.rows), shown(&v.value)]);
    }
    right_align(&mut t, 0..1);
    let _ = writeln!(out, "{}", t.trim_fmt());
}

fn issues_section(out: &mut String, r: &CoverageReport, top: usize) {
    if r.issues.is_empty() {
        return;
    }
    let _ = writeln!(
        out,
        "\nvalues a rule could not turn into a feature (written as null): {}",
        r.issues.len()
    );
    let mut t = table(&["rows", "rule", "value", "why"]);
    for i in r.issues.iter().take(top) {
        t.add_row(vec![
            thousands(i.rows),
            escaped(&i.rule),
            shown(&i.value),
            i.issue.to_string(),
        ]);
    }
    right_align(&mut t, 0..1);
    let _ = writeln!(out, "{}", t.trim_fmt());
}

fn conflicts_section(out: &mut String, r: &CoverageReport, top: usize) {
    if r.conflicts.is_empty() {
        return;
    }
    let _ = writeln!(
        out,
        "\nconflicts (several cases matched; the first wins): {}",
        r.conflicts.len()
    );
    let mut t = table(&["rows", "rule", "value", "chosen", "also matched"]);
    for c in r.conflicts.iter().take(top) {
        t.add_row(vec![
            thousands(c.rows),
            escaped(&c.rule),
            shown(&c.value),
            escaped(&c.chosen),
            c.also
                .iter()
                .map(|a| escaped(a))
                .collect::<Vec<_>>()
                .join(", "),
        ]);
    }
    right_align(&mut t, 0..1);
    let _ = writeln!(out, "{}", t.trim_fmt());
}

fn examples_section(out: &mut String, r: &CoverageReport) {
    if r.examples.is_empty() {
        return;
    }
    let passed = r.examples.len() - r.examples_failed;
    let _ = writeln!(
        out,
        "\nexamples: {passed} passed, {} failed",
        r.examples_failed
    );
    for e in r.examples.iter().filter(|e| !e.passed) {
        let _ = writeln!(out, "  FAILED line {} {}", e.line, shown(&e.value));
        for m in &e.mismatches {
            let _ = writeln!(
                out,
                "    {}: expected {}, got {}",
                m.feature, m.expected, m.got
            );
        }
    }
}

/// `explain` for one value as text.
/// `explain` for one value as text; with `fired_only`, only the features
/// that fired are shown.
pub fn explain_text(
    rules: &Ruleset,
    value: &str,
    normalized: &str,
    traces: &[Trace],
    fired_only: bool,
) -> String {
    let mut out = String::new();
    let _ = writeln!(out, "value      {}", shown(value));
    let _ = writeln!(out, "normalized {}", shown(normalized));
    match rules.kind_of(normalized) {
        ValueKind::Blank => {
            let _ = writeln!(out, "  blank: every feature is null");
            return out;
        }
        ValueKind::Placeholder => {
            let _ = writeln!(
                out,
                "  placeholder: every feature is null, and the value is left out of coverage"
            );
            return out;
        }
        ValueKind::Considered => {}
    }
    let mut shown_any = false;
    for (feature, trace) in rules.features.iter().zip(traces) {
        if fired_only && !trace.outcome.fired {
            continue;
        }
        shown_any = true;
        let result = match trace.outcome.cell {
            Cell::Null => "null".to_owned(),
            cell => cell_json(feature, cell).to_string(),
        };
        let fired = if trace.outcome.fired {
            "fired"
        } else {
            "did not fire"
        };
        let _ = writeln!(
            out,
            "  {} [{}] {fired} -> {result}",
            escaped(&feature.output),
            feature.rule.kind()
        );
        for step in &trace.steps {
            let _ = write!(out, "      {:<18} ", step.what);
            match (step.matched, &step.span, &step.text) {
                (true, Some(span), Some(text)) => {
                    let _ = write!(
                        out,
                        "matched {} at {}..{}",
                        shown(text),
                        span.start,
                        span.end
                    );
                }
                (true, _, _) => out.push_str("matched"),
                (false, _, _) => out.push_str("no match"),
            }
            let caps: Vec<String> = step
                .captures
                .iter()
                .map(|c| c.as_deref().map_or("-".to_owned(), shown))
                .collect();
            if !caps.is_empty() {
                let _ = write!(out, "  groups [{}]", caps.join(", "));
            }
            if let Some(e) = &step.error {
                let _ = write!(out, "  ({e})");
            }
            out.push('\n');
        }
        if let Some(issue) = &trace.outcome.issue {
            let _ = writeln!(out, "      note: {issue}");
        }
    }
    if fired_only && !shown_any {
        let _ = writeln!(out, "  no rule fired");
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn terminal_escapes_are_shown_inert() {
        assert_eq!(shown("\u{1b}[31mred"), "\"\\u{1b}[31mred\"");
        assert_eq!(shown("a\u{a0}b"), "\"a\\u{a0}b\"");
        assert_eq!(shown("6 spd"), "\"6 spd\"");
    }

    #[test]
    fn long_values_are_cut() {
        let long = "x".repeat(10_000);
        let s = shown(&long);
        assert!(s.ends_with("... (9,880 more characters)"), "{s}");
        assert!(s.len() < 200);
    }

    #[test]
    fn thousands_separators() {
        assert_eq!(thousands(0), "0");
        assert_eq!(thousands(999), "999");
        assert_eq!(thousands(1000), "1,000");
        assert_eq!(thousands(1234567), "1,234,567");
    }
}
