//! Root finding shared by the models, so each inverse states only its
//! function, its bracket and its start.
//!
//! * Bisection of a predicate that turns once over an interval, halved
//!   until the midpoint is one of the ends (the interval cannot shrink in
//!   f64) or a number of halvings, whichever comes first.
//! * Newton's method kept inside a bracket: each evaluation narrows the
//!   bracket by the sign of f, and a Newton step that would leave the open
//!   bracket (or a slope that is not positive) is replaced by a bisection
//!   step, so the iteration converges wherever bisection would (the
//!   safeguarded Newton of W. H. Press et al., "Numerical Recipes", 3rd ed.,
//!   §9.4, `rtsafe`; recalled from memory). Every caller's f rises through
//!   its root. A step landing on the bracket's end is kept: near the root
//!   x − f/f' rounds to x itself, which has just become an end, and that
//!   is convergence, not a reason to bisect.
//! * Brent's method (R. P. Brent, "Algorithms for Minimization without
//!   Derivatives", Prentice-Hall 1973, ch. 4, the `zero` procedure): inverse
//!   quadratic interpolation and secant steps kept safe by bisection, for a
//!   function known only by its values (a whole chain's code), given a
//!   bracket with a sign change.

use std::convert::Infallible;

/// Halvings at most: a bracket of one binade reaches adjacent floats in
/// about 53; the cap ends a search closing on zero (a thousand binades
/// below) or over a NaN end.
const MAX_HALVINGS: usize = 200;
/// Brent's method's evaluations at most: it needs at most about four
/// times bisection's, and far fewer on a smooth function.
const MAX_BRENT_EVALUATIONS: usize = 200;

/// The final bracket `(lo, hi)` of `pred`, true at `lo` and false at
/// `hi`: every midpoint where it holds becomes the new `lo`, every other
/// the new `hi`.
pub fn bisect(lo: f64, hi: f64, pred: impl FnMut(f64) -> bool) -> (f64, f64) {
    bisect_at_most(MAX_HALVINGS, lo, hi, pred)
}

/// [`bisect`] with at most `halvings` halvings. The ends may come in
/// either order: `lo` is where `pred` holds, not the smaller.
pub fn bisect_at_most(
    halvings: usize,
    lo: f64,
    hi: f64,
    mut pred: impl FnMut(f64) -> bool,
) -> (f64, f64) {
    let Ok(bracket) = halve(halvings, lo, hi, |x| Ok::<_, Infallible>(pred(x)));
    bracket
}

/// [`bisect`] with a predicate that can fail; its first error ends the
/// search.
pub fn try_bisect<E>(
    lo: f64,
    hi: f64,
    pred: impl FnMut(f64) -> Result<bool, E>,
) -> Result<(f64, f64), E> {
    halve(MAX_HALVINGS, lo, hi, pred)
}

fn halve<E>(
    halvings: usize,
    mut lo: f64,
    mut hi: f64,
    mut pred: impl FnMut(f64) -> Result<bool, E>,
) -> Result<(f64, f64), E> {
    for _ in 0..halvings {
        let mid = 0.5 * (lo + hi);
        // The midpoint of two floats lies between them: it is an end only
        // when they are adjacent (or equal).
        if mid == lo || mid == hi {
            break;
        }
        if pred(mid)? {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    Ok((lo, hi))
}

/// When a bracketed Newton iteration stops.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Stop {
    /// A step at most this long ends it (in the unit of x).
    pub step: f64,
    /// A residual |f| below this with a step no shorter than half the one
    /// before ends it too: the steps then only chase rounding noise in f.
    /// Zero: never.
    pub stalled_residual: f64,
    /// Evaluations at most.
    pub max_iter: usize,
}

/// How a bracketed Newton iteration ended.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Root {
    /// f is exactly zero here.
    Exact(f64),
    /// The last step (or a stall) ended it; the point after that step.
    Converged(f64),
    /// `max_iter` evaluations ran out; the point the last step reached.
    Exhausted(f64),
}

/// The root of `f` in `lo .. hi` by Newton's method kept inside the
/// bracket, from `start` (which must lie inside it). `f(x)` gives the
/// value and the slope at x; its first error ends the search.
pub fn newton_bracketed<E>(
    mut f: impl FnMut(f64) -> Result<(f64, f64), E>,
    (mut lo, mut hi): (f64, f64),
    start: f64,
    stop: Stop,
) -> Result<Root, E> {
    let mut x = start;
    let mut previous_step = f64::INFINITY;
    for _ in 0..stop.max_iter {
        let (value, slope) = f(x)?;
        if value == 0.0 {
            return Ok(Root::Exact(x));
        }
        if value < 0.0 {
            lo = x;
        } else {
            hi = x;
        }
        let newton = x - value / slope;
        let next = if slope > 0.0 && newton >= lo && newton <= hi {
            newton
        } else {
            0.5 * (lo + hi)
        };
        let step = (next - x).abs();
        let stalled = value.abs() < stop.stalled_residual && step >= 0.5 * previous_step;
        if step <= stop.step || stalled {
            return Ok(Root::Converged(next));
        }
        previous_step = step;
        x = next;
    }
    Ok(Root::Exhausted(x))
}

/// The root of `f` between `a` and `b` by Brent's method, given `f(a)` and
/// `f(b)` of opposite signs (neither zero): stops when the bracket is
/// within `tolerance` (plus a few ulps of the root) or `f` is exactly
/// zero, and after 200 evaluations at most. `f`'s first error ends it.
pub fn brent<E>(
    mut f: impl FnMut(f64) -> Result<f64, E>,
    (mut a, mut b): (f64, f64),
    (mut fa, mut fb): (f64, f64),
    tolerance: f64,
) -> Result<f64, E> {
    let (mut c, mut fc) = (a, fa);
    let mut d = b - a;
    let mut e = d;
    for _ in 0..MAX_BRENT_EVALUATIONS {
        if fb.signum() == fc.signum() {
            c = a;
            fc = fa;
            d = b - a;
            e = d;
        }
        if fc.abs() < fb.abs() {
            a = b;
            b = c;
            c = a;
            fa = fb;
            fb = fc;
            fc = fa;
        }
        let tol = 2.0 * f64::EPSILON * b.abs() + 0.5 * tolerance;
        let m = 0.5 * (c - b);
        if m.abs() <= tol || fb == 0.0 {
            return Ok(b);
        }
        (d, e) = if e.abs() >= tol && fa.abs() > fb.abs() {
            interpolated_step((a, fa), (b, fb), (c, fc), m, tol, (d, e))
        } else {
            (m, m)
        };
        a = b;
        fa = fb;
        b += if d.abs() > tol { d } else { tol.copysign(m) };
        fb = f(b)?;
    }
    Ok(b)
}

/// Brent's interpolation step (secant when only two points differ, else
/// inverse quadratic) and the step before it, or a bisection step where
/// the interpolation would not shrink the bracket fast enough.
fn interpolated_step(
    (a, fa): (f64, f64),
    (b, fb): (f64, f64),
    (c, fc): (f64, f64),
    m: f64,
    tol: f64,
    (d, e): (f64, f64),
) -> (f64, f64) {
    let s = fb / fa;
    let (mut p, mut q);
    if a == c {
        p = 2.0 * m * s;
        q = 1.0 - s;
    } else {
        let qa = fa / fc;
        let r = fb / fc;
        p = s * (2.0 * m * qa * (qa - r) - (b - a) * (r - 1.0));
        q = (qa - 1.0) * (r - 1.0) * (s - 1.0);
    }
    if p > 0.0 {
        q = -q;
    } else {
        p = -p;
    }
    if 2.0 * p < (3.0 * m * q - (tol * q).abs()).min((e * q).abs()) {
        (p / q, d)
    } else {
        (m, m)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const STOP: Stop = Stop {
        step: 1e-14,
        stalled_residual: 0.0,
        max_iter: 200,
    };

    /// √2 to the last bit: x² − 2 rises through its root on 0 … 2.
    #[test]
    fn newton_finds_the_square_root_of_two() {
        let root = newton_bracketed(
            |x| Ok::<_, ()>((x * x - 2.0, 2.0 * x)),
            (0.0, 2.0),
            1.0,
            STOP,
        );
        let Ok(Root::Converged(x) | Root::Exact(x)) = root else {
            panic!("{root:?}");
        };
        assert!((x - std::f64::consts::SQRT_2).abs() <= 1e-15);
    }

    /// A zero slope cannot take a Newton step: bisection carries on, and
    /// the bracket still closes on the root of x³ (flat at its root).
    #[test]
    fn a_flat_function_falls_back_to_bisection() {
        let root = newton_bracketed(|x| Ok::<_, ()>((x * x * x, 0.0)), (-1.0, 3.0), 2.0, STOP);
        let Ok(Root::Converged(x) | Root::Exact(x)) = root else {
            panic!("{root:?}");
        };
        assert!(x.abs() <= 1e-13, "{x}");
    }

    /// An iteration cut short reports the last point, not a root.
    #[test]
    fn running_out_of_iterations_is_reported() {
        let stop = Stop {
            max_iter: 2,
            ..STOP
        };
        let root = newton_bracketed(|x| Ok::<_, ()>((x - 0.3, 0.0)), (0.0, 1.0), 0.9, stop);
        assert_eq!(root, Ok(Root::Exhausted(0.225)));
    }

    /// Near the root the Newton step rounds to the point itself, which is
    /// the bracket's new end: that ends the search there. (Bisecting
    /// instead once gave type B's 110 degC as 68 degC, the stall rule
    /// taking the midpoint for the answer.)
    #[test]
    fn a_step_onto_the_bracket_end_is_convergence() {
        let stop = Stop {
            step: 1e-10,
            stalled_residual: 1e-9,
            max_iter: 200,
        };
        let f = |x: f64| Ok::<_, ()>(((x - 110.0) * 1e-3 + 6.9e-18, 1e-3));
        let root = newton_bracketed(f, (20.0, 1820.0), 27.0, stop);
        let Ok(Root::Converged(x) | Root::Exact(x)) = root else {
            panic!("{root:?}");
        };
        assert!((x - 110.0).abs() < 1e-9, "{x}");
    }

    /// Errors end the search as they come.
    #[test]
    fn an_error_ends_the_search() {
        let root = newton_bracketed(|_| Err::<(f64, f64), _>("no value"), (0.0, 1.0), 0.5, STOP);
        assert_eq!(root, Err("no value"));
    }

    /// The bracket of a step predicate closes on the step to adjacent
    /// floats: 1/3 lies between the two ends.
    #[test]
    fn bisection_closes_to_adjacent_floats() {
        let (lo, hi) = bisect(0.0, 1.0, |x| x < 1.0 / 3.0);
        assert!(lo < 1.0 / 3.0 && hi >= 1.0 / 3.0);
        assert_eq!(hi, f64::from_bits(lo.to_bits() + 1));
    }

    /// The ends may come high first; a cap stops it early.
    #[test]
    fn bisection_either_way_round_and_capped() {
        let (good, bad) = bisect(1.0, 0.0, |x| x > 0.25);
        assert!(good > 0.25 && bad <= 0.25 && good - bad <= f64::EPSILON);
        let (good, bad) = bisect_at_most(2, 1.0, 0.0, |x| x > 0.25);
        assert_eq!((good, bad), (0.5, 0.25));
    }

    /// Brent's method on a cubic, x³ − 2x − 5 (the example Brent and
    /// Wallis use; root 2.0945514815423265, recalled from memory): to a
    /// few ulps, in far fewer evaluations than bisection's fifty.
    #[test]
    fn brent_finds_the_classic_cubic_root() {
        let f = |x: f64| x * x * x - 2.0 * x - 5.0;
        let mut calls = 0;
        let x = brent(
            |x| {
                calls += 1;
                Ok::<_, ()>(f(x))
            },
            (2.0, 3.0),
            (f(2.0), f(3.0)),
            1e-15,
        )
        .unwrap();
        assert!((x - 2.094_551_481_542_326_5).abs() < 1e-14, "{x}");
        assert!(calls < 15, "{calls} evaluations");
    }

    #[test]
    fn a_failing_function_ends_brent() {
        let result = brent(Err::<f64, _>, (0.0, 1.0), (-1.0, 1.0), 1e-12);
        assert!(result.is_err());
    }

    #[test]
    fn a_failing_predicate_ends_the_bisection() {
        let result = try_bisect(0.0, 1.0, |x| if x < 0.3 { Err(x) } else { Ok(false) });
        assert!(matches!(result, Err(x) if x < 0.3));
    }
}
