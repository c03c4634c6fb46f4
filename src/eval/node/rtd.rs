//! A resistance thermometer: its curve (IEC 60751, DIN 43760 nickel,
//! copper, or a characterised one), its class as R0 and coefficient
//! deviations, its leads and its self-heating (`eval/element.rs`).

use super::{Cx, Run};
use crate::eval::plan::{EvalError, NodeId, Senses, Signal, SlotId, SourceKind};
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
        Some(r0) => cx.measure("r0", SourceKind::Tolerance, r0),
        None => cx.exact("r0", default_r0),
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
        .map(|d| cx.measure("dissipation", SourceKind::Tolerance, d));
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
        cx.stated_error("tolerance", t);
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

impl Rtd {
    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let current = run.current_into(self.input);
        let r = run
            .plan
            .driven_element(run.i, run.values, run.env, current)?;
        let lead = self
            .leads
            .map(|(a, b)| rtd::lead_series_resistance(self.wiring, run.values[a], run.values[b]))
            .unwrap_or(0.0);
        Ok(run.element(r + lead, self.input))
    }
}
