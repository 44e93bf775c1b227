pub mod client;
pub mod models;
pub mod schema;
pub(crate) mod utils;
