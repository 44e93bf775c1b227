//! Looking at a column before rules exist: its survey (counts, shapes,
//! anomalies, tokens), the anatomy of a value, and clusters of values that
//! are probably one thing spelled differently.

pub mod cluster;
pub mod shape;
pub mod survey;
