//! `catena budget SPEC`: the error budget by source and by method, per
//! point, with the noise, the dynamics and the requirement verdicts.

use std::collections::BTreeMap;
use std::io::IsTerminal;
use std::path::{Path, PathBuf};

use clap::Args;
use serde::Serialize;

use super::files::{check_one, collect};
use super::{terminal, Format, EXIT_FINDINGS, EXIT_OK, EXIT_USAGE};
use crate::analysis::budget::Options as BudgetOptions;
use crate::analysis::report::{
    analyse_with_progress, Analysis, Options, DEFAULT_SEED, DEFAULT_TRIALS, MAX_TRIALS,
};
use crate::analysis::{eval_finding, evaluable_part, soundness};
use crate::diagnostics::{render_human, Findings};
use crate::eval::lower;
use crate::model::{did_you_mean, Chain};
use crate::units::format::{from_si, trimmed};

#[derive(Args, Debug)]
pub struct BudgetArgs {
    /// Spec files, or folders to search for `*.catena`.
    #[arg(required = true)]
    paths: Vec<PathBuf>,
    /// The chain, when the file has several (default: all).
    #[arg(long)]
    chain: Option<String>,
    #[arg(long, value_enum, default_value_t = Format::Human)]
    format: Format,
    /// Monte Carlo trials per point (0: none) [default: catena.yaml's
    /// `monte_carlo.trials`, else 10000].
    #[arg(long)]
    trials: Option<usize>,
    /// The Monte Carlo seed: the same seed gives the same result
    /// [default: catena.yaml's `monte_carlo.seed`, else 1].
    #[arg(long)]
    seed: Option<u64>,
    /// Points across the measurand range.
    #[arg(long, default_value_t = 21)]
    points: usize,
    /// List the totals at every point, not only each ambient's worst.
    #[arg(long)]
    per_point: bool,
}

pub fn run(args: BudgetArgs) -> u8 {
    if args.trials.is_some_and(|t| t > MAX_TRIALS) {
        errln!("catena: --trials is at most {MAX_TRIALS}");
        return EXIT_USAGE;
    }
    if !(2..=1001).contains(&args.points) {
        errln!("catena: --points takes 2 to 1001");
        return EXIT_USAGE;
    }
    let files = match collect(&args.paths) {
        Ok(f) => f,
        Err(e) => {
            errln!("catena: {e}");
            return EXIT_USAGE;
        }
    };
    let several = files.len() > 1;
    let mut docs = Vec::new();
    let mut status = EXIT_OK;
    let mut chain_found = args.chain.is_none();
    for path in &files {
        if several && args.format == Format::Human {
            outln!("file {}\n", path.display());
        }
        let file_status = match budget_file(path, &args, several, &mut docs) {
            Ok(s) => {
                chain_found = true;
                s
            }
            Err(ChainAbsent) if several => EXIT_OK,
            Err(ChainAbsent) => return EXIT_USAGE,
        };
        status = status.max(file_status);
    }
    if !chain_found {
        let name = args.chain.as_deref().unwrap_or_default();
        errln!("catena: no chain `{name}` in any of the files");
        return EXIT_USAGE;
    }
    if args.format == Format::Json && !docs.is_empty() {
        let text = if docs.len() == 1 {
            serde_json::to_string_pretty(&docs[0])
        } else {
            serde_json::to_string_pretty(&docs)
        };
        outln!("{}", text.unwrap_or_default());
    }
    status
}

/// `--chain` names no chain of this file.
struct ChainAbsent;

/// The chains of one file that `--chain` selects; with one file, a name it
/// lacks is reported here.
fn select<'a>(
    chains: &'a [Chain],
    wanted: Option<&str>,
    several: bool,
) -> Result<Vec<&'a Chain>, ChainAbsent> {
    let Some(name) = wanted else {
        return Ok(chains.iter().collect());
    };
    if let Some(c) = chains.iter().find(|c| c.name == name) {
        return Ok(vec![c]);
    }
    if !several {
        match did_you_mean(name, chains.iter().map(|c| c.name.as_str())) {
            Some(n) => errln!("catena: no chain `{name}`; did you mean `{n}`?"),
            None => errln!("catena: no chain `{name}`"),
        }
    }
    Err(ChainAbsent)
}

/// The budget of one file's chains: human output printed, JSON documents
/// gathered into `docs`; the file's exit status.
fn budget_file(
    path: &Path,
    args: &BudgetArgs,
    several: bool,
    docs: &mut Vec<BudgetJson>,
) -> Result<u8, ChainAbsent> {
    let (checked, config) = match check_one(path) {
        Ok(c) => c,
        Err(status) => return Ok(status),
    };
    // Flags first, then the configuration, then the defaults.
    let trials = args
        .trials
        .or(config.trials.as_ref().map(|s| s.value))
        .unwrap_or(DEFAULT_TRIALS);
    let seed = args
        .seed
        .or(config.seed.as_ref().map(|s| s.value))
        .unwrap_or(DEFAULT_SEED);
    // What the analyses found (a requirement missed, a stage beyond its
    // limit) is what the budget explains, not a reason to withhold it;
    // errors before them leave no complete chain.
    let mut errors = Findings::new();
    for x in checked
        .findings
        .iter()
        .filter(|f| f.severity() == crate::diagnostics::Severity::Error)
    {
        errors.push(x.clone());
    }
    if !errors.is_empty() && !checked.resolved {
        return Ok(show(&errors));
    }
    let chains = select(&checked.chains, args.chain.as_deref(), several)?;
    let options = Options {
        budget: BudgetOptions {
            points: args.points,
            ..BudgetOptions::default()
        },
        trials: (trials > 0).then_some(trials),
        seed,
        detail: true,
    };
    let progress = std::io::stderr().is_terminal() && trials * args.points >= 1_000_000;
    let mut outputs: Vec<(Chain, Analysis)> = Vec::new();
    // Warnings about the budget itself (R616), shown after it.
    let mut notes: Vec<crate::diagnostics::Finding> = Vec::new();
    for chain in chains {
        let analysed = analyse_chain(chain, &options, progress);
        match analysed {
            Ok(a) => {
                // A number that is not one is never shown (E505 says why).
                let unsound = soundness::non_finite(chain, &a);
                if unsound.is_empty() {
                    notes.extend(soundness::nonlinear(chain, &a));
                    outputs.push((chain.clone(), a));
                } else {
                    errors.extend(unsound);
                }
            }
            // With the check's errors beside it, what can be evaluated is
            // still worth showing: the part of the range that evaluates.
            Err(e) => match evaluable_part(chain).filter(|_| !errors.is_empty()) {
                Some(part) => match analyse_chain(&part, &options, progress) {
                    Ok(a) if soundness::non_finite(&part, &a).is_empty() => {
                        if args.format == Format::Human {
                            outln!("{}", part_note(&part));
                        }
                        notes.extend(soundness::nonlinear(&part, &a));
                        outputs.push((part, a));
                    }
                    Ok(a) => errors.extend(soundness::non_finite(&part, &a)),
                    Err(_) => return Ok(report_error(chain, &e, &errors)),
                },
                None => return Ok(report_error(chain, &e, &errors)),
            },
        }
    }
    let shown = path.to_string_lossy();
    match args.format {
        Format::Json => docs.extend(outputs.iter().map(|(c, a)| json(&shown, c, a))),
        Format::Human => {
            for (c, a) in &outputs {
                out!("{}", super::budget_table::human(c, a, args.per_point));
            }
        }
    }
    let mut shown_notes = Findings::new();
    for note in notes {
        let known = errors
            .iter()
            .chain(checked.findings.iter())
            .any(|f| f.code == note.code && f.message == note.message);
        if !known {
            shown_notes.push(note);
        }
    }
    if outputs.is_empty() && !errors.is_empty() {
        let status = show(&errors);
        errln!("catena: no budget until these are fixed");
        return Ok(status);
    }
    if !errors.is_empty() {
        errors.extend(shown_notes);
        if args.format == Format::Human {
            outln!(
                "{} found by check (below): the budget above is what the chain does as written",
                match errors.len() {
                    1 => "1 error".to_string(),
                    n => format!("{n} errors"),
                }
            );
        }
        return Ok(show(&errors));
    }
    if !shown_notes.is_empty() {
        show(&shown_notes);
    }
    let failed = outputs
        .iter()
        .any(|(_, a)| a.verdicts.iter().any(|v| !v.pass));
    Ok(if failed { EXIT_FINDINGS } else { EXIT_OK })
}

/// Lowers and analyses one chain, with a progress line on a terminal.
fn analyse_chain(
    chain: &Chain,
    options: &Options,
    progress: bool,
) -> Result<Analysis, crate::eval::EvalError> {
    let plan = lower(chain)?;
    // On a terminal, a line that counts the Monte Carlo points; never on a
    // pipe, where it would land in someone's log.
    let show = |done: usize, total: usize| {
        if progress {
            err!(
                "\rcatena: Monte Carlo for `{}`: {done} of {total} points done",
                chain.name
            );
        }
    };
    let result = analyse_with_progress(chain, &plan, options, &show);
    if progress {
        err!("\r\x1b[2K");
    }
    result
}

/// The line that says a budget covers only part of the range.
fn part_note(part: &Chain) -> String {
    let Some(m) = &part.measurand else {
        return String::new();
    };
    let show = |x: f64| trimmed(from_si(x, &m.unit), 6);
    format!(
        "chain {}: budget over {} .. {} {} only, where every stage evaluates (the findings below say why not beyond)\n",
        part.name,
        show(m.low),
        show(m.high),
        m.unit
    )
}

/// Why the budget could not be made: what the check found, which
/// explains it, or else the evaluation's own error.
fn report_error(chain: &Chain, e: &crate::eval::EvalError, found: &Findings) -> u8 {
    if found.is_empty() {
        let mut f = Findings::new();
        f.push(eval_finding(chain, e, None));
        return show(&f);
    }
    let status = show(found);
    errln!(
        "catena: no budget for `{}` until these are fixed; `catena eval --at` shows its stage values",
        chain.name
    );
    status
}

fn show(findings: &Findings) -> u8 {
    err!(
        "{}",
        render_human(
            &findings.clone().sorted(),
            terminal::stderr_color(),
            terminal::width()
        )
    );
    EXIT_FINDINGS
}

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
    side: String,
    at: f64,
    code: i64,
    guard_band: f64,
    trip_at: f64,
    trip_code: i64,
}

#[derive(Serialize)]
struct StageJson {
    stage: String,
    value: f64,
    unit: &'static str,
    gain: f64,
    error: f64,
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
struct BudgetJson {
    schema_version: u32,
    file: String,
    chain: String,
    unit: String,
    measurand_unit: String,
    trials: usize,
    seed: u64,
    points: Vec<PointJson>,
    noise: NoiseJson,
    dynamics: DynamicsJson,
    limits: Vec<LimitJson>,
    stages: Vec<StageJson>,
    alarms: Vec<AlarmJson>,
    requirements: Vec<RequirementJson>,
}

fn plan_name(a: &Analysis, node: usize) -> String {
    a.names.get(node).cloned().unwrap_or_default()
}

fn json(file: &str, chain: &Chain, a: &Analysis) -> BudgetJson {
    let (unit, f) = chain.difference_unit();
    let m_unit = chain.measurand_unit();
    let points = a
        .budget
        .points
        .iter()
        .enumerate()
        .map(|(i, p)| PointJson {
            measurand: from_si(p.measurand, &m_unit),
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
                    id: c.id.clone(),
                    kind: c.kind,
                    contribution: c.worst * f,
                    standard_uncertainty: c.standard * f,
                    linear: c.linear,
                    gum_share: p.gum_share(c),
                    monte_carlo_share: a.monte_carlo_share(i, &c.id),
                })
                .collect(),
        })
        .collect();
    let n = &a.budget.noise;
    let requirement_scale = |name: &str| {
        if name == "accuracy" || name == "resolution" {
            f
        } else {
            1.0
        }
    };
    BudgetJson {
        schema_version: 1,
        file: file.to_string(),
        chain: chain.name.clone(),
        unit,
        measurand_unit: m_unit.clone(),
        trials: a.trials,
        seed: a.seed,
        points,
        noise: NoiseJson {
            enbw_hz: n.enbw_hz,
            total_v_rms: n.total_v,
            sigma: n.sigma * f,
            sigma_averaged: n.sigma_averaged * f,
            average: n.average,
            noise_free: n.noise_free * f,
            noise_free_averaged: n.noise_free_averaged * f,
            lsb: n.lsb * f,
            terms: n.terms.iter().map(|t| (t.id.clone(), t.rms_v)).collect(),
            referred: n
                .referred
                .iter()
                .map(|t| (t.id.clone(), t.rms_v * f))
                .collect(),
        },
        dynamics: DynamicsJson {
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
        },
        limits: a
            .envelopes
            .iter()
            .map(|e| LimitJson {
                stage: plan_name(a, e.node),
                limit: e.limit.describe(),
                unit: e.unit.symbol(),
                allowed: [e.allowed.0, e.allowed.1].map(|x| x.is_finite().then_some(x)),
                reach: [e.reach.0, e.reach.1],
                headroom: e.headroom(),
            })
            .collect(),
        alarms: a
            .alarms
            .iter()
            .map(|x| AlarmJson {
                side: x.side.clone(),
                at: from_si(x.at, &m_unit),
                code: x.code,
                guard_band: x.guard_band * f,
                trip_at: from_si(x.trip_at, &m_unit),
                trip_code: x.trip_code,
            })
            .collect(),
        stages: a
            .accumulation
            .iter()
            .map(|n| StageJson {
                stage: plan_name(a, n.node),
                value: n.value,
                unit: n.unit,
                gain: n.gain,
                error: n.error * f,
            })
            .collect(),
        requirements: a
            .verdicts
            .iter()
            .map(|v| RequirementJson {
                name: v.kind.word(),
                limit: v.limit * requirement_scale(v.kind.word()),
                achieved: v.achieved * requirement_scale(v.kind.word()),
                method: v.method.word(),
                pass: v.pass,
            })
            .collect(),
    }
}
