//! Numbers for people: SI prefixes and a fixed number of significant
//! digits, so reports are short and diff cleanly.

use super::{parse_unit, UnitKind, ZERO_CELSIUS_K};

const PREFIXES: &[(f64, &str)] = &[
    (1e9, "G"),
    (1e6, "M"),
    (1e3, "k"),
    (1.0, ""),
    (1e-3, "m"),
    (1e-6, "u"),
    (1e-9, "n"),
    (1e-12, "p"),
];

/// `value` (in the coherent unit `unit`) with an SI prefix and `digits`
/// significant digits: `0.00025, "A"` → `250.000 uA` for 6 digits.
pub fn with_prefix(value: f64, unit: &str, digits: usize) -> String {
    // −0 prints as 0.
    let value = value + 0.0;
    if value == 0.0 || !value.is_finite() {
        return format!("{} {unit}", significant(value, digits))
            .trim_end()
            .to_string();
    }
    let (scale, prefix) = PREFIXES
        .iter()
        .copied()
        .find(|(s, _)| value.abs() >= *s * 0.999_999_5)
        .unwrap_or((1e-12, "p"));
    format!("{} {prefix}{unit}", significant(value / scale, digits))
}

/// From this power of ten on, numbers are written as `1.5e20`.
const SCIENTIFIC_FROM: i32 = 15;

/// A number with `digits` significant digits, in fixed notation (in
/// scientific notation from 10^15 on).
pub fn significant(value: f64, digits: usize) -> String {
    let value = value + 0.0;
    if value == 0.0 || !value.is_finite() {
        return format!("{value}");
    }
    // A hair above 1 keeps 0.09999… from being printed as 0.1000.
    let magnitude = (value.abs() * (1.0 + 1e-9)).log10().floor() as i32;
    if magnitude >= SCIENTIFIC_FROM {
        // Fixed notation would print hundreds of digits nobody can read.
        return format!("{value:.*e}", digits.saturating_sub(1));
    }
    let decimals = (digits as i32 - 1 - magnitude).max(0) as usize;
    format!("{value:.decimals$}")
}

/// Like [`significant`], without trailing zeros: `850`, `-0.5`.
pub fn trimmed(value: f64, digits: usize) -> String {
    let s = significant(value, digits);
    if let Some((mantissa, exponent)) = s.split_once('e') {
        let mantissa = mantissa.trim_end_matches('0').trim_end_matches('.');
        return format!("{mantissa}e{exponent}");
    }
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// A number of converter codes as written text: "1 code", "2.1 codes".
pub fn codes(number: String) -> String {
    let noun = if number == "1" || number == "-1" {
        "code"
    } else {
        "codes"
    };
    format!("{number} {noun}")
}

/// Beyond this an attenuation in dB means nothing to a reader: an ideal
/// notch attenuates without bound.
const ATTENUATION_SHOWN_DB: f64 = 200.0;

/// An attenuation in dB as every output writes it: three significant
/// digits, and "> 200 dB" past what a reader can use.
pub fn attenuation_db(db: f64) -> String {
    if db > ATTENUATION_SHOWN_DB {
        format!("> {ATTENUATION_SHOWN_DB} dB")
    } else {
        format!("{} dB", significant(db, 3))
    }
}

/// Converts an SI value to the unit written in the spec (`degC`, `kg`).
pub fn from_si(value: f64, unit: &str) -> f64 {
    match parse_unit(unit) {
        Ok(u) if u.kind == UnitKind::Celsius => value - ZERO_CELSIUS_K,
        Ok(u) if u.kind == UnitKind::Linear && u.scale != 0.0 => u.of_si(value),
        _ => value,
    }
}

/// Converts a value written in `unit` to SI (an absolute point).
pub fn to_si(value: f64, unit: &str) -> f64 {
    match parse_unit(unit) {
        Ok(u) if u.kind == UnitKind::Celsius => value + ZERO_CELSIUS_K,
        Ok(u) if u.kind == UnitKind::Linear => u.to_si(value),
        _ => value,
    }
}

#[cfg(test)]
mod tests {
    use super::{attenuation_db, codes, from_si, significant, to_si, trimmed, with_prefix};

    /// A submultiple reads back whole: its scale is not exact in binary,
    /// its reciprocal is.
    #[test]
    fn a_submultiple_reads_back_whole() {
        assert_eq!(from_si(0.002, "ue"), 2000.0);
        assert_eq!(from_si(0.0125, "mV"), 12.5);
        assert_eq!(from_si(2500.0, "kohm"), 2.5);
        assert_eq!(from_si(298.15, "degC"), 25.0);
        // Written, read in, written again: the same number.
        for (x, unit) in [(-200.0, "ue"), (0.1, "%"), (25.0, "ppm/K"), (2.2, "kohm")] {
            assert_eq!(from_si(to_si(x, unit), unit), x, "{x} {unit}");
        }
        assert_eq!(to_si(500.0, "uA"), 0.0005);
    }

    #[test]
    fn one_code_is_singular() {
        assert_eq!(codes(trimmed(1.0, 2)), "1 code");
        assert_eq!(codes(trimmed(0.996, 2)), "1 code");
        assert_eq!(codes(trimmed(2.1, 2)), "2.1 codes");
        assert_eq!(codes("0".into()), "0 codes");
    }

    /// The budget and the report write an attenuation alike.
    #[test]
    fn an_attenuation_reads_the_same_everywhere() {
        assert_eq!(attenuation_db(384.1), "> 200 dB");
        assert_eq!(attenuation_db(f64::INFINITY), "> 200 dB");
        assert_eq!(attenuation_db(38.42), "38.4 dB");
        assert_eq!(attenuation_db(200.0), "200 dB");
        assert_eq!(attenuation_db(-3.01), "-3.01 dB");
    }

    /// A number beyond 10^15 is written in scientific notation, not as
    /// hundreds of digits; trimming keeps the exponent whole.
    #[test]
    fn huge_numbers_are_scientific() {
        assert_eq!(trimmed(8.485958e95, 4), "8.486e95");
        assert_eq!(trimmed(1e20, 6), "1e20");
        assert_eq!(significant(-2.5e30, 3), "-2.50e30");
        assert_eq!(trimmed(123456.0, 6), "123456");
    }

    #[test]
    fn prefixes_and_digits() {
        assert_eq!(with_prefix(0.00025, "A", 6), "250.000 uA");
        assert_eq!(with_prefix(1.2345678, "V", 4), "1.235 V");
        assert_eq!(with_prefix(-0.0123, "V", 3), "-12.3 mV");
        assert_eq!(with_prefix(4990.0, "ohm", 4), "4.990 kohm");
        assert_eq!(significant(0.0, 4), "0");
        assert!((from_si(298.15, "degC") - 25.0).abs() < 1e-12);
        assert!((from_si(0.5, "kg") - 0.5).abs() < 1e-12);
    }
}
