//! `catena eval SPEC --at VALUE`: every stage's output at one point.

use std::path::PathBuf;

use clap::Args;
use serde::Serialize;

use super::files::check_one;
use super::{terminal, Format, EXIT_FINDINGS, EXIT_OK, EXIT_USAGE};
use crate::analysis::eval_finding;
use crate::diagnostics::{render_human, Finding, Findings, Severity};
use crate::eval::{lower_stages, Env, Node, Plan, Signal};
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
    // Errors the analyses found (a stage beyond its limit, a sensor out of
    // its range) are when the stage values matter most: evaluate anyway,
    // mark them and keep the exit status. Errors before them leave no
    // complete chain to evaluate.
    if checked.findings.has_errors() && !checked.resolved {
        return report(checked.findings);
    }
    let errors = errors_of(&checked.findings);
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
    let at = match point(&args.at, measurand.dim, &measurand.unit) {
        Ok(v) => v,
        Err(e) => {
            eprintln!("catena: --at {}: {e}", args.at);
            return EXIT_USAGE;
        }
    };
    let ambient = match &args.ambient {
        None => chain.reference,
        Some(text) => match point(text, Dim::TEMPERATURE, "degC") {
            Ok(v) => v,
            Err(e) => {
                eprintln!("catena: --ambient {text}: {e}");
                return EXIT_USAGE;
            }
        },
    };
    let (plan, fitted) = match lower_stages(chain) {
        Ok(p) => p,
        Err(e) => return report_one(chain, &e, None, errors),
    };
    let env = Env {
        measurand: at,
        ambient,
        cold_junction: ambient,
    };
    // Without a conversion the stages still evaluate up to the code.
    let outcome = match fitted {
        Ok(()) => plan.evaluate(&plan.nominal, &env),
        Err(_) => plan.evaluate_codes(&plan.nominal, &env),
    };
    let outcome = match outcome {
        Ok(o) => o,
        Err(e) => {
            let shown = format!(
                "at {} {}",
                trimmed(from_si(at, &measurand.unit), 9),
                measurand.unit
            );
            return report_one(chain, &e, Some((measurand.span, shown)), errors);
        }
    };
    let view = View {
        chain,
        plan: &plan,
        signals: &outcome.signals,
        at,
        ambient,
        findings: &errors,
    };
    match args.format {
        Format::Json => println!(
            "{}",
            serde_json::to_string_pretty(&view.json()).unwrap_or_default()
        ),
        Format::Human => print!("{}", view.table()),
    }
    if errors.is_empty() {
        EXIT_OK
    } else {
        report(errors)
    }
}

/// The error findings of a check, to show beside the values.
fn errors_of(findings: &Findings) -> Findings {
    let mut errors = Findings::new();
    for f in findings.iter().filter(|f| f.severity() == Severity::Error) {
        errors.push(f.clone());
    }
    errors
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

/// The evaluation's own error, after what the check found.
fn report_one(
    chain: &Chain,
    e: &crate::eval::EvalError,
    at: Option<(crate::diagnostics::Span, String)>,
    mut found: Findings,
) -> u8 {
    found.push(eval_finding(chain, e, at));
    report(found)
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

/// A point given on the command line, to SI: `25 degC`, `120kg`, or a
/// bare number in `default_unit`.
fn point(text: &str, dim: Dim, default_unit: &str) -> Result<f64, String> {
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
    Ok(match unit.kind {
        UnitKind::Celsius => number + ZERO_CELSIUS_K,
        _ => number * unit.scale,
    })
}

struct View<'a> {
    chain: &'a Chain,
    plan: &'a Plan,
    signals: &'a [Signal],
    at: f64,
    ambient: f64,
    /// Errors the check found, shown beside the values.
    findings: &'a Findings,
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
    /// None where no conversion could be built.
    reading: Option<Quantity>,
    /// Errors the check found (the values are what the chain does anyway).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    findings: Vec<FindingJson>,
}

#[derive(Serialize)]
struct FindingJson {
    code: String,
    message: String,
    /// The stage it points at, if any.
    #[serde(skip_serializing_if = "Option::is_none")]
    stage: Option<String>,
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

    fn reading(&self) -> Option<f64> {
        match self.signals[self.plan.reading] {
            Signal::Reading(x) => Some(x),
            _ => None,
        }
    }

    /// The stage a finding points at: the one whose text holds its
    /// primary label.
    fn stage_of(&self, finding: &Finding) -> Option<&str> {
        let at = finding.primary_span()?;
        let same_file = std::sync::Arc::ptr_eq(&finding.file, &self.chain.file);
        self.chain
            .stages
            .iter()
            .find(|s| same_file && s.span.start <= at.start && at.end <= s.span.end)
            .map(|s| s.name.as_str())
    }

    /// The codes of the findings that point at `stage`.
    fn marks(&self, stage: &str) -> String {
        let codes: Vec<&str> = self
            .findings
            .iter()
            .filter(|f| self.stage_of(f) == Some(stage))
            .map(|f| f.code.as_str())
            .collect();
        codes.join(", ")
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
            // A conversion that could not be built has no value.
            .filter(|((_, s), _)| !matches!(s, Signal::None))
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
                value: from_si(self.at, &unit),
                unit: unit.clone(),
            },
            ambient: Quantity {
                value: from_si(self.ambient, "degC"),
                unit: "degC".into(),
            },
            nodes,
            code: self.code(),
            reading: self.reading().map(|x| Quantity {
                value: from_si(x, &unit),
                unit,
            }),
            findings: self
                .findings
                .iter()
                .map(|f| FindingJson {
                    code: f.code.as_str().to_string(),
                    message: f.message.clone(),
                    stage: self.stage_of(f).map(str::to_string),
                })
                .collect(),
        }
    }

    fn table(&self) -> String {
        let unit = self.measurand_unit();
        let marked = !self.findings.is_empty();
        let mut table = comfy_table::Table::new();
        table.load_style(comfy_table::presets::NOTHING);
        let mut header = vec!["stage", "kind", "output", "common mode"];
        if marked {
            header.push("finding");
        }
        table.set_header(header);
        for (i, name) in self.plan.names.iter().enumerate() {
            let stage = self.chain.stages.iter().find(|s| &s.name == name);
            let kind = stage
                .map(|s| s.model.unwrap_or(s.kind.keyword()))
                .unwrap_or("");
            let (output, cm) = self.output(i, &unit);
            let mut row = vec![name.clone(), kind.to_string(), output, cm];
            if marked {
                row.push(self.marks(name));
            }
            table.add_row(row);
        }
        let title = match &self.chain.label {
            Some(l) => format!("chain {} \"{l}\"", self.chain.name),
            None => format!("chain {}", self.chain.name),
        };
        let reading = match self.reading() {
            Some(x) => format!("{} {unit}", significant(from_si(x, &unit), 7)),
            None => "none: no conversion could be built".to_string(),
        };
        let note = if marked {
            format!(
                "\n{} (below): the values above are what the chain does as written\n",
                match self.findings.len() {
                    1 => "1 error".to_string(),
                    n => format!("{n} errors"),
                }
            )
        } else {
            String::new()
        };
        format!(
            "{title}\nat {} {unit}, ambient {} degC\n\n{}\n\ncode     {}\nreading  {reading}\n{note}",
            trimmed(from_si(self.at, &unit), 9),
            trimmed(from_si(self.ambient, "degC"), 9),
            table
                .to_string()
                .lines()
                .map(str::trim_end)
                .collect::<Vec<_>>()
                .join("\n"),
            self.code(),
        )
    }

    /// Node `i`'s output and common mode, as text.
    fn output(&self, i: usize, unit: &str) -> (String, String) {
        match self.signals[i] {
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
                        format!("{} {unit}", significant(from_si(x, unit), 7)),
                        String::new(),
                    )
                }
            }
            Signal::None => ("—".to_string(), String::new()),
            s => {
                let (v, u) = s.value_unit();
                (with_prefix(v, u, 6), String::new())
            }
        }
    }
}
