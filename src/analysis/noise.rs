//! Noise referred to the converter's input and to the measurand: voltage
//! and current noise of each amplifier (white density and 1/f corner), the
//! Johnson noise √(4kTR) of the resistances driving each amplifier and the
//! converter (sources, dividers, bridges, filter resistors), and the
//! converter's own noise, over the chain's equivalent noise bandwidth.

use super::stages::{low_pass, number, signal_path, stage};
use crate::eval::{node, Env, Node, Plan, Signal};
use crate::model::value::ParamValue;
use crate::model::Chain;
use crate::physics::noise::{johnson_voltage_density, rms_with_flicker};
use crate::units::Dim;

/// Lower band edge for 1/f noise in a DC measurement: the common practice
/// of integrating from 0.1 Hz.
pub const FLICKER_LOW_HZ: f64 = 0.1;
/// Peak-to-peak span of Gaussian noise quoted as noise-free: 6.6 σ
/// (common practice; about 99.9 % of samples).
pub const NOISE_FREE_SIGMAS: f64 = 6.6;

#[derive(Clone, Debug, PartialEq)]
pub struct NoiseTerm {
    /// `stage.what`, e.g. `front.voltage_noise`.
    pub id: String,
    /// rms at the converter's input, V.
    pub rms_v: f64,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Noise {
    pub terms: Vec<NoiseTerm>,
    /// Noise referred to the measurand directly, in its SI units: each
    /// excitation's, through the whole chain (so a ratiometric reference
    /// cancels it as it cancels the excitation's tolerance).
    pub referred: Vec<NoiseTerm>,
    /// Equivalent noise bandwidth, Hz (None: nothing bounds it, so density
    /// terms could not be integrated).
    pub enbw_hz: Option<f64>,
    /// Total rms at the converter's input, V.
    pub total_v: f64,
    /// Total rms in measurand units (SI), one sample and after averaging.
    pub sigma: f64,
    pub sigma_averaged: f64,
    pub average: u32,
    /// Noise-free resolution (6.6 σ) in measurand units, one sample and
    /// after averaging.
    pub noise_free: f64,
    pub noise_free_averaged: f64,
    /// One code step in measurand units.
    pub lsb: f64,
}

/// The equivalent noise bandwidth of the signal path: the narrower of the
/// analog filter's and the converter's (a sinc¹ over one conversion period
/// has ENBW = rate/2); without either, a single-pole amplifier bandwidth.
pub fn enbw(chain: &Chain, plan: &Plan) -> Option<f64> {
    let path = signal_path(plan, plan.adc);
    let mut bw: Option<f64> = None;
    let narrow = |bw: &mut Option<f64>, b: f64| *bw = Some(bw.map_or(b, |x: f64| x.min(b)));
    for &n in &path {
        let Some(s) = stage(chain, plan, n) else {
            continue;
        };
        match &plan.nodes[n] {
            Node::Filter(_) => {
                if let Some(lp) = low_pass(s) {
                    narrow(&mut bw, lp.enbw_hz());
                }
            }
            Node::Adc(_) => {
                if let Some(rate) = number(s, "rate") {
                    narrow(&mut bw, rate / 2.0);
                }
            }
            _ => {}
        }
    }
    if bw.is_none() {
        for &n in &path {
            if let (Node::Amplifier(_), Some(s)) = (&plan.nodes[n], stage(chain, plan, n)) {
                if let Some(b) = number(s, "bandwidth") {
                    narrow(&mut bw, std::f64::consts::FRAC_PI_2 * b);
                }
            }
        }
    }
    bw
}

/// The resistance behind a node's voltage, Ω (zero for other signals).
fn source_resistance(signals: &[Signal], node: usize) -> f64 {
    match signals.get(node) {
        Some(Signal::Voltage { rs, .. }) => *rs,
        _ => 0.0,
    }
}

/// The thermal noise of every resistance behind the voltage a stage takes
/// in (`input`), at the ambient: by Thévenin's theorem the resistive network
/// seen from that node (a divider's or bridge's arms in parallel, a
/// filter's series resistor added) has the noise density √(4kT·Rₜₕ) of its
/// equivalent resistance (Nyquist 1928), and that resistance shapes it
/// as it shapes the signal, so it is integrated over the chain's noise
/// bandwidth. An RC filter's own resistor thus gives √(kT/C). Stated at
/// the converter's input through `gain` (the gain after the node).
fn thermal_term(
    stage: &str,
    signals: &[Signal],
    input: usize,
    env: &Env,
    enbw_hz: Option<f64>,
    gain: f64,
) -> Option<NoiseTerm> {
    let rs = source_resistance(signals, input);
    let bw = enbw_hz?;
    if rs <= 0.0 {
        return None;
    }
    let density = johnson_voltage_density(rs, env.ambient).ok()?;
    Some(NoiseTerm {
        id: format!("{stage}.source_resistance"),
        rms_v: gain * density * bw.sqrt(),
    })
}

/// The noise of each excitation (its `noise`, an rms value or a density
/// over the noise bandwidth), referred to the measurand through the whole
/// chain: the reading's change with the excitation's value, so a
/// ratiometric reference cancels it as it cancels the excitation's
/// tolerance. `rms_v` here holds measurand units.
fn excitation_noise(chain: &Chain, plan: &Plan, env: &Env, enbw_hz: Option<f64>) -> Vec<NoiseTerm> {
    let mut out = Vec::new();
    for (i, node) in plan.nodes.iter().enumerate() {
        let Node::Excitation(node::Excitation { value, .. }) = node else {
            continue;
        };
        let Some(s) = stage(chain, plan, i) else {
            continue;
        };
        let Some(ParamValue::Limit(t)) = s.param("noise") else {
            continue;
        };
        let stated = t.plus.max(t.minus);
        // A density (per root hertz) integrates over the bandwidth.
        let is_density = t.dim == Dim::CURRENT_DENSITY || t.dim == Dim::VOLTAGE_DENSITY;
        let rms = match (is_density, enbw_hz) {
            (true, Some(bw)) => stated * bw.sqrt(),
            (true, None) => continue,
            (false, _) => stated,
        };
        let mut values = plan.nominal.clone();
        let mut at = |x: f64| {
            values[*value] = x;
            plan.unquantized_reading(&values, env)
        };
        let (Ok(up), Ok(down)) = (
            at(plan.nominal[*value] + rms),
            at(plan.nominal[*value] - rms),
        ) else {
            continue;
        };
        out.push(NoiseTerm {
            id: format!("{}.noise", s.name),
            rms_v: (up - down).abs() / 2.0,
        });
    }
    out
}

/// Noise at `env`, from the nominal chain. `slope` is the converter-input
/// voltage per measurand unit there (V per SI unit), `lsb` one code in
/// measurand units.
pub fn noise(chain: &Chain, plan: &Plan, env: &Env, slope: f64, lsb: f64) -> Noise {
    let enbw_hz = enbw(chain, plan);
    let signals = plan
        .evaluate(&plan.nominal, env)
        .map(|o| o.signals)
        .unwrap_or_default();
    let path = signal_path(plan, plan.adc);
    let mut terms = Vec::new();
    // Gain from each amplifier's input to the converter's input.
    let mut gain_after = 1.0;
    for &n in &path {
        let Some(s) = stage(chain, plan, n) else {
            continue;
        };
        match &plan.nodes[n] {
            Node::Adc(node::Adc { input, .. }) => {
                if let Some(ParamValue::Limit(t)) = s.param("noise") {
                    // In `LSB`: one code at the input is `lsb` (measurand
                    // per code) times `slope` (volts per measurand).
                    let per_unit = if t.dim == Dim::CODE {
                        lsb * slope.abs()
                    } else {
                        1.0
                    };
                    terms.push(NoiseTerm {
                        id: format!("{}.noise", s.name),
                        rms_v: t.plus.max(t.minus) * per_unit,
                    });
                }
                terms.extend(thermal_term(&s.name, &signals, *input, env, enbw_hz, 1.0));
            }
            Node::Amplifier(node::Amplifier { gain, input, .. }) => {
                gain_after *= plan.nominal[*gain];
                let rs = source_resistance(&signals, *input);
                if let Some(bw) = enbw_hz {
                    let e_n = number(s, "noise").unwrap_or(0.0);
                    let corner = number(s, "noise_corner").unwrap_or(0.0);
                    if e_n > 0.0 {
                        let rms =
                            rms_with_flicker(e_n, corner, FLICKER_LOW_HZ, FLICKER_LOW_HZ + bw)
                                .unwrap_or(e_n * bw.sqrt());
                        terms.push(NoiseTerm {
                            id: format!("{}.noise", s.name),
                            rms_v: gain_after * rms,
                        });
                    }
                    if let Some(i_n) = number(s, "current_noise") {
                        terms.push(NoiseTerm {
                            id: format!("{}.current_noise", s.name),
                            rms_v: gain_after * i_n * rs * bw.sqrt(),
                        });
                    }
                    terms.extend(thermal_term(
                        &s.name, &signals, *input, env, enbw_hz, gain_after,
                    ));
                }
            }
            _ => {}
        }
    }
    // A fold from +0: an empty float `sum` is −0, whose root is −0.
    let total_v = terms
        .iter()
        .fold(0.0, |acc, t| acc + t.rms_v * t.rms_v)
        .sqrt();
    let average = stage(chain, plan, plan.reading)
        .and_then(|s| number(s, "average"))
        .unwrap_or(1.0)
        .max(1.0) as u32;
    let at_converter = if slope != 0.0 {
        total_v / slope.abs()
    } else {
        0.0
    };
    let excitation = excitation_noise(chain, plan, env, enbw_hz);
    let sigma = (at_converter * at_converter
        + excitation.iter().map(|t| t.rms_v * t.rms_v).sum::<f64>())
    .sqrt();

    let sigma_averaged = sigma / f64::from(average).sqrt();
    Noise {
        terms,
        referred: excitation,
        enbw_hz,
        total_v,
        sigma,
        sigma_averaged,
        average,
        noise_free: NOISE_FREE_SIGMAS * sigma,
        noise_free_averaged: NOISE_FREE_SIGMAS * sigma_averaged,
        lsb,
    }
}
