//! Runtime units: SI prefixes, compound units and a dimension vector.
//!
//! No maintained crate does runtime units for a DSL (the established ones
//! check dimensions at compile time), so the arithmetic is ours. Powers are
//! kept in halves because noise densities are per root hertz.

mod dimension;
pub mod format;
mod table;

pub use dimension::{Dim, DimName};
pub use table::{parse_unit, suggest_for, Unit, UnitError, UnitKind};

/// Kelvin at 0 °C, exact by the definition of the Celsius scale.
pub const ZERO_CELSIUS_K: f64 = 273.15;
