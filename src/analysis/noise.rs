//! Noise referred to the converter's input and to the measurand: voltage
//! and current noise of each amplifier (white density and 1/f corner), the
//! Johnson noise √(4kTR) of the resistances driving each amplifier and the
//! converter (sources, dividers, bridges, filter resistors), and the
//! converter's own noise, over the chain's equivalent noise bandwidth.

use super::stages::signal_path;
use crate::eval::{node, Env, Node, NodeId, NoiseBasis, Plan, Signal, SourceName};
use crate::model::schema::param;
use crate::model::typed::CombineOp;
use crate::physics::adc::peak_to_peak_noise;
use crate::physics::noise::{johnson_voltage_density, rms_over_bandwidth, rms_with_flicker};

/// Lower band edge for 1/f noise in a DC measurement: the common practice
/// of integrating from 0.1 Hz.
pub const FLICKER_LOW_HZ: f64 = 0.1;

#[derive(Clone, Debug, PartialEq)]
pub struct NoiseTerm {
    /// Whose noise (`front.noise`).
    pub id: SourceName,
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
pub fn enbw(plan: &Plan) -> Option<f64> {
    let path = signal_path(plan, plan.adc);
    let mut bw: Option<f64> = None;
    let narrow = |bw: &mut Option<f64>, b: f64| *bw = Some(bw.map_or(b, |x: f64| x.min(b)));
    for &n in &path {
        let stated = &plan.stated[n.index()];
        match &plan.nodes[n.index()] {
            Node::Filter(_) => {
                if let Some(lp) = stated.low_pass {
                    narrow(&mut bw, lp.enbw_hz());
                }
            }
            Node::Adc(_) => {
                if let Some(rate) = stated.conversion_hz {
                    narrow(&mut bw, rate / 2.0);
                }
            }
            // An amplifier's bandwidth is its own noise term's; the rest
            // set no bandwidth on the path.
            Node::Amplifier(_)
            | Node::Excitation(_)
            | Node::Rtd(_)
            | Node::Thermocouple(_)
            | Node::Thermistor(_)
            | Node::IcVoltage(_)
            | Node::IcCurrent(_)
            | Node::StrainGauge(_)
            | Node::Transducer(_)
            | Node::Resistor(_)
            | Node::Bridge(_)
            | Node::Convert(_) => {}
        }
    }
    if bw.is_none() {
        for &n in &path {
            if let (Node::Amplifier(_), Some(b)) =
                (&plan.nodes[n.index()], plan.stated[n.index()].bandwidth_hz)
            {
                narrow(&mut bw, std::f64::consts::FRAC_PI_2 * b);
            }
        }
    }
    bw
}

/// The resistance behind a node's voltage, Ω (zero for other signals).
fn source_resistance(signals: &[Signal], node: NodeId) -> f64 {
    match signals.get(node.index()) {
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
    input: NodeId,
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
        id: SourceName::param(stage, "source_resistance"),
        rms_v: gain * density * bw.sqrt(),
    })
}

/// The noise of each excitation (its `noise`, an rms value or a density
/// over the noise bandwidth), referred to the measurand through the whole
/// chain: the reading's change with the excitation's value, so a
/// ratiometric reference cancels it as it cancels the excitation's
/// tolerance. `rms_v` here holds measurand units.
fn excitation_noise(plan: &Plan, env: &Env, enbw_hz: Option<f64>) -> Vec<NoiseTerm> {
    let mut out = Vec::new();
    for (i, node) in plan.node_ids().zip(&plan.nodes) {
        let Node::Excitation(node::Excitation { value, .. }) = node else {
            continue;
        };
        let Some(noise) = plan.stated[i.index()].noise else {
            continue;
        };
        // A density (per root hertz) integrates over the bandwidth.
        let rms = match (noise.basis, enbw_hz) {
            (NoiseBasis::Density, Some(bw)) => match rms_over_bandwidth(noise.amount, bw) {
                Ok(rms) => rms,
                Err(_) => continue,
            },
            (NoiseBasis::Density, None) => continue,
            (NoiseBasis::Rms | NoiseBasis::Codes, _) => noise.amount,
        };
        let mut values = plan.nominal.clone();
        let mut at = |x: f64| {
            values[value.index()] = x;
            plan.unquantized_reading(&values, env)
        };
        let (Ok(up), Ok(down)) = (
            at(plan.nominal[value.index()] + rms),
            at(plan.nominal[value.index()] - rms),
        ) else {
            continue;
        };
        out.push(NoiseTerm {
            id: SourceName::param(&plan.names[i.index()], param::NOISE),
            rms_v: (up - down).abs() / 2.0,
        });
    }
    out
}

/// A converter's own noise and the thermal noise of what drives it.
fn converter_terms(
    plan: &Plan,
    n: NodeId,
    input: NodeId,
    signals: &[Signal],
    env: &Env,
    enbw_hz: Option<f64>,
    volts_per_code: f64,
) -> Vec<NoiseTerm> {
    let name = &plan.names[n.index()];
    let mut terms = Vec::new();
    if let Some(noise) = plan.stated[n.index()].noise {
        // In `LSB`: one code at the input is `volts_per_code`.
        let per_unit = match noise.basis {
            NoiseBasis::Codes => volts_per_code,
            NoiseBasis::Rms | NoiseBasis::Density => 1.0,
        };
        terms.push(NoiseTerm {
            id: SourceName::param(name, param::NOISE),
            rms_v: noise.amount * per_unit,
        });
    }
    terms.extend(thermal_term(name, signals, input, env, enbw_hz, 1.0));
    terms
}

/// An amplifier's voltage noise (with its 1/f corner), its current noise
/// through the source resistance, and the thermal noise of that resistance,
/// each `gain_after` to the converter's input, over `bw` Hz.
fn amplifier_terms(
    plan: &Plan,
    n: NodeId,
    input: NodeId,
    signals: &[Signal],
    env: &Env,
    bw: f64,
    gain_after: f64,
) -> Vec<NoiseTerm> {
    let name = &plan.names[n.index()];
    let stated = &plan.stated[n.index()];
    let mut terms = Vec::new();
    let rs = source_resistance(signals, input);
    let e_n = stated.noise.map_or(0.0, |noise| noise.amount);
    let corner = stated.noise_corner_hz.unwrap_or(0.0);
    if e_n > 0.0 {
        let rms = rms_with_flicker(e_n, corner, FLICKER_LOW_HZ, FLICKER_LOW_HZ + bw)
            .unwrap_or(e_n * bw.sqrt());
        terms.push(NoiseTerm {
            id: SourceName::param(name, param::NOISE),
            rms_v: gain_after * rms,
        });
    }
    if let Some(i_n) = stated.current_noise {
        terms.push(NoiseTerm {
            id: SourceName::param(name, param::CURRENT_NOISE),
            rms_v: gain_after * i_n * rs * bw.sqrt(),
        });
    }
    terms.extend(thermal_term(
        name,
        signals,
        input,
        env,
        Some(bw),
        gain_after,
    ));
    terms
}

/// The noise terms of one converter's path, referred to its input and
/// scaled by `scale` to the main converter's: its own noise and thermal
/// noise, and each amplifier's, `gain_after` to the converter.
#[allow(clippy::too_many_arguments)]
fn branch_terms(
    plan: &Plan,
    adc: NodeId,
    signals: &[Signal],
    env: &Env,
    enbw_hz: Option<f64>,
    per_code: f64,
    scale: f64,
) -> Vec<NoiseTerm> {
    let mut terms = Vec::new();
    // Gain from each amplifier's input to the converter's input.
    let mut gain_after = 1.0;
    for n in signal_path(plan, adc) {
        match &plan.nodes[n.index()] {
            Node::Adc(node::Adc { input, .. }) => {
                // One code at the input is `per_code` volts.
                terms.extend(converter_terms(
                    plan, n, *input, signals, env, enbw_hz, per_code,
                ));
            }
            Node::Amplifier(node::Amplifier { gain, input, .. }) => {
                gain_after *= plan.nominal[gain.index()];
                if let Some(bw) = enbw_hz {
                    terms.extend(amplifier_terms(
                        plan, n, *input, signals, env, bw, gain_after,
                    ));
                }
            }
            // Sensors and resistors show as the source resistance the
            // next amplifier or converter sees; an excitation's noise is
            // a term of its own (`excitation_noise`).
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
            | Node::Filter(_)
            | Node::Convert(_) => {}
        }
    }
    if scale != 1.0 {
        for t in &mut terms {
            t.rms_v *= scale;
        }
    }
    terms
}

/// One conversion's noise σ, in codes, of converter channel `adc` alone,
/// as firmware sees its code before a conversion combines it: the terms
/// of its own path (its amplifiers', the resistances driving them, the
/// converter's). An excitation's own noise, which a ratiometric reading
/// cancels, is left out here as it is in the main converter's terms.
pub fn channel_sigma_codes(plan: &Plan, env: &Env, adc: NodeId) -> f64 {
    let Some(Node::Adc(a)) = plan.nodes.get(adc.index()) else {
        return 0.0;
    };
    let signals = plan
        .evaluate(&plan.nominal, env)
        .map(|o| o.signals)
        .unwrap_or_default();
    let Some(vr) = plan.converter_reference(adc, &plan.nominal, env, &signals) else {
        return 0.0;
    };
    let gain = a.pga.map(|g| plan.nominal[g.index()]).unwrap_or(1.0);
    // Volts at its input per code, with its own gain.
    let per_code = vr / (gain * a.per_ref);
    if !(per_code > 0.0 && per_code.is_finite()) {
        return 0.0;
    }
    let terms = branch_terms(plan, adc, &signals, env, enbw(plan), per_code, 1.0);
    terms
        .iter()
        .fold(0.0, |acc, t| acc + t.rms_v * t.rms_v)
        .sqrt()
        / per_code
}

/// Noise at `env`, from the nominal chain. `slope` is the converter-input
/// voltage per measurand unit there (V per SI unit), `lsb` one code in
/// measurand units.
pub fn noise(plan: &Plan, env: &Env, slope: f64, lsb: f64) -> Noise {
    let enbw_hz = enbw(plan);
    let signals = plan
        .evaluate(&plan.nominal, env)
        .map(|o| o.signals)
        .unwrap_or_default();
    let per_code = lsb * slope.abs();
    let mut terms = branch_terms(plan, plan.adc, &signals, env, enbw_hz, per_code, 1.0);
    // The channels a conversion combines with the main one: their own
    // paths, referred to the main converter's input (as added volts in a
    // sum; in a ratio, the denominator's relative noise is the same
    // relative noise of the numerator).
    if let Some(Node::Adc(node::Adc {
        combine: Some((op, others)),
        input,
        ..
    })) = plan.nodes.get(plan.adc.index())
    {
        let volts = |n: NodeId| match signals.get(n.index()) {
            Some(Signal::Voltage { v, .. }) => *v,
            _ => 0.0,
        };
        for &other in others {
            let scale = match (op, &plan.nodes[other.index()]) {
                (CombineOp::Sum, _) => 1.0,
                (CombineOp::Ratio, Node::Adc(o)) if volts(o.input) != 0.0 => {
                    (volts(*input) / volts(o.input)).abs()
                }
                (CombineOp::Ratio, _) => 0.0,
            };
            terms.extend(branch_terms(
                plan, other, &signals, env, enbw_hz, per_code, scale,
            ));
        }
    }
    // A fold from +0: an empty float `sum` is −0, whose root is −0.
    let total_v = terms
        .iter()
        .fold(0.0, |acc, t| acc + t.rms_v * t.rms_v)
        .sqrt();
    let average = plan.stated[plan.reading.index()]
        .average
        .unwrap_or(1.0)
        .max(1.0) as u32;
    let at_converter = if slope != 0.0 {
        total_v / slope.abs()
    } else {
        0.0
    };
    let excitation = excitation_noise(plan, env, enbw_hz);
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
        noise_free: peak_to_peak_noise(sigma),
        noise_free_averaged: peak_to_peak_noise(sigma_averaged),
        lsb,
    }
}
