//! `descry propose` on a column of codes: the codes are read by position
//! (a label per letter segment, a `canonical` map over separator and
//! zero-padding variants), and no digit segment becomes a count or a
//! measure, no letter segment a unit.
//!
//! The part codes below are invented for these tests: four families of an
//! imaginary pump-and-valve catalogue (`PMP`, `VLV`, `FTG`, `HSG`), a
//! zero-padded size, and a material suffix (`CI`, `SS`, `BR`), some with a
//! revision (`-R2`). No real vendor or product is meant.

mod common;

use common::{run, s, stderr, stdout, write};
use descry::{Cell, Ruleset, Vocabulary};

const FAMILIES: [(&str, usize); 4] = [("PMP", 5), ("VLV", 4), ("FTG", 3), ("HSG", 2)];
const SIZES: [u32; 6] = [75, 120, 250, 500, 750, 1200];
const MATERIALS: [(&str, usize); 3] = [("CI", 3), ("SS", 2), ("BR", 1)];

/// Every spelling of the invented codes with its rows, and the spelling the
/// catalogue uses (`PMP-0750-CI`). Values that are no codes are added by
/// the callers.
fn part_codes() -> Vec<(String, usize, String)> {
    let mut out = Vec::new();
    for (family, fw) in FAMILIES {
        for (k, size) in SIZES.iter().enumerate() {
            for (material, mw) in MATERIALS {
                let n = fw * mw;
                let catalogue = format!("{family}-{size:04}-{material}");
                let lower = |s: String| s.to_lowercase();
                out.push((catalogue.clone(), 6 * n, catalogue.clone()));
                out.push((
                    lower(format!("{family}.{size}.{material}")),
                    2 * n,
                    catalogue.clone(),
                ));
                out.push((format!("{family}{size:04}{material}"), n, catalogue.clone()));
                out.push((format!("{family}-{size}-{material}"), n, catalogue.clone()));
                out.push((
                    format!("{family} {size:04} {material}"),
                    n,
                    catalogue.clone(),
                ));
                // A revision on some codes: another shape family, whose
                // material sits at the same position by its values.
                if k % 2 == 0 {
                    let revised = format!("{family}-{size:04}-{material}-R2");
                    out.push((revised.clone(), 2 * n, revised.clone()));
                    out.push((lower(format!("{family}{size:04}{material}-r2")), n, revised));
                }
            }
        }
    }
    out
}

fn column() -> Vec<(String, usize)> {
    let mut values: Vec<(String, usize)> =
        part_codes().into_iter().map(|(v, n, _)| (v, n)).collect();
    values.push(("see notes".to_owned(), 6));
    values.push(("n/a".to_owned(), 9));
    values
}

fn draft_of(values: &[(String, usize)]) -> (String, Ruleset) {
    let mut rows = Vec::new();
    for (value, n) in values {
        rows.extend(std::iter::repeat_n(Some(value.as_str()), *n));
    }
    let vocab = Vocabulary::build(rows);
    // Room in `canonical` for every code of the column.
    let opts = descry::propose::ProposeOptions {
        max_map: 1000,
        ..Default::default()
    };
    let draft = descry::propose::propose(&vocab, "part", &opts).unwrap();
    let toml = draft.to_toml();
    let rules = Ruleset::from_toml(&toml, "draft.toml").unwrap();
    (toml, rules)
}

/// The feature `name` of `value`.
fn feature(rules: &Ruleset, value: &str, name: &str) -> Cell {
    let normalized = rules.normalizer.apply(value);
    let k = rules
        .features
        .iter()
        .position(|f| f.name == name)
        .unwrap_or_else(|| panic!("no rule {name}"));
    rules.evaluate(&normalized)[k].cell.clone()
}

fn label(rules: &Ruleset, value: &str, name: &str) -> Option<String> {
    let rule = &rules.features.iter().find(|f| f.name == name).unwrap().rule;
    match (feature(rules, value, name), rule) {
        (Cell::Label(l), descry::ruleset::Rule::Label(r)) => Some(r.categories[l as usize].clone()),
        (Cell::Null, _) => None,
        (other, _) => panic!("{name} of {value}: {other:?}"),
    }
}

#[test]
fn prefix_and_suffix_labels_have_the_segments_values() {
    let (toml, rules) = draft_of(&column());
    for (value, _, catalogue) in part_codes() {
        let family = &catalogue[..3];
        let material = catalogue.split('-').nth(2).unwrap();
        assert_eq!(
            label(&rules, &value, "part_prefix").as_deref(),
            Some(family),
            "{value}\n{toml}"
        );
        assert_eq!(
            label(&rules, &value, "part_suffix").as_deref(),
            Some(material),
            "{value}\n{toml}"
        );
    }
    // A value that is no code has no segments.
    assert_eq!(label(&rules, "see notes", "part_prefix"), None);
    // The revision letter is the same in every code: part of the format.
    assert!(!toml.contains("part_suffix_2"), "{toml}");
    assert!(toml.contains("code column"), "{toml}");
}

#[test]
fn canonical_joins_separator_and_padding_variants() {
    let (toml, rules) = draft_of(&column());
    for (value, _, catalogue) in part_codes() {
        assert_eq!(
            label(&rules, &value, "canonical").as_deref(),
            Some(catalogue.as_str()),
            "{value}\n{toml}"
        );
    }
}

#[test]
fn digit_segments_are_no_counts_and_letter_segments_no_units() {
    let (toml, rules) = draft_of(&column());
    for kind in ["[[count]]", "[[measure]]"] {
        assert!(!toml.contains(kind), "{kind} drafted from codes:\n{toml}");
    }
    // `CI` is a material here, not cubic inches.
    assert!(!toml.contains("volume"), "{toml}");
    assert!(
        rules.features.iter().all(|f| f.rule.kind() == "label"),
        "{toml}"
    );
    assert!(
        toml.contains("`ci` here is a segment of the code, never a unit"),
        "{toml}"
    );
}

#[test]
fn the_draft_loads_in_check_and_covers_every_code() {
    let dir = tempfile::tempdir().unwrap();
    let mut csv = String::from("part\n");
    let mut code_rows = 0;
    for (value, n) in column() {
        if value.chars().any(|c| c.is_ascii_digit()) {
            code_rows += n;
        }
        for _ in 0..n {
            csv.push_str(&value);
            csv.push('\n');
        }
    }
    let input = write(dir.path(), "parts.csv", &csv);
    let draft = dir.path().join("part.toml");
    let o = run(
        &["propose", s(&input), "--column", "part", "-o", s(&draft)],
        None,
    );
    assert!(o.status.success(), "propose: {}", stderr(&o));
    let o = run(
        &["check", s(&input), "-r", s(&draft), "--format", "json"],
        None,
    );
    assert!(o.status.success(), "check: {}", stderr(&o));
    let report: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    let covered = report["coverage"]["rows_covered"].as_u64().unwrap();
    assert!(
        covered >= code_rows as u64,
        "{covered} rows covered, {code_rows} rows of codes\n{report:#}"
    );
}

#[test]
fn the_demo_part_numbers_read_as_codes() {
    // The demo's part numbers are invented too (samples/README.md).
    let dir = tempfile::tempdir().unwrap();
    let draft = dir.path().join("part_no.toml");
    let csv = common::sample_csv();
    let o = run(
        &["propose", s(&csv), "--column", "part_no", "-o", s(&draft)],
        None,
    );
    assert!(o.status.success(), "propose: {}", stderr(&o));
    let toml = std::fs::read_to_string(&draft).unwrap();
    let rules = Ruleset::from_toml(&toml, "part_no.toml").unwrap();
    for kind in ["[[count]]", "[[measure]]"] {
        assert!(!toml.contains(kind), "{kind} drafted from codes:\n{toml}");
    }
    for (value, family) in [
        ("PMP-0750-3T", "PMP"),
        ("flt 1204 a", "FLT"),
        ("VLV0330B-R2", "VLV"),
        ("P/N SEA-0042-K", "SEA"),
    ] {
        assert_eq!(
            label(&rules, value, "prefix").as_deref(),
            Some(family),
            "{value}\n{toml}"
        );
    }
}
