//! Noise densities and their integration over a band.
//!
//! * Thermal (Johnson–Nyquist) noise of a resistance: e_n = √(4 k T R) in
//!   V/√Hz (J. B. Johnson, Phys. Rev. 32, 97, 1928; H. Nyquist, Phys.
//!   Rev. 32, 110, 1928), with k exact (SI 2019).
//! * A white density over a band B: e_n √B.
//! * A white density e_n with a 1/f corner f_c has the power density
//!   e_n² (1 + f_c/f); integrating from f1 to f2 gives
//!   v_rms = e_n √(f_c ln(f2/f1) + (f2 − f1)).

use super::constants::BOLTZMANN;

/// Why a noise computation has no answer.
#[derive(Debug, Clone, Copy, PartialEq, Eq, thiserror::Error)]
pub enum NoiseError {
    /// An input was NaN or infinite.
    #[error("input is not a finite number")]
    NonFinite,
    /// A resistance, temperature, density or bandwidth was negative (or a
    /// resistance zero where it divides).
    #[error("value must not be negative")]
    Negative,
    /// The band is empty or reversed, or starts at 0 Hz with a 1/f corner.
    #[error("frequency band is invalid")]
    InvalidBand,
}

type Res<T> = Result<T, NoiseError>;

fn finite(values: &[f64]) -> Res<()> {
    if values.iter().all(|v| v.is_finite()) {
        Ok(())
    } else {
        Err(NoiseError::NonFinite)
    }
}

fn non_negative(values: &[f64]) -> Res<()> {
    if values.iter().all(|&v| v >= 0.0) {
        Ok(())
    } else {
        Err(NoiseError::Negative)
    }
}

/// Thermal noise voltage density √(4kTR) in V/√Hz of `r_ohm` Ω at `t_k` K.
pub fn johnson_voltage_density(r_ohm: f64, t_k: f64) -> Res<f64> {
    finite(&[r_ohm, t_k])?;
    non_negative(&[r_ohm, t_k])?;
    Ok((4.0 * BOLTZMANN * t_k * r_ohm).sqrt())
}

/// RMS value (V or A) of a white density (per √Hz) over `bandwidth_hz` Hz.
pub fn rms_over_bandwidth(density: f64, bandwidth_hz: f64) -> Res<f64> {
    finite(&[density, bandwidth_hz])?;
    non_negative(&[density, bandwidth_hz])?;
    Ok(density * bandwidth_hz.sqrt())
}

/// RMS (V) over `f_low_hz` … `f_high_hz` of a white density `e_white` V/√Hz
/// with a 1/f corner at `f_corner_hz`: e √(f_c ln(f2/f1) + (f2 − f1)).
/// With `f_corner_hz` = 0 the band may start at 0 Hz.
pub fn rms_with_flicker(e_white: f64, f_corner_hz: f64, f_low_hz: f64, f_high_hz: f64) -> Res<f64> {
    finite(&[e_white, f_corner_hz, f_low_hz, f_high_hz])?;
    non_negative(&[e_white, f_corner_hz, f_low_hz])?;
    if f_high_hz < f_low_hz {
        return Err(NoiseError::InvalidBand);
    }
    let flicker = if f_corner_hz == 0.0 {
        0.0
    } else if f_low_hz > 0.0 {
        f_corner_hz * (f_high_hz / f_low_hz).ln()
    } else {
        return Err(NoiseError::InvalidBand); // ∫ df/f diverges at 0 Hz
    };
    Ok(e_white * (flicker + (f_high_hz - f_low_hz)).sqrt())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// 1 kΩ at 300 K, worked by hand from the exact k:
    /// 4 × 1.380649e-23 = 5.522596e-23; × 300 = 1.6567788e-20;
    /// × 1000 = 1.6567788e-17 V²/Hz, √ = 4.0704e-9 V/√Hz (≈ 4.07 nV/√Hz,
    /// the usual textbook figure). The square is tested to 1e-12 relative.
    #[test]
    fn johnson_one_kilohm_300_k() {
        let e = johnson_voltage_density(1000.0, 300.0).unwrap();
        assert!((e * e / 1.6567788e-17 - 1.0).abs() < 1e-12, "{e}");
        assert!((e - 4.07e-9).abs() < 0.005e-9);
        // Over 10 kHz: × √10 000 = × 100.
        let v = rms_over_bandwidth(e, 10_000.0).unwrap();
        assert!((v - 100.0 * e).abs() < 1e-24);
    }

    /// Worked by hand: 10 nV/√Hz, corner 100 Hz, 0.1 … 10 Hz:
    /// 100 × ln 100 = 460.517; + 9.9 = 470.417; √ = 21.689 → 216.89 nV.
    /// Also against a numerical integral of e² (1 + f_c/f) on a log grid.
    #[test]
    fn flicker_band() {
        let v = rms_with_flicker(10e-9, 100.0, 0.1, 10.0).unwrap();
        assert!((v - 216.89e-9).abs() < 0.005e-9, "{v}");
        let n = 20_000;
        let (f1, f2): (f64, f64) = (0.1, 10.0);
        let mut power = 0.0;
        for i in 0..n {
            let a = f1 * (f2 / f1).powf(i as f64 / n as f64);
            let b = f1 * (f2 / f1).powf((i + 1) as f64 / n as f64);
            let psd = |f: f64| 1e-16 * (1.0 + 100.0 / f);
            power += 0.5 * (psd(a) + psd(b)) * (b - a);
        }
        assert!((power.sqrt() / v - 1.0).abs() < 1e-7);
        let white = rms_with_flicker(10e-9, 0.0, 0.0, 100.0).unwrap();
        assert!((white - 100e-9).abs() < 1e-20);
    }

    #[test]
    fn errors_are_values() {
        assert_eq!(
            johnson_voltage_density(-1.0, 300.0),
            Err(NoiseError::Negative)
        );
        assert_eq!(
            johnson_voltage_density(1.0, f64::NAN),
            Err(NoiseError::NonFinite)
        );
        assert_eq!(rms_over_bandwidth(1e-9, -1.0), Err(NoiseError::Negative));
        assert_eq!(
            rms_with_flicker(1e-9, 10.0, 0.0, 1.0),
            Err(NoiseError::InvalidBand)
        );
        assert_eq!(
            rms_with_flicker(1e-9, 10.0, 2.0, 1.0),
            Err(NoiseError::InvalidBand)
        );
    }
}
