//! The CSV line counter of the vendored polars-io (vendor/README.md) scans
//! 64 bytes at a time on stable Rust. Its answers must be the ones of the
//! byte-by-byte loop it replaced, which is written out here as the
//! reference: a line break counts when an even number of quote characters
//! precede it (RFC 4180: a quoted field may hold line breaks, and a doubled
//! quote inside it is two quote characters, so the parity is unchanged).
//!
//! `analyze_chunk` answers twice, for a chunk that starts outside quotes
//! and for one that starts inside; polars' streaming CSV reader uses the
//! first to cut the file into batches at line breaks.

use polars::io::csv::read::_csv_read_internal::CountLines;
use proptest::prelude::*;

/// (line breaks, offset of the last one, ends inside quotes), for a start
/// outside quotes and for a start inside.
type Stats = [(usize, usize, bool); 2];

fn reference(bytes: &[u8], quote: Option<u8>, eol: u8) -> Stats {
    let mut inside = false;
    let mut stats = [(0, 0, false); 2];
    for (i, &c) in bytes.iter().enumerate() {
        if Some(c) == quote {
            inside = !inside;
        }
        if c == eol {
            // Starting outside quotes this break is outside them when the
            // parity is even; starting inside, when it is odd.
            let s = &mut stats[inside as usize];
            s.0 += 1;
            s.1 = i;
        }
    }
    stats[0].2 = inside;
    stats[1].2 = !inside;
    stats
}

fn analyzed(counter: &CountLines, bytes: &[u8]) -> Stats {
    let s = counter.analyze_chunk(bytes);
    [
        (
            s[0].newline_count,
            s[0].last_newline_offset,
            s[0].end_inside_string,
        ),
        (
            s[1].newline_count,
            s[1].last_newline_offset,
            s[1].end_inside_string,
        ),
    ]
}

/// Bytes where quotes and line breaks are common, so that 64-byte blocks
/// hold many of each and quoted runs cross block edges.
fn csv_like_bytes() -> impl Strategy<Value = Vec<u8>> {
    let byte = prop_oneof![
        4 => Just(b'a'),
        2 => Just(b','),
        2 => Just(b'"'),
        2 => Just(b'\n'),
        1 => Just(b'\r'),
        1 => any::<u8>(),
    ];
    proptest::collection::vec(byte, 0..700)
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(2000))]

    #[test]
    fn analyze_chunk_matches_the_byte_by_byte_reference(
        bytes in csv_like_bytes(),
        start in 0usize..64,
        quoting in any::<bool>(),
    ) {
        // Every alignment of the 64-byte blocks against the data.
        let bytes = &bytes[start.min(bytes.len())..];
        let quote = quoting.then_some(b'"');
        let counter = CountLines::new(quote, b'\n', None);
        prop_assert_eq!(analyzed(&counter, bytes), reference(bytes, quote, b'\n'));
    }

    #[test]
    fn count_and_count_rows_match_the_reference(bytes in csv_like_bytes()) {
        let counter = CountLines::new(Some(b'"'), b'\n', None);
        let [(lines, last, _), _] = reference(&bytes, Some(b'"'), b'\n');
        prop_assert_eq!(counter.count(&bytes), (lines, last));
        // Not at the end of the file: the complete rows, and the offset
        // just past the last line break (0 when there is none).
        let consumed = if lines > 0 { last + 1 } else { 0 };
        prop_assert_eq!(counter.count_rows(&bytes, false), (lines, consumed));
    }

    #[test]
    fn another_line_break_character_is_counted_the_same_way(bytes in csv_like_bytes()) {
        let counter = CountLines::new(Some(b'"'), b'\r', None);
        prop_assert_eq!(analyzed(&counter, &bytes), reference(&bytes, Some(b'"'), b'\r'));
    }
}

/// Worked example: two rows, the second with a quoted line break and a
/// doubled quote; then an unfinished row.
#[test]
fn a_quoted_line_break_does_not_end_a_row() {
    let bytes = b"id,note\n1,\"two\nlines, \"\"quoted\"\"\"\n2,tail";
    let counter = CountLines::new(Some(b'"'), b'\n', None);
    // The line breaks outside quotes are at offsets 7 and 33.
    assert_eq!(bytes[7], b'\n');
    assert_eq!(bytes[33], b'\n');
    assert_eq!(counter.count(bytes), (2, 33));
    assert_eq!(counter.count_rows(bytes, false), (2, 34));
    assert_eq!(counter.count_rows(bytes, true), (3, bytes.len()));
}
