//! Output files: written whole or not at all.

mod atomic;
pub mod export;
pub mod report;

pub use atomic::{replace_atomic, write_atomic, WriteError};
