//! What each stage states about itself beyond its error sources: the
//! limits its signals must stay inside, its noise, its bandwidths and
//! timing, a converter's sampling input. Read once from the stage's typed
//! model when the plan is lowered (SI, by node), so the analyses read the
//! plan and never look a stage up by name.

use crate::model::typed::{self, Source, StageModel};
use crate::model::value::Tolerance;
use crate::physics::filter::{rc_cascade_cutoff_hz, LowPass};
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
    /// Each channel's output rate.
    pub rate_hz: Option<f64>,
    pub notch_hz: Option<f64>,
    /// The converter's conversion rate, Hz: its output rate over all the
    /// channels it scans.
    pub conversion_hz: Option<f64>,
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
    /// What a stage's typed model states.
    pub fn of(model: &StageModel) -> Stated {
        let mut s = Stated {
            time_constant_s: model.time_constant(),
            ..Stated::default()
        };
        let up_to = |x: Option<f64>| x.map(|x| (f64::NEG_INFINITY, x));
        match model {
            StageModel::Excitation(e) => {
                match e.source {
                    Source::Current { compliance } => s.compliance = up_to(compliance),
                    Source::Voltage { limit } => s.current_limit = up_to(limit),
                }
                s.noise = e.noise.as_ref().map(limit_noise);
            }
            StageModel::Rtd(m) => s.max_current = up_to(m.max_current),
            StageModel::Thermistor(m) => s.max_current = up_to(m.max_current),
            StageModel::IcVoltage(m) => s.noise = m.noise.as_ref().map(limit_noise),
            StageModel::Amplifier(m) => {
                s.bandwidth_hz = m.bandwidth;
                s.noise = m.noise.map(|amount| Noise {
                    amount,
                    basis: NoiseBasis::Density,
                });
                s.noise_corner_hz = m.noise_corner;
                s.current_noise = m.current_noise;
            }
            StageModel::Filter(m) => s.low_pass = low_pass(m),
            StageModel::Adc(m) => {
                s.ref_range = m.ref_range;
                s.rails = m.rails;
                s.sampling = m.sampling.map(|p| SamplingInput {
                    capacitance: p.capacitance,
                    acquisition: p.acquisition_time,
                    switch: p.resistance.unwrap_or(0.0),
                });
                // A scanned converter gives each channel `reads` of the
                // `channels` conversions of one scan: its rate falls, its
                // conversion (the digital filter's notch, the noise
                // bandwidth) stays the converter's.
                s.conversion_hz = m.rate;
                s.rate_hz = m
                    .rate
                    .map(|r| r * f64::from(m.reads) / f64::from(m.channels.max(1)));
                s.notch_hz = if m.channels > 1 {
                    m.notch.or(m.rate)
                } else {
                    m.notch
                };
                s.noise = m.noise.as_ref().map(limit_noise);
            }
            StageModel::Convert(m) => s.average = m.average.map(f64::from),
            StageModel::Thermocouple(_)
            | StageModel::IcCurrent(_)
            | StageModel::StrainGauge(_)
            | StageModel::Transducer(_)
            | StageModel::Resistor(_)
            | StageModel::Bridge(_) => {}
        }
        s
    }
}

/// A noise stated as a limit says by its unit what it is per.
fn limit_noise(t: &Tolerance) -> Noise {
    Noise {
        amount: t.plus.max(t.minus),
        basis: if t.dim == Dim::CODE {
            NoiseBasis::Codes
        } else if t.dim == Dim::CURRENT_DENSITY || t.dim == Dim::VOLTAGE_DENSITY {
            NoiseBasis::Density
        } else {
            NoiseBasis::Rms
        },
    }
}

/// The low-pass filter a `filter` stage describes.
fn low_pass(m: &typed::Filter) -> Option<LowPass> {
    let order = m.order.unwrap_or(1);
    let cutoff = match (&m.cutoff, &m.r, &m.c) {
        (Some(f), _, _) => f.nominal,
        (None, Some(r), Some(c)) => rc_cascade_cutoff_hz(r.nominal, c.nominal, order).ok()?,
        _ => return None,
    };
    LowPass::new(m.response, order, cutoff).ok()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn stated(text: &str) -> Vec<Stated> {
        let file = crate::diagnostics::SourceFile::new("test.catena", text);
        let (ast, mut findings) = crate::syntax::parse(&file);
        let mut parts = crate::model::PartsCache::default();
        let base = std::path::Path::new(".");
        let (chains, more) = crate::model::resolve(&file, &ast, base, None, &mut parts);
        findings.extend(more);
        assert!(!findings.has_errors(), "{findings:?}");
        let plan = crate::eval::lower(&chains[0]).expect("lowers");
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
