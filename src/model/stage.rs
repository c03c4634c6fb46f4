//! One stage: merge its part's parameters, find its model, check every
//! parameter line against the schema.

use std::sync::Arc;

use super::chain::Stage;
use super::interpret::{interpret, Context};
use super::parts::Part;
use super::schema::{self, ModelSpec, Shape};
use super::value::ResolvedParam;
use crate::diagnostics::did_you_mean;
use crate::diagnostics::{Cause, Code, Finding, Findings, SourceFile};
use crate::syntax::ast::{Param, StageDecl, StageKind};

/// A parameter line and the file it was written in.
struct Line<'a> {
    param: &'a Param,
    file: &'a Arc<SourceFile>,
}

pub fn resolve(
    file: &Arc<SourceFile>,
    decl: &StageDecl,
    part: Option<&Part>,
    part_failed: bool,
    measurand: Option<&super::chain::Measurand>,
    findings: &mut Findings,
) -> Stage {
    let lines = merged_lines(file, decl, part, findings);
    let mut stage = Stage {
        name: decl.name.name.clone(),
        name_span: decl.name.span,
        kind: decl.kind,
        model: None,
        params: Vec::new(),
        typed: None,
        bill: Default::default(),
        span: decl.span,
        invalid: Vec::new(),
        incomplete: part_failed,
        misnamed: None,
    };
    let Some(model) = find_model(file, decl, &lines, findings) else {
        stage.incomplete = true;
        return stage;
    };
    stage.model = model.model;
    for line in &lines {
        read_line(&mut stage, line, decl, model, measurand, findings);
    }
    if !part_failed {
        check_presence(file, decl, model, &lines, findings);
    }
    let reader = schema::Reader::new(&stage.params);
    stage.bill = schema::read_bill(&reader);
    if stage.invalid.is_empty() {
        stage.typed = (model.read)(&reader);
    }
    stage
}

/// The block's lines (a line given twice is P303) after the part's lines
/// the block does not override.
fn merged_lines<'a>(
    file: &'a Arc<SourceFile>,
    decl: &'a StageDecl,
    part: Option<&'a Part>,
    findings: &mut Findings,
) -> Vec<Line<'a>> {
    let mut lines: Vec<Line<'_>> = Vec::new();
    for param in &decl.params {
        if let Some(first) = lines.iter().find(|l| l.param.name.name == param.name.name) {
            findings.push(
                Finding::new(
                    Code::P303,
                    file,
                    format!(
                        "`{}` is given twice in `{}`",
                        param.name.name, decl.name.name
                    ),
                )
                .label(param.name.span, "given again here")
                .label(first.param.name.span, "first given here")
                .help("keep one line; a block overrides a part's value, not its own"),
            );
            continue;
        }
        lines.push(Line { param, file });
    }
    if let Some(part) = part {
        // The block overrides the part: the part's line counts only when
        // the block does not say the same thing.
        let inherited = part
            .params
            .iter()
            .filter(|p| !decl.params.iter().any(|d| d.name.name == p.name.name))
            .map(|param| Line {
                param,
                file: &part.file,
            });
        lines.splice(0..0, inherited);
    }
    lines
}

/// One line checked against its model's schema row: its value into the
/// stage's parameters, or its finding.
fn read_line(
    stage: &mut Stage,
    line: &Line<'_>,
    decl: &StageDecl,
    model: &ModelSpec,
    measurand: Option<&super::chain::Measurand>,
    findings: &mut Findings,
) {
    let name = line.param.name.name.as_str();
    let (shape, plausible, spec_name) = if model.model == Some(name) {
        (
            model.model_shape,
            schema_plausible(model),
            model.model.unwrap_or(""),
        )
    } else if let Some(spec) = model.param(name) {
        (spec.shape, spec.plausible, spec.name)
    } else {
        findings.push(unknown_param(line, decl, model));
        return;
    };
    let cx = Context {
        file: line.file,
        measurand: measurand.map(|m| m.dim),
        range: measurand,
    };
    let values = &line.param.values;
    match interpret(spec_name, shape, plausible, values, line.param.span, &cx) {
        Ok(value) => stage.params.push(ResolvedParam {
            name: spec_name,
            value,
            span: line.param.span,
            file: Arc::clone(line.file),
        }),
        Err(f) => {
            stage.invalid.push(spec_name.to_string());
            findings.push(*f)
        }
    }
}

fn schema_plausible(model: &ModelSpec) -> schema::Plausible {
    match model.model_shape {
        Shape::Measure { .. } => schema::Plausible::Positive,
        _ => schema::Plausible::Any,
    }
}

fn find_model(
    file: &Arc<SourceFile>,
    decl: &StageDecl,
    lines: &[Line<'_>],
    findings: &mut Findings,
) -> Option<&'static ModelSpec> {
    if let Some(m) = schema::implicit_model(decl.kind) {
        return Some(m);
    }
    let named: Vec<(&Line<'_>, &'static ModelSpec)> = lines
        .iter()
        .filter_map(|l| schema::model(decl.kind, &l.param.name.name).map(|m| (l, m)))
        .collect();
    let words: Vec<&str> = schema::models(decl.kind).filter_map(|m| m.model).collect();
    let list = words
        .iter()
        .map(|w| format!("`{w}`"))
        .collect::<Vec<_>>()
        .join(", ");
    match named.as_slice() {
        [(_, m)] => Some(m),
        [] => {
            let near = lines.iter().find_map(|l| {
                did_you_mean(&l.param.name.name, words.iter().copied()).map(|n| (l, n))
            });
            let mut f = Finding::new(
                Code::P307,
                file,
                format!(
                    "{} `{}` does not say what it is",
                    decl.kind.keyword(),
                    decl.name.name
                ),
            )
            .label(decl.name.span, "no model line");
            f = match near {
                Some((l, n)) if l.file == file => f
                    .label(l.param.name.span, format!("did you mean `{n}`?"))
                    .help(format!(
                        "{} {} starts with one of {list}",
                        super::article(decl.kind.keyword()),
                        decl.kind.keyword()
                    )),
                _ => f.help(format!("add a model line: one of {list}")),
            };
            findings.push(f);
            None
        }
        [(first, _), (second, _), ..] => {
            let mut f = Finding::new(
                Code::P308,
                file,
                format!(
                    "{} `{}` names two models",
                    decl.kind.keyword(),
                    decl.name.name
                ),
            )
            .help("a stage is one model; split it into two stages");
            if second.file == file {
                f = f.label(second.param.name.span, "second model");
            }
            if first.file == file {
                f = f.label(first.param.name.span, "first model");
            }
            if f.labels.is_empty() {
                f = f.label(decl.name.span, "two models");
            }
            findings.push(f);
            None
        }
    }
}

fn unknown_param(line: &Line<'_>, decl: &StageDecl, model: &ModelSpec) -> Finding {
    let name = &line.param.name.name;
    if decl.kind == StageKind::Sensor && name.starts_with("bias_") {
        if let Some(m) = model.model.filter(|m| *m != schema::THERMOCOUPLE) {
            return needless_bias(line, decl, m);
        }
    }
    let what = match model.model {
        Some(m) => format!("{} `{m}`", decl.kind.keyword()),
        None => decl.kind.keyword().to_string(),
    };
    let elsewhere = schema::models(decl.kind)
        .find(|m| m.model.is_some() && m.param(name).is_some())
        .and_then(|m| m.model);
    let help = drift_clause_help(line, decl, model).unwrap_or_else(|| {
        match (did_you_mean(name, model.names()), elsewhere) {
            (Some(n), _) => format!("did you mean `{n}`?"),
            (None, Some(other)) => {
                let kind = decl.kind.keyword();
                format!(
                    "`{name}` belongs to {} {kind} `{other}`",
                    super::article(kind)
                )
            }
            (None, None) => {
                let takes = format!(
                    "{} {what} takes {}",
                    super::article(&what),
                    model
                        .names()
                        .map(|n| format!("`{n}`"))
                        .collect::<Vec<_>>()
                        .join(", ")
                );
                match schema::said_otherwise(decl.kind, name) {
                    Some(hint) => format!("{hint}; {takes}"),
                    None => takes,
                }
            }
        }
    });
    Finding::new(
        Code::P301,
        line.file,
        format!("{what} has no parameter `{name}`"),
    )
    .label(line.param.name.span, "unknown parameter")
    .help(help)
}

/// A `drift` written as a line of its own, where the model takes a drift
/// only as a clause of a value: the line it belongs on, rewritten.
fn drift_clause_help(line: &Line<'_>, decl: &StageDecl, model: &ModelSpec) -> Option<String> {
    if line.param.name.name != schema::DRIFT_CLAUSE {
        return None;
    }
    let drifts = |name: &str| {
        let shape = if model.model == Some(name) {
            Some(model.model_shape)
        } else {
            model.param(name).map(|p| p.shape)
        };
        matches!(shape, Some(Shape::Measure { drift: true, .. }))
    };
    let coefficient = value_text(line.file, line.param)?;
    let host = decl.params.iter().find(|p| drifts(&p.name.name))?;
    Some(format!(
        "a drift is a clause of the value it belongs to, written after its tolerance: `{} drift {coefficient}`",
        line.file.slice(host.span).trim_end()
    ))
}

/// The values of a line as written.
fn value_text<'a>(file: &'a SourceFile, param: &Param) -> Option<&'a str> {
    let first = param.values.first()?.span();
    let last = param.values.last()?.span();
    Some(file.slice(first.to(last)))
}

/// M229: a bias on a sensor whose common mode its circuit already sets.
fn needless_bias(line: &Line<'_>, decl: &StageDecl, model: &str) -> Finding {
    let name = &line.param.name.name;
    Finding::new(
        Code::M229,
        line.file,
        format!(
            "sensor `{}` ({model}) has no use for `{name}`",
            decl.name.name
        ),
    )
    .label(line.param.name.span, "a bias for a floating source")
    .help(format!(
        "remove `{name}`: what excites or powers this sensor sets its common mode; a bias holds a floating `thermocouple`, and an amplifier's `reference` shifts its output"
    ))
}

fn check_presence(
    file: &Arc<SourceFile>,
    decl: &StageDecl,
    model: &ModelSpec,
    lines: &[Line<'_>],
    findings: &mut Findings,
) {
    let presence = Presence {
        file,
        decl,
        model,
        lines,
    };
    let mut required: Vec<&str> = model
        .params
        .iter()
        .filter(|p| p.required)
        .map(|p| p.name)
        .collect();
    if let Some(word) = presence.model_word() {
        required.extend(schema::required_for_word(model, word));
        presence.unused_for_word(word, findings);
    }
    required.retain(|n| {
        !schema::WAIVED
            .iter()
            .any(|(given, waived)| waived == n && presence.has(given))
    });
    presence.required(&required, findings);
    presence.one_of(findings);
    presence.together(findings);
    presence.exclusive(findings);
}

/// A stage's lines against what its model needs together, apart, or at
/// all.
struct Presence<'a> {
    file: &'a Arc<SourceFile>,
    decl: &'a StageDecl,
    model: &'a ModelSpec,
    lines: &'a [Line<'a>],
}

impl Presence<'_> {
    fn has(&self, name: &str) -> bool {
        self.lines.iter().any(|l| l.param.name.name == name)
    }

    /// Where the spec itself (not a part) writes a line.
    fn span_of(&self, name: &str) -> Option<crate::diagnostics::Span> {
        self.lines
            .iter()
            .find(|l| l.param.name.name == name && l.file == self.file)
            .map(|l| l.param.name.span)
    }

    /// The word of the model line (`custom` in `rtd custom`).
    fn model_word(&self) -> Option<&str> {
        let model = self.model.model?;
        self.lines
            .iter()
            .find(|l| l.param.name.name == model)
            .and_then(|l| match l.param.values.first() {
                Some(crate::syntax::ast::Value::Word(w)) => Some(w.name.as_str()),
                _ => None,
            })
    }

    /// P335: a line the model line's word makes unused (coefficients
    /// beside a standard curve, which has its own).
    fn unused_for_word(&self, word: &str, findings: &mut Findings) {
        let Some(unused) = schema::unused_for_word(self.model, word) else {
            return;
        };
        let Some(line) = self.lines.iter().find(|l| l.param.name.name == unused.line) else {
            return;
        };
        findings.push(
            Finding::new(
                Code::P335,
                line.file,
                format!(
                    "`{}` uses the standard `{word}` curve, so its `{}` are not used",
                    self.decl.name.name, unused.line
                ),
            )
            .label(line.param.name.span, "not used")
            .help(unused.help),
        );
    }

    /// A missing parameter is often one written with a typo (P301).
    fn misspelt(&self, wanted: &[&str], findings: &Findings) -> Option<Cause> {
        self.lines
            .iter()
            .filter(|l| !self.model.names().any(|n| n == l.param.name.name))
            .find(|l| did_you_mean(&l.param.name.name, wanted.iter().copied()).is_some())
            .and_then(|l| {
                findings.iter().find(|f| {
                    f.code == Code::P301
                        && f.file == *l.file
                        && f.primary_span() == Some(l.param.name.span)
                })
            })
            .map(Cause::of)
    }

    fn example(&self, name: &str) -> String {
        self.model
            .param(name)
            .map(|p| super::interpret::usage_of(p.name, p.shape))
            .unwrap_or_default()
    }

    fn required(&self, required: &[&str], findings: &mut Findings) {
        let missing: Vec<&str> = required.iter().copied().filter(|n| !self.has(n)).collect();
        // One value written on the model line, where the one missing
        // parameter was meant (`strain_gauge 350 ohm` for `r 350 ohm`).
        let stray = match missing.as_slice() {
            [_] => self.stray_on_model_line(findings),
            _ => None,
        };
        for &name in &missing {
            let (cause, help) = match &stray {
                Some((cause, text)) => (
                    Some(cause.clone()),
                    format!(
                        "move the value off the `{}` line: `{name} {text}` on a line of its own",
                        self.model.model.unwrap_or_default()
                    ),
                ),
                None => (
                    self.misspelt(&[name], findings),
                    format!("add a line such as `{}`", self.example(name)),
                ),
            };
            findings.push(
                Finding::new(
                    Code::P302,
                    self.file,
                    format!("`{}` needs `{name}`", self.decl.name.name),
                )
                .label(self.decl.name.span, format!("`{name}` is missing"))
                .help(help)
                .caused_by(cause),
            );
        }
    }

    /// The model line's values beyond what it takes (its P306) and their
    /// text, if it has any.
    fn stray_on_model_line(&self, findings: &Findings) -> Option<(Cause, String)> {
        let model = self.model.model?;
        let line = self.lines.iter().find(|l| l.param.name.name == model)?;
        let end = line.param.values.last()?.span().end;
        let finding = findings.iter().find(|f| {
            f.code == Code::P306
                && f.file == *line.file
                && f.primary_span()
                    .is_some_and(|s| s.start > line.param.name.span.end && s.start < end)
        })?;
        let start = finding.primary_offset();
        let text = line.file.text().get(start..end)?;
        Some((Cause::of(finding), text.to_string()))
    }

    fn one_of(&self, findings: &mut Findings) {
        for group in self.model.one_of {
            if group.iter().any(|n| self.has(n)) {
                continue;
            }
            let cause = self.misspelt(group, findings);
            let list = group
                .iter()
                .map(|n| format!("`{n}`"))
                .collect::<Vec<_>>()
                .join(" or ");
            findings.push(
                Finding::new(
                    Code::P302,
                    self.file,
                    format!("`{}` needs {list}", self.decl.name.name),
                )
                .label(self.decl.name.span, "missing")
                .help(format!("add {list}"))
                .caused_by(cause),
            );
        }
    }

    fn together(&self, findings: &mut Findings) {
        for group in self.model.together {
            let Some(given) = group.iter().find(|n| self.has(n)) else {
                continue;
            };
            let all = group
                .iter()
                .map(|n| format!("`{n}`"))
                .collect::<Vec<_>>()
                .join(" and ");
            for name in group.iter().filter(|n| !self.has(n)) {
                let mut f = Finding::new(
                    Code::P302,
                    self.file,
                    format!(
                        "`{}` gives `{given}`, so it needs `{name}`",
                        self.decl.name.name
                    ),
                );
                f = match self.span_of(given) {
                    Some(s) => f.label(s, format!("needs `{name}`")),
                    None => f.label(self.decl.name.span, format!("`{name}` is missing")),
                };
                findings.push(f.help(format!(
                    "add a line such as `{}`: {all} are used together",
                    self.example(name)
                )));
            }
        }
    }

    fn exclusive(&self, findings: &mut Findings) {
        for (a, b) in self.model.exclusive {
            if !(self.has(a) && self.has(b)) {
                continue;
            }
            let mut f = Finding::new(
                Code::P308,
                self.file,
                format!("`{a}` and `{b}` cannot both be given"),
            )
            .help(exclusive_help(a, b));
            for n in [b, a] {
                if let Some(s) = self.span_of(n) {
                    f = f.label(s, format!("`{n}`"));
                }
            }
            if f.labels.is_empty() {
                f = f.label(self.decl.name.span, "both given");
            }
            findings.push(f);
        }
    }
}

/// P308's help: why the two do not go together.
fn exclusive_help(a: &str, b: &str) -> String {
    match (a, b) {
        (schema::CHANNEL_OF, _) => format!(
            "a channel shares its converter's part: state `{b}` on the converter it names and drop it here"
        ),
        (schema::param::BURNOUT, schema::param::PULL) => {
            "keep `burnout` or `pull`: each is what drives an open input, a current or a resistor to a voltage".to_string()
        }
        _ => format!("keep `{a}` or `{b}`; they state the same thing two ways"),
    }
}
