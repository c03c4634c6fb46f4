//! Physical models of the measurement chain: pure functions, one file per
//! model, each citing its published source and tested against it.

pub mod adc;
pub mod constants;
pub mod exp;
pub mod filter;
pub mod log;
pub mod noise;
#[cfg(test)]
mod reference_bits;
pub mod rtd;
pub mod sampling;
pub mod semiconductor;
pub mod solve;
pub mod strain;
pub mod thermistor;
pub mod thermocouple;
pub mod thermocouple_coefficients;
pub mod transducer;
