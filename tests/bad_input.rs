//! The catalogue of bad inputs (docs/bad-input.md): each case gives exit
//! code 2 (or 1 for a failed gate) and a message naming the file and the
//! place, and none panics.

mod common;

use std::path::{Path, PathBuf};

use common::*;
use tempfile::TempDir;

const RULES: &str =
    "column = \"transmission\"\n[[count]]\nname = \"gears\"\npattern = '({int})\\s*spd'\n";

struct Case {
    dir: TempDir,
    rules: PathBuf,
}

fn case() -> Case {
    let dir = TempDir::new().unwrap();
    let rules = write(dir.path(), "r.toml", RULES);
    Case { dir, rules }
}

impl Case {
    fn file(&self, name: &str, bytes: &[u8]) -> PathBuf {
        let p = self.dir.path().join(name);
        std::fs::write(&p, bytes).unwrap();
        p
    }

    fn check(&self, input: &Path, extra: &[&str]) -> (Option<i32>, String, String) {
        let mut args = vec!["check", s(input), "-r", s(&self.rules)];
        args.extend_from_slice(extra);
        outcome(&run(&args, None))
    }

    fn apply(&self, input: &Path, output: &Path, extra: &[&str]) -> std::process::Output {
        let mut args = vec!["apply", s(input), "-r", s(&self.rules), "-o", s(output)];
        args.extend_from_slice(extra);
        run(&args, None)
    }
}

fn outcome(out: &std::process::Output) -> (Option<i32>, String, String) {
    (out.status.code(), stdout(out), stderr(out))
}

fn assert_error(got: (Option<i32>, String, String), parts: &[&str]) {
    let (code, _, err) = got;
    assert_eq!(code, Some(2), "exit code; stderr:\n{err}");
    for p in parts {
        assert!(err.contains(p), "expected {p:?} in:\n{err}");
    }
}

#[test]
fn file_that_does_not_exist() {
    let c = case();
    assert_error(
        c.check(&c.dir.path().join("nope.csv"), &[]),
        &["nope.csv", "no such file"],
    );
}

#[test]
fn a_directory() {
    let c = case();
    let d = c.dir.path().join("folder.csv");
    std::fs::create_dir(&d).unwrap();
    assert_error(c.check(&d, &[]), &["folder.csv", "is a folder"]);
}

#[test]
fn an_empty_file() {
    let c = case();
    let f = c.file("empty.csv", b"");
    assert_error(c.check(&f, &[]), &["empty.csv", "the file is empty"]);
}

#[test]
fn a_file_with_only_a_header_is_zero_rows_not_an_error() {
    let c = case();
    let f = c.file("header.csv", b"id,transmission\n");
    let (code, out, err) = c.check(&f, &["--format", "json"]);
    assert_eq!(code, Some(0), "{err}");
    assert!(err.contains("no rows"), "{err}");
    let report: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(report["rows"], 0);
}

#[test]
fn an_unknown_extension() {
    let c = case();
    let f = c.file("table.xlsx", b"id,transmission\n1,6 spd\n");
    assert_error(
        c.check(&f, &[]),
        &[
            "table.xlsx",
            "unknown table format \".xlsx\"",
            "--delimiter",
        ],
    );
    // --delimiter reads any file as CSV.
    let (code, _, err) = c.check(&f, &["--delimiter", ","]);
    assert_eq!(code, Some(0), "{err}");
}

#[test]
fn csv_with_ragged_rows_names_the_row() {
    let c = case();
    let f = c.file("ragged.csv", b"id,transmission\n1,6 spd\n2,a,b,c\n3,x\n");
    assert_error(
        c.check(&f, &[]),
        &[
            "ragged.csv",
            "row 2 (line 3) has 4 fields but the header has 2",
        ],
    );
}

/// A ragged row far into the file, after many batches, is reported by
/// `check` (which reads only the described column, from a file or from
/// standard input) and by `apply --only-features` as it is at the top of
/// the file.
#[test]
fn a_ragged_row_deep_in_a_long_csv_is_reported_when_few_columns_are_read() {
    let c = case();
    let mut bytes = b"id,transmission,note\n".to_vec();
    for i in 1..=300_000 {
        if i == 250_000 {
            bytes.extend_from_slice(b"250000,6 spd,a,b\n");
        } else {
            bytes.extend_from_slice(format!("{i},{} spd,n\n", 3 + i % 5).as_bytes());
        }
    }
    let f = c.file("long.csv", &bytes);
    let message = "row 250000 (line 250001) has 4 fields but the header has 3";
    assert_error(c.check(&f, &[]), &["long.csv", message]);
    let out_path = c.dir.path().join("out.parquet");
    let out = c.apply(&f, &out_path, &["--only-features"]);
    assert_error(outcome(&out), &[message]);
    assert!(!out_path.exists(), "no output is left behind");
    // Standard input is read whole, by the other reader.
    let out = descry()
        .args(["check", "-", "-r", s(&c.rules)])
        .write_stdin(bytes)
        .output()
        .unwrap();
    assert_no_panic(&out);
    assert_error(outcome(&out), &[message]);
}

/// Line breaks of another convention (a lone carriage return) leave the
/// file one endless header line: the read stops after 16 MiB and says why.
#[test]
fn a_csv_without_line_breaks_is_refused_without_reading_it_whole() {
    let c = case();
    let mut bytes = b"id,transmission\r".to_vec();
    for i in 0..1_500_000 {
        bytes.extend_from_slice(format!("{i},6 spd\r").as_bytes());
    }
    assert!(bytes.len() > 16 << 20);
    let f = c.file("cr.csv", &bytes);
    assert_error(
        c.check(&f, &[]),
        &["cr.csv", "no line break in the first 16 MiB", "\\r\\n"],
    );
}

#[test]
fn csv_with_an_unclosed_quote_names_the_line() {
    let c = case();
    let f = c.file("quote.csv", b"id,transmission\n1,6 spd\n2,\"x\n3,y\n");
    assert_error(
        c.check(&f, &[]),
        &[
            "quote.csv",
            "line 3: a quoted field opens here and is never closed",
        ],
    );
}

#[test]
fn invalid_utf8_names_the_row_or_is_replaced_when_asked() {
    let c = case();
    let f = c.file("latin1.csv", b"id,transmission\n1,6 spd\n2,caf\xe9 auto\n");
    assert_error(
        c.check(&f, &[]),
        &[
            "latin1.csv",
            "row 2 (line 3), column \"transmission\": invalid UTF-8",
            "--lossy-utf8",
        ],
    );
    let (code, out, err) = c.check(&f, &["--lossy-utf8", "--format", "json"]);
    assert_eq!(code, Some(0), "{err}");
    assert!(out.contains("caf\u{fffd} auto"), "{out}");
}

#[test]
fn a_ten_megabyte_field_is_read_and_shown_cut() {
    let c = case();
    let mut bytes = b"id,transmission\n1,\"".to_vec();
    bytes.extend(std::iter::repeat_n(b'x', 10 * 1024 * 1024));
    bytes.extend_from_slice(b"\"\n2,6 spd\n");
    let f = c.file("big.csv", &bytes);
    let (code, out, err) = c.check(&f, &[]);
    assert_eq!(code, Some(0), "{err}");
    assert!(
        out.contains("more characters)"),
        "the text report cuts the value"
    );
    assert!(out.len() < 10_000, "the text report does not print 10 MB");
}

#[test]
fn bom_and_crlf_are_handled() {
    let c = case();
    let f = c.file(
        "bom.csv",
        b"\xef\xbb\xbfid,transmission\r\n1,6 spd\r\n2,x\r\n",
    );
    let (code, out, err) = c.check(&f, &["--format", "json"]);
    assert_eq!(code, Some(0), "{err}");
    let report: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(
        report["coverage"]["rows_covered"], 1,
        "the BOM does not hide the column; CR is not part of values"
    );
    assert_eq!(report["unmatched"][0]["value"], "x");
}

#[test]
fn a_truncated_parquet_file() {
    let c = case();
    let csv = c.file("t.csv", b"id,transmission\n1,6 spd\n2,x\n");
    let pq = c.dir.path().join("t.parquet");
    let out = c.apply(&csv, &pq, &[]);
    assert_eq!(out.status.code(), Some(0));
    let full = std::fs::read(&pq).unwrap();
    let cut = c.file("cut.parquet", &full[..full.len() / 2]);
    assert_error(
        c.check(&cut, &[]),
        &["cut.parquet", "cannot read the table"],
    );
}

#[test]
fn a_file_that_is_not_parquet() {
    let c = case();
    let f = c.file("fake.parquet", b"id,transmission\n1,6 spd\n");
    assert_error(c.check(&f, &[]), &["fake.parquet", "cannot read the table"]);
}

#[test]
fn an_all_null_column_is_reported_not_an_error() {
    let c = case();
    let f = c.file("nulls.csv", b"id,transmission\n1,\n2,\n");
    let (code, out, err) = c.check(&f, &["--format", "json"]);
    assert_eq!(code, Some(0), "{err}");
    assert!(err.contains("only nulls"), "{err}");
    let report: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(report["null_rows"], 2);
}

#[test]
fn an_unwritable_output() {
    let c = case();
    let csv = c.file("t.csv", b"id,transmission\n1,6 spd\n");
    // /proc exists but no file can be created in it, not even by root.
    let out = c.apply(&csv, Path::new("/proc/descry-out.parquet"), &[]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("/proc/descry-out.parquet"),
        "{}",
        stderr(&out)
    );
    assert!(
        stderr(&out).contains("cannot create a temporary file"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn ruleset_that_does_not_exist() {
    let c = case();
    let csv = c.file("t.csv", b"id,transmission\n1,6 spd\n");
    let out = run(
        &[
            "check",
            s(&csv),
            "-r",
            s(&c.dir.path().join("missing.toml")),
        ],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("missing.toml: cannot read the ruleset"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn bad_arguments_exit_two() {
    let out = run(
        &["check", "x.csv", "-r", "r.toml", "--min-coverage", "95"],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("not a fraction between 0 and 1"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn a_report_piped_into_a_reader_that_stops_early_is_not_a_crash() {
    let c = case();
    let mut bytes = b"id,transmission\n".to_vec();
    for i in 0..5000 {
        bytes.extend_from_slice(format!("{i},value {i}\n").as_bytes());
    }
    let f = c.file("many.csv", &bytes);
    let script = format!(
        "{} check {} -r {} --format json | head -c 10 >/dev/null; echo ${{PIPESTATUS[0]}}",
        assert_cmd::cargo::cargo_bin("descry").display(),
        s(&f),
        s(&c.rules)
    );
    let out = std::process::Command::new("bash")
        .args(["-c", &script])
        .env("RUST_BACKTRACE", "1")
        .output()
        .unwrap();
    assert_no_panic(&out);
    assert_eq!(String::from_utf8_lossy(&out.stdout).trim(), "0");
}

#[test]
fn a_catastrophic_fancy_pattern_is_reported_and_the_run_goes_on() {
    let c = case();
    let rules = write(
        c.dir.path(),
        "evil.toml",
        "column = \"transmission\"\n[[flag]]\nname = \"evil\"\nfancy = true\npattern = '(a+)+(?!x)$'\n\
         [[count]]\nname = \"gears\"\npattern = '({int})\\s*spd'\n",
    );
    let long_a = format!("{}b", "a".repeat(5000));
    let f = c.file(
        "evil.csv",
        format!("id,transmission\n1,{long_a}\n2,6 spd\n").as_bytes(),
    );
    let started = std::time::Instant::now();
    let out = run(&["check", s(&f), "-r", s(&rules), "--format", "json"], None);
    assert!(started.elapsed().as_secs() < 60, "finishes promptly");
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let report: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    assert_eq!(report["issues"][0]["rule"], "evil");
    assert_eq!(report["issues"][0]["issue"]["kind"], "backtrack_limit");
    assert_eq!(
        report["coverage"]["rows_covered"], 1,
        "the other value is still evaluated"
    );
    let text = run(&["check", s(&f), "-r", s(&rules)], None);
    assert!(
        stdout(&text).contains("backtrack limit reached"),
        "{}",
        stdout(&text)
    );
}

#[test]
fn terminal_escape_sequences_in_values_are_shown_inert() {
    let c = case();
    let f = c.file(
        "esc.csv",
        b"id,transmission\n1,\x1b[31mred\x1b]0;title\x07\n2,<script>alert(1)</script>\n",
    );
    let (code, out, err) = c.check(&f, &[]);
    assert_eq!(code, Some(0), "{err}");
    assert!(
        !out.contains('\x1b') && !out.contains('\x07'),
        "raw control characters reached the terminal"
    );
    assert!(out.contains("\\u{1b}[31mred"), "{out}");
}

/// A described column of lists or structs has no one text per row: the
/// error names the file and the column.
#[test]
fn a_described_column_of_lists_or_structs_is_named() {
    use polars::prelude::*;
    let c = case();
    let lists = Series::new(
        "transmission".into(),
        [
            Series::new("".into(), ["6 spd", "auto"]),
            Series::new("".into(), ["5 spd"]),
        ],
    );
    let parts = Series::new("gears".into(), [6u8, 5]);
    let structs = StructChunked::from_series("transmission".into(), 2, [&parts].into_iter())
        .unwrap()
        .into_series();
    for (name, series) in [("lists.parquet", lists), ("structs.parquet", structs)] {
        let path = c.dir.path().join(name);
        let mut frame = DataFrame::new(2, vec![series.into_column()]).unwrap();
        ParquetWriter::new(std::fs::File::create(&path).unwrap())
            .finish(&mut frame)
            .unwrap();
        let (code, _, err) = c.check(&path, &[]);
        assert_eq!(code, Some(2), "{name}: {err}");
        assert!(err.contains(name), "{name}: {err}");
        assert!(
            err.contains("column \"transmission\" holds") && err.contains("cannot describe"),
            "{name}: {err}"
        );
        let out = c.dir.path().join(format!("{name}.out.parquet"));
        let o = c.apply(&path, &out, &[]);
        assert_eq!(o.status.code(), Some(2), "{name}: {}", stderr(&o));
        assert!(stderr(&o).contains("cannot describe"), "{}", stderr(&o));
        assert!(!out.exists());
    }
}

/// Two rulesets that would write the same feature column are refused
/// before anything is read, naming both rules.
#[test]
fn two_rulesets_writing_one_column_are_refused() {
    let c = case();
    let second = write(c.dir.path(), "again.toml", RULES);
    let input = c.file("t.csv", b"transmission\n6 spd\n");
    let out = c.dir.path().join("out.csv");
    let o = run(
        &[
            "apply",
            s(&input),
            "-r",
            s(&c.rules),
            "-r",
            s(&second),
            "-o",
            s(&out),
        ],
        None,
    );
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    let err = stderr(&o);
    assert!(
        err.contains("again.toml:") && err.contains("r.toml:") && err.contains("\"gears\""),
        "{err}"
    );
    assert!(!out.exists());
}
