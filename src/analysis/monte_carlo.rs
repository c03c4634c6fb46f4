//! Monte Carlo propagation (JCGM 101:2008): every source drawn together,
//! the whole chain evaluated per trial, and the probabilistically
//! symmetric 95 % coverage interval of the error.
//!
//! Every source draws from its own stable stream (see [`super::draws`]):
//! its value in trial t is a function of (seed, its id, the condition, t)
//! alone, so the trials can be split among threads any way, and an edit
//! to one source leaves every other source's draws bit-identical.

use rayon::prelude::*;

use super::budget::Point;
use super::draws::{condition_key, Stream};
use super::noise::Noise;
use crate::eval::{
    half_width, own_fraction, Env, EvalError, Group, LaneSignals, Plan, Signal, Slot, SlotId,
    SourceKind, LANES, MAX_NODES,
};

/// Trials per task: large enough to amortise the split, small enough to
/// balance two to many cores.
const CHUNK: usize = 2048;
/// The coverage probability of the interval.
pub const COVERAGE: f64 = 0.95;
/// The stream ids of the two sources that are not parameters. Parameter
/// ids are `stage.parameter`, always with a dot, so these cannot clash.
pub const NOISE_ID: &str = "noise";
pub const QUANTIZATION_ID: &str = "quantization";

#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Interval {
    pub low: f64,
    pub high: f64,
    /// How far either end may lie from where unlimited trials would put
    /// it: the half-width of a distribution-free 95 % bracket on the end's
    /// rank (the binomial count of trials below a quantile), read from the
    /// order statistics on its outer side, where trials are sparser, so
    /// it errs wide (by a fifth for a normal output); the larger of the
    /// two ends.
    pub numerical: f64,
}

/// A source's share of the output variance at one condition, from the
/// trials themselves (see [`super::shares`]).
#[derive(Clone, Debug, PartialEq)]
pub struct Share {
    /// The source's id, as the budget's contributions name it.
    pub id: String,
    /// The first-order index, 0 … 1.
    pub share: f64,
}

/// What a Monte Carlo finds at one condition.
#[derive(Clone, Debug, PartialEq)]
pub struct Sampled {
    pub interval: Interval,
    /// Every drawn source's variance share, when asked for.
    pub shares: Vec<Share>,
}

/// One source's value as `origin + scale · x`, x standard normal or
/// uniform on [0, 1), worked out once rather than per trial.
#[derive(Clone, Copy, Debug)]
struct Draw {
    slot: SlotId,
    normal: bool,
    origin: f64,
    scale: f64,
}

impl Draw {
    /// A slot's draw; a member of a tracking group draws only its own
    /// part, `own` of its half-width about its middle (the group's common
    /// part is added by [`Common`]).
    fn of(slot: SlotId, s: &Slot, own: f64) -> Draw {
        let (origin, scale) = if own != 1.0 {
            let (h, mid) = half_width(s);
            if s.normal {
                (mid, own * h / 3.0)
            } else {
                (mid - own * h, 2.0 * own * h)
            }
        } else if s.normal {
            // A normal limit is a 3σ bound about the interval's middle.
            (
                s.nominal + (s.plus - s.minus) / 2.0,
                (s.plus + s.minus) / 6.0,
            )
        } else {
            (s.nominal - s.minus, s.plus + s.minus)
        };
        Draw {
            slot,
            normal: s.normal,
            origin,
            scale,
        }
    }

    /// The value of trial `t` from `stream`.
    #[inline]
    fn value(&self, stream: Stream, t: u64) -> f64 {
        let x = if self.normal {
            stream.normal(t)
        } else {
            stream.uniform(t)
        };
        self.origin + self.scale * x
    }
}

/// A tracking group's common part: one draw x on [−1, 1] (or a 3σ
/// normal) per trial, adding c_i h_i x to every member.
#[derive(Clone, Debug)]
struct Common {
    normal: bool,
    /// Each member's slot and c_i h_i.
    parts: Vec<(SlotId, f64)>,
}

impl Common {
    fn of(group: &Group, plan: &Plan) -> Common {
        Common {
            normal: group.normal,
            parts: group
                .parts
                .iter()
                .map(|p| (p.slot, p.common * half_width(&plan.slots[p.slot.index()]).0))
                .collect(),
        }
    }

    /// Trial `t`'s draw on the unit half-width.
    #[inline]
    fn unit(&self, stream: Stream, t: u64) -> f64 {
        if self.normal {
            stream.normal(t) / 3.0
        } else {
            2.0 * stream.uniform(t) - 1.0
        }
    }
}

/// One condition a Monte Carlo runs at: the environment and quantization's
/// effect half a code below and above there, in measurand units (each
/// trial adds a uniform code offset, side by side through them).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Condition {
    pub env: Env,
    pub quantization: (f64, f64),
}

impl Condition {
    /// The reading's change with the code moved by `q` (−½ … ½): each
    /// side of the budget's quantization scaled to it.
    fn quantization_at(&self, q: f64) -> f64 {
        let (low, high) = self.quantization;
        if q < 0.0 {
            -2.0 * q * low
        } else {
            2.0 * q * high
        }
    }
}

impl Condition {
    /// The conditions of budget points: each point's environment (the
    /// junction at the ambient) and its code step.
    pub fn of_points(points: &[Point]) -> Vec<Condition> {
        points
            .iter()
            .map(|p| Condition {
                env: Env {
                    measurand: p.measurand,
                    ambient: p.ambient,
                    cold_junction: p.ambient,
                },
                quantization: p.quantization(),
            })
            .collect()
    }
}

/// Trials held in memory at once, across the conditions run together.
const TRIALS_IN_FLIGHT: usize = 1 << 22;

/// The error (reading − measurand) of `trials` draws at `env`, and its
/// 95 % interval. `lsb` is one code in measurand units.
pub fn interval(
    plan: &Plan,
    env: &Env,
    noise: &Noise,
    lsb: f64,
    trials: usize,
    seed: u64,
) -> Result<Interval, EvalError> {
    let condition = Condition {
        env: *env,
        quantization: (-lsb / 2.0, lsb / 2.0),
    };
    let run = Run {
        plan,
        noise,
        trials,
        seed,
        shares: false,
    };
    let mut sampled = run.at(&[condition])?;
    Ok(sampled.remove(0).interval)
}

/// [`interval`] at every condition, calling `progress(done, total)` as
/// groups of them start. Conditions run together, as many as keep
/// [`TRIALS_IN_FLIGHT`] trials in memory, so the cores stay busy with few
/// trials a point and the order statistics of one condition overlap the
/// trials of the next.
pub fn intervals(
    plan: &Plan,
    conditions: &[Condition],
    noise: &Noise,
    trials: usize,
    seed: u64,
    progress: &dyn Fn(usize, usize),
) -> Result<Vec<Interval>, EvalError> {
    let sampled = sample(plan, conditions, noise, trials, seed, false, progress)?;
    Ok(sampled.into_iter().map(|s| s.interval).collect())
}

/// [`intervals`], with each source's variance share at every condition
/// when `shares` is set.
pub fn sample(
    plan: &Plan,
    conditions: &[Condition],
    noise: &Noise,
    trials: usize,
    seed: u64,
    shares: bool,
    progress: &dyn Fn(usize, usize),
) -> Result<Vec<Sampled>, EvalError> {
    let run = Run {
        plan,
        noise,
        trials,
        seed,
        shares,
    };
    let group = (TRIALS_IN_FLIGHT / trials.max(1)).max(1);
    let mut out = Vec::with_capacity(conditions.len());
    for batch in conditions.chunks(group) {
        progress(out.len(), conditions.len());
        out.extend(run.at(batch)?);
    }
    Ok(out)
}

/// What a Monte Carlo draws at one condition: each source with its
/// stream, and the streams of noise and quantization where they act.
struct Streams {
    sources: Vec<(Draw, Stream)>,
    /// Tracking groups' common parts, each with its id's stream.
    groups: Vec<(Common, Stream)>,
    noise: Option<Stream>,
    quantization: Option<Stream>,
}

impl Streams {
    /// Every drawn source's id and stream, noise and quantization last.
    fn named<'a>(&'a self, plan: &'a Plan) -> impl Iterator<Item = (&'a str, Stream)> + 'a {
        let sources = self
            .sources
            .iter()
            .map(|(d, s)| (plan.slots[d.slot.index()].id.as_str(), *s));
        let groups = plan
            .groups
            .iter()
            .zip(&self.groups)
            .map(|(g, (_, s))| (g.id.as_str(), *s));
        let noise = self.noise.map(|s| (NOISE_ID, s));
        let quantization = self.quantization.map(|s| (QUANTIZATION_ID, s));
        sources.chain(groups).chain(noise).chain(quantization)
    }

    fn new(plan: &Plan, condition: &Condition, noise: &Noise, seed: u64) -> Streams {
        let key = condition_key(&condition.env);
        let sources = SlotId::all(plan.slots.len())
            .zip(&plan.slots)
            .filter(|(_, slot)| slot.kind != SourceKind::Exact)
            .map(|(s, slot)| {
                let own = own_fraction(&plan.groups, s);
                (Draw::of(s, slot, own), Stream::new(seed, &slot.id, key))
            })
            .collect();
        let groups = plan
            .groups
            .iter()
            .map(|g| (Common::of(g, plan), Stream::new(seed, &g.id, key)))
            .collect();
        let acts = |on: bool, id| on.then(|| Stream::new(seed, id, key));
        Streams {
            sources,
            groups,
            noise: acts(noise.sigma_averaged != 0.0, NOISE_ID),
            quantization: acts(condition.quantization != (0.0, 0.0), QUANTIZATION_ID),
        }
    }
}

/// What one Monte Carlo run draws: the plan's sources and the chain's
/// noise, `trials` trials from `seed`, and each source's variance share
/// when `shares` is set.
#[derive(Clone, Copy)]
struct Run<'a> {
    plan: &'a Plan,
    noise: &'a Noise,
    trials: usize,
    seed: u64,
    shares: bool,
}

impl Run<'_> {
    /// The intervals of `conditions`, their trials on every core together.
    fn at(&self, conditions: &[Condition]) -> Result<Vec<Sampled>, EvalError> {
        let Run {
            plan,
            noise,
            trials,
            seed,
            shares,
        } = *self;
        if trials == 0 {
            let none = Sampled {
                interval: Interval {
                    low: 0.0,
                    high: 0.0,
                    numerical: 0.0,
                },
                shares: Vec::new(),
            };
            return Ok(vec![none; conditions.len()]);
        }
        let streams: Vec<Streams> = conditions
            .iter()
            .map(|c| Streams::new(plan, c, noise, seed))
            .collect();
        // Each chunk writes its errors straight into its condition's buffer.
        let mut errors: Vec<Vec<f64>> = conditions.iter().map(|_| vec![0.0; trials]).collect();
        let tasks: Vec<(usize, usize, &mut [f64])> = errors
            .iter_mut()
            .enumerate()
            .flat_map(|(c, all)| {
                all.chunks_mut(CHUNK)
                    .enumerate()
                    .map(move |(chunk, out)| (c, chunk * CHUNK, out))
            })
            .collect();
        let outcomes: Vec<Result<(), EvalError>> = tasks
            .into_par_iter()
            .map(|(c, first, out)| {
                chunk_errors(plan, &streams[c], &conditions[c], noise, first, out)
            })
            .collect();
        // The first failure in order, whatever the thread count.
        outcomes.into_iter().collect::<Result<(), _>>()?;
        Ok(errors
            .par_iter_mut()
            .zip(&streams)
            .map(|(all, streams)| {
                // The shares read the trials in their order, before the
                // interval's selection reorders them.
                let shares = if shares {
                    variance_shares(plan, streams, all)
                } else {
                    Vec::new()
                };
                Sampled {
                    interval: coverage(all),
                    shares,
                }
            })
            .collect())
    }
}

/// Each drawn source's share of the variance of `errors`.
fn variance_shares(plan: &Plan, streams: &Streams, errors: &[f64]) -> Vec<Share> {
    let cells = super::shares::cells(errors.len());
    let centered = super::shares::Centered::new(errors);
    streams
        .named(plan)
        .map(|(id, stream)| Share {
            id: id.to_string(),
            share: super::shares::first_order(&centered, stream, cells),
        })
        .collect()
}

/// The errors of trials `first ..` into `out`.
fn chunk_errors(
    plan: &Plan,
    streams: &Streams,
    condition: &Condition,
    noise: &Noise,
    first: usize,
    out: &mut [f64],
) -> Result<(), EvalError> {
    let env = &condition.env;
    let slots = plan.nominal.len();
    // Trials go through the evaluator LANES at a time; each value is its
    // trial's, so the lane count changes no result.
    let mut values = plan.nominal.repeat(LANES);
    let mut readings = [0.0; LANES];
    let mut scratch: LaneSignals = [[Signal::None; MAX_NODES]; LANES];
    for (k, out) in out.chunks_mut(LANES).enumerate() {
        let t0 = (first + k * LANES) as u64;
        let lanes = out.len();
        for &(draw, stream) in &streams.sources {
            for lane in 0..lanes {
                values[lane * slots + draw.slot.index()] = draw.value(stream, t0 + lane as u64);
            }
        }
        for (common, stream) in &streams.groups {
            for lane in 0..lanes {
                let x = common.unit(*stream, t0 + lane as u64);
                for &(slot, scale) in &common.parts {
                    values[lane * slots + slot.index()] += scale * x;
                }
            }
        }
        if lanes == LANES {
            plan.unquantized_readings(&values, env, &mut readings, &mut scratch)?;
        } else {
            for (lane, reading) in readings.iter_mut().enumerate().take(lanes) {
                *reading =
                    plan.unquantized_reading(&values[lane * slots..(lane + 1) * slots], env)?;
            }
        }
        for (lane, (slot, &r)) in out.iter_mut().zip(&readings).enumerate() {
            let t = t0 + lane as u64;
            let z = streams.noise.map_or(0.0, |s| s.normal(t));
            let q = streams.quantization.map_or(0.0, |s| s.uniform(t) - 0.5);
            *slot = r - env.measurand + z * noise.sigma_averaged + condition.quantization_at(q);
        }
    }
    Ok(())
}

/// The probabilistically symmetric 95 % interval of `all` (not empty),
/// which it reorders.
fn coverage(all: &mut [f64]) -> Interval {
    // Two order statistics, found by selection in linear time rather than
    // by sorting a million errors.
    let tail = (1.0 - COVERAGE) / 2.0;
    let rank = |p: f64| ((p * all.len() as f64).floor() as usize).min(all.len() - 1);
    let (low_rank, high_rank) = (rank(tail), rank(1.0 - tail));
    // The count of trials below a p-quantile is binomial: ±1.96 of its
    // standard deviation in rank brackets the end at 95 %.
    let m = all.len() as f64;
    let reach = (1.96 * (m * tail * (1.0 - tail)).sqrt()).ceil() as usize;
    let (_, high, above) = all.select_nth_unstable_by(high_rank, f64::total_cmp);
    let high = *high;
    let high_spread = match above.len() {
        0 => 0.0,
        n => {
            *above
                .select_nth_unstable_by(reach.clamp(1, n) - 1, f64::total_cmp)
                .1
                - high
        }
    };
    let (low, low_spread) = if low_rank < high_rank {
        let (below, low, _) = all[..high_rank].select_nth_unstable_by(low_rank, f64::total_cmp);
        let low = *low;
        let spread = match below.len() {
            0 => 0.0,
            n => {
                low - *below
                    .select_nth_unstable_by(n - reach.clamp(1, n), f64::total_cmp)
                    .1
            }
        };
        (low, spread)
    } else {
        (high, 0.0)
    };
    Interval {
        low,
        high,
        numerical: high_spread.max(low_spread),
    }
}

#[cfg(test)]
mod tests {
    use super::coverage;
    use crate::analysis::draws::Stream;

    fn normal_sample(seed: u64, n: usize) -> Vec<f64> {
        let stream = Stream::new(seed, "sample", 0);
        (0..n as u64).map(|t| stream.normal(t)).collect()
    }

    /// For a normal output the interval is ±1.959964 σ, and an end's
    /// numerical half-width is 1.96 · √(p(1 − p)/M) / φ(1.96) (the
    /// asymptotic standard error of a sample quantile, √(p(1 − p)/M)/f(x_p),
    /// a standard result recalled from memory, e.g. Serfling, "Approximation
    /// Theorems of Mathematical Statistics", 1980, §2.3): at M = 10⁴,
    /// 0.0524 σ. Read from the outer side it comes out up to a fifth wider,
    /// never narrower; over 300 repeats the ends scatter by the true value
    /// over 1.96.
    #[test]
    fn interval_and_its_numerical_width_match_the_normal_case() {
        const M: usize = 10_000;
        let phi = (-1.959964f64 * 1.959964 / 2.0).exp() / (2.0 * std::f64::consts::PI).sqrt();
        let expected = 1.96 * (0.025f64 * 0.975 / M as f64).sqrt() / phi;
        let (mut highs, mut widths) = (Vec::new(), Vec::new());
        for seed in 0..300 {
            let i = coverage(&mut normal_sample(seed, M));
            highs.push(i.high);
            widths.push(i.numerical);
            assert!(i.low < 0.0 && i.high > 0.0);
        }
        let mean = |v: &[f64]| v.iter().sum::<f64>() / v.len() as f64;
        let (high, width) = (mean(&highs), mean(&widths));
        let spread = (highs.iter().map(|h| (h - high).powi(2)).sum::<f64>() / 299.0).sqrt();
        assert!((high - 1.959964).abs() < 0.01, "mean high end {high}");
        assert!(
            (1.0..1.3).contains(&(width / expected)),
            "{width} vs {expected}"
        );
        assert!(
            (1.96 * spread / expected - 1.0).abs() < 0.2,
            "{spread} vs {expected}"
        );
    }
}
