//! `catena eval SPEC --at VALUE`: every stage's output at one point.

use std::path::PathBuf;

use clap::Args;
use serde::Serialize;

use super::files::check_one;
use super::{terminal, Format, EXIT_FINDINGS, EXIT_OK, EXIT_USAGE};
use crate::analysis::eval_finding;
use crate::diagnostics::{render_human, Findings};
use crate::eval::{lower, Env, Node, Plan, Signal};
use crate::model::{did_you_mean, Chain};
use crate::units::format::{from_si, significant, trimmed, with_prefix};
use crate::units::{parse_unit, Dim, UnitKind, ZERO_CELSIUS_K};

#[derive(Args, Debug)]
pub struct EvalArgs {
    /// The spec file.
    spec: PathBuf,
    /// The measurand value, such as `25 degC` or `120 kg` (a bare number is
    /// in the measurand's unit).
    #[arg(long, allow_hyphen_values = true)]
    at: String,
    /// The electronics' temperature; the spec's reference by default.
    #[arg(long, allow_hyphen_values = true)]
    ambient: Option<String>,
    /// The chain to evaluate, when the file has several.
    #[arg(long)]
    chain: Option<String>,
    #[arg(long, value_enum, default_value_t = Format::Human)]
    format: Format,
}

pub fn run(args: EvalArgs) -> u8 {
    let checked = match check_one(&args.spec) {
        Ok(c) => c,
        Err(status) => return status,
    };
    if checked.findings.has_errors() {
        return report(checked.findings);
    }
    let chain = match pick_chain(&checked.chains, args.chain.as_deref()) {
        Ok(c) => c,
        Err(e) => {
            eprintln!("catena: {e}");
            return EXIT_USAGE;
        }
    };
    let Some(measurand) = &chain.measurand else {
        eprintln!("catena: chain `{}` has no measurand", chain.name);
        return EXIT_USAGE;
    };
    let (at, at_shown) = match point(&args.at, measurand.dim, &measurand.unit) {
        Ok(v) => v,
        Err(e) => {
            eprintln!("catena: --at {}: {e}", args.at);
            return EXIT_USAGE;
        }
    };
    let (ambient, ambient_shown) = match &args.ambient {
        None => (chain.reference, from_si(chain.reference, "degC")),
        Some(text) => match point(text, Dim::TEMPERATURE, "degC") {
            Ok(v) => v,
            Err(e) => {
                eprintln!("catena: --ambient {text}: {e}");
                return EXIT_USAGE;
            }
        },
    };
    let plan = match lower(chain) {
        Ok(p) => p,
        Err(e) => return report_one(chain, &e, None),
    };
    let env = Env {
        measurand: at,
        ambient,
        cold_junction: ambient,
    };
    let outcome = match plan.evaluate(&plan.nominal, &env) {
        Ok(o) => o,
        Err(e) => {
            let shown = format!("at {} {}", trimmed(at_shown, 9), measurand.unit);
            return report_one(chain, &e, Some((measurand.span, shown)));
        }
    };
    let view = View {
        chain,
        plan: &plan,
        signals: &outcome.signals,
        shown: (at_shown, ambient_shown),
    };
    match args.format {
        Format::Json => println!(
            "{}",
            serde_json::to_string_pretty(&view.json()).unwrap_or_default()
        ),
        Format::Human => print!("{}", view.table()),
    }
    EXIT_OK
}

fn report(findings: Findings) -> u8 {
    eprint!(
        "{}",
        render_human(
            &findings.sorted(),
            terminal::stderr_color(),
            terminal::width()
        )
    );
    EXIT_FINDINGS
}

fn report_one(
    chain: &Chain,
    e: &crate::eval::EvalError,
    at: Option<(crate::diagnostics::Span, String)>,
) -> u8 {
    let mut f = Findings::new();
    f.push(eval_finding(chain, e, at));
    report(f)
}

fn pick_chain<'a>(chains: &'a [Chain], name: Option<&str>) -> Result<&'a Chain, String> {
    let names = || {
        chains
            .iter()
            .map(|c| format!("`{}`", c.name))
            .collect::<Vec<_>>()
            .join(", ")
    };
    match (name, chains) {
        (None, [one]) => Ok(one),
        (None, []) => Err("the file has no chain".into()),
        (None, _) => Err(format!(
            "the file has several chains; name one with --chain: {}",
            names()
        )),
        (Some(n), _) => chains.iter().find(|c| c.name == n).ok_or_else(|| {
            match did_you_mean(n, chains.iter().map(|c| c.name.as_str())) {
                Some(near) => format!("no chain `{n}`; did you mean `{near}`?"),
                None => format!("no chain `{n}`; the chains are {}", names()),
            }
        }),
    }
}

/// A point given on the command line: `25 degC`, `120kg`, or a bare number
/// in `default_unit`. Gives its SI value and its value in `default_unit`:
/// the number as written when it is in that unit, so a report shows
/// `1000`, not the round trip through SI (`1000 ue` is 0.001 in SI, which
/// comes back as 1000.0000000000001).
fn point(text: &str, dim: Dim, default_unit: &str) -> Result<(f64, f64), String> {
    let text = text.trim();
    let split = text
        .char_indices()
        .find(|&(i, c)| {
            !(c.is_ascii_digit()
                || c == '.'
                || ((c == '-' || c == '+') && (i == 0 || text[..i].ends_with(['e', 'E'])))
                || ((c == 'e' || c == 'E') && i > 0))
        })
        .map(|(i, _)| i)
        .unwrap_or(text.len());
    let number: f64 = text[..split]
        .parse()
        .map_err(|_| "expected a number and a unit, such as `25 degC`".to_string())?;
    // `-0` is zero; a signed zero would print as `-0.0`.
    let number = number + 0.0;
    let unit_text = text[split..].trim();
    let unit_text = if unit_text.is_empty() {
        default_unit
    } else {
        unit_text
    };
    let unit = parse_unit(unit_text).map_err(|e| e.to_string())?;
    if unit.dim != dim || unit.kind == UnitKind::Decibel {
        let n = dim.name();
        return Err(format!("expected {}, such as `{}`", n.noun, n.example));
    }
    let si = match unit.kind {
        UnitKind::Celsius => number + ZERO_CELSIUS_K,
        _ => number * unit.scale,
    };
    let same_unit = parse_unit(default_unit).is_ok_and(|d| d == unit);
    Ok((
        si,
        if same_unit {
            number
        } else {
            from_si(si, default_unit)
        },
    ))
}

struct View<'a> {
    chain: &'a Chain,
    plan: &'a Plan,
    signals: &'a [Signal],
    /// The measurand and the ambient as given, in the measurand's unit and
    /// degC.
    shown: (f64, f64),
}

#[derive(Serialize)]
struct Quantity {
    value: f64,
    unit: String,
}

#[derive(Serialize)]
struct NodeJson {
    value: f64,
    unit: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    common_mode: Option<f64>,
}

#[derive(Serialize)]
struct EvalJson {
    schema_version: u32,
    chain: String,
    measurand: Quantity,
    ambient: Quantity,
    nodes: std::collections::BTreeMap<String, NodeJson>,
    code: i64,
    reading: Quantity,
}

impl View<'_> {
    fn measurand_unit(&self) -> String {
        self.chain
            .measurand
            .as_ref()
            .map(|m| m.unit.clone())
            .unwrap_or_default()
    }

    /// The coherent SI unit of the measurand (`K`, `kg`, `1`).
    fn si_unit(&self) -> &'static str {
        let dim = self
            .chain
            .measurand
            .as_ref()
            .map(|m| m.dim)
            .unwrap_or(Dim::NONE);
        match dim.name().unit {
            "" => "1",
            u => u,
        }
    }

    fn reading_si(&self) -> f64 {
        match self.signals[self.plan.reading] {
            Signal::Reading(x) => x,
            _ => f64::NAN,
        }
    }

    fn code(&self) -> i64 {
        match self.signals[self.plan.adc] {
            Signal::Code { code, .. } => code,
            _ => 0,
        }
    }

    fn json(&self) -> EvalJson {
        let unit = self.measurand_unit();
        let nodes = self
            .plan
            .names
            .iter()
            .zip(self.signals)
            .zip(&self.plan.nodes)
            .map(|((name, s), node)| {
                let (value, unit) = s.value_unit();
                let unit = match (s, node) {
                    (Signal::Reading(_), Node::Convert { conversion, .. }) => {
                        match conversion.variable {
                            crate::eval::Senses::ColdJunction => "K",
                            crate::eval::Senses::Measurand => self.si_unit(),
                        }
                    }
                    _ => unit,
                };
                let common_mode = match s {
                    Signal::Voltage { cm, .. } => Some(*cm),
                    _ => None,
                };
                (
                    name.clone(),
                    NodeJson {
                        value,
                        unit: unit.to_string(),
                        common_mode,
                    },
                )
            })
            .collect();
        EvalJson {
            schema_version: 1,
            chain: self.chain.name.clone(),
            measurand: Quantity {
                value: self.shown.0,
                unit: unit.clone(),
            },
            ambient: Quantity {
                value: self.shown.1,
                unit: "degC".into(),
            },
            nodes,
            code: self.code(),
            reading: Quantity {
                value: from_si(self.reading_si(), &unit),
                unit,
            },
        }
    }

    fn table(&self) -> String {
        let unit = self.measurand_unit();
        let mut table = comfy_table::Table::new();
        table.load_style(comfy_table::presets::NOTHING);
        table.set_header(["stage", "kind", "output", "common mode"]);
        for (i, name) in self.plan.names.iter().enumerate() {
            let stage = self.chain.stages.iter().find(|s| &s.name == name);
            let kind = stage
                .map(|s| s.model.unwrap_or(s.kind.keyword()))
                .unwrap_or("");
            let (output, cm) = match self.signals[i] {
                Signal::Voltage { v, cm, .. } => (with_prefix(v, "V", 6), with_prefix(cm, "V", 4)),
                Signal::Code { code, .. } => (format!("{code} (code)"), String::new()),
                Signal::Reading(x) => {
                    let is_cj = matches!(&self.plan.nodes[i], Node::Convert { conversion, .. } if conversion.variable == crate::eval::Senses::ColdJunction);
                    if is_cj {
                        (
                            format!("{} degC", significant(from_si(x, "degC"), 6)),
                            String::new(),
                        )
                    } else {
                        (
                            format!("{} {unit}", significant(from_si(x, &unit), 7)),
                            String::new(),
                        )
                    }
                }
                s => {
                    let (v, u) = s.value_unit();
                    (with_prefix(v, u, 6), String::new())
                }
            };
            table.add_row([name.as_str(), kind, &output, &cm]);
        }
        let title = match &self.chain.label {
            Some(l) => format!("chain {} \"{l}\"", self.chain.name),
            None => format!("chain {}", self.chain.name),
        };
        format!(
            "{title}\nat {} {unit}, ambient {} degC\n\n{}\n\ncode     {}\nreading  {} {unit}\n",
            trimmed(self.shown.0, 9),
            trimmed(self.shown.1, 9),
            table
                .to_string()
                .lines()
                .map(str::trim_end)
                .collect::<Vec<_>>()
                .join("\n"),
            self.code(),
            significant(from_si(self.reading_si(), &unit), 7)
        )
    }
}
