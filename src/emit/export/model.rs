//! What a firmware export holds for one chain, computed once from the
//! plan and written by each language's renderer: the code-to-reading
//! conversion (a breakpoint table or a polynomial) with its largest error
//! against the exact inverse over the valid code window, the window
//! itself, the alarm trip codes, and the calibration's points and
//! nominal constants.
//!
//! Readings are in the measurand's unit as the spec writes it (`degC`,
//! `kg`); errors in its difference unit (`K`). The window, the fault
//! verdicts with their thresholds and the faults that mask each alarm are
//! the fault analysis's own result (`analysis::faults`), taken as it is.

use super::junction::{junction, measuring_couple, Inputs, Junction, Worst};
use crate::analysis::alarms::alarm_limits;
use crate::analysis::budget;
use crate::analysis::faults::{self, FaultReport, FaultVerdict};
use crate::analysis::window::CodeWindow;
use crate::eval::node::Convert;
use crate::eval::{
    Calibrated, Calibration, Conversion, Env, EvalError, Method, Node, Plan, SlotId,
};
use crate::model::requirement::RequirementKind;
use crate::model::schema;
use crate::model::typed::ConversionMethod;
use crate::model::value::{Basis, ParamValue};
use crate::model::{Chain, Side};
use crate::physics::adc::Polarity;
use crate::physics::thermocouple::ThermocoupleType;
use crate::units::format::from_si;

/// The conversion error an exported table is held to: this fraction of
/// the accuracy requirement (common practice: an error a tenth of the
/// budget adds half a percent to it in quadrature).
pub const TARGET_FRACTION: f64 = 0.1;
/// Without an accuracy requirement: this fraction of the finest code
/// step in the window (the conversion then errs less than quantization).
pub const TARGET_LSB_FRACTION: f64 = 0.5;
/// The fewest and most breakpoints a chosen table has.
const MIN_BREAKPOINTS: usize = 9;
pub const MAX_BREAKPOINTS: usize = 4097;
/// Codes the error is evaluated at: every code of a window up to this
/// wide, otherwise this many evenly spaced across it.
const ERROR_SAMPLES: usize = 65_537;

/// Where the constants came from.
#[derive(Clone, Debug, PartialEq)]
pub struct Provenance {
    /// The spec's path as given.
    pub path: String,
    /// The git revision of the repository holding it, with
    /// ` (uncommitted changes)` when the spec differs from it.
    pub revision: Option<String>,
}

/// The code-to-reading function, in the reading's unit.
#[derive(Clone, Debug, PartialEq)]
pub enum Curve {
    /// Linear interpolation between breakpoints (codes increasing), the
    /// end segments extended beyond them.
    Table { codes: Vec<f64>, values: Vec<f64> },
    /// Σ c_k u^k with u = (code − mid) / half.
    Polynomial {
        mid: f64,
        half: f64,
        coefficients: Vec<f64>,
    },
}

impl Curve {
    /// The reading before calibration, with the arithmetic the exported
    /// code uses.
    pub fn at(&self, code: f64) -> f64 {
        match self {
            Curve::Table { codes, values } => {
                let n = codes.len();
                // The segment whose upper breakpoint is the first above the code.
                let k = codes.partition_point(|&c| c <= code).clamp(1, n - 1);
                let (c0, c1, v0, v1) = (codes[k - 1], codes[k], values[k - 1], values[k]);
                v0 + (code - c0) * (v1 - v0) / (c1 - c0)
            }
            Curve::Polynomial {
                mid,
                half,
                coefficients,
            } => {
                let u = (code - mid) / half;
                coefficients.iter().rev().fold(0.0, |acc, c| acc * u + c)
            }
        }
    }
}

/// Where the curve comes from.
#[derive(Clone, Debug, PartialEq)]
pub enum Origin {
    /// `method exact`: breakpoints chosen here, evenly spaced in code over
    /// the window, as few as meet the target.
    Chosen,
    /// The spec's own approximation (`table n`, `linear`, `poly n`), as the
    /// budget counts it.
    Spec(String),
}

/// The firmware's correction: reading = gain × uncalibrated + offset.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Affine {
    pub gain: f64,
    pub offset: f64,
}

#[derive(Clone, Debug, PartialEq)]
pub struct CalibrationExport {
    /// `offset` or `two_point`.
    pub kind: &'static str,
    /// Where it is taken (the reading's unit), at the reference ambient.
    pub points: Vec<f64>,
    /// The calibration reference's stated uncertainty at each point
    /// (difference unit; None where none is stated).
    pub uncertainty: Vec<Option<f64>>,
    /// The nominal chain's exact codes at the points: what bring-up
    /// should see.
    pub nominal_codes: Vec<f64>,
    /// The correction the nominal chain gives, computed through the
    /// exported curve as the firmware computes it.
    pub nominal: Affine,
}

#[derive(Clone, Debug, PartialEq)]
pub struct AlarmExport {
    pub side: Side,
    /// The limit and where the trip is set, in the reading's unit.
    pub at: f64,
    pub trip_at: f64,
    /// The guard band between them (difference unit).
    pub guard_band: f64,
    /// The nominal code at the limit and at the trip (reference ambient).
    pub code: i64,
    pub trip_code: i64,
    /// The alarm trips at codes at or above `trip_code` (else at or below).
    pub trips_upward: bool,
    /// The faults firmware cannot tell from a reading whose codes can lie
    /// on the safe side of the trip (`stage fault`).
    pub masked_by: Vec<String>,
}

#[derive(Clone, Debug, PartialEq)]
pub struct ChainExport {
    pub chain: String,
    /// It trips or alarms, or says it protects people or property.
    pub protective: bool,
    pub title: Option<String>,
    pub quantity: String,
    /// The reading's unit (`degC`) and its difference unit (`K`).
    pub unit: String,
    pub difference_unit: String,
    /// The measurand range, in `unit`.
    pub range: (f64, f64),
    pub converter: String,
    pub bits: u32,
    pub signed: bool,
    /// Codes rise with the measurand.
    pub rising: bool,
    /// Samples averaged per reading.
    pub average: u32,
    pub curve: Curve,
    pub origin: Origin,
    /// The largest difference between the exported reading (curve and
    /// nominal calibration) and catena's exact inverse, over the window.
    pub max_error: f64,
    /// Where it is largest (a code).
    pub max_error_at: f64,
    /// The target and what it is (`a tenth of the accuracy requirement`).
    pub target: f64,
    pub target_basis: String,
    /// Codes the error was evaluated at.
    pub samples: usize,
    pub window: CodeWindow,
    /// Every fault of the stages feeding the converter, with its verdict
    /// and, where detectable, the firmware's threshold.
    pub faults: Vec<FaultVerdict>,
    pub alarms: Vec<AlarmExport>,
    pub calibration: Option<CalibrationExport>,
    /// For a thermocouple chain: the conversion with the cold junction
    /// (`curve` is then its code-to-EMF table), and the junction
    /// temperature (reading unit) where the error is largest.
    pub junction: Option<Junction>,
    pub max_error_junction: Option<f64>,
}

impl ChainExport {
    /// The exported reading with the nominal calibration.
    pub fn reading(&self, code: f64) -> f64 {
        let x = self.curve.at(code);
        match &self.calibration {
            Some(c) => c.nominal.gain * x + c.nominal.offset,
            None => x,
        }
    }

    /// Whether the chain trips anything or protects people or property:
    /// its export carries the caution.
    pub fn needs_caution(&self) -> bool {
        self.protective
    }
}

/// Why a chain cannot be exported.
#[derive(Clone, Debug, PartialEq)]
pub enum ExportError {
    Eval(EvalError),
    /// A conversion the export does not write yet: `input` says what it
    /// converts with (a thermocouple's cold junction and a calibration).
    Unsupported {
        stage: String,
        input: String,
    },
}

impl From<EvalError> for ExportError {
    fn from(e: EvalError) -> Self {
        ExportError::Eval(e)
    }
}

/// The export of `chain`, whose plan has its conversion fitted.
pub fn chain_export(chain: &Chain, plan: &Plan) -> Result<ChainExport, ExportError> {
    let (convert, couple, with_junction) = exportable_conversion(plan)?;
    let conversion = &convert.conversion;
    let Node::Adc(adc) = &plan.nodes[plan.adc.index()] else {
        return Err(numeric(plan, "no converter").into());
    };
    let measurand = chain
        .measurand
        .as_ref()
        .ok_or_else(|| numeric(plan, "no measurand"))?;
    let unit = measurand.unit.clone();
    let to_unit = |x: f64| from_si(x, &unit);
    let report = faults::analyse(chain, plan)?;
    let window = report.window.clone();
    let exact = Exact::new(plan, conversion)?;
    let samples = sample_codes(&window);
    let truth = samples
        .iter()
        .map(|&c| exact.reading(c).map(to_unit))
        .collect::<Result<Vec<_>, _>>()?;
    let (target, target_basis) = target(chain, &samples, &truth);
    let (junction, worst) = match couple {
        Some(couple) if with_junction => {
            let (j, worst) = junction(&Inputs {
                plan,
                conversion,
                cj: convert.cj,
                couple,
                window: &window,
                samples: &samples,
                target,
                to_unit: &to_unit,
                ambient: chain.ambient,
            })?;
            (Some(j), Some(worst))
        }
        _ => (None, None),
    };
    let (curve, origin) = match (&junction, spec_curve(conversion, &to_unit)) {
        (Some(j), _) => (j.emf.clone(), Origin::Chosen),
        (None, Some((curve, method))) => (curve, Origin::Spec(method)),
        (None, None) => (
            chosen_table(&exact, &window, &samples, target, &to_unit)?,
            Origin::Chosen,
        ),
    };
    let calibration = calibration(plan, conversion, &curve, &to_unit)?;
    let mut export = ChainExport {
        chain: chain.name.clone(),
        title: chain.label.clone(),
        quantity: measurand.quantity.clone(),
        difference_unit: chain.difference_unit().0,
        range: (to_unit(measurand.low), to_unit(measurand.high)),
        unit: unit.clone(),
        converter: plan.names[plan.adc.index()].clone(),
        bits: adc.bits,
        signed: adc.polarity == Polarity::Bipolar,
        rising: exact.code_at(plan.range.1)? > exact.code_at(plan.range.0)?,
        average: average(chain, plan),
        curve,
        origin,
        max_error: 0.0,
        max_error_at: samples[0],
        target,
        target_basis,
        samples: samples.len(),
        window: window.clone(),
        alarms: alarms(chain, plan, &report, &to_unit)?,
        faults: report.faults,
        protective: chain.is_protective(),
        calibration,
        junction,
        max_error_junction: None,
    };
    for a in &mut export.alarms {
        a.trips_upward = (a.side == Side::High) == export.rising;
    }
    set_largest_error(&mut export, worst, &samples, &truth);
    Ok(export)
}

/// The plan's conversion, the thermocouple it measures with (if any) and
/// whether the export converts with the cold junction; an error for a
/// conversion the export does not write.
fn exportable_conversion(
    plan: &Plan,
) -> Result<(&Convert, Option<ThermocoupleType>, bool), ExportError> {
    let Node::Convert(convert) = &plan.nodes[plan.reading.index()] else {
        return Err(numeric(plan, "no conversion").into());
    };
    let couple = measuring_couple(plan);
    let conversion = &convert.conversion;
    // An approximation (`table`, `linear`, `poly`) reads the code alone.
    let with_junction =
        conversion.method == Method::Exact && (convert.cj.is_some() || couple.is_some());
    let refused = |input: &str| ExportError::Unsupported {
        stage: plan.names[plan.reading.index()].clone(),
        input: input.to_string(),
    };
    match (with_junction, couple) {
        (true, None) => Err(refused("a cold junction but no thermocouple")),
        (true, Some(_)) if conversion.calibration != Calibration::None => {
            Err(refused("the cold junction's temperature and a calibration"))
        }
        _ => Ok((convert, couple, with_junction)),
    }
}

/// The export's largest error and where it is: the junction conversion's
/// own search where there is one, otherwise over the sampled codes.
fn set_largest_error(
    export: &mut ChainExport,
    worst: Option<Worst>,
    samples: &[f64],
    truth: &[f64],
) {
    match worst {
        Some(w) => {
            (export.max_error, export.max_error_at) = (w.error, w.code);
            export.max_error_junction = Some(w.junction);
            export.samples = w.points;
        }
        None => {
            (export.max_error, export.max_error_at) =
                largest_error(samples, truth, |c| export.reading(c));
        }
    }
}

/// Catena's exact inverse of the nominal chain with the calibration it
/// gives, in the reading's unit, at each code: what an export's error is
/// measured against (and what tests hold an exported program to).
/// `junction`: the cold junction's temperature (reading unit), for a
/// thermocouple chain converting with it.
pub fn exact_readings(
    chain: &Chain,
    plan: &Plan,
    codes: &[f64],
    junction: Option<f64>,
) -> Result<Vec<f64>, ExportError> {
    let Node::Convert(crate::eval::node::Convert { conversion, .. }) =
        &plan.nodes[plan.reading.index()]
    else {
        return Err(numeric(plan, "no conversion").into());
    };
    let unit = chain
        .measurand
        .as_ref()
        .map(|m| m.unit.clone())
        .unwrap_or_default();
    let exact = Exact::new(plan, conversion)?;
    let cj = junction.map(|t| crate::units::format::to_si(t, &unit));
    codes
        .iter()
        .map(|&c| {
            let x = match cj {
                Some(cj) => exact.reading_at_junction(c, cj)?,
                None => exact.reading(c)?,
            };
            Ok(from_si(x, &unit))
        })
        .collect()
}

fn numeric(plan: &Plan, what: &str) -> EvalError {
    EvalError::Numeric {
        stage: plan.names[plan.reading.index()].clone(),
        what: what.to_string(),
    }
}

/// Catena's exact inverse of the nominal chain with the calibration it
/// gives: the reference every exported reading is measured against.
pub(super) struct Exact<'a> {
    plan: &'a Plan,
    conversion: Conversion,
    calibrated: Calibrated,
    env: Env,
}

impl<'a> Exact<'a> {
    pub(super) fn new(plan: &'a Plan, spec: &Conversion) -> Result<Self, EvalError> {
        let env = reference_env(plan, 0.5 * (plan.range.0 + plan.range.1));
        let mut conversion = spec.clone();
        if conversion.method != Method::Exact {
            conversion
                .fit(plan, &env, ConversionMethod::Exact, true, None)
                .map_err(|what| EvalError::NotInvertible {
                    stage: plan.names[plan.reading.index()].clone(),
                    what,
                })?;
        }
        let codes = calibration_codes(plan, &conversion)?;
        let calibrated = conversion.calibrated_from(plan, &plan.nominal, &codes)?;
        Ok(Exact {
            plan,
            conversion,
            calibrated,
            env,
        })
    }

    /// The calibrated reading for `code`, SI.
    fn reading(&self, code: f64) -> Result<f64, EvalError> {
        let x = self.uncalibrated(code)?;
        self.conversion.correct(self.plan, x, &self.calibrated)
    }

    pub(super) fn uncalibrated(&self, code: f64) -> Result<f64, EvalError> {
        self.conversion
            .invert(self.plan, &self.plan.nominal, &self.env, code, None)
    }

    /// The uncalibrated reading with the cold junction at `cj` (K), SI.
    pub(super) fn at_junction(&self, code: f64, cj: f64) -> Result<f64, EvalError> {
        self.conversion
            .invert(self.plan, &self.plan.nominal, &self.env, code, Some(cj))
    }

    /// The calibrated reading with the cold junction at `cj` (K), SI.
    pub(super) fn reading_at_junction(&self, code: f64, cj: f64) -> Result<f64, EvalError> {
        let x = self.at_junction(code, cj)?;
        self.conversion.correct(self.plan, x, &self.calibrated)
    }

    fn code_at(&self, measurand: f64) -> Result<f64, EvalError> {
        let env = reference_env(self.plan, measurand);
        self.plan
            .exact_code(&self.plan.nominal, &env, self.plan.adc)
    }
}

/// A point at the reference ambient, where calibrations are taken.
fn reference_env(plan: &Plan, measurand: f64) -> Env {
    Env {
        measurand,
        ambient: plan.reference,
        cold_junction: plan.reference,
    }
}

/// The nominal chain's exact codes at the calibration's points.
fn calibration_codes(plan: &Plan, conversion: &Conversion) -> Result<[f64; 2], EvalError> {
    let mut codes = [0.0; 2];
    for (code, p) in codes.iter_mut().zip(conversion.calibration_points()) {
        *code = plan.exact_code(&plan.nominal, &reference_env(plan, p), plan.adc)?;
    }
    Ok(codes)
}

/// The codes the error is measured at: every code of the window, or an
/// even spread when it is wider than [`ERROR_SAMPLES`].
fn sample_codes(window: &CodeWindow) -> Vec<f64> {
    let width = (window.high - window.low) as usize + 1;
    if width <= ERROR_SAMPLES {
        (window.low..=window.high).map(|c| c as f64).collect()
    } else {
        crate::eval::grid((window.low as f64, window.high as f64), ERROR_SAMPLES)
    }
}

/// The error target and its basis, in the difference unit.
fn target(chain: &Chain, samples: &[f64], truth: &[f64]) -> (f64, String) {
    let (diff_unit, factor) = chain.difference_unit();
    let accuracy = chain
        .requirements
        .iter()
        .find(|r| matches!(r.kind, RequirementKind::Accuracy(_)))
        .and_then(|r| match &r.value {
            ParamValue::Limit(t) if t.basis == Basis::Reading => {
                // The tightest: at the range end nearest the unit's zero;
                // none where the range holds the zero (the half-LSB basis).
                let m = chain.measurand.as_ref()?;
                let (a, b) = (from_si(m.low, &m.unit), from_si(m.high, &m.unit));
                let limit = t.plus.max(t.minus) * a.abs().min(b.abs());
                (a * b > 0.0 && limit > 0.0).then_some(limit)
            }
            ParamValue::Limit(t) => Some(t.plus.max(t.minus) * factor),
            _ => None,
        });
    if let Some(a) = accuracy {
        let text = format!(
            "{} x the accuracy requirement of +/- {} {diff_unit}",
            crate::units::format::trimmed(TARGET_FRACTION, 3),
            crate::units::format::trimmed(a, 6)
        );
        return (TARGET_FRACTION * a, text);
    }
    // The finest step between neighbouring samples, per code.
    let finest = samples
        .windows(2)
        .zip(truth.windows(2))
        .map(|(c, x)| ((x[1] - x[0]) / (c[1] - c[0])).abs())
        .filter(|s| *s > 0.0)
        .fold(f64::INFINITY, f64::min);
    let finest = if finest.is_finite() { finest } else { 0.0 };
    (
        TARGET_LSB_FRACTION * finest,
        "half the finest code step in the window (no accuracy requirement)".to_string(),
    )
}

/// The spec's own approximation as a curve in the reading's unit; None
/// for `method exact`.
pub(super) fn spec_curve(
    conversion: &Conversion,
    to_unit: &dyn Fn(f64) -> f64,
) -> Option<(Curve, String)> {
    // The unit map is affine: a + b x.
    let a = to_unit(0.0);
    let b = to_unit(1.0) - a;
    match &conversion.method {
        Method::Exact => None,
        Method::Table { codes, xs, .. } => {
            let mut pairs: Vec<(f64, f64)> = codes
                .iter()
                .zip(xs)
                .map(|(&c, &x)| (c, to_unit(x)))
                .collect();
            pairs.sort_by(|p, q| p.0.total_cmp(&q.0));
            let (codes, values) = pairs.into_iter().unzip();
            let n = xs.len();
            Some((Curve::Table { codes, values }, format!("table {n}")))
        }
        Method::Linear {
            code_low,
            code_high,
        } => {
            let (x0, x1) = (to_unit(conversion.range.0), to_unit(conversion.range.1));
            Some((
                Curve::Polynomial {
                    mid: 0.5 * (code_low + code_high),
                    half: 0.5 * (code_high - code_low),
                    coefficients: vec![0.5 * (x0 + x1), 0.5 * (x1 - x0)],
                },
                "linear".to_string(),
            ))
        }
        Method::Poly {
            coefficients,
            mid,
            half,
        } => {
            let mut c: Vec<f64> = coefficients.iter().map(|k| b * k).collect();
            if let Some(c0) = c.first_mut() {
                *c0 += a;
            }
            let degree = coefficients.len().saturating_sub(1);
            Some((
                Curve::Polynomial {
                    mid: *mid,
                    half: *half,
                    coefficients: c,
                },
                format!("poly {degree}"),
            ))
        }
    }
}

/// The smallest table, evenly spaced in code over the window (9, 17, 33 …
/// breakpoints), whose uncalibrated error against the exact inverse stays
/// within `target`; the largest tried when none does.
fn chosen_table(
    exact: &Exact,
    window: &CodeWindow,
    samples: &[f64],
    target: f64,
    to_unit: &dyn Fn(f64) -> f64,
) -> Result<Curve, EvalError> {
    // The uncalibrated truth: a calibration maps both sides alike.
    let raw: Vec<f64> = samples
        .iter()
        .map(|&c| exact.uncalibrated(c).map(to_unit))
        .collect::<Result<_, _>>()?;
    let build = |n: usize| {
        let codes = crate::eval::grid((window.low as f64, window.high as f64), n);
        let values = codes
            .iter()
            .map(|&c| exact.uncalibrated(c).map(to_unit))
            .collect::<Result<Vec<_>, _>>()?;
        Ok(Curve::Table { codes, values })
    };
    chosen_size(window, target, build, |curve: &Curve| {
        largest_error(samples, &raw, |c| curve.at(c)).0
    })
}

/// The first of `build(9)`, `build(17)`, `build(33)` … whose error meets
/// `target`, or the largest tried ([`MAX_BREAKPOINTS`], or as many as the
/// window has codes).
pub(super) fn chosen_size<T>(
    window: &CodeWindow,
    target: f64,
    build: impl Fn(usize) -> Result<T, EvalError>,
    error_of: impl Fn(&T) -> f64,
) -> Result<T, EvalError> {
    let mut n = MIN_BREAKPOINTS;
    loop {
        let made = build(n)?;
        let last = n >= MAX_BREAKPOINTS || window.high - window.low < n as i64;
        if last || error_of(&made) <= target {
            return Ok(made);
        }
        n = 2 * n - 1;
    }
}

/// The largest |f(c) − truth| over the samples, and the code where.
pub(super) fn largest_error(samples: &[f64], truth: &[f64], f: impl Fn(f64) -> f64) -> (f64, f64) {
    samples
        .iter()
        .zip(truth)
        .map(|(&c, &x)| ((f(c) - x).abs(), c))
        .fold(
            (0.0, samples[0]),
            |best, e| if e.0 > best.0 { e } else { best },
        )
}

/// The calibration's points, stated uncertainties and nominal constants,
/// the constants worked out through the exported curve as the firmware
/// will work them out from the codes it measures.
fn calibration(
    plan: &Plan,
    conversion: &Conversion,
    curve: &Curve,
    to_unit: &dyn Fn(f64) -> f64,
) -> Result<Option<CalibrationExport>, EvalError> {
    let slot = |s: Option<SlotId>| {
        s.map(|s| &plan.slots[s.index()])
            .map(|s| s.plus.max(s.minus))
    };
    let (kind, uncertainty) = match conversion.calibration {
        Calibration::None => return Ok(None),
        Calibration::Offset { error, .. } => ("offset", vec![slot(error)]),
        Calibration::TwoPoint { errors, .. } => ("two_point", vec![slot(errors.0), slot(errors.1)]),
    };
    let points: Vec<f64> = conversion.calibration_points().map(to_unit).collect();
    let codes = calibration_codes(plan, conversion)?;
    let codes = codes[..points.len()].to_vec();
    let nominal = affine_from(&points, &codes, curve)
        .ok_or_else(|| numeric(plan, "the calibration points give the same reading"))?;
    Ok(Some(CalibrationExport {
        kind,
        points,
        uncertainty,
        nominal_codes: codes,
        nominal,
    }))
}

/// The correction from the codes seen at the calibration points, as the
/// exported `calibrate` function computes it (None where two points read
/// alike).
pub fn affine_from(points: &[f64], codes: &[f64], curve: &Curve) -> Option<Affine> {
    match (points, codes) {
        ([p], [c]) => Some(Affine {
            gain: 1.0,
            offset: p - curve.at(*c),
        }),
        ([p1, p2], [c1, c2]) => {
            let (r1, r2) = (curve.at(*c1), curve.at(*c2));
            if r1 == r2 {
                return None;
            }
            let gain = (p2 - p1) / (r2 - r1);
            Some(Affine {
                gain,
                offset: p1 - gain * r1,
            })
        }
        _ => None,
    }
}

/// The alarms' trip codes, with the guard band the budget demands and the
/// faults that would mask them, as the fault analysis gives them.
fn alarms(
    chain: &Chain,
    plan: &Plan,
    report: &FaultReport,
    to_unit: &dyn Fn(f64) -> f64,
) -> Result<Vec<AlarmExport>, EvalError> {
    let k = budget::Options::default().k;
    let (_, factor) = chain.difference_unit();
    let limits = alarm_limits(chain, plan, k)?;
    Ok(faults::maskings(chain, plan, report, limits)?
        .into_iter()
        .map(|m| {
            let a = m.alarm;
            AlarmExport {
                // Set from the chain's direction once it is known.
                trips_upward: true,
                side: a.side,
                at: to_unit(a.at),
                trip_at: to_unit(a.trip_at),
                guard_band: a.guard_band * factor,
                code: a.code,
                trip_code: a.trip_code,
                masked_by: m
                    .faults
                    .iter()
                    .map(|&i| {
                        let f = &report.faults[i];
                        format!("{} {}", f.stage, f.fault.kind.name())
                    })
                    .collect(),
            }
        })
        .collect())
}

/// Samples the firmware averages per reading.
fn average(chain: &Chain, plan: &Plan) -> u32 {
    chain
        .stages
        .iter()
        .find(|s| s.name == plan.names[plan.reading.index()])
        .and_then(|s| match s.param(schema::param::AVERAGE) {
            Some(ParamValue::Count(n)) => Some(*n),
            Some(ParamValue::Measure(m)) => Some(m.nominal as u32),
            _ => None,
        })
        .unwrap_or(1)
        .max(1)
}
