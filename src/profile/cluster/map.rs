//! Writing clusters into a ruleset as a label `map`: each member's
//! normalized form maps to its cluster's canonical spelling.
//!
//! The ruleset file is edited, not rewritten: comments, layout and every
//! other rule stay as they are (`toml_edit`). Entries already in the map are
//! left alone, so a canonical spelling the user corrected by hand survives
//! the next run; only new normalized forms are added. If the label declares
//! `categories`, new canonical spellings are appended to it.
//!
//! Keys are normalized with the ruleset's own `[normalize]` table, because
//! that is what the map is matched against when the ruleset runs.

use std::path::{Path, PathBuf};

use serde::Serialize;
use toml_edit::{ArrayOfTables, DocumentMut, Item, Table, Value};

use super::{tidy, Cluster};
use crate::error::Error;
use crate::normalize::Normalizer;

/// What writing the map did.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct MapUpdate {
    pub path: PathBuf,
    pub label: String,
    pub created_file: bool,
    pub created_label: bool,
    /// Entries added to the map.
    pub added: usize,
    /// Entries already in the map with another value, left as they were.
    pub kept: usize,
    /// Canonical spellings appended to the label's `categories`.
    pub categories_added: usize,
}

/// Add the clusters to label `label` of the ruleset at `path` (created if
/// missing, with `column` as its column), atomically.
pub fn write_label_map(
    path: &Path,
    label: &str,
    column: &str,
    clusters: &[Cluster],
) -> Result<MapUpdate, Error> {
    let err = |message: String| Error::Output {
        path: path.to_owned(),
        message,
    };
    let existing = match std::fs::read_to_string(path) {
        Ok(text) => Some(text),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => None,
        Err(e) => return Err(err(format!("cannot read the ruleset to update it: {e}"))),
    };
    let mut update = MapUpdate {
        path: path.to_owned(),
        label: label.to_owned(),
        created_file: existing.is_none(),
        created_label: false,
        added: 0,
        kept: 0,
        categories_added: 0,
    };
    let text = match &existing {
        Some(text) => {
            let mut doc: DocumentMut = text.parse().map_err(|e| {
                err(format!("is not valid TOML, so the map cannot be added: {e}fix the file, or give --write-map another path"))
            })?;
            let normalizer = ruleset_normalizer(text).map_err(|m| err(m))?;
            add_map(
                &mut doc,
                label,
                &entries(clusters, &normalizer),
                &mut update,
            )
            .map_err(err)?;
            doc.to_string()
        }
        None => {
            let mut doc = DocumentMut::new();
            doc.insert("column", toml_edit::value(column));
            add_map(
                &mut doc,
                label,
                &entries(clusters, &Normalizer::default()),
                &mut update,
            )
            .map_err(err)?;
            format!(
                "# Ruleset for column \"{column}\", started by `descry cluster --write-map`.\n\
                 # Edit freely: later runs add new spellings and keep your changes.\n{doc}"
            )
        }
    };
    crate::write::write_text_atomically(path, &text)?;
    Ok(update)
}

/// The ruleset's `[normalize]` table, or the default.
fn ruleset_normalizer(text: &str) -> Result<Normalizer, String> {
    let table: toml::Table = toml::from_str(text).map_err(|e| format!("is not valid TOML: {e}"))?;
    match table.get("normalize") {
        None => Ok(Normalizer::default()),
        Some(v) => v
            .clone()
            .try_into()
            .map_err(|e| format!("has a [normalize] table descry cannot read: {e}")),
    }
}

/// (normalized form, canonical) for every member, in report order; the
/// first cluster to claim a form keeps it.
fn entries(clusters: &[Cluster], normalizer: &Normalizer) -> Vec<(String, String)> {
    let mut seen = hashbrown::HashSet::new();
    let mut out = Vec::new();
    for c in clusters {
        for m in &c.members {
            let key = normalizer.apply(&m.value);
            if !key.is_empty() && seen.insert(key.clone()) {
                out.push((key, tidy(&c.canonical)));
            }
        }
    }
    out
}

fn add_map(
    doc: &mut DocumentMut,
    label: &str,
    entries: &[(String, String)],
    update: &mut MapUpdate,
) -> Result<(), String> {
    let labels = doc
        .entry("label")
        .or_insert(Item::ArrayOfTables(ArrayOfTables::new()));
    let Some(labels) = labels.as_array_of_tables_mut() else {
        return Err("has a `label` key that is not a list of [[label]] tables; \
                    write labels as [[label]] tables, or give --write-map another path"
            .to_owned());
    };
    let found = labels
        .iter()
        .position(|t| t.get("name").and_then(Item::as_str) == Some(label));
    let index = match found {
        Some(i) => i,
        None => {
            let mut t = Table::new();
            t.insert("name", toml_edit::value(label));
            t.decor_mut().set_prefix(
                "\n# Spellings grouped by `descry cluster`: normalized value = canonical label.\n",
            );
            labels.push(t);
            update.created_label = true;
            labels.len() - 1
        }
    };
    let table = labels.get_mut(index).expect("index is in range");
    add_entries(table, entries, update)?;
    add_categories(table, entries, update);
    Ok(())
}

fn add_entries(
    label: &mut Table,
    entries: &[(String, String)],
    update: &mut MapUpdate,
) -> Result<(), String> {
    let map = label.entry("map").or_insert_with(|| {
        let mut t = Table::new();
        t.set_dotted(true);
        Item::Table(t)
    });
    let mut put = |get: &dyn Fn(&str) -> Option<String>, insert: &mut dyn FnMut(&str, &str)| {
        for (key, canonical) in entries {
            match get(key) {
                None => {
                    insert(key, canonical);
                    update.added += 1;
                }
                Some(old) if old != *canonical => update.kept += 1,
                Some(_) => {}
            }
        }
    };
    match map {
        Item::Table(t) => {
            let snapshot = t.clone();
            put(&|k| snapshot.get(k).and_then(Item::as_str).map(str::to_owned), &mut |k, v| {
                t.insert(k, toml_edit::value(v));
            });
        }
        Item::Value(Value::InlineTable(t)) => {
            let snapshot = t.clone();
            put(&|k| snapshot.get(k).and_then(Value::as_str).map(str::to_owned), &mut |k, v| {
                t.insert(k, Value::from(v));
            });
            if t.len() != snapshot.len() {
                t.fmt();
            }
        }
        _ => return Err(format!(
            "label \"{}\" has a `map` that is not a table; write it as map = {{ \"value\" = \"label\" }}",
            label.get("name").and_then(Item::as_str).unwrap_or("?")
        )),
    }
    Ok(())
}

fn add_categories(label: &mut Table, entries: &[(String, String)], update: &mut MapUpdate) {
    let Some(categories) = label.get_mut("categories").and_then(Item::as_array_mut) else {
        return;
    };
    for (_, canonical) in entries {
        if !categories.iter().any(|c| c.as_str() == Some(canonical)) {
            categories.push(canonical.as_str());
            update.categories_added += 1;
        }
    }
}

/// Write to a temporary file in the same folder, then rename it into place.
#[cfg(test)]
mod tests {
    use super::*;
    use crate::cluster::Member;

    fn cluster(canonical: &str, members: &[&str]) -> Cluster {
        Cluster {
            canonical: canonical.to_owned(),
            rows: members.len() as u64,
            members: members
                .iter()
                .map(|m| Member {
                    value: m.to_string(),
                    normalized: m.to_lowercase(),
                    rows: 1,
                })
                .collect(),
        }
    }

    #[test]
    fn a_new_file_is_a_ruleset_that_compiles() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("part.toml");
        let c = [cluster(
            "PMP-0750-3T",
            &["PMP-0750-3T", "pmp 0750 3t", "PMP0750-3T"],
        )];
        let u = write_label_map(&path, "part", "part_no", &c).unwrap();
        assert!(u.created_file && u.created_label);
        assert_eq!(u.added, 3);
        let text = std::fs::read_to_string(&path).unwrap();
        assert!(
            text.contains("map.\"pmp 0750 3t\" = \"PMP-0750-3T\""),
            "{text}"
        );
        let rules = crate::Ruleset::from_path(&path).unwrap();
        assert_eq!(rules.column.as_deref(), Some("part_no"));
    }

    #[test]
    fn comments_other_rules_and_hand_edits_survive() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("t.toml");
        let original = "# my transmission rules\ncolumn = \"transmission\"\n\n\
            [[flag]]\nname = \"shuttle\"  # reverser too\nany = [\"shuttle\"]\n\n\
            [[label]]\nname = \"kind\"\ncategories = [\"manual\"]\nmap = { \"man\" = \"manual\" }\n";
        std::fs::write(&path, original).unwrap();
        let c = [cluster("Manual", &["Manual", "man", "manaul"])];
        let u = write_label_map(&path, "kind", "transmission", &c).unwrap();
        assert!(!u.created_file && !u.created_label);
        assert_eq!((u.added, u.kept, u.categories_added), (2, 1, 1));
        let text = std::fs::read_to_string(&path).unwrap();
        assert!(text.starts_with("# my transmission rules\n"));
        assert!(text.contains("name = \"shuttle\"  # reverser too"));
        assert!(text.contains("\"man\" = \"manual\""), "{text}");
        assert!(text.contains("manaul = \"Manual\""), "{text}");
        assert!(crate::Ruleset::from_path(&path).is_ok(), "{text}");
        // A second run changes nothing.
        let again = write_label_map(&path, "kind", "transmission", &c).unwrap();
        assert_eq!((again.added, again.categories_added), (0, 0));
        assert_eq!(std::fs::read_to_string(&path).unwrap(), text);
    }

    #[test]
    fn keys_use_the_rulesets_normalization() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("p.toml");
        std::fs::write(&path, "[normalize]\ncase = \"none\"\n").unwrap();
        write_label_map(
            &path,
            "part",
            "p",
            &[cluster("PMP-1", &["PMP-1", " PMP-1 "])],
        )
        .unwrap();
        let text = std::fs::read_to_string(&path).unwrap();
        assert!(text.contains("map.PMP-1 = \"PMP-1\""), "{text}");
    }

    #[test]
    fn broken_toml_is_refused_and_left_alone() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("bad.toml");
        std::fs::write(&path, "[[label]\nname = ").unwrap();
        let e = write_label_map(&path, "x", "c", &[cluster("A", &["A", "a"])])
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("bad.toml") && e.contains("not valid TOML"),
            "{e}"
        );
        assert_eq!(std::fs::read_to_string(&path).unwrap(), "[[label]\nname = ");
    }
}
