//! A thermocouple chain's conversion, which needs the cold junction's
//! temperature as well as the code. By the law of intermediate
//! temperatures, E(t, tj) = E(t) − E(tj) (NIST Monograph 175, §2), the
//! firmware reads the couple's voltage from the code as the nominal chain
//! gives it with the junction at the reference, V = E(x_ref(code)) −
//! E(t_ref); adds the EMF of the junction's temperature; and converts the
//! sum back: three breakpoint tables, sized together until the composite
//! meets the target against catena's exact inverse. The junction's
//! temperature comes from the chain's own cold-junction conversion, when
//! it has one, exported beside them.

use super::model::{chosen_size, largest_error, spec_curve, Curve, Exact, Origin};
use crate::analysis::window::CodeWindow;
use crate::eval::{Conversion, Env, EvalError, Node, NodeId, Plan};
use crate::physics::adc::Polarity;
use crate::physics::thermocouple::{self, ThermocoupleType};
use crate::units::ZERO_CELSIUS_K;

/// How far beyond the ambient range the junction tables reach, K: a
/// junction reading off by its tolerances still falls inside.
const JUNCTION_MARGIN_K: f64 = 10.0;
/// Junction temperatures the composite error is evaluated at.
const JUNCTION_SAMPLES: usize = 5;
/// Codes it is evaluated at, at each (evenly spread over the window's).
const JUNCTION_CODES: usize = 8193;

#[derive(Clone, Debug, PartialEq)]
pub struct Junction {
    pub couple: ThermocoupleType,
    /// Code → the couple's voltage, mV.
    pub emf: Curve,
    /// Junction temperature (reading unit) → its EMF, mV.
    pub junction_emf: Curve,
    /// EMF, mV → temperature (reading unit).
    pub temperature: Curve,
    /// The junction temperatures the tables cover (reading unit).
    pub junction_range: (f64, f64),
    /// The chain's cold-junction conversion, when it has one.
    pub cj: Option<ColdJunctionConversion>,
}

impl Junction {
    /// The reading for a code with the junction at `cj` (reading unit).
    pub fn reading(&self, code: f64, cj: f64) -> f64 {
        self.temperature
            .at(self.emf.at(code) + self.junction_emf.at(cj))
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct ColdJunctionConversion {
    pub stage: String,
    pub converter: String,
    pub bits: u32,
    pub signed: bool,
    pub curve: Curve,
    pub origin: Origin,
    /// Its largest difference from its exact inverse over `codes`.
    pub max_error: f64,
    /// The codes the ambient range gives (nominal), low first.
    pub codes: (f64, f64),
    pub samples: usize,
}

/// The couple that senses the measurand, when the chain has one.
pub fn measuring_couple(plan: &Plan) -> Option<ThermocoupleType> {
    plan.nodes.iter().find_map(|n| match n {
        Node::Thermocouple(t) if t.senses == crate::eval::Senses::Measurand => Some(t.ty),
        Node::Excitation(_)
        | Node::Rtd(_)
        | Node::Thermocouple(_)
        | Node::Thermistor(_)
        | Node::IcVoltage(_)
        | Node::IcCurrent(_)
        | Node::StrainGauge(_)
        | Node::Transducer(_)
        | Node::Resistor(_)
        | Node::Bridge(_)
        | Node::Amplifier(_)
        | Node::Filter(_)
        | Node::Adc(_)
        | Node::Convert(_) => None,
    })
}

/// What a junction conversion is built from.
pub struct Inputs<'a> {
    pub plan: &'a Plan,
    pub conversion: &'a Conversion,
    pub cj: Option<NodeId>,
    pub couple: ThermocoupleType,
    pub window: &'a CodeWindow,
    pub samples: &'a [f64],
    pub target: f64,
    pub to_unit: &'a dyn Fn(f64) -> f64,
    pub ambient: (f64, f64),
}

fn out_of_range(plan: &Plan, what: &str) -> EvalError {
    EvalError::Numeric {
        stage: plan.names[plan.reading.index()].clone(),
        what: what.to_string(),
    }
}

/// The composite's largest error against the exact inverse.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Worst {
    pub error: f64,
    /// Where: the code, and the junction (reading unit).
    pub code: f64,
    pub junction: f64,
    /// Points it was evaluated at.
    pub points: usize,
}

/// The exact readings the composite is held to: (code, junction K) and
/// the reading there (reading unit).
struct Truth {
    points: Vec<(f64, f64)>,
    values: Vec<f64>,
}

impl Truth {
    fn new(i: &Inputs, exact: &Exact) -> Result<Truth, EvalError> {
        // The composite is smooth in the code: a spread of codes will do.
        let step = i.samples.len().div_ceil(JUNCTION_CODES).max(1);
        let mut codes: Vec<f64> = i.samples.iter().step_by(step).copied().collect();
        if codes.last() != i.samples.last() {
            codes.extend(i.samples.last());
        }
        let points: Vec<(f64, f64)> = junction_grid(i.plan, i.ambient)
            .into_iter()
            .flat_map(|cj| codes.iter().map(move |&c| (c, cj)))
            .collect();
        let values = points
            .iter()
            .map(|&(c, cj)| exact.reading_at_junction(c, cj).map(i.to_unit))
            .collect::<Result<_, _>>()?;
        Ok(Truth { points, values })
    }

    /// The largest difference of `j` from the truth: (error, code,
    /// junction in the reading unit).
    fn worst(&self, j: &Junction, to_unit: &dyn Fn(f64) -> f64) -> (f64, f64, f64) {
        let mut worst = (0.0, self.points[0].0, to_unit(self.points[0].1));
        for (&(c, cj), &want) in self.points.iter().zip(&self.values) {
            let d = (j.reading(c, to_unit(cj)) - want).abs();
            if d > worst.0 {
                worst = (d, c, to_unit(cj));
            }
        }
        worst
    }
}

/// The three tables, sized together, and the junction's own conversion;
/// with the composite's largest error against the exact inverse, where it
/// is (code, junction in the reading unit) and how many points it was
/// evaluated at.
pub fn junction(i: &Inputs) -> Result<(Junction, Worst), EvalError> {
    let plan = i.plan;
    let exact = Exact::new(plan, i.conversion)?;
    let e = |t_k: f64| {
        thermocouple::emf_mv(i.couple, t_k - ZERO_CELSIUS_K)
            .map_err(|_| out_of_range(plan, "a temperature beyond the couple's EMF function"))
    };
    let e_ref = e(plan.reference)?;
    let junction_k = junction_span(plan, i.ambient);
    let truth = Truth::new(i, &exact)?;
    let volts = |c: f64| -> Result<f64, EvalError> {
        Ok(e(exact.at_junction(c, plan.reference)?)? - e_ref)
    };
    let (v_lo, v_hi) = (volts(i.window.low as f64)?, volts(i.window.high as f64)?);
    let (j_lo, j_hi) = (e(junction_k.0)?, e(junction_k.1)?);
    let emf_span = (
        v_lo.min(v_hi) + j_lo.min(j_hi),
        v_lo.max(v_hi) + j_lo.max(j_hi),
    );
    let to_unit = i.to_unit;
    let build = |n: usize| -> Result<Junction, EvalError> {
        let codes = crate::eval::grid((i.window.low as f64, i.window.high as f64), n);
        let t_of = |mv: f64| {
            thermocouple::temperature_c(i.couple, mv)
                .map(|t| to_unit(t + ZERO_CELSIUS_K))
                .map_err(|_| out_of_range(plan, "an EMF beyond the couple's inverse function"))
        };
        Ok(Junction {
            couple: i.couple,
            emf: table(codes, volts)?,
            junction_emf: table_mapped(&crate::eval::grid(junction_k, n), to_unit, e)?,
            temperature: table(crate::eval::grid(emf_span, n), t_of)?,
            junction_range: (to_unit(junction_k.0), to_unit(junction_k.1)),
            cj: None,
        })
    };
    let error_of = |j: &Junction| truth.worst(j, to_unit).0;
    let mut junction = chosen_size(i.window, i.target, build, error_of)?;
    if let Some(node) = i.cj {
        // Judged over the ambient range, where the junction sits.
        let ambient = (
            i.ambient.0.min(plan.reference),
            i.ambient.1.max(plan.reference),
        );
        junction.cj = Some(cold_junction_conversion(
            plan, node, ambient, i.target, to_unit,
        )?);
    }
    let (error, code, cj) = truth.worst(&junction, to_unit);
    let worst = Worst {
        error,
        code,
        junction: cj,
        points: truth.points.len(),
    };
    Ok((junction, worst))
}

/// The junction temperatures the composite is judged at, K.
fn junction_grid(plan: &Plan, ambient: (f64, f64)) -> Vec<f64> {
    crate::eval::grid(junction_span(plan, ambient), JUNCTION_SAMPLES)
}

/// The junction temperatures the tables cover, K.
fn junction_span(plan: &Plan, ambient: (f64, f64)) -> (f64, f64) {
    (
        ambient.0.min(plan.reference) - JUNCTION_MARGIN_K,
        ambient.1.max(plan.reference) + JUNCTION_MARGIN_K,
    )
}

/// A table of `f` at the given inputs (rising).
fn table(xs: Vec<f64>, f: impl Fn(f64) -> Result<f64, EvalError>) -> Result<Curve, EvalError> {
    let values = xs.iter().map(|&x| f(x)).collect::<Result<Vec<_>, _>>()?;
    Ok(Curve::Table { codes: xs, values })
}

/// A table of `f` at SI inputs, keyed by the inputs in the reading unit.
fn table_mapped(
    xs_si: &[f64],
    to_unit: &dyn Fn(f64) -> f64,
    f: impl Fn(f64) -> Result<f64, EvalError>,
) -> Result<Curve, EvalError> {
    let values = xs_si.iter().map(|&x| f(x)).collect::<Result<Vec<_>, _>>()?;
    Ok(Curve::Table {
        codes: xs_si.iter().map(|&x| to_unit(x)).collect(),
        values,
    })
}

/// The chain's cold-junction conversion: the spec's approximation, or a
/// table chosen over the codes the ambient range gives.
fn cold_junction_conversion(
    plan: &Plan,
    node: NodeId,
    junction_k: (f64, f64),
    target: f64,
    to_unit: &dyn Fn(f64) -> f64,
) -> Result<ColdJunctionConversion, EvalError> {
    let Node::Convert(crate::eval::node::Convert { conversion, .. }) = &plan.nodes[node.index()]
    else {
        return Err(out_of_range(
            plan,
            "the cold junction's reading is no conversion",
        ));
    };
    let Node::Adc(adc) = &plan.nodes[conversion.adc.index()] else {
        return Err(out_of_range(
            plan,
            "the cold junction's conversion has no converter",
        ));
    };
    let code_at = |t: f64| {
        let env = Env {
            measurand: plan.range.0,
            ambient: plan.reference,
            cold_junction: t,
        };
        plan.exact_code(&plan.nominal, &env, conversion.adc)
    };
    let (a, b) = (code_at(junction_k.0)?, code_at(junction_k.1)?);
    let codes = (a.min(b).floor(), a.max(b).ceil());
    let window = CodeWindow {
        reach: codes,
        sigma_codes: 0.0,
        k: 0.0,
        low: codes.0 as i64,
        high: codes.1 as i64,
        rails: (codes.0 as i64, codes.1 as i64),
        channels: Vec::new(),
    };
    let exact = Exact::new(plan, conversion)?;
    let samples: Vec<f64> = (window.low..=window.high).map(|c| c as f64).collect();
    let truth = samples
        .iter()
        .map(|&c| exact.uncalibrated(c).map(to_unit))
        .collect::<Result<Vec<_>, _>>()?;
    let (curve, origin) = match spec_curve(conversion, to_unit) {
        Some((curve, method)) => (curve, Origin::Spec(method)),
        None => {
            let build = |n: usize| {
                table(crate::eval::grid(codes, n), |c| {
                    exact.uncalibrated(c).map(to_unit)
                })
            };
            let error_of = |curve: &Curve| largest_error(&samples, &truth, |c| curve.at(c)).0;
            (
                chosen_size(&window, target, build, error_of)?,
                Origin::Chosen,
            )
        }
    };
    let max_error = largest_error(&samples, &truth, |c| curve.at(c)).0;
    Ok(ColdJunctionConversion {
        stage: plan.names[node.index()].clone(),
        converter: plan.names[conversion.adc.index()].clone(),
        bits: adc.bits,
        signed: adc.polarity == Polarity::Bipolar,
        curve,
        origin,
        max_error,
        codes,
        samples: samples.len(),
    })
}
