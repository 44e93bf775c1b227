//! descry's streaming scan of a CSV whose quoted fields hold line breaks,
//! quotes and commas, against the `csv` crate (crates.io), a general-purpose
//! reader of RFC 4180 ("fields containing line breaks (CRLF), double quotes,
//! and commas should be enclosed in double-quotes"; a doubled quote inside a
//! quoted field is one quote). The streaming reader cuts the file into
//! batches at line breaks; a break inside quotes must not end a row.

use std::io::Write;

use descry::read::{ReadOptions, StreamedTable};
use polars::prelude::*;
use rand::{Rng, SeedableRng};

/// A field of the kinds that make line counting hard: quotes, doubled
/// quotes, commas and line breaks inside quotes, or plain text.
fn field(rng: &mut impl Rng, row: usize) -> String {
    match rng.gen_range(0..6) {
        0 => format!("plain {row}"),
        1 => format!("with, comma {row}"),
        2 => format!("two\nlines {row}"),
        3 => format!("a \"quoted\" word {row}"),
        4 => format!("{}\n\"\n{row}", "x".repeat(rng.gen_range(0..150))),
        _ => String::new(),
    }
}

fn quote(field: &str) -> String {
    if field.contains([',', '"', '\n']) {
        format!("\"{}\"", field.replace('"', "\"\""))
    } else {
        field.to_owned()
    }
}

#[test]
fn streamed_csv_with_quoted_line_breaks_reads_as_the_csv_crate_reads_it() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("quoted.csv");
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(11);
    // Enough rows for the streaming reader to cut the file into many
    // batches, so that batch boundaries fall everywhere.
    let rows = 60_000;
    let mut out = std::io::BufWriter::new(std::fs::File::create(&path).unwrap());
    writeln!(out, "id,note,spec").unwrap();
    for row in 0..rows {
        let (note, spec) = (field(&mut rng, row), field(&mut rng, row));
        writeln!(out, "{row},{},{}", quote(&note), quote(&spec)).unwrap();
    }
    out.into_inner().unwrap().sync_all().unwrap();

    let mut reference = csv::Reader::from_path(&path).unwrap();
    let want: Vec<(String, String)> = reference
        .records()
        .map(|r| {
            let r = r.unwrap();
            (r[1].to_owned(), r[2].to_owned())
        })
        .collect();
    assert_eq!(want.len(), rows);

    let table =
        StreamedTable::open(&path, &["note", "spec"], None, &ReadOptions::default()).unwrap();
    let frame = table
        .lazy
        .collect_with_engine(Engine::Streaming)
        .unwrap()
        .unwrap_single();
    assert_eq!(frame.height(), rows);
    let text = |name: &str| -> Vec<String> {
        let column = frame.column(name).unwrap().str().unwrap().clone();
        // polars reads an empty unquoted field as null; the csv crate as "".
        column.iter().map(|v| v.unwrap_or("").to_owned()).collect()
    };
    let got: Vec<(String, String)> = text("note").into_iter().zip(text("spec")).collect();
    for (i, (g, w)) in got.iter().zip(&want).enumerate() {
        assert_eq!(g, w, "row {i}");
    }
}

/// The column names come from the header record alone, which may itself
/// hold quoted line breaks and commas (RFC 4180, read here by the `csv`
/// crate as the reference). Doubled quotes are left out: polars keeps them
/// doubled in a header name, and the names must be the ones polars' scan
/// uses.
#[test]
fn header_names_with_quoted_line_breaks_match_the_csv_crate() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("header.csv");
    let header = "id,\"gear\nbox\",\"a, b\",plain\r\n";
    let body = "1,x,y,z\r\n2,\"p\nq\",r,s\r\n";
    std::fs::write(&path, format!("{header}{body}")).unwrap();
    let want: Vec<String> = csv::Reader::from_path(&path)
        .unwrap()
        .headers()
        .unwrap()
        .iter()
        .map(str::to_owned)
        .collect();
    let got = descry::read::table_columns(&path, &ReadOptions::default()).unwrap();
    assert_eq!(got, want);
    assert_eq!(got.len(), 4);
}

/// Only the header is parsed to learn the names: rows after it, even ones
/// that are not valid UTF-8 or have the wrong number of fields, are not
/// read (they are reported when the table itself is read).
#[test]
fn header_names_do_not_read_the_rows() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("rows.csv");
    let mut bytes = b"id,spec\n1,\xff\xfe bad\n2,too,many,fields\n".to_vec();
    for i in 3..50_000 {
        bytes.extend_from_slice(format!("{i},ok\n").as_bytes());
    }
    std::fs::write(&path, &bytes).unwrap();
    let got = descry::read::table_columns(&path, &ReadOptions::default()).unwrap();
    assert_eq!(got, ["id", "spec"]);
}
