//! The command line end to end: exit codes, error messages, outputs.
//! Every run is checked for panics (RUST_BACKTRACE=1 is set).

mod common;

use common::*;
use tempfile::TempDir;

const RULES: &str = r#"
column = "transmission"
prefix = "tx_"

[[count]]
name = "gears"
pattern = '({int})\s*-?\s*(spd|speed|sp)\b'
range = [1, 30]

[[flag]]
name = "shuttle"
any = ["shuttle", "reverser"]

[[label]]
name = "kind"
default = "other"
[[label.case]]
label = "manual"
any = ["manual", "man"]
[[label.case]]
label = "automatic"
any = ["auto", "automatic"]

[[example]]
value = "6 SPD Auto"
expect = { gears = 6, kind = "automatic" }
"#;

const TABLE: &str = "id,transmission,price\n\
1,6 spd auto,100\n\
2,6 SPD Auto,200\n\
3,12-speed manual shuttle,300\n\
4,,400\n\
5,\"\",500\n\
6,hydrostatic,600\n\
7,6 spd auto,700\n";

fn setup() -> (TempDir, std::path::PathBuf, std::path::PathBuf) {
    let dir = TempDir::new().unwrap();
    let rules = write(dir.path(), "tx.toml", RULES);
    let table = write(dir.path(), "listings.csv", TABLE);
    (dir, rules, table)
}

#[test]
fn check_reports_coverage_and_exits_zero() {
    let (_d, rules, table) = setup();
    let out = run(
        &["check", s(&table), "--rules", s(&rules), "--format", "json"],
        None,
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let report: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    assert_eq!(report["schema"], "descry.check/1");
    assert_eq!(report["rows"], 7);
    assert_eq!(report["null_rows"], 1);
    assert_eq!(report["blank_rows"], 1);
    // 5 non-blank rows; "hydrostatic" (1 row) is unmatched.
    assert_eq!(report["coverage"]["rows_considered"], 5);
    assert_eq!(report["coverage"]["rows_covered"], 4);
    assert_eq!(report["unmatched"][0]["value"], "hydrostatic");
    assert_eq!(report["examples_failed"], 0);
}

#[test]
fn min_coverage_gate_exits_one_below_and_zero_above() {
    let (_d, rules, table) = setup();
    let below = run(
        &["check", s(&table), "-r", s(&rules), "--min-coverage", "0.9"],
        None,
    );
    assert_eq!(below.status.code(), Some(1));
    assert!(
        stderr(&below).contains("below --min-coverage"),
        "{}",
        stderr(&below)
    );
    let above = run(
        &["check", s(&table), "-r", s(&rules), "--min-coverage", "0.8"],
        None,
    );
    assert_eq!(above.status.code(), Some(0));
}

#[test]
fn a_failing_example_exits_one() {
    let (dir, _rules, table) = setup();
    let bad = RULES.replace("gears = 6,", "gears = 7,");
    let rules = write(dir.path(), "bad.toml", &bad);
    let out = run(&["check", s(&table), "-r", s(&rules)], None);
    assert_eq!(out.status.code(), Some(1));
    assert!(
        stdout(&out).contains("expected 7, got 6"),
        "{}",
        stdout(&out)
    );
}

#[test]
fn missing_column_lists_the_columns() {
    let (_d, rules, table) = setup();
    let out = run(
        &["check", s(&table), "-r", s(&rules), "--column", "gearbox"],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    let err = stderr(&out);
    assert!(err.contains("no column named \"gearbox\""), "{err}");
    assert!(err.contains("id, transmission, price"), "{err}");
}

#[test]
fn bad_pattern_names_file_rule_line_and_position() {
    let (dir, _r, table) = setup();
    let rules = write(
        dir.path(),
        "broken.toml",
        "[[count]]\nname = \"gears\"\npattern = '({int}\\s*spd'\n",
    );
    let out = run(
        &["check", s(&table), "-r", s(&rules), "-c", "transmission"],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    let err = stderr(&out);
    assert!(err.contains("broken.toml:2"), "{err}");
    assert!(err.contains("[[count]] \"gears\""), "{err}");
    assert!(err.contains("pattern position 0"), "{err}");
}

#[test]
fn apply_writes_parquet_with_compact_types() {
    let (dir, rules, table) = setup();
    let out_path = dir.path().join("out.parquet");
    let out = run(
        &["apply", s(&table), "-r", s(&rules), "-o", s(&out_path)],
        None,
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    assert!(
        stderr(&out).contains("wrote 7 rows, 3 features"),
        "{}",
        stderr(&out)
    );
    // polars reads the label back as an Enum with the ruleset's categories
    // in order, although the dictionary is written unordered.
    {
        use polars::prelude::*;
        let frame = ParquetReader::new(std::fs::File::open(&out_path).unwrap())
            .finish()
            .unwrap();
        let kind = frame.column("tx_kind").unwrap();
        let DataType::Enum(categories, _) = kind.dtype() else {
            panic!("tx_kind is {:?}, not an Enum", kind.dtype());
        };
        let names: Vec<&str> = categories.categories().values_iter().collect();
        assert_eq!(names, ["manual", "automatic", "other"]);
    }
    let csv_path = dir.path().join("out.csv");
    let out = run(
        &[
            "apply",
            s(&table),
            "-r",
            s(&rules),
            "-o",
            s(&csv_path),
            "--only-features",
            "--keep",
            "id",
        ],
        None,
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let text = std::fs::read_to_string(&csv_path).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines[0], "id,tx_gears,tx_shuttle,tx_kind");
    assert_eq!(lines[1], "1,6,false,automatic");
    assert_eq!(lines[3], "3,12,true,manual");
    assert_eq!(lines[4], "4,,,", "null source gives null features");
    assert_eq!(lines[6], "6,,false,other");
}

#[test]
fn failed_apply_keeps_the_existing_output() {
    let (dir, _rules, table) = setup();
    let out_path = write(dir.path(), "out.csv", "previous output\n");
    let rules = write(
        dir.path(),
        "bad.toml",
        "column = \"transmission\"\n[[flag]]\nname = \"x\"\npattern = '('\n",
    );
    let out = run(
        &["apply", s(&table), "-r", s(&rules), "-o", s(&out_path)],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    assert_eq!(
        std::fs::read_to_string(&out_path).unwrap(),
        "previous output\n"
    );
    let leftovers: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| e.file_name().to_string_lossy().contains("partial"))
        .collect();
    assert!(leftovers.is_empty(), "no temporary file is left behind");
}

#[test]
fn output_equal_to_input_is_refused() {
    let (_d, rules, table) = setup();
    let before = std::fs::read(&table).unwrap();
    let out = run(
        &["apply", s(&table), "-r", s(&rules), "-o", s(&table)],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("is also the input"),
        "{}",
        stderr(&out)
    );
    assert_eq!(std::fs::read(&table).unwrap(), before);
}

#[test]
fn output_in_a_missing_folder_is_an_error() {
    let (dir, rules, table) = setup();
    let target = dir.path().join("nope/out.parquet");
    let out = run(
        &["apply", s(&table), "-r", s(&rules), "-o", s(&target)],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("does not exist"), "{}", stderr(&out));
}

#[test]
fn explain_shows_spans_and_values() {
    let (_d, rules, _t) = setup();
    let out = run(&["explain", "-r", s(&rules), "6 SPD Auto"], None);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let text = stdout(&out);
    assert!(text.contains("normalized \"6 spd auto\""), "{text}");
    assert!(text.contains("tx_gears [count] fired -> 6"), "{text}");
    assert!(text.contains("matched \"6 spd\" at 0..5"), "{text}");
}

#[test]
fn stdin_is_read_as_csv() {
    let (_d, rules, _t) = setup();
    let out = descry()
        .args(["check", "-", "-r", s(&rules), "--format", "json"])
        .write_stdin(TABLE)
        .output()
        .unwrap();
    assert_no_panic(&out);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let report: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    assert_eq!(report["rows"], 7);
}

#[test]
fn thread_count_does_not_change_the_output() {
    let (dir, rules, table) = setup();
    let one = dir.path().join("one.parquet");
    let many = dir.path().join("many.parquet");
    run(
        &[
            "--threads",
            "1",
            "apply",
            s(&table),
            "-r",
            s(&rules),
            "-o",
            s(&one),
        ],
        None,
    );
    run(
        &[
            "--threads",
            "2",
            "apply",
            s(&table),
            "-r",
            s(&rules),
            "-o",
            s(&many),
        ],
        None,
    );
    assert_eq!(std::fs::read(&one).unwrap(), std::fs::read(&many).unwrap());
}

#[test]
fn feature_name_colliding_with_an_input_column_is_an_error() {
    let (dir, _r, table) = setup();
    let rules = write(
        dir.path(),
        "c.toml",
        "column = \"transmission\"\n[[flag]]\nname = \"price\"\nany = [\"x\"]\n",
    );
    let out = run(
        &[
            "apply",
            s(&table),
            "-r",
            s(&rules),
            "-o",
            s(&dir.path().join("o.csv")),
        ],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("which the input already has"),
        "{}",
        stderr(&out)
    );
    // `check` says what `apply` would refuse, naming the rule's file and
    // line (and still checks: it writes no column).
    let out = run(&["check", s(&table), "-r", s(&rules)], None);
    assert!(
        stderr(&out).contains(&format!(
            "descry: note: {}:3: rule [[flag]] \"price\" would write column \"price\", which the input \
             already has; rename the rule or set a `prefix` in the ruleset (`apply` on this table refuses it)",
            rules.display()
        )),
        "{}",
        stderr(&out)
    );
}

#[test]
fn a_feature_may_take_the_name_of_its_described_column_in_check() {
    // With `apply --drop-source` a feature may replace the column it describes.
    let (dir, _r, table) = setup();
    let rules = write(
        dir.path(),
        "c.toml",
        "column = \"transmission\"\n[[flag]]\nname = \"transmission\"\nany = [\"manual\"]\n",
    );
    let out = run(&["check", s(&table), "-r", s(&rules)], None);
    assert!(!stderr(&out).contains("already has"), "{}", stderr(&out));
    let out = run(
        &[
            "apply",
            s(&table),
            "-r",
            s(&rules),
            "--drop-source",
            "-o",
            s(&dir.path().join("o.csv")),
        ],
        None,
    );
    assert!(out.status.success(), "{}", stderr(&out));
}

#[test]
fn numeric_column_of_a_typed_file_is_read_as_text_with_a_note() {
    let (dir, rules, table) = setup();
    let typed = dir.path().join("typed.parquet");
    let out = run(
        &["apply", s(&table), "-r", s(&rules), "-o", s(&typed)],
        None,
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let by_price = write(
        dir.path(),
        "p.toml",
        "column = \"price\"\n[[count]]\nname = \"hundreds\"\npattern = '^({int})00$'\n",
    );
    let out = run(
        &["check", s(&typed), "-r", s(&by_price), "--format", "json"],
        None,
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    assert!(
        stderr(&out).contains("column \"price\" holds i64 values; they were read as text"),
        "{}",
        stderr(&out)
    );
    let report: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    assert_eq!(report["coverage"]["rows_covered"], 7);
}

/// `apply` of the demo rulesets to `input`, into `output`, with `extra`
/// options before the command.
fn apply_demo(input: &std::path::Path, output: &std::path::Path, global: &[&str], extra: &[&str]) {
    let (tx, eng) = (ruleset("transmission.toml"), ruleset("engine.toml"));
    let mut args: Vec<&str> = global.to_vec();
    args.extend([
        "apply",
        s(input),
        "-r",
        s(&tx),
        "-r",
        s(&eng),
        "-o",
        s(output),
        "--quiet",
    ]);
    args.extend_from_slice(extra);
    let out = run(&args, None);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
}

#[test]
fn streamed_output_is_identical_across_thread_counts_and_the_in_memory_path() {
    // 300,000 rows: several morsels of the streaming engine, so that
    // threads really do describe and encode them in parallel.
    let dir = TempDir::new().unwrap();
    let data = dir.path().join("data");
    let out = run(
        &[
            "demo",
            "--rows",
            "300000",
            "--seed",
            "3",
            "--out-dir",
            s(&data),
        ],
        None,
    );
    let input = data.join("listings.csv");
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let bytes = |name: &str, global: &[&str], extra: &[&str]| {
        let path = dir.path().join(name);
        apply_demo(&input, &path, global, extra);
        std::fs::read(&path).unwrap()
    };
    for ext in ["parquet", "csv"] {
        let one = bytes(&format!("t1.{ext}"), &["--threads", "1"], &[]);
        let two = bytes(&format!("t2.{ext}"), &["--threads", "2"], &[]);
        let three = bytes(&format!("t3.{ext}"), &["--threads", "3"], &[]);
        assert!(one == two, "{ext}: --threads 1 and 2 differ");
        assert!(two == three, "{ext}: --threads 2 and 3 differ");
    }
    let streamed = bytes("streamed.csv", &[], &[]);
    let whole = bytes("whole.csv", &[], &["--in-memory"]);
    assert!(
        streamed == whole,
        "the streamed and in-memory outputs differ"
    );
    assert_eq!(
        String::from_utf8(streamed).unwrap().lines().count(),
        300_001,
        "a header and every row"
    );
}

#[test]
fn every_input_format_reads_the_same_vocabulary() {
    let (dir, rules, table) = setup();
    let coverage = |input: &std::path::Path, extra: &[&str]| {
        let mut args = vec!["check", s(input), "-r", s(&rules), "--format", "json"];
        args.extend_from_slice(extra);
        let out = run(&args, None);
        assert_eq!(
            out.status.code(),
            Some(0),
            "{}: {}",
            input.display(),
            stderr(&out)
        );
        let r: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
        (
            r["rows"].as_u64().unwrap(),
            r["coverage"]["rows_covered"].as_u64().unwrap(),
        )
    };
    let expected = coverage(&table, &[]);
    for ext in ["parquet", "arrow", "feather", "ipc"] {
        let converted = dir.path().join(format!("t.{ext}"));
        let out = run(
            &[
                "apply",
                s(&table),
                "-r",
                s(&rules),
                "-o",
                s(&converted),
                "--quiet",
            ],
            None,
        );
        assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
        assert_eq!(coverage(&converted, &[]), expected, "{ext}");
    }
    let tsv = write(dir.path(), "t.tsv", &TABLE.replace(',', "\t"));
    assert_eq!(coverage(&tsv, &[]), expected, "tsv");
    let semi = write(dir.path(), "t.txt", &TABLE.replace(',', ";"));
    assert_eq!(
        coverage(&semi, &["--delimiter", ";"]),
        expected,
        "--delimiter"
    );
    let ndjson = write(
        dir.path(),
        "t.ndjson",
        "{\"id\":1,\"transmission\":\"6 spd auto\"}\n{\"id\":2,\"transmission\":\"6 SPD Auto\"}\n\
         {\"id\":3,\"transmission\":\"12-speed manual shuttle\"}\n{\"id\":4,\"transmission\":null}\n\
         {\"id\":5,\"transmission\":\"\"}\n{\"id\":6,\"transmission\":\"hydrostatic\"}\n{\"id\":7,\"transmission\":\"6 spd auto\"}\n",
    );
    assert_eq!(coverage(&ndjson, &[]), expected, "ndjson");
}

#[test]
fn drop_source_leaves_the_described_column_out() {
    let (dir, rules, table) = setup();
    let out_path = dir.path().join("dropped.csv");
    let out = run(
        &[
            "apply",
            s(&table),
            "-r",
            s(&rules),
            "-o",
            s(&out_path),
            "--drop-source",
        ],
        None,
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let text = std::fs::read_to_string(&out_path).unwrap();
    assert_eq!(
        text.lines().next().unwrap(),
        "id,price,tx_gears,tx_shuttle,tx_kind"
    );
}

#[test]
fn help_teaches_with_the_long_usage_text() {
    for (command, phrase) in [
        ("check", "Exit codes"),
        ("apply", "Enum (dictionary-encoded)"),
        ("explain", "debug a rule"),
        ("demo", "seeded"),
    ] {
        let out = run(&[command, "--help"], None);
        assert_eq!(out.status.code(), Some(0));
        assert!(
            stdout(&out).contains(phrase),
            "descry {command} --help lacks {phrase:?}:\n{}",
            stdout(&out)
        );
        assert!(
            stdout(&out).contains("Memory") || command == "explain",
            "descry {command} --help states its memory cost"
        );
    }
}

#[test]
fn sample_spellings_bounds_the_descriptor_columns() {
    let dir = TempDir::new().unwrap();
    let out_dir = dir.path().join("bounded");
    let out = run(
        &[
            "demo",
            "-o",
            s(&out_dir),
            "--rows",
            "5000",
            "--spellings",
            "40",
        ],
        None,
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    for column in ["transmission", "engine"] {
        let truth = std::fs::read_to_string(out_dir.join(format!("truth/{column}.csv"))).unwrap();
        let described = truth
            .lines()
            .skip(1)
            .filter(|l| l.rsplit(',').nth(1) == Some("false"))
            .count();
        assert!(
            (30..=40).contains(&described),
            "{column}: {described} spellings"
        );
    }
    let refused = run(&["demo", "-o", s(&out_dir), "--spellings", "0"], None);
    assert_eq!(refused.status.code(), Some(2), "{}", stderr(&refused));
}

#[test]
fn require_gates_one_feature_with_a_reason_per_breach() {
    let (_d, rules, table) = setup();
    // 5 rows with text: shuttle fires on 1 (20%), gears on 4 (80%).
    let ok = run(
        &[
            "check",
            s(&table),
            "-r",
            s(&rules),
            "--require",
            "shuttle=0.2",
            "--require",
            "tx_gears=0.8",
        ],
        None,
    );
    assert_eq!(ok.status.code(), Some(0), "{}", stderr(&ok));
    let out = run(
        &[
            "check",
            s(&table),
            "-r",
            s(&rules),
            "--require",
            "shuttle=0.5",
            "--require",
            "tx_gears=0.9",
            "--format",
            "json",
        ],
        None,
    );
    assert_eq!(out.status.code(), Some(1));
    let err = stderr(&out);
    assert_eq!(err.matches("gate failed").count(), 2, "{err}");
    assert!(
        err.contains(
            "tx_shuttle fires on 20.00% of rows (1 of 5), below --require tx_shuttle=50.00%"
        ),
        "{err}"
    );
    let report: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    assert_eq!(report["schema"], "descry.check/1");
    assert_eq!(report["passed"], false);
    let gates = report["gates"].as_array().unwrap();
    assert_eq!(
        gates.len(),
        3,
        "two requirements and the examples: {gates:?}"
    );
    assert_eq!(gates[0]["feature"], "tx_shuttle");
    assert_eq!(gates[0]["value"], 0.2);
    let unknown = run(
        &[
            "check",
            s(&table),
            "-r",
            s(&rules),
            "--require",
            "turbo=0.1",
        ],
        None,
    );
    assert_eq!(unknown.status.code(), Some(2));
    assert!(
        stderr(&unknown).contains("tx_gears"),
        "{}",
        stderr(&unknown)
    );
}

#[test]
fn several_rulesets_are_checked_in_one_report_with_one_exit_code() {
    let (dir, rules, table) = setup();
    let price = write(
        dir.path(),
        "price.toml",
        "column = \"id\"\nprefix = \"id_\"\n[[flag]]\nname = \"odd\"\npattern = '^[1357]$'\n",
    );
    let out = run(
        &[
            "check",
            s(&table),
            "-r",
            s(&rules),
            "-r",
            s(&price),
            "--format",
            "json",
            "--require",
            "odd=0.9",
        ],
        None,
    );
    assert_eq!(out.status.code(), Some(1), "{}", stderr(&out));
    let all: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    assert_eq!(all["schema"], "descry.checks/1");
    assert_eq!(all["reports"].as_array().unwrap().len(), 2);
    assert_eq!(all["reports"][0]["schema"], "descry.check/1");
    assert_eq!(all["reports"][1]["column"], "id");
    assert_eq!(all["passed"], false);
    let failed: Vec<&serde_json::Value> = all["gates"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|g| g["passed"] == false)
        .collect();
    assert_eq!(failed.len(), 1, "{failed:?}");
    assert!(failed[0]["ruleset"]
        .as_str()
        .unwrap()
        .ends_with("price.toml"));
    assert!(
        stderr(&out).contains("price.toml: id_odd fires on 57.14% of rows"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn a_coverage_gate_on_a_column_with_nothing_to_cover_fails() {
    let (dir, rules, _table) = setup();
    for (name, text) in [
        ("nulls.csv", "id,transmission\n1,\n2,\n"),
        ("blanks.csv", "id,transmission\n1,\" \"\n2,\"\"\n"),
        ("empty.csv", "id,transmission\n"),
    ] {
        let t = write(dir.path(), name, text);
        let out = run(
            &["check", s(&t), "-r", s(&rules), "--min-coverage", "0.5"],
            None,
        );
        assert_eq!(out.status.code(), Some(1), "{name}: {}", stderr(&out));
        assert!(
            stderr(&out).contains("has no rows to cover"),
            "{name}: {}",
            stderr(&out)
        );
    }
}

#[test]
fn a_gate_message_shows_enough_digits_to_see_the_difference() {
    let (dir, rules, _table) = setup();
    // 9,999 of 10,000 rows covered: 99.99% against 100%.
    let mut text = String::from("id,transmission\n");
    for i in 0..9_999 {
        text.push_str(&format!("{i},6 spd auto\n"));
    }
    text.push_str("9999,hydrostatic\n");
    let t = write(dir.path(), "many.csv", &text);
    let out = run(
        &["check", s(&t), "-r", s(&rules), "--min-coverage", "0.99995"],
        None,
    );
    assert_eq!(out.status.code(), Some(1));
    assert!(
        stderr(&out).contains("coverage 99.990% of rows is below --min-coverage 99.995%"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn top_zero_leaves_the_value_lists_out() {
    let (_d, rules, table) = setup();
    let out = run(&["check", s(&table), "-r", s(&rules), "--top", "0"], None);
    let text = stdout(&out);
    assert!(!text.contains("unmatched values"), "{text}");
    assert!(!text.contains("rows  value"), "{text}");
    assert!(text.contains("coverage 80.0% of rows"), "{text}");
}

#[test]
fn placeholders_are_null_and_apart_from_coverage() {
    let (dir, _rules, table) = setup();
    let rules = write(
        dir.path(),
        "p.toml",
        &RULES.replace(
            "prefix = \"tx_\"",
            "prefix = \"tx_\"\nplaceholders = [\"hydrostatic\"]",
        ),
    );
    let out = run(
        &["check", s(&table), "-r", s(&rules), "--format", "json"],
        None,
    );
    let report: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    assert_eq!(report["placeholder_rows"], 1);
    assert_eq!(report["coverage"]["rows_considered"], 4);
    assert_eq!(report["coverage"]["row_share"], 1.0);
    assert_eq!(report["placeholders"][0]["value"], "hydrostatic");
    let parquet = dir.path().join("f.parquet");
    let csv = dir.path().join("f.csv");
    run(
        &[
            "apply",
            s(&table),
            "-r",
            s(&rules),
            "-o",
            s(&csv),
            "--only-features",
            "--keep",
            "id",
        ],
        None,
    );
    let written = std::fs::read_to_string(&csv).unwrap();
    // Row 6 (hydrostatic): every feature empty, the label's default included.
    assert!(written.lines().any(|l| l == "6,,,"), "{written}");
    let _ = parquet;
}

#[test]
fn explain_reads_values_from_a_file_or_stdin_and_shows_only_what_fired() {
    let (dir, rules, _table) = setup();
    let values = write(dir.path(), "v.txt", "6 spd auto\r\nhydrostatic\n");
    let out = run(
        &[
            "explain",
            "-r",
            s(&rules),
            "--values",
            s(&values),
            "--fired",
        ],
        None,
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let text = stdout(&out);
    assert!(text.contains("tx_gears [count] fired -> 6"), "{text}");
    assert!(!text.contains("tx_shuttle"), "{text}");
    assert!(
        text.contains("value      \"hydrostatic\"\nnormalized \"hydrostatic\"\n  no rule fired"),
        "{text}"
    );
    let mut cmd = descry();
    let piped = cmd
        .args([
            "explain",
            "-r",
            s(&rules),
            "--values",
            "-",
            "--format",
            "json",
        ])
        .write_stdin("12-speed manual shuttle\n")
        .output()
        .unwrap();
    assert_no_panic(&piped);
    let json: serde_json::Value = serde_json::from_slice(&piped.stdout).unwrap();
    assert_eq!(json[0]["features"][0]["value"], 12);
    assert_eq!(json[0]["features"][1]["value"], true);
    assert_eq!(json[0]["kind"], "considered");
}

#[test]
fn propose_refuses_zero_rules_with_the_reason() {
    let out = run(
        &[
            "propose",
            s(&sample_csv()),
            "-c",
            "engine",
            "-o",
            "/tmp/never.toml",
            "--max-rules",
            "0",
        ],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("would leave the draft without rules"),
        "{}",
        stderr(&out)
    );
    assert!(!stderr(&out).contains("min-share"), "{}", stderr(&out));
}

#[test]
fn survey_help_shows_the_shape_notation_literally() {
    let out = run(&["survey", "--help"], None);
    assert!(
        stdout(&out).contains("n times (9{n} above 6)"),
        "{}",
        stdout(&out)
    );
}

#[test]
fn apply_only_features_reports_what_it_wrote() {
    let (dir, rules, table) = setup();
    let out_path = dir.path().join("f.parquet");
    let out = run(
        &[
            "apply",
            s(&table),
            "-r",
            s(&rules),
            "-o",
            s(&out_path),
            "--only-features",
            "--keep",
            "id",
        ],
        None,
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let err = stderr(&out);
    assert!(err.contains("feature columns"), "{err}");
    assert!(!err.contains("described columns"), "{err}");
}
