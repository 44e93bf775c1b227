//! `descry survey` as a specification: the profile of the sample's columns
//! (snapshots), its counts against the sample generator's truth, and the
//! command line end to end.

mod common;

use common::*;
use descry::survey::DEFAULT_PLACEHOLDERS;
use tempfile::TempDir;

fn survey_json(args: &[&str]) -> serde_json::Value {
    let mut all = vec!["survey"];
    all.extend_from_slice(args);
    all.extend_from_slice(&["--format", "json"]);
    let out = run(&all, Some(&root()));
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    serde_json::from_str(&stdout(&out)).unwrap()
}

#[test]
fn snapshots_of_the_sample_columns() {
    for column in ["transmission", "engine", "part_no"] {
        let out = run(
            &[
                "survey",
                "samples/listings.csv",
                "--column",
                column,
                "--top",
                "12",
            ],
            Some(&root()),
        );
        assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
        insta::assert_snapshot!(format!("survey_text_{column}"), stdout(&out));
    }
    let report = survey_json(&["samples/listings.csv", "--column", "part_no", "--top", "5"]);
    insta::assert_json_snapshot!("survey_json_part_no", report);
}

/// The truth files mark blanks and placeholders (`placeholder = true`) and
/// count rows per distinct value: survey must find the same gaps.
#[test]
fn gaps_agree_with_the_generators_truth() {
    for column in ["transmission", "engine", "part_no"] {
        let truth =
            std::fs::read_to_string(root().join("samples/truth").join(format!("{column}.csv")))
                .unwrap();
        let (mut gap_rows, mut rows) = (0u64, 0u64);
        for line in truth.lines().skip(1) {
            let fields: Vec<&str> = line.rsplitn(3, ',').collect(); // rows, placeholder, rest
            let n: u64 = fields[0].parse().unwrap();
            rows += n;
            if fields[1] == "true" {
                gap_rows += n;
            }
        }
        let r = survey_json(&["samples/listings.csv", "--column", column]);
        let blank = r["blank"]["rows"].as_u64().unwrap();
        let placeholders = r["placeholders"]["rows"].as_u64().unwrap();
        let nulls = r["null_rows"].as_u64().unwrap();
        assert_eq!(
            r["rows"].as_u64().unwrap(),
            rows + nulls,
            "{column}: the truth lists every non-null row"
        );
        assert_eq!(
            blank + placeholders,
            gap_rows,
            "{column}: blanks and placeholders"
        );
    }
}

#[test]
fn survey_of_a_small_table() {
    let dir = TempDir::new().unwrap();
    let t = write(
        dir.path(),
        "t.csv",
        "id,tx\n1,6 spd auto\n2,6 SPD Auto\n3,\n4,\" \"\n5,n/a\n6,6-spd auto\n7,6 spd auto\n8,\"cvt \"\n9,12 SPEED\n",
    );
    let out = run(&["survey", s(&t), "-c", "tx", "--format", "json"], None);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let r: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    assert_eq!(r["schema"], "descry.survey/1");
    assert_eq!(
        (
            r["rows"].as_u64(),
            r["null_rows"].as_u64(),
            r["distinct"].as_u64()
        ),
        (Some(9), Some(1), Some(7))
    );
    assert_eq!(r["blank"]["rows"], 1);
    assert_eq!(r["placeholders"]["values"][0]["value"], "n/a");
    assert_eq!(r["top_values"][0]["value"], "6 spd auto");
    assert_eq!(r["top_values"][0]["rows"], 2);
    assert_eq!(r["shapes"][0]["shape"], "9 a a");
    let kinds: Vec<(&str, u64)> = r["anomalies"]
        .as_array()
        .unwrap()
        .iter()
        .map(|a| (a["kind"].as_str().unwrap(), a["distinct"].as_u64().unwrap()))
        .filter(|(_, n)| *n > 0)
        .collect();
    assert_eq!(
        kinds,
        [
            ("trailing-space", 1),
            ("case-variants", 2),
            ("punctuation-variants", 3)
        ]
    );
    let spd = r["tokens"]
        .as_array()
        .unwrap()
        .iter()
        .find(|t| t["token"] == "spd")
        .unwrap();
    assert_eq!(
        (spd["distinct"].as_u64(), spd["rows"].as_u64()),
        (Some(3), Some(4))
    );
}

#[test]
fn placeholders_are_configurable() {
    let dir = TempDir::new().unwrap();
    let t = write(dir.path(), "t.csv", "x\nn/a\nsee notes\nreal\n");
    let r = |extra: &[&str]| {
        let mut args = vec!["survey", s(&t), "-c", "x", "--format", "json"];
        args.extend_from_slice(extra);
        let out = run(&args, None);
        assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
        let v: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
        v["placeholders"]["rows"].as_u64().unwrap()
    };
    assert_eq!(r(&[]), 1);
    assert_eq!(r(&["--placeholder", "See Notes"]), 2);
    assert_eq!(
        r(&["--no-default-placeholders", "--placeholder", "see notes"]),
        1
    );
}

#[test]
fn help_lists_the_default_placeholders_and_states_memory() {
    let out = run(&["survey", "--help"], None);
    let help = stdout(&out).replace('\n', " ");
    let help = help.split_whitespace().collect::<Vec<_>>().join(" ");
    for p in DEFAULT_PLACEHOLDERS {
        assert!(
            help.contains(&format!(" {p},")) || help.contains(&format!(" {p};")),
            "{p} missing from the help"
        );
    }
    assert!(
        help.contains("Memory:") && help.contains("Example:"),
        "{help}"
    );
}

#[test]
fn errors_name_the_problem_and_exit_2() {
    let dir = TempDir::new().unwrap();
    let t = write(dir.path(), "t.csv", "a,b\n1,2\n");
    let out = run(&["survey", s(&t), "-c", "nope"], None);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("no column named \"nope\"") && stderr(&out).contains("a, b"),
        "{}",
        stderr(&out)
    );
    let out = run(&["survey", "nowhere.csv", "-c", "a"], Some(dir.path()));
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("nowhere.csv"), "{}", stderr(&out));
}
