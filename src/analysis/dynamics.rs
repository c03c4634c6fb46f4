//! Dynamics: the response of the whole chain to a step of the measurand —
//! the sensor's first-order lag, the anti-aliasing filter, the converter's
//! averaging over one conversion (a sinc¹) and the firmware's averaging of
//! `n` conversions — and the chain's attenuation at mains frequencies and
//! at the converter's rate.

use super::stages::signal_path;
use super::step::{Averaging, StepModel};
use crate::eval::{node, Node, NodeId, Plan, Senses};
use crate::physics::filter::LowPass;

/// Mains frequencies every report states attenuation at, Hz.
pub const MAINS_HZ: [f64; 2] = [50.0, 60.0];

#[derive(Clone, Debug, PartialEq)]
pub struct Dynamics {
    /// The sensing element's time constant, s.
    pub sensor_time_constant: f64,
    pub filter: Option<LowPass>,
    /// Conversion rate and the firmware's averaging.
    pub rate_hz: Option<f64>,
    pub notch_hz: Option<f64>,
    pub average: u32,
    /// Time from a measurand step to 90 % of it at the reading, s.
    pub response_90: Option<f64>,
    /// Attenuation (amplitude ratio ≥ 1) at 50 and 60 Hz, and of the analog
    /// filter at the conversion rate (the first band that aliases to DC).
    pub mains: Vec<(f64, f64)>,
    pub at_rate: Option<f64>,
    /// The filter's settling to half a converter code after a full-scale
    /// step, s.
    pub filter_settling_half_lsb: Option<f64>,
}

impl Dynamics {
    /// Whether the spec states anything the response depends on: a
    /// sensing time constant, a filter or a conversion rate. Without one
    /// the modelled response is instantaneous, which says nothing.
    pub fn stated(&self) -> bool {
        self.sensor_time_constant > 0.0 || self.filter.is_some() || self.rate_hz.is_some()
    }

    /// |H(f)| of the whole signal path to the measurand: the sensing
    /// element's lag, then the electrical path.
    pub fn magnitude(&self, f: f64) -> f64 {
        let sensor = self.sensor_time_constant;
        let lag = if sensor > 0.0 {
            (1.0 + (2.0 * std::f64::consts::PI * f * sensor).powi(2)).sqrt()
        } else {
            1.0
        };
        self.electrical_magnitude(f) / lag
    }

    /// |H(f)| from the sensor's terminals on: the filter, the converter's
    /// own averaging and the firmware's. Interference (mains pick-up on
    /// the leads) enters here, after the sensing element, so the element's
    /// thermal or mechanical lag rejects none of it.
    pub fn electrical_magnitude(&self, f: f64) -> f64 {
        let sinc = |x: f64| {
            if x == 0.0 {
                1.0
            } else {
                (std::f64::consts::PI * x).sin() / (std::f64::consts::PI * x)
            }
        };
        let mut h = self
            .filter
            .as_ref()
            .map(|lp| lp.magnitude(f))
            .unwrap_or(1.0);
        if let Some(notch) = self.notch_hz.or(self.rate_hz) {
            h *= sinc(f / notch).abs();
        }
        if let (Some(rate), n) = (self.rate_hz, self.average) {
            if n > 1 {
                let x = std::f64::consts::PI * f / rate;
                let avg = if x.sin().abs() < 1e-12 {
                    1.0
                } else {
                    (f64::from(n) * x).sin() / (f64::from(n) * x.sin())
                };
                h *= avg.abs();
            }
        }
        h
    }

    /// The first time the reading reaches `fraction` of a measurand step,
    /// s, from the exact step response ([`StepModel`]). The converter
    /// averages over one conversion (1/notch, or 1/rate) and the firmware
    /// over `average` conversions 1/rate apart, as in [`Dynamics::magnitude`].
    pub fn time_to_fraction(&self, fraction: f64) -> Option<f64> {
        let averaging = self.rate_hz.map(|rate| Averaging {
            conversion_s: 1.0 / self.notch_hz.unwrap_or(rate),
            spacing_s: 1.0 / rate,
            count: self.average,
        });
        StepModel::new(self.sensor_time_constant, self.filter.as_ref(), averaging).time_to(fraction)
    }

    /// Attenuation of interference at `f` as an amplitude ratio (1/|H|
    /// of the electrical path).
    pub fn attenuation(&self, f: f64) -> f64 {
        1.0 / self.electrical_magnitude(f).max(1e-300)
    }
}

/// What the signal path states of its timing: the first low-pass filter,
/// the converter's rate and its notch.
fn path_timing(plan: &Plan) -> (Option<LowPass>, Option<f64>, Option<f64>) {
    let path = signal_path(plan, plan.adc);
    let mut filter = None;
    let mut rate_hz = None;
    let mut notch_hz = None;
    for &n in &path {
        let stated = &plan.stated[n.index()];
        match &plan.nodes[n.index()] {
            Node::Filter(_) => filter = filter.or(stated.low_pass),
            Node::Adc(_) => {
                rate_hz = stated.rate_hz;
                notch_hz = stated.notch_hz;
            }
            Node::Excitation(_)
            | Node::Rtd(_)
            | Node::Thermocouple(_)
            | Node::Thermistor(_)
            | Node::IcVoltage(_)
            | Node::IcCurrent(_)
            | Node::StrainGauge(_)
            | Node::Transducer(_)
            | Node::Resistor(_)
            | Node::Bridge(_)
            | Node::Amplifier(_)
            | Node::Convert(_) => {}
        }
    }
    (filter, rate_hz, notch_hz)
}

pub fn dynamics(plan: &Plan) -> Dynamics {
    let (filter, rate_hz, notch_hz) = path_timing(plan);
    // The sensing element: the measurand's sensor on the path (a series
    // string's element is driven by the excitation, so look at all
    // measurand sensors and take the slowest).
    let sensor_time_constant = plan
        .node_ids()
        .filter(|&i| sensor_senses_measurand(plan, i))
        .filter_map(|i| plan.stated[i.index()].time_constant_s)
        .fold(0.0, f64::max);
    let average = plan.stated[plan.reading.index()]
        .average
        .unwrap_or(1.0)
        .max(1.0) as u32;
    let mut d = Dynamics {
        sensor_time_constant,
        filter,
        rate_hz,
        notch_hz,
        average,
        response_90: None,
        mains: Vec::new(),
        at_rate: None,
        filter_settling_half_lsb: None,
    };
    d.response_90 = d.time_to_fraction(0.9);
    d.mains = MAINS_HZ.iter().map(|&f| (f, d.attenuation(f))).collect();
    let bits = match &plan.nodes[plan.adc.index()] {
        Node::Adc(node::Adc { bits, .. }) => *bits,
        Node::Excitation(_)
        | Node::Rtd(_)
        | Node::Thermocouple(_)
        | Node::Thermistor(_)
        | Node::IcVoltage(_)
        | Node::IcCurrent(_)
        | Node::StrainGauge(_)
        | Node::Transducer(_)
        | Node::Resistor(_)
        | Node::Bridge(_)
        | Node::Amplifier(_)
        | Node::Filter(_)
        | Node::Convert(_) => 16,
    };
    d.filter_settling_half_lsb = d
        .filter
        .as_ref()
        .and_then(|lp| lp.settling_time_s(0.5 / 2f64.powi(bits as i32)).ok());
    d.at_rate = rate_hz.map(|r| {
        1.0 / d
            .filter
            .as_ref()
            .map(|lp| lp.magnitude(r))
            .unwrap_or(1.0)
            .max(1e-300)
    });
    d
}

fn sensor_senses_measurand(plan: &Plan, node: NodeId) -> bool {
    match &plan.nodes[node.index()] {
        Node::Rtd(node::Rtd { senses, .. })
        | Node::Thermocouple(node::Thermocouple { senses, .. })
        | Node::Thermistor(node::Thermistor { senses, .. })
        | Node::IcVoltage(node::IcVoltage { senses, .. })
        | Node::IcCurrent(node::IcCurrent { senses, .. }) => *senses == Senses::Measurand,
        Node::StrainGauge(_) | Node::Transducer(_) => true,
        Node::Excitation(_)
        | Node::Resistor(_)
        | Node::Bridge(_)
        | Node::Amplifier(_)
        | Node::Filter(_)
        | Node::Adc(_)
        | Node::Convert(_) => false,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn bare(sensor_time_constant: f64) -> Dynamics {
        Dynamics {
            sensor_time_constant,
            filter: None,
            rate_hz: None,
            notch_hz: None,
            average: 1,
            response_90: None,
            mains: Vec::new(),
            at_rate: None,
            filter_settling_half_lsb: None,
        }
    }

    /// A 30 s probe lag slows the response to the measurand by 2π·50·30
    /// at 50 Hz but leaves mains pick-up on its leads untouched.
    #[test]
    fn the_sensing_lag_rejects_no_interference() {
        let d = bare(30.0);
        assert_eq!(d.attenuation(50.0), 1.0);
        let lag = (1.0 + (2.0 * std::f64::consts::PI * 50.0 * 30.0f64).powi(2)).sqrt();
        assert!((1.0 / d.magnitude(50.0) - lag).abs() < 1e-9 * lag);
    }

    /// A converter averaging over one 50 Hz period (a sinc notch at
    /// 50 Hz) nulls 50 Hz and passes 25 Hz at 2/π (sin(π/2)/(π/2)).
    #[test]
    fn a_sinc_notch_nulls_its_frequency() {
        let d = Dynamics {
            notch_hz: Some(50.0),
            rate_hz: Some(50.0),
            ..bare(0.0)
        };
        assert!(d.attenuation(50.0) > 1e12);
        let at_25 = d.electrical_magnitude(25.0);
        assert!((at_25 - 2.0 / std::f64::consts::PI).abs() < 1e-12);
    }
}
