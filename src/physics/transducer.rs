//! Shapes of a transducer's (load cell's, pressure transducer's) errors
//! along its range, as fractions of the errors its datasheet states.
//!
//! Nonlinearity is the output curve's deviation from a straight line,
//! stated either against the terminal line (through the outputs at zero
//! and at rated load) or against the best-fit line (the one that minimises
//! the largest deviation); datasheets say which, and terminal-based is
//! common practice for load cells. The curve's shape is not stated: we take
//! it as a parabola, a modelling assumption (the simplest curve with one
//! bow, the usual look of a load cell's or a diaphragm's characteristic),
//! so a calibration at points along the curve leaves the deviation between
//! and beyond them.
//!
//! Hysteresis (the largest difference between the outputs reached with
//! rising and with falling load) depends on the direction of approach, not
//! on the load alone: the evaluator keeps it as a ± bound at every load that
//! no calibration sees.

/// The line a stated nonlinearity is measured against.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LinearityLine {
    /// Through the outputs at zero and at rated load.
    Terminal,
    /// The straight line that minimises the largest deviation.
    BestFit,
}

/// The deviation of the output from the nominal straight line at
/// `load / full_scale` = `u`, as a fraction of the stated nonlinearity
/// (the deviation is the stated value times this, in full-scale output).
///
/// Terminal: 4u(1 − u), zero at no load and at rated load, 1 at half load.
/// Best-fit: the same parabola seen from its minimax line. A bow of height
/// h over the terminal line is best fitted by the terminal line raised h/2,
/// leaving ±h/2; so a stated best-fit nonlinearity n is a bow of 2n, and
/// the deviation from the line is n (8u(1 − u) − 1): −n at the ends, +n at
/// half load. The load's magnitude is used, so a bipolar transducer bows
/// alike in both directions; beyond rated load the parabola continues.
pub fn nonlinearity_shape(line: LinearityLine, u: f64) -> f64 {
    let u = u.abs();
    let bow = 4.0 * u * (1.0 - u);
    match line {
        LinearityLine::Terminal => bow,
        LinearityLine::BestFit => 2.0 * bow - 1.0,
    }
}

/// A transducer's stated errors at one run, each a fraction of its
/// full-scale output (drifts per kelvin); zero where not stated.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Errors {
    /// Its zero offset, a fraction of excitation (or volts), not scaled by
    /// the sensitivity.
    pub zero: f64,
    pub nonlinearity: f64,
    pub hysteresis: f64,
    pub zero_drift: f64,
    pub span_drift: f64,
}

/// The output of a transducer of full-scale sensitivity `s_fs` (a ratio of
/// its excitation, or volts) at `u` = load / rated load, `dt` K from the
/// reference: the span with its drift along the line, plus the
/// nonlinearity along its shape ([`nonlinearity_shape`]), the hysteresis
/// and the zero drift, each in full-scale output, plus the zero offset.
#[inline(always)]
pub fn output(s_fs: f64, u: f64, line: LinearityLine, e: Errors, dt: f64) -> f64 {
    let bow = nonlinearity_shape(line, u);
    s_fs * (1.0 + e.span_drift * dt) * u
        + s_fs * (e.nonlinearity * bow + e.hysteresis + e.zero_drift * dt)
        + e.zero
}

#[cfg(test)]
mod tests {
    use super::{nonlinearity_shape, output, Errors, LinearityLine};

    /// Worked by hand: 2 mV/V at half load is 1 mV/V; a terminal
    /// nonlinearity of 0.1 % FS adds 2 µV/V there (its full bow), a
    /// span drift of 10 ppm/K over 10 K adds 0.01 % of 1 mV/V, and a zero
    /// of 1 µV/V adds itself.
    #[test]
    fn output_adds_each_error_where_it_acts() {
        let e = Errors {
            zero: 1e-6,
            nonlinearity: 1e-3,
            span_drift: 1e-5,
            ..Errors::default()
        };
        let v = output(2e-3, 0.5, LinearityLine::Terminal, e, 10.0);
        let want = 1e-3 * (1.0 + 1e-4) + 2e-6 + 1e-6;
        assert!((v - want).abs() < 1e-18, "{v} vs {want}");
    }

    /// Terminal-based: zero at both terminals, the stated value at mid
    /// range (the definition of terminal nonlinearity).
    #[test]
    fn terminal_shape_is_zero_at_the_terminals() {
        let at = |u| nonlinearity_shape(LinearityLine::Terminal, u);
        assert_eq!(at(0.0), 0.0);
        assert_eq!(at(1.0), 0.0);
        assert_eq!(at(0.5), 1.0);
        assert_eq!(at(-0.5), 1.0);
    }

    /// Best-fit: the minimax line of a parabola over 0 … 1 leaves equal
    /// deviations of opposite sign at the ends and the vertex (Chebyshev
    /// equioscillation, three alternation points for a line); its largest
    /// deviation is the stated value.
    #[test]
    fn best_fit_shape_equioscillates() {
        let at = |u| nonlinearity_shape(LinearityLine::BestFit, u);
        assert_eq!(at(0.0), -1.0);
        assert_eq!(at(1.0), -1.0);
        assert_eq!(at(0.5), 1.0);
        let largest = (0..=1000)
            .map(|i| at(i as f64 / 1000.0).abs())
            .fold(0.0, f64::max);
        assert_eq!(largest, 1.0);
    }
}
