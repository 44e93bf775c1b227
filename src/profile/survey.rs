//! The profile of a column, computed on its vocabulary: what it holds, in
//! which formats, with which defects, made of which words. It is the first
//! thing to look at before writing rules.
//!
//! Every figure is computed once per distinct value and weighted by the
//! value's row count; shares are of the non-null rows (or non-null distinct
//! values).
//!
//! ```
//! use descry::survey::{survey, SurveyOptions};
//! use descry::Vocabulary;
//!
//! let rows = [Some("6 spd auto"), Some("6 SPD Auto"), Some("n/a"), None, Some(" "), Some("6 spd auto")];
//! let report = survey(&Vocabulary::build(rows), "transmission", &SurveyOptions::default());
//! assert_eq!((report.rows, report.distinct, report.null_rows), (6, 4, 1));
//! assert_eq!(report.blank.rows, 1);
//! assert_eq!(report.placeholders.rows, 1);
//! assert_eq!(report.top_values[0].value, "6 spd auto");
//! assert_eq!(report.shapes[0].shape, "9 a a");
//! ```

use std::cmp::Reverse;
use std::fmt::Write;

use hashbrown::{HashMap, HashSet};
use rayon::prelude::*;
use serde::Serialize;
use unicode_normalization::UnicodeNormalization;

use crate::normalize::Normalizer;
use crate::render::{shown, thousands};
use crate::shape::{
    class, digit_signature, is_bidi_control, is_zero_width, letters_and_digits, shape, tokens,
    CharClass,
};
use crate::vocabulary::Vocabulary;

pub const SURVEY_SCHEMA: &str = "descry.survey/1";

/// Values that stand for "nothing entered", compared after normalization
/// (NFKC, lower case, trimmed). A non-blank value made only of punctuation
/// and symbols (`-`, `--`, `?`, `...`, `/`) also counts as a placeholder.
pub const DEFAULT_PLACEHOLDERS: &[&str] = &[
    "n/a",
    "na",
    "n.a.",
    "n.a",
    "none",
    "null",
    "nil",
    "nan",
    "unknown",
    "unk",
    "tbd",
    "tba",
    "tbc",
    "not available",
    "not applicable",
    "not known",
    "missing",
    "no data",
    "-",
    "--",
    "?",
];

/// Values longer than this many characters are reported as very long.
pub const DEFAULT_LONG: usize = 80;

/// The top-k values whose share of rows is reported.
pub const TOP_SHARES: [usize; 3] = [10, 100, 1000];

#[derive(Debug, Clone)]
pub struct SurveyOptions {
    /// Placeholder spellings (normalized before use).
    pub placeholders: Vec<String>,
    /// How many values, shapes and tokens to list.
    pub top: usize,
    /// How many examples per anomaly.
    pub examples: usize,
    /// Length in characters above which a value is very long.
    pub long: usize,
    /// Normalization for tokens, placeholders and variant groups.
    pub normalizer: Normalizer,
}

impl Default for SurveyOptions {
    fn default() -> Self {
        SurveyOptions {
            placeholders: DEFAULT_PLACEHOLDERS.iter().map(|s| s.to_string()).collect(),
            top: 20,
            examples: 3,
            long: DEFAULT_LONG,
            normalizer: Normalizer::default(),
        }
    }
}

// ---------------------------------------------------------------------------
// The report
// ---------------------------------------------------------------------------

#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize)]
pub struct Tally {
    pub distinct: u64,
    pub rows: u64,
}

#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct ValueRows {
    pub value: String,
    pub rows: u64,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Placeholders {
    pub distinct: u64,
    pub rows: u64,
    /// The placeholder values found, most rows first.
    pub values: Vec<ValueRows>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TopValue {
    pub value: String,
    pub rows: u64,
    pub share: f64,
}

/// Rows covered by the `top` most frequent values.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TopShare {
    pub top: usize,
    /// Values counted: `top`, or fewer when the column has fewer.
    pub values: u64,
    pub rows: u64,
    pub share: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ShapeCount {
    pub shape: String,
    pub distinct: u64,
    pub rows: u64,
    pub share: f64,
    /// The value of this shape with the most rows.
    pub example: String,
}

/// What is odd about a value.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum AnomalyKind {
    LeadingSpace,
    TrailingSpace,
    DoubledSpace,
    UnusualSpace,
    Compatibility,
    Control,
    Replacement,
    Long,
    CaseVariants,
    PunctuationVariants,
}

impl AnomalyKind {
    pub const ALL: [AnomalyKind; 10] = [
        AnomalyKind::LeadingSpace,
        AnomalyKind::TrailingSpace,
        AnomalyKind::DoubledSpace,
        AnomalyKind::UnusualSpace,
        AnomalyKind::Compatibility,
        AnomalyKind::Control,
        AnomalyKind::Replacement,
        AnomalyKind::Long,
        AnomalyKind::CaseVariants,
        AnomalyKind::PunctuationVariants,
    ];

    pub fn describe(self) -> &'static str {
        match self {
            AnomalyKind::LeadingSpace => "starts with white space",
            AnomalyKind::TrailingSpace => "ends with white space",
            AnomalyKind::DoubledSpace => "two or more white-space characters in a row inside the value",
            AnomalyKind::UnusualSpace => "a space other than U+0020: no-break, thin, ideographic, zero-width...",
            AnomalyKind::Compatibility => {
                "characters that NFKC normalization changes: full-width forms, ligatures, decomposed accents..."
            }
            AnomalyKind::Control => "control characters (tab, line break, escape) or bidirectional controls",
            AnomalyKind::Replacement => "U+FFFD replacement characters: the input had invalid UTF-8",
            AnomalyKind::Long => "very long values",
            AnomalyKind::CaseVariants => "the same value written in different letter case",
            AnomalyKind::PunctuationVariants => "values that differ only by punctuation or spacing",
        }
    }

    fn is_group(self) -> bool {
        matches!(
            self,
            AnomalyKind::CaseVariants | AnomalyKind::PunctuationVariants
        )
    }

    fn bit(self) -> u16 {
        1 << (self as u16)
    }
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Anomaly {
    pub kind: AnomalyKind,
    pub description: &'static str,
    /// Distinct values concerned (for variants: values in a variant group).
    pub distinct: u64,
    pub rows: u64,
    /// Variant groups (variant kinds only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub groups: Option<u64>,
    pub examples: Vec<AnomalyExample>,
}

/// A value with the anomaly; for variant kinds, the group's most frequent
/// value with the others in `variants`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AnomalyExample {
    pub value: String,
    pub rows: u64,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub variants: Vec<ValueRows>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TokenCount {
    pub token: String,
    /// Distinct values containing the token.
    pub distinct: u64,
    pub distinct_share: f64,
    /// Rows whose value contains the token.
    pub rows: u64,
    pub row_share: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SurveyReport {
    pub schema: &'static str,
    pub column: String,
    pub rows: u64,
    pub null_rows: u64,
    /// Distinct non-null values (blanks included).
    pub distinct: u64,
    /// Empty or white space only.
    pub blank: Tally,
    pub placeholders: Placeholders,
    pub top_values: Vec<TopValue>,
    pub top_shares: Vec<TopShare>,
    /// Distinct shapes.
    pub shape_count: u64,
    pub shapes: Vec<ShapeCount>,
    /// Every anomaly kind, in a fixed order, found or not.
    pub anomalies: Vec<Anomaly>,
    /// Distinct tokens.
    pub token_count: u64,
    pub tokens: Vec<TokenCount>,
}

// ---------------------------------------------------------------------------
// Computing it
// ---------------------------------------------------------------------------

/// What one distinct value contributes, computed once.
struct Profile {
    normalized: String,
    shape: String,
    anomalies: u16,
    placeholder: bool,
}

/// Survey a column's vocabulary.
pub fn survey(vocab: &Vocabulary, column: &str, opts: &SurveyOptions) -> SurveyReport {
    let placeholders: HashSet<String> = opts
        .placeholders
        .iter()
        .map(|p| opts.normalizer.apply(p))
        .collect();
    let profiles: Vec<Profile> = vocab
        .values
        .par_iter()
        .map(|v| profile(v, &opts.normalizer, &placeholders, opts.long))
        .collect();
    let non_null_rows: u64 = vocab.counts.iter().sum();
    let by_rows = order_by_rows(vocab);
    let row_share = |rows: u64| {
        if non_null_rows == 0 {
            0.0
        } else {
            rows as f64 / non_null_rows as f64
        }
    };

    let mut blank = Tally::default();
    let mut ph = Placeholders {
        distinct: 0,
        rows: 0,
        values: Vec::new(),
    };
    for &i in &by_rows {
        let (p, rows) = (&profiles[i], vocab.counts[i]);
        if p.normalized.is_empty() {
            blank.distinct += 1;
            blank.rows += rows;
        } else if p.placeholder {
            ph.distinct += 1;
            ph.rows += rows;
            if ph.values.len() < opts.top {
                ph.values.push(ValueRows {
                    value: vocab.values[i].clone(),
                    rows,
                });
            }
        }
    }
    let top_values = by_rows
        .iter()
        .take(opts.top)
        .map(|&i| TopValue {
            value: vocab.values[i].clone(),
            rows: vocab.counts[i],
            share: row_share(vocab.counts[i]),
        })
        .collect();
    let top_shares = TOP_SHARES
        .iter()
        .map(|&top| {
            let rows: u64 = by_rows.iter().take(top).map(|&i| vocab.counts[i]).sum();
            TopShare {
                top,
                values: by_rows.len().min(top) as u64,
                rows,
                share: row_share(rows),
            }
        })
        .collect();
    let (shape_count, shapes) = shapes(vocab, &profiles, &by_rows, opts.top, row_share);
    let (token_count, tokens) = token_counts(vocab, &profiles, opts.top);
    SurveyReport {
        schema: SURVEY_SCHEMA,
        column: column.to_owned(),
        rows: vocab.rows(),
        null_rows: vocab.null_rows,
        distinct: vocab.distinct() as u64,
        blank,
        placeholders: ph,
        top_values,
        top_shares,
        shape_count,
        shapes,
        anomalies: anomalies(vocab, &profiles, &by_rows, opts.examples),
        token_count,
        tokens,
    }
}

/// Value indices, most rows first, then in byte order.
fn order_by_rows(vocab: &Vocabulary) -> Vec<usize> {
    let mut order: Vec<usize> = (0..vocab.distinct()).collect();
    order.par_sort_unstable_by(|&a, &b| {
        (Reverse(vocab.counts[a]), vocab.values[a].as_bytes())
            .cmp(&(Reverse(vocab.counts[b]), vocab.values[b].as_bytes()))
    });
    order
}

fn profile(
    value: &str,
    normalizer: &Normalizer,
    placeholders: &HashSet<String>,
    long: usize,
) -> Profile {
    let normalized = normalizer.apply(value);
    let blank = normalized.is_empty();
    let placeholder = !blank
        && (placeholders.contains(&normalized)
            || normalized
                .chars()
                .all(|c| matches!(class(c), CharClass::Other | CharClass::Space)));
    Profile {
        anomalies: if blank {
            0
        } else {
            value_anomalies(value, long)
        },
        shape: shape(value),
        normalized,
        placeholder,
    }
}

fn is_unusual_space(c: char) -> bool {
    (c.is_whitespace() && c != ' ' && !c.is_control()) || is_zero_width(c)
}

fn is_control(c: char) -> bool {
    c.is_control() || is_bidi_control(c)
}

/// The per-value anomalies of a non-blank value, as a bit set.
fn value_anomalies(value: &str, long: usize) -> u16 {
    let mut bits = 0u16;
    let mut set = |k: AnomalyKind| bits |= k.bit();
    if value.starts_with(char::is_whitespace) {
        set(AnomalyKind::LeadingSpace);
    }
    if value.ends_with(char::is_whitespace) {
        set(AnomalyKind::TrailingSpace);
    }
    let inner = value.trim_matches(char::is_whitespace);
    let mut previous_space = false;
    for c in inner.chars() {
        let space = c.is_whitespace();
        if space && previous_space {
            set(AnomalyKind::DoubledSpace);
        }
        previous_space = space;
    }
    if value.chars().any(is_unusual_space) {
        set(AnomalyKind::UnusualSpace);
    }
    if value.chars().any(is_control) {
        set(AnomalyKind::Control);
    }
    if value.contains('\u{fffd}') {
        set(AnomalyKind::Replacement);
    }
    if !value.is_ascii() {
        // Spaces are reported above; NFKC would also turn them into U+0020.
        let spaced: String = value
            .chars()
            .map(|c| if c.is_whitespace() { ' ' } else { c })
            .collect();
        if spaced.nfkc().ne(spaced.chars()) {
            set(AnomalyKind::Compatibility);
        }
    }
    if value.chars().count() > long {
        set(AnomalyKind::Long);
    }
    bits
}

fn shapes(
    vocab: &Vocabulary,
    profiles: &[Profile],
    by_rows: &[usize],
    top: usize,
    row_share: impl Fn(u64) -> f64,
) -> (u64, Vec<ShapeCount>) {
    // Walking values most rows first makes each shape's first value its example.
    let mut index: HashMap<&str, usize> = HashMap::new();
    let mut out: Vec<ShapeCount> = Vec::new();
    for &i in by_rows {
        let s = profiles[i].shape.as_str();
        let at = *index.entry(s).or_insert_with(|| {
            out.push(ShapeCount {
                shape: s.to_owned(),
                distinct: 0,
                rows: 0,
                share: 0.0,
                example: vocab.values[i].clone(),
            });
            out.len() - 1
        });
        out[at].distinct += 1;
        out[at].rows += vocab.counts[i];
    }
    let count = rank_top(&mut out, top, |s| (s.rows, s.distinct, &s.shape));
    for s in &mut out {
        s.share = row_share(s.rows);
    }
    (count, out)
}

/// Sort most rows first, then most distinct values, then by name, and keep
/// the first `top`; returns how many there were.
fn rank_top<T>(items: &mut Vec<T>, top: usize, key: impl Fn(&T) -> (u64, u64, &str)) -> u64 {
    items.sort_by(|a, b| {
        let ((ra, da, na), (rb, db, nb)) = (key(a), key(b));
        (Reverse(ra), Reverse(da), na).cmp(&(Reverse(rb), Reverse(db), nb))
    });
    let count = items.len() as u64;
    items.truncate(top);
    count
}

fn token_counts(vocab: &Vocabulary, profiles: &[Profile], top: usize) -> (u64, Vec<TokenCount>) {
    let counts = profiles
        .par_iter()
        .zip(vocab.counts.par_iter())
        .fold(HashMap::<&str, (u64, u64)>::new, |mut acc, (p, &rows)| {
            let mut seen: Vec<&str> = tokens(&p.normalized).collect();
            seen.sort_unstable();
            seen.dedup();
            for t in seen {
                let e = acc.entry(t).or_default();
                e.0 += 1;
                e.1 += rows;
            }
            acc
        })
        .reduce(HashMap::new, |mut a, b| {
            for (t, (d, r)) in b {
                let e = a.entry(t).or_default();
                e.0 += d;
                e.1 += r;
            }
            a
        });
    let distinct_values = vocab.distinct().max(1) as f64;
    let rows_total = vocab.counts.iter().sum::<u64>().max(1) as f64;
    let mut out: Vec<TokenCount> = counts
        .iter()
        .map(|(t, &(distinct, rows))| TokenCount {
            token: t.to_string(),
            distinct,
            distinct_share: distinct as f64 / distinct_values,
            rows,
            row_share: rows as f64 / rows_total,
        })
        .collect();
    let count = rank_top(&mut out, top, |t| (t.rows, t.distinct, &t.token));
    (count, out)
}

fn anomalies(
    vocab: &Vocabulary,
    profiles: &[Profile],
    by_rows: &[usize],
    examples: usize,
) -> Vec<Anomaly> {
    let mut out: Vec<Anomaly> = AnomalyKind::ALL
        .iter()
        .map(|&kind| Anomaly {
            kind,
            description: kind.describe(),
            distinct: 0,
            rows: 0,
            groups: kind.is_group().then_some(0),
            examples: Vec::new(),
        })
        .collect();
    for &i in by_rows {
        let bits = profiles[i].anomalies;
        for a in out.iter_mut().filter(|a| bits & a.kind.bit() != 0) {
            a.distinct += 1;
            a.rows += vocab.counts[i];
            if a.examples.len() < examples {
                a.examples.push(AnomalyExample {
                    value: vocab.values[i].clone(),
                    rows: vocab.counts[i],
                    variants: Vec::new(),
                });
            }
        }
    }
    // Case variants: same normalized value, different letter case once
    // white space and compatibility forms are set aside.
    let cased = |i: usize| -> String {
        vocab.values[i]
            .nfkc()
            .collect::<String>()
            .split_whitespace()
            .collect::<Vec<_>>()
            .join(" ")
    };
    let case_groups = variant_groups(
        vocab,
        profiles,
        by_rows,
        |i| profiles[i].normalized.clone(),
        cased,
    );
    fill_groups(
        &mut out[AnomalyKind::ALL.len() - 2],
        vocab,
        &case_groups,
        examples,
    );
    // Punctuation variants: same letters and digits, and the same digit
    // runs (`67` and `6.7` are different numbers), different normalized values.
    let punct_groups = variant_groups(
        vocab,
        profiles,
        by_rows,
        |i| {
            let n = &profiles[i].normalized;
            format!("{}\u{0}{}", digit_signature(n), letters_and_digits(n))
        },
        |i| profiles[i].normalized.clone(),
    );
    fill_groups(
        &mut out[AnomalyKind::ALL.len() - 1],
        vocab,
        &punct_groups,
        examples,
    );
    out
}

/// Groups of values (most rows first, groups by their first value's rank)
/// that share `key` but hold two or more different `form`s.
fn variant_groups(
    vocab: &Vocabulary,
    profiles: &[Profile],
    by_rows: &[usize],
    key: impl Fn(usize) -> String + Sync,
    form: impl Fn(usize) -> String + Sync,
) -> Vec<Vec<usize>> {
    let keyed: Vec<(String, String)> = by_rows
        .par_iter()
        .map(|&i| {
            if profiles[i].normalized.is_empty() {
                (String::new(), String::new())
            } else {
                (key(i), form(i))
            }
        })
        .collect();
    let mut groups: HashMap<&str, (Vec<usize>, HashSet<&str>)> = HashMap::new();
    let mut order: Vec<&str> = Vec::new();
    for (&i, (k, f)) in by_rows.iter().zip(&keyed) {
        if k.is_empty() {
            continue;
        }
        let g = groups.entry(k.as_str()).or_insert_with(|| {
            order.push(k.as_str());
            (Vec::new(), HashSet::new())
        });
        g.0.push(i);
        g.1.insert(f.as_str());
    }
    let _ = vocab;
    order
        .into_iter()
        .filter_map(|k| groups.remove(k))
        .filter(|(_, forms)| forms.len() > 1)
        .map(|(values, _)| values)
        .collect()
}

fn fill_groups(a: &mut Anomaly, vocab: &Vocabulary, groups: &[Vec<usize>], examples: usize) {
    a.groups = Some(groups.len() as u64);
    for g in groups {
        a.distinct += g.len() as u64;
        a.rows += g.iter().map(|&i| vocab.counts[i]).sum::<u64>();
    }
    a.examples = groups
        .iter()
        .take(examples)
        .map(|g| AnomalyExample {
            value: vocab.values[g[0]].clone(),
            rows: vocab.counts[g[0]],
            variants: g[1..]
                .iter()
                .take(4)
                .map(|&i| ValueRows {
                    value: vocab.values[i].clone(),
                    rows: vocab.counts[i],
                })
                .collect(),
        })
        .collect();
}

// ---------------------------------------------------------------------------
// Text
// ---------------------------------------------------------------------------

fn percent(share: f64) -> String {
    format!("{:.1}%", share * 100.0)
}

/// The survey as text for a terminal; values are escaped by [`shown`].
pub fn survey_text(r: &SurveyReport) -> String {
    let mut out = String::new();
    let non_null = r.rows - r.null_rows;
    let _ = writeln!(out, "column {}", shown(&r.column));
    let _ = writeln!(
        out,
        "rows {}  null {}  distinct {}  blank {} rows ({} distinct)  placeholder-like {} rows ({} distinct)",
        thousands(r.rows),
        thousands(r.null_rows),
        thousands(r.distinct),
        thousands(r.blank.rows),
        thousands(r.blank.distinct),
        thousands(r.placeholders.rows),
        thousands(r.placeholders.distinct),
    );
    if !r.placeholders.values.is_empty() {
        let list: Vec<String> = r
            .placeholders
            .values
            .iter()
            .map(|v| format!("{} {}", shown(&v.value), thousands(v.rows)))
            .collect();
        let _ = writeln!(out, "placeholders: {}", list.join(", "));
    }
    let shares: Vec<String> = r
        .top_shares
        .iter()
        .map(|t| format!("top {} {}", thousands(t.top as u64), percent(t.share)))
        .collect();
    let _ = writeln!(
        out,
        "share of non-null rows ({}) covered by the most frequent values: {}",
        thousands(non_null),
        shares.join("  ")
    );

    let _ = writeln!(
        out,
        "\nmost frequent values ({} of {})",
        r.top_values.len(),
        thousands(r.distinct)
    );
    for v in &r.top_values {
        let _ = writeln!(
            out,
            "  {:>9}  {:>6}  {}",
            thousands(v.rows),
            percent(v.share),
            shown(&v.value)
        );
    }

    let _ = writeln!(
        out,
        "\nshapes ({} of {}; 9 digit, a/A/Aa/aA letters by case, space any white space)",
        r.shapes.len(),
        thousands(r.shape_count)
    );
    let width = r
        .shapes
        .iter()
        .map(|s| shown(&s.shape).chars().count())
        .max()
        .unwrap_or(0);
    for s in &r.shapes {
        let _ = writeln!(
            out,
            "  {:>9}  {:>6}  {:>7} distinct  {:<width$}  e.g. {}",
            thousands(s.rows),
            percent(s.share),
            thousands(s.distinct),
            shown(&s.shape),
            shown(&s.example),
        );
    }

    let found: Vec<&Anomaly> = r.anomalies.iter().filter(|a| a.distinct > 0).collect();
    if found.is_empty() {
        let _ = writeln!(out, "\nanomalies: none");
    } else {
        let _ = writeln!(out, "\nanomalies");
    }
    for a in found {
        let groups = a
            .groups
            .map(|g| format!(" in {} groups", thousands(g)))
            .unwrap_or_default();
        let _ = writeln!(
            out,
            "  {}: {} distinct{groups}, {} rows ({})",
            serde_json::to_value(a.kind)
                .ok()
                .and_then(|v| v.as_str().map(str::to_owned))
                .unwrap_or_default(),
            thousands(a.distinct),
            thousands(a.rows),
            a.description
        );
        for e in &a.examples {
            let _ = write!(out, "      {} ({})", shown(&e.value), thousands(e.rows));
            for v in &e.variants {
                let _ = write!(out, "  ~ {} ({})", shown(&v.value), thousands(v.rows));
            }
            out.push('\n');
        }
    }

    let _ = writeln!(
        out,
        "\ntokens ({} of {}; after normalization, split at letter/digit/punctuation boundaries)",
        r.tokens.len(),
        thousands(r.token_count)
    );
    for t in &r.tokens {
        let _ = writeln!(
            out,
            "  {:>9} rows {:>6}  {:>7} distinct {:>6}  {}",
            thousands(t.rows),
            percent(t.row_share),
            thousands(t.distinct),
            percent(t.distinct_share),
            shown(&t.token)
        );
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn run(rows: &[Option<&str>]) -> SurveyReport {
        survey(
            &Vocabulary::build(rows.iter().copied()),
            "c",
            &SurveyOptions::default(),
        )
    }

    fn anomaly(r: &SurveyReport, kind: AnomalyKind) -> &Anomaly {
        r.anomalies.iter().find(|a| a.kind == kind).unwrap()
    }

    #[test]
    fn counts_rows_nulls_blanks_and_placeholders() {
        let r = run(&[
            Some("a"),
            None,
            Some(""),
            Some("  "),
            Some("N/A"),
            Some("n/a"),
            Some("---"),
            Some("?"),
            Some("unknown"),
        ]);
        assert_eq!((r.rows, r.null_rows, r.distinct), (9, 1, 8));
        assert_eq!(
            r.blank,
            Tally {
                distinct: 2,
                rows: 2
            }
        );
        // N/A, n/a, unknown from the list; --- and ? are punctuation only.
        assert_eq!((r.placeholders.distinct, r.placeholders.rows), (5, 5));
    }

    #[test]
    fn top_shares_are_of_non_null_rows() {
        let mut rows: Vec<Option<&str>> = vec![None; 10];
        rows.extend(std::iter::repeat_n(Some("a"), 30));
        let names: Vec<String> = (0..20).map(|i| format!("v{i}")).collect();
        rows.extend(names.iter().map(|n| Some(n.as_str())));
        let r = run(&rows);
        assert_eq!(r.top_shares[0].top, 10);
        assert_eq!(r.top_shares[0].rows, 30 + 9);
        assert!((r.top_shares[0].share - 39.0 / 50.0).abs() < 1e-12);
        assert_eq!(r.top_shares[1].values, 21);
        assert_eq!(r.top_shares[1].share, 1.0);
    }

    #[test]
    fn space_anomalies() {
        let r = run(&[
            Some(" lead"),
            Some("trail "),
            Some("dou  bled"),
            Some("no\u{a0}break"),
            Some("ok value"),
        ]);
        assert_eq!(anomaly(&r, AnomalyKind::LeadingSpace).distinct, 1);
        assert_eq!(
            anomaly(&r, AnomalyKind::TrailingSpace).examples[0].value,
            "trail "
        );
        assert_eq!(
            anomaly(&r, AnomalyKind::DoubledSpace).examples[0].value,
            "dou  bled"
        );
        assert_eq!(
            anomaly(&r, AnomalyKind::UnusualSpace).examples[0].value,
            "no\u{a0}break"
        );
        // A no-break space is an unusual space, not a compatibility character.
        assert_eq!(anomaly(&r, AnomalyKind::Compatibility).distinct, 0);
    }

    #[test]
    fn compatibility_control_replacement_long() {
        let long = "x".repeat(81);
        let r = run(&[
            Some("\u{ff16} spd"),
            Some("\u{fb01}lter"),
            Some("a\tb"),
            Some("bad \u{fffd}"),
            Some(&long),
            Some("plain"),
        ]);
        // UAX #15: U+FF16 FULLWIDTH DIGIT SIX and U+FB01 LATIN SMALL LIGATURE FI
        // have compatibility decompositions, so NFKC changes them.
        assert_eq!(anomaly(&r, AnomalyKind::Compatibility).distinct, 2);
        assert_eq!(anomaly(&r, AnomalyKind::Control).examples[0].value, "a\tb");
        assert_eq!(anomaly(&r, AnomalyKind::Replacement).distinct, 1);
        assert_eq!(anomaly(&r, AnomalyKind::Long).distinct, 1);
    }

    #[test]
    fn case_and_punctuation_variants() {
        let r = run(&[
            Some("6 spd auto"),
            Some("6 spd auto"),
            Some("6 SPD Auto"),
            Some("6 spd  auto"),
            Some("4-cyl"),
            Some("4 cyl"),
            Some("4cyl"),
            Some("cvt"),
        ]);
        let case = anomaly(&r, AnomalyKind::CaseVariants);
        assert_eq!((case.groups, case.distinct, case.rows), (Some(1), 3, 4));
        assert_eq!(case.examples[0].value, "6 spd auto");
        assert_eq!(case.examples[0].variants.len(), 2);
        let punct = anomaly(&r, AnomalyKind::PunctuationVariants);
        assert_eq!((punct.groups, punct.distinct), (Some(1), 3));
    }

    #[test]
    fn punctuation_variants_keep_numbers_apart() {
        // `67` and `6.7` differ only by a period, but name different numbers.
        let r = run(&[
            Some("67 hp"),
            Some("6.7 hp"),
            Some("6,7 hp"),
            Some("2.5-ton"),
            Some("2.5 ton"),
        ]);
        let punct = anomaly(&r, AnomalyKind::PunctuationVariants);
        // {6.7 hp, 6,7 hp} (the same digits) and {2.5-ton, 2.5 ton}.
        assert_eq!(
            (punct.groups, punct.distinct),
            (Some(2), 4),
            "{:?}",
            punct.examples
        );
        let shown = format!("{:?}", punct.examples);
        assert!(!shown.contains("\"67 hp\""), "{shown}");
    }

    #[test]
    fn tokens_count_values_and_rows() {
        let r = run(&[
            Some("6 spd auto"),
            Some("6 spd auto"),
            Some("6-SPD manual"),
            Some("cvt"),
            None,
        ]);
        let spd = r.tokens.iter().find(|t| t.token == "spd").unwrap();
        assert_eq!((spd.distinct, spd.rows), (2, 3));
        assert!((spd.distinct_share - 2.0 / 3.0).abs() < 1e-12);
        assert!((spd.row_share - 0.75).abs() < 1e-12);
        assert_eq!(r.tokens[0].token, "6"); // 3 rows, ties broken by distinct then text
    }

    #[test]
    fn shapes_with_examples() {
        let r = run(&[
            Some("PMP-0750-3T"),
            Some("FLT-1204-3T"),
            Some("FLT-1204-3T"),
            Some("pmp 0750 3t"),
        ]);
        assert_eq!(r.shapes[0].shape, "A-9999-9A");
        assert_eq!((r.shapes[0].distinct, r.shapes[0].rows), (2, 3));
        assert_eq!(r.shapes[0].example, "FLT-1204-3T");
        assert_eq!(r.shape_count, 2);
    }
}
