//! The JSON export: the same constants, with `schema_version`, for tools
//! that generate firmware of their own.

use serde::Serialize;

use super::{
    alarm_names, conversion_words, fault_name, ChainExport, Curve, Export, Origin, CAUTION,
};
use crate::analysis::faults::{FaultCodes, FaultVerdict, Threshold};
use crate::model::Side;

#[derive(Serialize)]
struct Document<'a> {
    schema_version: u32,
    source: Source<'a>,
    #[serde(skip_serializing_if = "Option::is_none")]
    caution: Option<&'static str>,
    chains: Vec<ChainJson<'a>>,
}

#[derive(Serialize)]
struct Source<'a> {
    path: &'a str,
    revision: Option<&'a str>,
}

#[derive(Serialize)]
struct ChainJson<'a> {
    chain: &'a str,
    title: Option<&'a str>,
    quantity: &'a str,
    unit: &'a str,
    difference_unit: &'a str,
    range: [f64; 2],
    converter: Converter<'a>,
    average: u32,
    window: Window<'a>,
    faults: Vec<FaultJson<'a>>,
    conversion: ConversionJson<'a>,
    alarms: Vec<AlarmJson<'a>>,
    calibration: Option<CalibrationJson<'a>>,
    /// A thermocouple chain's conversion with its cold junction (the
    /// conversion above is then the code-to-EMF table).
    #[serde(skip_serializing_if = "Option::is_none")]
    junction: Option<JunctionJson<'a>>,
}

#[derive(Serialize)]
struct JunctionJson<'a> {
    couple: String,
    /// Junction temperature (reading unit) → EMF (mV).
    junction_emf: TableJson<'a>,
    /// EMF (mV) → temperature (reading unit).
    temperature: TableJson<'a>,
    range: [f64; 2],
    max_error_junction: Option<f64>,
    cold_junction: Option<ColdJunctionJson<'a>>,
}

#[derive(Serialize)]
struct TableJson<'a> {
    inputs: &'a [f64],
    values: &'a [f64],
}

#[derive(Serialize)]
struct ColdJunctionJson<'a> {
    stage: &'a str,
    converter: &'a str,
    bits: u32,
    signed: bool,
    origin: String,
    curve: CurveJson<'a>,
    max_error: f64,
    codes: [f64; 2],
    samples: usize,
}

#[derive(Serialize)]
#[serde(tag = "kind", rename_all = "lowercase")]
enum CurveJson<'a> {
    Table {
        codes: &'a [f64],
        values: &'a [f64],
    },
    Polynomial {
        mid: f64,
        half: f64,
        coefficients: &'a [f64],
    },
}

fn curve_json(c: &Curve) -> CurveJson<'_> {
    match c {
        Curve::Table { codes, values } => CurveJson::Table { codes, values },
        Curve::Polynomial {
            mid,
            half,
            coefficients,
        } => CurveJson::Polynomial {
            mid: *mid,
            half: *half,
            coefficients,
        },
    }
}

fn table_json(c: &Curve) -> TableJson<'_> {
    match c {
        Curve::Table { codes, values } => TableJson {
            inputs: codes,
            values,
        },
        Curve::Polynomial { coefficients, .. } => TableJson {
            inputs: &[],
            values: coefficients,
        },
    }
}

fn origin_text(o: &Origin) -> String {
    match o {
        Origin::Chosen => "chosen".to_string(),
        Origin::Spec(m) => m.clone(),
    }
}

fn junction(c: &ChainExport) -> Option<JunctionJson<'_>> {
    let j = c.junction.as_ref()?;
    Some(JunctionJson {
        couple: format!("type {}", j.couple),
        junction_emf: table_json(&j.junction_emf),
        temperature: table_json(&j.temperature),
        range: [j.junction_range.0, j.junction_range.1],
        max_error_junction: c.max_error_junction,
        cold_junction: j.cj.as_ref().map(|cj| ColdJunctionJson {
            stage: &cj.stage,
            converter: &cj.converter,
            bits: cj.bits,
            signed: cj.signed,
            origin: origin_text(&cj.origin),
            curve: curve_json(&cj.curve),
            max_error: cj.max_error,
            codes: [cj.codes.0, cj.codes.1],
            samples: cj.samples,
        }),
    })
}

#[derive(Serialize)]
struct Converter<'a> {
    stage: &'a str,
    bits: u32,
    signed: bool,
    rising: bool,
}

#[derive(Serialize)]
struct Window<'a> {
    low: i64,
    high: i64,
    reach: [f64; 2],
    sigma_codes: f64,
    k: f64,
    rails: [i64; 2],
    /// Each summed channel's own window, checked before the sum.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    channels: Vec<ChannelWindowJson<'a>>,
}

#[derive(Serialize)]
struct ChannelWindowJson<'a> {
    channel: &'a str,
    low: i64,
    high: i64,
    sigma_codes: f64,
}

#[derive(Serialize)]
struct ConversionJson<'a> {
    /// `table` or `polynomial`.
    kind: &'static str,
    /// `chosen` (for `method exact`) or the spec's method.
    origin: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    codes: Option<&'a [f64]>,
    #[serde(skip_serializing_if = "Option::is_none")]
    values: Option<&'a [f64]>,
    #[serde(skip_serializing_if = "Option::is_none")]
    mid: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    half: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    coefficients: Option<&'a [f64]>,
    max_error: f64,
    max_error_at_code: f64,
    target: f64,
    target_basis: &'a str,
    samples: usize,
    description: String,
}

/// One fault: its verdict, its codes and, where detectable, the
/// threshold (`below` or `above`) and the constant the C and Rust exports
/// name it by.
#[derive(Serialize)]
struct FaultJson<'a> {
    stage: &'a str,
    fault: &'static str,
    condition: &'static str,
    verdict: &'static str,
    codes: Option<FaultCodes>,
    /// The summed channel whose own code `codes` and the threshold are.
    #[serde(skip_serializing_if = "Option::is_none")]
    channel: Option<&'a str>,
    below: Option<i64>,
    above: Option<i64>,
    constant: Option<String>,
    reason: Option<&'a str>,
}

fn fault_json(f: &FaultVerdict) -> FaultJson<'_> {
    let (below, above) = match f.threshold {
        Some(Threshold::Below(n)) => (Some(n), None),
        Some(Threshold::Above(n)) => (None, Some(n)),
        Some(Threshold::Outside(a, b)) => (Some(a), Some(b)),
        None => (None, None),
    };
    FaultJson {
        stage: &f.stage,
        fault: f.fault.kind.name(),
        condition: f.fault.kind.describe(),
        verdict: f.verdict.name(),
        codes: f.codes,
        channel: f.channel.as_deref(),
        below,
        above,
        constant: fault_name(f),
        reason: f.reason.as_deref(),
    }
}

#[derive(Serialize)]
struct AlarmJson<'a> {
    name: String,
    side: Side,
    limit: f64,
    guard_band: f64,
    trip: f64,
    trip_code: i64,
    code_at_limit: i64,
    trips_upward: bool,
    masked_by: &'a [String],
}

#[derive(Serialize)]
struct CalibrationJson<'a> {
    kind: &'a str,
    points: &'a [f64],
    uncertainty: &'a [Option<f64>],
    nominal_codes: &'a [f64],
    nominal_gain: f64,
    nominal_offset: f64,
}

pub fn render(export: &Export) -> String {
    let doc = Document {
        schema_version: 2,
        source: Source {
            path: &export.source.path,
            revision: export.source.revision.as_deref(),
        },
        caution: export
            .chains
            .iter()
            .any(ChainExport::needs_caution)
            .then_some(CAUTION),
        chains: export.chains.iter().map(chain).collect(),
    };
    let mut text = serde_json::to_string_pretty(&doc).unwrap_or_default();
    text.push('\n');
    text
}

fn chain(c: &ChainExport) -> ChainJson<'_> {
    let w = &c.window;
    ChainJson {
        chain: &c.chain,
        title: c.title.as_deref(),
        quantity: &c.quantity,
        unit: &c.unit,
        difference_unit: &c.difference_unit,
        range: [c.range.0, c.range.1],
        converter: Converter {
            stage: &c.converter,
            bits: c.bits,
            signed: c.signed,
            rising: c.rising,
        },
        average: c.average,
        window: Window {
            low: w.low,
            high: w.high,
            reach: [w.reach.0, w.reach.1],
            sigma_codes: w.sigma_codes,
            k: w.k,
            rails: [w.rails.0, w.rails.1],
            channels: w
                .channels
                .iter()
                .map(|ch| ChannelWindowJson {
                    channel: &ch.name,
                    low: ch.window.low,
                    high: ch.window.high,
                    sigma_codes: ch.window.sigma_codes,
                })
                .collect(),
        },
        faults: c.faults.iter().map(fault_json).collect(),
        conversion: conversion(c),
        alarms: c
            .alarms
            .iter()
            .zip(alarm_names(c))
            .map(|(a, name)| AlarmJson {
                name,
                side: a.side,
                limit: a.at,
                guard_band: a.guard_band,
                trip: a.trip_at,
                trip_code: a.trip_code,
                code_at_limit: a.code,
                trips_upward: a.trips_upward,
                masked_by: &a.masked_by,
            })
            .collect(),
        calibration: c.calibration.as_ref().map(|cal| CalibrationJson {
            kind: cal.kind,
            points: &cal.points,
            uncertainty: &cal.uncertainty,
            nominal_codes: &cal.nominal_codes,
            nominal_gain: cal.nominal.gain,
            nominal_offset: cal.nominal.offset,
        }),
        junction: junction(c),
    }
}

fn conversion(c: &ChainExport) -> ConversionJson<'_> {
    let origin = origin_text(&c.origin);
    let mut out = ConversionJson {
        kind: "table",
        origin,
        codes: None,
        values: None,
        mid: None,
        half: None,
        coefficients: None,
        max_error: c.max_error,
        max_error_at_code: c.max_error_at,
        target: c.target,
        target_basis: &c.target_basis,
        samples: c.samples,
        description: conversion_words(c),
    };
    match &c.curve {
        Curve::Table { codes, values } => {
            out.codes = Some(codes);
            out.values = Some(values);
        }
        Curve::Polynomial {
            mid,
            half,
            coefficients,
        } => {
            out.kind = "polynomial";
            out.mid = Some(*mid);
            out.half = Some(*half);
            out.coefficients = Some(coefficients);
        }
    }
    out
}
