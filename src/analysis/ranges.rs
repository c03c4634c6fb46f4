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
use crate::eval::{
    node, BridgeKind, Env, EvalError, LaneSignals, Node, NodeId, Plan, Signal, SourceKind, LANES,
    MAX_NODES,
};
use crate::model::Chain;
use crate::physics::adc::Polarity;

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
    pub fn describe(self) -> &'static str {
        match self {
            Limit::AmplifierInput => "input common mode",
            Limit::AmplifierOutput => "output",
            Limit::ConverterInput => "input",
            Limit::Compliance => "voltage across its load",
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
            Limit::AmplifierInput => ("input", "input"),
            Limit::AmplifierOutput => ("output", "gain"),
            Limit::ConverterInput => ("vref", "vref"),
            Limit::Compliance => ("compliance", "current"),
            Limit::CurrentLimit => ("limit", "voltage"),
            Limit::MaxCurrent => ("max_current", "max_current"),
            Limit::ConverterReference => ("ref_range", "vref"),
            Limit::ConverterPin(_) => ("rails", "rails"),
            Limit::ConverterSettling => ("acquisition_time", "sampling_capacitance"),
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
    pub unit: &'static str,
}

impl Envelope {
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
    unit: &'static str,
}

fn checks(chain: &Chain, plan: &Plan) -> Vec<Check> {
    let mut out = Vec::new();
    let range = |node: NodeId, name: &str| {
        let stage = chain.stages.iter().find(|s| s.name == plan.names[node])?;
        match stage.param(name) {
            Some(crate::model::value::ParamValue::Range { low, high }) => Some((*low, *high)),
            Some(crate::model::value::ParamValue::Measure(m)) => {
                Some((f64::NEG_INFINITY, m.nominal))
            }
            _ => None,
        }
    };
    for (i, node) in plan.nodes.iter().enumerate() {
        match node {
            Node::Amplifier(_) => {
                if let Some(r) = range(i, "input") {
                    out.push(Check {
                        node: i,
                        limit: Limit::AmplifierInput,
                        allowed: r,
                        unit: "V",
                    });
                }
                if let Some(r) = range(i, "output") {
                    out.push(Check {
                        node: i,
                        limit: Limit::AmplifierOutput,
                        allowed: r,
                        unit: "V",
                    });
                }
            }
            Node::Adc(node::Adc {
                polarity,
                bits,
                input,
                differential,
                ..
            }) => {
                let allowed = match polarity {
                    Polarity::Unipolar => (0.0, 1.0),
                    Polarity::Bipolar => (-1.0, 1.0),
                };
                out.push(Check {
                    node: i,
                    limit: Limit::ConverterInput,
                    allowed,
                    unit: "of full scale",
                });
                let pins: &[Pin] = if *differential {
                    &[Pin::Positive, Pin::Negative]
                } else {
                    &[Pin::Positive]
                };
                let limits = std::iter::once(("ref_range", Limit::ConverterReference))
                    .chain(pins.iter().map(|&p| ("rails", Limit::ConverterPin(p))));
                for (name, limit) in limits {
                    if let Some(r) = range(i, name) {
                        out.push(Check {
                            node: i,
                            limit,
                            allowed: r,
                            unit: "V",
                        });
                    }
                }
                let sampling = super::settling::Sampling::of(chain, plan, i, *bits, *input);
                if let Some(r_max) = sampling.map(|s| s.largest_source()) {
                    out.push(Check {
                        node: i,
                        limit: Limit::ConverterSettling,
                        allowed: (f64::NEG_INFINITY, r_max),
                        unit: "ohm",
                    });
                }
            }
            Node::Excitation(node::Excitation { current: true, .. }) => {
                if let Some(r) = range(i, "compliance") {
                    out.push(Check {
                        node: i,
                        limit: Limit::Compliance,
                        allowed: r,
                        unit: "V",
                    });
                }
            }
            Node::Excitation(node::Excitation { current: false, .. }) => {
                if let Some(r) = range(i, "limit") {
                    out.push(Check {
                        node: i,
                        limit: Limit::CurrentLimit,
                        allowed: r,
                        unit: "A",
                    });
                }
            }
            Node::Rtd(node::Rtd { input: Some(_), .. })
            | Node::Thermistor(node::Thermistor { input: Some(_), .. }) => {
                if let Some(r) = range(i, "max_current") {
                    out.push(Check {
                        node: i,
                        limit: Limit::MaxCurrent,
                        allowed: (f64::NEG_INFINITY, r.1),
                        unit: "A",
                    });
                }
            }
            _ => {}
        }
    }
    out
}

/// The value a check watches, in one raw evaluation.
fn value(plan: &Plan, values: &[f64], env: &Env, s: &[Signal], check: &Check) -> f64 {
    let voltage = |n: NodeId| match s[n] {
        Signal::Voltage { v, .. } => v,
        Signal::Source(v) => v,
        _ => 0.0,
    };
    match (&plan.nodes[check.node], check.limit) {
        (Node::Amplifier(node::Amplifier { input, .. }), Limit::AmplifierInput) => {
            match s[*input] {
                Signal::Voltage { cm, .. } => cm,
                _ => 0.0,
            }
        }
        (Node::Amplifier(_), _) => voltage(check.node),
        (Node::Adc(_), Limit::ConverterReference) => plan
            .converter_reference(check.node, values, env, s)
            .unwrap_or(0.0),
        (
            Node::Adc(node::Adc {
                input,
                differential,
                ..
            }),
            Limit::ConverterPin(pin),
        ) => match s[*input] {
            // A single-ended input is the one pin above the converter's
            // ground; a differential one is two pins about their common mode.
            Signal::Voltage { v, .. } if !differential => v,
            Signal::Voltage { v, cm, .. } => match pin {
                Pin::Positive => cm + v / 2.0,
                Pin::Negative => cm - v / 2.0,
            },
            _ => 0.0,
        },
        (Node::Adc(node::Adc { input, .. }), Limit::ConverterSettling) => match s[*input] {
            Signal::Voltage { rs, .. } => rs,
            _ => 0.0,
        },
        (Node::Adc(node::Adc { bits, polarity, .. }), _) => {
            let per_ref = match polarity {
                Polarity::Unipolar => 2f64.powi(*bits as i32),
                Polarity::Bipolar => 2f64.powi(*bits as i32 - 1),
            };
            match s[check.node] {
                Signal::Code { exact, .. } => exact / per_ref,
                _ => 0.0,
            }
        }
        (Node::Excitation(_), Limit::Compliance) => {
            // The string's voltage, plus the current-carrying leads of
            // 3- and 4-wire elements, which the measurement does not see.
            let current = match s[check.node] {
                Signal::Current(a) => a,
                _ => 0.0,
            };
            plan.nodes
                .iter()
                .enumerate()
                .filter_map(|(n, node)| {
                    let driven = match node {
                        Node::Rtd(node::Rtd { input, .. })
                        | Node::Thermistor(node::Thermistor { input, .. })
                        | Node::StrainGauge(node::StrainGauge { input, .. })
                        | Node::Resistor(node::Resistor { input, .. }) => {
                            *input == Some(check.node)
                        }
                        _ => false,
                    };
                    driven.then(|| {
                        let leads = match node {
                            Node::Rtd(node::Rtd {
                                leads: Some((a, b)),
                                wiring,
                                ..
                            }) => {
                                let (a, b) = (values[*a], values[*b]);
                                let unseen = crate::physics::rtd::lead_loop_resistance(a, b)
                                    - crate::physics::rtd::lead_series_resistance(*wiring, a, b);
                                unseen * current
                            }
                            _ => 0.0,
                        };
                        voltage(n) + leads
                    })
                })
                .sum()
        }
        (Node::Excitation(_), _) => {
            let v = voltage(check.node);
            plan.nodes
                .iter()
                .map(|node| match node {
                    Node::Bridge(node::Bridge {
                        exc, kind, r, arms, ..
                    }) if *exc == check.node => {
                        let fixed = r.map(|r| values[r]).unwrap_or(0.0);
                        let arm = |k: usize| match arms.get(k).map(|&a| s[a]) {
                            Some(Signal::Element(r)) => r,
                            _ => fixed,
                        };
                        let parallel =
                            |a: f64, b: f64| if a + b > 0.0 { a * b / (a + b) } else { 0.0 };
                        // Arm positions as in the evaluator: r1 r2 | r3 r4.
                        let load = match kind {
                            BridgeKind::Divider { .. } => arm(0) + fixed,
                            BridgeKind::Quarter => parallel(fixed + arm(0), 2.0 * fixed),
                            BridgeKind::Half => parallel(fixed + arm(0), arm(1) + fixed),
                            BridgeKind::Full => parallel(arm(2) + arm(0), arm(1) + arm(3)),
                        };
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
                    }) if *i == check.node => v / values[*r],
                    _ => 0.0,
                })
                .sum()
        }
        (
            Node::Rtd(node::Rtd { input: Some(i), .. })
            | Node::Thermistor(node::Thermistor { input: Some(i), .. }),
            _,
        ) => match s[*i] {
            Signal::Current(a) => a,
            _ => 0.0,
        },
        _ => 0.0,
    }
}

/// The reach of every limited signal.
pub fn envelopes(chain: &Chain, plan: &Plan, points: usize) -> Result<Vec<Envelope>, EvalError> {
    let checks = checks(chain, plan);
    if checks.is_empty() {
        return Ok(Vec::new());
    }
    let sources: Vec<usize> = (0..plan.slots.len())
        .filter(|&s| plan.slots[s].kind != SourceKind::Exact)
        .collect();
    let conditions = conditions(chain, plan, points);
    // Every source at both limits, in order: low, high, low, high, ...
    let limits: Vec<(usize, f64)> = sources
        .iter()
        .flat_map(|&s| {
            let slot = &plan.slots[s];
            [
                (s, slot.nominal - slot.minus),
                (s, slot.nominal + slot.plus),
            ]
        })
        .collect();
    let n = plan.nominal.len();
    // Each condition's reach (low, high) per check, on every core; the
    // perturbed chains LANES at a time.
    let per_condition = conditions
        .par_iter()
        .map(|env| -> Result<Vec<(f64, f64)>, EvalError> {
            let nominal = plan.raw_signals(&plan.nominal, env)?;
            let q0: Vec<f64> = checks
                .iter()
                .map(|c| value(plan, &plan.nominal, env, &nominal, c))
                .collect();
            let mut values = plan.nominal.repeat(LANES);
            let mut scratch: LaneSignals = [[Signal::None; MAX_NODES]; LANES];
            // Each limit's change of each check, limit by limit.
            let mut changes = Vec::with_capacity(limits.len() * checks.len());
            for batch in limits.chunks(LANES) {
                for (lane, &(s, x)) in batch.iter().enumerate() {
                    values[lane * n + s] = x;
                }
                plan.raw_signals_lanes(&values, env, &mut scratch)?;
                for (lane, &(s, _)) in batch.iter().enumerate() {
                    // Seen with this lane's values (a lead's or a
                    // reference's own tolerance), then put back.
                    let lane_values = &values[lane * n..(lane + 1) * n];
                    for (k, c) in checks.iter().enumerate() {
                        changes.push(value(plan, lane_values, env, &scratch[lane], c) - q0[k]);
                    }
                    values[lane * n + s] = plan.nominal[s];
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
        })
        .collect::<Result<Vec<_>, _>>()?;
    // Gathered in order, so the worst point is the first of equals.
    let mut reach: Vec<(f64, f64, (f64, f64), f64)> =
        vec![(f64::INFINITY, f64::NEG_INFINITY, (0.0, 0.0), f64::INFINITY); checks.len()];
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
        }
    }
    Ok(checks
        .iter()
        .zip(reach)
        .map(|(c, (lo, hi, at, _))| Envelope {
            node: c.node,
            limit: c.limit,
            allowed: c.allowed,
            reach: (lo, hi),
            worst_at: at,
            unit: c.unit,
        })
        .collect())
}

/// The thermocouple right at amplifier `node`'s input, by name, when it
/// has no bias: the one floating source a `bias_voltage` moves.
fn floating_couple(plan: &Plan, node: NodeId) -> Option<&str> {
    let Node::Amplifier(node::Amplifier { input, .. }) = plan.nodes[node] else {
        return None;
    };
    match plan.nodes[input] {
        Node::Thermocouple(node::Thermocouple { bias: None, .. }) => {
            Some(plan.names[input].as_str())
        }
        _ => None,
    }
}

/// What brings a converter's reference back inside its allowed range.
fn reference_fix(stated: bool, high: bool, value: f64, target: f64, margin: f64) -> String {
    use crate::units::format::{trimmed, with_prefix};
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
pub fn findings(
    chain: &Chain,
    plan: &Plan,
    envelopes: &[Envelope],
    margin: f64,
) -> crate::diagnostics::Findings {
    use crate::diagnostics::{Code, Finding};
    use crate::units::format::{from_si, trimmed, with_prefix};
    let mut out = crate::diagnostics::Findings::new();
    let unit = chain
        .measurand
        .as_ref()
        .map(|m| m.unit.clone())
        .unwrap_or_default();
    for e in envelopes {
        let headroom = e.headroom();
        // Settling is judged on its own terms (R630), not as a range; a
        // pin may sit on a rail (a pseudo-differential input's low side
        // on ground), so rails get no margin.
        let needed = match e.limit {
            Limit::ConverterSettling => continue,
            Limit::ConverterPin(_) => 0.0,
            _ => margin,
        };
        if headroom >= needed || a_worse_pin(envelopes, e) {
            continue;
        }
        let Some(stage) = chain.stages.iter().find(|s| s.name == plan.names[e.node]) else {
            continue;
        };
        let show = |x: f64| {
            if e.unit == "of full scale" {
                format!("{} % of full scale", trimmed(x * 100.0, 4))
            } else {
                with_prefix(x, e.unit, 4)
            }
        };
        let high = e.high_side();
        let (value, bound) = if high {
            (e.reach.1, e.allowed.1)
        } else {
            (e.reach.0, e.allowed.0)
        };
        let slot = |name: &str| {
            plan.slots
                .iter()
                .position(|s| s.id == format!("{}.{name}", stage.name))
                .map(|i| plan.nominal[i])
        };
        let worst = Env {
            measurand: e.worst_at.0,
            ambient: e.worst_at.1,
            cold_junction: e.worst_at.1,
        };
        let shift = plan
            .raw_signals(&plan.nominal, &worst)
            .ok()
            .and_then(|s| plan.amplifier_reference(e.node, &plan.nominal, &worst, &s))
            .unwrap_or(0.0);
        let span = e.span();
        let target = if high {
            bound - margin * span
        } else {
            bound + margin * span
        };
        let fix = match e.limit {
            // The gain scales the output about its reference.
            Limit::AmplifierOutput if value != shift && (target - shift) / (value - shift) > 0.0 => slot("gain").map(|g| {
                let fits = g * (target - shift) / (value - shift);
                let word = if fits < g { "at most" } else { "at least" };
                format!("a gain of {word} {} keeps {} % headroom", trimmed(fits, 4), trimmed(margin * 100.0, 3))
            }),
            Limit::AmplifierOutput => Some(format!("the output must reach {}: a `reference` of {} keeps {} % headroom (it shifts the output), or choose an amplifier that swings there", show(value), with_prefix(shift + target - value, "V", 4), trimmed(margin * 100.0, 3))),
            Limit::AmplifierInput => Some(match floating_couple(plan, e.node) {
                Some(tc) => format!("hold the couple's common mode inside {} .. {} with a `bias_voltage` on `{tc}` (mid-range: {}), or choose an amplifier whose input range includes {}", show(e.allowed.0), show(e.allowed.1), show((e.allowed.0 + e.allowed.1) / 2.0), show(value)),
                None => format!("bias the input common mode into {} .. {}, or choose an amplifier whose input range includes {}", show(e.allowed.0), show(e.allowed.1), show(value)),
            }),
            Limit::ConverterInput if high => match slot("vref") {
                Some(vref) => Some(format!("a reference of at least {} keeps {} % headroom", with_prefix(vref * value / target, "V", 4), trimmed(margin * 100.0, 3))),
                None => Some(format!("reduce the gain ahead of the converter by a factor of at least {}", trimmed(value / target, 4))),
            },
            Limit::ConverterInput => Some("the input goes below the converter's range: use a bipolar or differential input, or lift the signal (an amplifier's `reference` shifts its output)".to_string()),
            Limit::Compliance => slot("current").map(|i| format!("the largest current that fits with {} % headroom is {}", trimmed(margin * 100.0, 3), with_prefix(i * target / value, "A", 4))),
            Limit::CurrentLimit => Some(format!("a current limit of at least {} covers the load with {} % headroom", with_prefix(value / (1.0 - margin), "A", 4), trimmed(margin * 100.0, 3))),
            Limit::MaxCurrent => Some(format!("keep the excitation below {}", with_prefix(target, "A", 4))),
            Limit::ConverterReference => Some(reference_fix(slot("vref").is_some(), high, value, target, margin)),
            Limit::ConverterPin(_) => Some(format!("shift the input's common mode {} by at least {} so every pin stays inside {} .. {}, or power the converter from rails that include {}", if high { "down" } else { "up" }, with_prefix((value - bound).abs(), "V", 4), show(e.allowed.0), show(e.allowed.1), show(value))),
            Limit::ConverterSettling => None,
        };
        let at = format!(
            "at {} {unit}, ambient {} degC",
            trimmed(from_si(e.worst_at.0, &unit), 6),
            trimmed(from_si(e.worst_at.1, "degC"), 4)
        );
        let (limit_param, drive_param) = e.limit.params();
        let limit_text = if e.unit == "of full scale" {
            "the end of its range".to_string()
        } else {
            format!("its limit of {}", show(bound))
        };
        let (code, message) = if headroom < 0.0 {
            (
                Code::R601,
                format!(
                    "the {} of `{}` reaches {} {at}, beyond {limit_text}",
                    e.limit.describe(),
                    stage.name,
                    show(value)
                ),
            )
        } else {
            (
                Code::R602,
                format!(
                    "the {} of `{}` reaches {} {at}, within {} % of {limit_text}",
                    e.limit.describe(),
                    stage.name,
                    show(value),
                    trimmed(headroom * 100.0, 3)
                ),
            )
        };
        let mut f = Finding::new(code, &chain.file, message).label(stage.name_span, "this stage");
        for (name, text) in [(limit_param, "the limit"), (drive_param, "drives it")] {
            if let Some(p) = stage.params.iter().find(|p| p.name == name) {
                if std::sync::Arc::ptr_eq(&p.file, &chain.file)
                    && !f.labels.iter().any(|l| l.span == p.span)
                {
                    f = f.label(p.span, text);
                }
            }
        }
        if let (Node::Amplifier(node::Amplifier { input, .. }), Limit::AmplifierInput) =
            (&plan.nodes[e.node], e.limit)
        {
            if let Some(driver) = chain.stages.iter().find(|s| s.name == plan.names[*input]) {
                f = f.label(driver.name_span, "sets its input common mode");
            }
        }
        if let Node::Adc(node::Adc {
            reference: Some(r), ..
        }) = plan.nodes[e.node]
        {
            if let (Limit::ConverterReference, Some(driver)) = (
                e.limit,
                chain.stages.iter().find(|s| s.name == plan.names[r]),
            ) {
                f = f.label(driver.name_span, "drives its `ref`");
            }
        }
        if let Some(fix) = fix {
            f = f.help(fix);
        }
        out.push(f);
    }
    out.extend(super::settling::findings(chain, plan, envelopes));
    out
}
