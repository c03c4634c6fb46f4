//! Requirement verdicts: each `require` line against what the budget,
//! the noise and the dynamics achieve, with the margin and, when it fails,
//! the largest contributors.

use super::budget::Budget;
use super::monte_carlo::Interval;
use crate::diagnostics::Span;
use crate::model::value::{Basis, ParamValue};
use crate::model::{Chain, Requirement};

#[derive(Clone, Debug, PartialEq)]
pub struct Verdict {
    /// `accuracy`, `resolution`, `response`, `rejection`.
    pub name: &'static str,
    pub limit: f64,
    pub achieved: f64,
    /// How `achieved` was found: `gum`, `worst_case`, `monte_carlo`,
    /// `noise_free`, `step_90`, `attenuation_at_<f>`.
    pub method: String,
    pub pass: bool,
    /// Where it was worst: measurand and ambient, SI.
    pub at: Option<(f64, f64)>,
    /// Largest contributors there with their shares (0…1).
    pub top: Vec<(String, f64)>,
    /// For a Monte Carlo verdict: how far the interval's ends may be off
    /// at the worst point (see [`Interval::numerical`]).
    pub numerical: Option<f64>,
    pub span: Span,
}

/// What the dynamics analysis found, for the verdicts.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Achieved {
    /// 0 → 90 % step response, s.
    pub response_s: Option<f64>,
}

pub fn accuracy_method(chain: &Chain) -> &str {
    chain
        .requirements
        .iter()
        .find(|r| r.kind == "accuracy")
        .and_then(|r| r.method.as_deref())
        .unwrap_or("gum")
}

/// The accuracy verdict: judged at the point where the error takes the
/// largest share of its limit (the same point as the largest error when
/// the limit is fixed).
fn accuracy_verdict(
    chain: &Chain,
    r: &Requirement,
    limit: f64,
    budget: &Budget,
    mc: Option<&[Interval]>,
) -> Option<Verdict> {
    let method = r.method.clone().unwrap_or_else(|| "gum".into());
    let error_at = |i: usize| match method.as_str() {
        "worst_case" => budget.points[i].worst_case,
        "monte_carlo" => mc
            .map(|m| m[i].low.abs().max(m[i].high.abs()))
            .unwrap_or(budget.points[i].gum_expanded),
        _ => budget.points[i].gum_expanded,
    };
    // The limit at each point: fixed, or a share of the reading.
    let limit_at = |i: usize| match &r.value {
        ParamValue::Limit(t) if t.basis == Basis::Reading => {
            let zero = chain.measurand.as_ref().map_or(0.0, |m| m.zero());
            limit * (budget.points[i].measurand - zero).abs()
        }
        _ => limit,
    };
    // Worst where the error takes the largest share of its limit.
    let share = |i: usize| match error_at(i) / limit_at(i) {
        s if s.is_nan() => 0.0,
        s => s,
    };
    let worst = (0..budget.points.len()).max_by(|&a, &b| share(a).total_cmp(&share(b)))?;
    let limit = limit_at(worst);
    let p = &budget.points[worst];
    let top = if method == "worst_case" {
        p.contributions
            .iter()
            .map(|c| (c.id.clone(), c.worst / p.worst_case.max(f64::MIN_POSITIVE)))
            .collect::<Vec<_>>()
    } else {
        let total = p.gum_standard * p.gum_standard;
        let mut v: Vec<_> = p
            .contributions
            .iter()
            .map(|c| {
                (
                    c.id.clone(),
                    c.standard * c.standard / total.max(f64::MIN_POSITIVE),
                )
            })
            .collect();
        v.sort_by(|a, b| b.1.total_cmp(&a.1));
        v
    };
    let numerical = match method.as_str() {
        "monte_carlo" => mc.map(|m| m[worst].numerical),
        _ => None,
    };
    Some(Verdict {
        name: "accuracy",
        limit,
        achieved: error_at(worst),
        pass: error_at(worst) <= limit,
        method,
        at: Some((p.measurand, p.ambient)),
        top: top.into_iter().take(3).collect(),
        numerical,
        span: r.span,
    })
}

/// Verdicts for every requirement the analyses can judge. `mc` holds the
/// Monte Carlo interval per budget point when it was run.
pub fn verdicts(
    chain: &Chain,
    budget: &Budget,
    mc: Option<&[Interval]>,
    achieved: &Achieved,
    rejection: &dyn Fn(f64) -> Option<f64>,
) -> Vec<Verdict> {
    let mut out = Vec::new();
    for r in &chain.requirements {
        let limit = match &r.value {
            ParamValue::Limit(t) => t.plus.max(t.minus),
            ParamValue::Measure(m) => m.nominal,
            ParamValue::At { value, .. } => value.nominal,
            _ => continue,
        };
        let verdict = match r.kind {
            "accuracy" => match accuracy_verdict(chain, r, limit, budget, mc) {
                Some(v) => v,
                None => continue,
            },
            "resolution" => {
                let lsb = budget
                    .points
                    .iter()
                    .map(|p| p.code_step())
                    .fold(0.0, f64::max);
                let achieved = budget.noise.noise_free_averaged.max(lsb);
                let method = if budget.noise.noise_free_averaged >= lsb {
                    "noise_free"
                } else {
                    "lsb"
                };
                Verdict {
                    name: "resolution",
                    limit,
                    achieved,
                    pass: achieved <= limit,
                    method: method.into(),
                    at: None,
                    top: Vec::new(),
                    numerical: None,
                    span: r.span,
                }
            }
            "response" => {
                let Some(t) = achieved.response_s else {
                    continue;
                };
                Verdict {
                    name: "response",
                    limit,
                    achieved: t,
                    pass: t <= limit,
                    method: "step_90".into(),
                    at: None,
                    top: Vec::new(),
                    numerical: None,
                    span: r.span,
                }
            }
            "rejection" => {
                let ParamValue::At { value, at, .. } = &r.value else {
                    continue;
                };
                // Required and achieved attenuation, as amplitude ratios.
                let Some(a) = rejection(*at) else { continue };
                Verdict {
                    name: "rejection",
                    limit: value.nominal,
                    achieved: a,
                    pass: a >= value.nominal,
                    method: format!(
                        "attenuation_at_{}_hz",
                        crate::units::format::trimmed(*at, 6)
                    ),
                    at: None,
                    top: Vec::new(),
                    numerical: None,
                    span: r.span,
                }
            }
            _ => continue,
        };
        out.push(verdict);
    }
    out
}
