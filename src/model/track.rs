//! Tracking groups: `track name: a, b ratio ± 0.02 % tracking 2 ppm/K`
//! states that the named stages' values come from one network or lot, so
//! their ratio holds far tighter than each absolute tolerance, and their
//! drifts follow each other to within the tracking drift.

use std::sync::Arc;

use super::chain::{Stage, TrackGroup, TrackMember};
use super::schema;
use super::typed::{BridgeForm, Source, StageModel};
use super::value::Measure;
use crate::diagnostics::did_you_mean_or;
use crate::diagnostics::{Code, Finding, Findings, SourceFile, Span};
use crate::syntax::ast::{Ident, ToleranceForm, TrackDecl, Value};
use crate::units::{parse_unit, Dim};

/// What a member's tracked value is, so members of different kinds are
/// told apart.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Tracked {
    Resistance,
    Current,
    Voltage,
    /// A strain gauge: its resistance, and its thermal output as its
    /// drift.
    Gauge,
}

impl Tracked {
    fn name(self) -> &'static str {
        match self {
            Tracked::Resistance => "a resistance",
            Tracked::Current => "a current",
            Tracked::Voltage => "a voltage",
            Tracked::Gauge => "a strain gauge",
        }
    }
}

/// The parameter a stage's tracking acts on: a fixed resistor's value, a
/// bridge's completion resistors, an excitation's output; with the name
/// of the line that states it.
pub fn tracked_value(stage: &Stage) -> Option<(Tracked, &'static str, &Measure)> {
    let model = stage.typed.as_ref()?;
    let what = match model {
        StageModel::Resistor(_) | StageModel::Bridge(_) => Tracked::Resistance,
        StageModel::Excitation(e) => match e.source {
            Source::Current { .. } => Tracked::Current,
            Source::Voltage { .. } => Tracked::Voltage,
        },
        StageModel::StrainGauge(_) => Tracked::Gauge,
        StageModel::Rtd(_)
        | StageModel::Thermocouple(_)
        | StageModel::Thermistor(_)
        | StageModel::IcVoltage(_)
        | StageModel::IcCurrent(_)
        | StageModel::Transducer(_)
        | StageModel::Amplifier(_)
        | StageModel::Filter(_)
        | StageModel::Adc(_)
        | StageModel::Convert(_) => return None,
    };
    let (name, m) = schema::tracked_line(model)?;
    (!m.max).then_some((what, name, m))
}

/// How many parts a member's tracked value stands for: a quarter
/// bridge's three completion resistors, a half bridge's two.
fn parts_of(stage: &Stage) -> usize {
    match &stage.typed {
        Some(StageModel::Bridge(b)) => match b.form {
            BridgeForm::Quarter => 3,
            BridgeForm::Half => 2,
            BridgeForm::Divider(_) | BridgeForm::Full => 1,
        },
        Some(
            StageModel::Excitation(_)
            | StageModel::Rtd(_)
            | StageModel::Thermocouple(_)
            | StageModel::Thermistor(_)
            | StageModel::IcVoltage(_)
            | StageModel::IcCurrent(_)
            | StageModel::StrainGauge(_)
            | StageModel::Transducer(_)
            | StageModel::Resistor(_)
            | StageModel::Amplifier(_)
            | StageModel::Filter(_)
            | StageModel::Adc(_)
            | StageModel::Convert(_),
        )
        | None => 1,
    }
}

/// A measure's tolerance as a fraction of its nominal: the larger side.
fn relative_tolerance(m: &Measure) -> Option<f64> {
    let t = m.tolerance.as_ref()?;
    let wide = t.plus.max(t.minus);
    if t.relative {
        Some(wide)
    } else if m.nominal != 0.0 {
        Some(wide / m.nominal.abs())
    } else {
        None
    }
}

/// What a member's tracking drift is held against, per kelvin: a strain
/// gauge's thermal output (apparent strain), else its value's drift as a
/// fraction of its nominal.
fn tracked_drift(stage: &Stage, m: &Measure) -> Option<f64> {
    let Some(StageModel::StrainGauge(g)) = &stage.typed else {
        return relative_drift(m);
    };
    let t = g.thermal_output.as_ref()?;
    Some(t.plus.max(t.minus))
}

/// A measure's drift as a fraction of its nominal per kelvin.
fn relative_drift(m: &Measure) -> Option<f64> {
    let d = m.drift.as_ref()?;
    if d.relative {
        Some(d.per_kelvin.abs())
    } else if m.nominal != 0.0 {
        Some(d.per_kelvin.abs() / m.nominal.abs())
    } else {
        None
    }
}

/// Every `track` line of a chain, checked against its stages.
pub fn resolve(
    file: &Arc<SourceFile>,
    decls: &[TrackDecl],
    stages: &[Stage],
    findings: &mut Findings,
) -> Vec<TrackGroup> {
    let mut groups: Vec<TrackGroup> = Vec::new();
    for decl in decls {
        if let Some(first) = groups.iter().find(|g| g.name == decl.name.name) {
            findings.push(
                Finding::new(
                    Code::M246,
                    file,
                    format!("two tracking groups are named `{}`", decl.name.name),
                )
                .label(decl.name.span, "second group")
                .label(first.name_span, "first group")
                .help("give each `track` line of a chain its own name"),
            );
            continue;
        }
        if let Some(group) = resolve_one(file, decl, stages, &groups, findings) {
            groups.push(group);
        }
    }
    groups
}

fn resolve_one(
    file: &Arc<SourceFile>,
    decl: &TrackDecl,
    stages: &[Stage],
    earlier: &[TrackGroup],
    findings: &mut Findings,
) -> Option<TrackGroup> {
    let (ratio, tracking) = read_values(file, decl, findings)?;
    let members = members(file, decl, stages, earlier, findings)?;
    let parts: usize = members.iter().map(|m| parts_of(&stages[m.stage])).sum();
    if parts < 2 {
        findings.push(
            Finding::new(
                Code::M241,
                file,
                format!("tracking group `{}` has one member", decl.name.name),
            )
            .label(decl.span, "a group of one")
            .help("a ratio needs two parts: name at least two stages (or a quarter or half bridge, whose completion resistors are several), or remove the line and keep the part's own tolerance"),
        );
        return None;
    }
    let ok = check_kinds(file, decl, stages, &members, findings)
        && check_widths(file, decl, stages, &members, ratio, tracking, findings);
    ok.then(|| TrackGroup {
        name: decl.name.name.clone(),
        name_span: decl.name.span,
        members,
        ratio: ratio.0,
        tracking: tracking.map(|t| t.0),
        span: decl.span,
    })
}

/// The members, each named once, known, with a value that has a
/// tolerance, and in no other group.
fn members(
    file: &Arc<SourceFile>,
    decl: &TrackDecl,
    stages: &[Stage],
    earlier: &[TrackGroup],
    findings: &mut Findings,
) -> Option<Vec<TrackMember>> {
    let mut out: Vec<TrackMember> = Vec::new();
    let mut ok = true;
    for m in &decl.members {
        let Some(index) = stages.iter().position(|s| s.name == m.name) else {
            findings.push(unknown_member(file, m, stages));
            ok = false;
            continue;
        };
        let member = TrackMember {
            stage: index,
            span: m.span,
        };
        if let Some(first) = tracked_before(index, &out, earlier) {
            findings.push(
                Finding::new(
                    Code::M240,
                    file,
                    format!("stage `{}` is tracked twice", m.name),
                )
                .label(m.span, "named again")
                .label(first, "first named here")
                .help("a part belongs to one network or lot: name it in one tracking group, once"),
            );
            ok = false;
            continue;
        }
        let stage = &stages[index];
        // A stage with a rejected line has its own finding and no model.
        if stage.incomplete || stage.typed.is_none() {
            ok = false;
            continue;
        }
        if let Some(untracked) = untrackable(file, &member, stage) {
            findings.push(untracked);
            ok = false;
            continue;
        }
        out.push(member);
    }
    ok.then_some(out)
}

/// M202: a member that names no stage of the chain.
fn unknown_member(file: &Arc<SourceFile>, m: &Ident, stages: &[Stage]) -> Finding {
    let names = stages.iter().map(|s| s.name.as_str());
    Finding::new(Code::M202, file, format!("no stage is named `{}`", m.name))
        .label(m.span, "unknown stage")
        .help(did_you_mean_or(&m.name, names, || {
            "a tracking group names stages of its own chain".to_string()
        }))
}

/// Where the stage was named before, in this group or an earlier one.
fn tracked_before(index: usize, so_far: &[TrackMember], earlier: &[TrackGroup]) -> Option<Span> {
    so_far
        .iter()
        .chain(earlier.iter().flat_map(|g| &g.members))
        .find(|x| x.stage == index)
        .map(|x| x.span)
}

/// M243: a member without a toleranced value to track.
fn untrackable(file: &Arc<SourceFile>, member: &TrackMember, stage: &Stage) -> Option<Finding> {
    let found = tracked_value(stage);
    if let Some((_, _, measure)) = found {
        if relative_tolerance(measure).is_some() {
            return None;
        }
    }
    let (label, help) = match found {
        Some((_, name, _)) => (
            format!("its `{name}` has no tolerance"),
            format!("state the part's own tolerance on `{name}` (as `± 0.1 %`); the group's ratio tolerance is tighter than it"),
        ),
        None => (
            format!("{} {} stage", super::article(stage.kind.keyword()), stage.kind.keyword()),
            "tracking groups hold fixed resistors (`sensor ... { resistor ... }`), bridges' completion resistors, excitations and strain gauges".to_string(),
        ),
    };
    Some(
        Finding::new(
            Code::M243,
            file,
            format!("stage `{}` has no toleranced value to track", stage.name),
        )
        .label(member.span, "named here")
        .label(stage.name_span, label)
        .help(help),
    )
}

/// All members track the same kind of value.
fn check_kinds(
    file: &Arc<SourceFile>,
    decl: &TrackDecl,
    stages: &[Stage],
    members: &[TrackMember],
    findings: &mut Findings,
) -> bool {
    let kind = |m: &TrackMember| tracked_value(&stages[m.stage]).map(|(k, ..)| k);
    let first = &members[0];
    match members.iter().find(|m| kind(m) != kind(first)) {
        None => true,
        Some(other) => {
            let name = |m: &TrackMember| kind(m).map_or("nothing", Tracked::name);
            findings.push(
                Finding::new(
                    Code::M242,
                    file,
                    format!(
                        "tracking group `{}` mixes {} and {}",
                        decl.name.name,
                        name(first),
                        name(other)
                    ),
                )
                .label(other.span, name(other).to_string())
                .label(first.span, name(first).to_string())
                .help("a ratio tolerance holds between parts of one kind: group resistors with resistors, sources with sources"),
            );
            false
        }
    }
}

/// The ratio tolerance is no wider than any member's own tolerance, and
/// the tracking drift no wider than any member's own drift.
fn check_widths(
    file: &Arc<SourceFile>,
    decl: &TrackDecl,
    stages: &[Stage],
    members: &[TrackMember],
    ratio: (f64, Span),
    tracking: Option<(f64, Span)>,
    findings: &mut Findings,
) -> bool {
    let mut ok = true;
    for m in members {
        let Some((kind, name, measure)) = tracked_value(&stages[m.stage]) else {
            continue;
        };
        let own = relative_tolerance(measure).unwrap_or(0.0);
        let drift = tracked_drift(&stages[m.stage], measure);
        // A gauge's drift is its thermal output, an apparent strain.
        let (unit, drift_of) = match kind {
            Tracked::Gauge => ("ue/K", format!("its `{}`", schema::param::THERMAL_OUTPUT)),
            Tracked::Resistance | Tracked::Current | Tracked::Voltage => {
                ("ppm/K", format!("its `{name}` drift"))
            }
        };
        let member = &stages[m.stage].name;
        let wider = |what: &str, group: String, own: String, at: Span, param: String| {
            Finding::new(
                Code::M244,
                file,
                format!("the {what} of `{}` is wider than `{member}`'s own", decl.name.name),
            )
            .label(at, group)
            .label(m.span, format!("{param} is {own}"))
            .help(format!(
                "a matched network's {what} is tighter than each part's: state at most {own} here, or leave the parts unmatched"
            ))
        };
        if ratio.0 > own * (1.0 + 1e-12) {
            findings.push(wider(
                "ratio tolerance",
                format!("± {}", percent(ratio.0)),
                format!("± {}", percent(own)),
                ratio.1,
                format!("its `{name}`"),
            ));
            ok = false;
        }
        if let (Some((t, at)), Some(d)) = (tracking, drift) {
            if t > d * (1.0 + 1e-12) {
                findings.push(wider(
                    "tracking drift",
                    format!("{} {unit}", trim(t * 1e6)),
                    format!("{} {unit}", trim(d * 1e6)),
                    at,
                    drift_of,
                ));
                ok = false;
            }
        }
    }
    ok
}

fn percent(fraction: f64) -> String {
    format!("{} %", trim(fraction * 100.0))
}

fn trim(x: f64) -> String {
    let s = format!("{x:.6}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// `ratio ± x` (a fraction) and optionally `tracking y` (a fraction per
/// kelvin), each with the span of its value.
#[allow(clippy::type_complexity)]
fn read_values(
    file: &Arc<SourceFile>,
    decl: &TrackDecl,
    findings: &mut Findings,
) -> Option<((f64, Span), Option<(f64, Span)>)> {
    let mut ratio = None;
    let mut tracking = None;
    let mut values = decl.values.iter();
    let bad =
        |at: Span, label: &str| {
            Finding::new(
            Code::M245,
            file,
            format!("tracking group `{}` is not stated as `ratio ± x %`", decl.name.name),
        )
        .label(at, label.to_string())
        .help("write `track name: a, b ratio ± 0.02 %`, optionally followed by `tracking 2 ppm/K`")
        };
    while let Some(v) = values.next() {
        let keyword = match v {
            Value::Word(w) if w.name == "ratio" || w.name == "tracking" => w,
            other => {
                findings.push(bad(other.span(), "expected `ratio` or `tracking` here"));
                return None;
            }
        };
        let next = values.next();
        let read = if keyword.name == "ratio" {
            ratio_value(next)
        } else {
            tracking_value(next)
        };
        match read {
            Ok(x) if keyword.name == "ratio" => ratio = Some(x),
            Ok(x) => tracking = Some(x),
            Err(label) => {
                findings.push(bad(next.map_or(keyword.span, Value::span), label));
                return None;
            }
        }
    }
    match ratio {
        Some(r) => Some((r, tracking)),
        None => {
            findings.push(bad(decl.name.span, "no `ratio ± x %` on this line"));
            None
        }
    }
}

/// `± x %` (or ppm): a symmetric, dimensionless, positive tolerance.
fn ratio_value(v: Option<&Value>) -> Result<(f64, Span), &'static str> {
    let Some(Value::Tolerance(t)) = v else {
        return Err("expected a ratio tolerance such as `± 0.02 %`");
    };
    let ToleranceForm::Symmetric(q) = &t.form else {
        return Err("a ratio tolerance is symmetric: `± x %`");
    };
    let fraction = scaled(q, Dim::NONE).ok_or("expected a ratio in `%` or `ppm`")?;
    if fraction > 0.0 && fraction.is_finite() {
        Ok((fraction, t.span))
    } else {
        Err("a ratio tolerance is above zero")
    }
}

/// `y ppm/K`: a positive drift per kelvin.
fn tracking_value(v: Option<&Value>) -> Result<(f64, Span), &'static str> {
    let Some(Value::Quantity(q)) = v else {
        return Err("expected a tracking drift such as `2 ppm/K`");
    };
    let per_kelvin = scaled(q, Dim::TEMPERATURE.powi(-1)).ok_or("expected a drift in `ppm/K`")?;
    if per_kelvin > 0.0 && per_kelvin.is_finite() {
        Ok((per_kelvin, q.span))
    } else {
        Err("a tracking drift is above zero")
    }
}

/// A quantity's magnitude in SI when its unit has dimension `dim`.
fn scaled(q: &crate::syntax::ast::QuantityLit, dim: Dim) -> Option<f64> {
    let unit = parse_unit(&q.unit.as_ref()?.text).ok()?;
    (unit.dim == dim).then_some(unit.to_si(q.number.abs()))
}
