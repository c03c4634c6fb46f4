//! The limit reference for Monte Carlo speed: the chain of
//! `tests/fixtures/budget/gum_rtd.catena` (a Pt100 on a ± 0.1 % current
//! source, an amplifier, a 24-bit converter, the closed-form
//! Callendar–Van Dusen inverse) written as one tight program for that
//! model alone, 10⁶ trials at each of 21 points, as `benches/numpy_mc.py`
//! does in NumPy and the `monte_carlo_gum_rtd_1e6_x_21` bench does with
//! Catena's general chain model.
//!
//! Counter-based draws (SplitMix64 at counter t of a stream per source,
//! as Catena draws), blocks of trials as plain arrays so the compiler
//! vectorises each loop, the two tails of the 95 % interval found by
//! selection, buffers reused from point to point, one thread per core.
//! Run with `cargo bench --bench limit_gum_rtd`; it prints the interval at
//! 100 °C (to compare with the other two) and the wall time.

use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::Instant;

/// IEC 60751 coefficients.
const A: f64 = 3.9083e-3;
const B: f64 = -5.775e-7;
const I0: f64 = 1e-3;
const R00: f64 = 100.0;
const G0: f64 = 10.0;
const VREF0: f64 = 2.5;
const FULL: f64 = (1u64 << 23) as f64;
const TRIALS: usize = 1_000_000;
const POINTS: usize = 21;
const BLOCK: usize = 1024;
const GOLDEN: u64 = 0x9E37_79B9_7F4A_7C15;

#[inline(always)]
fn mix(mut z: u64) -> u64 {
    z = z.wrapping_add(GOLDEN);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// Uniforms on [−1, 1) of trials `t0 ..` of stream `key`, into `out`: the
/// top 52 bits as a mantissa, which needs no integer-to-float conversion.
#[inline(always)]
fn symmetric(key: u64, t0: u64, out: &mut [f64; BLOCK]) {
    for (i, o) in out.iter_mut().enumerate() {
        let bits = mix(key.wrapping_add((t0 + i as u64).wrapping_mul(GOLDEN)));
        let one_two = f64::from_bits((bits >> 12) | 0x3FF0_0000_0000_0000);
        *o = 2.0 * one_two - 3.0;
    }
}

/// The errors of every trial at `t_c` °C into `errors`.
fn point_errors(t_c: f64, point: u64, errors: &mut [f64]) {
    let key = |source: u64| mix(mix(1 ^ source) ^ mix(point));
    let keys = [key(1), key(2), key(3), key(4), key(5), key(6)];
    let mut u = [[0.0; BLOCK]; 6];
    let rtd = 1.0 + A * t_c + B * t_c * t_c;
    // The firmware's nominal ratio R/R0 per code.
    let per_code = VREF0 / (G0 * FULL * I0 * R00);
    for (block, out) in errors.chunks_mut(BLOCK).enumerate() {
        let t0 = (block * BLOCK) as u64;
        for (k, column) in u.iter_mut().enumerate() {
            symmetric(keys[k], t0, column);
        }
        let [current, r0, gain, vref, gain_error, q] = &u;
        for (i, e) in out.iter_mut().enumerate() {
            let code = I0
                * (1.0 + 1e-3 * current[i])
                * R00
                * (1.0 + 5e-4 * r0[i])
                * rtd
                * G0
                * (1.0 + 1e-3 * gain[i])
                * (1.0 + 2e-4 * gain_error[i])
                / (VREF0 * (1.0 + 5e-4 * vref[i]))
                * FULL
                + 0.5 * q[i];
            let ratio = code * per_code;
            let t_hat = (-A + (A * A - 4.0 * B * (1.0 - ratio)).sqrt()) / (2.0 * B);
            *e = t_hat - t_c;
        }
    }
}

/// The probabilistically symmetric 95 % interval: the two order
/// statistics by selection, the second within the first's lower side.
fn interval(errors: &mut [f64]) -> (f64, f64) {
    let n = errors.len();
    let (low_rank, high_rank) = ((0.025 * n as f64) as usize, (0.975 * n as f64) as usize);
    let (below, high, _) = errors.select_nth_unstable_by(high_rank, f64::total_cmp);
    let high = *high;
    let low = *below.select_nth_unstable_by(low_rank, f64::total_cmp).1;
    (low, high)
}

fn main() {
    let threads = std::thread::available_parallelism().map_or(1, |n| n.get());
    let next = AtomicUsize::new(0);
    let start = Instant::now();
    let results: Vec<(usize, (f64, f64))> = std::thread::scope(|scope| {
        let workers: Vec<_> = (0..threads)
            .map(|_| {
                scope.spawn(|| {
                    let mut errors = vec![0.0; TRIALS];
                    let mut mine = Vec::new();
                    loop {
                        let p = next.fetch_add(1, Ordering::Relaxed);
                        if p >= POINTS {
                            break mine;
                        }
                        let t_c = 200.0 * p as f64 / (POINTS - 1) as f64;
                        point_errors(t_c, p as u64, &mut errors);
                        mine.push((p, interval(&mut errors)));
                    }
                })
            })
            .collect();
        workers
            .into_iter()
            .flat_map(|w| w.join().expect("worker"))
            .collect()
    });
    let elapsed = start.elapsed().as_secs_f64();
    let (_, (low, high)) = results
        .iter()
        .find(|(p, _)| *p == POINTS / 2)
        .expect("the middle point");
    println!("limit reference: 95 % interval at 100 degC {low:.4} .. {high:.4} K");
    println!(
        "{TRIALS} trials x {POINTS} points on {threads} threads: {elapsed:.3} s ({:.1} ns a trial per core)",
        elapsed * 1e9 * threads as f64 / (TRIALS * POINTS) as f64
    );
}
