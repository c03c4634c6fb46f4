//! A fixed resistor with its tolerance and drift.

use super::{Cx, Lost, Run};
use crate::eval::fault::{FaultKind, Faulted};
use crate::eval::lanes::{Column, LaneRun};
use crate::eval::plan::{DriftSlot, EvalError, NodeId, Signal, SlotId, SourceKind};
use crate::model::schema;
use crate::model::typed;

#[derive(Clone, Debug, PartialEq)]
pub struct Resistor {
    pub r: SlotId,
    pub drift: Option<DriftSlot>,
    pub input: Option<NodeId>,
}

pub(super) fn lower(m: &typed::Resistor, cx: &mut Cx<'_>) -> Result<Resistor, EvalError> {
    let r = cx.measure(schema::param::R, SourceKind::Tolerance, &m.r);
    let drift = cx.drift_of(schema::param::R, &m.r);
    Ok(Resistor {
        r,
        drift,
        input: cx.inputs.input,
    })
}

/// An element opens (a cracked element, a broken wire) or shorts.
pub(super) const FAULTS: &[FaultKind] = &[FaultKind::Open, FaultKind::Short];

impl Resistor {
    /// The element open or shorted.
    pub(super) fn faulted(&self, run: &Run<'_>, kind: FaultKind) -> Result<Faulted, EvalError> {
        run.element_fault(kind, self.input, 0.0)
    }

    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let r = run.drifted(run.values[self.r.index()], self.drift);
        Ok(run.element(r, self.input))
    }

    /// [`Resistor::eval`] in every lane of a batch.
    #[inline(always)]
    pub(super) fn eval_lanes(&self, run: &LaneRun<'_>, out: &mut Column) -> Result<(), Lost> {
        let r = run.drifted(run.slot(self.r), self.drift);
        run.element_into(&r, self.input, out);
        Ok(())
    }
}
