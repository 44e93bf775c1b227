//! Hostile files (docs/bad-input.md, "Bad inputs tried"): each case ends with exit 0
//! and the right result, or exit 2 and a message naming the file and the
//! place; none panics, overflows its stack, destroys an input or leaves a
//! partial file behind.

mod common;

use std::os::unix::fs::PermissionsExt;
use std::path::{Path, PathBuf};
use std::process::Output;

use common::*;
use tempfile::TempDir;

const RULES: &str =
    "column = \"transmission\"\n[[count]]\nname = \"gears\"\npattern = '({int})\\s*spd'\n\
                     [[flag]]\nname = \"auto\"\nany = [\"auto\"]\n";

const CSV: &str = "id,transmission\n1,6 spd auto\n2,manual\n3,\n4,6 spd auto\n";

fn setup() -> (TempDir, PathBuf) {
    let dir = TempDir::new().unwrap();
    let rules = write(dir.path(), "r.toml", RULES);
    (dir, rules)
}

fn expect_error(out: &Output, parts: &[&str]) {
    let err = stderr(out);
    assert_eq!(out.status.code(), Some(2), "exit code; stderr:\n{err}");
    for p in parts {
        assert!(err.contains(p), "expected {p:?} in:\n{err}");
    }
}

fn expect_ok(out: &Output) {
    assert_eq!(out.status.code(), Some(0), "stderr:\n{}", stderr(out));
}

/// The rows `check` covers, from its JSON report.
fn rows_covered(input: &Path, rules: &Path) -> u64 {
    let out = run(
        &["check", s(input), "-r", s(rules), "--format", "json"],
        None,
    );
    expect_ok(&out);
    let report: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    report["coverage"]["rows_covered"].as_u64().unwrap()
}

/// `name: type` lines of each Parquet file's Arrow schema, read by pyarrow.
fn arrow_schema(file: &Path) -> String {
    let text = run_python("arrow_schema.py", &[s(file)]);
    text.lines().skip(1).collect::<Vec<_>>().join("\n")
}

// 1. Column types polars is built without -------------------------------

fn hostile_tables(dir: &Path) {
    run_python("hostile_tables.py", &[s(dir)]);
}

#[test]
fn exotic_columns_elsewhere_do_not_stop_the_commands_that_read_one_column() {
    let (dir, rules) = setup();
    hostile_tables(dir.path());
    for name in ["exotic.parquet", "exotic.arrow"] {
        let f = dir.path().join(name);
        // "6 spd auto" twice: the count fires on 2 rows.
        assert_eq!(rows_covered(&f, &rules), 2, "{name}");
        let c = ["-c", "transmission"];
        for command in ["survey", "cluster"] {
            expect_ok(&run(&[&[command, s(&f)][..], &c[..]].concat(), None));
        }
        let draft = dir.path().join(format!("{name}.toml"));
        expect_ok(&run(
            &["propose", s(&f), "-c", "transmission", "-o", s(&draft)],
            None,
        ));
    }
}

#[test]
fn apply_refuses_a_column_it_cannot_carry_and_names_it_with_its_type() {
    let (dir, rules) = setup();
    hostile_tables(dir.path());
    for (name, place) in [
        ("exotic.parquet", "\"price\""),
        ("exotic.arrow", "\"price\""),
    ] {
        let f = dir.path().join(name);
        let out_path = dir.path().join(format!("{name}.out.parquet"));
        for extra in [&[][..], &["--in-memory"][..]] {
            let args = [
                &["apply", s(&f), "-r", s(&rules), "-o", s(&out_path)][..],
                extra,
            ]
            .concat();
            expect_error(&run(&args, None), &[name, place, "Decimal", "cannot read"]);
            assert!(!out_path.exists());
        }
        // The columns it can carry, it carries.
        let args = [
            "apply",
            s(&f),
            "-r",
            s(&rules),
            "-o",
            s(&out_path),
            "--only-features",
            "--keep",
            "id",
        ];
        expect_ok(&run(&args, None));
        assert_eq!(
            arrow_schema(&out_path),
            "id: int64\ngears: uint8\nauto: bool",
            "{name}"
        );
    }
}

#[test]
fn a_run_end_encoded_ipc_column_is_refused_in_words() {
    let (dir, rules) = setup();
    hostile_tables(dir.path());
    let f = dir.path().join("run_end.arrow");
    let out = run(&["check", s(&f), "-r", s(&rules)], None);
    expect_error(
        &out,
        &["run_end.arrow", "column \"code\" is run-end encoded"],
    );
}

/// polars' IPC reader cannot read such a file at all (it keeps one column
/// per name), so every command refuses it, naming the name.
#[test]
fn two_ipc_columns_of_one_name() {
    let (dir, rules) = setup();
    hostile_tables(dir.path());
    let f = dir.path().join("twice.arrow");
    let out_path = dir.path().join("out.parquet");
    let message = [
        "twice.arrow",
        "the column name \"note\"",
        "(columns 2 and 4)",
        "rename one",
    ];
    expect_error(
        &run(&["apply", s(&f), "-r", s(&rules), "-o", s(&out_path)], None),
        &message,
    );
    expect_error(&run(&["check", s(&f), "-r", s(&rules)], None), &message);
}

// 2. Deep nesting ------------------------------------------------------------

#[test]
fn deeply_nested_json_is_refused_with_its_line() {
    let (dir, rules) = setup();
    let deep = format!("{}{}", "[".repeat(200_000), "]".repeat(200_000));
    let text = format!(
        "{{\"id\": 1, \"transmission\": \"6 spd\"}}\n{{\"id\": 2, \"transmission\": \"x\"}}\n\
         {{\"id\": 3, \"transmission\": \"y\", \"extra\": {deep}}}\n"
    );
    let f = write(dir.path(), "deep.ndjson", &text);
    let out = run(&["check", s(&f), "-r", s(&rules)], None);
    expect_error(
        &out,
        &["deep.ndjson", "line 3", "nested deeper than 64 levels"],
    );
}

// 3. Closed pipes and full disks ---------------------------------------------

fn many_values(dir: &Path) -> PathBuf {
    let mut text = String::from("id,transmission\n");
    for i in 0..6000 {
        text.push_str(&format!("{i},value {i}\n{i},Value {i}\n"));
    }
    write(dir, "many.csv", &text)
}

/// Runs `descry ARGS | head -c 1` and gives descry's own exit code.
fn exit_code_into_a_closed_pipe(args: &[&str]) -> (String, String) {
    let script = format!(
        "{} {} 2>err.txt | head -c 1 >/dev/null; echo ${{PIPESTATUS[0]}}; cat err.txt",
        assert_cmd::cargo::cargo_bin("descry").display(),
        args.join(" ")
    );
    let dir = TempDir::new().unwrap();
    let out = std::process::Command::new("bash")
        .args(["-c", &script])
        .current_dir(dir.path())
        .env("RUST_BACKTRACE", "1")
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout).into_owned();
    let (code, err) = text.split_once('\n').unwrap();
    (code.to_owned(), err.to_owned())
}

#[test]
fn reports_into_a_closed_pipe_stop_quietly_and_into_a_full_disk_fail_clearly() {
    let (dir, _) = setup();
    let f = many_values(dir.path());
    let commands: [&[&str]; 2] = [
        &["survey", s(&f), "-c", "transmission", "--top", "20000"],
        &["cluster", s(&f), "-c", "transmission", "--top", "20000"],
    ];
    for args in commands {
        let (code, err) = exit_code_into_a_closed_pipe(args);
        assert_eq!(code, "0", "{args:?}: {err}");
        assert!(!err.contains("panicked"), "{err}");
        let full = std::fs::File::create("/dev/full").unwrap();
        let out = std::process::Command::new(assert_cmd::cargo::cargo_bin("descry"))
            .args(args)
            .stdout(full)
            .output()
            .unwrap();
        assert_no_panic(&out);
        expect_error(&out, &["cannot write to standard output"]);
    }
}

// 4. Inputs are never written over --------------------------------------------

#[test]
fn no_command_writes_over_its_inputs() {
    let (dir, rules) = setup();
    let table = write(dir.path(), "t.csv", CSV);
    let before = std::fs::read(&table).unwrap();
    let out = run(
        &[
            "propose",
            s(&table),
            "-c",
            "transmission",
            "-o",
            s(&table),
            "--force",
        ],
        None,
    );
    expect_error(&out, &["t.csv", "is also the input"]);
    let out = run(
        &[
            "cluster",
            s(&table),
            "-c",
            "transmission",
            "--write-map",
            s(&table),
            "--label",
            "k",
        ],
        None,
    );
    expect_error(&out, &["t.csv", "is also the input"]);
    assert_eq!(std::fs::read(&table).unwrap(), before);

    // A ruleset named like a table is an input of apply too.
    let odd = write(dir.path(), "rules.csv", RULES);
    let out = run(&["apply", s(&table), "-r", s(&odd), "-o", s(&odd)], None);
    expect_error(&out, &["rules.csv", "is also the input"]);
    assert_eq!(std::fs::read_to_string(&odd).unwrap(), RULES);

    // propose --update rewrites its ruleset in place only without -o.
    let out = run(
        &[
            "propose",
            s(&table),
            "--update",
            s(&rules),
            "-o",
            s(&rules),
            "--force",
        ],
        None,
    );
    expect_error(&out, &["r.toml", "is also the input"]);
    assert_eq!(std::fs::read_to_string(&rules).unwrap(), RULES);
    let out = run(
        &[
            "propose",
            s(&table),
            "--update",
            s(&rules),
            "--min-share",
            "0.01",
        ],
        None,
    );
    expect_ok(&out);
    assert!(std::fs::read_to_string(&rules).unwrap().starts_with(RULES));
}

// 5. Thread counts -------------------------------------------------------------

#[test]
fn a_huge_thread_count_is_capped_with_a_note() {
    let (dir, rules) = setup();
    let table = write(dir.path(), "t.csv", CSV);
    let out = run(
        &["--threads", "100000", "check", s(&table), "-r", s(&rules)],
        None,
    );
    expect_ok(&out);
    assert!(
        stderr(&out).contains("--threads 100000 is more than 4 per core"),
        "{}",
        stderr(&out)
    );
}

// 6. Paths are not patterns ----------------------------------------------------

#[test]
fn brackets_and_stars_in_a_path_are_plain_characters() {
    let (dir, rules) = setup();
    let bracket = write(dir.path(), "data[1].csv", "id,transmission\n1,6 spd\n");
    write(
        dir.path(),
        "data1.csv",
        "id,transmission\n1,manual\n2,manual\n",
    );
    let star = write(dir.path(), "star*.csv", "id,transmission\n1,6 spd\n");
    write(dir.path(), "star1.csv", "id,transmission\n1,7 spd\n");
    write(dir.path(), "star2.csv", "id,transmission\n1,8 spd\n");
    for f in [&bracket, &star] {
        assert_eq!(rows_covered(f, &rules), 1, "{}", f.display());
        let out_path = dir.path().join("out[1].csv");
        expect_ok(&run(
            &["apply", s(f), "-r", s(&rules), "-o", s(&out_path)],
            None,
        ));
        assert_eq!(
            std::fs::read_to_string(&out_path).unwrap().lines().count(),
            2
        );
        // The same through Parquet: the file written is read back alone.
        let pq = dir.path().join("p[1].parquet");
        write(dir.path(), "p1.parquet", "not parquet");
        expect_ok(&run(&["apply", s(f), "-r", s(&rules), "-o", s(&pq)], None));
        assert_eq!(rows_covered(&pq, &rules), 1);
    }
}

// 7. NDJSON keys seen late -----------------------------------------------------

#[test]
fn a_json_key_first_seen_at_line_500_is_read() {
    let (dir, rules) = setup();
    let mut text = String::new();
    for i in 1..500 {
        text.push_str(&format!("{{\"id\": {i}}}\n"));
    }
    text.push_str("{\"id\": 500, \"transmission\": \"6 spd\"}\n");
    let f = write(dir.path(), "late.ndjson", &text);
    assert_eq!(rows_covered(&f, &rules), 1);
}

// 8. Source columns are written as they were -------------------------------------

#[test]
fn a_float_source_column_keeps_its_type_and_is_described_by_its_text() {
    let (dir, _) = setup();
    let csv = write(dir.path(), "t.csv", "id,size\n1,1.5\n2,2.0\n3,\n4,12.5\n");
    let rules = write(
        dir.path(),
        "size.toml",
        "column = \"size\"\n[[count]]\nname = \"whole\"\npattern = '^({int})\\.'\nrange = [0, 100]\n",
    );
    // A Parquet file with a Float64 column (the described column of a CSV
    // is text, so another column carries the floats).
    let typed = dir.path().join("typed.parquet");
    let by_id = write(
        dir.path(),
        "id.toml",
        "column = \"id\"\n[[flag]]\nname = \"one\"\nany = [\"1\"]\n",
    );
    expect_ok(&run(
        &["apply", s(&csv), "-r", s(&by_id), "-o", s(&typed)],
        None,
    ));
    assert!(arrow_schema(&typed).contains("size: double"));
    for extra in [&[][..], &["--in-memory"][..]] {
        let out_path = dir.path().join("out.csv");
        let args = [
            &["apply", s(&typed), "-r", s(&rules), "-o", s(&out_path)][..],
            extra,
        ]
        .concat();
        let out = run(&args, None);
        expect_ok(&out);
        assert!(
            stderr(&out).contains("written unchanged"),
            "{}",
            stderr(&out)
        );
        assert_eq!(
            std::fs::read_to_string(&out_path).unwrap(),
            "id,size,one,whole\n1,1.5,true,1\n2,2.0,false,2\n3,,false,\n4,12.5,false,12\n"
        );
        let pq = dir.path().join("out.parquet");
        let args = [
            &["apply", s(&typed), "-r", s(&rules), "-o", s(&pq)][..],
            extra,
        ]
        .concat();
        expect_ok(&run(&args, None));
        assert!(
            arrow_schema(&pq).contains("size: double"),
            "{}",
            arrow_schema(&pq)
        );
    }
}

// 9. Signals ---------------------------------------------------------------------

fn big_input(dir: &Path) -> PathBuf {
    use std::io::Write;
    let path = dir.join("big.csv");
    let mut w = std::io::BufWriter::new(std::fs::File::create(&path).unwrap());
    writeln!(w, "id,transmission").unwrap();
    for i in 0..3_000_000 {
        writeln!(w, "{i},{} spd auto {}", i % 17, i % 1013).unwrap();
    }
    path
}

fn partials(dir: &Path) -> Vec<String> {
    std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.starts_with(".descry-") && n.ends_with(".partial"))
        .collect()
}

#[test]
fn a_signal_during_apply_removes_the_partial_file_and_keeps_the_old_output() {
    let (dir, rules) = setup();
    let input = big_input(dir.path());
    let output = dir.path().join("out.csv");
    for (signal, number) in [("INT", 2), ("TERM", 15), ("HUP", 1)] {
        std::fs::write(&output, "previous output\n").unwrap();
        let mut child = std::process::Command::new(assert_cmd::cargo::cargo_bin("descry"))
            .args([
                "apply",
                s(&input),
                "-r",
                s(&rules),
                "-o",
                s(&output),
                "--quiet",
            ])
            .spawn()
            .unwrap();
        let started = std::time::Instant::now();
        while partials(dir.path()).is_empty() && started.elapsed().as_secs() < 60 {
            std::thread::sleep(std::time::Duration::from_millis(5));
        }
        assert!(
            !partials(dir.path()).is_empty(),
            "apply never started writing"
        );
        std::process::Command::new("kill")
            .args(["-s", signal, &child.id().to_string()])
            .status()
            .unwrap();
        let status = child.wait().unwrap();
        assert_eq!(status.code(), Some(128 + number), "SIG{signal}");
        assert_eq!(partials(dir.path()), Vec::<String>::new(), "SIG{signal}");
        assert_eq!(
            std::fs::read_to_string(&output).unwrap(),
            "previous output\n"
        );
    }
}

// 10. File modes -------------------------------------------------------------------

fn mode(p: &Path) -> u32 {
    std::fs::metadata(p).unwrap().permissions().mode() & 0o777
}

#[test]
fn a_new_output_follows_the_umask_and_a_replaced_one_keeps_its_mode() {
    let (dir, rules) = setup();
    let table = write(dir.path(), "t.csv", CSV);
    let output = dir.path().join("out.parquet");
    let script = format!(
        "umask 027; {} apply {} -r {} -o {}",
        assert_cmd::cargo::cargo_bin("descry").display(),
        s(&table),
        s(&rules),
        s(&output)
    );
    let status = std::process::Command::new("bash")
        .args(["-c", &script])
        .status()
        .unwrap();
    assert!(status.success());
    assert_eq!(mode(&output), 0o640);
    std::fs::set_permissions(&output, std::fs::Permissions::from_mode(0o604)).unwrap();
    expect_ok(&run(
        &["apply", s(&table), "-r", s(&rules), "-o", s(&output)],
        None,
    ));
    assert_eq!(mode(&output), 0o604);
}

#[test]
fn a_read_only_output_or_ruleset_is_never_replaced() {
    let (dir, rules) = setup();
    let table = write(dir.path(), "t.csv", CSV);
    let read_only =
        |p: &Path| std::fs::set_permissions(p, std::fs::Permissions::from_mode(0o444)).unwrap();
    let output = write(dir.path(), "out.csv", "kept\n");
    read_only(&output);
    expect_error(
        &run(
            &["apply", s(&table), "-r", s(&rules), "-o", s(&output)],
            None,
        ),
        &["out.csv", "is read-only (mode 444)"],
    );
    let draft = write(dir.path(), "draft.toml", "kept\n");
    read_only(&draft);
    expect_error(
        &run(
            &[
                "propose",
                s(&table),
                "-c",
                "transmission",
                "-o",
                s(&draft),
                "--force",
            ],
            None,
        ),
        &["draft.toml", "read-only"],
    );
    read_only(&rules);
    expect_error(
        &run(&["propose", s(&table), "--update", s(&rules)], None),
        &["r.toml", "read-only"],
    );
    expect_error(
        &run(
            &[
                "cluster",
                s(&table),
                "-c",
                "transmission",
                "--write-map",
                s(&rules),
                "--label",
                "k",
            ],
            None,
        ),
        &["r.toml", "read-only"],
    );
    let samples = dir.path().join("samples");
    std::fs::create_dir(&samples).unwrap();
    let listings = write(&samples, "listings.csv", "kept\n");
    read_only(&listings);
    expect_error(
        &run(&["demo", "-o", s(&samples), "--rows", "10"], None),
        &["listings.csv", "read-only"],
    );
    for kept in [&output, &draft, &listings] {
        assert_eq!(std::fs::read_to_string(kept).unwrap(), "kept\n");
    }
    assert_eq!(std::fs::read_to_string(&rules).unwrap(), RULES);
}

// 11. Smaller things ------------------------------------------------------------------

#[test]
fn control_characters_in_column_names_are_shown_escaped() {
    let (dir, rules) = setup();
    let f = write(dir.path(), "esc.csv", "id,trans\x1b[31mmission\n1,6 spd\n");
    let out = run(&["check", s(&f), "-r", s(&rules)], None);
    expect_error(
        &out,
        &[
            "esc.csv",
            "no column named \"transmission\"",
            "trans\\u{1b}[31mmission",
        ],
    );
    assert!(!stderr(&out).contains('\x1b'));
}

#[test]
fn a_csv_header_naming_two_columns_alike_is_refused() {
    let (dir, rules) = setup();
    let f = write(
        dir.path(),
        "twice.csv",
        "id,transmission,note,id\n1,6 spd,a,2\n",
    );
    expect_error(
        &run(&["check", s(&f), "-r", s(&rules)], None),
        &[
            "twice.csv",
            "the header gives the name \"id\" to more than one column (columns 1 and 4)",
        ],
    );
}

#[test]
fn files_in_another_encoding_or_layout_are_named() {
    let (dir, rules) = setup();
    hostile_tables(dir.path());
    let mut utf16 = vec![0xff, 0xfe];
    for unit in "id,transmission\n1,6 spd\n".encode_utf16() {
        utf16.extend_from_slice(&unit.to_le_bytes());
    }
    let utf16_file = dir.path().join("utf16.csv");
    std::fs::write(&utf16_file, utf16).unwrap();
    let cases = [
        (utf16_file, "UTF-16 (little-endian, FF FE byte-order mark)"),
        (
            dir.path().join("stream.arrow"),
            "an Arrow IPC stream, not an Arrow IPC file",
        ),
        (dir.path().join("v1.feather"), "a Feather version 1 file"),
    ];
    for (f, message) in cases {
        let name = f.file_name().unwrap().to_str().unwrap().to_owned();
        expect_error(
            &run(&["check", s(&f), "-r", s(&rules)], None),
            &[&name, message],
        );
    }
}

#[test]
fn a_pipe_given_as_a_path_is_refused_with_a_pointer_to_standard_input() {
    let (dir, rules) = setup();
    let fifo = dir.path().join("fifo.csv");
    let made = std::process::Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .unwrap();
    assert!(made.success());
    expect_error(
        &run(&["check", s(&fifo), "-r", s(&rules)], None),
        &["fifo.csv", "is a pipe or a device", "give -"],
    );
    let out = descry()
        .args(["check", "/dev/stdin", "-r", s(&rules)])
        .write_stdin(CSV)
        .output()
        .unwrap();
    assert_no_panic(&out);
    expect_error(&out, &["/dev/stdin", "give -"]);
}

#[test]
fn a_terminal_on_standard_input_is_refused() {
    let (_dir, rules) = setup();
    // `script` gives the command a pseudo-terminal as standard input.
    let command = format!(
        "{} check - -r {}",
        assert_cmd::cargo::cargo_bin("descry").display(),
        s(&rules)
    );
    let out = std::process::Command::new("script")
        .args(["-qec", &command, "/dev/null"])
        .stdin(std::process::Stdio::null())
        .output()
        .expect("the script command (util-linux) runs");
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("standard input is a terminal"), "{text}");
    assert_eq!(out.status.code(), Some(2), "{text}");
}

#[test]
fn a_folder_as_output_is_refused_before_the_run() {
    let (dir, rules) = setup();
    let table = write(dir.path(), "t.csv", CSV);
    let folder = dir.path().join("out.parquet");
    std::fs::create_dir(&folder).unwrap();
    let slash = format!("{}/", s(&dir.path().join("new.parquet")));
    for target in [s(&folder), slash.as_str()] {
        expect_error(
            &run(&["apply", s(&table), "-r", s(&rules), "-o", target], None),
            &["is a folder; name the file to write"],
        );
    }
    assert!(!dir.path().join("new.parquet").exists());
}

#[test]
fn zero_rows_per_batch_and_an_endless_ruleset_are_refused() {
    let (dir, rules) = setup();
    let table = write(dir.path(), "t.csv", CSV);
    let out_path = dir.path().join("o.csv");
    let out = run(
        &[
            "apply",
            s(&table),
            "-r",
            s(&rules),
            "-o",
            s(&out_path),
            "--batch-rows",
            "0",
        ],
        None,
    );
    expect_error(&out, &["--batch-rows", "at least 1 row"]);
    let out = run(&["check", s(&table), "-r", "/dev/zero"], None);
    expect_error(&out, &["/dev/zero", "longer than 16 MiB"]);
}

// 12. One schema whichever way apply reads ------------------------------------------

#[test]
fn streamed_and_in_memory_outputs_have_the_same_arrow_schema() {
    let (dir, rules) = setup();
    let table = write(dir.path(), "t.csv", CSV);
    let streamed = dir.path().join("streamed.parquet");
    let whole = dir.path().join("whole.parquet");
    expect_ok(&run(
        &["apply", s(&table), "-r", s(&rules), "-o", s(&streamed)],
        None,
    ));
    expect_ok(&run(
        &[
            "apply",
            s(&table),
            "-r",
            s(&rules),
            "-o",
            s(&whole),
            "--in-memory",
        ],
        None,
    ));
    let schema = arrow_schema(&streamed);
    assert_eq!(
        schema,
        "id: int64\ntransmission: large_string\ngears: uint8\nauto: bool"
    );
    assert_eq!(arrow_schema(&whole), schema);
}

// 13. .json files --------------------------------------------------------------------

#[test]
fn a_json_file_holds_an_array_of_records_or_one_record_a_line() {
    let (dir, rules) = setup();
    let array = write(
        dir.path(),
        "array.json",
        "[\n {\"id\": 1, \"transmission\": \"6 spd\"},\n {\"id\": 2, \"transmission\": \"x\"}\n]\n",
    );
    let lines = write(
        dir.path(),
        "lines.json",
        "{\"id\": 1, \"transmission\": \"6 spd\"}\n{\"id\": 2, \"transmission\": \"x\"}\n",
    );
    for f in [array, lines] {
        assert_eq!(rows_covered(&f, &rules), 1, "{}", f.display());
    }
}
