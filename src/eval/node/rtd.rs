//! A resistance thermometer: its curve (IEC 60751, DIN 43760 nickel,
//! copper, or a characterised one), its class as R0 and coefficient
//! deviations, its leads and its self-heating (`eval/element.rs`).

use super::{Cx, Run};
use crate::eval::fault::{open_input, Fault, FaultKind, Faulted};
use crate::eval::lanes::{Column, LaneRun, Lost};
use crate::eval::plan::{EvalError, NodeId, Senses, Signal, SlotId, SourceKind};
use crate::model::schema;
use crate::model::typed::{self, RtdCurveName};
use crate::physics::rtd::{self, Wiring};
use crate::units::ZERO_CELSIUS_K;

#[derive(Clone, Debug, PartialEq)]
pub struct Rtd {
    pub curve: RtdCurve,
    /// Deviations of a custom curve's A, B and C (absolute, nominal
    /// 0), where their tolerances are stated.
    pub coefficient_errors: [Option<SlotId>; 3],
    pub r0: SlotId,
    /// How the leads enter the measurement.
    pub wiring: Wiring,
    /// The two leads to the element's ends, each its own source.
    pub leads: Option<(SlotId, SlotId)>,
    pub dissipation: Option<SlotId>,
    pub input: Option<NodeId>,
    pub senses: Senses,
    /// Class validity range, kelvin, when a class is given.
    pub valid: Option<(f64, f64)>,
    /// The class's R0 and coefficient deviations (relative, nominal
    /// 0), when a class is given.
    pub deviation: Option<(SlotId, SlotId)>,
}

#[derive(Clone, Copy, Debug, PartialEq)]
pub enum RtdCurve {
    /// Callendar–Van Dusen with A, B, C.
    Cvd { a: f64, b: f64, c: f64 },
    /// DIN 43760 nickel polynomial.
    Nickel,
    /// Linear copper element.
    Copper,
}

/// Callendar–Van Dusen is defined over −200 … 850 °C (IEC 60751).
const CVD_RANGE_C: (f64, f64) = (-200.0, 850.0);
/// DIN 43760 nickel curve range (recalled from memory of the standard).
const NICKEL_RANGE_C: (f64, f64) = (-60.0, 180.0);
/// Copper elements: common practice limits the linear model to −50 … 150 °C.
const COPPER_RANGE_C: (f64, f64) = (-50.0, 150.0);

impl RtdCurve {
    /// Where the curve is defined, °C.
    pub fn range_c(self) -> (f64, f64) {
        match self {
            RtdCurve::Cvd { .. } => CVD_RANGE_C,
            RtdCurve::Nickel => NICKEL_RANGE_C,
            RtdCurve::Copper => COPPER_RANGE_C,
        }
    }

    fn iec() -> RtdCurve {
        let k = rtd::CvdCoefficients::IEC_60751;
        RtdCurve::Cvd {
            a: k.a,
            b: k.b,
            c: k.c,
        }
    }
}

/// A standard curve's R0 and shape; None for a custom one.
fn standard(name: RtdCurveName) -> Option<(f64, RtdCurve)> {
    Some(match name {
        RtdCurveName::Pt100 => (100.0, RtdCurve::iec()),
        RtdCurveName::Pt500 => (500.0, RtdCurve::iec()),
        RtdCurveName::Pt1000 => (1000.0, RtdCurve::iec()),
        RtdCurveName::Ni100 => (100.0, RtdCurve::Nickel),
        RtdCurveName::Ni120 => (120.0, RtdCurve::Nickel),
        RtdCurveName::Ni1000 => (1000.0, RtdCurve::Nickel),
        RtdCurveName::Cu10 => (10.0, RtdCurve::Copper),
        RtdCurveName::Cu100 => (100.0, RtdCurve::Copper),
        RtdCurveName::Custom => return None,
    })
}

pub(super) fn lower(m: &typed::Rtd, cx: &mut Cx<'_>) -> Result<Rtd, EvalError> {
    let (default_r0, curve) = match (standard(m.curve), m.coefficients.as_deref()) {
        (Some(standard), _) => standard,
        (None, Some([a, b, c])) => (
            0.0,
            RtdCurve::Cvd {
                a: a.nominal,
                b: b.nominal,
                c: c.nominal,
            },
        ),
        (None, None) => return Err(cx.not_invertible("a custom curve needs `coefficients`")),
    };
    let r0 = match &m.r0 {
        Some(r0) => cx.measure(schema::param::R0, SourceKind::Tolerance, r0),
        None => cx.exact(schema::param::R0, default_r0),
    };
    // A characterised probe's coefficients, each its own source: a
    // deviation of nominal 0 within its tolerance.
    let mut coefficient_errors = [None; 3];
    if let (Some(coefficients), RtdCurve::Cvd { .. }) = (&m.coefficients, curve) {
        for (k, (c, name)) in coefficients.iter().zip(["a", "b", "c"]).enumerate() {
            coefficient_errors[k] = c.tolerance.as_ref().map(|t| {
                let (minus, plus, normal) = super::limits(t, c.nominal);
                let id = format!("coefficient_{name}");
                cx.add(&id, SourceKind::Tolerance, 0.0, minus, plus, normal)
            });
        }
    }
    // Each wire has its own resistance within the stated tolerance: two
    // independent sources, which the wiring combines.
    let leads = m.lead.as_ref().map(|lead| {
        (
            cx.measure("lead_1", SourceKind::Lead, lead),
            cx.measure("lead_2", SourceKind::Lead, lead),
        )
    });
    let dissipation = m
        .dissipation
        .as_ref()
        .map(|d| cx.measure(schema::param::DISSIPATION, SourceKind::Tolerance, d));
    let valid = m.class.map(|class| {
        let (lo, hi) = class.wire_wound_range_c();
        (lo + ZERO_CELSIUS_K, hi + ZERO_CELSIUS_K)
    });
    // The class as the R0 and coefficient tolerances it comes from, so a
    // calibration removes what it really removes.
    let deviation = m.class.map(|class| {
        let d = rtd::class_deviation(class);
        (
            cx.add("class_r0", SourceKind::Sensor, 0.0, d.r0, d.r0, false),
            cx.add(
                "class_alpha",
                SourceKind::Sensor,
                0.0,
                d.alpha,
                d.alpha,
                false,
            ),
        )
    });
    if let Some(t) = &m.tolerance {
        cx.stated_error(schema::param::TOLERANCE, t);
    }
    Ok(Rtd {
        curve,
        coefficient_errors,
        r0,
        wiring: m.wiring,
        leads,
        dissipation,
        input: cx.inputs.input,
        senses: cx.senses,
        valid,
        deviation,
    })
}

/// An element opens (a broken wire or element) or shorts (a crushed
/// cable). On a current source its leads fail one by one too, by how the
/// wiring is modelled (`physics::rtd::lead_series_resistance`):
///
/// - 2-wire: wires 1 and 2 carry the current and are measured with the
///   element, so either open is the element open and the two shorted at
///   the probe are the element shorted: no rows of their own.
/// - 3-wire: wire 1 carries the excitation to one end; the compensation
///   lead (wire 2) carries an equal compensating current to the other
///   end, and a third wire returns both; the converter reads wire 1
///   against wire 2, so the leads enter as L1 − L2. Wire 1 open is the
///   element open (the source runs to its compliance); the compensation
///   lead open is its own fault; the return wire shorted to wire 2 joins
///   two wires that already meet at the element and changes nothing.
/// - 4-wire: force leads carry the current in and back, sense leads read
///   the element's ends and carry nothing. Each of the four open is its
///   own fault, and so are the sense leads shorted together; a force lead
///   shorted to the sense lead at its own end changes nothing, and one
///   across the element is the element shorted.
///
/// In a bridge or divider arm the leads' own faults are not modelled.
const TWO_WIRE: &[FaultKind] = &[FaultKind::Open, FaultKind::Short];
const THREE_WIRE: &[FaultKind] = &[
    FaultKind::Open,
    FaultKind::Short,
    FaultKind::CompensationLeadOpen,
];
const FOUR_WIRE: &[FaultKind] = &[
    FaultKind::Open,
    FaultKind::Short,
    FaultKind::ForceLeadOpen,
    FaultKind::ReturnLeadOpen,
    FaultKind::SenseLeadOpen,
    FaultKind::ReturnSenseLeadOpen,
    FaultKind::SenseLeadsShorted,
];

impl Rtd {
    /// Its faults, by its wiring and what drives it.
    pub(super) fn faults(&self) -> &'static [FaultKind] {
        match (self.wiring, self.input.is_some()) {
            (_, false) | (Wiring::TwoWire, true) => TWO_WIRE,
            (Wiring::ThreeWire, true) => THREE_WIRE,
            (Wiring::FourWire, true) => FOUR_WIRE,
        }
    }

    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let current = run.current_into(self.input);
        let r = run
            .plan
            .driven_element(run.i, run.values, run.env, current)?;
        Ok(run.element(r + self.lead(run), self.input))
    }

    /// [`Rtd::eval`] in every lane of a batch: the element's curve and
    /// self-heating over the column, then each lane's leads.
    #[inline(always)]
    pub(super) fn eval_lanes(&self, run: &LaneRun<'_>, out: &mut Column) -> Result<(), Lost> {
        let current = run.current_into(self.input);
        let mut r = run.plan.driven_elements(run.i, run, current)?;
        // Lead by lead from the slots' columns; + 0.0 without leads, as
        // the single run adds.
        let leads = self.leads.map(|(a, b)| (run.slot(a), run.slot(b)));
        for (k, r) in r.iter_mut().enumerate() {
            *r += leads.map_or(0.0, |(a, b)| self.measured_lead(a[k], b[k]));
        }
        run.element_into(&r, self.input, out);
        Ok(())
    }

    /// The leads' resistance in the measurement, by the wiring.
    fn lead(&self, run: &Run<'_>) -> f64 {
        self.lead_of(run.values)
    }

    #[inline(always)]
    fn lead_of(&self, values: &[f64]) -> f64 {
        self.leads
            .map(|(a, b)| self.measured_lead(values[a.index()], values[b.index()]))
            .unwrap_or(0.0)
    }

    /// The leads' resistance the element's value carries, wires 1 and 2
    /// of `lead_1` and `lead_2` Ω: on a current source, as the wiring
    /// compensates; in a bridge or divider arm, what is in its own arm
    /// (the bridge puts a three-wire element's wire 2 in the next arm).
    #[inline(always)]
    fn measured_lead(&self, lead_1: f64, lead_2: f64) -> f64 {
        match self.input {
            Some(_) => rtd::lead_series_resistance(self.wiring, lead_1, lead_2),
            None => rtd::arm_lead_resistance(self.wiring, lead_1, lead_2),
        }
    }

    /// Each lead's own resistance, Ω (0 where no lead is stated).
    fn each_lead(&self, run: &Run<'_>) -> (f64, f64) {
        self.leads
            .map(|(a, b)| (run.values[a.index()], run.values[b.index()]))
            .unwrap_or((0.0, 0.0))
    }

    /// The element or one of its leads failed. `fault.burnout` is the
    /// current the stage reading the element sources into an open input.
    pub(super) fn faulted(&self, run: &Run<'_>, fault: &Fault) -> Result<Faulted, EvalError> {
        let kind = fault.kind;
        let compliance = self.input.and_then(|n| run.plan.compliance(n, run.s));
        let healthy = || match self.eval(run)? {
            Signal::Voltage { v, cm, rs } => Ok((v, cm, rs)),
            _ => Err(run.numeric("no voltage")),
        };
        let voltage = |v: f64, cm: f64, rs: f64| Faulted::Signal(Signal::Voltage { v, cm, rs });
        let no_compliance = Faulted::Undetermined("the current source's compliance is not stated");
        Ok(match kind {
            FaultKind::Open | FaultKind::Short => {
                return run.element_fault(kind, self.input, self.lead(run))
            }
            // The compensating current has no path: its source runs to its
            // compliance, and so does the converter's input on that lead,
            // while wire 1 still reads the element with the leads it
            // crosses (wire 1 and the return, taken as wire 2's value).
            FaultKind::CompensationLeadOpen => {
                let Some(vc) = compliance else {
                    return Ok(no_compliance);
                };
                let (_, cm, rs) = healthy()?;
                let a = run.current_into(self.input).unwrap_or(0.0);
                let (l1, l2) = self.each_lead(run);
                let r = rs - self.lead(run);
                let bottom = cm - a * rs / 2.0;
                let high = bottom + a * (r + l1 + l2);
                voltage(high - vc, (high + vc) / 2.0, r + l1 + l2)
            }
            // The loop is broken, so the element carries nothing (the
            // source is starved): both sense leads sit at the end still
            // joined to a force lead, the return or the source's
            // compliance.
            FaultKind::ForceLeadOpen => {
                let (_, cm, rs) = healthy()?;
                voltage(0.0, cm, rs)
            }
            FaultKind::ReturnLeadOpen => {
                let Some(vc) = compliance else {
                    return Ok(no_compliance);
                };
                let (_, _, rs) = healthy()?;
                voltage(0.0, vc, rs)
            }
            FaultKind::SenseLeadOpen | FaultKind::ReturnSenseLeadOpen => {
                let (_, cm, _) = healthy()?;
                open_input(fault.pull, cm)
            }
            FaultKind::SenseLeadsShorted => {
                let (_, cm, rs) = healthy()?;
                voltage(0.0, cm, rs)
            }
            _ => return Err(run.numeric(kind.describe())),
        })
    }
}
