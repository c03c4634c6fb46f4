//! What each stage states about itself beyond its error sources: the
//! limits its signals must stay inside, its noise, its bandwidths and
//! timing, a converter's sampling input. Read once from the checked stage
//! when the plan is lowered (SI, by node), so the analyses read the plan
//! and never look a stage up by name.

use crate::model::value::{Measure, ParamValue};
use crate::model::Stage;
use crate::physics::filter::{rc_cascade_cutoff_hz, LowPass, Response};
use crate::units::Dim;

/// A stage's statements, by plan node (`Plan::stated`).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Stated {
    /// A converter's allowed reference voltage (`ref_range`), V.
    pub ref_range: Option<(f64, f64)>,
    /// A converter's supply rails, which its input pins must stay
    /// inside, V.
    pub rails: Option<(f64, f64)>,
    /// A current source's compliance, V (a single value: up to it).
    pub compliance: Option<(f64, f64)>,
    /// A voltage source's current limit, A (up to it).
    pub current_limit: Option<(f64, f64)>,
    /// An element's largest current, A (up to it).
    pub max_current: Option<(f64, f64)>,
    /// A converter's sampling input, where it states both its capacitance
    /// and its acquisition time.
    pub sampling: Option<SamplingInput>,
    /// A filter's low-pass response.
    pub low_pass: Option<LowPass>,
    /// A converter's output data rate and digital notch, Hz.
    pub rate_hz: Option<f64>,
    pub notch_hz: Option<f64>,
    /// An amplifier's bandwidth, Hz.
    pub bandwidth_hz: Option<f64>,
    /// A sensor's thermal time constant, s.
    pub time_constant_s: Option<f64>,
    /// A conversion's averaging, in conversions.
    pub average: Option<f64>,
    /// A source's, a converter's or an amplifier's noise.
    pub noise: Option<Noise>,
    /// An amplifier's 1/f corner, Hz, and its current noise, A/√Hz.
    pub noise_corner_hz: Option<f64>,
    pub current_noise: Option<f64>,
}

/// What a converter states of its sampling input.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SamplingInput {
    /// Sampling capacitance, F.
    pub capacitance: f64,
    /// Acquisition time, s.
    pub acquisition: f64,
    /// The sampling switch's own resistance, Ω.
    pub switch: f64,
}

/// A stated noise: the larger of its limits, and what it is per.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Noise {
    pub amount: f64,
    pub basis: NoiseBasis,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum NoiseBasis {
    /// An rms value (V or A).
    Rms,
    /// A density per √Hz, integrated over the noise bandwidth.
    Density,
    /// An rms number of converter codes.
    Codes,
}

impl Stated {
    /// What `stage` states.
    pub fn of(stage: &Stage) -> Stated {
        Stated {
            ref_range: range(stage, "ref_range"),
            rails: range(stage, "rails"),
            compliance: range(stage, "compliance"),
            current_limit: range(stage, "limit"),
            max_current: range(stage, "max_current"),
            sampling: sampling(stage),
            low_pass: low_pass(stage),
            rate_hz: number(stage, "rate"),
            notch_hz: number(stage, "notch"),
            bandwidth_hz: number(stage, "bandwidth"),
            time_constant_s: number(stage, "time_constant"),
            average: number(stage, "average"),
            noise: noise(stage),
            noise_corner_hz: number(stage, "noise_corner"),
            current_noise: number(stage, "current_noise"),
        }
    }
}

/// A stated interval, or a single value as the interval up to it.
fn range(stage: &Stage, name: &str) -> Option<(f64, f64)> {
    match stage.param(name) {
        Some(ParamValue::Range { low, high }) => Some((*low, *high)),
        Some(ParamValue::Measure(m)) => Some((f64::NEG_INFINITY, m.nominal)),
        _ => None,
    }
}

/// A stated number: a value's nominal, a count, a limit's larger side.
fn number(stage: &Stage, name: &str) -> Option<f64> {
    match stage.param(name) {
        Some(ParamValue::Measure(Measure { nominal, .. })) => Some(*nominal),
        Some(ParamValue::Count(n)) => Some(f64::from(*n)),
        Some(ParamValue::Limit(t)) => Some(t.plus.max(t.minus)),
        _ => None,
    }
}

/// A `noise` stated as a limit says by its unit what it is per; one stated
/// as a value is an amplifier's density.
fn noise(stage: &Stage) -> Option<Noise> {
    match stage.param("noise")? {
        ParamValue::Limit(t) => Some(Noise {
            amount: t.plus.max(t.minus),
            basis: if t.dim == Dim::CODE {
                NoiseBasis::Codes
            } else if t.dim == Dim::CURRENT_DENSITY || t.dim == Dim::VOLTAGE_DENSITY {
                NoiseBasis::Density
            } else {
                NoiseBasis::Rms
            },
        }),
        ParamValue::Measure(m) => Some(Noise {
            amount: m.nominal,
            basis: NoiseBasis::Density,
        }),
        _ => None,
    }
}

fn sampling(stage: &Stage) -> Option<SamplingInput> {
    let value = |name: &str| match stage.param(name) {
        Some(ParamValue::Measure(m)) => Some(m.nominal),
        _ => None,
    };
    Some(SamplingInput {
        capacitance: value("sampling_capacitance")?,
        acquisition: value("acquisition_time")?,
        switch: value("sampling_resistance").unwrap_or(0.0),
    })
}

/// The low-pass filter a `filter` stage describes.
fn low_pass(stage: &Stage) -> Option<LowPass> {
    let response = match stage.param("lowpass") {
        Some(ParamValue::Word(w)) => match w.as_str() {
            "butterworth" => Response::Butterworth,
            "bessel" => Response::Bessel,
            _ => Response::Rc,
        },
        _ => return None,
    };
    let order = number(stage, "order").unwrap_or(1.0) as u32;
    let cutoff = match (
        number(stage, "cutoff"),
        number(stage, "r"),
        number(stage, "c"),
    ) {
        (Some(f), _, _) => f,
        (None, Some(r), Some(c)) => rc_cascade_cutoff_hz(r, c, order).ok()?,
        _ => return None,
    };
    LowPass::new(response, order, cutoff).ok()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn stated(text: &str) -> Vec<Stated> {
        let checked = crate::check::check_str("test.catena", text);
        assert!(checked.resolved, "{:?}", checked.findings);
        let plan = crate::eval::lower(&checked.chains[0]).expect("lowers");
        plan.stated
    }

    /// Each node carries its own stage's statements, in SI: a converter's
    /// sampling input and noise in codes, a source's compliance as the
    /// interval up to it and its noise density, a filter's response.
    #[test]
    fn statements_by_node_in_si() {
        let s = stated(
            "chain t \"T\" {
                measurand temperature 0 degC .. 100 degC
                excitation src {
                    current 1 mA
                    compliance 5 V
                    noise ± 2 nA/rtHz
                }
                sensor probe {
                    rtd pt100
                    wires 4
                    time_constant 3 s
                }
                amplifier front {
                    gain 20
                    bandwidth 10 kHz
                }
                filter aa {
                    lowpass butterworth
                    order 2
                    cutoff 100 Hz
                }
                adc conv {
                    bits 16
                    input single
                    vref 2.5 V
                    rails 0 V .. 3.3 V
                    noise ± 0.5 LSB
                    sampling_capacitance 20 pF
                    acquisition_time 1 us
                    rate 50 Hz
                }
                convert reading {
                    method exact
                    average 4
                }
                src -> probe -> front -> aa -> conv -> reading
            }",
        );
        let [src, probe, front, aa, conv, reading] = &s[..] else {
            panic!("{s:?}")
        };
        assert_eq!(src.compliance, Some((f64::NEG_INFINITY, 5.0)));
        let noise = src.noise.expect("stated");
        assert_eq!(noise.basis, NoiseBasis::Density);
        assert!((noise.amount - 2e-9).abs() < 1e-21);
        assert_eq!(probe.time_constant_s, Some(3.0));
        assert_eq!(front.bandwidth_hz, Some(1e4));
        assert!(aa.low_pass.is_some());
        assert_eq!(conv.rails, Some((0.0, 3.3)));
        assert_eq!(conv.noise.map(|n| n.basis), Some(NoiseBasis::Codes));
        let sampling = conv.sampling.expect("stated");
        assert!((sampling.capacitance - 20e-12).abs() < 1e-24);
        assert!((sampling.acquisition - 1e-6).abs() < 1e-18);
        assert_eq!(sampling.switch, 0.0);
        assert_eq!(conv.rate_hz, Some(50.0));
        assert_eq!(reading.average, Some(4.0));
        assert_eq!(conv.ref_range, None);
    }
}
