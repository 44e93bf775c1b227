//! Functionality for reading and writing CSV files.

pub mod read;
pub mod write;
