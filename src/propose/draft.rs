//! A draft as a ruleset file, where its rules read the same text, and the
//! `map` proposed from clusters.

use std::fmt::Write;
use std::ops::Range;

use hashbrown::HashMap;
use rayon::prelude::*;
use serde::Serialize;

use super::{Corpus, Draft, Proposal, ProposeOptions, ProposedRule};
use crate::cluster::{cluster, tidy, ClusterOptions, Method};
use crate::normalize::{CaseFold, UnicodeForm};
use crate::pattern::{Found, MatchError};
use crate::render::{shown, thousands};
use crate::ruleset::{Feature, Rule, Ruleset};

pub const PROPOSE_SCHEMA: &str = "descry.propose/1";

/// Values on which at most this many are looked at for overlaps (the most
/// frequent first).
const OVERLAP_SAMPLE: usize = 50_000;

/// Two rules that read the same text of some values.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Overlap {
    /// The rule declared first, and the later one.
    pub first: String,
    pub second: String,
    pub distinct: u64,
    pub rows: u64,
    pub example: String,
}

/// A one-line TOML basic string (`"..."`) with every control character
/// escaped: a value or column name holding a newline must not open a
/// multi-line string or break out of a comment.
pub(crate) fn toml_basic(s: &str) -> String {
    let mut out = String::with_capacity(s.len() + 2);
    out.push('"');
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            '\n' => out.push_str("\\n"),
            '\t' => out.push_str("\\t"),
            '\r' => out.push_str("\\r"),
            c if c.is_control() => {
                let _ = write!(out, "\\u{:04X}", c as u32);
            }
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

/// A TOML string: literal (`'...'`) when it can be, so that regex
/// backslashes stay readable; basic with escapes otherwise.
fn toml_string(s: &str) -> String {
    if !s.contains('\'') && !s.chars().any(|c| c.is_control()) {
        format!("'{s}'")
    } else {
        toml_basic(s)
    }
}

fn toml_list(items: &[String]) -> String {
    let quoted: Vec<String> = items.iter().map(|s| toml_basic(s)).collect();
    format!("[{}]", quoted.join(", "))
}

fn toml_key(s: &str) -> String {
    toml_edit::Key::new(s).display_repr().into_owned()
}

fn number(x: f64) -> String {
    let s = format!("{x}");
    if s.contains(['.', 'e', 'E']) || s.contains("inf") || s.contains("NaN") {
        s
    } else {
        format!("{s}.0")
    }
}

impl Draft {
    /// The draft as a complete ruleset file.
    pub fn to_toml(&self) -> String {
        let mut out = String::new();
        let _ = writeln!(
            out,
            "# Draft ruleset for column {}, written by `descry propose` from {} distinct values ({} rows,\n\
             # blanks and placeholders left out). Each rule says what it was found on: the distinct values\n\
             # and rows, a few example values, and how spellings were grouped. Every rule was tested on\n\
             # every distinct value. Rename, merge, delete and tighten freely; then run `descry check`.\n",
            toml_basic(self.column.as_str()),
            thousands(self.distinct_considered),
            thousands(self.rows_considered),
        );
        let _ = writeln!(out, "column = {}", toml_basic(self.column.as_str()));
        let _ = writeln!(out, "prefix = {}", toml_basic(self.prefix.as_str()));
        let _ = writeln!(out, "decimal = \".\"");
        if !self.placeholders.is_empty() {
            let _ = writeln!(
                out,
                "# values that mean \"no information\": every feature of theirs is null, and they are\n\
                 # left out of coverage (found in the column among the usual placeholder spellings)"
            );
            let _ = writeln!(out, "placeholders = {}", toml_list(&self.placeholders));
        }
        out.push('\n');
        let n = &self.normalizer;
        let _ = writeln!(out, "[normalize]");
        let unicode = match n.unicode {
            UnicodeForm::Nfkc => "nfkc",
            UnicodeForm::Nfc => "nfc",
            UnicodeForm::None => "none",
        };
        let case = match n.case {
            CaseFold::Lower => "lower",
            CaseFold::None => "none",
        };
        let _ = writeln!(out, "unicode = \"{unicode}\"\ncase = \"{case}\"\ntrim = {}\ncollapse_space = {}\nstrip_accents = {}", n.trim, n.collapse_space, n.strip_accents);
        out.push_str(&self.rules_toml());
        out
    }

    /// The rules alone, each under a comment: what `--update` appends.
    pub fn rules_toml(&self) -> String {
        let mut out = String::new();
        let mut kind = "";
        for p in &self.proposals {
            let heading = match p.rule {
                ProposedRule::Flag { .. } => "flags",
                ProposedRule::Count { .. } => "counts",
                ProposedRule::Measure { .. } => "measures",
                ProposedRule::Label { .. } | ProposedRule::Segment { .. } => "labels",
                ProposedRule::Map { .. } => "canonical spellings",
            };
            if heading != kind {
                let _ = writeln!(
                    out,
                    "\n# --- {heading} {}\n",
                    "-".repeat(72 - heading.len())
                );
                kind = heading;
            }
            self.write_proposal(&mut out, p);
        }
        out
    }

    fn write_proposal(&self, out: &mut String, p: &Proposal) {
        let share = p.rows as f64 / self.rows_considered.max(1) as f64 * 100.0;
        let _ = writeln!(
            out,
            "# {}: fires on {} distinct values, {} rows ({share:.1}% of rows)",
            p.name,
            thousands(p.distinct),
            thousands(p.rows)
        );
        for note in &p.notes {
            let _ = writeln!(out, "# {}", one_line(note));
        }
        if !p.examples.is_empty() {
            let shown: Vec<String> = p.examples.iter().map(|e| shown(e)).collect();
            let _ = writeln!(out, "# e.g. {}", shown.join(", "));
        }
        let name = toml_basic(&p.name);
        match &p.rule {
            ProposedRule::Flag { any, pattern } => match pattern {
                Some(pattern) => {
                    let _ = writeln!(
                        out,
                        "[[flag]]\nname = {name}\npattern = {}\n",
                        toml_string(pattern)
                    );
                }
                None => {
                    let _ = writeln!(out, "[[flag]]\nname = {name}\nany = {}\n", toml_list(any));
                }
            },
            ProposedRule::Count { pattern, range } => {
                let _ = writeln!(
                    out,
                    "[[count]]\nname = {name}\npattern = {}\nrange = [{}, {}]\n",
                    toml_string(pattern),
                    range.0,
                    range.1
                );
            }
            ProposedRule::Measure {
                pattern,
                unit,
                units,
                combine,
                fancy,
            } => {
                let _ = writeln!(
                    out,
                    "[[measure]]\nname = {name}\npattern = {}\nunit = {}",
                    toml_string(pattern),
                    toml_basic(unit.as_str())
                );
                if *fancy {
                    let _ = writeln!(out, "fancy = true");
                }
                if let Some(combine) = combine {
                    let _ = writeln!(out, "combine = {}", toml_basic(combine.as_str()));
                }
                if units.is_empty() {
                    out.push('\n');
                    return;
                }
                let seen: Vec<&str> = units
                    .iter()
                    .filter(|u| u.seen)
                    .map(|u| u.spelling.as_str())
                    .collect();
                let _ = writeln!(
                    out,
                    "# written in the data: {}; the other spellings are the unit table's, for the next drop",
                    seen.join(", ")
                );
                let mut by_unit: Vec<(&str, f64, &str, Vec<&str>)> = Vec::new();
                for u in units {
                    match by_unit.iter_mut().find(|(name, ..)| *name == u.unit) {
                        Some(entry) => entry.3.push(&u.spelling),
                        None => by_unit.push((&u.unit, u.factor, &u.source, vec![&u.spelling])),
                    }
                }
                for (name, factor, source, spellings) in by_unit {
                    let _ = writeln!(
                        out,
                        "# {name} = {} {unit} ({source}): {}",
                        number(factor),
                        spellings.join(", ")
                    );
                }
                let entries: Vec<String> = units
                    .iter()
                    .map(|u| format!("{} = {}", toml_key(&u.spelling), number(u.factor)))
                    .collect();
                let _ = writeln!(out, "units = {{ {} }}\n", entries.join(", "));
            }
            ProposedRule::Label { cases, default } => {
                let _ = writeln!(out, "[[label]]\nname = {name}");
                if let Some(d) = default {
                    let _ = writeln!(out, "default = {}", toml_basic(d.as_str()));
                }
                for (label, any) in cases {
                    let _ = writeln!(
                        out,
                        "\n[[label.case]]\nlabel = {}\nany = {}",
                        toml_basic(label.as_str()),
                        toml_list(any)
                    );
                }
                out.push('\n');
            }
            ProposedRule::Segment { cases } => super::codes::write_segment(out, &p.name, cases),
            ProposedRule::Map { map } => {
                let _ = writeln!(out, "[[label]]\nname = {name}");
                let _ = writeln!(out, "[label.map]");
                for (key, canonical) in map {
                    let _ = writeln!(
                        out,
                        "{} = {}",
                        toml_key(key),
                        toml_basic(canonical.as_str())
                    );
                }
                out.push('\n');
            }
        }
    }

    /// Note every overlap on the later of its two rules.
    pub(crate) fn note_overlaps(&mut self, overlaps: &[Overlap]) {
        for o in overlaps {
            if let Some(p) = self.proposals.iter_mut().find(|p| p.name == o.second) {
                p.notes.push(format!(
                    "overlap: reads the same text as `{}` in {} values ({} rows), e.g. {}",
                    o.first,
                    thousands(o.distinct),
                    thousands(o.rows),
                    shown(&o.example)
                ));
            }
        }
    }
}

fn one_line(s: &str) -> String {
    s.replace(['\n', '\r'], " ")
}

/// The text a rule reads in a value: the match of a flag or of the first
/// matching label case, the number and unit groups of a count or measure.
/// Label maps match whole values and are left out.
fn spans(feature: &Feature, value: &str) -> Vec<Range<usize>> {
    let read = |found: Result<Option<Found>, MatchError>| match found {
        Ok(Some(found)) if found.groups.is_empty() => vec![found.span],
        Ok(Some(found)) => found.groups.into_iter().flatten().collect(),
        _ => Vec::new(),
    };
    match &feature.rule {
        Rule::Flag(f) => read(f.matcher.find(value)),
        Rule::Count(c) => read(c.pattern.find(value)),
        Rule::Measure(m) => read(m.pattern.find(value)),
        Rule::Label(l) => l
            .cases
            .iter()
            .map(|c| read(c.matcher.find(value)))
            .find(|s| !s.is_empty())
            .unwrap_or_default(),
    }
}

/// Pairs of rules of `rules` that read overlapping text, among the values
/// with the most rows; `report` says which rules' overlaps to report (both
/// rules of a pair are reported if either is in it).
pub(crate) fn find_overlaps(
    rules: &Ruleset,
    report: &dyn Fn(&str) -> bool,
    values: &[(&str, u64, &str)],
) -> Vec<Overlap> {
    let mut order: Vec<usize> = (0..values.len()).collect();
    order.sort_by(|&a, &b| {
        values[b]
            .1
            .cmp(&values[a].1)
            .then_with(|| values[a].0.cmp(values[b].0))
    });
    order.truncate(OVERLAP_SAMPLE);
    let per_value: Vec<Vec<(usize, usize)>> = order
        .par_iter()
        .map(|&i| {
            let normalized = values[i].0;
            let read: Vec<Vec<Range<usize>>> = rules
                .features
                .iter()
                .map(|f| spans(f, normalized))
                .collect();
            let mut pairs = Vec::new();
            for a in 0..read.len() {
                for b in (a + 1)..read.len() {
                    let touches = read[a]
                        .iter()
                        .any(|x| read[b].iter().any(|y| x.start < y.end && y.start < x.end));
                    if touches {
                        pairs.push((a, b));
                    }
                }
            }
            pairs
        })
        .collect();
    let mut tally: HashMap<(usize, usize), (u64, u64, usize)> = HashMap::new();
    for (k, pairs) in per_value.iter().enumerate() {
        for &pair in pairs {
            let t = tally.entry(pair).or_insert((0, 0, order[k]));
            t.0 += 1;
            t.1 += values[order[k]].1;
        }
    }
    let mut out: Vec<Overlap> = tally
        .into_iter()
        .filter(|((a, b), _)| report(&rules.features[*a].name) || report(&rules.features[*b].name))
        .map(|((a, b), (distinct, rows, example))| Overlap {
            first: rules.features[a].name.clone(),
            second: rules.features[b].name.clone(),
            distinct,
            rows,
            example: values[example].2.to_owned(),
        })
        .collect();
    out.sort_by(|a, b| {
        b.rows
            .cmp(&a.rows)
            .then_with(|| (&a.first, &a.second).cmp(&(&b.first, &b.second)))
    });
    out
}

/// Set every proposal's support to what its compiled rule fires on among
/// `values` (normalized, rows, original), with the fired values with the
/// most rows as examples; drop proposals that fire on nothing. Returns
/// whether any was dropped.
pub(crate) fn tested_support(
    draft: &mut Draft,
    rules: &Ruleset,
    values: &[(&str, u64, &str)],
    examples: usize,
) -> bool {
    let fired: Vec<Vec<bool>> = values
        .par_iter()
        .map(|(normalized, _, _)| rules.evaluate(normalized).iter().map(|o| o.fired).collect())
        .collect();
    let mut dropped = false;
    draft.proposals.retain_mut(|p| {
        let Some(k) = rules.features.iter().position(|f| f.name == p.name) else {
            return true;
        };
        let mut hits: Vec<usize> = (0..values.len()).filter(|&v| fired[v][k]).collect();
        p.distinct = hits.len() as u64;
        p.rows = hits.iter().map(|&v| values[v].1).sum();
        hits.sort_by(|&a, &b| {
            values[b]
                .1
                .cmp(&values[a].1)
                .then_with(|| values[a].2.cmp(values[b].2))
        });
        p.examples = hits
            .iter()
            .take(examples)
            .map(|&v| values[v].2.to_owned())
            .collect();
        dropped |= hits.is_empty();
        !hits.is_empty()
    });
    dropped
}

/// The numbers of a value as written: its digits and what stands between
/// two digits (`5'5` and `5' 5"` give `5'5`, `5.5` gives `5.5`).
fn number_shape(value: &str) -> String {
    let chars: Vec<char> = value.chars().filter(|c| !c.is_whitespace()).collect();
    let digit_at: Vec<usize> = (0..chars.len())
        .filter(|&i| chars[i].is_ascii_digit())
        .collect();
    let mut out = String::new();
    for (k, &i) in digit_at.iter().enumerate() {
        out.push(chars[i]);
        if let Some(&next) = digit_at.get(k + 1) {
            let between = &chars[i + 1..next];
            if between.iter().all(|c| !c.is_alphabetic()) {
                out.extend(between);
            } else {
                out.push(' ');
            }
        }
    }
    out
}

/// Widen every count's range to the numbers its compiled pattern reads among
/// `values` (normalized, rows, original), so that the draft never rejects
/// its own matches (the mining skips numbers that the pattern still reads,
/// such as `518` in `qz-518-1/200`). Returns whether a range changed.
pub(crate) fn widen_ranges(
    draft: &mut Draft,
    rules: &Ruleset,
    values: &[(&str, u64, &str)],
) -> bool {
    let outside: Vec<Vec<(usize, i64)>> = values
        .par_iter()
        .map(|(normalized, _, _)| {
            rules
                .evaluate(normalized)
                .iter()
                .enumerate()
                .filter_map(|(k, o)| match o.issue {
                    Some(crate::Issue::OutOfRange { value }) if value.fract() == 0.0 => {
                        Some((k, value as i64))
                    }
                    _ => None,
                })
                .collect()
        })
        .collect();
    let mut changed = false;
    for p in &mut draft.proposals {
        let ProposedRule::Count { range, .. } = &mut p.rule else {
            continue;
        };
        let Some(k) = rules.features.iter().position(|f| f.name == p.name) else {
            continue;
        };
        let read: Vec<i64> = outside
            .iter()
            .flatten()
            .filter(|(f, _)| *f == k)
            .map(|(_, v)| *v)
            .collect();
        if let (Some(&lo), Some(&hi)) = (read.iter().min(), read.iter().max()) {
            *range = (range.0.min(lo), range.1.max(hi));
            p.notes.push(format!(
                "range widened to {} to {}: the pattern reads these numbers in {} values",
                range.0,
                range.1,
                read.len()
            ));
            changed = true;
        }
    }
    changed
}

/// A label `map` from the token-set clusters with the most rows.
pub(crate) fn map_from_clusters(
    corpus: &Corpus,
    column: &str,
    opts: &ProposeOptions,
) -> Option<Proposal> {
    let mut copts = ClusterOptions::new(Method::Words);
    copts.normalizer = opts.normalizer.clone();
    // Placeholders and blanks are not worth a canonical spelling.
    let mut mined = crate::Vocabulary::default();
    for e in 0..corpus.len() {
        mined.values.push(corpus.original(e as u32).to_owned());
        mined.counts.push(corpus.rows[e]);
    }
    let report = cluster(&mined, column, &copts);
    let mut map = Vec::new();
    let mut seen = hashbrown::HashSet::new();
    let (mut distinct, mut rows, mut clusters) = (0, 0, 0);
    let mut examples = Vec::new();
    for c in &report.clusters {
        // Members that differ only by case or spacing share one key.
        let mut keys: Vec<String> = c
            .members
            .iter()
            .map(|m| opts.normalizer.apply(&m.value))
            .filter(|k| !k.is_empty())
            .collect();
        keys.sort();
        keys.dedup();
        let fresh: Vec<&String> = keys.iter().filter(|k| !seen.contains(*k)).collect();
        if fresh.len() < 2 || map.len() + fresh.len() > opts.max_map {
            continue;
        }
        let canonical = tidy(&c.canonical);
        // Numbers are kept as written: `5'5` (feet and inches) and `5.5`
        // are different lengths, whatever their words.
        let numbers = number_shape(&opts.normalizer.apply(&canonical));
        let fresh: Vec<&String> = fresh
            .into_iter()
            .filter(|k| number_shape(k) == numbers)
            .collect();
        if fresh.len() < 2 {
            continue;
        }
        for k in fresh {
            seen.insert(k.clone());
            map.push((k.clone(), canonical.clone()));
        }
        distinct += c.members.len() as u64;
        rows += c.rows;
        clusters += 1;
        if examples.len() < opts.examples {
            examples.push(c.members[c.members.len().min(2) - 1].value.clone());
        }
    }
    (clusters > 0).then(|| Proposal {
        name: "canonical".to_owned(),
        rule: ProposedRule::Map { map },
        distinct,
        rows,
        examples,
        notes: vec![format!(
            "the {clusters} token-set clusters with the most rows (same words in any order), each member mapped to the spelling with the most rows; `descry cluster` shows them all"
        )],
    })
}
