//! Fault verdicts: each fault's codes over the measurand range, the
//! ambient range and every tolerance at its limits, against the valid code
//! window of the healthy chain. A fault whose codes all lie outside the
//! window is detectable, with a firmware threshold between them; one that
//! overlaps it is silent; one whose code nothing determines (a floating
//! input) is undetermined, which is not detectable either.

use super::alarms::{alarm_limits, AlarmLimit};
use super::budget;
use super::window::{code_window, CodeWindow};
use crate::eval::fault::{Fault, FaultCode, FaultKind};
use crate::eval::{grid, Env, EvalError, Node, NodeId, Plan, SourceKind};
use crate::model::Chain;
use crate::units::format::with_prefix;

/// Measurand points a fault's codes are taken at, across the range.
const POINTS: usize = 5;

/// Whether firmware can tell a fault from a reading.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Verdict {
    Detectable,
    Silent,
    Undetermined,
}

impl Verdict {
    pub fn name(self) -> &'static str {
        match self {
            Verdict::Detectable => "detectable",
            Verdict::Silent => "silent",
            Verdict::Undetermined => "undetermined",
        }
    }
}

/// The test firmware applies to a code: the fault is present when the
/// code is below (or above) the value.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Threshold {
    Below(i64),
    Above(i64),
}

#[derive(Clone, Debug, PartialEq)]
pub struct FaultVerdict {
    pub fault: Fault,
    pub stage: String,
    /// The lowest and highest code the converter gives with the fault.
    pub codes: Option<(i64, i64)>,
    pub verdict: Verdict,
    pub threshold: Option<Threshold>,
    /// Why the code is undetermined.
    pub reason: Option<String>,
    /// What would make a silent or undetermined fault detectable, computed.
    pub fix: Option<String>,
}

/// Every fault of a chain judged against its window.
#[derive(Clone, Debug, PartialEq)]
pub struct FaultReport {
    pub window: CodeWindow,
    pub faults: Vec<FaultVerdict>,
}

/// The chain's faults and their verdicts.
pub fn analyse(chain: &Chain, plan: &Plan) -> Result<FaultReport, EvalError> {
    let window = code_window(chain, plan)?;
    let cases = Cases::of(chain, plan);
    let faults = plan
        .faults()
        .into_iter()
        .map(|fault| judge(plan, &cases, &window, fault))
        .collect();
    Ok(FaultReport { window, faults })
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
            for &measurand in &grid(plan.range, POINTS) {
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

/// A fault's code range, or why it has none: at each condition, the
/// nominal code widened by every source's deviation at its limits, added
/// up on each side (the worst case the window's envelope takes too).
fn code_range(
    plan: &Plan,
    cases: &Cases,
    window: &CodeWindow,
    fault: &Fault,
) -> Result<(i64, i64), String> {
    let code = |values: &[f64], env: &Env| match plan.faulted_code(values, env, fault) {
        Ok(FaultCode::Code(exact)) => Ok(exact),
        Ok(FaultCode::Undetermined(why)) => Err(why.to_string()),
        Err(e) => Err(e.to_string()),
    };
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for env in &cases.envs {
        let nominal = code(&plan.nominal, env)?;
        let (mut down, mut up) = (0.0_f64, 0.0_f64);
        for pair in cases.limits.chunks(2) {
            let mut worst = (0.0_f64, 0.0_f64);
            for values in pair {
                let d = code(values, env)? - nominal;
                worst = (worst.0.min(d), worst.1.max(d));
            }
            down += worst.0;
            up += worst.1;
        }
        lo = lo.min(nominal + down);
        hi = hi.max(nominal + up);
    }
    let clamp = |x: f64| (x.round() as i64).clamp(window.rails.0, window.rails.1);
    Ok((clamp(lo), clamp(hi)))
}

fn judge(plan: &Plan, cases: &Cases, window: &CodeWindow, fault: Fault) -> FaultVerdict {
    let stage = plan.names[fault.node].clone();
    let mut verdict = FaultVerdict {
        fault,
        stage,
        codes: None,
        verdict: Verdict::Undetermined,
        threshold: None,
        reason: None,
        fix: None,
    };
    match code_range(plan, cases, window, &fault) {
        Ok(codes) => {
            verdict.codes = Some(codes);
            verdict.threshold = threshold(window, codes);
            verdict.verdict = if verdict.threshold.is_some() {
                Verdict::Detectable
            } else {
                Verdict::Silent
            };
        }
        Err(why) => verdict.reason = Some(why),
    }
    if verdict.verdict != Verdict::Detectable {
        verdict.fix = fix(plan, cases, window, &fault, verdict.codes);
    }
    verdict
}

/// The firmware threshold between a fault's codes and the window: at least
/// one code clear of both (the window already holds 3 σ of noise), placed
/// halfway.
pub fn threshold(window: &CodeWindow, (lo, hi): (i64, i64)) -> Option<Threshold> {
    if hi < window.low - 1 {
        Some(Threshold::Below(hi + (window.low - hi).div_euclid(2)))
    } else if lo > window.high + 1 {
        Some(Threshold::Above(
            window.high + (lo - window.high).div_euclid(2),
        ))
    } else {
        None
    }
}

/// What would make the fault detectable, where it can be computed.
fn fix(
    plan: &Plan,
    cases: &Cases,
    window: &CodeWindow,
    fault: &Fault,
    codes: Option<(i64, i64)>,
) -> Option<String> {
    match (fault.kind, &plan.nodes[fault.node]) {
        (FaultKind::Open, Node::Thermocouple(_)) => burnout_fix(plan, cases, window, fault),
        (FaultKind::OverRange, _) => Some(format!(
            "keep the healthy chain off the top code: its codes reach {} of {}; lower the gain or raise the reference until they stop at least 2 codes short",
            window.high, window.rails.1
        )),
        (FaultKind::UnderRange, _) => Some(format!(
            "keep the healthy chain off the bottom code: its codes reach {} of {}; add an offset or narrow the range until they stop at least 2 codes short",
            window.low, window.rails.0
        )),
        _ => codes.map(|(lo, hi)| {
            format!(
                "its codes {lo} .. {hi} overlap the valid window {} .. {}: pull the node to a rail through a resistor (or use a burnout current) so the fault drives the code outside the window",
                window.low, window.high
            )
        }),
    }
}

/// The least burnout current that drives an open couple's code clear of
/// the window, found by bisection over the current (the code grows with
/// it, to the rail).
fn burnout_fix(plan: &Plan, cases: &Cases, window: &CodeWindow, fault: &Fault) -> Option<String> {
    let detectable = |amps: f64| {
        let trial = Fault {
            burnout: Some(amps),
            ..*fault
        };
        code_range(plan, cases, window, &trial)
            .ok()
            .and_then(|codes| threshold(window, codes))
            .is_some()
    };
    let (mut low, mut high) = (1e-12_f64, 1e-3_f64);
    if !detectable(high) {
        return None;
    }
    for _ in 0..60 {
        let mid = (low * high).sqrt();
        if detectable(mid) {
            high = mid;
        } else {
            low = mid;
        }
    }
    let reader = reader_of(plan, fault.node)?;
    // Three significant digits, rounded up: "at least".
    let step = 10f64.powi(high.log10().floor() as i32 - 2);
    let amps = with_prefix((high / step).ceil() * step, "A", 3);
    Some(format!(
        "a burnout current of at least {amps} on `{}` (`burnout {amps}`) drives the open input clear of the valid window {} .. {}",
        plan.names[reader],
        window.low,
        window.high
    ))
}

/// The amplifier or converter that reads node `i`.
fn reader_of(plan: &Plan, i: NodeId) -> Option<NodeId> {
    plan.nodes.iter().position(|n| match n {
        Node::Amplifier(a) => a.input == i,
        Node::Adc(a) => a.input == i,
        _ => false,
    })
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

/// For each alarm, the faults that mask it: an undetected fault whose
/// codes can lie on the safe side of the trip code (a high trip's sensor
/// failing low), so a real excursion would never trip.
pub fn maskings(
    chain: &Chain,
    plan: &Plan,
    report: &FaultReport,
    k: f64,
) -> Result<Vec<Masking>, EvalError> {
    let rises = code_rises(plan)?;
    let alarms = alarm_limits(chain, plan, k)?;
    Ok(alarms
        .into_iter()
        .map(|alarm| {
            // Codes on the safe side of a high trip are below it when the
            // code rises with the measurand.
            let safe_below = (alarm.side == "high") == rises;
            let faults = report
                .faults
                .iter()
                .enumerate()
                .filter(|(_, f)| match (f.verdict, f.codes) {
                    (Verdict::Detectable, _) => false,
                    (_, None) => true,
                    (_, Some((lo, hi))) => {
                        if safe_below {
                            lo < alarm.trip_code
                        } else {
                            hi > alarm.trip_code
                        }
                    }
                })
                .map(|(i, _)| i)
                .collect();
            Masking { alarm, faults }
        })
        .collect())
}

/// The coverage factor trips are guarded with, as the budget's default.
pub const TRIP_K: f64 = 2.0;
