//! The firmware's conversion of a code to a reading (`eval/convert.rs`):
//! what it recovers (the measurand, or a cold junction's temperature), the
//! range it is fitted over and its calibration.

use super::{Cx, Run};
use crate::eval::convert::{Calibrated, Calibration, Conversion, JunctionEmfs, Method};
use crate::eval::fault::FaultKind;
use crate::eval::lanes::{Column, LaneRun, Lost, Tag};
use crate::eval::plan::{EvalError, NodeId, Senses, Signal, SlotId, SourceKind};
use crate::eval::run::LANES;
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

    /// [`Convert::eval`] in every lane of a batch: the inverse side by
    /// side where it answers from the code directly, the rest of the
    /// conversion lane by lane.
    #[inline(always)]
    pub(super) fn eval_lanes(&self, run: &LaneRun<'_>, out: &mut Column) -> Result<(), Lost> {
        let input = &run.s[self.input.index()];
        let exact = input.of(Tag::Code).ok_or(Lost)?;
        let codes = if run.mode.quantized {
            input.code.map(|code| code as f64)
        } else {
            *exact
        };
        let cj = self.cj.and_then(|n| run.s[n.index()].of(Tag::Reading));
        let conversion = &self.conversion;
        let mut readings = codes;
        let answered = conversion.direct_lanes(
            |k| run.row(k),
            run.env,
            &mut readings,
            cj,
            &mut JunctionEmfs::default(),
        );
        for (k, x) in readings.iter_mut().enumerate() {
            if !answered[k] {
                *x = conversion
                    .invert(run.plan, run.row(k), run.env, codes[k], cj.map(|t| t[k]))
                    .map_err(|_| Lost)?;
            }
        }
        // Without a calibration every lane's is None, known once.
        let mut calibrated = [Calibrated::None; LANES];
        if conversion.calibration != Calibration::None {
            for (k, c) in calibrated.iter_mut().enumerate() {
                *c = conversion
                    .calibrate(run.plan, run.row(k))
                    .map_err(|_| Lost)?;
            }
        }
        conversion.correct_lanes(run.plan, &mut readings, &calibrated)?;
        out.tag = Tag::Reading;
        out.x = readings;
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use crate::eval::lanes::{check, Lost};
    use crate::eval::node::ic_current::tests::BUSBAR;
    use crate::eval::node::ic_voltage::tests::OVEN;

    /// Both conversions of a couple read with its cold junction's: the
    /// junction's own (a complete inverse table) and the couple's, whose
    /// table is shifted for each lane's junction reading.
    #[test]
    fn lanes_match_single_runs_through_tables() {
        let plan = check::plan(OVEN);
        let rows = check::spread(&plan);
        for name in ["cj_reading", "reading"] {
            let node = check::node(&plan, name);
            for (t, ambient) in [(80.0, 10.0), (200.0, 25.0), (320.0, 40.0), (500.0, 25.0)] {
                for quantized in [true, false] {
                    let env = check::env_c(t, ambient);
                    let mode = check::mode(quantized, false);
                    check::matches_single_runs(&plan, node, &rows, &env, mode)
                        .expect("every lane runs");
                }
            }
        }
    }

    /// The methods fitted to the code alone, each answered side by side,
    /// with the calibration lane by lane.
    #[test]
    fn lanes_match_single_runs_for_fitted_methods() {
        for method in ["linear", "table 32", "poly 3"] {
            let spec = BUSBAR.replace("method exact", &format!("method {method}"));
            let plan = check::plan(&spec);
            let reading = check::node(&plan, "reading");
            let rows = check::spread(&plan);
            for (t, ambient) in [(-20.0, -20.0), (40.0, 25.0), (100.0, 60.0)] {
                for quantized in [true, false] {
                    let env = check::env_c(t, ambient);
                    let mode = check::mode(quantized, false);
                    check::matches_single_runs(&plan, reading, &rows, &env, mode)
                        .expect("every lane runs");
                }
            }
        }
    }

    /// A calibrated conversion solved from the chain, and a lane whose
    /// calibration cannot read the chain (a value that is not a number
    /// gives a code that is not one), which loses the batch.
    #[test]
    fn lanes_match_single_runs_with_a_calibration() {
        let plan = check::plan(BUSBAR);
        let reading = check::node(&plan, "reading");
        let rows = check::spread(&plan);
        for (t, ambient) in [(-20.0, -20.0), (40.0, 25.0), (100.0, 60.0)] {
            for quantized in [true, false] {
                let env = check::env_c(t, ambient);
                check::matches_single_runs(
                    &plan,
                    reading,
                    &rows,
                    &env,
                    check::mode(quantized, false),
                )
                .expect("every lane runs");
            }
        }
        let rows = check::with(&plan, rows, 2, "load.r", f64::NAN);
        let env = check::env_c(40.0, 25.0);
        let got = check::matches_single_runs(&plan, reading, &rows, &env, check::mode(true, false));
        assert_eq!(got.err(), Some(Lost));
    }
}
