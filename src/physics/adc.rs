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
//! the code farther from zero. Quantization noise of an ideal quantizer is
//! q/√12 and the ideal full-scale-sine SNR is 20 log10(2^N √1.5) dB, i.e.
//! 6.02 N + 1.76 dB (IEEE Std 1241-2010; W. R. Bennett, "Spectra of
//! quantized signals", 1948).

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
    /// Reference, gain, span or noise is zero or negative.
    #[error("reference, gain, span and noise must be positive")]
    NonPositive,
    /// The code is outside the converter's code range.
    #[error("code outside the converter's range")]
    CodeOutOfRange,
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
fn codes_per_ref(bits: u32, polarity: Polarity) -> Res<f64> {
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

/// Input-referred full-scale span in V: V_ref/G (unipolar) or 2 V_ref/G.
pub fn full_scale_span_v(v_ref: f64, gain: f64, polarity: Polarity) -> Res<f64> {
    check_ref_gain(v_ref, gain)?;
    Ok(match polarity {
        Polarity::Unipolar => v_ref / gain,
        Polarity::Bipolar => 2.0 * v_ref / gain,
    })
}

/// Ideal output code for `v_in` V at the gain stage's input (clamped to
/// the code range; rounding as in the module doc).
pub fn ideal_code(v_in: f64, gain: f64, v_ref: f64, bits: u32, polarity: Polarity) -> Res<i64> {
    check_ref_gain(v_ref, gain)?;
    if !v_in.is_finite() {
        return Err(AdcError::NonFinite);
    }
    let (lo, hi) = code_range(bits, polarity)?;
    let x = (v_in * gain / v_ref * codes_per_ref(bits, polarity)?).round();
    // Clamp in f64 first so that the conversion to i64 cannot saturate oddly.
    Ok(x.clamp(lo as f64, hi as f64) as i64)
}

/// Input voltage in V at the centre of `code` (the ideal inverse).
pub fn code_to_voltage(
    code: i64,
    gain: f64,
    v_ref: f64,
    bits: u32,
    polarity: Polarity,
) -> Res<f64> {
    let (lo, hi) = code_range(bits, polarity)?;
    if code < lo || code > hi {
        return Err(AdcError::CodeOutOfRange);
    }
    Ok(code as f64 * lsb_v(v_ref, gain, bits, polarity)?)
}

/// RMS quantization noise q/√12 of an ideal quantizer with step `lsb`
/// (same unit as `lsb`).
pub fn quantization_noise_rms(lsb: f64) -> f64 {
    lsb / 12f64.sqrt()
}

/// Ideal SNR in dB for a full-scale sine: 20 log10(2^N √1.5) ≈ 6.02 N + 1.76.
pub fn ideal_snr_db(bits: u32) -> f64 {
    20.0 * (2f64.powi(bits as i32) * 1.5f64.sqrt()).log10()
}

fn check_span_noise(span: f64, noise_rms: f64) -> Res<()> {
    if !span.is_finite() || !noise_rms.is_finite() {
        return Err(AdcError::NonFinite);
    }
    if span <= 0.0 || noise_rms <= 0.0 {
        return Err(AdcError::NonPositive);
    }
    Ok(())
}

/// Effective resolution in bits, log2(span / σ), for rms noise `noise_rms`
/// in the same unit as `span` (common practice definition).
pub fn effective_resolution_bits(span: f64, noise_rms: f64) -> Res<f64> {
    check_span_noise(span, noise_rms)?;
    Ok((span / noise_rms).log2())
}

/// Noise-free resolution in bits, log2(span / (6.6 σ)) (common practice).
pub fn noise_free_bits(span: f64, noise_rms: f64) -> Res<f64> {
    check_span_noise(span, noise_rms)?;
    Ok((span / (PEAK_TO_PEAK_PER_SIGMA * noise_rms)).log2())
}

/// Peak-to-peak noise 6.6 σ (common practice), same unit as `noise_rms`.
pub fn peak_to_peak_noise(noise_rms: f64) -> f64 {
    PEAK_TO_PEAK_PER_SIGMA * noise_rms
}

#[cfg(test)]
mod tests {
    use super::*;
    use Polarity::*;

    /// Worked by hand: 12 bits, 2.5 V reference, 1.25 V in:
    /// 1.25 / 2.5 × 4096 = 2048. Full scale clamps at 4095, below 0 at 0.
    #[test]
    fn unipolar_codes() {
        assert_eq!(ideal_code(1.25, 1.0, 2.5, 12, Unipolar).unwrap(), 2048);
        assert_eq!(ideal_code(2.5, 1.0, 2.5, 12, Unipolar).unwrap(), 4095);
        assert_eq!(ideal_code(-0.1, 1.0, 2.5, 12, Unipolar).unwrap(), 0);
        assert_eq!(ideal_code(0.625, 2.0, 2.5, 12, Unipolar).unwrap(), 2048);
        let lsb = lsb_v(2.5, 1.0, 12, Unipolar).unwrap();
        assert_eq!(lsb, 2.5 / 4096.0); // 610.35 µV
                                       // Exactly on the first transition (½ LSB): away from zero → 1.
        assert_eq!(ideal_code(0.5 * lsb, 1.0, 2.5, 12, Unipolar).unwrap(), 1);
        assert_eq!(ideal_code(0.49 * lsb, 1.0, 2.5, 12, Unipolar).unwrap(), 0);
        assert!((code_to_voltage(2048, 1.0, 2.5, 12, Unipolar).unwrap() - 1.25).abs() < 1e-15);
        assert_eq!(code_range(12, Unipolar).unwrap(), (0, 4095));
    }

    /// Worked by hand: 16 bits bipolar ±2.5 V: 1.25 / 2.5 × 32768 = 16384.
    #[test]
    fn bipolar_codes() {
        assert_eq!(ideal_code(1.25, 1.0, 2.5, 16, Bipolar).unwrap(), 16384);
        assert_eq!(ideal_code(-1.25, 1.0, 2.5, 16, Bipolar).unwrap(), -16384);
        assert_eq!(ideal_code(2.5, 1.0, 2.5, 16, Bipolar).unwrap(), 32767);
        assert_eq!(ideal_code(-2.5, 1.0, 2.5, 16, Bipolar).unwrap(), -32768);
        assert_eq!(ideal_code(-9.0, 1.0, 2.5, 16, Bipolar).unwrap(), -32768);
        assert_eq!(code_range(16, Bipolar).unwrap(), (-32768, 32767));
        assert_eq!(full_scale_span_v(2.5, 1.0, Bipolar).unwrap(), 5.0);
        let v = code_to_voltage(-16384, 1.0, 2.5, 16, Bipolar).unwrap();
        assert!((v + 1.25).abs() < 1e-15);
        assert_eq!(
            code_to_voltage(32768, 1.0, 2.5, 16, Bipolar),
            Err(AdcError::CodeOutOfRange)
        );
    }

    /// q/√12 for 12 bits at 2.5 V: 610.35 µV / 3.4641 = 176.19 µV.
    #[test]
    fn quantization_noise() {
        let q = lsb_v(2.5, 1.0, 12, Unipolar).unwrap();
        assert!((quantization_noise_rms(q) - 176.19e-6).abs() < 0.005e-6);
    }

    /// The textbook 6.02 N + 1.76 dB is the exact value with its two
    /// coefficients rounded (to 0.0006 dB/bit and 0.001 dB).
    #[test]
    fn snr_matches_textbook_rule() {
        for n in [8_u32, 12, 16, 24] {
            let rule = 6.02 * f64::from(n) + 1.76;
            assert!((ideal_snr_db(n) - rule).abs() <= 0.0006 * f64::from(n) + 0.001);
        }
    }

    /// Independent check of q/√12 and the SNR: quantize a full-scale sine
    /// with `ideal_code` itself and measure the error power. (At 8 bits the
    /// sine's dwell near its peaks already makes the error 1.6 % larger
    /// than q/√12, so the model is checked where it is meant to hold.)
    #[test]
    fn snr_by_quantizing_a_sine() {
        for bits in [12_u32, 16] {
            let n = 1 << 16;
            let amp = 2.5 * (1.0 - 2f64.powi(-(bits as i32))); // avoid clamping
            let lsb = lsb_v(2.5, 1.0, bits, Bipolar).unwrap();
            // Golden-ratio frequency: the phases never repeat, so the error
            // is spread evenly over the step as the q/√12 model assumes.
            let freq = (5f64.sqrt() - 1.0) / 8.0;
            let (mut sig, mut err) = (0.0, 0.0);
            for i in 0..n {
                let v = amp * (2.0 * std::f64::consts::PI * freq * i as f64).sin();
                let c = ideal_code(v, 1.0, 2.5, bits, Bipolar).unwrap();
                sig += v * v;
                err += (c as f64 * lsb - v).powi(2);
            }
            let snr = 10.0 * (sig / err).log10();
            let q_rms = (err / n as f64).sqrt();
            assert!(
                (q_rms / quantization_noise_rms(lsb) - 1.0).abs() < 0.01,
                "{bits}: {q_rms}"
            );
            // Ideal SNR reduced by the sine's slightly smaller amplitude.
            let expected = ideal_snr_db(bits) + 20.0 * (amp / 2.5).log10();
            assert!((snr - expected).abs() < 0.1, "{bits}: {snr} vs {expected}");
        }
    }

    /// 2.5 V span, 10 µV rms: log2(250 000) = 17.93 bits effective;
    /// noise-free is log2(6.6) = 2.72 bits fewer.
    #[test]
    fn resolution_figures() {
        let eff = effective_resolution_bits(2.5, 10e-6).unwrap();
        assert!((eff - 17.931_568_569).abs() < 1e-8);
        let nf = noise_free_bits(2.5, 10e-6).unwrap();
        assert!((eff - nf - 6.6f64.log2()).abs() < 1e-12);
        assert!((peak_to_peak_noise(10e-6) - 66e-6).abs() < 1e-18);
        assert_eq!(noise_free_bits(2.5, 0.0), Err(AdcError::NonPositive));
    }

    #[test]
    fn errors_are_values() {
        assert_eq!(
            ideal_code(f64::NAN, 1.0, 2.5, 12, Unipolar),
            Err(AdcError::NonFinite)
        );
        assert_eq!(
            ideal_code(1.0, 1.0, 0.0, 12, Unipolar),
            Err(AdcError::NonPositive)
        );
        assert_eq!(
            ideal_code(1.0, 0.0, 2.5, 12, Unipolar),
            Err(AdcError::NonPositive)
        );
        assert_eq!(
            ideal_code(1.0, 1.0, 2.5, 0, Unipolar),
            Err(AdcError::InvalidBits)
        );
        assert_eq!(
            ideal_code(1.0, 1.0, 2.5, 53, Bipolar),
            Err(AdcError::InvalidBits)
        );
        assert_eq!(
            ideal_code(f64::INFINITY, 1.0, 2.5, 12, Bipolar),
            Err(AdcError::NonFinite)
        );
        assert_eq!(
            ideal_code(1e300, 1.0, 2.5, 52, Unipolar).unwrap(),
            (1_i64 << 52) - 1
        );
    }
}
