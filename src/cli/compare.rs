//! `catena compare SPEC...`: candidate chains side by side — every
//! requirement's achieved value and margin, resolution, response, the
//! largest contributor, the worst headroom and the faults firmware cannot
//! detect — a trade table.

use super::settings;
use clap::Args;
use serde::Serialize;

use super::diff::{evaluate, load, options, ReviewFormat};
use super::diff_render::{markdown_table, num, plain_table, with_unit};
use super::{EXIT_FINDINGS, EXIT_OK, EXIT_USAGE};
use crate::analysis::review::{Outcome, PowerBasis};
use crate::units::format::with_prefix;

#[derive(Args, Debug)]
pub struct CompareArgs {
    /// Specs (`FILE` for all its chains, or `FILE#chain`).
    #[arg(required = true)]
    specs: Vec<String>,
    #[arg(long, value_enum, default_value_t = ReviewFormat::Human)]
    format: ReviewFormat,
    /// The same for every candidate; unset, from the `catena.yaml` of the
    /// first spec's folder.
    #[command(flatten)]
    sampling: settings::SamplingArgs,
}

#[derive(Serialize)]
struct Candidate {
    /// `FILE#chain`.
    name: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    outcome: Option<Outcome>,
    #[serde(skip_serializing_if = "Option::is_none")]
    note: Option<String>,
}

#[derive(Serialize)]
struct CompareReport {
    schema_version: u32,
    trials: usize,
    seed: u64,
    candidates: Vec<Candidate>,
}

pub fn run(args: CompareArgs) -> u8 {
    if !args.sampling.usable() {
        return EXIT_USAGE;
    }
    let mut sides = Vec::new();
    for spec in &args.specs {
        match load(spec) {
            Ok(side) => sides.push(side),
            Err(status) => return status,
        }
    }
    let options = options(&args.sampling, sides.iter());
    let mut candidates = Vec::new();
    for (spec, side) in args.specs.iter().zip(&sides) {
        let file = spec.rsplit_once('#').map_or(spec.as_str(), |(f, _)| f);
        let chains: Vec<_> = side
            .checked
            .chains
            .iter()
            .filter(|c| side.chain.as_ref().is_none_or(|n| &c.name == n))
            .collect();
        if chains.is_empty() {
            errln!("catena: no chain to compare in `{spec}`");
            return EXIT_USAGE;
        }
        for chain in chains {
            let (outcome, note) = match evaluate(&side.checked, chain, &options) {
                Ok(o) => (Some(o), None),
                Err(e) => (None, Some(e)),
            };
            candidates.push(Candidate {
                name: format!("{file}#{}", chain.name),
                outcome,
                note,
            });
        }
    }
    let report = CompareReport {
        schema_version: 1,
        trials: options.trials.unwrap_or(0),
        seed: options.seed,
        candidates,
    };
    let (header, rows) = table(&report.candidates);
    let header: Vec<&str> = header.iter().map(String::as_str).collect();
    match args.format {
        ReviewFormat::Json => {
            outln!(
                "{}",
                serde_json::to_string_pretty(&report).unwrap_or_default()
            )
        }
        ReviewFormat::Markdown => {
            out!("## Catena compare\n\n{}", markdown_table(&header, &rows));
        }
        ReviewFormat::Human => out!("{}", plain_table(&header, &rows)),
    }
    if report.candidates.iter().any(|c| c.outcome.is_none()) {
        EXIT_FINDINGS
    } else {
        EXIT_OK
    }
}

/// One column per candidate, one row per figure.
fn table(candidates: &[Candidate]) -> (Vec<String>, Vec<Vec<String>>) {
    let mut header = vec![String::new()];
    header.extend(candidates.iter().map(|c| c.name.clone()));
    let mut names: Vec<&'static str> = Vec::new();
    for o in candidates.iter().filter_map(|c| c.outcome.as_ref()) {
        for r in &o.requirements {
            if !names.contains(&r.name) {
                names.push(r.name);
            }
        }
    }
    let mut rows: Vec<Vec<String>> = Vec::new();
    let mut row = |label: String, cell: &dyn Fn(&Outcome) -> String| {
        let mut r = vec![label];
        r.extend(candidates.iter().map(|c| match &c.outcome {
            Some(o) => cell(o),
            None => c.note.clone().unwrap_or_default(),
        }));
        rows.push(r);
    };
    for name in names {
        row(format!("{name} achieved (margin)"), &|o| {
            requirement_cell(o, name)
        });
    }
    for method in ["worst_case", "gum", "monte_carlo"] {
        row(
            format!(
                "largest error, {}",
                crate::emit::report::fmt::method(method)
            ),
            &|o| worst_cell(o, method),
        );
    }
    row("resolution".into(), &|o| {
        format!("{} {}", num(o.resolution), o.unit)
    });
    row("response (90 %)".into(), &|o| {
        o.response_s
            .map_or("— (nothing stated)".into(), |t| format!("{} s", num(t)))
    });
    row("largest contributor".into(), &|o| {
        o.largest.as_ref().map_or("—".into(), |(id, share)| {
            format!("{id} ({:.0} %)", share * 100.0)
        })
    });
    // A converter's pin may sit on its rail by design: it counts here
    // only beyond it, as `check` judges it.
    row("least headroom".into(), &|o| {
        o.limits
            .iter()
            .filter(|l| l.keeps_margin || l.headroom < 0.0)
            .min_by(|a, b| a.headroom.total_cmp(&b.headroom))
            .map_or("—".into(), |l| {
                format!("{} % ({} {})", num(l.headroom * 100.0), l.stage, l.limit)
            })
    });
    row("code window".into(), &|o| {
        o.window.map_or("—".into(), |[a, b]| format!("{a} .. {b}"))
    });
    row("undetected faults".into(), &undetected_faults);
    row("unit cost".into(), &unit_cost);
    row("power".into(), &power);
    (header, rows)
}

/// A requirement's achieved value and margin.
fn requirement_cell(o: &Outcome, name: &str) -> String {
    o.requirements
        .iter()
        .find(|r| r.name == name)
        .map_or("—".into(), |r| {
            format!(
                "{} ({}){}",
                with_unit(r.achieved, &r.unit),
                with_unit(r.margin, &r.unit),
                if r.pass { "" } else { " FAIL" }
            )
        })
}

/// A method's worst error and where it lies.
fn worst_cell(o: &Outcome, method: &str) -> String {
    o.worst
        .iter()
        .find(|w| w.method == method)
        .map_or("—".into(), |w| {
            format!(
                "{} {} at {} {}",
                num(w.value),
                o.unit,
                num(w.measurand),
                o.measurand_unit
            )
        })
}

/// The faults firmware cannot tell from a reading: how many, and which.
fn undetected_faults(o: &Outcome) -> String {
    let Some(faults) = &o.faults else {
        return "—".into();
    };
    let names: Vec<String> = faults
        .undetected()
        .map(|f| format!("{} {} ({})", f.stage, f.condition, f.verdict.name()))
        .collect();
    if names.is_empty() {
        "none".into()
    } else {
        format!("{}: {}", names.len(), names.join(", "))
    }
}

/// The stated costs' sum, and the stages it leaves out.
fn unit_cost(o: &Outcome) -> String {
    let Some(cost) = o.bill.cost else {
        return "—".into();
    };
    with_missing(num(cost), &o.bill.unpriced)
}

/// The stages' powers summed, saying which were computed and which are
/// missing.
fn power(o: &Outcome) -> String {
    let Some(total) = o.bill.power_w else {
        if o.bill.unpowered.is_empty() {
            return "—".into();
        }
        return format!("not stated: {}", o.bill.unpowered.join(", "));
    };
    let mut s = with_prefix(total, "W", 4);
    for (basis, how) in [
        (PowerBasis::Delivered, "as delivered into the load"),
        (PowerBasis::Supply, "from the supply and its current"),
    ] {
        let stages: Vec<&str> = o
            .bill
            .power
            .iter()
            .filter(|p| p.basis == basis)
            .map(|p| p.stage.as_str())
            .collect();
        if !stages.is_empty() {
            s.push_str(&format!(" ({} {how})", stages.join(", ")));
        }
    }
    with_missing(s, &o.bill.unpowered)
}

fn with_missing(total: String, missing: &[String]) -> String {
    if missing.is_empty() {
        total
    } else {
        format!("{total} + not stated: {}", missing.join(", "))
    }
}
