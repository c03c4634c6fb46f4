//! Range envelopes: how far every limited signal goes over the measurand
//! range × the ambient range × every tolerance at its limits (one at a
//! time, summed as a worst case), against the limit it must stay inside:
//! amplifier common-mode input range and output swing, the converter's
//! input range, a current source's compliance, a voltage source's current
//! limit and a sensor's maximum current; a converter's reference against
//! its allowed range, its input pins against its rails, and the source
//! resistance its sampling capacitor charges through. Each check says what
//! would fix it, computed: the largest gain, the smallest reference, the
//! largest excitation that fits with the margin.

use rayon::prelude::*;

use super::budget::conditions;
use crate::diagnostics::{Code, Finding, Findings};
use crate::eval::{
    node, BridgeKind, Env, EvalError, LaneSignals, Node, NodeId, Plan, Signal, SlotId, SourceKind,
    LANES, MAX_NODES,
};
use crate::model::schema;
use crate::model::{Chain, Stage};
use crate::physics::adc;
use crate::physics::rtd::{lead_loop_resistance, lead_series_resistance};
use crate::physics::strain::bridge_input_resistance;
use crate::units::format::{from_si, trimmed, with_prefix};

/// Headroom below this fraction of a limit's span is a warning.
pub const DEFAULT_MARGIN: f64 = 0.05;

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Limit {
    AmplifierInput,
    AmplifierOutput,
    ConverterInput,
    Compliance,
    CurrentLimit,
    MaxCurrent,
    /// The voltage a converter works against, against its `ref_range`.
    ConverterReference,
    /// The absolute voltage of one of a converter's input pins, against
    /// its `rails` (a single-ended input has only the positive pin).
    ConverterPin(Pin),
    /// The source resistance behind a sampling converter's input, against
    /// the largest that settles within ½ LSB in its acquisition time
    /// (reported as R630, not as a range).
    ConverterSettling,
}

/// A converter input pin. Each pin is its own check: the envelope tracks
/// one smooth quantity, and which pin is nearer a rail can change along
/// the range.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Pin {
    Positive,
    Negative,
}

impl Limit {
    /// The headroom this limit must keep when `margin` is asked: a
    /// converter's pin may sit on a rail (a pseudo-differential input's
    /// low side on ground), so rails get none.
    pub fn margin_needed(self, margin: f64) -> f64 {
        if self.keeps_margin() {
            margin
        } else {
            0.0
        }
    }

    /// Whether the signal must keep a margin from this limit, rather than
    /// only stay within it (see [`Limit::margin_needed`]).
    pub fn keeps_margin(self) -> bool {
        match self {
            Limit::ConverterPin(_) => false,
            Limit::AmplifierInput
            | Limit::AmplifierOutput
            | Limit::ConverterInput
            | Limit::Compliance
            | Limit::CurrentLimit
            | Limit::MaxCurrent
            | Limit::ConverterReference
            | Limit::ConverterSettling => true,
        }
    }

    pub fn describe(self) -> &'static str {
        match self {
            Limit::AmplifierInput => "input common mode",
            Limit::AmplifierOutput => "output",
            Limit::ConverterInput => "input",
            Limit::Compliance => "load voltage",
            Limit::CurrentLimit => "load current",
            Limit::MaxCurrent => "current",
            Limit::ConverterReference => "reference",
            Limit::ConverterPin(Pin::Positive) => "input pin voltage",
            Limit::ConverterPin(Pin::Negative) => "negative input pin voltage",
            Limit::ConverterSettling => "source resistance for settling",
        }
    }

    /// The parameter that states the limit, and the one that drives it
    /// (an amplifier's input common mode is driven by the stage ahead of
    /// it, which the finding labels instead of a parameter).
    pub fn params(self) -> (&'static str, &'static str) {
        match self {
            Limit::AmplifierInput => (schema::param::INPUT, schema::param::INPUT),
            Limit::AmplifierOutput => (schema::param::OUTPUT, schema::param::GAIN),
            Limit::ConverterInput => (schema::VREF, schema::VREF),
            Limit::Compliance => (schema::param::COMPLIANCE, schema::param::CURRENT),
            Limit::CurrentLimit => (schema::param::LIMIT, schema::param::VOLTAGE),
            Limit::MaxCurrent => (schema::param::MAX_CURRENT, schema::param::MAX_CURRENT),
            Limit::ConverterReference => (schema::param::REF_RANGE, schema::VREF),
            Limit::ConverterPin(_) => (schema::param::RAILS, schema::param::RAILS),
            Limit::ConverterSettling => (
                schema::param::ACQUISITION_TIME,
                schema::param::SAMPLING_CAPACITANCE,
            ),
        }
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct Envelope {
    pub node: NodeId,
    pub limit: Limit,
    /// The allowed interval (SI; a fraction of full scale for a converter).
    pub allowed: (f64, f64),
    /// The signal's reach over ranges and tolerances.
    pub reach: (f64, f64),
    /// Measurand and ambient where it reaches furthest out.
    pub worst_at: (f64, f64),
    pub unit: LimitUnit,
    /// Per measurand point, in order: the reach there over the ambients
    /// (what a plot of headroom along the range draws).
    pub by_measurand: Vec<PointReach>,
}

/// A signal's reach at one measurand point, over ambients and tolerances.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PointReach {
    pub measurand: f64,
    pub reach: (f64, f64),
}

/// The unit a limit and its signal are stated in.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LimitUnit {
    Volt,
    Ampere,
    Ohm,
    /// A fraction of the converter's full scale, shown as a percentage.
    FullScale,
}

impl LimitUnit {
    /// The unit's symbol (`1` for a fraction).
    pub fn symbol(self) -> &'static str {
        match self {
            LimitUnit::Volt => "V",
            LimitUnit::Ampere => "A",
            LimitUnit::Ohm => "ohm",
            LimitUnit::FullScale => "1",
        }
    }
}

impl Envelope {
    /// The condition where the signal comes closest to (or goes furthest
    /// past) its limit, the cold junction at the ambient.
    pub fn worst_env(&self) -> Env {
        Env {
            measurand: self.worst_at.0,
            ambient: self.worst_at.1,
            cold_junction: self.worst_at.1,
        }
    }

    /// The limit's span: the interval's width, or the one finite end's
    /// magnitude for a one-sided limit.
    pub fn span(&self) -> f64 {
        let (lo, hi) = self.allowed;
        if lo.is_finite() && hi.is_finite() {
            hi - lo
        } else if hi.is_finite() {
            hi.abs()
        } else {
            lo.abs()
        }
    }

    /// How far the reach stays above the lower end and below the upper
    /// (infinite for an end not stated; negative: beyond it).
    fn distances(&self) -> (f64, f64) {
        let (lo, hi) = self.allowed;
        let below = if lo.is_finite() {
            self.reach.0 - lo
        } else {
            f64::INFINITY
        };
        let above = if hi.is_finite() {
            hi - self.reach.1
        } else {
            f64::INFINITY
        };
        (below, above)
    }

    /// How far inside the limit the signal stays, as a fraction of the
    /// limit's span (negative: outside).
    pub fn headroom(&self) -> f64 {
        let (below, above) = self.distances();
        below.min(above) / self.span().max(f64::MIN_POSITIVE)
    }

    /// Whether the upper end is the one at risk.
    pub fn high_side(&self) -> bool {
        let (below, above) = self.distances();
        above <= below
    }
}

/// One limited quantity of a plan.
#[derive(Clone, Copy, Debug)]
struct Check {
    node: NodeId,
    limit: Limit,
    allowed: (f64, f64),
    unit: LimitUnit,
}

/// Every limited quantity of the plan, node by node.
fn checks(plan: &Plan) -> Vec<Check> {
    NodeId::all(plan.nodes.len())
        .flat_map(|node| node_checks(plan, node))
        .collect()
}

/// The limited quantities of one node, as its stage states them.
fn node_checks(plan: &Plan, node: NodeId) -> Vec<Check> {
    let check = |limit, allowed: Option<(f64, f64)>, unit| {
        allowed.map(|allowed| Check {
            node,
            limit,
            allowed,
            unit,
        })
    };
    let stated = &plan.stated[node.index()];
    match &plan.nodes[node.index()] {
        Node::Amplifier(node::Amplifier {
            input_range,
            output,
            ..
        }) => [
            check(Limit::AmplifierInput, *input_range, LimitUnit::Volt),
            check(Limit::AmplifierOutput, *output, LimitUnit::Volt),
        ]
        .into_iter()
        .flatten()
        .collect(),
        Node::Adc(node::Adc {
            polarity,
            bits,
            input,
            differential,
            ..
        }) => converter_checks(plan, node, *polarity, *bits, *input, *differential),
        Node::Excitation(node::Excitation { current: true, .. }) => {
            check(Limit::Compliance, stated.compliance, LimitUnit::Volt)
                .into_iter()
                .collect()
        }
        Node::Excitation(node::Excitation { current: false, .. }) => {
            check(Limit::CurrentLimit, stated.current_limit, LimitUnit::Ampere)
                .into_iter()
                .collect()
        }
        // Only its upper end: a current either way heats an element alike.
        Node::Rtd(node::Rtd { input: Some(_), .. })
        | Node::Thermistor(node::Thermistor { input: Some(_), .. }) => {
            let up_to = stated
                .max_current
                .map(|(_, high)| (f64::NEG_INFINITY, high));
            check(Limit::MaxCurrent, up_to, LimitUnit::Ampere)
                .into_iter()
                .collect()
        }
        Node::Rtd(node::Rtd { input: None, .. })
        | Node::Thermistor(node::Thermistor { input: None, .. })
        | Node::Thermocouple(_)
        | Node::IcVoltage(_)
        | Node::IcCurrent(_)
        | Node::StrainGauge(_)
        | Node::Transducer(_)
        | Node::Resistor(_)
        | Node::Bridge(_)
        | Node::Filter(_)
        | Node::Convert(_) => Vec::new(),
    }
}

/// A converter's limits: its input range (always), its reference against
/// `ref_range`, each input pin against `rails`, and the source resistance
/// its sampling input settles behind.
fn converter_checks(
    plan: &Plan,
    node: NodeId,
    polarity: adc::Polarity,
    bits: u32,
    input: NodeId,
    differential: bool,
) -> Vec<Check> {
    let stated = &plan.stated[node.index()];
    let volts = |limit, allowed: Option<(f64, f64)>| {
        allowed.map(|allowed| Check {
            node,
            limit,
            allowed,
            unit: LimitUnit::Volt,
        })
    };
    let mut out = vec![Check {
        node,
        limit: Limit::ConverterInput,
        allowed: adc::input_range(polarity),
        unit: LimitUnit::FullScale,
    }];
    let pins: &[Pin] = if differential {
        &[Pin::Positive, Pin::Negative]
    } else {
        &[Pin::Positive]
    };
    out.extend(volts(Limit::ConverterReference, stated.ref_range));
    out.extend(
        pins.iter()
            .filter_map(|&pin| volts(Limit::ConverterPin(pin), stated.rails)),
    );
    let sampling = super::settling::Sampling::of(plan, node, bits, input);
    if let Some(r_max) = sampling.map(|s| s.largest_source()) {
        out.push(Check {
            node,
            limit: Limit::ConverterSettling,
            allowed: (f64::NEG_INFINITY, r_max),
            unit: LimitUnit::Ohm,
        });
    }
    out
}

/// The voltage a node gives (a source's or a divider's), zero for other
/// signals.
fn voltage_of(s: &[Signal], n: NodeId) -> f64 {
    match s[n.index()] {
        Signal::Voltage { v, .. } => v,
        Signal::Source(v) => v,
        _ => 0.0,
    }
}

/// The value a check watches, in one raw evaluation.
fn value(plan: &Plan, values: &[f64], env: &Env, s: &[Signal], check: &Check) -> f64 {
    let node = check.node;
    match (&plan.nodes[node.index()], check.limit) {
        (Node::Amplifier(node::Amplifier { input, .. }), Limit::AmplifierInput) => {
            match s[input.index()] {
                Signal::Voltage { cm, .. } => cm,
                _ => 0.0,
            }
        }
        (Node::Amplifier(_), _) => voltage_of(s, node),
        (Node::Adc(_), Limit::ConverterReference) => plan
            .converter_reference(node, values, env, s)
            .unwrap_or(0.0),
        (Node::Adc(adc), Limit::ConverterPin(pin)) => pin_voltage(
            adc.input_at_pins(s[adc.input.index()]),
            adc.differential,
            pin,
        ),
        (Node::Adc(node::Adc { input, .. }), Limit::ConverterSettling) => match s[input.index()] {
            Signal::Voltage { rs, .. } => rs,
            _ => 0.0,
        },
        // A code a conversion combines with other channels' is judged
        // before it is combined: the input range is the channel's own.
        (
            Node::Adc(node::Adc {
                bits,
                polarity,
                combine: Some(_),
                ..
            }),
            _,
        ) => plan
            .converter_own_code(node, values, env, s)
            .and_then(|exact| adc::input_of_code(exact, *bits, *polarity).ok())
            .unwrap_or(0.0),
        (Node::Adc(node::Adc { bits, polarity, .. }), _) => match s[node.index()] {
            Signal::Code { exact, .. } => {
                adc::input_of_code(exact, *bits, *polarity).unwrap_or(0.0)
            }
            _ => 0.0,
        },
        (Node::Excitation(_), Limit::Compliance) => compliance_voltage(plan, values, s, node),
        (Node::Excitation(_), _) => load_current(plan, values, s, node),
        (
            Node::Rtd(node::Rtd { input: Some(i), .. })
            | Node::Thermistor(node::Thermistor { input: Some(i), .. }),
            _,
        ) => match s[i.index()] {
            Signal::Current(a) => a,
            _ => 0.0,
        },
        // Kinds that state no limit: `node_checks` makes no check of them.
        (
            Node::Rtd(_)
            | Node::Thermistor(_)
            | Node::Thermocouple(_)
            | Node::IcVoltage(_)
            | Node::IcCurrent(_)
            | Node::StrainGauge(_)
            | Node::Transducer(_)
            | Node::Resistor(_)
            | Node::Bridge(_)
            | Node::Filter(_)
            | Node::Convert(_),
            _,
        ) => 0.0,
    }
}

/// A converter input pin's voltage: a single-ended input is the one pin
/// above the converter's ground; a differential one is two pins about
/// their common mode.
fn pin_voltage(input: Signal, differential: bool, pin: Pin) -> f64 {
    match input {
        Signal::Voltage { v, .. } if !differential => v,
        Signal::Voltage { v, cm, .. } => match pin {
            Pin::Positive => cm + v / 2.0,
            Pin::Negative => cm - v / 2.0,
        },
        _ => 0.0,
    }
}

/// The voltage across current source `exc`'s load: the string's voltage,
/// plus the current-carrying leads of 3- and 4-wire elements, which the
/// measurement does not see.
fn compliance_voltage(plan: &Plan, values: &[f64], s: &[Signal], exc: NodeId) -> f64 {
    let current = match s[exc.index()] {
        Signal::Current(a) => a,
        _ => 0.0,
    };
    NodeId::all(plan.nodes.len())
        .zip(&plan.nodes)
        .filter(|(_, node)| node.element_input() == Some(exc))
        .map(|(n, node)| {
            let leads = match node {
                Node::Rtd(node::Rtd {
                    leads: Some((a, b)),
                    wiring,
                    ..
                }) => {
                    let (a, b) = (values[a.index()], values[b.index()]);
                    let unseen = lead_loop_resistance(a, b) - lead_series_resistance(*wiring, a, b);
                    unseen * current
                }
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
                | Node::Convert(_) => 0.0,
            };
            voltage_of(s, n) + leads
        })
        .sum()
}

/// The current voltage source `exc` delivers: into every bridge or
/// divider it excites and every transducer's bridge.
fn load_current(plan: &Plan, values: &[f64], s: &[Signal], exc: NodeId) -> f64 {
    let v = voltage_of(s, exc);
    plan.nodes
        .iter()
        .map(|node| match node {
            Node::Bridge(bridge) if bridge.exc == exc => {
                let fixed = bridge.r.map(|r| values[r.index()]).unwrap_or(0.0);
                let load = bridge_load(plan, bridge, fixed, values, s);
                if load > 0.0 {
                    v / load
                } else {
                    0.0
                }
            }
            Node::Transducer(node::Transducer {
                input: Some(i),
                r: Some(r),
                ..
            }) if *i == exc => v / values[r.index()],
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
            | Node::Convert(_) => 0.0,
        })
        .sum()
}

/// The resistance a bridge or divider puts across its excitation, its
/// completion resistors all `fixed`, a three-wire element's wire 2 in
/// the next arm. Arm positions as in the evaluator: r1 r2 | r3 r4, a
/// divider's element at r2 and its fixed part at r1.
fn bridge_load(
    plan: &Plan,
    bridge: &node::Bridge,
    fixed: f64,
    values: &[f64],
    s: &[Signal],
) -> f64 {
    let mut arms = bridge.positions().map(|n| match n.map(|n| s[n.index()]) {
        Some(Signal::Element(r)) => r,
        _ => fixed,
    });
    for (k, n) in bridge.next_arms() {
        arms[k] += plan.next_arm_lead(n, values);
    }
    match bridge.kind {
        BridgeKind::Divider { .. } => arms[0] + arms[1],
        BridgeKind::Quarter | BridgeKind::Half | BridgeKind::Full => {
            bridge_input_resistance(arms[0], arms[1], arms[2], arms[3])
        }
    }
}

/// The reach of every limited signal.
pub fn envelopes(chain: &Chain, plan: &Plan, points: usize) -> Result<Vec<Envelope>, EvalError> {
    #[cfg(test)]
    ENVELOPE_RUNS.with(|runs| runs.set(runs.get() + 1));
    let checks = checks(plan);
    if checks.is_empty() {
        return Ok(Vec::new());
    }
    let limits = source_limits(plan);
    let conditions = conditions(chain, plan, points);
    // Each condition's reach (low, high) per check, on every core.
    let per_condition = conditions
        .par_iter()
        .map(|env| reach_at(plan, &checks, &limits, env))
        .collect::<Result<Vec<_>, _>>()?;
    Ok(gather(&checks, &conditions, per_condition))
}

#[cfg(test)]
thread_local! {
    /// How many times this thread computed envelopes: the tests count
    /// work a command should do once.
    pub static ENVELOPE_RUNS: std::cell::Cell<usize> = const { std::cell::Cell::new(0) };
}

/// Every source at both limits, in order: low, high, low, high, ...
fn source_limits(plan: &Plan) -> Vec<(SlotId, f64)> {
    SlotId::all(plan.slots.len())
        .filter(|&s| plan.slots[s.index()].kind != SourceKind::Exact)
        .flat_map(|s| {
            let slot = &plan.slots[s.index()];
            [
                (s, slot.nominal - slot.minus),
                (s, slot.nominal + slot.plus),
            ]
        })
        .collect()
}

/// How far each check reaches at one condition: its nominal value, plus
/// the sum of every source's downward and upward changes apart (each
/// source at its two limits, the rest nominal). The perturbed chains are
/// evaluated LANES at a time.
fn reach_at(
    plan: &Plan,
    checks: &[Check],
    limits: &[(SlotId, f64)],
    env: &Env,
) -> Result<Vec<(f64, f64)>, EvalError> {
    let nominal = plan.raw_signals(&plan.nominal, env)?;
    let q0: Vec<f64> = checks
        .iter()
        .map(|c| value(plan, &plan.nominal, env, &nominal, c))
        .collect();
    let n = plan.nominal.len();
    let mut values = plan.nominal.repeat(LANES);
    let mut scratch: LaneSignals = [[Signal::None; MAX_NODES]; LANES];
    // Each limit's change of each check, limit by limit.
    let mut changes = Vec::with_capacity(limits.len() * checks.len());
    for batch in limits.chunks(LANES) {
        for (lane, &(s, x)) in batch.iter().enumerate() {
            values[lane * n + s.index()] = x;
        }
        plan.raw_signals_lanes(&values, env, &mut scratch)?;
        for (lane, &(s, _)) in batch.iter().enumerate() {
            // Seen with this lane's values (a lead's or a reference's own
            // tolerance), then put back.
            let lane_values = &values[lane * n..(lane + 1) * n];
            for (k, c) in checks.iter().enumerate() {
                changes.push(value(plan, lane_values, env, &scratch[lane], c) - q0[k]);
            }
            values[lane * n + s.index()] = plan.nominal[s.index()];
        }
    }
    // Summed apart, then added to the nominal.
    let (mut down, mut up) = (vec![0.0; checks.len()], vec![0.0; checks.len()]);
    for source in changes.chunks(2 * checks.len()) {
        let (low, high) = source.split_at(checks.len());
        for k in 0..checks.len() {
            down[k] += low[k].min(high[k]).min(0.0);
            up[k] += low[k].max(high[k]).max(0.0);
        }
    }
    Ok((0..checks.len())
        .map(|k| (q0[k] + down[k], q0[k] + up[k]))
        .collect())
}

/// Each check's envelope over all conditions, gathered in order, so the
/// worst point is the first of equals, and its reach per measurand point.
fn gather(
    checks: &[Check],
    conditions: &[Env],
    per_condition: Vec<Vec<(f64, f64)>>,
) -> Vec<Envelope> {
    let mut reach: Vec<(f64, f64, (f64, f64), f64)> =
        vec![(f64::INFINITY, f64::NEG_INFINITY, (0.0, 0.0), f64::INFINITY); checks.len()];
    let mut by_measurand: Vec<Vec<PointReach>> = vec![Vec::new(); checks.len()];
    for (env, reaches) in conditions.iter().zip(per_condition) {
        for (k, c) in checks.iter().enumerate() {
            let (lo, hi) = reaches[k];
            let r = &mut reach[k];
            let margin = -(c.allowed.0 - lo).max(hi - c.allowed.1);
            if margin < r.3 {
                r.2 = (env.measurand, env.ambient);
                r.3 = margin;
            }
            r.0 = r.0.min(lo);
            r.1 = r.1.max(hi);
            let points = &mut by_measurand[k];
            match points.iter_mut().find(|p| p.measurand == env.measurand) {
                Some(p) => p.reach = (p.reach.0.min(lo), p.reach.1.max(hi)),
                None => points.push(PointReach {
                    measurand: env.measurand,
                    reach: (lo, hi),
                }),
            }
        }
    }
    checks
        .iter()
        .zip(reach)
        .zip(by_measurand)
        .map(|((c, (lo, hi, at, _)), by_measurand)| Envelope {
            node: c.node,
            limit: c.limit,
            allowed: c.allowed,
            reach: (lo, hi),
            worst_at: at,
            unit: c.unit,
            by_measurand,
        })
        .collect()
}

/// The thermocouple right at amplifier `node`'s input, by name, when it
/// has no bias: the one floating source a `bias_voltage` moves.
fn floating_couple(plan: &Plan, node: NodeId) -> Option<&str> {
    let Node::Amplifier(node::Amplifier { input, .. }) = plan.nodes[node.index()] else {
        return None;
    };
    match plan.nodes[input.index()] {
        Node::Thermocouple(node::Thermocouple { bias: None, .. }) => {
            Some(plan.names[input.index()].as_str())
        }
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
    }
}

/// What brings a converter's reference back inside its allowed range.
fn reference_fix(stated: bool, high: bool, value: f64, target: f64, margin: f64) -> String {
    let word = if high { "at most" } else { "at least" };
    let fits = format!(
        "of {word} {} keeps {} % headroom",
        with_prefix(target, "V", 4),
        trimmed(margin * 100.0, 3)
    );
    if stated {
        format!("a `vref` {fits}")
    } else {
        format!(
            "a reference {fits}: scale what drives `ref` by {}",
            trimmed(target / value, 4)
        )
    }
}

/// Whether another pin of the same converter is further out: one shift of
/// the common mode fixes both, so only the worse pin is reported.
fn a_worse_pin(envelopes: &[Envelope], e: &Envelope) -> bool {
    matches!(e.limit, Limit::ConverterPin(_))
        && envelopes.iter().any(|other| {
            other.node == e.node
                && other.limit != e.limit
                && matches!(other.limit, Limit::ConverterPin(_))
                && other.headroom() < e.headroom()
        })
}

/// The findings of the envelopes: an error where a signal leaves its limit,
/// a warning where it keeps less than `margin` of the limit's span, each
/// with the number that fixes it.
pub fn findings(chain: &Chain, plan: &Plan, envelopes: &[Envelope], margin: f64) -> Findings {
    let mut out = Findings::new();
    let unit = chain.measurand_unit();
    for e in envelopes {
        if let Some(f) = finding(chain, plan, envelopes, e, margin, &unit) {
            out.push(f);
        }
    }
    out.extend(super::settling::findings(chain, plan, envelopes));
    out
}

/// The end of an envelope a finding speaks of.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Side {
    /// The upper end (else the lower).
    high: bool,
    /// How far the signal goes there.
    value: f64,
    /// The limit there.
    bound: f64,
    /// Where the signal would keep `margin` of the span to the limit.
    target: f64,
}

impl Side {
    fn of(e: &Envelope, margin: f64) -> Side {
        let high = e.high_side();
        let (value, bound) = if high {
            (e.reach.1, e.allowed.1)
        } else {
            (e.reach.0, e.allowed.0)
        };
        let span = e.span();
        let target = if high {
            bound - margin * span
        } else {
            bound + margin * span
        };
        Side {
            high,
            value,
            bound,
            target,
        }
    }
}

/// `x` in the envelope's unit, for people.
fn show(e: &Envelope, x: f64) -> String {
    match e.unit {
        LimitUnit::FullScale => format!("{} % of full scale", trimmed(x * 100.0, 4)),
        LimitUnit::Volt | LimitUnit::Ampere | LimitUnit::Ohm => with_prefix(x, e.unit.symbol(), 4),
    }
}

/// The finding of one envelope, if it keeps too little headroom.
fn finding(
    chain: &Chain,
    plan: &Plan,
    envelopes: &[Envelope],
    e: &Envelope,
    margin: f64,
    unit: &str,
) -> Option<Finding> {
    let headroom = e.headroom();
    // Settling is judged on its own terms (R630), not as a range.
    if e.limit == Limit::ConverterSettling {
        return None;
    }
    if headroom >= e.limit.margin_needed(margin) || a_worse_pin(envelopes, e) {
        return None;
    }
    let stage = chain
        .stages
        .iter()
        .find(|s| s.name == plan.names[e.node.index()])?;
    let side = Side::of(e, margin);
    let f = Finding::new(
        if headroom < 0.0 {
            Code::R601
        } else {
            Code::R602
        },
        &chain.file,
        message(e, &stage.name, side, (headroom, margin), unit),
    );
    let f = labels(chain, plan, e, stage, f);
    Some(match fix(plan, e, side, margin) {
        Some(fix) => f.help(fix),
        None => f,
    })
}

/// What the finding says: where the signal goes, and how near or beyond
/// its limit.
fn message(
    e: &Envelope,
    stage: &str,
    side: Side,
    (headroom, margin): (f64, f64),
    unit: &str,
) -> String {
    let at = format!(
        "at {} {unit}, ambient {} degC",
        trimmed(from_si(e.worst_at.0, unit), 6),
        trimmed(from_si(e.worst_at.1, "degC"), 4)
    );
    let limit_text = match e.unit {
        LimitUnit::FullScale => "the end of its range".to_string(),
        LimitUnit::Volt | LimitUnit::Ampere | LimitUnit::Ohm => {
            format!("its limit of {}", show(e, side.bound))
        }
    };
    let what = e.limit.describe();
    let value = show(e, side.value);
    let margin_text = trimmed(margin * 100.0, 3);
    if headroom < 0.0 {
        format!("the {what} of `{stage}` reaches {value} {at}, beyond {limit_text}")
    } else if e.unit == LimitUnit::FullScale && (e.allowed.1 - e.allowed.0 - 1.0).abs() < 1e-12 {
        // The whole of full scale allowed: the distance is the share of
        // the span, and from the bottom the value itself; said once.
        let end = if side.high { "top" } else { "bottom" };
        if side.value == side.bound {
            format!(
                "the {what} of `{stage}` reaches the {end} of its range, {value}, {at}: \
                 no headroom, under the {margin_text} % margin"
            )
        } else if side.bound == 0.0 {
            format!(
                "the {what} of `{stage}` comes within {value} of the {end} of its range {at}, \
                 under the {margin_text} % margin"
            )
        } else {
            format!(
                "the {what} of `{stage}` reaches {value} {at}, {} from the {end} of its range, \
                 under the {margin_text} % margin",
                show(e, (side.bound - side.value).abs()),
            )
        }
    } else {
        // Headroom is a share of the allowed span, not of full scale: say
        // both the distance and the share, so a reader of "92.95 % of full
        // scale" is not left to reconcile it with "3.52 %".
        format!(
            "the {what} of `{stage}` reaches {value} {at}, {} from {limit_text}: \
             {} % of the allowed span, under the {} % margin",
            show(e, (side.bound - side.value).abs()),
            trimmed(headroom * 100.0, 3),
            margin_text
        )
    }
}

/// The stage, the parameters that state and drive the limit, and the
/// stage that drives an amplifier's input or a converter's reference.
fn labels(chain: &Chain, plan: &Plan, e: &Envelope, stage: &Stage, f: Finding) -> Finding {
    let mut f = f.label(stage.name_span, "this stage");
    let (limit_param, drive_param) = e.limit.params();
    let mut involved = vec![(limit_param, "the limit"), (drive_param, "drives it")];
    // An amplifier's stated reference shifts its output: the other fix.
    if e.limit == Limit::AmplifierOutput {
        involved.push((schema::REFERENCE, "shifts it"));
    }
    for (name, text) in involved {
        if let Some(p) = stage.params.iter().find(|p| p.name == name) {
            if std::sync::Arc::ptr_eq(&p.file, &chain.file)
                && !f.labels.iter().any(|l| l.span == p.span)
            {
                f = f.label(p.span, text);
            }
        }
    }
    let stage_of = |node: NodeId| {
        chain
            .stages
            .iter()
            .find(|s| s.name == plan.names[node.index()])
    };
    match (&plan.nodes[e.node.index()], e.limit) {
        (Node::Amplifier(node::Amplifier { input, .. }), Limit::AmplifierInput) => {
            if let Some(driver) = stage_of(*input) {
                f = f.label(driver.name_span, "sets its input common mode");
            }
        }
        (
            Node::Adc(node::Adc {
                reference: Some(r), ..
            }),
            Limit::ConverterReference,
        ) => {
            if let Some(driver) = stage_of(*r) {
                f = f.label(driver.name_span, "drives its `ref`");
            }
        }
        (
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
            | Node::Convert(_),
            _,
        ) => {}
    }
    f
}

/// The nominal value of the envelope's stage's parameter `name`.
fn nominal_of(plan: &Plan, node: NodeId, name: &str) -> Option<f64> {
    plan.slot_of(node, name).map(|s| plan.nominal[s.index()])
}

/// The help line: what brings the signal back inside with `margin` to
/// spare, computed.
fn fix(plan: &Plan, e: &Envelope, side: Side, margin: f64) -> Option<String> {
    let Side {
        high,
        value,
        bound,
        target,
    } = side;
    let slot = |name: &str| nominal_of(plan, e.node, name);
    let pct = trimmed(margin * 100.0, 3);
    match e.limit {
        Limit::AmplifierOutput => amplifier_output_fix(plan, e, side, margin),
        Limit::AmplifierInput => Some(match floating_couple(plan, e.node) {
            Some(tc) => format!("hold the couple's common mode inside {} .. {} with a `bias_voltage` on `{tc}` (mid-range: {}), or choose an amplifier whose input range includes {}", show(e, e.allowed.0), show(e, e.allowed.1), show(e, (e.allowed.0 + e.allowed.1) / 2.0), show(e, value)),
            None => format!("bias the input common mode into {} .. {}, or choose an amplifier whose input range includes {}", show(e, e.allowed.0), show(e, e.allowed.1), show(e, value)),
        }),
        Limit::ConverterInput if high => match slot(schema::VREF) {
            Some(vref) => Some(format!("a reference of at least {} keeps {pct} % headroom", with_prefix(vref * value / target, "V", 4))),
            None => Some(converter_gain_fix(plan, e, value, target)),
        },
        Limit::ConverterInput => Some(converter_low_fix(plan, e, side)),
        Limit::Compliance => slot(schema::param::CURRENT).map(|i| format!("the largest current that fits with {pct} % headroom is {}", with_prefix(i * target / value, "A", 4))),
        Limit::CurrentLimit => Some(format!("a current limit of at least {} covers the load with {pct} % headroom", with_prefix(value / (1.0 - margin), "A", 4))),
        Limit::MaxCurrent => Some(format!("keep the excitation below {}", with_prefix(target, "A", 4))),
        Limit::ConverterReference => Some(reference_fix(slot(schema::VREF).is_some(), high, value, target, margin)),
        Limit::ConverterPin(_) => Some(format!("shift the input's common mode {} by at least {} so every pin stays inside {} .. {}, or power the converter from rails that include {}", if high { "down" } else { "up" }, with_prefix((value - bound).abs(), "V", 4), show(e, e.allowed.0), show(e, e.allowed.1), show(e, value))),
        Limit::ConverterSettling => None,
    }
}

/// What brings a converter's input back under its top with the margin
/// to spare: the gain ahead of it scales the amplifier's output about the
/// amplifier's reference, not the whole input, so the factor divides
/// that part alone (its share of the input at the worst point, in the
/// nominal chain).
fn converter_gain_fix(plan: &Plan, e: &Envelope, value: f64, target: f64) -> String {
    let share = gained_share(plan, e).unwrap_or(1.0);
    let fixed = value * (1.0 - share);
    if target <= fixed {
        return format!(
            "the amplifier's `reference` alone puts the input at {}: lower it",
            show(e, fixed)
        );
    }
    format!(
        "reduce the gain ahead of the converter by a factor of at least {}",
        trimmed(up_to_digits(value * share / (target - fixed), 4), 4)
    )
}

/// What lifts a converter's input off the bottom of its range with the
/// margin to spare: the rise in volts (the shortfall times V_ref / G),
/// which the nearest amplifier ahead adds as its `reference` (a filter
/// passes it at DC).
fn converter_low_fix(plan: &Plan, e: &Envelope, side: Side) -> String {
    let where_ = if side.value < side.bound {
        "the input goes below the converter's range"
    } else {
        "the input comes within the margin of the bottom of the converter's range"
    };
    let worst = e.worst_env();
    let signals = plan.raw_signals(&plan.nominal, &worst).ok();
    let full_scale = signals
        .as_ref()
        .and_then(|s| converter_full_scale(plan, e.node, &worst, s));
    let (Some(signals), Some(full_scale)) = (signals, full_scale) else {
        return format!("{where_}: use a bipolar or differential input, or lift the signal (an amplifier's `reference` shifts its output)");
    };
    let rise = (side.target - side.value) * full_scale;
    let lift = format!("lift it by at least {}", with_prefix(rise, "V", 4));
    let ahead = amplifier_ahead(plan, e.node);
    let reference = ahead.and_then(|a| {
        let r = plan.amplifier_reference(a, &plan.nominal, &worst, &signals)?;
        Some((plan.names[a.index()].as_str(), r))
    });
    match reference {
        Some((amp, r)) => format!("{where_}: {lift}, as a `reference` of {} on `{amp}` does (it shifts the output), or use a bipolar or differential input", with_prefix(r + rise, "V", 4)),
        None => format!("{where_}: {lift}, or use a bipolar or differential input"),
    }
}

/// A converter's full scale in volts at its input, V_ref / G, in the
/// nominal chain at `env`.
fn converter_full_scale(plan: &Plan, node: NodeId, env: &Env, s: &[Signal]) -> Option<f64> {
    let vref = plan.converter_reference(node, &plan.nominal, env, s)?;
    let pga = nominal_of(plan, node, schema::param::PGA).unwrap_or(1.0);
    (vref > 0.0 && pga > 0.0).then_some(vref / pga)
}

/// The nearest amplifier ahead of converter `node`, through filters.
fn amplifier_ahead(plan: &Plan, node: NodeId) -> Option<NodeId> {
    let Node::Adc(adc) = &plan.nodes[node.index()] else {
        return None;
    };
    let mut ahead = adc.input;
    while let Node::Filter(f) = &plan.nodes[ahead.index()] {
        ahead = f.input;
    }
    matches!(plan.nodes[ahead.index()], Node::Amplifier(_)).then_some(ahead)
}

/// `x` > 0 rounded up to `digits` significant digits, so a factor shown
/// "at least" is one that suffices.
fn up_to_digits(x: f64, digits: i32) -> f64 {
    let scale = 10f64.powi(digits - 1 - x.log10().floor() as i32);
    (x * scale * (1.0 - 1e-12)).ceil() / scale
}

/// Of a converter's input at the envelope's worst point, the share the
/// gain ahead of it scales: the nearest amplifier upstream (through
/// filters), its output less its reference over the converter's input,
/// in the nominal chain. None without such an amplifier.
fn gained_share(plan: &Plan, e: &Envelope) -> Option<f64> {
    let Node::Adc(adc) = &plan.nodes[e.node.index()] else {
        return None;
    };
    let ahead = amplifier_ahead(plan, e.node)?;
    let worst = e.worst_env();
    let signals = plan.raw_signals(&plan.nominal, &worst).ok()?;
    let reference = plan.amplifier_reference(ahead, &plan.nominal, &worst, &signals)?;
    let (Signal::Voltage { v: out, .. }, Signal::Voltage { v: input, .. }) =
        (signals[ahead.index()], signals[adc.input.index()])
    else {
        return None;
    };
    (input != 0.0).then(|| ((out - reference) / input).clamp(0.0, 1.0))
}

/// What brings an amplifier's output back inside its swing: the gain
/// scales the output about its reference, so a smaller (or larger) gain
/// where the measurand drives the output there (nothing to say if the
/// gain is not a stated value), else a reference that shifts it. Where
/// the nominal output sits near its reference and the tolerances alone
/// carry it toward the end (a bridge's zero, an offset), a gain small
/// enough would also give up the span, so the reference is the fix.
fn amplifier_output_fix(plan: &Plan, e: &Envelope, side: Side, margin: f64) -> Option<String> {
    let Side { value, target, .. } = side;
    let worst = e.worst_env();
    let signals = plan.raw_signals(&plan.nominal, &worst).ok();
    let shift = signals
        .as_ref()
        .and_then(|s| plan.amplifier_reference(e.node, &plan.nominal, &worst, s))
        .unwrap_or(0.0);
    let driven = match signals.map(|s| s[e.node.index()]) {
        Some(Signal::Voltage { v: nominal, .. }) => {
            2.0 * (nominal - shift).abs() >= (value - shift).abs()
        }
        _ => true,
    };
    let pct = trimmed(margin * 100.0, 3);
    if driven && value != shift && (target - shift) / (value - shift) > 0.0 {
        return nominal_of(plan, e.node, schema::param::GAIN).map(|g| {
            let fits = g * (target - shift) / (value - shift);
            let word = if fits < g { "at most" } else { "at least" };
            format!(
                "a gain of {word} {} keeps {pct} % headroom",
                trimmed(fits, 4)
            )
        });
    }
    Some(format!("the output reaches {}: a `reference` of {} keeps {pct} % headroom (it shifts the output), or choose an amplifier that swings there", show(e, value), with_prefix(shift + target - value, "V", 4)))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::ZERO_CELSIUS_K;

    /// Resolved by the front end's stages: the checker sits above the
    /// analyses, so a test here does not call it.
    fn chain(text: &str) -> Chain {
        let file = crate::syntax::decode("test.catena", text.as_bytes()).expect("text");
        let (ast, findings) = crate::syntax::parse(&file);
        assert!(!findings.has_errors(), "{findings:?}");
        let mut parts = crate::model::PartsCache::default();
        let base = std::path::Path::new(".");
        let (chains, findings) = crate::model::resolve(&file, &ast, base, None, &mut parts);
        assert!(!findings.has_errors(), "{findings:?}");
        chains.into_iter().next().expect("one chain")
    }

    fn envelopes_of(text: &str) -> Vec<Envelope> {
        let chain = chain(text);
        let plan = crate::eval::lower(&chain).expect("lowers");
        envelopes(&chain, &plan, 21).expect("evaluates")
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs().max(1e-12)
    }

    /// Worked by hand: 10 mV/K from 500 mV at 0 degC gives 0.5 .. 1.0 V
    /// over 0 .. 50 degC; a gain of 2 ± 1 % (the only source) takes the
    /// output to 1.0 − 0.01 .. 2.0 + 0.02 V, worst at the top end, with
    /// 0.48 V of the 2.5 V swing to spare (19.2 %); the converter sees the
    /// same over its 2.5 V reference.
    #[test]
    fn a_gain_tolerance_widens_the_output_by_its_share() {
        let e = envelopes_of(
            "chain t \"T\" {
                measurand temperature 0 degC .. 50 degC
                sensor probe {
                    ic_voltage
                    slope 10 mV/K
                    output 500 mV at 0 degC
                }
                amplifier front {
                    gain 2 ± 1 %
                    output 0 V .. 2.5 V
                }
                adc conv {
                    bits 16
                    input single
                    vref 2.5 V
                }
                convert reading { method exact }
                probe -> front -> conv -> reading
            }",
        );
        let [out, conv] = &e[..] else { panic!("{e:?}") };
        assert_eq!(
            (out.limit, out.unit),
            (Limit::AmplifierOutput, LimitUnit::Volt)
        );
        assert!(
            close(out.reach.0, 0.99) && close(out.reach.1, 2.02),
            "{out:?}"
        );
        assert!(close(out.headroom(), 0.48 / 2.5), "{}", out.headroom());
        assert!(out.high_side());
        assert!(close(out.worst_at.0, 50.0 + ZERO_CELSIUS_K));
        assert_eq!(
            (conv.limit, conv.unit),
            (Limit::ConverterInput, LimitUnit::FullScale)
        );
        assert_eq!(conv.allowed, (0.0, 1.0));
        assert!(close(conv.reach.0, 0.99 / 2.5) && close(conv.reach.1, 2.02 / 2.5));
    }

    /// A converter's input lifted by its amplifier's reference: 500 mV +
    /// 10 mV/K × 50 K = 1.0 V at the top, times a gain of 2 on a 1 V
    /// reference is 3.0 V, 120 % of a 2.5 V reference. The gain scales
    /// the 2.0 V above the reference alone: to reach 95 % (2.375 V) it
    /// must shrink by 2.0 / 1.375 = 1.4545…, shown rounded up, 1.455
    /// (the whole input's 120 / 95 = 1.263 would leave 2.58 V, still over).
    #[test]
    fn the_converters_gain_help_divides_only_what_the_gain_scales() {
        let text = "chain t \"T\" {
                measurand temperature 0 degC .. 50 degC
                sensor probe {
                    ic_voltage
                    slope 10 mV/K
                    output 500 mV at 0 degC
                }
                amplifier front {
                    gain 2
                    reference 1 V
                }
                adc conv {
                    bits 16
                    input single
                    vref 2.5 V
                }
                convert reading { method exact }
                probe -> front -> conv -> reading
            }";
        let chain = chain(text);
        let plan = crate::eval::lower(&chain).expect("lowers");
        let e = envelopes(&chain, &plan, 21).expect("evaluates");
        let conv = e
            .iter()
            .find(|e| e.limit == Limit::ConverterInput)
            .expect("the converter's input");
        assert!(close(conv.reach.1, 1.2), "{conv:?}");
        let share = gained_share(&plan, conv).expect("an amplifier ahead");
        assert!(close(share, 2.0 / 3.0), "{share}");
        assert_eq!(
            converter_gain_fix(&plan, conv, conv.reach.1, 0.95),
            "reduce the gain ahead of the converter by a factor of at least 1.455"
        );
    }

    /// A divider's load on its source: 3.3 V across the NTC (Beta 3435 K,
    /// 10 kΩ at 25 degC) and 10 kΩ, largest at 60 degC where the NTC is
    /// smallest: 3.3 / (R(333.15 K) + 10 kΩ), everything exact.
    #[test]
    fn a_divider_draws_its_source_current_through_both_parts() {
        let e = envelopes_of(
            "chain t \"T\" {
                measurand temperature 30 degC .. 60 degC
                excitation rail {
                    voltage 3.3 V
                    limit 1 mA
                }
                sensor ntc {
                    thermistor
                    r25 10 kohm
                    beta 3435 K
                }
                bridge div {
                    divider
                    r 10 kohm
                }
                adc conv {
                    bits 12
                    input single
                }
                convert reading { method exact }
                rail -> div -> conv -> reading
                ntc -> div.arm
                rail -> conv.ref
            }",
        );
        let load = e
            .iter()
            .find(|e| e.limit == Limit::CurrentLimit)
            .expect("the current limit is checked");
        let t25 = 25.0 + ZERO_CELSIUS_K;
        let r_at =
            |t: f64| crate::physics::thermistor::beta_resistance(1e4, t25, 3435.0, t).unwrap();
        let hot = 3.3 / (r_at(60.0 + ZERO_CELSIUS_K) + 1e4);
        let cold = 3.3 / (r_at(30.0 + ZERO_CELSIUS_K) + 1e4);
        assert!(
            close(load.reach.1, hot) && close(load.reach.0, cold),
            "{load:?}"
        );
        assert_eq!(load.allowed, (f64::NEG_INFINITY, 1e-3));
        assert_eq!(load.unit, LimitUnit::Ampere);
    }

    /// The reach at each measurand point is the envelope of the range
    /// shrunk to that point, to the bit (what the report's headroom plot
    /// drew by running the envelopes once per point), and its bounds
    /// hold the whole range's reach. By hand at the top point, 50 degC:
    /// 1.0 V × 2 ± 1 % is 1.98 .. 2.02 V, widened by the gain's drift
    /// at the ambient furthest from the 25 degC reference, 0 degC:
    /// 2 V × 50 ppm/K × 25 K = 2.5 mV, so 1.9775 .. 2.0225 V.
    #[test]
    fn the_reach_per_point_is_the_envelope_at_that_point() {
        let chain = chain(
            "chain t \"T\" {
                measurand temperature 0 degC .. 50 degC
                ambient 0 degC .. 40 degC
                sensor probe {
                    ic_voltage
                    slope 10 mV/K
                    output 500 mV at 0 degC
                }
                amplifier front {
                    gain 2 ± 1 %
                    gain_drift 50 ppm/K
                    output 0 V .. 2.5 V
                }
                adc conv {
                    bits 16
                    input single
                    vref 2.5 V
                }
                convert reading { method exact }
                probe -> front -> conv -> reading
            }",
        );
        let plan = crate::eval::lower(&chain).expect("lowers");
        let whole = envelopes(&chain, &plan, 5).expect("evaluates");
        for e in &whole {
            assert_eq!(e.by_measurand.len(), 5, "{e:?}");
            let lo = e
                .by_measurand
                .iter()
                .map(|p| p.reach.0)
                .fold(f64::INFINITY, f64::min);
            let hi = e
                .by_measurand
                .iter()
                .map(|p| p.reach.1)
                .fold(f64::NEG_INFINITY, f64::max);
            assert_eq!((lo, hi), e.reach, "{e:?}");
        }
        for (k, point) in whole[0].by_measurand.iter().enumerate() {
            let mut at = plan.clone();
            at.range = (point.measurand, point.measurand);
            let alone = envelopes(&chain, &at, 2).expect("evaluates");
            for (e, a) in whole.iter().zip(&alone) {
                assert_eq!(e.by_measurand[k].reach, a.reach, "{e:?}");
            }
        }
        let top = whole[0].by_measurand.last().expect("points");
        let near = |a: f64, b: f64| (a - b).abs() < 1e-9;
        assert!(
            near(top.reach.0, 1.9775) && near(top.reach.1, 2.0225),
            "{top:?}"
        );
    }

    fn envelope(allowed: (f64, f64), reach: (f64, f64)) -> Envelope {
        Envelope {
            node: NodeId::new(0),
            limit: Limit::AmplifierOutput,
            allowed,
            reach,
            worst_at: (0.0, 0.0),
            unit: LimitUnit::Volt,
            by_measurand: Vec::new(),
        }
    }

    /// Headroom is the nearer end's distance over the span: a one-sided
    /// limit's span is its one end's size, and a reach beyond is negative.
    #[test]
    fn headroom_against_one_and_two_sided_limits() {
        let two = envelope((0.0, 4.0), (1.0, 3.5));
        assert_eq!(two.span(), 4.0);
        assert_eq!(two.headroom(), 0.125);
        assert!(two.high_side());
        let one = envelope((f64::NEG_INFINITY, 2.0), (-9.0, 2.5));
        assert_eq!(one.span(), 2.0);
        assert_eq!(one.headroom(), -0.25);
        let low = envelope((-1.0, f64::INFINITY), (-0.5, 7.0));
        assert_eq!(low.headroom(), 0.5);
        assert!(!low.high_side());
    }

    /// A differential input's pins sit at the common mode ± half the
    /// difference; a single-ended input is its one pin.
    #[test]
    fn pins_about_the_common_mode() {
        let input = Signal::Voltage {
            v: 0.2,
            cm: 1.5,
            rs: 0.0,
        };
        assert_eq!(pin_voltage(input, true, Pin::Positive), 1.6);
        assert_eq!(pin_voltage(input, true, Pin::Negative), 1.4);
        assert_eq!(pin_voltage(input, false, Pin::Positive), 0.2);
        assert_eq!(pin_voltage(Signal::None, true, Pin::Positive), 0.0);
    }

    /// A converter's burnout current flows out of its pin and back
    /// through the divider's Thevenin resistance, R_ntc ∥ 10 kohm, so the
    /// pin sits I × that above the divider's voltage at each end of the
    /// range (Ohm's law).
    #[test]
    fn a_burnout_current_lifts_the_pin_by_its_drop() {
        let text = |burnout: &str| {
            format!(
                "chain t \"T\" {{
                    measurand temperature 0 degC .. 40 degC
                    excitation rail {{ voltage 2.5 V }}
                    sensor ntc {{
                        thermistor
                        r25 10 kohm
                        beta 3380 K
                    }}
                    bridge div {{
                        divider
                        r 10 kohm
                    }}
                    adc conv {{
                        bits 24
                        input single
                        rails 0 V .. 2.5 V
                        {burnout}
                    }}
                    convert reading {{ method exact }}
                    rail -> div -> conv -> reading
                    ntc -> div.arm
                    rail -> conv.ref
                }}"
            )
        };
        let pin = |text: &str| {
            let e = envelopes_of(text);
            let pin = e
                .iter()
                .find(|e| e.limit == Limit::ConverterPin(Pin::Positive));
            pin.expect("the pin is checked").reach
        };
        let (healthy, lifted) = (pin(&text("")), pin(&text("burnout 10 uA")));
        let t25 = 25.0 + ZERO_CELSIUS_K;
        let drop = |t: f64| {
            let r =
                crate::physics::thermistor::beta_resistance(1e4, t25, 3380.0, t + ZERO_CELSIUS_K);
            let r = r.unwrap();
            10e-6 * r * 1e4 / (r + 1e4)
        };
        let (cold, hot) = (drop(0.0), drop(40.0));
        let near = |a: f64, b: f64| (a - b).abs() <= 1e-9 * b.abs();
        let lifted_by = |d: f64| near(d, cold) || near(d, hot);
        assert!(
            cold > 1e-2 && hot > 1e-3,
            "a drop the limits notice: {cold}, {hot}"
        );
        assert!(
            lifted_by(lifted.0 - healthy.0) && lifted_by(lifted.1 - healthy.1),
            "{healthy:?} -> {lifted:?}, drops {cold} and {hot}"
        );
    }

    /// The load bridge `text`'s bridge puts on its excitation at 0 °C, with
    /// every part nominal.
    fn bridge_load_of(text: &str) -> f64 {
        let plan = crate::eval::lower(&chain(text)).expect("lowers");
        let env = Env {
            measurand: ZERO_CELSIUS_K,
            ambient: plan.reference,
            cold_junction: plan.reference,
        };
        let s = plan.raw_signals(&plan.nominal, &env).expect("evaluates");
        let bridge = plan.nodes.iter().find_map(|n| {
            let Node::Bridge(b) = n else { return None };
            Some(b)
        });
        let bridge = bridge.expect("a bridge");
        let fixed = plan.nominal[bridge.r.expect("completion").index()];
        bridge_load(&plan, bridge, fixed, &plan.nominal, &s)
    }

    fn probe_in(wires: u8, bridge: &str) -> String {
        format!(
            "chain c {{\n    measurand temperature 0 degC .. 100 degC\n    \
             excitation supply {{ voltage 2.5 V }}\n    \
             sensor probe {{\n        rtd pt100\n        wires {wires}\n        \
             lead 0.5 ohm ± 0.2 ohm\n    }}\n    \
             bridge arms {{\n        {bridge}\n    }}\n    \
             adc conv {{\n        bits 24\n        input differential\n        \
             vref 2.5 V\n    }}\n    convert reading {{ method exact }}\n    \
             supply -> arms -> conv -> reading\n    probe -> arms.arm\n}}\n"
        )
    }

    /// A bridge loads its source with its two sides in parallel, a
    /// divider with its two parts in series. A Pt100 at 0 °C (100 Ω) with
    /// 0.5 Ω leads: 2-wire in a quarter bridge of 100 Ω, its arm is 101 Ω,
    /// so 201 ∥ 200 Ω; 3-wire, wire 2 moves to the next arm, 201 ∥ 200 Ω
    /// still; 3-wire below 1 kΩ in a divider, 100.5 + 1000.5 Ω.
    #[test]
    fn bridge_loads() {
        let quarter = 201.0 * 200.0 / 401.0;
        let two = bridge_load_of(&probe_in(2, "quarter\n        r 100 ohm"));
        assert!(close(two, quarter), "{two}");
        let three = bridge_load_of(&probe_in(3, "quarter\n        r 100 ohm"));
        assert!(close(three, quarter), "{three}");
        let divider = bridge_load_of(&probe_in(3, "divider\n        r 1 kohm"));
        assert!(close(divider, 1101.0), "{divider}");
    }
}
