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

use super::noise::Noise;
use crate::eval::{Env, EvalError, Plan, Slot, SourceKind, LANES};

/// Trials per chunk: large enough to amortise the split, small enough to
/// balance two to many cores.
const CHUNK: usize = 2048;
/// The coverage probability of the interval.
pub const COVERAGE: f64 = 0.95;

#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Interval {
    pub low: f64,
    pub high: f64,
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

/// The error (reading − measurand) of `trials` draws at `env`, and its
/// 95 % interval. `lsb` is one code in measurand units.
pub fn interval(
    plan: &Plan,
    env: &Env,
    noise: &Noise,
    lsb: f64,
    trials: usize,
    seed: u64,
    point: u64,
) -> Result<Interval, EvalError> {
    if trials == 0 {
        return Ok(Interval {
            low: 0.0,
            high: 0.0,
        });
    }
    let chunks = trials.div_ceil(CHUNK);
    let sources: Vec<Draw> = plan
        .slots
        .iter()
        .enumerate()
        .filter(|(_, slot)| slot.kind != SourceKind::Exact)
        .map(|(s, slot)| Draw::of(s, slot))
        .collect();
    let errors: Vec<Result<Vec<f64>, EvalError>> = (0..chunks)
        .into_par_iter()
        .map(|chunk| {
            let n = CHUNK.min(trials - chunk * CHUNK);
            let mut rng = Pcg64Mcg::seed_from_u64(mix(
                seed ^ mix(point.wrapping_mul(0x1_0000_0001) ^ chunk as u64)
            ));
            let slots = plan.nominal.len();
            // Trials go through the evaluator LANES at a time; the draws
            // keep their order, trial by trial, so the lane count changes
            // no result.
            let mut values = plan.nominal.repeat(LANES);
            let mut extra = [(0.0, 0.0); LANES];
            let mut readings = [0.0; LANES];
            let mut out = Vec::with_capacity(n);
            let mut left = n;
            while left > 0 {
                let lanes = left.min(LANES);
                for (lane, extra) in extra.iter_mut().enumerate().take(lanes) {
                    let values = &mut values[lane * slots..(lane + 1) * slots];
                    for draw in &sources {
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
                    plan.unquantized_readings(&values, env, &mut readings)?;
                } else {
                    for (lane, reading) in readings.iter_mut().enumerate().take(lanes) {
                        *reading = plan
                            .unquantized_reading(&values[lane * slots..(lane + 1) * slots], env)?;
                    }
                }
                for (&r, &(z, q)) in readings.iter().zip(&extra).take(lanes) {
                    out.push(r - env.measurand + z * noise.sigma_averaged + q * lsb);
                }
                left -= lanes;
            }
            Ok(out)
        })
        .collect();
    let mut all = Vec::with_capacity(trials);
    for chunk in errors {
        all.extend(chunk?);
    }
    // Two order statistics, found by selection in linear time rather than
    // by sorting a million errors.
    let tail = (1.0 - COVERAGE) / 2.0;
    let rank = |p: f64| ((p * all.len() as f64).floor() as usize).min(all.len() - 1);
    let (low_rank, high_rank) = (rank(tail), rank(1.0 - tail));
    let (_, high, _) = all.select_nth_unstable_by(high_rank, f64::total_cmp);
    let high = *high;
    let low = if low_rank < high_rank {
        *all[..high_rank]
            .select_nth_unstable_by(low_rank, f64::total_cmp)
            .1
    } else {
        high
    };
    Ok(Interval { low, high })
}
