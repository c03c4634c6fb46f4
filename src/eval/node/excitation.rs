//! A current or voltage source: its value with tolerance and drift.

use super::{Cx, Lost, Run};
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
        Source::Current { compliance } => (true, schema::param::CURRENT, compliance),
        Source::Voltage { .. } => (false, schema::param::VOLTAGE, None),
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

/// A source can be lost (a blown fuse, a dead regulator) or driven to
/// its limit: a current source to its compliance, a voltage source to its
/// current limit.
const CURRENT_FAULTS: &[FaultKind] = &[FaultKind::Lost, FaultKind::AtCompliance];
const VOLTAGE_FAULTS: &[FaultKind] = &[FaultKind::Lost, FaultKind::AtCurrentLimit];

impl Excitation {
    pub(super) fn faults(&self) -> &'static [FaultKind] {
        if self.current {
            CURRENT_FAULTS
        } else {
            VOLTAGE_FAULTS
        }
    }

    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let v = run.drifted(run.values[self.value.index()], self.drift);
        Ok(self.output(v))
    }

    /// [`Excitation::eval`] in every lane of a batch.
    #[inline(always)]
    pub(super) fn eval_lanes(&self, run: &LaneRun<'_>, out: &mut Column) -> Result<(), Lost> {
        out.tag = if self.current {
            Tag::Current
        } else {
            Tag::Source
        };
        run.drifted_into(run.slot(self.value), self.drift, &mut out.x);
        Ok(())
    }

    fn output(&self, v: f64) -> Signal {
        if self.current {
            Signal::Current(v)
        } else {
            Signal::Source(v)
        }
    }

    /// A lost source gives nothing. A voltage source shorted at its
    /// output gives the same: its current limit only keeps it alive, the
    /// node is the short. A current source whose output stands at its
    /// compliance drives its load as a voltage source would: a string of
    /// elements takes the compliance over its own resistance; a bridge
    /// or divider, which takes either, is driven at the compliance.
    pub(super) fn faulted(&self, run: &Run<'_>, kind: FaultKind) -> Result<Faulted, EvalError> {
        Ok(match kind {
            FaultKind::Lost | FaultKind::AtCurrentLimit => Faulted::Signal(self.output(0.0)),
            FaultKind::AtCompliance => match self.compliance {
                Some(vc) if !run.plan.drives_elements(run.i) && run.plan.excites_bridge(run.i) => {
                    Faulted::Signal(Signal::Source(vc))
                }
                Some(vc) => {
                    let load = run
                        .plan
                        .load_resistance(run.i, run.values, run.env, run.s)?;
                    Faulted::Signal(self.output(vc / load))
                }
                None => Faulted::Undetermined("the current source's compliance is not stated"),
            },
            _ => return Err(run.numeric(kind.describe())),
        })
    }
}
