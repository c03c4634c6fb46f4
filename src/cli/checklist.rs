//! `catena checklist SPEC`: the fault-and-limit checklist a test engineer
//! works through at bring-up and a firmware engineer implements, rendered
//! from its one model ([`crate::analysis::checklist`]): the valid code
//! window, one row per fault with its codes, verdict and threshold, one
//! per limit with its reach and headroom, one per alarm with its trip
//! code, guard band and the faults that would mask it, and the review
//! items (leads, self-heating, calibration, every warning `check` raised).

use std::borrow::Cow;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

use clap::{Args, ValueEnum};

use super::files::{check_one, destination, Destination};
use super::report::{about_faults, chain_checklist, judged_faults, warnings};
use super::settings;
use super::{terminal, EXIT_FINDINGS, EXIT_OK, EXIT_USAGE};
use crate::analysis::checklist::{Checklist, LimitStatus};
use crate::analysis::ranges::envelopes;
use crate::analysis::{CheckOptions, Keep};
use crate::diagnostics::{render_human, Severity};
use crate::emit::report::fmt::{position, share, si, value};
use crate::model::Chain;
use crate::units::format::{codes, trimmed};

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum ListFormat {
    Md,
    Json,
}

#[derive(Args, Debug)]
pub struct ChecklistArgs {
    /// The spec file.
    spec: PathBuf,
    /// One chain of the file (all of them by default).
    #[arg(long)]
    chain: Option<String>,
    #[arg(long, value_enum, default_value_t = ListFormat::Md)]
    format: ListFormat,
    /// Write here instead of standard output (never over a spec).
    #[arg(short = 'o', long)]
    output: Option<PathBuf>,
}

/// The JSON document's version: a field's meaning never changes within
/// one (2: review items are objects with a kind, limits were added).
const SCHEMA_VERSION: u32 = 3;

pub fn run(args: ChecklistArgs) -> u8 {
    let place = match args.output.as_deref().map(|out| place(out, &args)) {
        Some(Err(e)) => {
            errln!("catena: {e}");
            return EXIT_USAGE;
        }
        other => other.and_then(Result::ok),
    };
    let (checked, config) = match check_one(&args.spec, Keep::Plans) {
        Ok(c) => c,
        Err(status) => return status,
    };
    let margin = settings::margin(None, &config).value;
    let blocking = checked
        .findings
        .iter()
        .any(|f| f.severity() == Severity::Error && !about_faults(f.code));
    if blocking {
        err!(
            "{}",
            render_human(
                &checked.findings.sorted(),
                terminal::stderr_color(),
                terminal::width()
            )
        );
        return EXIT_FINDINGS;
    }
    let chains: Vec<&Chain> = checked
        .chains
        .iter()
        .filter(|c| args.chain.as_deref().is_none_or(|n| c.name == n))
        .collect();
    if chains.is_empty() {
        errln!(
            "catena: no chain `{}` in {}",
            args.chain.as_deref().unwrap_or(""),
            args.spec.display()
        );
        return EXIT_USAGE;
    }
    let warnings = warnings(&checked.findings);
    let mut lists = Vec::new();
    for chain in chains {
        match chain_list(&checked, chain, margin, &warnings) {
            Ok(list) => lists.push(list),
            Err(e) => {
                errln!("catena: chain `{}`: {e}", chain.name);
                return EXIT_FINDINGS;
            }
        }
    }
    let text = match args.format {
        ListFormat::Json => {
            let doc = serde_json::json!({ "schema_version": SCHEMA_VERSION, "chains": lists });
            serde_json::to_string_pretty(&doc).unwrap_or_default() + "\n"
        }
        ListFormat::Md => {
            ends_with_newline(lists.iter().map(markdown).collect::<Vec<_>>().join("\n"))
        }
    };
    match &place {
        Some(place) => match place.prepare().and_then(|()| {
            crate::emit::write_atomic(&place.file, text.as_bytes()).map_err(|e| e.to_string())
        }) {
            Ok(()) => EXIT_OK,
            Err(e) => {
                errln!("catena: {e}");
                EXIT_USAGE
            }
        },
        None => {
            out!("{text}");
            EXIT_OK
        }
    }
}

/// Where `-o` puts the checklist: never over a spec; a folder takes the
/// spec's name.
fn place(out: &Path, args: &ChecklistArgs) -> Result<Destination, String> {
    if out.extension().is_some_and(|e| e == "catena") {
        return Err(format!(
            "refusing to write the checklist over a spec: {}",
            out.display()
        ));
    }
    let stem = args.spec.file_stem().map_or("checklist".to_string(), |s| {
        s.to_string_lossy().into_owned()
    });
    let ext = match args.format {
        ListFormat::Json => "json",
        ListFormat::Md => "md",
    };
    destination(out, &format!("{stem}-checklist"), ext)
}

/// A text file's last line ends with a newline, so what follows it on a
/// terminal, and a file's diff, starts on a line of its own.
fn ends_with_newline(mut text: String) -> String {
    if !text.ends_with('\n') {
        text.push('\n');
    }
    text
}

/// One chain's checklist from the check's plan, fault verdicts and range
/// envelopes (the kept analysis's, else the check's own); each is
/// computed here only where the check kept none.
fn chain_list(
    checked: &crate::check::CheckedFile,
    chain: &Chain,
    margin: f64,
    warnings: &[String],
) -> Result<Checklist, String> {
    let plan = checked.plan(chain).map_err(|e| e.to_string())?;
    let kept = checked.analysis(chain).filter(|a| a.options.detail);
    let found = match (kept, checked.envelopes(chain)) {
        (Some(a), _) => Cow::Owned(a.envelopes),
        (None, Some(e)) => Cow::Borrowed(e),
        (None, None) => Cow::Owned(
            envelopes(chain, &plan, CheckOptions::default().points).map_err(|e| e.to_string())?,
        ),
    };
    let judged = judged_faults(checked, chain, &plan)
        .ok_or_else(|| "its faults could not be evaluated".to_string())?;
    Ok(chain_checklist(
        chain, &plan, &found, margin, warnings, &judged,
    ))
}

fn markdown(list: &Checklist) -> String {
    let mut s = String::new();
    let w = &list.window;
    let _ = writeln!(s, "# Checklist: {}\n", list.chain);
    for c in &list.cautions {
        let _ = writeln!(s, "> {c}\n");
    }
    let _ = writeln!(
        s,
        "Valid code window: {} .. {} ({}; noise {}σ = {}).\n",
        w.low,
        w.high,
        w.code_kind(),
        trimmed(w.k, 1),
        codes(trimmed(w.k * w.noise_sigma_codes, 2))
    );
    if let Some(each) = w.channel_windows() {
        let _ = writeln!(s, "{each}\n");
    }
    let _ = writeln!(s, "## Faults\n");
    for f in &list.faults {
        let codes = f
            .codes
            .map(|c| c.phrase())
            .unwrap_or_else(|| match &f.reason {
                Some(why) => format!("no determined code ({why})"),
                None => "no determined code".to_string(),
            });
        let threshold = f
            .threshold
            .as_deref()
            .map(|t| format!("; firmware threshold `{t}`"))
            .unwrap_or_default();
        let _ = writeln!(
            s,
            "- [ ] `{}` {}: {codes}, **{}**{threshold}; action: {}.",
            f.stage, f.condition, f.verdict, f.action
        );
    }
    limits(&mut s, list);
    alarms(&mut s, list);
    if !list.review.is_empty() {
        let _ = writeln!(s, "\n## Review\n");
        for r in &list.review {
            let _ = writeln!(s, "- [ ] {}", r.text);
        }
    }
    s
}

fn limits(s: &mut String, list: &Checklist) {
    if list.limits.is_empty() {
        return;
    }
    let _ = writeln!(s, "\n## Limits\n");
    for l in &list.limits {
        let end = |x: Option<f64>| x.map_or("—".to_string(), |v| si(v, &l.unit));
        let status = match l.status {
            LimitStatus::Inside => "inside",
            LimitStatus::UnderMargin => "**under the margin**",
            LimitStatus::Beyond => "**beyond the limit**",
        };
        let _ = writeln!(
            s,
            "- [ ] `{}` {}: allowed {} .. {}, reaches {} .. {}, headroom {} ({status}); check it at both ends of the range at bring-up",
            l.stage,
            l.limit,
            end(l.allowed[0]),
            end(l.allowed[1]),
            si(l.reach[0], &l.unit),
            si(l.reach[1], &l.unit),
            share(l.headroom)
        );
    }
}

fn alarms(s: &mut String, list: &Checklist) {
    if list.alarms.is_empty() {
        return;
    }
    let _ = writeln!(s, "\n## Alarms\n");
    for a in &list.alarms {
        let masked = if a.masked_by.is_empty() {
            "no undetected fault masks it".to_string()
        } else {
            format!("masked by: {}", a.masked_by.join(", "))
        };
        let _ = writeln!(
            s,
            "- [ ] {} alarm at {}: trip at {} (code {}, guard band {}); {masked}.",
            a.side,
            position(a.at, &a.measurand_unit),
            position(a.trip_at, &a.measurand_unit),
            a.trip_code,
            value(a.guard_band, &a.unit)
        );
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::{faults::FAULT_RUNS, ranges::ENVELOPE_RUNS};

    /// The checklist lists what the check judged: after the check, its
    /// chains' lists judge no fault and follow no envelope again.
    #[test]
    fn the_checklist_reuses_the_checks_work() {
        let spec =
            std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("specs/pottery_kiln.catena");
        let (checked, _) = check_one(&spec, Keep::Plans).expect("the demo reads");
        assert!(!checked.chains.is_empty());
        let warnings = warnings(&checked.findings);
        ENVELOPE_RUNS.with(|runs| runs.set(0));
        FAULT_RUNS.with(|runs| runs.set(0));
        for chain in &checked.chains {
            let list = chain_list(&checked, chain, 0.05, &warnings).expect("a checklist");
            assert!(!list.faults.is_empty(), "chain {}", chain.name);
        }
        assert_eq!(ENVELOPE_RUNS.with(std::cell::Cell::get), 0);
        assert_eq!(FAULT_RUNS.with(std::cell::Cell::get), 0);
    }
}
