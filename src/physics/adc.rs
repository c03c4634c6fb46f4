//! Ideal analog-to-digital conversion.
//!
//! Transfer function (IEEE Std 1241-2010, terminology and ideal quantizer):
//! an N-bit converter with reference V_ref and programmable gain G outputs
//!
//! * unipolar: code = clamp(round(V_in G / V_ref × 2^N), 0, 2^N − 1),
//!   input span 0 … V_ref/G;
//! * bipolar (two's complement): code = clamp(round(V_in G / V_ref ×
//!   2^(N−1)), −2^(N−1), 2^(N−1) − 1), input span −V_ref/G … +V_ref/G.
//!
//! `round` is round-half-away-from-zero: code k is centred on k LSB and its
//! transitions sit at (k ± ½) LSB; a value exactly on a transition goes to
//! the code farther from zero (the evaluator rounds so, clamped to
//! [`code_range`]). Range checks see the input as a fraction of V_ref/G:
//! its code over [`codes_per_ref`], against [`input_range`].

/// Peak-to-peak span of Gaussian noise, in σ, used to define noise-free
/// resolution (common practice: ±3.3 σ covers about 99.9 % of samples).
pub const PEAK_TO_PEAK_PER_SIGMA: f64 = 6.6;

/// Largest resolution accepted: codes must fit i64 exactly in f64.
pub const MAX_BITS: u32 = 52;

/// Why an ADC computation has no answer.
#[derive(Debug, Clone, Copy, PartialEq, Eq, thiserror::Error)]
pub enum AdcError {
    /// An input was NaN or infinite.
    #[error("input is not a finite number")]
    NonFinite,
    /// Resolution outside 1 … `MAX_BITS` bits.
    #[error("resolution must be 1 to 52 bits")]
    InvalidBits,
    /// Reference or gain is zero or negative.
    #[error("reference and gain must be positive")]
    NonPositive,
}

type Res<T> = Result<T, AdcError>;

/// Input range and output coding.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Polarity {
    /// 0 … V_ref, straight binary codes 0 … 2^N − 1.
    Unipolar,
    /// −V_ref … +V_ref, two's complement codes −2^(N−1) … 2^(N−1) − 1.
    Bipolar,
}

/// Codes per volt of V_ref/G: 2^N (unipolar) or 2^(N−1) (bipolar).
pub fn codes_per_ref(bits: u32, polarity: Polarity) -> Res<f64> {
    if bits == 0 || bits > MAX_BITS {
        return Err(AdcError::InvalidBits);
    }
    let n = match polarity {
        Polarity::Unipolar => bits,
        Polarity::Bipolar => bits - 1,
    };
    Ok((1_u64 << n) as f64)
}

fn check_ref_gain(v_ref: f64, gain: f64) -> Res<()> {
    if !v_ref.is_finite() || !gain.is_finite() {
        return Err(AdcError::NonFinite);
    }
    if v_ref <= 0.0 || gain <= 0.0 {
        return Err(AdcError::NonPositive);
    }
    Ok(())
}

/// Lowest and highest output code.
pub fn code_range(bits: u32, polarity: Polarity) -> Res<(i64, i64)> {
    let half = codes_per_ref(bits, Polarity::Bipolar)? as i64; // 2^(N−1)
    Ok(match polarity {
        Polarity::Unipolar => (0, 2 * half - 1),
        Polarity::Bipolar => (-half, half - 1),
    })
}

/// Input-referred LSB size in V: V_ref / (G 2^N) or V_ref / (G 2^(N−1)).
pub fn lsb_v(v_ref: f64, gain: f64, bits: u32, polarity: Polarity) -> Res<f64> {
    check_ref_gain(v_ref, gain)?;
    Ok(v_ref / (gain * codes_per_ref(bits, polarity)?))
}

/// The input range in units of V_ref/G: 0 … 1 (unipolar) or −1 … 1
/// (bipolar).
pub fn input_range(polarity: Polarity) -> (f64, f64) {
    match polarity {
        Polarity::Unipolar => (0.0, 1.0),
        Polarity::Bipolar => (-1.0, 1.0),
    }
}

/// The input, in units of V_ref/G, that an exact (unrounded) `code`
/// stands for: the transfer function read backwards.
pub fn input_of_code(code: f64, bits: u32, polarity: Polarity) -> Res<f64> {
    Ok(code / codes_per_ref(bits, polarity)?)
}

/// The code span INL is a fraction of: 2^N codes, both halves of a
/// bipolar input (`per_ref` is [`codes_per_ref`]).
pub fn full_scale_codes(per_ref: f64, polarity: Polarity) -> f64 {
    match polarity {
        Polarity::Unipolar => per_ref,
        Polarity::Bipolar => 2.0 * per_ref,
    }
}

/// The exact (unrounded) code of input `v_in` (with any input offset
/// already added) through gain `gain` against reference `v_ref`: the ideal
/// transfer V_in G / V_ref × `per_ref`, plus an offset stated in codes and
/// the integral nonlinearity at this input, in codes (IEEE Std 1241-2010:
/// offset, gain and INL as deviations from the ideal transfer). Rounding
/// and clamping to [`code_range`] are left to the caller, which needs the
/// exact code too.
#[inline(always)]
pub fn exact_code(
    v_in: f64,
    gain: f64,
    v_ref: f64,
    per_ref: f64,
    offset_codes: f64,
    inl_codes: f64,
) -> f64 {
    v_in * gain / v_ref * per_ref + offset_codes + inl_codes
}

/// Peak-to-peak noise 6.6 σ (common practice), same unit as `noise_rms`.
pub fn peak_to_peak_noise(noise_rms: f64) -> f64 {
    PEAK_TO_PEAK_PER_SIGMA * noise_rms
}

#[cfg(test)]
mod tests {
    use super::*;
    use Polarity::*;

    /// Worked by hand: 12 bits unipolar at 2.5 V: 4096 codes per
    /// reference, 0 … 4095, one code 2.5 / 4096 = 610.35 µV; 2048 stands
    /// for half the reference.
    #[test]
    fn unipolar_codes() {
        assert_eq!(codes_per_ref(12, Unipolar).unwrap(), 4096.0);
        assert_eq!(code_range(12, Unipolar).unwrap(), (0, 4095));
        assert_eq!(lsb_v(2.5, 1.0, 12, Unipolar).unwrap(), 2.5 / 4096.0);
        assert_eq!(lsb_v(2.5, 2.0, 12, Unipolar).unwrap(), 1.25 / 4096.0);
        assert_eq!(input_of_code(2048.0, 12, Unipolar).unwrap(), 0.5);
        // Half the reference is code 2048; 2 codes of offset and an INL
        // of 1/4096 of full scale (one code) add three.
        let per_ref = codes_per_ref(12, Unipolar).unwrap();
        let inl = full_scale_codes(per_ref, Unipolar) / 4096.0;
        assert_eq!(exact_code(1.25, 1.0, 2.5, per_ref, 2.0, inl), 2051.0);
        assert_eq!(input_range(Unipolar), (0.0, 1.0));
    }

    /// Worked by hand: 16 bits bipolar ±2.5 V: 32768 codes per reference,
    /// −32768 … 32767; −16384 stands for −½ reference.
    #[test]
    fn bipolar_codes() {
        assert_eq!(codes_per_ref(16, Bipolar).unwrap(), 32768.0);
        assert_eq!(code_range(16, Bipolar).unwrap(), (-32768, 32767));
        assert_eq!(lsb_v(2.5, 1.0, 16, Bipolar).unwrap(), 2.5 / 32768.0);
        assert_eq!(input_of_code(-16384.0, 16, Bipolar).unwrap(), -0.5);
        assert_eq!(input_range(Bipolar), (-1.0, 1.0));
    }

    /// 6.6 σ of 10 µV rms is 66 µV peak to peak.
    #[test]
    fn peak_to_peak() {
        assert!((peak_to_peak_noise(10e-6) - 66e-6).abs() < 1e-18);
    }

    #[test]
    fn errors_are_values() {
        assert_eq!(lsb_v(f64::NAN, 1.0, 12, Unipolar), Err(AdcError::NonFinite));
        assert_eq!(lsb_v(0.0, 1.0, 12, Unipolar), Err(AdcError::NonPositive));
        assert_eq!(lsb_v(2.5, 0.0, 12, Unipolar), Err(AdcError::NonPositive));
        assert_eq!(code_range(0, Unipolar), Err(AdcError::InvalidBits));
        assert_eq!(code_range(53, Bipolar), Err(AdcError::InvalidBits));
        assert_eq!(input_of_code(1.0, 1, Bipolar).unwrap(), 1.0);
        assert_eq!(code_range(52, Unipolar).unwrap(), (0, (1_i64 << 52) - 1));
    }
}
