//! Physical constants shared by the models.
//!
//! Source: The International System of Units (SI Brochure), 9th edition,
//! BIPM 2019. Since the 2019 redefinition the Boltzmann constant is exact.

/// Boltzmann constant k in J/K (exact by definition since 2019-05-20).
pub const BOLTZMANN: f64 = 1.380649e-23;

/// Thermodynamic temperature of 0 °C in K (exact by definition of the Celsius scale).
pub const ZERO_CELSIUS: f64 = 273.15;
