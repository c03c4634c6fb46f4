use std::fmt;

use super::dimension::Dim;

/// How a unit maps a written number to SI.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum UnitKind {
    /// value × scale, in the dimension's coherent SI unit.
    Linear,
    /// Degrees Celsius: a kelvin difference, or an absolute temperature
    /// offset by 273.15 K when the value is a point or a range.
    Celsius,
    /// Decibels: logarithmic, never a multiplier; the parameter decides
    /// whether it is an amplitude (20 log) or power (10 log) ratio.
    Decibel,
}

/// A parsed unit: SI scale, dimension and kind.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Unit {
    pub scale: f64,
    pub dim: Dim,
    pub kind: UnitKind,
}

impl Unit {
    pub const ONE: Unit = Unit {
        scale: 1.0,
        dim: Dim::NONE,
        kind: UnitKind::Linear,
    };

    /// The factor from SI to this unit, `1 / scale`, exact where that is
    /// a whole number: a submultiple's scale (1e-6 for `ue`) is not
    /// exact in binary, but its reciprocal (1e6) is, so 0.002 (strain)
    /// reads back as 2000 ue rather than 2000.0000000000002.
    pub fn per_si(&self) -> f64 {
        let per = 1.0 / self.scale;
        let whole = per.round();
        if whole != 0.0 && (per - whole).abs() <= whole.abs() * 4.0 * f64::EPSILON {
            whole
        } else {
            per
        }
    }

    /// `value`, written in this unit, in SI. A decimal prefix moves the
    /// decimal point, not a binary product: `0.1 uV` is the double
    /// nearest 1e-7 and `-200 ue` the one nearest -0.0002, where
    /// multiplying by the inexact 1e-6 can land one step off, so the
    /// number would not read back as written.
    pub fn to_si(&self, value: f64) -> f64 {
        match self.decimal_exponent() {
            Some(e) => shift_decimal(value, e),
            None => value * self.scale,
        }
    }

    /// `value` (SI) in this unit, the inverse of [`Unit::to_si`]: a value
    /// read in and written out again is the number written.
    pub fn of_si(&self, value: f64) -> f64 {
        match self.decimal_exponent() {
            Some(e) => shift_decimal(value, -e),
            None => value / self.scale,
        }
    }

    /// The power of ten the scale is (-6 for `uA`, 3 for `kohm`, -6 for
    /// `mm²`, whose product of prefixes is a step off 1e-6), if it is one.
    fn decimal_exponent(&self) -> Option<i32> {
        if !(self.scale.is_finite() && self.scale > 0.0) {
            return None;
        }
        let e = self.scale.log10().round();
        let power = 10f64.powf(e);
        ((self.scale - power).abs() <= power * 4.0 * f64::EPSILON).then_some(e as i32)
    }
}

/// `value` × 10^`e` computed in decimal: the shortest digits that read
/// back as `value`, the exponent moved, read again (correctly rounded).
fn shift_decimal(value: f64, e: i32) -> f64 {
    if e == 0 || value == 0.0 || !value.is_finite() {
        return value;
    }
    let written = format!("{value:e}");
    let Some((digits, exponent)) = written.split_once('e') else {
        return value;
    };
    let exponent: i32 = exponent.parse().unwrap_or(0);
    format!("{digits}e{}", exponent.saturating_add(e))
        .parse()
        .unwrap_or(value)
}

#[derive(Clone, Debug, PartialEq)]
pub enum UnitError {
    /// A symbol no table knows; `suggestion` is the nearest known spelling.
    Unknown {
        symbol: String,
        suggestion: Option<String>,
    },
    /// `dB` or `degC` inside a product, quotient or power (`dB/K`).
    NotCombinable { symbol: String },
    /// A prefix on a symbol that takes none (`kdegC`, `m%`).
    NoPrefix { symbol: String },
    /// An exponent beyond what any physical parameter needs.
    Power { text: String },
    /// The powers of a compound unit add up beyond
    /// [`Dim::MAX_POWER`] (`Hz^4*Hz^4*Hz^4*Hz^4*Hz^4`).
    Overflow { text: String },
}

impl fmt::Display for UnitError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            UnitError::Unknown { symbol, .. } => write!(f, "unknown unit `{symbol}`"),
            UnitError::NotCombinable { symbol } => {
                write!(f, "`{symbol}` cannot be combined with other units")
            }
            UnitError::NoPrefix { symbol } => write!(f, "`{symbol}` takes no SI prefix"),
            UnitError::Power { text } => write!(f, "unit power in `{text}` is out of range"),
            UnitError::Overflow { text } => {
                write!(f, "the powers in `{text}` add up beyond {}", Dim::MAX_POWER)
            }
        }
    }
}

struct Symbol {
    text: &'static str,
    scale: f64,
    dim: Dim,
    prefixable: bool,
}

const fn sym(text: &'static str, scale: f64, dim: Dim, prefixable: bool) -> Symbol {
    Symbol {
        text,
        scale,
        dim,
        prefixable,
    }
}

/// Every symbol the language knows. Spellings are case-sensitive, as in SI
/// (`mV` is millivolt, `MV` megavolt).
static SYMBOLS: &[Symbol] = &[
    sym("V", 1.0, Dim::VOLTAGE, true),
    sym("A", 1.0, Dim::CURRENT, true),
    sym("ohm", 1.0, Dim::RESISTANCE, true),
    sym("Ohm", 1.0, Dim::RESISTANCE, true),
    sym("Ω", 1.0, Dim::RESISTANCE, true),
    sym("\u{2126}", 1.0, Dim::RESISTANCE, true), // OHM SIGN
    sym("F", 1.0, Dim::CAPACITANCE, true),
    sym("Hz", 1.0, Dim::FREQUENCY, true),
    sym("rtHz", 1.0, Dim::ROOT_HERTZ, false),
    sym("√Hz", 1.0, Dim::ROOT_HERTZ, false),
    sym("s", 1.0, Dim::TIME, true),
    sym("K", 1.0, Dim::TEMPERATURE, true),
    sym("W", 1.0, Dim::POWER, true),
    sym("N", 1.0, Dim::FORCE, true),
    sym("g", 1e-3, Dim::MASS, true),
    sym("t", 1e3, Dim::MASS, false),
    sym("Pa", 1.0, Dim::PRESSURE, true),
    sym("bar", 1e5, Dim::PRESSURE, true),
    sym("m", 1.0, Dim::LENGTH, true),
    sym("%", 1e-2, Dim::NONE, false),
    sym("ppm", 1e-6, Dim::NONE, false),
    sym("ppb", 1e-9, Dim::NONE, false),
    sym("ue", 1e-6, Dim::NONE, false),
    sym("µε", 1e-6, Dim::NONE, false),
    sym("με", 1e-6, Dim::NONE, false),
    sym("bit", 1.0, Dim::NONE, false),
    sym("bits", 1.0, Dim::NONE, false),
    sym("LSB", 1.0, Dim::CODE, false),
];

/// Spellings of degrees Celsius.
const CELSIUS: &[&str] = &["degC", "°C", "℃"];
const DECIBEL: &[&str] = &["dB"];

/// SI prefixes; `u`, `µ` (U+00B5 MICRO SIGN) and `μ` (U+03BC GREEK MU) are
/// all micro, since keyboards and datasheets use all three.
const PREFIXES: &[(&str, f64)] = &[
    ("p", 1e-12),
    ("n", 1e-9),
    ("u", 1e-6),
    ("µ", 1e-6),
    ("μ", 1e-6),
    ("m", 1e-3),
    ("k", 1e3),
    ("M", 1e6),
    ("G", 1e9),
];

/// Parses a unit as written after a number: symbols with optional SI
/// prefixes, joined by `*` and `/` (left to right), each with an optional
/// integer power (`Hz^-1`).
pub fn parse_unit(text: &str) -> Result<Unit, UnitError> {
    if CELSIUS.contains(&text) {
        return Ok(Unit {
            scale: 1.0,
            dim: Dim::TEMPERATURE,
            kind: UnitKind::Celsius,
        });
    }
    if DECIBEL.contains(&text) {
        return Ok(Unit {
            scale: 1.0,
            dim: Dim::NONE,
            kind: UnitKind::Decibel,
        });
    }
    let mut scale = 1.0;
    let mut dim = Dim::NONE;
    let mut divide = false;
    let mut rest = text;
    loop {
        let end = rest.find(['*', '/']).unwrap_or(rest.len());
        let (factor, power) = split_power(&rest[..end])?;
        let (s, d) = parse_factor(factor)?;
        let power = if divide { -power } else { power };
        scale *= s.powi(i32::from(power));
        dim = d
            .checked_powi(power)
            .and_then(|d| dim.checked_mul(d))
            .ok_or_else(|| UnitError::Overflow {
                text: text.to_string(),
            })?;
        if end == rest.len() {
            break;
        }
        divide = rest[end..].starts_with('/');
        rest = &rest[end + 1..];
    }
    Ok(Unit {
        scale,
        dim,
        kind: UnitKind::Linear,
    })
}

fn split_power(factor: &str) -> Result<(&str, i8), UnitError> {
    match factor.split_once('^') {
        None => Ok((factor, 1)),
        Some((base, power)) => match power.parse::<i8>() {
            Ok(p) if (-4..=4).contains(&p) && p != 0 => Ok((base, p)),
            _ => Err(UnitError::Power {
                text: factor.to_string(),
            }),
        },
    }
}

fn parse_factor(factor: &str) -> Result<(f64, Dim), UnitError> {
    if CELSIUS.contains(&factor) {
        // Inside a compound (`uV/degC`) a degree is a kelvin difference.
        return Ok((1.0, Dim::TEMPERATURE));
    }
    if DECIBEL.contains(&factor) {
        return Err(UnitError::NotCombinable {
            symbol: factor.to_string(),
        });
    }
    if let Some(s) = SYMBOLS.iter().find(|s| s.text == factor) {
        return Ok((s.scale, s.dim));
    }
    for (prefix, p) in PREFIXES {
        let Some(rest) = factor.strip_prefix(prefix) else {
            continue;
        };
        if let Some(s) = SYMBOLS.iter().find(|s| s.text == rest) {
            if !s.prefixable {
                return Err(UnitError::NoPrefix {
                    symbol: factor.to_string(),
                });
            }
            return Ok((p * s.scale, s.dim));
        }
        if CELSIUS.contains(&rest) || DECIBEL.contains(&rest) {
            return Err(UnitError::NoPrefix {
                symbol: factor.to_string(),
            });
        }
    }
    Err(UnitError::Unknown {
        symbol: factor.to_string(),
        suggestion: suggest(factor),
    })
}

/// The nearest spelling of a unit of one of `dims`, for a did-you-mean
/// where the expected quantity is known. A prefix followed by a slip keeps
/// the prefix and takes the quantity's own symbol: `10k` for a resistance
/// is `kohm`, not `K`; `1 mv` for a current is `mA`, not `mV`.
pub fn suggest_for(factor: &str, dims: &[Dim]) -> Option<String> {
    let fits = |text: &str| parse_unit(text).is_ok_and(|u| dims.contains(&u.dim));
    let general = suggest(factor);
    if general.as_deref().is_some_and(fits) {
        return general;
    }
    let slip = |rest: &str| {
        rest.is_empty()
            || SYMBOLS
                .iter()
                .any(|s| s.text.eq_ignore_ascii_case(rest) || rest.eq_ignore_ascii_case("ohms"))
    };
    for (prefix, _) in PREFIXES.iter().filter(|(p, _)| p.is_ascii()) {
        let Some(rest) = factor.strip_prefix(prefix) else {
            continue;
        };
        if !slip(rest) {
            continue;
        }
        if let Some(symbol) = dims.iter().find_map(|&d| own_symbol(d)) {
            return Some(format!("{prefix}{}", symbol.text));
        }
    }
    general
}

/// The symbol a prefix goes on for a quantity: its coherent unit, or the
/// prefixable one (`g` for a mass).
fn own_symbol(dim: Dim) -> Option<&'static Symbol> {
    let of_dim = || SYMBOLS.iter().filter(move |s| s.dim == dim && s.prefixable);
    of_dim()
        .find(|s| s.scale == 1.0)
        .or_else(|| of_dim().next())
}

/// The nearest known spelling, for a did-you-mean. Case slips (`mv`, `KOHM`)
/// are the common mistake, so a case-insensitive match wins outright.
fn suggest(factor: &str) -> Option<String> {
    let mut known: Vec<String> = Vec::new();
    for s in SYMBOLS {
        known.push(s.text.to_string());
        if s.prefixable {
            for (p, _) in PREFIXES.iter().filter(|(p, _)| p.is_ascii()) {
                known.push(format!("{p}{}", s.text));
            }
        }
    }
    known.extend(CELSIUS.iter().chain(DECIBEL).map(|s| s.to_string()));
    known.extend(["uV/K", "ppm/K", "nV/rtHz", "mV/V", "mW/K"].map(String::from));
    let lower = factor.to_lowercase();
    let aliases: &[(&str, &str)] = &[
        ("ohms", "ohm"),
        ("kohms", "kohm"),
        ("c", "degC"),
        ("°", "degC"),
        ("deg", "degC"),
        ("celsius", "degC"),
        ("sec", "s"),
        ("secs", "s"),
        ("hz", "Hz"),
        ("v", "V"),
        ("mohm", "mohm` (milliohm) or `Mohm` (megaohm"),
        ("microstrain", "ue"),
    ];
    if let Some((_, to)) = aliases.iter().find(|(from, _)| *from == lower) {
        return Some((*to).to_string());
    }
    if let Some(k) = known.iter().find(|k| k.to_lowercase() == lower) {
        return Some(k.clone());
    }
    known
        .into_iter()
        .map(|k| (strsim::levenshtein(&k, factor), k))
        .filter(|(d, k)| *d <= 1.max(k.len() / 3))
        .min()
        .map(|(_, k)| k)
}

#[cfg(test)]
mod tests {
    use super::{parse_unit, Dim, UnitError, UnitKind};

    fn si(text: &str) -> (f64, Dim) {
        let u = parse_unit(text).unwrap_or_else(|e| panic!("{text}: {e}"));
        (u.scale, u.dim)
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs()
    }

    /// A prefix moves the decimal point: the SI value is the double
    /// nearest the decimal number, and it reads back as written.
    #[test]
    fn prefixed_values_are_the_nearest_doubles_and_read_back() {
        let unit = |t: &str| parse_unit(t).unwrap();
        assert_eq!(unit("uV").to_si(0.1), 1e-7);
        assert_eq!(unit("ue").to_si(-200.0), -2e-4);
        assert_eq!(unit("kohm").to_si(4.7), 4700.0);
        assert_eq!(unit("mm^2").to_si(0.5), 5e-7);
        assert_eq!(unit("ue").of_si(0.002), 2000.0);
        for (x, t) in [
            (-200.0, "ue"),
            (0.1, "uV"),
            (25.0, "ppm/K"),
            (1.1, "nA"),
            (3.3, "kohm"),
        ] {
            assert_eq!(unit(t).of_si(unit(t).to_si(x)), x, "{x} {t}");
        }
        assert_eq!(unit("uV").to_si(f64::INFINITY), f64::INFINITY);
        assert_eq!(unit("uV").to_si(0.0), 0.0);
    }

    #[test]
    fn prefixes_and_micro_spellings() {
        for micro in ["uA", "µA", "μA"] {
            let (s, d) = si(micro);
            assert!(close(s, 1e-6) && d == Dim::CURRENT, "{micro}");
        }
        assert!(close(si("kohm").0, 1e3));
        assert!(close(si("kΩ").0, 1e3));
        assert!(close(si("mV").0, 1e-3));
        assert!(close(si("MV").0, 1e6), "prefixes are case-sensitive");
        assert!(close(si("kg").0, 1.0));
        assert_eq!(si("m").1, Dim::LENGTH);
        assert!(close(si("ms").0, 1e-3));
    }

    #[test]
    fn compound_units() {
        let (s, d) = si("ppm/K");
        assert!(close(s, 1e-6) && d == Dim::NONE / Dim::TEMPERATURE);
        let (s, d) = si("nV/rtHz");
        assert!(close(s, 1e-9) && d == Dim::VOLTAGE / Dim::ROOT_HERTZ);
        assert_eq!(si("nV/√Hz"), si("nV/rtHz"));
        let (s, d) = si("mV/V");
        assert!(close(s, 1e-3) && d == Dim::NONE);
        let (s, d) = si("K/mW");
        assert!(close(s, 1e3) && d == Dim::TEMPERATURE / Dim::POWER);
        assert_eq!(si("uV/degC"), si("uV/K"));
        assert_eq!(si("Hz^-1").1, Dim::TIME);
        assert!(close(si("%").0, 0.01));
    }

    #[test]
    fn celsius_and_decibel_are_not_multipliers() {
        assert_eq!(parse_unit("degC").unwrap().kind, UnitKind::Celsius);
        assert_eq!(parse_unit("dB").unwrap().kind, UnitKind::Decibel);
        assert!(matches!(
            parse_unit("dB/K"),
            Err(UnitError::NotCombinable { .. })
        ));
        assert!(matches!(
            parse_unit("kdegC"),
            Err(UnitError::NoPrefix { .. })
        ));
        assert!(matches!(parse_unit("m%"), Err(UnitError::NoPrefix { .. })));
    }

    /// Exponent arithmetic is checked: seventeen `Hz^4` factors are s^-68,
    /// not a power that wrapped or saturated into something else.
    #[test]
    fn overflowing_powers_are_an_error() {
        let text = vec!["Hz^4"; 17].join("*");
        assert!(matches!(parse_unit(&text), Err(UnitError::Overflow { .. })));
        assert_eq!(parse_unit("Hz^4*Hz^4").unwrap().dim, Dim::FREQUENCY.powi(8));
        assert_eq!(parse_unit("LSB").unwrap().dim, Dim::CODE);
    }

    /// The suggestion honours the quantity expected: a bare prefix or a
    /// case slip on another quantity's symbol keeps the prefix.
    #[test]
    fn suggestions_know_the_expected_quantity() {
        use super::suggest_for;
        assert_eq!(
            suggest_for("k", &[Dim::RESISTANCE]).as_deref(),
            Some("kohm")
        );
        assert_eq!(suggest_for("mv", &[Dim::CURRENT]).as_deref(), Some("mA"));
        assert_eq!(suggest_for("mv", &[Dim::VOLTAGE]).as_deref(), Some("mV"));
        assert_eq!(suggest_for("k", &[Dim::MASS]).as_deref(), Some("kg"));
        assert_eq!(
            suggest_for("kohms", &[Dim::RESISTANCE]).as_deref(),
            Some("kohm")
        );
    }

    #[test]
    fn unknown_units_suggest() {
        let Err(UnitError::Unknown { suggestion, .. }) = parse_unit("mv") else {
            panic!("mv must be unknown");
        };
        assert_eq!(suggestion.as_deref(), Some("mV"));
        let Err(UnitError::Unknown { suggestion, .. }) = parse_unit("kohms") else {
            panic!("kohms must be unknown");
        };
        assert_eq!(suggestion.as_deref(), Some("kohm"));
    }
}
