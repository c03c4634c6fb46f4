//! Monte Carlo propagation (JCGM 101:2008): every source drawn together,
//! the whole chain evaluated per trial, and the probabilistically
//! symmetric 95 % coverage interval of the error.
//!
//! Trials are split into fixed chunks, each with its own generator seeded
//! from (seed, point, chunk), and gathered in chunk order, so the result
//! depends on the seed alone, never on the number of threads.

use rand::{RngExt, SeedableRng};
use rand_distr::StandardNormal;
use rand_pcg::Pcg64Mcg;
use rayon::prelude::*;

use super::budget::Point;
use super::noise::Noise;
use crate::eval::{Env, EvalError, LaneSignals, Plan, Signal, Slot, SourceKind, LANES, MAX_NODES};

/// Trials per chunk: large enough to amortise the split, small enough to
/// balance two to many cores.
const CHUNK: usize = 2048;
/// The coverage probability of the interval.
pub const COVERAGE: f64 = 0.95;

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

/// One source's value as `origin + scale · x`, x standard normal or
/// uniform on [0, 1), worked out once rather than per trial.
struct Draw {
    slot: usize,
    normal: bool,
    origin: f64,
    scale: f64,
}

impl Draw {
    fn of(slot: usize, s: &Slot) -> Draw {
        let (origin, scale) = if s.normal {
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
}

/// splitmix64 (Steele, Lea and Flood, OOPSLA 2014): decorrelates the
/// chunk seeds derived from one user seed.
fn mix(mut z: u64) -> u64 {
    z = z.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
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
/// 95 % interval. `lsb` is one code in measurand units; `point` numbers
/// the condition for its generators' seeds.
pub fn interval(
    plan: &Plan,
    env: &Env,
    noise: &Noise,
    lsb: f64,
    trials: usize,
    seed: u64,
    point: u64,
) -> Result<Interval, EvalError> {
    let condition = Condition {
        env: *env,
        quantization: (-lsb / 2.0, lsb / 2.0),
    };
    Ok(run(plan, &[(point, condition)], noise, trials, seed)?[0])
}

/// [`interval`] at every condition (the k-th seeded as point k), calling
/// `progress(done, total)` as groups of them start. Conditions run
/// together, as many as keep [`TRIALS_IN_FLIGHT`] trials in memory, so
/// the cores stay busy with few trials a point and the order statistics
/// of one condition overlap the trials of the next.
pub fn intervals(
    plan: &Plan,
    conditions: &[Condition],
    noise: &Noise,
    trials: usize,
    seed: u64,
    progress: &dyn Fn(usize, usize),
) -> Result<Vec<Interval>, EvalError> {
    let numbered: Vec<(u64, Condition)> = conditions
        .iter()
        .enumerate()
        .map(|(k, c)| (k as u64, *c))
        .collect();
    let group = (TRIALS_IN_FLIGHT / trials.max(1)).max(1);
    let mut out = Vec::with_capacity(conditions.len());
    for batch in numbered.chunks(group) {
        progress(out.len(), conditions.len());
        out.extend(run(plan, batch, noise, trials, seed)?);
    }
    Ok(out)
}

/// The intervals of `conditions`, their trials on every core together.
fn run(
    plan: &Plan,
    conditions: &[(u64, Condition)],
    noise: &Noise,
    trials: usize,
    seed: u64,
) -> Result<Vec<Interval>, EvalError> {
    if trials == 0 {
        let none = Interval {
            low: 0.0,
            high: 0.0,
            numerical: 0.0,
        };
        return Ok(vec![none; conditions.len()]);
    }
    let sources: Vec<Draw> = plan
        .slots
        .iter()
        .enumerate()
        .filter(|(_, slot)| slot.kind != SourceKind::Exact)
        .map(|(s, slot)| Draw::of(s, slot))
        .collect();
    // Each chunk writes its errors straight into its condition's buffer.
    let mut errors: Vec<Vec<f64>> = conditions.iter().map(|_| vec![0.0; trials]).collect();
    let tasks: Vec<(usize, usize, &mut [f64])> = errors
        .iter_mut()
        .enumerate()
        .flat_map(|(c, all)| {
            all.chunks_mut(CHUNK)
                .enumerate()
                .map(move |(chunk, out)| (c, chunk, out))
        })
        .collect();
    let outcomes: Vec<Result<(), EvalError>> = tasks
        .into_par_iter()
        .map(|(c, chunk, out)| {
            let (point, condition) = conditions[c];
            let rng = Pcg64Mcg::seed_from_u64(mix(
                seed ^ mix(point.wrapping_mul(0x1_0000_0001) ^ chunk as u64)
            ));
            chunk_errors(plan, &sources, &condition, noise, out, rng)
        })
        .collect();
    // The first failure in order, whatever the thread count.
    outcomes.into_iter().collect::<Result<(), _>>()?;
    Ok(errors.par_iter_mut().map(|all| coverage(all)).collect())
}

/// The errors of `out.len()` trials drawn from `rng`, into `out`.
fn chunk_errors(
    plan: &Plan,
    sources: &[Draw],
    condition: &Condition,
    noise: &Noise,
    out: &mut [f64],
    mut rng: Pcg64Mcg,
) -> Result<(), EvalError> {
    let env = &condition.env;
    let slots = plan.nominal.len();
    // Trials go through the evaluator LANES at a time; the draws
    // keep their order, trial by trial, so the lane count changes
    // no result.
    let mut values = plan.nominal.repeat(LANES);
    let mut extra = [(0.0, 0.0); LANES];
    let mut readings = [0.0; LANES];
    let mut scratch: LaneSignals = [[Signal::None; MAX_NODES]; LANES];
    let n = out.len();
    let mut left = n;
    while left > 0 {
        let lanes = left.min(LANES);
        for (lane, extra) in extra.iter_mut().enumerate().take(lanes) {
            let values = &mut values[lane * slots..(lane + 1) * slots];
            for draw in sources {
                let x: f64 = if draw.normal {
                    rng.sample(StandardNormal)
                } else {
                    rng.random()
                };
                values[draw.slot] = draw.origin + draw.scale * x;
            }
            let z: f64 = rng.sample(StandardNormal);
            let q: f64 = rng.random::<f64>() - 0.5;
            *extra = (z, q);
        }
        if lanes == LANES {
            plan.unquantized_readings(&values, env, &mut readings, &mut scratch)?;
        } else {
            for (lane, reading) in readings.iter_mut().enumerate().take(lanes) {
                *reading =
                    plan.unquantized_reading(&values[lane * slots..(lane + 1) * slots], env)?;
            }
        }
        let done = n - left;
        for ((slot, &r), &(z, q)) in out[done..done + lanes]
            .iter_mut()
            .zip(&readings)
            .zip(&extra)
        {
            *slot = r - env.measurand + z * noise.sigma_averaged + condition.quantization_at(q);
        }
        left -= lanes;
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
    use super::{coverage, mix};
    use rand::{RngExt, SeedableRng};
    use rand_distr::StandardNormal;
    use rand_pcg::Pcg64Mcg;

    fn normal_sample(seed: u64, n: usize) -> Vec<f64> {
        let mut rng = Pcg64Mcg::seed_from_u64(mix(seed));
        (0..n).map(|_| rng.sample(StandardNormal)).collect()
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
