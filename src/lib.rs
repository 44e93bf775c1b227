//! descry turns messy free-text categorical columns into compact model
//! features: counts, flags, measures in one unit and family labels.
//!
//! The pipeline, one module per stage:
//!
//! 1. [`read`]: a table (CSV, Parquet, Arrow IPC, NDJSON) with the described
//!    column as text;
//! 2. [`vocabulary`]: the column's distinct values, their row counts, and
//!    each row's value code;
//! 3. [`normalize`]: each distinct value normalized once (NFKC, case,
//!    white space);
//! 4. [`ruleset`] and [`evaluate`]: the ruleset's rules run once per distinct
//!    value, never per row;
//! 5. [`report`]: coverage, unmatched values, conflicts, example results
//!    (rendered by [`render`] or serialized as JSON);
//!    [`encode`]: per-value results gathered to rows in compact types;
//! 6. [`write`]: the output table, written atomically.
//!
//! The engine (stages 2 to 5) has no command-line, terminal or file code.
//! Before rules exist, [`survey`] and [`cluster`] profile a column and
//! [`propose`] drafts a ruleset from its vocabulary.
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

pub mod cluster;
pub mod encode;
pub mod error;
pub mod evaluate;
pub mod normalize;
pub mod numbers;
pub mod pattern;
pub mod pipeline;
pub mod propose;
pub mod read;
pub mod render;
pub mod report;
pub mod ruleset;
pub mod sample;
pub mod shape;
pub mod survey;
pub mod vocabulary;
pub mod write;

pub use error::{Error, RulesetError};
pub use evaluate::{Cell, Evaluation, Issue, Outcome};
pub use normalize::Normalizer;
pub use report::CoverageReport;
pub use ruleset::Ruleset;
pub use vocabulary::Vocabulary;
