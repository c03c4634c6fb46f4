//! Alarm and trip limits: the code the firmware compares against, and the
//! guard band the error budget demands so that a high alarm trips before
//! the true value passes its limit (a low alarm, before it falls below).

use super::budget;
use crate::eval::{Env, EvalError, Plan};
use crate::model::Chain;

#[derive(Clone, Debug, PartialEq)]
pub struct AlarmLimit {
    /// `high` or `low`.
    pub side: String,
    /// The limit, SI.
    pub at: f64,
    /// The nominal chain's code at the limit, at the reference temperature.
    pub code: i64,
    /// The GUM expanded uncertainty at the limit, worst over the ambients.
    pub guard_band: f64,
    /// Where to set the trip so the true value never passes the limit
    /// unseen (k = the budget's coverage factor), and its code.
    pub trip_at: f64,
    pub trip_code: i64,
}

pub fn alarm_limits(chain: &Chain, plan: &Plan, k: f64) -> Result<Vec<AlarmLimit>, EvalError> {
    let mut out = Vec::new();
    if chain.alarms.is_empty() {
        return Ok(out);
    }
    let sources = budget::Perturbations::of(plan)?;
    for alarm in &chain.alarms {
        let mut guard: f64 = 0.0;
        for &ambient in &budget::ambients(chain) {
            let env = Env {
                measurand: alarm.at,
                ambient,
                cold_junction: ambient,
            };
            guard = guard.max(budget::gum_expanded_at(plan, &env, &sources, k)?);
        }
        let trip_at = if alarm.side == "high" {
            alarm.at - guard
        } else {
            alarm.at + guard
        };
        let code_at = |m: f64| -> Result<i64, EvalError> {
            let env = Env {
                measurand: m,
                ambient: plan.reference,
                cold_junction: plan.reference,
            };
            Ok(plan.exact_code(&plan.nominal, &env, plan.adc)?.round() as i64)
        };
        out.push(AlarmLimit {
            side: alarm.side.clone(),
            at: alarm.at,
            code: code_at(alarm.at)?,
            guard_band: guard,
            trip_at,
            trip_code: code_at(trip_at)?,
        });
    }
    Ok(out)
}
