//! Resistance temperature detectors.
//!
//! Platinum: Callendar–Van Dusen equation and tolerance classes of
//! IEC 60751:2008 "Industrial platinum resistance thermometers and platinum
//! temperature sensors", clause 4 and Table 1:
//!
//! * t ≥ 0 °C: R = R0 (1 + A t + B t²)
//! * t < 0 °C: R = R0 (1 + A t + B t² + C (t − 100 °C) t³)
//!
//! with A = 3.9083e-3 °C⁻¹, B = −5.775e-7 °C⁻², C = −4.183e-12 °C⁻⁴, valid
//! −200 °C … 850 °C. Temperatures are °C (ITS-90), resistances Ω.
//!
//! Nickel: the DIN 43760 (1987) polynomial for Ni100-type elements,
//! α = 0.00618 /K. Copper: linear model with α = 0.00427 /K, which is the
//! annealed-copper coefficient 0.00393 /K at 20 °C of IEC 60028 (1925)
//! re-referred to 0 °C.

use super::solve::{newton_bracketed, Root, Stop};

/// Why an RTD computation has no answer.
#[derive(Debug, Clone, Copy, PartialEq, Eq, thiserror::Error)]
pub enum RtdError {
    /// An input was NaN or infinite.
    #[error("input is not a finite number")]
    NonFinite,
    /// A resistance, R0 or dissipation constant was zero or negative.
    #[error("resistance or constant must be positive")]
    NonPositive,
    /// The coefficients do not describe an increasing characteristic (A ≤ 0).
    #[error("coefficient A must be positive")]
    InvalidCoefficients,
    /// The resistance lies outside the branch the model can invert.
    #[error("resistance outside the invertible range")]
    OutOfRange,
    /// The root search did not converge.
    #[error("root search did not converge")]
    NoConvergence,
}

/// Callendar–Van Dusen coefficients (A in °C⁻¹, B in °C⁻², C in °C⁻⁴).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CvdCoefficients {
    pub a: f64,
    pub b: f64,
    pub c: f64,
}

impl CvdCoefficients {
    /// The coefficients of IEC 60751:2008, clause 4.2 (α = 3.851e-3 /°C).
    pub const IEC_60751: CvdCoefficients = CvdCoefficients {
        a: 3.9083e-3,
        b: -5.775e-7,
        c: -4.183e-12,
    };
}

/// W = R/R0 at `t_c` (°C).
fn ratio(k: CvdCoefficients, t: f64) -> f64 {
    let base = 1.0 + t * (k.a + k.b * t);
    if t < 0.0 {
        base + k.c * (t - 100.0) * t * t * t
    } else {
        base
    }
}

/// Resistance in Ω at `t_c` °C of an element with `r0` Ω at 0 °C.
///
/// Defined for every finite `t_c` (non-finite input gives a non-finite
/// result); the equation is specified for −200 °C … 850 °C and is an
/// extrapolation outside it.
pub fn resistance(r0: f64, coeffs: CvdCoefficients, t_c: f64) -> f64 {
    r0 * ratio(coeffs, t_c)
}

/// Slope dR/dt in Ω/°C at `t_c` °C.
pub fn d_resistance_dt(r0: f64, coeffs: CvdCoefficients, t_c: f64) -> f64 {
    let t = t_c;
    let base = coeffs.a + 2.0 * coeffs.b * t;
    let slope = if t < 0.0 {
        base + coeffs.c * (4.0 * t * t * t - 300.0 * t * t)
    } else {
        base
    };
    r0 * slope
}

/// Temperature in °C at which the element reads `r` Ω.
///
/// At or above 0 °C (R ≥ R0) the quadratic is solved in closed form; below,
/// the full quartic (C term included) is solved by Newton's method kept
/// inside a bracket down to −273.15 °C. Dropping the C term instead would be
/// about 2.4 °C wrong at −200 °C.
pub fn temperature(r0: f64, coeffs: CvdCoefficients, r: f64) -> Result<f64, RtdError> {
    let k = coeffs;
    if ![r0, r, k.a, k.b, k.c].iter().all(|v| v.is_finite()) {
        return Err(RtdError::NonFinite);
    }
    if r0 <= 0.0 || r <= 0.0 {
        return Err(RtdError::NonPositive);
    }
    if k.a <= 0.0 {
        return Err(RtdError::InvalidCoefficients);
    }
    let w = r / r0;
    if w >= 1.0 {
        quadratic_root(k, w - 1.0).ok_or(RtdError::OutOfRange)
    } else {
        below_zero(k, w)
    }
}

/// Root of A t + B t² = d on the branch through t = 0.
fn quadratic_root(k: CvdCoefficients, d: f64) -> Option<f64> {
    let disc = k.a * k.a + 4.0 * k.b * d;
    if disc < 0.0 {
        return None; // beyond the vertex of the parabola
    }
    // Rationalised form: no cancellation when B·t is small against A.
    Some(2.0 * d / (k.a + disc.sqrt()))
}

fn below_zero(k: CvdCoefficients, w: f64) -> Result<f64, RtdError> {
    let g = |t: f64| ratio(k, t) - w;
    let (lo, hi) = (-super::constants::ZERO_CELSIUS, 0.0_f64);
    if g(lo) > 0.0 {
        return Err(RtdError::OutOfRange);
    }
    // The quadratic without C is a good first guess (within ~2.4 °C).
    let t = match quadratic_root(k, w - 1.0) {
        Some(t0) if t0 > lo && t0 < hi => t0,
        _ => 0.5 * (lo + hi),
    };
    root(|t| (g(t), d_resistance_dt(1.0, k, t)), (lo, hi), t)
}

/// Steps below this end an inverse, °C.
const STEP_TOL_C: f64 = 1e-12;

/// The root of a rising `f` (value, slope) by bracketed Newton.
fn root(f: impl Fn(f64) -> (f64, f64), bracket: (f64, f64), start: f64) -> Result<f64, RtdError> {
    let stop = Stop {
        step: STEP_TOL_C,
        stalled_residual: 0.0,
        max_iter: 200,
    };
    match newton_bracketed(|t| Ok::<_, RtdError>(f(t)), bracket, start, stop)? {
        Root::Exact(t) | Root::Converged(t) => Ok(t),
        Root::Exhausted(_) => Err(RtdError::NoConvergence),
    }
}

/// Tolerance classes of IEC 60751:2008, Table 1.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ToleranceClass {
    /// ±(0.10 + 0.0017 |t|) °C
    AA,
    /// ±(0.15 + 0.002 |t|) °C
    A,
    /// ±(0.30 + 0.005 |t|) °C
    B,
    /// ±(0.60 + 0.01 |t|) °C
    C,
}

impl ToleranceClass {
    /// Validity range in °C for **wire-wound** resistors (IEC 60751:2008,
    /// Table 1). Film resistors have narrower ranges and are not modelled
    /// here. A and B ranges agree with a published summary of the table;
    /// the AA and C ranges are recalled from memory.
    pub fn wire_wound_range_c(self) -> (f64, f64) {
        match self {
            ToleranceClass::AA => (-50.0, 250.0),
            ToleranceClass::A => (-100.0, 450.0),
            ToleranceClass::B => (-196.0, 600.0),
            ToleranceClass::C => (-196.0, 600.0),
        }
    }

    /// (constant part in K, part proportional to |t| in K/°C).
    fn terms(self) -> (f64, f64) {
        match self {
            ToleranceClass::AA => (0.10, 0.0017),
            ToleranceClass::A => (0.15, 0.002),
            ToleranceClass::B => (0.30, 0.005),
            ToleranceClass::C => (0.60, 0.01),
        }
    }
}

/// Half-width in K of the class tolerance at `t_c` °C for a wire-wound
/// element, or `None` outside the class's validity range (or for NaN).
pub fn tolerance_k(class: ToleranceClass, t_c: f64) -> Option<f64> {
    let (lo, hi) = class.wire_wound_range_c();
    if !(t_c >= lo && t_c <= hi) {
        return None;
    }
    let (fixed, prop) = class.terms();
    Some(fixed + prop * t_c.abs())
}

/// A tolerance class as the deviations it comes from: the element's R0 and
/// its temperature coefficient, each a relative tolerance (limits ±).
///
/// IEC 60751:2008 Table 1 states the class as a limit on the deviation,
/// ±(a + b|t|); physically an element deviates by its R0 (a shift that is
/// a at 0 °C) and by its slope (which grows with |t|). Modelled as
/// R = R0 (1 + ε0) (1 + (1 + εα)(W(t) − 1)), with W the IEC 60751 ratio, a
/// two-point calibration removes what it really removes (nearly all of
/// both), and no kink at 0 °C is left to stay behind. The bounds are chosen
/// so the worst case of both stays within the class limit over the class's
/// range: ε0 gives exactly a at 0 °C, εα is the largest that keeps every
/// combination of signs within ±(a + b|t|) across the range. This split is
/// a modelling assumption of ours, not a clause of the standard.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ClassDeviation {
    /// Relative tolerance of R0.
    pub r0: f64,
    /// Relative tolerance of the temperature coefficient (of W − 1).
    pub alpha: f64,
}

/// Points across a class's range at which [`class_deviation`] bounds εα.
const CLASS_GRID: usize = 2000;

/// The R0 and coefficient tolerances of `class` (see [`ClassDeviation`]).
pub fn class_deviation(class: ToleranceClass) -> ClassDeviation {
    let k = CvdCoefficients::IEC_60751;
    let (a_k, b_k) = class.terms();
    let r0 = ratio(k, a_k) - 1.0;
    let (lo, hi) = class.wire_wound_range_c();
    // W is monotonic, so a deviation within ±L at t is a resistance within
    // W(t − L) … W(t + L): for each sign of each tolerance that is a bound
    // on εα, exact and without an inverse.
    let alpha = (0..=CLASS_GRID)
        .map(|i| lo + (hi - lo) * i as f64 / CLASS_GRID as f64)
        .flat_map(|t| {
            let w = ratio(k, t);
            let limit = a_k + b_k * t.abs();
            let (low, high) = (ratio(k, t - limit), ratio(k, t + limit));
            [(1.0, 1.0), (1.0, -1.0), (-1.0, 1.0), (-1.0, -1.0)].map(|(s0, sa)| {
                let shifted = (1.0 + s0 * r0) * w;
                let per_alpha = sa * (1.0 + s0 * r0) * (w - 1.0);
                if per_alpha > 1e-12 {
                    (high - shifted) / per_alpha
                } else if per_alpha < -1e-12 {
                    (low - shifted) / per_alpha
                } else {
                    f64::INFINITY
                }
            })
        })
        .fold(f64::INFINITY, f64::min);
    ClassDeviation { r0, alpha }
}

/// The resistance of an element that deviates from its curve by `r0_dev`
/// in R0 and `alpha_dev` in its coefficient (both relative), given the
/// curve's resistance `r_curve` at the temperature and its nominal `r0`.
#[inline]
pub fn deviated_resistance(r_curve: f64, r0: f64, r0_dev: f64, alpha_dev: f64) -> f64 {
    (1.0 + r0_dev) * (r0 + (1.0 + alpha_dev) * (r_curve - r0))
}

/// Nickel polynomial R = R0 (1 + A t + B t² + D t⁴ + F t⁶).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NickelCoefficients {
    pub a: f64,
    pub b: f64,
    pub d: f64,
    pub f: f64,
}

impl NickelCoefficients {
    /// DIN 43760 (1987) Ni100 curve, −60 °C … 180 °C, α(0…100 °C) = 0.00618 /K.
    /// Coefficients recalled from memory of the standard: A = 5.485e-3 °C⁻¹,
    /// B = 6.650e-6 °C⁻², D = 2.805e-11 °C⁻⁴, F = −2.000e-17 °C⁻⁶.
    pub const DIN_43760: NickelCoefficients = NickelCoefficients {
        a: 5.485e-3,
        b: 6.650e-6,
        d: 2.805e-11,
        f: -2.000e-17,
    };
}

/// Nickel element resistance in Ω at `t_c` °C (`r0` Ω at 0 °C).
pub fn nickel_resistance(r0: f64, k: NickelCoefficients, t_c: f64) -> f64 {
    let t2 = t_c * t_c;
    r0 * (1.0 + k.a * t_c + k.b * t2 + k.d * t2 * t2 + k.f * t2 * t2 * t2)
}

/// Copper temperature coefficient in /K referred to 0 °C: IEC 60028's
/// 0.00393 /K at 20 °C gives 0.00393 / (1 − 20 × 0.00393) = 0.004265 /K,
/// conventionally rounded to 0.00427 /K for copper RTDs.
pub const COPPER_ALPHA: f64 = 0.00427;

/// Linear element R = R0 (1 + α t), Ω, with `alpha` in /K referred to 0 °C.
///
/// An element rated R_t at temperature t has R0 = R_t / (1 + α t); e.g. a
/// copper element of 10 Ω at 25 °C has R0 = 9.0355 Ω.
pub fn linear_resistance(r0: f64, alpha: f64, t_c: f64) -> f64 {
    r0 * (1.0 + alpha * t_c)
}

/// How the element is connected to the measuring circuit.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Wiring {
    TwoWire,
    ThreeWire,
    FourWire,
}

/// Lead resistance in Ω that the measurement adds in series with the element.
///
/// Wire 1 goes to one end of the element, wire 2 to the other, each with
/// its own resistance: two leads are two independent tolerances, so each
/// is its own variable and the wiring says how they combine. Two-wire sees
/// wires 1 + 2; three-wire subtracts wire 2 (sensed in the compensating
/// path) from wire 1 and keeps their difference, which for two independent
/// leads within ±t is triangular over ±2t (JCGM 100:2008 §4.3.9), not
/// rectangular; four-wire senses at the element and sees no lead. This is
/// the element on a current source; in a bridge or divider arm see
/// [`arm_lead_resistance`]. The leads still carry the excitation: see
/// [`lead_loop_resistance`] for compliance.
pub fn lead_series_resistance(wiring: Wiring, lead_1: f64, lead_2: f64) -> f64 {
    match wiring {
        Wiring::TwoWire => lead_1 + lead_2,
        Wiring::ThreeWire => lead_1 - lead_2,
        Wiring::FourWire => 0.0,
    }
}

/// Lead resistance in Ω in the element's own arm where it sits in a
/// bridge or a divider: both wires for two-wire; for three-wire, wire 1
/// only, since wire 2 runs in the next arm on the element's side of the
/// bridge (the arm sharing its output node, [`next_arm_lead_resistance`])
/// and wire 3 senses that node, carrying no current (the three-wire
/// bridge connection, common practice). Equal leads cancel at balance
/// only: to first order, from the bridge's two dividers, a quarter
/// bridge of arms R from V moves by V (L1 − L2) / 4R at balance, and with
/// equal leads L by −V L ΔR / 4R² where the element is ΔR off balance.
/// Four-wire senses at the element.
pub fn arm_lead_resistance(wiring: Wiring, lead_1: f64, lead_2: f64) -> f64 {
    match wiring {
        Wiring::TwoWire => lead_1 + lead_2,
        Wiring::ThreeWire => lead_1,
        Wiring::FourWire => 0.0,
    }
}

/// Lead resistance in Ω an element in a bridge or divider arm puts in the
/// next arm on its side: a three-wire element's wire 2; none otherwise
/// (see [`arm_lead_resistance`]).
pub fn next_arm_lead_resistance(wiring: Wiring, lead_2: f64) -> f64 {
    match wiring {
        Wiring::ThreeWire => lead_2,
        Wiring::TwoWire | Wiring::FourWire => 0.0,
    }
}

/// Lead resistance in Ω in the excitation current's path (wires 1 and 2),
/// whatever the wiring: what a current source's compliance must cover.
pub fn lead_loop_resistance(lead_1: f64, lead_2: f64) -> f64 {
    lead_1 + lead_2
}

/// Self-heating ΔT = P/δ in K, with P in W and δ (dissipation constant) in W/K.
pub fn self_heating_k(power_w: f64, dissipation_w_per_k: f64) -> Result<f64, RtdError> {
    if !power_w.is_finite() || !dissipation_w_per_k.is_finite() {
        return Err(RtdError::NonFinite);
    }
    if dissipation_w_per_k <= 0.0 || power_w < 0.0 {
        return Err(RtdError::NonPositive);
    }
    Ok(power_w / dissipation_w_per_k)
}

/// The power in W that heats an element by `rise_k` K with dissipation
/// constant δ in W/K: P = ΔT·δ, [`self_heating_k`] read the other way.
pub fn self_heating_power_w(rise_k: f64, dissipation_w_per_k: f64) -> f64 {
    rise_k * dissipation_w_per_k
}

#[cfg(test)]
mod tests {
    use super::*;

    const IEC: CvdCoefficients = CvdCoefficients::IEC_60751;

    /// Pt100 reference table of IEC 60751:2008 (Table 2, 0.01 Ω resolution).
    /// Values recalled from memory; they agree with a published reprint of
    /// the table. A correctly rounded table lies within 0.005 Ω.
    const IEC_TABLE: [(f64, f64); 7] = [
        (-200.0, 18.52),
        (-100.0, 60.26),
        (0.0, 100.00),
        (100.0, 138.51),
        (200.0, 175.86),
        (400.0, 247.09),
        (850.0, 390.48),
    ];

    /// IEC 60751 Pt100 table, forward, to half the table's resolution.
    #[test]
    fn pt100_matches_iec_table() {
        for (t, r) in IEC_TABLE {
            let got = resistance(100.0, IEC, t);
            assert!((got - r).abs() <= 0.005, "{t} °C: {got} vs {r}");
        }
    }

    /// Pt1000 = 10 × Pt100 table (IEC 60751 scales by R0); 10 × 0.005 Ω.
    #[test]
    fn pt1000_is_ten_times_table() {
        for (t, r) in IEC_TABLE {
            let got = resistance(1000.0, IEC, t);
            assert!((got - 10.0 * r).abs() <= 0.05, "{t} °C: {got}");
        }
    }

    /// Inverse at the IEC table points: the table's ±0.005 Ω rounding,
    /// expressed in °C through the local slope.
    #[test]
    fn inverse_at_iec_table_points() {
        for (t, r) in IEC_TABLE {
            for r0 in [100.0, 1000.0] {
                let scale = r0 / 100.0;
                let got = temperature(r0, IEC, r * scale).unwrap();
                let tol = 0.005 * scale / d_resistance_dt(r0, IEC, t);
                assert!((got - t).abs() <= tol, "{r0} Ω, {t} °C: {got}");
            }
        }
    }

    /// IEC 60751 states α = (R100 − R0)/(100 R0) = 3.851e-3 /°C (rounded).
    #[test]
    fn alpha_is_iec_value() {
        let alpha = (resistance(100.0, IEC, 100.0) - 100.0) / (100.0 * 100.0);
        assert!((alpha - 3.851e-3).abs() <= 0.5e-6, "{alpha}");
    }

    #[test]
    fn round_trip_full_range() {
        let mut t = -200.0;
        while t <= 850.0 {
            let back = temperature(100.0, IEC, resistance(100.0, IEC, t)).unwrap();
            assert!((back - t).abs() < 1e-9, "{t}: {back}");
            t += 0.25;
        }
    }

    /// Why the C term must stay in the inverse (design note: ~2.4 °C at −200 °C).
    #[test]
    fn dropping_c_term_would_be_wrong() {
        let r = resistance(100.0, IEC, -200.0);
        let shortcut = quadratic_root(IEC, r / 100.0 - 1.0).unwrap();
        let full = temperature(100.0, IEC, r).unwrap();
        assert!((full + 200.0).abs() < 1e-9);
        assert!((shortcut - full).abs() > 2.0 && (shortcut - full).abs() < 3.0);
    }

    #[test]
    fn slope_matches_central_difference() {
        for t in [-199.0, -50.0, -0.5, 0.5, 100.0, 800.0] {
            let h = 1e-4;
            let fd = (resistance(100.0, IEC, t + h) - resistance(100.0, IEC, t - h)) / (2.0 * h);
            assert!((d_resistance_dt(100.0, IEC, t) - fd).abs() < 1e-7);
        }
    }

    #[test]
    fn inverse_errors_are_values() {
        assert_eq!(temperature(100.0, IEC, f64::NAN), Err(RtdError::NonFinite));
        assert_eq!(
            temperature(100.0, IEC, f64::INFINITY),
            Err(RtdError::NonFinite)
        );
        assert_eq!(temperature(100.0, IEC, 0.0), Err(RtdError::NonPositive));
        assert_eq!(temperature(0.0, IEC, 50.0), Err(RtdError::NonPositive));
        // Beyond the parabola's vertex (W > 7.6) there is no temperature.
        assert_eq!(temperature(100.0, IEC, 1000.0), Err(RtdError::OutOfRange));
        let flat = CvdCoefficients { a: 0.0, ..IEC };
        assert_eq!(
            temperature(100.0, flat, 50.0),
            Err(RtdError::InvalidCoefficients)
        );
    }

    /// Class formulas of IEC 60751:2008 Table 1 at the standard's own points
    /// (class A at 100 °C: 0.35 °C; class B at 400 °C: 2.3 °C).
    #[test]
    fn tolerance_classes() {
        assert!((tolerance_k(ToleranceClass::A, 100.0).unwrap() - 0.35).abs() < 1e-12);
        assert!((tolerance_k(ToleranceClass::B, 400.0).unwrap() - 2.3).abs() < 1e-12);
        assert!((tolerance_k(ToleranceClass::AA, 0.0).unwrap() - 0.10).abs() < 1e-12);
        assert!((tolerance_k(ToleranceClass::C, -196.0).unwrap() - 2.56).abs() < 1e-12);
        assert_eq!(tolerance_k(ToleranceClass::B, -200.0), None);
        assert_eq!(tolerance_k(ToleranceClass::AA, 300.0), None);
        assert_eq!(tolerance_k(ToleranceClass::A, 460.0), None);
        assert_eq!(tolerance_k(ToleranceClass::A, f64::NAN), None);
    }

    /// DIN 43760: α over 0…100 °C is 0.00618 /K; Ni100 at 100 °C is
    /// 161.78 Ω (table value recalled from memory).
    #[test]
    fn nickel_din_43760() {
        let k = NickelCoefficients::DIN_43760;
        let r100 = nickel_resistance(100.0, k, 100.0);
        assert!((r100 - 161.78).abs() <= 0.005, "{r100}");
        assert!(((r100 - 100.0) / 10_000.0 - 0.00618).abs() <= 5e-6);
    }

    /// IEC 60028: annealed copper 0.00393 /K at 20 °C (recalled from memory)
    /// re-referred to 0 °C rounds to the 0.00427 /K used for copper RTDs.
    #[test]
    fn copper_alpha_from_iec_60028() {
        let alpha20 = 0.00393;
        let alpha0 = alpha20 / (1.0 - 20.0 * alpha20);
        assert!((alpha0 - COPPER_ALPHA).abs() < 5e-6, "{alpha0}");
        let r0 = 10.0 / (1.0 + 25.0 * COPPER_ALPHA);
        assert!((linear_resistance(r0, COPPER_ALPHA, 25.0) - 10.0).abs() < 1e-12);
    }

    /// IEC 60751:2008 Table 1: the class limit ±(a + b|t|) over each
    /// class's range. The deviation R0 and coefficient tolerances allow,
    /// worked exactly through the inverse, stays within it at every degree,
    /// equals it at 0 °C and comes within 2 % of it at the range's top end,
    /// where the coefficient bound is set (so the uncalibrated worst case is
    /// the class's, not less).
    #[test]
    fn class_deviation_holds_the_class_limit() {
        for class in [
            ToleranceClass::AA,
            ToleranceClass::A,
            ToleranceClass::B,
            ToleranceClass::C,
        ] {
            let d = class_deviation(class);
            let (lo, hi) = class.wire_wound_range_c();
            let worst = |t: f64| {
                let mut worst: f64 = 0.0;
                for (s0, sa) in [(1.0, 1.0), (1.0, -1.0), (-1.0, 1.0), (-1.0, -1.0)] {
                    let r = deviated_resistance(
                        resistance(100.0, IEC, t),
                        100.0,
                        s0 * d.r0,
                        sa * d.alpha,
                    );
                    worst = worst.max((temperature(100.0, IEC, r).unwrap() - t).abs());
                }
                worst
            };
            let mut t = lo;
            while t <= hi {
                let limit = tolerance_k(class, t).unwrap();
                assert!(
                    worst(t) <= limit * (1.0 + 1e-9),
                    "{class:?} {t}: {}",
                    worst(t)
                );
                t += 1.0;
            }
            let at_zero = tolerance_k(class, 0.0).unwrap();
            assert!((worst(0.0) - at_zero).abs() < 1e-9 * at_zero, "{class:?}");
            let top = tolerance_k(class, hi).unwrap();
            assert!(worst(hi) > 0.98 * top, "{class:?}: {} vs {top}", worst(hi));
        }
    }

    #[test]
    fn lead_wiring() {
        let (r1, r2) = (0.52, 0.5);
        assert!((lead_series_resistance(Wiring::TwoWire, r1, r2) - 1.02).abs() < 1e-15);
        assert!((lead_series_resistance(Wiring::ThreeWire, r1, r2) - 0.02).abs() < 1e-15);
        assert_eq!(lead_series_resistance(Wiring::FourWire, r1, r2), 0.0);
        assert!((lead_loop_resistance(r1, r2) - 1.02).abs() < 1e-15);
        // In a bridge arm the two wires part: wire 1 in the element's
        // arm, wire 2 in the next; two-wire keeps both, four-wire none.
        assert_eq!(arm_lead_resistance(Wiring::ThreeWire, r1, r2), r1);
        assert_eq!(next_arm_lead_resistance(Wiring::ThreeWire, r2), r2);
        assert!((arm_lead_resistance(Wiring::TwoWire, r1, r2) - 1.02).abs() < 1e-15);
        assert_eq!(next_arm_lead_resistance(Wiring::TwoWire, r2), 0.0);
        assert_eq!(arm_lead_resistance(Wiring::FourWire, r1, r2), 0.0);
        assert_eq!(next_arm_lead_resistance(Wiring::FourWire, r2), 0.0);
    }

    /// Worked by hand: 1 mA in 100 Ω dissipates (1e-3 A)² × 100 Ω = 100 µW;
    /// with δ = 2 mW/K the element runs 100 µW / 2 mW/K = 0.05 K warm.
    #[test]
    fn self_heating() {
        let p = 1e-3 * 1e-3 * 100.0;
        assert!((self_heating_k(p, 2e-3).unwrap() - 0.05).abs() < 1e-15);
        assert!((self_heating_power_w(0.05, 2e-3) - p).abs() < 1e-18);
        assert_eq!(self_heating_k(p, 0.0), Err(RtdError::NonPositive));
        assert_eq!(self_heating_k(f64::NAN, 1.0), Err(RtdError::NonFinite));
    }
}
