//! The README's walkthrough, run: its outputs are real and stay real.
//!
//! Every ```console block of README.md is run, in order, in one temporary
//! folder that holds a copy of `rulesets/`, with the `descry` this test run
//! built first on PATH (under `cargo test --release`, target/release/descry).
//! In a block, a line starting with `$ ` is a command, run by `sh -c`; the
//! lines after it, up to the next command or the end of the block, are what
//! it must print: standard output, then standard error. A line `[…]` stands
//! for any number of lines, and `…` inside a line for any text on that line.
//! Trailing white space is ignored.
//!
//! Every command must exit 0 and must not panic. With
//! `DESCRY_README_UPDATE=1` the expected outputs are rewritten from what the
//! commands print instead, keeping the wildcards where they still fit:
//!
//! ```sh
//! DESCRY_README_UPDATE=1 cargo test --release --test readme
//! ```

use std::ffi::OsString;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

/// A line of expected output standing for any number of lines.
const ANY_LINES: &str = "[…]";
/// Inside a line of expected output: any text.
const ANY_TEXT: char = '…';
const UPDATE_VAR: &str = "DESCRY_README_UPDATE";
const REGENERATE: &str =
    "run `DESCRY_README_UPDATE=1 cargo test --release --test readme` to regenerate";

#[test]
fn the_readme_walkthrough_prints_what_it_shows() {
    let path = repository().join("README.md");
    let text = std::fs::read_to_string(&path).expect("README.md");
    let lines: Vec<&str> = text.split('\n').collect();
    let examples = examples(&lines);
    assert!(!examples.is_empty(), "README.md has no ```console block");
    let updating = std::env::var(UPDATE_VAR).is_ok_and(|v| v == "1");

    let dir = tempfile::tempdir().expect("a temporary folder");
    copy_folder(&repository().join("rulesets"), &dir.path().join("rulesets"));
    let mut failures = Vec::new();
    let mut replacements = Vec::new();
    for example in &examples {
        let ran = run(&example.command, dir.path());
        assert!(
            ran.success,
            "README.md:{}: `{}` exited with {}; it printed:\n{}",
            example.line,
            example.command,
            ran.status,
            ran.lines.join("\n")
        );
        let expected = trimmed(&example.expected);
        if updating {
            replacements.push(Replacement {
                first: example.first_output_line(),
                len: example.expected.len(),
                lines: regenerated(expected, &ran.lines),
            });
        } else if !lines_match(expected, &ran.lines) {
            failures.push(difference(example, expected, &ran.lines));
        }
    }
    if updating {
        write_back(&path, &lines, &replacements);
        return;
    }
    assert!(
        failures.is_empty(),
        "{}\n\n{REGENERATE}",
        failures.join("\n\n")
    );
}

fn repository() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

// ---------------------------------------------------------------------------
// Reading the README
// ---------------------------------------------------------------------------

/// One `$ ` line of a console block and the output written under it.
struct Example {
    command: String,
    /// The command's line in README.md, counted from 1.
    line: usize,
    /// The lines under the command, as written.
    expected: Vec<String>,
}

impl Example {
    /// The index (from 0) in README.md's lines of the first output line.
    fn first_output_line(&self) -> usize {
        self.line
    }
}

/// The commands of every ```console block of `lines`, in order.
fn examples(lines: &[&str]) -> Vec<Example> {
    let mut found: Vec<Example> = Vec::new();
    let mut in_console = false;
    for (i, line) in lines.iter().enumerate() {
        if !in_console {
            in_console = line.trim_end() == "```console";
            continue;
        }
        if line.starts_with("```") {
            in_console = false;
        } else if let Some(command) = line.strip_prefix("$ ") {
            found.push(Example {
                command: command.to_owned(),
                line: i + 1,
                expected: Vec::new(),
            });
        } else {
            // Output belongs to the command right above it in the same block.
            let example = found
                .last_mut()
                .filter(|e| e.first_output_line() + e.expected.len() == i)
                .unwrap_or_else(|| panic!("README.md:{}: output before any `$ ` command", i + 1));
            example.expected.push(line.to_string());
        }
    }
    found
}

/// `lines` without the blank lines at their end.
fn trimmed(lines: &[String]) -> &[String] {
    let end = lines
        .iter()
        .rposition(|l| !l.trim().is_empty())
        .map_or(0, |i| i + 1);
    &lines[..end]
}

// ---------------------------------------------------------------------------
// Running a command
// ---------------------------------------------------------------------------

/// What a command did: its exit status, and its standard output then its
/// standard error as lines, trailing white space and blank last lines cut.
struct Ran {
    success: bool,
    status: String,
    lines: Vec<String>,
}

fn run(command: &str, dir: &Path) -> Ran {
    let output = Command::new("sh")
        .arg("-c")
        .arg(command)
        .current_dir(dir)
        .env("PATH", search_path())
        .env("NO_COLOR", "1")
        .env("RUST_BACKTRACE", "1")
        .env_remove("DESCRY_DEBUG")
        .env_remove("RUST_LOG")
        .stdin(Stdio::null())
        .output()
        .unwrap_or_else(|e| panic!("cannot run sh -c {command:?}: {e}"));
    let stdout = String::from_utf8_lossy(&output.stdout);
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(
        !stdout.contains("panicked at") && !stderr.contains("panicked at"),
        "`{command}` panicked:\n{stdout}{stderr}"
    );
    let mut lines: Vec<String> = stdout
        .lines()
        .chain(stderr.lines())
        .map(|l| l.trim_end().to_owned())
        .collect();
    while lines.last().is_some_and(|l| l.is_empty()) {
        lines.pop();
    }
    Ran {
        success: output.status.success(),
        status: output.status.to_string(),
        lines,
    }
}

/// PATH with the folder of the descry under test first.
fn search_path() -> OsString {
    let binary = Path::new(env!("CARGO_BIN_EXE_descry"));
    let folder = binary.parent().expect("the binary's folder").to_path_buf();
    let rest = std::env::var_os("PATH").unwrap_or_default();
    let folders = std::iter::once(folder).chain(std::env::split_paths(&rest));
    std::env::join_paths(folders).expect("a PATH")
}

fn copy_folder(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).expect("a folder");
    for entry in std::fs::read_dir(from).expect("a readable folder") {
        let entry = entry.expect("a folder entry");
        let target = to.join(entry.file_name());
        if entry.file_type().expect("a file type").is_dir() {
            copy_folder(&entry.path(), &target);
        } else {
            std::fs::copy(entry.path(), &target).expect("a copied file");
        }
    }
}

// ---------------------------------------------------------------------------
// Matching with wildcards
// ---------------------------------------------------------------------------

fn is_any_lines(line: &str) -> bool {
    line.trim() == ANY_LINES
}

/// Whether one expected line, where `…` stands for any text, matches one
/// actual line; trailing white space is ignored.
fn line_matches(pattern: &str, text: &str) -> bool {
    let (pattern, text) = (pattern.trim_end(), text.trim_end());
    let parts: Vec<&str> = pattern.split(ANY_TEXT).collect();
    let [first, middle @ .., last] = parts.as_slice() else {
        return pattern == text;
    };
    if !text.starts_with(first) {
        return false;
    }
    let mut rest = &text[first.len()..];
    // Taking each middle part where it first occurs leaves the most room
    // for the parts after it.
    for part in middle {
        match rest.find(part) {
            Some(at) => rest = &rest[at + part.len()..],
            None => return false,
        }
    }
    rest.ends_with(last)
}

/// Whether the expected lines, where a `[…]` line stands for any number of
/// lines, match the actual ones.
fn lines_match(expected: &[String], actual: &[String]) -> bool {
    let (n, m) = (expected.len(), actual.len());
    // fits[i][j]: expected[i..] matches actual[j..].
    let mut fits = vec![vec![false; m + 1]; n + 1];
    fits[n][m] = true;
    for i in (0..n).rev() {
        for j in (0..=m).rev() {
            fits[i][j] = if is_any_lines(&expected[i]) {
                fits[i + 1][j] || (j < m && fits[i][j + 1])
            } else {
                j < m && line_matches(&expected[i], &actual[j]) && fits[i + 1][j + 1]
            };
        }
    }
    fits[0][0]
}

// ---------------------------------------------------------------------------
// Reporting and regenerating
// ---------------------------------------------------------------------------

fn difference(example: &Example, expected: &[String], actual: &[String]) -> String {
    let mut out = format!(
        "README.md:{}: `{}` printed something else.\n",
        example.line, example.command
    );
    let first_difference = expected
        .iter()
        .zip(actual)
        .position(|(e, a)| is_any_lines(e) || !line_matches(e, a))
        .filter(|&i| !is_any_lines(&expected[i]));
    if let Some(i) = first_difference {
        out.push_str(&format!(
            "first difference at output line {}:\n  expected: {}\n  actual:   {}\n",
            i + 1,
            expected[i],
            actual[i]
        ));
    }
    out.push_str("--- expected (README.md)\n");
    for line in expected {
        out.push_str(&format!("- {line}\n"));
    }
    out.push_str("+++ actual (standard output, then standard error)\n");
    for line in actual {
        out.push_str(&format!("+ {line}\n"));
    }
    out
}

/// The expected output to write for `actual`: the old one when it still
/// matches; otherwise the actual lines, keeping as many lines before and
/// after a `[…]` as the old output had, and keeping an old line with `…`
/// where it still matches the line it stands for.
fn regenerated(expected: &[String], actual: &[String]) -> Vec<String> {
    if lines_match(expected, actual) {
        return expected.to_vec();
    }
    let keep = |old: Option<&String>, new: &String| match old {
        Some(old) if !is_any_lines(old) && old.contains(ANY_TEXT) && line_matches(old, new) => {
            old.clone()
        }
        _ => new.clone(),
    };
    let whole = || -> Vec<String> {
        actual
            .iter()
            .enumerate()
            .map(|(i, a)| keep(expected.get(i), a))
            .collect()
    };
    let (Some(first), Some(last)) = (
        expected.iter().position(|l| is_any_lines(l)),
        expected.iter().rposition(|l| is_any_lines(l)),
    ) else {
        return whole();
    };
    let (lead, trail) = (first, expected.len() - last - 1);
    if lead + trail >= actual.len() {
        return whole();
    }
    let mut out: Vec<String> = actual[..lead]
        .iter()
        .enumerate()
        .map(|(i, a)| keep(expected.get(i), a))
        .collect();
    out.push(ANY_LINES.to_owned());
    let tail = actual.len() - trail;
    out.extend(
        actual[tail..]
            .iter()
            .enumerate()
            .map(|(k, a)| keep(expected.get(last + 1 + k), a)),
    );
    out
}

/// New expected output for the lines `first..first + len` of README.md.
struct Replacement {
    first: usize,
    len: usize,
    lines: Vec<String>,
}

fn write_back(path: &Path, lines: &[&str], replacements: &[Replacement]) {
    let mut out: Vec<String> = lines.iter().map(|l| l.to_string()).collect();
    // From the end, so that earlier line numbers stay valid.
    for r in replacements.iter().rev() {
        let _replaced: Vec<String> = out
            .splice(r.first..r.first + r.len, r.lines.iter().cloned())
            .collect();
    }
    let text = out.join("\n");
    if std::fs::read_to_string(path).ok().as_deref() != Some(text.as_str()) {
        std::fs::write(path, text).expect("README.md written");
        eprintln!("README.md: expected outputs regenerated");
    }
}

// ---------------------------------------------------------------------------
// The matcher itself
// ---------------------------------------------------------------------------

fn owned(lines: &[&str]) -> Vec<String> {
    lines.iter().map(|l| l.to_string()).collect()
}

#[test]
fn an_ellipsis_stands_for_any_text_on_its_line() {
    assert!(line_matches("wrote … bytes", "wrote 1,024 bytes"));
    assert!(line_matches("a … b … c", "a 1 b 2 b 3 c"));
    assert!(line_matches("…", ""));
    assert!(line_matches("same  ", "same"));
    assert!(!line_matches("wrote … bytes", "wrote 1,024 rows"));
    assert!(!line_matches("ab…ba", "aba"));
}

#[test]
fn a_bracketed_ellipsis_stands_for_any_number_of_lines() {
    let expected = owned(&["head", "[…]", "tail"]);
    assert!(lines_match(&expected, &owned(&["head", "tail"])));
    assert!(lines_match(&expected, &owned(&["head", "1", "2", "tail"])));
    assert!(!lines_match(&expected, &owned(&["head", "1"])));
    assert!(lines_match(&owned(&["[…]"]), &[]));
    assert!(!lines_match(&owned(&["x"]), &[]));
}

#[test]
fn regenerating_keeps_the_wildcards_that_still_fit() {
    let expected = owned(&["took … s", "a", "[…]", "z"]);
    let actual = owned(&["took 3 s", "b", "c", "d", "y"]);
    assert_eq!(
        regenerated(&expected, &actual),
        ["took … s", "b", "[…]", "y"]
    );
    let still = owned(&["took 4 s", "a", "z"]);
    assert_eq!(regenerated(&expected, &still), expected);
    assert_eq!(regenerated(&owned(&["x …"]), &owned(&["y"])), ["y"]);
}
