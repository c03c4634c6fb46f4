//! All analyses of one chain together, and the findings their verdicts
//! give `catena check`.

use super::accumulation::{accumulation, NodeError};
use super::alarms::{alarm_limits, AlarmLimit};
use super::budget::{self, Budget};
use super::dynamics::{dynamics, Dynamics};
use super::monte_carlo::{sample, Condition, Interval, Share};
use super::ranges::{envelopes, Envelope};
use super::requirements::{verdicts, Achieved, Verdict};
use super::validation::{check, GumCheck};
use crate::diagnostics::{Code, Finding, Findings};
use crate::eval::{node, Calibration, Node};
use crate::eval::{Env, EvalError, Plan};
use crate::model::{AccuracyMethod, Chain, RequirementKind};
use crate::units::format::{from_si, trimmed};

/// Monte Carlo trials per point unless told: enough for the interval's
/// second digit, fast enough for an edit loop (the report states what
/// the ends are good to, and asks for more for a signed budget).
pub const DEFAULT_TRIALS: usize = 10_000;
pub const MAX_TRIALS: usize = 10_000_000;
pub const DEFAULT_SEED: u64 = 1;

#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Options {
    pub budget: budget::Options,
    /// Monte Carlo trials per point; None runs no Monte Carlo.
    pub trials: Option<usize>,
    pub seed: u64,
    /// The parts only a report shows: limits, the error along the signal
    /// path, the budget without calibration. `check` needs none of them.
    pub detail: bool,
}

impl Default for Options {
    fn default() -> Self {
        Options {
            budget: budget::Options::default(),
            trials: None,
            seed: DEFAULT_SEED,
            detail: true,
        }
    }
}

#[derive(Clone, Debug)]
pub struct Analysis {
    pub budget: Budget,
    /// Per budget point, when Monte Carlo ran.
    pub monte_carlo: Option<Vec<Interval>>,
    /// Per budget point, when Monte Carlo ran with the detail: each drawn
    /// source's share of the variance.
    pub shares: Option<Vec<Vec<Share>>>,
    /// Per budget point, when Monte Carlo ran: GUM against it (JCGM 101 §8).
    pub gum_checks: Option<Vec<GumCheck>>,
    pub trials: usize,
    pub seed: u64,
    pub dynamics: Dynamics,
    pub verdicts: Vec<Verdict>,
    /// Every limited signal's reach.
    pub envelopes: Vec<Envelope>,
    /// Along the signal path at the worst budget point.
    pub accumulation: Vec<NodeError>,
    /// The GUM expanded uncertainty per point without the declared
    /// calibration: what calibration buys.
    pub uncalibrated: Option<Vec<f64>>,
    /// Stage names by plan node.
    pub names: Vec<String>,
    /// Alarm and trip limits with their guard bands.
    pub alarms: Vec<AlarmLimit>,
    /// What it was asked for.
    pub options: Options,
}

impl Analysis {
    /// The Monte Carlo variance share of the source `id` at budget point
    /// `point`, when shares were estimated and the source was drawn.
    pub fn monte_carlo_share(&self, point: usize, id: &str) -> Option<f64> {
        self.shares
            .as_ref()?
            .get(point)?
            .iter()
            .find(|s| s.id == id)
            .map(|s| s.share)
    }

    /// The Monte Carlo share below which a source cannot be told from one
    /// with no effect at this many trials, when shares were estimated.
    pub fn monte_carlo_share_floor(&self) -> Option<f64> {
        self.shares
            .as_ref()
            .map(|_| super::shares::floor(self.trials))
    }
}

pub fn analyse(chain: &Chain, plan: &Plan, options: &Options) -> Result<Analysis, EvalError> {
    analyse_with_progress(chain, plan, options, &|_, _| {})
}

/// [`analyse`], calling `progress(done, total)` after each Monte Carlo point.
pub fn analyse_with_progress(
    chain: &Chain,
    plan: &Plan,
    options: &Options,
    progress: &dyn Fn(usize, usize),
) -> Result<Analysis, EvalError> {
    analyse_reusing(chain, plan, options, None, progress)
}

/// [`analyse_with_progress`], keeping what `earlier` (an analysis of the
/// same plan, such as the one `check` made) already holds under the
/// options asked now: the budget and dynamics at the same points, the
/// Monte Carlo at the same trials, seed and detail, and the detail. What
/// it lacks is computed; the result is the fresh analysis's to the bit.
pub fn analyse_reusing(
    chain: &Chain,
    plan: &Plan,
    options: &Options,
    earlier: Option<Analysis>,
    progress: &dyn Fn(usize, usize),
) -> Result<Analysis, EvalError> {
    analyse_from(chain, plan, options, earlier, None, progress)
}

/// [`analyse`] of a chain whose range envelopes at the budget's points
/// are already known (the check computes them for its limit findings),
/// so the detail does not compute them again.
pub fn analyse_knowing_envelopes(
    chain: &Chain,
    plan: &Plan,
    options: &Options,
    envelopes: &[Envelope],
) -> Result<Analysis, EvalError> {
    analyse_from(chain, plan, options, None, Some(envelopes), &|_, _| {})
}

fn analyse_from(
    chain: &Chain,
    plan: &Plan,
    options: &Options,
    earlier: Option<Analysis>,
    known_envelopes: Option<&[Envelope]>,
    progress: &dyn Fn(usize, usize),
) -> Result<Analysis, EvalError> {
    let mut analysis = match earlier {
        Some(a) if a.options.budget == options.budget => a,
        _ => deterministic(chain, plan, options)?,
    };
    let asked = analysis.options;
    let same_draws = asked.trials == options.trials
        && asked.seed == options.seed
        && asked.detail == options.detail;
    if !same_draws {
        add_monte_carlo(plan, options, &mut analysis, progress)?;
    }
    let achieved = Achieved {
        response_s: analysis.dynamics.response_90,
    };
    let dynamics = &analysis.dynamics;
    analysis.verdicts = verdicts(
        chain,
        &analysis.budget,
        analysis.monte_carlo.as_deref(),
        &achieved,
        &|f| Some(dynamics.attenuation(f)),
    );
    analysis.trials = options.trials.unwrap_or(0).min(MAX_TRIALS);
    analysis.seed = options.seed;
    if !options.detail {
        clear_detail(&mut analysis);
    } else if !asked.detail {
        add_detail(chain, plan, options, known_envelopes, &mut analysis)?;
    }
    analysis.options = *options;
    Ok(analysis)
}

/// The budget and the dynamics, without Monte Carlo or detail.
fn deterministic(chain: &Chain, plan: &Plan, options: &Options) -> Result<Analysis, EvalError> {
    Ok(Analysis {
        budget: budget::budget(chain, plan, &options.budget)?,
        monte_carlo: None,
        shares: None,
        gum_checks: None,
        trials: 0,
        seed: options.seed,
        dynamics: dynamics(plan),
        verdicts: Vec::new(),
        envelopes: Vec::new(),
        accumulation: Vec::new(),
        uncalibrated: None,
        names: plan.names.clone(),
        alarms: Vec::new(),
        options: Options {
            trials: None,
            detail: false,
            ..*options
        },
    })
}

/// The Monte Carlo intervals at the budget's points, GUM checked against
/// them, and with the detail each drawn source's share.
fn add_monte_carlo(
    plan: &Plan,
    options: &Options,
    analysis: &mut Analysis,
    progress: &dyn Fn(usize, usize),
) -> Result<(), EvalError> {
    let budget = &analysis.budget;
    let sampled = match options.trials {
        Some(trials) if trials > 0 => Some(sample(
            plan,
            &Condition::of_points(&budget.points),
            &budget.noise,
            trials.min(MAX_TRIALS),
            options.seed,
            options.detail,
            progress,
        )?),
        _ => None,
    };
    let monte_carlo: Option<Vec<Interval>> = sampled
        .as_ref()
        .map(|s| s.iter().map(|s| s.interval).collect());
    analysis.gum_checks = monte_carlo.as_ref().map(|m| {
        budget
            .points
            .iter()
            .zip(m)
            .map(|(p, i)| check(p.gum_standard, i))
            .collect()
    });
    analysis.shares = sampled
        .filter(|_| options.detail)
        .map(|s| s.into_iter().map(|s| s.shares).collect());
    analysis.monte_carlo = monte_carlo;
    Ok(())
}

fn clear_detail(analysis: &mut Analysis) {
    analysis.envelopes = Vec::new();
    analysis.accumulation = Vec::new();
    analysis.uncalibrated = None;
    analysis.alarms = Vec::new();
}

/// What only a report shows: the limits, the error along the signal path
/// at the worst point, the budget without calibration, the alarms. The
/// limits are `known` when the caller took them at the budget's points.
fn add_detail(
    chain: &Chain,
    plan: &Plan,
    options: &Options,
    known: Option<&[Envelope]>,
    analysis: &mut Analysis,
) -> Result<(), EvalError> {
    analysis.envelopes = match known {
        Some(known) => known.to_vec(),
        None => envelopes(chain, plan, options.budget.points)?,
    };
    let worst = analysis
        .budget
        .points
        .iter()
        .max_by(|a, b| a.gum_expanded.total_cmp(&b.gum_expanded))
        .map(|p| Env {
            measurand: p.measurand,
            ambient: p.ambient,
            cold_junction: p.ambient,
        })
        .unwrap_or(Env {
            measurand: plan.range.0,
            ambient: plan.reference,
            cold_junction: plan.reference,
        });
    analysis.accumulation = accumulation(plan, &worst)?;
    analysis.uncalibrated = match &plan.nodes[plan.reading.index()] {
        Node::Convert(node::Convert { conversion, .. })
            if conversion.calibration != Calibration::None =>
        {
            let mut bare = plan.clone();
            if let Node::Convert(node::Convert { conversion, .. }) =
                &mut bare.nodes[bare.reading.index()]
            {
                conversion.calibration = Calibration::None;
            }
            let b = budget::budget(chain, &bare, &options.budget)?;
            Some(b.points.iter().map(|p| p.gum_expanded).collect())
        }
        Node::Excitation(_)
        | Node::Rtd(_)
        | Node::Thermocouple(_)
        | Node::Thermistor(_)
        | Node::IcVoltage(_)
        | Node::IcCurrent(_)
        | Node::StrainGauge(_)
        | Node::Transducer(_)
        | Node::Resistor(_)
        | Node::Bridge(_)
        | Node::Amplifier(_)
        | Node::Filter(_)
        | Node::Adc(_)
        | Node::Convert(_) => None,
    };
    analysis.alarms = alarm_limits(chain, plan, options.budget.k)?;
    Ok(())
}

/// A failed requirement is an error on its `require` line, naming the
/// largest contributors with their shares.
pub fn verdict_findings(chain: &Chain, analysis: &Analysis) -> Findings {
    let mut findings = Findings::new();
    let unit = chain.measurand_unit();
    let (diff_unit, factor) = chain.difference_unit();
    let diff = |x: f64| x * factor;
    for v in analysis.verdicts.iter().filter(|v| !v.pass) {
        let (code, message, help) = match v.kind {
            RequirementKind::Accuracy(method) => {
                let at = v.at.map(|(m, a)| format!(" at {} {unit}, ambient {} degC", trimmed(from_si(m, &unit), 6), trimmed(from_si(a, "degC"), 4))).unwrap_or_default();
                let top = v.top.iter().map(|(id, share)| format!("`{id}` {:.0} %", share * 100.0)).collect::<Vec<_>>().join(", ");
                (
                    Code::R611,
                    format!(
                        "accuracy ± {} {diff_unit} ({}) misses the required ± {} {diff_unit}{at}",
                        trimmed(diff(v.achieved), 3),
                        method_name(method.unwrap_or_default()),
                        trimmed(diff(v.limit), 6)
                    ),
                    format!("the largest contributors there: {top}; tighten them or relax the requirement"),
                )
            }
            RequirementKind::Resolution => (
                Code::R612,
                format!("resolution {} {diff_unit} ({}) misses the required {} {diff_unit}", trimmed(diff(v.achieved), 3), v.method.word().replace('_', "-"), trimmed(diff(v.limit), 6)),
                resolution_help(&analysis.budget, v.limit, &diff_unit, &diff),
            ),
            RequirementKind::Response => (
                Code::R613,
                format!("a step takes {} s to reach 90 % of the reading; the requirement is {} s", trimmed(v.achieved, 3), trimmed(v.limit, 6)),
                "a faster sensor, a wider filter, a higher rate or less averaging shortens the response".to_string(),
            ),
            RequirementKind::Rejection => (
                Code::R614,
                format!("the chain attenuates {} dB where {} dB is required", trimmed(20.0 * v.achieved.log10(), 3), trimmed(20.0 * v.limit.log10(), 3)),
                "lower the filter's cutoff, raise its order, or set the converter's digital notch at the mains frequency".to_string(),
            ),
        };
        findings.push(
            Finding::new(code, &chain.file, message)
                .label(v.span, "this requirement")
                .help(help),
        );
    }
    for v in &analysis.verdicts {
        if let Some(finding) = within_numerical_width(chain, v, analysis.trials, &diff_unit, &diff)
        {
            findings.push(finding);
        }
    }
    findings
}

/// R612's help, with the number that meets `limit` (SI): where one code
/// is finer than it, the conversions to average (the noise falls as
/// 1/√N); where it is not, the bits a converter needs more (averaging
/// goes no finer than a code here).
fn resolution_help(budget: &Budget, limit: f64, unit: &str, diff: &dyn Fn(f64) -> f64) -> String {
    let noise = &budget.noise;
    let code = budget.coarsest_code_step();
    if code > limit {
        let bits = (code / limit).log2().ceil().max(1.0);
        return format!(
            "one code is {} {unit}: {bits} bits more (a finer converter, or more gain before it) make a code finer than the requirement; averaging goes no finer than one code",
            trimmed(diff(code), 3)
        );
    }
    let mut average = (noise.noise_free / limit).powi(2).ceil().max(1.0);
    if noise.noise_free / average.sqrt() > limit {
        average += 1.0;
    }
    format!(
        "average {average} conversions a reading (`average {average}` in the conversion; now {}) for a noise-free resolution of {} {unit}; or narrow the noise bandwidth or lower the noise",
        noise.average,
        trimmed(diff(noise.noise_free / average.sqrt()), 3)
    )
}

/// R615 when a Monte Carlo verdict's margin is inside the interval's
/// numerical width, with the trials that would bring the width inside it
/// (the width goes as 1/√N).
fn within_numerical_width(
    chain: &Chain,
    v: &Verdict,
    trials: usize,
    unit: &str,
    diff: &dyn Fn(f64) -> f64,
) -> Option<Finding> {
    let width = v.numerical.filter(|w| *w > 0.0)?;
    let margin = (v.limit - v.achieved).abs();
    if margin > width {
        return None;
    }
    let needed = (trials as f64 * (width / margin.max(width * 1e-3)).powi(2)).ceil();
    let verdict = if v.pass { "passes" } else { "misses" };
    let help = if needed <= MAX_TRIALS as f64 {
        format!(
            "run about {} trials a point or more (`catena check --trials {}`) for the width to fit inside the margin",
            trimmed(significant_up(needed), 6),
            trimmed(significant_up(needed), 6)
        )
    } else {
        "the margin is too thin for any affordable number of trials: improve the largest contributor or agree a wider requirement".to_string()
    };
    Some(
        Finding::new(
            Code::R615,
            &chain.file,
            format!(
                "the Monte Carlo accuracy {} ± {} {unit} by {} {unit}, less than its ends' numerical width ± {} {unit} at {trials} trials",
                verdict,
                trimmed(diff(v.limit), 6),
                trimmed(diff(margin), 2),
                trimmed(diff(width), 2),
            ),
        )
        .label(v.span, "this requirement")
        .help(help),
    )
}

/// `x` rounded up to two significant digits.
fn significant_up(x: f64) -> f64 {
    let scale = 10f64.powi(x.log10().floor() as i32 - 1);
    (x / scale).ceil() * scale
}

fn method_name(method: AccuracyMethod) -> &'static str {
    match method {
        AccuracyMethod::WorstCase => "worst case",
        AccuracyMethod::MonteCarlo => "Monte Carlo 95 %",
        AccuracyMethod::Gum => "GUM, k = 2",
    }
}
