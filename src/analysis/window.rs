//! The valid code window: every code the healthy chain can give over the
//! measurand range × the ambient range × every tolerance at its limits,
//! widened by the converter's noise. Firmware treats a code outside it as
//! a fault, and each fault's code (when the fault analysis places it) is
//! judged against it.
//!
//! The reach is the range envelope the limit checks compute for the
//! converter's input ([`ranges::envelopes`], `Limit::ConverterInput`):
//! one machinery for both, so the window and the headroom findings never
//! disagree about where the code goes.

use super::budget;
use super::noise::{channel_sigma_codes, noise};
use super::ranges::{self, Limit};
use crate::eval::node::Adc;
use crate::eval::{Env, EvalError, Node, NodeId, Plan, SourceKind};
use crate::model::typed::CombineOp;
use crate::model::Chain;
use crate::physics::adc::{code_range, Polarity};

/// Noise coverage the window allows for: one conversion stays within
/// k σ of its mean with probability 99.73 % (k = 3, common practice).
pub const NOISE_K: f64 = 3.0;

/// Budget points across the measurand range, as the limit checks use.
pub const POINTS: usize = 21;

#[derive(Clone, Debug, PartialEq)]
pub struct CodeWindow {
    /// The lowest and highest exact (unrounded) code over the ranges and
    /// tolerances, before noise.
    pub reach: (f64, f64),
    /// One conversion's noise σ (not averaged), codes.
    pub sigma_codes: f64,
    /// The noise coverage factor applied.
    pub k: f64,
    /// The codes a healthy chain gives, inclusive: the reach widened by
    /// k σ, rounded as the converter rounds, inside its code range.
    pub low: i64,
    pub high: i64,
    /// The converter's code range, inclusive (for a sum of channels, the
    /// sum of their ranges).
    pub rails: (i64, i64),
    /// For a conversion that combines channels (`sum`, `ratio`), each
    /// channel's own window, main converter first: firmware sees each
    /// channel's code before it adds or divides them, so a fault that
    /// takes one channel out of its own window is seen even where the
    /// combination stays inside its window.
    pub channels: Vec<ChannelWindow>,
}

/// One channel's own valid code window.
#[derive(Clone, Debug, PartialEq)]
pub struct ChannelWindow {
    pub node: NodeId,
    pub name: String,
    pub window: CodeWindow,
}

impl CodeWindow {
    /// Whether the window reaches a rail: a fault that drives the
    /// converter there cannot be told from a healthy extreme.
    pub fn touches_rail(&self) -> bool {
        self.low <= self.rails.0 || self.high >= self.rails.1
    }
}

/// The chain's valid code window at its main converter.
pub fn code_window(chain: &Chain, plan: &Plan) -> Result<CodeWindow, EvalError> {
    code_window_from(chain, plan, &ranges::envelopes(chain, plan, POINTS)?)
}

/// [`code_window`] from the range envelopes the limit checks already
/// computed (at the budget points), so `check` follows the signals once.
/// A conversion that adds channels has the sum's window: each channel's
/// reach adds (a bound on the sum's, as their extremes need not come
/// together), and so do the rails; with each channel's own window beside
/// it. A conversion that takes a ratio of two channels has the window of
/// that ratio, the code the firmware computes ([`ratio_window`]).
pub fn code_window_from(
    chain: &Chain,
    plan: &Plan,
    envelopes: &[ranges::Envelope],
) -> Result<CodeWindow, EvalError> {
    let Node::Adc(adc) = &plan.nodes[plan.adc.index()] else {
        return Err(numeric(plan, "no converter"));
    };
    let others = match &adc.combine {
        Some((CombineOp::Sum, others)) => others,
        Some((CombineOp::Ratio, others)) => {
            return Ok(CodeWindow {
                channels: channel_windows(plan, envelopes, others)?,
                ..ratio_window(chain, plan, adc)?
            })
        }
        None => return own_window(plan, envelopes, plan.adc, noise_codes(plan)?),
    };
    let own = own_window(plan, envelopes, plan.adc, noise_codes(plan)?)?;
    let channels = channel_windows(plan, envelopes, others)?;
    let add = |f: fn(&CodeWindow) -> (f64, f64)| {
        channels
            .iter()
            .map(|c| f(&c.window))
            .fold((0.0, 0.0), |a, b| (a.0 + b.0, a.1 + b.1))
    };
    let reach = add(|w| w.reach);
    let rails = code_rails(plan)?;
    // The sum's noise is the main converter's, which holds every
    // channel's path.
    Ok(CodeWindow {
        channels,
        ..window_of(reach, own.sigma_codes, rails)
    })
}

/// Each combined channel's own window, the main converter first:
/// firmware sees each channel's code before it adds or divides them.
fn channel_windows(
    plan: &Plan,
    envelopes: &[ranges::Envelope],
    others: &[NodeId],
) -> Result<Vec<ChannelWindow>, EvalError> {
    std::iter::once(&plan.adc)
        .chain(others)
        .map(|&n| {
            Ok(ChannelWindow {
                node: n,
                name: plan.names[n.index()].clone(),
                window: own_window(plan, envelopes, n, channel_noise(plan, n))?,
            })
        })
        .collect()
}

/// The window of a conversion that takes the ratio of its input's code
/// to another channel's (`ratio`), in the ratio's codes (ratio × codes
/// of full scale), which is what the firmware computes and every fault
/// code of the chain is: at each condition (measurand points × ambients),
/// the nominal ratio plus the sum of every source's downward and upward
/// changes apart, each at its two limits (the same worst case the range
/// envelopes take), widened by k σ of the ratio's noise. Its code range
/// is the ratio of integer codes over a denominator of at least one code
/// in magnitude: the numerator's range times the codes of full scale
/// (both signs on a bipolar converter, whose denominator may be negative).
fn ratio_window(chain: &Chain, plan: &Plan, adc: &Adc) -> Result<CodeWindow, EvalError> {
    let mut reach = (f64::INFINITY, f64::NEG_INFINITY);
    let code = |values: &[f64], env: &Env| plan.exact_code(values, env, plan.adc);
    for env in budget::conditions(chain, plan, POINTS) {
        let nominal = code(&plan.nominal, &env)?;
        let (mut down, mut up) = (0.0_f64, 0.0_f64);
        let mut values = plan.nominal.clone();
        for (s, slot) in plan.slots.iter().enumerate() {
            if slot.kind == SourceKind::Exact {
                continue;
            }
            let (mut lo, mut hi) = (0.0_f64, 0.0_f64);
            for x in [slot.nominal - slot.minus, slot.nominal + slot.plus] {
                values[s] = x;
                let change = code(&values, &env)? - nominal;
                (lo, hi) = (lo.min(change), hi.max(change));
            }
            values[s] = slot.nominal;
            down += lo;
            up += hi;
        }
        reach = (reach.0.min(nominal + down), reach.1.max(nominal + up));
    }
    Ok(window_of(reach, noise_codes(plan)?, ratio_rails(adc)))
}

/// The codes the chain's conversion can be handed at all: the
/// converter's code range; for channels that add, the sum of theirs; for
/// a ratio, the ratio's ([`ratio_rails`]).
pub fn code_rails(plan: &Plan) -> Result<(i64, i64), EvalError> {
    let adc_of = |n: NodeId| {
        plan.nodes[n.index()]
            .as_adc()
            .ok_or_else(|| numeric(plan, "no converter"))
    };
    let own = |adc: &Adc| {
        code_range(adc.bits, adc.polarity)
            .map_err(|_| numeric(plan, "the converter has no code range"))
    };
    let adc = adc_of(plan.adc)?;
    match &adc.combine {
        None => own(adc),
        Some((CombineOp::Ratio, _)) => Ok(ratio_rails(adc)),
        Some((CombineOp::Sum, others)) => {
            let mut rails = own(adc)?;
            for &n in others {
                let (lo, hi) = own(adc_of(n)?)?;
                rails = (rails.0 + lo, rails.1 + hi);
            }
            Ok(rails)
        }
    }
}

/// A ratio's code range: the numerator's codes over a denominator of at
/// least one code, times the codes of full scale (both signs on a
/// bipolar converter, whose denominator may be negative).
fn ratio_rails(adc: &Adc) -> (i64, i64) {
    let (lo, hi) = adc.codes;
    let rails = match adc.polarity {
        Polarity::Unipolar => (lo * adc.per_ref, hi * adc.per_ref),
        Polarity::Bipolar => {
            let most = lo.abs().max(hi.abs()) * adc.per_ref;
            (-most, most)
        }
    };
    (rails.0 as i64, rails.1 as i64)
}

/// Converter `node`'s own window: its input's envelope in codes, widened
/// by `sigma_codes` of noise.
fn own_window(
    plan: &Plan,
    envelopes: &[ranges::Envelope],
    node: NodeId,
    sigma_codes: f64,
) -> Result<CodeWindow, EvalError> {
    let Node::Adc(adc) = &plan.nodes[node.index()] else {
        return Err(numeric(plan, "no converter"));
    };
    let per_ref = match adc.polarity {
        Polarity::Unipolar => 2f64.powi(adc.bits as i32),
        Polarity::Bipolar => 2f64.powi(adc.bits as i32 - 1),
    };
    let rails = code_range(adc.bits, adc.polarity)
        .map_err(|_| numeric(plan, "the converter has no code range"))?;
    let envelope = envelopes
        .iter()
        .find(|e| e.node == node && e.limit == Limit::ConverterInput)
        .ok_or_else(|| numeric(plan, "no converter input envelope"))?;
    // The envelope is in fractions of the reference: back to codes.
    let reach = (envelope.reach.0 * per_ref, envelope.reach.1 * per_ref);
    Ok(window_of(reach, sigma_codes, rails))
}

/// The window from a reach, widened by k σ and rounded as the converter
/// rounds, inside `rails`.
fn window_of(reach: (f64, f64), sigma_codes: f64, rails: (i64, i64)) -> CodeWindow {
    let widen = NOISE_K * sigma_codes;
    let code = |x: f64| (x.round() as i64).clamp(rails.0, rails.1);
    CodeWindow {
        reach,
        sigma_codes,
        k: NOISE_K,
        low: code(reach.0 - widen),
        high: code(reach.1 + widen),
        rails,
        channels: Vec::new(),
    }
}

/// One channel's own noise σ in codes, the largest at the measurand
/// range's ends and middle (at the reference).
fn channel_noise(plan: &Plan, node: NodeId) -> f64 {
    let (lo, hi) = plan.range;
    [lo, 0.5 * (lo + hi), hi]
        .into_iter()
        .map(|m| {
            let env = Env {
                measurand: m,
                ambient: plan.reference,
                cold_junction: plan.reference,
            };
            channel_sigma_codes(plan, &env, node)
        })
        .fold(0.0, f64::max)
}

fn numeric(plan: &Plan, what: &str) -> EvalError {
    EvalError::Numeric {
        stage: plan.names[plan.adc.index()].clone(),
        what: what.to_string(),
    }
}

/// One conversion's noise σ in codes, the largest at the measurand
/// range's ends and middle (at the reference): the noise the budget
/// states, times the code's slope there.
fn noise_codes(plan: &Plan) -> Result<f64, EvalError> {
    let (lo, hi) = plan.range;
    let mut sigma: f64 = 0.0;
    for m in [lo, 0.5 * (lo + hi), hi] {
        let env = Env {
            measurand: m,
            ambient: plan.reference,
            cold_junction: plan.reference,
        };
        let (v_slope, c_slope) = budget::slopes(plan, &env)?;
        let n = noise(plan, &env, v_slope, budget::code_step(c_slope));
        sigma = sigma.max(n.sigma * c_slope.abs());
    }
    Ok(sigma)
}

#[cfg(test)]
mod tests {
    use super::code_window;
    use crate::eval::lower;
    use crate::model::{resolve, PartsCache};
    use crate::syntax::{decode, parse};

    /// A linear sensor, 0.5 V + 10 mV/K from 0 to 100 degC, read by a
    /// 12-bit single-ended converter on a 2.5 V ± 0.1 % reference with
    /// 1 LSB rms noise. By hand: the lowest code is 0.5 V / (2.5 V ×
    /// 1.001) × 4096 = 818.382, with the reference at its high limit; the
    /// highest 1.5 V / (2.5 V × 0.999) × 4096 = 2460.060, at its low
    /// limit. Widened by 3 σ = 3 codes and rounded: 815.382 → 815 and
    /// 2463.060 → 2463.
    #[test]
    fn window_matches_the_hand_calculation() {
        let spec = r#"
chain win "Window by hand" {
    measurand temperature 0 degC .. 100 degC
    ambient 25 degC
    sensor s {
        ic_voltage
        slope 10 mV/K
        output 0.5 V at 0 degC
    }
    adc conv {
        bits 12
        input single
        vref 2.5 V ± 0.1 %
        noise 1 LSB
    }
    convert reading { method exact }
    s -> conv -> reading
}
"#;
        // Resolved by the front end's stages (the checker itself sits above
        // the analyses).
        let file = decode("win.catena", spec.as_bytes()).expect("text");
        let (ast, findings) = parse(&file);
        assert!(!findings.has_errors(), "{findings:?}");
        let base = std::path::Path::new(".");
        let (chains, findings) = resolve(&file, &ast, base, None, &mut PartsCache::default());
        assert!(!findings.has_errors(), "{findings:?}");
        let chain = &chains[0];
        let plan = lower(chain).expect("the chain lowers");
        let w = code_window(chain, &plan).expect("a window");
        let low = 0.5 / (2.5 * 1.001) * 4096.0;
        let high = 1.5 / (2.5 * 0.999) * 4096.0;
        assert!((w.reach.0 - low).abs() < 1e-9, "{:?}", w.reach);
        assert!((w.reach.1 - high).abs() < 1e-9, "{:?}", w.reach);
        assert!((w.sigma_codes - 1.0).abs() < 1e-9, "{}", w.sigma_codes);
        assert_eq!((w.low, w.high), (815, 2463));
        assert_eq!(w.rails, (0, 4095));
        assert!(!w.touches_rail());
    }
}
