//! Acquisition settling of a sampling (successive-approximation) converter.
//!
//! During the acquisition time t the converter's sampling capacitor C
//! charges through the source resistance in series with its own sampling
//! switch, R = R_source + R_switch: a single pole, whose step response
//! leaves the fraction e^(−t/(R·C)) of the step unsettled (the first-order
//! RC step response of any circuit text, e.g. Horowitz and Hill, *The Art
//! of Electronics*, 3rd ed., §1.4.2). The worst step is a full-scale one
//! (the capacitor left at the other end of the range by the previous
//! conversion or channel), so the error is 2^N · e^(−t/(R·C)) LSB for an
//! N-bit converter, whose full scale is 2^N LSB.
//!
//! Settled means within ½ LSB (common practice in converter application
//! notes): t ≥ R·C·ln(2^(N+1)), so the largest source resistance is
//! t / (C·ln(2^(N+1))) − R_switch.
//!
//! The model holds where nothing but the source resistance feeds the
//! sampling capacitor; a capacitor at the converter's input shares its
//! charge instead, which this model does not describe.

/// The settling criterion, in LSB (common practice: ½ LSB).
pub const SETTLED_LSB: f64 = 0.5;

/// The unsettled part of a full-scale step after `t` s, in LSB of an
/// `bits`-bit converter, charging `c` F through `r` Ω (source and switch).
pub fn settling_error_lsb(bits: u32, r: f64, c: f64, t: f64) -> f64 {
    let tau = r * c;
    if tau <= 0.0 {
        return 0.0;
    }
    // 2^N e^(−t/τ) as one exponential, so a long acquisition underflows
    // to zero rather than multiplying a denormal.
    (f64::from(bits) * std::f64::consts::LN_2 - t / tau).exp()
}

/// ln(2^N / `within` LSB): the number of time constants a full-scale step
/// needs to settle within `within` LSB.
fn time_constants(bits: u32, within: f64) -> f64 {
    f64::from(bits) * std::f64::consts::LN_2 - within.ln()
}

/// The largest total resistance (source and switch) that settles within
/// `within` LSB in `t` s on `c` F.
pub fn largest_resistance(bits: u32, c: f64, t: f64, within: f64) -> f64 {
    t / (c * time_constants(bits, within))
}

/// The shortest acquisition time that settles `r` Ω on `c` F within
/// `within` LSB.
pub fn shortest_acquisition(bits: u32, r: f64, c: f64, within: f64) -> f64 {
    r * c * time_constants(bits, within)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Worked by hand: 12 bits, 10 pF, 1 µs through 51 kΩ: τ = 510 ns,
    /// 4096 · e^(−1/0.51) = 576.5 LSB.
    #[test]
    fn full_scale_step_error_by_hand() {
        let e = settling_error_lsb(12, 51e3, 10e-12, 1e-6);
        assert!((e - 4096.0 * (-1.0f64 / 0.51).exp()).abs() < 1e-9);
        assert!((e - 576.5).abs() < 0.05, "{e}");
    }

    /// At the largest resistance the error is exactly the criterion, and
    /// the shortest acquisition of that resistance is the time given.
    #[test]
    fn limits_meet_the_criterion() {
        let r = largest_resistance(16, 20e-12, 2e-6, SETTLED_LSB);
        assert!((settling_error_lsb(16, r, 20e-12, 2e-6) - 0.5).abs() < 1e-12);
        assert!((shortest_acquisition(16, r, 20e-12, SETTLED_LSB) - 2e-6).abs() < 1e-18);
        // ln(2^13) = 9.0109: 1 µs / (10 pF × 9.0109) = 11.098 kΩ.
        let r12 = largest_resistance(12, 10e-12, 1e-6, SETTLED_LSB);
        assert!((r12 - 11_097.9).abs() < 0.5, "{r12}");
    }

    #[test]
    fn no_resistance_settles_at_once() {
        assert_eq!(settling_error_lsb(24, 0.0, 10e-12, 1e-6), 0.0);
        assert_eq!(settling_error_lsb(24, 1e3, 10e-12, 1.0), 0.0);
    }
}
