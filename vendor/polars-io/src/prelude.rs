pub use crate::cloud;
#[cfg(feature = "csv")]
pub use crate::csv::{read::*, write::*};
#[cfg(any(feature = "ipc", feature = "ipc_streaming"))]
pub use crate::ipc::*;
#[cfg(feature = "json")]
pub use crate::json::*;
#[cfg(feature = "json")]
pub use crate::ndjson::core::*;
pub use crate::options::*;
#[cfg(feature = "parquet")]
pub use crate::parquet::{metadata::*, read::*, write::*};
pub use crate::path_utils::*;
pub use crate::shared::{SerReader, SerWriter};
pub use crate::utils::*;
