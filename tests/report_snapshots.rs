//! Snapshots of what users read: the `check` report (text and JSON) and
//! `explain` on the demo sample. A change in a report shows up as a diff
//! to review (`cargo insta review`).

mod common;

use common::*;

fn check(ruleset_name: &str, format: &str) -> String {
    let out = run(
        &[
            "check",
            s(&sample_csv()),
            "-r",
            &format!("rulesets/{ruleset_name}"),
            "--format",
            format,
        ],
        Some(&root()),
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    stdout(&out)
}

#[test]
fn check_text_transmission() {
    insta::assert_snapshot!(check("transmission.toml", "text"));
}

#[test]
fn check_text_engine() {
    insta::assert_snapshot!(check("engine.toml", "text"));
}

#[test]
fn check_json_engine() {
    let report: serde_json::Value = serde_json::from_str(&check("engine.toml", "json")).unwrap();
    insta::assert_json_snapshot!(report);
}

#[test]
fn explain_text_engine() {
    let out = run(
        &[
            "explain",
            "-r",
            "rulesets/engine.toml",
            "4 cyl Turbo Diesel 4.5L 120hp",
            "V8 gas 5.7 L",
            "３cyl\u{a0}dsl 1,800cc 37 kW",
        ],
        Some(&root()),
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    insta::assert_snapshot!(stdout(&out));
}

#[test]
fn explain_json_transmission() {
    let out = run(
        &[
            "explain",
            "-r",
            "rulesets/transmission.toml",
            "--format",
            "json",
            "16x16 powershift w/ creeper",
        ],
        Some(&root()),
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    insta::assert_json_snapshot!(v);
}
