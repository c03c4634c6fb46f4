//! What the checked chain does over its ranges, through the evaluator:
//! sensor validity, the error budget, noise and requirement verdicts.

pub mod accumulation;
pub mod alarms;
pub mod budget;
pub mod calibration;
pub mod checklist;
pub mod draws;
pub mod dynamics;
pub mod faults;
pub mod monte_carlo;
pub mod noise;
pub mod ranges;
pub mod report;
pub mod requirements;
pub mod review;
pub mod settling;
pub mod shares;
pub mod soundness;
mod stages;
pub mod step;
pub mod tails;
pub mod validation;
pub mod window;

use crate::diagnostics::{Code, Finding, Findings, Severity, Span};
use crate::eval::{lower_stages, lower_unvalidated, valid_measurand_range, Env, EvalError, Plan};
use crate::model::{AccuracyMethod, Chain};
use crate::physics::solve::bisect_at_most;
use crate::units::format::from_si;

/// The finding for an evaluation error, labelled on the stage involved
/// and, when given, on the line that sets the condition.
pub fn eval_finding(
    chain: &Chain,
    error: &EvalError,
    condition: Option<(Span, String)>,
) -> Finding {
    let (code, stage, help) = match error {
        EvalError::OutOfRange { stage, low, high, celsius, .. } => {
            let show = |x: f64| if *celsius { format!("{} degC", crate::units::format::trimmed(x - crate::units::ZERO_CELSIUS_K, 6)) } else { crate::units::format::trimmed(x, 6) };
            (
                Code::E501,
                stage,
                format!("keep the range within {} .. {}, or choose a sensor or class that covers it", show(*low), show(*high)),
            )
        }
        EvalError::NotInvertible { stage, .. } => (Code::E502, stage, "the reading must change with the measurand over its whole range; check the chain's wiring and limits".to_string()),
        EvalError::Numeric { stage, .. } => (Code::E503, stage, "check the stage's parameters: a zero, a negative or an extreme value leaves it without a finite output".to_string()),
    };
    let mut f = Finding::new(code, &chain.file, error.to_string());
    if let Some(s) = chain.stages.iter().find(|s| &s.name == stage) {
        f = f.label(s.name_span, "this stage");
    } else {
        f = f.label(chain.name_span, "in this chain");
    }
    if let Some((span, text)) = condition {
        f = f.label(span, text);
    }
    f.help(help)
}

/// Points the measurand range is scanned at for [`evaluable_part`].
const SCAN_POINTS: usize = 201;

/// The chain narrowed to the widest stretch of its measurand range where
/// every stage evaluates at every budget ambient, when the whole range
/// does not (a sensor driven outside its valid range, E501): what can be
/// evaluated, for `eval` and `budget` to show beside the finding. None
/// when the whole range evaluates or no stretch does.
pub fn evaluable_part(chain: &Chain) -> Option<Chain> {
    let (plan, fitted) = lower_unvalidated(chain).ok()?;
    evaluable_part_of(chain, &plan, fitted.is_ok())
}

/// [`evaluable_part`] from the chain's plan as lowered without the
/// validity check (or with it, when it passed), `fitted` when its
/// conversion was built.
pub fn evaluable_part_of(chain: &Chain, plan: &Plan, fitted: bool) -> Option<Chain> {
    let valid = valid_measurand_range(plan);
    let narrowed = valid != plan.range;
    if valid.0 >= valid.1 || fitted && !narrowed {
        return None;
    }
    let ambients = budget::ambients(chain);
    // Every source at each of its limits, as the budget will put it.
    let mut cases = vec![plan.nominal.clone()];
    for (i, slot) in plan.slot_ids().zip(&plan.slots) {
        if slot.kind != crate::eval::SourceKind::Exact {
            for x in [slot.nominal - slot.minus, slot.nominal + slot.plus] {
                let mut values = plan.nominal.clone();
                values[i.index()] = x;
                cases.push(values);
            }
        }
    }
    let evaluates = |m: f64| {
        ambients.iter().all(|&t| {
            let env = Env {
                measurand: m,
                ambient: t,
                cold_junction: t,
            };
            cases
                .iter()
                .all(|values| plan.exact_code(values, &env, plan.adc).is_ok())
        })
    };
    let grid = crate::eval::grid(valid, SCAN_POINTS);
    let ok: Vec<bool> = grid.iter().map(|&m| evaluates(m)).collect();
    // The longest run of points that evaluate.
    let (mut best, mut start) = (None::<(usize, usize)>, None);
    for i in 0..=ok.len() {
        match (ok.get(i).copied().unwrap_or(false), start) {
            (true, None) => start = Some(i),
            (false, Some(s)) => {
                if best.is_none_or(|(a, b)| i - 1 - s > b - a) {
                    best = Some((s, i - 1));
                }
                start = None;
            }
            _ => {}
        }
    }
    let (first, last) = best?;
    if first == 0 && last == grid.len() - 1 && !narrowed || first == last {
        return None;
    }
    // Each end bisected to where evaluation stops.
    let edge = |good: f64, bad: Option<f64>| match bad {
        None => good,
        Some(bad) => bisect_at_most(50, good, bad, &evaluates).0,
    };
    let low = edge(grid[first], first.checked_sub(1).map(|i| grid[i]));
    let high = edge(grid[last], grid.get(last + 1).copied());
    let mut narrowed = chain.clone();
    let measurand = narrowed.measurand.as_mut()?;
    (measurand.low, measurand.high) = (low, high);
    lower_stages(&narrowed).ok()?.1.ok()?;
    Some(narrowed)
}

/// Why no conversion could be built: the range envelope runs on the
/// stages (they evaluate up to the converter), and a stage beyond its
/// limit (R601, with the value that fixes it) explains a flat or folded
/// code; E502 is reported only where nothing does.
fn unconvertible(
    chain: &Chain,
    plan: &Plan,
    error: &EvalError,
    margin: f64,
    points: usize,
    at_measurand: Option<(crate::diagnostics::Span, String)>,
) -> Findings {
    let mut findings = Findings::new();
    if let Ok(envelopes) = ranges::envelopes(chain, plan, points) {
        findings.extend(ranges::findings(chain, plan, &envelopes, margin));
    }
    if !findings.has_errors() {
        findings.push(eval_finding(chain, error, at_measurand));
    }
    findings
}

/// E504 where the converter's code does not move with the measurand at a
/// budget condition: the chain saturates there (in a stage or in the
/// arithmetic itself), so no reading, resolution or budget exists.
fn flat_code(
    chain: &Chain,
    plan: &Plan,
    measurand: &crate::model::Measurand,
    points: usize,
) -> Option<Finding> {
    let moves = |env: &Env| match budget::slopes(plan, env) {
        Ok((_, codes_per_unit)) => codes_per_unit != 0.0 && codes_per_unit.is_finite(),
        Err(_) => true,
    };
    let conditions = budget::conditions(chain, plan, points);
    let flat = conditions.iter().find(|env| !moves(env))?;
    let show = |x: f64| crate::units::format::trimmed(from_si(x, &measurand.unit), 6);
    let at = format!(
        "at {} {}, ambient {} degC",
        show(flat.measurand),
        measurand.unit,
        crate::units::format::trimmed(from_si(flat.ambient, "degC"), 4)
    );
    // Where it still moves at that ambient, for the help.
    let moving: Vec<f64> = conditions
        .iter()
        .filter(|e| e.ambient == flat.ambient && moves(e))
        .map(|e| e.measurand)
        .collect();
    let span = match (moving.first(), moving.last()) {
        (Some(lo), Some(hi)) => format!(
            "; at this ambient it moves over {} .. {} {} only",
            show(*lo),
            show(*hi),
            measurand.unit
        ),
        _ => String::new(),
    };
    Some(
        Finding::new(
            Code::E504,
            &chain.file,
            format!("the converter's code does not change with the measurand {at}"),
        )
        .label(measurand.span, format!("flat {at}"))
        .help(format!("a stage saturates there: follow the signal with `catena eval --at` and bring it back inside its stages' ranges (a divider or bridge resistor nearer the sensor's, less gain, or a narrower measurand range){span}")),
    )
}

/// What `catena check` asks of the analyses.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CheckOptions {
    /// Run Monte Carlo even when no requirement asks for it.
    pub monte_carlo: bool,
    /// Its trials per point ([`report::DEFAULT_TRIALS`] when zero).
    pub trials: usize,
    /// Headroom warnings below this fraction of a limit's span (default
    /// [`ranges::DEFAULT_MARGIN`] when zero).
    pub margin: f64,
    /// Let `use` reach parts files outside the spec's repository.
    pub allow_outside_paths: bool,
    /// The Monte Carlo seed ([`report::DEFAULT_SEED`] when `None`).
    pub seed: Option<u64>,
    /// Budget points across the measurand range, where the envelopes,
    /// the flat-code scan and the verdicts look.
    pub points: usize,
    /// What the caller goes on to use of each chain, so the check keeps
    /// it instead of the caller computing it again.
    pub keep: Keep,
}

/// What the check keeps of each chain for the command that follows it.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum Keep {
    /// Nothing: `check` alone prints findings only.
    #[default]
    Nothing,
    /// The plan (`eval`), and the analysis the verdicts came from.
    Plans,
    /// The plan and the analysis with the report's detail (`budget`,
    /// `diff`, `compare`).
    Reports,
}

impl Default for CheckOptions {
    fn default() -> Self {
        CheckOptions {
            monte_carlo: false,
            trials: 0,
            margin: 0.0,
            allow_outside_paths: false,
            seed: None,
            points: budget::Options::default().points,
            keep: Keep::Nothing,
        }
    }
}

/// What the check of one chain leaves: its findings and, when the caller
/// uses it ([`CheckOptions::keep`]), its plan and the
/// analysis the verdicts came from.
#[derive(Debug, Default)]
pub struct ChainCheck {
    pub plan: Option<Plan>,
    pub analysis: Option<report::Analysis>,
    /// The fault verdicts and maskings its findings came from.
    pub faults: Option<faults::FaultCheck>,
    /// The range envelopes its limit findings came from, at
    /// [`CheckOptions::points`].
    pub envelopes: Option<Vec<ranges::Envelope>>,
    pub findings: Findings,
}

/// Lowers a chain, evaluates its nominal corners (measurand ends at the
/// ambient ends and the reference), then judges its requirements.
pub fn check_chain(chain: &Chain, options: &CheckOptions) -> ChainCheck {
    let Some(measurand) = &chain.measurand else {
        return ChainCheck::default();
    };
    let at_measurand = Some((measurand.span, "over this range".to_string()));
    let margin = if options.margin > 0.0 {
        options.margin
    } else {
        ranges::DEFAULT_MARGIN
    };
    let plan = match lower_stages(chain) {
        Ok((plan, Ok(()))) => plan,
        Ok((plan, Err(e))) => {
            let findings = unconvertible(chain, &plan, &e, margin, options.points, at_measurand);
            return ChainCheck {
                findings,
                ..ChainCheck::default()
            };
        }
        Err(e) => {
            let mut findings = Findings::new();
            findings.push(eval_finding(chain, &e, at_measurand));
            return ChainCheck {
                findings,
                ..ChainCheck::default()
            };
        }
    };
    let mut findings = Findings::new();
    findings.extend(corner_error(chain, &plan, measurand));
    let mut envelopes = None;
    if findings.is_empty() {
        match ranges::envelopes(chain, &plan, options.points) {
            Ok(e) => {
                findings.extend(ranges::findings(chain, &plan, &e, margin));
                envelopes = Some(e);
            }
            Err(e) => findings.push(eval_finding(chain, &e, at_measurand.clone())),
        }
    }
    // A stage beyond its limit (R601) already says why the code stops;
    // a chain flat without one (the arithmetic saturating) gets E504.
    if !findings.has_errors() {
        findings.extend(flat_code(chain, &plan, measurand, options.points));
    }
    let mut analysis = None;
    // A chain that evaluates cleanly has its faults and trips judged (once:
    // the checklist reuses them), whatever its requirements' verdicts.
    let sound = !findings.has_errors();
    if sound && !chain.requirements.is_empty() {
        let known = envelopes.as_deref();
        analysis = judge(chain, &plan, options, known, &mut findings, at_measurand);
    }
    // A requirement missed leaves the chain as sound as before; any other
    // error the judgement raised (a number that is not one) does not.
    let sound = sound
        && !findings.iter().any(|f| {
            f.severity() == Severity::Error
                && !matches!(f.code, Code::R611 | Code::R612 | Code::R613 | Code::R614)
        });
    let faults = if sound {
        check_faults(chain, &plan, envelopes.as_deref(), options, &mut findings)
    } else {
        // Stopped by an error a rule may relax: said here, so a relaxed
        // check does not pass the chain with its faults unjudged.
        findings.extend(fault_blocker(&findings).map(|b| faults::blocked(chain, &b)));
        None
    };
    findings.extend(calibration::points_outside_range(chain));
    let keep = options.keep != Keep::Nothing;
    ChainCheck {
        plan: keep.then_some(plan),
        analysis: analysis.filter(|_| keep),
        faults: faults.filter(|_| keep),
        envelopes: envelopes.filter(|_| keep),
        findings,
    }
}

/// Judges a sound chain's faults and trips into `findings`; the verdicts,
/// where they could be judged.
fn check_faults(
    chain: &Chain,
    plan: &Plan,
    envelopes: Option<&[ranges::Envelope]>,
    options: &CheckOptions,
    findings: &mut Findings,
) -> Option<faults::FaultCheck> {
    // The window is taken at its own points, whatever `--points` says, so
    // the verdicts are the checklist's.
    let reuse = envelopes.filter(|_| options.points == window::POINTS);
    match faults::check(chain, plan, reuse) {
        Ok(checked) => {
            findings.extend(faults::findings(chain, &checked));
            Some(checked)
        }
        // Never a chain passed whose faults were not judged, unsaid.
        Err(e) => {
            findings.push(faults::unjudged(chain, &e, faults::Unjudged::Faults));
            None
        }
    }
}

/// The error that kept the faults from being judged, if a design rule
/// (one `catena.yaml` may relax) raised it.
fn fault_blocker(findings: &Findings) -> Option<Finding> {
    findings
        .iter()
        .find(|f| {
            f.severity() == Severity::Error
                && f.code.category() == crate::diagnostics::Category::Design
                && !matches!(f.code, Code::R611 | Code::R612 | Code::R613 | Code::R614)
        })
        .cloned()
}

/// E501..E503 at the first nominal corner (a measurand end at an ambient
/// end or the reference) where the chain does not evaluate.
fn corner_error(
    chain: &Chain,
    plan: &Plan,
    measurand: &crate::model::Measurand,
) -> Option<Finding> {
    let ambients = [chain.ambient.0, chain.reference, chain.ambient.1];
    for m in [measurand.low, measurand.high] {
        for t in ambients {
            let env = Env {
                measurand: m,
                ambient: t,
                cold_junction: t,
            };
            if let Err(e) = plan.reading(&plan.nominal, &env) {
                let at = format!(
                    "at {} {}",
                    crate::units::format::trimmed(from_si(m, &measurand.unit), 6),
                    measurand.unit
                );
                return Some(eval_finding(chain, &e, Some((measurand.span, at))));
            }
        }
    }
    None
}

/// The requirements' verdicts as findings, from the analysis they were
/// judged on (returned for a caller that reports on the chain).
fn judge(
    chain: &Chain,
    plan: &Plan,
    options: &CheckOptions,
    envelopes: Option<&[ranges::Envelope]>,
    findings: &mut Findings,
    at_measurand: Option<(Span, String)>,
) -> Option<report::Analysis> {
    let wants_mc =
        options.monte_carlo || requirements::accuracy_method(chain) == AccuracyMethod::MonteCarlo;
    let report_options = report::Options {
        budget: budget::Options {
            points: options.points,
            ..budget::Options::default()
        },
        trials: wants_mc.then_some(if options.trials > 0 {
            options.trials.min(report::MAX_TRIALS)
        } else {
            report::DEFAULT_TRIALS
        }),
        seed: options.seed.unwrap_or(report::DEFAULT_SEED),
        // Only a report shows the detail; `check` prints verdicts alone.
        detail: options.keep == Keep::Reports,
    };
    // The envelopes were taken at the budget's points for the limit
    // findings; the report's detail shows the same ones.
    let analysed = match envelopes {
        Some(known) => report::analyse_knowing_envelopes(chain, plan, &report_options, known),
        None => report::analyse(chain, plan, &report_options),
    };
    match analysed {
        Ok(analysis) => {
            // A verdict on a number that is not one would only echo E505.
            let unsound = soundness::non_finite(chain, &analysis);
            if unsound.is_empty() {
                findings.extend(report::verdict_findings(chain, &analysis));
                findings.extend(soundness::nonlinear(chain, &analysis));
            } else {
                findings.extend(unsound);
            }
            Some(analysis)
        }
        Err(e) => {
            findings.push(eval_finding(chain, &e, at_measurand));
            None
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The chains of a demo spec, resolved against its parts files.
    fn demo_chains(name: &str) -> Vec<Chain> {
        let specs = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("specs");
        let text = std::fs::read(specs.join(name)).expect("the demo reads");
        let file = crate::syntax::decode(name, &text).expect("text");
        let (ast, findings) = crate::syntax::parse(&file);
        assert!(!findings.has_errors(), "{findings:?}");
        let mut parts = crate::model::PartsCache::default();
        let (chains, findings) = crate::model::resolve(&file, &ast, &specs, None, &mut parts);
        assert!(!findings.has_errors(), "{findings:?}");
        chains
    }

    /// A check that keeps the report's detail takes the range envelopes
    /// once per chain: the limit findings, the report's limits and the
    /// fault window share them.
    #[test]
    fn a_report_check_takes_the_envelopes_once() {
        let options = CheckOptions {
            points: window::POINTS,
            keep: Keep::Reports,
            ..CheckOptions::default()
        };
        let chains = demo_chains("cold_store.catena");
        assert!(!chains.is_empty());
        for chain in &chains {
            ranges::ENVELOPE_RUNS.with(|runs| runs.set(0));
            let checked = check_chain(chain, &options);
            let analysis = checked.analysis.as_ref().expect("the chain is analysed");
            assert!(
                !analysis.envelopes.is_empty(),
                "the detail holds the limits"
            );
            let runs = ranges::ENVELOPE_RUNS.with(std::cell::Cell::get);
            assert_eq!(runs, 1, "chain {}", chain.name);
        }
    }
}
