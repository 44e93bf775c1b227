//! Looking at a file's first bytes (and, for JSON, its brackets) before a
//! reader gets it, to say in words what it is when it is not what its
//! extension promises: readers would fail with their own words, or not at
//! all.

use std::io::Read;
use std::path::Path;

use super::read::TableFormat;

/// The first bytes of a file (fewer when it is shorter).
pub fn head(path: &Path) -> std::io::Result<Vec<u8>> {
    let mut head = Vec::with_capacity(16);
    std::fs::File::open(path)?.take(16).read_to_end(&mut head)?;
    Ok(head)
}

/// A message when the first bytes show a file descry cannot read as
/// `format`.
pub fn check_head(head: &[u8], format: TableFormat) -> Result<(), String> {
    if let Some(order) = utf16_order(head) {
        return Err(format!(
            "the file is UTF-16 ({order} byte-order mark); descry reads UTF-8: re-encode it, \
             e.g. iconv -f UTF-16 -t UTF-8 IN > OUT"
        ));
    }
    if format == TableFormat::Ipc && !head.starts_with(b"ARROW1") {
        return Err(if head.starts_with(b"FEA1") {
            "a Feather version 1 file; descry reads Arrow IPC files (Feather version 2): \
             convert it, e.g. with pyarrow.feather.write_feather(pyarrow.feather.read_table(IN), OUT)"
                .to_owned()
        } else if head.starts_with(&[0xff, 0xff, 0xff, 0xff]) {
            "an Arrow IPC stream, not an Arrow IPC file; descry reads the file format \
             (.arrow/.feather): convert it, e.g. with pyarrow.ipc.new_file"
                .to_owned()
        } else {
            "not an Arrow IPC file: it does not start with ARROW1".to_owned()
        });
    }
    Ok(())
}

fn utf16_order(head: &[u8]) -> Option<&'static str> {
    if head.starts_with(&[0xff, 0xfe]) {
        Some("little-endian, FF FE")
    } else if head.starts_with(&[0xfe, 0xff]) {
        Some("big-endian, FE FF")
    } else {
        None
    }
}

/// How deep JSON values may nest: a record of plain values needs 1 (2 in
/// an array); the JSON reader recurses once per level, and a file nested
/// thousands deep would overflow its stack.
pub const MAX_JSON_DEPTH: usize = 64;

/// The 1-based line where JSON text first nests deeper than `max`
/// brackets, counting outside strings; one pass, no recursion.
pub fn too_deep(bytes: &[u8], max: usize) -> Option<usize> {
    let (mut depth, mut line) = (0usize, 1usize);
    let (mut in_string, mut escaped) = (false, false);
    for &b in bytes {
        if b == b'\n' {
            line += 1;
        }
        if in_string {
            match b {
                _ if escaped => escaped = false,
                b'\\' => escaped = true,
                b'"' => in_string = false,
                _ => {}
            }
            continue;
        }
        match b {
            b'"' => in_string = true,
            b'[' | b'{' => {
                depth += 1;
                if depth > max {
                    return Some(line);
                }
            }
            b']' | b'}' => depth = depth.saturating_sub(1),
            _ => {}
        }
    }
    None
}

/// Whether JSON text is one array (its first character, past white space
/// and a byte-order mark, is `[`) rather than records one per line.
pub fn is_json_array(bytes: &[u8]) -> bool {
    let bytes = bytes.strip_prefix(b"\xef\xbb\xbf").unwrap_or(bytes);
    bytes.iter().find(|b| !b.is_ascii_whitespace()) == Some(&b'[')
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn depth_counts_brackets_outside_strings_and_names_the_line() {
        assert_eq!(too_deep(b"{\"a\": [1, 2]}\n", 2), None);
        assert_eq!(too_deep(b"{\"a\": 1}\n{\"b\": [[1]]}\n", 2), Some(2));
        assert_eq!(too_deep(b"{\"a\": \"[[[[\\\"[[\"}\n", 1), None);
    }

    #[test]
    fn a_json_array_is_told_from_json_lines() {
        assert!(is_json_array(b"  \n[{\"a\": 1}]"));
        assert!(!is_json_array(b"{\"a\": 1}\n{\"a\": 2}\n"));
    }

    #[test]
    fn utf16_and_ipc_streams_are_named() {
        let csv = TableFormat::Csv { delimiter: b',' };
        assert!(check_head(b"\xff\xfei\x00d\x00", csv)
            .unwrap_err()
            .contains("UTF-16"));
        assert!(check_head(b"\xff\xff\xff\xff\x10", TableFormat::Ipc)
            .unwrap_err()
            .contains("IPC stream"));
        assert!(check_head(b"FEA1....", TableFormat::Ipc)
            .unwrap_err()
            .contains("Feather version 1"));
        assert!(check_head(b"ARROW1\0\0", TableFormat::Ipc).is_ok());
    }
}
