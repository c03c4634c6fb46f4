//! Parameter values after unit checking: SI numbers with their spans.

use std::sync::Arc;

use crate::diagnostics::{SourceFile, Span};
use crate::units::Dim;

/// A tolerance as limits around the nominal, both non-negative.
#[derive(Clone, Debug, PartialEq)]
pub struct Tolerance {
    pub plus: f64,
    pub minus: f64,
    /// A fraction of the nominal (`± 0.1 %`) rather than an absolute value.
    pub relative: bool,
    /// A 3-sigma normal bound; otherwise a rectangular limit.
    pub normal: bool,
    /// The dimension of the limits as written (where a parameter accepts
    /// several, such as noise as an rms value or as a density).
    pub dim: Dim,
    /// What the limits are a share of, for a limit in the measurand's
    /// quantity written as a percentage.
    pub basis: Basis,
    pub span: Span,
}

/// What a limit on a measurand quantity is a share of.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Basis {
    /// As written: absolute, or relative to the nominal with `relative`.
    Written,
    /// `% of span`: a share of the measurand range (high − low). The
    /// limits are already absolute, converted where they were read.
    Span,
    /// `% of reading`: the limits are fractions of the reading's
    /// magnitude in the measurand's unit as written (°C for `degC`).
    Reading,
}

/// A temperature coefficient: per kelvin, relative (`ppm/K`) or absolute
/// in the parameter's own unit per kelvin (`uV/K`).
#[derive(Clone, Debug, PartialEq)]
pub struct Drift {
    pub per_kelvin: f64,
    pub relative: bool,
    pub span: Span,
}

/// `nominal [± tol] [max] [drift d]`, all SI.
#[derive(Clone, Debug, PartialEq)]
pub struct Measure {
    pub nominal: f64,
    pub tolerance: Option<Tolerance>,
    /// `20 uV max`: the value is a bound on the magnitude, nominal zero.
    pub max: bool,
    pub drift: Option<Drift>,
    pub span: Span,
}

#[derive(Clone, Debug, PartialEq)]
pub enum ParamValue {
    /// No values: a model line such as `thermistor`.
    Flag,
    Measure(Measure),
    /// `lo .. hi`, SI (kelvin for temperatures).
    Range {
        low: f64,
        high: f64,
    },
    Word(String),
    Count(u32),
    Numbers(Vec<f64>),
    /// Plain numbers, each with its tolerance if it has one.
    Measures(Vec<Measure>),
    /// `2 mV/V at 500 N`, `0.75 V at 25 degC`.
    At {
        value: Measure,
        value_dim: Dim,
        at: f64,
    },
    /// `table 16`, `exact`.
    Method {
        method: String,
        points: Option<u32>,
    },
    /// `offset at 0 degC ± 0.05 K`, `two_point at 0 degC, 100 degC ± 0.1 K`.
    Calibrate {
        method: String,
        points: Vec<f64>,
        uncertainty: Option<Tolerance>,
    },
    /// A stated error (`cold_junction ± 0.5 K`).
    Limit(Tolerance),
    /// Another stage of the chain, by name (`cold_junction cj_sensor`).
    StageRef {
        name: String,
        span: Span,
    },
    /// Other stages of the chain, by name (`sum cell_b, cell_c`).
    StageRefs(Vec<(String, Span)>),
}

/// A checked parameter and where it was written (a spec or a parts file).
#[derive(Clone, Debug)]
pub struct ResolvedParam {
    pub name: &'static str,
    pub value: ParamValue,
    pub span: Span,
    pub file: Arc<SourceFile>,
}
