//! What each fuzz target checks on one input. The fuzzer
//! (`tests/fuzz/main.rs`) and the replay test (`tests/fuzz_found.rs`) both
//! call these functions, so a kept input is checked exactly as it was when
//! it was found.
//!
//! Each check returns `Ok(kind)`, a short name for what happened (loaded,
//! or which kind of error), or `Err(failure)` when an invariant broke.

#![allow(dead_code)]

use std::panic::{self, AssertUnwindSafe};
use std::path::Path;
use std::sync::{Mutex, OnceLock};

use descry::evaluate::Cell;
use descry::numbers::{parse_integer, parse_number, DecimalMark, Macro};
use descry::read::{batch_text, for_each_batch, ReadOptions, Table};
use descry::ruleset::{Feature, Rule};
use descry::vocabulary::GrowingVocabulary;
use descry::{Ruleset, Vocabulary};

/// The fuzz targets, by the names the command line and the `found/` and
/// `seeds/` folders use.
pub const TARGETS: [&str; 4] = ["rulesets", "csv", "ndjson", "numbers"];

/// The name rulesets are loaded under; every error must name it.
pub const RULESET_FILE: &str = "fuzz/ruleset.toml";

// ---------------------------------------------------------------- panics

/// Panic messages seen since the last `guarded` call began, from any
/// thread (a reader thread's panic may surface only as an error).
static PANICS: Mutex<Vec<String>> = Mutex::new(Vec::new());
/// Whether a check is running, so that its panics are recorded, not shown.
static GUARDING: std::sync::atomic::AtomicBool = std::sync::atomic::AtomicBool::new(false);
/// One input at a time: the panic record is shared by all threads.
static ONE_AT_A_TIME: Mutex<()> = Mutex::new(());

fn install_quiet_hook() {
    static HOOK: OnceLock<()> = OnceLock::new();
    HOOK.get_or_init(|| {
        panic::set_hook(Box::new(|info| {
            let message = info
                .payload()
                .downcast_ref::<&str>()
                .map(|s| s.to_string())
                .or_else(|| info.payload().downcast_ref::<String>().cloned())
                .unwrap_or_else(|| "(no message)".to_owned());
            let place = info
                .location()
                .map(|l| format!("{}:{}", l.file(), l.line()))
                .unwrap_or_default();
            let thread = std::thread::current().name().unwrap_or("?").to_owned();
            if !GUARDING.load(std::sync::atomic::Ordering::SeqCst) {
                // A test's own assertion, outside any check: show it.
                eprintln!("thread {thread} panicked at {place}:\n{message}");
                return;
            }
            let mut seen = PANICS.lock().unwrap_or_else(|e| e.into_inner());
            seen.push(format!("panic in thread {thread} at {place}: {message}"));
        }));
    });
}

/// Run one check with panics caught (on any thread) and turned into a
/// failure.
pub fn guarded(check: impl FnOnce() -> Result<String, String>) -> Result<String, String> {
    install_quiet_hook();
    let _one = ONE_AT_A_TIME.lock().unwrap_or_else(|e| e.into_inner());
    PANICS.lock().unwrap_or_else(|e| e.into_inner()).clear();
    GUARDING.store(true, std::sync::atomic::Ordering::SeqCst);
    let result = panic::catch_unwind(AssertUnwindSafe(check));
    GUARDING.store(false, std::sync::atomic::Ordering::SeqCst);
    let panics = std::mem::take(&mut *PANICS.lock().unwrap_or_else(|e| e.into_inner()));
    if !panics.is_empty() {
        return Err(panics.join("\n"));
    }
    result.unwrap_or_else(|_| Err("panic (message not recorded)".to_owned()))
}

/// An error message with its particulars (quoted text, numbers) blanked,
/// so that errors of one kind count as one outcome.
pub fn error_kind(message: &str) -> String {
    let mut out = String::new();
    let mut chars = message.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '"' | '`' => {
                for d in chars.by_ref() {
                    if d == c {
                        break;
                    }
                }
                out.push('…');
            }
            c if c.is_ascii_digit() => {
                while chars.peek().is_some_and(|d| d.is_ascii_digit()) {
                    chars.next();
                }
                out.push('N');
            }
            '\n' => break,
            c => out.push(c),
        }
    }
    out.chars().take(70).collect()
}

// ---------------------------------------------------------------- rulesets

/// Load `text` as a ruleset; when it loads, evaluate it on `values` and on
/// its own examples' values.
///
/// Invariants: no panic; an error's text starts with the file name; the
/// evaluation has one outcome per feature, of the feature's kind (a label
/// cell indexes the categories, a count or measure is in its range or is
/// `missing`, a measure is finite); `explain` gives the same outcomes.
pub fn check_ruleset(text: &str, values: &[String]) -> Result<String, String> {
    let rules = match Ruleset::from_toml(text, RULESET_FILE) {
        Ok(rules) => rules,
        Err(e) => {
            let shown = e.to_string();
            if !shown.starts_with(RULESET_FILE) {
                return Err(format!("the error does not name the file: {shown}"));
            }
            return Ok(format!("error: {}", error_kind(&e.message)));
        }
    };
    let examples = rules.examples.iter().map(|e| e.value.clone());
    for value in values.iter().cloned().chain(examples) {
        check_evaluation(&rules, &value).map_err(|e| format!("value {value:?}: {e}"))?;
    }
    Ok("loaded".to_owned())
}

fn check_evaluation(rules: &Ruleset, value: &str) -> Result<(), String> {
    let normalized = rules.normalizer.apply(value);
    let outcomes = rules.evaluate(&normalized);
    if outcomes.len() != rules.features.len() {
        return Err(format!(
            "{} outcomes for {} features",
            outcomes.len(),
            rules.features.len()
        ));
    }
    for (feature, outcome) in rules.features.iter().zip(&outcomes) {
        check_cell(feature, &outcome.cell)
            .map_err(|e| format!("feature {:?}: {e}", feature.name))?;
        if let Rule::Label(label) = &feature.rule {
            if let Some(c) = outcome
                .conflicts
                .iter()
                .find(|&&c| c as usize >= label.categories.len())
            {
                return Err(format!(
                    "feature {:?}: conflict {c} indexes none of {} categories",
                    feature.name,
                    label.categories.len()
                ));
            }
        }
    }
    let traces = rules.explain(&normalized);
    if traces.len() != outcomes.len() {
        return Err(format!(
            "explain gives {} traces for {} features",
            traces.len(),
            outcomes.len()
        ));
    }
    for ((feature, trace), outcome) in rules.features.iter().zip(&traces).zip(&outcomes) {
        if trace.outcome != *outcome {
            return Err(format!(
                "feature {:?}: explain gives {:?}, evaluate gives {:?}",
                feature.name, trace.outcome, outcome
            ));
        }
    }
    Ok(())
}

fn check_cell(feature: &Feature, cell: &Cell) -> Result<(), String> {
    match (&feature.rule, cell) {
        (_, Cell::Null) | (Rule::Flag(_), Cell::Bool(_)) => Ok(()),
        (Rule::Count(c), Cell::Int(x)) => match c.range {
            Some((lo, hi)) if !(lo..=hi).contains(x) && c.missing != Some(*x) => {
                Err(format!("count {x} outside its range [{lo}, {hi}]"))
            }
            _ => Ok(()),
        },
        (Rule::Measure(m), Cell::Float(x)) => {
            if !x.is_finite() {
                return Err(format!("measure {x} is not finite"));
            }
            match m.range {
                Some((lo, hi)) if !(lo..=hi).contains(x) && m.missing != Some(*x) => {
                    Err(format!("measure {x} outside its range [{lo}, {hi}]"))
                }
                _ => Ok(()),
            }
        }
        (Rule::Label(l), Cell::Label(i)) if (*i as usize) < l.categories.len() => Ok(()),
        (Rule::Label(l), Cell::Label(i)) => Err(format!(
            "label cell {i} indexes none of {} categories",
            l.categories.len()
        )),
        (rule, cell) => Err(format!("a {} rule gave the cell {cell:?}", rule.kind())),
    }
}

// ---------------------------------------------------------------- tables

/// The table formats fuzzed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TableKind {
    Csv,
    NdJson,
}

impl TableKind {
    pub fn extension(self) -> &'static str {
        match self {
            TableKind::Csv => "csv",
            TableKind::NdJson => "ndjson",
        }
    }
}

/// The column a table input is read for: the first header field (CSV) or
/// the first key of the first line (NDJSON), as the reference parsers
/// read them; `a` when there is none.
pub fn target_column(bytes: &[u8], kind: TableKind) -> String {
    let found = match kind {
        TableKind::Csv => csv::ReaderBuilder::new()
            .has_headers(true)
            .flexible(true)
            .from_reader(bytes)
            .byte_headers()
            .ok()
            .and_then(|h| h.get(0).map(|f| String::from_utf8_lossy(f).into_owned())),
        TableKind::NdJson => bytes
            .split(|&b| b == b'\n')
            .next()
            .and_then(|line| serde_json::from_slice::<serde_json::Value>(line).ok())
            .and_then(|v| v.as_object().and_then(|o| o.keys().next().cloned())),
    };
    found.unwrap_or_else(|| "a".to_owned())
}

/// The vocabulary's numbers, compared between readers.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct VocabSummary {
    pub values: Vec<String>,
    pub counts: Vec<u64>,
    pub null_rows: u64,
}

impl VocabSummary {
    fn of(v: &Vocabulary) -> VocabSummary {
        VocabSummary {
            values: v.values.clone(),
            counts: v.counts.clone(),
            null_rows: v.null_rows,
        }
    }

    fn from_rows<'a>(rows: impl IntoIterator<Item = Option<&'a str>>) -> VocabSummary {
        VocabSummary::of(&Vocabulary::build(rows))
    }

    /// polars reads a quoted empty field (`""`) as an empty string and an
    /// unquoted one as null; the reference cannot tell them apart, and both
    /// are blank to every rule, so the comparison takes `""` for null.
    fn blanks_as_null(&self) -> VocabSummary {
        let mut out = VocabSummary {
            values: Vec::new(),
            counts: Vec::new(),
            null_rows: self.null_rows,
        };
        for (v, c) in self.values.iter().zip(&self.counts) {
            if v.is_empty() {
                out.null_rows += c;
            } else {
                out.values.push(v.clone());
                out.counts.push(*c);
            }
        }
        out
    }

    fn brief(&self) -> String {
        let shown: Vec<String> = self
            .values
            .iter()
            .zip(&self.counts)
            .take(6)
            .map(|(v, c)| format!("{:?}x{c}", v.chars().take(40).collect::<String>()))
            .collect();
        format!(
            "{} distinct [{}{}], {} null",
            self.values.len(),
            shown.join(", "),
            if self.values.len() > 6 { ", ..." } else { "" },
            self.null_rows
        )
    }
}

/// Write `bytes` to a file in `dir` and read its target column as the
/// commands do.
///
/// Invariants: no panic; a read gives a vocabulary or an error whose text
/// starts with the path; a CSV read whole (`Table::read_columns`, as for
/// standard input) and read in batches (`for_each_batch`, as for files)
/// agree; and when the file is valid CSV (the `csv` crate reads it and it
/// keeps to RFC 4180), the vocabulary is the `csv` crate's.
pub fn check_table(bytes: &[u8], kind: TableKind, dir: &Path) -> Result<String, String> {
    let path = dir.join(format!("input.{}", kind.extension()));
    std::fs::write(&path, bytes).map_err(|e| format!("cannot write the input: {e}"))?;
    let column = target_column(bytes, kind);
    let mut kinds = Vec::new();
    for lossy_utf8 in [false, true] {
        let opts = ReadOptions {
            lossy_utf8,
            ..ReadOptions::default()
        };
        if lossy_utf8 && std::str::from_utf8(bytes).is_ok() {
            continue;
        }
        let read = read_as_commands(&path, &column, &opts)?;
        if kind == TableKind::Csv {
            let whole = read_whole(&path, &column, &opts)?;
            match (&read, &whole) {
                (Ok(a), Ok(b)) if a != b => {
                    return Err(format!(
                        "batches give {}, the whole read gives {}",
                        a.brief(),
                        b.brief()
                    ))
                }
                (Ok(_), Err(e)) | (Err(e), Ok(_)) => {
                    let which = if read.is_ok() { "whole" } else { "batched" };
                    return Err(format!("only the {which} read fails: {e}"));
                }
                _ => {}
            }
        }
        if !lossy_utf8 {
            let reference = match kind {
                TableKind::Csv => csv_reference(bytes, &column),
                TableKind::NdJson => None,
            };
            if let Some(want) = reference {
                match &read {
                    Ok(got) if got.blanks_as_null() == want => {}
                    Ok(got) => {
                        return Err(format!(
                            "column {column:?}: descry reads {}, the reference {}",
                            got.brief(),
                            want.brief()
                        ))
                    }
                    Err(e) => {
                        return Err(format!(
                            "column {column:?}: the reference reads {}, descry fails: {e}",
                            want.brief()
                        ))
                    }
                }
            }
        }
        kinds.push(match read {
            Ok(_) => "read".to_owned(),
            Err(e) => format!("error: {}", error_kind(&e)),
        });
    }
    Ok(kinds.join(" / lossy "))
}

/// The read `read_vocabulary` does: in batches. `Err(String)` is a failure of the check; the inner
/// `Err` is descry's error text, which names the file.
fn read_as_commands(
    path: &Path,
    column: &str,
    opts: &ReadOptions,
) -> Result<Result<VocabSummary, String>, String> {
    let mut vocab = GrowingVocabulary::default();
    let result = for_each_batch(path, &[column], Some(&[column]), opts, 1 << 20, |batch| {
        vocab.codes_for(&batch_text(&batch, column, path)?);
        Ok(())
    });
    located(
        path,
        result.map(|_| VocabSummary::of(&vocab.to_vocabulary())),
    )
}

/// `Table::read_columns` and the vocabulary of the column.
fn read_whole(
    path: &Path,
    column: &str,
    opts: &ReadOptions,
) -> Result<Result<VocabSummary, String>, String> {
    let result = Table::read_columns(path, &[column], opts).and_then(|table| {
        let text = table.text(column)?;
        Ok(VocabSummary::from_rows(text.iter()))
    });
    located(path, result)
}

fn located(
    path: &Path,
    result: Result<VocabSummary, descry::Error>,
) -> Result<Result<VocabSummary, String>, String> {
    match result {
        Ok(v) => Ok(Ok(v)),
        Err(e) => {
            let shown = e.to_string();
            if shown.starts_with(&path.display().to_string()) {
                Ok(Err(shown))
            } else {
                Err(format!("the error does not name the file: {shown}"))
            }
        }
    }
}

/// The column as the `csv` crate reads it, when the file is CSV in the
/// sense both readers share: RFC 4180 records ended by LF or CRLF (no
/// lone CR, no blank line), quotes only around whole fields, every field
/// UTF-8, every record as long as the header. An empty field is null.
pub fn csv_reference(bytes: &[u8], column: &str) -> Option<VocabSummary> {
    if !keeps_to_rfc4180(bytes) {
        return None;
    }
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(true)
        .from_reader(bytes);
    let header = reader.headers().ok()?.clone();
    // descry refuses a header that gives one name to two columns (an
    // empty name excepted: polars names those columns).
    let names: Vec<&str> = header.iter().filter(|h| !h.is_empty()).collect();
    if names
        .iter()
        .enumerate()
        .any(|(i, h)| names[..i].contains(h))
    {
        return None;
    }
    let index = header.iter().position(|h| h == column)?;
    let mut rows = Vec::new();
    for record in reader.records() {
        rows.push(record.ok()?.get(index)?.to_owned());
    }
    Some(VocabSummary::from_rows(
        rows.iter().map(|f| (!f.is_empty()).then_some(f.as_str())),
    ))
}

/// A strict reading of RFC 4180 section 2: fields are plain (no quote, no
/// CR) or quoted (doubled quotes inside, the closing quote followed by a
/// comma or a line break); records end with LF or CRLF; no record is empty.
pub fn keeps_to_rfc4180(bytes: &[u8]) -> bool {
    // A byte-order mark is not part of the first record.
    let bytes = bytes.strip_prefix(b"\xef\xbb\xbf").unwrap_or(bytes);
    let mut i = 0;
    let n = bytes.len();
    let mut record_start = true;
    while i < n {
        if record_start && (bytes[i] == b'\n' || bytes[i..].starts_with(b"\r\n")) {
            return false;
        }
        record_start = false;
        if bytes[i] == b'"' {
            i += 1;
            loop {
                match bytes.get(i) {
                    None => return false,
                    Some(b'"') if bytes.get(i + 1) == Some(&b'"') => i += 2,
                    Some(b'"') => {
                        i += 1;
                        break;
                    }
                    Some(_) => i += 1,
                }
            }
        } else {
            while i < n && !matches!(bytes[i], b',' | b'\n' | b'\r' | b'"') {
                i += 1;
            }
            if i < n && bytes[i] == b'"' {
                return false;
            }
        }
        match &bytes[i..] {
            [] => {}
            [b',', ..] => i += 1,
            [b'\n', ..] => {
                i += 1;
                record_start = true;
            }
            [b'\r', b'\n', ..] => {
                i += 2;
                record_start = true;
            }
            _ => return false,
        }
    }
    true
}

// ---------------------------------------------------------------- numbers

fn whole_match(m: Macro, mark: DecimalMark) -> &'static regex::Regex {
    static CACHE: OnceLock<Vec<((Macro, DecimalMark), regex::Regex)>> = OnceLock::new();
    let cache = CACHE.get_or_init(|| {
        let mut out = Vec::new();
        for (m, _) in Macro::ALL {
            for mark in [DecimalMark::Point, DecimalMark::Comma] {
                let re = regex::Regex::new(&format!("^(?:{})$", m.expansion(mark)))
                    .expect("the macro expansions compile");
                out.push(((m, mark), re));
            }
        }
        out
    });
    &cache
        .iter()
        .find(|(k, _)| *k == (m, mark))
        .expect("all cached")
        .1
}

/// Whether `text` is a fraction form (`a/b`, `w-a/b`, `w a/b`) that is not
/// a proper fraction with a denominator of at most 64.
fn improper_fraction(text: &str) -> bool {
    let Some(slash) = text.find(['/', '\u{2044}']) else {
        return false;
    };
    let head = &text[..slash];
    let numerator = head.rsplit(['-', ' ']).next().unwrap_or(head);
    let denominator = text[slash..].trim_start_matches(['/', '\u{2044}']);
    let value = |s: &str| s.parse::<f64>().ok();
    match (value(numerator), value(denominator)) {
        (Some(a), Some(b)) => !(1.0 <= a && a < b && b <= 64.0),
        _ => true,
    }
}

/// The size of the integer `{int}` matched, its separators dropped.
fn integer_magnitude(text: &str) -> f64 {
    let digits: String = text.chars().filter(char::is_ascii_digit).collect();
    digits.parse().unwrap_or(0.0)
}

/// Invariants: the parsers never panic; what `{num}` matches whole parses
/// to a finite number, or to nothing only for a fraction that is not
/// proper or a number beyond f64 (some 309 digits); what `{int}` and `{count}` match whole parses as an integer
/// (nothing only from 9e15 up); an integer is the number it reads.
pub fn check_number(text: &str) -> Result<String, String> {
    let mut kinds = Vec::new();
    for (mark, name) in [(DecimalMark::Point, "point"), (DecimalMark::Comma, "comma")] {
        let number = parse_number(text, mark);
        let integer = parse_integer(text, mark);
        if let (Some(i), Some(x)) = (integer, number) {
            if i as f64 != x {
                return Err(format!("{name}: integer {i} but number {x}"));
            }
        }
        if integer.is_some() && number.is_none() {
            return Err(format!("{name}: an integer {integer:?} that is no number"));
        }
        let mut matched = String::new();
        if whole_match(Macro::Num, mark).is_match(text) {
            matched.push('N');
            match number {
                Some(x) if !x.is_finite() => {
                    return Err(format!(
                        "{name}: {{num}} matches it whole, the parser gives {x}"
                    ))
                }
                None if !improper_fraction(text) && integer_magnitude(text).is_finite() => {
                    return Err(format!(
                        "{name}: {{num}} matches it whole, the parser reads nothing"
                    ))
                }
                _ => {}
            }
        }
        for (m, letter) in [(Macro::Int, 'I'), (Macro::Count, 'C')] {
            if whole_match(m, mark).is_match(text) {
                matched.push(letter);
                if integer.is_none() && integer_magnitude(text) < 9.0e15 {
                    return Err(format!(
                        "{name}: {{{}}} matches it whole, the parser reads no integer",
                        if m == Macro::Int { "int" } else { "count" }
                    ));
                }
            }
        }
        kinds.push(format!(
            "{name}:{}{}{}",
            if number.is_some() { "n" } else { "-" },
            if integer.is_some() { "i" } else { "-" },
            if matched.is_empty() {
                String::new()
            } else {
                format!("[{matched}]")
            }
        ));
    }
    Ok(kinds.join(" "))
}
