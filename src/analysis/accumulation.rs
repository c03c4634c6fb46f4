//! Stage-by-stage accumulation: along the signal path, each node's value,
//! its gain (node units per measurand unit) and the standard uncertainty
//! the sources upstream have put on it, referred back to the measurand, so
//! a reader sees where the error grows.

use super::budget::beyond_rounding;
use super::stages::signal_path;
use crate::eval::{Env, EvalError, NodeId, Plan, Signal, SlotId, SourceKind, SourceName};

#[derive(Clone, Debug, PartialEq)]
pub struct NodeError {
    pub node: NodeId,
    pub value: f64,
    pub unit: &'static str,
    /// d(value)/d(measurand), node units per SI measurand unit.
    pub gain: f64,
    /// GUM standard uncertainty of the value, divided by the gain: in
    /// measurand units.
    pub error: f64,
    /// The source that puts the most on it (the first without a finite
    /// effect, if any): the parameter to name when `error` is not finite.
    pub dominant: Option<SourceName>,
    /// Where the error falls from the stage before to this one, the source
    /// this stage cancels most of: a ratiometric converter reading its
    /// excitation's error out, a compensation taken from the same source.
    pub cancels: Option<Cancelled>,
}

/// A source's error, referred to the measurand (1 σ), at the stage before
/// and at the stage that cancels it.
#[derive(Clone, Debug, PartialEq)]
pub struct Cancelled {
    pub source: String,
    pub before: f64,
    pub after: f64,
}

fn primary(s: Signal) -> f64 {
    match s {
        Signal::Code { exact, .. } => exact,
        other => other.value_unit().0,
    }
}

/// One source's standard uncertainty on each node of the path, in the
/// node's own unit, and whether it also moves another input of that node
/// than the path's (a converter's reference from the same excitation).
struct Effects {
    source: SlotId,
    u: Vec<f64>,
    elsewhere: Vec<bool>,
}

pub fn accumulation(plan: &Plan, env: &Env) -> Result<Vec<NodeError>, EvalError> {
    let mut path = signal_path(plan, plan.adc);
    path.reverse();
    let nominal = plan.raw_signals(&plan.nominal, env)?;
    let gains = gains(plan, env, &path)?;
    let effects = effects(plan, env, &path)?;
    Ok(path
        .iter()
        .enumerate()
        .map(|(k, &n)| {
            let (value, unit) = nominal[n.index()].value_unit();
            let value = match nominal[n.index()] {
                Signal::Code { exact, .. } => exact,
                _ => value,
            };
            // A fold from +0: an empty sum of f64 is -0.
            let variance = effects.iter().fold(0.0, |sum, e| sum + e.u[k] * e.u[k]);
            NodeError {
                node: n,
                value,
                unit,
                gain: gains[k],
                error: if gains[k] != 0.0 {
                    variance.sqrt() / gains[k].abs()
                } else {
                    0.0
                },
                dominant: dominant(&effects, k).map(|s| plan.slots[s.index()].id.clone()),
                cancels: cancelled(plan, &effects, &gains, k),
            }
        })
        .collect())
}

/// Each node's d(value)/d(measurand), by central difference.
fn gains(plan: &Plan, env: &Env, path: &[NodeId]) -> Result<Vec<f64>, EvalError> {
    let (lo, hi) = plan.range;
    let h = (hi - lo) * 1e-4;
    let at = |measurand: f64| {
        plan.evaluate_raw(&plan.nominal, &Env { measurand, ..*env })
            .map(|o| o.signals)
    };
    let (up, down) = (at(env.measurand + h)?, at(env.measurand - h)?);
    Ok(path
        .iter()
        .map(|n| (primary(up[n.index()]) - primary(down[n.index()])) / (2.0 * h))
        .collect())
}

/// Every source's effect on every node of the path: its value at each end
/// of its limits, the half difference as a standard uncertainty.
fn effects(plan: &Plan, env: &Env, path: &[NodeId]) -> Result<Vec<Effects>, EvalError> {
    // Each path node's inputs other than the path's own.
    let side_inputs: Vec<Vec<NodeId>> = path
        .iter()
        .enumerate()
        .map(|(k, &n)| {
            let along = k.checked_sub(1).map(|j| path[j]);
            let mut inputs = plan.nodes[n.index()].inputs();
            inputs.retain(|&i| Some(i) != along);
            inputs
        })
        .collect();
    let mut out = Vec::new();
    let mut values = plan.nominal.clone();
    for (s, slot) in plan.slot_ids().zip(&plan.slots) {
        if slot.kind == SourceKind::Exact {
            continue;
        }
        values[s.index()] = slot.nominal + slot.plus;
        let high = plan.raw_signals(&values, env)?;
        values[s.index()] = slot.nominal - slot.minus;
        let low = plan.raw_signals(&values, env)?;
        values[s.index()] = slot.nominal;
        let divisor = if slot.normal { 3.0 } else { 3f64.sqrt() };
        let moved = |n: NodeId| primary(high[n.index()]) - primary(low[n.index()]);
        let u = path.iter().map(|&n| moved(n) / 2.0 / divisor).collect();
        let elsewhere = side_inputs
            .iter()
            .map(|inputs| inputs.iter().any(|&i| moved(i) != 0.0))
            .collect();
        out.push(Effects {
            source: s,
            u,
            elsewhere,
        });
    }
    Ok(out)
}

/// The source with the largest effect on node `k` (a non-finite one first).
fn dominant(effects: &[Effects], k: usize) -> Option<SlotId> {
    let weight = |e: &Effects| {
        let u = e.u[k];
        if u.is_finite() {
            u.abs()
        } else {
            f64::INFINITY
        }
    };
    let mut best: Option<(SlotId, f64)> = None;
    for e in effects {
        if best.is_none_or(|(_, w)| weight(e) > w) {
            best = Some((e.source, weight(e)));
        }
    }
    best.map(|(s, _)| s)
}

/// Where the error on node `k`, referred to the measurand, is less than
/// half the one on the node before, the source whose referred variance
/// falls the most between them among those that also reach node `k` by
/// another input (so it is cancelled, not diluted: one cell of several
/// summed carries its own error into a larger signal).
fn cancelled(plan: &Plan, effects: &[Effects], gains: &[f64], k: usize) -> Option<Cancelled> {
    if k == 0 || gains[k] == 0.0 || gains[k - 1] == 0.0 {
        return None;
    }
    let referred = |e: &Effects, k: usize| (e.u[k] / gains[k]).abs();
    let total = |k: usize| -> f64 { effects.iter().map(|e| referred(e, k).powi(2)).sum() };
    let falls = total(k) < 0.25 * total(k - 1);
    if !falls {
        return None;
    }
    let fall = |e: &Effects| referred(e, k - 1).powi(2) - referred(e, k).powi(2);
    let most = effects
        .iter()
        .filter(|e| e.elsewhere[k] && fall(e).is_finite() && fall(e) > 0.0)
        .max_by(|a, b| fall(a).total_cmp(&fall(b)))?;
    let floor = (plan.range.1 - plan.range.0).abs() * 1e-12;
    Some(Cancelled {
        source: plan.slots[most.source.index()].id.to_string(),
        before: referred(most, k - 1),
        after: beyond_rounding(referred(most, k), floor),
    })
}
