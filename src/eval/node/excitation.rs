//! A current or voltage source: its value with tolerance and drift.

use super::{Cx, Run};
use crate::eval::plan::{DriftSlot, EvalError, Signal, SlotId, SourceKind};
use crate::model::typed::{self, Source};

#[derive(Clone, Debug, PartialEq)]
pub struct Excitation {
    pub current: bool,
    pub value: SlotId,
    pub drift: Option<DriftSlot>,
}

pub(super) fn lower(m: &typed::Excitation, cx: &mut Cx<'_>) -> Result<Excitation, EvalError> {
    let (current, name) = match m.source {
        Source::Current { .. } => (true, "current"),
        Source::Voltage { .. } => (false, "voltage"),
    };
    let value = cx.measure(name, SourceKind::Tolerance, &m.value);
    // A drift on its own line takes the place of one on the value.
    let drift = match &m.drift {
        Some(t) => Some(cx.drift("drift", t.plus, t.relative)),
        None => cx.drift_of(name, &m.value),
    };
    Ok(Excitation {
        current,
        value,
        drift,
    })
}

impl Excitation {
    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let v = run.drifted(run.values[self.value], self.drift);
        Ok(if self.current {
            Signal::Current(v)
        } else {
            Signal::Source(v)
        })
    }
}
