//! A bridge transducer (a load cell): span with its drift, zero, and the
//! nonlinearity and hysteresis stated as fractions of full-scale output.

use super::{Cx, Run};
use crate::eval::fault::{open_input, Fault, FaultKind, Faulted};
use crate::eval::lanes::{Column, LaneRun, Lost, Tag};
use crate::eval::plan::{EvalError, NodeId, Signal, SlotId, SourceKind};
use crate::eval::run::LANES;
use crate::model::schema;
use crate::model::typed;
use crate::model::value::Tolerance;
use crate::physics::transducer::{self, LinearityLine};

#[derive(Clone, Debug, PartialEq)]
pub struct Transducer {
    pub sensitivity: SlotId,
    pub ratiometric: bool,
    pub full_scale: f64,
    pub zero: Option<SlotId>,
    /// Nonlinearity and hysteresis, each a fraction of full-scale output,
    /// nominal 0: the nonlinearity along its shape against `linearity`'s
    /// line, the hysteresis as a bound no calibration sees.
    pub nonlinearity: Option<SlotId>,
    pub linearity: LinearityLine,
    pub hysteresis: Option<SlotId>,
    /// Zero and span coefficients per kelvin (of full scale).
    pub zero_drift: Option<SlotId>,
    pub span_drift: Option<SlotId>,
    pub input: Option<NodeId>,
    /// Bridge resistance of the transducer, Ω.
    pub r: Option<SlotId>,
}

/// The zero offset in the output's own terms (a ratio of the excitation,
/// or volts): one stated as a share of the rated output (`± 1 %`) is that
/// share of the nominal full-scale output.
fn zero_in_output(m: &typed::Transducer, zero: &Tolerance) -> Tolerance {
    if !zero.relative {
        return zero.clone();
    }
    let rated = m.sensitivity.nominal.abs();
    Tolerance {
        plus: zero.plus * rated,
        minus: zero.minus * rated,
        relative: false,
        dim: m.sensitivity_dim,
        ..zero.clone()
    }
}

pub(super) fn lower(m: &typed::Transducer, cx: &mut Cx<'_>) -> Result<Transducer, EvalError> {
    if m.full_scale == 0.0 {
        return Err(cx.not_invertible("the sensitivity is stated at zero load"));
    }
    let sensitivity = cx.measure(schema::SENSITIVITY, SourceKind::Tolerance, &m.sensitivity);
    let zero = m.zero.as_ref().map(|t| {
        cx.limit(
            schema::param::ZERO,
            SourceKind::Bound,
            &zero_in_output(m, t),
        )
    });
    let r =
        m.r.as_ref()
            .map(|r| cx.measure(schema::param::R, SourceKind::Tolerance, r));
    let mut limit = |name: &str, kind: SourceKind, t: &Option<crate::model::value::Tolerance>| {
        t.as_ref().map(|t| cx.limit(name, kind, t))
    };
    Ok(Transducer {
        sensitivity,
        ratiometric: m.ratiometric(),
        full_scale: m.full_scale,
        zero,
        nonlinearity: limit(
            schema::param::NONLINEARITY,
            SourceKind::Nonlinearity,
            &m.nonlinearity,
        ),
        linearity: m.linearity,
        hysteresis: limit(
            schema::param::HYSTERESIS,
            SourceKind::Nonlinearity,
            &m.hysteresis,
        ),
        zero_drift: limit(schema::param::ZERO_DRIFT, SourceKind::Drift, &m.zero_drift),
        span_drift: limit(schema::param::SPAN_DRIFT, SourceKind::Drift, &m.span_drift),
        input: cx.inputs.input,
        r,
    })
}

/// Its cable: each excitation lead of a ratiometric bridge open, and a
/// signal lead open. (A broken arm inside the sealed body is not
/// modelled.)
const RATIOMETRIC: &[FaultKind] = &[
    FaultKind::ExcitationLeadOpen,
    FaultKind::ExcitationReturnOpen,
    FaultKind::SignalLeadOpen,
];
const VOLTAGE_OUTPUT: &[FaultKind] = &[FaultKind::SignalLeadOpen];

impl Transducer {
    pub(super) fn faults(&self) -> &'static [FaultKind] {
        if self.ratiometric {
            RATIOMETRIC
        } else {
            VOLTAGE_OUTPUT
        }
    }

    /// An excitation lead open: no current flows in the bridge, so both
    /// signal leads sit at the excitation lead still connected, 0 V with
    /// the positive one open, the excitation with the return open, and
    /// the differential output is zero. A signal lead open: the input
    /// reading it is cut off (`fault.burnout` is the current that input
    /// sources).
    pub(super) fn faulted(&self, run: &Run<'_>, fault: &Fault) -> Result<Faulted, EvalError> {
        let Signal::Voltage { cm, rs, .. } = self.eval(run)? else {
            return Err(run.numeric("no voltage"));
        };
        let exc = match self.input.map(|n| run.s[n.index()]) {
            Some(Signal::Source(v)) => v,
            _ => 0.0,
        };
        let still_at = |cm: f64| Faulted::Signal(Signal::Voltage { v: 0.0, cm, rs });
        Ok(match fault.kind {
            FaultKind::ExcitationLeadOpen => still_at(0.0),
            FaultKind::ExcitationReturnOpen => still_at(exc),
            FaultKind::SignalLeadOpen => open_input(fault.pull, cm),
            kind => return Err(run.numeric(kind.describe())),
        })
    }

    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let slot = |o: Option<SlotId>| run.or_zero(o);
        let dt = run.env.ambient - run.plan.reference;
        let s_fs = run.values[self.sensitivity.index()];
        // Output as a ratio of excitation (or volts): span with its drift,
        // then the errors stated as fractions of full scale.
        let u = run.env.measurand / self.full_scale;
        let errors = transducer::Errors {
            zero: slot(self.zero),
            nonlinearity: slot(self.nonlinearity),
            // Hysteresis depends on the direction of approach: the
            // calibration's is not the reading's, so it sees none.
            hysteresis: if run.mode.calibrating {
                0.0
            } else {
                slot(self.hysteresis)
            },
            zero_drift: slot(self.zero_drift),
            span_drift: slot(self.span_drift),
        };
        let fraction = transducer::output(s_fs, u, self.linearity, errors, dt);
        let (v, cm) = match (self.ratiometric, self.input.map(|n| run.s[n.index()])) {
            (true, Some(Signal::Source(exc))) => (fraction * exc, exc / 2.0),
            (true, _) => {
                return Err(run.numeric("a transducer rated in mV/V needs a voltage excitation"))
            }
            (false, _) => (fraction, fraction / 2.0),
        };
        Ok(Signal::Voltage {
            v,
            cm,
            rs: self.r.map(|r| run.values[r.index()] / 2.0).unwrap_or(0.0),
        })
    }

    /// [`Transducer::eval`] in every lane of a batch.
    #[inline(always)]
    pub(super) fn eval_lanes(&self, run: &LaneRun<'_>, out: &mut Column) -> Result<(), Lost> {
        let dt = run.env.ambient - run.plan.reference;
        let s_fs = run.slot(self.sensitivity);
        let u = run.env.measurand / self.full_scale;
        let zero = run.or_zero(self.zero);
        let nonlinearity = run.or_zero(self.nonlinearity);
        // As in a single run: the calibration sees no hysteresis.
        let hysteresis = run.or_zero(self.hysteresis.filter(|_| !run.mode.calibrating));
        let zero_drift = run.or_zero(self.zero_drift);
        let span_drift = run.or_zero(self.span_drift);
        let excitation = match (self.ratiometric, self.input) {
            (true, Some(n)) => Some(run.s[n.index()].of(Tag::Source).ok_or(Lost)?),
            (true, None) => return Err(Lost),
            (false, _) => None,
        };
        out.tag = Tag::Voltage;
        for k in 0..LANES {
            let errors = transducer::Errors {
                zero: zero[k],
                nonlinearity: nonlinearity[k],
                hysteresis: hysteresis[k],
                zero_drift: zero_drift[k],
                span_drift: span_drift[k],
            };
            let fraction = transducer::output(s_fs[k], u, self.linearity, errors, dt);
            (out.x[k], out.cm[k]) = match excitation {
                Some(exc) => (fraction * exc[k], exc[k] / 2.0),
                None => (fraction, fraction / 2.0),
            };
        }
        match self.r {
            Some(r) => {
                for (rs, r) in out.rs.iter_mut().zip(run.slot(r)) {
                    *rs = r / 2.0;
                }
            }
            None => out.rs = [0.0; LANES],
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use crate::eval::lanes::{check, Lost};
    use crate::eval::node::Node;
    use crate::eval::plan::Env;
    use crate::units::ZERO_CELSIUS_K;

    /// A load cell rated in mV/V on its excitation, with every error it
    /// can state.
    const RATIOMETRIC: &str = r#"
chain hopper "h" {
    measurand mass 60 kg .. 560 kg
    ambient 5 degC .. 40 degC
    excitation supply { voltage 5 V ± 0.1 % }
    sensor cells {
        transducer
        sensitivity 2 mV/V ± 0.1 % at 600 kg
        zero ± 0.05 mV/V
        nonlinearity ± 0.02 %
        hysteresis ± 0.02 %
        zero_drift 0.002 %/K
        span_drift 0.001 %/K
        r 117 ohm ± 1 %
    }
    amplifier front {
        gain 128 ± 0.02 %
        offset 5 uV max
        input -3.5 V .. 3.5 V
        output -4.8 V .. 4.8 V
    }
    adc conv {
        bits 24
        input differential
        offset 2 uV max
    }
    convert reading { method linear }
    supply -> cells -> front -> conv -> reading
    supply -> conv.ref
}
"#;

    fn env(kg: f64, ambient_c: f64) -> Env {
        Env {
            measurand: kg,
            ambient: ambient_c + ZERO_CELSIUS_K,
            cold_junction: ambient_c + ZERO_CELSIUS_K,
        }
    }

    #[test]
    fn lanes_match_single_runs() {
        let mut plan = check::plan(RATIOMETRIC);
        let cells = check::node(&plan, "cells");
        let rows = check::spread(&plan);
        for (kg, ambient) in [(60.0, 5.0), (310.0, 25.0), (560.0, 40.0)] {
            for calibrating in [false, true] {
                let mode = check::mode(true, calibrating);
                check::matches_single_runs(&plan, cells, &rows, &env(kg, ambient), mode)
                    .expect("every lane runs");
            }
        }
        // Rated in mV/V with no excitation to scale it: no lane has an
        // output, so the batch is lost.
        let Node::Transducer(t) = &mut plan.nodes[cells.index()] else {
            panic!("a transducer");
        };
        t.input = None;
        let got = check::matches_single_runs(
            &plan,
            cells,
            &rows,
            &env(310.0, 25.0),
            check::mode(true, false),
        );
        assert_eq!(got.err(), Some(Lost));
    }
}
