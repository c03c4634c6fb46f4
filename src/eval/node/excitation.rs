//! A current or voltage source: its value with tolerance and drift.

use super::{Cx, Run};
use crate::eval::fault::{FaultKind, Faulted};
use crate::eval::lanes::{Column, LaneRun, Tag};
use crate::eval::plan::{DriftSlot, EvalError, Signal, SlotId, SourceKind};
use crate::model::schema;
use crate::model::typed::{self, Source};

#[derive(Clone, Debug, PartialEq)]
pub struct Excitation {
    pub current: bool,
    pub value: SlotId,
    pub drift: Option<DriftSlot>,
    /// A current source's compliance, V: where its output goes when its
    /// load opens.
    pub compliance: Option<f64>,
}

pub(super) fn lower(m: &typed::Excitation, cx: &mut Cx<'_>) -> Result<Excitation, EvalError> {
    let (current, name, compliance) = match m.source {
        Source::Current { compliance } => (true, "current", compliance),
        Source::Voltage { .. } => (false, "voltage", None),
    };
    let value = cx.measure(name, SourceKind::Tolerance, &m.value);
    // A drift on its own line takes the place of one on the value.
    let drift = match &m.drift {
        Some(t) => Some(cx.drift(schema::param::DRIFT, t.plus, t.relative)),
        None => cx.drift_of(name, &m.value),
    };
    Ok(Excitation {
        current,
        value,
        drift,
        compliance,
    })
}

/// A source can be lost (a blown fuse, a dead regulator).
pub(super) const FAULTS: &[FaultKind] = &[FaultKind::Lost];

impl Excitation {
    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let v = run.drifted(run.values[self.value.index()], self.drift);
        Ok(self.output(v))
    }

    /// [`Excitation::eval`] in every lane of a batch.
    #[inline(always)]
    pub(super) fn eval_lanes(&self, run: &LaneRun<'_>) -> Column {
        let v = run.drifted(run.slot(self.value), self.drift);
        let tag = if self.current {
            Tag::Current
        } else {
            Tag::Source
        };
        Column::scalar(tag, v)
    }

    fn output(&self, v: f64) -> Signal {
        if self.current {
            Signal::Current(v)
        } else {
            Signal::Source(v)
        }
    }

    /// A lost source gives nothing.
    pub(super) fn faulted(&self, run: &Run<'_>, kind: FaultKind) -> Result<Faulted, EvalError> {
        Ok(match kind {
            FaultKind::Lost => Faulted::Signal(self.output(0.0)),
            _ => return Err(run.numeric(kind.describe())),
        })
    }
}
