//! Edges to typed connections, then the graph checks: unknown stages and
//! ports, type mismatches, inputs driven twice or not at all, cycles,
//! unused stages and the chain's single reading.

use std::collections::{HashMap, HashSet};
use std::sync::Arc;

use petgraph::algo::kosaraju_scc;
use petgraph::graph::DiGraph;

use super::chain::{Connection, Stage};
use super::ports::{self, InputSpec, Port, SignalKind};
use super::schema;
use super::typed::{Bridge, BridgeForm, StageModel};
use super::value::ParamValue;
use crate::diagnostics::{backticked, did_you_mean, did_you_mean_or};
use crate::diagnostics::{Cause, Code, Finding, Findings, SourceFile, Span};
use crate::syntax::ast::{EdgeDecl, Endpoint, StageKind};

fn stage_inputs(stage: &Stage) -> Vec<InputSpec> {
    ports::inputs(stage.kind, stage.model, &|name| {
        stage.param(name).cloned().or_else(|| {
            stage
                .invalid
                .iter()
                .any(|i| i == name)
                .then_some(ParamValue::Flag)
        })
    })
}

pub fn connect(
    file: &Arc<SourceFile>,
    stages: &mut [Stage],
    edges: &[EdgeDecl],
    findings: &mut Findings,
) -> Vec<Connection> {
    let mut connections = Vec::new();
    // Stages named in an edge statement that was rejected: what the graph
    // checks would say about them only echoes that finding.
    let mut broken: HashSet<String> = HashSet::new();
    // By name, once: a lookup per endpoint stays constant time however
    // many stages a chain has. The first of a repeated name wins, as a
    // scan would find it.
    let mut by_name: HashMap<&str, usize> = HashMap::with_capacity(stages.len());
    for (i, s) in stages.iter().enumerate() {
        by_name.entry(s.name.as_str()).or_insert(i);
    }
    for edge in edges {
        let before = findings.len();
        connect_edge(file, stages, &by_name, edge, &mut connections, findings);
        if findings.len() > before {
            broken.extend(edge.endpoints.iter().map(|e| e.stage.name.clone()));
        }
    }
    for s in stages.iter_mut() {
        if broken.contains(&s.name) {
            s.incomplete = true;
        }
    }
    mark_misnamed(stages, edges, findings);
    check_ports(file, stages, &connections, findings);
    connections
}

/// An unknown stage in an edge or a `cold_junction` (M202) one typo away
/// from a stage leaves that stage unconnected: what the graph checks say
/// about it follows from the M202.
fn mark_misnamed(stages: &mut [Stage], edges: &[EdgeDecl], findings: &Findings) {
    let mut names: Vec<(String, Span, Arc<SourceFile>)> = Vec::new();
    for stage in stages.iter() {
        for p in &stage.params {
            if let ParamValue::StageRef { name, span } = &p.value {
                names.push((name.clone(), *span, Arc::clone(&p.file)));
            }
        }
    }
    let edge_names = edges.iter().flat_map(|e| e.endpoints.iter());
    let known: HashSet<&str> = stages.iter().map(|s| s.name.as_str()).collect();
    let mut misnamed = Vec::new();
    for (name, span, file) in edge_names
        .map(|end| (end.stage.name.as_str(), end.stage.span, None))
        .chain(names.iter().map(|(n, s, f)| (n.as_str(), *s, Some(f))))
    {
        if known.contains(name) {
            continue;
        }
        let Some(near) = did_you_mean(name, stages.iter().map(|s| s.name.as_str())) else {
            continue;
        };
        let cause = findings.iter().find(|f| {
            f.code == Code::M202
                && f.primary_span() == Some(span)
                && file.is_none_or(|file| f.file == *file)
        });
        if let Some(cause) = cause {
            misnamed.push((near.to_string(), Cause::of(cause)));
        }
    }
    for (near, cause) in misnamed {
        if let Some(stage) = stages.iter_mut().find(|s| s.name == near) {
            stage.misnamed.get_or_insert(cause);
        }
    }
}

fn connect_edge(
    file: &Arc<SourceFile>,
    stages: &[Stage],
    by_name: &HashMap<&str, usize>,
    edge: &EdgeDecl,
    connections: &mut Vec<Connection>,
    findings: &mut Findings,
) {
    let index = |name: &str| by_name.get(name).copied();
    for (i, pair) in edge.endpoints.windows(2).enumerate() {
        let (a, b) = (&pair[0], &pair[1]);
        let (Some(from), Some(to)) = (
            lookup(file, stages, a, &index, findings, i == 0),
            lookup(file, stages, b, &index, findings, false),
        ) else {
            continue;
        };
        // The first endpoint's port names an output; a middle endpoint's
        // port names the input it is entered by, and it leaves by `out`.
        let from_port = match (&a.port, i) {
            (Some(p), 0) => Port::from_name(&p.name),
            _ => Some(Port::Out),
        };
        let Some(from_port) = from_port else { continue };
        if from_port != Port::Out {
            findings.push(input_as_output(file, a, from_port));
            continue;
        }
        match entry_port(file, &stages[to], b) {
            Ok(to_port) => connections.push(Connection {
                from,
                from_port,
                to,
                to_port,
                span: a.span.to(b.span),
            }),
            Err(finding) => findings.push(finding),
        }
    }
}

/// M211: an edge that leaves a stage by one of its inputs.
fn input_as_output(file: &Arc<SourceFile>, a: &Endpoint, port: Port) -> Finding {
    let span = a.port.as_ref().map(|p| p.span).unwrap_or(a.span);
    Finding::new(
        Code::M211,
        file,
        format!(
            "`{}.{}` is an input, not an output",
            a.stage.name,
            port.name()
        ),
    )
    .label(span, "edges leave a stage by `out`")
    .help(format!(
        "write `{} -> ...`, or reverse the edge",
        a.stage.name
    ))
}

/// The port an edge enters `stage` by (`b` names it, or its first
/// input); M204 when the stage takes no input, M211 for its output.
fn entry_port(file: &Arc<SourceFile>, stage: &Stage, b: &Endpoint) -> Result<Port, Finding> {
    let port = match &b.port {
        Some(p) => Port::from_name(&p.name),
        None => stage_inputs(stage).first().map(|s| s.port),
    };
    match port {
        None => Err(
            Finding::new(Code::M204, file, format!("`{}` takes no input", stage.name))
                .label(
                    b.span,
                    format!("{} has no input port", with_article(&describe(stage))),
                )
                .help(format!(
                    "`{}` is a source; edges can only start from it",
                    stage.name
                )),
        ),
        Some(Port::Out) => {
            let span = b.port.as_ref().map(|p| p.span).unwrap_or(b.span);
            Err(Finding::new(
                Code::M211,
                file,
                format!("`{}.out` is an output, not an input", b.stage.name),
            )
            .label(span, "edges enter a stage by an input")
            .help(format!(
                "write `... -> {}` for its default input",
                b.stage.name
            )))
        }
        Some(port) => Ok(port),
    }
}

fn with_article(noun: &str) -> String {
    format!("{} {noun}", super::article(noun))
}

/// A stage by name, and its port by name if one is given.
fn lookup(
    file: &Arc<SourceFile>,
    stages: &[Stage],
    end: &Endpoint,
    index: &dyn Fn(&str) -> Option<usize>,
    findings: &mut Findings,
    first: bool,
) -> Option<usize> {
    let Some(i) = index(&end.stage.name) else {
        // A middle endpoint is looked up for two edges; report it once.
        if first
            || !findings
                .iter()
                .any(|f| f.code == Code::M202 && f.primary_span() == Some(end.stage.span))
        {
            let names = || stages.iter().map(|s| s.name.as_str());
            findings.push(
                Finding::new(
                    Code::M202,
                    file,
                    format!("no stage is named `{}`", end.stage.name),
                )
                .label(end.stage.span, "unknown stage")
                .help(did_you_mean_or(&end.stage.name, names(), || {
                    format!("stages of this chain: {}", backticked(names()))
                })),
            );
        }
        return None;
    };
    if let Some(port) = &end.port {
        let stage = &stages[i];
        let mut names: Vec<&str> = stage_inputs(stage).iter().map(|s| s.port.name()).collect();
        // Every stage has an output.
        names.push("out");
        if !names.contains(&port.name.as_str()) {
            let near = did_you_mean(&port.name, names.iter().copied());
            findings.push(
                Finding::new(
                    Code::M203,
                    file,
                    format!("`{}` has no port `{}`", stage.name, port.name),
                )
                .label(port.span, "unknown port")
                .help(match near {
                    Some(n) => format!(
                        "did you mean `{n}`? ports of `{}`: {}",
                        stage.name,
                        quote(&names)
                    ),
                    None => format!("ports of `{}`: {}", stage.name, quote(&names)),
                }),
            );
            return None;
        }
    }
    Some(i)
}

fn quote(names: &[&str]) -> String {
    names
        .iter()
        .map(|n| format!("`{n}`"))
        .collect::<Vec<_>>()
        .join(", ")
}

fn describe(stage: &Stage) -> String {
    match stage.model {
        Some(m) => format!("{} `{m}`", stage.kind.keyword()),
        None => stage.kind.keyword().to_string(),
    }
}

/// What each stage outputs, given its connections.
pub fn output_signals(stages: &[Stage], connections: &[Connection]) -> Vec<SignalKind> {
    let static_out = |s: &Stage| ports::output(s.kind, s.model, false);
    let incoming = incoming(stages.len(), connections);
    stages
        .iter()
        .enumerate()
        .map(|(i, s)| {
            // A voltage excitation on a resistive sensor is itself an error
            // (reported on that edge); its output is judged as if driven.
            let driven = incoming[i].iter().map(|&k| &connections[k]).any(|c| {
                c.to_port == Port::In
                    && matches!(
                        static_out(&stages[c.from]),
                        SignalKind::CurrentExcitation | SignalKind::VoltageExcitation
                    )
            });
            ports::output(s.kind, s.model, driven)
        })
        .collect()
}

/// The connections into each stage, by stage index, in edge order: one
/// pass, so per-stage questions do not rescan every edge.
fn incoming(stages: usize, connections: &[Connection]) -> Vec<Vec<usize>> {
    let mut into = vec![Vec::new(); stages];
    for (k, c) in connections.iter().enumerate() {
        if let Some(list) = into.get_mut(c.to) {
            list.push(k);
        }
    }
    into
}

/// The wiring the port checks look at: each stage's output signal and
/// the edges into each stage.
struct Wiring<'a> {
    file: &'a Arc<SourceFile>,
    stages: &'a [Stage],
    connections: &'a [Connection],
    outputs: Vec<SignalKind>,
    incoming: Vec<Vec<usize>>,
}

impl Wiring<'_> {
    /// The edges into `stage`'s `port`, in edge order.
    fn edges_into(&self, stage: usize, port: Port) -> Vec<&Connection> {
        self.incoming[stage]
            .iter()
            .map(|&k| &self.connections[k])
            .filter(|c| c.to_port == port)
            .collect()
    }
}

fn check_ports(
    file: &Arc<SourceFile>,
    stages: &[Stage],
    connections: &[Connection],
    findings: &mut Findings,
) {
    let wiring = Wiring {
        file,
        stages,
        connections,
        outputs: output_signals(stages, connections),
        incoming: incoming(stages.len(), connections),
    };
    for c in connections {
        check_signal(&wiring, c, findings);
    }
    for (i, stage) in stages.iter().enumerate() {
        if stage.incomplete {
            continue;
        }
        check_reference_twice(&wiring, i, findings);
        for spec in stage_inputs(stage) {
            let into = wiring.edges_into(i, spec.port);
            if spec.multi {
                findings.extend(arm_count(&wiring, i, &into));
                findings.extend(half_bridge_sides(&wiring, i, &into));
                continue;
            }
            if into.len() > 1 {
                findings.push(driven_twice(&wiring, i, &spec, &into));
            }
            if into.is_empty() && spec.required {
                findings.push(not_connected(&wiring, i, &spec));
            }
        }
    }
    let loops = check_cycles(file, stages, connections, findings);
    check_use(file, stages, connections, &wiring.outputs, &loops, findings);
}

/// M227 or M204 when an edge carries a signal its port does not take.
fn check_signal(wiring: &Wiring, c: &Connection, findings: &mut Findings) {
    let (source, target) = (&wiring.stages[c.from], &wiring.stages[c.to]);
    if target.incomplete || source.incomplete {
        return;
    }
    let Some(spec) = stage_inputs(target)
        .into_iter()
        .find(|s| s.port == c.to_port)
    else {
        return;
    };
    let signal = wiring.outputs[c.from];
    if spec.accepts.contains(&signal) {
        return;
    }
    if target.kind == StageKind::Amplifier && spec.port == Port::Ref {
        findings.push(
            Finding::new(
                Code::M227,
                wiring.file,
                format!(
                    "`{}` gives {} but the reference of amplifier `{}` must be a voltage",
                    source.name,
                    signal.noun(),
                    target.name
                ),
            )
            .label(c.span, format!("{} into `{}.ref`", signal.noun(), target.name))
            .label(source.name_span, format!("gives {}", signal.noun()))
            .help(format!(
                "wire a voltage into `{}.ref` (a voltage excitation, a divider's output, a buffer amplifier), or state it in the block: `reference 2.5 V ± 0.1 %`",
                target.name
            )),
        );
        return;
    }
    if target.kind == StageKind::Adc && spec.port == Port::Ref {
        findings.push(super::channels::reference_not_voltage(
            wiring.file,
            source,
            target,
            signal,
            c.span,
        ));
        return;
    }
    findings.push(wrong_signal(
        wiring.file,
        source,
        target,
        &spec,
        signal,
        c.span,
    ));
}

/// M204: a signal into a port that expects another kind.
fn wrong_signal(
    file: &Arc<SourceFile>,
    source: &Stage,
    target: &Stage,
    spec: &InputSpec,
    signal: SignalKind,
    edge: Span,
) -> Finding {
    let expects = nouns(spec.accepts);
    let help = match (signal, target.kind) {
        (SignalKind::VoltageExcitation, StageKind::Sensor) => format!(
            "a voltage across a resistive sensor gives nothing to measure; wire `{}` and `{}` into a `bridge` (a `divider` for one element), or use a current excitation",
            source.name, target.name
        ),
        (SignalKind::Code | SignalKind::Reading, StageKind::Amplifier | StageKind::Filter | StageKind::Adc) => format!(
            "`{}` works on voltages, so it belongs before the converter: wire the signal into it first and its output into the `adc`",
            target.name
        ),
        (SignalKind::CurrentExcitation, StageKind::Amplifier | StageKind::Filter | StageKind::Adc) => format!(
            "a current becomes a voltage across a resistor: add one, such as `sensor load {{ resistor 10 kohm ± 0.1 % }}`, and wire `{} -> load -> {}`; its value times the largest current should stay inside `{}`'s range",
            source.name, target.name, target.name
        ),
        (SignalKind::Element, _) => format!(
            "`{}` is a bare element here; drive it with a current excitation or wire it into a bridge arm: `{} -> bridge_name.arm`",
            source.name, source.name
        ),
        _ => format!("`{}.{}` takes {expects}", target.name, spec.port.name()),
    };
    Finding::new(
        Code::M204,
        file,
        format!(
            "`{}` gives {} but `{}.{}` expects {expects}",
            source.name,
            signal.noun(),
            target.name,
            spec.port.name()
        ),
    )
    .label(edge, format!("{} into {expects}", signal.noun()))
    .label(source.name_span, format!("gives {}", signal.noun()))
    .help(help)
}

/// The signals a port takes, in words: `a voltage or a current`.
fn nouns(signals: &[SignalKind]) -> String {
    signals
        .iter()
        .map(|s| s.noun())
        .collect::<Vec<_>>()
        .join(" or ")
}

/// M228: an amplifier's reference both stated and wired.
fn check_reference_twice(wiring: &Wiring, i: usize, findings: &mut Findings) {
    let stage = &wiring.stages[i];
    if stage.kind != StageKind::Amplifier {
        return;
    }
    let (Some(wired), Some(stated)) = (
        wiring.edges_into(i, Port::Ref).first().copied(),
        stage.params.iter().find(|p| p.name == schema::REFERENCE),
    ) else {
        return;
    };
    let mut f = Finding::new(
        Code::M228,
        wiring.file,
        format!(
            "amplifier `{}` has a `reference` line and a stage wired to its `ref`",
            stage.name
        ),
    )
    .label(wired.span, "wired here");
    if Arc::ptr_eq(&stated.file, wiring.file) {
        f = f.label(stated.span, "stated here");
    }
    findings.push(f.help(format!(
        "keep one: the edge into `{}.ref` when another stage sets the reference, the `reference` line when it is a stated voltage",
        stage.name
    )));
}

/// M212: a bridge with other than its model's number of arm elements.
fn arm_count(wiring: &Wiring, i: usize, into: &[&Connection]) -> Option<Finding> {
    let stage = &wiring.stages[i];
    let wanted = ports::arm_count(stage.model);
    if into.len() == wanted {
        return None;
    }
    let mut f = Finding::new(
        Code::M212,
        wiring.file,
        format!(
            "bridge `{}` has {} arm element{}; a {} bridge takes {wanted}",
            stage.name,
            into.len(),
            if into.len() == 1 { "" } else { "s" },
            stage.model.unwrap_or("")
        ),
    )
    .label(stage.name_span, format!("takes {wanted}"));
    for c in into {
        f = f.label(c.span, "arm");
    }
    let elements = if wanted == 1 {
        "one sensor element"
    } else {
        "each sensor element"
    };
    Some(f.help(format!(
        "wire {elements} with `sensor_name -> {}.arm`",
        stage.name
    )))
}

/// M247: a half bridge's two gauges on opposite sides of the beam. The
/// two elements of a half bridge sit in opposite arms, where equal and
/// opposite strains cancel.
fn half_bridge_sides(wiring: &Wiring, i: usize, into: &[&Connection]) -> Option<Finding> {
    let stage = &wiring.stages[i];
    let Some(StageModel::Bridge(Bridge {
        form: BridgeForm::Half,
        ..
    })) = &stage.typed
    else {
        return None;
    };
    let side = |c: &Connection| {
        let Some(StageModel::StrainGauge(gauge)) = &wiring.stages[c.from].typed else {
            return None;
        };
        Some(gauge.side)
    };
    let [a, b] = into else { return None };
    if side(a)? == side(b)? {
        return None;
    }
    let name = |c: &Connection| wiring.stages[c.from].name.as_str();
    Some(
        Finding::new(
            Code::M247,
            wiring.file,
            format!(
                "half bridge `{}` has `{}` and `{}` on opposite sides: in its opposite arms their strains cancel",
                stage.name,
                name(a),
                name(b)
            ),
        )
        .label(b.span, "this gauge's strain cancels the other's")
        .label(a.span, "in the opposite arm")
        .help(format!(
            "to add them, give both the same `side` (opposite arms add equal strains, as adjacent arms add opposite ones); `{}` then reads twice one gauge's output",
            stage.name
        )),
    )
}

/// M205: an input with more than one edge.
fn driven_twice(wiring: &Wiring, i: usize, spec: &InputSpec, into: &[&Connection]) -> Finding {
    let stage = &wiring.stages[i];
    Finding::new(
        Code::M205,
        wiring.file,
        format!("`{}.{}` is driven twice", stage.name, spec.port.name()),
    )
    .label(into[1].span, "second edge")
    .label(into[0].span, "first edge")
    .help("an input takes one edge; remove one, or add a stage that combines them")
}

/// M206: a required input with no edge, and the stage that could drive it
/// when only one can.
fn not_connected(wiring: &Wiring, i: usize, spec: &InputSpec) -> Finding {
    let stage = &wiring.stages[i];
    let candidates: Vec<&str> = wiring
        .stages
        .iter()
        .enumerate()
        .filter(|(j, _)| *j != i && spec.accepts.contains(&wiring.outputs[*j]))
        .map(|(_, s)| s.name.as_str())
        .collect();
    let port = if Some(spec.port) == stage_inputs(stage).first().map(|s| s.port) {
        stage.name.clone()
    } else {
        format!("{}.{}", stage.name, spec.port.name())
    };
    let help = match (candidates.as_slice(), spec.port) {
        (_, Port::Ref) => {
            format!("wire a reference with `source -> {port}`, or give the converter `vref`")
        }
        ([one], _) => format!("connect it: `{one} -> {port}`"),
        _ => format!("connect {} to it: `source -> {port}`", nouns(spec.accepts)),
    };
    Finding::new(
        Code::M206,
        wiring.file,
        format!("`{}.{}` is not connected", stage.name, spec.port.name()),
    )
    .label(stage.name_span, format!("needs {}", spec.accepts[0].noun()))
    .help(help)
    .caused_by(stage.misnamed.clone())
}

/// Reports each loop (M207); returns its members with the finding.
fn check_cycles(
    file: &Arc<SourceFile>,
    stages: &[Stage],
    connections: &[Connection],
    findings: &mut Findings,
) -> Vec<(Vec<usize>, Cause)> {
    let mut loops = Vec::new();
    let mut graph = DiGraph::<usize, usize>::new();
    let nodes: Vec<_> = (0..stages.len()).map(|i| graph.add_node(i)).collect();
    for (k, c) in connections.iter().enumerate() {
        graph.add_edge(nodes[c.from], nodes[c.to], k);
    }
    // Stages with an edge to themselves, once: a single-stage component is
    // a loop only then, and asking per component rescanned every edge.
    let self_loops: HashSet<usize> = connections
        .iter()
        .filter(|c| c.from == c.to)
        .map(|c| c.from)
        .collect();
    // Kosaraju walks with explicit stacks: Tarjan's recursion overflowed the
    // stack on a series of some 20,000 stages.
    for scc in kosaraju_scc(&graph) {
        let members: Vec<usize> = scc.iter().map(|n| graph[*n]).collect();
        let looped = members.len() > 1 || self_loops.contains(&members[0]);
        if !looped {
            continue;
        }
        let order = loop_order(&members, connections);
        let names = order
            .iter()
            .chain(order.first())
            .map(|&m| format!("`{}`", stages[m].name))
            .collect::<Vec<_>>()
            .join(" -> ");
        let mut f = Finding::new(Code::M207, file, format!("the chain loops through {names}"));
        for c in connections
            .iter()
            .filter(|c| members.contains(&c.from) && members.contains(&c.to))
        {
            f = f.label(c.span, "part of the loop");
        }
        let f = f.help("a measurement chain runs one way, from sensor to reading; remove the edge that feeds back");
        loops.push((members, Cause::of(&f)));
        findings.push(f);
    }
    loops
}

/// The members of a loop in edge order, from the first declared stage.
fn loop_order(members: &[usize], connections: &[Connection]) -> Vec<usize> {
    let start = members.iter().copied().min().unwrap_or(0);
    let mut order = vec![start];
    let mut at = start;
    while let Some(next) = connections
        .iter()
        .filter(|c| c.from == at && members.contains(&c.to))
        .map(|c| c.to)
        .find(|n| !order.contains(n))
    {
        order.push(next);
        at = next;
    }
    order
}

fn check_use(
    file: &Arc<SourceFile>,
    stages: &[Stage],
    connections: &[Connection],
    outputs: &[SignalKind],
    loops: &[(Vec<usize>, Cause)],
    findings: &mut Findings,
) {
    let mut finals = Vec::new();
    // Who feeds and who is fed, once: asking per stage rescanned every edge.
    let mut feeds_any = vec![false; stages.len()];
    let mut fed = vec![false; stages.len()];
    for c in connections {
        feeds_any[c.from] = true;
        fed[c.to] = true;
    }
    let junctions = cold_junctions(stages);
    for (i, stage) in stages.iter().enumerate() {
        if stage.kind == StageKind::Convert && !feeds_any[i] {
            finals.push(i);
        }
        if stage.incomplete {
            continue;
        }
        let named = junctions.contains(stage.name.as_str());
        let touched = feeds_any[i] || fed[i] || named;
        if !touched {
            findings.push(unused(file, stage));
        } else if stage.kind != StageKind::Convert
            && !feeds_any[i]
            && !(named && stage.kind == StageKind::Adc)
            && outputs[i] != SignalKind::Reading
        {
            findings.push(goes_nowhere(file, stage));
        }
    }
    if !stages.is_empty() && finals.len() != 1 {
        findings.push(not_one_ending(file, stages, &finals, loops));
    }
}

/// M208: a stage no edge touches.
fn unused(file: &Arc<SourceFile>, stage: &Stage) -> Finding {
    Finding::new(
        Code::M208,
        file,
        format!("stage `{}` is not connected to anything", stage.name),
    )
    .label(stage.name_span, "unused")
    .help(format!(
        "connect it with an edge such as `{} -> ...`, or remove it",
        stage.name
    ))
    .caused_by(stage.misnamed.clone())
}

/// M213: a stage whose output feeds nothing.
fn goes_nowhere(file: &Arc<SourceFile>, stage: &Stage) -> Finding {
    Finding::new(
        Code::M213,
        file,
        format!("the output of `{}` goes nowhere", stage.name),
    )
    .label(stage.name_span, "output not used")
    .help(format!(
        "connect it with `{} -> ...`, or remove the stage",
        stage.name
    ))
    .caused_by(stage.misnamed.clone())
}

/// M210: no conversion, or several, ends the chain (`finals`).
fn not_one_ending(
    file: &Arc<SourceFile>,
    stages: &[Stage],
    finals: &[usize],
    loops: &[(Vec<usize>, Cause)],
) -> Finding {
    let chain_span = stages.first().map(|s| s.span).unwrap_or_default();
    let mut f = Finding::new(
        Code::M210,
        file,
        match finals.len() {
            0 => "no `convert` stage ends the chain, so nothing becomes a reading".to_string(),
            n => format!("{n} `convert` stages end the chain; it must end in one reading"),
        },
    );
    // A conversion that feeds a loop does not end the chain because
    // of the loop.
    let looped = loops.iter().find(|(members, _)| {
        members
            .iter()
            .any(|&m| stages[m].kind == StageKind::Convert)
    });
    f = f.caused_by(looped.map(|(_, cause)| cause.clone()));
    if finals.is_empty() {
        return f.label(Span::new(chain_span.start, chain_span.start), "the chain's first stage").help(
            "add `convert reading { method exact }` and an edge from the converter: `conv -> reading`",
        );
    }
    for &i in finals {
        f = f.label(stages[i].name_span, "ends the chain");
    }
    f.help("put each reading in its own chain, or feed a cold-junction reading into the main conversion with `cj_reading -> reading.cj`")
}

/// The names every `cold_junction` line refers to: those stages count as
/// used.
fn cold_junctions(stages: &[Stage]) -> HashSet<String> {
    let mut named: HashSet<String> = stages
        .iter()
        .filter_map(|s| match s.param(schema::COLD_JUNCTION) {
            Some(ParamValue::StageRef { name, .. }) => Some(name.clone()),
            _ => None,
        })
        .collect();
    // The channels a conversion combines are read by it.
    for s in stages {
        named.extend(
            super::channels::combined_names(s)
                .into_iter()
                .map(|(n, _)| n),
        );
    }
    named
}

/// A thermocouple's `cold_junction <stage>` must name a sensor.
pub fn check_references(stages: &[Stage], findings: &mut Findings) {
    for stage in stages {
        let Some(p) = stage
            .params
            .iter()
            .find(|p| p.name == schema::COLD_JUNCTION)
        else {
            continue;
        };
        let ParamValue::StageRef { name, span } = &p.value else {
            continue;
        };
        match stages.iter().find(|s| &s.name == name) {
            None => {
                let names = stages.iter().map(|s| s.name.as_str());
                findings.push(
                    Finding::new(Code::M202, &p.file, format!("no stage is named `{name}`"))
                        .label(*span, "unknown stage")
                        .help(did_you_mean_or(name, names, || {
                            "name the sensor that measures the cold junction, or give its error: `cold_junction ± 0.5 K`".to_string()
                        })),
                );
            }
            Some(s) if s.kind != StageKind::Sensor => findings.push(
                Finding::new(
                    Code::M204,
                    &p.file,
                    format!("`{name}` is {}, not a sensor", with_article(&describe(s))),
                )
                .label(*span, "expected a sensor stage")
                .help("`cold_junction` names the sensor that measures the cold junction"),
            ),
            Some(_) => {}
        }
    }
}
