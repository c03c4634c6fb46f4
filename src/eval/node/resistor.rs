//! A fixed resistor with its tolerance and drift.

use super::{Cx, Run};
use crate::eval::plan::{DriftSlot, EvalError, NodeId, Signal, SlotId, SourceKind};
use crate::model::typed;

#[derive(Clone, Debug, PartialEq)]
pub struct Resistor {
    pub r: SlotId,
    pub drift: Option<DriftSlot>,
    pub input: Option<NodeId>,
}

pub(super) fn lower(m: &typed::Resistor, cx: &mut Cx<'_>) -> Result<Resistor, EvalError> {
    let r = cx.measure("r", SourceKind::Tolerance, &m.r);
    let drift = cx.drift_of("r", &m.r);
    Ok(Resistor {
        r,
        drift,
        input: cx.inputs.input,
    })
}

impl Resistor {
    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let r = run.drifted(run.values[self.r], self.drift);
        Ok(run.element(r, self.input))
    }
}
