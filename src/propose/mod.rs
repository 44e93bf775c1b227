//! Drafting a ruleset from a column's vocabulary.
//!
//! [`propose`] mines the distinct values of a column and returns a [`Draft`]:
//! proposed rules of every kind, each with its support (the distinct values
//! and rows it was found on) and a few example values. [`Draft::to_toml`]
//! writes it as a commented ruleset that loads in `check` and `apply`
//! unchanged, and [`Draft::overlaps`] says where two proposals read the same
//! text. What is mined:
//!
//! - **numbers next to a marker** (`6 spd`, `4-cyl`, `v8`, `16F`, `5x1`,
//!   `12/12`, `(6)`): marker spellings that are near-duplicates are grouped
//!   (`spd`, `speed`, `sp`), and groups that never describe the same value
//!   twice but read numbers distributed alike are one concept (`6 spd` /
//!   `16F/16R` / `5x1` are all forward gears): one `[[count]]` per concept;
//! - **numbers followed by a unit** of the built-in table ([`units`]): one
//!   `[[measure]]` per quantity, converted to the unit written most often;
//! - **words** in a useful share of rows, typos and abbreviations grouped
//!   with the clustering distances: words that are mutually exclusive (a
//!   value carries one of `manual` / `automatic` / `cvt`, rarely two) become
//!   one `[[label]]` with a case each; the rest become `[[flag]]`s;
//! - **near-duplicate values** (token-set clusters) as a label `map`;
//! - in a **code column** ([`codes`]: `PMP-0750-CI`, `pmp.750.ci`), a label
//!   per letter position of the codes and a `map` joining their spellings;
//!   the other miners read only the values that are not codes.
//!
//! Everything is computed once per distinct value, weighted by rows.
//!
//! ```
//! use descry::propose::{propose, ProposeOptions};
//! use descry::{Ruleset, Vocabulary};
//!
//! let mut rows = Vec::new();
//! for (value, n) in [("6 spd manual", 40), ("8 speed auto", 30), ("6-spd automatic", 20),
//!                    ("4 spd manual", 25), ("6sp manual", 10), ("8 spd auto", 15)] {
//!     rows.extend(std::iter::repeat(Some(value)).take(n));
//! }
//! let vocab = Vocabulary::build(rows);
//! let draft = propose(&vocab, "transmission", &ProposeOptions::default()).unwrap();
//! let toml = draft.to_toml();
//! let rules = Ruleset::from_toml(&toml, "draft.toml").unwrap();
//! let speed = rules.features.iter().find(|f| f.rule.kind() == "count").unwrap();
//! assert_eq!(speed.name, "speed");
//! ```

mod codes;
mod draft;
mod markers;
pub mod units;
mod words;

use rayon::prelude::*;
use serde::Serialize;

use crate::error::RulesetError;
use crate::normalize::Normalizer;
use crate::numbers::DecimalMark;
use crate::ruleset::Ruleset;
use crate::survey::DEFAULT_PLACEHOLDERS;
use crate::vocabulary::Vocabulary;

pub use draft::{Overlap, PROPOSE_SCHEMA};

/// Which rule kinds to propose.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct Kinds {
    pub flag: bool,
    pub count: bool,
    pub measure: bool,
    pub label: bool,
    pub map: bool,
}

impl Default for Kinds {
    fn default() -> Self {
        Kinds {
            flag: true,
            count: true,
            measure: true,
            label: true,
            map: true,
        }
    }
}

impl Kinds {
    /// Parse a comma-separated list such as `count,measure,flag`.
    pub fn parse(list: &str) -> Result<Kinds, String> {
        let mut kinds = Kinds {
            flag: false,
            count: false,
            measure: false,
            label: false,
            map: false,
        };
        for word in list.split(',').map(str::trim).filter(|w| !w.is_empty()) {
            match word {
                "flag" | "flags" => kinds.flag = true,
                "count" | "counts" => kinds.count = true,
                "measure" | "measures" => kinds.measure = true,
                "label" | "labels" => kinds.label = true,
                "map" | "maps" => kinds.map = true,
                other => {
                    return Err(format!(
                    "unknown rule kind {other:?}; the kinds are flag, count, measure, label, map"
                ))
                }
            }
        }
        if kinds
            == (Kinds {
                flag: false,
                count: false,
                measure: false,
                label: false,
                map: false,
            })
        {
            return Err("name at least one kind: flag, count, measure, label, map".to_owned());
        }
        Ok(kinds)
    }
}

/// How to mine a vocabulary.
#[derive(Debug, Clone)]
pub struct ProposeOptions {
    /// Normalization of the values, written into the draft's `[normalize]`.
    pub normalizer: Normalizer,
    /// A flag, label case or concept must fire on at least this share of the
    /// rows considered (non-blank, non-placeholder rows).
    pub min_share: f64,
    /// ... and on at most this share (a word on every row tells nothing).
    pub max_share: f64,
    /// At most this many rules; the best supported are kept.
    pub max_rules: usize,
    pub kinds: Kinds,
    /// Example values written above each rule.
    pub examples: usize,
    /// At most this many entries in the proposed `map`.
    pub max_map: usize,
    /// `prefix` of the draft.
    pub prefix: String,
    /// Rule names already taken (by the ruleset being extended).
    pub taken: Vec<String>,
    /// The column names of the table the draft is for: no rule writes a
    /// feature column of one of these names (`prefix` + name); such a rule
    /// is named `name_2` instead, and says why.
    pub columns: Vec<String>,
    /// Placeholder spellings (normalized): not mined.
    pub placeholders: Vec<String>,
    /// How numbers are written (`4.5` or `4,5`): the ruleset's `decimal`.
    pub decimal: DecimalMark,
}

impl Default for ProposeOptions {
    fn default() -> Self {
        ProposeOptions {
            normalizer: Normalizer::default(),
            min_share: 0.005,
            max_share: 0.95,
            max_rules: 40,
            kinds: Kinds::default(),
            examples: 3,
            max_map: 100,
            prefix: String::new(),
            taken: Vec::new(),
            columns: Vec::new(),
            placeholders: DEFAULT_PLACEHOLDERS.iter().map(|s| s.to_string()).collect(),
            decimal: DecimalMark::Point,
        }
    }
}

/// A proposed ruleset.
#[derive(Debug, Clone, Serialize)]
pub struct Draft {
    pub column: String,
    pub prefix: String,
    #[serde(skip)]
    pub normalizer: Normalizer,
    /// Distinct values and rows mined (non-blank, non-placeholder).
    pub distinct_considered: u64,
    pub rows_considered: u64,
    pub proposals: Vec<Proposal>,
    /// Pairs of rules that read the same text of some values.
    pub overlaps: Vec<Overlap>,
    /// The placeholder values found (normalized), most rows first: written
    /// into the draft's `placeholders`.
    pub placeholders: Vec<String>,
}

/// One proposed rule.
#[derive(Debug, Clone, Serialize)]
pub struct Proposal {
    pub name: String,
    pub rule: ProposedRule,
    /// Distinct values and rows the mined evidence came from.
    pub distinct: u64,
    pub rows: u64,
    /// Original spellings of a few values it was found on, most rows first.
    pub examples: Vec<String>,
    /// Why it is proposed: groupings, ranges, units (written as comments).
    pub notes: Vec<String>,
}

/// The rule itself, in the ruleset format's terms.
#[derive(Debug, Clone, Serialize)]
#[serde(tag = "kind", rename_all = "lowercase")]
pub enum ProposedRule {
    Flag {
        any: Vec<String>,
        /// A pattern instead of words (the bound flags of a measure).
        #[serde(skip_serializing_if = "Option::is_none")]
        pattern: Option<String>,
    },
    Count {
        pattern: String,
        range: (i64, i64),
    },
    Measure {
        pattern: String,
        unit: String,
        units: Vec<UnitFactor>,
        /// `"sum"` for compound quantities (`5 ft 6 in`); the ruleset's
        /// default (`"first"`) otherwise.
        #[serde(skip_serializing_if = "Option::is_none")]
        combine: Option<String>,
        /// The pattern needs look-arounds (`fancy = true`).
        #[serde(skip_serializing_if = "std::ops::Not::not")]
        fancy: bool,
    },
    Label {
        cases: Vec<(String, Vec<String>)>,
        default: Option<String>,
    },
    Map {
        map: Vec<(String, String)>,
    },
    /// A label of one letter position of a code column: `(label, pattern)`
    /// cases, no default.
    Segment {
        cases: Vec<(String, String)>,
    },
}

impl ProposedRule {
    pub fn kind(&self) -> &'static str {
        match self {
            ProposedRule::Flag { .. } => "flag",
            ProposedRule::Count { .. } => "count",
            ProposedRule::Measure { .. } => "measure",
            ProposedRule::Label { .. }
            | ProposedRule::Map { .. }
            | ProposedRule::Segment { .. } => "label",
        }
    }

    /// The order kinds appear in a draft.
    fn rank(&self) -> u8 {
        match self {
            ProposedRule::Flag { .. } => 0,
            ProposedRule::Count { .. } => 1,
            ProposedRule::Measure { .. } => 2,
            ProposedRule::Label { .. } | ProposedRule::Segment { .. } => 3,
            ProposedRule::Map { .. } => 4,
        }
    }
}

/// A unit spelling of a measure and its factor to the target unit.
#[derive(Debug, Clone, Serialize)]
pub struct UnitFactor {
    pub spelling: String,
    pub factor: f64,
    /// The unit's name and the source of its factor.
    pub unit: String,
    pub source: String,
    /// Written in the mined values (otherwise: another spelling of the
    /// table for the same quantity, ready for the next data drop).
    pub seen: bool,
}

/// The values mined: non-blank, non-placeholder, normalized once.
pub(crate) struct Corpus<'a> {
    pub vocab: &'a Vocabulary,
    /// Vocabulary index of each entry.
    pub index: Vec<u32>,
    pub normalized: Vec<String>,
    pub rows: Vec<u64>,
    pub total_rows: u64,
    /// Placeholder forms found, with their rows.
    pub placeholders: Vec<(String, u64)>,
}

impl Corpus<'_> {
    pub fn len(&self) -> usize {
        self.index.len()
    }

    /// Rows of a sorted, deduplicated set of entries.
    pub fn rows_of(&self, set: &[u32]) -> u64 {
        set.iter().map(|&e| self.rows[e as usize]).sum()
    }

    /// The original spellings of the entries with the most rows.
    pub fn examples(&self, set: &[u32], n: usize) -> Vec<String> {
        let mut best: Vec<u32> = set.to_vec();
        best.sort_by(|&a, &b| {
            self.rows[b as usize]
                .cmp(&self.rows[a as usize])
                .then_with(|| self.original(a).cmp(self.original(b)))
        });
        best.truncate(n);
        best.into_iter()
            .map(|e| self.original(e).to_owned())
            .collect()
    }

    pub fn original(&self, entry: u32) -> &str {
        &self.vocab.values[self.index[entry as usize] as usize]
    }
}

/// Rows shared by two sorted sets of entries.
pub(crate) fn shared_rows(corpus: &Corpus, a: &[u32], b: &[u32]) -> u64 {
    let (mut i, mut j, mut rows) = (0, 0, 0);
    while i < a.len() && j < b.len() {
        match a[i].cmp(&b[j]) {
            std::cmp::Ordering::Less => i += 1,
            std::cmp::Ordering::Greater => j += 1,
            std::cmp::Ordering::Equal => {
                rows += corpus.rows[a[i] as usize];
                i += 1;
                j += 1;
            }
        }
    }
    rows
}

/// The union of two sorted sets.
pub(crate) fn union(a: &[u32], b: &[u32]) -> Vec<u32> {
    let mut out = Vec::with_capacity(a.len() + b.len());
    out.extend_from_slice(a);
    out.extend_from_slice(b);
    out.sort_unstable();
    out.dedup();
    out
}

fn is_placeholder(normalized: &str, placeholders: &hashbrown::HashSet<&str>) -> bool {
    placeholders.contains(normalized) || !normalized.chars().any(char::is_alphanumeric)
}

/// Mine `vocab` (the distinct values of `column`) for proposals, and note
/// where two proposals read the same text.
///
/// Errors only if the draft does not compile, which would be a bug.
pub fn propose(
    vocab: &Vocabulary,
    column: &str,
    opts: &ProposeOptions,
) -> Result<Draft, RulesetError> {
    let corpus = Corpus::new(vocab, opts);
    let mut draft = mine(&corpus, column, opts);
    let values: Vec<(&str, u64, &str)> = (0..corpus.len())
        .map(|e| {
            (
                corpus.normalized[e].as_str(),
                corpus.rows[e],
                corpus.original(e as u32),
            )
        })
        .collect();
    let mut rules = Ruleset::from_toml(&draft.to_toml(), "<draft>")?;
    if draft::widen_ranges(&mut draft, &rules, &values) {
        rules = Ruleset::from_toml(&draft.to_toml(), "<draft>")?;
    }
    if draft::tested_support(&mut draft, &rules, &values, opts.examples) {
        rules = Ruleset::from_toml(&draft.to_toml(), "<draft>")?;
    }
    draft.overlaps = draft::find_overlaps(&rules, &|_| true, &values);
    let overlaps = draft.overlaps.clone();
    draft.note_overlaps(&overlaps);
    Ok(draft)
}

/// Proposals for what an existing ruleset leaves unmatched.
#[derive(Debug, Clone, Serialize)]
pub struct Extension {
    pub draft: Draft,
    /// Distinct values and rows no existing rule fires on (blanks left out).
    pub unmatched_distinct: u64,
    pub unmatched_rows: u64,
    /// The existing file, byte for byte, with the proposals appended.
    #[serde(skip)]
    pub text: String,
}

/// Mine the values on which no rule of `existing` fires, and append the
/// proposals to `existing_text` (the file `existing` was read from), which
/// is kept byte for byte. Support bounds are shares of those values' rows.
/// The normalization is the existing ruleset's; new names avoid its names.
pub fn propose_more(
    vocab: &Vocabulary,
    column: &str,
    existing: &Ruleset,
    existing_text: &str,
    opts: &ProposeOptions,
) -> Result<Extension, RulesetError> {
    let eval = existing.evaluate_all(&vocab.values);
    let mut rest = Vocabulary::default();
    for (i, outcomes) in eval.outcomes.iter().enumerate() {
        // Blank values and placeholders are left out, as `check` leaves
        // them out of the unmatched values.
        let considered =
            existing.kind_of(&eval.normalized[i]) == crate::ruleset::ValueKind::Considered;
        if considered && !outcomes.iter().any(|o| o.fired) {
            rest.values.push(vocab.values[i].clone());
            rest.counts.push(vocab.counts[i]);
        }
    }
    let mut opts = opts.clone();
    opts.normalizer = existing.normalizer.clone();
    opts.prefix = existing.prefix.clone();
    opts.decimal = existing.decimal;
    opts.taken = existing.features.iter().map(|f| f.name.clone()).collect();
    let corpus = Corpus::new(&rest, &opts);
    let mut draft = mine(&corpus, column, &opts);
    let mut base = existing_text.to_owned();
    if !base.is_empty() && !base.ends_with('\n') {
        base.push('\n');
    }
    let header = format!(
        "\n# === Added by `descry propose --update` for the values the rules above leave\n\
         # === unmatched: {} distinct values, {} rows. Nothing above was changed.\n",
        crate::render::thousands(rest.values.len() as u64),
        crate::render::thousands(rest.counts.iter().sum()),
    );
    let mut text = existing_text.to_owned();
    let normalized: Vec<String> = vocab
        .values
        .par_iter()
        .map(|v| existing.normalizer.apply(v))
        .collect();
    let values: Vec<(&str, u64, &str)> = (0..vocab.values.len())
        .filter(|&i| existing.kind_of(&normalized[i]) == crate::ruleset::ValueKind::Considered)
        .map(|i| {
            (
                normalized[i].as_str(),
                vocab.counts[i],
                vocab.values[i].as_str(),
            )
        })
        .collect();
    let compile = |draft: &Draft| {
        Ruleset::from_toml(
            &format!("{base}{header}{}", draft.rules_toml()),
            &existing.file,
        )
    };
    if !draft.proposals.is_empty() {
        let mut rules = compile(&draft)?;
        if draft::widen_ranges(&mut draft, &rules, &values) {
            rules = compile(&draft)?;
        }
        draft::tested_support(&mut draft, &rules, &values, opts.examples);
    }
    // Support is tested on every value, so shares are of the whole column.
    draft.distinct_considered = values.len() as u64;
    draft.rows_considered = values.iter().map(|v| v.1).sum();
    if !draft.proposals.is_empty() {
        let rules = compile(&draft)?;
        let fresh: hashbrown::HashSet<String> =
            draft.proposals.iter().map(|p| p.name.clone()).collect();
        draft.overlaps = draft::find_overlaps(&rules, &|name: &str| fresh.contains(name), &values);
        let overlaps = draft.overlaps.clone();
        draft.note_overlaps(&overlaps);
        text = format!("{base}{header}{}", draft.rules_toml());
    }
    Ok(Extension {
        unmatched_distinct: rest.values.len() as u64,
        unmatched_rows: rest.counts.iter().sum(),
        draft,
        text,
    })
}

impl<'a> Corpus<'a> {
    fn new(vocab: &'a Vocabulary, opts: &ProposeOptions) -> Corpus<'a> {
        let placeholder_forms: Vec<String> = opts
            .placeholders
            .iter()
            .map(|p| opts.normalizer.apply(p))
            .collect();
        let placeholders: hashbrown::HashSet<&str> =
            placeholder_forms.iter().map(String::as_str).collect();
        let normalized: Vec<String> = vocab
            .values
            .par_iter()
            .map(|v| opts.normalizer.apply(v))
            .collect();
        let mut corpus = Corpus {
            vocab,
            index: Vec::new(),
            normalized: Vec::new(),
            rows: Vec::new(),
            total_rows: 0,
            placeholders: Vec::new(),
        };
        let mut found: hashbrown::HashMap<String, u64> = hashbrown::HashMap::new();
        for (i, form) in normalized.into_iter().enumerate() {
            if form.is_empty() {
                continue;
            }
            if is_placeholder(&form, &placeholders) {
                *found.entry(form).or_default() += vocab.counts[i];
                continue;
            }
            corpus.index.push(i as u32);
            corpus.rows.push(vocab.counts[i]);
            corpus.total_rows += vocab.counts[i];
            corpus.normalized.push(form);
        }
        corpus.placeholders = found.into_iter().collect();
        corpus
            .placeholders
            .sort_by(|a, b| b.1.cmp(&a.1).then_with(|| a.0.cmp(&b.0)));
        corpus
    }
}

fn mine(corpus: &Corpus, column: &str, opts: &ProposeOptions) -> Draft {
    // --- code columns (codes.rs): codes are read by position; the miners
    // below read only the values that are not codes.
    let codes = codes::read(corpus);
    let rest = codes.as_ref().map(|c| c.rest(corpus));
    let mined = rest.as_ref().unwrap_or(corpus);
    let mut proposals = Vec::new();
    if let Some(codes) = codes.as_ref().filter(|_| opts.kinds.label) {
        proposals.extend(codes.segment_labels(corpus, column, opts));
    }
    // --- end of code columns
    let words = words::WordIndex::build(mined);
    let marks = markers::mine(mined, &words, opts);
    if opts.kinds.count {
        proposals.extend(marks.counts);
    }
    if opts.kinds.measure {
        proposals.extend(marks.measures);
    }
    if opts.kinds.flag || opts.kinds.label {
        proposals.extend(words::flags_and_labels(
            mined,
            &words,
            &marks.marker_words,
            column,
            opts,
        ));
    }
    if opts.kinds.map {
        let clusters = draft::map_from_clusters(mined, column, opts);
        proposals.extend(match &codes {
            Some(codes) => codes.canonical(corpus, clusters, opts),
            None => clusters,
        });
    }

    // Keep the best supported, then order by kind as a person would write them.
    proposals.sort_by(|a, b| b.rows.cmp(&a.rows).then_with(|| a.name.cmp(&b.name)));
    proposals.truncate(opts.max_rules);
    proposals.sort_by(|a, b| {
        a.rule
            .rank()
            .cmp(&b.rule.rank())
            .then_with(|| b.rows.cmp(&a.rows))
            .then_with(|| a.name.cmp(&b.name))
    });
    unique_names(&mut proposals, &opts.taken, &opts.prefix, &opts.columns);

    Draft {
        column: column.to_owned(),
        prefix: opts.prefix.clone(),
        normalizer: opts.normalizer.clone(),
        distinct_considered: corpus.len() as u64,
        rows_considered: corpus.total_rows,
        proposals,
        overlaps: Vec::new(),
        placeholders: corpus.placeholders.iter().map(|(p, _)| p.clone()).collect(),
    }
}

/// A name for a rule: lower-case letters, digits and `_`, starting with a
/// letter.
pub fn rule_name(text: &str) -> String {
    let mut name = String::new();
    for c in text.chars() {
        if c.is_ascii_alphanumeric() {
            name.push(c.to_ascii_lowercase());
        } else if !name.ends_with('_') && !name.is_empty() {
            name.push('_');
        }
    }
    let name = name.trim_end_matches('_').to_owned();
    match name.chars().next() {
        None => "rule".to_owned(),
        Some(c) if c.is_ascii_digit() => format!("r_{name}"),
        Some(_) => name,
    }
}

/// Give each proposal a name no other rule has (`name_2`, `name_3`, ...)
/// and whose feature column (`prefix` + name) is none of the table's
/// `columns`.
fn unique_names(proposals: &mut [Proposal], taken: &[String], prefix: &str, columns: &[String]) {
    let mut used: hashbrown::HashSet<String> = taken.iter().cloned().collect();
    let column_taken = |name: &str| columns.iter().any(|c| *c == format!("{prefix}{name}"));
    for p in proposals.iter_mut() {
        let base = p.name.clone();
        let mut n = 2;
        while column_taken(&p.name) || !used.insert(p.name.clone()) {
            p.name = format!("{base}_{n}");
            n += 1;
        }
        if column_taken(&base) {
            p.notes.push(format!(
                "named {}: the table already has a column \"{prefix}{base}\"",
                p.name
            ));
        }
    }
}
