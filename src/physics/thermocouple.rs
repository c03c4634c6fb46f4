//! Thermocouples on the ITS-90 scale: reference functions, Seebeck
//! coefficients, inversion and tolerance classes for types B, E, J, K, N, R,
//! S and T.
//!
//! Sources:
//! - Reference functions E(t90) and inverse polynomials: NIST Monograph 175
//!   (Burns, Scroger, Strouse, Croarkin and Guthrie, 1993), identical to the
//!   functions of IEC 60584-1. Coefficients live in
//!   [`super::thermocouple_coefficients`].
//! - Tolerance classes 1, 2 and 3: IEC 60584-1:2013, tolerance table.
//!
//! All EMFs are in millivolts against a reference junction at 0 degC, all
//! temperatures in degC (t90). Every function is pure and returns an error
//! value, never panics, for any input including NaN and infinities.
//!
//! Inversion: the published inverse polynomials carry errors of up to
//! 0.06 degC (type K above 500 degC). [`temperature_c`] only uses them as a
//! starting point and then runs a bracketed Newton iteration on the forward
//! function until the step is below 1e-10 degC (or stalls at the forward
//! function's own rounding noise), which leaves |E(t) - emf| below 1e-9 mV.
//! Measured over every type's whole invertible range on a 0.1 degC grid, the
//! round trip t -> E -> t agrees within 1e-10 degC above 0 degC, within
//! 3e-9 degC above -250 degC, and within 3e-8 degC down to -270 degC, where
//! the long polynomials of types E and T lose digits to cancellation. The
//! inversion error is thus at least six orders of magnitude below the
//! inverse polynomials' published bands (0.0002 to 0.06 degC).

use std::fmt;

use super::exp::{exp, exp_each};
use super::solve::{newton_bracketed, try_bisect, Root, Stop};

use super::thermocouple_coefficients::{
    ForwardRange, InverseRange, TypeCoefficients, TYPE_B, TYPE_E, TYPE_J, TYPE_K, TYPE_N, TYPE_R,
    TYPE_S, TYPE_T,
};

/// The letter-designated thermocouple types of IEC 60584-1.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum ThermocoupleType {
    /// Pt-30 %Rh / Pt-6 %Rh.
    B,
    /// Ni-Cr / Cu-Ni.
    E,
    /// Fe / Cu-Ni.
    J,
    /// Ni-Cr / Ni-Al.
    K,
    /// Ni-Cr-Si / Ni-Si.
    N,
    /// Pt-13 %Rh / Pt.
    R,
    /// Pt-10 %Rh / Pt.
    S,
    /// Cu / Cu-Ni.
    T,
}

impl ThermocoupleType {
    /// Every type, in alphabetical order.
    pub const ALL: [ThermocoupleType; 8] = [
        ThermocoupleType::B,
        ThermocoupleType::E,
        ThermocoupleType::J,
        ThermocoupleType::K,
        ThermocoupleType::N,
        ThermocoupleType::R,
        ThermocoupleType::S,
        ThermocoupleType::T,
    ];

    /// Parses the type letter; upper case only, because the standard's
    /// designations are upper case and a specification should say so.
    pub fn from_letter(s: &str) -> Option<Self> {
        Self::ALL.into_iter().find(|ty| ty.letter() == s)
    }

    /// The type letter, e.g. `"K"`.
    pub fn letter(self) -> &'static str {
        match self {
            ThermocoupleType::B => "B",
            ThermocoupleType::E => "E",
            ThermocoupleType::J => "J",
            ThermocoupleType::K => "K",
            ThermocoupleType::N => "N",
            ThermocoupleType::R => "R",
            ThermocoupleType::S => "S",
            ThermocoupleType::T => "T",
        }
    }

    /// Valid range of the ITS-90 reference function, degC.
    pub fn range_c(self) -> (f64, f64) {
        let f = self.coefficients().forward;
        match (f.first(), f.last()) {
            (Some(lo), Some(hi)) => (lo.t_min_c, hi.t_max_c),
            // The tables are never empty; an empty range keeps this total.
            _ => (f64::NAN, f64::NAN),
        }
    }

    /// The published coefficient tables of this type.
    pub fn coefficients(self) -> &'static TypeCoefficients {
        match self {
            ThermocoupleType::B => &TYPE_B,
            ThermocoupleType::E => &TYPE_E,
            ThermocoupleType::J => &TYPE_J,
            ThermocoupleType::K => &TYPE_K,
            ThermocoupleType::N => &TYPE_N,
            ThermocoupleType::R => &TYPE_R,
            ThermocoupleType::S => &TYPE_S,
            ThermocoupleType::T => &TYPE_T,
        }
    }
}

impl fmt::Display for ThermocoupleType {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.letter())
    }
}

/// A temperature (degC) or EMF (mV) outside the interval where a function is
/// defined, or a non-finite input.
#[derive(Clone, Copy, Debug, PartialEq, thiserror::Error)]
#[error("value {value} is outside the valid range {low} .. {high}")]
pub struct OutOfRange {
    /// The rejected input.
    pub value: f64,
    /// Lower end of the valid interval, same unit as `value`.
    pub low: f64,
    /// Upper end of the valid interval, same unit as `value`.
    pub high: f64,
}

/// Horner evaluation of `c[0] + c[1] x + ...`. (Splitting it into even
/// and odd halves would run faster, but near −270 °C the long type E and T
/// polynomials cancel terms of 1e5 mV and the split loses digits Horner
/// keeps.)
fn poly(c: &[f64], x: f64) -> f64 {
    c.iter().rev().fold(0.0, |acc, &ci| acc * x + ci)
}

/// Sub-range holding t. At a shared end point the lower sub-range is taken;
/// the published functions agree there to better than 1e-7 mV.
fn forward_range(ty: ThermocoupleType, t_c: f64) -> Option<&'static ForwardRange> {
    ty.coefficients().forward.iter().find(|r| within(r, t_c))
}

/// [`poly`] and its derivative by Horner in one pass: the two independent
/// chains interleave instead of waiting on each other, each with the same
/// operations in the same order as alone.
#[inline(always)]
fn poly_and_derivative(c: &[f64], x: f64) -> (f64, f64) {
    let (mut e, mut s) = (0.0, 0.0);
    for i in (1..c.len()).rev() {
        s = s * x + i as f64 * c[i];
        e = e * x + c[i];
    }
    let e = match c.first() {
        Some(&c0) => e * x + c0,
        None => e,
    };
    (e, s)
}

/// E(t) and dE/dt on one sub-range.
fn eval_range(r: &ForwardRange, t_c: f64) -> (f64, f64) {
    let (mut e, mut s) = poly_and_derivative(r.coeffs, t_c);
    if let Some((a0, a1, a2)) = r.exponential {
        let x = t_c - a2;
        let g = a0 * exp(a1 * x * x);
        e += g;
        s += g * 2.0 * a1 * x;
    }
    (e, s)
}

fn eval(ty: ThermocoupleType, t_c: f64) -> Result<(f64, f64), OutOfRange> {
    let (low, high) = ty.range_c();
    forward_range(ty, t_c)
        .map(|r| eval_range(r, t_c))
        .ok_or(OutOfRange {
            value: t_c,
            low,
            high,
        })
}

/// Reference function E(t90), millivolts, t in degC. Error outside the type's
/// range or for non-finite input.
pub fn emf_mv(ty: ThermocoupleType, t_c: f64) -> Result<f64, OutOfRange> {
    // E alone: the derivative would double the cost of the commonest call.
    let (low, high) = ty.range_c();
    let r = forward_range(ty, t_c).ok_or(OutOfRange {
        value: t_c,
        low,
        high,
    })?;
    let mut e = poly(r.coeffs, t_c);
    if let Some((a0, a1, a2)) = r.exponential {
        let x = t_c - a2;
        e += a0 * exp(a1 * x * x);
    }
    Ok(e)
}

/// [`emf_mv`] of each of `t_c`, into `e`, to the bit: where every
/// temperature lies in one sub-range (as the temperatures of one point's
/// trials do), one Horner pass over all of them coefficient by
/// coefficient, which vectorises; else each alone. An error is the first
/// temperature's out of range.
#[inline(always)]
pub fn emf_mv_each<const N: usize>(
    ty: ThermocoupleType,
    t_c: &[f64; N],
    e: &mut [f64; N],
) -> Result<(), OutOfRange> {
    let ranges = ty.coefficients().forward;
    let first = t_c
        .first()
        .and_then(|&t| ranges.iter().position(|r| within(r, t)));
    // Tested without a closure: `Option::filter` is not always inlined,
    // and out of line the test is built for the baseline instruction set
    // rather than the caller's vector unit.
    let held = match first {
        Some(i) if holds_all(&ranges[..=i], t_c) => Some(&ranges[i]),
        _ => None,
    };
    let Some(r) = held else {
        for (e, &t) in e.iter_mut().zip(t_c) {
            *e = emf_mv(ty, t)?;
        }
        return Ok(());
    };
    *e = [0.0; N];
    for &c in r.coeffs.iter().rev() {
        for (e, &t) in e.iter_mut().zip(t_c) {
            *e = *e * t + c;
        }
    }
    if let Some((a0, a1, a2)) = r.exponential {
        let mut g = [0.0; N];
        for (g, &t) in g.iter_mut().zip(t_c) {
            let x = t - a2;
            *g = a1 * x * x;
        }
        exp_each(&mut g);
        for (e, g) in e.iter_mut().zip(g) {
            *e += a0 * g;
        }
    }
    Ok(())
}

/// Whether [`forward_range`] gives the last of `ranges` (a type's
/// sub-ranges up to it) for every one of `t_c`: each lies within it and
/// within none before it (the lower one is taken at a shared end).
/// Tested lane by lane without a branch, which vectorises, where a search
/// a lane does not. (By position, not by address: a constant's address
/// may differ from one use to another.)
#[inline(always)]
fn holds_all<const N: usize>(ranges: &[ForwardRange], t_c: &[f64; N]) -> bool {
    let Some((r, before)) = ranges.split_last() else {
        return false;
    };
    let mut all = t_c.iter().fold(true, |all, &t| all & within(r, t));
    for b in before {
        all = t_c.iter().fold(all, |all, &t| all & !within(b, t));
    }
    all
}

/// Whether `t` (°C) lies within sub-range `r`, ends included.
#[inline(always)]
fn within(r: &ForwardRange, t: f64) -> bool {
    (r.t_min_c <= t) & (t <= r.t_max_c)
}

/// E(t) and dE/dt together, for the price of one.
pub fn emf_and_seebeck_mv(ty: ThermocoupleType, t_c: f64) -> Result<(f64, f64), OutOfRange> {
    eval(ty, t_c)
}

/// dE/dt in mV/degC (analytic derivative of the polynomial, incl. type K's
/// exponential term).
pub fn seebeck_mv_per_c(ty: ThermocoupleType, t_c: f64) -> Result<f64, OutOfRange> {
    eval(ty, t_c).map(|(_, s)| s)
}

/// dE/dt in mV/degC at `t_c` by the reference function of the sub-range
/// holding `on_c`. Either side of a shared end the two functions' slopes
/// may differ (type N's meet at 0 degC at 0.026159 and 0.025929 mV/degC,
/// their first coefficients in NIST Monograph 175), so a table step lying
/// on one side takes that side's slope at its ends.
pub fn seebeck_on_mv_per_c(ty: ThermocoupleType, on_c: f64, t_c: f64) -> Result<f64, OutOfRange> {
    let (low, high) = ty.range_c();
    forward_range(ty, on_c)
        .map(|r| eval_range(r, t_c).1)
        .ok_or(OutOfRange {
            value: on_c,
            low,
            high,
        })
}

/// EMF a meter sees with the hot junction at `t_c` and the reference
/// (cold) junction at `t_ref_c`: E(t) - E(t_ref).
pub fn emf_with_reference_mv(
    ty: ThermocoupleType,
    t_c: f64,
    t_ref_c: f64,
) -> Result<f64, OutOfRange> {
    Ok(emf_mv(ty, t_c)? - emf_mv(ty, t_ref_c)?)
}

/// (E(low), E(high)) in mV: the EMF span accepted by [`temperature_c`].
pub fn emf_range_mv(ty: ThermocoupleType) -> (f64, f64) {
    let (low, high) = ty.range_c();
    let e = |t| emf_mv(ty, t).unwrap_or(f64::NAN);
    (e(low), e(high))
}

/// Lowest temperature of the rising branch of E(t). For every type but B
/// this is the range's low end. Type B's function falls from 0 degC to a
/// minimum near 21 degC (about -2.6 uV) before rising, so there the point
/// where dE/dt = 0 is found by bisection.
fn rising_branch_start_c(ty: ThermocoupleType) -> Result<f64, OutOfRange> {
    let (low, _) = ty.range_c();
    if seebeck_mv_per_c(ty, low)? > 0.0 {
        return Ok(low);
    }
    let first_top = ty.coefficients().forward.first().map_or(low, |r| r.t_max_c);
    let (_, rising) = try_bisect(low, first_top, |t| Ok(seebeck_mv_per_c(ty, t)? <= 0.0))?;
    Ok(rising)
}

/// Temperatures (degC) over which `temperature_c(emf_mv(t)) == t`: the whole
/// range, except for type B, whose EMF is double-valued (and not above zero)
/// below about 41.7 degC, so its invertible range starts where E crosses
/// zero on the rising branch.
pub fn invertible_range_c(ty: ThermocoupleType) -> (f64, f64) {
    let (low, high) = ty.range_c();
    let start = emf_mv(ty, low)
        .and_then(|e| temperature_c(ty, e))
        .unwrap_or(low);
    (start, high)
}

/// The published inverse sub-range for `emf_mv`. Where two sub-ranges
/// contain the EMF (shared end points; types R and S between 1064 and
/// 1200 degC) the one with the narrower error band is taken.
fn inverse_range(ty: ThermocoupleType, emf_mv: f64) -> Option<&'static InverseRange> {
    let width = |r: &InverseRange| r.error_band_c.1 - r.error_band_c.0;
    ty.coefficients()
        .inverse
        .iter()
        .filter(|r| r.emf_min_mv <= emf_mv && emf_mv <= r.emf_max_mv)
        .fold(None, |best: Option<&'static InverseRange>, r| match best {
            Some(b) if width(b) <= width(r) => Some(b),
            _ => Some(r),
        })
}

/// The NIST inverse polynomial itself (no refinement), degC, or `None`
/// outside its published EMF sub-ranges. Useful to model firmware that
/// linearises with the published polynomial; its error is
/// [`inverse_polynomial_error_band_c`].
pub fn inverse_polynomial_c(ty: ThermocoupleType, emf_mv: f64) -> Option<f64> {
    inverse_range(ty, emf_mv).map(|r| poly(r.coeffs, emf_mv))
}

/// Published error band (most negative, most positive) of the NIST inverse
/// polynomial for the sub-range containing `emf_mv`, degC.
pub fn inverse_polynomial_error_band_c(ty: ThermocoupleType, emf_mv: f64) -> Option<(f64, f64)> {
    inverse_range(ty, emf_mv).map(|r| r.error_band_c)
}

/// Published error band of the NIST inverse polynomial for the sub-range
/// containing emf (degC), for documentation: the larger magnitude of the
/// band's two ends.
pub fn inverse_polynomial_error_c(ty: ThermocoupleType, emf_mv: f64) -> Option<f64> {
    inverse_polynomial_error_band_c(ty, emf_mv).map(|(lo, hi)| lo.abs().max(hi.abs()))
}

/// Newton steps below this end the iteration, degC.
const STEP_TOL_C: f64 = 1e-10;
/// Residual below which a stalled iteration is accepted, mV.
const RESID_TOL_MV: f64 = 1e-9;
/// Bracketed Newton converges in a handful of steps from the inverse
/// polynomial; the cap only bounds the bisection fallback (about 45 halvings
/// span 1820 degC down to 1e-10 degC).
const MAX_ITER: usize = 200;

/// Inverse: temperature (degC) for an EMF (mV, 0 degC reference junction).
///
/// Starts from the NIST inverse polynomial and refines by Newton on the
/// forward function, safeguarded by a bracket (a step leaving the bracket is
/// replaced by bisection), until the step is below 1e-10 degC; the residual
/// |E(t) - emf| is then below 1e-9 mV, except for an EMF inside one of the
/// published functions' tiny steps at sub-range joins (type J at 760 degC:
/// 7.5e-8 mV), where the join itself is returned. Where no inverse polynomial is
/// published (type K below -200 degC, type B below 250 degC, ...) the start
/// is a linear interpolation across the bracket.
///
/// Type B: E(t) dips below zero between 0 and about 41.7 degC, so an EMF
/// there has two temperatures. The bracket starts at the function's minimum
/// (near 21 degC) and the root on the rising branch is returned; `emf = 0`
/// gives about 41.7 degC, not 0 degC (see [`invertible_range_c`]).
///
/// Error when emf is outside [E(low), E(high)] or not finite.
pub fn temperature_c(ty: ThermocoupleType, emf_mv: f64) -> Result<f64, OutOfRange> {
    let (e_lo, e_hi) = emf_range_mv(ty);
    let err = OutOfRange {
        value: emf_mv,
        low: e_lo,
        high: e_hi,
    };
    if !(emf_mv >= e_lo && emf_mv <= e_hi) {
        return Err(err);
    }
    let (_, high) = ty.range_c();
    let a = rising_branch_start_c(ty)?;
    let b = high;
    let e_a = self::emf_mv(ty, a)?;
    if emf_mv == e_a {
        return Ok(a);
    }
    if emf_mv == e_hi {
        return Ok(b);
    }
    let t = match inverse_polynomial_c(ty, emf_mv) {
        Some(t) if t > a && t < b => t,
        _ => a + (emf_mv - e_a) * (b - a) / (e_hi - e_a),
    };
    // Near -270 degC the long polynomials of types E and T lose digits
    // to cancellation (terms up to 3e5 mV summing to -6 mV), so E(t) is
    // noisy at ~1e-10 mV; once the residual is small and steps stop
    // shrinking, further steps only chase that noise.
    let stop = Stop {
        step: STEP_TOL_C,
        stalled_residual: RESID_TOL_MV,
        max_iter: MAX_ITER,
    };
    let residual = |t| eval(ty, t).map(|(e, s)| (e - emf_mv, s));
    match newton_bracketed(residual, (a, b), t, stop)? {
        Root::Exact(t) => Ok(t),
        Root::Converged(t) | Root::Exhausted(t) => snap_to_join(ty, t, emf_mv),
    }
}

/// A Newton step this small leaves an error of about |E''/2E'| times its
/// square: below 1e-12 degC for every type (checked against the general
/// inverse in the tests), so the iteration can stop without another step.
const QUADRATIC_STOP_C: f64 = 1e-6;

/// [`temperature_c`] from a start within a few kelvin of the answer: plain
/// Newton on E(t), which from there converges quadratically and stops in
/// two or three evaluations where the general inverse spends twice that.
/// None when it does not settle quickly (a start too far off, a sub-range
/// join, the range's end): the caller then takes [`temperature_c`].
pub fn temperature_near_c(ty: ThermocoupleType, emf_mv: f64, start_c: f64) -> Option<f64> {
    let mut t = start_c;
    for _ in 0..5 {
        let (e, s) = eval(ty, t).ok()?;
        if s.is_nan() || s <= 0.0 {
            return None;
        }
        let step = (e - emf_mv) / s;
        t -= step;
        if step.abs() <= QUADRATIC_STOP_C {
            // Only inside one sub-range is the answer this simple.
            let range = forward_range(ty, t)?;
            return (range.t_min_c < t && t < range.t_max_c).then_some(t);
        }
    }
    None
}

/// The published sub-range functions meet with a small step (largest:
/// type J at 760 degC, 7.5e-8 mV). An EMF at or inside such a step has the
/// join itself as its best answer, which Newton only approaches; take the
/// join when it fits at least as well.
fn snap_to_join(ty: ThermocoupleType, t_c: f64, emf_mv: f64) -> Result<f64, OutOfRange> {
    let resid = |t| self::emf_mv(ty, t).map(|e| (e - emf_mv).abs());
    let here = resid(t_c)?;
    for r in ty.coefficients().forward.windows(2) {
        let x = r[0].t_max_c;
        // 1e-5 degC spans every step divided by the local Seebeck coefficient.
        if (x - t_c).abs() <= 1e-5 && resid(x)? <= here {
            return Ok(x);
        }
    }
    Ok(t_c)
}

/// How a tolerance-class segment's half-width depends on t.
#[derive(Clone, Copy)]
enum Tol {
    /// A fixed half-width, K.
    Fixed(f64),
    /// A fraction of |t|.
    Proportional(f64),
    /// Types R and S class 1 above 1100 degC: 1 + 0.003 (t - 1100).
    NobleClass1High,
}

/// Segments (t_low, t_high, rule) of IEC 60584-1:2013's tolerance table.
/// Where two segments share an end point both rules give the same value.
fn tolerance_segments(ty: ThermocoupleType, class: u8) -> &'static [(f64, f64, Tol)] {
    use ThermocoupleType as Ty;
    use Tol::{Fixed, NobleClass1High, Proportional};
    const BASE_CLASS_3: &[(f64, f64, Tol)] = &[
        (-200.0, -167.0, Proportional(0.015)),
        (-167.0, 40.0, Fixed(2.5)),
    ];
    match (ty, class) {
        (Ty::K | Ty::N, 1) => &[
            (-40.0, 375.0, Fixed(1.5)),
            (375.0, 1000.0, Proportional(0.004)),
        ],
        (Ty::K | Ty::N, 2) => &[
            (-40.0, 333.0, Fixed(2.5)),
            (333.0, 1200.0, Proportional(0.0075)),
        ],
        (Ty::K | Ty::N | Ty::E, 3) => BASE_CLASS_3,
        (Ty::E, 1) => &[
            (-40.0, 375.0, Fixed(1.5)),
            (375.0, 800.0, Proportional(0.004)),
        ],
        (Ty::E, 2) => &[
            (-40.0, 333.0, Fixed(2.5)),
            (333.0, 900.0, Proportional(0.0075)),
        ],
        (Ty::J, 1) => &[
            (-40.0, 375.0, Fixed(1.5)),
            (375.0, 750.0, Proportional(0.004)),
        ],
        (Ty::J, 2) => &[
            (-40.0, 333.0, Fixed(2.5)),
            (333.0, 750.0, Proportional(0.0075)),
        ],
        (Ty::T, 1) => &[
            (-40.0, 125.0, Fixed(0.5)),
            (125.0, 350.0, Proportional(0.004)),
        ],
        (Ty::T, 2) => &[
            (-40.0, 133.0, Fixed(1.0)),
            (133.0, 350.0, Proportional(0.0075)),
        ],
        (Ty::T, 3) => &[
            (-200.0, -67.0, Proportional(0.015)),
            (-67.0, 40.0, Fixed(1.0)),
        ],
        (Ty::R | Ty::S, 1) => &[(0.0, 1100.0, Fixed(1.0)), (1100.0, 1600.0, NobleClass1High)],
        (Ty::R | Ty::S, 2) => &[
            (0.0, 600.0, Fixed(1.5)),
            (600.0, 1600.0, Proportional(0.0025)),
        ],
        (Ty::B, 2) => &[(600.0, 1700.0, Proportional(0.0025))],
        (Ty::B, 3) => &[
            (600.0, 800.0, Fixed(4.0)),
            (800.0, 1700.0, Proportional(0.005)),
        ],
        // J, R and S have no class 3, B has no class 1; classes are 1..=3.
        _ => &[],
    }
}

/// IEC 60584-1 tolerance class 1, 2 or 3 half-width in K at t, or None where
/// that class is not defined for that type/temperature.
pub fn class_tolerance_k(ty: ThermocoupleType, class: u8, t_c: f64) -> Option<f64> {
    tolerance_segments(ty, class)
        .iter()
        .find(|(lo, hi, _)| *lo <= t_c && t_c <= *hi)
        .map(|&(_, _, rule)| match rule {
            Tol::Fixed(k) => k,
            Tol::Proportional(f) => f * t_c.abs(),
            Tol::NobleClass1High => 1.0 + 0.003 * (t_c - 1100.0),
        })
}

/// The temperatures over which IEC 60584-1 defines tolerance class `class`
/// for `ty`, degC, or None where the class does not exist for the type.
pub fn class_range_c(ty: ThermocoupleType, class: u8) -> Option<(f64, f64)> {
    let segments = tolerance_segments(ty, class);
    let lo = segments.iter().map(|s| s.0).reduce(f64::min)?;
    let hi = segments.iter().map(|s| s.1).reduce(f64::max)?;
    Some((lo, hi))
}

#[cfg(test)]
mod class_range_tests {
    use super::{class_range_c, ThermocoupleType};

    /// IEC 60584-1:2013 ranges (recalled from memory, as the tolerance
    /// table itself): type K class 1 covers −40 … 1000 °C, type B has no
    /// class 1.
    #[test]
    fn class_ranges() {
        assert_eq!(class_range_c(ThermocoupleType::K, 1), Some((-40.0, 1000.0)));
        assert_eq!(class_range_c(ThermocoupleType::B, 1), None);
    }
}

#[cfg(test)]
mod near_inverse_tests {
    use super::{emf_mv, invertible_range_c, temperature_c, temperature_near_c, ThermocoupleType};

    /// The quick inverse gives the general one's answer wherever it answers,
    /// and answers across the body of every type's range from 5 K off.
    #[test]
    fn agrees_with_the_general_inverse() {
        for ty in ThermocoupleType::ALL {
            let (lo, hi) = invertible_range_c(ty);
            let (mut answered, mut asked) = (0, 0);
            for k in 1..200 {
                let t = lo + (hi - lo) * k as f64 / 200.0;
                let e = emf_mv(ty, t).unwrap();
                let want = temperature_c(ty, e).unwrap();
                for off in [-5.0, 5.0] {
                    asked += 1;
                    if let Some(got) = temperature_near_c(ty, e, t + off) {
                        answered += 1;
                        // Near -270 degC, E itself is only good to about
                        // 1e-10 mV (see `temperature_c`): there the answer
                        // need only fit as well.
                        let residual = (emf_mv(ty, got).unwrap() - e).abs();
                        assert!(
                            (got - want).abs() < 1e-9 || residual < 1e-9,
                            "{ty:?} {t}: {got} vs {want}"
                        );
                    }
                }
            }
            assert!(answered * 10 >= asked * 9, "{ty:?}: {answered} of {asked}");
        }
    }
}

#[cfg(test)]
mod horner_tests {
    use super::{emf_mv, emf_mv_each, holds_all, poly, poly_and_derivative, ThermocoupleType};

    /// Many temperatures at once give each one's EMF to the bit, inside
    /// one sub-range (the column pass) and across two (each alone), and
    /// one out of range is the call's error.
    #[test]
    fn each_temperature_gets_its_own_emf() {
        for ty in ThermocoupleType::ALL {
            let (low, high) = ty.range_c();
            for centre in [low + 1.0, (low + high) / 2.0, high - 1.0, 0.0] {
                let t: [f64; 8] = std::array::from_fn(|k| centre + (k as f64 - 3.5) * 0.3);
                let mut e = [0.0; 8];
                let whole = emf_mv_each(ty, &t, &mut e);
                let alone: Result<Vec<f64>, _> = t.iter().map(|&t| emf_mv(ty, t)).collect();
                match alone {
                    Ok(alone) => {
                        assert!(whole.is_ok(), "{ty:?} at {centre}");
                        for (got, want) in e.iter().zip(&alone) {
                            assert_eq!(got.to_bits(), want.to_bits(), "{ty:?} at {centre}");
                        }
                    }
                    Err(_) => assert!(whole.is_err(), "{ty:?} at {centre}"),
                }
            }
        }
    }

    /// At the end two sub-ranges share, a temperature belongs to the
    /// lower one: a batch led by one above it, with one at the end, is
    /// not one sub-range's, and each gets its own EMF to the bit.
    #[test]
    fn a_shared_end_belongs_to_the_lower_sub_range() {
        for ty in ThermocoupleType::ALL {
            for pair in ty.coefficients().forward.windows(2) {
                let end = pair[0].t_max_c;
                assert_eq!(end, pair[1].t_min_c, "{ty:?}: sub-ranges meet");
                for t in [[end + 0.5, end, end + 0.25, end + 1.0], [end; 4]] {
                    let mut e = [0.0; 4];
                    emf_mv_each(ty, &t, &mut e).expect("in range");
                    for (got, &t) in e.iter().zip(&t) {
                        let want = emf_mv(ty, t).expect("in range");
                        assert_eq!(got.to_bits(), want.to_bits(), "{ty:?} at {t}");
                    }
                }
            }
        }
    }

    /// A batch inside one sub-range is that sub-range's, so it takes the
    /// column pass; one with a temperature at the shared end below is
    /// not (that end is the lower sub-range's).
    #[test]
    fn a_batch_inside_a_sub_range_is_held_by_it() {
        for ty in ThermocoupleType::ALL {
            let ranges = ty.coefficients().forward;
            for i in 0..ranges.len() {
                let r = &ranges[i];
                let middle = (r.t_min_c + r.t_max_c) / 2.0;
                assert!(holds_all(&ranges[..=i], &[middle; 4]), "{ty:?} {i}");
                if i > 0 {
                    let at_end = [middle, r.t_min_c, middle, middle];
                    assert!(!holds_all(&ranges[..=i], &at_end), "{ty:?} {i}");
                }
            }
        }
    }

    /// The fused pass gives, to the bit, the value and the derivative
    /// each Horner fold gives alone, for every sub-range of every type.
    #[test]
    fn fused_horner_is_the_separate_folds() {
        let derivative = |c: &[f64], x: f64| {
            c.iter()
                .enumerate()
                .skip(1)
                .rev()
                .fold(0.0, |acc, (i, &ci)| acc * x + i as f64 * ci)
        };
        for ty in ThermocoupleType::ALL {
            for r in ty.coefficients().forward {
                for k in 0..=100 {
                    let t = r.t_min_c + (r.t_max_c - r.t_min_c) * k as f64 / 100.0;
                    let (e, s) = poly_and_derivative(r.coeffs, t);
                    assert_eq!(e.to_bits(), poly(r.coeffs, t).to_bits(), "{ty:?} {t}");
                    assert_eq!(s.to_bits(), derivative(r.coeffs, t).to_bits(), "{ty:?} {t}");
                }
            }
        }
        assert_eq!(poly_and_derivative(&[], 2.0), (0.0, 0.0));
    }
}
