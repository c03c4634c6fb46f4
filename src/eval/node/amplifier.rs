//! An amplifier: output = gain × (input + its errors) + reference, then its
//! swing; outside its common-mode range it rails.

use super::{Cx, Run};
use crate::eval::fault::{
    input_pull, open_input, positive_pin, pulled_lanes, with_pull, Fault, FaultKind, Faulted, Pull,
};
use crate::eval::lanes::{Column, LaneRun, Lost, Tag};
use crate::eval::plan::{DriftSlot, Env, EvalError, NodeId, Plan, Signal, SlotId, SourceKind};
use crate::eval::run::LANES;
use crate::model::schema;
use crate::model::typed;

#[derive(Clone, Debug, PartialEq)]
pub struct Amplifier {
    pub gain: SlotId,
    pub offset: Option<SlotId>,
    /// Common-mode error per volt of common mode (1/CMRR), nominal 0.
    pub cmrr: Option<SlotId>,
    /// Input bias current, nominal 0: times the source resistance.
    pub bias: Option<SlotId>,
    /// Per kelvin: offset in volts, gain relative.
    pub offset_drift: Option<SlotId>,
    pub gain_drift: Option<SlotId>,
    pub input: NodeId,
    /// What the output is referred to: output = gain × input + reference.
    pub reference: Option<AmpReference>,
    /// Common-mode input range and output swing, V.
    pub input_range: Option<(f64, f64)>,
    pub output: Option<(f64, f64)>,
    /// What drives its input when the source opens: a burnout current
    /// or a pull resistor.
    pub pull: Option<Pull>,
}

/// An amplifier's reference (its REF pin, or an output level shift).
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum AmpReference {
    /// A stated voltage: its slot (nominal the value, with its tolerance)
    /// and drift.
    Stated {
        value: SlotId,
        drift: Option<DriftSlot>,
    },
    /// The voltage another stage gives its `ref` input.
    Stage(NodeId),
}

pub(super) fn lower(m: &typed::Amplifier, cx: &mut Cx<'_>) -> Result<Amplifier, EvalError> {
    let gain = cx.measure(schema::param::GAIN, SourceKind::Tolerance, &m.gain);
    let offset = m
        .offset
        .as_ref()
        .map(|t| cx.limit(schema::param::OFFSET, SourceKind::Bound, t));
    let bias = m
        .bias
        .as_ref()
        .map(|t| cx.limit(schema::param::BIAS, SourceKind::Bias, t));
    // CMRR is a ratio whose sign is unknown: nominal zero error, ±1/CMRR
    // per volt of common mode.
    let cmrr = m.cmrr.map(|ratio| {
        let e = 1.0 / ratio;
        cx.add(
            schema::param::CMRR,
            SourceKind::CommonMode,
            0.0,
            e,
            e,
            false,
        )
    });
    let input = cx
        .inputs
        .input
        .ok_or_else(|| cx.not_invertible("no input"))?;
    let reference = match (cx.inputs.reference, &m.reference) {
        (Some(node), _) => Some(AmpReference::Stage(node)),
        (None, Some(r)) => Some(AmpReference::Stated {
            value: cx.measure(schema::REFERENCE, SourceKind::Tolerance, r),
            drift: cx.drift_of(schema::REFERENCE, r),
        }),
        (None, None) => None,
    };
    let offset_drift = m
        .offset_drift
        .as_ref()
        .map(|t| cx.limit(schema::param::OFFSET_DRIFT, SourceKind::Drift, t));
    let gain_drift = m
        .gain_drift
        .as_ref()
        .map(|t| cx.limit(schema::param::GAIN_DRIFT, SourceKind::Drift, t));
    Ok(Amplifier {
        gain,
        offset,
        cmrr,
        bias,
        offset_drift,
        gain_drift,
        input,
        reference,
        input_range: m.input,
        output: m.output,
        pull: input_pull(m.burnout, m.pull),
    })
}

/// Its output stuck at either swing (a latched-up or damaged part), or its
/// input pin open.
pub(super) const FAULTS: &[FaultKind] = &[
    FaultKind::SaturatedHigh,
    FaultKind::SaturatedLow,
    FaultKind::InputOpen,
];

impl Amplifier {
    /// Saturated: the output at the stated swing's end; without a stated
    /// swing nothing says where it saturates. Input open: its own burnout
    /// current drives the pin to a rail, which it then amplifies as any
    /// input; without one the pin floats.
    pub(super) fn faulted(&self, run: &Run<'_>, fault: &Fault) -> Result<Faulted, EvalError> {
        let kind = fault.kind;
        let v = match (kind, self.output) {
            (FaultKind::InputOpen, _) => return self.input_open(run, fault.pull),
            (FaultKind::SaturatedHigh | FaultKind::SaturatedLow, None) => {
                return Ok(Faulted::Undetermined(
                    "the amplifier's output swing is not stated",
                ))
            }
            (FaultKind::SaturatedHigh, Some((_, hi))) => hi,
            (FaultKind::SaturatedLow, Some((lo, _))) => lo,
            _ => return Err(run.numeric(kind.describe())),
        };
        Ok(Faulted::Signal(Signal::Voltage {
            v,
            cm: v / 2.0,
            rs: 0.0,
        }))
    }

    /// Its input pin open, `pull` what drives the pin.
    fn input_open(&self, run: &Run<'_>, pull: Option<Pull>) -> Result<Faulted, EvalError> {
        let cm = match run.s[self.input.index()] {
            Signal::Voltage { cm, .. } => cm,
            _ => return Err(run.numeric("no input voltage")),
        };
        let open = match open_input(pull, cm) {
            Faulted::Signal(open) => open,
            undetermined => return Ok(undetermined),
        };
        let mut signals = *run.s;
        signals[self.input.index()] = open;
        let rerun = Run {
            s: &signals,
            ..*run
        };
        // The fault's pull drives the open pin (the stage's own, or one a
        // fix tries in its place).
        self.eval_pulled(&rerun, pull).map(Faulted::Signal)
    }

    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        self.eval_pulled(run, run.mode.pull_into(self.input, self.pull))
    }

    /// [`Amplifier::eval`] with `pull` on its input pin.
    #[inline(always)]
    fn eval_pulled(&self, run: &Run<'_>, pull: Option<Pull>) -> Result<Signal, EvalError> {
        let Signal::Voltage { v, cm, rs } = run.s[self.input.index()] else {
            return Err(run.numeric("no input voltage"));
        };
        // An amplifier's inputs are differential.
        let pin = positive_pin(v, cm, true);
        let (v, rs) = with_pull(pull, v, pin, rs);
        let shift = shift_of(run.plan, self.reference, run.values, run.env, run.s)
            .ok_or_else(|| run.numeric("no reference voltage"))?;
        let slot = |o: Option<SlotId>| run.or_zero(o);
        // Vout = G (Vdiff + Vos + Ib·Rs + Vcm/CMRR), then the swing.
        let dt = run.env.ambient - run.plan.reference;
        let error = slot(self.offset)
            + slot(self.offset_drift) * dt
            + slot(self.bias) * rs
            + slot(self.cmrr) * cm;
        // Output = gain × input + reference.
        let gain = run.values[self.gain.index()] * (1.0 + slot(self.gain_drift) * dt);
        let mut out = gain * (v + error) + shift;
        let (lo, hi) = self.output.unwrap_or((f64::NEG_INFINITY, f64::INFINITY));
        // Outside its common-mode range an amplifier no longer amplifies:
        // its output goes to a rail.
        if let (true, Some((cm_lo, cm_hi))) = (run.mode.clip, self.input_range) {
            if cm < cm_lo {
                out = if lo.is_finite() { lo } else { 0.0 };
            } else if cm > cm_hi {
                out = if hi.is_finite() { hi } else { 0.0 };
            }
        }
        let out = if run.mode.clip {
            out.clamp(lo, hi)
        } else {
            out
        };
        Ok(Signal::Voltage {
            v: out,
            cm: out / 2.0,
            rs: 0.0,
        })
    }
}

impl Amplifier {
    /// [`Amplifier::eval`] in every lane of a batch.
    #[inline(always)]
    pub(super) fn eval_lanes(&self, run: &LaneRun<'_>, column: &mut Column) -> Result<(), Lost> {
        let input = &run.s[self.input.index()];
        if input.tag != Tag::Voltage {
            return Err(Lost);
        }
        let shift = match self.reference {
            Some(AmpReference::Stated { value, drift }) => run.drifted(run.slot(value), drift),
            Some(AmpReference::Stage(n)) => match run.s[n.index()].tag {
                Tag::Voltage | Tag::Source => run.s[n.index()].x,
                _ => return Err(Lost),
            },
            None => [0.0; LANES],
        };
        let dt = run.env.ambient - run.plan.reference;
        let (offset, offset_drift) = (run.or_zero(self.offset), run.or_zero(self.offset_drift));
        let (bias, cmrr) = (run.or_zero(self.bias), run.or_zero(self.cmrr));
        let (gain, gain_drift) = (run.slot(self.gain), run.or_zero(self.gain_drift));
        let (lo, hi) = self.output.unwrap_or((f64::NEG_INFINITY, f64::INFINITY));
        column.tag = Tag::Voltage;
        let out = &mut column.x;
        let (x, rs) = match run.mode.pull_into(self.input, self.pull) {
            Some(pull) => pulled_lanes(pull, input, true),
            None => (input.x, input.rs),
        };
        for k in 0..LANES {
            let error = offset[k] + offset_drift[k] * dt + bias[k] * rs[k] + cmrr[k] * input.cm[k];
            let gain = gain[k] * (1.0 + gain_drift[k] * dt);
            out[k] = gain * (x[k] + error) + shift[k];
        }
        if run.mode.clip {
            if let Some((cm_lo, cm_hi)) = self.input_range {
                for (out, &cm) in out.iter_mut().zip(&input.cm) {
                    if cm < cm_lo {
                        *out = if lo.is_finite() { lo } else { 0.0 };
                    } else if cm > cm_hi {
                        *out = if hi.is_finite() { hi } else { 0.0 };
                    }
                }
            }
            for out in out.iter_mut() {
                *out = out.clamp(lo, hi);
            }
        }
        for (cm, v) in column.cm.iter_mut().zip(&column.x) {
            *cm = v / 2.0;
        }
        column.rs = [0.0; LANES];
        Ok(())
    }
}

/// The voltage an amplifier's output is referred to (0 V without a
/// reference); None where its reference stage gives no voltage.
#[inline(always)]
fn shift_of(
    plan: &Plan,
    reference: Option<AmpReference>,
    values: &[f64],
    env: &Env,
    s: &[Signal],
) -> Option<f64> {
    match reference {
        Some(AmpReference::Stated { value, drift }) => {
            Some(plan.drifted(values[value.index()], drift, values, env))
        }
        Some(AmpReference::Stage(n)) => match s[n.index()] {
            Signal::Voltage { v, .. } | Signal::Source(v) => Some(v),
            _ => None,
        },
        None => Some(0.0),
    }
}

impl Plan {
    /// The reference amplifier `node` refers its output to in one raw
    /// evaluation; None for another kind of node.
    pub fn amplifier_reference(
        &self,
        node: NodeId,
        values: &[f64],
        env: &Env,
        signals: &[Signal],
    ) -> Option<f64> {
        let super::Node::Amplifier(a) = &self.nodes[node.index()] else {
            return None;
        };
        shift_of(self, a.reference, values, env, signals)
    }
}
