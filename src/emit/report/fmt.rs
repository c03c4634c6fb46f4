//! Numbers for the report, formatted in one place for every renderer.

use crate::units::format::{codes, trimmed, with_prefix};

/// Significant digits of an error or a margin.
const DIGITS: usize = 3;

/// A value in a unit a reader knows (K, degC, s): three significant
/// digits, trailing zeros dropped.
pub fn value(x: f64, unit: &str) -> String {
    if unit == "dB" {
        return crate::units::format::attenuation_db(x);
    }
    let v = trimmed(x, DIGITS);
    if unit.is_empty() {
        v
    } else {
        format!("{v} {unit}")
    }
}

/// A value in a coherent SI unit (V, A, ohm), with its prefix.
pub fn si(x: f64, unit: &str) -> String {
    match unit {
        "" => trimmed(x, 4),
        // A share of a converter's full scale.
        "1" => format!("{} % FS", trimmed(x * 100.0, 4)),
        "code" => codes(trimmed(x.round(), 12)),
        "ohm" => with_prefix(x, "Ω", 4),
        _ => with_prefix(x, unit, 4),
    }
}

/// An alarm's trip code, marked when it lies beyond the converter's end
/// code `beyond`, where the firmware never reads it.
pub fn trip_code(code: i64, beyond: Option<i64>) -> String {
    match beyond {
        Some(end) if code > end => format!("{code} (beyond the last code, {end}: never read)"),
        Some(end) => format!("{code} (below the first code, {end}: never read)"),
        None => code.to_string(),
    }
}

/// A share (0…1) as a percentage.
pub fn share(x: f64) -> String {
    let p = x * 100.0;
    if p.abs() >= 10.0 {
        format!("{} %", trimmed(p.round(), 6))
    } else {
        format!("{} %", trimmed(p, 2))
    }
}

/// A Monte Carlo share, or "< floor" where it cannot be told from none.
pub fn share_or_floor(x: f64, floor: Option<f64>) -> String {
    match floor {
        Some(f) if x < f => format!("< {}", share(crate::analysis::shares::floor_shown(f))),
        _ => share(x),
    }
}

/// A position in the measurand's range.
pub fn position(x: f64, unit: &str) -> String {
    format!("{} {unit}", trimmed(x, 6))
}

/// Any plain number.
pub fn plain(x: f64) -> String {
    trimmed(x, 4)
}

/// The name of a requirement's method (`Judged::word`) as a reader
/// says it, in every table that shows one.
pub fn method(m: &str) -> String {
    let hz = m
        .strip_prefix("attenuation_at_")
        .and_then(|m| m.strip_suffix("_hz"));
    if let Some(hz) = hz {
        return format!("attenuation at {hz} Hz");
    }
    match m {
        "worst_case" => "worst case",
        "monte_carlo" => "Monte Carlo 95 %",
        "gum" => "GUM, k = 2",
        "noise_free" => "noise-free",
        "lsb" => "one code",
        "step_90" => "0 to 90 % step",
        other => other,
    }
    .to_string()
}

/// The signal path's heading, in every renderer: its errors are the
/// stages' own, before a calibration the firmware applies after the
/// converter.
pub fn path_title(c: &super::model::ChainReport) -> String {
    let when = if c.calibration.is_some() {
        ", before the firmware's calibration"
    } else {
        ""
    };
    format!("Error along the signal path (1σ, referred to the measurand{when})")
}

/// Under the signal path, where a stage cancels most of a source an
/// earlier stage carried (a ratiometric converter reading out its
/// excitation's error), so a large error early on does not read as the
/// chain's.
pub fn cancel_note(stages: [&str; 2], source: &str, before: &str, after: &str) -> String {
    let [earlier, stage] = stages;
    format!(
        "`{stage}` cancels most of `{source}`: {before} at `{earlier}`, {after} from `{stage}` on"
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_trip_code_beyond_either_end_is_marked() {
        assert_eq!(trip_code(5, None), "5");
        assert_eq!(
            trip_code(9, Some(7)),
            "9 (beyond the last code, 7: never read)"
        );
        assert_eq!(
            trip_code(-9, Some(-8)),
            "-9 (below the first code, -8: never read)"
        );
    }

    #[test]
    fn numbers_read_well() {
        assert_eq!(value(0.080_93, "K"), "0.0809 K");
        assert_eq!(si(0.000_25, "A"), "250.0 uA");
        assert_eq!(share(0.272), "27 %");
        assert_eq!(share(0.0123), "1.2 %");
        assert_eq!(si(6_250_772.4, "code"), "6250772 codes");
        assert_eq!(si(0.7057, "1"), "70.57 % FS");
    }
}
