//! NTC thermistors: the Beta model and the Steinhart–Hart equation.
//!
//! * Beta model: R = R_ref exp(β (1/T − 1/T_ref)), T in K.
//! * Steinhart–Hart: 1/T = A + B ln R + C (ln R)³, R in Ω, T in K
//!   (J. S. Steinhart and S. R. Hart, "Calibration curves for thermistors",
//!   Deep-Sea Research 15, 497–503, 1968).
//!
//! The Beta model is the Steinhart–Hart equation with C = 0, so a
//! three-point fit of a single Beta curve returns C = 0 exactly; a real
//! curve (e.g. one rated with different β(25/50) and β(25/85)) gives C > 0.

use super::exp::exp;

/// Why a thermistor computation has no answer.
#[derive(Debug, Clone, Copy, PartialEq, Eq, thiserror::Error)]
pub enum ThermistorError {
    /// An input was NaN or infinite.
    #[error("input is not a finite number")]
    NonFinite,
    /// A resistance was zero or negative.
    #[error("resistance must be positive")]
    NonPositiveResistance,
    /// An absolute temperature was zero or negative (or would result).
    #[error("absolute temperature must be positive")]
    NonPositiveTemperature,
    /// β is zero or B ≤ 0.
    #[error("invalid model parameter")]
    InvalidParameter,
    /// The three fit points do not determine the coefficients.
    #[error("fit points do not determine the coefficients")]
    Singular,
    /// The coefficients give no single resistance on the rising branch.
    #[error("no unique resistance for this temperature")]
    NoUniqueSolution,
    /// The result overflows f64.
    #[error("result overflows")]
    Overflow,
}

type Res<T> = Result<T, ThermistorError>;

fn finite(values: &[f64]) -> Res<()> {
    if values.iter().all(|v| v.is_finite()) {
        Ok(())
    } else {
        Err(ThermistorError::NonFinite)
    }
}

fn positive_r(r: f64) -> Res<()> {
    if r > 0.0 {
        Ok(())
    } else {
        Err(ThermistorError::NonPositiveResistance)
    }
}

fn positive_t(t_k: f64) -> Res<()> {
    if t_k > 0.0 {
        Ok(())
    } else {
        Err(ThermistorError::NonPositiveTemperature)
    }
}

fn finite_out(v: f64) -> Res<f64> {
    if v.is_finite() {
        Ok(v)
    } else {
        Err(ThermistorError::Overflow)
    }
}

/// Beta model resistance in Ω at `t_k` K, given `r_ref` Ω at `t_ref_k` K.
pub fn beta_resistance(r_ref: f64, t_ref_k: f64, beta_k: f64, t_k: f64) -> Res<f64> {
    finite(&[r_ref, t_ref_k, beta_k, t_k])?;
    positive_r(r_ref)?;
    positive_t(t_ref_k)?;
    positive_t(t_k)?;
    finite_out(r_ref * exp(beta_exponent(t_ref_k, beta_k, t_k)))
}

/// The beta model's exponent, ln(R/R_ref) = β (1/T − 1/T_ref): the
/// arithmetic [`beta_resistance`] does before its exponential, for
/// callers that take the exponentials of many at once.
#[inline(always)]
pub fn beta_exponent(t_ref_k: f64, beta_k: f64, t_k: f64) -> f64 {
    beta_k * (1.0 / t_k - 1.0 / t_ref_k)
}

/// Beta model temperature in K at which the thermistor reads `r` Ω.
pub fn beta_temperature_k(r_ref: f64, t_ref_k: f64, beta_k: f64, r: f64) -> Res<f64> {
    finite(&[r_ref, t_ref_k, beta_k, r])?;
    positive_r(r_ref)?;
    positive_r(r)?;
    positive_t(t_ref_k)?;
    if beta_k == 0.0 {
        return Err(ThermistorError::InvalidParameter);
    }
    let inv_t = 1.0 / t_ref_k + (r / r_ref).ln() / beta_k;
    if inv_t <= 0.0 {
        return Err(ThermistorError::NonPositiveTemperature);
    }
    finite_out(1.0 / inv_t)
}

/// Steinhart–Hart coefficients: A in 1/K, B in 1/K per ln Ω, C in 1/K per (ln Ω)³.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SteinhartHart {
    pub a: f64,
    pub b: f64,
    pub c: f64,
}

/// Steinhart–Hart temperature in K at `r` Ω.
pub fn sh_temperature_k(k: SteinhartHart, r: f64) -> Res<f64> {
    finite(&[k.a, k.b, k.c, r])?;
    positive_r(r)?;
    let l = r.ln();
    let inv_t = k.a + k.b * l + k.c * l * l * l;
    if inv_t <= 0.0 {
        return Err(ThermistorError::NonPositiveTemperature);
    }
    finite_out(1.0 / inv_t)
}

/// Steinhart–Hart resistance in Ω at `t_k` K: the real root x = ln R of
/// C x³ + B x + (A − 1/T) = 0 by the closed-form (Cardano) solution,
/// written without cancellation, then one Newton step to remove the cube
/// roots' rounding. Needs B > 0 (an NTC); for C < 0 the root on the rising
/// branch between the cubic's turning points is taken.
pub fn sh_resistance(k: SteinhartHart, t_k: f64) -> Res<f64> {
    finite(&[k.a, k.b, k.c, t_k])?;
    positive_t(t_k)?;
    if k.b <= 0.0 {
        return Err(ThermistorError::InvalidParameter);
    }
    let e = k.a - 1.0 / t_k; // constant term of the cubic
    let linear = -e / k.b;
    let x = if k.c == 0.0 {
        linear
    } else {
        let p = k.b / k.c;
        let q = e / k.c;
        let disc = 0.25 * q * q + p * p * p / 27.0;
        if !disc.is_finite() {
            linear // C negligible against B: the cubic term cannot matter
        } else if disc >= 0.0 {
            if p < 0.0 {
                // C < 0 with a single real root: it lies on a falling branch.
                return Err(ThermistorError::NoUniqueSolution);
            }
            // x = u + v with uv = −p/3 and u³ + v³ = −q, hence
            // x = −q / (u² − uv + v²): every term positive for p > 0.
            let h = -0.5 * q;
            let u = (h + h.signum() * disc.sqrt()).cbrt();
            if u == 0.0 {
                0.0
            } else {
                let v = -p / (3.0 * u);
                -q / (u * u + p / 3.0 + v * v)
            }
        } else {
            // Three real roots (C < 0): take the one between the turning
            // points ±√(−p/3), where the curve rises.
            let m = (-p / 3.0).sqrt();
            let phi = ((-0.5 * q) / (m * m * m)).clamp(-1.0, 1.0).acos();
            let tau = 2.0 * std::f64::consts::PI / 3.0;
            (0..3)
                .map(|j| 2.0 * m * (phi / 3.0 - tau * f64::from(j)).cos())
                .find(|x| x.abs() < m)
                .ok_or(ThermistorError::NoUniqueSolution)?
        }
    };
    let f = k.c * x * x * x + k.b * x + e;
    let df = 3.0 * k.c * x * x + k.b;
    let x = if df > 0.0 { x - f / df } else { x };
    finite_out(exp(x))
}

/// Three-point Steinhart–Hart fit: `points` are (T in K, R in Ω). Solves
/// the 3 × 3 linear system in (A, B, C) by Gaussian elimination with
/// partial pivoting.
pub fn steinhart_hart_fit(points: [(f64, f64); 3]) -> Res<SteinhartHart> {
    let mut m = [[0.0_f64; 4]; 3];
    for (row, &(t_k, r)) in m.iter_mut().zip(points.iter()) {
        finite(&[t_k, r])?;
        positive_t(t_k)?;
        positive_r(r)?;
        let l = r.ln();
        *row = [1.0, l, l * l * l, 1.0 / t_k];
    }
    for col in 0..3 {
        let pivot = (col..3)
            .max_by(|&i, &j| m[i][col].abs().total_cmp(&m[j][col].abs()))
            .unwrap_or(col);
        m.swap(col, pivot);
        let scale = m.iter().map(|r| r[col].abs()).fold(0.0, f64::max);
        if m[col][col].abs() <= 1e-12 * scale {
            return Err(ThermistorError::Singular);
        }
        let pivot_row = m[col];
        for row in m.iter_mut().skip(col + 1) {
            let factor = row[col] / pivot_row[col];
            for (x, p) in row.iter_mut().zip(pivot_row.iter()).skip(col) {
                *x -= factor * p;
            }
        }
    }
    let mut sol = [0.0_f64; 3];
    for i in (0..3).rev() {
        let tail: f64 = (i + 1..3).map(|j| m[i][j] * sol[j]).sum();
        sol[i] = (m[i][3] - tail) / m[i][i];
    }
    finite(&sol)?;
    Ok(SteinhartHart {
        a: sol[0],
        b: sol[1],
        c: sol[2],
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    const T25: f64 = 298.15;

    /// Worked by hand: 10 kΩ, β = 3950 K, at 0 °C:
    /// 1/273.15 − 1/298.15 = 3.069 757e-4 /K; × 3950 K = 1.212 554;
    /// e^1.212 554 = 3.362 060 → 33 620.6 Ω (to 0.05 Ω as written).
    #[test]
    fn beta_worked_example() {
        let r = beta_resistance(10_000.0, T25, 3950.0, 273.15).unwrap();
        assert!((r - 33_620.6).abs() <= 0.05, "{r}");
        assert_eq!(
            beta_resistance(10_000.0, T25, 3950.0, T25).unwrap(),
            10_000.0
        );
        let t = beta_temperature_k(10_000.0, T25, 3950.0, r).unwrap();
        assert!((t - 273.15).abs() < 1e-10);
    }

    /// Beta is S–H with C = 0: B = 1/β, A = 1/T25 − ln(R25)/β.
    #[test]
    fn fit_of_beta_curve_has_no_cubic_term() {
        let pts = [233.15, 315.65, 398.15]
            .map(|t| (t, beta_resistance(10_000.0, T25, 3950.0, t).unwrap()));
        let k = steinhart_hart_fit(pts).unwrap();
        assert!((k.b - 1.0 / 3950.0).abs() < 1e-12 * k.b);
        assert!((k.a - (1.0 / T25 - 10_000f64.ln() / 3950.0)).abs() < 1e-12 * k.a);
        assert!(k.c.abs() < 1e-12 * k.b);
        for t in [240.0, 300.0, 390.0] {
            let r = sh_resistance(k, t).unwrap();
            let r_beta = beta_resistance(10_000.0, T25, 3950.0, t).unwrap();
            assert!((r - r_beta).abs() < 1e-10 * r_beta);
        }
    }

    /// A curve with curvature: fit, then forward and inverse round trips.
    #[test]
    fn sh_round_trip() {
        let pts = [(298.15, 10_000.0), (323.15, 4160.0), (358.15, 1451.0)];
        let k = steinhart_hart_fit(pts).unwrap();
        assert!(k.c > 0.0);
        for (t, r) in pts {
            assert!((sh_temperature_k(k, r).unwrap() - t).abs() < 1e-9);
            assert!((sh_resistance(k, t).unwrap() - r).abs() < 1e-9 * r);
        }
        let mut t = 233.15;
        while t <= 398.15 {
            let r = sh_resistance(k, t).unwrap();
            assert!((sh_temperature_k(k, r).unwrap() - t).abs() < 1e-9, "{t}");
            t += 0.5;
        }
    }

    /// C < 0 (three real roots): the root on the rising branch is chosen.
    #[test]
    fn sh_negative_c_takes_rising_branch() {
        let k = SteinhartHart {
            a: 1.0e-3,
            b: 2.5e-4,
            c: -1.0e-8,
        };
        for t in [260.0, 300.0, 350.0] {
            let r = sh_resistance(k, t).unwrap();
            assert!((sh_temperature_k(k, r).unwrap() - t).abs() < 1e-9);
        }
    }

    #[test]
    fn errors_are_values() {
        let k = SteinhartHart {
            a: 1.0e-3,
            b: 2.5e-4,
            c: 1.0e-7,
        };
        use ThermistorError::*;
        assert_eq!(sh_temperature_k(k, 0.0), Err(NonPositiveResistance));
        assert_eq!(sh_temperature_k(k, -5.0), Err(NonPositiveResistance));
        assert_eq!(sh_temperature_k(k, f64::NAN), Err(NonFinite));
        assert_eq!(sh_resistance(k, 0.0), Err(NonPositiveTemperature));
        assert_eq!(sh_resistance(k, f64::INFINITY), Err(NonFinite));
        assert_eq!(
            beta_resistance(1e4, T25, 3950.0, -1.0),
            Err(NonPositiveTemperature)
        );
        assert_eq!(
            beta_resistance(0.0, T25, 3950.0, 300.0),
            Err(NonPositiveResistance)
        );
        assert_eq!(
            beta_temperature_k(1e4, T25, 0.0, 1e3),
            Err(InvalidParameter)
        );
        assert_eq!(
            beta_temperature_k(1e4, T25, 3950.0, f64::NAN),
            Err(NonFinite)
        );
        assert_eq!(beta_resistance(1e4, T25, 3950.0, 1e-3), Err(Overflow));
        let dup = [(300.0, 1e4), (300.0, 1e4), (350.0, 2e3)];
        assert_eq!(steinhart_hart_fit(dup), Err(Singular));
        assert_eq!(
            steinhart_hart_fit([(0.0, 1e4), (1.0, 1.0), (2.0, 2.0)]),
            Err(NonPositiveTemperature)
        );
    }
}
