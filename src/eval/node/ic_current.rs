//! A semiconductor temperature sensor that is a current source
//! proportional to absolute temperature (PTAT).

use super::{Cx, Run};
use crate::eval::fault::{FaultKind, Faulted};
use crate::eval::plan::{EvalError, NodeId, Senses, Signal, SlotId, SourceKind};
use crate::model::schema;
use crate::model::typed;
use crate::physics::semiconductor;

#[derive(Clone, Debug, PartialEq)]
pub struct IcCurrent {
    pub slope: SlotId,
    pub senses: Senses,
    /// The excitation wired to it as its supply.
    pub input: Option<NodeId>,
}

pub(super) fn lower(m: &typed::IcCurrent, cx: &mut Cx<'_>) -> Result<IcCurrent, EvalError> {
    let slope = cx.measure(schema::param::SLOPE, SourceKind::Tolerance, &m.slope);
    if let Some(t) = &m.accuracy {
        cx.stated_error(schema::param::ACCURACY, t);
    }
    Ok(IcCurrent {
        slope,
        senses: cx.senses,
        input: cx.inputs.input,
    })
}

/// Its supply lost: no current. Stuck high: the two-terminal sensor fails
/// short, and only its load limits the current its supply drives.
pub(super) const FAULTS: &[FaultKind] = &[FaultKind::Lost, FaultKind::StuckHigh];

impl IcCurrent {
    pub(super) fn faulted(&self, run: &Run<'_>, kind: FaultKind) -> Result<Faulted, EvalError> {
        match kind {
            FaultKind::Lost => Ok(Faulted::Signal(Signal::Current(0.0))),
            FaultKind::StuckHigh => {
                let Some(Signal::Source(v)) = self.input.map(|n| run.s[n.index()]) else {
                    return Ok(Faulted::Undetermined(
                        "the sensor's supply is not wired: nothing says what limits its current once it shorts",
                    ));
                };
                let load = run
                    .plan
                    .load_resistance(run.i, run.values, run.env, run.s)?;
                Ok(Faulted::Signal(Signal::Current(v / load)))
            }
            _ => Err(run.numeric(kind.describe())),
        }
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
        let a = semiconductor::ptat_current_a(run.values[self.slope.index()], t)
            .map_err(|_| run.numeric("no PTAT current at this temperature"))?;
        Ok(Signal::Current(a))
    }
}
