//! Checks a parameter line's values against its shape and converts them to
//! SI: units and dimensions here, plausibility after.

use std::sync::Arc;

use super::chain::Measurand;
use super::schema::{Expect, Plausible, Shape};
use super::value::{Basis, Drift, Measure, ParamValue, Tolerance};
use crate::diagnostics::did_you_mean;
use crate::diagnostics::{Code, Finding, SourceFile, Span};
use crate::syntax::ast::{QuantityLit, ToleranceForm, ToleranceLit, Value};
use crate::units::{parse_unit, Dim, Unit, UnitError, UnitKind, ZERO_CELSIUS_K};

/// What the values are checked against besides the schema.
#[derive(Clone, Copy, Debug)]
pub struct Context<'a> {
    pub file: &'a Arc<SourceFile>,
    /// The chain's measurand dimension, once known.
    pub measurand: Option<Dim>,
    /// The chain's measurand, once known: its span and unit, for limits
    /// written as a share of the span or of the reading.
    pub range: Option<&'a Measurand>,
}

type Checked<T> = Result<T, Box<Finding>>;

/// Interprets the values of one parameter line.
pub fn interpret(
    spec_name: &str,
    shape: Shape,
    plausible: Plausible,
    values: &[Value],
    line: Span,
    cx: &Context<'_>,
) -> Checked<ParamValue> {
    let mut r = Reader {
        name: spec_name,
        values,
        at: 0,
        line,
        cx,
    };
    let value = r.shape(shape)?;
    r.finish(shape)?;
    check_plausible(spec_name, &value, plausible, line, cx)?;
    Ok(value)
}

struct Reader<'a> {
    name: &'a str,
    values: &'a [Value],
    at: usize,
    line: Span,
    cx: &'a Context<'a>,
}

impl Reader<'_> {
    fn peek(&self) -> Option<&Value> {
        self.values.get(self.at)
    }

    fn next(&mut self) -> Option<&Value> {
        let v = self.values.get(self.at);
        self.at += usize::from(v.is_some());
        v
    }

    fn peek_word(&self, word: &str) -> bool {
        matches!(self.peek(), Some(Value::Word(w)) if w.name == word)
    }

    fn finish(&self, shape: Shape) -> Checked<()> {
        match self.peek() {
            None => Ok(()),
            Some(v) => Err(self.malformed(
                v.span(),
                format!("`{}` has more values than it takes", self.name),
                shape,
            )),
        }
    }

    fn malformed(&self, span: Span, message: String, shape: Shape) -> Box<Finding> {
        Box::new(
            Finding::new(Code::P306, self.cx.file, message)
                .label(span, "not expected here")
                .help(format!("write it as `{}`", self.usage_here(shape))),
        )
    }

    /// How the parameter is written, for a help line on this line: a
    /// value stated at a point keeps the value as written (`2 mV/V`) and
    /// takes the top of the chain's measurand range as its point; every
    /// other form as [`usage`] gives it.
    fn usage_here(&self, shape: Shape) -> String {
        let Shape::At { value, .. } = shape else {
            return usage(self.name, shape);
        };
        let is_at = |v: &Value| matches!(v, Value::Word(w) if w.name == "at");
        let written: Vec<&Value> = self.values.iter().take_while(|v| !is_at(v)).collect();
        let value = match (written.first(), written.last()) {
            (Some(first), Some(last)) => self
                .cx
                .file
                .slice(Span::new(first.span().start, last.span().end))
                .to_string(),
            _ => example(value, self.cx),
        };
        let point = match self.cx.range {
            Some(m) => format!(
                "{} {}",
                crate::units::format::trimmed(crate::units::format::from_si(m.high, &m.unit), 6),
                m.unit
            ),
            None => example(Expect::Measurand, self.cx),
        };
        format!("{} {value} at {point}", self.name)
    }

    fn missing(&self, what: &str, shape: Shape) -> Box<Finding> {
        let end = self
            .values
            .last()
            .map(|v| v.span().end)
            .unwrap_or(self.line.end);
        Box::new(
            Finding::new(
                Code::P306,
                self.cx.file,
                format!("`{}` needs {what}", self.name),
            )
            .label(
                Span::new(self.line.start, end),
                format!("{what} is missing"),
            )
            .help(format!("write it as `{}`", self.usage_here(shape))),
        )
    }

    fn shape(&mut self, shape: Shape) -> Checked<ParamValue> {
        match shape {
            Shape::Flag => Ok(ParamValue::Flag),
            Shape::Measure { expect, tol, drift } => Ok(ParamValue::Measure(
                self.measure(expect, tol, drift, shape)?.0,
            )),
            Shape::Limit(expect) if takes_share(expect) => {
                Ok(ParamValue::Limit(self.share_or_limit(expect, shape)?))
            }
            Shape::Limit(expect) => Ok(ParamValue::Limit(self.limit(expect, shape)?)),
            Shape::Range(expect) => self.range(expect, false, shape),
            Shape::RangeOrPoint(expect) => self.range_or_point(expect, shape),
            Shape::Words(words) => Ok(ParamValue::Word(self.word(words, shape)?)),
            Shape::ThermocoupleType => {
                if !self.peek_word("type") {
                    return Err(self.missing("a type letter after `type`", shape));
                }
                self.next();
                Ok(ParamValue::Word(
                    self.word(super::schema::THERMOCOUPLE_TYPES, shape)?,
                ))
            }
            Shape::Count { min, max } => Ok(ParamValue::Count(self.count(min, max, shape)?)),
            Shape::Numbers(n) => self.numbers(n, shape),
            Shape::TolerancedNumbers(n) => self.toleranced_numbers(n, shape),
            Shape::At { value, at } => {
                self.value_then((value, at), ("at", "the point it is stated at"), shape)
            }
            Shape::To { value, to } => {
                self.value_then((value, to), ("to", "the voltage it goes to"), shape)
            }
            Shape::Method => {
                let method = self.word(&["exact", "linear", "table", "poly"], shape)?;
                let points = match method.as_str() {
                    "table" => Some(self.count(2, 4096, shape)?),
                    "poly" => Some(self.count(1, 9, shape)?),
                    _ => None,
                };
                Ok(ParamValue::Method { method, points })
            }
            Shape::Calibrate => self.calibrate(shape),
            Shape::LimitOrStage(expect) => match self.peek().cloned() {
                Some(Value::Word(w)) => {
                    self.next();
                    Ok(ParamValue::StageRef {
                        name: w.name,
                        span: w.span,
                    })
                }
                _ => Ok(ParamValue::Limit(self.limit(expect, shape)?)),
            },
            Shape::StageNames => self.stage_names(shape),
            Shape::StageName => match self.next().cloned() {
                Some(Value::Word(w)) => Ok(ParamValue::StageRef {
                    name: w.name,
                    span: w.span,
                }),
                _ => Err(self.missing("the name of a converter stage", shape)),
            },
        }
    }

    /// `a, b, c`: one or more stage names, separated by commas.
    fn stage_names(&mut self, shape: Shape) -> Checked<ParamValue> {
        let mut names = Vec::new();
        loop {
            match self.next().cloned() {
                Some(Value::Word(w)) => names.push((w.name, w.span)),
                Some(v) => {
                    return Err(self.malformed(
                        v.span(),
                        format!("`{}` takes stage names separated by commas", self.name),
                        shape,
                    ))
                }
                None => return Err(self.missing("the name of a channel", shape)),
            }
            match self.peek() {
                Some(Value::Comma(_)) => {
                    self.next();
                }
                _ => return Ok(ParamValue::StageRefs(names)),
            }
        }
    }

    /// `lo .. hi`, or one value standing for the point `v .. v`.
    fn range_or_point(&mut self, expect: Expect, shape: Shape) -> Checked<ParamValue> {
        if let Some(Value::Range(_)) = self.peek() {
            return self.range(expect, true, shape);
        }
        let (m, _) = self.measure(expect, false, false, shape)?;
        Ok(ParamValue::Range {
            low: m.nominal,
            high: m.nominal,
        })
    }

    /// Exactly `n` plain numbers.
    fn numbers(&mut self, n: usize, shape: Shape) -> Checked<ParamValue> {
        let mut numbers = Vec::with_capacity(n);
        while let Some(Value::Quantity(q)) = self.peek().cloned() {
            if q.unit.is_some() {
                break;
            }
            self.next();
            numbers.push(q.number);
        }
        if numbers.len() != n {
            return Err(self.missing(&format!("exactly {n} plain numbers"), shape));
        }
        Ok(ParamValue::Numbers(numbers))
    }

    /// Exactly `n` plain numbers, each with its optional tolerance.
    fn toleranced_numbers(&mut self, n: usize, shape: Shape) -> Checked<ParamValue> {
        let mut measures = Vec::with_capacity(n);
        while let Some(Value::Quantity(q)) = self.peek().cloned() {
            if q.unit.is_some() || measures.len() == n {
                break;
            }
            measures.push(self.measure(Expect::Ratio, true, false, shape)?.0);
        }
        if measures.len() != n || matches!(self.peek(), Some(Value::Quantity(_))) {
            return Err(self.missing(
                &format!("exactly {n} plain numbers, each with an optional tolerance"),
                shape,
            ));
        }
        Ok(ParamValue::Measures(measures))
    }

    /// `value at point` (the value may carry a tolerance) or `value to
    /// point` (it may not): the value, `word`, then the point.
    fn value_then(
        &mut self,
        (value, point): (Expect, Expect),
        (word, after): (&str, &str),
        shape: Shape,
    ) -> Checked<ParamValue> {
        let tolerance = word == "at";
        let (value, value_dim) = self.measure(value, tolerance, false, shape)?;
        if !self.peek_word(word) {
            return Err(self.missing(&format!("`{word}` and {after}"), shape));
        }
        self.next();
        let at = self.quantity(point, tolerance, shape)?;
        Ok(ParamValue::At {
            value,
            value_dim,
            at,
        })
    }

    /// `offset at T [± u]` or `two_point at T1, T2 [± u]`.
    fn calibrate(&mut self, shape: Shape) -> Checked<ParamValue> {
        let method = self.word(&["offset", "two_point"], shape)?;
        let wanted = if method == "offset" { 1 } else { 2 };
        if !self.peek_word("at") {
            return Err(self.missing("`at` and the calibration points", shape));
        }
        self.next();
        let mut points = Vec::new();
        loop {
            points.push(self.quantity(Expect::Measurand, true, shape)?);
            if matches!(self.peek(), Some(Value::Comma(_))) {
                self.next();
            } else {
                break;
            }
        }
        if points.len() != wanted {
            return Err(self.missing(
                &format!(
                    "{wanted} calibration point{}",
                    if wanted == 1 { "" } else { "s" }
                ),
                shape,
            ));
        }
        let uncertainty = match self.peek() {
            Some(Value::Tolerance(_)) => {
                let t = self.share_or_limit(Expect::Measurand, shape)?;
                Some(self.fixed_share(t, "a calibration's uncertainty")?)
            }
            _ => None,
        };
        Ok(ParamValue::Calibrate {
            method,
            points,
            uncertainty,
        })
    }

    /// `lo .. hi`; with `point_ok` equal ends are a point, otherwise the
    /// range must not be empty.
    fn range(&mut self, expect: Expect, point_ok: bool, shape: Shape) -> Checked<ParamValue> {
        match self.next().cloned() {
            Some(Value::Range(r)) => {
                let low = to_si(&r.low, expect, true, self.cx)?.0;
                let high = to_si(&r.high, expect, true, self.cx)?.0;
                let empty = if point_ok { low > high } else { low >= high };
                if empty {
                    let (what, label) = if point_ok {
                        ("reversed", "the low end must not be above the high end")
                    } else {
                        (
                            "empty or reversed",
                            "the low end must be below the high end",
                        )
                    };
                    return Err(Box::new(
                        Finding::new(
                            Code::P305,
                            self.cx.file,
                            format!("range of `{}` is {what}", self.name),
                        )
                        .label(r.span, label)
                        .help("write the range as `low .. high`"),
                    ));
                }
                Ok(ParamValue::Range { low, high })
            }
            Some(v) => Err(self.malformed(
                v.span(),
                format!("`{}` expects a range, found {}", self.name, v.describe()),
                shape,
            )),
            None => Err(self.missing("a range", shape)),
        }
    }

    fn quantity(&mut self, expect: Expect, point: bool, shape: Shape) -> Checked<f64> {
        match self.next().cloned() {
            Some(Value::Quantity(q)) => Ok(to_si(&q, expect, point, self.cx)?.0),
            Some(v) => Err(self.malformed(
                v.span(),
                format!(
                    "`{}` expects {}, found {}",
                    self.name,
                    noun(expect, self.cx),
                    v.describe()
                ),
                shape,
            )),
            None => Err(self.missing(noun(expect, self.cx), shape)),
        }
    }

    fn measure(
        &mut self,
        expect: Expect,
        tol: bool,
        drift: bool,
        shape: Shape,
    ) -> Checked<(Measure, Dim)> {
        let (q, nominal, dim) = match self.next().cloned() {
            Some(Value::Quantity(q)) => {
                let (v, d) = to_si(&q, expect, is_point(expect), self.cx)?;
                (q, v, d)
            }
            Some(v) => {
                return Err(self.malformed(
                    v.span(),
                    format!(
                        "`{}` expects {}, found {}",
                        self.name,
                        noun(expect, self.cx),
                        v.describe()
                    ),
                    shape,
                ))
            }
            None => return Err(self.missing(noun(expect, self.cx), shape)),
        };
        let mut m = Measure {
            nominal,
            tolerance: None,
            max: false,
            drift: None,
            span: q.span,
        };
        if let Some(Value::Tolerance(t)) = self.peek().cloned() {
            if !tol {
                return Err(self.malformed(
                    t.span,
                    format!("`{}` takes no tolerance", self.name),
                    shape,
                ));
            }
            self.next();
            m.tolerance = Some(tolerance(&t, expect, Some(dim), self.cx)?);
            m.span = m.span.to(t.span);
        }
        if self.peek_word("max") {
            let span = self.next().map(Value::span).unwrap_or_default();
            m.max = true;
            m.span = m.span.to(span);
        }
        if self.peek_word(super::schema::DRIFT_CLAUSE) {
            let word = self.next().map(Value::span).unwrap_or_default();
            if !drift {
                return Err(self.malformed(
                    word,
                    format!("`{}` takes no `drift`", self.name),
                    shape,
                ));
            }
            let Some(Value::Quantity(d)) = self.next().cloned() else {
                return Err(self.missing(
                    "a coefficient after `drift`, such as `drift 25 ppm/K`",
                    shape,
                ));
            };
            let (per_kelvin, relative) = per_kelvin(&d, dim, self.cx)?;
            // On a plain number (a gauge factor), `ppm/K` or `%/K` is a
            // share of the value, as `± 1 %` after it is.
            let relative = relative || (dim == Dim::NONE && is_relative_per_kelvin(&d));
            m.drift = Some(Drift {
                per_kelvin,
                relative,
                span: word.to(d.span),
            });
            m.span = m.span.to(d.span);
        }
        Ok((m, dim))
    }

    /// A limit on a measurand quantity: as written, or a percentage
    /// followed by `of span` or `of reading`. A bare percentage of a
    /// quantity with a unit could mean either, so it is refused (P313).
    fn share_or_limit(&mut self, expect: Expect, shape: Shape) -> Checked<Tolerance> {
        let Some(written) = self.peek().and_then(written_quantity) else {
            return self.limit(expect, shape);
        };
        let percent = is_relative_unit(&written);
        let of_at = self.at
            + 1
            + usize::from(matches!(
                self.values.get(self.at + 1),
                Some(Value::Word(w)) if w.name == "max"
            ));
        let has_of = matches!(self.values.get(of_at), Some(Value::Word(w)) if w.name == "of");
        let dimensionless = self.cx.measurand == Some(Dim::NONE) && expect == Expect::Measurand;
        match (percent, has_of) {
            (true, true) => self.share(expect, shape),
            (true, false) if !dimensionless => Err(self.bare_percent(&written)),
            (false, true) => Err(self.malformed(
                self.values[of_at].span(),
                format!(
                    "`of` follows a percentage in `{}`, such as `± 0.1 % of span`",
                    self.name
                ),
                shape,
            )),
            _ => self.limit(expect, shape),
        }
    }

    /// `± x % [max] of span|reading`: a share of the measurand's span
    /// (converted here to an absolute limit) or of the reading.
    fn share(&mut self, expect: Expect, shape: Shape) -> Checked<Tolerance> {
        let mut t = self.limit(Expect::Ratio, shape)?;
        let of = self.next().map(Value::span).unwrap_or_default();
        let basis = match self.word(&["span", "reading"], shape)?.as_str() {
            "span" => Basis::Span,
            _ => Basis::Reading,
        };
        let Some(m) = self.cx.range else {
            // No measurand (already reported): nothing to be a share of.
            return Ok(t);
        };
        // A sensor's accuracy in kelvin is a share of a temperature.
        if expect == Expect::TempDiff && m.dim != Dim::TEMPERATURE {
            return Err(Box::new(
                Finding::new(
                    Code::P306,
                    self.cx.file,
                    format!("`{}` is a temperature, but the measurand is not", self.name),
                )
                .label(t.span.to(of), "a share of a non-temperature range")
                .help(format!(
                    "state `{}` in kelvin, such as `± 0.5 K`",
                    self.name
                )),
            ));
        }
        if basis == Basis::Span {
            let span = m.high - m.low;
            t.plus *= span;
            t.minus *= span;
        }
        t.basis = basis;
        t.dim = m.dim;
        t.span = t.span.to(of);
        Ok(t)
    }

    /// A limit that cannot follow the reading: `% of reading` is refused.
    fn fixed_share(&self, t: Tolerance, what: &str) -> Checked<Tolerance> {
        if t.basis != Basis::Reading {
            return Ok(t);
        }
        Err(Box::new(
            Finding::new(
                Code::P306,
                self.cx.file,
                format!("{what} cannot be a share of the reading"),
            )
            .label(t.span, "`of reading`")
            .help(format!(
                "state {what} in the measurand's unit, or as `% of span`"
            )),
        ))
    }

    /// P313: a bare percentage of a measurand quantity, with both
    /// spellings and what each would be.
    fn bare_percent(&self, q: &QuantityLit) -> Box<Finding> {
        let span = self.peek().map(Value::span).unwrap_or(q.span);
        let text = self.cx.file.slice(span).to_string();
        let unit = q.unit.as_ref().map(|u| u.text.as_str()).unwrap_or("%");
        let fraction = parse_unit(unit).map_or(q.number.abs() / 100.0, |u| u.to_si(q.number.abs()));
        let help = match self.cx.range {
            Some(m) => {
                let (diff, factor) = m.difference_unit();
                let zero = m.zero();
                let far = (m.low - zero).abs().max((m.high - zero).abs());
                let at = crate::units::format::from_si(
                    if (m.high - zero).abs() >= (m.low - zero).abs() {
                        m.high
                    } else {
                        m.low
                    },
                    &m.unit,
                );
                let n = |v: f64| crate::units::format::trimmed(v * factor, 4);
                format!(
                    "write `{text} of span` (± {} {diff} over the whole range) or `{text} of reading` (± {} {diff} at {} {})",
                    n(fraction * (m.high - m.low)),
                    n(fraction * far),
                    crate::units::format::trimmed(at, 6),
                    m.unit,
                )
            }
            None => format!("write `{text} of span` or `{text} of reading`"),
        };
        Box::new(
            Finding::new(
                Code::P313,
                self.cx.file,
                format!("`{}` in `{text}` is a share, but of what?", unit),
            )
            .label(span, "a percentage of the span or of the reading?")
            .help(help),
        )
    }

    fn limit(&mut self, expect: Expect, shape: Shape) -> Checked<Tolerance> {
        match self.next().cloned() {
            Some(Value::Tolerance(t)) => tolerance(&t, expect, None, self.cx),
            Some(Value::Quantity(q)) => {
                let (v, relative) = match expect {
                    Expect::PerKelvin(d) => per_kelvin(&q, d, self.cx)?,
                    _ => (
                        to_si(&q, expect, false, self.cx)?.0,
                        share_of_rated(expect, &q),
                    ),
                };
                let mut span = q.span;
                if self.peek_word("max") {
                    span = span.to(self.next().map(Value::span).unwrap_or_default());
                }
                Ok(Tolerance {
                    plus: v.abs(),
                    minus: v.abs(),
                    relative,
                    normal: false,
                    dim: unit_dim(&q),
                    basis: Basis::Written,
                    span,
                })
            }
            Some(v) => Err(self.malformed(
                v.span(),
                format!(
                    "`{}` expects a limit such as `± x` or `x max`, found {}",
                    self.name,
                    v.describe()
                ),
                shape,
            )),
            None => Err(self.missing("a limit", shape)),
        }
    }

    fn word(&mut self, words: &[&str], shape: Shape) -> Checked<String> {
        match self.next().cloned() {
            Some(Value::Word(w)) if words.contains(&w.name.as_str()) => Ok(w.name),
            Some(v) => {
                let text = match &v {
                    Value::Word(w) => w.name.clone(),
                    other => self.cx.file.slice(other.span()).to_string(),
                };
                let near = did_you_mean(&text, words.iter().copied());
                let list = words
                    .iter()
                    .map(|w| format!("`{w}`"))
                    .collect::<Vec<_>>()
                    .join(", ");
                Err(Box::new(
                    Finding::new(
                        Code::P304,
                        self.cx.file,
                        format!("`{text}` is not a value of `{}`", self.name),
                    )
                    .label(v.span(), "not one of the allowed words")
                    .help(match near {
                        Some(n) => {
                            format!("did you mean `{n}`? `{}` takes one of {list}", self.name)
                        }
                        None => format!("`{}` takes one of {list}", self.name),
                    }),
                ))
            }
            None => Err(self.missing("a word", shape)),
        }
    }

    fn count(&mut self, min: u32, max: u32, shape: Shape) -> Checked<u32> {
        match self.next().cloned() {
            Some(Value::Quantity(q)) => {
                let unit_ok = q
                    .unit
                    .as_ref()
                    .is_none_or(|u| matches!(u.text.as_str(), "bit" | "bits"));
                let n = q.number;
                if !unit_ok || n.fract() != 0.0 {
                    return Err(self.malformed(
                        q.span,
                        format!("`{}` expects a whole number", self.name),
                        shape,
                    ));
                }
                if n < f64::from(min) || n > f64::from(max) {
                    return Err(Box::new(
                        Finding::new(
                            Code::P305,
                            self.cx.file,
                            format!("`{}` of {} is outside {min} to {max}", self.name, q.number),
                        )
                        .label(q.span, format!("must be {min} to {max}"))
                        .help(format!(
                            "`{}` takes a whole number from {min} to {max}",
                            self.name
                        )),
                    ));
                }
                Ok(n as u32)
            }
            Some(v) => Err(self.malformed(
                v.span(),
                format!(
                    "`{}` expects a whole number, found {}",
                    self.name,
                    v.describe()
                ),
                shape,
            )),
            None => Err(self.missing("a whole number", shape)),
        }
    }
}

/// Limits in the measurand's quantity, which a percentage may state as a
/// share of the span or of the reading: requirements in the measurand's
/// unit and sensor accuracies in kelvin.
fn takes_share(expect: Expect) -> bool {
    matches!(expect, Expect::Measurand | Expect::TempDiff)
}

/// The quantity a limit value is written with (the lower limit's, for an
/// asymmetric tolerance, whose unit applies to both).
fn written_quantity(v: &Value) -> Option<QuantityLit> {
    match v {
        Value::Quantity(q) => Some(q.clone()),
        Value::Tolerance(t) => Some(match &t.form {
            ToleranceForm::Symmetric(q) => q.clone(),
            ToleranceForm::Asymmetric { minus, .. } => minus.clone(),
        }),
        _ => None,
    }
}

fn is_point(expect: Expect) -> bool {
    matches!(expect, Expect::Temperature | Expect::Measurand)
}

/// The dimensions an expectation accepts.
fn accepted(expect: Expect, cx: &Context<'_>) -> Vec<Dim> {
    match expect {
        Expect::Dim(d) => vec![d],
        Expect::Temperature | Expect::TempDiff => vec![Dim::TEMPERATURE],
        Expect::Ratio | Expect::Decibel | Expect::Number => vec![Dim::NONE],
        Expect::Measurand => cx.measurand.into_iter().collect(),
        Expect::PerKelvin(d) => vec![d / Dim::TEMPERATURE, Dim::NONE / Dim::TEMPERATURE],
        Expect::OneOf(ds) => ds.to_vec(),
        Expect::RatedOutput => vec![Dim::NONE, Dim::VOLTAGE],
    }
}

fn noun(expect: Expect, cx: &Context<'_>) -> &'static str {
    match expect {
        Expect::Temperature => "a temperature",
        Expect::TempDiff => "a temperature difference",
        Expect::Ratio => "a plain number or a ratio",
        Expect::Number => "a plain number",
        Expect::Decibel => "a ratio in `dB`",
        Expect::RatedOutput => {
            "a ratio of the excitation, a voltage, or a share of the rated output"
        }
        _ => accepted(expect, cx)
            .first()
            .map(|d| d.name().noun)
            .unwrap_or("a quantity"),
    }
}

fn example(expect: Expect, cx: &Context<'_>) -> String {
    example_text(expect, cx.measurand)
}

/// An example value for help lines; without a known measurand, a
/// placeholder stands for measurand values.
fn example_text(expect: Expect, measurand: Option<Dim>) -> String {
    match expect {
        Expect::Dim(d) => d.name().example.to_string(),
        Expect::Temperature => "25 degC".into(),
        Expect::TempDiff => "0.5 K".into(),
        Expect::Ratio => "4".into(),
        Expect::Number => "12.5".into(),
        Expect::Decibel => "100 dB".into(),
        Expect::Measurand => match measurand {
            Some(d) if !d.name().example.is_empty() => d.name().example.to_string(),
            _ => "<value in the measurand's unit>".into(),
        },
        Expect::PerKelvin(d) => {
            let n = (d / Dim::TEMPERATURE).name();
            if n.example.is_empty() {
                "25 ppm/K".into()
            } else {
                n.example.into()
            }
        }
        // An output as a ratio of the excitation, or in volts.
        Expect::OneOf([none, volts]) if *none == Dim::NONE && *volts == Dim::VOLTAGE => {
            "2 mV/V".into()
        }
        Expect::OneOf(ds) => ds[0].name().example.to_string(),
        Expect::RatedOutput => "0.02 mV/V".into(),
    }
}

/// How a parameter is written, for help lines.
pub fn usage_of(name: &str, shape: Shape) -> String {
    usage(name, shape)
}

fn usage(name: &str, shape: Shape) -> String {
    let cx_free = |e: Expect| example_text(e, None);
    match shape {
        Shape::Flag => name.to_string(),
        Shape::Measure { expect, tol, drift } => format!(
            "{name} {}{}{}",
            cx_free(expect),
            if tol { " ± 1 %" } else { "" },
            if drift { " drift 25 ppm/K" } else { "" }
        ),
        Shape::Limit(e) => format!("{name} ± {}` or `{name} {} max", cx_free(e), cx_free(e)),
        Shape::Range(e) => {
            let ex = cx_free(e);
            format!("{name} {ex} .. {ex}")
        }
        Shape::RangeOrPoint(e) => {
            let ex = cx_free(e);
            format!("{name} {ex} .. {ex}` or `{name} {ex}")
        }
        Shape::Words(ws) => format!("{name} {}", ws.join(" | ")),
        Shape::Count { min, max } => format!("{name} <whole number {min} to {max}>"),
        Shape::Numbers(n) => format!("{name} {}", vec!["<number>"; n].join(" ")),
        Shape::TolerancedNumbers(n) => {
            format!("{name} {}", vec!["<number> [± <tolerance>]"; n].join(" "))
        }
        Shape::At { value, at } => format!("{name} {} at {}", cx_free(value), cx_free(at)),
        Shape::To { value, to } => format!("{name} {} to {}", cx_free(value), cx_free(to)),
        Shape::Method => format!("{name} exact | linear | table 16 | poly 3"),
        Shape::Calibrate => format!("{name} offset at <point> ± <uncertainty>` or `{name} two_point at <point>, <point> ± <uncertainty>"),
        Shape::LimitOrStage(e) => format!("{name} ± {}` or `{name} <stage name>", cx_free(e)),
        Shape::StageName => format!("{name} <stage name>"),
        Shape::StageNames => format!("{name} <stage name>, <stage name>"),
        Shape::ThermocoupleType => format!("{name} type K"),
    }
}

/// Converts a written quantity to SI, checking its dimension. `point`
/// says an absolute temperature is meant, so `degC` is offset.
fn to_si(q: &QuantityLit, expect: Expect, point: bool, cx: &Context<'_>) -> Checked<(f64, Dim)> {
    if let (Expect::Number, Some(u)) = (expect, &q.unit) {
        return Err(Box::new(unit_on_a_number(q, u, cx)));
    }
    let dims = accepted(expect, cx);
    let unit = match &q.unit {
        None => Unit::ONE,
        Some(u) => parse_unit(&u.text).map_err(|e| unit_error(for_dims(e, &dims), u.span, cx))?,
    };
    if unit.kind == UnitKind::Decibel {
        if expect == Expect::Decibel {
            return Ok((10f64.powf(q.number / 20.0), Dim::NONE));
        }
        let span = q.unit.as_ref().map(|u| u.span).unwrap_or(q.span);
        return Err(Box::new(
            Finding::new(Code::U104, cx.file, "`dB` is not allowed here")
                .label(span, "a logarithmic ratio")
                .help(format!(
                    "this value expects {}, such as `{}`",
                    noun(expect, cx),
                    example(expect, cx)
                )),
        ));
    }
    if dims.is_empty() {
        // The measurand is not known (already reported): accept as written.
        return Ok((si_value(q.number, unit, point), unit.dim));
    }
    if !dims.contains(&unit.dim) {
        let ex = example(expect, cx);
        let number = cx.file.slice(q.number_span).to_string();
        let suggestion = match ex.split_once(' ') {
            Some((_, u)) if !number.is_empty() => format!("{number} {u}"),
            _ => ex.clone(),
        };
        return Err(Box::new(match &q.unit {
            None => Finding::new(
                Code::U103,
                cx.file,
                format!("expected a unit after `{number}`, such as `{suggestion}`"),
            )
            .label(q.span, format!("{} needs a unit", noun(expect, cx)))
            .help(format!("write the unit after the number: `{suggestion}`")),
            Some(u) => {
                let got = unit.dim.name();
                let got = if got.example.is_empty() {
                    format!("has dimension {}", unit.dim)
                } else {
                    format!("is {}", got.noun)
                };
                Finding::new(
                    Code::U102,
                    cx.file,
                    format!("`{}` {got}, but {} is expected", u.text, noun(expect, cx)),
                )
                .label(u.span, format!("expected {}", noun(expect, cx)))
                .help(format!("write {}, such as `{ex}`", noun(expect, cx)))
            }
        }));
    }
    Ok((si_value(q.number, unit, point), unit.dim))
}

/// P375: a unit on a value that takes a plain number. `%` and `ppm` are
/// units too: `cost 5 %` would otherwise read as a price of 0.05.
fn unit_on_a_number(q: &QuantityLit, u: &crate::syntax::ast::UnitLit, cx: &Context<'_>) -> Finding {
    let number = cx.file.slice(q.number_span).to_string();
    Finding::new(
        Code::P375,
        cx.file,
        format!(
            "`{number} {}` has a unit, but a plain number is expected",
            u.text
        ),
    )
    .label(u.span, "no unit here")
    .help(format!(
        "write the number alone, in the currency every part's cost uses: `{number}`"
    ))
}

fn si_value(number: f64, unit: Unit, point: bool) -> f64 {
    match unit.kind {
        UnitKind::Celsius if point => number + ZERO_CELSIUS_K,
        _ => unit.to_si(number),
    }
}

/// An unknown unit's suggestion, made for the dimensions expected when
/// they are known (a bare `k` for a resistance is `kohm`, not `K`).
fn for_dims(e: UnitError, dims: &[Dim]) -> UnitError {
    match e {
        UnitError::Unknown { symbol, suggestion } if !dims.is_empty() => UnitError::Unknown {
            suggestion: crate::units::suggest_for(&symbol, dims).or(suggestion),
            symbol,
        },
        other => other,
    }
}

fn unit_error(e: UnitError, span: Span, cx: &Context<'_>) -> Box<Finding> {
    let f = match &e {
        UnitError::Unknown { suggestion, symbol } => Finding::new(Code::U101, cx.file, e.to_string())
            .label(span, "not a unit the language knows")
            .help(match suggestion {
                Some(s) if s.eq_ignore_ascii_case(symbol) => {
                    format!("did you mean `{s}`? units are case-sensitive")
                }
                Some(s) => match parse_unit(s) {
                    Ok(u) if !u.dim.name().example.is_empty() => {
                        format!("did you mean `{s}`? {} is expected here", u.dim.name().noun)
                    }
                    _ => format!("did you mean `{s}`?"),
                },
                None => "units are SI symbols with SI prefixes, such as `mV`, `kohm`, `ppm/K`, `nV/rtHz`".to_string(),
            }),
        UnitError::NotCombinable { .. } => Finding::new(Code::U104, cx.file, e.to_string())
            .label(span, "not allowed here")
            .help("`dB` stands alone after a number, such as `cmrr 110 dB`"),
        UnitError::NoPrefix { .. } => Finding::new(Code::U104, cx.file, e.to_string())
            .label(span, "no prefix allowed")
            .help("write the unit without a prefix, such as `25 degC`, `0.1 %` or `15 ppm`"),
        UnitError::Power { .. } => Finding::new(Code::U104, cx.file, e.to_string())
            .label(span, "power out of range")
            .help("unit powers run from -4 to 4, such as `Hz^-1`"),
        UnitError::Overflow { .. } => Finding::new(Code::U105, cx.file, e.to_string())
            .label(span, "powers out of range")
            .help(format!(
                "no parameter needs a base unit beyond the power {}; write the unit of the quantity, such as `V`, `Hz` or `nV/rtHz`",
                Dim::MAX_POWER
            )),
    };
    Box::new(f)
}

/// A per-kelvin coefficient of a quantity of dimension `of`: relative
/// (`ppm/K`) or absolute (`uV/K` for a voltage).
fn per_kelvin(q: &QuantityLit, of: Dim, cx: &Context<'_>) -> Checked<(f64, bool)> {
    let (v, dim) = to_si(q, Expect::PerKelvin(of), false, cx)?;
    Ok((v, dim == Dim::NONE / Dim::TEMPERATURE && of != Dim::NONE))
}

/// `ppm/K`, `%/K` or `ppb/K`: a share per kelvin.
fn is_relative_per_kelvin(q: &QuantityLit) -> bool {
    q.unit
        .as_ref()
        .is_some_and(|u| ["%/", "ppm/", "ppb/"].iter().any(|p| u.text.starts_with(p)))
}

fn is_relative_unit(q: &QuantityLit) -> bool {
    q.unit
        .as_ref()
        .is_some_and(|u| matches!(u.text.as_str(), "%" | "ppm" | "ppb"))
}

/// A transducer output written in `%` or `ppm`: a share of the rated
/// output (`relative`), not a ratio of the excitation.
fn share_of_rated(expect: Expect, q: &QuantityLit) -> bool {
    expect == Expect::RatedOutput && is_relative_unit(q)
}

/// A tolerance of a value of dimension `nominal_dim` (None for a bare
/// limit): relative with `%`/`ppm`, else absolute in the value's dimension.
fn tolerance(
    t: &ToleranceLit,
    expect: Expect,
    nominal_dim: Option<Dim>,
    cx: &Context<'_>,
) -> Checked<Tolerance> {
    let half = |q: &QuantityLit| -> Checked<(f64, bool)> {
        // `%` or `ppm` after a nominal value is relative to it (`gain 4 ±
        // 0.05 %`); a bare limit in `%` is the ratio itself (`inl 15 ppm`).
        if is_relative_unit(q) && (nominal_dim.is_some() || share_of_rated(expect, q)) {
            let (v, _) = to_si(q, Expect::Ratio, false, cx)?;
            return Ok((v, true));
        }
        let e = match (expect, nominal_dim) {
            (Expect::Temperature, _) => Expect::TempDiff,
            (Expect::Measurand, _) if cx.measurand == Some(Dim::TEMPERATURE) => Expect::TempDiff,
            (Expect::Measurand, _) if is_relative_unit(q) => Expect::Ratio,
            (Expect::OneOf(_), Some(d)) => Expect::Dim(d),
            (e, _) => e,
        };
        match e {
            Expect::PerKelvin(d) => per_kelvin(q, d, cx),
            Expect::Decibel => Ok((to_si(q, Expect::Ratio, false, cx)?.0, false)),
            e => Ok((to_si(q, e, false, cx)?.0, false)),
        }
    };
    let (plus, minus, relative) = match &t.form {
        ToleranceForm::Symmetric(q) => {
            let (v, rel) = half(q)?;
            (v.abs(), v.abs(), rel)
        }
        ToleranceForm::Asymmetric { plus, minus } => {
            // `+0.1 -0.2 %`: a unit written once applies to both limits.
            let mut plus = plus.clone();
            if plus.unit.is_none() {
                plus.unit = minus.unit.clone();
            }
            let (p, rel_p) = half(&plus)?;
            let (m, rel_m) = half(minus)?;
            if rel_p != rel_m {
                return Err(Box::new(
                    Finding::new(
                        Code::U102,
                        cx.file,
                        "one limit is relative and the other absolute",
                    )
                    .label(t.span, "mixed limits")
                    .help("write both limits in the same unit, such as `+0.1 % -0.2 %`"),
                ));
            }
            (p.abs(), m.abs(), rel_p)
        }
    };
    let written = match &t.form {
        ToleranceForm::Symmetric(q) => q,
        ToleranceForm::Asymmetric { minus, .. } => minus,
    };
    Ok(Tolerance {
        plus,
        minus,
        relative,
        normal: t.normal,
        dim: unit_dim(written),
        basis: Basis::Written,
        span: t.span,
    })
}

/// The dimension of a quantity's unit as written (plain for none).
fn unit_dim(q: &QuantityLit) -> Dim {
    q.unit
        .as_ref()
        .and_then(|u| parse_unit(&u.text).ok())
        .map(|u| u.dim)
        .unwrap_or(Dim::NONE)
}

fn check_plausible(
    name: &str,
    value: &ParamValue,
    plausible: Plausible,
    line: Span,
    cx: &Context<'_>,
) -> Checked<()> {
    let fail = |span: Span, message: String, help: String| {
        Err(Box::new(
            Finding::new(Code::P305, cx.file, message)
                .label(span, "implausible")
                .help(help),
        ))
    };
    let (nominal, tol, span) = match value {
        ParamValue::Measure(m) => (m.nominal, m.tolerance.as_ref(), m.span),
        ParamValue::At { value, .. } => (value.nominal, value.tolerance.as_ref(), value.span),
        // Only the low end can fall below a positive bound.
        ParamValue::Range { low, .. } => (*low, None, line),
        ParamValue::Limit(t)
        | ParamValue::Calibrate {
            uncertainty: Some(t),
            ..
        } => {
            if t.relative && t.plus.max(t.minus) >= 1.0 {
                return fail(
                    t.span,
                    format!("tolerance of `{name}` is 100 % or more"),
                    "a relative tolerance must stay below 100 %".into(),
                );
            }
            return Ok(());
        }
        _ => return Ok(()),
    };
    let bad = match plausible {
        Plausible::Any => None,
        Plausible::Positive if nominal <= 0.0 => Some("must be greater than zero"),
        Plausible::NonNegative if nominal < 0.0 => Some("must not be negative"),
        Plausible::NonZero if nominal == 0.0 => Some("must not be zero"),
        _ => None,
    };
    if let Some(why) = bad {
        return fail(
            span,
            format!("`{name}` {why}"),
            format!(
                "give `{name}` a value that {}",
                why.replace("must", "is").replace("is not be", "is not")
            ),
        );
    }
    if let Some(t) = tol {
        if t.relative && t.plus.max(t.minus) >= 1.0 {
            return fail(
                t.span,
                format!("tolerance of `{name}` is 100 % or more"),
                "a relative tolerance must stay below 100 %; check the unit".into(),
            );
        }
        if plausible == Plausible::Positive && !t.relative && nominal - t.minus <= 0.0 {
            return fail(
                t.span,
                format!("tolerance of `{name}` reaches zero or below"),
                "the lower limit must stay above zero; check the tolerance's unit".into(),
            );
        }
    }
    Ok(())
}
