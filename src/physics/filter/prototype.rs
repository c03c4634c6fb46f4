//! Normalised analog low-pass prototypes (cutoff 1 rad/s, −3 dB there) and
//! the small complex arithmetic they need.
//!
//! Sources:
//! - Butterworth poles in closed form on the unit circle:
//!   S. Butterworth, "On the theory of filter amplifiers", Wireless Engineer 7
//!   (1930); A. B. Williams and F. J. Taylor, *Electronic Filter Design
//!   Handbook*, 4th ed., McGraw-Hill 2006, ch. 2.
//! - Bessel (Thomson) poles as the roots of the reverse Bessel polynomial
//!   θₙ(s) = Σₖ aₖ sᵏ, aₖ = (2n−k)! / (2ⁿ⁻ᵏ k! (n−k)!): W. E. Thomson,
//!   "Delay networks having maximally flat frequency characteristics",
//!   Proc. IEE 96 (1949); Williams and Taylor, ch. 2. The roots are found
//!   with the Aberth–Ehrlich iteration (O. Aberth, "Iteration methods for
//!   finding all zeros of a polynomial simultaneously", Math. Comp. 27, 1973)
//!   and polished by Newton steps, then the set is scaled so that
//!   |H(j·1)| = 1/√2 (magnitude normalisation).
//! - RC: n identical buffered first-order sections, each with its corner at
//!   1/√(2^(1/n) − 1) so the cascade is −3 dB at 1 rad/s.

use std::ops::{Add, Div, Mul, Neg, Sub};

/// Complex number, just what the pole arithmetic needs.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Cx {
    pub re: f64,
    pub im: f64,
}

impl Cx {
    pub const fn new(re: f64, im: f64) -> Self {
        Cx { re, im }
    }
    pub fn abs(self) -> f64 {
        self.re.hypot(self.im)
    }
    pub fn conj(self) -> Self {
        Cx::new(self.re, -self.im)
    }
    pub fn exp(self) -> Self {
        let m = self.re.exp();
        // A zero modulus must not meet an infinite angle term (0·NaN).
        if m == 0.0 {
            return Cx::new(0.0, 0.0);
        }
        Cx::new(m * self.im.cos(), m * self.im.sin())
    }
    pub fn scale(self, k: f64) -> Self {
        Cx::new(self.re * k, self.im * k)
    }
    fn is_finite(self) -> bool {
        self.re.is_finite() && self.im.is_finite()
    }
}

impl Add for Cx {
    type Output = Cx;
    fn add(self, o: Cx) -> Cx {
        Cx::new(self.re + o.re, self.im + o.im)
    }
}
impl Sub for Cx {
    type Output = Cx;
    fn sub(self, o: Cx) -> Cx {
        Cx::new(self.re - o.re, self.im - o.im)
    }
}
impl Neg for Cx {
    type Output = Cx;
    fn neg(self) -> Cx {
        Cx::new(-self.re, -self.im)
    }
}
impl Mul for Cx {
    type Output = Cx;
    fn mul(self, o: Cx) -> Cx {
        Cx::new(
            self.re * o.re - self.im * o.im,
            self.re * o.im + self.im * o.re,
        )
    }
}
impl Div for Cx {
    type Output = Cx;
    /// Smith's algorithm: avoids overflow in the denominator's squares.
    fn div(self, o: Cx) -> Cx {
        if o.re.abs() >= o.im.abs() {
            let r = o.im / o.re;
            let d = o.re + o.im * r;
            Cx::new((self.re + self.im * r) / d, (self.im - self.re * r) / d)
        } else {
            let r = o.re / o.im;
            let d = o.re * r + o.im;
            Cx::new((self.re * r + self.im) / d, (self.im * r - self.re) / d)
        }
    }
}

/// Butterworth poles for cutoff 1 rad/s: −sin θₖ ± j cos θₖ with
/// θₖ = (2k+1)π/(2n); conjugate pairs first (largest |Im| first), the real
/// pole of odd orders last, set exactly real.
pub(crate) fn butterworth(n: u32) -> Vec<Cx> {
    let nf = f64::from(n);
    let mut poles = Vec::with_capacity(n as usize);
    for k in 0..n / 2 {
        let theta = f64::from(2 * k + 1) * std::f64::consts::PI / (2.0 * nf);
        let p = Cx::new(-theta.sin(), theta.cos());
        poles.push(p);
        poles.push(p.conj());
    }
    if n % 2 == 1 {
        poles.push(Cx::new(-1.0, 0.0));
    }
    poles
}

/// Corner (rad/s) of each of n identical sections whose cascade is −3 dB at
/// 1 rad/s: (1 + b⁻²)^(−n/2) = 2^(−1/2) gives b = 1/√(2^(1/n) − 1).
pub(crate) fn rc_section_corner(n: u32) -> f64 {
    // exp_m1 keeps 2^(1/n) − 1 accurate for larger n.
    1.0 / (std::f64::consts::LN_2 / f64::from(n)).exp_m1().sqrt()
}

/// Coefficients a₀..aₙ (ascending powers) of the reverse Bessel polynomial,
/// by the ratio aₖ₋₁/aₖ = k(2n−k+1) / (2(n−k+1)) from aₙ = 1.
fn reverse_bessel_coefficients(n: u32) -> Vec<f64> {
    let n = n as usize;
    let mut a = vec![0.0; n + 1];
    a[n] = 1.0;
    for k in (1..=n).rev() {
        a[k - 1] = a[k] * (k * (2 * n - k + 1)) as f64 / (2 * (n - k + 1)) as f64;
    }
    a
}

/// Polynomial and its derivative at z (Horner), ascending coefficients.
fn horner(a: &[f64], z: Cx) -> (Cx, Cx) {
    let mut p = Cx::new(0.0, 0.0);
    let mut dp = Cx::new(0.0, 0.0);
    for &c in a.iter().rev() {
        dp = dp * z + p;
        p = p * z + Cx::new(c, 0.0);
    }
    (p, dp)
}

/// All roots of a real polynomial (ascending coefficients, aₙ ≠ 0) by the
/// Aberth–Ehrlich simultaneous iteration, then two Newton polishing steps.
/// Deterministic: fixed starting points and sweep order.
/// None if it fails to converge to finite roots with a small residual.
fn aberth_roots(a: &[f64]) -> Option<Vec<Cx>> {
    let n = a.len().checked_sub(1).filter(|&n| n > 0)?;
    let radius = (a[0] / a[n]).abs().powf(1.0 / n as f64);
    // Start on a circle of the roots' geometric-mean radius, rotated off the
    // real axis so no start is conjugate-symmetric to another.
    let mut z: Vec<Cx> = (0..n)
        .map(|k| {
            let ang = 2.0 * std::f64::consts::PI * k as f64 / n as f64 + 0.4;
            Cx::new(radius * ang.cos(), radius * ang.sin())
        })
        .collect();
    let one = Cx::new(1.0, 0.0);
    let mut polish_sweeps = 0;
    for _ in 0..500 {
        let mut largest = 0.0_f64;
        for k in 0..n {
            let (p, dp) = horner(a, z[k]);
            if p.abs() == 0.0 {
                continue;
            }
            let w = p / dp;
            let mut s = Cx::new(0.0, 0.0);
            for (j, &zj) in z.iter().enumerate() {
                if j != k {
                    s = s + one / (z[k] - zj);
                }
            }
            let step = w / (one - w * s);
            if step.is_finite() {
                z[k] = z[k] - step;
                largest = largest.max(step.abs() / z[k].abs().max(f64::MIN_POSITIVE));
            }
        }
        // Convergence is quadratic until rounding noise (~1e-13 relative
        // for n = 8) takes over: two sweeps past 1e-10 reach that floor.
        if largest < 1e-10 {
            polish_sweeps += 1;
            if polish_sweeps > 2 {
                break;
            }
        }
    }
    for zk in z.iter_mut() {
        for _ in 0..2 {
            let (p, dp) = horner(a, *zk);
            let step = p / dp;
            if step.is_finite() {
                *zk = *zk - step;
            }
        }
    }
    let ok = z.iter().all(|&zk| {
        let scale: f64 = a
            .iter()
            .enumerate()
            .map(|(k, c)| c.abs() * zk.abs().powi(k as i32))
            .sum();
        zk.is_finite() && horner(a, zk).0.abs() <= 1e-10 * scale
    });
    ok.then_some(z)
}

/// ln |H(jx)|² for the all-pole section with DC gain 1.
pub(crate) fn ln_power_gain(poles: &[Cx], x: f64) -> f64 {
    poles
        .iter()
        .map(|p| {
            let dy = x - p.im;
            (p.re * p.re + p.im * p.im).ln() - (p.re * p.re + dy * dy).ln()
        })
        .sum()
}

/// Bessel (Thomson) poles for a −3 dB cutoff of 1 rad/s, ordered like
/// [`butterworth`]. None if the root finder fails (not seen for n ≤ 8).
pub(crate) fn bessel(n: u32) -> Option<Vec<Cx>> {
    let roots = aberth_roots(&reverse_bessel_coefficients(n))?;
    // Rebuild an exactly conjugate-symmetric set from the upper half-plane
    // roots and the real root, so H(jω) is exactly Hermitian.
    let tiny = |z: &Cx| z.im.abs() <= 1e-8 * z.abs();
    let mut upper: Vec<Cx> = roots
        .iter()
        .copied()
        .filter(|z| z.im > 0.0 && !tiny(z))
        .collect();
    let real: Vec<Cx> = roots.iter().copied().filter(tiny).collect();
    if upper.len() != (n / 2) as usize || real.len() != (n % 2) as usize {
        return None;
    }
    upper.sort_by(|a, b| b.im.total_cmp(&a.im));
    let mut delay_norm = Vec::with_capacity(n as usize);
    for p in upper {
        delay_norm.push(p);
        delay_norm.push(p.conj());
    }
    if let Some(r) = real.first() {
        delay_norm.push(Cx::new(r.re, 0.0));
    }
    // The magnitude falls monotonically, so bisect ln|H|² = −ln 2.
    let g = |x: f64| ln_power_gain(&delay_norm, x) + std::f64::consts::LN_2;
    let (mut lo, mut hi) = (0.0_f64, 1.0_f64);
    while g(hi) > 0.0 {
        lo = hi;
        hi *= 2.0;
        if !hi.is_finite() {
            return None;
        }
    }
    let (lo, hi) = crate::physics::solve::bisect(lo, hi, |x| g(x) > 0.0);
    let w3 = 0.5 * (lo + hi);
    Some(delay_norm.into_iter().map(|p| p.scale(1.0 / w3)).collect())
}
