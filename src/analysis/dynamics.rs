//! Dynamics: the response of the whole chain to a step of the measurand —
//! the sensor's first-order lag, the anti-aliasing filter, the converter's
//! averaging over one conversion (a sinc¹) and the firmware's averaging of
//! `n` conversions — and the chain's attenuation at mains frequencies and
//! at the converter's rate.

use super::stages::{low_pass, number, signal_path, stage};
use crate::eval::{Node, Plan, Senses};
use crate::model::Chain;
use crate::physics::filter::LowPass;

/// Steps the simulated step response is sampled at.
const STEPS: usize = 4000;
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
    /// |H(f)| of the whole signal path.
    pub fn magnitude(&self, f: f64) -> f64 {
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
        let sensor = self.sensor_time_constant;
        if sensor > 0.0 {
            h /= (1.0 + (2.0 * std::f64::consts::PI * f * sensor).powi(2)).sqrt();
        }
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

    /// Attenuation at `f` as an amplitude ratio (1/|H|).
    pub fn attenuation(&self, f: f64) -> f64 {
        1.0 / self.magnitude(f).max(1e-300)
    }
}

pub fn dynamics(chain: &Chain, plan: &Plan) -> Dynamics {
    let path = signal_path(plan, plan.adc);
    let mut filter = None;
    let mut rate_hz = None;
    let mut notch_hz = None;
    for &n in &path {
        let Some(s) = stage(chain, plan, n) else {
            continue;
        };
        match &plan.nodes[n] {
            Node::Filter { .. } => filter = filter.or_else(|| low_pass(s)),
            Node::Adc { .. } => {
                rate_hz = number(s, "rate");
                notch_hz = number(s, "notch");
            }
            _ => {}
        }
    }
    // The sensing element: the measurand's sensor on the path (a series
    // string's element is driven by the excitation, so look at all
    // measurand sensors and take the slowest).
    let sensor_time_constant = chain
        .stages
        .iter()
        .filter(|s| s.kind == crate::syntax::ast::StageKind::Sensor)
        .filter(|s| {
            plan.names
                .iter()
                .position(|n| *n == s.name)
                .is_some_and(|i| sensor_senses_measurand(plan, i))
        })
        .filter_map(|s| number(s, "time_constant"))
        .fold(0.0, f64::max);
    let average = stage(chain, plan, plan.reading)
        .and_then(|s| number(s, "average"))
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
    d.response_90 = step_90(&d);
    d.mains = MAINS_HZ.iter().map(|&f| (f, d.attenuation(f))).collect();
    let bits = match &plan.nodes[plan.adc] {
        Node::Adc { bits, .. } => *bits,
        _ => 16,
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

fn sensor_senses_measurand(plan: &Plan, node: usize) -> bool {
    match &plan.nodes[node] {
        Node::Rtd { senses, .. }
        | Node::Thermocouple { senses, .. }
        | Node::Thermistor { senses, .. }
        | Node::IcVoltage { senses, .. }
        | Node::IcCurrent { senses, .. } => *senses == Senses::Measurand,
        Node::StrainGauge { .. } | Node::Transducer { .. } => true,
        _ => false,
    }
}

/// Simulates a unit step through the chain on a uniform grid and returns
/// when it first reaches 90 %.
fn step_90(d: &Dynamics) -> Option<f64> {
    let window = d.rate_hz.map(|r| 1.0 / r).unwrap_or(0.0);
    let average_window = window * f64::from(d.average);
    let filter_scale = d
        .filter
        .as_ref()
        .map(|lp| 5.0 / lp.cutoff_hz)
        .unwrap_or(0.0);
    let horizon =
        6.0 * d.sensor_time_constant + 4.0 * filter_scale + 2.0 * (window + average_window);
    if horizon <= 0.0 {
        return Some(0.0);
    }
    let dt = horizon / STEPS as f64;
    // Sensor: exact first-order discretisation of the step.
    let mut y: Vec<f64> = (0..=STEPS)
        .map(|k| {
            let t = k as f64 * dt;
            if d.sensor_time_constant > 0.0 {
                1.0 - (-t / d.sensor_time_constant).exp()
            } else {
                1.0
            }
        })
        .collect();
    if let Some(lp) = &d.filter {
        y = filter_signal(lp, &y, dt);
    }
    for w in [window, average_window] {
        let n = (w / dt).round() as usize;
        if n > 1 {
            let x = y.clone();
            let mut sum = 0.0;
            for k in 0..=STEPS {
                sum += x[k];
                if k >= n {
                    sum -= x[k - n];
                }
                y[k] = sum / n as f64;
            }
        }
    }
    y.iter().position(|&v| v >= 0.9).map(|k| k as f64 * dt)
}

#[derive(Clone, Copy)]
struct C(f64, f64);

impl C {
    fn mul(self, o: C) -> C {
        C(self.0 * o.0 - self.1 * o.1, self.0 * o.1 + self.1 * o.0)
    }
    fn div(self, o: C) -> C {
        let d = o.0 * o.0 + o.1 * o.1;
        C(
            (self.0 * o.0 + self.1 * o.1) / d,
            (self.1 * o.0 - self.0 * o.1) / d,
        )
    }
    fn exp(self) -> C {
        let m = self.0.exp();
        C(m * self.1.cos(), m * self.1.sin())
    }
    fn sub(self, o: C) -> C {
        C(self.0 - o.0, self.1 - o.1)
    }
}

/// Runs a sampled signal through the filter, pole by pole, each section
/// discretised exactly for a held input: O(n · order), where a
/// convolution would be O(n²). Identical poles (an RC cascade) run as
/// sections in series; distinct ones in parallel by partial fractions.
fn filter_signal(lp: &LowPass, x: &[f64], dt: f64) -> Vec<f64> {
    let poles: Vec<C> = lp.poles().into_iter().map(|(re, im)| C(re, im)).collect();
    if matches!(lp.response, crate::physics::filter::Response::Rc) {
        let mut y = x.to_vec();
        for p in &poles {
            let a = (p.0 * dt).exp();
            let (mut state, mut previous) = (0.0, 0.0);
            for v in y.iter_mut() {
                // The input over the step taken as the mean of its ends.
                state = a * state + (1.0 - a) * (previous + *v) / 2.0;
                previous = *v;
                *v = state;
            }
        }
        return y;
    }
    // H(s) = K / Π(s − p_j) with K = Π(−p_j) for unit DC gain; residue
    // r_k = K / Π_{j≠k}(p_k − p_j).
    let k = poles
        .iter()
        .fold(C(1.0, 0.0), |acc, p| acc.mul(C(-p.0, -p.1)));
    let sections: Vec<(C, C)> = poles
        .iter()
        .enumerate()
        .map(|(i, &p)| {
            let denominator = poles
                .iter()
                .enumerate()
                .filter(|(j, _)| *j != i)
                .fold(C(1.0, 0.0), |acc, (_, &q)| acc.mul(p.sub(q)));
            let r = k.div(denominator);
            let a = C(p.0 * dt, p.1 * dt).exp();
            // Exact response of ds/dt = p s + r x to x held over one step.
            let gain = r.mul(a.sub(C(1.0, 0.0))).div(p);
            (a, gain)
        })
        .collect();
    let mut states = vec![C(0.0, 0.0); sections.len()];
    let mut previous = 0.0;
    x.iter()
        .map(|&now| {
            let input = (previous + now) / 2.0;
            previous = now;
            let mut sum = 0.0;
            for ((a, gain), state) in sections.iter().zip(states.iter_mut()) {
                let next = a.mul(*state);
                *state = C(next.0 + gain.0 * input, next.1 + gain.1 * input);
                sum += state.0;
            }
            sum
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::filter_signal;
    use crate::physics::filter::{LowPass, Response};

    /// The pole-by-pole simulation of a step reproduces the filter's exact
    /// step response (from its poles, `physics::filter`); the sampled step
    /// itself rises over the first interval, half a sample late.
    #[test]
    fn simulated_steps_match_the_exact_response() {
        for (response, order) in [
            (Response::Rc, 1),
            (Response::Rc, 3),
            (Response::Butterworth, 4),
            (Response::Bessel, 3),
        ] {
            let lp = LowPass::new(response, order, 10.0).unwrap();
            let dt = 1e-4;
            let y = filter_signal(&lp, &vec![1.0; 5000], dt);
            for k in [100, 500, 1000, 4999] {
                let exact = lp.step_response((k as f64 + 0.5) * dt);
                assert!(
                    (y[k] - exact).abs() < 1e-4,
                    "{response:?} {order} at {k}: {} vs {exact}",
                    y[k]
                );
            }
        }
    }
}
