//! Why a chain does not evaluate.

use std::fmt;

/// Why an evaluation, or the conversion's fit, has no answer.
#[derive(Clone, Debug, PartialEq)]
pub enum EvalError {
    /// A sensor model driven outside the range it is defined over.
    OutOfRange {
        stage: String,
        what: String,
        low: f64,
        high: f64,
        value: f64,
        celsius: bool,
    },
    /// A value that is not a finite number, or a division by zero.
    Numeric { stage: String, what: String },
    /// The firmware conversion cannot be built (a flat or folded chain).
    NotInvertible { stage: String, what: String },
}

impl fmt::Display for EvalError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let show = |x: f64, celsius: bool| {
            if celsius {
                format!("{} degC", trim(x - crate::units::ZERO_CELSIUS_K))
            } else {
                trim(x)
            }
        };
        match self {
            EvalError::OutOfRange {
                stage,
                what,
                low,
                high,
                value,
                celsius,
            } => write!(
                f,
                "`{stage}` is driven outside its valid range: {what} {} is outside {} .. {}",
                show(*value, *celsius),
                show(*low, *celsius),
                show(*high, *celsius)
            ),
            EvalError::Numeric { stage, what } => {
                write!(f, "`{stage}` evaluates to no finite value: {what}")
            }
            EvalError::NotInvertible { stage, what } => {
                write!(f, "`{stage}` cannot convert: {what}")
            }
        }
    }
}

fn trim(x: f64) -> String {
    let s = format!("{x:.6}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}
