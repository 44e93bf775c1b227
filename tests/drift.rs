//! Each new data drop against the last: `check --save-baseline` and
//! `check --baseline`, the drift figures and their gates.

mod common;

use std::path::{Path, PathBuf};

use common::*;
use tempfile::TempDir;

/// A new drop: the demo listings with every "diesel" in the engine column
/// spelled "dsl" on half of its rows and a few hundred rows of spellings the
/// baseline never saw, so that values, shares and labels all move.
fn shifted_drop(dir: &Path) -> PathBuf {
    let text = std::fs::read_to_string(sample_csv()).unwrap();
    let mut out = String::new();
    for (i, line) in text.lines().enumerate() {
        if i > 0 && i % 2 == 0 {
            out.push_str(&line.replacen("diesel", "dsl", 1));
        } else {
            out.push_str(line);
        }
        out.push('\n');
    }
    for i in 0..300 {
        let engine = [
            "quad-cam electric 48V 20kW",
            "hydrogen cell 90kW",
            "8 cyl gasoline 6.2L",
        ][i % 3];
        out.push_str(&format!("N{i:07},,{engine},,1000\n"));
    }
    write(dir, "drop.csv", &out)
}

/// Every drift gate at its strictest: a drop against its own baseline
/// passes them all.
const EVERY_GATE_AT_ZERO: [&str; 8] = [
    "--max-new-share",
    "0",
    "--max-new-uncovered-share",
    "0",
    "--max-psi",
    "0",
    "--max-shift",
    "0",
];

fn check(args: &[&str], dir: &Path) -> (Option<i32>, String, String) {
    let out = run(args, Some(dir));
    (out.status.code(), stdout(&out), stderr(&out))
}

#[test]
fn a_drop_against_its_own_baseline_shows_no_drift_and_passes_every_gate() {
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    let (engine, listings) = (ruleset("engine.toml"), sample_csv());
    let (code, _, err) = check(
        &[
            "check",
            s(&listings),
            "-r",
            s(&engine),
            "--save-baseline",
            "a.parquet",
        ],
        d,
    );
    assert_eq!(code, Some(0), "{err}");
    // The same input gives the same bytes (no timestamp).
    check(
        &[
            "check",
            s(&listings),
            "-r",
            s(&engine),
            "--save-baseline",
            "b.parquet",
        ],
        d,
    );
    assert_eq!(
        std::fs::read(d.join("a.parquet")).unwrap(),
        std::fs::read(d.join("b.parquet")).unwrap()
    );

    let args = [
        "check",
        s(&listings),
        "-r",
        s(&engine),
        "--baseline",
        "a.parquet",
        "--format",
        "json",
    ];
    let (code, json, err) = check(&[&args[..], &EVERY_GATE_AT_ZERO].concat(), d);
    assert_eq!(code, Some(0), "{err}");
    let report: serde_json::Value = serde_json::from_str(&json).unwrap();
    let drift = &report["drift"];
    assert_eq!(drift["new_row_share"], 0.0);
    assert_eq!(drift["new_values"].as_array().unwrap().len(), 0);
    assert_eq!(drift["gone_values"].as_array().unwrap().len(), 0);
    assert_eq!(drift["ruleset_changed"], false);
    for label in drift["labels"].as_array().unwrap() {
        assert_eq!(label["psi"], 0.0, "{label}");
    }
    for rule in drift["rules"].as_array().unwrap() {
        assert_eq!(rule["share_before"], rule["share_after"], "{rule}");
        assert_eq!(rule["p_value"], 1.0, "{rule}");
    }
    let gates: Vec<&str> = report["gates"]
        .as_array()
        .unwrap()
        .iter()
        .map(|g| g["gate"].as_str().unwrap())
        .collect();
    for gate in [
        "max_new_share",
        "max_new_uncovered_share",
        "max_psi",
        "max_shift",
    ] {
        assert!(gates.contains(&gate), "{gates:?}");
    }
}

#[test]
fn a_shifted_drop_fails_its_gates_with_one_reason_each_and_scipy_agrees() {
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    let engine = ruleset("engine.toml");
    let (code, _, err) = check(
        &[
            "check",
            s(&sample_csv()),
            "-r",
            s(&engine),
            "--save-baseline",
            "base.parquet",
        ],
        d,
    );
    assert_eq!(code, Some(0), "{err}");
    let drop = shifted_drop(d);
    let (code, json, err) = check(
        &[
            "check",
            s(&drop),
            "-r",
            s(&engine),
            "--baseline",
            "base.parquet",
            "--format",
            "json",
            "--max-new-share",
            "0.01",
            "--max-new-uncovered-share",
            "0.5",
            "--max-psi",
            "0.0001",
            "--max-shift",
            "0.5",
        ],
        d,
    );
    assert_eq!(code, Some(1), "{err}");
    // One reason line per failed gate, naming the figure and the threshold.
    let reasons: Vec<&str> = err
        .lines()
        .filter(|l| l.starts_with("descry: gate failed:"))
        .collect();
    assert_eq!(reasons.len(), 2, "{err}");
    assert!(
        reasons.iter().any(|r| r.contains("--max-new-share 0.01")),
        "{err}"
    );
    assert!(
        reasons
            .iter()
            .any(|r| r.contains("--max-psi 0.0001") && r.contains("eng_fuel")),
        "{err}"
    );
    let report: serde_json::Value = serde_json::from_str(&json).unwrap();
    let drift = &report["drift"];
    let new_values = drift["new_values"].as_array().unwrap();
    assert!(
        new_values
            .iter()
            .any(|v| v["value"] == "hydrogen cell 90kW" && v["rows"] == 100),
        "{drift}"
    );
    // Most rows first.
    let rows: Vec<u64> = new_values
        .iter()
        .map(|v| v["rows"].as_u64().unwrap())
        .collect();
    assert!(rows.windows(2).all(|w| w[0] >= w[1]));
    assert!(drift["new_row_share"].as_f64().unwrap() > 0.01);

    // Every figure, recomputed with scipy from the two lookup tables.
    let new_lookup = d.join("new.lookup.parquet");
    let out = run(
        &["lookup", s(&drop), "-r", s(&engine), "-o", s(&new_lookup)],
        None,
    );
    assert!(out.status.success(), "{}", stderr(&out));
    let report_path = write(d, "report.json", &json);
    let checked = run_python(
        "drift_statistics.py",
        &[s(&d.join("base.parquet")), s(&new_lookup), s(&report_path)],
    );
    assert!(checked.contains("drift agrees"), "{checked}");

    // The text report shows the same section.
    let (_, text, _) = check(
        &[
            "check",
            s(&drop),
            "-r",
            s(&engine),
            "--baseline",
            "base.parquet",
            "--top",
            "3",
        ],
        d,
    );
    assert!(
        text.contains("drift since the baseline base.parquet"),
        "{text}"
    );
    assert!(text.contains("PSI"), "{text}");
}

/// The drift scenario of the demo generator: `descry demo --drift` writes
/// the same listings as `descry demo`, row for row, but for engines written
/// in a new spelling family (`4-banger heavy oil`) and a shifted gasoline
/// share. The report finds exactly those: the new family's values are the
/// new values, the fuel label's PSI is over the limit, and the gates on
/// them fail; the drifted drop against its own baseline passes every gate.
#[test]
fn the_demo_drift_scenario_is_found_exactly() {
    use descry::demo::{generate, SampleOptions};
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    for (out, drift) in [("base", false), ("next", true)] {
        let mut args = vec!["demo", "-o", out];
        if drift {
            args.push("--drift");
        }
        let made = run(&args, Some(d));
        assert!(made.status.success(), "{}", stderr(&made));
    }
    let engine = ruleset("engine.toml");
    // `check TABLE --baseline BASE --format json GATES...` on the engines.
    let against = |table: &str, base: &str, gates: &[&str]| {
        let args = [
            "check",
            table,
            "-r",
            s(&engine),
            "--baseline",
            base,
            "--format",
            "json",
        ];
        check(&[&args[..], gates].concat(), d)
    };
    let save = |table: &str, base: &str| {
        let (code, _, err) = check(
            &["check", table, "-r", s(&engine), "--save-baseline", base],
            d,
        );
        assert_eq!(code, Some(0), "{err}");
    };
    save("base/listings.csv", "base.parquet");
    let (code, json, err) = against(
        "next/listings.csv",
        "base.parquet",
        &[
            "--max-new-share",
            "0.01",
            "--max-new-uncovered-share",
            "0.5",
            "--max-psi",
            "0.1",
        ],
    );
    assert_eq!(code, Some(1), "{err}");
    let report: serde_json::Value = serde_json::from_str(&json).unwrap();
    let drift = &report["drift"];

    // The new values are exactly the values of the drifted truth that the
    // baseline's truth lacks, and every one is of the new family.
    let base = generate(&SampleOptions::default()).truth.engine;
    let next = generate(&SampleOptions {
        drift: true,
        ..SampleOptions::default()
    })
    .truth
    .engine;
    let mut expected: Vec<&str> = next
        .keys()
        .filter(|v| !base.contains_key(*v))
        .map(String::as_str)
        .collect();
    let mut found: Vec<&str> = drift["new_values"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v["value"].as_str().unwrap())
        .collect();
    expected.sort_unstable();
    found.sort_unstable();
    assert_eq!(found, expected);
    assert!(!found.is_empty());
    assert!(found.iter().all(|v| v.contains("banger")), "{found:?}");

    // The shifted family: gasoline's share of the fuel label grew, and the
    // label's PSI is over the limit.
    let fuel = &drift["labels"][0];
    assert_eq!(fuel["output"], "eng_fuel");
    assert!(fuel["psi"].as_f64().unwrap() > 0.1, "{fuel}");
    let gasoline = fuel["categories"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["category"] == "gasoline")
        .unwrap();
    assert!(
        gasoline["share_after"].as_f64().unwrap()
            > gasoline["share_before"].as_f64().unwrap() + 0.05,
        "{gasoline}"
    );

    // Two gates fail, each with its reason; the one on uncovered new rows
    // (about half the new family names a displacement) passes.
    let failed: Vec<&str> = report["gates"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|g| g["passed"] == false)
        .map(|g| g["gate"].as_str().unwrap())
        .collect();
    assert_eq!(failed, ["max_new_share", "max_psi"], "{err}");
    assert!(
        err.contains("--max-psi 0.1") && err.contains("eng_fuel"),
        "{err}"
    );

    // The drifted drop against its own baseline: nothing new, nothing moved.
    save("next/listings.csv", "next.parquet");
    let (code, json, err) = against("next/listings.csv", "next.parquet", &EVERY_GATE_AT_ZERO);
    assert_eq!(code, Some(0), "{err}");
    let report: serde_json::Value = serde_json::from_str(&json).unwrap();
    assert_eq!(report["drift"]["new_row_share"], 0.0);
    assert_eq!(report["drift"]["labels"][0]["psi"], 0.0);
}

#[test]
fn a_changed_ruleset_is_reported_and_compared() {
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    let original = std::fs::read_to_string(ruleset("engine.toml")).unwrap();
    let rules = write(d, "engine.toml", &original);
    check(
        &[
            "check",
            s(&sample_csv()),
            "-r",
            s(&rules),
            "--save-baseline",
            "base.parquet",
        ],
        d,
    );
    write(d, "engine.toml", &format!("{original}\n# an edit\n"));
    let (code, json, err) = check(
        &[
            "check",
            s(&sample_csv()),
            "-r",
            s(&rules),
            "--baseline",
            "base.parquet",
            "--format",
            "json",
        ],
        d,
    );
    assert_eq!(code, Some(0), "{err}");
    let report: serde_json::Value = serde_json::from_str(&json).unwrap();
    assert_eq!(report["drift"]["ruleset_changed"], true);
    assert_eq!(report["drift"]["new_row_share"], 0.0);
}

#[test]
fn several_rulesets_keep_one_baseline_each_in_a_folder() {
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    let (engine, transmission, listings) = (
        ruleset("engine.toml"),
        ruleset("transmission.toml"),
        sample_csv(),
    );
    let args = [
        "check",
        s(&listings),
        "-r",
        s(&engine),
        "-r",
        s(&transmission),
    ];
    let (code, _, err) = check(&[&args[..], &["--save-baseline", "base"]].concat(), d);
    assert_eq!(code, Some(0), "{err}");
    assert!(
        d.join("base/engine.parquet").is_file() && d.join("base/transmission.parquet").is_file()
    );
    let (code, json, err) = check(
        &[&args[..], &["--baseline", "base", "--format", "json"]].concat(),
        d,
    );
    assert_eq!(code, Some(0), "{err}");
    let all: serde_json::Value = serde_json::from_str(&json).unwrap();
    for report in all["reports"].as_array().unwrap() {
        assert_eq!(report["drift"]["new_row_share"], 0.0);
    }
    // A drift gate without a baseline is refused by the argument parser.
    let (code, _, err) = check(
        &[
            "check",
            s(&sample_csv()),
            "-r",
            s(&engine),
            "--max-psi",
            "0.2",
        ],
        d,
    );
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("--baseline"), "{err}");
    // A file that is not a baseline is named.
    let (code, _, err) = check(
        &[
            "check",
            s(&sample_csv()),
            "-r",
            s(&engine),
            "--baseline",
            s(&engine),
        ],
        d,
    );
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("engine.toml"), "{err}");
}

/// The drift sections users read, on the shifted drop: a change shows up
/// as a diff to review (`cargo insta review`). The JSON lists of new and
/// gone values are cut to their first five (most rows first).
#[test]
fn snapshots_of_the_drift_sections() {
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    let engine = ruleset("engine.toml");
    check(
        &[
            "check",
            s(&sample_csv()),
            "-r",
            s(&engine),
            "--save-baseline",
            "base.parquet",
        ],
        d,
    );
    let drop = shifted_drop(d);
    let (_, text, _) = check(
        &[
            "check",
            s(&drop),
            "-r",
            s(&engine),
            "--baseline",
            "base.parquet",
            "--top",
            "5",
        ],
        d,
    );
    let section = &text[text.find("drift since").expect("a drift section")..];
    insta::assert_snapshot!("drift_text_engine", section);
    let (_, json, _) = check(
        &[
            "check",
            s(&drop),
            "-r",
            s(&engine),
            "--baseline",
            "base.parquet",
            "--format",
            "json",
        ],
        d,
    );
    let mut report: serde_json::Value = serde_json::from_str(&json).unwrap();
    for list in ["new_values", "gone_values"] {
        report["drift"][list].as_array_mut().unwrap().truncate(5);
    }
    insta::assert_json_snapshot!("drift_json_engine", report["drift"]);
}

/// What a red-team pass found: a baseline never replaces an input, a
/// baseline of another column is refused, and drift gates with nothing to
/// measure fail, as --min-coverage does.
#[test]
fn baselines_never_overwrite_inputs_and_must_describe_the_same_column() {
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    let table = write(d, "in.csv", &std::fs::read_to_string(sample_csv()).unwrap());
    let before = std::fs::read(&table).unwrap();
    let (engine, transmission) = (ruleset("engine.toml"), ruleset("transmission.toml"));
    let (code, _, err) = check(
        &[
            "check",
            s(&table),
            "-r",
            s(&engine),
            "--save-baseline",
            s(&table),
        ],
        d,
    );
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("in.csv"), "{err}");
    assert_eq!(
        std::fs::read(&table).unwrap(),
        before,
        "the input was changed"
    );
    // The same with an input named like a baseline.
    let named = write(
        d,
        "in.parquet",
        &std::fs::read_to_string(sample_csv()).unwrap(),
    );
    let (code, _, err) = check(
        &[
            "check",
            s(&named),
            "--delimiter",
            ",",
            "-r",
            s(&engine),
            "--save-baseline",
            s(&named),
        ],
        d,
    );
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("never overwrites its input"), "{err}");

    check(
        &[
            "check",
            s(&table),
            "-r",
            s(&engine),
            "--save-baseline",
            "engine.parquet",
        ],
        d,
    );
    let (code, _, err) = check(
        &[
            "check",
            s(&table),
            "-r",
            s(&engine),
            "--baseline",
            "engine.parquet",
            "--save-baseline",
            "engine.parquet",
        ],
        d,
    );
    assert_eq!(code, Some(2), "{err}");
    let (code, _, err) = check(
        &[
            "check",
            s(&table),
            "-r",
            s(&transmission),
            "--baseline",
            "engine.parquet",
            "--max-psi",
            "0.2",
        ],
        d,
    );
    assert_eq!(code, Some(2), "{err}");
    assert!(
        err.contains("the baseline describes column engine"),
        "{err}"
    );

    // A baseline is named as the Parquet file it is; several rulesets need a folder.
    let (code, _, err) = check(
        &[
            "check",
            s(&table),
            "-r",
            s(&engine),
            "--save-baseline",
            "base.csv",
        ],
        d,
    );
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("name it *.parquet"), "{err}");
    write(d, "a-file", "x");
    let (code, _, err) = check(
        &[
            "check",
            s(&table),
            "-r",
            s(&engine),
            "-r",
            s(&transmission),
            "--save-baseline",
            "a-file",
        ],
        d,
    );
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("is a file; with several rulesets"), "{err}");

    let empty = write(d, "empty.csv", "engine\n");
    check(
        &[
            "check",
            s(&empty),
            "-r",
            s(&engine),
            "--save-baseline",
            "empty.parquet",
        ],
        d,
    );
    let (code, _, err) = check(
        &[
            "check",
            s(&empty),
            "-r",
            s(&engine),
            "--baseline",
            "empty.parquet",
            "--max-new-share",
            "0.1",
        ],
        d,
    );
    assert_eq!(code, Some(1), "{err}");
    assert!(
        err.contains("--max-new-share 0.1: column \"engine\" has no rows with text"),
        "{err}"
    );
}
