//! `catena export`: the firmware's constants for a chain, as C (a header
//! and a source), a Rust module or JSON. One model ([`ChainExport`],
//! computed in `model`) and one list of named constants ([`constants`]),
//! rendered by each language; the same input gives the same bytes (no
//! timestamp, numbers written as the shortest text that reads back to
//! the same double).

mod c;
mod json;
mod junction;
mod model;
mod rust;

pub use c::render as render_c;
pub use json::render as render_json;
pub use junction::{ColdJunctionConversion, Junction};
pub use model::{
    affine_from, chain_export, exact_readings, Affine, AlarmExport, CalibrationExport, ChainExport,
    Curve, ExportError, Origin, Provenance, MAX_BREAKPOINTS, TARGET_FRACTION,
};
pub use rust::render as render_rust;

use crate::analysis::faults::{FaultCodes, FaultVerdict, Threshold};
use crate::model::Side;
use crate::units::format::{codes, trimmed};

/// Everything one run exports: the chains of one spec.
#[derive(Clone, Debug, PartialEq)]
pub struct Export {
    pub source: Provenance,
    pub chains: Vec<ChainExport>,
}

/// The caution an export carries where a chain trips anything.
pub const CAUTION: &str = "Caution: these constants are a design aid, not a safety assessment. Where an alarm or trip protects people or property, its design and verification follow the applicable functional-safety standard, local codes and licensed practice.";

/// A number as the shortest text that reads back to the same double, in
/// a form both C and Rust accept (`1.0`, `-3.5e-7`).
pub fn number(x: f64) -> String {
    let x = x + 0.0;
    let text = format!("{x:?}");
    if text.contains(['.', 'e', 'E']) {
        text
    } else {
        format!("{text}.0")
    }
}

/// `spec PATH, revision REV`: where every constant came from.
pub fn source_tag(source: &Provenance) -> String {
    match &source.revision {
        Some(rev) => format!("spec {}, revision {rev}", source.path),
        None => format!("spec {}", source.path),
    }
}

/// Text cut into comment lines of at most `width` characters, each
/// starting with `lead`.
pub fn wrap(text: &str, lead: &str, width: usize) -> String {
    let mut out = String::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        if !line.is_empty() && lead.len() + line.len() + 1 + word.len() > width {
            out.push_str(&format!("{lead}{line}\n"));
            line.clear();
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    if !line.is_empty() {
        out.push_str(&format!("{lead}{line}\n"));
    }
    out
}

/// A constant's comment, as lines of at most `width` characters each
/// starting with `lead`: what it is, its unit and where it came from.
pub fn constant_comment(c: &Constant, tag: &str, lead: &str, width: usize) -> String {
    wrap(
        &format!("{}. Unit: {}. From {tag}.", c.what, c.unit),
        lead,
        width,
    )
}

/// A value of a constant.
#[derive(Clone, Debug, PartialEq)]
pub enum Value {
    Code(i64),
    Count(i64),
    Real(f64),
    Reals(Vec<f64>),
}

/// One named constant of a chain, with what it is and its unit.
#[derive(Clone, Debug, PartialEq)]
pub struct Constant {
    /// Upper case, without the chain's prefix (`CODE_MIN`).
    pub name: String,
    pub what: String,
    pub unit: String,
    pub value: Value,
}

fn constant(name: &str, what: String, unit: &str, value: Value) -> Constant {
    Constant {
        name: name.to_string(),
        what,
        unit: unit.to_string(),
        value,
    }
}

/// The alarms' names: `ALARM_HIGH`, `ALARM_LOW`, and `ALARM_HIGH_2` for
/// a second of one side.
pub fn alarm_names(chain: &ChainExport) -> Vec<String> {
    let mut seen: Vec<Side> = Vec::new();
    chain
        .alarms
        .iter()
        .map(|a| {
            seen.push(a.side);
            let n = seen.iter().filter(|s| **s == a.side).count();
            let side = a.side.word().to_uppercase();
            if n == 1 {
                format!("ALARM_{side}")
            } else {
                format!("ALARM_{side}_{n}")
            }
        })
        .collect()
}

/// What the conversion is, in words, for the comments.
pub fn conversion_words(chain: &ChainExport) -> String {
    let how = match (&chain.curve, &chain.origin) {
        _ if chain.junction.is_some() => "three tables, sized together: code to the couple's voltage, the cold junction's temperature to its EMF, and their sum back to a temperature (law of intermediate temperatures); linear interpolation in each, evenly spaced breakpoints".to_string(),
        (Curve::Table { codes, .. }, Origin::Chosen) => format!(
            "a table of {} breakpoints evenly spaced over the valid code window, linear interpolation between them (the spec asks for the exact inverse; this many meet the target below)",
            codes.len()
        ),
        (Curve::Table { codes, .. }, Origin::Spec(m)) => format!(
            "the spec's `{m}`: {} breakpoints, linear interpolation between them and the end segments extended beyond",
            codes.len()
        ),
        (Curve::Polynomial { coefficients, .. }, Origin::Spec(m)) => format!(
            "the spec's `{m}`: a polynomial of degree {} in u = (code - mid) / half",
            coefficients.len().saturating_sub(1)
        ),
        (Curve::Polynomial { coefficients, .. }, Origin::Chosen) => format!(
            "a polynomial of degree {} in u = (code - mid) / half",
            coefficients.len().saturating_sub(1)
        ),
    };
    let verdict = if chain.max_error <= chain.target {
        "within"
    } else {
        "above"
    };
    let junction = chain
        .max_error_junction
        .map(|t| format!(" with the junction at {} {}", trimmed(t, 6), chain.unit))
        .unwrap_or_default();
    format!(
        "{how}. Largest difference from the exact inverse of the nominal chain over the valid code window ({} points evaluated): {} {} at code {}{junction}, {verdict} the target of {} {} ({}).",
        chain.samples,
        significant(chain.max_error),
        chain.difference_unit,
        trimmed(chain.max_error_at, 12),
        significant(chain.target),
        chain.difference_unit,
        chain.target_basis
    )
}

fn significant(x: f64) -> String {
    trimmed(x, 3)
}

/// Every constant of a chain, in the order the files list them.
pub fn constants(chain: &ChainExport) -> Vec<Constant> {
    let unit = chain.unit.as_str();
    let diff = chain.difference_unit.as_str();
    let w = &chain.window;
    let mut out = vec![
        constant("CODE_MIN", format!("lowest code the healthy chain gives: over the measurand range, the ambient range and every tolerance at its limits, less {} sigma of one conversion's noise (sigma = {}); below it, the chain is faulty", trimmed(w.k, 3), codes(significant(w.sigma_codes))), "code", Value::Code(w.low)),
        constant("CODE_MAX", format!("highest code the healthy chain gives, as CODE_MIN with {} sigma added; above it, the chain is faulty", trimmed(w.k, 3)), "code", Value::Code(w.high)),
        constant("RANGE_LOW", format!("low end of the measurand range ({})", chain.quantity), unit, Value::Real(chain.range.0)),
        constant("RANGE_HIGH", format!("high end of the measurand range ({})", chain.quantity), unit, Value::Real(chain.range.1)),
        constant("AVERAGE", "conversion results the firmware averages per reading (pass their mean as the code)".to_string(), "samples", Value::Count(i64::from(chain.average))),
        constant("CONVERSION_MAX_ERROR", "largest difference between this conversion (with the nominal calibration) and the exact inverse of the nominal chain, over the valid code window".to_string(), diff, Value::Real(chain.max_error)),
    ];
    out.extend(channel_window_constants(chain));
    out.extend(fault_constants(chain));
    out.extend(curve_constants(chain));
    out.extend(alarm_constants(chain));
    out.extend(calibration_constants(chain));
    out
}

/// One function of the conversion, as the files name it.
pub struct NamedCurve<'a> {
    /// Its constants' prefix (`EMF_`), empty for a code-alone chain's.
    pub prefix: &'static str,
    /// What a table's breakpoints are (`CODE`, `TEMPERATURE`, `EMF`).
    pub input: &'static str,
    /// Its function's name (`reading_uncalibrated`, `emf`).
    pub function: &'static str,
    pub curve: &'a Curve,
    pub in_unit: String,
    pub out_unit: String,
    /// What it gives, for the comments.
    pub what: String,
}

/// The conversion's functions: one curve from code to reading, or for a
/// thermocouple chain the code-to-EMF, junction-to-EMF and EMF-to-
/// temperature tables and the junction's own conversion.
pub fn named_curves(chain: &ChainExport) -> Vec<NamedCurve<'_>> {
    let unit = chain.unit.clone();
    let named =
        |prefix, input, function, curve, in_unit: &str, out_unit: &str, what: &str| NamedCurve {
            prefix,
            input,
            function,
            curve,
            in_unit: in_unit.to_string(),
            out_unit: out_unit.to_string(),
            what: what.to_string(),
        };
    let Some(j) = &chain.junction else {
        return vec![named(
            "",
            "CODE",
            "reading_uncalibrated",
            &chain.curve,
            "code",
            &unit,
            "the uncalibrated reading",
        )];
    };
    let mut out = vec![
        named("EMF_", "CODE", "emf", &j.emf, "code", "mV", "the couple's voltage the code stands for, with the cold junction at the reference ambient: E(t) - E(t_reference)"),
        named("JUNCTION_", "TEMPERATURE", "junction_emf", &j.junction_emf, &unit, "mV", &format!("the EMF of the cold junction's temperature, E(t_junction), by the type {} reference function (ITS-90, NIST Monograph 175)", j.couple)),
        named("TEMPERATURE_", "EMF", "temperature_of_emf", &j.temperature, "mV", &unit, &format!("the temperature of an EMF, by the type {} reference function inverted", j.couple)),
    ];
    if let Some(cj) = &j.cj {
        out.push(named(
            "CJ_",
            "CODE",
            "cold_junction",
            &cj.curve,
            "code",
            &unit,
            &format!(
                "the cold junction's temperature from the code of `{}` (stage `{}`)",
                cj.converter, cj.stage
            ),
        ));
    }
    out
}

fn curve_constants(chain: &ChainExport) -> Vec<Constant> {
    let mut out: Vec<Constant> = named_curves(chain)
        .iter()
        .flat_map(|n| match n.curve {
            Curve::Table { codes, values } => table_constants(n, codes, values),
            Curve::Polynomial {
                mid,
                half,
                coefficients,
            } => polynomial_constants(n, *mid, *half, coefficients),
        })
        .collect();
    if let Some(j) = &chain.junction {
        out.extend(junction_constants(chain, j));
    }
    out
}

fn table_constants(n: &NamedCurve, codes: &[f64], values: &[f64]) -> Vec<Constant> {
    let p = n.prefix;
    vec![
        constant(
            &format!("{p}TABLE_POINTS"),
            format!("breakpoints of the table of {}", n.what),
            "count",
            Value::Count(codes.len() as i64),
        ),
        constant(
            &format!("{p}TABLE_{}", n.input),
            format!("table of {}: breakpoints, rising", n.what),
            &n.in_unit,
            Value::Reals(codes.to_vec()),
        ),
        constant(
            &format!("{p}TABLE_VALUE"),
            format!(
                "table of {}: the value at each breakpoint, linear between them",
                n.what
            ),
            &n.out_unit,
            Value::Reals(values.to_vec()),
        ),
    ]
}

fn polynomial_constants(
    n: &NamedCurve,
    mid: f64,
    half: f64,
    coefficients: &[f64],
) -> Vec<Constant> {
    let p = n.prefix;
    vec![
        constant(
            &format!("{p}POLY_MID"),
            format!("polynomial of {}: the input u = 0 stands for", n.what),
            &n.in_unit,
            Value::Real(mid),
        ),
        constant(
            &format!("{p}POLY_HALF"),
            format!("polynomial of {}: input per unit of u", n.what),
            &n.in_unit,
            Value::Real(half),
        ),
        constant(
            &format!("{p}POLY_TERMS"),
            format!("polynomial of {}: number of coefficients", n.what),
            "count",
            Value::Count(coefficients.len() as i64),
        ),
        constant(
            &format!("{p}POLY_COEFFICIENTS"),
            format!("polynomial of {}: the sum of c[k] u^k, c[0] first", n.what),
            &n.out_unit,
            Value::Reals(coefficients.to_vec()),
        ),
    ]
}

/// The cold-junction range the tables cover and the junction conversion's
/// own error.
fn junction_constants(chain: &ChainExport, j: &Junction) -> Vec<Constant> {
    let mut out = vec![
        constant(
            "JUNCTION_LOW",
            "lowest cold-junction temperature the tables cover (the ambient range widened by 10 K)"
                .to_string(),
            &chain.unit,
            Value::Real(j.junction_range.0),
        ),
        constant(
            "JUNCTION_HIGH",
            "highest cold-junction temperature the tables cover".to_string(),
            &chain.unit,
            Value::Real(j.junction_range.1),
        ),
    ];
    if let Some(cj) = &j.cj {
        out.push(constant(
            "CJ_CONVERSION_MAX_ERROR",
            format!(
                "largest difference between the cold junction's conversion and its exact inverse, over codes {} .. {} (the ambient range)",
                cj.codes.0, cj.codes.1
            ),
            &chain.difference_unit,
            Value::Real(cj.max_error),
        ));
    }
    out
}

/// A detectable fault's threshold constants: `FAULT_<STAGE>_<FAULT>_BELOW`
/// (the fault is present at codes below it), `_ABOVE`, or both for a fault
/// that leaves the code at either end; each with its code and side.
pub fn fault_constants_of(f: &FaultVerdict) -> Vec<(String, i64, Side)> {
    let sides = match f.threshold {
        Some(Threshold::Below(n)) => vec![(n, Side::Low)],
        Some(Threshold::Above(n)) => vec![(n, Side::High)],
        Some(Threshold::Outside(a, b)) => vec![(a, Side::Low), (b, Side::High)],
        None => Vec::new(),
    };
    sides
        .into_iter()
        .map(|(code, side)| {
            let name = format!(
                "FAULT_{}_{}_{}",
                f.stage.to_uppercase(),
                f.fault.kind.name().to_uppercase(),
                beyond(side).to_uppercase()
            );
            (name, code, side)
        })
        .collect()
}

/// Where a fault's codes lie from its threshold, in words.
fn beyond(side: Side) -> &'static str {
    match side {
        Side::Low => "below",
        Side::High => "above",
    }
}

/// A detectable fault's threshold constant names, comma-separated.
pub fn fault_name(f: &FaultVerdict) -> Option<String> {
    let names: Vec<String> = fault_constants_of(f).into_iter().map(|c| c.0).collect();
    (!names.is_empty()).then(|| names.join(", "))
}

/// Each summed channel's own window, `CODE_MIN_<CHANNEL>` and
/// `CODE_MAX_<CHANNEL>`: firmware checks each channel's code against its
/// own before adding them.
fn channel_window_constants(chain: &ChainExport) -> Vec<Constant> {
    let mut out = Vec::new();
    for ch in &chain.window.channels {
        let w = &ch.window;
        let name = ch.name.to_uppercase();
        out.push(constant(&format!("CODE_MIN_{name}"), format!("lowest code channel `{}` gives on its own, before the channels are added: over the measurand range, the ambient range and every tolerance at its limits, less {} sigma of its noise (sigma = {}); below it, that channel is faulty", ch.name, trimmed(w.k, 3), codes(significant(w.sigma_codes))), "code", Value::Code(w.low)));
        out.push(constant(&format!("CODE_MAX_{name}"), format!("highest code channel `{}` gives on its own, as CODE_MIN_{name} with {} sigma added; above it, that channel is faulty", ch.name, trimmed(w.k, 3)), "code", Value::Code(w.high)));
    }
    out
}

fn fault_constants(chain: &ChainExport) -> Vec<Constant> {
    let mut out = Vec::new();
    for f in &chain.faults {
        let Some(codes) = f.codes.map(FaultCodes::phrase) else {
            continue;
        };
        let (gives, whose) = match &f.channel {
            Some(ch) => (
                format!("channel `{ch}` gives"),
                format!("its own window, checked before the channels are added; a code of `{ch}`"),
            ),
            None => (
                "the converter gives".to_string(),
                "the valid window; a code".to_string(),
            ),
        };
        for (name, code, side) in fault_constants_of(f) {
            let side = beyond(side);
            out.push(constant(
            &name,
            format!(
                "fault threshold for `{}` {} (fault `{}`): with it {gives} {codes}, outside {whose} {side} this means the fault (placed halfway between the window and the fault's codes)",
                f.stage,
                f.fault.kind.describe(),
                f.fault.kind.name()
            ),
            "code",
            Value::Code(code),
        ));
        }
    }
    out
}

/// The faults firmware cannot tell from the code, in words for a comment;
/// None when every fault is detectable.
pub fn undetected_words(chain: &ChainExport) -> Option<String> {
    let list: Vec<String> = chain
        .faults
        .iter()
        .filter(|f| f.verdict.hidden())
        .map(|f| {
            let codes = f
                .codes
                .map(|c| format!(", {} inside the window", c.phrase()))
                .unwrap_or_default();
            format!(
                "`{}` {} ({}{codes})",
                f.stage,
                f.fault.kind.describe(),
                f.verdict.name()
            )
        })
        .collect();
    (!list.is_empty()).then(|| {
        format!(
            "Faults the code cannot reveal (no threshold; detect them another way or change the design, see `catena checklist`): {}.",
            list.join("; ")
        )
    })
}

fn alarm_constants(chain: &ChainExport) -> Vec<Constant> {
    let (unit, diff) = (chain.unit.as_str(), chain.difference_unit.as_str());
    let mut out = Vec::new();
    for (a, name) in chain.alarms.iter().zip(alarm_names(chain)) {
        let dir = if a.trips_upward {
            "at or above"
        } else {
            "at or below"
        };
        out.push(constant(
            &format!("{name}_LIMIT"),
            format!("{} alarm limit as the spec states it", a.side),
            unit,
            Value::Real(a.at),
        ));
        out.push(constant(&format!("{name}_GUARD_BAND"), "guard band: the expanded uncertainty (k = 2) at the limit, worst over the ambient range".to_string(), diff, Value::Real(a.guard_band)));
        out.push(constant(&format!("{name}_TRIP"), "reading at which to trip: the limit moved inside by the guard band, so the true value never passes the limit unseen".to_string(), unit, Value::Real(a.trip_at)));
        let trip_code = if chain.junction.is_some() {
            "code of the trip reading on the nominal chain with the cold junction at the reference ambient; another junction temperature moves it, so the alarm compares the reading with the trip instead".to_string()
        } else {
            format!("code of the trip reading on the nominal chain at the reference ambient; the alarm trips at codes {dir} it")
        };
        let trip_code = if a.masked_by.is_empty() {
            trip_code
        } else {
            format!(
                "{trip_code}. Faults the code cannot reveal that could hold it on the safe side: {}",
                a.masked_by.join(", ")
            )
        };
        out.push(constant(
            &format!("{name}_TRIP_CODE"),
            trip_code,
            "code",
            Value::Code(a.trip_code),
        ));
    }
    out
}

fn calibration_constants(chain: &ChainExport) -> Vec<Constant> {
    let Some(cal) = &chain.calibration else {
        return Vec::new();
    };
    let (unit, diff) = (chain.unit.as_str(), chain.difference_unit.as_str());
    let mut out = Vec::new();
    for (i, p) in cal.points.iter().enumerate() {
        let n = i + 1;
        out.push(constant(&format!("CALIBRATION_POINT_{n}"), format!("{} calibration: the reference value of point {n}, applied with the electronics at the reference ambient", cal.kind.replace('_', "-")), unit, Value::Real(*p)));
        if let Some(u) = cal.uncertainty.get(i).copied().flatten() {
            out.push(constant(
                &format!("CALIBRATION_UNCERTAINTY_{n}"),
                format!("stated uncertainty of the calibration reference at point {n}"),
                diff,
                Value::Real(u),
            ));
        }
        out.push(constant(&format!("CALIBRATION_NOMINAL_CODE_{n}"), format!("code the nominal chain gives at point {n} (what bring-up should see, within the tolerances)"), "code", Value::Real(cal.nominal_codes[i])));
    }
    out.push(constant("CALIBRATION_NOMINAL_GAIN", "correction gain of the nominal chain: reading = gain * uncalibrated + offset; replace with the values measured at calibration".to_string(), "1", Value::Real(cal.nominal.gain)));
    out.push(constant(
        "CALIBRATION_NOMINAL_OFFSET",
        "correction offset of the nominal chain, as the gain".to_string(),
        unit,
        Value::Real(cal.nominal.offset),
    ));
    out
}
