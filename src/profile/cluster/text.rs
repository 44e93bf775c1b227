//! The cluster report as text. JSON is the report itself, serialized.

use std::fmt::Write;

use super::{ClusterReport, Digits};
use crate::render::{shown, thousands};

/// The report as text; `top` limits how many clusters are listed.
pub fn cluster_text(r: &ClusterReport, top: usize) -> String {
    let mut out = String::new();
    let m = &r.method;
    let threshold = match (m.threshold, m.threshold_kind) {
        (Some(t), Some("edits")) => format!(" at most {t} edits"),
        (Some(t), Some("ratio")) => format!(" at most {t} x the longer length in edits"),
        (Some(t), Some(_)) => format!(" similarity at least {t}"),
        _ => String::new(),
    };
    let q = m.q.map(|q| format!(" q={q}")).unwrap_or_default();
    let cap = match (m.max_diameter, m.threshold_kind) {
        (Some(d), Some("edits")) => format!(", every two members within {d} edits"),
        (Some(d), Some("ratio")) => format!(", every two members within {d} x the longer length"),
        (Some(d), Some(_)) => format!(", every two members at least {d} similar"),
        _ => String::new(),
    };
    let digits = match m.digits {
        Digits::Strict => "strict",
        Digits::Loose => "loose",
    };
    let _ = writeln!(
        out,
        "column {}  method {}{q}{threshold}, digits {digits}{cap}",
        shown(&r.column),
        m.name
    );
    let _ = writeln!(
        out,
        "rows {}  null {}  blank {}  distinct values {}  normalized forms {}",
        thousands(r.rows),
        thousands(r.null_rows),
        thousands(r.blank_rows),
        thousands(r.values),
        thousands(r.normalized_forms)
    );
    if m.search != "exact" {
        let _ = writeln!(
            out,
            "pairs compared {} ({}), similar pairs {}, {} of them with words that agree",
            thousands(r.pairs_compared),
            m.search,
            thousands(r.pairs_found),
            thousands(r.pairs_kept)
        );
    }
    if r.forms_searched_by_words > 0 {
        let _ = writeln!(
            out,
            "{} long values searched by their words: between two of them, only pairs whose words agree are found",
            thousands(r.forms_searched_by_words)
        );
    }
    let _ = writeln!(
        out,
        "clusters {}  holding {} distinct values and {} rows",
        thousands(r.clusters.len() as u64),
        thousands(r.values_clustered),
        thousands(r.rows_clustered)
    );
    for (i, c) in r.clusters.iter().take(top).enumerate() {
        let _ = writeln!(
            out,
            "\n#{} {} ({} rows, {} values)",
            i + 1,
            shown(&c.canonical),
            thousands(c.rows),
            c.members.len()
        );
        for (j, member) in c.members.iter().enumerate() {
            let mark = if j == 0 { "*" } else { " " };
            let _ = writeln!(
                out,
                "  {mark} {:>9}  {}",
                thousands(member.rows),
                shown(&member.value)
            );
        }
    }
    if r.clusters.len() > top {
        let _ = writeln!(
            out,
            "\n... {} more clusters (--top N lists more; --format json lists all)",
            r.clusters.len() - top
        );
    }
    out
}
