//! descry checked against independent implementations: pyarrow and pandas
//! read what `apply` writes; Python's `re` runs the same patterns; Python's
//! unicodedata normalizes the same values. The Python side runs in the
//! reference environment of tests/python/requirements.txt.

mod common;

use std::collections::BTreeMap;

use common::*;
use descry::encode::IntType;
use descry::pattern::Pattern;
use descry::read::{ReadOptions, Table};
use descry::ruleset::{Precision, Rule};
use descry::{Ruleset, Vocabulary};
use serde_json::json;
use tempfile::TempDir;

const DEMO_RULESETS: &[&str] = &["transmission.toml", "engine.toml"];

fn arrow_int_name(t: IntType) -> &'static str {
    match t {
        IntType::UInt8 => "uint8",
        IntType::Int8 => "int8",
        IntType::UInt16 => "uint16",
        IntType::Int16 => "int16",
        IntType::Int32 => "int32",
        IntType::Int64 => "int64",
    }
}

/// The type pyarrow should see for each feature of a ruleset.
fn expected_types(rules: &Ruleset) -> BTreeMap<String, serde_json::Value> {
    let mut out = BTreeMap::new();
    for f in &rules.features {
        let want = match &f.rule {
            Rule::Flag(_) => json!({"arrow": "bool"}),
            Rule::Count(c) => match c.range {
                Some((lo, hi)) => {
                    let (lo, hi) = c.missing.map_or((lo, hi), |m| (lo.min(m), hi.max(m)));
                    json!({"arrow": arrow_int_name(IntType::for_range(lo, hi))})
                }
                None => continue,
            },
            Rule::Measure(m) => match m.precision {
                Precision::F32 => json!({"arrow": "float"}),
                Precision::F64 => json!({"arrow": "double"}),
            },
            Rule::Label(l) => json!({"arrow": "dictionary", "categories": l.categories}),
        };
        out.insert(f.output.clone(), want);
    }
    out
}

#[test]
fn pyarrow_and_pandas_read_the_compact_types() {
    let dir = TempDir::new().unwrap();
    let out_path = dir.path().join("features.parquet");
    let mut args = vec![
        "apply".to_owned(),
        s(&sample_csv()).to_owned(),
        "-o".into(),
        s(&out_path).into(),
    ];
    let mut expect = BTreeMap::new();
    for name in DEMO_RULESETS {
        args.push("-r".into());
        args.push(s(&ruleset(name)).into());
        expect.extend(expected_types(&Ruleset::from_path(&ruleset(name)).unwrap()));
    }
    let args: Vec<&str> = args.iter().map(String::as_str).collect();
    let out = run(&args, None);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let expect_path = write(
        dir.path(),
        "expect.json",
        &serde_json::to_string(&expect).unwrap(),
    );
    let report = run_python("parquet_types.py", &[s(&out_path), s(&expect_path)]);
    assert!(report.contains("ok "), "{report}");
}

/// The normalized distinct values of a ruleset's column in the sample.
fn sample_values(rules: &Ruleset) -> Vec<(String, String)> {
    let column = rules
        .column
        .clone()
        .expect("demo rulesets name their column");
    let table = Table::read_columns(&sample_csv(), &[&column], &ReadOptions::default()).unwrap();
    let vocab = Vocabulary::build(table.text(&column).unwrap().iter());
    vocab
        .values
        .iter()
        .map(|v| (v.clone(), rules.normalizer.apply(v)))
        .collect()
}

fn patterns(rules: &Ruleset) -> Vec<(String, &Pattern)> {
    let mut out = Vec::new();
    for f in &rules.features {
        match &f.rule {
            Rule::Flag(flag) => {
                if let descry::pattern::Matcher::Pattern(p) = &flag.matcher {
                    out.push((f.output.clone(), p));
                }
            }
            Rule::Count(c) => out.push((f.output.clone(), &c.pattern)),
            Rule::Measure(m) => out.push((f.output.clone(), &m.pattern)),
            Rule::Label(l) => {
                for (i, case) in l.cases.iter().enumerate() {
                    if let descry::pattern::Matcher::Pattern(p) = &case.matcher {
                        out.push((format!("{} case {}", f.output, i + 1), p));
                    }
                }
            }
        }
    }
    out.retain(|(_, p)| !p.is_fancy());
    out
}

#[test]
fn python_re_agrees_with_descry_on_every_distinct_value() {
    let dir = TempDir::new().unwrap();
    let mut cases = Vec::new();
    for name in DEMO_RULESETS {
        let rules = Ruleset::from_path(&ruleset(name)).unwrap();
        let values: Vec<String> = sample_values(&rules).into_iter().map(|(_, n)| n).collect();
        for (rule, pattern) in patterns(&rules) {
            let found: Vec<_> = values.iter().map(|v| pattern.find(v).unwrap()).collect();
            let matched: Vec<bool> = found.iter().map(Option::is_some).collect();
            let groups: Vec<Vec<Option<String>>> = found
                .iter()
                .zip(&values)
                .map(|(f, v)| {
                    f.as_ref()
                        .map(|f| {
                            f.groups
                                .iter()
                                .map(|g| g.clone().map(|r| v[r].to_owned()))
                                .collect()
                        })
                        .unwrap_or_default()
                })
                .collect();
            cases.push(
                json!({"rule": rule, "pattern": pattern.expanded(), "values": values,
                              "matched": matched, "groups": groups}),
            );
        }
    }
    assert!(
        cases.len() >= 4,
        "the demo rulesets have patterns to compare"
    );
    let path = write(
        dir.path(),
        "cases.json",
        &serde_json::to_string(&cases).unwrap(),
    );
    let report = run_python("regex_agreement.py", &[s(&path)]);
    assert!(report.contains(" 0 disagreements"), "{report}");
}

#[test]
fn python_unicodedata_nfkc_agrees_with_descry_normalization() {
    let dir = TempDir::new().unwrap();
    let mut pairs = Vec::new();
    for name in DEMO_RULESETS {
        let rules = Ruleset::from_path(&ruleset(name)).unwrap();
        if rules.normalizer != descry::Normalizer::default() {
            continue; // the Python side reproduces the default normalization only
        }
        for (value, normalized) in sample_values(&rules) {
            pairs.push(json!({"value": value, "normalized": normalized}));
        }
    }
    // Unicode Standard Annex #15 compatibility examples, beside the sample's values.
    let n = descry::Normalizer::default();
    for v in [
        "\u{fb01}lter",
        "\u{ff16}\u{a0}SPD",
        "\u{2460} cyl",
        "4\u{2007}L",
        "\u{bd} in",
    ] {
        pairs.push(json!({"value": v, "normalized": n.apply(v)}));
    }
    let path = write(
        dir.path(),
        "pairs.json",
        &serde_json::to_string(&pairs).unwrap(),
    );
    let report = run_python("normalization.py", &[s(&path)]);
    assert!(report.contains(" 0 disagreements"), "{report}");
}
