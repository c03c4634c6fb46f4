//! Analog low-pass filters of a measurement chain: first-order RC cascades,
//! Butterworth and Bessel (Thomson) responses of order 1 to 8.
//!
//! Sources:
//! - A. B. Williams and F. J. Taylor, *Electronic Filter Design Handbook*,
//!   4th ed., McGraw-Hill 2006, ch. 2 (normalised Butterworth and Bessel
//!   low-pass prototypes, their poles and step responses); A. I. Zverev,
//!   *Handbook of Filter Synthesis*, Wiley 1967 (the same prototypes).
//! - S. Butterworth, Wireless Engineer 7 (1930): |H(jω)|² = 1/(1 + (ω/ωc)²ⁿ).
//! - W. E. Thomson, Proc. IEE 96 (1949): H(s) = θₙ(0)/θₙ(s) with θₙ the
//!   reverse Bessel polynomial.
//!
//! Prototype definitions (all poles in the left half-plane, no zeros,
//! DC gain exactly 1, H(s) = Πᵢ(−pᵢ) / Πᵢ(s − pᵢ)):
//! - `Butterworth`: poles on a circle of radius ωc = 2π·fc; −3 dB at fc.
//! - `Bessel`: roots of θₙ, scaled so |H(j2πfc)| = 1/√2 (the "magnitude"
//!   normalisation, not the unit-delay one).
//! - `Rc`: n identical first-order sections with buffers between them (no
//!   loading, so the response is the n-th power of one section). `cutoff_hz`
//!   is the −3 dB frequency of the whole cascade, so every response is
//!   −3 dB at `cutoff_hz`; each section's corner lies at
//!   fc/√(2^(1/n) − 1). For one section fc = 1/(2πRC) ([`rc_cutoff_hz`]);
//!   n sections of the same R and C give [`rc_cascade_cutoff_hz`].
//!
//! Methods:
//! - Step response by partial fractions: y(t) = 1 + Σᵢ cᵢ e^(pᵢt),
//!   cᵢ = Res[H(s)/s, pᵢ] (distinct poles); for the RC cascade's n-fold pole
//!   at −a, y(t) = 1 − e^(−at) Σₖ₌₀ⁿ⁻¹ (at)ᵏ/k! (Erlang distribution).
//! - Equivalent noise bandwidth ∫₀^∞ |H(j2πf)|² df: for the RC cascade the
//!   closed form fₛ·(π/2)·C(2n−2, n−1)/4ⁿ⁻¹ (fₛ the section corner; from
//!   ∫₀^∞ (1+x²)⁻ⁿ dx); for distinct poles Parseval's theorem,
//!   ∫₀^∞ |H|² df = ½∫₀^∞ h(t)² dt = −½ Σᵢⱼ rᵢ rⱼ / (pᵢ + pⱼ) with rᵢ the
//!   residues of H. This is exact in the poles; in f64 it agrees with the
//!   Butterworth closed form (π/2n)/sin(π/2n) to better than 1e-13 and with
//!   adaptive quadrature of |H|² to ~5e-13 (see the tests).
//! - Settling time: the step error e(t) = y(t) − 1 is bounded by
//!   Σ|cᵢ| e^(σₘₐₓt), which fixes a time after which |e| ≤ fraction; a grid
//!   much finer than the fastest pole's period is scanned backwards from
//!   there, an extremum of e inside a grid interval (sign change of the
//!   exact derivative) is located and tested too, so overshoot and ringing
//!   are caught, and the last crossing is bisected to full precision.
//!
//! All internal work is done on the prototype normalised to 1 rad/s
//! (x = f/fc, τ = 2π·fc·t), so no cutoff in the finite f64 range overflows.

mod prototype;

use prototype::Cx;
use std::f64::consts::PI;

/// Low-pass response family.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Response {
    /// Cascade of identical buffered first-order RC sections.
    Rc,
    /// Maximally flat magnitude.
    Butterworth,
    /// Maximally flat group delay (Thomson), −3 dB normalised.
    Bessel,
}

/// Why a filter or a query on it was rejected.
#[derive(Debug, Clone, Copy, PartialEq, thiserror::Error)]
pub enum FilterError {
    /// Order outside 1..=8.
    #[error("filter order {0} is outside 1..=8")]
    Order(u32),
    /// Cutoff frequency not finite and positive (Hz).
    #[error("cutoff {0} Hz is not finite and positive")]
    Cutoff(f64),
    /// Resistance (Ω) or capacitance (F) not finite and positive, or their
    /// cutoff not representable.
    #[error("R = {r_ohm} Ω, C = {c_farad} F do not give a finite positive cutoff")]
    Component { r_ohm: f64, c_farad: f64 },
    /// Settling fraction not finite and positive.
    #[error("settling fraction {0} is not finite and positive")]
    Fraction(f64),
    /// Pole computation did not converge (not expected for orders 1..=8).
    #[error("filter poles could not be computed")]
    Poles,
}

/// Highest order accepted.
pub const MAX_ORDER: u32 = 8;

/// Corner frequency 1/(2πRC) of one RC section, Hz.
pub fn rc_cutoff_hz(r_ohm: f64, c_farad: f64) -> Result<f64, FilterError> {
    let bad = FilterError::Component { r_ohm, c_farad };
    if !(r_ohm.is_finite() && r_ohm > 0.0 && c_farad.is_finite() && c_farad > 0.0) {
        return Err(bad);
    }
    // Divide in two steps so R·C cannot underflow or overflow on its own.
    let fc = 1.0 / (2.0 * PI) / r_ohm / c_farad;
    if fc.is_finite() && fc > 0.0 {
        Ok(fc)
    } else {
        Err(bad)
    }
}

/// −3 dB frequency (Hz) of `order` identical buffered sections of R and C:
/// 1/(2πRC)·√(2^(1/n) − 1).
pub fn rc_cascade_cutoff_hz(r_ohm: f64, c_farad: f64, order: u32) -> Result<f64, FilterError> {
    check_order(order)?;
    let fc = rc_cutoff_hz(r_ohm, c_farad)? / prototype::rc_section_corner(order);
    if fc > 0.0 {
        Ok(fc)
    } else {
        Err(FilterError::Component { r_ohm, c_farad })
    }
}

fn check_order(order: u32) -> Result<(), FilterError> {
    if (1..=MAX_ORDER).contains(&order) {
        Ok(())
    } else {
        Err(FilterError::Order(order))
    }
}

/// A low-pass filter, −3 dB at `cutoff_hz`, unity DC gain.
///
/// Fields are public for reading; a value changed by hand to something
/// [`LowPass::new`] would refuse makes the numeric methods return NaN (and
/// [`LowPass::settling_time_s`] an error) rather than panic.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LowPass {
    pub response: Response,
    pub order: u32,
    pub cutoff_hz: f64,
}

/// Step-response model on the normalised prototype (τ = 2π·fc·t).
enum Step {
    /// n-fold real pole at −a.
    Repeated { n: u32, a: f64 },
    /// Distinct poles uᵢ with step coefficients cᵢ.
    Distinct { u: Vec<Cx>, c: Vec<Cx> },
}

impl Step {
    /// e(τ) = y − 1 and de/dτ.
    fn error(&self, tau: f64) -> (f64, f64) {
        match self {
            Step::Repeated { n, a } => {
                let x = a * tau;
                let (mut term, mut sum) = (1.0, 1.0);
                for k in 1..*n {
                    term *= x / f64::from(k);
                    sum += term;
                }
                // term now holds x^(n−1)/(n−1)!
                let ex = (-x).exp();
                (-ex * sum, a * ex * term)
            }
            Step::Distinct { u, c } => u.iter().zip(c).fold((0.0, 0.0), |(e, de), (&ui, &ci)| {
                let t = ci * ui.scale(tau).exp();
                (e + t.re, de + (t * ui).re)
            }),
        }
    }

    /// A τ after which |e| ≤ fraction for ever, and a scan step well below
    /// the fastest pole's period.
    fn horizon(&self, fraction: f64) -> (f64, f64) {
        match self {
            Step::Repeated { a, .. } => {
                // |e| falls monotonically: double until it is below.
                let mut tau = 1.0 / a;
                while self.error(tau).0.abs() > fraction && tau.is_finite() {
                    tau *= 2.0;
                }
                (tau, tau / 256.0)
            }
            Step::Distinct { u, c } => {
                let sigma = u.iter().map(|p| p.re).fold(f64::NEG_INFINITY, f64::max);
                let size: f64 = c.iter().map(|ci| ci.abs()).sum();
                let fastest = u.iter().map(|p| p.abs()).fold(0.0, f64::max);
                let tau = ((size / fraction).ln() / -sigma).max(0.0);
                (tau, (PI / (16.0 * fastest)).min(tau / 64.0).max(1e-9))
            }
        }
    }
}

impl LowPass {
    /// A filter of `order` 1..=8 with −3 dB frequency `cutoff_hz` (finite, > 0).
    pub fn new(response: Response, order: u32, cutoff_hz: f64) -> Result<Self, FilterError> {
        let lp = LowPass {
            response,
            order,
            cutoff_hz,
        };
        lp.validate()?;
        Ok(lp)
    }

    /// Checks the fields (they are public, so they can change after `new`).
    pub fn validate(&self) -> Result<(), FilterError> {
        check_order(self.order)?;
        if !(self.cutoff_hz.is_finite() && self.cutoff_hz > 0.0) {
            return Err(FilterError::Cutoff(self.cutoff_hz));
        }
        Ok(())
    }

    /// Poles of the prototype normalised to 1 rad/s.
    fn unit_poles(&self) -> Result<Vec<Cx>, FilterError> {
        self.validate()?;
        match self.response {
            Response::Rc => {
                let a = prototype::rc_section_corner(self.order);
                Ok(vec![Cx::new(-a, 0.0); self.order as usize])
            }
            Response::Butterworth => Ok(prototype::butterworth(self.order)),
            Response::Bessel => prototype::bessel(self.order).ok_or(FilterError::Poles),
        }
    }

    fn step_model(&self) -> Result<Step, FilterError> {
        let u = self.unit_poles()?;
        if self.response == Response::Rc {
            return Ok(Step::Repeated {
                n: self.order,
                a: -u[0].re,
            });
        }
        let c = (0..u.len())
            .map(|i| residue(&u, i) / u[i])
            .collect::<Vec<_>>();
        Ok(Step::Distinct { u, c })
    }

    /// s-plane poles in rad/s as (re, im); conjugate pairs adjacent, the
    /// real pole last. Empty if the fields are invalid.
    pub fn poles(&self) -> Vec<(f64, f64)> {
        let wc = 2.0 * PI * self.cutoff_hz;
        self.unit_poles()
            .map(|u| u.iter().map(|p| (p.re * wc, p.im * wc)).collect())
            .unwrap_or_default()
    }

    /// |H(j2πf)|, DC gain 1; even in f.
    pub fn magnitude(&self, f_hz: f64) -> f64 {
        let Ok(u) = self.unit_poles() else {
            return f64::NAN;
        };
        let x = f_hz / self.cutoff_hz;
        u.iter().map(|p| p.abs() / p.re.hypot(x - p.im)).product()
    }

    /// Attenuation −20·log₁₀|H| in dB (positive in the stop band).
    pub fn attenuation_db(&self, f_hz: f64) -> f64 {
        -20.0 * self.magnitude(f_hz).log10()
    }

    /// Phase of H(j2πf) in radians, continuous (unwrapped): 0 at DC,
    /// tending to −n·π/2.
    pub fn phase_rad(&self, f_hz: f64) -> f64 {
        let Ok(u) = self.unit_poles() else {
            return f64::NAN;
        };
        let x = f_hz / self.cutoff_hz;
        // Each factor 1/(jx − p) has Re(jx − p) > 0, so its angle stays in
        // (−π/2, π/2) and the sum needs no unwrapping.
        -u.iter().map(|p| (x - p.im).atan2(-p.re)).sum::<f64>()
    }

    /// Equivalent noise bandwidth ∫₀^∞ |H(j2πf)|² df in Hz.
    pub fn enbw_hz(&self) -> f64 {
        let Ok(u) = self.unit_poles() else {
            return f64::NAN;
        };
        let per_fc = if self.response == Response::Rc {
            let n = self.order;
            // C(2n−2, n−1)/4^(n−1) as a running product of (2k−1)/(2k).
            let ratio: f64 = (1..n)
                .map(|k| f64::from(2 * k - 1) / f64::from(2 * k))
                .product();
            -u[0].re * PI / 2.0 * ratio
        } else {
            let r: Vec<Cx> = (0..u.len()).map(|i| residue(&u, i)).collect();
            let mut sum = Cx::new(0.0, 0.0);
            for (i, &ri) in r.iter().enumerate() {
                for (j, &rj) in r.iter().enumerate() {
                    sum = sum + ri * rj / (u[i] + u[j]);
                }
            }
            // −½ Σ rᵢrⱼ/(uᵢ+uⱼ) is in Hz for 1 rad/s; ×2π per Hz of fc.
            -PI * sum.re
        };
        per_fc * self.cutoff_hz
    }

    /// Output at time t (s) for a unit step at t = 0; 0 for t ≤ 0.
    pub fn step_response(&self, t_s: f64) -> f64 {
        let Ok(model) = self.step_model() else {
            return f64::NAN;
        };
        if t_s.is_nan() {
            return f64::NAN;
        }
        if t_s <= 0.0 {
            return 0.0;
        }
        let tau = 2.0 * PI * self.cutoff_hz * t_s;
        if tau.is_infinite() {
            return 1.0;
        }
        1.0 + model.error(tau).0
    }

    /// Last time (s) at which |y(t) − 1| > `fraction` for a unit step, i.e.
    /// the settling time to that fraction of the step (½ LSB of an N-bit
    /// full-scale step: fraction = 2^−(N+1)). 0 if the error never exceeds it
    /// (fraction ≥ 1).
    pub fn settling_time_s(&self, fraction: f64) -> Result<f64, FilterError> {
        if !(fraction.is_finite() && fraction > 0.0) {
            return Err(FilterError::Fraction(fraction));
        }
        let model = self.step_model()?;
        if fraction >= 1.0 {
            return Ok(0.0);
        }
        let exceeds = |tau: f64| model.error(tau).0.abs() > fraction;
        let (end, dt) = model.horizon(fraction);
        let steps = (end / dt).ceil().min(1e7) as usize;
        let mut hi = end;
        let mut d_hi = model.error(hi).1;
        for k in (0..steps).rev() {
            let lo = k as f64 * end / steps as f64;
            let (e_lo, d_lo) = model.error(lo);
            // An extremum inside [lo, hi] may rise above the fraction even
            // though both ends are below it.
            if d_lo * d_hi < 0.0 {
                let t_star = bisect(lo, hi, |t| (model.error(t).1 * d_lo) > 0.0);
                if exceeds(t_star) {
                    return Ok(self.seconds(bisect(t_star, hi, exceeds)));
                }
                if e_lo.abs() > fraction {
                    return Ok(self.seconds(bisect(lo, t_star, exceeds)));
                }
            } else if e_lo.abs() > fraction {
                return Ok(self.seconds(bisect(lo, hi, exceeds)));
            }
            hi = lo;
            d_hi = d_lo;
        }
        Ok(0.0)
    }

    fn seconds(&self, tau: f64) -> f64 {
        tau / (2.0 * PI * self.cutoff_hz)
    }
}

/// Residue of the unit-DC-gain all-pole H at its simple pole uᵢ:
/// Πⱼ(−uⱼ) / Πⱼ≠ᵢ(uᵢ − uⱼ).
fn residue(u: &[Cx], i: usize) -> Cx {
    u.iter().enumerate().fold(-u[i], |acc, (j, &uj)| {
        if j == i {
            acc
        } else {
            acc * (-uj) / (u[i] - uj)
        }
    })
}

/// Point where `pred` turns from true (at `lo`) to false (at `hi`),
/// bisected until the interval cannot shrink in f64.
fn bisect(lo: f64, hi: f64, pred: impl Fn(f64) -> bool) -> f64 {
    super::solve::bisect(lo, hi, pred).1
}
