//! The review file: groups written for a person to check before any of
//! them becomes a label map.
//!
//! `cluster -o groups.toml` writes every group with `keep = true`; the
//! reader sets `keep = false` on a wrong group, deletes the line of a
//! member that does not belong, or edits the canonical spelling; then
//! `cluster --from groups.toml --write-map R.toml --label NAME` writes the
//! kept groups only ([`read_review`] gives them back as [`Cluster`]s).

use serde::Deserialize;

use super::{tidy, Cluster, ClusterReport, Member};

/// The schema named in every review file.
pub const REVIEW_SCHEMA: &str = "descry.cluster-review/1";

/// A TOML string literal (quoted and escaped).
fn quoted(s: &str) -> String {
    toml::Value::String(s.to_owned()).to_string()
}

/// The report's groups as a review file.
pub fn review_toml(report: &ClusterReport) -> String {
    let mut out = String::new();
    out.push_str(
        "# Groups of values that `descry cluster` found to be probably the same thing.\n\
         # Review them: set keep = false on a wrong group, delete the line of a member\n\
         # that does not belong, edit a canonical spelling. Then write the kept groups\n\
         # as a label map:\n\
         #   descry cluster --from THIS_FILE --write-map RULES.toml --label NAME\n",
    );
    out.push_str(&format!("schema = {}\n", quoted(REVIEW_SCHEMA)));
    out.push_str(&format!("column = {}\n", quoted(&report.column)));
    out.push_str(&format!("method = {}\n", quoted(report.method.name)));
    for c in &report.clusters {
        out.push_str("\n[[group]]\n");
        out.push_str(&format!("canonical = {}\n", quoted(&c.canonical)));
        out.push_str("keep = true\n");
        out.push_str("members = [\n");
        for m in &c.members {
            out.push_str(&format!(
                "    {{ value = {}, rows = {} }},\n",
                quoted(&m.value),
                m.rows
            ));
        }
        out.push_str("]\n");
    }
    out
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct ReviewSpec {
    schema: String,
    column: String,
    #[allow(dead_code)]
    method: Option<String>,
    #[serde(default)]
    group: Vec<GroupSpec>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct GroupSpec {
    canonical: String,
    keep: bool,
    members: Vec<MemberSpec>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct MemberSpec {
    value: String,
    #[serde(default)]
    rows: u64,
}

/// What a review file holds after editing.
#[derive(Debug, Clone, PartialEq)]
pub struct Reviewed {
    pub column: String,
    /// The groups kept (`keep = true`) with at least one member.
    pub kept: Vec<Cluster>,
    /// How many groups were left out (`keep = false`).
    pub left_out: usize,
}

/// Read a review file; the message says what is wrong with it.
pub fn read_review(text: &str) -> Result<Reviewed, String> {
    let spec: ReviewSpec =
        toml::from_str(text).map_err(|e| format!("is not a review file: {e}"))?;
    if spec.schema != REVIEW_SCHEMA {
        return Err(format!(
            "has schema {:?}; a review file written by `descry cluster -o` has {REVIEW_SCHEMA:?}",
            spec.schema
        ));
    }
    let mut kept = Vec::new();
    let mut left_out = 0;
    for g in spec.group {
        if !g.keep {
            left_out += 1;
            continue;
        }
        if g.canonical.trim().is_empty() {
            return Err("has a kept group whose canonical spelling is empty".into());
        }
        let members: Vec<Member> = g
            .members
            .into_iter()
            .map(|m| Member {
                normalized: String::new(),
                value: m.value,
                rows: m.rows,
            })
            .collect();
        if members.is_empty() {
            continue;
        }
        kept.push(Cluster {
            canonical: tidy(&g.canonical),
            rows: members.iter().map(|m| m.rows).sum(),
            members,
        });
    }
    Ok(Reviewed {
        column: spec.column,
        kept,
        left_out,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cluster::{cluster, ClusterOptions, Method};
    use crate::Vocabulary;

    #[test]
    fn a_review_file_reads_back_and_drops_what_was_not_kept() {
        let vocab = Vocabulary::build(
            [
                "4-cyl",
                "4 cyl",
                "4 cyl",
                "say \"hi\"",
                "Say \"hi\"",
                "6-cyl",
                "6 cyl",
            ]
            .iter()
            .map(|v| Some(*v)),
        );
        let report = cluster(&vocab, "engine", &ClusterOptions::new(Method::Letters));
        let text = review_toml(&report);
        let all = read_review(&text).unwrap();
        assert_eq!(all.column, "engine");
        assert_eq!(all.kept.len(), 3);
        assert_eq!(all.kept[0].canonical, "4 cyl");
        assert_eq!(all.kept[0].members.len(), 2);
        assert_eq!(all.kept[0].rows, 3);
        assert!(all.kept[2].members.iter().any(|m| m.value == "say \"hi\""));
        // The person says the last group is wrong.
        let at = text.rfind("keep = true").unwrap();
        let edited = format!(
            "{}keep = false{}",
            &text[..at],
            &text[at + "keep = true".len()..]
        );
        let reviewed = read_review(&edited).unwrap();
        assert_eq!(reviewed.kept, all.kept[..2]);
        assert_eq!(reviewed.left_out, 1);
    }

    #[test]
    fn other_files_are_refused() {
        assert!(read_review("column = \"x\"\n").is_err());
        assert!(
            read_review("schema = \"descry.cluster/1\"\ncolumn = \"x\"\n")
                .unwrap_err()
                .contains("review file")
        );
    }
}
