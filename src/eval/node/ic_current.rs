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
    /// The voltage excitation that powers it, when wired: where its
    /// output rises to when its load opens (a current regulator with
    /// nowhere to send its current saturates toward its supply).
    pub supply: Option<NodeId>,
}

pub(super) fn lower(m: &typed::IcCurrent, cx: &mut Cx<'_>) -> Result<IcCurrent, EvalError> {
    let slope = cx.measure("slope", SourceKind::Tolerance, &m.slope);
    if let Some(t) = &m.accuracy {
        cx.stated_error("accuracy", t);
    }
    Ok(IcCurrent {
        slope,
        senses: cx.senses,
        supply: cx.inputs.input,
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

    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let t = run.sensed(self.senses);
        let a = semiconductor::ptat_current_a(run.values[self.slope], t)
            .map_err(|_| run.numeric("no PTAT current at this temperature"))?;
        Ok(Signal::Current(a))
    }
}
