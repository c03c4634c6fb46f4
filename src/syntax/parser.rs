//! pest parse and lowering to the typed AST. This is the only module that
//! sees `pest::iterators::Pair`.

use std::sync::Arc;

use pest::iterators::Pair;
use pest::Parser as _;

use super::ast::{
    Ast, ChainDecl, EdgeDecl, Endpoint, Ident, Param, QuantityLit, RangeLit, Setting, SettingKind,
    StageDecl, StageKind, StringLit, ToleranceForm, ToleranceLit, TrackDecl, UnitLit, UseDecl,
    Value,
};
use super::expected::explain_parse_error;
use super::grammar::{CatenaParser, Rule};
use crate::diagnostics::{Code, Finding, Findings, SourceFile, Span};

/// Bounds pest's own recursion on hostile input (the prescan already
/// bounds brace depth; this bounds everything else).
const CALL_LIMIT: usize = 50_000_000;

pub(super) fn parse_file(file: &Arc<SourceFile>) -> (Ast, Findings) {
    pest::set_call_limit(std::num::NonZeroUsize::new(CALL_LIMIT));
    let mut lower = Lower {
        file,
        findings: Findings::new(),
    };
    let ast = match CatenaParser::parse(Rule::file, file.text()) {
        Ok(mut pairs) => match pairs.next() {
            Some(pair) => lower.file(pair),
            None => Ast::default(),
        },
        Err(error) => {
            // Recovery rules make the whole-file parse total; reaching here
            // means the call limit or a grammar gap, still reported cleanly.
            lower
                .findings
                .push(explain_parse_error(file, 0, file.text(), &error));
            Ast::default()
        }
    };
    (ast, lower.findings)
}

struct Lower<'f> {
    file: &'f Arc<SourceFile>,
    findings: Findings,
}

fn span_of(pair: &Pair<'_, Rule>) -> Span {
    let s = pair.as_span();
    Span::new(s.start(), s.end())
}

impl Lower<'_> {
    fn file(&mut self, pair: Pair<'_, Rule>) -> Ast {
        let mut ast = Ast::default();
        for item in pair.into_inner() {
            match item.as_rule() {
                Rule::use_decl => {
                    let span = span_of(&item);
                    if let Some(path) = item.into_inner().find(|p| p.as_rule() == Rule::string) {
                        ast.uses.push(UseDecl {
                            path: self.string(path),
                            span,
                        });
                    }
                }
                Rule::chain => ast.chains.push(self.chain(item)),
                Rule::bad_top_line => self.bad_line(item, Rule::top_line),
                _ => {}
            }
        }
        ast
    }

    fn chain(&mut self, pair: Pair<'_, Rule>) -> ChainDecl {
        let span = span_of(&pair);
        let mut name = None;
        let mut chain = ChainDecl {
            name: Ident {
                name: String::new(),
                span,
            },
            label: None,
            settings: Vec::new(),
            stages: Vec::new(),
            edges: Vec::new(),
            tracks: Vec::new(),
            span,
        };
        for item in pair.into_inner() {
            match item.as_rule() {
                Rule::ident if name.is_none() => name = Some(ident(&item)),
                Rule::string => chain.label = Some(self.string(item)),
                Rule::setting => {
                    if let Some(s) = self.setting(item) {
                        chain.settings.push(s);
                    }
                }
                Rule::stage => chain.stages.push(self.stage(item)),
                Rule::edge => chain.edges.push(self.edge(item)),
                Rule::track => chain.tracks.push(self.track(item)),
                Rule::bad_chain_line => self.bad_line(item, Rule::chain_line),
                _ => {}
            }
        }
        if let Some(name) = name {
            chain.name = name;
        }
        chain
    }

    fn setting(&mut self, pair: Pair<'_, Rule>) -> Option<Setting> {
        let span = span_of(&pair);
        let mut inner = pair.into_inner();
        let keyword = inner.next()?;
        let kind = SettingKind::from_keyword(keyword.as_str())?;
        Some(Setting {
            kind,
            keyword_span: span_of(&keyword),
            values: inner.filter_map(|v| self.value(v)).collect(),
            span,
        })
    }

    fn stage(&mut self, pair: Pair<'_, Rule>) -> StageDecl {
        let span = span_of(&pair);
        let mut inner = pair.into_inner();
        let kind_pair = inner.next().expect("grammar: stage starts with its kind");
        let kind = StageKind::from_keyword(kind_pair.as_str())
            .expect("grammar: stage_kind lists exactly the stage kinds");
        let name = ident(
            &inner
                .next()
                .expect("grammar: stage kind is followed by a name"),
        );
        let mut stage = StageDecl {
            kind,
            kind_span: span_of(&kind_pair),
            name,
            part: None,
            params: Vec::new(),
            span,
        };
        for item in inner {
            match item.as_rule() {
                Rule::part_ref => stage.part = item.into_inner().next().map(|p| ident(&p)),
                Rule::param => stage.params.push(self.param(item)),
                Rule::bad_param_line => self.bad_line(item, Rule::param_line),
                _ => {}
            }
        }
        stage
    }

    /// A parameter line; also the entry point for parameter values read
    /// from a parts file.
    pub(super) fn param(&mut self, pair: Pair<'_, Rule>) -> Param {
        let span = span_of(&pair);
        let mut inner = pair.into_inner();
        let name = ident(
            &inner
                .next()
                .expect("grammar: a parameter starts with its name"),
        );
        Param {
            name,
            values: inner.filter_map(|v| self.value(v)).collect(),
            span,
        }
    }

    fn track(&mut self, pair: Pair<'_, Rule>) -> TrackDecl {
        let span = span_of(&pair);
        let mut inner = pair.into_inner();
        inner
            .next()
            .expect("grammar: a track line starts with `track`");
        let name = ident(
            &inner
                .next()
                .expect("grammar: `track` is followed by a name"),
        );
        let members = inner
            .next()
            .expect("grammar: a track line lists its members")
            .into_inner()
            .map(|m| ident(&m))
            .collect();
        TrackDecl {
            name,
            members,
            values: inner.filter_map(|v| self.value(v)).collect(),
            span,
        }
    }

    fn edge(&mut self, pair: Pair<'_, Rule>) -> EdgeDecl {
        let span = span_of(&pair);
        let mut endpoints = Vec::new();
        for item in pair.into_inner() {
            match item.as_rule() {
                Rule::endpoint => {
                    let span = span_of(&item);
                    let mut parts = item.into_inner();
                    let stage = ident(&parts.next().expect("grammar: an endpoint names a stage"));
                    let port = parts.next().map(|p| ident(&p));
                    endpoints.push(Endpoint { stage, port, span });
                }
                Rule::wrong_arrow => {
                    let s = span_of(&item);
                    self.findings.push(
                        Finding::new(
                            Code::S005,
                            self.file,
                            format!("`{}` is not an edge arrow", item.as_str()),
                        )
                        .label(s, "write `->` here")
                        .help("stages are joined with `->`, as in `probe -> front -> conv`"),
                    );
                }
                _ => {}
            }
        }
        EdgeDecl { endpoints, span }
    }

    fn value(&mut self, pair: Pair<'_, Rule>) -> Option<Value> {
        Some(match pair.as_rule() {
            Rule::quantity | Rule::unsigned_quantity => Value::Quantity(self.quantity(pair)?),
            Rule::range => {
                let span = span_of(&pair);
                let mut inner = pair.into_inner();
                let low = self.quantity(inner.next()?)?;
                let high = self.quantity(inner.next()?)?;
                Value::Range(RangeLit { low, high, span })
            }
            Rule::tolerance => Value::Tolerance(self.tolerance(pair)?),
            Rule::word => Value::Word(ident(&pair)),
            Rule::string => Value::Text(self.string(pair)),
            Rule::comma => Value::Comma(span_of(&pair)),
            _ => return None,
        })
    }

    fn tolerance(&mut self, pair: Pair<'_, Rule>) -> Option<ToleranceLit> {
        let mut span = span_of(&pair);
        let mut form = None;
        let mut normal = false;
        for item in pair.into_inner() {
            match item.as_rule() {
                Rule::sym_tol => {
                    let mut inner = item.into_inner();
                    let sign = inner.next()?;
                    if let Some(wrong) = sign.clone().into_inner().next() {
                        self.findings.push(
                            Finding::new(
                                Code::S006,
                                self.file,
                                format!("`{}` is not a plus-minus sign", wrong.as_str()),
                            )
                            .label(span_of(&wrong), "write `±` or `+-` here")
                            .help("a symmetric tolerance is `± 0.1 %` or `+- 0.1 %`"),
                        );
                    }
                    let q = self.quantity(inner.next()?)?;
                    if q.number.is_sign_negative() && q.number != 0.0 {
                        let unit = q
                            .unit
                            .as_ref()
                            .map_or(String::new(), |u| format!(" {}", u.text));
                        let magnitude = format!("{}{unit}", -q.number);
                        self.findings.push(
                            Finding::new(
                                Code::S013,
                                self.file,
                                "a tolerance after `±` is a size and cannot be negative",
                            )
                            .label(q.number_span, "negative")
                            .help(format!(
                                "write `± {magnitude}`; a one-sided limit is `+0 -{magnitude}` or `+{magnitude} -0`"
                            )),
                        );
                    }
                    span = Span::new(span.start, q.span.end);
                    form = Some(ToleranceForm::Symmetric(q));
                }
                Rule::asym_tol => {
                    let mut inner = item.into_inner();
                    let plus = self.quantity(inner.next()?)?;
                    let minus = self.quantity(inner.next()?)?;
                    span = Span::new(span.start, minus.span.end);
                    form = Some(ToleranceForm::Asymmetric { plus, minus });
                }
                Rule::kw_normal => {
                    normal = true;
                    span = Span::new(span.start, span_of(&item).end);
                }
                _ => {}
            }
        }
        Some(ToleranceLit {
            form: form?,
            normal,
            span,
        })
    }

    fn quantity(&mut self, pair: Pair<'_, Rule>) -> Option<QuantityLit> {
        let whole = span_of(&pair);
        let mut number = None;
        let mut unit = None;
        for item in pair.into_inner() {
            match item.as_rule() {
                Rule::number | Rule::unsigned_number => {
                    let s = span_of(&item);
                    let text = item.as_str();
                    match text.parse::<f64>() {
                        Ok(v) if v.is_finite() => number = Some((v, s)),
                        _ => {
                            self.findings.push(
                                Finding::new(
                                    Code::S010,
                                    self.file,
                                    format!("`{text}` is too large to represent"),
                                )
                                .label(s, "beyond ±1.8e308")
                                .help("use an SI prefix or a smaller exponent"),
                            );
                            number = Some((0.0, s));
                        }
                    }
                }
                Rule::unit => {
                    unit = Some(UnitLit {
                        text: item.as_str().to_string(),
                        span: span_of(&item),
                    })
                }
                _ => {}
            }
        }
        let (number, number_span) = number?;
        let end = unit.as_ref().map(|u| u.span.end).unwrap_or(number_span.end);
        Some(QuantityLit {
            number,
            number_span,
            unit,
            span: Span::new(whole.start, end),
        })
    }

    fn string(&mut self, pair: Pair<'_, Rule>) -> StringLit {
        let span = span_of(&pair);
        let raw = pair
            .into_inner()
            .next()
            .map(|p| p.as_str())
            .unwrap_or_default();
        let mut value = String::with_capacity(raw.len());
        let mut chars = raw.chars();
        while let Some(c) = chars.next() {
            if c == '\\' {
                match chars.next() {
                    Some('n') => value.push('\n'),
                    Some('t') => value.push('\t'),
                    Some(other) => value.push(other),
                    None => {}
                }
            } else {
                value.push(c);
            }
        }
        StringLit { value, span }
    }

    /// A line the grammar swallowed: parse it again on its own, anchored to
    /// the statement it should have been, so pest names the exact position.
    fn bad_line(&mut self, pair: Pair<'_, Rule>, anchored: Rule) {
        let span = span_of(&pair);
        let text = pair.as_str();
        // A swallowed block is judged by its header line.
        let head = match text.find('{') {
            Some(i) => &text[..=i],
            None => text.lines().next().unwrap_or(text),
        };
        let head = head.trim_end();
        let finding = match CatenaParser::parse(anchored, head) {
            Err(error) => explain_parse_error(self.file, span.start, head, &error),
            Ok(_) => Finding::new(Code::S001, self.file, "this line cannot stand here").label(
                Span::new(span.start, span.start + head.len()),
                "not expected here",
            ),
        };
        let finding = super::expected::refine(finding, anchored, head, span.start);
        self.findings.push(finding);
    }
}

fn ident(pair: &Pair<'_, Rule>) -> Ident {
    Ident {
        name: pair.as_str().to_string(),
        span: span_of(pair),
    }
}

/// Parses one parameter's values written outside a spec (a parts file):
/// `text` is the value as written, `offset` where it sits in `file`.
pub(super) fn parse_param_values(
    file: &Arc<SourceFile>,
    name: &str,
    text: &str,
    offset: usize,
) -> Result<(Vec<Value>, Findings), Finding> {
    let line = format!("{name} {text}");
    // The synthetic name and space shift every position.
    let shift = offset as isize - (name.len() as isize + 1);
    match CatenaParser::parse(Rule::param_line, &line) {
        Err(error) => {
            let f = explain_parse_error(file, 0, &line, &error);
            Err(shift_finding(f, shift))
        }
        Ok(mut pairs) => {
            let mut lower = Lower {
                file,
                findings: Findings::new(),
            };
            let Some(param) = pairs.next().and_then(|p| p.into_inner().next()) else {
                return Ok((Vec::new(), Findings::new()));
            };
            let param = lower.param(param);
            let values = param
                .values
                .into_iter()
                .map(|v| shift_value(v, shift))
                .collect();
            let mut findings = Findings::new();
            for f in lower.findings {
                findings.push(shift_finding(f, shift));
            }
            Ok((values, findings))
        }
    }
}

fn shift_span(span: Span, by: isize) -> Span {
    let move_by = |x: usize| (x as isize + by).max(0) as usize;
    Span::new(move_by(span.start), move_by(span.end))
}

fn shift_finding(mut f: Finding, by: isize) -> Finding {
    for l in &mut f.labels {
        l.span = shift_span(l.span, by);
    }
    f
}

fn shift_quantity(mut q: QuantityLit, by: isize) -> QuantityLit {
    q.span = shift_span(q.span, by);
    q.number_span = shift_span(q.number_span, by);
    if let Some(u) = &mut q.unit {
        u.span = shift_span(u.span, by);
    }
    q
}

fn shift_value(v: Value, by: isize) -> Value {
    match v {
        Value::Quantity(q) => Value::Quantity(shift_quantity(q, by)),
        Value::Range(r) => Value::Range(RangeLit {
            low: shift_quantity(r.low, by),
            high: shift_quantity(r.high, by),
            span: shift_span(r.span, by),
        }),
        Value::Tolerance(t) => Value::Tolerance(ToleranceLit {
            form: match t.form {
                ToleranceForm::Symmetric(q) => ToleranceForm::Symmetric(shift_quantity(q, by)),
                ToleranceForm::Asymmetric { plus, minus } => ToleranceForm::Asymmetric {
                    plus: shift_quantity(plus, by),
                    minus: shift_quantity(minus, by),
                },
            },
            normal: t.normal,
            span: shift_span(t.span, by),
        }),
        Value::Word(mut w) => {
            w.span = shift_span(w.span, by);
            Value::Word(w)
        }
        Value::Text(mut s) => {
            s.span = shift_span(s.span, by);
            Value::Text(s)
        }
        Value::Comma(s) => Value::Comma(shift_span(s, by)),
    }
}

#[cfg(test)]
mod tests {
    use crate::diagnostics::{Code, SourceFile, Span};

    /// `spans! { name: "text with «the marked bytes»" => CODE; }`: parsing
    /// the text (markers taken out) reports CODE, and the first such
    /// finding's primary label covers exactly the marked bytes.
    macro_rules! spans {
        ($($name:ident: $source:expr => $code:ident;)*) => {
            $(
                #[test]
                fn $name() {
                    assert_span($source, Code::$code);
                }
            )*
        };
    }

    fn assert_span(marked: &str, code: Code) {
        let start = marked.find('«').expect("« opens the span");
        let end = marked.find('»').expect("» closes the span") - '«'.len_utf8();
        let text = marked.replace(['«', '»'], "");
        let file = SourceFile::new("t.catena", text.clone());
        let (_, findings) = crate::syntax::parse(&file);
        let found: Vec<(Code, Option<Span>)> = findings
            .iter()
            .map(|f| (f.code, f.primary_span()))
            .collect();
        let first = found.iter().find(|(c, _)| *c == code);
        assert_eq!(
            first,
            Some(&(code, Some(Span::new(start, end)))),
            "{code:?} expected on `{}` ({start}..{end}); found {found:?}",
            &text[start..end]
        );
    }

    const HEAD: &str = "chain a {\n    measurand temperature 0 degC .. 50 degC\n";

    /// A unit split by a space before its `/` is S001 at the `/`, and
    /// the help spells the unit whole.
    #[test]
    fn a_unit_split_by_a_space_is_spelt_whole() {
        let marked = format!("{HEAD}    amplifier front {{ offset_drift 0.3 uV «/K» }}\n}}\n");
        assert_span(&marked, Code::S001);
        let file = SourceFile::new("t.catena", marked.replace(['«', '»'], ""));
        let (_, findings) = crate::syntax::parse(&file);
        let help = findings.iter().find_map(|f| f.help.clone());
        assert_eq!(
            help.as_deref(),
            Some("a unit is written without spaces: `uV/K`")
        );
    }

    #[test]
    fn the_markers_give_byte_offsets() {
        let marked = format!("{HEAD}    «ambeint» 0 degC .. 45 degC\n}}\n");
        assert_eq!(marked.find('«'), Some(HEAD.len() + 4));
        assert_span(&marked, Code::S001);
    }

    spans! {
        misspelt_setting: "chain a {\n    measurand temperature 0 degC .. 50 degC\n    «ambeint» 0 degC .. 45 degC\n}\n" => S001;
        stray_character: "chain a {\n    measurand temperature 0 degC .. 50 degC «$»\n}\n" => S001;
        unclosed_brace: "chain a «{»\n    measurand temperature 0 degC .. 50 degC\n" => S002;
        stray_closing_brace: "chain a {\n    measurand temperature 0 degC .. 50 degC\n}\n«}»\n" => S002;
        wrong_arrow: "chain a {\n    measurand temperature 0 degC .. 50 degC\n    drive «=>» probe\n}\n" => S005;
        misspelt_plus_minus: "chain a {\n    measurand temperature 0 degC .. 50 degC\n    amplifier front { gain 4 «+/-» 0.05 % }\n}\n" => S006;
        unterminated_string: "chain a {\n    title «\"Deck oven»\n}\n" => S007;
        nested_stage: "chain a {\n    measurand temperature 0 degC .. 50 degC\n    amplifier front { gain 4 «{» }\n}\n" => S008;
        number_out_of_range: "chain a {\n    measurand temperature 0 degC .. 50 degC\n    amplifier front { offset «20e400» uV max }\n}\n" => S010;
        setting_outside_a_chain: "«ambient» 10 degC .. 40 degC\nchain a {\n    measurand temperature 0 degC .. 50 degC\n}\n" => S011;
        negative_tolerance: "chain a {\n    measurand temperature 0 degC .. 50 degC\n    amplifier front { gain 4 ± «-0.05» % }\n}\n" => S013;
        bidirectional_control: "chain a {\n    # a comment «\u{202e}» here\n    measurand temperature 0 degC .. 50 degC\n}\n" => S016;
        // Not `chain` said not to start a statement, with "did you mean
        // `chain`?": the keyword is right, the rest of the line is wrong.
        right_keyword_wrong_after: "chain a «°{»\n}\n" => S001;
    }
}
