//! `catena budget SPEC`: the error budget by source and by method, per
//! point, with the noise, the dynamics and the requirement verdicts.

use super::settings;
use std::io::IsTerminal;
use std::path::{Path, PathBuf};

use clap::Args;

use super::budget_json::{json, BudgetJson};
use super::files::{check_one, collect};
use super::{terminal, Format, EXIT_FINDINGS, EXIT_OK, EXIT_USAGE};
use crate::analysis::report::{analyse_reusing, Analysis, Options};
use crate::analysis::Keep;
use crate::analysis::{eval_finding, evaluable_part, soundness};
use crate::check::CheckedFile;
use crate::diagnostics::unknown_word;
use crate::diagnostics::{render_human, Finding, Findings, Severity};
use crate::eval::{lower, Plan};
use crate::model::Chain;
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
    #[command(flatten)]
    sampling: settings::SamplingArgs,
    /// List the totals at every point, not only each ambient's worst.
    #[arg(long)]
    per_point: bool,
}

pub fn run(args: BudgetArgs) -> u8 {
    if !args.sampling.usable() {
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
        let names = chains.iter().map(|c| c.name.as_str());
        errln!("catena: {}", unknown_word("chain", name, names, None));
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
    let (checked, config) = match check_one(path, Keep::Reports) {
        Ok(c) => c,
        Err(status) => return Ok(status),
    };
    // What the analyses found (a requirement missed, a stage beyond its
    // limit) is what the budget explains, not a reason to withhold it;
    // errors before them leave no complete chain.
    let mut errors = Findings::new();
    errors.extend(
        checked
            .findings
            .iter()
            .filter(|f| f.severity() == Severity::Error)
            .cloned(),
    );
    if !errors.is_empty() && !checked.resolved {
        return Ok(show(&errors));
    }
    let chains = select(&checked.chains, args.chain.as_deref(), several)?;
    let mut run = Run {
        args,
        options: args.sampling.options(&config),
        checked: &checked,
        outputs: Vec::new(),
        notes: Vec::new(),
        errors,
    };
    for chain in chains {
        if let Err(status) = run.chain(chain) {
            return Ok(status);
        }
    }
    let shown = path.to_string_lossy();
    match args.format {
        Format::Json => docs.extend(run.outputs.iter().map(|(c, a)| json(&shown, c, a))),
        Format::Human => {
            for (c, a) in &run.outputs {
                out!("{}", super::budget_table::human(c, a, args.per_point));
            }
        }
    }
    Ok(run.finish())
}

/// One file's budgets as they are made.
struct Run<'a> {
    args: &'a BudgetArgs,
    options: Options,
    checked: &'a CheckedFile,
    outputs: Vec<(Chain, Analysis)>,
    /// Warnings about the budget itself (R616), shown after it.
    notes: Vec<Finding>,
    errors: Findings,
}

impl Run<'_> {
    /// On a terminal, a progress line when Monte Carlo will take a while.
    fn progress(&self) -> bool {
        let trials = self.options.trials.unwrap_or(0);
        std::io::stderr().is_terminal() && trials * self.options.budget.points >= 1_000_000
    }

    /// Analyses one chain, or the part of its range that evaluates; Err
    /// with the exit status when neither can be had.
    fn chain(&mut self, chain: &Chain) -> Result<(), u8> {
        let (options, progress) = (self.options, self.progress());
        let analysed = self.checked.plan(chain).and_then(|plan| {
            let earlier = self.checked.analysis(chain);
            analyse_chain(chain, &plan, earlier, &options, progress)
        });
        let e = match analysed {
            Ok(a) => {
                self.keep(chain.clone(), a);
                return Ok(());
            }
            Err(e) => e,
        };
        // With the check's errors beside it, what can be evaluated is
        // still worth showing: the part of the range that evaluates.
        let Some(part) = evaluable_part(chain).filter(|_| !self.errors.is_empty()) else {
            return Err(report_error(chain, &e, &self.errors));
        };
        match lower(&part).and_then(|plan| analyse_chain(&part, &plan, None, &options, progress)) {
            Ok(a) if soundness::non_finite(&part, &a).is_empty() => {
                if self.args.format == Format::Human {
                    outln!("{}", part_note(&part));
                }
                self.keep(part, a);
                Ok(())
            }
            Ok(a) => {
                self.errors.extend(soundness::non_finite(&part, &a));
                Ok(())
            }
            Err(_) => Err(report_error(chain, &e, &self.errors)),
        }
    }

    /// An analysis to show, unless a number in it is not one (E505 says
    /// why).
    fn keep(&mut self, chain: Chain, a: Analysis) {
        let unsound = soundness::non_finite(&chain, &a);
        if unsound.is_empty() {
            self.notes.extend(soundness::nonlinear(&chain, &a));
            self.outputs.push((chain, a));
        } else {
            self.errors.extend(unsound);
        }
    }

    /// The findings after the budgets, and the file's exit status.
    fn finish(mut self) -> u8 {
        let mut shown_notes = Findings::new();
        for note in std::mem::take(&mut self.notes) {
            let known = self
                .errors
                .iter()
                .chain(self.checked.findings.iter())
                .any(|f| f.code == note.code && f.message == note.message);
            if !known {
                shown_notes.push(note);
            }
        }
        if self.outputs.is_empty() && !self.errors.is_empty() {
            let status = show(&self.errors);
            errln!("catena: no budget until these are fixed");
            return status;
        }
        if !self.errors.is_empty() {
            self.errors.extend(shown_notes);
            if self.args.format == Format::Human {
                outln!(
                    "{} found by check (below): the budget above is what the chain does as written",
                    match self.errors.len() {
                        1 => "1 error".to_string(),
                        n => format!("{n} errors"),
                    }
                );
            }
            return show(&self.errors);
        }
        if !shown_notes.is_empty() {
            show(&shown_notes);
        }
        let failed = self
            .outputs
            .iter()
            .any(|(_, a)| a.verdicts.iter().any(|v| !v.pass));
        if failed {
            EXIT_FINDINGS
        } else {
            EXIT_OK
        }
    }
}

/// Analyses one chain, with a progress line on a terminal, keeping what
/// `earlier` (the analysis the check judged it on) already holds.
fn analyse_chain(
    chain: &Chain,
    plan: &Plan,
    earlier: Option<Analysis>,
    options: &Options,
    progress: bool,
) -> Result<Analysis, crate::eval::EvalError> {
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
    let result = analyse_reusing(chain, plan, options, earlier, &show);
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
