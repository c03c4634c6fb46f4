//! A semiconductor temperature sensor with a linear voltage output.

use super::{Cx, Run};
use crate::eval::plan::{EvalError, Senses, Signal, SlotId, SourceKind};
use crate::model::typed;
use crate::physics::semiconductor;
use crate::units::ZERO_CELSIUS_K;

#[derive(Clone, Debug, PartialEq)]
pub struct IcVoltage {
    pub slope: SlotId,
    pub v0: SlotId,
    pub t0: f64,
    pub senses: Senses,
    pub rout: Option<SlotId>,
}

pub(super) fn lower(m: &typed::IcVoltage, cx: &mut Cx<'_>) -> Result<IcVoltage, EvalError> {
    let slope = cx.measure("slope", SourceKind::Tolerance, &m.slope);
    let v0 = cx.measure("output", SourceKind::Tolerance, &m.output);
    let rout = m
        .output_resistance
        .as_ref()
        .map(|r| cx.measure("output_resistance", SourceKind::Tolerance, r));
    if let Some(t) = &m.accuracy {
        cx.stated_error("accuracy", t);
    }
    Ok(IcVoltage {
        slope,
        v0,
        t0: m.output_at,
        senses: cx.senses,
        rout,
    })
}

impl IcVoltage {
    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let t = run.sensed(self.senses);
        let v = semiconductor::linear_voltage_v(
            run.values[self.v0],
            run.values[self.slope],
            self.t0 - ZERO_CELSIUS_K,
            t - ZERO_CELSIUS_K,
        );
        Ok(Signal::Voltage {
            v,
            cm: v / 2.0,
            rs: run.or_zero(self.rout),
        })
    }
}
