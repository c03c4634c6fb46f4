//! Output files: written whole or not at all.

mod atomic;

pub use atomic::{replace_atomic, write_atomic, WriteError};
