//! Chain-level settings: title, measurand, ambient, reference,
//! requirements and alarms.

use std::sync::Arc;

use super::chain::{Alarm, Measurand, Protects, Requirement};
use super::interpret::{interpret, Context};
use super::requirement::{AccuracyMethod, RequirementKind};
use super::schema::{Expect, Plausible, Shape};
use super::typed::Side;
use super::value::{Basis, ParamValue};
use crate::diagnostics::{did_you_mean, did_you_mean_or};
use crate::diagnostics::{Code, Finding, Findings, SourceFile, Span};
use crate::syntax::ast::{ChainDecl, Setting, SettingKind, Value};
use crate::units::{parse_unit, Dim, ZERO_CELSIUS_K};

/// Measurand quantities and their dimension (None: taken from the unit).
const QUANTITIES: &[(&str, Option<Dim>)] = &[
    ("temperature", Some(Dim::TEMPERATURE)),
    ("force", Some(Dim::FORCE)),
    ("mass", Some(Dim::MASS)),
    ("pressure", Some(Dim::PRESSURE)),
    ("strain", Some(Dim::NONE)),
    ("quantity", None),
];

pub const DEFAULT_REFERENCE_K: f64 = 25.0 + ZERO_CELSIUS_K;

#[derive(Debug, Default)]
pub struct Settings {
    pub title: Option<String>,
    pub measurand: Option<Measurand>,
    pub ambient: Option<(f64, f64)>,
    pub reference: Option<f64>,
    pub requirements: Vec<Requirement>,
    pub alarms: Vec<Alarm>,
    pub protects: Option<Protects>,
}

pub fn resolve(file: &Arc<SourceFile>, chain: &ChainDecl, findings: &mut Findings) -> Settings {
    let mut out = Settings::default();
    let mut seen: Vec<Seen> = Vec::new();
    // The measurand first: other settings are in its unit.
    let mut ordered: Vec<&Setting> = chain.settings.iter().collect();
    ordered.sort_by_key(|s| s.kind != SettingKind::Measurand);
    for setting in ordered {
        if let Some(again) = given_again(file, setting, &mut seen) {
            findings.push(again);
            continue;
        }
        if let Err(f) = out.read(file, setting) {
            findings.push(*f);
        }
    }
    let written = chain
        .settings
        .iter()
        .any(|s| s.kind == SettingKind::Measurand);
    if out.measurand.is_none() && !written && !chain.stages.is_empty() {
        findings.push(
            Finding::new(
                Code::P311,
                file,
                format!("chain `{}` has no `measurand`", chain.name.name),
            )
            .label(chain.name.span, "what does this chain measure?")
            .help("add a line such as `measurand temperature -30 degC .. 15 degC`"),
        );
    }
    out
}

/// A setting already given: its kind, its requirement kind, and where.
type Seen = (SettingKind, Option<&'static str>, Span);

/// P312 for a setting stated once per chain and given again; alarms and
/// unknown requirements may repeat.
fn given_again(file: &Arc<SourceFile>, setting: &Setting, seen: &mut Vec<Seen>) -> Option<Finding> {
    let sub = match setting.kind {
        SettingKind::Require => first_word(&setting.values)
            .and_then(RequirementKind::parse)
            .map(RequirementKind::word),
        _ => None,
    };
    let repeatable = setting.kind == SettingKind::Alarm
        || (setting.kind == SettingKind::Require && sub.is_none());
    if repeatable {
        return None;
    }
    if let Some((_, _, first)) = seen
        .iter()
        .find(|(k, s, _)| *k == setting.kind && *s == sub)
    {
        let what = match sub {
            Some(s) => format!("require {s}"),
            None => setting.kind.keyword().to_string(),
        };
        return Some(
            Finding::new(Code::P312, file, format!("`{what}` is given twice"))
                .label(setting.span, "given again here")
                .label(*first, "first given here")
                .help("keep one line; a spec states each fact once"),
        );
    }
    seen.push((setting.kind, sub, setting.span));
    None
}

impl Settings {
    /// One setting line into its field, in the measurand's unit where it
    /// is known.
    fn read(&mut self, file: &Arc<SourceFile>, setting: &Setting) -> Result<(), Box<Finding>> {
        let known = self.measurand.clone();
        let cx = Context {
            file,
            measurand: known.as_ref().map(|m| m.dim),
            range: known.as_ref(),
        };
        match setting.kind {
            SettingKind::Title => match setting.values.as_slice() {
                [Value::Text(t)] => {
                    self.title = Some(t.value.clone());
                    Ok(())
                }
                _ => Err(malformed(
                    file,
                    setting,
                    "a string, such as `title \"Cold store return air\"`",
                )),
            },
            SettingKind::Measurand => measurand(file, setting).map(|m| self.measurand = Some(m)),
            SettingKind::Ambient => ambient(setting, &cx).map(|a| self.ambient = a),
            SettingKind::Reference => reference(setting, &cx).map(|r| self.reference = r),
            SettingKind::Require => requirement(setting, &cx).map(|r| self.requirements.push(r)),
            SettingKind::Alarm => alarm(setting, &cx).map(|a| self.alarms.push(a)),
            SettingKind::Protects => protects(setting, file).map(|p| self.protects = Some(p)),
        }
    }
}

fn ambient(setting: &Setting, cx: &Context<'_>) -> Result<Option<(f64, f64)>, Box<Finding>> {
    let value = interpret(
        "ambient",
        Shape::RangeOrPoint(Expect::Temperature),
        Plausible::Positive,
        &setting.values,
        setting.span,
        cx,
    )?;
    Ok(match value {
        ParamValue::Range { low, high } => Some((low, high)),
        _ => None,
    })
}

fn reference(setting: &Setting, cx: &Context<'_>) -> Result<Option<f64>, Box<Finding>> {
    let value = interpret(
        "reference",
        Shape::Measure {
            expect: Expect::Temperature,
            tol: false,
            drift: false,
        },
        Plausible::Positive,
        &setting.values,
        setting.span,
        cx,
    )?;
    Ok(match value {
        ParamValue::Measure(m) => Some(m.nominal),
        _ => None,
    })
}

fn first_word(values: &[Value]) -> Option<&str> {
    match values.first() {
        Some(Value::Word(w)) => Some(w.name.as_str()),
        _ => None,
    }
}

fn malformed(file: &Arc<SourceFile>, setting: &Setting, expected: &str) -> Box<Finding> {
    Box::new(
        Finding::new(
            Code::P306,
            file,
            format!("`{}` expects {expected}", setting.kind.keyword()),
        )
        .label(setting.span, "malformed")
        .help(format!("write it as {expected}")),
    )
}

fn measurand(file: &Arc<SourceFile>, setting: &Setting) -> Result<Measurand, Box<Finding>> {
    let example = "`measurand temperature -30 degC .. 15 degC`";
    let (word, range) = match setting.values.as_slice() {
        [Value::Word(w), Value::Range(r)] => (w, r),
        _ => {
            return Err(malformed(
                file,
                setting,
                &format!("a quantity and a range, such as {example}"),
            ))
        }
    };
    let Some(&(_, dim)) = QUANTITIES.iter().find(|(q, _)| *q == word.name) else {
        let near = did_you_mean(&word.name, QUANTITIES.iter().map(|(q, _)| *q));
        let list = QUANTITIES
            .iter()
            .map(|(q, _)| format!("`{q}`"))
            .collect::<Vec<_>>()
            .join(", ");
        return Err(Box::new(
            Finding::new(
                Code::P309,
                file,
                format!("`{}` is not a measurand quantity", word.name),
            )
            .label(word.span, "unknown quantity")
            .help(match near {
                Some(n) => format!("did you mean `{n}`? quantities: {list}"),
                None => format!("quantities: {list}"),
            }),
        ));
    };
    let unit_text = range
        .high
        .unit
        .as_ref()
        .or(range.low.unit.as_ref())
        .map(|u| u.text.clone())
        .unwrap_or_default();
    let dim = match dim {
        Some(d) => d,
        None => parse_unit(&unit_text).map(|u| u.dim).unwrap_or(Dim::NONE),
    };
    let cx = Context {
        file,
        measurand: Some(dim),
        range: None,
    };
    let value = interpret(
        "measurand",
        Shape::Range(Expect::Measurand),
        Plausible::Any,
        &setting.values[1..],
        setting.span,
        &cx,
    )?;
    let ParamValue::Range { low, high } = value else {
        unreachable!("a range shape gives a range")
    };
    Ok(Measurand {
        quantity: word.name.clone(),
        unit: unit_text,
        dim,
        low,
        high,
        span: setting.span,
    })
}

fn requirement(setting: &Setting, cx: &Context<'_>) -> Result<Requirement, Box<Finding>> {
    let file = cx.file;
    let requirement = requirement_kind(file, setting)?;
    let (requirement, values) = with_method(file, requirement, &setting.values[1..])?;
    let value = interpret(
        &format!("require {}", requirement.word()),
        requirement_shape(requirement),
        Plausible::Positive,
        values,
        setting.span,
        cx,
    )?;
    // One resolution for the whole range: it cannot follow the reading.
    if let (ParamValue::Limit(t), RequirementKind::Resolution) = (&value, requirement) {
        if t.basis == Basis::Reading {
            return Err(Box::new(
                Finding::new(
                    Code::P306,
                    file,
                    "a resolution cannot be a share of the reading",
                )
                .label(t.span, "`of reading`")
                .help("state the resolution in the measurand's unit, or as `% of span`"),
            ));
        }
    }
    Ok(Requirement {
        kind: requirement,
        value,
        span: setting.span,
    })
}

/// What a chain may say it protects.
const PROTECTED: [&str; 2] = ["people", "property"];

/// `protects people`, `protects property` or `protects people, property`.
fn protects(setting: &Setting, file: &Arc<SourceFile>) -> Result<Protects, Box<Finding>> {
    let example = "`protects people`, `protects property` or `protects people, property`";
    let mut out = Protects {
        people: false,
        property: false,
        span: setting.span,
    };
    let mut expect_word = true;
    for value in &setting.values {
        match (value, expect_word) {
            (Value::Word(w), true) if PROTECTED.contains(&w.name.as_str()) => {
                match w.name.as_str() {
                    "people" => out.people = true,
                    _ => out.property = true,
                }
                expect_word = false;
            }
            (Value::Word(w), true) => {
                return Err(Box::new(
                    Finding::new(
                        Code::P350,
                        file,
                        format!("`{}` is not something a chain protects", w.name),
                    )
                    .label(w.span, "expected `people` or `property`")
                    .help(did_you_mean_or(
                        &w.name,
                        PROTECTED.into_iter(),
                        || format!("write {example}"),
                    )),
                ));
            }
            (Value::Comma(_), false) => expect_word = true,
            _ => return Err(malformed(file, setting, example)),
        }
    }
    if expect_word {
        return Err(malformed(file, setting, example));
    }
    Ok(out)
}

/// The requirement a `require` line names (P306, P310 otherwise).
fn requirement_kind(
    file: &Arc<SourceFile>,
    setting: &Setting,
) -> Result<RequirementKind, Box<Finding>> {
    let Some(Value::Word(kind)) = setting.values.first() else {
        return Err(malformed(
            file,
            setting,
            "a requirement, such as `require accuracy ± 0.3 K`",
        ));
    };
    RequirementKind::parse(&kind.name).ok_or_else(|| {
        let near = did_you_mean(
            &kind.name,
            RequirementKind::ALL.map(|k| k.word()).into_iter(),
        );
        Box::new(
            Finding::new(Code::P310, file, format!("`{}` is not a requirement", kind.name))
                .label(kind.span, "unknown requirement")
                .help(match near {
                    Some(n) => format!("did you mean `{n}`? requirements: `accuracy`, `resolution`, `response`, `rejection`"),
                    None => "requirements: `accuracy`, `resolution`, `response`, `rejection`".to_string(),
                }),
        )
    })
}

/// An accuracy's method, the line's last word unless it ends `of span`
/// or `of reading` (P304 for an unknown one), and the values before it.
fn with_method<'v>(
    file: &Arc<SourceFile>,
    requirement: RequirementKind,
    values: &'v [Value],
) -> Result<(RequirementKind, &'v [Value]), Box<Finding>> {
    let ends_share = matches!(
        values,
        [.., Value::Word(of), Value::Word(_)] if of.name == "of"
    );
    let (RequirementKind::Accuracy(_), false, Some(Value::Word(w))) =
        (requirement, ends_share, values.last())
    else {
        return Ok((requirement, values));
    };
    let Some(method) = AccuracyMethod::parse(&w.name) else {
        let near = did_you_mean(&w.name, AccuracyMethod::ALL.map(|m| m.word()).into_iter());
        return Err(Box::new(
            Finding::new(
                Code::P304,
                file,
                format!("`{}` is not an accuracy method", w.name),
            )
            .label(w.span, "unknown method")
            .help(match near {
                Some(n) => format!(
                    "did you mean `{n}`? methods: `worst_case`, `gum` (default), `monte_carlo`"
                ),
                None => "methods: `worst_case`, `gum` (default), `monte_carlo`".to_string(),
            }),
        ));
    };
    Ok((
        RequirementKind::Accuracy(Some(method)),
        &values[..values.len() - 1],
    ))
}

/// What a requirement's value is written as.
fn requirement_shape(requirement: RequirementKind) -> Shape {
    match requirement {
        RequirementKind::Accuracy(_) | RequirementKind::Resolution => {
            Shape::Limit(Expect::Measurand)
        }
        RequirementKind::Response => Shape::Measure {
            expect: Expect::Dim(Dim::TIME),
            tol: false,
            drift: false,
        },
        RequirementKind::Rejection => Shape::At {
            value: Expect::Decibel,
            at: Expect::Dim(Dim::FREQUENCY),
        },
    }
}

fn alarm(setting: &Setting, cx: &Context<'_>) -> Result<Alarm, Box<Finding>> {
    let file = cx.file;
    let Some(Value::Word(side)) = setting.values.first() else {
        return Err(malformed(
            file,
            setting,
            "a side and a limit, such as `alarm high 8 degC`",
        ));
    };
    let Some(which) = Side::from_word(&side.name) else {
        return Err(Box::new(
            Finding::new(
                Code::P310,
                file,
                format!("`{}` is not an alarm side", side.name),
            )
            .label(side.span, "expected `high` or `low`")
            .help(did_you_mean_or(
                &side.name,
                [Side::High, Side::Low].map(Side::word).into_iter(),
                || "write `alarm high <limit>` or `alarm low <limit>`".to_string(),
            )),
        ));
    };
    let value = interpret(
        "alarm",
        Shape::Measure {
            expect: Expect::Measurand,
            tol: false,
            drift: false,
        },
        Plausible::Any,
        &setting.values[1..],
        setting.span,
        cx,
    )?;
    let ParamValue::Measure(m) = value else {
        unreachable!("a measure shape gives a measure")
    };
    Ok(Alarm {
        side: which,
        at: m.nominal,
        span: setting.span,
    })
}
