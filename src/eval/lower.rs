//! A checked chain to an evaluation plan: stages in topological order,
//! every numeric parameter in a slot, each conversion fitted.

use petgraph::algo::toposort;
use petgraph::graph::DiGraph;

use super::convert::{Calibration, Conversion, Method};
use super::plan::{
    AdcOffset, AmpReference, BridgeKind, ClassTolerance, DriftSlot, Env, EvalError, Node, NodeId,
    Plan, RtdCurve, SenseError, Senses, Slot, SlotId, SourceKind, ThermistorCurve,
};
use super::run::{within, MAX_NODES};
use super::stated::Stated;
use crate::model::ports::Port;
use crate::model::value::{Basis, Measure, ParamValue, Tolerance};
use crate::model::{Chain, Stage};
use crate::physics::adc::Polarity;
use crate::physics::rtd::{self, ToleranceClass};
use crate::physics::thermocouple::ThermocoupleType;
use crate::physics::transducer::LinearityLine;
use crate::syntax::ast::StageKind;
use crate::units::{Dim, ZERO_CELSIUS_K};

/// How far beyond the measurand range the exact inverse looks, as a
/// fraction of the span, so that over-range readings are still found.
const DOMAIN_MARGIN: f64 = 1.0;
/// The cold-junction conversion looks this far beyond the ambient range, K.
const CJ_MARGIN_K: f64 = 30.0;

struct Slots {
    slots: Vec<Slot>,
}

impl Slots {
    fn add(&mut self, id: String, nominal: f64, minus: f64, plus: f64, normal: bool) -> SlotId {
        let kind = if minus == 0.0 && plus == 0.0 {
            SourceKind::Exact
        } else {
            SourceKind::of(&id)
        };
        self.slots.push(Slot {
            id,
            kind,
            nominal,
            minus,
            plus,
            normal,
        });
        self.slots.len() - 1
    }

    fn exact(&mut self, id: String, nominal: f64) -> SlotId {
        self.add(id, nominal, 0.0, 0.0, false)
    }

    /// A measure: its nominal and its tolerance as absolute limits. A
    /// bound (`20 uV max`) has nominal zero.
    fn measure(&mut self, id: String, m: &Measure) -> SlotId {
        let nominal = if m.max { 0.0 } else { m.nominal };
        let (minus, plus, normal) = match &m.tolerance {
            Some(t) => limits(t, m.nominal),
            None if m.max => (m.nominal.abs(), m.nominal.abs(), false),
            None => (0.0, 0.0, false),
        };
        self.add(id, nominal, minus, plus, normal)
    }

    /// A limit around a nominal of zero.
    fn limit(&mut self, id: String, t: &Tolerance) -> SlotId {
        self.add(id, 0.0, t.minus, t.plus, t.normal)
    }

    /// A drift: the coefficient's sign is unknown, so nominal zero and the
    /// stated value as a limit either way.
    fn drift(&mut self, id: String, per_kelvin: f64, relative: bool) -> DriftSlot {
        let slot = self.add(id, 0.0, per_kelvin.abs(), per_kelvin.abs(), false);
        DriftSlot { slot, relative }
    }
}

fn limits(t: &Tolerance, nominal: f64) -> (f64, f64, bool) {
    if t.relative {
        (t.minus * nominal.abs(), t.plus * nominal.abs(), t.normal)
    } else {
        (t.minus, t.plus, t.normal)
    }
}

fn measure<'a>(stage: &'a Stage, name: &str) -> Option<&'a Measure> {
    match stage.param(name) {
        Some(ParamValue::Measure(m)) => Some(m),
        _ => None,
    }
}

fn word<'a>(stage: &'a Stage, name: &str) -> Option<&'a str> {
    match stage.param(name) {
        Some(ParamValue::Word(w)) => Some(w.as_str()),
        _ => None,
    }
}

fn count(stage: &Stage, name: &str) -> Option<u32> {
    match stage.param(name) {
        Some(ParamValue::Count(n)) => Some(*n),
        _ => None,
    }
}

fn not_invertible(stage: &str, what: impl Into<String>) -> EvalError {
    EvalError::NotInvertible {
        stage: stage.to_string(),
        what: what.into(),
    }
}

/// Lowers a chain that checked without errors.
pub fn lower(chain: &Chain) -> Result<Plan, EvalError> {
    let (plan, fitted) = lower_stages(chain)?;
    fitted.map(|()| plan)
}

/// [`lower`], keeping the plan when a conversion cannot be fitted (a code
/// flat or folded over the range), with the reason beside it: the stages
/// still evaluate up to the converter, which is where the cause shows (a
/// stage beyond its limit). Its conversions are not to be used then.
pub fn lower_stages(chain: &Chain) -> Result<(Plan, Result<(), EvalError>), EvalError> {
    let (plan, fitted) = lower_unvalidated(chain)?;
    check_validity(&plan, chain.ambient)?;
    Ok((plan, fitted))
}

/// [`lower_stages`] without asking each sensor whether the true ranges lie
/// inside its range of validity: for showing the part of a range that
/// does ([`valid_measurand_range`]).
pub fn lower_unvalidated(chain: &Chain) -> Result<(Plan, Result<(), EvalError>), EvalError> {
    let chain_name = chain.name.clone();
    let Some(measurand) = &chain.measurand else {
        return Err(not_invertible(&chain_name, "the chain has no measurand"));
    };
    if chain.stages.len() > MAX_NODES {
        return Err(not_invertible(
            &chain_name,
            format!("a chain has at most {MAX_NODES} stages"),
        ));
    }
    let mut graph = DiGraph::<usize, ()>::new();
    let ids: Vec<_> = (0..chain.stages.len()).map(|i| graph.add_node(i)).collect();
    for c in &chain.connections {
        graph.add_edge(ids[c.from], ids[c.to], ());
    }
    // Elements on one current source are in series, in edge order from the
    // source down to ground. Each one's common mode needs the voltages
    // below it, so those are evaluated first.
    let strings = series_strings(chain);
    for string in &strings {
        for pair in string.windows(2) {
            graph.add_edge(ids[pair[1]], ids[pair[0]], ());
        }
    }
    let order: Vec<usize> = toposort(&graph, None)
        .map_err(|_| not_invertible(&chain_name, "the chain has a loop"))?
        .into_iter()
        .map(|n| graph[n])
        .collect();
    let node_of = |stage: usize| order.iter().position(|&s| s == stage).unwrap_or(0);
    let input = |stage: usize, port: Port| {
        chain
            .connections
            .iter()
            .find(|c| c.to == stage && c.to_port == port)
            .map(|c| node_of(c.from))
    };
    let cold_junction_sensors: Vec<&str> = chain
        .stages
        .iter()
        .filter_map(|s| match s.param("cold_junction") {
            Some(ParamValue::StageRef { name, .. }) => Some(name.as_str()),
            _ => None,
        })
        .collect();
    let feeds_cj = |stage: usize| {
        chain
            .connections
            .iter()
            .any(|c| c.from == stage && c.to_port == Port::Cj)
    };

    let mut slots = Slots { slots: Vec::new() };
    // A sensor's `% of reading` is of its temperature in the chain's unit.
    let zero = chain
        .measurand
        .as_ref()
        .map_or(ZERO_CELSIUS_K, |m| m.zero());
    let mut sense_error = vec![SenseError::default(); order.len()];
    let mut cj_error = None;
    let mut nodes = Vec::with_capacity(order.len());
    let mut names = Vec::with_capacity(order.len());
    for &si in &order {
        let stage = &chain.stages[si];
        let id = |p: &str| format!("{}.{p}", stage.name);
        let senses = if cold_junction_sensors.contains(&stage.name.as_str()) {
            Senses::ColdJunction
        } else {
            Senses::Measurand
        };
        let drift_of = |slots: &mut Slots, name: &str, m: &Measure| {
            m.drift.as_ref().map(|d| {
                slots.drift(
                    format!("{}.{name}_drift", stage.name),
                    d.per_kelvin,
                    d.relative,
                )
            })
        };
        let node = match (stage.kind, stage.model) {
            (StageKind::Excitation, model) => {
                let current = model == Some("current");
                let name = if current { "current" } else { "voltage" };
                let m =
                    measure(stage, name).ok_or_else(|| not_invertible(&stage.name, "no value"))?;
                let value = slots.measure(id(name), m);
                let drift = match stage.param("drift") {
                    Some(ParamValue::Limit(t)) => {
                        Some(slots.drift(id("drift"), t.plus, t.relative))
                    }
                    _ => drift_of(&mut slots, name, m),
                };
                Node::Excitation {
                    current,
                    value,
                    drift,
                }
            }
            (StageKind::Sensor, Some("rtd")) => {
                let (node, error) = rtd_node(stage, &mut slots, input(si, Port::In), senses, zero)?;
                sense_error[nodes.len()] = error;
                node
            }
            (StageKind::Sensor, Some("thermocouple")) => {
                let ty = word(stage, "thermocouple")
                    .and_then(ThermocoupleType::from_letter)
                    .ok_or_else(|| not_invertible(&stage.name, "no type"))?;
                let class = count(stage, "class").map(|c| c as u8);
                let node_index = nodes.len();
                if let Some(c) = class {
                    let slot = slots.add(id("class"), 0.0, 1.0, 1.0, false);
                    sense_error[node_index].class =
                        Some((ClassTolerance::Thermocouple(ty, c), slot));
                }
                if let Some(ParamValue::Limit(t)) = stage.param("tolerance") {
                    stated_error(
                        &mut sense_error[node_index],
                        &mut slots,
                        id("tolerance"),
                        t,
                        zero,
                    );
                }
                if let Some(ParamValue::Limit(t)) = stage.param("cold_junction") {
                    cj_error = Some(slots.limit(id("cold_junction"), t));
                }
                let bias = measure(stage, "bias_voltage").map(|m| {
                    (
                        slots.measure(id("bias_voltage"), m),
                        drift_of(&mut slots, "bias_voltage", m),
                    )
                });
                let bias_resistor =
                    measure(stage, "bias_resistor").map(|m| slots.measure(id("bias_resistor"), m));
                Node::Thermocouple {
                    ty,
                    senses,
                    class,
                    bias,
                    bias_resistor,
                }
            }
            (StageKind::Sensor, Some("thermistor")) => {
                let r25 = slots.measure(
                    id("r25"),
                    measure(stage, "r25").ok_or_else(|| not_invertible(&stage.name, "no r25"))?,
                );
                let curve = match (measure(stage, "beta"), stage.param("steinhart")) {
                    (Some(b), _) => ThermistorCurve::Beta {
                        beta: slots.measure(id("beta"), b),
                    },
                    (None, Some(ParamValue::Numbers(n))) if n.len() == 3 => {
                        ThermistorCurve::SteinhartHart {
                            a: n[0],
                            b: n[1],
                            c: n[2],
                        }
                    }
                    _ => return Err(not_invertible(&stage.name, "no beta or steinhart")),
                };
                let dissipation =
                    measure(stage, "dissipation").map(|m| slots.measure(id("dissipation"), m));
                let valid = match stage.param("range") {
                    Some(ParamValue::Range { low, high }) => Some((*low, *high)),
                    _ => None,
                };
                Node::Thermistor {
                    r25,
                    curve,
                    dissipation,
                    input: input(si, Port::In),
                    senses,
                    valid,
                }
            }
            (StageKind::Sensor, Some("ic_voltage")) => {
                let slope = slots.measure(
                    id("slope"),
                    measure(stage, "slope")
                        .ok_or_else(|| not_invertible(&stage.name, "no slope"))?,
                );
                let Some(ParamValue::At { value, at, .. }) = stage.param("output") else {
                    return Err(not_invertible(&stage.name, "no output"));
                };
                let v0 = slots.measure(id("output"), value);
                let rout = measure(stage, "output_resistance")
                    .map(|m| slots.measure(id("output_resistance"), m));
                if let Some(ParamValue::Limit(t)) = stage.param("accuracy") {
                    let error = &mut sense_error[nodes.len()];
                    stated_error(error, &mut slots, id("accuracy"), t, zero);
                }
                Node::IcVoltage {
                    slope,
                    v0,
                    t0: *at,
                    senses,
                    rout,
                }
            }
            (StageKind::Sensor, Some("ic_current")) => {
                let slope = slots.measure(
                    id("slope"),
                    measure(stage, "slope")
                        .ok_or_else(|| not_invertible(&stage.name, "no slope"))?,
                );
                if let Some(ParamValue::Limit(t)) = stage.param("accuracy") {
                    let error = &mut sense_error[nodes.len()];
                    stated_error(error, &mut slots, id("accuracy"), t, zero);
                }
                Node::IcCurrent { slope, senses }
            }
            (StageKind::Sensor, Some("strain_gauge")) => {
                if measurand.dim != Dim::NONE {
                    return Err(not_invertible(
                        &stage.name,
                        "a strain gauge needs a `strain` measurand",
                    ));
                }
                let r = slots.measure(
                    id("r"),
                    measure(stage, "r").ok_or_else(|| not_invertible(&stage.name, "no r"))?,
                );
                let gauge_factor = slots.measure(
                    id("gauge_factor"),
                    measure(stage, "gauge_factor")
                        .ok_or_else(|| not_invertible(&stage.name, "no gauge factor"))?,
                );
                // A gauge on the compression side sees the strain reversed.
                let sign = if word(stage, "side") == Some("compression") {
                    -1.0
                } else {
                    1.0
                };
                Node::StrainGauge {
                    r,
                    gauge_factor,
                    sign,
                    input: input(si, Port::In),
                }
            }
            (StageKind::Sensor, Some("transducer")) => {
                let Some(ParamValue::At {
                    value,
                    value_dim,
                    at,
                }) = stage.param("sensitivity")
                else {
                    return Err(not_invertible(&stage.name, "no sensitivity"));
                };
                if *at == 0.0 {
                    return Err(not_invertible(
                        &stage.name,
                        "the sensitivity is stated at zero load",
                    ));
                }
                let sensitivity = slots.measure(id("sensitivity"), value);
                let zero = match stage.param("zero") {
                    Some(ParamValue::Limit(t)) => Some(slots.limit(id("zero"), t)),
                    _ => None,
                };
                let r = measure(stage, "r").map(|m| slots.measure(id("r"), m));
                let limit = |slots: &mut Slots, name: &str| match stage.param(name) {
                    Some(ParamValue::Limit(t)) => Some(slots.limit(id(name), t)),
                    _ => None,
                };
                Node::Transducer {
                    sensitivity,
                    ratiometric: *value_dim == Dim::NONE,
                    full_scale: *at,
                    zero,
                    nonlinearity: limit(&mut slots, "nonlinearity"),
                    // Terminal-based unless the datasheet says otherwise:
                    // common practice for load cells.
                    linearity: match word(stage, "linearity") {
                        Some("best_fit") => LinearityLine::BestFit,
                        _ => LinearityLine::Terminal,
                    },
                    hysteresis: limit(&mut slots, "hysteresis"),
                    zero_drift: limit(&mut slots, "zero_drift"),
                    span_drift: limit(&mut slots, "span_drift"),
                    input: input(si, Port::In),
                    r,
                }
            }
            (StageKind::Sensor, _) => {
                let m = measure(stage, "resistor")
                    .ok_or_else(|| not_invertible(&stage.name, "no resistance"))?;
                let r = slots.measure(id("r"), m);
                let drift = drift_of(&mut slots, "r", m);
                Node::Resistor {
                    r,
                    drift,
                    input: input(si, Port::In),
                }
            }
            (StageKind::Bridge, model) => {
                let kind = match model {
                    Some("divider") => BridgeKind::Divider {
                        sensor_high: word(stage, "sensor") == Some("high"),
                    },
                    Some("quarter") => BridgeKind::Quarter,
                    Some("half") => BridgeKind::Half,
                    _ => BridgeKind::Full,
                };
                // Each completion resistor is its own part, with its own
                // tolerance and drift.
                let parts = match kind {
                    BridgeKind::Quarter => 3,
                    BridgeKind::Half => 2,
                    BridgeKind::Divider { .. } | BridgeKind::Full => 1,
                };
                let mut completion = Vec::new();
                if let Some(m) = measure(stage, "r") {
                    for k in 1..=parts {
                        let name = if parts == 1 {
                            "r".to_string()
                        } else {
                            format!("r_{k}")
                        };
                        completion
                            .push((slots.measure(id(&name), m), drift_of(&mut slots, &name, m)));
                    }
                }
                let (r, drift) = match completion.first() {
                    Some(&(r, drift)) => (Some(r), drift),
                    None => (None, None),
                };
                let others = completion.get(1..).unwrap_or_default().to_vec();
                let exc = input(si, Port::Exc)
                    .ok_or_else(|| not_invertible(&stage.name, "no excitation"))?;
                let arms = chain
                    .connections
                    .iter()
                    .filter(|c| c.to == si && c.to_port == Port::Arm)
                    .map(|c| node_of(c.from))
                    .collect();
                Node::Bridge {
                    kind,
                    r,
                    drift,
                    others,
                    exc,
                    arms,
                }
            }
            (StageKind::Amplifier, _) => {
                let gain = slots.measure(
                    id("gain"),
                    measure(stage, "gain").ok_or_else(|| not_invertible(&stage.name, "no gain"))?,
                );
                let limit = |slots: &mut Slots, name: &str| match stage.param(name) {
                    Some(ParamValue::Limit(t)) => Some(slots.limit(id(name), t)),
                    _ => None,
                };
                let offset = limit(&mut slots, "offset");
                let bias = limit(&mut slots, "bias");
                // CMRR is a ratio whose sign is unknown: nominal zero error,
                // ±1/CMRR per volt of common mode.
                let cmrr = measure(stage, "cmrr").map(|m| {
                    let e = 1.0 / m.nominal;
                    slots.add(id("cmrr"), 0.0, e, e, false)
                });
                let range = |name: &str| match stage.param(name) {
                    Some(ParamValue::Range { low, high }) => Some((*low, *high)),
                    _ => None,
                };
                let input_node =
                    input(si, Port::In).ok_or_else(|| not_invertible(&stage.name, "no input"))?;
                let reference = match (input(si, Port::Ref), measure(stage, "reference")) {
                    (Some(node), _) => Some(AmpReference::Stage(node)),
                    (None, Some(m)) => Some(AmpReference::Stated {
                        value: slots.measure(id("reference"), m),
                        drift: drift_of(&mut slots, "reference", m),
                    }),
                    (None, None) => None,
                };
                Node::Amplifier {
                    reference,
                    gain,
                    offset,
                    cmrr,
                    bias,
                    offset_drift: limit(&mut slots, "offset_drift"),
                    gain_drift: limit(&mut slots, "gain_drift"),
                    input: input_node,
                    input_range: range("input"),
                    output: range("output"),
                }
            }
            (StageKind::Filter, _) => {
                let passive = word(stage, "lowpass") == Some("rc");
                let series = measure(stage, "r")
                    .filter(|_| passive)
                    .map(|m| slots.measure(id("r"), m));
                Node::Filter {
                    input: input(si, Port::In)
                        .ok_or_else(|| not_invertible(&stage.name, "no input"))?,
                    series,
                }
            }
            (StageKind::Adc, _) => {
                adc_node(stage, &mut slots, input(si, Port::In), input(si, Port::Ref))?
            }
            (StageKind::Convert, _) => {
                let adc =
                    input(si, Port::In).ok_or_else(|| not_invertible(&stage.name, "no input"))?;
                let variable = if feeds_cj(si) {
                    Senses::ColdJunction
                } else {
                    Senses::Measurand
                };
                let range = match variable {
                    Senses::Measurand => (measurand.low, measurand.high),
                    Senses::ColdJunction => chain.ambient,
                };
                let margin = match variable {
                    Senses::Measurand => DOMAIN_MARGIN * (range.1 - range.0),
                    Senses::ColdJunction => CJ_MARGIN_K,
                };
                let calibration = match stage.param("calibrate") {
                    Some(ParamValue::Calibrate {
                        method,
                        points,
                        uncertainty,
                    }) => {
                        let mut error = |k: usize| {
                            uncertainty.as_ref().map(|t| {
                                let (minus, plus, normal) = limits(t, 0.0);
                                slots.add(
                                    format!("{}.calibration_{k}", stage.name),
                                    0.0,
                                    minus,
                                    plus,
                                    normal,
                                )
                            })
                        };
                        match (method.as_str(), points.as_slice()) {
                            ("offset", [p]) => Calibration::Offset {
                                at: *p,
                                error: error(1),
                            },
                            (_, [p1, p2]) => Calibration::TwoPoint {
                                at: (*p1, *p2),
                                errors: (error(1), error(2)),
                            },
                            _ => Calibration::None,
                        }
                    }
                    _ => Calibration::None,
                };
                let conversion = Conversion {
                    method: Method::Exact,
                    variable,
                    adc,
                    domain: (range.0 - margin, range.1 + margin),
                    range,
                    calibration,
                    cj_error: if variable == Senses::Measurand {
                        cj_error
                    } else {
                        None
                    },
                    inverse: None,
                };
                Node::Convert {
                    input: adc,
                    cj: input(si, Port::Cj),
                    conversion: Box::new(conversion),
                }
            }
        };
        nodes.push(node);
        names.push(stage.name.clone());
    }

    let reading_stage = chain
        .stages
        .iter()
        .enumerate()
        .find(|(i, s)| {
            s.kind == StageKind::Convert && !chain.connections.iter().any(|c| c.from == *i)
        })
        .map(|(i, _)| i)
        .ok_or_else(|| not_invertible(&chain_name, "no conversion ends the chain"))?;
    let reading = node_of(reading_stage);
    let Node::Convert { input: adc, .. } = &nodes[reading] else {
        return Err(not_invertible(
            &chain_name,
            "the reading is not a conversion",
        ));
    };
    let adc = *adc;
    let nominal = slots.slots.iter().map(|s| s.nominal).collect();
    let mut series_below = vec![Vec::new(); order.len()];
    for string in &strings {
        for (k, &stage) in string.iter().enumerate() {
            series_below[node_of(stage)] = string[k + 1..].iter().map(|&s| node_of(s)).collect();
        }
    }
    let mut plan = Plan {
        chain: chain_name,
        names,
        nodes,
        slots: slots.slots,
        nominal,
        reference: chain.reference,
        range: (measurand.low, measurand.high),
        reading,
        adc,
        series_below,
        sense_error,
        groups: Vec::new(),
        stated: order
            .iter()
            .map(|&s| Stated::of(&chain.stages[s]))
            .collect(),
    };
    plan.groups = super::track::lower_groups(chain, &plan.nodes, &plan.slots, node_of);
    let fitted = fit_conversions(&mut plan, chain, &order);
    Ok((plan, fitted))
}

/// The part of the measurand range where every sensor that senses the
/// measurand is inside its model's and its class's range of validity; an
/// empty range (low > high) when there is none.
pub fn valid_measurand_range(plan: &Plan) -> (f64, f64) {
    let mut range = plan.range;
    for node in &plan.nodes {
        let Some((Senses::Measurand, ranges)) = validity(node) else {
            continue;
        };
        for (_, (low_c, high_c)) in ranges.into_iter().flatten() {
            range.0 = range.0.max(low_c + ZERO_CELSIUS_K);
            range.1 = range.1.min(high_c + ZERO_CELSIUS_K);
        }
    }
    range
}

/// Every sensor with a range of validity (a tolerance class's, or a
/// stated one) against the true temperatures it will see: the measurand
/// range, or the ambient range at a cold junction. A tolerance moves the
/// reading, not the sensor, so this is asked of the true range once, not
/// of each reading a tolerance shifts.
fn check_validity(plan: &Plan, ambient: (f64, f64)) -> Result<(), EvalError> {
    for (i, node) in plan.nodes.iter().enumerate() {
        let Some((senses, ranges)) = validity(node) else {
            continue;
        };
        let (low, high) = match senses {
            Senses::Measurand => plan.range,
            Senses::ColdJunction => ambient,
        };
        // The model's own range first: it is the root cause when both fail.
        for (what, range_c) in ranges.into_iter().flatten() {
            for t in [low, high] {
                if within(t - ZERO_CELSIUS_K, range_c).is_none() {
                    return Err(plan.out_of_range(i, &what, t, range_c));
                }
            }
        }
    }
    Ok(())
}

/// What a sensor node senses and where it is valid, °C: its model's range,
/// then its class's or stated range.
type Validity = (Senses, [Option<(String, (f64, f64))>; 2]);

fn validity(node: &Node) -> Option<Validity> {
    let kelvin = |(lo, hi): (f64, f64)| (lo - ZERO_CELSIUS_K, hi - ZERO_CELSIUS_K);
    match node {
        Node::Rtd {
            curve,
            senses,
            valid,
            ..
        } => Some((
            *senses,
            [
                Some(("the element's curve".to_string(), curve.range_c())),
                valid.map(|v| ("its tolerance class".to_string(), kelvin(v))),
            ],
        )),
        Node::Thermistor { senses, valid, .. } => Some((
            *senses,
            [
                None,
                valid.map(|v| ("its stated range".to_string(), kelvin(v))),
            ],
        )),
        Node::Thermocouple {
            ty, senses, class, ..
        } => Some((
            *senses,
            [
                Some((format!("type {} thermocouple", ty.letter()), ty.range_c())),
                class.map(|class| {
                    (
                        format!("class {class} of a type {} thermocouple", ty.letter()),
                        crate::physics::thermocouple::class_range_c(*ty, class)
                            .unwrap_or((f64::NAN, f64::NAN)),
                    )
                }),
            ],
        )),
        Node::Excitation { .. }
        | Node::IcVoltage { .. }
        | Node::IcCurrent { .. }
        | Node::StrainGauge { .. }
        | Node::Transducer { .. }
        | Node::Resistor { .. }
        | Node::Bridge { .. }
        | Node::Amplifier { .. }
        | Node::Filter { .. }
        | Node::Adc { .. }
        | Node::Convert { .. } => None,
    }
}

/// For each current source driving two or more elements, those elements
/// (stage indices) in edge order.
fn series_strings(chain: &Chain) -> Vec<Vec<usize>> {
    let mut strings = Vec::new();
    for (i, s) in chain.stages.iter().enumerate() {
        if s.kind != StageKind::Excitation && s.model != Some("ic_current") {
            continue;
        }
        if s.kind == StageKind::Excitation && s.model != Some("current") {
            continue;
        }
        let driven: Vec<usize> = chain
            .connections
            .iter()
            .filter(|c| c.from == i && c.to_port == Port::In)
            .map(|c| c.to)
            .collect();
        if driven.len() > 1 {
            strings.push(driven);
        }
    }
    strings
}

fn rtd_node(
    stage: &Stage,
    slots: &mut Slots,
    input: Option<NodeId>,
    senses: Senses,
    zero: f64,
) -> Result<(Node, SenseError), EvalError> {
    let id = |p: &str| format!("{}.{p}", stage.name);
    let curve_word = word(stage, "rtd").unwrap_or("pt100");
    let (default_r0, curve) = match curve_word {
        "pt100" => (100.0, iec()),
        "pt500" => (500.0, iec()),
        "pt1000" => (1000.0, iec()),
        "ni100" => (100.0, RtdCurve::Nickel),
        "ni120" => (120.0, RtdCurve::Nickel),
        "ni1000" => (1000.0, RtdCurve::Nickel),
        "cu10" => (10.0, RtdCurve::Copper),
        "cu100" => (100.0, RtdCurve::Copper),
        _ => match stage.param("coefficients") {
            Some(ParamValue::Measures(m)) if m.len() == 3 => (
                0.0,
                RtdCurve::Cvd {
                    a: m[0].nominal,
                    b: m[1].nominal,
                    c: m[2].nominal,
                },
            ),
            _ => {
                return Err(not_invertible(
                    &stage.name,
                    "a custom curve needs `coefficients`",
                ))
            }
        },
    };
    let r0 = match measure(stage, "r0") {
        Some(m) => slots.measure(id("r0"), m),
        None => slots.exact(id("r0"), default_r0),
    };
    // A characterised probe's coefficients, each its own source: a
    // deviation of nominal 0 within its tolerance.
    let mut coefficient_errors = [None; 3];
    if let (Some(ParamValue::Measures(m)), RtdCurve::Cvd { .. }) =
        (stage.param("coefficients"), curve)
    {
        for (k, (m, name)) in m.iter().zip(["a", "b", "c"]).enumerate() {
            coefficient_errors[k] = m.tolerance.as_ref().map(|t| {
                let (minus, plus, normal) = limits(t, m.nominal);
                slots.add(id(&format!("coefficient_{name}")), 0.0, minus, plus, normal)
            });
        }
    }
    let wiring = match count(stage, "wires") {
        Some(2) => rtd::Wiring::TwoWire,
        Some(3) => rtd::Wiring::ThreeWire,
        _ => rtd::Wiring::FourWire,
    };
    // Each wire has its own resistance within the stated tolerance: two
    // independent sources, which the wiring combines.
    let leads = measure(stage, "lead").map(|m| {
        (
            slots.measure(id("lead_1"), m),
            slots.measure(id("lead_2"), m),
        )
    });
    let dissipation = measure(stage, "dissipation").map(|m| slots.measure(id("dissipation"), m));
    let class = word(stage, "class").map(|c| match c {
        "AA" => ToleranceClass::AA,
        "A" => ToleranceClass::A,
        "B" => ToleranceClass::B,
        _ => ToleranceClass::C,
    });
    let valid = class.map(|class| {
        let (lo, hi) = class.wire_wound_range_c();
        (lo + ZERO_CELSIUS_K, hi + ZERO_CELSIUS_K)
    });
    // The class as the R0 and coefficient tolerances it comes from, so a
    // calibration removes what it really removes.
    let deviation = class.map(|class| {
        let d = rtd::class_deviation(class);
        (
            slots.add(id("class_r0"), 0.0, d.r0, d.r0, false),
            slots.add(id("class_alpha"), 0.0, d.alpha, d.alpha, false),
        )
    });
    let mut error = SenseError::default();
    if let Some(ParamValue::Limit(t)) = stage.param("tolerance") {
        stated_error(&mut error, slots, id("tolerance"), t, zero);
    }
    let node = Node::Rtd {
        curve,
        coefficient_errors,
        r0,
        wiring,
        leads,
        dissipation,
        input,
        senses,
        valid,
        deviation,
    };
    Ok((node, error))
}

/// A sensor's stated error: absolute (also `% of span`, converted when it
/// was read) or a share of its reading.
fn stated_error(error: &mut SenseError, slots: &mut Slots, id: String, t: &Tolerance, zero: f64) {
    match t.basis {
        Basis::Reading => error.of_reading = Some((slots.limit(id, t), zero)),
        Basis::Written | Basis::Span => error.absolute = Some(slots.limit(id, t)),
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

fn adc_node(
    stage: &Stage,
    slots: &mut Slots,
    input: Option<NodeId>,
    reference: Option<NodeId>,
) -> Result<Node, EvalError> {
    let id = |p: &str| format!("{}.{p}", stage.name);
    let differential = word(stage, "input") == Some("differential");
    // Differential converters are bipolar unless told otherwise.
    let polarity = match word(stage, "polarity") {
        Some("bipolar") => Polarity::Bipolar,
        Some("unipolar") => Polarity::Unipolar,
        _ if differential => Polarity::Bipolar,
        _ => Polarity::Unipolar,
    };
    let bits = count(stage, "bits").unwrap_or(12);
    // Gain error and INL as fractions of the full-scale span.
    let fraction = |slots: &mut Slots, name: &str| match stage.param(name) {
        Some(ParamValue::Limit(t)) => Some(slots.limit(id(name), &fraction_of_span(t, bits))),
        _ => None,
    };
    let (vref, vref_drift) = match measure(stage, "vref") {
        Some(m) => (
            Some(slots.measure(id("vref"), m)),
            m.drift
                .as_ref()
                .map(|d| slots.drift(id("vref_drift"), d.per_kelvin, d.relative)),
        ),
        None => (None, None),
    };
    // Slots in the order the parameters are listed (it seeds Monte Carlo).
    let pga = measure(stage, "pga").map(|m| slots.measure(id("pga"), m));
    let offset = match stage.param("offset") {
        Some(ParamValue::Limit(t)) if t.dim == Dim::CODE => {
            Some(AdcOffset::Codes(slots.limit(id("offset"), t)))
        }
        Some(ParamValue::Limit(t)) => Some(AdcOffset::Input(slots.limit(id("offset"), t))),
        _ => None,
    };
    Ok(Node::Adc {
        bits,
        polarity,
        differential,
        pga,
        vref,
        vref_drift,
        reference,
        offset,
        gain_error: fraction(slots, "gain_error"),
        inl: fraction(slots, "inl"),
        input: input.ok_or_else(|| not_invertible(&stage.name, "no input"))?,
    })
}

/// A converter's gain error or INL as a fraction of its full-scale span.
/// Written in `LSB`, one code is 1/2^bits of the whole span (of both
/// halves for a bipolar input): the converter's own definition of an LSB.
fn fraction_of_span(t: &Tolerance, bits: u32) -> Tolerance {
    if t.dim != Dim::CODE {
        return t.clone();
    }
    let codes = 2f64.powi(bits as i32);
    Tolerance {
        plus: t.plus / codes,
        minus: t.minus / codes,
        dim: Dim::NONE,
        ..t.clone()
    }
}

/// Narrows each conversion's domain to where the nominal chain evaluates,
/// then fits its method there.
fn fit_conversions(plan: &mut Plan, chain: &Chain, order: &[usize]) -> Result<(), EvalError> {
    let env = Env {
        measurand: (plan.range.0 + plan.range.1) / 2.0,
        ambient: plan.reference,
        cold_junction: plan.reference,
    };
    // A thermocouple makes the firmware model depend on the cold junction.
    let couples: Vec<_> = plan
        .nodes
        .iter()
        .filter_map(|n| match n {
            Node::Thermocouple { ty, senses, .. } => Some((*ty, *senses)),
            _ => None,
        })
        .collect();
    let has_thermocouple = !couples.is_empty();
    let measuring_couple = match couples[..] {
        [(ty, Senses::Measurand)] => Some(ty),
        _ => None,
    };
    for (node, &stage_index) in order.iter().enumerate() {
        let Node::Convert { conversion, .. } = &plan.nodes[node] else {
            continue;
        };
        let mut conversion = (**conversion).clone();
        let stage = &chain.stages[stage_index];
        let probe = |plan: &Plan, x: f64| {
            let e = match conversion.variable {
                Senses::Measurand => Env {
                    measurand: x,
                    ..env
                },
                Senses::ColdJunction => Env {
                    cold_junction: x,
                    ..env
                },
            };
            plan.exact_code(&plan.nominal, &e, conversion.adc)
        };
        // The range itself must evaluate: that is a finding of its own.
        probe(plan, conversion.range.0)?;
        probe(plan, conversion.range.1)?;
        for end in [0, 1] {
            let inside = if end == 0 {
                conversion.range.0
            } else {
                conversion.range.1
            };
            let mut outside = if end == 0 {
                conversion.domain.0
            } else {
                conversion.domain.1
            };
            if probe(plan, outside).is_err() {
                let mut good = inside;
                for _ in 0..60 {
                    let mid = (good + outside) / 2.0;
                    if probe(plan, mid).is_ok() {
                        good = mid;
                    } else {
                        outside = mid;
                    }
                }
                outside = good;
            }
            if end == 0 {
                conversion.domain.0 = outside;
            } else {
                conversion.domain.1 = outside;
            }
        }
        let (a, b) = (
            probe(plan, conversion.range.0)?,
            probe(plan, conversion.range.1)?,
        );
        if a == b {
            return Err(not_invertible(
                &stage.name,
                "the code does not change over the measurand range",
            ));
        }
        let (method, points) = match stage.param("method") {
            Some(ParamValue::Method { method, points }) => (method.clone(), points.unwrap_or(0)),
            _ => ("exact".to_string(), 0),
        };
        conversion
            .fit(
                plan,
                &env,
                &method,
                points,
                conversion.variable == Senses::ColdJunction || !has_thermocouple,
                measuring_couple,
            )
            .map_err(|what| not_invertible(&stage.name, what))?;
        if let Node::Convert { conversion: c, .. } = &mut plan.nodes[node] {
            **c = conversion;
        }
    }
    Ok(())
}
