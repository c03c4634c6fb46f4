//! The typed syntax tree. Every node keeps its byte span in the file; no
//! pest type escapes the parser.

use crate::diagnostics::Span;

/// A name as written, with its place.
#[derive(Clone, Debug, PartialEq)]
pub struct Ident {
    pub name: String,
    pub span: Span,
}

#[derive(Clone, Debug, PartialEq)]
pub struct StringLit {
    pub value: String,
    pub span: Span,
}

#[derive(Clone, Debug, PartialEq, Default)]
pub struct Ast {
    pub uses: Vec<UseDecl>,
    pub chains: Vec<ChainDecl>,
}

/// `use "parts.yaml"`
#[derive(Clone, Debug, PartialEq)]
pub struct UseDecl {
    pub path: StringLit,
    pub span: Span,
}

/// `chain name "label" { ... }`
#[derive(Clone, Debug, PartialEq)]
pub struct ChainDecl {
    pub name: Ident,
    pub label: Option<StringLit>,
    pub settings: Vec<Setting>,
    pub stages: Vec<StageDecl>,
    pub edges: Vec<EdgeDecl>,
    pub tracks: Vec<TrackDecl>,
    pub span: Span,
}

/// `track name: a, b ratio ± 0.02 % tracking 2 ppm/K`: stages whose
/// values track each other, and the values that say how closely, as
/// written.
#[derive(Clone, Debug, PartialEq)]
pub struct TrackDecl {
    pub name: Ident,
    pub members: Vec<Ident>,
    pub values: Vec<Value>,
    pub span: Span,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum SettingKind {
    Title,
    Measurand,
    Ambient,
    Reference,
    Require,
    Alarm,
    Protects,
}

impl SettingKind {
    pub const ALL: [SettingKind; 7] = [
        SettingKind::Title,
        SettingKind::Measurand,
        SettingKind::Ambient,
        SettingKind::Reference,
        SettingKind::Require,
        SettingKind::Alarm,
        SettingKind::Protects,
    ];

    pub fn keyword(self) -> &'static str {
        match self {
            SettingKind::Title => "title",
            SettingKind::Measurand => "measurand",
            SettingKind::Ambient => "ambient",
            SettingKind::Reference => "reference",
            SettingKind::Require => "require",
            SettingKind::Alarm => "alarm",
            SettingKind::Protects => "protects",
        }
    }

    pub fn from_keyword(word: &str) -> Option<Self> {
        Self::ALL.into_iter().find(|k| k.keyword() == word)
    }
}

/// A chain-level line: a keyword and its values.
#[derive(Clone, Debug, PartialEq)]
pub struct Setting {
    pub kind: SettingKind,
    pub keyword_span: Span,
    pub values: Vec<Value>,
    pub span: Span,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum StageKind {
    Excitation,
    Sensor,
    Bridge,
    Amplifier,
    Filter,
    Adc,
    Convert,
}

impl StageKind {
    pub const ALL: [StageKind; 7] = [
        StageKind::Excitation,
        StageKind::Sensor,
        StageKind::Bridge,
        StageKind::Amplifier,
        StageKind::Filter,
        StageKind::Adc,
        StageKind::Convert,
    ];

    pub fn keyword(self) -> &'static str {
        match self {
            StageKind::Excitation => "excitation",
            StageKind::Sensor => "sensor",
            StageKind::Bridge => "bridge",
            StageKind::Amplifier => "amplifier",
            StageKind::Filter => "filter",
            StageKind::Adc => "adc",
            StageKind::Convert => "convert",
        }
    }

    pub fn from_keyword(word: &str) -> Option<Self> {
        Self::ALL.into_iter().find(|k| k.keyword() == word)
    }
}

/// `kind name [: part] { params }`
#[derive(Clone, Debug, PartialEq)]
pub struct StageDecl {
    pub kind: StageKind,
    pub kind_span: Span,
    pub name: Ident,
    pub part: Option<Ident>,
    pub params: Vec<Param>,
    pub span: Span,
}

/// One parameter line: a name and the values after it, as written. What
/// the values must be is the model's schema's business.
#[derive(Clone, Debug, PartialEq)]
pub struct Param {
    pub name: Ident,
    pub values: Vec<Value>,
    pub span: Span,
}

/// `a -> b.port -> c`
#[derive(Clone, Debug, PartialEq)]
pub struct EdgeDecl {
    pub endpoints: Vec<Endpoint>,
    pub span: Span,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Endpoint {
    pub stage: Ident,
    pub port: Option<Ident>,
    pub span: Span,
}

#[derive(Clone, Debug, PartialEq)]
pub enum Value {
    Quantity(QuantityLit),
    Tolerance(ToleranceLit),
    Range(RangeLit),
    Word(Ident),
    Text(StringLit),
    Comma(Span),
}

impl Value {
    pub fn span(&self) -> Span {
        match self {
            Value::Quantity(q) => q.span,
            Value::Tolerance(t) => t.span,
            Value::Range(r) => r.span,
            Value::Word(w) => w.span,
            Value::Text(s) => s.span,
            Value::Comma(s) => *s,
        }
    }

    /// What the value is, for messages ("expected a range, found a word").
    pub fn describe(&self) -> &'static str {
        match self {
            Value::Quantity(q) if q.unit.is_none() => "a plain number",
            Value::Quantity(_) => "a quantity",
            Value::Tolerance(_) => "a tolerance",
            Value::Range(_) => "a range",
            Value::Word(_) => "a word",
            Value::Text(_) => "a string",
            Value::Comma(_) => "a comma",
        }
    }
}

/// A number and its unit as written (`4.7 kohm`, `24`).
#[derive(Clone, Debug, PartialEq)]
pub struct QuantityLit {
    pub number: f64,
    pub number_span: Span,
    pub unit: Option<UnitLit>,
    pub span: Span,
}

#[derive(Clone, Debug, PartialEq)]
pub struct UnitLit {
    pub text: String,
    pub span: Span,
}

#[derive(Clone, Debug, PartialEq)]
pub enum ToleranceForm {
    /// `± x` or `+- x`
    Symmetric(QuantityLit),
    /// `+x -y`: the limits above and below the nominal.
    Asymmetric {
        plus: QuantityLit,
        minus: QuantityLit,
    },
}

#[derive(Clone, Debug, PartialEq)]
pub struct ToleranceLit {
    pub form: ToleranceForm,
    /// `normal`: the limit is a 3-sigma bound of a normal distribution;
    /// otherwise a rectangular limit.
    pub normal: bool,
    pub span: Span,
}

/// `lo .. hi`
#[derive(Clone, Debug, PartialEq)]
pub struct RangeLit {
    pub low: QuantityLit,
    pub high: QuantityLit,
    pub span: Span,
}
