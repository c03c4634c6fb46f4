//! A semiconductor temperature sensor that is a current source
//! proportional to absolute temperature (PTAT).

use super::{Cx, Run};
use crate::eval::fault::{FaultKind, Faulted};
use crate::eval::plan::{EvalError, NodeId, Senses, Signal, SlotId, SourceKind};
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
    let slope = cx.measure("slope", SourceKind::Tolerance, &m.slope);
    if let Some(t) = &m.accuracy {
        cx.stated_error("accuracy", t);
    }
    Ok(IcCurrent {
        slope,
        senses: cx.senses,
        input: cx.inputs.input,
    })
}

/// Its supply lost: no current.
pub(super) const FAULTS: &[FaultKind] = &[FaultKind::Lost];

impl IcCurrent {
    pub(super) fn faulted(&self, run: &Run<'_>, kind: FaultKind) -> Result<Faulted, EvalError> {
        match kind {
            FaultKind::Lost => Ok(Faulted::Signal(Signal::Current(0.0))),
            _ => Err(run.numeric(kind.describe())),
        }
    }

    /// Its output behind a fault upstream: a lost supply is its own loss.
    pub(super) fn behind(&self, run: &Run<'_>) -> Result<Faulted, EvalError> {
        match self.input.map(|n| run.s[n]) {
            Some(Signal::Source(v)) if v <= 0.0 => self.faulted(run, FaultKind::Lost),
            _ => self.eval(run).map(Faulted::Signal),
        }
    }

    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let t = run.sensed(self.senses);
        let a = semiconductor::ptat_current_a(run.values[self.slope], t)
            .map_err(|_| run.numeric("no PTAT current at this temperature"))?;
        Ok(Signal::Current(a))
    }
}
