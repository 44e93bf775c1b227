//! Every input the fuzzer found a bug with (`tests/fuzz/found/TARGET/`),
//! and the hostile seeds kept beside them (`tests/fuzz/seeds/TARGET/`),
//! replayed through the fuzzer's own checks (`tests/fuzz/checks.rs`).
//!
//! A ruleset input carries the value that broke it as an `[[example]]`
//! (with `expect = {}`); a table input is read for its first column; a
//! number input is the whole file. See tests/fuzz/README.md.

#[path = "fuzz/checks.rs"]
mod checks;

use std::path::{Path, PathBuf};

use checks::TableKind;

/// The files kept for a target, found and seeds, sorted by path.
fn kept(target: &str) -> Vec<PathBuf> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fuzz");
    let mut files = Vec::new();
    for folder in ["found", "seeds"] {
        let Ok(entries) = std::fs::read_dir(root.join(folder).join(target)) else {
            continue;
        };
        files.extend(entries.map(|e| e.expect("a folder entry").path()));
    }
    files.sort();
    files
}

/// Check every kept file of a target; fail with every file that fails.
fn replay(target: &str, check: impl Fn(&[u8]) -> Result<String, String>) {
    let files = kept(target);
    assert!(!files.is_empty(), "no inputs kept for {target}");
    let failures: Vec<String> = files
        .iter()
        .filter_map(|path| {
            let input = std::fs::read(path).expect("a kept input");
            checks::guarded(|| check(&input))
                .err()
                .map(|failure| format!("{}: {failure}", path.display()))
        })
        .collect();
    assert!(failures.is_empty(), "{}", failures.join("\n\n"));
}

#[test]
fn rulesets_found_by_fuzzing_load_or_fail_cleanly() {
    replay("rulesets", |input| {
        checks::check_ruleset(&String::from_utf8_lossy(input), &[])
    });
}

#[test]
fn csv_tables_found_by_fuzzing_read_as_the_csv_crate_reads_them() {
    let dir = tempfile::tempdir().unwrap();
    replay("csv", |input| {
        checks::check_table(input, TableKind::Csv, dir.path())
    });
}

#[test]
fn ndjson_tables_found_by_fuzzing_read_or_fail_cleanly() {
    let dir = tempfile::tempdir().unwrap();
    replay("ndjson", |input| {
        checks::check_table(input, TableKind::NdJson, dir.path())
    });
}

#[test]
fn numbers_found_by_fuzzing_parse_as_their_macros_match() {
    replay("numbers", |input| {
        checks::check_number(&String::from_utf8_lossy(input))
    });
}
