//! `catena eval SPEC --at VALUE`: every stage's output at one point.

use std::borrow::Cow;
use std::path::PathBuf;

use clap::Args;
use serde::Serialize;

use super::files::check_one;
use super::{terminal, Format, EXIT_FINDINGS, EXIT_OK, EXIT_USAGE};
use crate::analysis::Keep;
use crate::analysis::{eval_finding, evaluable_part_of};
use crate::check::CheckedFile;
use crate::diagnostics::{backticked, unknown_word};
use crate::diagnostics::{render_human, Code, Finding, Findings, JsonFinding, Severity};
use crate::eval::{lower, lower_unvalidated, node, Env, EvalError, Node, Plan, Signal};
use crate::model::Chain;
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
    let checked = match check_one(&args.spec, Keep::Plans) {
        Ok((c, _)) => c,
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
            errln!("catena: {e}");
            return EXIT_USAGE;
        }
    };
    let Some(measurand) = &chain.measurand else {
        errln!("catena: chain `{}` has no measurand", chain.name);
        return EXIT_USAGE;
    };
    let [(at, at_shown), (ambient, ambient_shown)] = match condition(&args, chain, measurand) {
        Ok(c) => c,
        Err(status) => return status,
    };
    let (plan, fitted) = match plan_at(&checked, chain, at) {
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
            let shown = format!("at {} {}", trimmed(at_shown, 9), measurand.unit);
            return report_one(chain, &e, Some((measurand.span, shown)), errors);
        }
    };
    let mut findings = errors;
    findings.extend(outside_range(chain, &plan, &outcome.signals, &env));
    let view = View {
        chain,
        plan: &plan,
        signals: &outcome.signals,
        shown: (at_shown, ambient_shown),
        findings: &findings,
    };
    match args.format {
        Format::Json => outln!(
            "{}",
            serde_json::to_string_pretty(&view.json()).unwrap_or_default()
        ),
        Format::Human => out!("{}", view.table()),
    }
    status(findings)
}

/// The exit status, with the findings shown: a warning alone leaves it 0.
fn status(findings: Findings) -> u8 {
    if findings.is_empty() {
        EXIT_OK
    } else if findings.has_errors() {
        report(findings)
    } else {
        report(findings);
        EXIT_OK
    }
}

/// A value in SI and as shown (in the unit it was given in).
type Shown = (f64, f64);

/// `--at` and `--ambient` in SI, each with the value shown; a usage
/// error is reported and its status given.
fn condition(
    args: &EvalArgs,
    chain: &Chain,
    measurand: &crate::model::Measurand,
) -> Result<[Shown; 2], u8> {
    let at = point(&args.at, measurand.dim, &measurand.unit).map_err(|e| {
        errln!("catena: --at {}: {e}", args.at);
        EXIT_USAGE
    })?;
    let ambient = match &args.ambient {
        None => (chain.reference, from_si(chain.reference, "degC")),
        Some(text) => point(text, Dim::TEMPERATURE, "degC").map_err(|e| {
            errln!("catena: --ambient {text}: {e}");
            EXIT_USAGE
        })?,
    };
    Ok([at, ambient])
}

/// The plan to evaluate `chain` at `at` on, and whether its conversion
/// was built: the check's when it kept one; else lowered without the
/// validity check (a sensor outside its range is already among the
/// errors, and the stages still show what they do as written); and where
/// the whole range has no conversion, or a sensor is valid over part of
/// it, the part of the range that evaluates, when it covers `at`.
fn plan_at<'a>(
    checked: &'a CheckedFile,
    chain: &Chain,
    at: f64,
) -> Result<(Cow<'a, Plan>, Result<(), EvalError>), EvalError> {
    let (plan, fitted) = match checked.analysed(chain).and_then(|a| a.plan.as_ref()) {
        Some(plan) => (Cow::Borrowed(plan), Ok(())),
        None => {
            let (plan, fitted) = lower_unvalidated(chain)?;
            (Cow::Owned(plan), fitted)
        }
    };
    Ok(match evaluable_part_of(chain, &plan, fitted.is_ok()) {
        Some(part) if part_covers(&part, at) => match lower(&part) {
            Ok(p) => (Cow::Owned(p), Ok(())),
            Err(_) => (plan, fitted),
        },
        _ => (plan, fitted),
    })
}

/// A point outside the measurand range: R625 where the firmware still
/// reads it (the chain keeps moving there), R626 where the code has
/// stopped moving or sits at the converter's rail, so the reading is
/// clamped and not the measurand.
fn outside_range(chain: &Chain, plan: &Plan, signals: &[Signal], env: &Env) -> Findings {
    let mut out = Findings::new();
    let (Some(m), Signal::Reading(reading)) = (&chain.measurand, signals[plan.reading.index()])
    else {
        return out;
    };
    let (lo, hi) = plan.range;
    if (lo..=hi).contains(&env.measurand) {
        return out;
    }
    let show = |x: f64| format!("{} {}", trimmed(from_si(x, &m.unit), 6), m.unit);
    let range = format!("{} .. {}", trimmed(from_si(lo, &m.unit), 6), show(hi));
    let code = match signals[plan.adc.index()] {
        Signal::Code { code, .. } => code,
        _ => return out,
    };
    let finding = match stopped(plan, env, code) {
        Some(why) => Finding::new(
            Code::R626,
            &chain.file,
            format!(
                "at {} the firmware reads {}: {why}",
                show(env.measurand),
                show(reading)
            ),
        )
        .label(m.span, format!("the range, {range}"))
        .help(format!(
            "every value beyond reads {} too: treat code {code} as out of range in the firmware, or widen the range and rescale the chain so the code still moves there",
            show(reading)
        )),
        None => Finding::new(
            Code::R625,
            &chain.file,
            format!(
                "{} is outside the measurand range {range}",
                show(env.measurand)
            ),
        )
        .label(m.span, "the range".to_string())
        .help(format!(
            "the firmware still reads it ({}), but the checks and the budget cover {range} only; widen the range to have them cover it",
            show(reading)
        )),
    };
    out.push(finding);
    out
}

/// Why the firmware can no longer tell values apart at `env`: the code at
/// the converter's rail, or the exact code standing still (a stage
/// saturated before the converter). None where it still moves.
fn stopped(plan: &Plan, env: &Env, code: i64) -> Option<String> {
    if let Node::Adc(node::Adc { bits, polarity, .. }) = &plan.nodes[plan.adc.index()] {
        if let Ok((low, high)) = crate::physics::adc::code_range(*bits, *polarity) {
            if code <= low || code >= high {
                return Some(format!("the code is at the converter's rail ({code})"));
            }
        }
    }
    let h = 1e-4 * (plan.range.1 - plan.range.0);
    let exact = |m: f64| {
        plan.exact_code(
            &plan.nominal,
            &Env {
                measurand: m,
                ..*env
            },
            plan.adc,
        )
    };
    match (exact(env.measurand - h), exact(env.measurand + h)) {
        (Ok(a), Ok(b)) if a != b => None,
        _ => Some(format!(
            "the code ({code}) no longer changes with the measurand (a stage before the converter has saturated)"
        )),
    }
}

fn part_covers(part: &Chain, at: f64) -> bool {
    part.measurand
        .as_ref()
        .is_some_and(|m| (m.low..=m.high).contains(&at))
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
    err!(
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
    let names = || backticked(chains.iter().map(|c| c.name.as_str()));
    match (name, chains) {
        (None, [one]) => Ok(one),
        (None, []) => Err("the file has no chain".into()),
        (None, _) => Err(format!(
            "the file has several chains; name one with --chain: {}",
            names()
        )),
        (Some(n), _) => chains.iter().find(|c| c.name == n).ok_or_else(|| {
            let otherwise = format!("the chains are {}", names());
            unknown_word(
                "chain",
                n,
                chains.iter().map(|c| c.name.as_str()),
                Some(&otherwise),
            )
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
        _ => unit.to_si(number),
    };
    if !number.is_finite() || !si.is_finite() {
        return Err("the number is beyond any finite value".to_string());
    }
    if dim == Dim::TEMPERATURE && si < 0.0 {
        return Err("a temperature below absolute zero (-273.15 degC)".to_string());
    }
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
    /// Errors the check found and the point's own findings, shown beside
    /// the values.
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
    /// Errors the check found (the values are what the chain does anyway)
    /// and what the point itself raises (outside the range).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    findings: Vec<FindingJson>,
}

/// A finding in the check's JSON shape, with the stage it points at.
#[derive(Serialize)]
struct FindingJson {
    #[serde(flatten)]
    finding: JsonFinding,
    #[serde(skip_serializing_if = "Option::is_none")]
    stage: Option<String>,
}

impl View<'_> {
    fn measurand_unit(&self) -> String {
        self.chain.measurand_unit()
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
        match self.signals[self.plan.reading.index()] {
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

    /// The codes of the findings that point at `stage`, each once with
    /// how many there are ("R670 ×2, R672").
    fn marks(&self, stage: &str) -> String {
        let mut counted: Vec<(&str, usize)> = Vec::new();
        for f in self
            .findings
            .iter()
            .filter(|f| self.stage_of(f) == Some(stage))
        {
            match counted
                .iter_mut()
                .find(|(code, _)| *code == f.code.as_str())
            {
                Some((_, n)) => *n += 1,
                None => counted.push((f.code.as_str(), 1)),
            }
        }
        let shown: Vec<String> = counted
            .into_iter()
            .map(|(code, n)| match n {
                1 => code.to_string(),
                _ => format!("{code} ×{n}"),
            })
            .collect();
        shown.join(", ")
    }

    fn code(&self) -> i64 {
        match self.signals[self.plan.adc.index()] {
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
                    (Signal::Reading(_), Node::Convert(node::Convert { conversion, .. })) => {
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
            reading: self.reading().map(|x| Quantity {
                value: from_si(x, &unit),
                unit,
            }),
            findings: self
                .findings
                .iter()
                .map(|f| FindingJson {
                    finding: JsonFinding::from(f),
                    stage: self.stage_of(f).map(str::to_string),
                })
                .collect(),
        }
    }

    fn table(&self) -> String {
        let unit = self.measurand_unit();
        let marked = !self.findings.is_empty();
        let column = self.plan.names.iter().any(|n| !self.marks(n).is_empty());
        let mut table = comfy_table::Table::new();
        table.load_style(comfy_table::presets::NOTHING);
        let mut header = vec!["stage", "kind", "output", "common mode"];
        if column {
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
            if column {
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
                count(self.findings)
            )
        } else {
            String::new()
        };
        format!(
            "{title}\nat {} {unit}, ambient {} degC\n\n{}\n\ncode     {}\nreading  {reading}\n{note}",
            trimmed(self.shown.0, 9),
            trimmed(self.shown.1, 9),
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
                let is_cj = matches!(&self.plan.nodes[i], Node::Convert(node::Convert { conversion, .. }) if conversion.variable == crate::eval::Senses::ColdJunction);
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

/// "1 error", "2 errors, 1 warning".
fn count(findings: &Findings) -> String {
    let errors = findings.error_count();
    let warnings = findings.len() - errors;
    let plural = |n: usize, what: &str| match n {
        1 => format!("1 {what}"),
        n => format!("{n} {what}s"),
    };
    match (errors, warnings) {
        (e, 0) => plural(e, "error"),
        (0, w) => plural(w, "warning"),
        (e, w) => format!("{}, {}", plural(e, "error"), plural(w, "warning")),
    }
}
