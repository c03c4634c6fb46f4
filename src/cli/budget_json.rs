//! `catena budget --format json`: one document per chain, in the
//! report's units (differences in the measurand's, or its difference unit).

use std::collections::BTreeMap;

use serde::Serialize;

use crate::analysis::report::Analysis;
use crate::eval::NodeId;
use crate::model::{Chain, RequirementKind};
use crate::units::format::{from_si, trimmed};

#[derive(Serialize)]
struct SourceJson {
    id: String,
    kind: &'static str,
    contribution: f64,
    standard_uncertainty: f64,
    linear: bool,
    /// u_i² / u_c²: the source's share of the GUM variance.
    gum_share: f64,
    /// Its first-order share of the Monte Carlo variance; absent for a
    /// source Monte Carlo does not draw (the conversion's fixed error).
    #[serde(skip_serializing_if = "Option::is_none")]
    monte_carlo_share: Option<f64>,
}

#[derive(Serialize)]
struct GumCheckJson {
    validated: bool,
    d_low: f64,
    d_high: f64,
    tolerance: f64,
}

#[derive(Serialize)]
struct PointJson {
    measurand: f64,
    ambient: f64,
    worst_case: f64,
    gum_standard: f64,
    gum_expanded: f64,
    k: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    monte_carlo_95: Option<[f64; 2]>,
    #[serde(skip_serializing_if = "Option::is_none")]
    monte_carlo_numerical: Option<f64>,
    linearisation: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    gum_expanded_uncalibrated: Option<f64>,
    linear: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    gum_validation: Option<GumCheckJson>,
    sources: Vec<SourceJson>,
}

#[derive(Serialize)]
struct LimitJson {
    stage: String,
    limit: &'static str,
    unit: &'static str,
    allowed: [Option<f64>; 2],
    reach: [f64; 2],
    headroom: f64,
}

#[derive(Serialize)]
struct AlarmJson {
    side: crate::model::Side,
    at: f64,
    code: i64,
    guard_band: f64,
    trip_at: f64,
    trip_code: i64,
    /// The converter's end code the trip code lies beyond, when it does.
    #[serde(skip_serializing_if = "Option::is_none")]
    trip_code_beyond: Option<i64>,
}

#[derive(Serialize)]
struct StageJson {
    stage: String,
    value: f64,
    unit: &'static str,
    gain: f64,
    error: f64,
    /// The source this stage cancels most of, where the error falls here.
    #[serde(skip_serializing_if = "Option::is_none")]
    cancels: Option<CancelJson>,
}

#[derive(Serialize)]
struct CancelJson {
    source: String,
    before: f64,
    after: f64,
}

#[derive(Serialize)]
struct NoiseJson {
    enbw_hz: Option<f64>,
    total_v_rms: f64,
    sigma: f64,
    sigma_averaged: f64,
    average: u32,
    noise_free: f64,
    noise_free_averaged: f64,
    lsb: f64,
    terms: BTreeMap<String, f64>,
    referred: BTreeMap<String, f64>,
}

#[derive(Serialize)]
struct DynamicsJson {
    response_90_s: Option<f64>,
    filter_settling_half_lsb_s: Option<f64>,
    attenuation_db: BTreeMap<String, f64>,
}

#[derive(Serialize)]
struct RequirementJson {
    name: &'static str,
    limit: f64,
    achieved: f64,
    method: String,
    pass: bool,
}

#[derive(Serialize)]
pub(super) struct BudgetJson {
    schema_version: u32,
    file: String,
    chain: String,
    unit: String,
    measurand_unit: String,
    trials: usize,
    seed: u64,
    /// Monte Carlo shares under this cannot be told from none.
    #[serde(skip_serializing_if = "Option::is_none")]
    monte_carlo_share_floor: Option<f64>,
    points: Vec<PointJson>,
    noise: NoiseJson,
    dynamics: DynamicsJson,
    limits: Vec<LimitJson>,
    stages: Vec<StageJson>,
    alarms: Vec<AlarmJson>,
    requirements: Vec<RequirementJson>,
}

fn plan_name(a: &Analysis, node: NodeId) -> String {
    a.names.get(node.index()).cloned().unwrap_or_default()
}

/// One chain's budget as its JSON document, in the report's units.
pub(super) fn json(file: &str, chain: &Chain, a: &Analysis) -> BudgetJson {
    let (unit, f) = chain.difference_unit();
    let m_unit = chain.measurand_unit();
    BudgetJson {
        schema_version: 1,
        file: file.to_string(),
        chain: chain.name.clone(),
        unit,
        measurand_unit: m_unit.clone(),
        trials: a.trials,
        seed: a.seed,
        monte_carlo_share_floor: a.monte_carlo_share_floor(),
        points: (0..a.budget.points.len())
            .map(|i| point(a, i, &m_unit, f))
            .collect(),
        noise: noise(a, f),
        dynamics: dynamics(a),
        limits: limits(a),
        alarms: alarms(a, &m_unit, f),
        stages: stages(a, f),
        requirements: requirements(a, f),
    }
}

/// Budget point `i`: its totals by method and every source.
fn point(a: &Analysis, i: usize, m_unit: &str, f: f64) -> PointJson {
    let p = &a.budget.points[i];
    PointJson {
        measurand: from_si(p.measurand, m_unit),
        ambient: from_si(p.ambient, "degC"),
        worst_case: p.worst_case * f,
        gum_standard: p.gum_standard * f,
        gum_expanded: p.gum_expanded * f,
        k: a.budget.k,
        monte_carlo_95: a
            .monte_carlo
            .as_ref()
            .map(|m| [m[i].low * f, m[i].high * f]),
        monte_carlo_numerical: a.monte_carlo.as_ref().map(|m| m[i].numerical * f),
        linearisation: p.linearisation * f,
        gum_expanded_uncalibrated: a.uncalibrated.as_ref().map(|u| u[i] * f),
        linear: p.linear,
        gum_validation: a.gum_checks.as_ref().map(|g| GumCheckJson {
            validated: g[i].validated,
            d_low: g[i].d_low * f,
            d_high: g[i].d_high * f,
            tolerance: g[i].tolerance * f,
        }),
        sources: p
            .contributions
            .iter()
            .map(|c| SourceJson {
                id: c.id.to_string(),
                kind: c.kind,
                contribution: c.worst * f,
                standard_uncertainty: c.standard * f,
                linear: c.linear,
                gum_share: p.gum_share(c),
                monte_carlo_share: a.monte_carlo_share(i, c.id.as_str()),
            })
            .collect(),
    }
}

fn noise(a: &Analysis, f: f64) -> NoiseJson {
    let n = &a.budget.noise;
    NoiseJson {
        enbw_hz: n.enbw_hz,
        total_v_rms: n.total_v,
        sigma: n.sigma * f,
        sigma_averaged: n.sigma_averaged * f,
        average: n.average,
        noise_free: n.noise_free * f,
        noise_free_averaged: n.noise_free_averaged * f,
        lsb: n.lsb * f,
        terms: n
            .terms
            .iter()
            .map(|t| (t.id.to_string(), t.rms_v))
            .collect(),
        referred: n
            .referred
            .iter()
            .map(|t| (t.id.to_string(), t.rms_v * f))
            .collect(),
    }
}

fn dynamics(a: &Analysis) -> DynamicsJson {
    DynamicsJson {
        response_90_s: a.dynamics.response_90,
        filter_settling_half_lsb_s: a.dynamics.filter_settling_half_lsb,
        attenuation_db: a
            .dynamics
            .mains
            .iter()
            .map(|(hz, x)| (format!("{} Hz", trimmed(*hz, 6)), 20.0 * x.log10()))
            .chain(
                a.dynamics
                    .at_rate
                    .map(|x| ("rate".to_string(), 20.0 * x.log10())),
            )
            .collect(),
    }
}

fn limits(a: &Analysis) -> Vec<LimitJson> {
    a.envelopes
        .iter()
        .map(|e| LimitJson {
            stage: plan_name(a, e.node),
            limit: e.limit.describe(),
            unit: e.unit.symbol(),
            allowed: [e.allowed.0, e.allowed.1].map(|x| x.is_finite().then_some(x)),
            reach: [e.reach.0, e.reach.1],
            headroom: e.headroom(),
        })
        .collect()
}

fn alarms(a: &Analysis, m_unit: &str, f: f64) -> Vec<AlarmJson> {
    a.alarms
        .iter()
        .map(|x| AlarmJson {
            side: x.side,
            at: from_si(x.at, m_unit),
            code: x.code,
            guard_band: x.guard_band * f,
            trip_at: from_si(x.trip_at, m_unit),
            trip_code: x.trip_code,
            trip_code_beyond: x.trip_beyond(),
        })
        .collect()
}

fn stages(a: &Analysis, f: f64) -> Vec<StageJson> {
    a.accumulation
        .iter()
        .map(|n| StageJson {
            stage: plan_name(a, n.node),
            value: n.value,
            unit: n.unit,
            gain: n.gain,
            error: n.error * f,
            cancels: n.cancels.as_ref().map(|x| CancelJson {
                source: x.source.clone(),
                before: x.before * f,
                after: x.after * f,
            }),
        })
        .collect()
}

fn requirements(a: &Analysis, f: f64) -> Vec<RequirementJson> {
    // Accuracy and resolution are differences in the measurand's unit.
    let scale = |kind: RequirementKind| match kind {
        RequirementKind::Accuracy(_) | RequirementKind::Resolution => f,
        RequirementKind::Response | RequirementKind::Rejection => 1.0,
    };
    a.verdicts
        .iter()
        .map(|v| RequirementJson {
            name: v.kind.word(),
            limit: v.limit * scale(v.kind),
            achieved: v.achieved * scale(v.kind),
            method: v.method.word(),
            pass: v.pass,
        })
        .collect()
}
