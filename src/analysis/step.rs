//! The exact step response of a chain's dynamics: a first-order sensor,
//! an analog low-pass filter, the converter's averaging over one
//! conversion and the firmware's mean of `n` conversions.
//!
//! The continuous part (sensor and filter poles) is a linear system
//! x' = M·x with the step held as a state, so x(t) = e^{Mt}·x(0) exactly;
//! one more state integrates the output. The matrix exponential is taken
//! by scaling and squaring of its Taylor series (C. Moler and C. Van Loan,
//! "Nineteen dubious ways to compute the exponential of a matrix, twenty-
//! five years later", SIAM Review 45 (2003), method 3), which handles
//! repeated poles (an RC cascade, a sensor as fast as the filter) without
//! the cancellation partial fractions suffer there. A boxcar of width T
//! over the output is (I(t) − I(t − T))/T with I the integral, and the
//! mean of n conversions spaced Tₛ apart is the mean of n such boxcars
//! shifted by k·Tₛ, so the whole response is a sum of the integral's
//! values at a few delays: exact, with no time grid in the answer. A grid
//! only brackets the first crossing, which bisection then pins down.

use crate::physics::filter::{LowPass, MAX_ORDER};

/// Grid points that bracket a crossing, at most and at least; fewer when
/// the mean of many conversions makes each point dear.
const GRID_MAX: usize = 4000;
const GRID_MIN: usize = 200;
/// Matrix-vector products one bracketing pass may spend.
const GRID_WORK: usize = 20_000_000;

/// States at most: the step, the sensor, a pole each of the highest
/// filter order, the integral. The matrices live on the stack: a settling
/// time takes thousands of products, and allocating each cost more than
/// the arithmetic.
const MAX_DIM: usize = 3 + MAX_ORDER as usize;

/// A dim × dim matrix, row-major with stride dim.
type Square = [f64; MAX_DIM * MAX_DIM];
/// A state vector's first dim entries.
type State = [f64; MAX_DIM];

/// How the converter and firmware average the analog signal.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Averaging {
    /// Width of one conversion's boxcar, s (1/notch, or 1/rate).
    pub conversion_s: f64,
    /// Time between conversions, s (1/rate).
    pub spacing_s: f64,
    /// Conversions the firmware averages.
    pub count: u32,
}

/// The chain's response to a unit step of the measurand at t = 0.
pub struct StepModel {
    dim: usize,
    m: Square,
    /// State read at each delay, and the (delay, weight) pairs summed.
    component: usize,
    taps: Vec<(f64, f64)>,
    /// A time by which the continuous part has mostly settled, s.
    horizon: f64,
}

impl StepModel {
    /// `sensor_time_constant` ≤ 0 means no sensor lag.
    pub fn new(
        sensor_time_constant: f64,
        filter: Option<&LowPass>,
        averaging: Option<Averaging>,
    ) -> StepModel {
        let poles = sections(filter);
        // State 0 is the step, then the sensor, the filter sections (one
        // state per real pole, two per pair), and last the integral of the
        // output.
        let dim = 2
            + usize::from(sensor_time_constant > 0.0)
            + poles
                .iter()
                .map(|p| if p.1 > 0.0 { 2 } else { 1 })
                .sum::<usize>();
        let mut model = StepModel {
            dim,
            m: [0.0; MAX_DIM * MAX_DIM],
            component: 0,
            taps: Vec::new(),
            horizon: 0.0,
        };
        let mut last = 0;
        let mut next = 1;
        if sensor_time_constant > 0.0 {
            let rate = 1.0 / sensor_time_constant;
            model.first_order(next, last, -rate);
            last = next;
            next += 1;
            model.horizon += 6.0 * sensor_time_constant;
        }
        for &(re, im) in &poles {
            if im > 0.0 {
                model.second_order(next, last, re, im);
                last = next;
                next += 2;
            } else {
                model.first_order(next, last, re);
                last = next;
                next += 1;
            }
        }
        if let Some(lp) = filter {
            model.horizon += 20.0 / lp.cutoff_hz;
        }
        let integral = next;
        model.set(integral, last, 1.0);
        model.taps = match averaging {
            Some(a) if a.conversion_s > 0.0 && a.spacing_s >= 0.0 => {
                let n = a.count.max(1);
                let weight = 1.0 / (f64::from(n) * a.conversion_s);
                model.horizon += a.conversion_s + f64::from(n - 1) * a.spacing_s;
                model.component = integral;
                (0..n)
                    .flat_map(|k| {
                        let delay = f64::from(k) * a.spacing_s;
                        [(delay, weight), (delay + a.conversion_s, -weight)]
                    })
                    .collect()
            }
            _ => {
                model.component = last;
                vec![(0.0, 1.0)]
            }
        };
        model
    }

    fn set(&mut self, row: usize, col: usize, value: f64) {
        self.m[row * self.dim + col] += value;
    }

    /// x' = −p·(input − x) for a real pole p < 0: unity DC gain.
    fn first_order(&mut self, state: usize, input: usize, p: f64) {
        self.set(state, input, -p);
        self.set(state, state, p);
    }

    /// v'' = ω₀²(input − v) + 2σ·v' for the pair σ ± jω (ω₀² = σ² + ω²).
    fn second_order(&mut self, state: usize, input: usize, sigma: f64, omega: f64) {
        let w0_squared = sigma * sigma + omega * omega;
        let (v, dv) = (state, state + 1);
        self.set(v, dv, 1.0);
        self.set(dv, input, w0_squared);
        self.set(dv, v, -w0_squared);
        self.set(dv, dv, 2.0 * sigma);
    }

    /// The response at `t`, s.
    pub fn response(&self, t: f64) -> f64 {
        self.taps
            .iter()
            .map(|&(delay, weight)| weight * self.state_at(t - delay)[self.component])
            .sum()
    }

    /// x(t), zero before the step.
    fn state_at(&self, t: f64) -> State {
        let mut x = [0.0; MAX_DIM];
        if t > 0.0 {
            let e = expm(&self.m, self.dim, t);
            for (r, x) in x.iter_mut().enumerate().take(self.dim) {
                *x = e[r * self.dim];
            }
        }
        x
    }

    /// The first time the response reaches `fraction` of the step, s
    /// (None if it has not by a thousand horizons).
    pub fn time_to(&self, fraction: f64) -> Option<f64> {
        if self.response(0.0) >= fraction || self.horizon <= 0.0 {
            return Some(0.0);
        }
        let points =
            (GRID_WORK / (self.taps.len() * self.dim * self.dim)).clamp(GRID_MIN, GRID_MAX);
        let mut horizon = self.horizon;
        for _ in 0..10 {
            if let Some((lo, hi)) = self.bracket(fraction, horizon, points) {
                return Some(self.bisect(fraction, lo, hi));
            }
            horizon *= 2.0;
        }
        None
    }

    /// The grid interval over [0, horizon] where the response first
    /// reaches `fraction`: the states at the taps' delays stepped forward
    /// by the exact one-step propagator e^{M·h}.
    fn bracket(&self, fraction: f64, horizon: f64, points: usize) -> Option<(f64, f64)> {
        let h = horizon / points as f64;
        let step = expm(&self.m, self.dim, h);
        let mut states: Vec<Option<State>> = vec![None; self.taps.len()];
        for i in 1..=points {
            let t = i as f64 * h;
            let mut sum = 0.0;
            for (state, &(delay, weight)) in states.iter_mut().zip(&self.taps) {
                *state = match state.take() {
                    Some(x) => Some(mul_vec(&step, self.dim, &x)),
                    None if t > delay => Some(self.state_at(t - delay)),
                    None => None,
                };
                if let Some(x) = state {
                    sum += weight * x[self.component];
                }
            }
            if sum >= fraction {
                return Some((t - h, t));
            }
        }
        None
    }

    /// Bisects [lo, hi] (response below `fraction` at lo, not at hi) to
    /// the last bit that matters.
    fn bisect(&self, fraction: f64, mut lo: f64, mut hi: f64) -> f64 {
        let base: Vec<State> = self
            .taps
            .iter()
            .map(|&(delay, _)| self.state_at(lo - delay))
            .collect();
        let start = lo;
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if mid <= lo || mid >= hi || hi - lo <= 1e-14 * hi {
                break;
            }
            let e = expm(&self.m, self.dim, mid - start);
            let row = &e[self.component * self.dim..(self.component + 1) * self.dim];
            let value: f64 = self
                .taps
                .iter()
                .zip(&base)
                .map(|(&(delay, weight), x)| {
                    let at = if start > delay {
                        row.iter().zip(&x[..self.dim]).map(|(a, b)| a * b).sum()
                    } else {
                        self.state_at(mid - delay)[self.component]
                    };
                    weight * at
                })
                .sum();
            if value >= fraction {
                hi = mid;
            } else {
                lo = mid;
            }
        }
        hi
    }
}

/// The filter's real poles and one of each complex pair (positive
/// imaginary part; a real pole's rounding residue is set to zero).
fn sections(filter: Option<&LowPass>) -> Vec<(f64, f64)> {
    filter
        .map(LowPass::poles)
        .unwrap_or_default()
        .into_iter()
        .filter_map(|(re, im)| {
            if im.abs() <= 1e-12 * re.abs() {
                Some((re, 0.0))
            } else if im > 0.0 {
                Some((re, im))
            } else {
                None
            }
        })
        .collect()
}

fn mul_vec(a: &Square, dim: usize, x: &State) -> State {
    let mut out = [0.0; MAX_DIM];
    for (r, out) in out.iter_mut().enumerate().take(dim) {
        *out = a[r * dim..(r + 1) * dim]
            .iter()
            .zip(x)
            .map(|(p, q)| p * q)
            .sum();
    }
    out
}

fn mul(a: &Square, b: &Square, dim: usize) -> Square {
    let mut out = [0.0; MAX_DIM * MAX_DIM];
    for r in 0..dim {
        for k in 0..dim {
            let x = a[r * dim + k];
            if x != 0.0 {
                for c in 0..dim {
                    out[r * dim + c] += x * b[k * dim + c];
                }
            }
        }
    }
    out
}

/// e^{A·t} by scaling and squaring: A·t/2ˢ has a 1-norm at most ½, where
/// its Taylor series is summed until the terms no longer count, then the
/// result is squared s times.
fn expm(a: &Square, dim: usize, t: f64) -> Square {
    let norm = (0..dim)
        .map(|c| (0..dim).map(|r| (a[r * dim + c] * t).abs()).sum::<f64>())
        .fold(0.0, f64::max);
    let squarings = if norm > 0.5 {
        (norm / 0.5).log2().ceil().min(1000.0) as i32
    } else {
        0
    };
    let scale = t * 0.5f64.powi(squarings);
    let b = a.map(|x| x * scale);
    let mut sum = [0.0; MAX_DIM * MAX_DIM];
    for r in 0..dim {
        sum[r * dim + r] = 1.0;
    }
    let mut term = sum;
    let used = dim * dim;
    for k in 1..=30 {
        term = mul(&term, &b, dim);
        let inverse = 1.0 / f64::from(k);
        term[..used].iter_mut().for_each(|x| *x *= inverse);
        sum[..used].iter_mut().zip(&term).for_each(|(s, x)| *s += x);
        if term[..used].iter().all(|x| x.abs() <= 1e-18) {
            break;
        }
    }
    for _ in 0..squarings {
        sum = mul(&sum, &sum, dim);
    }
    sum
}

#[cfg(test)]
mod tests {
    use super::{Averaging, StepModel};
    use crate::physics::filter::{rc_cutoff_hz, LowPass, Response};
    use std::f64::consts::LN_10;

    fn rel(a: f64, b: f64) -> f64 {
        (a - b).abs() / b.abs()
    }

    fn bisect(f: impl Fn(f64) -> f64, mut lo: f64, mut hi: f64) -> f64 {
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if f(mid) < 0.0 {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        lo
    }

    /// A first-order lag reaches 90 % at τ·ln 10 (1 − e^{−t/τ} = 0.9):
    /// closed form.
    #[test]
    fn first_order_sensor_reaches_ninety_percent_at_tau_ln_10() {
        for tau in [1e-6, 0.2, 30.0] {
            let t = StepModel::new(tau, None, None).time_to(0.9).unwrap();
            assert!(rel(t, tau * LN_10) < 1e-9, "{tau}: {t}");
        }
    }

    /// One RC section (R = 10 kΩ, C = 15.9 nF): t90 = RC·ln 10, closed
    /// form of 1 − e^{−t/RC} = 0.9.
    #[test]
    fn rc_filter_reaches_ninety_percent_at_rc_ln_10() {
        let (r, c) = (10e3, 15.9e-9);
        let lp = LowPass::new(Response::Rc, 1, rc_cutoff_hz(r, c).unwrap()).unwrap();
        let t = StepModel::new(0.0, Some(&lp), None).time_to(0.9).unwrap();
        assert!(rel(t, r * c * LN_10) < 1e-9, "{t} vs {}", r * c * LN_10);
    }

    /// A sensor and an RC filter of the same time constant are a double
    /// pole: 1 − e^{−x}(1 + x) = 0.9 at x = 3.889720169… (closed form of
    /// the Erlang-2 step, solved here by bisection), where partial
    /// fractions would divide by zero.
    #[test]
    fn two_equal_poles_follow_the_erlang_closed_form() {
        let x = bisect(|x| 1.0 - (-x).exp() * (1.0 + x) - 0.9, 0.0, 10.0);
        assert!((x - 3.889_720_169).abs() < 1e-9, "{x}");
        let tau = 0.05;
        let lp = LowPass::new(Response::Rc, 1, 1.0 / (2.0 * std::f64::consts::PI * tau)).unwrap();
        let t = StepModel::new(tau, Some(&lp), None).time_to(0.9).unwrap();
        assert!(rel(t, x * tau) < 1e-8, "{t} vs {}", x * tau);
    }

    /// Distinct poles a, b: y = 1 − (a·e^{−bt} − b·e^{−at})/(a − b)
    /// (closed form by partial fractions), with a slow sensor and a fast
    /// filter, the stiff case.
    #[test]
    fn slow_sensor_and_fast_filter_follow_partial_fractions() {
        let (tau, fc) = (8.0, 1000.0);
        let (a, b) = (1.0 / tau, 2.0 * std::f64::consts::PI * fc);
        let y = |t: f64| 1.0 - (a * (-b * t).exp() - b * (-a * t).exp()) / (a - b);
        let want = bisect(|t| y(t) - 0.9, 0.0, 100.0);
        let lp = LowPass::new(Response::Rc, 1, fc).unwrap();
        let t = StepModel::new(tau, Some(&lp), None).time_to(0.9).unwrap();
        assert!(rel(t, want) < 1e-8, "{t} vs {want}");
    }

    /// A boxcar of width T over a step is a ramp, 90 % at 0.9·T, and the
    /// mean of n back-to-back conversions is one boxcar of n·T: 0.9·n·T.
    #[test]
    fn averaging_alone_is_a_ramp() {
        for n in [1, 4, 16] {
            let a = Averaging {
                conversion_s: 0.1,
                spacing_s: 0.1,
                count: n,
            };
            let t = StepModel::new(0.0, None, Some(a)).time_to(0.9).unwrap();
            let want = 0.9 * 0.1 * f64::from(n);
            assert!(rel(t, want) < 1e-9, "{n}: {t} vs {want}");
        }
    }

    /// A notch shorter than the conversion period: each conversion is a
    /// 20 ms boxcar, four of them 100 ms apart are averaged, so the mean
    /// reaches 0.9 when three are complete and the fourth is 60 % in:
    /// t = 0.3 + 0.6 · 0.02 = 0.312 s (by hand).
    #[test]
    fn averaged_short_conversions_step_by_sample() {
        let a = Averaging {
            conversion_s: 0.02,
            spacing_s: 0.1,
            count: 4,
        };
        let t = StepModel::new(0.0, None, Some(a)).time_to(0.9).unwrap();
        assert!(rel(t, 0.312) < 1e-9, "{t}");
    }

    /// A first-order lag through one conversion's boxcar T:
    /// z(t) = 1 − τ/T·e^{−t/τ}(e^{T/τ} − 1) for t ≥ T (the boxcar mean of
    /// 1 − e^{−t/τ}, integrated by hand).
    #[test]
    fn lag_through_a_boxcar_follows_its_integral() {
        let (tau, width) = (1.0, 0.5);
        let z = |t: f64| 1.0 - tau / width * (-t / tau).exp() * ((width / tau).exp() - 1.0);
        let want = bisect(|t| z(t) - 0.9, width, 20.0);
        let a = Averaging {
            conversion_s: width,
            spacing_s: width,
            count: 1,
        };
        let t = StepModel::new(tau, None, Some(a)).time_to(0.9).unwrap();
        assert!(rel(t, want) < 1e-9, "{t} vs {want}");
    }
}
