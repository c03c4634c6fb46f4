//! Validation of the GUM uncertainty framework by Monte Carlo (JCGM
//! 101:2008 §8): at each point, how far the ends of GUM's coverage
//! interval lie from the Monte Carlo interval's, against a tolerance.
//! Where they agree, GUM's normal assumption holds there; where not, the
//! Monte Carlo interval is the one to use.
//!
//! Both intervals are of the same coverage probability (§8.1): GUM's is
//! ± k_p u with k_p = 1.960 for 95 %, not the report's k = 2, which would
//! fail even a perfectly normal output by 2 % of its width.

use super::draws::inverse_normal_cdf;
use super::monte_carlo::{Interval, COVERAGE};

/// The significant digits u(y) is taken to need (JCGM 101:2008 §7.9.2
/// names one or two; two is the stricter).
pub const SIGNIFICANT_DIGITS: i32 = 2;

/// How often the widened bracket on a Monte Carlo end misses: 0.1 %.
const BRACKET_MISS: f64 = 0.001;

#[derive(Clone, Copy, Debug, PartialEq)]
pub struct GumCheck {
    /// |(−U_p) − low| and |U_p − high|, where GUM's interval of the
    /// Monte Carlo's coverage probability is ± U_p.
    pub d_low: f64,
    pub d_high: f64,
    /// δ of u(y) (§7.9.2) plus the Monte Carlo ends' numerical width,
    /// widened from a 95 % to a 99.9 % bracket.
    pub tolerance: f64,
    /// Both ends within the tolerance: GUM validated at the point.
    pub validated: bool,
}

/// The numerical tolerance δ of a standard uncertainty `u` stated to
/// [`SIGNIFICANT_DIGITS`] digits (JCGM 101:2008 §7.9.2): u = c × 10^ℓ
/// with c an integer of that many digits, δ = ½ × 10^ℓ.
pub fn numerical_tolerance(u: f64) -> f64 {
    if u <= 0.0 || !u.is_finite() {
        return 0.0;
    }
    let l = u.log10().floor() as i32 - (SIGNIFICANT_DIGITS - 1);
    0.5 * 10f64.powi(l)
}

/// §8.2's comparison at one point: GUM's standard uncertainty `standard`
/// (its interval ± k_p u) against the Monte Carlo `interval`. The
/// tolerance adds the interval's own numerical width to δ, widened from
/// its 95 % bracket to 99.9 % (3.29 rather than 1.96 standard errors):
/// a budget compares some 63 points, two ends each, and at 95 % a GUM
/// that holds would be flagged at several of them by chance.
pub fn check(standard: f64, interval: &Interval) -> GumCheck {
    let k_p = inverse_normal_cdf((1.0 + COVERAGE) / 2.0);
    let expanded = k_p * standard;
    let d_low = (-expanded - interval.low).abs();
    let d_high = (expanded - interval.high).abs();
    let widen = inverse_normal_cdf(1.0 - BRACKET_MISS / 2.0) / k_p;
    let tolerance = numerical_tolerance(standard) + widen * interval.numerical;
    GumCheck {
        d_low,
        d_high,
        tolerance,
        validated: d_low.max(d_high) <= tolerance,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// JCGM 101:2008 §7.9.2's example, recalled from memory: u(y) =
    /// 0.000 35 stated to two digits is 35 × 10⁻⁵, so δ = 0.5 × 10⁻⁵.
    #[test]
    fn tolerance_is_half_a_unit_of_the_last_digit() {
        assert!((numerical_tolerance(0.000_35) - 0.5e-5).abs() < 1e-20);
        assert!((numerical_tolerance(1.0) - 0.05).abs() < 1e-15);
        assert!((numerical_tolerance(0.099) - 0.0005).abs() < 1e-15);
        assert_eq!(numerical_tolerance(0.0), 0.0);
    }

    /// One rectangular source of half-width 1: GUM gives ± 1.96/√3 =
    /// ± 1.132, Monte Carlo ± 0.95 (closed forms); 0.182 apart, far beyond
    /// δ. A normal output's 95 % interval is GUM's.
    #[test]
    fn one_rectangular_source_is_not_validated() {
        let mc = Interval {
            low: -0.95,
            high: 0.95,
            numerical: 0.005,
        };
        let u = 1.0 / 3f64.sqrt();
        let c = check(u, &mc);
        assert!((c.d_high - 0.1816).abs() < 1e-4, "{c:?}");
        assert!(!c.validated);
        let normal = Interval {
            low: -1.96 * u,
            high: 1.96 * u,
            numerical: 0.0,
        };
        assert!(check(u, &normal).validated);
    }
}
