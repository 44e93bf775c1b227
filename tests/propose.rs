//! `descry propose` end to end: the draft loads in `check` and `apply`
//! unchanged, `--update` keeps the user's file byte for byte, options and
//! bad input. (The demo sample is invented data; quality against its truth
//! is in tests/propose_quality.rs.)

mod common;

use common::{run, s, sample_csv, stderr, stdout, write};

fn draft(dir: &std::path::Path, column: &str, extra: &[&str]) -> (std::path::PathBuf, String) {
    let out = dir.join(format!("{column}.toml"));
    let csv = sample_csv();
    let mut args = vec!["propose", s(&csv), "--column", column, "-o", s(&out)];
    args.extend_from_slice(extra);
    let o = run(&args, None);
    assert!(o.status.success(), "propose failed: {}", stderr(&o));
    (out, stdout(&o))
}

#[test]
fn the_draft_loads_in_check_and_apply_unchanged() {
    let dir = tempfile::tempdir().unwrap();
    for column in ["transmission", "engine", "part_no"] {
        let (rules, report) = draft(dir.path(), column, &[]);
        assert!(report.contains("coverage of the ruleset now"), "{report}");
        assert!(
            report.contains("left unmatched, most rows first"),
            "{report}"
        );
        assert!(report.contains("weakest proposals"), "{report}");
        let text = std::fs::read_to_string(&rules).unwrap();
        assert!(
            text.contains("# e.g. "),
            "examples are written as comments:\n{text}"
        );
        assert!(
            text.contains("found on"),
            "support is written as comments:\n{text}"
        );

        let csv = sample_csv();
        let check = run(&["check", s(&csv), "-r", s(&rules)], None);
        assert!(
            check.status.success(),
            "{column}: check: {}",
            stderr(&check)
        );
        let out = dir.path().join(format!("{column}.parquet"));
        let apply = run(
            &["apply", s(&csv), "-r", s(&rules), "-o", s(&out), "--quiet"],
            None,
        );
        assert!(
            apply.status.success(),
            "{column}: apply: {}",
            stderr(&apply)
        );
        assert!(out.metadata().unwrap().len() > 0);
    }
}

#[test]
fn engine_draft_proposes_every_kind() {
    let dir = tempfile::tempdir().unwrap();
    let (rules, _) = draft(dir.path(), "engine", &[]);
    let text = std::fs::read_to_string(&rules).unwrap();
    for kind in [
        "[[flag]]",
        "[[count]]",
        "[[measure]]",
        "[[label]]",
        "[[label.case]]",
    ] {
        assert!(
            text.contains(kind),
            "no {kind} in the engine draft:\n{text}"
        );
    }
    // Units come with their factors and sources (NIST SP 811 for hp and ci).
    assert!(text.contains("NIST SP 811"), "{text}");
    let rules = descry::Ruleset::from_path(&rules).unwrap();
    let cylinders = rules
        .features
        .iter()
        .find(|f| f.name.starts_with("cyl"))
        .expect("a count named after the cylinder marker");
    assert_eq!(cylinders.rule.kind(), "count");
}

#[test]
fn a_column_with_nothing_to_propose_says_so() {
    let dir = tempfile::tempdir().unwrap();
    let (rules, report) = draft(dir.path(), "price_usd", &[]);
    assert!(report.contains("nothing to propose"), "{report}");
    let parsed = descry::Ruleset::from_path(&rules).unwrap();
    assert!(parsed.features.is_empty());
}

#[test]
fn the_draft_is_the_same_whatever_the_thread_count() {
    let dir = tempfile::tempdir().unwrap();
    let csv = sample_csv();
    let mut drafts = Vec::new();
    for threads in ["1", "2", "3"] {
        let out = dir.path().join(format!("t{threads}.toml"));
        let o = run(
            &[
                "--threads",
                threads,
                "propose",
                s(&csv),
                "-c",
                "engine",
                "-o",
                s(&out),
            ],
            None,
        );
        assert!(o.status.success(), "{}", stderr(&o));
        drafts.push(std::fs::read(&out).unwrap());
    }
    assert!(
        drafts.windows(2).all(|w| w[0] == w[1]),
        "drafts differ across --threads"
    );
}

#[test]
fn kinds_max_rules_and_prefix_are_obeyed() {
    let dir = tempfile::tempdir().unwrap();
    let (rules, _) = draft(
        dir.path(),
        "transmission",
        &["--kinds", "count", "--max-rules", "2", "--prefix", "tx_"],
    );
    let parsed = descry::Ruleset::from_path(&rules).unwrap();
    assert!(!parsed.features.is_empty() && parsed.features.len() <= 2);
    assert!(parsed.features.iter().all(|f| f.rule.kind() == "count"));
    assert!(parsed.features.iter().all(|f| f.output.starts_with("tx_")));
}

#[test]
fn an_existing_draft_is_not_overwritten_without_force() {
    let dir = tempfile::tempdir().unwrap();
    let out = write(dir.path(), "mine.toml", "# my edits\n");
    let csv = sample_csv();
    let o = run(&["propose", s(&csv), "-c", "engine", "-o", s(&out)], None);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("mine.toml exists"), "{}", stderr(&o));
    assert_eq!(std::fs::read_to_string(&out).unwrap(), "# my edits\n");
    let o = run(
        &["propose", s(&csv), "-c", "engine", "-o", s(&out), "--force"],
        None,
    );
    assert!(o.status.success(), "{}", stderr(&o));
}

#[test]
fn update_appends_and_keeps_the_file_byte_for_byte() {
    let dir = tempfile::tempdir().unwrap();
    let original = "# Engine rules, kept by hand.\n\
                    column = \"engine\"   # the column\n\
                    prefix = \"eng_\"\n\n\
                    # Fuel, as we decided it.\n\
                    [[label]]\n\
                    name = \"fuel\"\n\
                    [[label.case]]\n\
                    label = \"diesel\"\n\
                    any = [\"diesel\", \"dsl\"]  # abbreviations too\n";
    let rules = write(dir.path(), "engine.toml", original);
    let csv = sample_csv();
    let o = run(&["propose", s(&csv), "--update", s(&rules)], None);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(stdout(&o).contains("left unmatched"), "{}", stdout(&o));
    let updated = std::fs::read_to_string(&rules).unwrap();
    assert!(
        updated.starts_with(original),
        "the user's text changed:\n{updated}"
    );
    assert!(
        updated.len() > original.len() + 100,
        "nothing was added:\n{updated}"
    );
    assert!(updated.contains("descry propose --update"));
    let parsed = descry::Ruleset::from_path(&rules).unwrap();
    assert_eq!(parsed.features[0].name, "fuel");
    let names: std::collections::HashSet<&str> =
        parsed.features.iter().map(|f| f.name.as_str()).collect();
    assert_eq!(names.len(), parsed.features.len(), "names are unique");
    assert!(parsed.features.iter().any(|f| f.rule.kind() == "count"));
    // The updated ruleset covers more than the original did.
    let check = run(
        &["check", s(&csv), "-r", s(&rules), "--format", "json"],
        None,
    );
    let report: serde_json::Value = serde_json::from_slice(&check.stdout).unwrap();
    assert!(
        report["coverage"]["row_share"].as_f64().unwrap() > 0.9,
        "{report}"
    );

    // With -o, the existing file is left alone and the result goes elsewhere.
    let first = write(dir.path(), "first.toml", original);
    let out = dir.path().join("second.toml");
    let o = run(
        &["propose", s(&csv), "--update", s(&first), "-o", s(&out)],
        None,
    );
    assert!(o.status.success(), "{}", stderr(&o));
    assert_eq!(std::fs::read_to_string(&first).unwrap(), original);
    assert!(std::fs::read_to_string(&out).unwrap().starts_with(original));
}

/// `--update` mines numbers the way the ruleset writes them: with
/// `decimal = ","`, "4,5 l" is 4.5 litres (a decimal comma: common
/// practice in much of continental Europe), not a 4 and a 5 l.
#[test]
fn update_reads_numbers_with_the_rulesets_decimal_comma() {
    let dir = tempfile::tempdir().unwrap();
    let original =
        "column = \"engine\"\ndecimal = \",\"\n\n[[flag]]\nname = \"diesel\"\nany = [\"diesel\"]\n";
    let rules = write(dir.path(), "engine.toml", original);
    let mut table = String::from("id,engine\n");
    let spellings = [
        "motor 4,5 l benzin",
        "motor 3,2 l",
        "motor 2,8 l benzin",
        "motor 1,9 l",
        "motor 6,4 l benzin",
        "motor 5,1 l diesel",
    ];
    for i in 0..240 {
        table.push_str(&format!("{i},{:?}\n", spellings[i % spellings.len()]));
    }
    let csv = write(dir.path(), "engines.csv", &table);
    let o = run(&["propose", s(&csv), "--update", s(&rules)], None);
    assert!(o.status.success(), "{}", stderr(&o));
    let updated = descry::Ruleset::from_path(&rules).unwrap();
    let text = std::fs::read_to_string(&rules).unwrap();
    let outcomes = updated.evaluate(&updated.normalizer.apply("motor 4,5 l benzin"));
    let read: Vec<(&str, &descry::evaluate::Cell)> = updated
        .features
        .iter()
        .zip(&outcomes)
        .filter(|(_, o)| o.fired)
        .map(|(f, o)| (f.rule.kind(), &o.cell))
        .collect();
    assert!(
        read.iter()
            .any(|(kind, cell)| *kind == "measure" && **cell == descry::evaluate::Cell::Float(4.5)),
        "no measure reads 4.5 from \"motor 4,5 l benzin\": {read:?}\n{text}"
    );
    assert!(
        !read.iter().any(|(kind, _)| *kind == "count"),
        "a count reads the whole part of a decimal: {read:?}\n{text}"
    );
    // The values the miner saw (with a decimal point it would have seen
    // the digits after each comma: 2 to 9 l).
    assert!(text.contains("values seen: 1.9 to 6.4 l"), "{text}");
}

#[test]
fn json_report_has_the_draft_and_its_check() {
    let dir = tempfile::tempdir().unwrap();
    let (_, out) = draft(dir.path(), "transmission", &["--format", "json"]);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["schema"], "descry.propose/1");
    assert!(v["draft"]["proposals"].as_array().unwrap().len() > 3);
    assert!(v["check"]["coverage"]["row_share"].as_f64().unwrap() > 0.9);
}

#[test]
fn bad_input_is_named() {
    let dir = tempfile::tempdir().unwrap();
    let csv = sample_csv();
    let out = dir.path().join("d.toml");
    // (arguments after `propose CSV -c engine -o OUT`, or whole, and the
    // text the error must contain)
    let engine = |extra: &[&str]| -> Vec<String> {
        let mut a: Vec<String> = ["propose", s(&csv), "-c", "engine", "-o", s(&out)]
            .iter()
            .map(|x| x.to_string())
            .collect();
        a.extend(extra.iter().map(|x| x.to_string()));
        a
    };
    let whole = |args: &[&str]| -> Vec<String> { args.iter().map(|x| x.to_string()).collect() };
    let cases: Vec<(Vec<String>, &str)> = vec![
        (
            whole(&["propose", s(&csv), "-c", "gearbox", "-o", s(&out)]),
            "gearbox",
        ),
        (
            whole(&["propose", s(&csv), "-c", "engine"]),
            "-o draft.toml",
        ),
        (whole(&["propose", s(&csv), "-o", s(&out)]), "--column"),
        (engine(&["--kinds", "flag,colour"]), "colour"),
        (engine(&["--min-share", "5"]), "between 0 and 1"),
        (
            engine(&["--min-share", "0.5", "--max-share", "0.1"]),
            "above --max-share",
        ),
        (
            whole(&["propose", s(&csv), "--update", "no-such.toml"]),
            "no-such.toml",
        ),
        (
            whole(&["propose", "no-such.csv", "-c", "engine", "-o", s(&out)]),
            "no-such.csv",
        ),
    ];
    for (args, needle) in &cases {
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        let o = run(&args, None);
        assert_eq!(o.status.code(), Some(2), "{args:?}: {}", stderr(&o));
        assert!(
            stderr(&o).contains(needle),
            "{args:?}: expected {needle:?} in:\n{}",
            stderr(&o)
        );
        assert!(!out.exists(), "{args:?} wrote a draft");
    }
}
