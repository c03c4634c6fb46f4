//! Fault verdicts: each fault's codes over the measurand range, the
//! ambient range and every tolerance at its limits, against the valid code
//! window of the healthy chain. A fault whose codes all lie outside the
//! window is detectable, with a firmware threshold between them; one that
//! overlaps it is silent; one whose code nothing determines (a floating
//! input) is undetermined, which is not detectable either.

use super::alarms::{alarm_limits, AlarmLimit};
use super::budget;
use super::ranges::Envelope;
use super::window::{code_window, code_window_from, CodeWindow};
use crate::diagnostics::{Cause, Code, Finding, Findings, Severity};
use crate::eval::fault::{Fault, FaultCode, FaultKind, Pull};
use crate::eval::{grid, Env, EvalError, Node, NodeId, Plan, SourceKind};
use crate::model::{Chain, Side};
use crate::units::format::{from_si, trimmed, with_prefix};
use rayon::prelude::*;

/// Measurand points a fault's codes are taken at, across the range.
const POINTS: usize = 5;

/// Whether firmware can tell a fault from a reading.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Verdict {
    Detectable,
    Silent,
    Undetermined,
    /// Inside the window, but reading as a healthy chain does: at every
    /// condition the fault moves the code less than the healthy chain's
    /// own tolerances already may (a ratiometric reading whose current
    /// source runs to its compliance). Nothing to detect, nothing hidden.
    Tolerated,
}

impl Verdict {
    pub fn name(self) -> &'static str {
        match self {
            Verdict::Detectable => "detectable",
            Verdict::Silent => "silent",
            Verdict::Undetermined => "undetermined",
            Verdict::Tolerated => "tolerated",
        }
    }

    /// Whether firmware cannot see the fault and its reading is wrong.
    pub fn hidden(self) -> bool {
        match self {
            Verdict::Silent | Verdict::Undetermined => true,
            Verdict::Detectable | Verdict::Tolerated => false,
        }
    }
}

/// The test firmware applies to a code: the fault is present when the
/// code is below (or above) the value, or outside both.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Threshold {
    Below(i64),
    Above(i64),
    Outside(i64, i64),
}

/// Whether a fault is a wiring mistake made at installation rather than a
/// failure in service: it is there from the first power-up, so the
/// bring-up test finds it, and `check` reports it only where it would
/// hide a trip. A reversed couple reads near its cold junction's
/// temperature whatever the design, so no code window can catch it.
pub fn found_at_bring_up(kind: FaultKind) -> bool {
    match kind {
        FaultKind::Reversed => true,
        FaultKind::Open
        | FaultKind::Short
        | FaultKind::Lost
        | FaultKind::SaturatedHigh
        | FaultKind::SaturatedLow
        | FaultKind::OverRange
        | FaultKind::UnderRange
        | FaultKind::ReferenceLost
        | FaultKind::ReferenceShorted
        | FaultKind::AtCompliance
        | FaultKind::AtCurrentLimit
        | FaultKind::CompensationLeadOpen
        | FaultKind::ForceLeadOpen
        | FaultKind::ReturnLeadOpen
        | FaultKind::SenseLeadOpen
        | FaultKind::ReturnSenseLeadOpen
        | FaultKind::SenseLeadsShorted
        | FaultKind::StuckHigh
        | FaultKind::InputOpen
        | FaultKind::CompletionOpen(_)
        | FaultKind::CompletionShort(_)
        | FaultKind::ExcitationLeadOpen
        | FaultKind::ExcitationReturnOpen
        | FaultKind::SignalLeadOpen => false,
    }
}

/// The codes a converter gives with a fault.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum FaultCodes {
    /// Every code from the first to the second may occur.
    Span(i64, i64),
    /// One end code or the other (the bottom, the top), which one nothing
    /// in the spec decides: a converter left with no reference rails
    /// either way, and no code between the ends occurs.
    EitherEnd(i64, i64),
}

impl FaultCodes {
    /// The lowest and highest code.
    pub fn bounds(self) -> (i64, i64) {
        match self {
            FaultCodes::Span(lo, hi) | FaultCodes::EitherEnd(lo, hi) => (lo, hi),
        }
    }

    /// The codes in words: `17`, `0 .. 4095` or `0 or 4095`.
    pub fn words(self) -> String {
        match self {
            FaultCodes::Span(lo, hi) if lo == hi => lo.to_string(),
            FaultCodes::Span(lo, hi) => format!("{lo} .. {hi}"),
            FaultCodes::EitherEnd(lo, hi) => format!("{lo} or {hi}"),
        }
    }

    /// Whether the converter gives a single code: one span of one code,
    /// or one end or the other.
    pub fn single(self) -> bool {
        match self {
            FaultCodes::Span(lo, hi) => lo == hi,
            FaultCodes::EitherEnd(..) => true,
        }
    }

    /// The codes with their noun: `code 17`, `codes 0 .. 4095`, `code 0
    /// or 4095`.
    pub fn phrase(self) -> String {
        let noun = if self.single() { "code" } else { "codes" };
        format!("{noun} {}", self.words())
    }

    /// "its codes … overlap" or "its code … overlaps".
    pub fn overlap(self) -> String {
        let verb = if self.single() { "overlaps" } else { "overlap" };
        format!("its {} {verb}", self.phrase())
    }
}

/// In JSON a span is `[low, high]` and the ends `{"either": [low, high]}`,
/// so a reader that takes every pair for a span fails instead of reading
/// the codes between the ends as possible.
impl serde::Serialize for FaultCodes {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        use serde::ser::SerializeMap;
        match *self {
            FaultCodes::Span(lo, hi) => [lo, hi].serialize(s),
            FaultCodes::EitherEnd(lo, hi) => {
                let mut map = s.serialize_map(Some(1))?;
                map.serialize_entry("either", &[lo, hi])?;
                map.end()
            }
        }
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct FaultVerdict {
    pub fault: Fault,
    pub stage: String,
    /// The codes the converter gives with the fault.
    pub codes: Option<FaultCodes>,
    pub verdict: Verdict,
    pub threshold: Option<Threshold>,
    /// The channel whose own code `codes` and `threshold` are (a summed
    /// channel the fault takes out of its own window while the sum stays
    /// inside the sum's); None for the code the conversion reads.
    pub channel: Option<String>,
    /// Why the code is undetermined.
    pub reason: Option<String>,
    /// What would make a silent or undetermined fault detectable, computed.
    pub fix: Option<String>,
    /// The stage that fix goes on (the amplifier or converter that would
    /// carry a burnout current, the source that needs its compliance).
    pub fix_at: Option<String>,
    /// Undetermined only because the spec leaves out a limit it may leave
    /// out (a source's compliance, an amplifier's swing): an unchecked
    /// fault, as an unstated limit is an unchecked limit.
    pub unstated: bool,
    /// For an open input nothing drives: the pull resistors that would
    /// take its reading clear of the range, above it and below.
    pub pulls: ScalePulls,
}

/// The pull resistor (of [`PULL_OHMS`]) that takes an open input's reading
/// above the range (`up`, up-scale) and one that takes it below (`down`),
/// where one does.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct ScalePulls {
    pub up: Option<Pulled>,
    pub down: Option<Pulled>,
}

/// A resistor from a pin to a voltage, as `pull R to V` writes it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Pulled {
    pub ohms: f64,
    pub volts: f64,
}

/// The pull resistors fixes try, largest first: 1 MΩ is common practice,
/// far below a pin's leakage resistance, far above a sensor's source
/// resistance (its loading is in the budget); a pin whose bias current
/// moves it far through 1 MΩ (a microamp: a volt) takes a smaller one.
const PULL_OHMS: [f64; 3] = [1e6, 1e5, 1e4];

impl ScalePulls {
    /// The pull to 0 V that takes the reading out of the range, if one does.
    fn ground(self) -> Option<Pulled> {
        [self.up, self.down]
            .into_iter()
            .flatten()
            .find(|p| p.volts == 0.0)
    }
}

/// How a pull is written in a spec.
fn pull_text(pull: Pulled) -> String {
    format!(
        "`pull {} to {} V`",
        with_prefix(pull.ohms, "ohm", 1),
        trimmed(pull.volts, 4)
    )
}

/// Every fault of a chain judged against its window.
#[derive(Clone, Debug, PartialEq)]
pub struct FaultReport {
    pub window: CodeWindow,
    pub faults: Vec<FaultVerdict>,
}

/// The chain's faults and their verdicts.
pub fn analyse(chain: &Chain, plan: &Plan) -> Result<FaultReport, EvalError> {
    analyse_in(chain, plan, code_window(chain, plan)?)
}

/// [`analyse`] against a window already computed.
fn analyse_in(chain: &Chain, plan: &Plan, window: CodeWindow) -> Result<FaultReport, EvalError> {
    #[cfg(test)]
    FAULT_RUNS.with(|runs| runs.set(runs.get() + 1));
    let cases = Cases::of(chain, plan);
    // Each fault is judged alone, over every case: the faults share the
    // cores, and the list keeps the plan's order.
    let faults = plan
        .faults()
        .into_par_iter()
        .map(|fault| judge(plan, &cases, &window, fault))
        .collect();
    Ok(FaultReport { window, faults })
}

#[cfg(test)]
thread_local! {
    /// How many times this thread judged a chain's faults: the tests count
    /// work a command should do once.
    pub static FAULT_RUNS: std::cell::Cell<usize> = const { std::cell::Cell::new(0) };
}

/// The conditions and value sets a fault is evaluated at: every source at
/// each of its limits (two value sets per source, the rest nominal), at
/// each ambient and measurand point.
struct Cases {
    limits: Vec<Vec<f64>>,
    envs: Vec<Env>,
}

impl Cases {
    fn of(chain: &Chain, plan: &Plan) -> Cases {
        Cases::at(chain, plan, &grid(plan.range, POINTS))
    }

    /// The cases at the given measurand points.
    fn at(chain: &Chain, plan: &Plan, measurands: &[f64]) -> Cases {
        let mut limits = Vec::new();
        for (i, slot) in plan.slots.iter().enumerate() {
            if slot.kind == SourceKind::Exact {
                continue;
            }
            for x in [slot.nominal - slot.minus, slot.nominal + slot.plus] {
                let mut v = plan.nominal.clone();
                v[i] = x;
                limits.push(v);
            }
        }
        let mut envs = Vec::new();
        for &ambient in &budget::ambients(chain) {
            for &measurand in measurands {
                envs.push(Env {
                    measurand,
                    ambient,
                    cold_junction: ambient,
                });
            }
        }
        Cases { limits, envs }
    }
}

/// A fault's codes, or why it has none: at each condition, the nominal
/// code widened by every source's deviation at its limits, added up on
/// each side (the worst case the window's envelope takes too). A converter
/// driven to its ends gives those ends, not the span between them: a code
/// at an end is a clamp, not a value deviations add to; and one left at
/// an end that nothing chooses gives both.
fn code_range(
    plan: &Plan,
    cases: &Cases,
    window: &CodeWindow,
    fault: &Fault,
) -> Result<Codes, String> {
    code_range_at(plan, cases, window, fault, None)
}

/// [`code_range`] of the code firmware sees at `channel` (that channel's
/// own, `window` being its own window), or of the conversion's (None).
fn code_range_at(
    plan: &Plan,
    cases: &Cases,
    window: &CodeWindow,
    fault: &Fault,
    channel: Option<NodeId>,
) -> Result<Codes, String> {
    let ends = (window.rails.0 as f64, window.rails.1 as f64);
    let code = |values: &[f64], env: &Env| match plan.faulted_code_at(values, env, fault, channel) {
        Ok(FaultCode::Code(exact)) => Ok(Some(exact)),
        Ok(FaultCode::EitherEnd) => Ok(None),
        Ok(FaultCode::Undetermined(why)) => Err(why.to_string()),
        Err(e) => Err(e.to_string()),
    };
    let at_end = |c: Option<f64>| c.is_none_or(|c| c <= ends.0 || c >= ends.1);
    let mut codes = Codes::default();
    for env in &cases.envs {
        let nominal = code(&plan.nominal, env)?;
        let at_limits = cases
            .limits
            .iter()
            .map(|values| code(values, env))
            .collect::<Result<Vec<_>, _>>()?;
        // Without a nominal code to deviate from, each limit's own code.
        if nominal.is_none() || at_end(nominal) && at_limits.iter().all(|&c| at_end(c)) {
            for c in std::iter::once(nominal).chain(at_limits) {
                match c {
                    Some(c) => codes.add(c, c, window),
                    None => {
                        codes.add(ends.0, ends.0, window);
                        codes.add(ends.1, ends.1, window);
                    }
                }
            }
            continue;
        }
        // Somewhere between the ends: the worst case of the deviations,
        // a limit that rails either way adding both ends of its own.
        let Some(nominal) = nominal else { continue };
        let (mut down, mut up) = (0.0_f64, 0.0_f64);
        for pair in at_limits.chunks(2) {
            let mut worst = (0.0_f64, 0.0_f64);
            for c in pair {
                match c {
                    Some(c) => worst = (worst.0.min(c - nominal), worst.1.max(c - nominal)),
                    None => {
                        codes.add(ends.0, ends.0, window);
                        codes.add(ends.1, ends.1, window);
                    }
                }
            }
            down += worst.0;
            up += worst.1;
        }
        codes.add(nominal + down, nominal + up, window);
    }
    codes.spans.sort_unstable();
    codes.spans.dedup();
    Ok(codes)
}

/// The codes a fault gives: one span per condition, inside the
/// converter's code range.
#[derive(Clone, Debug, Default, PartialEq)]
struct Codes {
    spans: Vec<(i64, i64)>,
}

impl Codes {
    fn add(&mut self, lo: f64, hi: f64, window: &CodeWindow) {
        let clamp = |x: f64| (x.round() as i64).clamp(window.rails.0, window.rails.1);
        self.spans.push((clamp(lo), clamp(hi)));
    }

    /// The lowest and highest code; the two end codes alone when the
    /// fault gives nothing but the ends.
    fn hull(&self, window: &CodeWindow) -> FaultCodes {
        let lo = self.spans.iter().map(|s| s.0).min().unwrap_or(0);
        let hi = self.spans.iter().map(|s| s.1).max().unwrap_or(0);
        let (bottom, top) = window.rails;
        let ends = [(bottom, bottom), (top, top)];
        if bottom < top && self.spans == ends {
            FaultCodes::EitherEnd(lo, hi)
        } else {
            FaultCodes::Span(lo, hi)
        }
    }

    /// The firmware threshold between these codes and the window: at
    /// least one code clear of both (the window already holds 3 σ of
    /// noise), placed halfway; None when some code is not clear.
    fn threshold(&self, window: &CodeWindow) -> Option<Threshold> {
        let below = |s: &&(i64, i64)| s.1 < window.low - 1;
        let above = |s: &&(i64, i64)| s.0 > window.high + 1;
        if self.spans.is_empty() || !self.spans.iter().all(|s| below(&s) || above(&s)) {
            return None;
        }
        let low_hi = self.spans.iter().filter(below).map(|s| s.1).max();
        let high_lo = self.spans.iter().filter(above).map(|s| s.0).min();
        let under = |hi: i64| hi + (window.low - hi).div_euclid(2);
        let over = |lo: i64| window.high + (lo - window.high).div_euclid(2);
        match (low_hi, high_lo) {
            (Some(hi), None) => Some(Threshold::Below(under(hi))),
            (None, Some(lo)) => Some(Threshold::Above(over(lo))),
            (Some(hi), Some(lo)) => Some(Threshold::Outside(under(hi), over(lo))),
            (None, None) => None,
        }
    }
}

fn judge(plan: &Plan, cases: &Cases, window: &CodeWindow, fault: Fault) -> FaultVerdict {
    let stage = plan.names[fault.node.index()].clone();
    let mut verdict = FaultVerdict {
        fault,
        stage,
        codes: None,
        verdict: Verdict::Undetermined,
        threshold: None,
        channel: None,
        reason: None,
        fix: None,
        fix_at: None,
        unstated: false,
        pulls: ScalePulls::default(),
    };
    match code_range(plan, cases, window, &fault) {
        Ok(codes) => {
            verdict.codes = Some(codes.hull(window));
            verdict.threshold = codes.threshold(window);
            verdict.verdict = if verdict.threshold.is_some() {
                Verdict::Detectable
            } else {
                Verdict::Silent
            };
        }
        Err(why) => verdict.reason = Some(why),
    }
    if verdict.verdict != Verdict::Detectable {
        seen_on_a_channel(plan, cases, window, &mut verdict);
    }
    if verdict.verdict == Verdict::Silent && reads_as_healthy(plan, cases, window, &fault) {
        verdict.verdict = Verdict::Tolerated;
    }
    if verdict.verdict.hidden() {
        if fault.kind == FaultKind::InputOpen && verdict.codes.is_none() {
            verdict.pulls = scale_pulls(plan, cases, window, &fault);
        }
        let (text, at) = fix(plan, cases, window, &fault, (verdict.codes, verdict.pulls));
        verdict.fix = text;
        verdict.fix_at = at.map(|n| plan.names[n.index()].clone());
        verdict.unstated = verdict.verdict == Verdict::Undetermined && unstated_limit(plan, &fault);
    }
    verdict
}

/// Whether, at every condition, the fault's nominal code lies within the
/// spread the healthy chain's own tolerances give there (each source's
/// worst deviation from the healthy nominal, added up on each side),
/// widened by what the window allows every code (its noise, and half a
/// code of rounding): the fault then reads no worse than a healthy chain
/// at its limits.
fn reads_as_healthy(plan: &Plan, cases: &Cases, window: &CodeWindow, fault: &Fault) -> bool {
    let slack = window.k * window.sigma_codes + 0.5;
    let within = |env: &Env| -> Result<bool, EvalError> {
        let healthy = |values: &[f64]| plan.exact_code(values, env, plan.adc);
        let nominal = healthy(&plan.nominal)?;
        let (mut down, mut up) = (0.0_f64, 0.0_f64);
        for pair in cases.limits.chunks(2) {
            let (mut lo, mut hi) = (0.0_f64, 0.0_f64);
            for values in pair {
                let d = healthy(values)? - nominal;
                (lo, hi) = (lo.min(d), hi.max(d));
            }
            down += lo;
            up += hi;
        }
        Ok(match plan.faulted_code(&plan.nominal, env, fault)? {
            FaultCode::Code(c) => nominal + down - slack <= c && c <= nominal + up + slack,
            FaultCode::EitherEnd | FaultCode::Undetermined(_) => false,
        })
    };
    cases.envs.iter().all(|env| within(env).unwrap_or(false))
}

/// A fault the conversion's code does not show may still take one
/// summed channel's own code clear of that channel's window, which
/// firmware checks before adding: the first channel that shows it makes
/// the fault detectable there, with its codes and threshold.
fn seen_on_a_channel(plan: &Plan, cases: &Cases, window: &CodeWindow, verdict: &mut FaultVerdict) {
    for ch in &window.channels {
        let Ok(codes) = code_range_at(plan, cases, &ch.window, &verdict.fault, Some(ch.node))
        else {
            continue;
        };
        if let Some(threshold) = codes.threshold(&ch.window) {
            verdict.codes = Some(codes.hull(&ch.window));
            verdict.threshold = Some(threshold);
            verdict.channel = Some(ch.name.clone());
            verdict.verdict = Verdict::Detectable;
            verdict.reason = None;
            return;
        }
    }
}

/// How large a burnout current on stage `n` must be: more than the input
/// bias current it must outweigh, with that current's figure where the
/// stage states one.
fn outweighs_bias(plan: &Plan, n: NodeId) -> String {
    match plan.input_bias(n) {
        Some(most) => format!(
            "more than its input bias current of up to {}",
            with_prefix(most, "A", 3)
        ),
        None => "more than its input bias current".to_string(),
    }
}

/// What would make the fault detectable, where it can be computed, and
/// the stage it goes on.
/// `pulls` are the open input's ([`scale_pulls`]), none for other faults.
fn fix(
    plan: &Plan,
    cases: &Cases,
    window: &CodeWindow,
    fault: &Fault,
    (codes, pulls): (Option<FaultCodes>, ScalePulls),
) -> (Option<String>, Option<NodeId>) {
    let here = Some(fault.node);
    match (fault.kind, &plan.nodes[fault.node.index()]) {
        (FaultKind::Open, Node::Thermocouple(_)) => {
            let reader = reader_of(plan, fault.node);
            (burnout_fix(plan, cases, window, fault), reader)
        }
        // The pin cut off from its source: only a current of the stage's
        // own gives it a path, and any that outweighs the input's bias
        // current takes it to a rail.
        (FaultKind::InputOpen, _) if codes.is_none() => (
            Some(format!(
                "a burnout current on `{}` (`burnout`, {}){} drives the open pin to a rail, outside the valid window {} .. {}",
                plan.names[fault.node.index()], outweighs_bias(plan, fault.node), pull_down_fix(pulls), window.low, window.high
            )),
            here,
        ),
        (_, _)
            if codes.is_none()
                && fault.pull.is_none()
                && !unstated_limit(plan, fault)
                && reader_of(plan, fault.node).is_some() =>
        (
            Some(format!(
                "a burnout current on `{}` (`burnout`, {}) drives the open input to a rail, outside the valid window {} .. {}",
                plan.names[(reader_of(plan, fault.node).unwrap_or(fault.node)).index()],
                outweighs_bias(plan, reader_of(plan, fault.node).unwrap_or(fault.node)),
                window.low, window.high
            )),
            reader_of(plan, fault.node),
        ),
        (FaultKind::Reversed, _) => (
            Some("a wiring mistake the code cannot show near the cold junction's temperature: at bring-up, warm the junction and check that the reading rises".to_string()),
            here,
        ),
        (FaultKind::OverRange, _) => (Some(format!(
            "keep the healthy chain off the top code: its codes reach {} of {}; lower the gain or raise the reference until they stop at least 2 codes short",
            window.high, window.rails.1
        )), here),
        (FaultKind::UnderRange, _) => (Some(format!(
            "keep the healthy chain off the bottom code: its codes reach {} of {}; add an offset or narrow the range until they stop at least 2 codes short",
            window.low, window.rails.0
        )), here),
        (FaultKind::Open, _) if codes.is_none() => compliance_fix(plan, fault.node),
        (FaultKind::AtCompliance, _) if codes.is_none() => (
            Some("state the source's compliance (`compliance`, the voltage its output can reach), so the code at it is determined".to_string()),
            here,
        ),
        // Where a stuck output goes is the supply's business: say which.
        (FaultKind::StuckHigh, Node::IcVoltage(n)) if codes.is_none() && n.supply.is_none() => (
            Some(format!(
                "state the supply of `{}` (`supply 3.0 V .. 3.6 V`, for example: the range it runs from), or wire its supply from a source stage, so its output stuck at the supply gives a determined code",
                plan.names[fault.node.index()]
            )),
            here,
        ),
        // A voltage excitation the converter does not read against: read
        // against it (ratiometric) and its loss or short takes the
        // converter's reference, so the code, with it.
        (FaultKind::Lost | FaultKind::AtCurrentLimit, Node::Excitation(e))
            if !e.current && !reads_against(plan, fault.node) =>
        {
            (codes.map(|codes| ratiometric_fix(plan, window, fault.node, codes)), here)
        }
        // A current source lost, or out of regulation, still leaves the
        // bridge or element reading like a measurand: what tells is the
        // excitation itself.
        (FaultKind::Lost | FaultKind::AtCompliance, Node::Excitation(e)) if e.current => {
            (codes.map(|codes| current_monitor_fix(plan, window, fault, codes)), here)
        }
        (FaultKind::ExcitationLeadOpen | FaultKind::ExcitationReturnOpen, Node::Transducer(_)) => {
            (codes.map(|c| excitation_sense_fix(plan, window, fault.node, c)), here)
        }
        (FaultKind::SaturatedHigh | FaultKind::SaturatedLow, Node::Amplifier(a)) if a.output.is_none() => (
            Some("state the amplifier's output swing (`output`), so its saturated output gives a determined code".to_string()),
            here,
        ),
        _ => (codes.map(|codes| pull_to_rail_fix(window, codes)), here),
    }
}

/// The help for a fault reading inside the window with nothing more
/// particular to say: drive the node to a rail.
fn pull_to_rail_fix(window: &CodeWindow, codes: FaultCodes) -> String {
    format!(
        "{} the valid window {} .. {}: pull the node to a rail through a resistor (or use a burnout current) so the fault drives the code outside the window",
        codes.overlap(),
        window.low,
        window.high
    )
}

/// The help for an open element whose current source states no
/// compliance, at that source: where its output runs is what decides the
/// code.
fn compliance_fix(plan: &Plan, element: NodeId) -> (Option<String>, Option<NodeId>) {
    match unstated_compliance(plan, element) {
        Some(source) => (
            Some(format!(
                "state the compliance of `{}` (`compliance`, the voltage its output runs to with no load), so the open element takes the code to a determined end",
                plan.names[source.index()]
            )),
            Some(source),
        ),
        None => (None, None),
    }
}

/// The help for a transducer's open excitation lead: it leaves the bridge
/// unpowered, so the output is the zero a true zero gives and no code
/// window can tell them apart; what can is the excitation sensed at the
/// transducer's own terminals.
fn excitation_sense_fix(
    plan: &Plan,
    window: &CodeWindow,
    transducer: NodeId,
    codes: FaultCodes,
) -> String {
    format!(
        "{} the valid window {} .. {}: with no excitation `{}` gives its zero output, as at a true zero, and a pull on a bridge's output would shift every reading; sense the excitation at its terminals (six-wire: sense leads beside the excitation leads) on a converter channel of its own, and have the firmware reject readings when it falls",
        codes.overlap(),
        window.low,
        window.high,
        plan.names[transducer.index()]
    )
}

/// The help for a current source whose loss, or loss of regulation,
/// reads inside the window: monitor the current where it flows.
fn current_monitor_fix(
    plan: &Plan,
    window: &CodeWindow,
    fault: &Fault,
    codes: FaultCodes,
) -> String {
    let source = &plan.names[fault.node.index()];
    let what = match fault.kind {
        FaultKind::AtCompliance => "out of regulation",
        _ => "lost",
    };
    format!(
        "{} the valid window {} .. {}: with `{source}` {what} the chain still reads like a measurand; monitor the current on a channel of its own (the voltage across a reference resistor it flows through, or across what it drives) and have the firmware reject readings when it is off",
        codes.overlap(), window.low, window.high
    )
}

/// Whether the chain's converter works against `source`'s output.
fn reads_against(plan: &Plan, source: NodeId) -> bool {
    matches!(&plan.nodes[plan.adc.index()], Node::Adc(adc) if adc.reference == Some(source))
}

/// The help for a voltage `source` whose loss reads inside the window:
/// the edge that makes the converter read against it.
fn ratiometric_fix(plan: &Plan, window: &CodeWindow, source: NodeId, codes: FaultCodes) -> String {
    let (source, adc) = (&plan.names[source.index()], &plan.names[plan.adc.index()]);
    format!(
        "{} the valid window {} .. {}: read the converter against `{source}` (`{source} -> {adc}.ref`, ratiometric), so its loss takes the converter's reference with it and the code to an end, or monitor `{source}` on a channel of its own",
        codes.overlap(), window.low, window.high
    )
}

/// Whether the fault's code is undetermined only for want of a limit the
/// spec may leave out.
fn unstated_limit(plan: &Plan, fault: &Fault) -> bool {
    match (fault.kind, &plan.nodes[fault.node.index()]) {
        // A pin's own open-input current (`burnout`) and an IC's supply
        // are optional: without them the fault is unchecked.
        (FaultKind::InputOpen | FaultKind::StuckHigh, _) => true,
        (FaultKind::Open, _) => unstated_compliance(plan, fault.node).is_some(),
        (FaultKind::AtCompliance, Node::Excitation(e)) => e.compliance.is_none(),
        (FaultKind::SaturatedHigh | FaultKind::SaturatedLow, Node::Amplifier(a)) => {
            a.output.is_none()
        }
        _ => false,
    }
}

/// The current source an open element on it leaves at an unstated
/// voltage.
fn unstated_compliance(plan: &Plan, i: NodeId) -> Option<NodeId> {
    let input = match &plan.nodes[i.index()] {
        Node::Rtd(n) => n.input,
        Node::Thermistor(n) => n.input,
        Node::Resistor(n) => n.input,
        Node::StrainGauge(n) => n.input,
        Node::Excitation(_)
        | Node::Thermocouple(_)
        | Node::IcVoltage(_)
        | Node::IcCurrent(_)
        | Node::Transducer(_)
        | Node::Bridge(_)
        | Node::Amplifier(_)
        | Node::Filter(_)
        | Node::Adc(_)
        | Node::Convert(_) => None,
    }?;
    match &plan.nodes[input.index()] {
        Node::Excitation(e) if e.current && e.compliance.is_none() => Some(input),
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

/// The least burnout current that drives an open couple's code clear of
/// the window, found by bisection over the current (the code grows with
/// it, to the rail) from the reading stage's input bias current, which it
/// must outweigh, to 1 mA. Where the bias current itself (or 1 pA, when
/// none is stated) already suffices, any current that outweighs it does:
/// the help says so rather than quote the search's floor. Where 1 mA does
/// not, it says that no current in the range does.
fn burnout_fix(plan: &Plan, cases: &Cases, window: &CodeWindow, fault: &Fault) -> Option<String> {
    let reader = reader_of(plan, fault.node)?;
    let detectable = |amps: f64| {
        let trial = Fault {
            pull: Some(Pull::Current(amps)),
            ..*fault
        };
        code_range(plan, cases, window, &trial)
            .ok()
            .and_then(|codes| codes.threshold(window))
            .is_some()
    };
    const MOST: f64 = 1e-3;
    let floor = plan.input_bias(reader).unwrap_or(0.0).max(1e-12);
    let (name, lo, hi) = (&plan.names[reader.index()], window.low, window.high);
    if floor >= MOST || !detectable(MOST) {
        let from = match plan.input_bias(reader) {
            Some(bias) => format!(
                " from its input bias current of {}",
                with_prefix(bias, "A", 3)
            ),
            None => String::new(),
        };
        return Some(format!(
            "no burnout current on `{name}`{from} up to {} takes the open input clear of the valid window {lo} .. {hi}: give the open input a larger resistance to develop it across (`bias_resistor`), or a pull-up to a rail",
            with_prefix(MOST, "A", 3)
        ));
    }
    if detectable(floor) {
        return Some(format!(
            "any burnout current on `{name}` ({}) drives the open input clear of the valid window {lo} .. {hi}",
            outweighs_bias(plan, reader)
        ));
    }
    let (mut low, mut high) = (floor, MOST);
    for _ in 0..60 {
        let mid = (low * high).sqrt();
        if detectable(mid) {
            high = mid;
        } else {
            low = mid;
        }
    }
    // Three significant digits, rounded up: "at least".
    let step = 10f64.powi(high.log10().floor() as i32 - 2);
    let amps = with_prefix((high / step).ceil() * step, "A", 3);
    Some(format!(
        "a burnout current of at least {amps} on `{name}` (`burnout {amps}`) drives the open input clear of the valid window {lo} .. {hi}"
    ))
}

/// The pull-down a converter or amplifier pin could take instead of a
/// burnout current, where one to 0 V takes the open pin outside the
/// window: `, or a resistor to 0 V (`pull 1 Mohm to 0 V`)`, else nothing.
fn pull_down_fix(pulls: ScalePulls) -> String {
    match pulls.ground() {
        Some(pull) => format!(", or a resistor from the pin to 0 V ({}),", pull_text(pull)),
        None => String::new(),
    }
}

/// [`ScalePulls`] of an open input: the largest of [`PULL_OHMS`] to 0 V and to the top of
/// what the stage states its pins may take (a converter's `rails`, an
/// amplifier's `input` range), each kept where every code it gives lies
/// on one side of the valid window.
fn scale_pulls(plan: &Plan, cases: &Cases, window: &CodeWindow, fault: &Fault) -> ScalePulls {
    let top = match &plan.nodes[fault.node.index()] {
        Node::Adc(_) => plan.stated[fault.node.index()].rails.map(|r| r.1),
        Node::Amplifier(a) => a.input_range.map(|r| r.1),
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
        | Node::Filter(_)
        | Node::Convert(_) => None,
    };
    let mut pulls = ScalePulls::default();
    let Ok(rises) = code_rises(plan) else {
        return pulls;
    };
    for volts in std::iter::once(0.0).chain(top.filter(|&v| v > 0.0)) {
        // The largest resistor that takes every code to one side.
        let side = PULL_OHMS.iter().find_map(|&ohms| {
            let pull = Pulled { ohms, volts };
            pulled_high(plan, cases, window, fault, pull).map(|high| (pull, high))
        });
        let Some((pull, codes_high)) = side else {
            continue;
        };
        if codes_high == rises {
            pulls.up = pulls.up.or(Some(pull));
        } else {
            pulls.down = pulls.down.or(Some(pull));
        }
    }
    pulls
}

/// Whether `fault` with `pull` on its pin gives codes all above the
/// valid window (true) or all below (false); None where they are not on
/// one side.
fn pulled_high(
    plan: &Plan,
    cases: &Cases,
    window: &CodeWindow,
    fault: &Fault,
    pull: Pulled,
) -> Option<bool> {
    let trial = Fault {
        pull: Some(Pull::Resistor {
            ohms: pull.ohms,
            volts: pull.volts,
        }),
        ..*fault
    };
    match code_range(plan, cases, window, &trial)
        .ok()?
        .threshold(window)?
    {
        Threshold::Above(_) => Some(true),
        Threshold::Below(_) => Some(false),
        Threshold::Outside(..) => None,
    }
}

/// The amplifier or converter that reads node `i`.
fn reader_of(plan: &Plan, i: NodeId) -> Option<NodeId> {
    plan.nodes
        .iter()
        .position(|n| match n {
            Node::Amplifier(a) => a.input == i,
            Node::Adc(a) => a.input == i,
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
            | Node::Filter(_)
            | Node::Convert(_) => false,
        })
        .map(NodeId::new)
}

/// Whether the code rises with the measurand (at the reference, nominal).
fn code_rises(plan: &Plan) -> Result<bool, EvalError> {
    let at = |measurand: f64| {
        let env = Env {
            measurand,
            ambient: plan.reference,
            cold_junction: plan.reference,
        };
        plan.exact_code(&plan.nominal, &env, plan.adc)
    };
    Ok(at(plan.range.1)? >= at(plan.range.0)?)
}

/// A trip and the faults that would hide a crossing of it.
#[derive(Clone, Debug, PartialEq)]
pub struct Masking {
    pub alarm: AlarmLimit,
    /// Indices into [`FaultReport::faults`] of the faults that can read
    /// on the safe side of the trip without firmware noticing.
    pub faults: Vec<usize>,
}

/// For each alarm, the faults that mask it: with the true value at or
/// past the trip point, an undetected fault whose codes can lie inside the
/// valid window on the safe side of the trip code (a high trip's sensor
/// failing low), so a real excursion would never trip. A fault whose code
/// there leaves the window is seen by the window test and masks nothing;
/// one whose code nothing determines masks every trip.
pub fn maskings(
    chain: &Chain,
    plan: &Plan,
    report: &FaultReport,
    alarms: Vec<AlarmLimit>,
) -> Result<Vec<Masking>, EvalError> {
    if alarms.is_empty() {
        return Ok(Vec::new());
    }
    let rises = code_rises(plan)?;
    let window = &report.window;
    Ok(alarms
        .into_iter()
        .map(|alarm| {
            // Codes on the safe side of a high trip are below it when the
            // code rises with the measurand.
            let safe_below = (alarm.side == Side::High) == rises;
            let cases = Cases::at(chain, plan, &past_trip(plan, &alarm));
            let masks = |f: &FaultVerdict| match f.verdict {
                Verdict::Detectable | Verdict::Tolerated => false,
                Verdict::Undetermined => true,
                Verdict::Silent => match code_range(plan, &cases, window, &f.fault) {
                    Err(_) => true,
                    Ok(codes) => codes.spans.iter().any(|&(lo, hi)| {
                        let inside = (lo.max(window.low), hi.min(window.high));
                        inside.0 <= inside.1
                            && if safe_below {
                                inside.0 < alarm.trip_code
                            } else {
                                inside.1 > alarm.trip_code
                            }
                    }),
                },
            };
            let faults = report
                .faults
                .iter()
                .enumerate()
                .filter(|(_, f)| masks(f))
                .map(|(i, _)| i)
                .collect();
            Masking { alarm, faults }
        })
        .collect())
}

/// Measurand points from the trip point to the range's end beyond it (the
/// values the trip must catch), inside the range.
fn past_trip(plan: &Plan, alarm: &AlarmLimit) -> Vec<f64> {
    let (lo, hi) = plan.range;
    let from = alarm.trip_at.clamp(lo, hi);
    let to = match alarm.side {
        Side::High => hi,
        Side::Low => lo,
    };
    grid((from, to), POINTS)
}

/// The coverage factor trips are guarded with, as the budget's default.
pub const TRIP_K: f64 = 2.0;

/// What `check` keeps of a chain's faults: the verdicts and, per alarm,
/// the faults that mask it, so `catena checklist` needs no second pass.
#[derive(Clone, Debug, PartialEq)]
pub struct FaultCheck {
    pub report: FaultReport,
    pub maskings: Vec<Masking>,
    /// Why the alarms' trips could not be judged (a trip point the chain
    /// cannot evaluate), when they could not: the faults still are.
    pub trips_unjudged: Option<EvalError>,
}

/// The chain's faults and trips judged once: the verdicts, the alarms'
/// trip codes (guarded with [`TRIP_K`]) and what masks them.
/// `envelopes`, when given, are the range envelopes the limit checks took
/// at the window's points ([`super::window::POINTS`]), so they are not
/// followed again.
pub fn check(
    chain: &Chain,
    plan: &Plan,
    envelopes: Option<&[Envelope]>,
) -> Result<FaultCheck, EvalError> {
    let window = match envelopes {
        Some(e) => code_window_from(chain, plan, e)?,
        None => code_window(chain, plan)?,
    };
    let report = analyse_in(chain, plan, window)?;
    let trips =
        alarm_limits(chain, plan, TRIP_K).and_then(|alarms| maskings(chain, plan, &report, alarms));
    let (maskings, trips_unjudged) = match trips {
        Ok(m) => (m, None),
        Err(e) => (Vec::new(), Some(e)),
    };
    Ok(FaultCheck {
        report,
        maskings,
        trips_unjudged,
    })
}

/// What a chain could not have judged.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Unjudged {
    /// Its faults and trips: the valid code window could not be built.
    Faults,
    /// Its alarms' trips: a trip point could not be evaluated.
    Trips,
}

/// R674: the chain's faults (or trips) were not judged, because
/// evaluating them failed with `error`: the root cause leads, labelled on
/// its stage as the evaluation finding is, and its help says how to get
/// the chain evaluated. A chain that guards people or property makes it
/// an error, as an unjudged fault there is as bad as a silent one.
pub fn unjudged(chain: &Chain, error: &EvalError, what: Unjudged) -> Finding {
    let (condition, consequence) = match what {
        Unjudged::Faults => (
            chain
                .measurand
                .as_ref()
                .map(|m| (m.span, "the valid code window spans this range".to_string())),
            "so the valid code window could not be built and no fault of the chain was judged",
        ),
        Unjudged::Trips => (
            chain
                .alarms
                .iter()
                .find(|a| error_at_trip(chain, a))
                .or(chain.alarms.first())
                .map(|a| (a.span, "this trip is evaluated".to_string())),
            "so no alarm's trip code was computed, and no fault was judged against the trips",
        ),
    };
    let cause = super::eval_finding(chain, error, condition);
    let mut finding = Finding {
        code: Code::R674,
        message: format!("{}, {consequence}", cause.message),
        ..cause
    };
    if chain.is_protective() {
        finding.severity_override = Some(Severity::Error);
    }
    let help = finding.help.take().unwrap_or_default();
    let help = match what {
        Unjudged::Faults => help,
        Unjudged::Trips => format!("a trip point is evaluated as the range is: {help}"),
    };
    finding.help(format!(
        "{help}; then `catena checklist` lists every fault against the window"
    ))
}

/// R674 for a chain whose faults were not judged because an error that a
/// `catena.yaml` rule may relax (a limit beyond its range, R601) stopped
/// the evaluation first: relaxed, that error no longer fails the check,
/// and without this the chain would pass with its faults unjudged,
/// unsaid. It follows from that error and is labelled where it is.
pub fn blocked(chain: &Chain, blocker: &Finding) -> Finding {
    let mut finding = Finding::new(
        Code::R674,
        &chain.file,
        format!(
            "no fault of the chain was judged: {} stops the fault analysis before its code window",
            blocker.code.as_str()
        ),
    );
    finding = match blocker.primary_span() {
        Some(span) => finding.label(span, "the window stops here"),
        None => finding.label(chain.name_span, "the window stops in this chain"),
    };
    finding.cause = Some(Box::new(Cause::of(blocker)));
    if chain.is_protective() {
        finding.severity_override = Some(Severity::Error);
    }
    finding.help(format!(
        "fix {} (a rule that relaxes it does not judge the faults); then `catena checklist` lists every fault against the window",
        blocker.code.as_str()
    ))
}

/// Whether the alarm's trip lies outside the measurand range, where an
/// evaluation is most likely to fail.
fn error_at_trip(chain: &Chain, alarm: &crate::model::Alarm) -> bool {
    chain
        .measurand
        .as_ref()
        .is_some_and(|m| alarm.at < m.low || alarm.at > m.high)
}

/// `check`'s findings on a chain's faults and trips: R670 for a silent
/// fault, R671 for an undetermined one (errors in a chain that protects
/// people or property), R672 for a fault that masks a trip, R673 for a
/// trip outside the measurand range; R674 when the trips could not be
/// evaluated (a chain whose window could not be built gets R674 from
/// [`unjudged`] instead).
pub fn findings(chain: &Chain, checked: &FaultCheck) -> Findings {
    let mut out = Findings::new();
    if let Some(e) = &checked.trips_unjudged {
        out.push(unjudged(chain, e, Unjudged::Trips));
    }
    let report = &checked.report;
    let mut causes: Vec<Option<Cause>> = Vec::with_capacity(report.faults.len());
    for (i, f) in report.faults.iter().enumerate() {
        // One finding for a stage's faults that share one reason (an
        // amplifier's swing not stated leaves it high and low alike).
        let earlier = report.faults[..i].iter().position(|e| same_reason(e, f));
        if let Some(first) = earlier {
            causes.push(causes[first].clone());
            continue;
        }
        let also: Vec<&FaultVerdict> = report.faults[i + 1..]
            .iter()
            .filter(|later| same_reason(f, later))
            .collect();
        let finding = fault_finding(chain, report, f, &also);
        causes.push(finding.as_ref().map(Cause::of));
        out.extend(finding);
    }
    for (m, alarm) in checked.maskings.iter().zip(&chain.alarms) {
        out.extend(super::alarms::outside_range(chain, &m.alarm, alarm.span));
        for &i in &m.faults {
            let f = &report.faults[i];
            out.push(masking_finding(chain, &m.alarm, alarm.span, f).caused_by(causes[i].clone()));
        }
    }
    out
}

/// The span of the stage named `name`, if the chain has it.
fn stage_span(chain: &Chain, name: &str) -> Option<crate::diagnostics::Span> {
    chain
        .stages
        .iter()
        .find(|s| s.name == name)
        .map(|s| s.name_span)
}

/// Whether two undetermined faults of one stage have one reason.
fn same_reason(a: &FaultVerdict, b: &FaultVerdict) -> bool {
    a.verdict == Verdict::Undetermined
        && b.verdict == Verdict::Undetermined
        && a.stage == b.stage
        && a.reason == b.reason
}

/// The severity `check` reports a fault with (R670 or R671), or None when
/// it reports nothing of it: a detectable fault, one found at bring-up,
/// and one whose limit is left unstated in a chain that guards nobody.
/// A chain that protects people or property makes them errors.
pub fn reported_severity(chain: &Chain, f: &FaultVerdict) -> Option<Severity> {
    if !f.verdict.hidden()
        || found_at_bring_up(f.fault.kind)
        || (f.unstated && !chain.is_protective())
    {
        return None;
    }
    Some(if chain.is_protective() {
        Severity::Error
    } else {
        Severity::Warning
    })
}

/// R670 or R671 for one fault the firmware cannot see (and the faults of
/// the same stage that share its reason).
fn fault_finding(
    chain: &Chain,
    report: &FaultReport,
    f: &FaultVerdict,
    also: &[&FaultVerdict],
) -> Option<Finding> {
    let w = &report.window;
    let what = std::iter::once(f)
        .chain(also.iter().copied())
        .map(|f| f.fault.kind.describe())
        .collect::<Vec<_>>()
        .join(" or ");
    // A limit left unstated is left unchecked (the checklist lists the
    // fault, with the limit to state), except where the chain guards
    // people or property.
    let severity = reported_severity(chain, f)?;
    let (code, message, here) = match (f.verdict, f.codes) {
        (Verdict::Silent, Some(codes)) => (
            Code::R670,
            format!(
                "`{}` {what} is silent: {} the valid window {} .. {}",
                f.stage,
                codes.overlap(),
                w.low,
                w.high
            ),
            "reads inside the valid window with this fault".to_string(),
        ),
        _ => (
            Code::R671,
            format!(
                "`{}` {what} gives no determined code: {}",
                f.stage,
                f.reason.as_deref().unwrap_or("nothing defines it")
            ),
            "nothing defines the code with this fault".to_string(),
        ),
    };
    let mut finding = Finding::new(code, &chain.file, message);
    if severity == Severity::Error {
        finding.severity_override = Some(Severity::Error);
    }
    finding = match stage_span(chain, &f.stage) {
        Some(span) => finding.label(span, here),
        None => finding.label(chain.name_span, here),
    };
    if let Some(at) = f.fix_at.as_deref().filter(|&n| n != f.stage) {
        if let Some(span) = stage_span(chain, at) {
            finding = finding.label(span, "the fix goes here");
        }
    }
    let help = f.fix.clone().unwrap_or_else(|| {
        "give the faulted node a defined path (a pull-up or pull-down to a rail) so the fault drives the code outside the valid window".to_string()
    });
    Some(finding.help(help))
}

/// R672: a fault that keeps an alarm from tripping.
fn masking_finding(
    chain: &Chain,
    alarm: &AlarmLimit,
    alarm_span: crate::diagnostics::Span,
    f: &FaultVerdict,
) -> Finding {
    let unit = chain.measurand_unit();
    let show = |x: f64| format!("{} {unit}", trimmed(from_si(x, &unit), 4));
    // What the fault reads on the trip's safe side, in words.
    let (safe, toward) = match alarm.side {
        Side::High => ("low", "up-scale"),
        Side::Low => ("high", "down-scale"),
    };
    let how = if f.verdict == Verdict::Undetermined {
        "nothing determines the fault's code, so it can read"
    } else {
        "the fault can read"
    };
    let message = format!(
        "`alarm {} {}` is masked by `{}` {}: with the value at its trip point ({}, code {}) {how} {safe}, inside the valid window",
        alarm.side,
        show(alarm.at),
        f.stage,
        f.fault.kind.describe(),
        show(alarm.trip_at),
        alarm.trip_code
    );
    let mut finding = Finding::new(Code::R672, &chain.file, message);
    finding = match stage_span(chain, &f.stage) {
        Some(span) => finding.label(span, format!("can fail reading {safe}")),
        None => finding.label(chain.name_span, format!("can fail reading {safe}")),
    };
    finding = finding.label(alarm_span, "this trip would never fire");
    let fix = match &f.fix {
        Some(fix) => format!("{fix}; "),
        None => String::new(),
    };
    // A bridge with no excitation gives its zero whatever pulls on it.
    let pull = match alarm.side {
        Side::High => &f.pulls.up,
        Side::Low => &f.pulls.down,
    };
    let on = match pull {
        Some(pull) => format!(" ({} on `{}`)", pull_text(*pull), f.stage),
        None => String::new(),
    };
    let drive = match f.fault.kind {
        FaultKind::ExcitationLeadOpen | FaultKind::ExcitationReturnOpen => String::new(),
        _ => format!(", or drive it {toward}{on}, toward the trip"),
    };
    finding.help(format!(
        "{fix}make the fault detectable and have the firmware trip on its threshold too (`catena checklist` gives it){drive}"
    ))
}
