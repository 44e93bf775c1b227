mod read;
mod write;

pub use read::*;
pub use write::*;
