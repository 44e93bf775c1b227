pub mod unity;
