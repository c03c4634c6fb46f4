//! The conditions an evaluation runs at.

/// The conditions of one evaluation, SI.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Env {
    pub measurand: f64,
    /// The electronics' temperature, K; drifts act over ambient − reference.
    pub ambient: f64,
    /// The thermocouple cold junction's temperature, K.
    pub cold_junction: f64,
}

/// Where a sensor is: at the measured point, or at the cold junction
/// (the electronics' ambient).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Senses {
    Measurand,
    ColdJunction,
}
