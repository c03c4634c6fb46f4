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
use crate::eval::{Env, EvalError, Plan, SourceKind};

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
    let sources: Vec<usize> = (0..plan.slots.len())
        .filter(|&s| plan.slots[s].kind != SourceKind::Exact)
        .collect();
    let errors: Vec<Result<Vec<f64>, EvalError>> = (0..chunks)
        .into_par_iter()
        .map(|chunk| {
            let n = CHUNK.min(trials - chunk * CHUNK);
            let mut rng = Pcg64Mcg::seed_from_u64(mix(
                seed ^ mix(point.wrapping_mul(0x1_0000_0001) ^ chunk as u64)
            ));
            let mut values = plan.nominal.clone();
            let mut out = Vec::with_capacity(n);
            for _ in 0..n {
                for &s in &sources {
                    let slot = &plan.slots[s];
                    values[s] = if slot.normal {
                        // A normal limit is a 3σ bound about the interval's middle.
                        let mid = slot.nominal + (slot.plus - slot.minus) / 2.0;
                        let z: f64 = rng.sample(StandardNormal);
                        mid + z * (slot.plus + slot.minus) / 6.0
                    } else {
                        let u: f64 = rng.random();
                        slot.nominal - slot.minus + u * (slot.plus + slot.minus)
                    };
                }
                let z: f64 = rng.sample(StandardNormal);
                let q: f64 = rng.random::<f64>() - 0.5;
                let r = plan.unquantized_reading(&values, env)?;
                out.push(r - env.measurand + z * noise.sigma_averaged + q * lsb);
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
