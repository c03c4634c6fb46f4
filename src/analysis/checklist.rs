//! The fault-and-limit checklist of one chain, as one model: what a test
//! engineer works through at bring-up and a firmware engineer implements.
//! Every row comes from an analysis that already judged it (the fault
//! verdicts, the range envelopes, the alarm limits, the check's
//! warnings); nothing here is computed twice. `catena checklist` and the
//! report's faults-and-limits section both render it.
//!
//! Values are in the units a reader sees: positions in the measurand's
//! unit as written, differences in its difference unit, signals in
//! coherent SI (the limit's `unit`).

use serde::Serialize;

use super::faults::{FaultCodes, FaultReport, Masking, Verdict};
use super::ranges::Envelope;
use crate::eval::{
    node, Calibration, Env, EvalError, Node, NodeId, Plan, Senses, Signal, SlotId, MAX_NODES,
};
use crate::model::typed::CombineOp;
use crate::model::Chain;
use crate::physics::rtd::{self, Wiring};
use crate::units::format::{from_si, trimmed, with_prefix};

/// The caution every design aid carries.
pub const DESIGN_AID: &str = "This is a design aid computed from the values the spec states; it is not a safety assessment, and the installed chain must be verified by measurement.";

/// The caution where a chain raises alarms or trips, which usually
/// protect people, property or a process.
pub const PROTECTS: &str = "This chain raises alarms or trips. Where they protect people, property or a process, the applicable functional-safety standard, local codes and licensed practice govern its design, wiring and proof testing; set and verify trip points on the installed system.";

/// One chain's checklist.
#[derive(Clone, Debug, Serialize)]
pub struct Checklist {
    pub chain: String,
    pub window: WindowRow,
    pub faults: Vec<FaultRow>,
    pub limits: Vec<LimitRow>,
    pub alarms: Vec<AlarmRow>,
    pub review: Vec<ReviewItem>,
    pub cautions: Vec<&'static str>,
}

/// The codes the healthy chain gives.
#[derive(Clone, Debug, Serialize)]
pub struct WindowRow {
    pub low: i64,
    pub high: i64,
    /// The converter's lowest and highest code.
    pub rails: (i64, i64),
    pub noise_sigma_codes: f64,
    /// The noise's coverage factor in the window.
    pub k: f64,
    /// A conversion that combines channels: each channel's own window,
    /// which firmware checks before adding or dividing them.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub channels: Vec<ChannelWindowRow>,
    /// A conversion that takes a ratio of channels: the codes a ratio of
    /// one reads (its codes are the ratio times this).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub ratio_of_one: Option<i64>,
}

impl WindowRow {
    /// Each summed channel's own window, in one sentence (None without
    /// summed channels).
    pub fn channel_windows(&self) -> Option<String> {
        if self.channels.is_empty() {
            return None;
        }
        let each: Vec<String> = self
            .channels
            .iter()
            .map(|c| format!("`{}` {} .. {}", c.channel, c.low, c.high))
            .collect();
        let how = if self.ratio_of_one.is_some() {
            "dividing one by the other"
        } else {
            "adding them"
        };
        Some(format!(
            "The firmware checks each channel's own code before {how}; each channel's valid window: {}.",
            each.join(", ")
        ))
    }

    /// What the window's codes are, with their range: the converter's
    /// codes, or a ratio's (whose range, a numerator over a denominator of
    /// one code, means nothing to a reader).
    pub fn code_kind(&self) -> String {
        match self.ratio_of_one {
            Some(one) => format!("codes of the ratio, {one} for a ratio of one"),
            None if !self.channels.is_empty() => {
                format!("codes of the sum {} .. {}", self.rails.0, self.rails.1)
            }
            None => format!("converter codes {} .. {}", self.rails.0, self.rails.1),
        }
    }
}

#[derive(Clone, Debug, Serialize)]
pub struct ChannelWindowRow {
    pub channel: String,
    pub low: i64,
    pub high: i64,
    pub rails: (i64, i64),
    pub noise_sigma_codes: f64,
}

#[derive(Clone, Debug, Serialize)]
pub struct FaultRow {
    pub stage: String,
    pub fault: &'static str,
    pub condition: &'static str,
    /// The codes with the fault (absent: undetermined): a span, or one
    /// end code or the other.
    pub codes: Option<FaultCodes>,
    /// `detectable`, `silent` or `undetermined`.
    pub verdict: &'static str,
    /// `code < N` or `code > N` (`CHANNEL code < N` on a summed channel's
    /// own code).
    pub threshold: Option<String>,
    /// The summed channel whose own code `codes` and `threshold` are.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub channel: Option<String>,
    /// Why the code is undetermined.
    pub reason: Option<String>,
    pub action: String,
}

impl FaultRow {
    /// Whether firmware cannot tell the fault from a reading.
    pub fn hidden(&self) -> bool {
        [Verdict::Silent, Verdict::Undetermined]
            .iter()
            .any(|v| self.verdict == v.name())
    }
}

/// Where a limited signal stands against its limit.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum LimitStatus {
    Inside,
    UnderMargin,
    Beyond,
}

#[derive(Clone, Debug, Serialize)]
pub struct LimitRow {
    pub stage: String,
    /// What is limited (`output`, `input common mode`, ...).
    pub limit: String,
    /// Coherent SI, or `1` for a share of a converter's full scale.
    pub unit: String,
    /// Its allowed interval (an end not stated is absent).
    pub allowed: [Option<f64>; 2],
    /// How far the signal goes over ranges and tolerances.
    pub reach: [f64; 2],
    /// The least distance to an end, as a share of the limit's span.
    pub headroom: f64,
    pub status: LimitStatus,
}

#[derive(Clone, Debug, Serialize)]
pub struct AlarmRow {
    pub side: crate::model::Side,
    /// The limit, in the measurand's unit.
    pub at: f64,
    /// Where to trip so the true value never passes the limit unseen.
    pub trip_at: f64,
    /// The GUM expanded uncertainty there, in the difference unit.
    pub guard_band: f64,
    pub measurand_unit: String,
    pub unit: String,
    /// The nominal code at the limit and at the trip.
    pub code: i64,
    pub trip_code: i64,
    /// `stage fault` of each undetected fault that would hide a crossing.
    pub masked_by: Vec<String>,
    /// The same faults as indices into the checklist's `faults`.
    #[serde(skip)]
    pub masking: Vec<usize>,
}

/// What a review item asks to verify.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ReviewKind {
    Leads,
    SelfHeating,
    Calibration,
    Warning,
}

#[derive(Clone, Debug, Serialize)]
pub struct ReviewItem {
    pub kind: ReviewKind,
    pub text: String,
}

/// What the checklist is built from: analyses already made.
pub struct Sources<'a> {
    pub faults: &'a FaultReport,
    pub maskings: &'a [Masking],
    pub envelopes: &'a [Envelope],
    /// Headroom below this share of a limit's span is flagged.
    pub margin: f64,
    /// Each warning `check` raised on the file, as `CODE message`.
    pub warnings: &'a [String],
}

/// The codes a ratio of one reads, for a conversion that takes a ratio.
fn ratio_of_one(plan: &Plan) -> Option<i64> {
    let adc = plan.nodes[plan.adc.index()].as_adc()?;
    matches!(adc.combine, Some((CombineOp::Ratio, _))).then_some(adc.per_ref as i64)
}

/// The checklist of a chain.
pub fn checklist(chain: &Chain, plan: &Plan, from: &Sources<'_>) -> Checklist {
    let w = &from.faults.window;
    let mut review = leads(plan);
    review.extend(self_heating(chain, plan));
    review.extend(calibration(chain, plan));
    review.extend(from.warnings.iter().map(|w| ReviewItem {
        kind: ReviewKind::Warning,
        text: w.clone(),
    }));
    let mut cautions = vec![DESIGN_AID];
    if chain.is_protective() {
        cautions.push(PROTECTS);
    }
    Checklist {
        chain: chain.name.clone(),
        window: WindowRow {
            low: w.low,
            high: w.high,
            rails: w.rails,
            noise_sigma_codes: w.sigma_codes,
            k: w.k,
            channels: w
                .channels
                .iter()
                .map(|c| ChannelWindowRow {
                    channel: c.name.clone(),
                    low: c.window.low,
                    high: c.window.high,
                    rails: c.window.rails,
                    noise_sigma_codes: c.window.sigma_codes,
                })
                .collect(),
            ratio_of_one: ratio_of_one(plan),
        },
        faults: from.faults.faults.iter().map(fault_row).collect(),
        limits: from
            .envelopes
            .iter()
            .map(|e| limit_row(plan, e, from.margin))
            .collect(),
        alarms: alarm_rows(chain, from),
        review,
        cautions,
    }
}

fn fault_row(f: &super::faults::FaultVerdict) -> FaultRow {
    FaultRow {
        stage: f.stage.clone(),
        fault: f.fault.kind.name(),
        condition: f.fault.kind.describe(),
        codes: f.codes,
        verdict: f.verdict.name(),
        threshold: f
            .threshold
            .map(|t| super::review::outcome::threshold_text_on(t, f.channel.as_deref())),
        channel: f.channel.clone(),
        reason: f.reason.clone(),
        action: match f.verdict {
            Verdict::Detectable => "flag the reading invalid and hold the output safe while the code is past the threshold".to_string(),
            Verdict::Tolerated => "none in firmware: it reads within the healthy chain's own tolerances; check it at bring-up".to_string(),
            Verdict::Silent | Verdict::Undetermined => f
                .fix
                .clone()
                .unwrap_or_else(|| "not detectable from the code: detect it another way".to_string()),
        },
    }
}

fn limit_row(plan: &Plan, e: &Envelope, margin: f64) -> LimitRow {
    let headroom = e.headroom();
    LimitRow {
        stage: plan.names.get(e.node.index()).cloned().unwrap_or_default(),
        limit: e.limit.describe().to_string(),
        unit: e.unit.symbol().to_string(),
        allowed: [e.allowed.0, e.allowed.1].map(|x| x.is_finite().then_some(x)),
        reach: [e.reach.0, e.reach.1],
        headroom,
        status: if headroom < 0.0 {
            LimitStatus::Beyond
        } else if headroom < e.limit.margin_needed(margin) {
            LimitStatus::UnderMargin
        } else {
            LimitStatus::Inside
        },
    }
}

fn alarm_rows(chain: &Chain, from: &Sources<'_>) -> Vec<AlarmRow> {
    let (unit, f) = chain.difference_unit();
    let m_unit = chain.measurand_unit();
    from.maskings
        .iter()
        .map(|m| AlarmRow {
            side: m.alarm.side,
            at: from_si(m.alarm.at, &m_unit),
            trip_at: from_si(m.alarm.trip_at, &m_unit),
            guard_band: m.alarm.guard_band * f,
            measurand_unit: m_unit.clone(),
            unit: unit.clone(),
            code: m.alarm.code,
            trip_code: m.alarm.trip_code,
            masked_by: m
                .faults
                .iter()
                .filter_map(|&i| from.faults.faults.get(i))
                .map(|f| format!("{} {}", f.stage, f.fault.kind.name()))
                .collect(),
            masking: m.faults.clone(),
        })
        .collect()
}

/// Each wired element's leads to measure as installed: the budget holds
/// the resistance the spec states, the installation decides the real one.
fn leads(plan: &Plan) -> Vec<ReviewItem> {
    NodeId::all(plan.nodes.len())
        .filter_map(|n| lead_item(plan, n))
        .map(|text| ReviewItem {
            kind: ReviewKind::Leads,
            text,
        })
        .collect()
}

/// A tolerance as a reader writes it: `± x` when both sides agree,
/// else `−a +b`.
fn spread(minus: f64, plus: f64, show: impl Fn(f64) -> String) -> String {
    if minus == plus {
        format!("± {}", show(plus))
    } else {
        format!("−{} +{}", show(minus), show(plus))
    }
}

/// What to measure of node `n`'s wiring, for the kinds wired to the
/// field.
fn lead_item(plan: &Plan, n: NodeId) -> Option<String> {
    let ohms = |x: f64| with_prefix(x, "Ω", 3);
    let name = &plan.names[n.index()];
    match &plan.nodes[n.index()] {
        Node::Rtd(node::Rtd {
            wiring,
            leads: Some((a, b)),
            input,
            ..
        }) => {
            let (a, b) = (&plan.slots[a.index()], &plan.slots[b.index()]);
            let seen = match (wiring, input) {
                (Wiring::TwoWire, _) => "2-wire: the reading sees both leads in series",
                (Wiring::ThreeWire, Some(_)) => {
                    "3-wire: the reading sees the two leads' difference, so they must match"
                }
                (Wiring::ThreeWire, None) => {
                    "3-wire in a bridge: one lead sits in the element's arm and the other in the next, so they cancel only at balance and must match"
                }
                (Wiring::FourWire, _) => {
                    "4-wire: the reading sees no lead, but the excitation's compliance must cover their loop"
                }
            };
            Some(format!(
                "measure the installed lead resistance of `{name}`: the spec assumes {} {} on one lead and {} {} on the other, a loop of {}; {seen}",
                ohms(a.nominal),
                spread(a.minus, a.plus, ohms),
                ohms(b.nominal),
                spread(b.minus, b.plus, ohms),
                ohms(rtd::lead_loop_resistance(a.nominal, b.nominal))
            ))
        }
        Node::Rtd(node::Rtd { leads: None, .. }) => Some(format!(
            "measure the installed lead resistance of `{name}`: the spec states none, so the budget holds no lead error"
        )),
        Node::Thermocouple(node::Thermocouple { lead: Some(l), .. }) => {
            let l = &plan.slots[l.index()];
            Some(format!(
                "measure the installed loop resistance of `{name}`: the spec assumes {} {}, and a bias or burnout current's drop across it is in the budget at that value",
                ohms(l.nominal),
                spread(l.minus, l.plus, ohms)
            ))
        }
        Node::Thermocouple(node::Thermocouple { lead: None, .. }) => Some(format!(
            "measure the installed loop resistance of `{name}`: the spec states none, so any bias or burnout current's drop across it is not in the budget"
        )),
        Node::Thermistor(_)
        | Node::Excitation(_)
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

/// The self-heating of each element that states a dissipation constant,
/// at the chosen excitation, the most it reaches across what it senses
/// (the measurand range at the reference ambient, or a cold junction's
/// ambient range: over a grid, then searched about its worst point), and
/// the power that makes it (P = ΔT·δ, IEC 60751's self-heating
/// coefficient read the other way).
fn self_heating(chain: &Chain, plan: &Plan) -> Vec<ReviewItem> {
    NodeId::all(plan.nodes.len())
        .filter_map(|n| {
            let heating = plan.heating(n)?;
            let slot = heating.dissipation;
            let delta = plan.nominal[slot.index()];
            let sensed = Sensed::of(chain, plan, heating.senses);
            let rise = |t: f64| heating_at(plan, n, slot, &sensed, t);
            let points = crate::eval::grid((sensed.ends[0], sensed.ends[1]), HEATING_POINTS);
            let ends: Vec<_> = points.iter().map(|&t| rise(t).map(|k| (t, k))).collect();
            let worst = ends
                .iter()
                .enumerate()
                .filter_map(|(i, e)| Some((i, *e.as_ref().ok()?)))
                .max_by(|a, b| a.1 .1.abs().total_cmp(&b.1 .1.abs()))
                .map(|(i, found)| most_near(|t| rise(t).ok(), &points, i, found));
            let name = &plan.names[n.index()];
            let Some((at, kelvin)) = worst else {
                // Said, not dropped: the item still asks for the check.
                let why = ends.iter().find_map(|e| e.as_ref().err()).map_or(String::new(), |e| format!(" ({e})"));
                return Some(ReviewItem {
                    kind: ReviewKind::SelfHeating,
                    text: format!(
                        "self-heating of `{name}` could not be evaluated{why}; measure it at the chosen excitation in the installed mounting"
                    ),
                });
            };
            let power = rtd::self_heating_power_w(kelvin.abs(), delta);
            Some(ReviewItem {
                kind: ReviewKind::SelfHeating,
                text: format!(
                    "self-heating of `{name}` at the chosen excitation: {} K at {} ({} dissipated, δ = {}/K); confirm the dissipation constant in the installed mounting and medium, or lower the excitation",
                    trimmed(kelvin, 3),
                    sensed.at(at),
                    with_prefix(power, "W", 3),
                    with_prefix(delta, "W", 3)
                ),
            })
        })
        .collect()
}

/// Temperatures the self-heating is worked out at, ends included: a
/// divider puts the most power into its element where the element's
/// resistance matches the fixed one, which may lie inside the range.
const HEATING_POINTS: usize = 21;

/// Steps of the golden-section search about the grid's worst point: the
/// bracket shrinks to 0.618³⁰, about 5·10⁻⁷ of two grid steps.
const REFINING_STEPS: usize = 30;

/// The largest |rise| between the neighbours of grid point `i` (`found`
/// its temperature and rise): a golden-section search for the maximum of
/// a smooth rise, as a divider's element peaks where its resistance
/// matches the fixed one, between two points of the grid; `found` where
/// the search finds no more.
fn most_near(
    rise: impl Fn(f64) -> Option<f64>,
    points: &[f64],
    i: usize,
    found: (f64, f64),
) -> (f64, f64) {
    let size = |t: f64| rise(t).map_or(f64::NEG_INFINITY, f64::abs);
    let (mut a, mut b) = (
        points[i.saturating_sub(1)],
        points[(i + 1).min(points.len() - 1)],
    );
    let ratio = (5f64.sqrt() - 1.0) / 2.0;
    let (mut c, mut d) = (b - ratio * (b - a), a + ratio * (b - a));
    let (mut fc, mut fd) = (size(c), size(d));
    for _ in 0..REFINING_STEPS {
        if fc >= fd {
            (b, d, fd) = (d, c, fc);
            c = b - ratio * (b - a);
            fc = size(c);
        } else {
            (a, c, fc) = (c, d, fd);
            d = a + ratio * (b - a);
            fd = size(d);
        }
    }
    let t = if fc >= fd { c } else { d };
    match rise(t) {
        Some(k) if k.abs() > found.1.abs() => (t, k),
        _ => found,
    }
}

/// What an element's temperature is, for its self-heating: the measurand
/// across its range (at the reference ambient), or a cold junction across
/// the ambient range, which the measurand does not move. The rest of the
/// chain stays at the reference, so only the element's own temperature
/// moves what drives it.
struct Sensed<'a> {
    plan: &'a Plan,
    senses: Senses,
    ends: [f64; 2],
    /// The unit the text names a temperature in.
    unit: String,
}

impl<'a> Sensed<'a> {
    fn of(chain: &Chain, plan: &'a Plan, senses: Senses) -> Sensed<'a> {
        let (ends, unit) = match senses {
            Senses::Measurand => ([plan.range.0, plan.range.1], chain.measurand_unit()),
            Senses::ColdJunction => ([chain.ambient.0, chain.ambient.1], "degC".to_string()),
        };
        Sensed {
            plan,
            senses,
            ends,
            unit,
        }
    }

    /// The condition with the element at `t` (SI).
    fn env(&self, t: f64) -> Env {
        let reference = self.plan.reference;
        match self.senses {
            Senses::Measurand => Env {
                measurand: t,
                ambient: reference,
                cold_junction: reference,
            },
            Senses::ColdJunction => Env {
                measurand: self.plan.range.0,
                ambient: reference,
                cold_junction: t,
            },
        }
    }

    /// `t` as the text names it.
    fn at(&self, t: f64) -> String {
        // Three digits: the worst lies between grid points, found by a search.
        let value = format!("{} {}", trimmed(from_si(t, &self.unit), 3), self.unit);
        match self.senses {
            Senses::Measurand => value,
            Senses::ColdJunction => format!("a cold junction of {value}"),
        }
    }
}

/// Element `n`'s self-heating in K at the temperature `t` it senses. The
/// heat shows where the element is driven: in its own resistance on a
/// current source, in the output of the divider or bridge it is an arm
/// of. That signal with the element heated, less the same with no
/// heating (a dissipation constant so large the rise underflows; the
/// physics refuses an infinite one), over the signal's slope against the
/// element's temperature, is the rise.
fn heating_at(
    plan: &Plan,
    n: NodeId,
    slot: SlotId,
    sensed: &Sensed,
    t: f64,
) -> Result<f64, EvalError> {
    let mut cold = plan.nominal.clone();
    cold[slot.index()] = f64::MAX;
    let signals = |values: &[f64], t: f64| plan.raw_signals(values, &sensed.env(t));
    let (heated_run, cold_run) = (signals(&plan.nominal, t)?, signals(&cold, t)?);
    let value = |run: &[Signal; MAX_NODES], c: NodeId| run[c.index()].value_unit().0;
    let readers =
        NodeId::all(plan.nodes.len()).filter(|c| plan.nodes[c.index()].inputs().contains(&n));
    let Some(shown) = std::iter::once(n)
        .chain(readers)
        .find(|&c| value(&heated_run, c) != value(&cold_run, c))
    else {
        return Ok(0.0);
    };
    if shown != n && shares_its_temperature(plan, n, shown) {
        return Err(plan.numeric(
            n,
            "another element beside it senses the same temperature, so its own rise cannot be told apart",
        ));
    }
    let span = (sensed.ends[1] - sensed.ends[0]).abs();
    let h = (span * 1e-4).max(1e-6);
    let slope =
        (value(&signals(&cold, t + h)?, shown) - value(&signals(&cold, t - h)?, shown)) / (2.0 * h);
    if slope == 0.0 || !slope.is_finite() {
        return Err(plan.numeric(n, "what drives it does not move with its temperature"));
    }
    Ok((value(&heated_run, shown) - value(&cold_run, shown)) / slope)
}

/// Whether stage `reader` reads another temperature element that senses
/// what element `n` senses: its signal's slope is then theirs together.
fn shares_its_temperature(plan: &Plan, n: NodeId, reader: NodeId) -> bool {
    let senses = |m: NodeId| plan.nodes[m.index()].senses();
    plan.nodes[reader.index()]
        .inputs()
        .into_iter()
        .any(|m| m != n && senses(m).is_some() && senses(m) == senses(n))
}

/// The calibration points and the uncertainty of the reference each is
/// taken against.
fn calibration(chain: &Chain, plan: &Plan) -> Option<ReviewItem> {
    let Node::Convert(node::Convert { conversion, .. }) = &plan.nodes[plan.reading.index()] else {
        return None;
    };
    let m_unit = chain.measurand_unit();
    let (diff, f) = chain.difference_unit();
    let point = |at: f64, error: Option<SlotId>| {
        let reference = match error.map(|s| &plan.slots[s.index()]) {
            Some(s) => format!(
                "against a reference good to {} {diff}",
                spread(s.minus * f, s.plus * f, |x| trimmed(x, 3))
            ),
            None => "against a reference whose uncertainty the spec does not state (the budget takes it as exact)".to_string(),
        };
        format!("{} {m_unit} {reference}", trimmed(from_si(at, &m_unit), 6))
    };
    let text = match conversion.calibration {
        Calibration::None => return None,
        Calibration::Offset { at, error } => {
            format!("offset calibration at {}", point(at, error))
        }
        Calibration::TwoPoint { at, errors } => format!(
            "two-point calibration at {} and at {}",
            point(at.0, errors.0),
            point(at.1, errors.1)
        ),
    };
    Some(ReviewItem {
        kind: ReviewKind::Calibration,
        text: format!("{text}; record the reference's certificate with the calibration"),
    })
}

#[cfg(test)]
mod tests {
    use super::most_near;

    /// A divider's element heats most where its resistance matches the
    /// fixed one: P = V²R/(R + R_f)² peaks at R = R_f. A 10 kΩ fixed
    /// resistor and an element of 10 kΩ at 23.3 (a grid of 0 … 50 in
    /// steps of 2.5 misses it): the search finds the peak, V²/4R_f.
    #[test]
    fn the_worst_is_searched_between_grid_points() {
        let (v, fixed) = (3.3, 10e3);
        let element = |t: f64| 10e3 * (1.0 - 0.04 * (t - 23.3));
        let power = |t: f64| Some(v * v * element(t) / (element(t) + fixed).powi(2));
        let points: Vec<f64> = (0..21).map(|k| 2.5 * k as f64).collect();
        let found = (22.5, power(22.5).unwrap());
        let (at, most) = most_near(power, &points, 9, found);
        assert!((at - 23.3).abs() < 1e-3, "{at}");
        assert!((most - v * v / (4.0 * fixed)).abs() < 1e-12, "{most}");
        // Where the search finds no more, the grid's point stands.
        assert_eq!(most_near(|_| Some(0.0), &points, 9, found), found);
    }
}
