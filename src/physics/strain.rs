//! Strain gauges, Wheatstone bridges and dividers.
//!
//! * Gauge: ΔR/R = GF · ε, the definition of the gauge factor
//!   (K. Hoffmann, "An Introduction to Measurements using Strain Gages",
//!   1989; citation recalled from memory).
//! * Wheatstone bridge: exact output from the two voltage dividers (Kirchhoff),
//!   with no small-signal approximation; its load on the excitation and its
//!   output resistance from the same four arms.
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

/// Why a strain or bridge computation has no answer.
#[derive(Debug, Clone, Copy, PartialEq, Eq, thiserror::Error)]
pub enum StrainError {
    /// An input was NaN or infinite.
    #[error("input is not a finite number")]
    NonFinite,
    /// A resistance was negative, or both arms of a divider are zero.
    #[error("resistance negative or divider open")]
    InvalidResistance,
}

type Res<T> = Result<T, StrainError>;

fn finite(values: &[f64]) -> Res<()> {
    if values.iter().all(|v| v.is_finite()) {
        Ok(())
    } else {
        Err(StrainError::NonFinite)
    }
}

/// Gauge resistance in Ω under `strain` (m/m), `r0` Ω unstrained.
pub fn gauge_resistance(r0: f64, gauge_factor: f64, strain: f64) -> f64 {
    r0 * (1.0 + gauge_factor * strain)
}

/// The apparent strain (m/m) of a gauge `dt` K from the temperature its
/// thermal output is stated about, `per_kelvin` its slope: what a
/// temperature change alone reads as, from the mismatch of the grid's
/// and the specimen's expansion and the grid's own resistance
/// coefficient. Gauge makers state it as a curve against temperature for
/// a gauge on its matched material; a slope bound about the reference
/// is its linear reading (common practice for an error budget, stated
/// here from memory, not from a standard).
pub fn thermal_output_strain(per_kelvin: f64, dt: f64) -> f64 {
    per_kelvin * dt
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
#[inline]
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

/// `a` and `b` in parallel, Ω (zero when both are zero: no path).
pub fn parallel(a: f64, b: f64) -> f64 {
    if a + b > 0.0 {
        a * b / (a + b)
    } else {
        0.0
    }
}

/// The load a bridge puts on its excitation, Ω: its two sides in
/// parallel, (r1 + r2) ∥ (r3 + r4).
pub fn bridge_input_resistance(r1: f64, r2: f64, r3: f64, r4: f64) -> f64 {
    parallel(r1 + r2, r3 + r4)
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
        let rg = gauge_resistance(120.0, 2.0, 1000e-6);
        let v = bridge_output(5.0, 120.0, rg, 120.0, 120.0).unwrap();
        assert!((v - 2.497_502_497_5e-3).abs() < 1e-13, "{v}");
        let cm = bridge_common_mode(5.0, 120.0, 120.24, 120.0, 120.0).unwrap();
        assert!((cm - 2.501_248_751).abs() < 1e-9, "{cm}");
        let ro = bridge_output_resistance(120.0, 120.24, 120.0, 120.0).unwrap();
        assert!((ro - 120.059_940_06).abs() < 1e-8, "{ro}");
        // The excitation sees 240.24 Ω ∥ 240 Ω = 57 657.6 / 480.24
        // = 120.059 970 015 Ω.
        let load = bridge_input_resistance(120.0, 120.24, 120.0, 120.0);
        assert!((load - 120.059_970_015).abs() < 1e-8, "{load}");
        assert_eq!(parallel(0.0, 0.0), 0.0);
    }

    /// Half and full bending bridges are exactly linear: with gauges
    /// R(1 ± x) the stretched one in r2 (and r3), each divider gives
    /// V (1 + x)/2, so a half bridge (r1, r2 active) gives V x / 2 and a
    /// full one V x. 5 V, GF 2, 1000 µε → 5 mV and 10 mV.
    #[test]
    fn half_and_full_bending_bridges() {
        let e = 1000e-6;
        let [up, down] = [e, -e].map(|s| gauge_resistance(350.0, 2.0, s));
        let h = bridge_output(5.0, down, up, 350.0, 350.0).unwrap();
        assert!((h - 5e-3).abs() < 1e-15, "{h}");
        let f = bridge_output(5.0, down, up, up, down).unwrap();
        assert!((f - 10e-3).abs() < 1e-15, "{f}");
        assert_eq!(bridge_output(5.0, 1.0, 1.0, 1.0, 1.0).unwrap(), 0.0);
    }

    #[test]
    fn gauge_and_divider() {
        assert!((gauge_resistance(350.0, 2.0, 1e-3) - 350.7).abs() < 1e-12);
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
}
