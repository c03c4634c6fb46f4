//! A semiconductor temperature sensor with a linear voltage output.

use super::{Cx, Run};
use crate::eval::fault::{FaultKind, Faulted};
use crate::eval::plan::{EvalError, NodeId, Senses, Signal, SlotId, SourceKind};
use crate::model::schema;
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
    /// The supply range it runs from, V: where a stuck output goes.
    pub supply: Option<(f64, f64)>,
    /// The excitation wired to it as its supply.
    pub input: Option<NodeId>,
}

pub(super) fn lower(m: &typed::IcVoltage, cx: &mut Cx<'_>) -> Result<IcVoltage, EvalError> {
    let slope = cx.measure(schema::param::SLOPE, SourceKind::Tolerance, &m.slope);
    let v0 = cx.measure(schema::param::OUTPUT, SourceKind::Tolerance, &m.output);
    let rout = m
        .output_resistance
        .as_ref()
        .map(|r| cx.measure(schema::param::OUTPUT_RESISTANCE, SourceKind::Tolerance, r));
    if let Some(t) = &m.accuracy {
        cx.stated_error(schema::param::ACCURACY, t);
    }
    Ok(IcVoltage {
        slope,
        v0,
        t0: m.output_at,
        senses: cx.senses,
        rout,
        supply: m.supply,
        input: cx.inputs.input,
    })
}

/// Its supply lost: the output falls to 0 V behind its output
/// resistance (the same as an output stuck low, so one row). Its output
/// stuck high: at its supply.
pub(super) const FAULTS: &[FaultKind] = &[FaultKind::Lost, FaultKind::StuckHigh];

impl IcVoltage {
    /// A stuck-high output sits at the supply: the excitation wired to
    /// it, else the low end of its stated `supply` range, the least the
    /// output can be stuck at and so the nearest to a rising window
    /// (common practice takes an output stage's high swing as its supply).
    pub(super) fn faulted(&self, run: &Run<'_>, kind: FaultKind) -> Result<Faulted, EvalError> {
        let rs = run.or_zero(self.rout);
        let wired = match self.input.map(|n| run.s[n.index()]) {
            Some(Signal::Source(v)) => Some(v),
            _ => None,
        };
        let v = match (kind, wired, self.supply) {
            (FaultKind::Lost, _, _) => 0.0,
            (FaultKind::StuckHigh, Some(v), _) => v,
            (FaultKind::StuckHigh, None, Some((low, _))) => low,
            (FaultKind::StuckHigh, None, None) => {
                return Ok(Faulted::Undetermined(
                    "the sensor's supply is neither wired nor stated: nothing says where its output sticks",
                ))
            }
            _ => return Err(run.numeric(kind.describe())),
        };
        Ok(Faulted::Signal(Signal::Voltage { v, cm: v / 2.0, rs }))
    }

    /// Its output behind a fault upstream: a lost supply is its own loss.
    pub(super) fn behind(&self, run: &Run<'_>) -> Result<Faulted, EvalError> {
        match self.input.map(|n| run.s[n.index()]) {
            Some(Signal::Source(v)) if v <= 0.0 => self.faulted(run, FaultKind::Lost),
            _ => self.eval(run).map(Faulted::Signal),
        }
    }

    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let t = run.sensed(self.senses);
        let v = semiconductor::linear_voltage_v(
            run.values[self.v0.index()],
            run.values[self.slope.index()],
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
