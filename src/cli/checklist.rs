//! `catena checklist SPEC`: the fault-and-alarm checklist a test engineer
//! works through at bring-up and a firmware engineer implements: the valid
//! code window, one row per fault with its codes, verdict and threshold,
//! one per alarm with its trip code, guard band and the faults that would
//! mask it, and the warnings `check` raised.

use std::fmt::Write as _;
use std::path::PathBuf;

use clap::{Args, ValueEnum};
use serde::Serialize;

use super::files::check_one;
use super::{terminal, EXIT_FINDINGS, EXIT_OK, EXIT_USAGE};
use crate::analysis::faults::{self, FaultReport, Masking, Verdict};
use crate::analysis::review::outcome::threshold_text;
use crate::analysis::Keep;
use crate::diagnostics::{render_human, Code, Severity};
use crate::model::Chain;
use crate::units::format::{from_si, trimmed};

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

/// The JSON document's version: a field's meaning never changes within one.
const SCHEMA_VERSION: u32 = 1;

#[derive(Serialize)]
struct ChainList {
    chain: String,
    window: WindowRow,
    faults: Vec<FaultRow>,
    alarms: Vec<AlarmRow>,
    review: Vec<String>,
    cautions: Vec<&'static str>,
}

#[derive(Serialize)]
struct WindowRow {
    low: i64,
    high: i64,
    rails: (i64, i64),
    noise_sigma_codes: f64,
    k: f64,
}

#[derive(Serialize)]
struct FaultRow {
    stage: String,
    fault: &'static str,
    condition: &'static str,
    codes: Option<(i64, i64)>,
    verdict: &'static str,
    /// `code < N` or `code > N`.
    threshold: Option<String>,
    reason: Option<String>,
    action: String,
}

#[derive(Serialize)]
struct AlarmRow {
    side: String,
    limit: String,
    trip_at: String,
    guard_band: String,
    unit: String,
    code: i64,
    trip_code: i64,
    masked_by: Vec<String>,
}

/// What the checklist says where a chain trips or alarms.
const CAUTION: &str = "This checklist is a design aid, not a safety assessment: an alarm or trip that protects people or property is designed and verified under the applicable functional-safety standard, local codes and licensed practice.";

pub fn run(args: ChecklistArgs) -> u8 {
    if let Some(out) = &args.output {
        if out.extension().is_some_and(|e| e == "catena") {
            errln!(
                "catena: refusing to write the checklist over a spec: {}",
                out.display()
            );
            return EXIT_USAGE;
        }
    }
    let checked = match check_one(&args.spec, Keep::Plans) {
        Ok((c, _)) => c,
        Err(status) => return status,
    };
    // The fault and trip findings are what the checklist is about: they
    // are listed, not a reason to refuse it.
    let about_faults =
        |code: Code| matches!(code, Code::R670 | Code::R671 | Code::R672 | Code::R673);
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
    let warnings: Vec<String> = checked
        .findings
        .iter()
        .filter(|f| f.severity() == Severity::Warning || about_faults(f.code))
        .map(|f| format!("{} {}", f.code.as_str(), f.message))
        .collect();
    let mut lists = Vec::new();
    for chain in chains {
        let plan = match checked.plan(chain) {
            Ok(p) => p,
            Err(e) => {
                errln!("catena: chain `{}`: {e}", chain.name);
                return EXIT_FINDINGS;
            }
        };
        // The check judged the faults already; a chain it did not judge
        // (none so far) is judged here.
        let listed = match checked.faults(chain) {
            Some(kept) => Ok(kept.clone()),
            None => faults::check(chain, &plan, None),
        };
        match listed {
            Ok(c) => lists.push(chain_list(chain, &c.report, &c.maskings, &warnings)),
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
        ListFormat::Md => lists.iter().map(markdown).collect::<Vec<_>>().join("\n"),
    };
    match &args.output {
        Some(path) => match crate::emit::write_atomic(path, text.as_bytes()) {
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

fn chain_list(
    chain: &Chain,
    report: &FaultReport,
    maskings: &[Masking],
    warnings: &[String],
) -> ChainList {
    let w = &report.window;
    let faults = report
        .faults
        .iter()
        .map(|f| FaultRow {
            stage: f.stage.clone(),
            fault: f.fault.kind.name(),
            condition: f.fault.kind.describe(),
            codes: f.codes,
            verdict: f.verdict.name(),
            threshold: f.threshold.map(threshold_text),
            reason: f.reason.clone(),
            action: match f.verdict {
                Verdict::Detectable => {
                    "flag the reading invalid and hold the output safe while the code is past the threshold".to_string()
                }
                Verdict::Silent | Verdict::Undetermined => f
                    .fix
                    .clone()
                    .unwrap_or_else(|| "not detectable from the code: detect it another way".to_string()),
            },
        })
        .collect();
    let (unit, _) = chain.difference_unit();
    let m_unit = measurand_unit(chain);
    let shown = |x: f64| format!("{} {m_unit}", trimmed(from_si(x, m_unit), 3));
    let delta = |x: f64| trimmed(from_si(x, &unit), 3);
    let alarms = maskings
        .iter()
        .map(|m| AlarmRow {
            side: m.alarm.side.clone(),
            limit: shown(m.alarm.at),
            trip_at: shown(m.alarm.trip_at),
            guard_band: delta(m.alarm.guard_band),
            unit: unit.clone(),
            code: m.alarm.code,
            trip_code: m.alarm.trip_code,
            masked_by: m
                .faults
                .iter()
                .map(|&i| {
                    let f = &report.faults[i];
                    format!("{} {}", f.stage, f.fault.kind.name())
                })
                .collect(),
        })
        .collect();
    ChainList {
        chain: chain.name.clone(),
        window: WindowRow {
            low: w.low,
            high: w.high,
            rails: w.rails,
            noise_sigma_codes: w.sigma_codes,
            k: w.k,
        },
        faults,
        alarms,
        review: warnings.to_vec(),
        cautions: if chain.is_protective() {
            vec![CAUTION]
        } else {
            Vec::new()
        },
    }
}

fn measurand_unit(chain: &Chain) -> &str {
    chain
        .measurand
        .as_ref()
        .map(|m| m.unit.as_str())
        .unwrap_or("")
}

fn markdown(list: &ChainList) -> String {
    let mut s = String::new();
    let w = &list.window;
    let _ = writeln!(s, "# Checklist: {}\n", list.chain);
    for c in &list.cautions {
        let _ = writeln!(s, "> {c}\n");
    }
    let _ = writeln!(
        s,
        "Valid code window: {} .. {} (converter codes {} .. {}; noise {}σ = {} codes).\n",
        w.low,
        w.high,
        w.rails.0,
        w.rails.1,
        trimmed(w.k, 1),
        trimmed(w.k * w.noise_sigma_codes, 2)
    );
    let _ = writeln!(s, "## Faults\n");
    for f in &list.faults {
        let codes = f
            .codes
            .map(|(a, b)| format!("codes {a} .. {b}"))
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
            "- [ ] `{}` {}: {codes}, **{}**{threshold}. {}",
            f.stage, f.condition, f.verdict, f.action
        );
    }
    if !list.alarms.is_empty() {
        let _ = writeln!(s, "\n## Alarms\n");
        for a in &list.alarms {
            let masked = if a.masked_by.is_empty() {
                "no undetected fault masks it".to_string()
            } else {
                format!("masked by: {}", a.masked_by.join(", "))
            };
            let _ = writeln!(
                s,
                "- [ ] {} alarm at {}: trip at {} (code {}, guard band {} {}); {masked}.",
                a.side, a.limit, a.trip_at, a.trip_code, a.guard_band, a.unit
            );
        }
    }
    if !list.review.is_empty() {
        let _ = writeln!(s, "\n## Review\n");
        for r in &list.review {
            let _ = writeln!(s, "- [ ] {r}");
        }
    }
    s
}
