//! Stage-by-stage accumulation: along the signal path, each node's value,
//! its gain (node units per measurand unit) and the standard uncertainty
//! the sources upstream have put on it, referred back to the measurand, so
//! a reader sees where the error grows.

use super::stages::signal_path;
use crate::eval::{Env, EvalError, NodeId, Plan, Signal, SlotId, SourceKind};

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
    pub dominant: Option<String>,
}

fn primary(s: Signal) -> f64 {
    match s {
        Signal::Code { exact, .. } => exact,
        other => other.value_unit().0,
    }
}

pub fn accumulation(plan: &Plan, env: &Env) -> Result<Vec<NodeError>, EvalError> {
    let mut path = signal_path(plan, plan.adc);
    path.reverse();
    let nominal = plan.raw_signals(&plan.nominal, env)?;
    let (lo, hi) = plan.range;
    let h = (hi - lo) * 1e-4;
    let up = plan
        .evaluate_raw(
            &plan.nominal,
            &Env {
                measurand: env.measurand + h,
                ..*env
            },
        )?
        .signals;
    let down = plan
        .evaluate_raw(
            &plan.nominal,
            &Env {
                measurand: env.measurand - h,
                ..*env
            },
        )?
        .signals;
    let mut variance = vec![0.0; path.len()];
    let mut dominant: Vec<Option<(SlotId, f64)>> = vec![None; path.len()];
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
        for (k, &n) in path.iter().enumerate() {
            let u = (primary(high[n.index()]) - primary(low[n.index()])) / 2.0 / divisor;
            variance[k] += u * u;
            let weight = if u.is_finite() {
                u.abs()
            } else {
                f64::INFINITY
            };
            if dominant[k].is_none_or(|(_, w)| weight > w) {
                dominant[k] = Some((s, weight));
            }
        }
    }
    Ok(path
        .iter()
        .zip(variance)
        .zip(dominant)
        .map(|((&n, var), dominant)| {
            let gain = (primary(up[n.index()]) - primary(down[n.index()])) / (2.0 * h);
            let (value, unit) = nominal[n.index()].value_unit();
            let value = match nominal[n.index()] {
                Signal::Code { exact, .. } => exact,
                _ => value,
            };
            NodeError {
                node: n,
                value,
                unit,
                gain,
                error: if gain != 0.0 {
                    var.sqrt() / gain.abs()
                } else {
                    0.0
                },
                dominant: dominant.map(|(s, _)| plan.slots[s.index()].id.clone()),
            }
        })
        .collect())
}
