//! `catena report SPEC`: the document a design review reads, as JSON,
//! Markdown or self-contained HTML, one model rendered three ways.

use super::settings;
use std::borrow::Cow;
use std::path::{Path, PathBuf};
use std::process::Command;

use clap::Args;

use super::files::check_one;
use super::{terminal, EXIT_FINDINGS, EXIT_OK, EXIT_USAGE};
use crate::analysis::checklist::{checklist, Checklist, Sources};
use crate::analysis::faults::{self, FaultCheck};
use crate::analysis::ranges::Envelope;
use crate::analysis::report::{analyse_reusing, Options};
use crate::analysis::soundness;
use crate::check::CheckedFile;
use crate::diagnostics::unknown_word;
use crate::diagnostics::{render_human, Code, Findings, Severity};
use crate::emit::report::{
    chain_report, failed_report, render, summary_row, BuildOptions, Report, ReportFormat,
    SCHEMA_VERSION,
};
use crate::emit::write_atomic;
use crate::eval::Plan;
use crate::model::Chain;

#[derive(Args, Debug)]
pub struct ReportArgs {
    /// A spec file, or a folder: one report per spec and an index (needs `-o DIR`).
    path: PathBuf,
    /// Only this chain of the spec.
    #[arg(long)]
    chain: Option<String>,
    /// The format [default: from `-o`'s extension, else html].
    #[arg(long, value_enum)]
    format: Option<ReportFormat>,
    /// Where to write: a file, or a folder (created if missing) for the
    /// report with its plots beside it [default: standard output].
    #[arg(short = 'o', long = "output")]
    output: Option<PathBuf>,
    /// State the time the report was made (otherwise the same spec gives
    /// the same bytes).
    #[arg(long)]
    timestamp: bool,
    #[command(flatten)]
    sampling: settings::SamplingArgs,
}

pub fn run(args: ReportArgs) -> u8 {
    if !args.sampling.usable() {
        return EXIT_USAGE;
    }
    let format = args.format.unwrap_or_else(|| {
        args.output
            .as_deref()
            .and_then(|o| o.extension())
            .and_then(|e| ReportFormat::from_extension(&e.to_string_lossy()))
            .unwrap_or(ReportFormat::Html)
    });
    if args.path.is_dir() {
        return super::report_index::run_folder(&args.path, args.output.as_deref(), format, &|p| {
            build(p, &args)
        });
    }
    let report = match build(&args.path, &args) {
        Ok(r) => r,
        Err(status) => return status,
    };
    let status = report_status(&report);
    match deliver(&report, format, args.output.as_deref()) {
        Ok(()) => status,
        Err(e) => {
            errln!("catena: {e}");
            EXIT_USAGE
        }
    }
}

/// 1 when a chain misses a requirement, leaves a limit or cannot be analysed.
pub fn report_status(report: &Report) -> u8 {
    if report.summary.iter().all(|r| r.pass) {
        EXIT_OK
    } else {
        EXIT_FINDINGS
    }
}

/// Writes the rendered report to standard output, a file, or a folder
/// (with its plots as SVG files beside it).
fn deliver(report: &Report, format: ReportFormat, output: Option<&Path>) -> Result<(), String> {
    let stem = Path::new(&report.provenance.spec)
        .file_stem()
        .map_or("report".to_string(), |s| s.to_string_lossy().into_owned());
    let Some(output) = output else {
        let rendered = render(report, format, None);
        out!("{}", rendered.text);
        return Ok(());
    };
    let place = super::files::destination(output, &stem, format.extension())?;
    place.prepare()?;
    let (file, folder) = (place.file, place.folder);
    let plot_stem = file
        .file_stem()
        .map_or(stem.clone(), |s| s.to_string_lossy().into_owned());
    write_rendered(report, format, &file, &folder, &plot_stem)
}

/// Renders into `file`, and the plots a Markdown report links into `folder`.
pub fn write_rendered(
    report: &Report,
    format: ReportFormat,
    file: &Path,
    folder: &Path,
    plot_stem: &str,
) -> Result<(), String> {
    let rendered = render(report, format, Some(plot_stem));
    for (name, svg) in &rendered.plots {
        let path = folder.join(name);
        write_atomic(&path, svg.as_bytes()).map_err(|e| format!("{}: {e}", path.display()))?;
    }
    write_atomic(file, rendered.text.as_bytes()).map_err(|e| format!("{}: {e}", file.display()))
}

/// Checks and analyses one spec into its report; errors that leave no
/// chain to analyse are shown and end it.
pub fn build(path: &Path, args: &ReportArgs) -> Result<Report, u8> {
    // The check keeps each chain's plan and analysis, with the report's
    // detail; the report adds only what they lack (its Monte Carlo).
    let (checked, config) = check_one(path, crate::analysis::Keep::Reports)?;
    if checked.findings.has_errors() && !checked.resolved || checked.chains.is_empty() {
        show(&checked.findings);
        errln!(
            "catena: no report for {} until these are fixed",
            path.display()
        );
        return Err(EXIT_FINDINGS);
    }
    let chains = selected(&checked, args.chain.as_deref())?;
    let (options, build) = options(args, &config);
    let warnings = warnings(&checked.findings);
    let reports: Vec<_> = chains
        .into_iter()
        .map(|chain| {
            let analysed = checked.plan(chain).and_then(|plan| {
                let earlier = checked.analysis(chain);
                let a = analyse_reusing(chain, &plan, &options, earlier, &|_, _| {})?;
                Ok((plan, a))
            });
            match analysed {
                Ok((plan, a)) if soundness::non_finite(chain, &a).is_empty() => {
                    let judged = judged_faults(&checked, chain, &plan);
                    let list = judged.as_deref().map(|judged| {
                        chain_checklist(chain, &plan, &a.envelopes, build.margin, &warnings, judged)
                    });
                    let faults = judged.as_ref().map(|j| &j.report);
                    chain_report(chain, &plan, &a, list, faults, &build)
                }
                Ok(_) => failed_report(
                    chain,
                    "a parameter drives a number beyond what a double holds (E505)".to_string(),
                ),
                Err(e) => failed_report(chain, e.to_string()),
            }
        })
        .collect();
    let shown = path.to_string_lossy().into_owned();
    Ok(Report {
        schema_version: SCHEMA_VERSION,
        provenance: crate::emit::report::model::Provenance {
            revision: git_revision(path),
            modified: git_modified(path),
            spec: shown,
            tool: "catena".to_string(),
            tool_version: env!("CARGO_PKG_VERSION").to_string(),
            timestamp: args.timestamp.then(now_utc),
            trials: options.trials.unwrap_or(0),
            seed: options.seed,
            points: args.sampling.points,
            margin: build.margin,
        },
        summary: reports.iter().map(summary_row).collect(),
        chains: reports,
    })
}

/// Whether a finding is one of the fault and trip findings the checklist
/// is about (listed there, never a reason to refuse it).
pub fn about_faults(code: Code) -> bool {
    matches!(
        code,
        Code::R670 | Code::R671 | Code::R672 | Code::R673 | Code::R674
    )
}

/// Every warning the check raised on the file, and its fault and trip
/// findings, as `CODE message`: the checklist's review items.
pub fn warnings(findings: &Findings) -> Vec<String> {
    findings
        .iter()
        .filter(|f| f.severity() == Severity::Warning || about_faults(f.code))
        .map(|f| {
            let level = match f.severity() {
                Severity::Warning => "warning",
                Severity::Error => "error",
            };
            format!("{level} {}: {}", f.code.as_str(), f.message)
        })
        .collect()
}

/// A chain's faults and trips as the check judged them, kept; judged here
/// only where the check kept none. None when they cannot be evaluated.
pub fn judged_faults<'a>(
    checked: &'a CheckedFile,
    chain: &Chain,
    plan: &Plan,
) -> Option<Cow<'a, FaultCheck>> {
    match checked.faults(chain) {
        Some(kept) => Some(Cow::Borrowed(kept)),
        None => faults::check(chain, plan, None).ok().map(Cow::Owned),
    }
}

/// A chain's fault-and-limit checklist from its envelopes and its judged
/// faults.
pub fn chain_checklist(
    chain: &Chain,
    plan: &Plan,
    envelopes: &[Envelope],
    margin: f64,
    warnings: &[String],
    judged: &FaultCheck,
) -> Checklist {
    checklist(
        chain,
        plan,
        &Sources {
            faults: &judged.report,
            maskings: &judged.maskings,
            envelopes,
            margin,
            warnings,
        },
    )
}

/// The chains a report covers: all of them, or the one `--chain` names
/// (a usage error, with a suggestion, when the file has none of that name).
fn selected<'c>(checked: &'c CheckedFile, chain: Option<&str>) -> Result<Vec<&'c Chain>, u8> {
    let Some(name) = chain else {
        return Ok(checked.chains.iter().collect());
    };
    match checked.chains.iter().find(|c| c.name == name) {
        Some(c) => Ok(vec![c]),
        None => {
            let names = checked.chains.iter().map(|c| c.name.as_str());
            errln!("catena: {}", unknown_word("chain", name, names, None));
            Err(EXIT_USAGE)
        }
    }
}

/// The analyses' options and the builder's: flags first, then
/// `catena.yaml`, then the defaults.
fn options(args: &ReportArgs, config: &crate::config::Config) -> (Options, BuildOptions) {
    let margin = settings::margin(None, config).value;
    let options = args.sampling.options(config);
    let build = BuildOptions {
        points: args.sampling.points,
        margin,
    };
    (options, build)
}

fn show(findings: &Findings) {
    err!(
        "{}",
        render_human(
            &findings.clone().sorted(),
            terminal::stderr_color(),
            terminal::width()
        )
    );
}

/// `git` run in the spec's folder on the spec alone; None outside a
/// repository or without git.
fn git_on(path: &Path, args: &[&str]) -> Option<String> {
    let folder = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let name = path.file_name()?;
    let out = Command::new("git")
        .arg("-C")
        .arg(folder)
        .args(args)
        .arg("--")
        .arg(name)
        .output()
        .ok()?;
    out.status
        .success()
        .then(|| String::from_utf8_lossy(&out.stdout).trim().to_string())
}

/// The last commit that touched the spec.
fn git_revision(path: &Path) -> Option<String> {
    git_on(path, &["log", "-1", "--format=%H"]).filter(|r| !r.is_empty())
}

/// Whether the working copy of the spec differs from the last commit (an
/// untracked spec counts as differing).
fn git_modified(path: &Path) -> Option<bool> {
    git_revision(path)?;
    git_on(path, &["status", "--porcelain"]).map(|s| !s.is_empty())
}

/// The current time, UTC, as `YYYY-MM-DDTHH:MM:SSZ`.
fn now_utc() -> String {
    let secs = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map_or(0, |d| d.as_secs());
    let (days, rest) = ((secs / 86_400) as i64, secs % 86_400);
    // Civil date from days since 1970-01-01 (proleptic Gregorian).
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let day = doy - (153 * mp + 2) / 5 + 1;
    let month = if mp < 10 { mp + 3 } else { mp - 9 };
    let year = yoe + era * 400 + i64::from(month <= 2);
    format!(
        "{year:04}-{month:02}-{day:02}T{:02}:{:02}:{:02}Z",
        rest / 3600,
        rest % 3600 / 60,
        rest % 60
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_timestamp_has_the_iso_shape() {
        let t = now_utc();
        assert_eq!(t.len(), 20, "{t}");
        assert!(t.ends_with('Z') && t.as_bytes()[10] == b'T', "{t}");
    }
}
