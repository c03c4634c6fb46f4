//! The firmware's conversion from code to reading: the ideal inverse of
//! the nominal chain, or a linear, table or polynomial approximation of it
//! (whose own error the budget counts), then the declared calibration.

use super::env::{Env, Senses};
use super::error::EvalError;
use super::ids::{NodeId, SlotId};
use super::lanes::Lost;
use super::run::{within, LANES};
use crate::model::typed::ConversionMethod;
use crate::physics::solve::{bisect_at_most, brent};
use crate::physics::thermocouple::{self, ThermocoupleType};
use crate::units::ZERO_CELSIUS_K;

#[derive(Clone, Debug, PartialEq)]
pub enum Method {
    /// Solves the nominal chain for the code, each time.
    Exact,
    /// The line through the nominal chain's codes at the range ends.
    Linear { code_low: f64, code_high: f64 },
    /// Linear interpolation between `n` points of the nominal chain, its
    /// segments found through `buckets`.
    Table {
        codes: Vec<f64>,
        xs: Vec<f64>,
        buckets: Buckets,
    },
    /// A least-squares polynomial in the normalised code.
    Poly {
        coefficients: Vec<f64>,
        mid: f64,
        half: f64,
    },
}

#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Calibration {
    None,
    /// The reading is corrected by what it showed at this point; `error`
    /// is the calibration reference's own error.
    Offset {
        at: f64,
        error: Option<SlotId>,
    },
    /// Offset and gain corrected from two points.
    TwoPoint {
        at: (f64, f64),
        errors: (Option<SlotId>, Option<SlotId>),
    },
}

/// What a conversion needs of the chain it converts, and nothing more:
/// the firmware's model of it, the code a calibration reads, and the
/// reference conditions. The plan provides it; the conversion holds none.
pub trait Firmware {
    /// The reference temperature, K: drifting parts sit there in the
    /// firmware's model, and calibrations are taken there.
    fn reference(&self) -> f64;
    /// The nominal values of the chain's parameters.
    fn nominal(&self) -> &[f64];
    /// The unrounded code of converter `adc` with `values` at `env`: the
    /// chain's electronics, without its conversions.
    fn code(&self, values: &[f64], env: &Env, adc: NodeId) -> Result<f64, EvalError>;
    /// [`Firmware::code`] as a calibration reads it.
    fn calibration_code(&self, values: &[f64], env: &Env, adc: NodeId) -> Result<f64, EvalError>;
    /// An evaluation error at node `node`.
    fn numeric(&self, node: NodeId, what: &str) -> EvalError;
}

/// Where calibration points are taken: at the reference temperature.
pub fn calibration_env(chain: &impl Firmware, measurand: f64) -> Env {
    Env {
        measurand,
        ambient: chain.reference(),
        cold_junction: chain.reference(),
    }
}

/// What a calibration found: the offset it corrects by, or the readings
/// (less their references' errors) at its two points.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Calibrated {
    None,
    Offset(f64),
    TwoPoint { read: (f64, f64) },
}

/// A batch's calibrations when every lane took the same kind, as
/// columns. (A value on the stack, matched at once: its variants' sizes
/// do not matter.)
#[allow(clippy::large_enum_variant)]
enum Alike {
    None,
    Offset([f64; LANES]),
    TwoPoint([f64; LANES], [f64; LANES]),
}

/// The lanes' calibrations as [`Alike`] columns; None if they differ in
/// kind.
#[inline(always)]
fn lanes_alike(calibrated: &[Calibrated; LANES]) -> Option<Alike> {
    match calibrated[0] {
        Calibrated::None => calibrated
            .iter()
            .all(|c| *c == Calibrated::None)
            .then_some(Alike::None),
        Calibrated::Offset(_) => {
            let mut shift = [0.0; LANES];
            for (s, c) in shift.iter_mut().zip(calibrated) {
                let Calibrated::Offset(c) = *c else {
                    return None;
                };
                *s = c;
            }
            Some(Alike::Offset(shift))
        }
        Calibrated::TwoPoint { .. } => {
            let (mut r1, mut r2) = ([0.0; LANES], [0.0; LANES]);
            for (k, c) in calibrated.iter().enumerate() {
                let Calibrated::TwoPoint { read } = *c else {
                    return None;
                };
                (r1[k], r2[k]) = read;
            }
            Some(Alike::TwoPoint(r1, r2))
        }
    }
}

/// The nominal code at evenly spaced points of the domain, interpolated by
/// monotone cubics: the exact inverse itself where [`TableUse`] allows,
/// otherwise where Newton's method starts, so an exact inverse costs a few
/// evaluations, not forty.
#[derive(Clone, Debug, PartialEq)]
pub struct InverseTable {
    pub xs: Vec<f64>,
    pub codes: Vec<f64>,
    pub stands_for: TableUse,
    buckets: Buckets,
    /// With [`TableUse::Junction`]: the tables that make the shift two
    /// lookups and one EMF.
    junction: Option<Box<JunctionTables>>,
    /// Each segment's Hermite cubic as a polynomial in (code − its first
    /// code), so a lookup costs three multiply-adds and no division.
    cubics: Vec<[f64; 4]>,
    /// The stretch of codes over which the points lie on one straight
    /// line: the line, which a lookup there reads with no search.
    line: Option<Line>,
    /// The same cubics read at evenly spaced codes, their step found by
    /// arithmetic ([`EvenTable::resampled`]); the search answers beyond.
    even: Option<EvenTable>,
}

/// x as a straight line in the code, over the codes from `low` to `high`.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Line {
    first_code: f64,
    first_x: f64,
    per_code: f64,
    low: f64,
    high: f64,
}

/// How far, as a share of the table's span of x, a point may lie off a
/// straight line to be read as on it: a few thousand times an f64's
/// rounding, the scatter a chain's arithmetic leaves on a line (an
/// amplifier and a converter in front of a thermocouple's EMF), and far
/// below what any curvature of a sensor or a stage gives.
const ON_LINE: f64 = 1e-12;

impl Line {
    /// The line through the points a quarter and three quarters along,
    /// over the run of points around the middle that lie on it to within
    /// [`ON_LINE`]: a chain that is straight but for a stage clipping at
    /// an end of the table is read as the line up to the last point
    /// before the clip, and by the cubics beyond.
    fn around_middle(xs: &[f64], codes: &[f64]) -> Option<Line> {
        let n = codes.len();
        let (i, j) = (n / 4, 3 * n / 4);
        if j <= i {
            return None;
        }
        let (c0, x0) = (codes[i], xs[i]);
        let per_code = (xs[j] - x0) / (codes[j] - c0);
        let tolerance = ON_LINE * (xs[n - 1] - xs[0]).abs();
        let on = |k: usize| (x0 + (codes[k] - c0) * per_code - xs[k]).abs() <= tolerance;
        if !per_code.is_finite() || !(i..=j).all(on) {
            return None;
        }
        let first = (0..i).rev().take_while(|&k| on(k)).last().unwrap_or(i);
        let last = (j + 1..n).take_while(|&k| on(k)).last().unwrap_or(j);
        Some(Line {
            first_code: c0,
            first_x: x0,
            per_code,
            low: codes[first].min(codes[last]),
            high: codes[first].max(codes[last]),
        })
    }

    /// x at `code`, None beyond the stretch.
    #[inline(always)]
    fn x_at(&self, code: f64) -> Option<f64> {
        let inside = code >= self.low && code <= self.high;
        inside.then_some(self.first_x + (code - self.first_code) * self.per_code)
    }
}

/// A thermocouple chain's inverse as tables: the couple's EMF (at the
/// table's junction) the firmware infers from a code, and the temperature
/// of an EMF.
#[derive(Clone, Debug, PartialEq)]
pub struct JunctionTables {
    emf: InverseTable,
    /// Searched at evenly spaced temperatures, and read at evenly spaced
    /// EMFs ([`EvenTable::of_couple`]) over the stretch where that reads
    /// the couple's inverse to within [`EVEN_ACCURACY_K`].
    temperature: InverseTable,
}

/// x as a function of y at evenly spaced y, interpolated by cubic
/// Hermite polynomials through each point's dx/dy (exact, or a searched
/// table's where it is that table resampled): the segment of a y is
/// arithmetic on y, with no search.
#[derive(Clone, Debug, PartialEq)]
pub struct EvenTable {
    first: f64,
    per_step: f64,
    segments: f64,
    /// Each segment's first y and its cubic in (y − that y).
    starts: Vec<f64>,
    cubics: Vec<[f64; 4]>,
}

impl EvenTable {
    /// The temperature (K) of a couple's EMF (mV) at evenly spaced EMFs
    /// over the longest stretch of `span` (K) where it reads the couple's
    /// inverse to within [`EVEN_ACCURACY_K`] (short of the cold end's
    /// steepest curve, or type B's flat start), one of them 0 mV where
    /// the span holds it (0 °C, where the reference functions change
    /// polynomial, so no step straddles the join); None where that
    /// stretch is not most of the span, or the table cannot be made.
    fn of_couple(
        ty: ThermocoupleType,
        span: (f64, f64),
        search: &InverseTable,
    ) -> Option<EvenTable> {
        let emf_at = |t: f64| thermocouple::emf_mv(ty, t - ZERO_CELSIUS_K).ok();
        let (e_lo, e_hi) = (emf_at(span.0)?, emf_at(span.1)?);
        let h = (e_hi - e_lo) / (EVEN_POINTS - 1) as f64;
        // Whole steps either side of 0 mV where the span holds it; the
        // first at or above the span's start, so within the type's range.
        let first = if e_lo < 0.0 && e_hi > 0.0 {
            -(-e_lo / h).floor() * h
        } else {
            e_lo
        };
        let n = ((e_hi - first) / h).floor() as usize + 1;
        let es: Vec<f64> = (0..n).map(|k| first + k as f64 * h).collect();
        // Each point's temperature: the searched table's (within a few
        // µK), then a Newton step, which leaves an error of the order of
        // that squared.
        let mut ts = Vec::with_capacity(n);
        for &e in &es {
            let start = search.x_at(e)? - ZERO_CELSIUS_K;
            let (at, seebeck) = thermocouple::emf_and_seebeck_mv(ty, start).ok()?;
            ts.push(start - (at - e) / seebeck + ZERO_CELSIUS_K);
        }
        if n < 2 || !strictly_monotonic(&ts) {
            return None;
        }
        let ends = step_slopes_of_couple(ty, &ts)?;
        let whole = EvenTable::by_steps(&es, &ts, &ends);
        // The longest run of steps that read the couple, if it is most of
        // the span (the rest is left to the search).
        let reads: Vec<bool> = (0..n - 1).map(|k| whole.step_reads(k, ty)).collect();
        let (from, len) = longest_run(&reads);
        (2 * len >= n - 1).then(|| {
            let points = from..from + len + 1;
            EvenTable::by_steps(&es[points.clone()], &ts[points], &ends[from..from + len])
        })
    }

    /// Whether halfway along step `k`, where a cubic through both ends
    /// with their slopes strays furthest from a smooth curve, the table's
    /// temperature has, to first order, the EMF asked: |E(T) − e| / S(T)
    /// within [`EVEN_ACCURACY_K`].
    fn step_reads(&self, k: usize, ty: ThermocoupleType) -> bool {
        let e = self.starts[k] + 0.5 / self.per_step;
        let Some(t) = self.x_at(e) else { return false };
        match thermocouple::emf_and_seebeck_mv(ty, t - ZERO_CELSIUS_K) {
            Ok((at, seebeck)) => ((at - e) / seebeck).abs() <= EVEN_ACCURACY_K,
            Err(_) => false,
        }
    }

    /// The searched table's cubics at evenly spaced codes, over the longest
    /// stretch where this reads as they do ([`EvenTable::reads_as`]);
    /// None where that stretch is not most of the table, or the table has
    /// a straight stretch (its line answers there, before either table).
    /// In a step holding no table point the searched cubic is one cubic,
    /// which the step's own, through its ends with their values and
    /// slopes, repeats: the two differ only in the steps across a point.
    fn resampled(search: &InverseTable) -> Option<EvenTable> {
        if search.line.is_some() {
            return None;
        }
        let codes = &search.codes;
        let (first, last) = (codes[0], codes[codes.len() - 1]);
        let steps = EVEN_POINTS - 1;
        let h = (last - first) / steps as f64;
        // The last point on the last code exactly, so the table ends where
        // the searched one does.
        let ys: Vec<f64> = (0..steps)
            .map(|j| first + j as f64 * h)
            .chain([last])
            .collect();
        let (xs, slopes): (Vec<f64>, Vec<f64>) = ys
            .iter()
            .map(|&y| search.searched_x_and_slope(y))
            .collect::<Option<Vec<_>>>()?
            .into_iter()
            .unzip();
        let whole = EvenTable::new(&ys, &xs, &slopes);
        let (from, len) = longest_run(&whole.reads_as(search));
        (2 * len >= steps).then(|| {
            let points = from..from + len + 1;
            EvenTable::new(&ys[points.clone()], &xs[points.clone()], &slopes[points])
        })
    }

    /// Whether each step reads as the searched table does, to within
    /// [`RESAMPLED_ACCURACY`] of its span of x: at the step's middle, and
    /// at every point the chain was tabulated at in it (where the
    /// searched table reads the chain itself).
    fn reads_as(&self, search: &InverseTable) -> Vec<bool> {
        let (codes, xs) = (&search.codes, &search.xs);
        let tolerance = RESAMPLED_ACCURACY * (xs[xs.len() - 1] - xs[0]).abs();
        let close = |x: Option<f64>, to: Option<f64>| matches!((x, to), (Some(a), Some(b)) if (a - b).abs() <= tolerance);
        let mut reads: Vec<bool> = self
            .starts
            .iter()
            .map(|&y| {
                let middle = y + 0.5 / self.per_step;
                close(self.x_at(middle), search.searched_x_at(middle))
            })
            .collect();
        for (&code, &x) in codes.iter().zip(xs) {
            // (The last code lies at the last step's end: the search
            // answers it.)
            if let Some(k) = self.step(code) {
                reads[k] &= close(self.x_at(code), Some(x));
            }
        }
        reads
    }

    /// The table of `xs` at `ys` (evenly spaced, rising), dx/dy `slopes`.
    fn new(ys: &[f64], xs: &[f64], slopes: &[f64]) -> EvenTable {
        EvenTable::with_cubics(ys, hermite_cubics(ys, xs, slopes))
    }

    /// [`EvenTable::new`] with each step's dx/dy at its two ends its own.
    fn by_steps(ys: &[f64], xs: &[f64], ends: &[(f64, f64)]) -> EvenTable {
        EvenTable::with_cubics(ys, hermite_cubics_by_step(ys, xs, ends))
    }

    /// The table of each step's cubic from `ys` (evenly spaced, rising).
    fn with_cubics(ys: &[f64], cubics: Vec<[f64; 4]>) -> EvenTable {
        let n = ys.len();
        EvenTable {
            first: ys[0],
            per_step: (n - 1) as f64 / (ys[n - 1] - ys[0]),
            segments: (n - 1) as f64,
            starts: ys[..n - 1].to_vec(),
            cubics,
        }
    }

    /// The step `y` lies in; None beyond the table (or for NaN).
    #[inline(always)]
    fn step(&self, y: f64) -> Option<usize> {
        let position = (y - self.first) * self.per_step;
        (position >= 0.0 && position < self.segments).then_some(position as u32 as usize)
    }

    /// x at `y`; None beyond the table (or for NaN).
    #[inline(always)]
    fn x_at(&self, y: f64) -> Option<f64> {
        let k = self.step(y)?;
        let u = y - self.starts[k];
        let [a0, a1, a2, a3] = self.cubics[k];
        Some(a0 + u * (a1 + u * (a2 + u * a3)))
    }

    #[inline(always)]
    fn x_at_lanes(&self, ys: &[f64; LANES], out: &mut [f64; LANES]) -> [bool; LANES] {
        answer_lanes(
            ys,
            out,
            #[inline(always)]
            |y| self.x_at(y),
        )
    }
}

/// `x_at` of each lane into `out`; which lanes it answered (a lane it did
/// not keeps its value). `x_at` must be inlined (`#[inline(always)]` on
/// the closure), or it is built for the baseline, out of the kernel.
#[inline(always)]
fn answer_lanes(
    ys: &[f64; LANES],
    out: &mut [f64; LANES],
    x_at: impl Fn(f64) -> Option<f64>,
) -> [bool; LANES] {
    let mut answered = [false; LANES];
    for (k, &y) in ys.iter().enumerate() {
        if let Some(x) = x_at(y) {
            out[k] = x;
            answered[k] = true;
        }
    }
    answered
}

/// Points of a table at evenly spaced EMFs or codes.
const EVEN_POINTS: usize = 2049;
/// Points of the one at evenly spaced temperatures, searched.
const SEARCHED_POINTS: usize = 1025;
/// How far the even table may read from the couple's inverse, K, halfway
/// along each step: no further than the searched table reads for the
/// common types (about 1.3 µK for type K over its range).
const EVEN_ACCURACY_K: f64 = 1e-6;
/// How far a resampled table may read from the searched one, as a share of
/// its span of x: a hundred-millionth, the order of the searched table's
/// own distance from the chain's exact inverse away from its end steps
/// (513 points: a Pt100 over −200 … 850 °C about 0.7 µK, 7 parts in 10⁹
/// of its span, where the two tables read within 0.06 µK of each other; a
/// β-model NTC under a resistor over −40 … 125 °C about 0.7 µK, 4 parts in
/// 10⁹, the two within 0.7 µK; measured at 200 000 codes against the
/// closed-form inverses of `an_evenly_read_table_reads_as_the_searched_one`).
const RESAMPLED_ACCURACY: f64 = 1e-8;
/// How far beyond the domain it reaches, K: the shift a cold junction
/// away from the reference makes.
const JUNCTION_REACH_K: f64 = 150.0;

impl JunctionTables {
    fn new(table: &InverseTable, ty: ThermocoupleType, domain: (f64, f64)) -> Option<Self> {
        // The couple's node reads a temperature within a nanokelvin of
        // its type's range as the end itself, and a domain bisected to
        // where the chain evaluates ends there: so must the table.
        let emf_c = |t_k: f64| {
            let t_c = within(t_k - ZERO_CELSIUS_K, ty.range_c())?;
            thermocouple::emf_mv(ty, t_c).ok()
        };
        let emfs = table
            .xs
            .iter()
            .map(|&x| emf_c(x))
            .collect::<Option<Vec<_>>>()?;
        let (lo, hi) = thermocouple::invertible_range_c(ty);
        let span = (
            (domain.0 - JUNCTION_REACH_K).max(lo + ZERO_CELSIUS_K),
            (domain.1 + JUNCTION_REACH_K).min(hi + ZERO_CELSIUS_K),
        );
        if !strictly_monotonic(&emfs) {
            return None;
        }
        let mut temperature = temperatures_by_search(ty, span)?;
        temperature.even = EvenTable::of_couple(ty, span, &temperature);
        Some(JunctionTables {
            emf: InverseTable::new(emfs, table.codes.clone(), TableUse::Complete).read_evenly(),
            temperature,
        })
    }
}

/// Each step's dT/dE (K/mV) at its two ends, each from the couple's
/// reference function a millionth of the step inside it: where two
/// functions meet at a point of the table (type N's at 0 °C, a point of
/// every table that spans it), each step beside it takes its own side's
/// slope, and elsewhere each end its own function's. None where a slope
/// is not a positive number.
fn step_slopes_of_couple(ty: ThermocoupleType, ts: &[f64]) -> Option<Vec<(f64, f64)>> {
    let celsius = |t: f64| t - ZERO_CELSIUS_K;
    let per_mv = |t: f64, toward: f64| {
        let inside = celsius(t + 1e-6 * (toward - t));
        let s = thermocouple::seebeck_on_mv_per_c(ty, inside, celsius(t)).ok()?;
        let m = 1.0 / s;
        (m.is_finite() && m > 0.0).then_some(m)
    };
    ts.windows(2)
        .map(|w| Some((per_mv(w[0], w[1])?, per_mv(w[1], w[0])?)))
        .collect()
}

/// Each segment's cubic Hermite polynomial of x in (y − its first y),
/// through both ends with their slopes dx/dy, lowest order first.
fn hermite_cubics(ys: &[f64], xs: &[f64], slopes: &[f64]) -> Vec<[f64; 4]> {
    let ends: Vec<(f64, f64)> = slopes.windows(2).map(|m| (m[0], m[1])).collect();
    hermite_cubics_by_step(ys, xs, &ends)
}

/// [`hermite_cubics`] with each segment's slopes at its two ends its own.
fn hermite_cubics_by_step(ys: &[f64], xs: &[f64], ends: &[(f64, f64)]) -> Vec<[f64; 4]> {
    (1..ys.len())
        .map(|k| {
            let h = ys[k] - ys[k - 1];
            let (x0, x1, (m0, m1)) = (xs[k - 1], xs[k], ends[k - 1]);
            let secant = (x1 - x0) / h;
            [
                x0,
                m0,
                (3.0 * secant - 2.0 * m0 - m1) / h,
                (m0 + m1 - 2.0 * secant) / (h * h),
            ]
        })
        .collect()
}

/// Where the longest run of `true` in `v` starts, and how long it is.
fn longest_run(v: &[bool]) -> (usize, usize) {
    let (mut best, mut start) = ((0, 0), 0);
    for (k, &on) in v.iter().enumerate() {
        if !on {
            start = k + 1;
        } else if k + 1 - start > best.1 {
            best = (start, k + 1 - start);
        }
    }
    best
}

/// The couple's temperatures over `span` (K) evenly spaced, their EMFs
/// and exact slopes: a table searched by EMF.
fn temperatures_by_search(ty: ThermocoupleType, span: (f64, f64)) -> Option<InverseTable> {
    let ts = grid(span, SEARCHED_POINTS);
    let (es, per_mv): (Vec<f64>, Vec<f64>) = ts
        .iter()
        .map(|&t| {
            let (e, seebeck) = thermocouple::emf_and_seebeck_mv(ty, t - ZERO_CELSIUS_K).ok()?;
            Some((e, 1.0 / seebeck))
        })
        .collect::<Option<Vec<_>>>()?
        .into_iter()
        .unzip();
    let finite_slopes = per_mv.iter().all(|m| m.is_finite() && *m > 0.0);
    (finite_slopes && strictly_monotonic(&es))
        .then(|| InverseTable::with_slopes(ts, es, per_mv, TableUse::Complete))
}

/// How far the tabulated inverse stands for the firmware model.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum TableUse {
    /// The model depends on nothing but the code (no thermocouple cold
    /// junction): the table is the inverse itself.
    Complete,
    /// A thermocouple's cold junction is the model's only other input, and
    /// enters only through the couple's EMF: by the law of intermediate
    /// temperatures, E(t, tj) = E(t) − E(tj), a code at junction tj is the
    /// table's code (at the junction `reference_c`) for the temperature
    /// whose EMF is E(t) − E(tj) + E(reference), `reference_mv` the
    /// couple's EMF at the table's junction.
    Junction {
        ty: ThermocoupleType,
        reference_mv: f64,
    },
    /// Only where Newton's method starts.
    Start,
}

impl InverseTable {
    fn new(xs: Vec<f64>, codes: Vec<f64>, stands_for: TableUse) -> InverseTable {
        let slopes = monotone_slopes(&codes, &xs);
        InverseTable::with_slopes(xs, codes, slopes, stands_for)
    }

    /// A table whose dx/dcode is known exactly at every point: the cubic
    /// is then accurate to the fourth power of the spacing, not the third.
    fn with_slopes(
        xs: Vec<f64>,
        codes: Vec<f64>,
        slopes: Vec<f64>,
        stands_for: TableUse,
    ) -> InverseTable {
        let buckets = Buckets::new(&codes);
        let cubics = hermite_cubics(&codes, &xs, &slopes);
        InverseTable {
            line: Line::around_middle(&xs, &codes),
            xs,
            codes,
            stands_for,
            buckets,
            junction: None,
            cubics,
            even: None,
        }
    }

    /// The table read at evenly spaced codes too, where it is the inverse
    /// itself ([`EvenTable::resampled`]): every reading of a Monte Carlo
    /// trial looks its code up, and finding a step by arithmetic costs
    /// half what a search does.
    fn read_evenly(mut self) -> InverseTable {
        if self.stands_for == TableUse::Complete {
            self.even = EvenTable::resampled(&self);
        }
        self
    }

    /// The temperature (K) the junction-shifted table gives for `code`
    /// with the junction's EMF `junction_mv` ([`junction_emf_mv`]); None
    /// where it does not reach. Inlined into the kernels that read a
    /// batch's codes, so it is built for their vector unit.
    #[inline(always)]
    fn x_at_junction(
        &self,
        code: f64,
        junction_mv: Option<f64>,
        ty: ThermocoupleType,
        reference_mv: f64,
    ) -> Option<f64> {
        if let Some(tables) = &self.junction {
            let emf = tables.emf.x_at(code)? - reference_mv + junction_mv?;
            return tables.temperature.x_at(emf);
        }
        let at_reference = self.x_at(code)? - ZERO_CELSIUS_K;
        let (e, seebeck) = thermocouple::emf_and_seebeck_mv(ty, at_reference).ok()?;
        let shift = junction_mv? - reference_mv;
        // First order from the table's temperature, then Newton.
        let t = thermocouple::temperature_near_c(ty, e + shift, at_reference + shift / seebeck)
            .or_else(|| thermocouple::temperature_c(ty, e + shift).ok())?;
        Some(t + ZERO_CELSIUS_K)
    }

    /// [`InverseTable::x_at`] of each lane's code into `out`; which lanes
    /// it answered (a lane it did not keeps its value). A batch's lookups
    /// are independent: a loop of them alone overlaps their loads, where
    /// each lane's use of its answer in the same loop would wait on it.
    #[inline(always)]
    fn x_at_lanes(&self, codes: &[f64; LANES], out: &mut [f64; LANES]) -> [bool; LANES] {
        let Some(even) = &self.even else {
            return answer_lanes(
                codes,
                out,
                #[inline(always)]
                |code| self.x_at(code),
            );
        };
        let mut answered = even.x_at_lanes(codes, out);
        if answered.contains(&false) {
            for (k, &code) in codes.iter().enumerate() {
                if let (false, Some(x)) = (answered[k], self.x_at(code)) {
                    out[k] = x;
                    answered[k] = true;
                }
            }
        }
        answered
    }

    /// Monotone cubic Hermite interpolation of x at `code` (None outside).
    #[inline(always)]
    fn x_at(&self, code: f64) -> Option<f64> {
        if let Some(x) = self.line.and_then(|line| line.x_at(code)) {
            return Some(x);
        }
        if let Some(x) = self.even.as_ref().and_then(|even| even.x_at(code)) {
            return Some(x);
        }
        self.searched_x_at(code)
    }

    /// The searched cubic's x and dx/dcode at `code` (the end segments'
    /// own at and beyond the table's ends).
    fn searched_x_and_slope(&self, code: f64) -> Option<(f64, f64)> {
        let n = self.codes.len();
        let k = segment(&self.codes, code).clamp(1, n - 1);
        let u = code - self.codes[k - 1];
        let [a0, a1, a2, a3] = self.cubics[k - 1];
        let x = a0 + u * (a1 + u * (a2 + u * a3));
        let slope = a1 + u * (2.0 * a2 + 3.0 * u * a3);
        (x.is_finite() && slope.is_finite()).then_some((x, slope))
    }

    /// [`InverseTable::x_at`] by the searched cubics alone.
    #[inline(always)]
    fn searched_x_at(&self, code: f64) -> Option<f64> {
        let n = self.codes.len();
        let k = self.buckets.segment(&self.codes, code);
        // k is 0 or n and beyond, in one test.
        if k.wrapping_sub(1) >= n - 1 {
            return (code == self.codes[0]).then_some(self.xs[0]);
        }
        let u = code - self.codes[k - 1];
        let [a0, a1, a2, a3] = self.cubics[k - 1];
        Some(a0 + u * (a1 + u * (a2 + u * a3)))
    }
}

/// A couple's EMF (mV) with its junction at `cj` (K), which shifts the
/// junction table: None where the type does not reach.
fn junction_emf_mv(ty: ThermocoupleType, cj: f64) -> Option<f64> {
    thermocouple::emf_mv(ty, cj - ZERO_CELSIUS_K).ok()
}

/// A number, None for NaN.
fn number(x: f64) -> Option<f64> {
    (!x.is_nan()).then_some(x)
}

/// Each lane's junction EMF ([`junction_emf_mv`]), kept while the lanes'
/// junction temperatures repeat: a thermocouple chain's cold-junction
/// branch reads the same at every point of one ambient
/// ([`Plan::measurand_free`](super::plan::Plan)), and the EMF is a
/// polynomial and an exponential a lane. NaN stands for none (a junction
/// the type does not reach): a column of plain numbers, which the
/// lookups' arithmetic takes four at a time, and a NaN shifts an EMF to
/// NaN, which no table answers.
#[derive(Clone, Debug, Default)]
pub struct JunctionEmfs {
    ty: Option<ThermocoupleType>,
    junctions: [f64; LANES],
    emf_mv: [f64; LANES],
}

impl JunctionEmfs {
    /// The EMFs of `junctions`, lent rather than copied: the batch's
    /// lookups read them in place, and the test that they still hold is a
    /// comparison of bits over the lanes, which vectorises.
    #[inline(always)]
    fn at(&mut self, ty: ThermocoupleType, junctions: &[f64; LANES]) -> &[f64; LANES] {
        let same = self
            .junctions
            .iter()
            .zip(junctions)
            .fold(self.ty == Some(ty), |same, (a, b)| {
                same & (a.to_bits() == b.to_bits())
            });
        if !same {
            self.refresh(ty, junctions);
        }
        &self.emf_mv
    }

    /// Every lane's EMF at once where all are in range (the batch's
    /// vector unit then does the exponentials), else each alone.
    #[inline(always)]
    fn refresh(&mut self, ty: ThermocoupleType, junctions: &[f64; LANES]) {
        let celsius = junctions.map(|cj| cj - ZERO_CELSIUS_K);
        let mut emf_mv = [0.0; LANES];
        self.emf_mv = match thermocouple::emf_mv_each(ty, &celsius, &mut emf_mv) {
            Ok(()) => emf_mv,
            Err(_) => junctions.map(|cj| junction_emf_mv(ty, cj).unwrap_or(f64::NAN)),
        };
        self.junctions = *junctions;
        self.ty = Some(ty);
    }
}

/// How many of the strictly monotonic `codes` lie before `code`.
fn segment(codes: &[f64], code: f64) -> usize {
    let n = codes.len();
    if codes[n - 1] > codes[0] {
        codes.partition_point(|&c| c < code)
    } else {
        codes.partition_point(|&c| c > code)
    }
}

/// Buckets per table point in [`Buckets`]: enough that a bucket rarely
/// holds more than one table point where the code is densest.
const BUCKETS_PER_POINT: usize = 4;

/// [`segment`] in constant time for one table: the code span cut into
/// equal buckets, each knowing how many table points lie before it and
/// the one point inside it, if any. Every reading of every Monte Carlo
/// trial looks up its code here, and a binary search over hundreds of
/// points costs more than the arithmetic around it.
#[derive(Clone, Debug, PartialEq)]
pub struct Buckets {
    first: f64,
    per_code: f64,
    buckets: Vec<Bucket>,
    /// 1 where the codes rise, −1 where they fall.
    sign: f64,
    /// −∞, `sign` × each code, +∞: rising whichever way the codes run,
    /// and with no end to test (negation is exact, so each comparison is
    /// the codes' own).
    keys: Vec<f64>,
}

/// One bucket of [`Buckets`]: a code in it has `before` table points
/// before it, one more if it lies past `inside`.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Bucket {
    /// `sign` × the one table code in the bucket; +∞ for none, NaN for
    /// more than one (the lookup then steps from `before`).
    inside: f64,
    before: u32,
}

impl Buckets {
    fn new(codes: &[f64]) -> Buckets {
        let n = codes.len();
        let count = BUCKETS_PER_POINT * n;
        let (first, last) = (codes[0], codes[n - 1]);
        let per_code = count as f64 / (last - first);
        let sign = if last > first { 1.0 } else { -1.0 };
        let keys: Vec<f64> = std::iter::once(f64::NEG_INFINITY)
            .chain(codes.iter().map(|c| sign * c))
            .chain(std::iter::once(f64::INFINITY))
            .collect();
        let mut buckets = vec![
            Bucket {
                inside: f64::INFINITY,
                before: 0,
            };
            count
        ];
        // A code's bucket is its position rounded down, and the position
        // (the same arithmetic as the lookup's) never decreases along the
        // keys: a table point in an earlier bucket lies before every code
        // of a later one, and only the points in a code's own bucket need
        // comparing with it.
        let mut placed = 0;
        for (j, bucket) in buckets.iter_mut().enumerate() {
            bucket.before = placed as u32;
            while placed < n && Self::position(first, per_code, codes[placed]) < j as f64 + 1.0 {
                let alone = bucket.inside == f64::INFINITY;
                bucket.inside = if alone {
                    sign * codes[placed]
                } else {
                    f64::NAN
                };
                placed += 1;
            }
        }
        Buckets {
            first,
            per_code,
            buckets,
            sign,
            keys,
        }
    }

    /// Where `code` lies in the buckets, in buckets from the first code.
    #[inline(always)]
    fn position(first: f64, per_code: f64, code: f64) -> f64 {
        (code - first) * per_code
    }

    /// [`segment`]`(codes, code)` for the `codes` these buckets were made of.
    #[inline(always)]
    fn segment(&self, codes: &[f64], code: f64) -> usize {
        let key = self.sign * code;
        let position = Self::position(self.first, self.per_code, code);
        if !(position >= 0.0 && position < self.buckets.len() as f64) {
            return segment(codes, code);
        }
        // (The position is below the bucket count: a u32, whose
        // conversion costs half a usize's.)
        let bucket = self.buckets[position as u32 as usize];
        let k = bucket.before as usize + usize::from(bucket.inside < key);
        if bucket.inside.is_nan() {
            return self.segment_near(codes, code, k);
        }
        k
    }

    /// From `k`, a step or a few off (a bucket may hold several points
    /// where the codes crowd): step back, then forward.
    #[cold]
    fn segment_near(&self, codes: &[f64], code: f64, mut k: usize) -> usize {
        let (key, keys, n) = (self.sign * code, &self.keys, codes.len());
        for _ in 0..8 {
            if k > 0 && keys[k] >= key {
                k -= 1;
            } else if k < n && keys[k + 1] < key {
                k += 1;
            } else {
                return k;
            }
        }
        segment(codes, code)
    }
}

/// Slopes that keep a cubic Hermite interpolant monotone (Fritsch and
/// Carlson, SIAM J. Numer. Anal. 17, 1980), here of x against code.
fn monotone_slopes(codes: &[f64], xs: &[f64]) -> Vec<f64> {
    let n = codes.len();
    let secant: Vec<f64> = (0..n - 1)
        .map(|k| (xs[k + 1] - xs[k]) / (codes[k + 1] - codes[k]))
        .collect();
    let mut m = vec![0.0; n];
    m[0] = secant[0];
    m[n - 1] = secant[n - 2];
    for k in 1..n - 1 {
        m[k] = if secant[k - 1] * secant[k] <= 0.0 {
            0.0
        } else {
            2.0 / (1.0 / secant[k - 1] + 1.0 / secant[k])
        };
    }
    m
}

#[derive(Clone, Debug, PartialEq)]
pub struct Conversion {
    pub method: Method,
    /// What the conversion recovers: the measurand, or the cold-junction
    /// temperature for a conversion that feeds another's `cj`.
    pub variable: Senses,
    /// The ADC whose code it converts.
    pub adc: NodeId,
    /// Where the inverse may look, SI; readings saturate at its ends.
    pub domain: (f64, f64),
    /// The range the approximations are fitted over, SI.
    pub range: (f64, f64),
    pub calibration: Calibration,
    /// A stated cold-junction error: what the firmware believes the
    /// junction's temperature to be, less the truth.
    pub cj_error: Option<SlotId>,
    pub inverse: Option<InverseTable>,
}

/// Points a polynomial is fitted through, per coefficient.
const POLY_POINTS_PER_TERM: usize = 8;
/// Points the exact inverse tabulates the nominal chain at.
const INVERSE_POINTS: usize = 513;

impl Conversion {
    /// The firmware's view of the chain: nominal values, drifting parts at
    /// the reference temperature, and the cold junction where its own
    /// reading (or, without one, the actual junction, off by any stated
    /// cold-junction error) says.
    fn firmware_env(
        &self,
        chain: &impl Firmware,
        values: &[f64],
        env: &Env,
        x: f64,
        cj: Option<f64>,
    ) -> Env {
        let measurand = match self.variable {
            Senses::Measurand => x,
            Senses::ColdJunction => env.measurand,
        };
        Env {
            measurand,
            ambient: chain.reference(),
            cold_junction: self.firmware_junction(values, env, x, cj),
        }
    }

    /// [`Conversion::firmware_env`]'s cold junction.
    #[inline(always)]
    fn firmware_junction(&self, values: &[f64], env: &Env, x: f64, cj: Option<f64>) -> f64 {
        match self.variable {
            Senses::Measurand => {
                let cj_error = self.cj_error.map(|s| values[s.index()]).unwrap_or(0.0);
                cj.unwrap_or(env.cold_junction + cj_error)
            }
            Senses::ColdJunction => x,
        }
    }

    /// [`Conversion::firmware_junction`] of each lane of a batch at x = 0
    /// (`lane(k)` lane k's values, `cj` the lanes' junction readings):
    /// where the readings are the answer, the column itself.
    #[inline(always)]
    fn firmware_junctions<'v>(
        &self,
        lane: impl Fn(usize) -> &'v [f64],
        env: &Env,
        cj: Option<&[f64; LANES]>,
    ) -> [f64; LANES] {
        if let (Senses::Measurand, Some(read)) = (self.variable, cj) {
            return *read;
        }
        let mut junctions = [0.0; LANES];
        for (k, junction) in junctions.iter_mut().enumerate() {
            *junction = self.firmware_junction(lane(k), env, 0.0, cj.map(|t| t[k]));
        }
        junctions
    }

    /// The firmware model's code for `x`.
    fn nominal_code(
        &self,
        chain: &impl Firmware,
        values: &[f64],
        env: &Env,
        x: f64,
        cj: Option<f64>,
    ) -> Result<f64, EvalError> {
        let env = self.firmware_env(chain, values, env, x, cj);
        chain.code(chain.nominal(), &env, self.adc)
    }

    /// [`Conversion::invert`] of a batch's codes, each lane's code in
    /// `x` replaced by its reading where the conversion answers from the
    /// code directly (a method fitted to the code, or the exact inverse's
    /// table, whole or shifted for each lane's cold junction), the lanes'
    /// lookups side by side; which lanes it answered. A lane it did not
    /// keeps its code, for [`Conversion::invert`], which would look up
    /// the same first.
    #[inline(always)]
    pub(super) fn direct_lanes<'v>(
        &self,
        lane: impl Fn(usize) -> &'v [f64],
        env: &Env,
        x: &mut [f64; LANES],
        cj: Option<&[f64; LANES]>,
        junction_emfs: &mut JunctionEmfs,
    ) -> [bool; LANES] {
        let (codes, out) = (*x, x);
        let codes = &codes;
        let mut answered = [false; LANES];
        let mut answer = |k: usize, x: Option<f64>| {
            if let Some(x) = x {
                out[k] = x;
                answered[k] = true;
            }
        };
        let (Method::Exact, Some(table)) = (&self.method, &self.inverse) else {
            if !matches!(self.method, Method::Exact) {
                self.fitted_lanes(codes, out);
                return [true; LANES];
            }
            return answered;
        };
        match table.stands_for {
            TableUse::Complete => return table.x_at_lanes(codes, out),
            TableUse::Junction { ty, reference_mv } => {
                let junctions = self.firmware_junctions(lane, env, cj);
                let junction_mv = junction_emfs.at(ty, &junctions);
                if let Some(tables) = &table.junction {
                    return self.junction_lanes(tables, codes, junction_mv, reference_mv, out);
                }
                for (k, &code) in codes.iter().enumerate() {
                    let x = table
                        .x_at_junction(code, number(junction_mv[k]), ty, reference_mv)
                        .filter(|x| (self.domain.0..=self.domain.1).contains(x));
                    answer(k, x);
                }
            }
            TableUse::Start => {}
        }
        answered
    }

    /// [`InverseTable::x_at_junction`] of each lane through the junction
    /// tables, within the domain, into `out`; which lanes it answered. A
    /// lane whose EMF table or junction does not answer looks up NaN,
    /// which the temperature table does not answer either.
    #[inline(always)]
    fn junction_lanes(
        &self,
        tables: &JunctionTables,
        codes: &[f64; LANES],
        junction_mv: &[f64; LANES],
        reference_mv: f64,
        out: &mut [f64; LANES],
    ) -> [bool; LANES] {
        let mut emfs = [0.0; LANES];
        let found = tables.emf.x_at_lanes(codes, &mut emfs);
        for (k, emf) in emfs.iter_mut().enumerate() {
            // A junction's NaN (none) shifts the EMF to NaN too.
            let shifted = *emf - reference_mv + junction_mv[k];
            *emf = if found[k] { shifted } else { f64::NAN };
        }
        let mut temperatures = [0.0; LANES];
        let mut answered = tables.temperature.x_at_lanes(&emfs, &mut temperatures);
        for (k, &t) in temperatures.iter().enumerate() {
            answered[k] &= (self.domain.0..=self.domain.1).contains(&t);
            if answered[k] {
                out[k] = t;
            }
        }
        answered
    }

    /// Reading for `code`, before calibration.
    pub fn invert(
        &self,
        chain: &impl Firmware,
        values: &[f64],
        env: &Env,
        code: f64,
        cj: Option<f64>,
    ) -> Result<f64, EvalError> {
        if let Some(x) = self.fitted(code) {
            return Ok(x);
        }
        let f = |x: f64| {
            self.nominal_code(chain, values, env, x, cj)
                .map(|c| c - code)
        };
        let Some(table) = &self.inverse else {
            return solve_beyond(f, self.domain);
        };
        let direct = match table.stands_for {
            TableUse::Complete => table.x_at(code),
            TableUse::Junction {
                ty, reference_mv, ..
            } => {
                let junction = self.firmware_env(chain, values, env, 0.0, cj).cold_junction;
                table
                    .x_at_junction(code, junction_emf_mv(ty, junction), ty, reference_mv)
                    .filter(|x| (self.domain.0..=self.domain.1).contains(x))
            }
            TableUse::Start => None,
        };
        if let Some(x) = direct {
            return Ok(x);
        }
        if table.stands_for != TableUse::Complete {
            if let Some(x) = newton_from_table(&f, table, code, self.domain)? {
                return Ok(x);
            }
        }
        solve_beyond(f, self.domain)
    }

    /// [`Conversion::fitted`] of each lane's code, for a fitted method
    /// (the exact one leaves `out` as it is): the method matched once,
    /// then a loop over the lanes.
    #[inline(always)]
    fn fitted_lanes(&self, codes: &[f64; LANES], out: &mut [f64; LANES]) {
        match &self.method {
            Method::Exact => {}
            &Method::Linear {
                code_low,
                code_high,
            } => {
                for (x, &code) in out.iter_mut().zip(codes) {
                    *x = on_line(self.range, (code_low, code_high), code);
                }
            }
            Method::Table {
                codes: at,
                xs,
                buckets,
            } => {
                for (x, &code) in out.iter_mut().zip(codes) {
                    *x = linear_between(at, xs, code, buckets.segment(at, code));
                }
            }
            &Method::Poly {
                ref coefficients,
                mid,
                half,
            } => {
                for (x, &code) in out.iter_mut().zip(codes) {
                    *x = on_poly(coefficients, mid, half, code);
                }
            }
        }
    }

    /// [`Conversion::correct`] of every lane's reading `x` in place: a
    /// batch whose lanes all took the calibration this conversion makes
    /// side by side, any other lane by lane. A lane that cannot be
    /// corrected loses the batch.
    #[inline(always)]
    pub(super) fn correct_lanes(
        &self,
        chain: &impl Firmware,
        x: &mut [f64; LANES],
        calibrated: &[Calibrated; LANES],
    ) -> Result<(), Lost> {
        match (self.calibration, lanes_alike(calibrated)) {
            (Calibration::None, Some(Alike::None)) => return Ok(()),
            (Calibration::Offset { .. }, Some(Alike::Offset(shift))) => {
                for k in 0..LANES {
                    x[k] += shift[k];
                }
                return Ok(());
            }
            (Calibration::TwoPoint { at: (p1, p2), .. }, Some(Alike::TwoPoint(r1, r2))) => {
                let mut same = false;
                for k in 0..LANES {
                    same |= r2[k] == r1[k];
                    x[k] = p1 + (x[k] - r1[k]) * (p2 - p1) / (r2[k] - r1[k]);
                }
                return if same { Err(Lost) } else { Ok(()) };
            }
            _ => {}
        }
        for (x, c) in x.iter_mut().zip(calibrated) {
            *x = self.correct(chain, *x, c).map_err(|_| Lost)?;
        }
        Ok(())
    }

    /// The reading for `code` of a method fitted to the code alone; None
    /// for the exact method, which solves the chain.
    #[inline(always)]
    fn fitted(&self, code: f64) -> Option<f64> {
        match &self.method {
            Method::Exact => None,
            &Method::Linear {
                code_low,
                code_high,
            } => Some(on_line(self.range, (code_low, code_high), code)),
            Method::Table { codes, xs, buckets } => Some(linear_between(
                codes,
                xs,
                code,
                buckets.segment(codes, code),
            )),
            &Method::Poly {
                ref coefficients,
                mid,
                half,
            } => Some(on_poly(coefficients, mid, half, code)),
        }
    }

    /// The reading the firmware computes from `code`.
    pub fn apply(
        &self,
        chain: &impl Firmware,
        values: &[f64],
        env: &Env,
        code: f64,
        cj: Option<f64>,
    ) -> Result<f64, EvalError> {
        let x = self.invert(chain, values, env, code, cj)?;
        self.correct(chain, x, &self.calibrate(chain, values)?)
    }

    /// What the calibration saw with these values. Its points are taken at
    /// the reference temperature, so it depends on the values alone: an
    /// analysis that varies only the condition works it out once.
    pub fn calibrate(
        &self,
        chain: &impl Firmware,
        values: &[f64],
    ) -> Result<Calibrated, EvalError> {
        // Nothing calibrated: no point to read the chain at.
        if self.calibration == Calibration::None {
            return Ok(Calibrated::None);
        }
        // The chain as built (its actual values), averaged to its exact code.
        let mut codes = [0.0; 2];
        for (code, p) in codes.iter_mut().zip(self.calibration_points()) {
            *code = chain.calibration_code(values, &calibration_env(chain, p), self.adc)?;
        }
        self.calibrated_from(chain, values, &codes)
    }

    /// The measurand values the calibration is taken at (none, one or two).
    pub fn calibration_points(&self) -> impl Iterator<Item = f64> {
        let points = match self.calibration {
            Calibration::None => [None, None],
            Calibration::Offset { at, .. } => [Some(at), None],
            Calibration::TwoPoint { at: (a, b), .. } => [Some(a), Some(b)],
        };
        points.into_iter().flatten()
    }

    /// What the calibration saw, from the chain's exact codes at its points
    /// (in the order of [`Conversion::calibration_points`]).
    pub fn calibrated_from(
        &self,
        chain: &impl Firmware,
        values: &[f64],
        codes: &[f64; 2],
    ) -> Result<Calibrated, EvalError> {
        let at =
            |p: f64, code: f64| self.invert(chain, values, &calibration_env(chain, p), code, None);
        let err = |s: Option<SlotId>| s.map(|s| values[s.index()]).unwrap_or(0.0);
        Ok(match self.calibration {
            Calibration::None => Calibrated::None,
            // A reference that reads δ high makes the chain read δ high.
            Calibration::Offset { at: p, error } => {
                Calibrated::Offset(p - at(p, codes[0])? + err(error))
            }
            Calibration::TwoPoint {
                at: (p1, p2),
                errors: (e1, e2),
            } => Calibrated::TwoPoint {
                read: (at(p1, codes[0])? - err(e1), at(p2, codes[1])? - err(e2)),
            },
        })
    }

    /// The firmware's correction of reading `x` by what it calibrated.
    pub fn correct(
        &self,
        chain: &impl Firmware,
        x: f64,
        calibrated: &Calibrated,
    ) -> Result<f64, EvalError> {
        Ok(match (*calibrated, self.calibration) {
            (Calibrated::Offset(shift), _) => x + shift,
            (
                Calibrated::TwoPoint { read: (r1, r2) },
                Calibration::TwoPoint { at: (p1, p2), .. },
            ) => {
                if r2 == r1 {
                    return Err(
                        chain.numeric(self.adc, "the calibration points give the same reading")
                    );
                }
                p1 + (x - r1) * (p2 - p1) / (r2 - r1)
            }
            _ => x,
        })
    }

    /// Fits the method to the chain's firmware model.
    /// `complete`: the firmware model depends on the code alone, so its
    /// tabulated inverse can stand for it. `thermocouple`: the chain's one
    /// measuring couple, whose junction the table may be shifted for.
    pub fn fit(
        &mut self,
        chain: &impl Firmware,
        env: &Env,
        method: ConversionMethod,
        complete: bool,
        thermocouple: Option<ThermocoupleType>,
    ) -> Result<(), String> {
        let (lo, hi) = self.range;
        let code = |x: f64| {
            self.nominal_code(chain, chain.nominal(), env, x, None)
                .map_err(|e| e.to_string())
        };
        self.method = match method {
            ConversionMethod::Exact => {
                let xs = grid(self.domain, INVERSE_POINTS);
                let codes = xs.iter().map(|&x| code(x)).collect::<Result<Vec<_>, _>>()?;
                self.tabulate(chain, env, &xs, &codes, complete, thermocouple);
                Method::Exact
            }
            ConversionMethod::Linear => {
                let (a, b) = (code(lo)?, code(hi)?);
                if a == b {
                    return Err("the code does not change over the measurand range".into());
                }
                Method::Linear {
                    code_low: a,
                    code_high: b,
                }
            }
            ConversionMethod::Table(points) => {
                let xs = grid(self.range, points.max(2) as usize);
                let codes = xs.iter().map(|&x| code(x)).collect::<Result<Vec<_>, _>>()?;
                if !strictly_monotonic(&codes) {
                    return Err("the code is not monotonic over the measurand range".into());
                }
                let buckets = Buckets::new(&codes);
                Method::Table { codes, xs, buckets }
            }
            ConversionMethod::Poly(degree) => {
                let terms = degree as usize + 1;
                let xs = grid(self.range, POLY_POINTS_PER_TERM * terms);
                let codes = xs.iter().map(|&x| code(x)).collect::<Result<Vec<_>, _>>()?;
                let (cmin, cmax) = codes
                    .iter()
                    .fold((f64::MAX, f64::MIN), |(a, b), &c| (a.min(c), b.max(c)));
                if cmax <= cmin {
                    return Err("the code does not change over the measurand range".into());
                }
                let mid = (cmax + cmin) / 2.0;
                let half = (cmax - cmin) / 2.0;
                let us: Vec<f64> = codes.iter().map(|c| (c - mid) / half).collect();
                let coefficients =
                    least_squares(&us, &xs, terms).ok_or("the polynomial fit is singular")?;
                Method::Poly {
                    coefficients,
                    mid,
                    half,
                }
            }
        };
        Ok(())
    }
}

impl Conversion {
    /// The exact inverse's table from the nominal chain's `codes` at `xs`.
    /// Beyond the range a stage may clip and the code go flat: it keeps
    /// the stretch around the range where the code still moves one way,
    /// and readings saturate at its ends.
    fn tabulate(
        &mut self,
        chain: &impl Firmware,
        env: &Env,
        xs: &[f64],
        codes: &[f64],
        complete: bool,
        thermocouple: Option<ThermocoupleType>,
    ) {
        let Some((i0, i1)) = monotonic_around(xs, codes, self.range) else {
            return;
        };
        self.domain = (xs[i0], xs[i1]);
        let stands_for = match thermocouple {
            _ if complete => TableUse::Complete,
            Some(ty) if self.variable == Senses::Measurand => {
                self.junction_law(chain, env, ty).unwrap_or(TableUse::Start)
            }
            _ => TableUse::Start,
        };
        let mut table =
            InverseTable::new(xs[i0..=i1].to_vec(), codes[i0..=i1].to_vec(), stands_for)
                .read_evenly();
        if let (TableUse::Junction { ty, .. }, Some(_)) = (stands_for, thermocouple) {
            table.junction = JunctionTables::new(&table, ty, self.domain).map(Box::new);
        }
        self.inverse = Some(table);
    }

    /// [`TableUse::Junction`] when the firmware model obeys the law of
    /// intermediate temperatures through `ty` alone: checked on the nominal
    /// chain across the range with the junction 15 K either side of the
    /// table's, so a second junction-sensing stage upstream (or any other
    /// way the junction enters) keeps the general solver.
    fn junction_law(
        &self,
        chain: &impl Firmware,
        env: &Env,
        ty: ThermocoupleType,
    ) -> Option<TableUse> {
        let reference_mv = thermocouple::emf_mv(ty, env.cold_junction - ZERO_CELSIUS_K).ok()?;
        let code =
            |x: f64, cj: Option<f64>| self.nominal_code(chain, chain.nominal(), env, x, cj).ok();
        let span = (code(self.range.1, None)? - code(self.range.0, None)?).abs();
        for x in grid(self.range, 5) {
            for cj in [env.cold_junction - 15.0, env.cold_junction + 15.0] {
                let emf = thermocouple::emf_mv(ty, x - ZERO_CELSIUS_K).ok()?
                    - thermocouple::emf_mv(ty, cj - ZERO_CELSIUS_K).ok()?
                    + reference_mv;
                let shifted = thermocouple::temperature_c(ty, emf).ok()? + ZERO_CELSIUS_K;
                let (direct, predicted) = (code(x, Some(cj))?, code(shifted, None)?);
                let close = (direct - predicted).abs() <= 1e-9 * span;
                if !close {
                    return None;
                }
            }
        }
        Some(TableUse::Junction { ty, reference_mv })
    }
}

/// Newton's method for f(x) = 0 (f = model code − `code`), started from the
/// tabulated inverse and stepping with the table's local slope: the nominal
/// chain is smooth, so a few steps reach the tolerance. `None` asks the
/// caller for the bracketing solver (a saturated or odd case).
fn newton_from_table(
    f: &impl Fn(f64) -> Result<f64, EvalError>,
    table: &InverseTable,
    code: f64,
    domain: (f64, f64),
) -> Result<Option<f64>, EvalError> {
    let n = table.codes.len();
    let (first, last) = (table.codes[0], table.codes[n - 1]);
    if code < first.min(last) || code > first.max(last) {
        return Ok(None);
    }
    let mut x = table
        .x_at(code)
        .unwrap_or_else(|| interpolate(&table.codes, &table.xs, code))
        .clamp(domain.0, domain.1);
    let tolerance = 1e-13 * (domain.1 - domain.0).abs();
    let k = table.xs.partition_point(|&t| t < x).clamp(1, n - 1);
    // The table's local slope to start, then the secant through the last
    // two steps: superlinear, and each step costs one evaluation.
    let mut slope = (table.codes[k] - table.codes[k - 1]) / (table.xs[k] - table.xs[k - 1]);
    let mut previous: Option<(f64, f64)> = None;
    for _ in 0..12 {
        let fx = f(x)?;
        if let Some((px, pf)) = previous {
            if x != px && fx != pf {
                slope = (fx - pf) / (x - px);
            }
        }
        let step = fx / slope;
        if !step.is_finite() {
            return Ok(None);
        }
        previous = Some((x, fx));
        x -= step;
        if x < domain.0 || x > domain.1 {
            return Ok(None);
        }
        if step.abs() <= tolerance {
            return Ok(Some(x));
        }
    }
    Ok(None)
}

/// The widest run of grid points around `range` over which `codes` is
/// strictly monotonic, as first and last index (None when the range itself
/// is not).
fn monotonic_around(xs: &[f64], codes: &[f64], range: (f64, f64)) -> Option<(usize, usize)> {
    let n = xs.len();
    let first = xs.partition_point(|&x| x <= range.0).saturating_sub(1);
    let last = xs.partition_point(|&x| x < range.1).min(n - 1);
    if last <= first {
        return None;
    }
    let up = codes[last] > codes[first];
    let moves = |a: usize, b: usize| {
        if up {
            codes[b] > codes[a]
        } else {
            codes[b] < codes[a]
        }
    };
    if !(first..last).all(|k| moves(k, k + 1)) {
        return None;
    }
    let mut i0 = first;
    while i0 > 0 && moves(i0 - 1, i0) {
        i0 -= 1;
    }
    let mut i1 = last;
    while i1 + 1 < n && moves(i1, i1 + 1) {
        i1 += 1;
    }
    Some((i0, i1))
}

/// `n` evenly spaced points from one end of `range` to the other (n ≥ 2).
pub fn grid((lo, hi): (f64, f64), n: usize) -> Vec<f64> {
    let n = n.max(2);
    (0..n)
        .map(|k| lo + (hi - lo) * k as f64 / (n - 1) as f64)
        .collect()
}

fn strictly_monotonic(v: &[f64]) -> bool {
    v.windows(2).all(|w| w[1] > w[0]) || v.windows(2).all(|w| w[1] < w[0])
}

/// Piecewise-linear through (codes, xs), extrapolating the end segments.
fn interpolate(codes: &[f64], xs: &[f64], code: f64) -> f64 {
    linear_between(codes, xs, code, segment(codes, code))
}

/// [`interpolate`] where `before` codes lie before `code` (as [`segment`]
/// counts them).
#[inline(always)]
fn linear_between(codes: &[f64], xs: &[f64], code: f64, before: usize) -> f64 {
    let n = codes.len();
    let k = before.clamp(1, n - 1);
    let (c0, c1, x0, x1) = (codes[k - 1], codes[k], xs[k - 1], xs[k]);
    x0 + (code - c0) * (x1 - x0) / (c1 - c0)
}

/// The linear method's reading for `code`: the line through the range's
/// ends at the codes `ends`.
#[inline(always)]
fn on_line(range: (f64, f64), ends: (f64, f64), code: f64) -> f64 {
    let (code_low, code_high) = ends;
    range.0 + (code - code_low) * (range.1 - range.0) / (code_high - code_low)
}

/// The polynomial method's reading for `code`: Σ a_k u^k in the code
/// normalised about `mid` by `half`.
#[inline(always)]
fn on_poly(coefficients: &[f64], mid: f64, half: f64, code: f64) -> f64 {
    let u = (code - mid) / half;
    coefficients.iter().rev().fold(0.0, |acc, c| acc * u + c)
}

/// Least squares for x ≈ Σ a_k u^k by the normal equations (u in [−1, 1]
/// and at most ten terms keep them well conditioned), solved by Gaussian
/// elimination with partial pivoting.
fn least_squares(us: &[f64], xs: &[f64], terms: usize) -> Option<Vec<f64>> {
    let mut a = vec![vec![0.0; terms + 1]; terms];
    for (&u, &x) in us.iter().zip(xs) {
        let powers: Vec<f64> = (0..terms).map(|k| u.powi(k as i32)).collect();
        for r in 0..terms {
            for c in 0..terms {
                a[r][c] += powers[r] * powers[c];
            }
            a[r][terms] += powers[r] * x;
        }
    }
    for col in 0..terms {
        let pivot = (col..terms).max_by(|&i, &j| a[i][col].abs().total_cmp(&a[j][col].abs()))?;
        if a[pivot][col].abs() < 1e-300 {
            return None;
        }
        a.swap(col, pivot);
        let pivot_row = a[col].clone();
        for (r, row) in a.iter_mut().enumerate() {
            if r != col {
                let f = row[col] / pivot_row[col];
                for (x, p) in row.iter_mut().zip(&pivot_row).skip(col) {
                    *x -= f * p;
                }
            }
        }
    }
    Some((0..terms).map(|k| a[k][terms] / a[k][k]).collect())
}

/// [`solve`], and where the target lies beyond the domain, the chain
/// followed outward from the nearer end for as long as it evaluates and
/// keeps moving towards the target: an exact inverse finds an over-range
/// reading wherever the chain still tells values apart, and saturates only
/// where it no longer does (a stage at its rail, a sensor past its
/// validity), at the edge of that region.
pub fn solve_beyond(
    f: impl Fn(f64) -> Result<f64, EvalError>,
    domain: (f64, f64),
) -> Result<f64, EvalError> {
    let (lo, hi) = domain;
    let (f_lo, f_hi) = (f(lo)?, f(hi)?);
    // The code at an end may be a plateau (a stage at its rail): the
    // reading is where it begins, not the far end of the search.
    if f_hi == 0.0 && f_lo != 0.0 {
        return Ok(flat_from(&f, lo, hi, 0.0));
    }
    if f_lo == 0.0 && f_hi != 0.0 {
        return Ok(flat_from(&f, hi, lo, 0.0));
    }
    if f_lo == 0.0 || f_lo.signum() != f_hi.signum() {
        return solve(f, domain);
    }
    // f = code(x) − target has one sign over the domain: the target lies
    // beyond the end where |f| is smaller.
    let (mut end, mut f_end, direction) = if f_lo.abs() < f_hi.abs() {
        (lo, f_lo, -1.0)
    } else {
        (hi, f_hi, 1.0)
    };
    let mut step = (hi - lo).abs().max(1e-9);
    // The last point known to move: the domain's other end to start with,
    // as a plateau may begin inside the domain.
    let mut before = if direction > 0.0 { lo } else { hi };
    for _ in 0..64 {
        let next = end + direction * step;
        match f(next) {
            Ok(v) if v == 0.0 || (v.is_finite() && v.signum() != f_end.signum()) => {
                return solve(&f, (end.min(next), end.max(next)));
            }
            Ok(v) if v.is_finite() && v.abs() < f_end.abs() => {
                (before, end, f_end) = (end, next, v);
                step *= 2.0;
            }
            // Flat, turning back or not evaluating: the reading saturates
            // where the chain stops moving towards the target.
            Ok(v) if v == f_end => return Ok(flat_from(&f, before, end, f_end)),
            _ => return Ok(last_onward(&f, end, f_end, next)),
        }
    }
    Ok(end)
}

/// Halvings of the searches for where the chain stops moving.
const SEARCH_HALVINGS: usize = 60;

/// Where `f` turned flat at `f_end` between `before` and `end` (bisected):
/// the first point from `before` with the value it keeps (`end` itself
/// when `f` is strictly monotone).
fn flat_from(f: &impl Fn(f64) -> Result<f64, EvalError>, before: f64, end: f64, f_end: f64) -> f64 {
    let moving = |x: f64| !matches!(f(x), Ok(v) if v == f_end);
    bisect_at_most(SEARCH_HALVINGS, before, end, moving).1
}

/// The furthest point from `end` towards `beyond` (bisected) at which `f`
/// still evaluates and has come closer to zero than `f_end`; `end` if none.
fn last_onward(
    f: &impl Fn(f64) -> Result<f64, EvalError>,
    end: f64,
    f_end: f64,
    beyond: f64,
) -> f64 {
    let onward = |x: f64| matches!(f(x), Ok(v) if v.is_finite() && v.abs() < f_end.abs() && v.signum() == f_end.signum());
    bisect_at_most(SEARCH_HALVINGS, end, beyond, onward).0
}

/// Brent's method ([`brent`]) for a monotonic `f` on `domain`; a
/// target beyond either end saturates there, as a clamped reading would.
pub fn solve(
    f: impl Fn(f64) -> Result<f64, EvalError>,
    domain: (f64, f64),
) -> Result<f64, EvalError> {
    let (a, b) = domain;
    let (fa, fb) = (f(a)?, f(b)?);
    if fa == 0.0 {
        return Ok(a);
    }
    if fb == 0.0 {
        return Ok(b);
    }
    if fa.signum() == fb.signum() {
        return Ok(if fa.abs() < fb.abs() { a } else { b });
    }
    let tolerance = 1e-13 * (domain.1 - domain.0).abs().max(1e-300);
    brent(f, (a, b), (fa, fb), tolerance)
}

#[cfg(test)]
mod tests {
    use super::{grid, InverseTable, JunctionTables, TableUse};
    use super::{interpolate, least_squares, segment, solve, solve_beyond, Buckets};
    use super::{junction_emf_mv, JunctionEmfs};
    use super::{EVEN_ACCURACY_K, INVERSE_POINTS, JUNCTION_REACH_K, RESAMPLED_ACCURACY};
    use crate::eval::run::LANES;
    use crate::eval::EvalError;
    use crate::physics::thermocouple::{self, ThermocoupleType};
    use crate::units::ZERO_CELSIUS_K;

    /// The kept junction EMFs are those of the junctions asked for: a
    /// change of one lane's junction or of the type is worked out anew.
    #[test]
    fn junction_emfs_follow_their_junctions() {
        use ThermocoupleType::{J, K};
        let fresh = |ty, t: &[f64; LANES]| t.map(|cj| junction_emf_mv(ty, cj).map(f64::to_bits));
        let at_25 = [ZERO_CELSIUS_K + 25.0; LANES];
        let mut one_warmer = at_25;
        one_warmer[3] += 1.0;
        let mut kept = JunctionEmfs::default();
        for (ty, junctions) in [(K, at_25), (K, at_25), (K, one_warmer), (J, one_warmer)] {
            let at = kept
                .at(ty, &junctions)
                .map(|e| super::number(e).map(f64::to_bits));
            assert_eq!(at, fresh(ty, &junctions));
        }
        // Type K at 25 °C: 1.000 mV (IEC 60584-1 table, recalled).
        assert!((kept.at(K, &at_25)[0] - 1.000).abs() < 0.001);
        assert!(kept.at(K, &[0.0; LANES])[0].is_nan(), "0 K is below type K");
    }

    /// A chain's table read at evenly spaced codes reads as its searched
    /// cubics do, to within [`RESAMPLED_ACCURACY`] of its span, at 20 000
    /// codes (not only where it was checked when made); its worst error
    /// against the exact inverse is no larger than the searched cubics'
    /// (under 1 µK inside the end steps); the lanes read as each code
    /// alone. A Pt100
    /// across its whole range (the curve changes at 0 °C) on rising codes,
    /// and a β-model NTC (10 kΩ, β 3380 K) under 10 kΩ on falling ones,
    /// both with closed-form inverses (`rtd::temperature`, and the β
    /// model's own).
    #[test]
    fn an_evenly_read_table_reads_as_the_searched_one() {
        use crate::physics::rtd::{self, CvdCoefficients};
        let cvd = CvdCoefficients::IEC_60751;
        let full_scale = 8_388_608.0;
        let pt100 = (
            (73.15, 1123.15),
            Box::new(move |t: f64| {
                full_scale * rtd::resistance(100.0, cvd, t - ZERO_CELSIUS_K) / 400.0
            }) as Box<dyn Fn(f64) -> f64>,
            Box::new(move |c: f64| {
                rtd::temperature(100.0, cvd, c / full_scale * 400.0).unwrap() + ZERO_CELSIUS_K
            }) as Box<dyn Fn(f64) -> f64>,
        );
        let ntc_ohm = |t: f64| 10e3 * (3380.0 * (1.0 / t - 1.0 / 298.15)).exp();
        let ntc = (
            (233.15, 398.15),
            Box::new(move |t: f64| full_scale * ntc_ohm(t) / (ntc_ohm(t) + 10e3))
                as Box<dyn Fn(f64) -> f64>,
            Box::new(move |c: f64| {
                let r = 10e3 * c / (full_scale - c);
                1.0 / (1.0 / 298.15 + (r / 10e3).ln() / 3380.0)
            }) as Box<dyn Fn(f64) -> f64>,
        );
        for (domain, code, exact) in [pt100, ntc] {
            let xs = grid(domain, INVERSE_POINTS);
            let codes: Vec<f64> = xs.iter().map(|&x| code(x)).collect();
            let table = InverseTable::new(xs, codes.clone(), TableUse::Complete).read_evenly();
            let even = table.even.as_ref().expect("an even table");
            let span = domain.1 - domain.0;
            let probes = grid((codes[0], codes[INVERSE_POINTS - 1]), 20_001);
            let by_even = probes.iter().filter(|&&c| even.x_at(c).is_some()).count();
            assert!(by_even >= 19_800, "{by_even} codes by the even table");
            // Each one's worst error inside the outer hundredths of the
            // codes (the end steps, where both read one end cubic, a few
            // 10⁻⁴ K out for the Pt100).
            let mut worst = (0.0_f64, 0.0_f64);
            for (k, &c) in probes.iter().enumerate() {
                let (x, searched) = (table.x_at(c).unwrap(), table.searched_x_at(c).unwrap());
                assert!(
                    (x - searched).abs() <= RESAMPLED_ACCURACY * span,
                    "{c}: {x} {searched}"
                );
                if (200..19_800).contains(&k) {
                    worst.0 = worst.0.max((x - exact(c)).abs());
                    worst.1 = worst.1.max((searched - exact(c)).abs());
                }
            }
            assert!(worst.0 <= worst.1 && worst.1 < 1e-6, "{worst:?}");
            for lanes in probes.chunks_exact(LANES).step_by(97) {
                let mut codes: [f64; LANES] = lanes.try_into().unwrap();
                codes[0] = f64::NAN;
                let mut out = [0.0; LANES];
                let answered = table.x_at_lanes(&codes, &mut out);
                for k in 0..LANES {
                    let alone = table.x_at(codes[k]);
                    assert_eq!(answered[k], alone.is_some());
                    assert_eq!(
                        alone.map(f64::to_bits),
                        answered[k].then(|| out[k].to_bits())
                    );
                }
            }
        }
    }

    /// The junction tables' temperature of an EMF is the couple's exact
    /// inverse (`thermocouple::temperature_c`: Newton on the reference
    /// function): to within 1 µK wherever the even table answers, over
    /// all but the cold end of the span for the common types, and within
    /// a few µK where the searched table takes over (that cold end, type
    /// B's flat start); 20 000 EMFs a type. Type N's two functions meet at
    /// 0 °C with slopes 0.9 % apart (their first coefficients, NIST
    /// Monograph 175): each step beside that point takes its
    /// own side's (without, a step across it read 0.69 mK off).
    #[test]
    fn junction_temperatures_are_the_exact_inverse() {
        use ThermocoupleType::*;
        for (ty, most) in [
            (B, false),
            (E, true),
            (J, true),
            (K, true),
            (N, true),
            (R, true),
            (S, true),
            (T, true),
        ] {
            let (lo, hi) = thermocouple::invertible_range_c(ty);
            let domain = (lo + ZERO_CELSIUS_K + 200.0, hi + ZERO_CELSIUS_K - 200.0);
            let xs = grid(domain, 257);
            let codes: Vec<f64> = xs
                .iter()
                .map(|&x| 1e3 * thermocouple::emf_mv(ty, x - ZERO_CELSIUS_K).unwrap())
                .collect();
            let table = InverseTable::new(xs, codes, TableUse::Complete);
            let tables = JunctionTables::new(&table, ty, domain).expect("tables");
            let temperature = &tables.temperature;
            let even = temperature.even.as_ref().expect("an even table");
            // The even table reaches to within a step of either end.
            let span = (
                domain.0 - JUNCTION_REACH_K + 2.0,
                domain.1 + JUNCTION_REACH_K - 2.0,
            );
            let emf = |t: f64| thermocouple::emf_mv(ty, t - ZERO_CELSIUS_K).unwrap();
            let (mut worst, mut beyond) = ([0.0f64; 2], 0);
            for e in grid((emf(span.0), emf(span.1)), 20_000) {
                let exact = thermocouple::temperature_c(ty, e).unwrap() + ZERO_CELSIUS_K;
                let t = temperature.x_at(e).expect("inside");
                let by_even = even.x_at(e).is_some();
                beyond += usize::from(!by_even);
                let w = &mut worst[usize::from(by_even)];
                *w = w.max((t - exact).abs());
            }
            // All but the cold end's steepest curve (type E's lowest
            // 0.3 %, type N's 0.7 %), or for type B its flat start.
            assert_eq!(
                beyond <= 150,
                most,
                "{ty:?}: {beyond} EMFs beyond the even table"
            );
            assert!(worst[1] <= EVEN_ACCURACY_K, "{ty:?}: {:e} K", worst[1]);
            assert!(worst[0] <= 5e-6, "{ty:?}: {:e} K by the search", worst[0]);
        }
    }

    /// A domain bisected to where a type K chain still evaluates ends a
    /// hair past the type's range (the node reads within a nanokelvin of
    /// an end as the end): the junction tables are made all the same,
    /// at both ends.
    #[test]
    fn junction_tables_reach_the_ends_of_the_range() {
        let ty = ThermocoupleType::K;
        let (lo, hi) = ty.range_c();
        let domain = (lo + ZERO_CELSIUS_K - 5e-10, hi + ZERO_CELSIUS_K + 5e-10);
        let xs = grid(domain, 513);
        let codes: Vec<f64> = xs
            .iter()
            .map(|&x| {
                let t_c = (x - ZERO_CELSIUS_K).clamp(lo, hi);
                1e3 * thermocouple::emf_mv(ty, t_c).unwrap()
            })
            .collect();
        let table = InverseTable::new(xs, codes, TableUse::Complete);
        assert!(JunctionTables::new(&table, ty, domain).is_some());
    }

    /// Beyond the domain the search follows a monotone function outward
    /// (x³ = 1000 from a domain of 0 .. 2: x = 10), saturates where it
    /// turns flat (min(x, 5): 5 for any target above) and stops short of
    /// where it no longer evaluates (x < 7).
    #[test]
    fn solve_beyond_follows_the_chain_past_the_domain() {
        let x = solve_beyond(|x: f64| Ok(x * x * x - 1000.0), (0.0, 2.0)).unwrap();
        assert!((x - 10.0).abs() < 1e-9, "{x}");
        let x = solve_beyond(|x: f64| Ok(x.min(5.0) - 8.0), (0.0, 2.0)).unwrap();
        assert!((x - 5.0).abs() < 1e-9, "{x}");
        let fails = |x: f64| {
            if x < 7.0 {
                Ok(x - 20.0)
            } else {
                Err(EvalError::NotInvertible {
                    stage: "s".into(),
                    what: "beyond".into(),
                })
            }
        };
        let x = solve_beyond(fails, (0.0, 2.0)).unwrap();
        assert!((x - 7.0).abs() < 1e-9, "{x}");
        let x = solve_beyond(|x: f64| Ok(x - 1.0), (0.0, 2.0)).unwrap();
        assert!((x - 1.0).abs() < 1e-12);
        // A plateau at the target reaching the domain's end: its start.
        let x = solve_beyond(|x: f64| Ok(x.min(1.5) - 1.5), (0.0, 2.0)).unwrap();
        assert!((x - 1.5).abs() < 1e-9, "{x}");
        let x = solve_beyond(|x: f64| Ok(x - 2.0), (0.0, 2.0)).unwrap();
        assert_eq!(x, 2.0);
        let x = solve_beyond(|x: f64| Ok(2.0 * x + 30.0), (0.0, 2.0)).unwrap();
        assert!((x + 15.0).abs() < 1e-9, "{x}");
    }

    #[test]
    fn buckets_agree_with_binary_search() {
        // Uneven spacing (a cube, as dense as 0 and as sparse as 1200 codes
        // a step) in both directions; probes inside, on the points and
        // beyond both ends.
        let up: Vec<f64> = (0..50).map(|k| (k as f64 - 20.0).powi(3)).collect();
        let down: Vec<f64> = up.iter().rev().map(|c| -c).collect();
        for codes in [&up, &down] {
            let buckets = Buckets::new(codes);
            for probe in (-12_000..=30_000).step_by(37).map(|p| p as f64) {
                for code in [probe, codes[(probe.abs() as usize) % 50]] {
                    assert_eq!(buckets.segment(codes, code), segment(codes, code), "{code}");
                }
            }
            // Each code and its neighbouring numbers: a bucket's table
            // point, or the edge between two buckets, decides by one bit.
            let edges = (0..=buckets.buckets.len()).map(|j| codes[0] + j as f64 / buckets.per_code);
            for c in codes.iter().copied().chain(edges) {
                for code in [c.next_down(), c, c.next_up()] {
                    assert_eq!(buckets.segment(codes, code), segment(codes, code), "{code}");
                }
            }
        }
    }

    /// A table whose points lie on a line is read as the line: where a
    /// stage clips the first point, from the second on, and by the cubic
    /// below it; a curve (a Pt100's resistance across its range) has no
    /// line at all.
    #[test]
    fn a_straight_table_reads_as_its_line() {
        let codes: Vec<f64> = (0..101).map(|k| 800.0 + 650.0 * k as f64).collect();
        let xs: Vec<f64> = codes.iter().map(|c| (c - 800.0) / 3.0e3 + 1.25).collect();
        let straight = InverseTable::new(xs.clone(), codes.clone(), TableUse::Complete);
        let line = straight.line.expect("a line");
        assert_eq!((line.low, line.high), (800.0, 65800.0));
        let x = straight.x_at(33_000.0).expect("inside");
        assert!(
            (x - ((33_000.0 - 800.0) / 3.0e3 + 1.25)).abs() < 1e-14,
            "{x}"
        );
        assert_eq!(straight.x_at(799.0), None);
        assert_eq!(straight.x_at(65_800.5), None);

        let mut clipped_xs = xs.clone();
        clipped_xs[0] = 1.2;
        let clipped = InverseTable::new(clipped_xs, codes.clone(), TableUse::Complete);
        let line = clipped.line.expect("a line past the clip");
        assert_eq!((line.low, line.high), (1450.0, 65800.0));
        let below = clipped.x_at(1000.0).expect("the cubic below");
        assert!(below > 1.2 && below < xs[1], "{below}");

        // IEC 60751's A and B over 0 … 800 °C.
        let curve: Vec<f64> = (0..101)
            .map(|k| {
                100.0 * (1.0 + 3.9083e-3 * k as f64 * 8.0 - 5.775e-7 * (k as f64 * 8.0).powi(2))
            })
            .collect();
        assert_eq!(
            InverseTable::new(curve, codes, TableUse::Complete).line,
            None
        );
    }

    #[test]
    fn brent_finds_a_cubic_root() {
        let x = solve(|x| Ok(x * x * x - 2.0), (0.0, 3.0)).unwrap();
        assert!((x - 2f64.cbrt()).abs() < 1e-12);
        // Beyond the domain the answer saturates at the nearer end.
        assert_eq!(solve(|x| Ok(x - 10.0), (0.0, 3.0)).unwrap(), 3.0);
    }

    #[test]
    fn table_interpolates_both_directions() {
        assert_eq!(interpolate(&[0.0, 10.0, 20.0], &[0.0, 1.0, 2.0], 15.0), 1.5);
        assert_eq!(interpolate(&[20.0, 10.0, 0.0], &[0.0, 1.0, 2.0], 15.0), 0.5);
        assert_eq!(interpolate(&[0.0, 10.0], &[0.0, 1.0], 20.0), 2.0);
    }

    #[test]
    fn least_squares_recovers_a_polynomial() {
        let us: Vec<f64> = (0..20).map(|k| -1.0 + k as f64 / 9.5).collect();
        let xs: Vec<f64> = us.iter().map(|u| 1.0 - 2.0 * u + 0.5 * u * u * u).collect();
        let a = least_squares(&us, &xs, 4).unwrap();
        for (got, want) in a.iter().zip([1.0, -2.0, 0.0, 0.5]) {
            assert!((got - want).abs() < 1e-10, "{a:?}");
        }
    }
}
