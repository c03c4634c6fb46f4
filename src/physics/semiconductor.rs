//! Integrated semiconductor temperature sensors.
//!
//! * Voltage output: V = V0 + S (t − t0), V in V, S in V/K, t in °C.
//! * PTAT current output: I = k T with T the absolute temperature in K and
//!   k in A/K. A bipolar pair run at a fixed current-density ratio n has
//!   ΔV_BE = (k_B T / q) ln n, proportional to absolute temperature; a
//!   current sensor turns it into I = k T (P. R. Gray, P. J. Hurst,
//!   S. H. Lewis, R. G. Meyer, "Analysis and Design of Analog Integrated
//!   Circuits", the chapter on references; chapter recalled from memory).
//!
//! Accuracy bands, output impedance and supply range are data of the
//! particular sensor and are carried by the specification, not here.

/// Why a semiconductor-sensor computation has no answer.
#[derive(Debug, Clone, Copy, PartialEq, Eq, thiserror::Error)]
pub enum SemiconductorError {
    /// An input was NaN or infinite.
    #[error("input is not a finite number")]
    NonFinite,
    /// An absolute temperature at or below 0 K would result.
    #[error("absolute temperature must be positive")]
    NonPositiveTemperature,
}

fn finite(values: &[f64]) -> Result<(), SemiconductorError> {
    if values.iter().all(|v| v.is_finite()) {
        Ok(())
    } else {
        Err(SemiconductorError::NonFinite)
    }
}

/// Output voltage in V at `t_c` °C: V0 (V at `t0_c` °C) + S (V/K) × (t − t0).
pub fn linear_voltage_v(v0: f64, s_v_per_k: f64, t0_c: f64, t_c: f64) -> f64 {
    v0 + s_v_per_k * (t_c - t0_c)
}

/// PTAT output current in A at `t_k` K for `k_a_per_k` A/K.
pub fn ptat_current_a(k_a_per_k: f64, t_k: f64) -> Result<f64, SemiconductorError> {
    finite(&[k_a_per_k, t_k])?;
    if t_k <= 0.0 {
        return Err(SemiconductorError::NonPositiveTemperature);
    }
    Ok(k_a_per_k * t_k)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Worked by hand for a sensor rated 750 mV at 25 °C and 10 mV/°C:
    /// 0 °C → 0.750 − 0.010 × 25 = 0.500 V; 125 °C → 0.750 + 1.000 = 1.750 V.
    #[test]
    fn linear_voltage_worked_example() {
        assert!((linear_voltage_v(0.75, 0.01, 25.0, 0.0) - 0.5).abs() < 1e-15);
        assert!((linear_voltage_v(0.75, 0.01, 25.0, 125.0) - 1.75).abs() < 1e-15);
    }

    /// Worked by hand: 1 µA/K at 25 °C = 298.15 K gives 298.15 µA; at
    /// −55 °C = 218.15 K, 218.15 µA.
    #[test]
    fn ptat_worked_example() {
        let i = ptat_current_a(1e-6, 298.15).unwrap();
        assert!((i - 298.15e-6).abs() < 1e-18);
        let i = ptat_current_a(1e-6, 218.15).unwrap();
        assert!((i - 218.15e-6).abs() < 1e-18);
        assert_eq!(
            ptat_current_a(1e-6, 0.0),
            Err(SemiconductorError::NonPositiveTemperature)
        );
        assert_eq!(
            ptat_current_a(f64::NAN, 300.0),
            Err(SemiconductorError::NonFinite)
        );
    }
}
