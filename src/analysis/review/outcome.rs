//! What one chain achieves, in the figures a review compares: requirement
//! verdicts with their margins, each method's worst point, every source's
//! largest part, the headroom to every limit, resolution, response, the
//! converter's code window and the alarm thresholds. Values are in the
//! units a report shows (errors in the measurand's difference unit,
//! positions in its unit as written, ambients in degC).

use serde::Serialize;

use super::super::faults::{self, FaultCodes, FaultReport, Threshold, Verdict};
use super::super::ranges::Limit;
use super::super::report::Analysis;
use crate::diagnostics::Severity;
use crate::eval::{Env, Plan};
use crate::model::typed::StageModel;
use crate::model::{Chain, RequirementKind, Stage};
use crate::physics::filter::Response;
use crate::syntax::ast::StageKind;
use crate::units::format::from_si;

#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct RequirementOutcome {
    /// `accuracy`, `resolution`, `response`, `rejection`.
    pub name: &'static str,
    #[serde(skip)]
    pub kind: RequirementKind,
    pub method: String,
    /// In `unit`: the difference unit, `s`, or `dB` for a rejection.
    pub limit: f64,
    pub achieved: f64,
    /// How far `achieved` stays inside `limit` (negative: beyond it).
    pub margin: f64,
    pub unit: String,
    pub pass: bool,
    /// A Monte Carlo verdict's numerical width, in `unit`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub numerical: Option<f64>,
}

impl RequirementOutcome {
    /// An error in the measurand's unit (not seconds or decibels).
    pub fn is_error(&self) -> bool {
        match self.kind {
            RequirementKind::Accuracy(_) | RequirementKind::Resolution => true,
            RequirementKind::Response | RequirementKind::Rejection => false,
        }
    }

    /// The margin as a share of the limit's magnitude.
    pub fn margin_share(&self) -> f64 {
        self.margin / self.limit.abs().max(f64::MIN_POSITIVE)
    }
}

/// A method's largest error over every budget point and where it lies.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct MethodWorst {
    /// `worst_case`, `gum` (expanded) or `monte_carlo` (the larger end).
    pub method: &'static str,
    pub value: f64,
    pub measurand: f64,
    pub ambient: f64,
    /// Monte Carlo only: how far the interval's ends may be off.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub numerical: Option<f64>,
}

/// One source's largest part over the budget points.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SourceOutcome {
    pub id: String,
    pub kind: &'static str,
    /// Its largest worst-case contribution.
    pub contribution: f64,
    /// Its largest standard uncertainty.
    pub standard_uncertainty: f64,
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct LimitOutcome {
    pub stage: String,
    pub limit: &'static str,
    /// The share of the limit's span left (negative: beyond it).
    pub headroom: f64,
    /// Whether `check` asks the signal to keep a margin from the limit
    /// (a converter's pin may sit on its rail).
    #[serde(skip)]
    pub keeps_margin: bool,
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct AlarmOutcome {
    pub side: crate::model::Side,
    pub at: f64,
    pub trip_at: f64,
    pub trip_code: i64,
    pub guard_band: f64,
}

/// One fault's verdict against the valid code window.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FaultOutcome {
    pub stage: String,
    /// The fault's stable name (`open`, `short`, ...).
    pub fault: &'static str,
    /// The fault in words.
    pub condition: &'static str,
    #[serde(serialize_with = "verdict_name")]
    pub verdict: Verdict,
    /// The codes the converter gives with the fault.
    pub codes: Option<FaultCodes>,
    /// The firmware's test, `code < N` or `code > N`, for a detectable one.
    #[serde(serialize_with = "threshold_words")]
    pub threshold: Option<Threshold>,
    /// How `check` reports it (`error`, `warning`); None when it does not
    /// (a `protects` line turns warnings into errors).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub severity: Option<&'static str>,
}

impl FaultOutcome {
    /// Whether firmware sees the fault, or needs not (it reads within
    /// the healthy chain's tolerances).
    pub fn detectable(&self) -> bool {
        !self.verdict.hidden()
    }
}

fn verdict_name<S: serde::Serializer>(v: &Verdict, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(v.name())
}

fn threshold_words<S: serde::Serializer>(t: &Option<Threshold>, s: S) -> Result<S::Ok, S::Error> {
    match t {
        Some(t) => s.serialize_str(&threshold_text(*t)),
        None => s.serialize_none(),
    }
}

/// A firmware threshold as the checklist writes it.
/// [`threshold_text`] for the code a fault verdict's threshold is on: a
/// summed channel's own code names the channel.
pub fn threshold_text_on(t: Threshold, channel: Option<&str>) -> String {
    match channel {
        Some(ch) => threshold_text(t).replace("code", &format!("{ch} code")),
        None => threshold_text(t),
    }
}

pub fn threshold_text(t: Threshold) -> String {
    match t {
        Threshold::Below(n) => format!("code < {n}"),
        Threshold::Above(n) => format!("code > {n}"),
        Threshold::Outside(a, b) => format!("code < {a} or code > {b}"),
    }
}

/// The valid code window and every fault judged against it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FaultsOutcome {
    /// The healthy chain's codes over every range and tolerance, with
    /// 3 σ of noise.
    pub window: [i64; 2],
    pub rows: Vec<FaultOutcome>,
}

impl FaultsOutcome {
    pub fn of(chain: &Chain, report: &FaultReport) -> FaultsOutcome {
        FaultsOutcome {
            window: [report.window.low, report.window.high],
            rows: report
                .faults
                .iter()
                .map(|f| FaultOutcome {
                    stage: f.stage.clone(),
                    fault: f.fault.kind.name(),
                    condition: f.fault.kind.describe(),
                    verdict: f.verdict,
                    codes: f.codes,
                    threshold: f.threshold,
                    severity: faults::reported_severity(chain, f).map(|s| match s {
                        Severity::Error => "error",
                        Severity::Warning => "warning",
                    }),
                })
                .collect(),
        }
    }

    /// The faults firmware cannot tell from a reading.
    pub fn undetected(&self) -> impl Iterator<Item = &FaultOutcome> {
        self.rows.iter().filter(|f| !f.detectable())
    }
}

/// How a stage's power is known.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum PowerBasis {
    /// The stage or its part states `power`.
    Stated,
    /// An excitation that states none: the most it delivers into its load
    /// over the ranges and tolerances, its nominal current times the
    /// largest voltage across the load (or its nominal voltage times the
    /// largest load current).
    Delivered,
    /// An IC sensor that states none: the high end of its stated supply
    /// range times what it draws (its `supply_current`; a current-output
    /// sensor draws its own output, the most at the range's top).
    Supply,
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct StagePower {
    pub stage: String,
    pub watts: f64,
    pub basis: PowerBasis,
}

/// A chain's unit cost and power: the sums over the stages that state
/// them (or, for power, where the chain determines it), and the stages
/// that do not. A conversion is firmware: it has neither.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BillOutcome {
    /// The sum of the stated costs; None when no stage states one.
    pub cost: Option<f64>,
    /// Stages that state no cost.
    pub unpriced: Vec<String>,
    /// The sum of the stages' powers, W; None when none is known.
    pub power_w: Option<f64>,
    pub power: Vec<StagePower>,
    /// Stages that draw from a supply (excitations, IC sensors,
    /// amplifiers, active filters, converters) whose power is neither
    /// stated nor computable.
    pub unpowered: Vec<String>,
}

impl BillOutcome {
    fn of(chain: &Chain, a: &Analysis) -> BillOutcome {
        let hardware = || chain.stages.iter().filter(|s| s.kind != StageKind::Convert);
        let costs: Vec<f64> = hardware().filter_map(|s| s.bill.cost).collect();
        let power: Vec<StagePower> = hardware()
            .filter_map(|s| stage_power(chain, s, a))
            .collect();
        BillOutcome {
            cost: (!costs.is_empty()).then(|| costs.iter().sum()),
            unpriced: hardware()
                .filter(|s| s.bill.cost.is_none())
                .map(|s| s.name.clone())
                .collect(),
            power_w: (!power.is_empty()).then(|| power.iter().map(|p| p.watts).sum()),
            unpowered: hardware()
                .filter(|s| s.typed.as_ref().is_some_and(draws_supply))
                .filter(|s| !power.iter().any(|p| p.stage == s.name))
                .map(|s| s.name.clone())
                .collect(),
            power,
        }
    }
}

/// Whether a model draws from a supply of its own. A passive stage's
/// dissipation is part of what its excitation delivers; a conversion is
/// firmware.
fn draws_supply(model: &StageModel) -> bool {
    match model {
        StageModel::Excitation(_)
        | StageModel::IcVoltage(_)
        | StageModel::IcCurrent(_)
        | StageModel::Amplifier(_)
        | StageModel::Adc(_) => true,
        // An RC is passive; a Butterworth or Bessel of higher order is
        // built around amplifiers.
        StageModel::Filter(f) => f.response != Response::Rc,
        StageModel::Rtd(_)
        | StageModel::Thermocouple(_)
        | StageModel::Thermistor(_)
        | StageModel::StrainGauge(_)
        | StageModel::Transducer(_)
        | StageModel::Resistor(_)
        | StageModel::Bridge(_)
        | StageModel::Convert(_) => false,
    }
}

/// A stage's stated power, what an excitation delivers into its load
/// where its compliance or current limit gives the load's envelope, or
/// what an IC sensor draws where its supply (and current) are stated.
fn stage_power(chain: &Chain, stage: &Stage, a: &Analysis) -> Option<StagePower> {
    let (watts, basis) = match (stage.bill.power, &stage.typed) {
        (Some(w), _) => (w, PowerBasis::Stated),
        (None, Some(StageModel::Excitation(e))) => {
            let load = a.envelopes.iter().find(|env| {
                a.names.get(env.node.index()) == Some(&stage.name)
                    && matches!(env.limit, Limit::Compliance | Limit::CurrentLimit)
            })?;
            let most = load.reach.0.abs().max(load.reach.1.abs());
            (e.value.nominal.abs() * most, PowerBasis::Delivered)
        }
        (None, Some(StageModel::IcVoltage(ic))) => {
            let (_, most) = ic.supply?;
            (most * ic.supply_current?, PowerBasis::Supply)
        }
        (None, Some(StageModel::IcCurrent(ic))) => {
            let (_, most) = ic.supply?;
            // Proportional to absolute temperature: the most at the top.
            let hottest = chain.measurand.as_ref()?.high;
            (most * ic.slope.nominal * hottest, PowerBasis::Supply)
        }
        (None, _) => return None,
    };
    Some(StagePower {
        stage: stage.name.clone(),
        watts,
        basis,
    })
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Outcome {
    pub chain: String,
    /// Errors' unit.
    pub unit: String,
    pub measurand_unit: String,
    pub requirements: Vec<RequirementOutcome>,
    pub worst: Vec<MethodWorst>,
    pub sources: Vec<SourceOutcome>,
    pub limits: Vec<LimitOutcome>,
    /// Noise-free resolution after averaging, or one code where coarser.
    pub resolution: f64,
    /// 0 → 90 % step response, s.
    pub response_s: Option<f64>,
    /// The nominal chain's codes at the measurand range's ends, at the
    /// reference temperature.
    pub window: Option<[i64; 2]>,
    pub alarms: Vec<AlarmOutcome>,
    /// The faults and their verdicts; None where the fault analysis could
    /// not evaluate the chain.
    pub faults: Option<FaultsOutcome>,
    /// Unit cost and power, where the stages state them.
    pub bill: BillOutcome,
    /// The largest contributor at the worst GUM point and its share of
    /// the variance (0…1).
    pub largest: Option<(String, f64)>,
    pub trials: usize,
    /// Below this, in `unit`, two errors are the same: a contribution is
    /// the difference of two readings, so rounding leaves a few ulps of
    /// the measurand's magnitude on it however small it is.
    pub floor: f64,
}

/// The share of the measurand's magnitude below which an error change is
/// rounding: about 5000 ulps, far below any physical effect.
const FLOOR_SHARE: f64 = 1e-12;

/// What `chain` achieves by analysis `a`; `faults` is its fault verdicts
/// where they could be judged (the check's, kept: they are not judged
/// again here).
pub fn outcome(chain: &Chain, plan: &Plan, a: &Analysis, faults: Option<&FaultReport>) -> Outcome {
    let (unit, f) = chain.difference_unit();
    let m_unit = chain.measurand_unit();
    Outcome {
        chain: chain.name.clone(),
        requirements: a
            .verdicts
            .iter()
            .map(|v| requirement(v, &unit, f))
            .collect(),
        worst: worst(a, &m_unit, f),
        sources: sources(a, f),
        limits: a
            .envelopes
            .iter()
            .map(|e| LimitOutcome {
                stage: a.names.get(e.node.index()).cloned().unwrap_or_default(),
                limit: e.limit.describe(),
                headroom: e.headroom(),
                keeps_margin: e.limit.keeps_margin(),
            })
            .collect(),
        resolution: resolution(a) * f,
        // A response of nothing stated is not one of 0 s.
        response_s: a.dynamics.response_90.filter(|_| a.dynamics.stated()),
        window: window(plan),
        alarms: a
            .alarms
            .iter()
            .map(|x| AlarmOutcome {
                side: x.side,
                at: from_si(x.at, &m_unit),
                trip_at: from_si(x.trip_at, &m_unit),
                trip_code: x.trip_code,
                guard_band: x.guard_band * f,
            })
            .collect(),
        faults: faults.map(|r| FaultsOutcome::of(chain, r)),
        bill: BillOutcome::of(chain, a),
        largest: largest(a),
        trials: a.trials,
        floor: chain
            .measurand
            .as_ref()
            .map_or(0.0, |m| FLOOR_SHARE * m.low.abs().max(m.high.abs()) * f),
        unit,
        measurand_unit: m_unit,
    }
}

fn requirement(v: &super::super::requirements::Verdict, unit: &str, f: f64) -> RequirementOutcome {
    let db = |x: f64| 20.0 * x.log10();
    let (limit, achieved, margin, unit) = match v.kind {
        RequirementKind::Accuracy(_) | RequirementKind::Resolution => (
            v.limit * f,
            v.achieved * f,
            (v.limit - v.achieved) * f,
            unit.to_string(),
        ),
        RequirementKind::Rejection => (
            db(v.limit),
            db(v.achieved),
            db(v.achieved) - db(v.limit),
            "dB".to_string(),
        ),
        RequirementKind::Response => (v.limit, v.achieved, v.limit - v.achieved, "s".to_string()),
    };
    RequirementOutcome {
        name: v.kind.word(),
        kind: v.kind,
        method: v.method.word(),
        limit,
        achieved,
        margin,
        unit,
        pass: v.pass,
        numerical: v.numerical.map(|w| w * f),
    }
}

fn worst(a: &Analysis, m_unit: &str, f: f64) -> Vec<MethodWorst> {
    let points = &a.budget.points;
    let at = |i: usize, method, value: f64, numerical| MethodWorst {
        method,
        value: value * f,
        measurand: from_si(points[i].measurand, m_unit),
        ambient: from_si(points[i].ambient, "degC"),
        numerical,
    };
    let argmax = |value: &dyn Fn(usize) -> f64| {
        (0..points.len()).max_by(|&x, &y| value(x).total_cmp(&value(y)))
    };
    let mut out = Vec::new();
    if let Some(i) = argmax(&|i| points[i].worst_case) {
        out.push(at(i, "worst_case", points[i].worst_case, None));
    }
    if let Some(i) = argmax(&|i| points[i].gum_expanded) {
        out.push(at(i, "gum", points[i].gum_expanded, None));
    }
    if let Some(mc) = &a.monte_carlo {
        let end = |i: usize| mc[i].low.abs().max(mc[i].high.abs());
        if let Some(i) = argmax(&end) {
            out.push(at(i, "monte_carlo", end(i), Some(mc[i].numerical * f)));
        }
    }
    out
}

fn sources(a: &Analysis, f: f64) -> Vec<SourceOutcome> {
    let mut out: Vec<SourceOutcome> = Vec::new();
    for p in &a.budget.points {
        for c in &p.contributions {
            match out.iter_mut().find(|s| s.id == c.id.as_str()) {
                Some(s) => {
                    s.contribution = s.contribution.max(c.worst * f);
                    s.standard_uncertainty = s.standard_uncertainty.max(c.standard * f);
                }
                None => out.push(SourceOutcome {
                    id: c.id.to_string(),
                    kind: c.kind,
                    contribution: c.worst * f,
                    standard_uncertainty: c.standard * f,
                }),
            }
        }
    }
    out
}

/// As the resolution verdict finds it: the averaged noise-free
/// resolution, or one code where that is coarser.
fn resolution(a: &Analysis) -> f64 {
    let lsb = a.budget.coarsest_code_step();
    a.budget.noise.noise_free_averaged.max(lsb)
}

fn largest(a: &Analysis) -> Option<(String, f64)> {
    let p = a
        .budget
        .points
        .iter()
        .max_by(|x, y| x.gum_expanded.total_cmp(&y.gum_expanded))?;
    let total = (p.gum_standard * p.gum_standard).max(f64::MIN_POSITIVE);
    p.contributions
        .iter()
        .max_by(|x, y| x.standard.total_cmp(&y.standard))
        .map(|c| (c.id.to_string(), c.standard * c.standard / total))
}

fn window(plan: &Plan) -> Option<[i64; 2]> {
    let code = |m: f64| {
        let env = Env {
            measurand: m,
            ambient: plan.reference,
            cold_junction: plan.reference,
        };
        plan.exact_code(&plan.nominal, &env, plan.adc)
            .ok()
            .map(|c| c.round() as i64)
    };
    Some([code(plan.range.0)?, code(plan.range.1)?])
}
