//! Vocabulary tables and the lookup table: what an engine that holds the
//! rows needs. A vocabulary table (one row per distinct value and its row
//! count, as `GROUP BY` gives it) read with `--counts` gives the reports of
//! the raw rows; the lookup table joined to the rows on `value` gives what
//! `apply` writes, value for value and type for type.

mod common;

use std::collections::HashMap;
use std::path::{Path, PathBuf};

use common::*;
use polars::prelude::*;
use tempfile::TempDir;

/// The demo listings, every column read as text by polars' CSV reader
/// (descry's reader is not involved).
fn demo_rows() -> DataFrame {
    CsvReadOptions::default()
        .with_has_header(true)
        .with_infer_schema_length(Some(0))
        .try_into_reader_with_file_path(Some(sample_csv()))
        .unwrap()
        .finish()
        .unwrap()
}

/// The demo listings' column `column` as a vocabulary table in Parquet:
/// each distinct value with its rows, nulls as one row (value null) with
/// theirs, in an order unlike the raw rows' (most rows first). Counted
/// here with a hash map, independently of descry's reader.
fn vocabulary_table(dir: &Path, column: &str) -> PathBuf {
    let rows = demo_rows();
    let mut counts: HashMap<Option<String>, u64> = HashMap::new();
    for v in rows.column(column).unwrap().str().unwrap().iter() {
        *counts.entry(v.map(str::to_owned)).or_default() += 1;
    }
    let mut counted: Vec<(Option<String>, u64)> = counts.into_iter().collect();
    counted.sort_by(|a, b| b.1.cmp(&a.1).then_with(|| a.0.cmp(&b.0)));
    assert!(
        counted.iter().any(|(v, _)| v.is_none()),
        "the demo column has nulls"
    );
    let values: Vec<Option<&str>> = counted.iter().map(|(v, _)| v.as_deref()).collect();
    let n: Vec<u64> = counted.iter().map(|(_, n)| *n).collect();
    let mut frame = DataFrame::new(
        counted.len(),
        vec![
            Column::new(column.into(), values),
            Column::new("rows".into(), n),
        ],
    )
    .unwrap();
    let path = dir.join(format!("{column}.vocabulary.parquet"));
    ParquetWriter::new(std::fs::File::create(&path).unwrap())
        .finish(&mut frame)
        .unwrap();
    path
}

fn json_of(args: &[&str], cwd: &Path) -> serde_json::Value {
    let out = run(args, Some(cwd));
    assert!(out.status.success(), "{args:?}: {}", stderr(&out));
    serde_json::from_str(&stdout(&out)).unwrap()
}

#[test]
fn a_vocabulary_table_gives_the_reports_of_the_raw_rows() {
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    let vocab = vocabulary_table(d, "engine");
    let raw = sample_csv();
    let engine = ruleset("engine.toml");
    let reports: [&[&str]; 3] = [
        &["check", "-r", s(&engine), "--format", "json"],
        &["survey", "-c", "engine", "--format", "json"],
        &[
            "cluster",
            "-c",
            "engine",
            "-m",
            "levenshtein",
            "--format",
            "json",
        ],
    ];
    for args in reports {
        let on_rows = json_of(&[&args[..1], &[s(&raw)], &args[1..]].concat(), d);
        let on_vocab = json_of(
            &[&args[..1], &[s(&vocab), "--counts", "rows"], &args[1..]].concat(),
            d,
        );
        assert_eq!(on_rows, on_vocab, "{}", args[0]);
    }
    // propose: the same draft, byte for byte, and the same report.
    let draft_rows = d.join("rows.toml");
    let draft_vocab = d.join("vocab.toml");
    let mut on_rows = json_of(
        &[
            "propose",
            s(&raw),
            "-c",
            "engine",
            "-o",
            s(&draft_rows),
            "--format",
            "json",
        ],
        d,
    );
    let mut on_vocab = json_of(
        &[
            "propose",
            s(&vocab),
            "--counts",
            "rows",
            "-c",
            "engine",
            "-o",
            s(&draft_vocab),
            "--format",
            "json",
        ],
        d,
    );
    for report in [&mut on_rows, &mut on_vocab] {
        report["output"] = serde_json::Value::Null;
        report["check"]["ruleset"] = serde_json::Value::Null;
    }
    assert_eq!(on_rows, on_vocab, "propose");
    assert_eq!(
        std::fs::read_to_string(&draft_rows).unwrap(),
        std::fs::read_to_string(&draft_vocab).unwrap()
    );
}

#[test]
fn counts_that_are_not_numbers_of_rows_are_refused_with_the_row() {
    let dir = TempDir::new().unwrap();
    let rules = ruleset("engine.toml");
    for (table, shown) in [
        ("engine,rows\nV6 diesel,3\n4 cyl,-2\n", "\"-2\""),
        ("engine,rows\nV6 diesel,3\n4 cyl,2.5\n", "\"2.5\""),
        ("engine,rows\nV6 diesel,3\n4 cyl,\n", "null"),
    ] {
        let path = write(dir.path(), "vocab.csv", table);
        let out = run(
            &["check", s(&path), "--counts", "rows", "-r", s(&rules)],
            None,
        );
        assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
        let message = stderr(&out);
        assert!(
            message.contains("vocab.csv") && message.contains("row 2") && message.contains(shown),
            "{message}"
        );
    }
    // A count that is a Boolean is no number of rows.
    let path = write(
        dir.path(),
        "vocab.ndjson",
        "{\"engine\":\"V8\",\"rows\":true}\n",
    );
    let out = run(
        &["check", s(&path), "--counts", "rows", "-r", s(&rules)],
        None,
    );
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    assert!(
        stderr(&out).contains("holds bool values"),
        "{}",
        stderr(&out)
    );
    // Counts that add up past 64 bits are refused, not wrapped around.
    let path = write(
        dir.path(),
        "vocab.csv",
        "engine,rows\nV6 diesel,9223372036854775807\n4 cyl,9223372036854775807\nV8,9223372036854775807\n",
    );
    let out = run(
        &["check", s(&path), "--counts", "rows", "-r", s(&rules)],
        None,
    );
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    assert!(
        stderr(&out).contains("adds up to more than"),
        "{}",
        stderr(&out)
    );
    let path = write(dir.path(), "vocab.csv", "engine,rows\nV6 diesel,3\n");
    let out = run(&["check", s(&path), "--counts", "n", "-r", s(&rules)], None);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("\"n\""), "{}", stderr(&out));
    let out = run(
        &[
            "apply",
            s(&path),
            "--counts",
            "rows",
            "-r",
            s(&rules),
            "-o",
            "x.parquet",
        ],
        Some(dir.path()),
    );
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("descry lookup"), "{}", stderr(&out));
}

fn as_text(column: &Column) -> StringChunked {
    column
        .cast(&DataType::String)
        .unwrap()
        .str()
        .unwrap()
        .clone()
}

fn read_parquet(path: &Path) -> DataFrame {
    ParquetReader::new(std::fs::File::open(path).unwrap())
        .finish()
        .unwrap()
}

/// Join each column's lookup table to the raw rows on `value` and compare
/// every feature cell, and every feature type, with what `apply` wrote.
fn assert_lookup_joins_to_apply(lookups: &[(&str, PathBuf)], applied: &Path) {
    let rows = demo_rows();
    let applied = read_parquet(applied);
    for (column, path) in lookups {
        let lookup = read_parquet(path);
        let names: Vec<&str> = lookup
            .get_column_names()
            .iter()
            .map(|n| n.as_str())
            .collect();
        assert_eq!(names[..2], ["value", "rows"]);
        let index: HashMap<&str, usize> = lookup
            .column("value")
            .unwrap()
            .str()
            .unwrap()
            .iter()
            .enumerate()
            .map(|(i, v)| (v.expect("no null value in a lookup table"), i))
            .collect();
        let raw = rows.column(column).unwrap().str().unwrap();
        for feature in &lookup.columns()[2..] {
            let written = applied.column(feature.name()).unwrap();
            assert_eq!(feature.dtype(), written.dtype(), "{}", feature.name());
            // Compared as text: an Enum cell compares by its category.
            let (feature_text, written_text) = (as_text(feature), as_text(written));
            for (row, value) in raw.iter().enumerate() {
                let joined = value.and_then(|v| feature_text.get(index[v]));
                assert_eq!(
                    joined,
                    written_text.get(row),
                    "{} at row {row} ({value:?})",
                    feature.name()
                );
            }
        }
    }
}

#[test]
fn the_lookup_table_joined_to_the_rows_is_what_apply_writes() {
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    let (engine, transmission) = (ruleset("engine.toml"), ruleset("transmission.toml"));
    let applied = d.join("applied.parquet");
    let out = run(
        &[
            "apply",
            s(&sample_csv()),
            "-r",
            s(&engine),
            "-r",
            s(&transmission),
            "-o",
            s(&applied),
        ],
        None,
    );
    assert!(out.status.success(), "{}", stderr(&out));

    // Several columns: one table per column in the folder -o.
    let folder = d.join("lookups");
    let out = run(
        &[
            "lookup",
            s(&sample_csv()),
            "-r",
            s(&engine),
            "-r",
            s(&transmission),
            "-o",
            s(&folder),
        ],
        None,
    );
    assert!(out.status.success(), "{}", stderr(&out));
    assert_lookup_joins_to_apply(
        &[
            ("engine", folder.join("engine.parquet")),
            ("transmission", folder.join("transmission.parquet")),
        ],
        &applied,
    );

    // From a vocabulary table: the same lookup.
    let vocab = vocabulary_table(d, "engine");
    let from_vocab = d.join("engine.lookup.parquet");
    let out = run(
        &[
            "lookup",
            s(&vocab),
            "--counts",
            "rows",
            "-r",
            s(&engine),
            "-o",
            s(&from_vocab),
        ],
        None,
    );
    assert!(out.status.success(), "{}", stderr(&out));
    assert_lookup_joins_to_apply(&[("engine", from_vocab.clone())], &applied);
    // Every distinct non-null value once, with its rows.
    let lookup = read_parquet(&from_vocab);
    let rows: u64 = lookup.column("rows").unwrap().u64().unwrap().sum().unwrap();
    let raw = read_parquet(&vocab);
    let non_null: u64 = raw
        .column("rows")
        .unwrap()
        .u64()
        .unwrap()
        .iter()
        .zip(raw.column("engine").unwrap().str().unwrap().iter())
        .filter_map(|(n, v)| v.and(n))
        .sum();
    assert_eq!(rows, non_null);
    assert_eq!(lookup.height(), raw.height() - 1);
}

#[test]
fn several_columns_into_one_file_is_refused_before_reading() {
    let dir = TempDir::new().unwrap();
    let out = run(
        &[
            "lookup",
            "missing.csv",
            "-r",
            s(&ruleset("engine.toml")),
            "-r",
            s(&ruleset("transmission.toml")),
            "-o",
            "one.parquet",
        ],
        Some(dir.path()),
    );
    assert_eq!(out.status.code(), Some(2));
    let message = stderr(&out);
    assert!(
        message.contains("one.parquet")
            && message.contains("give a folder")
            && message.contains("\"engine\""),
        "{message}"
    );
}

/// The recipe of docs/engines.md, run in DuckDB (the `duckdb` package of
/// the reference environment): the engine writes the vocabulary, descry
/// the lookup, and a join in SQL gives the features; they must equal
/// `apply`'s row by row.
#[test]
fn duckdb_recipe_gives_what_apply_writes() {
    let dir = TempDir::new().unwrap();
    let descry = assert_cmd::cargo::cargo_bin("descry");
    let out = run_python(
        "duckdb_lookup.py",
        &[
            s(&descry),
            s(dir.path()),
            s(&sample_csv()),
            s(&root().join("rulesets")),
        ],
    );
    assert!(out.contains("rows agree"), "{out}");
}

#[test]
fn a_lookup_file_records_its_rulesets_path_and_hash() {
    let dir = TempDir::new().unwrap();
    let out_file = dir.path().join("engine_lookup.parquet");
    let engine = ruleset("engine.toml");
    let out = run(
        &[
            "lookup",
            s(&sample_csv()),
            "-r",
            s(&engine),
            "-o",
            s(&out_file),
        ],
        None,
    );
    assert!(out.status.success(), "{}", stderr(&out));
    let mut reader = ParquetReader::new(std::fs::File::open(&out_file).unwrap());
    let facts = reader
        .get_metadata()
        .unwrap()
        .key_value_metadata()
        .clone()
        .unwrap()
        .into_iter()
        .find(|k| k.key == "descry.lookup")
        .and_then(|k| k.value)
        .expect("the descry.lookup metadata");
    let facts: serde_json::Value = serde_json::from_str(&facts).unwrap();
    assert_eq!(facts["schema"], "descry.lookup/1");
    assert_eq!(facts["column"], "engine");
    assert_eq!(facts["rulesets"][0]["path"], s(&engine));
    // Reference: the SHA-256 of the file's bytes, by the sha2 crate's
    // FIPS 180-4 implementation, checked here against a known digest first.
    assert_eq!(
        descry::write::sha256_hex(b"abc"),
        "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad" // FIPS 180-4, example B.1
    );
    let bytes = std::fs::read(&engine).unwrap();
    assert_eq!(
        facts["rulesets"][0]["sha256"],
        descry::write::sha256_hex(&bytes)
    );
    // The table itself is still one row per value, read by any reader.
    assert_eq!(
        reader.finish().unwrap().get_column_names()[0].as_str(),
        "value"
    );
}
