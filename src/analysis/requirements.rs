//! Requirement verdicts: each `require` line against what the budget,
//! the noise and the dynamics achieve, with the margin and, when it fails,
//! the largest contributors.

use super::budget::Budget;
use super::monte_carlo::Interval;
use crate::diagnostics::Span;
use crate::model::value::{Basis, ParamValue};
use crate::model::{AccuracyMethod, Chain, Requirement, RequirementKind};

#[derive(Clone, Debug, PartialEq)]
pub struct Verdict {
    /// The requirement judged, with the accuracy method that judged it.
    pub kind: RequirementKind,
    pub limit: f64,
    pub achieved: f64,
    /// How `achieved` was found.
    pub method: Judged,
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

/// How a verdict's achieved value was found.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Judged {
    /// An accuracy total by its method.
    Accuracy(AccuracyMethod),
    /// The noise-free resolution after averaging.
    NoiseFree,
    /// One code, where that is coarser than the noise.
    Lsb,
    /// The 0 → 90 % step response.
    Step90,
    /// The attenuation at a frequency, Hz.
    AttenuationAt(f64),
}

impl Judged {
    /// Its name in reports: `gum`, `worst_case`, `monte_carlo`,
    /// `noise_free`, `lsb`, `step_90`, `attenuation_at_<f>_hz`.
    pub fn word(self) -> String {
        match self {
            Judged::Accuracy(method) => method.word().to_string(),
            Judged::NoiseFree => "noise_free".to_string(),
            Judged::Lsb => "lsb".to_string(),
            Judged::Step90 => "step_90".to_string(),
            Judged::AttenuationAt(hz) => {
                format!("attenuation_at_{}_hz", crate::units::format::trimmed(hz, 6))
            }
        }
    }
}

/// What the dynamics analysis found, for the verdicts.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Achieved {
    /// 0 → 90 % step response, s.
    pub response_s: Option<f64>,
}

/// The method the chain's accuracy requirement asks for (GUM when it
/// names none, or has no accuracy requirement).
pub fn accuracy_method(chain: &Chain) -> AccuracyMethod {
    chain
        .requirements
        .iter()
        .find_map(|r| match r.kind {
            RequirementKind::Accuracy(method) => Some(method.unwrap_or_default()),
            _ => None,
        })
        .unwrap_or_default()
}

/// The accuracy verdict: judged at the point where the error takes the
/// largest share of its limit (the same point as the largest error when
/// the limit is fixed).
fn accuracy_verdict(
    chain: &Chain,
    r: &Requirement,
    method: AccuracyMethod,
    limit: f64,
    budget: &Budget,
    mc: Option<&[Interval]>,
) -> Option<Verdict> {
    let error_at = |i: usize| match method {
        AccuracyMethod::WorstCase => budget.points[i].worst_case,
        AccuracyMethod::MonteCarlo => mc
            .map(|m| m[i].low.abs().max(m[i].high.abs()))
            .unwrap_or(budget.points[i].gum_expanded),
        AccuracyMethod::Gum => budget.points[i].gum_expanded,
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
    let top = if method == AccuracyMethod::WorstCase {
        p.contributions
            .iter()
            .map(|c| {
                (
                    c.id.to_string(),
                    c.worst / p.worst_case.max(f64::MIN_POSITIVE),
                )
            })
            .collect::<Vec<_>>()
    } else {
        let total = p.gum_standard * p.gum_standard;
        let mut v: Vec<_> = p
            .contributions
            .iter()
            .map(|c| {
                (
                    c.id.to_string(),
                    c.standard * c.standard / total.max(f64::MIN_POSITIVE),
                )
            })
            .collect();
        v.sort_by(|a, b| b.1.total_cmp(&a.1));
        v
    };
    let numerical = match method {
        AccuracyMethod::MonteCarlo => mc.map(|m| m[worst].numerical),
        AccuracyMethod::WorstCase | AccuracyMethod::Gum => None,
    };
    Some(Verdict {
        kind: r.kind,
        limit,
        achieved: error_at(worst),
        pass: error_at(worst) <= limit,
        method: Judged::Accuracy(method),
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
            RequirementKind::Accuracy(method) => {
                let method = method.unwrap_or_default();
                accuracy_verdict(chain, r, method, limit, budget, mc)
            }
            RequirementKind::Resolution => Some(resolution_verdict(r, limit, budget)),
            RequirementKind::Response => achieved
                .response_s
                .map(|t| plain_verdict(r, limit, t, t <= limit, Judged::Step90)),
            RequirementKind::Rejection => rejection_verdict(r, rejection),
        };
        out.extend(verdict);
    }
    out
}

/// A verdict without a worst point, contributors or numerical width.
fn plain_verdict(
    r: &Requirement,
    limit: f64,
    achieved: f64,
    pass: bool,
    method: Judged,
) -> Verdict {
    Verdict {
        kind: r.kind,
        limit,
        achieved,
        pass,
        method,
        at: None,
        top: Vec::new(),
        numerical: None,
        span: r.span,
    }
}

/// Resolution: the noise-free resolution after averaging, or one code
/// where that is coarser.
fn resolution_verdict(r: &Requirement, limit: f64, budget: &Budget) -> Verdict {
    let lsb = budget.coarsest_code_step();
    let achieved = budget.noise.noise_free_averaged.max(lsb);
    let method = if budget.noise.noise_free_averaged >= lsb {
        Judged::NoiseFree
    } else {
        Judged::Lsb
    };
    plain_verdict(r, limit, achieved, achieved <= limit, method)
}

/// Rejection: the chain's attenuation at the stated frequency, as
/// amplitude ratios.
fn rejection_verdict(r: &Requirement, rejection: &dyn Fn(f64) -> Option<f64>) -> Option<Verdict> {
    let ParamValue::At { value, at, .. } = &r.value else {
        return None;
    };
    let a = rejection(*at)?;
    let method = Judged::AttenuationAt(*at);
    Some(plain_verdict(
        r,
        value.nominal,
        a,
        a >= value.nominal,
        method,
    ))
}
