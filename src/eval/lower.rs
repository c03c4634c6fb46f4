//! A checked chain to an evaluation plan: stages in topological order,
//! each stage's typed model lowered by its node file (`eval/node/`), every
//! numeric parameter in a slot, each conversion fitted.

use petgraph::algo::toposort;
use petgraph::graph::DiGraph;

use super::convert::Conversion;
use super::node::{self, Cx, Inputs, Node};
use super::plan::{Env, EvalError, NodeId, Plan, SenseError, Senses};
use super::run::{within, MAX_NODES};
use super::stated::Stated;
use crate::model::ports::Port;
use crate::model::typed::{ColdJunction, CombineOp, StageModel};
use crate::model::{Chain, Measurand, Stage};
use crate::physics::solve::bisect_at_most;
use crate::units::ZERO_CELSIUS_K;

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
    let Some(measurand) = &chain.measurand else {
        return Err(not_invertible(&chain.name, "the chain has no measurand"));
    };
    if chain.stages.len() > MAX_NODES {
        return Err(not_invertible(
            &chain.name,
            format!("a chain has at most {MAX_NODES} stages"),
        ));
    }
    let strings = series_strings(chain);
    let order = evaluation_order(chain, &strings)?;
    let node_of = |stage: usize| NodeId::new(order.iter().position(|&s| s == stage).unwrap_or(0));
    let (nodes, cx, sense_error) = lower_nodes(chain, measurand, &order, &node_of)?;
    let reading = node_of(reading_stage(chain)?);
    let Node::Convert(node::Convert { input: adc, .. }) = &nodes[reading.index()] else {
        return Err(not_invertible(
            &chain.name,
            "the reading is not a conversion",
        ));
    };
    let adc = *adc;
    let mut series_below = vec![Vec::new(); order.len()];
    for string in &strings {
        for (k, &stage) in string.iter().enumerate() {
            series_below[node_of(stage).index()] =
                string[k + 1..].iter().map(|&s| node_of(s)).collect();
        }
    }
    let measurand_free = super::run::measurand_free(&nodes, &series_below);
    let mut plan = Plan {
        chain: chain.name.clone(),
        names: order
            .iter()
            .map(|&s| chain.stages[s].name.clone())
            .collect(),
        nodes,
        nominal: cx.slots.iter().map(|s| s.nominal).collect(),
        slots: cx.slots,
        reference: chain.reference,
        range: (measurand.low, measurand.high),
        reading,
        adc,
        series_below,
        measurand_free,
        sense_error,
        groups: Vec::new(),
        stated: order
            .iter()
            .map(|&s| {
                // Every stage has its typed model here: lowering needed it.
                let model = chain.stages[s].typed.as_ref();
                model.map(Stated::of).unwrap_or_default()
            })
            .collect(),
    };
    plan.groups = super::track::lower_groups(chain, &plan.nodes, &plan.slots, node_of);
    let fitted = fit_conversions(&mut plan);
    Ok((plan, fitted))
}

/// Stages in evaluation order: every input before its user. Elements on
/// one current source are in series, in edge order from the source down
/// to ground; each one's common mode needs the voltages below it, so those
/// are evaluated first.
fn evaluation_order(chain: &Chain, strings: &[Vec<usize>]) -> Result<Vec<usize>, EvalError> {
    let mut graph = DiGraph::<usize, ()>::new();
    let ids: Vec<_> = (0..chain.stages.len()).map(|i| graph.add_node(i)).collect();
    for c in &chain.connections {
        graph.add_edge(ids[c.from], ids[c.to], ());
    }
    for string in strings {
        for pair in string.windows(2) {
            graph.add_edge(ids[pair[1]], ids[pair[0]], ());
        }
    }
    // A combined code needs the other channels' codes first.
    for si in 0..chain.stages.len() {
        for other in combination(chain, si).map(|(_, o)| o).unwrap_or_default() {
            graph.add_edge(ids[other], ids[si], ());
        }
    }
    // A channel reads its converter's reference.
    for si in 0..chain.stages.len() {
        let Some(conv) = converter_of(chain, si) else {
            continue;
        };
        for c in &chain.connections {
            if c.to == conv && c.to_port == Port::Ref {
                graph.add_edge(ids[c.from], ids[si], ());
            }
        }
    }
    Ok(toposort(&graph, None)
        .map_err(|_| not_invertible(&chain.name, "the chain has a loop"))?
        .into_iter()
        .map(|n| graph[n])
        .collect())
}

/// The conversion no other stage reads: the chain's reading.
fn reading_stage(chain: &Chain) -> Result<usize, EvalError> {
    chain
        .stages
        .iter()
        .enumerate()
        .find(|(i, s)| {
            matches!(s.typed, Some(StageModel::Convert(_)))
                && !chain.connections.iter().any(|c| c.from == *i)
        })
        .map(|(i, _)| i)
        .ok_or_else(|| not_invertible(&chain.name, "no conversion ends the chain"))
}

/// The stages a thermocouple names as its cold junction's sensor.
fn cold_junction_sensors(chain: &Chain) -> Vec<&str> {
    chain
        .stages
        .iter()
        .filter_map(|s| match &s.typed {
            Some(StageModel::Thermocouple(t)) => match &t.cold_junction {
                Some(ColdJunction::Stage(name)) => Some(name.as_str()),
                Some(ColdJunction::Error(_)) | None => None,
            },
            Some(
                StageModel::Excitation(_)
                | StageModel::Rtd(_)
                | StageModel::Thermistor(_)
                | StageModel::IcVoltage(_)
                | StageModel::IcCurrent(_)
                | StageModel::StrainGauge(_)
                | StageModel::Transducer(_)
                | StageModel::Resistor(_)
                | StageModel::Bridge(_)
                | StageModel::Amplifier(_)
                | StageModel::Filter(_)
                | StageModel::Adc(_)
                | StageModel::Convert(_),
            )
            | None => None,
        })
        .collect()
}

/// The stage whose name a stage's slots carry, and whether they are
/// shared: a converter's channel shares its converter's sources.
fn slot_owner<'a>(stage: &'a Stage, model: &'a StageModel) -> (&'a str, bool) {
    match model {
        StageModel::Adc(adc) if adc.channels > 1 => (
            adc.channel_of.as_deref().unwrap_or(stage.name.as_str()),
            true,
        ),
        StageModel::Excitation(_)
        | StageModel::Rtd(_)
        | StageModel::Thermocouple(_)
        | StageModel::Thermistor(_)
        | StageModel::IcVoltage(_)
        | StageModel::IcCurrent(_)
        | StageModel::StrainGauge(_)
        | StageModel::Transducer(_)
        | StageModel::Resistor(_)
        | StageModel::Bridge(_)
        | StageModel::Amplifier(_)
        | StageModel::Filter(_)
        | StageModel::Adc(_)
        | StageModel::Convert(_) => (stage.name.as_str(), false),
    }
}

/// Every stage's node, in `order`, with the slots they fill and the error
/// of what each senses.
fn lower_nodes<'a>(
    chain: &'a Chain,
    measurand: &'a Measurand,
    order: &[usize],
    node_of: &impl Fn(usize) -> NodeId,
) -> Result<(Vec<Node>, Cx<'a>, Vec<SenseError>), EvalError> {
    let cold_junction_sensors = cold_junction_sensors(chain);
    let mut cx = Cx {
        slots: Vec::new(),
        measurand,
        ambient: chain.ambient,
        zero: measurand.zero(),
        cj_error: None,
        name: "",
        owner: "",
        shared: false,
        combine: None,
        inputs: Inputs::default(),
        senses: Senses::Measurand,
        feeds_cj: false,
        sense_error: SenseError::default(),
    };
    let mut nodes = Vec::with_capacity(order.len());
    let mut sense_error = Vec::with_capacity(order.len());
    for &si in order {
        let stage = &chain.stages[si];
        let Some(model) = &stage.typed else {
            return Err(not_invertible(&stage.name, "its model was not accepted"));
        };
        cx.name = &stage.name;
        (cx.owner, cx.shared) = slot_owner(stage, model);
        cx.inputs = inputs(chain, si, node_of);
        cx.combine = combination(chain, si)
            .map(|(op, others)| (op, others.into_iter().map(node_of).collect()));
        cx.senses = if cold_junction_sensors.contains(&stage.name.as_str()) {
            Senses::ColdJunction
        } else {
            Senses::Measurand
        };
        cx.feeds_cj = chain
            .connections
            .iter()
            .any(|c| c.from == si && c.to_port == Port::Cj);
        nodes.push(node::lower(model, &mut cx)?);
        sense_error.push(std::mem::take(&mut cx.sense_error));
    }
    Ok((nodes, cx, sense_error))
}

/// The nodes wired to stage `si`'s inputs, by port.
fn inputs(chain: &Chain, si: usize, node_of: &impl Fn(usize) -> NodeId) -> Inputs {
    let into = |port: Port| {
        chain
            .connections
            .iter()
            .filter(move |c| c.to == si && c.to_port == port)
            .map(|c| node_of(c.from))
    };
    Inputs {
        input: into(Port::In).next(),
        exc: into(Port::Exc).next(),
        reference: into(Port::Ref)
            .next()
            .or_else(|| converter_reference(chain, si, node_of)),
        cj: into(Port::Cj).next(),
        arms: into(Port::Arm).collect(),
    }
}

/// The channels a conversion combines with converter stage `si`'s code
/// (`sum`, `ratio`), by stage index.
fn combination(chain: &Chain, si: usize) -> Option<(CombineOp, Vec<usize>)> {
    chain.connections.iter().find_map(|c| {
        if c.from != si || c.to_port != Port::In {
            return None;
        }
        let Some(StageModel::Convert(convert)) = &chain.stages[c.to].typed else {
            return None;
        };
        let combine = convert.combine.as_ref()?;
        let others = combine
            .channels
            .iter()
            .filter_map(|name| chain.stages.iter().position(|s| &s.name == name))
            .collect();
        Some((combine.op, others))
    })
}

/// A channel's converter, by stage index.
fn converter_of(chain: &Chain, si: usize) -> Option<usize> {
    let Some(StageModel::Adc(adc)) = &chain.stages[si].typed else {
        return None;
    };
    let name = adc.channel_of.as_deref()?;
    chain.stages.iter().position(|s| s.name == name)
}

/// A channel works against its converter's reference: the node wired to
/// the converter's `ref`.
fn converter_reference(
    chain: &Chain,
    si: usize,
    node_of: &impl Fn(usize) -> NodeId,
) -> Option<NodeId> {
    let conv = converter_of(chain, si)?;
    chain
        .connections
        .iter()
        .find(|c| c.to == conv && c.to_port == Port::Ref)
        .map(|c| node_of(c.from))
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
                    return Err(plan.out_of_range(NodeId::new(i), &what, t, range_c));
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
        Node::Rtd(node::Rtd {
            curve,
            senses,
            valid,
            ..
        }) => Some((
            *senses,
            [
                Some(("the element's curve".to_string(), curve.range_c())),
                valid.map(|v| ("its tolerance class".to_string(), kelvin(v))),
            ],
        )),
        Node::Thermistor(node::Thermistor { senses, valid, .. }) => Some((
            *senses,
            [
                None,
                valid.map(|v| ("its stated range".to_string(), kelvin(v))),
            ],
        )),
        Node::Thermocouple(node::Thermocouple {
            ty, senses, class, ..
        }) => Some((
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
        Node::Excitation(_)
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
    }
}

/// For each current source driving two or more elements, those elements
/// (stage indices) in edge order.
fn series_strings(chain: &Chain) -> Vec<Vec<usize>> {
    let mut strings = Vec::new();
    for (i, s) in chain.stages.iter().enumerate() {
        if !s.typed.as_ref().is_some_and(StageModel::drives_current) {
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

/// Narrows each conversion's domain to where the nominal chain evaluates,
/// then fits its method there.
fn fit_conversions(plan: &mut Plan) -> Result<(), EvalError> {
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
            Node::Thermocouple(t) => Some((t.ty, t.senses)),
            Node::Excitation(_)
            | Node::Rtd(_)
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
        .collect();
    let has_thermocouple = !couples.is_empty();
    let measuring_couple = match couples[..] {
        [(ty, Senses::Measurand)] => Some(ty),
        _ => None,
    };
    for node in NodeId::all(plan.nodes.len()) {
        let Node::Convert(convert) = &plan.nodes[node.index()] else {
            continue;
        };
        let method = convert.method;
        let mut conversion = (*convert.conversion).clone();
        let stage = plan.names[node.index()].clone();
        narrow_domain(plan, &env, &mut conversion, &stage)?;
        let complete = conversion.variable == Senses::ColdJunction || !has_thermocouple;
        conversion
            .fit(plan, &env, method, complete, measuring_couple)
            .map_err(|what| not_invertible(&stage, what))?;
        if let Node::Convert(c) = &mut plan.nodes[node.index()] {
            *c.conversion = conversion;
        }
    }
    Ok(())
}

/// Halvings of the search for the end of a conversion's domain.
const DOMAIN_HALVINGS: usize = 60;

/// Where the conversion's domain reaches beyond its range and the nominal
/// chain no longer evaluates, the domain ends at the last point that does
/// (bisected); a range that does not evaluate, or over which the code does
/// not change, is an error.
fn narrow_domain(
    plan: &Plan,
    env: &Env,
    conversion: &mut Conversion,
    stage: &str,
) -> Result<(), EvalError> {
    let (variable, adc) = (conversion.variable, conversion.adc);
    let probe = |x: f64| {
        let e = match variable {
            Senses::Measurand => Env {
                measurand: x,
                ..*env
            },
            Senses::ColdJunction => Env {
                cold_junction: x,
                ..*env
            },
        };
        plan.exact_code(&plan.nominal, &e, adc)
    };
    // The range itself must evaluate: that is a finding of its own.
    probe(conversion.range.0)?;
    probe(conversion.range.1)?;
    let reach = |inside: f64, outside: f64| {
        if probe(outside).is_ok() {
            return outside;
        }
        bisect_at_most(DOMAIN_HALVINGS, inside, outside, |x| probe(x).is_ok()).0
    };
    conversion.domain.0 = reach(conversion.range.0, conversion.domain.0);
    conversion.domain.1 = reach(conversion.range.1, conversion.domain.1);
    let (a, b) = (probe(conversion.range.0)?, probe(conversion.range.1)?);
    if a == b {
        return Err(not_invertible(
            stage,
            "the code does not change over the measurand range",
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::lower;
    use crate::eval::lanes::check::{self, chain};
    use crate::eval::node::{BridgeKind, Node};
    use crate::eval::{Plan, SourceKind};

    fn plan(spec: &str) -> Plan {
        lower(&chain(spec)).expect("lowers")
    }

    fn slot<'a>(plan: &'a Plan, id: &str) -> &'a crate::eval::Slot {
        plan.slots
            .iter()
            .find(|s| s.id.as_str() == id)
            .unwrap_or_else(|| panic!("no slot `{id}` in {:?}", plan.slots))
    }

    const QUARTER: &str = r#"
chain beam "q" {
    measurand strain -1000 ue .. 1000 ue
    excitation supply { voltage 5 V ± 0.1 % drift 10 ppm/K }
    sensor gauge {
        strain_gauge
        r 350 ohm ± 0.3 %
        gauge_factor 2.0 ± 1 %
        side compression
    }
    bridge completion {
        quarter
        r 350 ohm ± 0.1 % drift 5 ppm/K
    }
    amplifier front {
        gain 100 ± 0.1 %
        offset 20 uV max
        bias ± 1 nA
        cmrr 100 dB
        offset_drift 0.1 uV/K
    }
    adc conv {
        bits 24
        input differential
        gain_error ± 2 LSB
        offset ± 3 LSB
    }
    convert reading { calibrate two_point at -500 ue, 500 ue ± 1 ue }
    supply -> completion -> front -> conv -> reading
    gauge -> completion.arm
    supply -> conv.ref
}
"#;

    /// Each slot's kind is the one its lowering gives it, and a limit of
    /// zero width is exact, not a source.
    #[test]
    fn slots_carry_the_kind_their_node_gives_them() {
        let p = plan(QUARTER);
        for (id, kind) in [
            ("supply.voltage", SourceKind::Tolerance),
            ("supply.voltage_drift", SourceKind::Drift),
            ("completion.r_1", SourceKind::Tolerance),
            ("completion.r_3_drift", SourceKind::Drift),
            ("front.offset", SourceKind::Bound),
            ("front.bias", SourceKind::Bias),
            ("front.cmrr", SourceKind::CommonMode),
            ("front.offset_drift", SourceKind::Drift),
            ("conv.gain_error", SourceKind::Gain),
            ("conv.offset", SourceKind::Bound),
            ("reading.calibration_2", SourceKind::Calibration),
        ] {
            assert_eq!(slot(&p, id).kind, kind, "{id}");
        }
        // A gauge factor's tolerance is a source; a value without one is not.
        assert_eq!(slot(&p, "gauge.gauge_factor").kind, SourceKind::Tolerance);
        assert_eq!(slot(&p, "front.gain").kind, SourceKind::Tolerance);
    }

    /// A quarter bridge's three completion resistors are three parts, each
    /// with its own drift; the gauge on the compression side sees −ε; the
    /// converter's gain error in LSB is a fraction of its 2^24 codes; CMRR
    /// 100 dB is ±1e-5 per volt.
    #[test]
    fn lowering_reads_the_typed_model() {
        let p = plan(QUARTER);
        let bridge = p.nodes.iter().find_map(|n| match n {
            Node::Bridge(b) => Some(b),
            Node::Excitation(_)
            | Node::Rtd(_)
            | Node::Thermocouple(_)
            | Node::Thermistor(_)
            | Node::IcVoltage(_)
            | Node::IcCurrent(_)
            | Node::StrainGauge(_)
            | Node::Transducer(_)
            | Node::Resistor(_)
            | Node::Amplifier(_)
            | Node::Filter(_)
            | Node::Adc(_)
            | Node::Convert(_) => None,
        });
        let bridge = bridge.expect("a bridge node");
        assert_eq!(bridge.kind, BridgeKind::Quarter);
        assert_eq!(bridge.others.len(), 2);
        assert!(bridge.others.iter().all(|(_, drift)| drift.is_some()));
        let gauge = p.nodes.iter().find_map(|n| match n {
            Node::StrainGauge(g) => Some(g),
            Node::Excitation(_)
            | Node::Rtd(_)
            | Node::Thermocouple(_)
            | Node::Thermistor(_)
            | Node::IcVoltage(_)
            | Node::IcCurrent(_)
            | Node::Transducer(_)
            | Node::Resistor(_)
            | Node::Bridge(_)
            | Node::Amplifier(_)
            | Node::Filter(_)
            | Node::Adc(_)
            | Node::Convert(_) => None,
        });
        assert_eq!(gauge.expect("a gauge").sign, -1.0);
        let gain_error = slot(&p, "conv.gain_error");
        assert_eq!(gain_error.plus, 2.0 / 2f64.powi(24));
        let cmrr = slot(&p, "front.cmrr");
        assert!((cmrr.plus - 1e-5).abs() < 1e-18, "{}", cmrr.plus);
        assert_eq!(slot(&p, "conv.offset").nominal, 0.0);
    }

    /// A stage whose model was not accepted is not lowered on a guess.
    #[test]
    fn a_stage_without_its_typed_model_is_not_lowered() {
        let mut chain = chain(QUARTER);
        let gauge = chain.stages.iter_mut().find(|s| s.name == "gauge");
        gauge.expect("the gauge").typed = None;
        let e = lower(&chain).expect_err("no plan");
        assert!(e.to_string().contains("`gauge`"), "{e}");
    }

    /// A couple read against an NTC at its cold junction: the junction's
    /// sensor, divider, converter and conversion do not see the measurand.
    const COUPLE_WITH_NTC: &str = r#"
chain kiln "k" {
    measurand temperature 20 degC .. 1200 degC
    ambient 10 degC .. 45 degC
    sensor tc {
        thermocouple type K
        cold_junction cjs
    }
    excitation vref { voltage 2.5 V ± 0.05 % drift 3 ppm/K }
    amplifier front {
        gain 20 ± 0.1 %
        offset 20 uV max
    }
    adc conv {
        bits 24
        input differential
        gain_error ± 0.01 %
    }
    convert reading { method exact }
    sensor cjs {
        thermistor
        r25 10 kohm ± 1 %
        beta 3435 K ± 1 %
        dissipation 1.5 mW/K
    }
    bridge cj_div {
        divider
        r 10 kohm ± 0.1 % drift 25 ppm/K
    }
    adc cj_conv {
        bits 12
        input single
        offset ± 2 LSB
    }
    convert cj_reading { method table 32 }
    tc -> front -> conv -> reading
    vref -> conv.ref
    vref -> cj_div -> cj_conv -> cj_reading -> reading.cj
    vref -> cj_conv.ref
    cjs -> cj_div.arm
}
"#;

    #[test]
    fn the_measurand_reaches_only_what_reads_it() {
        let plan = plan(COUPLE_WITH_NTC);
        let free = |name: &str| {
            let n = plan.names.iter().position(|s| s == name).expect(name);
            plan.measurand_free[n]
        };
        for stage in ["vref", "cjs", "cj_div", "cj_conv", "cj_reading"] {
            assert!(free(stage), "{stage}");
        }
        for stage in ["tc", "front", "conv", "reading"] {
            assert!(!free(stage), "{stage}");
        }
    }

    /// A two-point calibration of a Pt100 whose current, R0, gain and
    /// reference all vary: what each lane's calibration saw.
    const CALIBRATED_PT100: &str = r#"
chain bath "Pt100" {
    measurand temperature -50 degC .. 100 degC
    excitation drive { current 1 mA ± 0.5 % }
    sensor probe {
        rtd pt100
        wires 4
        r0 100 ohm ± 0.1 %
    }
    amplifier front { gain 10 ± 0.5 % }
    adc conv {
        bits 16
        input differential
        vref 2.5 V ± 0.2 %
    }
    convert reading {
        method exact
        calibrate two_point at -50 degC, 100 degC
    }
    drive -> probe -> front -> conv -> reading
}
"#;

    /// A batch's calibrations through the columns are each lane's own, to
    /// the bit, on both builds of the kernels; a batch with a lane that
    /// cannot calibrate gives that lane's error, as the lanes one by one
    /// do; a part batch goes lane by lane.
    #[test]
    fn a_batch_calibrates_as_each_lane_alone() {
        use crate::eval::{wide, Batch, Calibrated, LaneColumns, LANES};
        let plan = plan(CALIBRATED_PT100);
        let n = plan.slots.len();
        let mut values = check::spread(&plan);
        let alone: Vec<Calibrated> = (0..LANES)
            .map(|k| {
                plan.calibration(&values[k * n..(k + 1) * n])
                    .expect("calibrates")
            })
            .collect();
        assert!(alone
            .iter()
            .all(|c| matches!(c, Calibrated::TwoPoint { .. })));
        let batch = |values: &[f64], count: usize| {
            let mut out = [Calibrated::None; LANES];
            let values = Batch::new(values.to_vec());
            let result = plan.calibrations(&values, count, &mut out, &mut LaneColumns::default());
            (result.map_err(|e| e.to_string()), out)
        };
        for count in [LANES, 5] {
            let (wide_result, wide) = batch(&values, count);
            let (portable_result, portable) = wide::portable(|| batch(&values, count));
            assert_eq!(wide_result, Ok(()));
            assert_eq!(portable_result, Ok(()));
            for k in 0..count {
                assert_eq!(
                    format!("{:?}", wide[k]),
                    format!("{:?}", alone[k]),
                    "lane {k}"
                );
                assert_eq!(format!("{:?}", portable[k]), format!("{:?}", alone[k]));
            }
        }
        // No reference in lane 9: its converter gives no code.
        let slots: Vec<&str> = plan.slots.iter().map(|s| s.id.as_str()).collect();
        let vref = slots.iter().position(|s| s.ends_with("vref"));
        values[9 * n + vref.unwrap_or_else(|| panic!("{slots:?}"))] = 0.0;
        let want = plan
            .calibration(&values[9 * n..10 * n])
            .map_err(|e| e.to_string());
        assert!(want.is_err());
        assert_eq!(batch(&values, LANES).0, want.map(|_| ()));
    }

    /// A batch read at a second point keeps the columns the measurand does
    /// not reach: the readings are those of a batch read there afresh, to
    /// the bit. Changed values, in the same batch, are read afresh.
    #[test]
    fn a_second_point_reads_as_if_alone() {
        use crate::eval::{Batch, Calibrated, Env, LaneColumns, LANES};
        let plan = plan(COUPLE_WITH_NTC);
        let n = plan.slots.len();
        // Each lane its own values, inside the limits.
        let values = check::spread(&plan);
        let calibrated: [Calibrated; LANES] = std::array::from_fn(|k| {
            plan.calibration(&values[k * n..(k + 1) * n])
                .expect("calibrates")
        });
        let at = |c: f64| Env {
            measurand: c + 273.15,
            ambient: 300.15,
            cold_junction: 300.15,
        };
        let read = |values: &Batch, scratch: &mut LaneColumns, env: &Env| {
            let mut readings = [0.0; LANES];
            plan.unquantized_readings_calibrated(values, env, &calibrated, &mut readings, scratch)
                .expect("reads");
            readings.map(f64::to_bits)
        };
        let mut values = Batch::new(values);
        let mut kept = LaneColumns::default();
        read(&values, &mut kept, &at(100.0));
        let second = read(&values, &mut kept, &at(900.0));
        assert_eq!(
            second,
            read(&values, &mut LaneColumns::default(), &at(900.0))
        );
        // Every lane given the first lane's values: the kept columns are
        // not read again; the first lane reads as before, the others anew.
        let rows = values.rows_mut();
        let (lane, rest) = rows.split_at_mut(n);
        for other in rest.chunks_mut(n) {
            other.copy_from_slice(lane);
        }
        let moved = read(&values, &mut kept, &at(900.0));
        assert_eq!(
            moved,
            read(&values, &mut LaneColumns::default(), &at(900.0))
        );
        assert_eq!(moved[0], second[0]);
        assert_ne!(moved, second);
    }

    /// A batch's readings, corrected through the columns when every lane
    /// took the same kind of calibration and lane by lane when not, are
    /// each lane's single run, to the bit.
    #[test]
    fn a_batch_corrects_as_each_lane_alone() {
        use crate::eval::{Batch, Calibrated, Env, LaneColumns, LANES};
        let plan = plan(CALIBRATED_PT100);
        let n = plan.slots.len();
        let rows = check::spread(&plan);
        let lane = |k: usize| &rows[k * n..(k + 1) * n];
        let env = Env {
            measurand: 60.0 + 273.15,
            ambient: 300.15,
            cold_junction: 300.15,
        };
        let mut calibrated: [Calibrated; LANES] =
            std::array::from_fn(|k| plan.calibration(lane(k)).expect("calibrates"));
        for mixed in [false, true] {
            if mixed {
                calibrated[3] = Calibrated::Offset(0.01);
            }
            let alone: Vec<u64> = (0..LANES)
                .map(|k| {
                    let r = plan.unquantized_reading_calibrated(lane(k), &env, &calibrated[k]);
                    r.expect("reads").to_bits()
                })
                .collect();
            let mut readings = [0.0; LANES];
            let batch = Batch::new(rows.clone());
            plan.unquantized_readings_calibrated(
                &batch,
                &env,
                &calibrated,
                &mut readings,
                &mut LaneColumns::default(),
            )
            .expect("reads");
            assert_eq!(readings.map(f64::to_bits).to_vec(), alone, "mixed {mixed}");
            assert!(alone.iter().any(|&r| r != alone[0]));
        }
    }
}
