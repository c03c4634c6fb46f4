//! A thermocouple (NIST Monograph 175): its EMF against its cold
//! junction, its IEC 60584-1 class, and the bias that holds a floating
//! couple's common mode.

use super::{Cx, Run};
use crate::eval::fault::{Fault, FaultKind, Faulted, FLOATING, OPEN_OHMS};
use crate::eval::lanes::{celsius_within, Column, LaneRun, Lost, Tag};
use crate::eval::plan::SourceKind;
use crate::eval::plan::{
    ClassTolerance, DriftSlot, Env, EvalError, NodeId, Plan, Senses, Signal, SlotId,
};
use crate::eval::run::within;
use crate::eval::run::LANES;
use crate::model::schema;
use crate::model::typed::{self, ColdJunction};
use crate::physics::strain;
use crate::physics::thermocouple::{self, ThermocoupleType};
use crate::units::ZERO_CELSIUS_K;

#[derive(Clone, Debug, PartialEq)]
pub struct Thermocouple {
    pub ty: ThermocoupleType,
    pub senses: Senses,
    /// IEC 60584-1 tolerance class, when given: it also bounds the
    /// range the thermocouple may be used over.
    pub class: Option<u8>,
    /// The voltage its common mode is biased to (0 V when not), with
    /// its drift.
    pub bias: Option<(SlotId, Option<DriftSlot>)>,
    /// The resistor from its positive input to the bias point, Ω: with
    /// the couple whole its loop shunts it; open, it is all the input
    /// sees.
    pub bias_resistor: Option<SlotId>,
    /// The loop's resistance, both legs and their extension, Ω.
    pub lead: Option<SlotId>,
}

pub(super) fn lower(m: &typed::Thermocouple, cx: &mut Cx<'_>) -> Result<Thermocouple, EvalError> {
    if let Some(c) = m.class {
        let slot = cx.add(
            schema::param::CLASS,
            SourceKind::Sensor,
            0.0,
            1.0,
            1.0,
            false,
        );
        cx.sense_error.class = Some((ClassTolerance::Thermocouple(m.ty, c), slot));
    }
    if let Some(t) = &m.tolerance {
        cx.stated_error(schema::param::TOLERANCE, t);
    }
    match &m.cold_junction {
        Some(ColdJunction::Error(t)) => {
            cx.cj_error = Some(cx.limit(schema::COLD_JUNCTION, SourceKind::ColdJunction, t));
        }
        // The sensing stage is wired to the conversion's `cj` input.
        Some(ColdJunction::Stage(_)) | None => {}
    }
    let bias = m.bias_voltage.as_ref().map(|b| {
        (
            cx.measure(schema::param::BIAS_VOLTAGE, SourceKind::CommonMode, b),
            cx.drift_of(schema::param::BIAS_VOLTAGE, b),
        )
    });
    let bias_resistor = m
        .bias_resistor
        .as_ref()
        .map(|r| cx.measure(schema::param::BIAS_RESISTOR, SourceKind::Tolerance, r));
    let lead = m
        .lead
        .as_ref()
        .map(|l| cx.measure(schema::param::LEAD, SourceKind::Lead, l));
    Ok(Thermocouple {
        ty: m.ty,
        senses: cx.senses,
        class: m.class,
        bias,
        bias_resistor,
        lead,
    })
}

/// A couple burns out (opens) or is wired with its legs swapped.
pub(super) const FAULTS: &[FaultKind] = &[FaultKind::Open, FaultKind::Reversed];

impl Thermocouple {
    /// Open: no EMF, and the input's burnout current has only the bias
    /// resistor (else the open input's insulation) to flow through, so the
    /// stage reading it sees I × R (`fault::Pull::lift`); without a
    /// burnout current the open input floats and nothing determines its
    /// code. Reversed: the EMF with its sign turned.
    pub(super) fn faulted(&self, run: &Run<'_>, fault: &Fault) -> Result<Faulted, EvalError> {
        let healthy = self.eval(run)?;
        let Signal::Voltage { v, cm, rs } = healthy else {
            return Err(run.numeric("no voltage"));
        };
        Ok(match fault.kind {
            FaultKind::Reversed => Faulted::Signal(Signal::Voltage { v: -v, cm, rs }),
            FaultKind::Open => match fault.pull {
                Some(_) => {
                    let r = self
                        .bias_resistor
                        .map(|s| run.values[s.index()])
                        .unwrap_or(OPEN_OHMS);
                    Faulted::Signal(Signal::Voltage { v: 0.0, cm, rs: r })
                }
                None => Faulted::Undetermined(FLOATING),
            },
            _ => return Err(run.numeric(fault.kind.describe())),
        })
    }

    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let sensed = run.plan.sensed(run.i, self.senses, run.env, run.values);
        let v = self.emf_v(run.plan, run.i, sensed, run.env, run.junction_mv)?;
        // A couple floats: its common mode is where a bias holds it, else
        // 0 V.
        let cm = self
            .bias
            .map(|(b, drift)| run.drifted(run.values[b.index()], drift))
            .unwrap_or(0.0);
        let rs = self.source_resistance(
            self.lead.map(|s| run.values[s.index()]),
            self.bias_resistor.map(|s| run.values[s.index()]),
        );
        Ok(Signal::Voltage { v, cm, rs })
    }

    /// The resistance, Ω, the input sees across the whole couple: its
    /// loop (`lead`, none where unstated) shunting the bias resistor.
    #[inline(always)]
    fn source_resistance(&self, lead: Option<f64>, bias_resistor: Option<f64>) -> f64 {
        match (lead, bias_resistor) {
            (Some(l), Some(r)) => strain::parallel(l, r),
            (Some(l), None) => l,
            (None, _) => 0.0,
        }
    }

    /// [`Thermocouple::eval`] in every lane of a batch.
    #[inline(always)]
    pub(super) fn eval_lanes(&self, run: &LaneRun<'_>, out: &mut Column) -> Result<(), Lost> {
        out.tag = Tag::Voltage;
        let ty = self.ty;
        let mut t = [0.0; LANES];
        run.sensed_into(run.i, self.senses, &mut t);
        // As `emf_v` lane by lane: the range, the junction, the couple.
        celsius_within(&mut t, ty.range_c())?;
        let at_junction = match run.junction_mv {
            Some(e) => e,
            None => thermocouple::emf_mv(ty, junction_c(ty, run.env)).map_err(|_| Lost)?,
        };
        let mut e = [0.0; LANES];
        thermocouple::emf_mv_each(ty, &t, &mut e).map_err(|_| Lost)?;
        for (v, e) in out.x.iter_mut().zip(e) {
            *v = (e - at_junction) * 1e-3;
        }
        match self.bias {
            Some((b, drift)) => run.drifted_into(run.slot(b), drift, &mut out.cm),
            None => out.cm = [0.0; LANES],
        }
        let lead = self.lead.map(|s| run.slot(s));
        let bias_resistor = self.bias_resistor.map(|s| run.slot(s));
        for (k, rs) in out.rs.iter_mut().enumerate() {
            *rs = self.source_resistance(lead.map(|l| l[k]), bias_resistor.map(|r| r[k]));
        }
        Ok(())
    }

    /// The couple's EMF, V, at the temperature it senses (`sensed`, K)
    /// against its cold junction (`junction_mv` when the caller worked it
    /// out once for many runs).
    #[inline(always)]
    fn emf_v(
        &self,
        plan: &Plan,
        i: NodeId,
        sensed: f64,
        env: &Env,
        junction_mv: Option<f64>,
    ) -> Result<f64, EvalError> {
        let ty = self.ty;
        let range = ty.range_c();
        let t = sensed - ZERO_CELSIUS_K;
        // Messages are built only on the way out: this runs in every
        // Monte Carlo trial.
        let kind = || format!("type {} thermocouple", ty.letter());
        let t = within(t, range)
            .ok_or_else(|| plan.out_of_range(i, &kind(), t + ZERO_CELSIUS_K, range))?;
        let e = |t_c: f64| {
            thermocouple::emf_mv(ty, t_c)
                .map_err(|e| plan.out_of_range(i, &kind(), t_c + ZERO_CELSIUS_K, (e.low, e.high)))
        };
        let at_junction = match junction_mv {
            Some(e) => e,
            None => e(junction_c(ty, env))?,
        };
        Ok((e(t)? - at_junction) * 1e-3)
    }
}

/// The cold junction's temperature for a couple of type `ty`, °C, held to
/// the type's range (a junction beyond it is the sensor's finding, not the
/// couple's).
pub(in crate::eval) fn junction_c(ty: ThermocoupleType, env: &Env) -> f64 {
    let tj = env.cold_junction - ZERO_CELSIUS_K;
    within(tj, ty.range_c()).unwrap_or(tj)
}
