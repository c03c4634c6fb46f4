//! Strain gauges, Wheatstone bridges, dividers and bridge transducers.
//!
//! * Gauge: ΔR/R = GF · ε, the definition of the gauge factor
//!   (K. Hoffmann, "An Introduction to Measurements using Strain Gages",
//!   1989; citation recalled from memory).
//! * Wheatstone bridge: exact output from the two voltage dividers (Kirchhoff),
//!   with no small-signal approximation.
//! * Transducers rated in mV/V: output = V_exc (S · F/F_fs + Z), the trade's
//!   ratiometric convention for rated output S and zero balance Z (as used
//!   for load cells, OIML R 60).
//!
//! Bridge topology used throughout (excitation + at the top, − at 0 V):
//!
//! ```text
//!        V_exc ──┬──────────┐
//!                r1         r3
//!   out+  (P) ───┤          ├─── (N)  out−
//!                r2         r4
//!        0 V ────┴──────────┘
//! ```
//!
//! V_P = V r2/(r1 + r2), V_N = V r4/(r3 + r4), V_out = V_P − V_N. A gauge in
//! r2 (or r3) raises the output when it stretches.

use std::fmt;

/// Why a strain or bridge computation has no answer.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StrainError {
    /// An input was NaN or infinite.
    NonFinite,
    /// A resistance was negative, or both arms of a divider are zero.
    InvalidResistance,
    /// Gauge factor, sensitivity or full scale is zero.
    ZeroScale,
}

impl fmt::Display for StrainError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let text = match self {
            StrainError::NonFinite => "input is not a finite number",
            StrainError::InvalidResistance => "resistance negative or divider open",
            StrainError::ZeroScale => "gauge factor, sensitivity or full scale is zero",
        };
        f.write_str(text)
    }
}

impl std::error::Error for StrainError {}

type Res<T> = Result<T, StrainError>;

fn finite(values: &[f64]) -> Res<()> {
    if values.iter().all(|v| v.is_finite()) {
        Ok(())
    } else {
        Err(StrainError::NonFinite)
    }
}

/// Relative resistance change ΔR/R (dimensionless) for strain `strain` (m/m).
pub fn gauge_delta_r_over_r(gauge_factor: f64, strain: f64) -> f64 {
    gauge_factor * strain
}

/// Gauge resistance in Ω under `strain` (m/m), `r0` Ω unstrained.
pub fn gauge_resistance(r0: f64, gauge_factor: f64, strain: f64) -> f64 {
    r0 * (1.0 + gauge_factor * strain)
}

/// Strain (m/m) from a relative resistance change ΔR/R.
pub fn strain_from_delta_r_over_r(gauge_factor: f64, delta_r_over_r: f64) -> Res<f64> {
    finite(&[gauge_factor, delta_r_over_r])?;
    if gauge_factor == 0.0 {
        return Err(StrainError::ZeroScale);
    }
    Ok(delta_r_over_r / gauge_factor)
}

/// Output in V of a divider: `v` V across `r_high` (top) in series with
/// `r_low` (bottom), measured across `r_low`.
pub fn divider_output(v: f64, r_low: f64, r_high: f64) -> Res<f64> {
    finite(&[v, r_low, r_high])?;
    if r_low < 0.0 || r_high < 0.0 || r_low + r_high == 0.0 {
        return Err(StrainError::InvalidResistance);
    }
    Ok(v * r_low / (r_low + r_high))
}

/// Power in W an element of `r` Ω dissipates in series with `r_series` Ω
/// across `v` V (one side of a divider or of a bridge):
/// P = I² r = v² r / (r + r_series)² (Ohm's and Joule's laws). Zero when
/// both are zero (no current path).
pub fn series_element_power_w(v: f64, r: f64, r_series: f64) -> f64 {
    let total = r + r_series;
    if total == 0.0 {
        return 0.0;
    }
    let current = v / total;
    current * current * r
}

/// Output resistance in Ω of a divider, `r_low` ∥ `r_high`; zero when both
/// are zero.
pub fn divider_output_resistance(r_low: f64, r_high: f64) -> f64 {
    if r_low + r_high > 0.0 {
        r_low * r_high / (r_low + r_high)
    } else {
        0.0
    }
}

/// The voltage in V across a bridge a current source of `a` A drives: the
/// current through its two sides in parallel, (r1 + r2) ∥ (r3 + r4).
pub fn bridge_excitation_v(a: f64, r1: f64, r2: f64, r3: f64, r4: f64) -> f64 {
    a * ((r1 + r2) * (r3 + r4) / (r1 + r2 + r3 + r4))
}

/// The two output node voltages (V_P, V_N) of the bridge, in V above 0 V.
fn nodes(v_exc: f64, r1: f64, r2: f64, r3: f64, r4: f64) -> Res<(f64, f64)> {
    Ok((
        divider_output(v_exc, r2, r1)?,
        divider_output(v_exc, r4, r3)?,
    ))
}

/// Exact differential output V_P − V_N in V (topology in the module doc).
/// Resistances in Ω, finite and ≥ 0; a short arm (0 Ω) is allowed.
pub fn bridge_output(v_exc: f64, r1: f64, r2: f64, r3: f64, r4: f64) -> Res<f64> {
    let (p, n) = nodes(v_exc, r1, r2, r3, r4)?;
    Ok(p - n)
}

/// Output common-mode voltage (V_P + V_N)/2 in V above the excitation's
/// negative terminal.
pub fn bridge_common_mode(v_exc: f64, r1: f64, r2: f64, r3: f64, r4: f64) -> Res<f64> {
    let (p, n) = nodes(v_exc, r1, r2, r3, r4)?;
    Ok(0.5 * (p + n))
}

/// Thevenin differential output resistance in Ω, r1∥r2 + r3∥r4, for an
/// excitation source of zero impedance.
pub fn bridge_output_resistance(r1: f64, r2: f64, r3: f64, r4: f64) -> Res<f64> {
    finite(&[r1, r2, r3, r4])?;
    let par = |a: f64, b: f64| {
        if a < 0.0 || b < 0.0 || a + b == 0.0 {
            Err(StrainError::InvalidResistance)
        } else {
            Ok(a * b / (a + b))
        }
    };
    Ok(par(r1, r2)? + par(r3, r4)?)
}

/// Quarter bridge: one gauge (`r0` Ω, factor `gauge_factor`) in arm r2,
/// completion resistors of `r0` Ω in r1, r3, r4. Output in V, exact:
/// V x / (2 (2 + x)) with x = GF ε.
pub fn quarter_bridge_output(v_exc: f64, r0: f64, gauge_factor: f64, strain: f64) -> Res<f64> {
    let rg = gauge_resistance(r0, gauge_factor, strain);
    bridge_output(v_exc, r0, rg, r0, r0)
}

/// Half bridge: gauge a in r2, gauge b in r1 (same divider), completion
/// resistors of `r0` Ω in r3, r4. A bending beam (ε_b = −ε_a) gives the
/// exactly linear V GF ε_a / 2.
pub fn half_bridge_output(
    v_exc: f64,
    r0: f64,
    gauge_factor: f64,
    strain_a: f64,
    strain_b: f64,
) -> Res<f64> {
    let ra = gauge_resistance(r0, gauge_factor, strain_a);
    let rb = gauge_resistance(r0, gauge_factor, strain_b);
    bridge_output(v_exc, rb, ra, r0, r0)
}

/// Full bridge: four gauges of `r0` Ω; `strains[i]` is the strain of arm
/// r(i+1). Bending with r2, r3 stretched by ε and r1, r4 compressed by ε
/// gives V GF ε.
pub fn full_bridge_output(v_exc: f64, r0: f64, gauge_factor: f64, strains: [f64; 4]) -> Res<f64> {
    let [r1, r2, r3, r4] = strains.map(|e| gauge_resistance(r0, gauge_factor, e));
    bridge_output(v_exc, r1, r2, r3, r4)
}

/// Transducer output in V: V_exc × (S · F/F_fs + Z) with the rated output S
/// and zero balance Z both in mV/V (ratiometric), `load` and `full_scale`
/// in the same unit (N, kg, Pa, …).
pub fn transducer_output_v(
    sensitivity_mv_per_v: f64,
    zero_mv_per_v: f64,
    v_exc: f64,
    load: f64,
    full_scale: f64,
) -> Res<f64> {
    finite(&[sensitivity_mv_per_v, zero_mv_per_v, v_exc, load, full_scale])?;
    if full_scale == 0.0 {
        return Err(StrainError::ZeroScale);
    }
    Ok(v_exc * 1e-3 * (sensitivity_mv_per_v * load / full_scale + zero_mv_per_v))
}

/// Inverse of [`transducer_output_v`]: the load for an output of `v_out` V.
pub fn transducer_load(
    sensitivity_mv_per_v: f64,
    zero_mv_per_v: f64,
    v_exc: f64,
    full_scale: f64,
    v_out: f64,
) -> Res<f64> {
    finite(&[
        sensitivity_mv_per_v,
        zero_mv_per_v,
        v_exc,
        full_scale,
        v_out,
    ])?;
    if sensitivity_mv_per_v == 0.0 || v_exc == 0.0 || full_scale == 0.0 {
        return Err(StrainError::ZeroScale);
    }
    let ratio_mv_per_v = v_out / v_exc * 1e3;
    Ok((ratio_mv_per_v - zero_mv_per_v) / sensitivity_mv_per_v * full_scale)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Worked by hand: 120 Ω gauge, GF 2.0, 1000 µε, 5 V excitation.
    /// ΔR/R = 2.0 × 1000e-6 = 0.002, so R_g = 120.24 Ω.
    /// V_P = 5 × 120.24 / 240.24 = 2.502 497 502 5 V, V_N = 2.5 V,
    /// V_out = 5 × 0.002 / (2 × 2.002) = 0.01 / 4.004 = 2.497 502 497 5 mV
    /// (the linear estimate V GF ε / 4 = 2.5 mV is 0.1 % high).
    /// Common mode (2.502 497 5 + 2.5)/2 = 2.501 248 751 V; output resistance
    /// 120 × 120.24 / 240.24 + 60 = 60.059 940 06 + 60 = 120.059 940 06 Ω.
    #[test]
    fn quarter_bridge_worked_example() {
        let v = quarter_bridge_output(5.0, 120.0, 2.0, 1000e-6).unwrap();
        assert!((v - 2.497_502_497_5e-3).abs() < 1e-13, "{v}");
        let cm = bridge_common_mode(5.0, 120.0, 120.24, 120.0, 120.0).unwrap();
        assert!((cm - 2.501_248_751).abs() < 1e-9, "{cm}");
        let ro = bridge_output_resistance(120.0, 120.24, 120.0, 120.0).unwrap();
        assert!((ro - 120.059_940_06).abs() < 1e-8, "{ro}");
    }

    /// Half and full bending bridges are exactly linear (hand algebra in
    /// the function docs): 5 V, GF 2, 1000 µε → 5 mV and 10 mV.
    #[test]
    fn half_and_full_bending_bridges() {
        let e = 1000e-6;
        let h = half_bridge_output(5.0, 350.0, 2.0, e, -e).unwrap();
        assert!((h - 5e-3).abs() < 1e-15, "{h}");
        let f = full_bridge_output(5.0, 350.0, 2.0, [-e, e, e, -e]).unwrap();
        assert!((f - 10e-3).abs() < 1e-15, "{f}");
        assert_eq!(bridge_output(5.0, 1.0, 1.0, 1.0, 1.0).unwrap(), 0.0);
    }

    #[test]
    fn gauge_and_divider() {
        assert!((gauge_delta_r_over_r(2.1, 500e-6) - 1.05e-3).abs() < 1e-18);
        assert!((gauge_resistance(350.0, 2.0, 1e-3) - 350.7).abs() < 1e-12);
        assert!((strain_from_delta_r_over_r(2.0, 2e-3).unwrap() - 1e-3).abs() < 1e-18);
        assert_eq!(
            strain_from_delta_r_over_r(0.0, 1.0),
            Err(StrainError::ZeroScale)
        );
        assert!((divider_output(3.3, 1000.0, 2300.0).unwrap() - 1.0).abs() < 1e-15);
        assert_eq!(
            divider_output(1.0, 0.0, 0.0),
            Err(StrainError::InvalidResistance)
        );
        assert_eq!(
            divider_output(1.0, -1.0, 2.0),
            Err(StrainError::InvalidResistance)
        );
        assert_eq!(
            bridge_output(f64::NAN, 1.0, 1.0, 1.0, 1.0),
            Err(StrainError::NonFinite)
        );
        // A shorted gauge in r2 pulls out+ to 0 V: −V/2.
        assert_eq!(bridge_output(5.0, 120.0, 0.0, 120.0, 120.0).unwrap(), -2.5);
    }

    /// Worked by hand: 2 mV/V rated, 0.02 mV/V zero, 10 V, half load:
    /// 10 × (2 × 0.5 + 0.02) mV = 10.2 mV.
    #[test]
    fn transducer_worked_example() {
        let v = transducer_output_v(2.0, 0.02, 10.0, 50.0, 100.0).unwrap();
        assert!((v - 10.2e-3).abs() < 1e-15, "{v}");
        let f = transducer_load(2.0, 0.02, 10.0, 100.0, v).unwrap();
        assert!((f - 50.0).abs() < 1e-12);
        assert_eq!(
            transducer_output_v(2.0, 0.0, 10.0, 1.0, 0.0),
            Err(StrainError::ZeroScale)
        );
    }
}
