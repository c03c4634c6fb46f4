//! Whether an analysis's numbers can be shown: every one finite (E505
//! names the parameter that drove one beyond what a double holds), and
//! the GUM sum honest about sources its linearisation cannot represent
//! (R616).

use super::budget::Point;
use super::monte_carlo::NOISE_ID;
use super::report::Analysis;
use crate::diagnostics::{Code, Finding, Findings};
use crate::eval::SourceName;
use crate::model::Chain;
use crate::units::format::{from_si, trimmed};

/// What an E505 names: a source, or the stage where no source is known.
#[derive(Clone, Debug, PartialEq)]
enum Culprit {
    Source(SourceName),
    Stage(String),
}

impl std::fmt::Display for Culprit {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Culprit::Source(id) => id.fmt(f),
            Culprit::Stage(name) => f.write_str(name),
        }
    }
}

/// E505 for each parameter behind a non-finite number anywhere in the
/// analysis, first occurrence only, in order of discovery.
pub fn non_finite(chain: &Chain, analysis: &Analysis) -> Findings {
    let mut culprits: Vec<(Culprit, &'static str)> = Vec::new();
    let mut blame = |culprit: Culprit, what: &'static str| {
        if !culprits.iter().any(|(c, _)| *c == culprit) {
            culprits.push((culprit, what));
        }
    };
    let whole_noise = SourceName::whole(NOISE_ID);
    let noise = &analysis.budget.noise;
    let noise_culprit = || {
        noise
            .terms
            .iter()
            .chain(&noise.referred)
            .max_by(|a, b| magnitude(a.rms_v).total_cmp(&magnitude(b.rms_v)))
            .map_or_else(|| whole_noise.clone(), |t| t.id.clone())
    };
    let noise_values = [
        noise.total_v,
        noise.sigma,
        noise.sigma_averaged,
        noise.noise_free,
        noise.noise_free_averaged,
        noise.lsb,
    ];
    if !all_finite(&noise_values) || noise.terms.iter().any(|t| !t.rms_v.is_finite()) {
        blame(Culprit::Source(noise_culprit()), "noise");
    }
    for (i, p) in analysis.budget.points.iter().enumerate() {
        // Noise enters the budget as one source; its terms say whose it is.
        let source = |c: &super::budget::Contribution| {
            Culprit::Source(if c.id == whole_noise {
                noise_culprit()
            } else {
                c.id.clone()
            })
        };
        for c in &p.contributions {
            if !all_finite(&[c.low, c.high, c.worst, c.standard]) {
                blame(source(c), "error budget");
            }
        }
        let interval = analysis.monte_carlo.as_ref().and_then(|m| m.get(i));
        let mc = interval.map_or(vec![], |m| vec![m.low, m.high, m.numerical]);
        let totals = [
            p.worst_case,
            p.gum_standard,
            p.gum_expanded,
            p.linearisation,
        ];
        if !all_finite(&totals) || !all_finite(&mc) {
            if let Some(c) = p.contributions.first() {
                blame(source(c), "error budget");
            }
        }
    }
    for (culprit, what) in path_culprits(analysis) {
        blame(culprit, what);
    }
    let mut findings = Findings::new();
    for (culprit, what) in culprits {
        let (stage, param) = match &culprit {
            Culprit::Source(id) => id.stage_param().unzip(),
            Culprit::Stage(name) => (Some(name.as_str()), None),
        };
        let finding = non_finite_finding(chain, &culprit.to_string(), what);
        findings.push(label_source(chain, finding, stage, param, "this value"));
    }
    findings
}

/// Non-finite values along the signal path and in the range envelopes,
/// with the source (or, where none is known, the stage) behind each.
fn path_culprits(analysis: &Analysis) -> Vec<(Culprit, &'static str)> {
    let stage = |node: crate::eval::NodeId| {
        Culprit::Stage(
            analysis
                .names
                .get(node.index())
                .cloned()
                .unwrap_or_default(),
        )
    };
    let path = analysis
        .accumulation
        .iter()
        .filter(|n| !all_finite(&[n.value, n.gain, n.error]))
        .map(|n| {
            let culprit = n
                .dominant
                .clone()
                .map_or_else(|| stage(n.node), Culprit::Source);
            (culprit, "signal path")
        });
    let reach = analysis
        .envelopes
        .iter()
        .filter(|e| !all_finite(&[e.reach.0, e.reach.1]))
        .map(|e| (stage(e.node), "signal's reach"));
    path.chain(reach).collect()
}

fn magnitude(x: f64) -> f64 {
    if x.is_finite() {
        x.abs()
    } else {
        f64::INFINITY
    }
}

fn all_finite(values: &[f64]) -> bool {
    values.iter().all(|x| x.is_finite())
}

/// The stage a source belongs to, labelled at its parameter's line where
/// the spec writes one; the chain where the source is no stage's.
fn label_source(
    chain: &Chain,
    finding: Finding,
    stage: Option<&str>,
    param: Option<&str>,
    text: &str,
) -> Finding {
    match chain.stages.iter().find(|s| Some(s.name.as_str()) == stage) {
        Some(stage) => {
            let param = param.unwrap_or("");
            // The parameter's own line when the spec writes it; for one of
            // a line's parts (`r_2`, `offset_drift`), the line it is of.
            let written = |p: &&crate::model::value::ResolvedParam| {
                std::sync::Arc::ptr_eq(&p.file, &chain.file) && !param.is_empty()
            };
            let at = stage
                .params
                .iter()
                .filter(written)
                .find(|p| p.name == param)
                .or_else(|| {
                    stage
                        .params
                        .iter()
                        .filter(written)
                        .find(|p| param.starts_with(p.name))
                })
                .map(|p| p.span)
                .unwrap_or(stage.name_span);
            finding.label(at, text)
        }
        None => finding.label(chain.name_span, text),
    }
}

fn non_finite_finding(chain: &Chain, id: &str, what: &str) -> Finding {
    Finding::new(
        Code::E505,
        &chain.file,
        format!("`{id}` drives the {what} beyond any finite number, so no budget can be shown"),
    )
    .help(format!(
        "check `{id}` for a misplaced exponent or unit: a value this extreme is not a part's"
    ))
}

/// Why the reading does not follow a source in a straight line, read from
/// its effects at the source's two limits, and what to do about it.
fn nonlinear_help(low: f64, high: f64) -> &'static str {
    let (small, large) = if low.abs() < high.abs() {
        (low, high)
    } else {
        (high, low)
    };
    if small.abs() <= 0.1 * large.abs() {
        "a stage clips at one of the source's limits, so that limit barely moves the reading: bring the signal back inside its range (see R601), or judge accuracy by `monte_carlo`, which follows the chain as it is"
    } else if small.signum() == large.signum() {
        "both limits move the reading the same way: it turns back within the source's range (a stage folding, or a peak): bring the signal back inside every stage's range (see R601), or judge accuracy by `monte_carlo`, which follows the chain as it is"
    } else {
        "the limits move the reading opposite ways by different amounts: it curves with the source (self-heating goes as 1/δ, a ratio with its denominator), or a stage clips part of one limit's effect (see R601); judge accuracy by `monte_carlo`, which follows the chain as it is"
    }
}

/// How much taking the larger evaluated effects rather than the slopes
/// must move a point's combined standard uncertainty for R616: less
/// (a calibration's second-order residual, a source far down the list)
/// turns no verdict and is not worth a warning `--deny warnings` fails on.
pub const NONLINEAR_EFFECT: f64 = 0.01;

/// Whether the sources off their straight line move the point's combined
/// standard uncertainty by [`NONLINEAR_EFFECT`] or more.
fn leaves_linearisation(p: &Point) -> bool {
    let moved: f64 = p
        .contributions
        .iter()
        .filter(|c| !c.linear)
        .map(|c| c.standard * c.standard - c.by_slope() * c.by_slope())
        .sum();
    let total = p.gum_standard * p.gum_standard;
    moved > 0.0 && total > moved && (total / (total - moved)).sqrt() - 1.0 >= NONLINEAR_EFFECT
}

/// R616 where the GUM sum had to leave its linearisation for some source
/// and that moved the combined uncertainty: the chain does not follow
/// the source in a straight line there (a stage clipping at one of its
/// limits), so the evaluated limits stand in for the slope. One finding
/// per chain, naming the source with the largest effect and where.
pub fn nonlinear(chain: &Chain, analysis: &Analysis) -> Option<Finding> {
    let points = &analysis.budget.points;
    let flagged = points.iter().filter(|p| leaves_linearisation(p)).count();
    let (point, source) = points
        .iter()
        .filter(|p| leaves_linearisation(p))
        .flat_map(|p| p.contributions.iter().map(move |c| (p, c)))
        .filter(|(_, c)| !c.linear)
        .max_by(|a, b| a.1.worst.total_cmp(&b.1.worst))?;
    let (unit, factor) = chain.difference_unit();
    let m_unit = chain.measurand.as_ref().map_or("", |m| m.unit.as_str());
    let finding = Finding::new(
        Code::R616,
        &chain.file,
        format!(
            "the reading does not follow `{}` in a straight line at {flagged} of {} budget points (at {} {m_unit}, ambient {} degC it moves {} and {} {unit} at the source's limits); the GUM sum takes ± {} {unit} there instead of its slope",
            source.id,
            points.len(),
            trimmed(from_si(point.measurand, m_unit), 6),
            trimmed(from_si(point.ambient, "degC"), 4),
            trimmed(source.low * factor, 3),
            trimmed(source.high * factor, 3),
            trimmed(source.worst * factor, 3),
        ),
    )
    .help(nonlinear_help(source.low, source.high));
    let (stage, param) = source.id.stage_param().unzip();
    Some(label_source(chain, finding, stage, param, "this source"))
}

#[cfg(test)]
mod tests {
    use super::{leaves_linearisation, nonlinear_help};
    use crate::analysis::budget::{Contribution, Point};
    use crate::eval::SourceName;

    /// A source with limit effects `low`, `high` and rectangular divisor
    /// √3, linear or not as the budget would judge it.
    fn source(name: &str, (low, high): (f64, f64), linear: bool) -> Contribution {
        let worst = low.abs().max(high.abs());
        let standard = if linear {
            (high - low).abs() / 2.0 / 3f64.sqrt()
        } else {
            worst / 3f64.sqrt()
        };
        Contribution {
            id: SourceName::param("s", name),
            kind: "tolerance",
            low,
            high,
            worst,
            standard,
            linear,
        }
    }

    fn point(contributions: Vec<Contribution>) -> Point {
        let gum_standard = contributions
            .iter()
            .map(|c| c.standard * c.standard)
            .sum::<f64>()
            .sqrt();
        Point {
            measurand: 300.0,
            ambient: 298.15,
            linearisation: 0.0,
            contributions,
            worst_case: 0.0,
            gum_standard,
            gum_expanded: 2.0 * gum_standard,
            linear: false,
            volts_per_unit: 1.0,
            codes_per_unit: 1.0,
        }
    }

    /// The brooder's shape: a calibrated NTC's r25 leaves −0.0332 and
    /// +0.0264 K beside a ± 0.2 K source. Its larger effect over √3 rather
    /// than its slope moves u_c from 0.11674 to 0.11705 K, 0.26 %: no
    /// warning. Alone, a source of −8.88 and +14.6 K (the R616 fixture's
    /// NTC at ± 40 %) moves u_c from 6.78 to 8.43 K, 24 %: a warning.
    #[test]
    fn only_a_move_of_a_percent_in_u_c_is_a_departure_worth_a_warning() {
        let calibrated = point(vec![
            source("beta", (-0.2, 0.2), true),
            source("r25", (-0.0332, 0.0264), false),
        ]);
        assert!(!leaves_linearisation(&calibrated));
        assert!(leaves_linearisation(&point(vec![source(
            "r25",
            (14.6, -8.88),
            false
        )])));
    }

    /// The shapes R616 meets, told apart by the reading's changes at the
    /// source's two limits: one limit barely moving it (a clip), both
    /// moving it the same way (a fold), and the two moving it opposite
    /// ways by different amounts (a curve: an element's self-heating with
    /// its dissipation constant at ± 20 % is 1/0.8 = 1.25 and 1/1.2 = 0.83
    /// of the nominal, +25 % and −17 %).
    #[test]
    fn the_help_names_the_shape_the_limits_show() {
        assert!(nonlinear_help(0.0, 0.5).starts_with("a stage clips"));
        assert!(nonlinear_help(-0.5, -0.01).starts_with("a stage clips"));
        assert!(nonlinear_help(0.3, 0.3).starts_with("both limits"));
        assert!(nonlinear_help(-0.2, -0.6).starts_with("both limits"));
        assert!(nonlinear_help(0.138, -0.0919).starts_with("the limits move"));
    }
}
