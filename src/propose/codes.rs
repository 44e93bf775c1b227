//! Code columns: values that are vendor codes, read by position.
//!
//! A code such as `PMP-0750-CI` is a row of segments: letters (`PMP`, a
//! prefix family; `CI`, a suffix variant) and digits (`0750`, an
//! identifier), with separators between them that people type as they like
//! (`pmp.750.ci`, `PMP0750CI`, `PMP 0750 CI`). Read as free text, such a
//! column drafts nonsense: `750` becomes a count, `CI` cubic inches, and a
//! word mined from inside a glued token is a flag that whole-word matching
//! never fires on. So a column whose rows are mostly codes is read here
//! instead:
//!
//! - **detection**: a value is code-like when it is letters and digits
//!   (ASCII) with only `-`, `.`, `/`, `_` or a space between them, starts
//!   with letters, has two to six segments, letter segments of at most five
//!   letters and a digit segment. Values are grouped by the classes of their
//!   segments (their shape family: `PMP-0750-CI`, `pmp.750.ci` and
//!   `PMP0750CI` are one family, letters-digits-letters). A family is kept
//!   when it holds at least 2% of the code-like rows and has an identifier,
//!   a digit segment of three digits or more in at least half its rows
//!   (`ASLT4` has none: its digit is a grade, and the word miners read it).
//!   A value that is a label of at most two words and no digit, then a
//!   code of a kept family (`P/N PMP-0750-CI`, `#PMP-0750-CI`), is read as
//!   that code. The column is a code column when the kept families hold at
//!   least half its rows, and at least half of those rows are written
//!   without a space in the code.
//! - **positions**: the letter segments before the first digit segment are
//!   prefixes, by their index (`prefix`, `prefix_2`); those after it are
//!   suffixes, aligned across families by their values (the material
//!   suffix of `PMP-0750-2A-CI` and of `PMP-0750-CI` is one position when
//!   they share most of their values).
//! - **the draft**: one label per letter position with more than one value,
//!   a case per value (a pattern that fires only on a code of a kept family
//!   with that value at that position), and one label `canonical` whose
//!   `map` sends every spelling of a code (other separators, other zero
//!   padding: `pmp.750.ci` for `PMP-0750-CI`) to its spelling with the most
//!   rows. Digit segments are identifiers: no count or measure is read from
//!   them, and no letter segment is read as a unit.
//!
//! The values that are not code-like are left to the other miners, with
//! shares still counted against the whole column; code-like values of no
//! kept family (segments glued together, rare shapes) are read by nobody,
//! rather than mined for counts.

use std::fmt::Write;

use hashbrown::{HashMap, HashSet};

use super::units::UNITS;
use super::{rule_name, Corpus, Proposal, ProposeOptions, ProposedRule};
use crate::render::{shown, thousands};
use crate::shape::shape;

/// Characters typed between the segments of a code.
const SEPARATORS: [char; 5] = ['-', '.', '/', '_', ' '];
/// The pattern text of one separator (as a character class).
const SEPARATOR_CLASS: &str = "[-./_ ]";
/// Longest letter segment: codes abbreviate, words do not.
const MAX_LETTERS: usize = 5;
/// Most segments in a code.
const MAX_SEGMENTS: usize = 6;
/// An identifier has at least this many digits ...
const ID_DIGITS: usize = 3;
/// ... in at least this share of its family's rows.
const ID_SHARE: f64 = 0.5;
/// A shape family holds at least this share of the code-like rows.
const FAMILY_SHARE: f64 = 0.02;
/// At most this many shape families are read.
const MAX_FAMILIES: usize = 8;
/// The kept families hold at least this share of the column's rows.
const CODE_SHARE: f64 = 0.5;
/// At least this share of the code rows is written without a space.
const UNSPACED_SHARE: f64 = 0.5;
/// Two letter positions after the digits are one position when this share of
/// the rows of one has a value that the other has too.
const SAME_POSITION: f64 = 0.5;
/// At most this many cases in the label of one position (most rows first).
const MAX_CASES: usize = 50;
/// Longest label in front of a code (`part# `).
const MAX_LABEL: usize = 10;
/// The pattern text of an optional label in front of a code: no digits,
/// ending in a character that is neither a letter nor a digit.
const LABEL_AHEAD: &str = "(?:[^0-9]*[^A-Za-z0-9])?";

#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
enum Class {
    Letters,
    Digits,
}

/// The segments of a value: its runs of ASCII letters and of ASCII digits,
/// in order; anything else separates them.
fn segments(value: &str) -> Vec<(Class, &str)> {
    let mut out = Vec::new();
    let mut start = None;
    let mut class = Class::Letters;
    for (i, c) in value.char_indices() {
        let here = if c.is_ascii_alphabetic() {
            Some(Class::Letters)
        } else if c.is_ascii_digit() {
            Some(Class::Digits)
        } else {
            None
        };
        match (start, here) {
            (Some(s), Some(h)) if h != class => {
                out.push((class, &value[s..i]));
                start = Some(i);
                class = h;
            }
            (Some(s), None) => {
                out.push((class, &value[s..i]));
                start = None;
            }
            (None, Some(h)) => {
                start = Some(i);
                class = h;
            }
            _ => {}
        }
    }
    if let Some(s) = start {
        out.push((class, &value[s..]));
    }
    out
}

/// The segments of a normalized value that reads as a code (see the module
/// documentation), or `None`.
fn code_segments(value: &str) -> Option<Vec<(Class, &str)>> {
    let plain = value
        .chars()
        .all(|c| c.is_ascii_alphanumeric() || SEPARATORS.contains(&c));
    let ends = |c: Option<char>| c.is_some_and(|c| c.is_ascii_alphanumeric());
    if !plain || !ends(value.chars().next()) || !ends(value.chars().next_back()) {
        return None;
    }
    let segs = segments(value);
    let fits = (2..=MAX_SEGMENTS).contains(&segs.len())
        && segs[0].0 == Class::Letters
        && segs.iter().any(|s| s.0 == Class::Digits)
        && segs
            .iter()
            .all(|s| s.0 == Class::Digits || s.1.len() <= MAX_LETTERS);
    fits.then_some(segs)
}

/// What makes two spellings one code: the segments, with the zero padding of
/// digit segments dropped (`pmp.750.ci` and `PMP-0750-CI` both give
/// `pmp|750|ci`). Segments that are glued into one (`07502`) are not split:
/// a key never joins two codes that may differ.
fn code_key(segs: &[(Class, &str)]) -> String {
    let mut key = String::new();
    for (i, (class, text)) in segs.iter().enumerate() {
        if i > 0 {
            key.push('|');
        }
        match class {
            Class::Digits => {
                let trimmed = text.trim_start_matches('0');
                key.push_str(if trimmed.is_empty() { "0" } else { trimmed });
            }
            Class::Letters => key.push_str(&text.to_ascii_lowercase()),
        }
    }
    key
}

/// Codes of one shape family: the same classes of segments in the same order.
struct Family {
    classes: Vec<Class>,
    entries: Vec<u32>,
    rows: u64,
}

impl Family {
    /// Its spellings' shapes with the most rows, e.g. `A-9999-A, a.999.a`.
    fn shapes(&self, corpus: &Corpus, n: usize) -> Vec<String> {
        let mut rows: HashMap<String, u64> = HashMap::new();
        for &e in &self.entries {
            *rows.entry(form(corpus, e)).or_default() += corpus.rows[e as usize];
        }
        let mut shapes: Vec<(String, u64)> = rows.into_iter().collect();
        shapes.sort_by(|a, b| b.1.cmp(&a.1).then_with(|| a.0.cmp(&b.0)));
        shapes.into_iter().take(n).map(|(s, _)| s).collect()
    }

    /// A pattern for the whole code, with the segment at `literal` captured
    /// as the given text. Segments of one class next to each other need a
    /// separator between them (otherwise they would be one segment), so each
    /// generic segment matches a whole segment.
    fn pattern(&self, literal: Option<(usize, &str)>) -> String {
        let mut p = String::new();
        for (i, class) in self.classes.iter().enumerate() {
            if i > 0 {
                let glue = if self.classes[i - 1] == *class {
                    "+"
                } else {
                    "*"
                };
                p.push_str(SEPARATOR_CLASS);
                p.push_str(glue);
            }
            match literal {
                Some((k, text)) if k == i => {
                    let _ = write!(p, "({})", regex::escape(text));
                }
                _ => p.push_str(match class {
                    Class::Letters => "[A-Za-z]+",
                    Class::Digits => "[0-9]+",
                }),
            }
        }
        p
    }

    /// The indices of its letter segments before and after the first digit
    /// segment.
    fn letter_positions(&self) -> (Vec<usize>, Vec<usize>) {
        let first_digits = self
            .classes
            .iter()
            .position(|c| *c == Class::Digits)
            .unwrap_or(self.classes.len());
        let letters = (0..self.classes.len()).filter(|&i| self.classes[i] == Class::Letters);
        letters.partition(|&i| i < first_digits)
    }
}

/// One letter position, in one or more families.
struct Position {
    name: String,
    /// (family, segment index).
    members: Vec<(usize, usize)>,
    /// Normalized segment text: rows, and the entry with the most rows.
    values: HashMap<String, (u64, u32)>,
    rows: u64,
}

impl Position {
    fn new(name: String) -> Position {
        Position {
            name,
            members: Vec::new(),
            values: HashMap::new(),
            rows: 0,
        }
    }

    /// Where the position is: `segment 3 of A-9999-A and A-9999-A-A9,
    /// segment 4 of A-9999-9A`.
    fn describe(&self, families: &[Family], corpus: &Corpus) -> String {
        let mut by_segment: Vec<(usize, Vec<String>)> = Vec::new();
        for &(f, i) in &self.members {
            let shape = families[f].shapes(corpus, 1).pop().unwrap_or_default();
            match by_segment.iter_mut().find(|(k, _)| *k == i) {
                Some((_, shapes)) => shapes.push(shape),
                None => by_segment.push((i, vec![shape])),
            }
        }
        let places: Vec<String> = by_segment
            .into_iter()
            .map(|(i, shapes)| format!("segment {} of {}", i + 1, and_list(&shapes)))
            .collect();
        places.join(", ")
    }
}

/// `a`, `a and b`, `a, b and c`.
fn and_list(items: &[String]) -> String {
    match items {
        [] => String::new(),
        [one] => one.clone(),
        [rest @ .., last] => format!("{} and {last}", rest.join(", ")),
    }
}

/// A column read as codes.
pub(crate) struct Codes {
    families: Vec<Family>,
    /// Corpus entries that are codes of a kept family, sorted.
    entries: Vec<u32>,
    rows: u64,
    /// Segments of the code of every entry in `entries` (empty otherwise).
    segments: Vec<Vec<(Class, String)>>,
    /// Entries of `entries` whose code follows a label (`P/N PMP-0750-CI`).
    labelled: Vec<u32>,
    /// Entries that read as codes of no kept family (`flt31758pr5`, glued):
    /// no rule reads them, and the other miners do not see them either.
    unread: Vec<u32>,
}

/// The code at the end of a value that is not a code itself, behind a
/// label of at most two words and no digit (`p/n pmp-0750-ci`,
/// `#pmp-0750-ci`, `part# pmp-0750-ci`).
fn labelled_code(value: &str) -> Option<(usize, Vec<(Class, &str)>)> {
    let boundaries = value.char_indices().filter(|&(i, c)| {
        i > 0
            && c.is_ascii_alphanumeric()
            && !value[..i].ends_with(|b: char| b.is_ascii_alphanumeric())
    });
    for (i, _) in boundaries {
        let head = &value[..i];
        let words = segments(head);
        let label = head.chars().count() <= MAX_LABEL
            && words.len() <= 2
            && words.iter().all(|w| w.0 == Class::Letters);
        if !label {
            return None;
        }
        if let Some(segs) = code_segments(&value[i..]) {
            return Some((i, segs));
        }
    }
    None
}

/// The code reading of a column, when most of its rows are codes of a few
/// shape families (see the module documentation); `None` otherwise.
pub(crate) fn read(corpus: &Corpus) -> Option<Codes> {
    let mut segments: Vec<Vec<(Class, String)>> = vec![Vec::new(); corpus.len()];
    let owned = |segs: Vec<(Class, &str)>| -> Vec<(Class, String)> {
        segs.into_iter().map(|(c, t)| (c, t.to_owned())).collect()
    };
    let mut by_classes: HashMap<Vec<Class>, Vec<u32>> = HashMap::new();
    let mut code_like = 0;
    for (e, value) in corpus.normalized.iter().enumerate() {
        let Some(segs) = code_segments(value) else {
            continue;
        };
        let classes: Vec<Class> = segs.iter().map(|s| s.0).collect();
        by_classes.entry(classes).or_default().push(e as u32);
        segments[e] = owned(segs);
        code_like += corpus.rows[e];
    }
    let unread: Vec<u32> = (0..corpus.len() as u32)
        .filter(|&e| !segments[e as usize].is_empty())
        .collect();
    let identifies = |classes: &[Class], entries: &[u32], rows: u64| {
        (0..classes.len())
            .filter(|&i| classes[i] == Class::Digits)
            .any(|i| {
                let long: u64 = entries
                    .iter()
                    .filter(|&&e| segments[e as usize][i].1.len() >= ID_DIGITS)
                    .map(|&e| corpus.rows[e as usize])
                    .sum();
                long as f64 >= ID_SHARE * rows as f64
            })
    };
    let mut families: Vec<Family> = by_classes
        .into_iter()
        .map(|(classes, entries)| {
            let rows = corpus.rows_of(&entries);
            Family {
                classes,
                entries,
                rows,
            }
        })
        .filter(|f| f.rows as f64 >= FAMILY_SHARE * code_like as f64)
        .filter(|f| identifies(&f.classes, &f.entries, f.rows))
        .collect();
    families.sort_by(|a, b| {
        b.rows
            .cmp(&a.rows)
            .then_with(|| a.classes.len().cmp(&b.classes.len()))
    });
    families.truncate(MAX_FAMILIES);
    // Codes behind a label join the family of their code.
    let mut labelled = Vec::new();
    let mut starts: HashMap<u32, usize> = HashMap::new();
    for (e, value) in corpus.normalized.iter().enumerate() {
        if !segments[e].is_empty() {
            continue;
        }
        let Some((start, segs)) = labelled_code(value) else {
            continue;
        };
        let classes: Vec<Class> = segs.iter().map(|s| s.0).collect();
        if let Some(f) = families.iter_mut().find(|f| f.classes == classes) {
            f.entries.push(e as u32);
            f.entries.sort_unstable();
            f.rows += corpus.rows[e];
            segments[e] = owned(segs);
            labelled.push(e as u32);
            starts.insert(e as u32, start);
        }
    }
    let rows: u64 = families.iter().map(|f| f.rows).sum();
    let mut entries: Vec<u32> = families.iter().flat_map(|f| f.entries.clone()).collect();
    entries.sort_unstable();
    let spaced: u64 = entries
        .iter()
        .filter(|&&e| {
            let start = starts.get(&e).copied().unwrap_or(0);
            corpus.normalized[e as usize][start..].contains(' ')
        })
        .map(|&e| corpus.rows[e as usize])
        .sum();
    let is_codes = !families.is_empty()
        && rows as f64 >= CODE_SHARE * corpus.total_rows as f64
        && (rows - spaced) as f64 >= UNSPACED_SHARE * rows as f64;
    if !is_codes {
        return None;
    }
    let unread: Vec<u32> = unread
        .into_iter()
        .filter(|e| entries.binary_search(e).is_err())
        .collect();
    for (e, segs) in segments.iter_mut().enumerate() {
        if entries.binary_search(&(e as u32)).is_err() {
            segs.clear();
        }
    }
    Some(Codes {
        families,
        entries,
        rows,
        segments,
        labelled,
        unread,
    })
}

impl Codes {
    /// The column without its codes (those of no kept family included):
    /// what the other miners read. Shares are still of the whole column's
    /// rows.
    pub(crate) fn rest<'a>(&self, corpus: &Corpus<'a>) -> Corpus<'a> {
        let mut rest = Corpus {
            vocab: corpus.vocab,
            index: Vec::new(),
            normalized: Vec::new(),
            rows: Vec::new(),
            total_rows: corpus.total_rows,
            placeholders: corpus.placeholders.clone(),
        };
        for e in 0..corpus.len() {
            let code = |set: &[u32]| set.binary_search(&(e as u32)).is_ok();
            if !code(&self.entries) && !code(&self.unread) {
                rest.index.push(corpus.index[e]);
                rest.normalized.push(corpus.normalized[e].clone());
                rest.rows.push(corpus.rows[e]);
            }
        }
        rest
    }

    /// The letter positions: prefixes by index, suffixes aligned by value.
    /// A position's rule is named after its role, behind the column's name
    /// unless the draft has a prefix: its output column is `part_prefix`
    /// either way (with the command line's prefix `part_`, or without one).
    fn positions(&self, corpus: &Corpus, column: &str, prefix: &str) -> Vec<Position> {
        let base = if prefix.is_empty() {
            format!("{}_", rule_name(column))
        } else {
            String::new()
        };
        let mut prefixes: Vec<Position> = Vec::new();
        let mut suffixes: Vec<Position> = Vec::new();
        let named = |kind: &str, n: usize| match n {
            0 => format!("{base}{kind}"),
            n => format!("{base}{kind}_{}", n + 1),
        };
        for (f, family) in self.families.iter().enumerate() {
            let (before, after) = family.letter_positions();
            for (k, &i) in before.iter().enumerate() {
                if prefixes.len() <= k {
                    prefixes.push(Position::new(named("prefix", k)));
                }
                self.add(&mut prefixes[k], corpus, f, i);
            }
            let mut taken: Vec<usize> = Vec::new();
            for &i in &after {
                let mut here = Position::new(String::new());
                self.add(&mut here, corpus, f, i);
                let shared = |p: &Position| {
                    let rows: u64 = here
                        .values
                        .iter()
                        .filter(|(v, _)| p.values.contains_key(*v))
                        .map(|(_, (r, _))| r)
                        .sum();
                    rows as f64 / here.rows.max(1) as f64
                };
                let best = (0..suffixes.len())
                    .filter(|k| !taken.contains(k))
                    .map(|k| (k, shared(&suffixes[k])))
                    .filter(|&(_, s)| s >= SAME_POSITION)
                    .max_by(|a, b| a.1.total_cmp(&b.1).then_with(|| b.0.cmp(&a.0)));
                let k = best.map_or_else(
                    || {
                        suffixes.push(Position::new(named("suffix", suffixes.len())));
                        suffixes.len() - 1
                    },
                    |(k, _)| k,
                );
                taken.push(k);
                self.add(&mut suffixes[k], corpus, f, i);
            }
        }
        // Positions with one value get no label: number the others.
        for (kind, group) in [("prefix", &mut prefixes), ("suffix", &mut suffixes)] {
            let labelled = group.iter_mut().filter(|p| p.values.len() >= 2);
            for (n, p) in labelled.enumerate() {
                p.name = named(kind, n);
            }
        }
        prefixes.extend(suffixes);
        prefixes
    }

    fn add(&self, position: &mut Position, corpus: &Corpus, family: usize, segment: usize) {
        position.members.push((family, segment));
        for &e in &self.families[family].entries {
            let text = &self.segments[e as usize][segment].1;
            let rows = corpus.rows[e as usize];
            let slot = position.values.entry(text.clone()).or_insert((0, e));
            slot.0 += rows;
            if rows > corpus.rows[slot.1 as usize] {
                slot.1 = e;
            }
            position.rows += rows;
        }
    }

    /// The segment as written in the original value of `entry` (its code
    /// is at its end), or as normalized when the original does not split
    /// the same way.
    fn written(&self, corpus: &Corpus, entry: u32, segment: usize, normalized: &str) -> String {
        let original = segments(corpus.original(entry));
        let n = self.segments[entry as usize].len();
        match original
            .len()
            .checked_sub(n)
            .map(|skip| original[skip + segment].1)
        {
            Some(text) if text.eq_ignore_ascii_case(normalized) => text.to_owned(),
            _ => normalized.to_owned(),
        }
    }

    /// How the column was read, for the draft's comments.
    fn summary(&self, corpus: &Corpus) -> Vec<String> {
        let share = |rows: u64| rows as f64 / corpus.total_rows.max(1) as f64 * 100.0;
        let families: Vec<String> = self
            .families
            .iter()
            .map(|f| {
                let shapes = f.shapes(corpus, 3);
                let also = if shapes.len() > 1 {
                    format!("; also written {}", shapes[1..].join(", "))
                } else {
                    String::new()
                };
                format!("{} ({:.1}% of rows{also})", shapes[0], share(f.rows))
            })
            .collect();
        let mut notes = vec![format!(
            "code column: {:.1}% of rows are codes of {} shape {}, read by position: {}",
            share(self.rows),
            self.families.len(),
            if self.families.len() == 1 {
                "family"
            } else {
                "families"
            },
            families.join(", ")
        )];
        if !self.labelled.is_empty() {
            notes.push(format!(
                "{} rows write a label before the code, e.g. {}: the code is read behind it",
                thousands(corpus.rows_of(&self.labelled)),
                shown(&corpus.examples(&self.labelled, 1).join(""))
            ));
        }
        if !self.unread.is_empty() {
            notes.push(format!(
                "{} rows look like codes of no family above, e.g. {} (segments glued, or a rare shape): no rule reads them",
                thousands(corpus.rows_of(&self.unread)),
                shown(&corpus.examples(&self.unread, 1).join(""))
            ));
        }
        notes.push("digit segments are identifiers, part of the code: no count or measure is read from them, and `canonical` joins their zero-padding variants".to_owned());
        notes
    }

    /// One label per letter position with more than one value; the notes of
    /// the first say how the column was read.
    pub(crate) fn segment_labels(
        &self,
        corpus: &Corpus,
        column: &str,
        opts: &ProposeOptions,
    ) -> Vec<Proposal> {
        let mut out: Vec<Proposal> = Vec::new();
        let mut constant = Vec::new();
        for position in self.positions(corpus, column, &opts.prefix) {
            let mut values: Vec<(&String, &(u64, u32))> = position.values.iter().collect();
            values.sort_by(|a, b| b.1 .0.cmp(&a.1 .0).then_with(|| a.0.cmp(b.0)));
            if values.len() < 2 {
                if let Some((text, _)) = values.first() {
                    constant.push(format!(
                        "`{text}` ({})",
                        position.describe(&self.families, corpus)
                    ));
                }
                continue;
            }
            let left_out = values.len().saturating_sub(MAX_CASES);
            values.truncate(MAX_CASES);
            let first_segment = position.members[0].1;
            let mut cases = Vec::new();
            let mut units = Vec::new();
            for (text, &(_, entry)) in &values {
                let alternatives: Vec<String> = position
                    .members
                    .iter()
                    .map(|&(f, i)| self.families[f].pattern(Some((i, text))))
                    .collect();
                let member = position
                    .members
                    .iter()
                    .find(|&&(f, _)| self.families[f].entries.binary_search(&entry).is_ok())
                    .map_or(first_segment, |&(_, i)| i);
                let label = self.written(corpus, entry, member, text);
                cases.push((
                    label,
                    format!("^{LABEL_AHEAD}(?:{})$", alternatives.join("|")),
                ));
                if UNITS.iter().any(|u| u.spelling == text.as_str()) {
                    units.push(format!("`{text}`"));
                }
            }
            let mut notes = vec![format!(
                "one case per value of the letters at {}, named as written most often; a case fires only on a code of these shapes with that value there (a label may stand before it); no default: a value that is no such code gets null",
                position.describe(&self.families, corpus)
            )];
            if !units.is_empty() {
                let (what, these) = match units.len() {
                    1 => ("is a segment", "a unit"),
                    _ => ("are segments", "units"),
                };
                notes.push(format!(
                    "{} here {what} of the code, never {these}",
                    units.join(", ")
                ));
            }
            if left_out > 0 {
                notes.push(format!(
                    "{left_out} rarer values of this position are left out (at most {MAX_CASES} cases)"
                ));
            }
            let mut entries: Vec<u32> = position
                .members
                .iter()
                .flat_map(|&(f, _)| self.families[f].entries.iter().copied())
                .collect();
            entries.sort_unstable();
            entries.dedup();
            out.push(Proposal {
                name: position.name.clone(),
                rule: ProposedRule::Segment { cases },
                distinct: entries.len() as u64,
                rows: position.rows,
                examples: corpus.examples(&entries, opts.examples),
                notes,
            });
        }
        if let Some(first) = out.first_mut() {
            let mut notes = self.summary(corpus);
            if !constant.is_empty() {
                notes.push(format!(
                    "the same in every code, so part of the format and no label: {}",
                    constant.join(", ")
                ));
            }
            notes.append(&mut first.notes);
            first.notes = notes;
        }
        out
    }

    /// The label `canonical`: every spelling of a code (separators, zero
    /// padding) mapped to its spelling with the most rows, the codes with
    /// the most rows first, at most `opts.max_map` entries; then the
    /// entries of `clusters` (the map of the rest of the column) while
    /// there is room.
    pub(crate) fn canonical(
        &self,
        corpus: &Corpus,
        clusters: Option<Proposal>,
        opts: &ProposeOptions,
    ) -> Option<Proposal> {
        // How often each way of writing a code is used in the column
        // (`A-9999-A`, `a.999.a`): ties between spellings go to the usual way.
        let mut forms: HashMap<String, u64> = HashMap::new();
        for &e in &self.entries {
            *forms.entry(form(corpus, e)).or_default() += corpus.rows[e as usize];
        }
        let usual = |e: u32| forms[&form(corpus, e)];
        let labelled = |e: u32| self.labelled.binary_search(&e).is_ok();
        // Per code: its normalized spellings, with their rows and their
        // original written most (the usual way on a tie).
        let mut codes: HashMap<String, HashMap<&str, (u64, u32)>> = HashMap::new();
        for &e in &self.entries {
            let segs: Vec<(Class, &str)> = self.segments[e as usize]
                .iter()
                .map(|(c, t)| (*c, t.as_str()))
                .collect();
            let spelling = codes
                .entry(code_key(&segs))
                .or_default()
                .entry(corpus.normalized[e as usize].as_str())
                .or_insert((0, e));
            spelling.0 += corpus.rows[e as usize];
            let (now, best) = (corpus.rows[e as usize], corpus.rows[spelling.1 as usize]);
            if now > best || (now == best && usual(e) > usual(spelling.1)) {
                spelling.1 = e;
            }
        }
        // The spelling a code is mapped to: one without a label, with the
        // most rows, written the usual way on a tie.
        let order = |a: &(&str, (u64, u32)), b: &(&str, (u64, u32))| {
            labelled(a.1 .1)
                .cmp(&labelled(b.1 .1))
                .then_with(|| b.1 .0.cmp(&a.1 .0))
                .then_with(|| usual(b.1 .1).cmp(&usual(a.1 .1)))
                .then_with(|| a.0.cmp(b.0))
        };
        let mut groups: Vec<(u64, Vec<(&str, (u64, u32))>)> = codes
            .into_values()
            .filter(|spellings| spellings.len() >= 2)
            .map(|spellings| {
                let mut s: Vec<(&str, (u64, u32))> = spellings.into_iter().collect();
                s.sort_by(order);
                (s.iter().map(|x| x.1 .0).sum(), s)
            })
            .collect();
        groups.sort_by(|a, b| b.0.cmp(&a.0).then_with(|| a.1[0].0.cmp(b.1[0].0)));
        let mut map: Vec<(String, String)> = Vec::new();
        let (mut distinct, mut rows, mut joined) = (0u64, 0u64, 0usize);
        let mut examples = Vec::new();
        for (group_rows, spellings) in &groups {
            if map.len() + spellings.len() > opts.max_map {
                continue;
            }
            let canonical = tidy(corpus.original(spellings[0].1 .1));
            for (spelling, _) in spellings {
                map.push(((*spelling).to_owned(), canonical.clone()));
            }
            if examples.len() < opts.examples {
                examples.push(corpus.original(spellings[1].1 .1).to_owned());
            }
            distinct += spellings.len() as u64;
            rows += group_rows;
            joined += 1;
        }
        let left_out = groups.len() - joined;
        let mut notes = Vec::new();
        if joined > 0 {
            notes.push(format!(
                "the {} codes with the most rows that are written more than one way (other separators, other zero padding: same letters, same numbers), each spelling mapped to the one with the most rows",
                thousands(joined as u64)
            ));
            if left_out > 0 {
                notes.push(format!(
                    "{} more such codes are left out (`--max-map`, {} entries)",
                    thousands(left_out as u64),
                    opts.max_map
                ));
            }
        }
        if let Some(clusters) = clusters {
            let ProposedRule::Map { map: more } = clusters.rule else {
                unreachable!("the clusters' proposal is a map");
            };
            let seen: HashSet<String> = map.iter().map(|(k, _)| k.clone()).collect();
            let room = opts.max_map.saturating_sub(map.len());
            let more: Vec<(String, String)> = more
                .into_iter()
                .filter(|(k, _)| !seen.contains(k))
                .take(room)
                .collect();
            if !more.is_empty() {
                map.extend(more);
                distinct += clusters.distinct;
                rows += clusters.rows;
                examples.extend(clusters.examples);
                examples.truncate(opts.examples);
                notes.extend(
                    clusters
                        .notes
                        .into_iter()
                        .map(|n| format!("the values that are no codes: {n}")),
                );
            }
        }
        (!map.is_empty()).then(|| Proposal {
            name: "canonical".to_owned(),
            rule: ProposedRule::Map { map },
            distinct,
            rows,
            examples,
            notes,
        })
    }
}

/// A value with its white space tidied (trimmed, runs made one space).
fn tidy(value: &str) -> String {
    value.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// The way a value is written: the shape of its original spelling.
fn form(corpus: &Corpus, entry: u32) -> String {
    shape(&tidy(corpus.original(entry)))
}

/// A label whose cases are patterns, as ruleset text.
pub(crate) fn write_segment(out: &mut String, name: &str, cases: &[(String, String)]) {
    let basic = super::draft::toml_basic;
    let _ = writeln!(out, "[[label]]\nname = {}", basic(name));
    for (label, pattern) in cases {
        // Patterns are built of ASCII letters, digits and regex syntax, with
        // no quote: a literal string keeps their backslashes readable.
        let _ = writeln!(
            out,
            "\n[[label.case]]\nlabel = {}\npattern = '{pattern}'",
            basic(label)
        );
    }
    out.push('\n');
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::vocabulary::Vocabulary;

    fn corpus_of<'a>(vocab: &'a Vocabulary) -> Corpus<'a> {
        Corpus::new(vocab, &ProposeOptions::default())
    }

    fn vocab(values: &[(&str, u64)]) -> Vocabulary {
        Vocabulary {
            values: values.iter().map(|(v, _)| v.to_string()).collect(),
            counts: values.iter().map(|(_, n)| *n).collect(),
            ..Vocabulary::default()
        }
    }

    #[test]
    fn segments_are_runs_of_letters_and_of_digits() {
        let s = segments("pmp-0750-2a");
        assert_eq!(
            s,
            [
                (Class::Letters, "pmp"),
                (Class::Digits, "0750"),
                (Class::Digits, "2"),
                (Class::Letters, "a")
            ]
        );
        assert_eq!(segments("PMP0750CI").len(), 3);
    }

    #[test]
    fn a_code_starts_with_letters_and_holds_digits() {
        assert!(code_segments("pmp-0750-ci").is_some());
        assert!(code_segments("pmp.750.ci").is_some());
        assert!(code_segments("pmp 0750 ci").is_some());
        // Words, measures, counts and punctuation are no codes.
        for value in [
            "registered nurse",
            "4.5l",
            "120hp",
            "6 spd manual",
            "5'7\"",
            "70",
            "manual 6",
            "#pmp-0750",
            "pmp-0750-",
            "etching on paper",
            "cic",
        ] {
            assert!(code_segments(value).is_none(), "{value}");
        }
    }

    #[test]
    fn keys_drop_separators_and_zero_padding_only() {
        let key = |v: &str| code_key(&segments(v));
        assert_eq!(key("pmp-0750-ci"), key("pmp.750.ci"));
        assert_eq!(key("pmp-0750-ci"), key("PMP0750CI"));
        assert_eq!(key("pmp-0750-ci"), "pmp|750|ci");
        // Glued digit segments are not split: they may be other codes.
        assert_ne!(key("pmp-0750-3t"), key("pmp-07503t"));
        assert_eq!(key("a-000-b"), "a|0|b");
    }

    #[test]
    fn family_patterns_match_whole_segments() {
        let family = Family {
            classes: vec![Class::Letters, Class::Digits, Class::Letters],
            entries: Vec::new(),
            rows: 0,
        };
        let p = regex::Regex::new(&format!("^{}$", family.pattern(Some((2, "ci"))))).unwrap();
        assert!(p.is_match("pmp-0750-ci") && p.is_match("pmp0750ci") && p.is_match("pmp.750.ci"));
        assert!(!p.is_match("pmp-0750-sci") && !p.is_match("pmp-0750-c"));
        let two = Family {
            classes: vec![
                Class::Letters,
                Class::Digits,
                Class::Letters,
                Class::Letters,
            ],
            entries: Vec::new(),
            rows: 0,
        };
        // Two letter segments in a row need a separator between them.
        let p = regex::Regex::new(&format!("^{}$", two.pattern(Some((2, "a"))))).unwrap();
        assert!(p.is_match("pmp-0750-a-ci") && !p.is_match("pmp-0750-aci"));
    }

    #[test]
    fn columns_of_words_grades_or_numbers_are_no_code_columns() {
        let offenses = vocab(&[
            ("ASLT4", 300),
            ("ASLT2", 200),
            ("DASLT5", 150),
            ("CIC", 400),
            ("FORCE", 300),
        ]);
        assert!(read(&corpus_of(&offenses)).is_none());
        let heights = vocab(&[("70", 80), ("5'7\"", 20), ("170 cm", 10), ("68", 60)]);
        assert!(read(&corpus_of(&heights)).is_none());
        let engines = vocab(&[("v8 5.7l", 50), ("4 cyl 2.0l", 50), ("v6", 30)]);
        assert!(read(&corpus_of(&engines)).is_none());
    }

    #[test]
    fn a_column_of_part_codes_is_read_by_position() {
        // Invented part codes.
        let parts = vocab(&[
            ("PMP-0750-CI", 40),
            ("pmp.750.ci", 10),
            ("VLV-0120-SS", 30),
            ("VLV0120SS", 8),
            ("PMP-1200-BR", 20),
            ("see notes", 5),
        ]);
        let corpus = corpus_of(&parts);
        let codes = read(&corpus).expect("a code column");
        assert_eq!(codes.families.len(), 1);
        assert_eq!(codes.rows, 108);
        assert_eq!(codes.rest(&corpus).len(), 1);
        let positions = codes.positions(&corpus, "part", "");
        let names: Vec<&str> = positions.iter().map(|p| p.name.as_str()).collect();
        assert_eq!(names, ["part_prefix", "part_suffix"]);
    }
}
