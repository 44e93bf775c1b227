//! descry turns messy free-text categorical columns into compact model
//! features: counts, flags, measures in one unit and family labels.
//!
//! The tree follows the pipeline, one folder per stage:
//!
//! 1. [`table`]: reading a table (CSV, Parquet, Arrow IPC, NDJSON) with the
//!    described column as text ([`read`]);
//! 2. [`engine`]: the column's distinct values, their row counts and each
//!    row's value code ([`vocabulary`]); each distinct value normalized once
//!    ([`normalize`]: NFKC, case, white space); the ruleset's rules
//!    ([`ruleset`], [`pattern`], [`numbers`]) run once per distinct value,
//!    never per row ([`evaluate`]);
//! 3. [`report`]: coverage, unmatched values, conflicts, example results
//!    (rendered as text by [`render`] or serialized as JSON);
//!    [`encode`]: per-value results gathered to rows in compact types, and
//!    [`pipeline`], which does both for a table arriving in batches;
//! 4. [`write`]: the output table, written atomically.
//!
//! The engine has no command-line, terminal or file code. Before rules
//! exist, [`profile`] surveys a column ([`survey`]) and clusters its
//! near-duplicate values ([`cluster`]), and [`propose`] drafts a ruleset from
//! its vocabulary. [`demo`] writes the demo data set.
//!
//! ```
//! use descry::{CoverageReport, Ruleset, Vocabulary};
//!
//! let rules = Ruleset::from_toml(r#"
//!     [[count]]
//!     name = "gears"
//!     pattern = '({int})\s*-?\s*(spd|speed)'
//!     range = [1, 30]
//!
//!     [[flag]]
//!     name = "automatic"
//!     any = ["auto", "automatic"]
//! "#, "<inline>").unwrap();
//!
//! let rows = [Some("6 SPD Auto"), Some("6-speed manual"), None, Some("6 SPD Auto"), Some("cvt")];
//! let vocab = Vocabulary::build(rows);
//! let eval = rules.evaluate_all(&vocab.values);   // 3 distinct values, 3 evaluations
//! let report = CoverageReport::build(&rules, "transmission", &vocab, &eval);
//!
//! assert_eq!(vocab.distinct(), 3);
//! assert_eq!(report.coverage.rows_covered, 3);      // "cvt" is unmatched
//! assert_eq!(report.unmatched[0].value, "cvt");
//! ```

pub mod demo;
pub mod engine;
pub mod error;
pub mod profile;
pub mod propose;
pub mod report;
pub mod table;

// The stages' modules keep their paths at the crate root.
pub use demo as sample;
pub use engine::{evaluate, normalize, numbers, pattern, ruleset, vocabulary};
pub use profile::{cluster, shape, survey};
pub use report::render;
pub use table::{encode, pipeline, read, write};

pub use error::{Error, RulesetError};
pub use evaluate::{Cell, Evaluation, Issue, Outcome};
pub use normalize::Normalizer;
pub use report::CoverageReport;
pub use ruleset::Ruleset;
pub use vocabulary::Vocabulary;
