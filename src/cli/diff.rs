//! `catena diff OLD NEW` and `catena diff --rev REV [PATH...]`: what a
//! change did to a chain — its text as the model reads it, then its
//! verdicts, margins, worst points, contributors, headroom, converter
//! window, alarm trips and fault detection — told apart from numerical
//! noise.

use super::settings;
use std::path::{Path, PathBuf};
use std::sync::Arc;

use clap::{Args, ValueEnum};

use super::diff_render::{human, markdown, ChainDiff, DiffReport, FileDiff};
use super::files::{check_configured, check_one, collect, plain_io};
use super::report::judged_faults;
use super::revision::{self, Snapshot};
use super::{EXIT_FINDINGS, EXIT_OK, EXIT_USAGE};
use crate::analysis::report::{analyse_reusing, Options};
use crate::analysis::review::{
    diff_outcomes, outcome, spec_changes, Direction, Outcome, DEFAULT_THRESHOLD,
};
use crate::analysis::Keep;
use crate::check::CheckedFile;
use crate::config::Config;
use crate::model::Chain;

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum ReviewFormat {
    Human,
    Markdown,
    Json,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum FailOn {
    /// A verdict flipped to fail, a margin shrank past `--threshold`, a
    /// signal passed a limit it kept, a fault became silent or
    /// undetermined, or a chain stopped evaluating.
    Regression,
}

#[derive(Args, Debug)]
pub struct DiffArgs {
    /// OLD and NEW specs (`FILE` or `FILE#chain`); with `--rev`, the specs
    /// to compare with their version at REV (default: every changed one).
    paths: Vec<String>,
    /// Compare the working tree's specs with their version at this git
    /// revision (its parts files from the same revision).
    #[arg(long)]
    rev: Option<String>,
    #[arg(long, value_enum, default_value_t = ReviewFormat::Human)]
    format: ReviewFormat,
    /// Exit 1 on a regression.
    #[arg(long, value_enum)]
    fail_on: Option<FailOn>,
    /// The shrink of a requirement's margin, in % of its limit, that
    /// counts as a regression.
    #[arg(long, default_value_t = DEFAULT_THRESHOLD * 100.0)]
    threshold: f64,
    /// The same on both sides; unset, from the `catena.yaml` of the first
    /// new spec's folder.
    #[command(flatten)]
    sampling: settings::SamplingArgs,
}

/// One side of a comparison: a checked file and, when named, one chain.
pub(super) struct Side {
    pub label: String,
    pub checked: CheckedFile,
    pub chain: Option<String>,
    /// The configuration that applies to the spec's folder.
    pub config: Arc<Config>,
}

/// `FILE` or `FILE#chain`, checked.
pub(super) fn load(arg: &str) -> Result<Side, u8> {
    let (path, chain) = match arg.rsplit_once('#') {
        Some((p, c)) if !c.is_empty() => (p, Some(c.to_string())),
        _ => (arg, None),
    };
    let (checked, config) = check_one(Path::new(path), Keep::Reports)?;
    Ok(Side {
        label: arg.to_string(),
        checked,
        chain,
        config,
    })
}

/// The analysis options every side shares: the sampling flags, else the
/// configuration of the first side given (`sides` in order, the new side
/// of a pair first), else the defaults.
pub(super) fn options<'a>(
    sampling: &settings::SamplingArgs,
    mut sides: impl Iterator<Item = &'a Side>,
) -> Options {
    let config = sides
        .next()
        .map(|s| Arc::clone(&s.config))
        .unwrap_or_default();
    sampling.options(&config)
}

/// What a chain achieves, or why it cannot be said.
pub(super) fn evaluate(
    checked: &CheckedFile,
    chain: &Chain,
    options: &Options,
) -> Result<Outcome, String> {
    if !checked.resolved {
        let n = checked.findings.error_count();
        return Err(format!("not evaluated: {n} error(s) found by check"));
    }
    let not_evaluated = |e: crate::eval::EvalError| format!("not evaluated: {e}");
    // What the check computed is reused: the plan, and its analysis where
    // the options agree.
    let plan = checked.plan(chain).map_err(not_evaluated)?;
    let earlier = checked.analysis(chain);
    let a = analyse_reusing(chain, &plan, options, earlier, &|_, _| {}).map_err(not_evaluated)?;
    let judged = judged_faults(checked, chain, &plan);
    Ok(outcome(
        chain,
        &plan,
        &a,
        judged.as_ref().map(|j| &j.report),
    ))
}

pub fn run(args: DiffArgs) -> u8 {
    if !args.sampling.usable() {
        return EXIT_USAGE;
    }
    if !(args.threshold.is_finite() && args.threshold >= 0.0) {
        errln!("catena: --threshold takes a percentage of zero or more");
        return EXIT_USAGE;
    }
    let threshold = args.threshold / 100.0;
    let files = match &args.rev {
        Some(rev) => match rev_pairs(rev, &args.paths) {
            Ok(pairs) => pairs,
            Err(message) => {
                errln!("catena: {message}");
                return EXIT_USAGE;
            }
        },
        None => {
            if args.paths.len() != 2 {
                errln!("catena: diff takes OLD and NEW (or `--rev REV [PATH...]`)");
                return EXIT_USAGE;
            }
            let old = match load(&args.paths[0]) {
                Ok(s) => s,
                Err(status) => return status,
            };
            let new = match load(&args.paths[1]) {
                Ok(s) => s,
                Err(status) => return status,
            };
            vec![(Some(old), Some(new))]
        }
    };
    let options = options(
        &args.sampling,
        files.iter().flat_map(|(o, n)| n.iter().chain(o.iter())),
    );
    let files: Vec<FileDiff> = files
        .iter()
        .map(|(o, n)| file_diff(o.as_ref(), n.as_ref(), &options, threshold))
        .collect();
    let chains = || files.iter().flat_map(|f| f.chains.iter());
    let report = DiffReport {
        schema_version: 2,
        direction: chains()
            .map(|c| c.direction)
            .fold(Direction::Neutral, Direction::and),
        regression: chains().any(|c| c.regression),
        threshold_percent: args.threshold,
        trials: options.trials.unwrap_or(0),
        seed: options.seed,
        files,
    };
    match args.format {
        ReviewFormat::Json => {
            outln!(
                "{}",
                serde_json::to_string_pretty(&report).unwrap_or_default()
            )
        }
        ReviewFormat::Markdown => out!("{}", markdown(&report)),
        ReviewFormat::Human => out!("{}", human(&report)),
    }
    if args.fail_on == Some(FailOn::Regression) && report.regression {
        EXIT_FINDINGS
    } else {
        EXIT_OK
    }
}

type Pair = (Option<Side>, Option<Side>);

/// The specs to compare with their version at `rev`: the ones named (or
/// every changed `*.catena`), each with its old path after renames.
fn rev_pairs(rev: &str, paths: &[String]) -> Result<Vec<Pair>, String> {
    let cwd = std::env::current_dir()
        .and_then(std::fs::canonicalize)
        .map_err(|e| plain_io(&e))?;
    let root = revision::root(&cwd)?;
    let changes = revision::changes(&root, rev)?;
    let is_spec = |p: &Option<String>| p.as_deref().is_some_and(|p| p.ends_with(".catena"));
    let mut wanted: Vec<revision::Changed> = Vec::new();
    if paths.is_empty() {
        wanted.extend(
            changes
                .iter()
                .filter(|c| is_spec(&c.new) || is_spec(&c.old))
                .cloned(),
        );
        let users = users_of_changed_parts(&root, &changes, &wanted)?;
        wanted.extend(users);
    } else {
        let given: Vec<PathBuf> = paths.iter().map(PathBuf::from).collect();
        for file in collect(&given)? {
            let full = std::fs::canonicalize(&file)
                .map_err(|e| format!("cannot read `{}`: {}", file.display(), plain_io(&e)))?;
            let rel = full
                .strip_prefix(&root)
                .map_err(|_| {
                    format!(
                        "`{}` is not in the repository at `{}`",
                        file.display(),
                        root.display()
                    )
                })?
                .to_string_lossy()
                .replace('\\', "/");
            let old = changes
                .iter()
                .find(|c| c.new.as_deref() == Some(rel.as_str()))
                .map_or(Some(rel.clone()), |c| c.old.clone());
            wanted.push(revision::Changed {
                old,
                new: Some(rel),
            });
        }
    }
    let mut pairs = Vec::new();
    for c in wanted {
        let old = match &c.old {
            Some(p) => old_side(&root, rev, p)?,
            None => None,
        };
        let new = match &c.new {
            Some(p) => {
                let here = relative_to(&cwd, &root.join(p));
                let mut side =
                    load(&here.to_string_lossy()).map_err(|_| format!("cannot read `{p}`"))?;
                side.label = p.clone();
                Some(side)
            }
            None => None,
        };
        pairs.push((old, new));
    }
    Ok(pairs)
}

/// `path` as seen from `dir` (both canonical), so findings in the new
/// side's parts files name them as the user would.
fn relative_to(dir: &Path, path: &Path) -> PathBuf {
    let common = dir
        .components()
        .zip(path.components())
        .take_while(|(a, b)| a == b)
        .count();
    let mut out: PathBuf = dir.components().skip(common).map(|_| "..").collect();
    out.extend(path.components().skip(common));
    out
}

/// The specs of the working tree not changed themselves whose parts
/// files changed since the revision: what they do may have moved.
fn users_of_changed_parts(
    root: &Path,
    changes: &[revision::Changed],
    specs_changed: &[revision::Changed],
) -> Result<Vec<revision::Changed>, String> {
    let touched = |p: &str| {
        changes
            .iter()
            .any(|c| c.new.as_deref() == Some(p) || c.old.as_deref() == Some(p))
    };
    let mut out = Vec::new();
    for file in collect(&[root.to_path_buf()])? {
        let rel = relative_to(root, &file)
            .to_string_lossy()
            .replace('\\', "/");
        if specs_changed
            .iter()
            .any(|c| c.new.as_deref() == Some(rel.as_str()))
        {
            continue;
        }
        let Ok(text) = std::fs::read_to_string(&file) else {
            continue;
        };
        let dir = rel.rsplit_once('/').map_or("", |(d, _)| d);
        let (ast, _) =
            crate::syntax::parse(&crate::diagnostics::SourceFile::new(rel.as_str(), text));
        let uses_changed = ast
            .uses
            .iter()
            .filter_map(|u| revision::join_inside(dir, &u.path.value))
            .any(|p| touched(&p));
        if uses_changed {
            out.push(revision::Changed {
                old: Some(rel.clone()),
                new: Some(rel),
            });
        }
    }
    Ok(out)
}

/// The spec at `rev`, checked with the parts files it uses from the same
/// revision; None when it did not exist there.
fn old_side(root: &Path, rev: &str, path: &str) -> Result<Option<Side>, String> {
    let Ok(bytes) = revision::show(root, rev, path) else {
        return Ok(None);
    };
    let snapshot = Snapshot::new()?;
    let spec = snapshot.put(path, &bytes)?;
    let dir = path.rsplit_once('/').map_or("", |(d, _)| d);
    let text = String::from_utf8_lossy(&bytes);
    let file = crate::diagnostics::SourceFile::new(path, text.as_ref());
    let (ast, _) = crate::syntax::parse(&file);
    for u in &ast.uses {
        if let Some(part) = revision::join_inside(dir, &u.path.value) {
            if let Ok(b) = revision::show(root, rev, &part) {
                snapshot.put(&part, &b)?;
            }
        }
    }
    // The configuration that applied at the revision: every
    // `catena.yaml` from the spec's folder up to the root.
    let mut folder = Some(dir);
    while let Some(d) = folder {
        let config = if d.is_empty() {
            "catena.yaml".to_string()
        } else {
            format!("{d}/catena.yaml")
        };
        if let Ok(b) = revision::show(root, rev, &config) {
            snapshot.put(&config, &b)?;
        }
        folder = (!d.is_empty()).then(|| d.rsplit_once('/').map_or("", |(up, _)| up));
    }
    let base = spec.parent().map(Path::to_path_buf).unwrap_or_default();
    let label = format!("{rev}:{path}");
    let (checked, config) = check_configured(&label, &bytes, &base, Keep::Reports);
    Ok(Some(Side {
        label,
        checked,
        chain: None,
        config,
    }))
}

fn chosen(side: &Side) -> Vec<&Chain> {
    side.checked
        .chains
        .iter()
        .filter(|c| side.chain.as_ref().is_none_or(|n| &c.name == n))
        .collect()
}

fn file_diff(
    old: Option<&Side>,
    new: Option<&Side>,
    options: &Options,
    threshold: f64,
) -> FileDiff {
    let mut out = FileDiff {
        old: old.map(|s| s.label.clone()),
        new: new.map(|s| s.label.clone()),
        chains: Vec::new(),
        added_chains: Vec::new(),
        removed_chains: Vec::new(),
        notes: Vec::new(),
    };
    let (Some(old), Some(new)) = (old, new) else {
        out.notes.push(if new.is_some() {
            "new since the revision".into()
        } else {
            "removed since the revision".into()
        });
        return out;
    };
    let (olds, news) = (chosen(old), chosen(new));
    for side in [old, new] {
        if let Some(name) = &side.chain {
            if !side.checked.chains.iter().any(|c| &c.name == name) {
                out.notes
                    .push(format!("no chain `{name}` in `{}`", side.label));
            }
        }
    }
    // One chain a side is a pair whatever its name; otherwise by name.
    let pairs: Vec<(&Chain, &Chain)> = if olds.len() == 1 && news.len() == 1 {
        vec![(olds[0], news[0])]
    } else {
        news.iter()
            .filter_map(|n| olds.iter().find(|o| o.name == n.name).map(|o| (*o, *n)))
            .collect()
    };
    out.added_chains = news
        .iter()
        .filter(|n| !pairs.iter().any(|p| p.1.name == n.name))
        .map(|c| c.name.clone())
        .collect();
    out.removed_chains = olds
        .iter()
        .filter(|o| !pairs.iter().any(|p| p.0.name == o.name))
        .map(|c| c.name.clone())
        .collect();
    for (o, n) in pairs {
        out.chains
            .push(chain_diff(old, o, new, n, options, threshold));
    }
    out
}

fn chain_diff(
    old: &Side,
    o: &Chain,
    new: &Side,
    n: &Chain,
    options: &Options,
    threshold: f64,
) -> ChainDiff {
    let mut notes = Vec::new();
    let before = evaluate(&old.checked, o, options).map_err(|e| notes.push(format!("before: {e}")));
    let after = evaluate(&new.checked, n, options).map_err(|e| notes.push(format!("after: {e}")));
    let outcome = match (&before, &after) {
        (Ok(b), Ok(a)) => Some(diff_outcomes(b, a, threshold)),
        _ => None,
    };
    // A chain that evaluated before and no longer does is a regression.
    let broke = before.is_ok() && after.is_err();
    ChainDiff {
        chain: n.name.clone(),
        old_chain: (o.name != n.name).then(|| o.name.clone()),
        direction: if broke {
            Direction::Worse
        } else {
            outcome.as_ref().map_or(Direction::Neutral, |d| d.direction)
        },
        regression: broke || outcome.as_ref().is_some_and(|d| d.regression),
        spec: spec_changes(o, n),
        outcome,
        notes,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::faults::FAULT_RUNS;
    use crate::analysis::review::FaultsOutcome;

    /// A chain's outcome carries the fault verdicts the check judged, not
    /// a second judgement.
    #[test]
    fn an_outcome_reuses_the_checks_fault_verdicts() {
        let spec = Path::new(env!("CARGO_MANIFEST_DIR")).join("specs/pottery_kiln.catena");
        let side = load(&spec.to_string_lossy()).expect("the demo reads");
        let options = Options {
            trials: None,
            ..Options::default()
        };
        for chain in &side.checked.chains {
            FAULT_RUNS.with(|runs| runs.set(0));
            let outcome = evaluate(&side.checked, chain, &options).expect("an outcome");
            assert_eq!(FAULT_RUNS.with(std::cell::Cell::get), 0);
            // The same verdicts a fresh judgement gives.
            let plan = side.checked.plan(chain).expect("a plan");
            let fresh = crate::analysis::faults::analyse(chain, &plan).expect("judged");
            let judged = outcome.faults.expect("the faults were judged");
            assert_eq!(judged, FaultsOutcome::of(chain, &fresh));
        }
    }
}
