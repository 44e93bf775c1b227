//! The check report as one self-contained HTML page: the same
//! [`CoverageReport`] (and its drift) the text and JSON show, laid out for a
//! person deciding whether a data drop is safe to use.
//!
//! The page fetches nothing: its style and its small script are inline, its
//! charts are SVG drawn here, and a Content-Security-Policy forbids any other
//! source. Every value from the data or the ruleset is HTML-escaped (with the
//! `html-escape` crate) after control characters are made visible as in the
//! text report, so a value holding markup or script shows as text. Without
//! the script the tables are plain and complete; with it, the unmatched and
//! new values can be sorted by any column and filtered.

use std::collections::HashSet;
use std::fmt::Write;

use html_escape::{encode_double_quoted_attribute, encode_text};

use super::drift::{Drift, LabelShift};
use super::{CoverageReport, Gate};
use crate::render::{escaped, p_value, psi_reading, thousands};

/// What the page lists.
#[derive(Debug, Clone, Copy)]
pub struct HtmlOptions {
    /// Most rows of each value table (unmatched, new, gone values, issues,
    /// conflicts); the JSON report lists them all.
    pub max_values: usize,
}

impl Default for HtmlOptions {
    fn default() -> Self {
        HtmlOptions { max_values: 1000 }
    }
}

/// The page of one or several rulesets' reports (one section each).
pub fn check_html(reports: &[CoverageReport], options: &HtmlOptions) -> String {
    let mut page = Page {
        out: String::new(),
        options: *options,
        tables: 0,
    };
    page.document(reports);
    page.out
}

/// Text from the data or a ruleset, safe as HTML text: control characters
/// and invisibles written out (`\u{7}`), then `<`, `>` and `&` escaped.
fn text(value: &str) -> String {
    encode_text(&escaped(value)).into_owned()
}

/// The same, for a double-quoted attribute.
fn attribute(value: &str) -> String {
    encode_double_quoted_attribute(&escaped(value)).into_owned()
}

/// A share as a percentage; a share that is not 0 or 1 never shows as
/// either.
fn percent(share: f64) -> String {
    if share > 0.0 && share < 0.0005 {
        "<0.1%".to_owned()
    } else if share < 1.0 && share > 0.9995 {
        ">99.9%".to_owned()
    } else {
        format!("{:.1}%", share * 100.0)
    }
}

fn share_of(part: u64, whole: u64) -> f64 {
    if whole == 0 {
        0.0
    } else {
        part as f64 / whole as f64
    }
}

struct Page {
    out: String,
    options: HtmlOptions,
    /// Tables made so far, for their ids.
    tables: usize,
}

impl Page {
    fn document(&mut self, reports: &[CoverageReport]) {
        let passed = reports.iter().all(|r| r.passed);
        let title = match reports {
            [one] => format!("descry check: {} ({})", one.column, one.ruleset),
            _ => format!("descry check: {} rulesets", reports.len()),
        };
        let _ = write!(
            self.out,
            "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
             <meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; \
             style-src 'unsafe-inline'; script-src 'unsafe-inline'\">\n\
             <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
             <title>{}</title>\n<style>{STYLE}</style>\n</head>\n<body>\n",
            text(&title)
        );
        let _ = write!(
            self.out,
            "<header class=\"top\"><div class=\"wrap\"><p class=\"kicker\">descry check</p>\
             <h1>{}</h1>{}</div></header>\n<main class=\"wrap\">\n",
            match reports {
                [one] => format!(
                    "column <span class=\"name\">{}</span> <span class=\"by\">by {}</span>",
                    text(&one.column),
                    text(&one.ruleset)
                ),
                _ => format!("{} rulesets", reports.len()),
            },
            verdict(passed)
        );
        if reports.len() > 1 {
            self.out.push_str("<nav class=\"card\"><ul class=\"toc\">");
            for (i, r) in reports.iter().enumerate() {
                let _ = write!(
                    self.out,
                    "<li><a href=\"#report-{}\">column <span class=\"name\">{}</span> by {}</a> {}</li>",
                    i + 1,
                    text(&r.column),
                    text(&r.ruleset),
                    verdict(r.passed)
                );
            }
            self.out.push_str("</ul></nav>\n");
        }
        for (i, r) in reports.iter().enumerate() {
            self.report(i + 1, r, reports.len() > 1);
        }
        let _ = write!(
            self.out,
            "</main>\n<footer class=\"wrap\">descry {}; the JSON report (<code>--format json</code>) \
             holds every figure and lists every value.</footer>\n<script>{SCRIPT}</script>\n</body>\n</html>\n",
            env!("CARGO_PKG_VERSION")
        );
    }

    fn report(&mut self, n: usize, r: &CoverageReport, several: bool) {
        let _ = write!(self.out, "<section class=\"report\" id=\"report-{n}\">\n");
        if several {
            let _ = write!(
                self.out,
                "<h2>column <span class=\"name\">{}</span> <span class=\"by\">by {}</span> {}</h2>\n",
                text(&r.column),
                text(&r.ruleset),
                verdict(r.passed)
            );
        }
        self.glance(r);
        self.gates(r);
        if !r.warnings.is_empty() {
            self.out
                .push_str("<div class=\"card warn\"><h3>Likely slips in the ruleset</h3><ul>");
            for w in &r.warnings {
                let _ = write!(self.out, "<li>{}</li>", text(w));
            }
            self.out.push_str("</ul></div>\n");
        }
        self.rules(r);
        let new: HashSet<&str> = r
            .drift
            .iter()
            .flat_map(|d| d.new_values.iter().map(|v| v.value.as_str()))
            .collect();
        self.unmatched(r, &new);
        self.issues_and_conflicts(r);
        self.examples(r);
        if let Some(d) = &r.drift {
            self.drift(r, d);
        }
        self.out.push_str("</section>\n");
    }

    /// Coverage at a glance: the figures, and every row of the column in
    /// one bar.
    fn glance(&mut self, r: &CoverageReport) {
        let c = &r.coverage;
        self.out
            .push_str("<div class=\"card\"><h3>Coverage</h3><div class=\"tiles\">");
        tile(
            &mut self.out,
            "big",
            &percent(c.row_share),
            &format!(
                "of rows with text covered ({} of {})",
                thousands(c.rows_covered),
                thousands(c.rows_considered)
            ),
        );
        tile(
            &mut self.out,
            "",
            &percent(c.distinct_share),
            &format!(
                "of distinct values covered ({} of {})",
                thousands(c.distinct_covered),
                thousands(c.distinct_considered)
            ),
        );
        tile(
            &mut self.out,
            "",
            &thousands(r.rows),
            &format!("rows, {} distinct values", thousands(r.distinct)),
        );
        tile(
            &mut self.out,
            "",
            &thousands(r.unmatched.len() as u64),
            &format!(
                "unmatched values on {} rows",
                thousands(c.rows_considered - c.rows_covered)
            ),
        );
        self.out.push_str("</div>\n");
        let parts = [
            ("covered", "covered", c.rows_covered),
            ("unmatched", "unmatched", c.rows_considered - c.rows_covered),
            ("placeholder", "placeholder", r.placeholder_rows),
            ("blank", "blank", r.blank_rows),
            ("null", "null", r.null_rows),
        ];
        let mut svg = Svg::new(
            720.0,
            30.0,
            "every row of the column, by what descry made of it",
        );
        svg.stretch();
        let mut x = 0.0;
        for (class, name, rows) in parts {
            let w = share_of(rows, r.rows) * 720.0;
            if rows > 0 {
                svg.rect(
                    class,
                    x,
                    0.0,
                    w,
                    30.0,
                    &format!(
                        "{name}: {} rows ({})",
                        thousands(rows),
                        percent(share_of(rows, r.rows))
                    ),
                );
            }
            x += w;
        }
        if r.rows == 0 {
            svg.rect("null", 0.0, 0.0, 720.0, 30.0, "no rows");
        }
        self.out.push_str(&svg.finish());
        self.out.push_str("<ul class=\"legend\">");
        for (class, name, rows) in parts {
            let _ = write!(
                self.out,
                "<li><span class=\"swatch {class}\"></span>{name} {} <span class=\"muted\">({})</span></li>",
                thousands(rows),
                percent(share_of(rows, r.rows))
            );
        }
        self.out.push_str("</ul>\n");
        if !r.placeholders.is_empty() {
            let listed: Vec<String> = r
                .placeholders
                .iter()
                .take(20)
                .map(|p| {
                    format!(
                        "<code class=\"value\">{}</code> {}",
                        text(&p.value),
                        thousands(p.rows)
                    )
                })
                .collect();
            let _ = write!(
                self.out,
                "<p class=\"note\">Placeholders (every feature null, left out of coverage): {}{}</p>\n",
                listed.join(", "),
                more(r.placeholders.len(), 20)
            );
        }
        self.out.push_str("</div>\n");
    }

    fn gates(&mut self, r: &CoverageReport) {
        if r.gates.is_empty() {
            return;
        }
        let failed = r.gates.iter().filter(|g| !g.passed).count();
        let _ = write!(
            self.out,
            "<div class=\"card\"><h3>Gates <span class=\"muted\">{} passed, {failed} failed</span></h3>\
             <ul class=\"gates\">",
            r.gates.len() - failed
        );
        for g in &r.gates {
            // A reason names its option and threshold already.
            let _ = match &g.reason {
                Some(reason) => write!(
                    self.out,
                    "<li class=\"fail\"><span class=\"mark\">failed</span> {}</li>",
                    text(reason)
                ),
                None => write!(
                    self.out,
                    "<li class=\"{}\"><span class=\"mark\">{}</span> <code>{}</code> {}</li>",
                    if g.passed { "pass" } else { "fail" },
                    if g.passed { "passed" } else { "failed" },
                    gate_option(g),
                    gate_value(g)
                ),
            };
        }
        self.out.push_str("</ul></div>\n");
    }

    /// One bar per rule: its share of the rows with text.
    fn rules(&mut self, r: &CoverageReport) {
        self.out.push_str(
            "<div class=\"card\"><h3>Rules <span class=\"muted\">share of the rows with text each \
             rule fires on</span></h3>\n",
        );
        let considered = r.coverage.rows_considered;
        let rows: Vec<Bar> = r
            .rules
            .iter()
            .map(|rule| {
                let share = share_of(rule.rows_hit, considered);
                Bar {
                    label: rule.output.clone(),
                    bars: vec![("hit", share)],
                    note: format!(
                        "{}: {} kind, line {}; {} rows, {} distinct values",
                        rule.output,
                        rule.kind,
                        rule.line,
                        thousands(rule.rows_hit),
                        thousands(rule.distinct_hit)
                    ),
                }
            })
            .collect();
        self.out.push_str(&bar_chart(
            &rows,
            1.0,
            "share of the rows with text each rule fires on",
        ));
        if !r.silent_rules.is_empty() {
            let names: Vec<String> = r.silent_rules.iter().map(|s| text(s)).collect();
            let _ = write!(
                self.out,
                "<p class=\"note\">Rules that hit nothing: {}</p>",
                names.join(", ")
            );
        }
        self.out.push_str("</div>\n");
    }

    fn unmatched(&mut self, r: &CoverageReport, new: &HashSet<&str>) {
        self.out
            .push_str("<div class=\"card\"><h3>Unmatched values</h3>\n");
        if r.unmatched.is_empty() {
            self.out.push_str(
                "<p class=\"note\">Every value with text is matched by at least one rule.</p></div>\n",
            );
            return;
        }
        let considered = r.coverage.rows_considered;
        let shown = r.unmatched.len().min(self.options.max_values);
        let _ = write!(
            self.out,
            "<p class=\"note\">{} distinct values on which no rule fires, most rows first{}{}.</p>\n",
            thousands(r.unmatched.len() as u64),
            if shown < r.unmatched.len() {
                format!("; the first {} are listed", thousands(shown as u64))
            } else {
                String::new()
            },
            if new.is_empty() {
                ""
            } else {
                "; values the baseline never saw are marked new"
            }
        );
        let rows = r.unmatched.iter().take(shown).map(|v| {
            format!(
                "<tr{}>{}<td class=\"value raw\">{}</td><td class=\"value\">{}</td></tr>\n",
                if new.contains(v.value.as_str()) {
                    " class=\"new\""
                } else {
                    ""
                },
                rows_and_share(v.rows, considered),
                text(&v.value),
                text(&v.normalized)
            )
        });
        self.table(
            "unmatched values",
            &["rows", "share", "value", "normalized"],
            rows,
        );
        self.out.push_str("</div>\n");
    }

    fn issues_and_conflicts(&mut self, r: &CoverageReport) {
        let max = self.options.max_values;
        if !r.issues.is_empty() {
            let _ = write!(
                self.out,
                "<div class=\"card\"><h3>Values a rule could not read <span class=\"muted\">{} \
                 (written as null)</span></h3>\n",
                thousands(r.issues.len() as u64)
            );
            let rows = r.issues.iter().take(max).map(|i| {
                format!(
                    "<tr>{}<td>{}</td><td class=\"value\">{}</td><td>{}</td></tr>\n",
                    rows_cell(i.rows),
                    text(&i.rule),
                    text(&i.value),
                    text(&i.issue.to_string())
                )
            });
            self.table(
                "values a rule could not read",
                &["rows", "rule", "value", "why"],
                rows,
            );
            self.out.push_str("</div>\n");
        }
        if !r.conflicts.is_empty() {
            let _ = write!(
                self.out,
                "<div class=\"card\"><h3>Conflicts <span class=\"muted\">{} values where several \
                 label cases match; the first wins</span></h3>\n",
                thousands(r.conflicts.len() as u64)
            );
            let rows = r.conflicts.iter().take(max).map(|c| {
                let also: Vec<String> = c.also.iter().map(|a| text(a)).collect();
                format!(
                    "<tr>{}<td>{}</td><td class=\"value\">{}</td><td>{}</td><td>{}</td></tr>\n",
                    rows_cell(c.rows),
                    text(&c.rule),
                    text(&c.value),
                    text(&c.chosen),
                    also.join(", ")
                )
            });
            self.table(
                "conflicts",
                &["rows", "rule", "value", "chosen", "also matched"],
                rows,
            );
            self.out.push_str("</div>\n");
        }
    }

    fn examples(&mut self, r: &CoverageReport) {
        if r.examples.is_empty() {
            return;
        }
        let _ = write!(
            self.out,
            "<div class=\"card\"><h3>The ruleset's examples <span class=\"muted\">{} passed, {} failed</span></h3>\n\
             <table class=\"plain\"><thead><tr><th class=\"narrow\">line</th><th>value</th><th>result</th></tr></thead><tbody>\n",
            r.examples.len() - r.examples_failed,
            r.examples_failed
        );
        for e in &r.examples {
            let result = if e.passed {
                "<span class=\"mark\">passed</span>".to_owned()
            } else {
                let wrong: Vec<String> = e
                    .mismatches
                    .iter()
                    .map(|m| {
                        format!(
                            "{}: expected <code>{}</code>, got <code>{}</code>",
                            text(&m.feature),
                            text(&m.expected.to_string()),
                            text(&m.got.to_string())
                        )
                    })
                    .collect();
                format!("<span class=\"mark\">failed</span> {}", wrong.join("; "))
            };
            let _ = write!(
                self.out,
                "<tr class=\"{}\"><td class=\"num\">{}</td><td class=\"value\">{}</td><td>{result}</td></tr>\n",
                if e.passed { "pass" } else { "fail" },
                e.line,
                text(&e.value)
            );
        }
        self.out.push_str("</tbody></table></div>\n");
    }

    fn drift(&mut self, r: &CoverageReport, d: &Drift) {
        let _ = write!(
            self.out,
            "<div class=\"card drift\"><h3>Drift since the baseline <code>{}</code></h3>\n",
            text(&d.baseline)
        );
        if d.ruleset_changed {
            self.out.push_str(
                "<p class=\"note warn\">The ruleset changed since the baseline was saved; the \
                 drops are compared all the same.</p>\n",
            );
        }
        self.out.push_str("<div class=\"tiles\">");
        tile(
            &mut self.out,
            "",
            &thousands(d.new_values.len() as u64),
            "values the baseline never saw",
        );
        tile(
            &mut self.out,
            "",
            &percent(d.new_row_share),
            "of the rows with text hold new values",
        );
        tile(
            &mut self.out,
            "",
            &d.new_covered_share.map_or("-".to_owned(), percent),
            "of the rows on new values covered",
        );
        tile(
            &mut self.out,
            "",
            &thousands(d.gone_values.len() as u64),
            "values of the baseline gone",
        );
        self.out.push_str("</div>\n");
        if !d.labels.is_empty() {
            self.out.push_str(
                "<h4>Labels, before and after</h4>\n<ul class=\"legend\"><li><span class=\"swatch before\"></span>baseline</li>\
                 <li><span class=\"swatch after\"></span>this drop</li><li class=\"muted\">shares of the rows with a label</li></ul>\n\
                 <div class=\"labels\">",
            );
            for l in &d.labels {
                self.label_figure(l);
            }
            self.out.push_str("</div>\n");
        }
        self.drift_table(d);
        self.new_values(r, d);
        self.gone_values(d);
        self.out.push_str("</div>\n");
    }

    fn label_figure(&mut self, l: &LabelShift) {
        let top = l
            .categories
            .iter()
            .flat_map(|c| [c.share_before, c.share_after])
            .fold(0.0f64, f64::max);
        let rows: Vec<Bar> = l
            .categories
            .iter()
            .map(|c| Bar {
                label: c.category.clone(),
                bars: vec![("before", c.share_before), ("after", c.share_after)],
                note: format!(
                    "{}: {} rows ({}) before, {} rows ({}) after",
                    c.category,
                    thousands(c.rows_before),
                    percent(c.share_before),
                    thousands(c.rows_after),
                    percent(c.share_after)
                ),
            })
            .collect();
        let _ = write!(
            self.out,
            "<figure class=\"{}\">{}<figcaption><span class=\"name\">{}</span>: PSI {:.4} ({}), \
             chi-square p {}</figcaption></figure>\n",
            if l.psi > 0.25 { "alarm" } else { "" },
            bar_chart(
                &rows,
                if top > 0.0 { top } else { 1.0 },
                &format!("shares of label {} before and after", l.output)
            ),
            text(&l.output),
            l.psi,
            psi_reading(l.psi),
            p_value(l.p_value)
        );
    }

    /// Every drift figure in one table: rule shares (two-proportion test),
    /// labels (PSI, chi-square), counts and measures (Kolmogorov-Smirnov).
    fn drift_table(&mut self, d: &Drift) {
        self.out.push_str(
            "<h4>What moved</h4>\n<table class=\"plain drift-table\"><thead><tr><th>what</th><th>feature</th>\
             <th>baseline</th><th>this drop</th><th>change</th><th>p-value</th></tr></thead><tbody>\n",
        );
        for s in &d.rules {
            let change = (s.share_after - s.share_before) * 100.0;
            let _ = write!(
                self.out,
                "<tr><td>rule share</td><td class=\"name\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td>\
                 <td class=\"num\">{change:+.2} points</td><td class=\"num\">{}</td></tr>\n",
                text(&s.output),
                percent(s.share_before),
                percent(s.share_after),
                p_value(s.p_value)
            );
        }
        for l in &d.labels {
            let _ = write!(
                self.out,
                "<tr class=\"{}\"><td>label</td><td class=\"name\">{}</td><td class=\"num\">{} rows</td>\
                 <td class=\"num\">{} rows</td><td class=\"num\">PSI {:.4} ({})</td><td class=\"num\">{}</td></tr>\n",
                if l.psi > 0.25 { "alarm" } else { "" },
                text(&l.output),
                thousands(l.categories.iter().map(|c| c.rows_before).sum()),
                thousands(l.categories.iter().map(|c| c.rows_after).sum()),
                l.psi,
                psi_reading(l.psi),
                p_value(l.p_value)
            );
        }
        for (kind, shifts) in [("count", &d.counts), ("measure", &d.measures)] {
            for s in shifts.iter() {
                let _ = write!(
                    self.out,
                    "<tr><td>{kind}</td><td class=\"name\">{}</td><td class=\"num\">{} rows</td>\
                     <td class=\"num\">{} rows</td><td class=\"num\">KS D {}</td><td class=\"num\">{}</td></tr>\n",
                    text(&s.output),
                    thousands(s.rows_before),
                    thousands(s.rows_after),
                    s.ks_statistic.map_or("-".to_owned(), |v| format!("{v:.4}")),
                    s.p_value.map_or("-".to_owned(), p_value)
                );
            }
        }
        self.out.push_str(
            "</tbody></table>\n<p class=\"note\">Rule shares: two-proportion z-test. Labels: population \
             stability index (below 0.1 stable, 0.1 to 0.25 a moderate shift, above 0.25 a large one: \
             common practice) and the chi-square test of homogeneity. Counts and measures: two-sample \
             Kolmogorov-Smirnov over rows.</p>\n",
        );
    }

    fn new_values(&mut self, r: &CoverageReport, d: &Drift) {
        let _ = write!(
            self.out,
            "<h4>New values <span class=\"muted\">{}</span></h4>\n",
            thousands(d.new_values.len() as u64)
        );
        if d.new_values.is_empty() {
            self.out
                .push_str("<p class=\"note\">Every value was seen in the baseline.</p>\n");
            return;
        }
        let considered = r.coverage.rows_considered;
        let shown = d.new_values.len().min(self.options.max_values);
        if shown < d.new_values.len() {
            let _ = write!(
                self.out,
                "<p class=\"note\">The first {} by rows are listed.</p>\n",
                thousands(shown as u64)
            );
        }
        let rows = d.new_values.iter().take(shown).map(|v| {
            format!(
                "<tr class=\"new\">{}<td>{}</td><td class=\"value\">{}</td></tr>\n",
                rows_and_share(v.rows, considered),
                if v.covered { "covered" } else { "unmatched" },
                text(&v.value)
            )
        });
        self.table("new values", &["rows", "share", "covered", "value"], rows);
    }

    fn gone_values(&mut self, d: &Drift) {
        if d.gone_values.is_empty() {
            return;
        }
        let shown = 20.min(d.gone_values.len());
        let listed: Vec<String> = d
            .gone_values
            .iter()
            .take(shown)
            .map(|v| {
                format!(
                    "<code class=\"value\">{}</code> {}",
                    text(&v.value),
                    thousands(v.rows)
                )
            })
            .collect();
        let _ = write!(
            self.out,
            "<h4>Gone values <span class=\"muted\">{}</span></h4>\n<p class=\"note\">Most baseline rows \
             first: {}{}</p>\n",
            thousands(d.gone_values.len() as u64),
            listed.join(", "),
            more(d.gone_values.len(), shown)
        );
    }

    /// A table of values that the script makes sortable and filterable
    /// (its filter box stays hidden until the script shows it); the `rows`
    /// and `share` columns sort as numbers, by their `data-v`.
    fn table(&mut self, what: &str, columns: &[&str], rows: impl Iterator<Item = String>) {
        self.tables += 1;
        let id = format!("values-{}", self.tables);
        let _ = write!(
            self.out,
            "<div class=\"tools\" data-for=\"{id}\" hidden><input type=\"search\" placeholder=\"filter {what}\" \
             aria-label=\"filter {what}\"> <span class=\"count\"></span></div>\n\
             <table class=\"values\" id=\"{id}\"><thead><tr>"
        );
        for name in columns {
            let sort = match *name {
                "rows" | "share" => "number",
                _ => "text",
            };
            let _ = write!(self.out, "<th data-sort=\"{sort}\">{name}</th>");
        }
        self.out.push_str("</tr></thead><tbody>\n");
        for row in rows {
            self.out.push_str(&row);
        }
        self.out.push_str("</tbody></table>\n");
    }
}

fn verdict(passed: bool) -> &'static str {
    if passed {
        "<span class=\"verdict pass\">every gate passed</span>"
    } else {
        "<span class=\"verdict fail\">a gate failed</span>"
    }
}

fn tile(out: &mut String, class: &str, figure: &str, what: &str) {
    let _ = write!(
        out,
        "<div class=\"tile {class}\"><div class=\"figure\">{}</div><div class=\"what\">{}</div></div>",
        encode_text(figure),
        encode_text(what)
    );
}

/// A table cell of rows, sorted by its number.
fn rows_cell(rows: u64) -> String {
    format!(
        "<td class=\"num\" data-v=\"{rows}\">{}</td>",
        thousands(rows)
    )
}

/// The cells of rows and their share of `considered` rows.
fn rows_and_share(rows: u64, considered: u64) -> String {
    let share = share_of(rows, considered);
    format!(
        "{}<td class=\"num\" data-v=\"{share}\">{}</td>",
        rows_cell(rows),
        percent(share)
    )
}

fn more(total: usize, shown: usize) -> String {
    if total > shown {
        format!(" and {} more", thousands((total - shown) as u64))
    } else {
        String::new()
    }
}

/// A gate as its command-line option, e.g. `--max-psi 0.25`.
fn gate_option(g: &Gate) -> String {
    let threshold = g.threshold.map_or(String::new(), |t| format!(" {t}"));
    match (&g.feature, g.gate) {
        (Some(f), _) => format!("--require {}={}", text(f), threshold.trim()),
        (None, "examples") => "examples".to_owned(),
        (None, gate) => format!("--{}{threshold}", gate.replace('_', "-")),
    }
}

/// A passed gate's measured figure.
fn gate_value(g: &Gate) -> String {
    match (g.value, g.gate) {
        (None, _) => "nothing to measure".to_owned(),
        (Some(v), "max_psi") => format!("largest PSI {v:.4}"),
        (Some(v), "max_shift") => format!("largest shift {:.2} points", v * 100.0),
        (Some(_), "examples") => "every example passes".to_owned(),
        (Some(v), _) => format!("measured {}", percent(v)),
    }
}

/// One row of a bar chart: a label and one or more bars (class, share).
struct Bar {
    label: String,
    bars: Vec<(&'static str, f64)>,
    /// The row's tooltip.
    note: String,
}

/// Horizontal bars, one row per [`Bar`], scaled so that `full` spans the
/// plot.
fn bar_chart(rows: &[Bar], full: f64, title: &str) -> String {
    const LABEL: f64 = 210.0;
    const PLOT: f64 = 420.0;
    const THICK: f64 = 12.0;
    const GAP: f64 = 10.0;
    let row_height = |b: &Bar| b.bars.len() as f64 * (THICK + 2.0) + GAP;
    let height: f64 = rows.iter().map(row_height).sum::<f64>() + 4.0;
    let mut svg = Svg::new(LABEL + PLOT + 80.0, height.max(20.0), title);
    let mut y = 4.0;
    for row in rows {
        let h = row_height(row) - GAP;
        let _ = write!(svg.body, "<g><title>{}</title>", text(&row.note));
        svg.text(
            "label",
            LABEL - 10.0,
            y + h / 2.0 + 4.0,
            "end",
            &cut(&row.label, 30),
        );
        svg.rect("track", LABEL, y, PLOT, h, "");
        for (i, &(class, share)) in row.bars.iter().enumerate() {
            let top = y + i as f64 * (THICK + 2.0);
            let w = (share / full).clamp(0.0, 1.0) * PLOT;
            svg.rect(class, LABEL, top, w, THICK, "");
            svg.text(
                "figure",
                LABEL + w + 6.0,
                top + THICK - 2.0,
                "start",
                &percent(share),
            );
        }
        svg.body.push_str("</g>");
        y += row_height(row);
    }
    svg.finish()
}

/// At most `n` characters, with an ellipsis when cut.
fn cut(s: &str, n: usize) -> String {
    if s.chars().count() <= n {
        s.to_owned()
    } else {
        s.chars().take(n - 1).chain(['…']).collect()
    }
}

/// An inline SVG chart drawn in a `width` × `height` box that scales to
/// the page's width.
struct Svg {
    head: String,
    body: String,
}

impl Svg {
    fn new(width: f64, height: f64, title: &str) -> Svg {
        Svg {
            head: format!(
                "<svg class=\"chart\" viewBox=\"0 0 {width} {height}\" role=\"img\" aria-label=\"{}\">",
                attribute(title)
            ),
            body: String::new(),
        }
    }

    /// A rectangle; a non-empty `tip` becomes its tooltip.
    fn rect(&mut self, class: &str, x: f64, y: f64, w: f64, h: f64, tip: &str) {
        let _ = write!(
            self.body,
            "<rect class=\"{class}\" x=\"{x:.1}\" y=\"{y:.1}\" width=\"{w:.1}\" height=\"{h:.1}\">"
        );
        if !tip.is_empty() {
            let _ = write!(self.body, "<title>{}</title>", text(tip));
        }
        self.body.push_str("</rect>");
    }

    /// Fill the page's width at a fixed height (a single bar).
    fn stretch(&mut self) {
        self.head = self.head.replace(
            "<svg class=\"chart\"",
            "<svg class=\"chart stretch\" preserveAspectRatio=\"none\"",
        );
    }

    fn text(&mut self, class: &str, x: f64, y: f64, anchor: &str, content: &str) {
        let _ = write!(
            self.body,
            "<text class=\"{class}\" x=\"{x:.1}\" y=\"{y:.1}\" text-anchor=\"{anchor}\">{}</text>",
            text(content)
        );
    }

    fn finish(self) -> String {
        format!("{}{}</svg>\n", self.head, self.body)
    }
}

const STYLE: &str = r#"
:root{--paper:#f4f1ea;--card:#fffdf8;--ink:#1e2a32;--muted:#6b7278;--line:#e3ddd0;
--covered:#2c7a67;--unmatched:#d27d2d;--placeholder:#8a86a8;--blank:#bdb6a6;--null:#ddd6c8;
--before:#a9b2ba;--after:#2c7a67;--new:#fff0c2;--fail:#b0302a;--pass:#2c7a67}
*{box-sizing:border-box}
body{margin:0;background:var(--paper);color:var(--ink);font:15px/1.5 system-ui,-apple-system,"Segoe UI",Roboto,sans-serif}
.wrap{max-width:1080px;margin:0 auto;padding:0 24px}
header.top{border-top:6px solid var(--covered);padding:22px 0 10px}
.kicker{margin:0;text-transform:uppercase;letter-spacing:.14em;font-size:12px;color:var(--muted)}
h1{margin:2px 0 8px;font-size:26px;font-weight:650}
h2{font-size:21px;margin:34px 0 10px;padding-top:12px;border-top:2px solid var(--line)}
h3{margin:0 0 12px;font-size:17px}
h4{margin:22px 0 8px;font-size:15px}
.name{font-family:ui-monospace,"SFMono-Regular",Menlo,Consolas,monospace}
.by,.muted{color:var(--muted);font-weight:400}
.by{font-size:.7em}
.verdict{display:inline-block;font-size:13px;font-weight:600;padding:2px 10px;border-radius:999px;vertical-align:middle;margin-left:6px}
.verdict.pass{background:#dcefe8;color:var(--pass)}
.verdict.fail{background:#f6dcd9;color:var(--fail)}
.card{background:var(--card);border:1px solid var(--line);border-radius:10px;padding:18px 20px;margin:16px 0}
.card.warn{border-left:5px solid var(--unmatched)}
.tiles{display:flex;flex-wrap:wrap;gap:12px;margin-bottom:14px}
.tile{flex:1 1 160px;border-left:3px solid var(--line);padding:2px 12px}
.tile .figure{font-size:24px;font-weight:650;font-variant-numeric:tabular-nums}
.tile.big{border-left-color:var(--covered)}
.tile.big .figure{font-size:34px;color:var(--covered)}
.tile .what{color:var(--muted);font-size:13px}
svg.chart{display:block;width:100%;max-width:820px;height:auto;margin:6px 0}
svg.chart.stretch{max-width:none;height:30px;border-radius:4px}
svg .covered,svg .hit,svg .after{fill:var(--covered)}
svg .unmatched{fill:var(--unmatched)}
svg .placeholder{fill:var(--placeholder)}
svg .blank{fill:var(--blank)}
svg .null{fill:var(--null)}
svg .before{fill:var(--before)}
svg .track{fill:#f0ebe0}
svg text{font:12px system-ui,sans-serif;fill:var(--ink)}
svg text.label{font-family:ui-monospace,Menlo,Consolas,monospace}
svg text.figure{fill:var(--muted);font-variant-numeric:tabular-nums}
.legend{list-style:none;padding:0;margin:4px 0;display:flex;flex-wrap:wrap;gap:6px 18px;font-size:13px}
.swatch{display:inline-block;width:11px;height:11px;border-radius:2px;margin-right:6px;vertical-align:-1px}
.swatch.covered,.swatch.after{background:var(--covered)}.swatch.unmatched{background:var(--unmatched)}
.swatch.placeholder{background:var(--placeholder)}.swatch.blank{background:var(--blank)}
.swatch.null{background:var(--null)}.swatch.before{background:var(--before)}
.note{color:var(--muted);font-size:13.5px;margin:6px 0 10px}
.note.warn{color:var(--fail)}
ul.gates,ul.toc{list-style:none;padding:0;margin:0}
ul.gates li,ul.toc li{padding:5px 0;border-bottom:1px dashed var(--line)}
.mark{display:inline-block;min-width:58px;font-weight:650;font-size:13px}
.pass .mark{color:var(--pass)}.fail .mark{color:var(--fail)}
table{border-collapse:collapse;width:100%;font-size:14px}
th,td{text-align:left;padding:5px 10px;border-bottom:1px solid var(--line);vertical-align:top}
th{font-size:12px;text-transform:uppercase;letter-spacing:.06em;color:var(--muted);font-weight:600}
th.narrow{width:4em}
td.num{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
.value{font-family:ui-monospace,"SFMono-Regular",Menlo,Consolas,monospace;white-space:pre-wrap;word-break:break-all}
code.value{background:#f0ebe0;padding:0 4px;border-radius:3px}
tr.new td{background:var(--new)}
tr.new td.raw::after{content:"new";margin-left:8px;padding:0 6px;border-radius:4px;background:var(--unmatched);color:#fff;font:600 11px system-ui,sans-serif;vertical-align:1px}
tr.new td:first-child{box-shadow:inset 4px 0 0 var(--unmatched)}
tr.fail td,tr.alarm td{background:#fbeae7}
tr.alarm td.name::after,figure.alarm figcaption::after{content:" large shift";color:var(--fail);font-weight:600;font-family:system-ui,sans-serif;font-size:12px}
th.sortable{cursor:pointer;user-select:none}
th.sortable:hover{color:var(--ink)}
th[aria-sort=ascending]::after{content:" \25B2"}
th[aria-sort=descending]::after{content:" \25BC"}
.tools{margin:4px 0 8px}
.tools input{font:inherit;padding:5px 10px;border:1px solid var(--line);border-radius:6px;width:min(360px,100%);background:#fff}
.tools .count{color:var(--muted);font-size:13px;margin-left:8px}
.labels{display:grid;grid-template-columns:repeat(auto-fit,minmax(440px,1fr));gap:10px 24px}
figure{margin:0}
figcaption{font-size:13.5px;color:var(--muted)}
footer{color:var(--muted);font-size:13px;padding:20px 24px 40px}
a{color:var(--covered)}
"#;

/// Sorting by any column (numbers by `data-v`, text by what it says) and
/// filtering by the value columns; the page reads fully without it.
const SCRIPT: &str = r#"
(function(){
document.querySelectorAll('table.values').forEach(function(table){
  var body=table.tBodies[0], rows=Array.prototype.slice.call(body.rows);
  var tools=document.querySelector('.tools[data-for="'+table.id+'"]');
  if(tools){
    var input=tools.querySelector('input'), count=tools.querySelector('.count');
    var filter=function(){
      var q=input.value.toLowerCase(), n=0;
      rows.forEach(function(r){
        var t=Array.prototype.map.call(r.querySelectorAll('td.value'),function(c){return c.textContent;}).join(' ').toLowerCase();
        r.hidden=t.indexOf(q)<0; if(!r.hidden){n++;}
      });
      count.textContent=n+' of '+rows.length+' shown';
    };
    input.addEventListener('input',filter); tools.hidden=false; filter();
  }
  var heads=table.tHead.rows[0].cells;
  Array.prototype.forEach.call(heads,function(th,i){
    var kind=th.getAttribute('data-sort'); if(!kind){return;}
    th.classList.add('sortable'); th.tabIndex=0;
    var sort=function(){
      var down=th.getAttribute('aria-sort')!=='descending';
      Array.prototype.forEach.call(heads,function(h){h.removeAttribute('aria-sort');});
      th.setAttribute('aria-sort',down?'descending':'ascending');
      var key=function(r){var c=r.cells[i];return kind==='number'?parseFloat(c.getAttribute('data-v')):c.textContent.toLowerCase();};
      rows.sort(function(a,b){var x=key(a),y=key(b);var o=x<y?-1:x>y?1:0;return down?-o:o;});
      rows.forEach(function(r){body.appendChild(r);});
    };
    th.addEventListener('click',sort);
    th.addEventListener('keydown',function(e){if(e.key==='Enter'||e.key===' '){e.preventDefault();sort();}});
  });
});
})();
"#;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn markup_in_a_value_is_text() {
        assert_eq!(
            text("<script>alert(1)</script>"),
            "&lt;script&gt;alert(1)&lt;/script&gt;"
        );
        assert_eq!(attribute("\"><b>"), "&quot;&gt;&lt;b&gt;");
        // Control characters are shown, as in the text report.
        assert_eq!(text("a\u{7}b"), "a\\u{7}b");
    }

    #[test]
    fn shares_near_the_ends_never_round_to_them() {
        assert_eq!(percent(0.0), "0.0%");
        assert_eq!(percent(0.0001), "<0.1%");
        assert_eq!(percent(0.99999), ">99.9%");
        assert_eq!(percent(1.0), "100.0%");
        assert_eq!(percent(0.1234), "12.3%");
    }
}
