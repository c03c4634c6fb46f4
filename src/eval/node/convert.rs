//! The firmware's conversion of a code to a reading (`eval/convert.rs`):
//! what it recovers (the measurand, or a cold junction's temperature), the
//! range it is fitted over and its calibration.

use super::{Cx, Run};
use crate::eval::convert::{Calibration, Conversion, Method};
use crate::eval::fault::FaultKind;
use crate::eval::plan::{EvalError, NodeId, Senses, Signal, SlotId, SourceKind};
use crate::model::typed::{self, CalibrationMethod, ConversionMethod};
use crate::model::value::Tolerance;

/// How far beyond the measurand range the exact inverse looks, as a
/// fraction of the span, so that over-range readings are still found.
const DOMAIN_MARGIN: f64 = 1.0;
/// The cold-junction conversion looks this far beyond the ambient range, K.
const CJ_MARGIN_K: f64 = 30.0;

#[derive(Clone, Debug, PartialEq)]
pub struct Convert {
    /// How the firmware inverts the chain, fitted once the plan exists.
    pub method: ConversionMethod,
    pub input: NodeId,
    pub cj: Option<NodeId>,
    pub conversion: Box<Conversion>,
}

pub(super) fn lower(m: &typed::Convert, cx: &mut Cx<'_>) -> Result<Convert, EvalError> {
    let adc = cx
        .inputs
        .input
        .ok_or_else(|| cx.not_invertible("no input"))?;
    let variable = if cx.feeds_cj {
        Senses::ColdJunction
    } else {
        Senses::Measurand
    };
    let (range, margin) = match variable {
        Senses::Measurand => {
            let range = (cx.measurand.low, cx.measurand.high);
            (range, DOMAIN_MARGIN * (range.1 - range.0))
        }
        Senses::ColdJunction => (cx.ambient, CJ_MARGIN_K),
    };
    let calibration = match &m.calibrate {
        Some(CalibrationMethod::Offset { at, uncertainty }) => Calibration::Offset {
            at: *at,
            error: calibration_error(cx, 1, uncertainty),
        },
        Some(CalibrationMethod::TwoPoint { at, uncertainty }) => Calibration::TwoPoint {
            at: *at,
            errors: (
                calibration_error(cx, 1, uncertainty),
                calibration_error(cx, 2, uncertainty),
            ),
        },
        None => Calibration::None,
    };
    let conversion = Conversion {
        method: Method::Exact,
        variable,
        adc,
        domain: (range.0 - margin, range.1 + margin),
        range,
        calibration,
        cj_error: match variable {
            Senses::Measurand => cx.cj_error,
            Senses::ColdJunction => None,
        },
        inverse: None,
    };
    Ok(Convert {
        method: m.method,
        input: adc,
        cj: cx.inputs.cj,
        conversion: Box::new(conversion),
    })
}

/// The error of calibration point `k`'s reference, where it is stated.
fn calibration_error(cx: &mut Cx<'_>, k: usize, uncertainty: &Option<Tolerance>) -> Option<SlotId> {
    uncertainty.as_ref().map(|t| {
        let (minus, plus, normal) = super::limits(t, 0.0);
        let id = format!("calibration_{k}");
        cx.add(&id, SourceKind::Calibration, 0.0, minus, plus, normal)
    })
}

/// None: a conversion is firmware, with no electrical fault.
pub(super) const FAULTS: &[FaultKind] = &[];

impl Convert {
    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let Signal::Code { code, exact } = run.s[self.input.index()] else {
            return Err(run.numeric("no code"));
        };
        let code = if run.mode.quantized {
            code as f64
        } else {
            exact
        };
        let cj_reading = self.cj.and_then(|n| match run.s[n.index()] {
            Signal::Reading(t) => Some(t),
            _ => None,
        });
        let reading = self
            .conversion
            .apply(run.plan, run.values, run.env, code, cj_reading)?;
        Ok(Signal::Reading(reading))
    }
}
