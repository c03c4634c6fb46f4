//! The report model of one chain, built from its analyses.

use super::model::{
    AlarmRow, BudgetSection, CalibrationRow, CalibrationSection, CancelRow, ChainReport,
    ChainSummary, Checklist, Contributor, Diagram, DiagramEdge, DiagramNode, DynamicsSection,
    HeadroomPoint, HiddenFault, LimitFlag, LimitRow, MaskedTrip, MaskingFault, MethodTotal,
    NoiseSection, NoiseTermRow, PathRow, PointRow, RequirementRow, StageHeadroom, StageRow,
    SummaryRow, Verdict,
};
use crate::analysis::budget::{ambients, measurand_points};
use crate::analysis::checklist::{FaultRow, DESIGN_AID, PROTECTS};
use crate::analysis::dynamics::Dynamics;
use crate::analysis::faults::FaultReport;
use crate::analysis::ranges::Envelope;
use crate::analysis::report::Analysis;
use crate::analysis::requirements::Verdict as RequirementVerdict;
use crate::analysis::review::{outcome, Outcome};
use crate::analysis::step::{Averaging, StepModel};
use crate::eval::{node, Calibration, Env, Node, Plan, Signal};
use crate::model::requirement::RequirementKind;
use crate::model::typed::StageModel;
use crate::model::Chain;
use crate::units::format::{from_si, to_si};

/// Samples of the step and frequency responses.
const STEP_SAMPLES: usize = 161;
const FREQUENCY_SAMPLES: usize = 321;
/// Contributors listed at the worst point.
const CONTRIBUTORS: usize = 12;

/// What the builder needs besides the analyses.
#[derive(Clone, Copy, Debug)]
pub struct BuildOptions {
    /// Budget points across the measurand range.
    pub points: usize,
    /// Headroom below this share of a limit's span is flagged.
    pub margin: f64,
}

/// Units a chain's report is written in.
struct Units {
    /// SI difference to the report's difference unit.
    f: f64,
    diff: String,
    measurand: String,
}

impl Units {
    /// SI measurand units in one written unit, so a gain per SI unit
    /// reads per the unit the spec writes (per bar, not per pascal).
    fn per_written(&self) -> f64 {
        to_si(1.0, &self.measurand) - to_si(0.0, &self.measurand)
    }

    fn of(chain: &Chain) -> Units {
        let (diff, f) = chain.difference_unit();
        let measurand = chain
            .measurand
            .as_ref()
            .map(|m| m.unit.clone())
            .unwrap_or_default();
        Units { f, diff, measurand }
    }

    fn position(&self, si: f64) -> f64 {
        from_si(si, &self.measurand)
    }
}

/// The report of a chain that could be analysed, with its checklist and
/// fault verdicts when its faults could be evaluated.
pub fn chain_report(
    chain: &Chain,
    plan: &Plan,
    a: &Analysis,
    checklist: Option<Checklist>,
    faults: Option<&FaultReport>,
    options: &BuildOptions,
) -> ChainReport {
    let units = Units::of(chain);
    let limits = limit_rows(chain, a);
    let outcome = outcome(chain, plan, a, faults);
    let mut verdict = verdict(&outcome, a, &limits, options.margin, &units);
    if let Some(list) = &checklist {
        verdict.faults = hidden_faults(list);
        verdict.masked_trips = masked_trips(list);
        verdict.pass &= verdict.masked_trips.is_empty();
    }
    ChainReport {
        name: chain.name.clone(),
        title: chain.title.clone(),
        unit: units.diff.clone(),
        measurand_unit: units.measurand.clone(),
        error: None,
        cautions: cautions(chain, &verdict),
        verdict,
        summary: summary(chain, plan, a, &units),
        diagram: diagram(chain, plan),
        stages: stage_rows(chain, plan, a, options.points, &units),
        budget: budget(chain, &outcome, a, &units),
        noise: noise(a, &units),
        dynamics: dynamics(&a.verdicts, &a.dynamics),
        calibration: calibration(plan, a, &units),
        faults: checklist,
        limits,
        alarms: a
            .alarms
            .iter()
            .map(|x| AlarmRow {
                side: x.side,
                at: units.position(x.at),
                code: x.code,
                guard_band: x.guard_band * units.f,
                trip_at: units.position(x.trip_at),
                trip_code: x.trip_code,
                trip_code_beyond: x.trip_beyond(),
            })
            .collect(),
    }
}

/// The report of a chain that could not be analysed: its summary and
/// diagram, and why.
pub fn failed_report(chain: &Chain, why: String) -> ChainReport {
    let units = Units::of(chain);
    let verdict = Verdict::default();
    ChainReport {
        name: chain.name.clone(),
        title: chain.title.clone(),
        unit: units.diff.clone(),
        measurand_unit: units.measurand.clone(),
        error: Some(why),
        cautions: cautions(chain, &verdict),
        verdict,
        summary: ChainSummary {
            stages: chain.stages.len(),
            ..summary_head(chain, &units)
        },
        diagram: diagram_of(chain, &|_| "signal".to_string()),
        stages: Vec::new(),
        budget: BudgetSection::default(),
        noise: NoiseSection::default(),
        dynamics: DynamicsSection::default(),
        calibration: None,
        faults: None,
        limits: Vec::new(),
        alarms: Vec::new(),
    }
}

/// The summary table's row of a chain.
pub fn summary_row(c: &ChainReport) -> SummaryRow {
    SummaryRow {
        chain: c.name.clone(),
        pass: c.error.is_none() && c.verdict.pass,
        requirements_met: c.verdict.requirements.iter().filter(|r| r.pass).count(),
        requirements: c.verdict.requirements.len(),
        limits_flagged: c.verdict.limits.len(),
        hidden_faults: c.verdict.faults.len(),
        gum_expanded: c
            .budget
            .totals
            .iter()
            .find(|t| t.method == "gum")
            .map_or(0.0, |t| t.value),
        unit: c.unit.clone(),
        error: c.error.clone(),
    }
}

fn verdict(o: &Outcome, a: &Analysis, limits: &[LimitRow], margin: f64, units: &Units) -> Verdict {
    let requirements: Vec<RequirementRow> = o
        .requirements
        .iter()
        .zip(&a.verdicts)
        .map(|(r, v)| RequirementRow {
            name: r.name.to_string(),
            method: r.method.clone(),
            limit: r.limit,
            achieved: r.achieved,
            margin: r.margin,
            unit: r.unit.clone(),
            pass: r.pass,
            at: v.at.map(|(m, t)| [units.position(m), from_si(t, "degC")]),
        })
        .collect();
    // The rows are the envelopes', in order; each keeps the margin its
    // kind of limit needs, as `check` asks it.
    let flagged: Vec<LimitFlag> = limits
        .iter()
        .zip(&a.envelopes)
        .filter(|(l, e)| l.headroom < e.limit.margin_needed(margin))
        .map(|(l, _)| LimitFlag {
            stage: l.stage.clone(),
            limit: l.limit.clone(),
            headroom: l.headroom,
            beyond: l.headroom < 0.0,
        })
        .collect();
    Verdict {
        pass: requirements.iter().all(|r| r.pass) && flagged.iter().all(|l| !l.beyond),
        requirements,
        limits: flagged,
        faults: Vec::new(),
        masked_trips: Vec::new(),
    }
}

/// The checklist's alarms that a fault firmware cannot see can mask, each
/// with its masking faults in words.
fn masked_trips(list: &Checklist) -> Vec<MaskedTrip> {
    let in_words = |f: &FaultRow| MaskingFault {
        stage: f.stage.clone(),
        fault: f.fault.to_string(),
        condition: f.condition.to_string(),
    };
    list.alarms
        .iter()
        .filter(|a| !a.masking.is_empty())
        .map(|a| MaskedTrip {
            side: a.side.to_string(),
            at: a.at,
            measurand_unit: a.measurand_unit.clone(),
            masked_by: a
                .masking
                .iter()
                .filter_map(|&i| list.faults.get(i))
                .map(in_words)
                .collect(),
        })
        .collect()
}

/// The checklist's faults firmware cannot tell from a reading.
fn hidden_faults(list: &Checklist) -> Vec<HiddenFault> {
    list.faults
        .iter()
        .filter(|f| f.hidden())
        .map(|f| HiddenFault {
            stage: f.stage.clone(),
            fault: f.fault.to_string(),
            condition: f.condition.to_string(),
            verdict: f.verdict.to_string(),
        })
        .collect()
}

fn summary_head(chain: &Chain, units: &Units) -> ChainSummary {
    let (quantity, range) = chain.measurand.as_ref().map_or_else(
        || (String::new(), [0.0, 0.0]),
        |m| {
            (
                m.quantity.clone(),
                [units.position(m.low), units.position(m.high)],
            )
        },
    );
    ChainSummary {
        quantity,
        range,
        ambient: [
            from_si(chain.ambient.0, "degC"),
            from_si(chain.ambient.1, "degC"),
        ],
        reference: from_si(chain.reference, "degC"),
        stages: chain.stages.len(),
        signal_path: Vec::new(),
    }
}

fn summary(chain: &Chain, plan: &Plan, a: &Analysis, units: &Units) -> ChainSummary {
    ChainSummary {
        signal_path: signal_path(plan, a),
        ..summary_head(chain, units)
    }
}

/// Stage names along the signal path, from the sensor to the reading.
fn signal_path(plan: &Plan, a: &Analysis) -> Vec<String> {
    let mut path: Vec<String> = a
        .accumulation
        .iter()
        .filter_map(|n| plan.names.get(n.node.index()).cloned())
        .collect();
    if let Some(reading) = plan.names.get(plan.reading.index()) {
        if !path.contains(reading) {
            path.push(reading.clone());
        }
    }
    path
}

fn mid_env(plan: &Plan) -> Env {
    Env {
        measurand: (plan.range.0 + plan.range.1) / 2.0,
        ambient: plan.reference,
        cold_junction: plan.reference,
    }
}

fn signal_noun(s: Signal) -> &'static str {
    match s {
        Signal::None => "none",
        Signal::Current(_) => "current",
        Signal::Source(_) => "excitation voltage",
        Signal::Element(_) => "resistance",
        Signal::Voltage { .. } => "voltage",
        Signal::Code { .. } => "code",
        Signal::Reading(_) => "reading",
    }
}

fn diagram(chain: &Chain, plan: &Plan) -> Diagram {
    let signals = plan.raw_signals(&plan.nominal, &mid_env(plan)).ok();
    diagram_of(chain, &|name| {
        match (plan.node_named(name), &signals) {
            // A conversion's output exists only once the plan reads it.
            (Some(n), _) if matches!(plan.nodes[n.index()], Node::Convert(_)) => {
                "reading".to_string()
            }
            (Some(n), Some(s)) => signal_noun(s[n.index()]).to_string(),
            _ => "signal".to_string(),
        }
    })
}

fn diagram_of(chain: &Chain, signal_of: &dyn Fn(&str) -> String) -> Diagram {
    let n = chain.stages.len();
    let mut layer = vec![0usize; n];
    // Longest path by relaxation; n rounds bound it even on a loop.
    for _ in 0..n {
        let mut moved = false;
        for c in &chain.connections {
            if c.from < n && c.to < n && layer[c.to] < layer[c.from] + 1 && layer[c.from] < n {
                layer[c.to] = layer[c.from] + 1;
                moved = true;
            }
        }
        if !moved {
            break;
        }
    }
    Diagram {
        nodes: chain
            .stages
            .iter()
            .zip(&layer)
            .map(|(s, &l)| DiagramNode {
                name: s.name.clone(),
                kind: s.kind.keyword().to_string(),
                model: s.model.map(str::to_string),
                layer: l,
            })
            .collect(),
        edges: chain
            .connections
            .iter()
            .filter(|c| c.from < n && c.to < n)
            .map(|c| DiagramEdge {
                from: chain.stages[c.from].name.clone(),
                to: chain.stages[c.to].name.clone(),
                port: c.to_port.name().to_string(),
                signal: signal_of(&chain.stages[c.from].name),
            })
            .chain(combined(chain, signal_of))
            .collect(),
    }
}

/// The channels a conversion combines (`sum`, `ratio`), as edges into it
/// named by the setting: no connection states them, yet they feed it.
fn combined<'a>(
    chain: &'a Chain,
    signal_of: &'a dyn Fn(&str) -> String,
) -> impl Iterator<Item = DiagramEdge> + 'a {
    chain.stages.iter().flat_map(move |stage| {
        let combine = if let Some(StageModel::Convert(convert)) = &stage.typed {
            convert.combine.as_ref()
        } else {
            None
        };
        combine.into_iter().flat_map(move |c| {
            c.channels
                .iter()
                .filter(|name| chain.stages.iter().any(|s| &s.name == *name))
                .map(move |name| DiagramEdge {
                    from: name.clone(),
                    to: stage.name.clone(),
                    port: c.op.word().to_string(),
                    signal: signal_of(name),
                })
        })
    })
}

/// Every envelope with its reach per measurand point, as the envelope
/// analysis gathered it.
fn limit_rows(chain: &Chain, a: &Analysis) -> Vec<LimitRow> {
    let units = Units::of(chain);
    a.envelopes
        .iter()
        .map(|e| LimitRow {
            stage: a.names.get(e.node.index()).cloned().unwrap_or_default(),
            limit: e.limit.describe().to_string(),
            unit: e.unit.symbol().to_string(),
            allowed: [e.allowed.0, e.allowed.1].map(|x| x.is_finite().then_some(x)),
            reach: [e.reach.0, e.reach.1],
            headroom: e.headroom(),
            profile: e
                .by_measurand
                .iter()
                .map(|p| HeadroomPoint {
                    measurand: units.position(p.measurand),
                    low: normalised(e, p.reach.0),
                    high: normalised(e, p.reach.1),
                })
                .collect(),
        })
        .collect()
}

/// A signal as a position in its allowed interval (0 at the lower end, 1
/// at the upper; a one-sided limit puts its end at 1 or 0 and spans its
/// magnitude).
fn normalised(e: &Envelope, x: f64) -> f64 {
    let (lo, hi) = e.allowed;
    let span = e.span().max(f64::MIN_POSITIVE);
    if lo.is_finite() {
        (x - lo) / span
    } else {
        1.0 - (hi - x) / span
    }
}

fn stage_rows(
    chain: &Chain,
    plan: &Plan,
    a: &Analysis,
    points: usize,
    units: &Units,
) -> Vec<StageRow> {
    let ranges = signal_ranges(chain, plan, points);
    let per_written = units.per_written();
    chain
        .stages
        .iter()
        .map(|s| {
            let node = plan.node_named(&s.name);
            StageRow {
                stage: s.name.clone(),
                kind: s.kind.keyword().to_string(),
                parameters: s
                    .params
                    .iter()
                    .filter_map(|p| p.file.text().get(p.span.start..p.span.end))
                    .map(|t| {
                        t.split('#')
                            .next()
                            .unwrap_or_default()
                            .split_whitespace()
                            .collect::<Vec<_>>()
                            .join(" ")
                    })
                    .collect(),
                signal: node
                    .and_then(|n| ranges.get(n.index()).copied().flatten())
                    .map(|r| r.0),
                signal_unit: node
                    .and_then(|n| ranges.get(n.index()).copied().flatten())
                    .map_or("", |r| r.1)
                    .to_string(),
                gain: node.and_then(|n| {
                    a.accumulation
                        .iter()
                        .find(|x| x.node == n)
                        .map(|x| x.gain * per_written)
                }),
                headroom: a
                    .envelopes
                    .iter()
                    .filter(|e| Some(e.node) == node)
                    .map(|e| StageHeadroom {
                        limit: e.limit.describe().to_string(),
                        headroom: e.headroom(),
                    })
                    .collect(),
            }
        })
        .collect()
}

type SignalRange = Option<([f64; 2], &'static str)>;

/// Each node's nominal output over the measurand points at every ambient.
fn signal_ranges(chain: &Chain, plan: &Plan, points: usize) -> Vec<SignalRange> {
    let mut out: Vec<SignalRange> = vec![None; plan.nodes.len()];
    for ambient in ambients(chain) {
        for m in measurand_points(plan, points) {
            let env = Env {
                measurand: m,
                ambient,
                cold_junction: ambient,
            };
            let Ok(signals) = plan.raw_signals(&plan.nominal, &env) else {
                continue;
            };
            for (n, slot) in out.iter_mut().enumerate() {
                let (v, unit) = match signals[n] {
                    Signal::Code { exact, .. } => (exact, "code"),
                    Signal::None => continue,
                    s => s.value_unit(),
                };
                let r = slot.get_or_insert(([v, v], unit));
                r.0 = [r.0[0].min(v), r.0[1].max(v)];
            }
        }
    }
    out
}

fn budget(chain: &Chain, o: &Outcome, a: &Analysis, units: &Units) -> BudgetSection {
    let f = units.f;
    let points = &a.budget.points;
    let worst = (0..points.len())
        .max_by(|&x, &y| points[x].gum_expanded.total_cmp(&points[y].gum_expanded));
    let contributors = worst.map(|i| contributors(a, i, f)).unwrap_or_default();
    BudgetSection {
        totals: o
            .worst
            .iter()
            .map(|w| MethodTotal {
                method: w.method.to_string(),
                value: w.value,
                measurand: w.measurand,
                ambient: w.ambient,
            })
            .collect(),
        contributors,
        monte_carlo_share_floor: a.monte_carlo_share_floor(),
        worst_at: worst.map_or([0.0, 0.0], |i| {
            [
                units.position(points[i].measurand),
                from_si(points[i].ambient, "degC"),
            ]
        }),
        points: points
            .iter()
            .enumerate()
            .map(|(i, p)| PointRow {
                measurand: units.position(p.measurand),
                ambient: from_si(p.ambient, "degC"),
                worst_case: p.worst_case * f,
                gum_expanded: p.gum_expanded * f,
                monte_carlo_95: a
                    .monte_carlo
                    .as_ref()
                    .map(|m| [m[i].low * f, m[i].high * f]),
                gum_validated: a.gum_checks.as_ref().map(|g| g[i].validated),
                gum_expanded_uncalibrated: a.uncalibrated.as_ref().map(|u| u[i] * f),
            })
            .collect(),
        path: a
            .accumulation
            .iter()
            .map(|n| PathRow {
                stage: a.names.get(n.node.index()).cloned().unwrap_or_default(),
                value: n.value,
                signal_unit: n.unit.to_string(),
                gain: n.gain * units.per_written(),
                error: n.error * f,
                dominant: n.dominant.as_ref().map(ToString::to_string),
                cancels: n.cancels.as_ref().map(|x| CancelRow {
                    source: x.source.clone(),
                    before: x.before * f,
                    after: x.after * f,
                }),
            })
            .collect(),
        requirement: a
            .verdicts
            .iter()
            .find(|v| matches!(v.kind, RequirementKind::Accuracy(_)))
            .map(|v| v.limit * f)
            .filter(|_| {
                chain
                    .requirements
                    .iter()
                    .any(|r| matches!(r.kind, RequirementKind::Accuracy(_)))
            }),
    }
}

/// The sources at budget point `i`, largest first (the id breaks ties so
/// the order is stable), at most [`CONTRIBUTORS`].
fn contributors(a: &Analysis, i: usize, f: f64) -> Vec<Contributor> {
    let p = &a.budget.points[i];
    let mut out: Vec<Contributor> = p
        .contributions
        .iter()
        .map(|c| Contributor {
            id: c.id.to_string(),
            kind: c.kind.to_string(),
            contribution: c.worst * f,
            standard_uncertainty: c.standard * f,
            gum_share: p.gum_share(c),
            monte_carlo_share: a.monte_carlo_share(i, c.id.as_str()),
        })
        .collect();
    out.sort_by(|x, y| {
        y.standard_uncertainty
            .total_cmp(&x.standard_uncertainty)
            .then_with(|| x.id.cmp(&y.id))
    });
    out.truncate(CONTRIBUTORS);
    out
}

fn noise(a: &Analysis, units: &Units) -> NoiseSection {
    let n = &a.budget.noise;
    let f = units.f;
    // The converter-input terms reach the measurand through one slope:
    // their part of sigma over their total.
    let direct: f64 = n.referred.iter().map(|t| t.rms_v * t.rms_v).sum();
    let at_converter = (n.sigma * n.sigma - direct).max(0.0).sqrt();
    let per_volt = if n.total_v > 0.0 {
        at_converter / n.total_v
    } else {
        0.0
    };
    let mut terms: Vec<NoiseTermRow> = n
        .terms
        .iter()
        .map(|t| NoiseTermRow {
            id: t.id.to_string(),
            v_rms: Some(t.rms_v),
            referred: t.rms_v * per_volt * f,
        })
        .chain(n.referred.iter().map(|t| NoiseTermRow {
            id: t.id.to_string(),
            v_rms: None,
            referred: t.rms_v * f,
        }))
        .collect();
    terms.sort_by(|x, y| {
        y.referred
            .total_cmp(&x.referred)
            .then_with(|| x.id.cmp(&y.id))
    });
    NoiseSection {
        enbw_hz: n.enbw_hz,
        total_v_rms: n.total_v,
        sigma: n.sigma * f,
        sigma_averaged: n.sigma_averaged * f,
        average: n.average,
        noise_free: n.noise_free * f,
        noise_free_averaged: n.noise_free_averaged * f,
        lsb: n.lsb * f,
        terms,
    }
}

fn dynamics(verdicts: &[RequirementVerdict], d: &Dynamics) -> DynamicsSection {
    let requirement_s = verdicts
        .iter()
        .find(|v| v.kind == RequirementKind::Response)
        .map(|v| v.limit);
    let averaging = d.rate_hz.map(|rate| Averaging {
        conversion_s: 1.0 / d.notch_hz.unwrap_or(rate),
        spacing_s: 1.0 / rate,
        count: d.average,
    });
    let model = StepModel::new(d.sensor_time_constant, d.filter.as_ref(), averaging);
    let horizon = d
        .response_90
        .unwrap_or(1.0)
        .max(requirement_s.unwrap_or(0.0))
        * 1.6;
    let step = (0..STEP_SAMPLES)
        .map(|i| {
            let t = horizon * i as f64 / (STEP_SAMPLES - 1) as f64;
            [t, model.response(t)]
        })
        .collect();
    let top = d.rate_hz.unwrap_or(100.0).max(100.0) * 10.0;
    let (lo, hi) = ((0.01f64).log10(), top.log10());
    let frequency = (0..FREQUENCY_SAMPLES)
        .map(|i| {
            let hz = 10f64.powf(lo + (hi - lo) * i as f64 / (FREQUENCY_SAMPLES - 1) as f64);
            [hz, 20.0 * d.electrical_magnitude(hz).max(1e-12).log10()]
        })
        .collect();
    DynamicsSection {
        sensor_time_constant_s: d.sensor_time_constant,
        response_90_s: d.response_90,
        requirement_s,
        rate_hz: d.rate_hz,
        notch_hz: d.notch_hz,
        average: d.average,
        mains: d
            .mains
            .iter()
            .map(|(hz, x)| [*hz, 20.0 * x.log10()])
            .collect(),
        at_rate_db: d.at_rate.map(|x| 20.0 * x.log10()),
        step,
        frequency,
    }
}

fn calibration(plan: &Plan, a: &Analysis, units: &Units) -> Option<CalibrationSection> {
    let Node::Convert(node::Convert { conversion, .. }) = &plan.nodes[plan.reading.index()] else {
        return None;
    };
    let (kind, at) = match conversion.calibration {
        Calibration::None => return None,
        Calibration::Offset { at, .. } => ("offset", vec![units.position(at)]),
        Calibration::TwoPoint { at, .. } => (
            "two_point",
            vec![units.position(at.0), units.position(at.1)],
        ),
    };
    let before = a.uncalibrated.as_ref()?;
    let mut by_ambient: Vec<CalibrationRow> = Vec::new();
    for (p, b) in a.budget.points.iter().zip(before) {
        let ambient = from_si(p.ambient, "degC");
        let row = match by_ambient.iter_mut().find(|r| r.ambient == ambient) {
            Some(r) => r,
            None => {
                by_ambient.push(CalibrationRow {
                    ambient,
                    before: 0.0,
                    after: 0.0,
                });
                by_ambient.last_mut()?
            }
        };
        row.before = row.before.max(b * units.f);
        row.after = row.after.max(p.gum_expanded * units.f);
    }
    Some(CalibrationSection {
        kind: kind.to_string(),
        at,
        by_ambient,
    })
}

/// A design aid's usual cautions (their text has one home, beside the
/// checklist); stronger where the chain raises alarms or trips, which
/// usually protect people or property.
fn cautions(chain: &Chain, verdict: &Verdict) -> Vec<String> {
    let mut out = vec![DESIGN_AID.to_string()];
    if chain.is_protective() {
        out.push(PROTECTS.to_string());
    }
    if verdict.limits.iter().any(|l| l.beyond) {
        out.push(
            "A signal leaves its limit somewhere in the stated ranges: readings there are not trustworthy until the design changes.".to_string(),
        );
    }
    out
}
