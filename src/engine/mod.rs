//! The rule engine: a column's vocabulary, the normalized form of each
//! distinct value, and the compiled ruleset evaluated once per value.
//! Nothing here reads or writes files or knows about the command line.

pub mod evaluate;
pub mod normalize;
pub mod numbers;
pub mod pattern;
pub mod ruleset;
pub mod vocabulary;
