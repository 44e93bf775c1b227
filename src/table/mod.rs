//! Tables in and out: reading a table with the described columns as text,
//! gathering per-value features to rows in compact types, the batch
//! pipeline that does both for a table arriving in pieces, and atomic
//! writing.

pub mod encode;
pub mod pipeline;
pub mod read;
pub mod schema;
pub mod sniff;
pub mod write;
