//! Alarm and trip limits: the code the firmware compares against, and the
//! guard band the error budget demands so that a high alarm trips before
//! the true value passes its limit (a low alarm, before it falls below).

use super::budget;
use crate::diagnostics::{Code, Finding, Span};
use crate::eval::{Env, EvalError, Plan};
use crate::model::{Chain, Side};
use crate::units::format::{from_si, trimmed};

#[derive(Clone, Debug, PartialEq)]
pub struct AlarmLimit {
    pub side: Side,
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
    /// The codes the conversion can be handed (the converter's, or its
    /// channels' sum or ratio): a trip code beyond them is never read.
    pub rails: (i64, i64),
}

impl AlarmLimit {
    /// The end of the converter's codes the trip code lies beyond, if it
    /// does: a high alarm there never trips, a low one always does.
    pub fn trip_beyond(&self) -> Option<i64> {
        if self.trip_code > self.rails.1 {
            Some(self.rails.1)
        } else if self.trip_code < self.rails.0 {
            Some(self.rails.0)
        } else {
            None
        }
    }
}

pub fn alarm_limits(chain: &Chain, plan: &Plan, k: f64) -> Result<Vec<AlarmLimit>, EvalError> {
    let mut out = Vec::new();
    if chain.alarms.is_empty() {
        return Ok(out);
    }
    let sources = budget::Perturbations::of(plan)?;
    let rails = super::window::code_rails(plan)?;
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
        let trip_at = match alarm.side {
            Side::High => alarm.at - guard,
            Side::Low => alarm.at + guard,
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
            side: alarm.side,
            at: alarm.at,
            code: code_at(alarm.at)?,
            guard_band: guard,
            trip_at,
            trip_code: code_at(trip_at)?,
            rails,
        });
    }
    Ok(out)
}

/// R673: a trip point outside the measurand range, where the chain is
/// neither specified nor checked (a high alarm's guard band taking its
/// trip below the range's bottom, a limit beyond the range's end).
pub fn outside_range(chain: &Chain, limit: &AlarmLimit, span: Span) -> Option<Finding> {
    let measurand = chain.measurand.as_ref()?;
    let (lo, hi) = (measurand.low, measurand.high);
    if (lo..=hi).contains(&limit.trip_at) {
        return None;
    }
    let unit = &measurand.unit;
    let show = |x: f64| format!("{} {unit}", trimmed(from_si(x, unit), 4));
    let (diff_unit, _) = chain.difference_unit();
    let guard = format!(
        "{} {diff_unit}",
        trimmed(from_si(limit.guard_band, &diff_unit), 3)
    );
    let (end, inside) = if limit.trip_at < lo {
        ("below", lo)
    } else {
        ("above", hi)
    };
    // The limit that puts the trip just inside the range.
    let limit_inside = match limit.side {
        Side::High => inside + limit.guard_band,
        Side::Low => inside - limit.guard_band,
    };
    let message = format!(
        "the trip of `alarm {} {}` lies at {}, {end} the measurand range {} .. {}",
        limit.side,
        show(limit.at),
        show(limit.trip_at),
        show(lo),
        show(hi)
    );
    let help = if (lo..=hi).contains(&limit_inside) {
        format!(
            "the guard band is {guard}: widen the measurand range to include {}, or set the limit at {} or {} so its trip stays inside the range",
            show(limit.trip_at),
            show(limit_inside),
            match limit.side {
                Side::High => "above",
                Side::Low => "below",
            }
        )
    } else {
        format!(
            "the guard band is {guard}: widen the measurand range to include {}, or reduce the guard band with a more accurate chain",
            show(limit.trip_at)
        )
    };
    Some(
        Finding::new(Code::R673, &chain.file, message)
            .label(span, format!("trips at {}", show(limit.trip_at)))
            .label(measurand.span, "the range the chain is checked over")
            .help(help),
    )
}
