//! The error budget: every source's one-at-a-time contribution referred to
//! the measurand (the whole chain re-evaluated with that source at its
//! limits), and the totals by worst case (Σ|Δi|) and by GUM linear
//! propagation (JCGM 100:2008: rectangular limits a/√3, normal limits a/3,
//! expanded with k), at points across the measurand and ambient ranges.

use rayon::prelude::*;

use super::noise::{noise, Noise};
use crate::eval::{
    half_width, own_fraction, Batch, Calibrated, Env, EvalError, LaneColumns, Plan, SlotId,
    SourceKind, SourceName, LANES,
};
use crate::model::Chain;

#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Options {
    /// Points across the measurand range (ends included).
    pub points: usize,
    /// Coverage factor of the expanded uncertainty.
    pub k: f64,
}

impl Default for Options {
    fn default() -> Self {
        Options { points: 21, k: 2.0 }
    }
}

/// One source's part at one point, in measurand units (SI differences).
#[derive(Clone, Debug, PartialEq)]
pub struct Contribution {
    pub id: SourceName,
    pub kind: &'static str,
    /// Reading change with the source at its lower and upper limit.
    pub low: f64,
    pub high: f64,
    /// max(|low|, |high|): its part of the worst case.
    pub worst: f64,
    /// Its standard uncertainty: half the spread over its divisor, or,
    /// where the reading does not follow the source linearly (`linear`
    /// false), the larger evaluated effect over its divisor.
    pub standard: f64,
    /// Its evaluated limits agree with the straight line through them
    /// (see [`standard_uncertainty`]).
    pub linear: bool,
}

impl Contribution {
    /// Its standard uncertainty as the slope gives it, half the spread of
    /// its limits over its divisor ([`standard_uncertainty`]'s), whether
    /// or not the budget took the slope: a source off its straight line
    /// holds its larger effect over that divisor instead.
    pub fn by_slope(&self) -> f64 {
        if self.linear || self.worst == 0.0 {
            self.standard
        } else {
            self.standard * (self.high - self.low).abs() / (2.0 * self.worst)
        }
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct Point {
    /// SI.
    pub measurand: f64,
    pub ambient: f64,
    /// Nominal reading minus measurand: the conversion method's own error.
    pub linearisation: f64,
    pub contributions: Vec<Contribution>,
    pub worst_case: f64,
    pub gum_standard: f64,
    pub gum_expanded: f64,
    /// Every source's effect is linear enough for the GUM sum as
    /// JCGM 100 writes it; where one is not, its evaluated limits stand in.
    pub linear: bool,
    /// Converter-input volts and codes per measurand unit.
    pub volts_per_unit: f64,
    pub codes_per_unit: f64,
}

impl Point {
    /// One code in measurand units; zero where the code does not move with
    /// the measurand (a flat chain, which `check` reports as E504).
    pub fn code_step(&self) -> f64 {
        code_step(self.codes_per_unit)
    }

    /// A contribution's share of the GUM variance, u_i² / u_c² (zero when
    /// the total is).
    pub fn gum_share(&self, c: &Contribution) -> f64 {
        let total = self.gum_standard * self.gum_standard;
        if total > 0.0 {
            c.standard * c.standard / total
        } else {
            0.0
        }
    }

    /// Quantization's effect half a code below and above the point.
    pub fn quantization(&self) -> (f64, f64) {
        self.contributions
            .iter()
            .find(|c| c.kind == "quantization")
            .map(|c| (c.low, c.high))
            .unwrap_or((0.0, 0.0))
    }
}

/// One code in measurand units from codes per unit (zero when flat).
pub fn code_step(codes_per_unit: f64) -> f64 {
    if codes_per_unit != 0.0 && codes_per_unit.is_finite() {
        1.0 / codes_per_unit.abs()
    } else {
        0.0
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct Budget {
    pub points: Vec<Point>,
    pub k: f64,
    /// Noise at mid-range and the reference temperature.
    pub noise: Noise,
}

impl Budget {
    /// One code in measurand units where it is coarsest over the points
    /// (0 without any): what the resolution verdict holds the noise to.
    pub fn coarsest_code_step(&self) -> f64 {
        self.points.iter().map(Point::code_step).fold(0.0, f64::max)
    }
}

const SQRT3: f64 = 1.732_050_807_568_877_2;

/// How far (as a fraction of the larger effect) a source's evaluated
/// limits may stray from the straight line through them before the GUM
/// sum stops trusting its slope. A smooth chain's curvature over a
/// tolerance stays orders of magnitude below this; a stage clipping at
/// one limit, or both limits moving the reading the same way, does not.
pub const NONLINEAR_TOLERANCE: f64 = 0.1;

/// A source's standard uncertainty from its evaluated limits: the reading
/// changes `low` and `high` with the source `minus` below and `plus` above
/// nominal. GUM's linear propagation takes the slope (high − low)/(plus +
/// minus), that is half the spread over the divisor. A linear chain then
/// meets the line at both limits, both sides of it at the same distance
/// |low·plus + high·minus|/(plus + minus); where that distance exceeds
/// [`NONLINEAR_TOLERANCE`] of the larger effect the slope misrepresents
/// the source (a clipped source shows a zero slope and a large effect),
/// and the larger evaluated effect is taken as the half-width instead.
/// Effects at or below `floor` (rounding in the chain's arithmetic, a
/// source a calibration cancels) are taken as they come. Returns the
/// standard uncertainty and whether the source is linear.
pub fn standard_uncertainty(
    (low, high): (f64, f64),
    (minus, plus): (f64, f64),
    divisor: f64,
    floor: f64,
) -> (f64, bool) {
    let slope_based = (high - low).abs() / 2.0 / divisor;
    let worst = low.abs().max(high.abs());
    let width = minus + plus;
    if width.is_nan() || width <= 0.0 || worst <= floor {
        return (slope_based, true);
    }
    let off_line = (low * plus + high * minus).abs() / width;
    if off_line > NONLINEAR_TOLERANCE * worst {
        (worst / divisor, false)
    } else {
        (slope_based, true)
    }
}

/// The ambients a budget is evaluated at: the range's ends and the
/// reference, in that order, without repeats.
pub fn ambients(chain: &Chain) -> Vec<f64> {
    let mut out = vec![chain.ambient.0, chain.reference, chain.ambient.1];
    out.sort_by(f64::total_cmp);
    out.dedup();
    out
}

pub fn measurand_points(plan: &Plan, n: usize) -> Vec<f64> {
    crate::eval::grid(plan.range, n)
}

/// Every (measurand, ambient) condition the analyses visit: `points`
/// across the measurand range at each ambient, ambient by ambient.
pub fn conditions(chain: &Chain, plan: &Plan, points: usize) -> Vec<Env> {
    ambients(chain)
        .into_iter()
        .flat_map(|ambient| {
            measurand_points(plan, points)
                .into_iter()
                .map(move |m| Env {
                    measurand: m,
                    ambient,
                    cold_junction: ambient,
                })
        })
        .collect()
}

/// The slopes of the converter's input voltage and code with the
/// measurand at `env`, by central difference. At a range end where the
/// sensor stops (a Pt100 ranged down to -200 degC, the end of its curve)
/// the step past the end cannot be evaluated: there the difference is
/// one-sided, from the end inward.
pub fn slopes(plan: &Plan, env: &Env) -> Result<(f64, f64), EvalError> {
    let (lo, hi) = plan.range;
    let h = (hi - lo) * 1e-4;
    let at = |m: f64| {
        plan.converter_input_and_code(
            &plan.nominal,
            &Env {
                measurand: m,
                ..*env
            },
        )
    };
    let (mut m0, mut m1) = (
        (env.measurand - h).max(lo - h),
        (env.measurand + h).min(hi + h),
    );
    let a = match at(m0) {
        Err(_) if m0 < lo => {
            m0 = env.measurand.max(lo);
            at(m0)?
        }
        other => other?,
    };
    let b = match at(m1) {
        Err(_) if m1 > hi => {
            m1 = env.measurand.min(hi);
            at(m1)?
        }
        other => other?,
    };
    Ok(((b.0 - a.0) / (m1 - m0), (b.1 - a.1) / (m1 - m0)))
}

/// The whole budget.
pub fn budget(chain: &Chain, plan: &Plan, options: &Options) -> Result<Budget, EvalError> {
    let mid = Env {
        measurand: (plan.range.0 + plan.range.1) / 2.0,
        ambient: plan.reference,
        cold_junction: plan.reference,
    };
    let (v_slope, c_slope) = slopes(plan, &mid)?;
    let noise = noise(plan, &mid, v_slope, code_step(c_slope));
    let conditions = conditions(chain, plan, options.points);
    let sources = Perturbations::of(plan)?;
    // Points are independent: on every core, gathered in order.
    let points = conditions
        .par_iter()
        .map(|env| point(plan, env, &sources, &noise, options.k))
        .collect::<Result<Vec<_>, _>>()?;
    Ok(Budget {
        points,
        k: options.k,
        noise,
    })
}

/// Every error source at its two limits, with what the calibration saw
/// there: the calibration points sit at the reference, so they do not
/// change from one condition to the next and are worked out once.
///
/// A slot in a tracking group is two sources: its own part at its limits
/// (the group's ratio tolerance), and the group's common part, which sets
/// every member at the limits of its common share together. The two are
/// independent, so the GUM sum over them is eq. 13 of JCGM 100:2008 with
/// the members' covariances, and the worst case moves the common part as
/// one source with each own part at its limits.
pub struct Perturbations {
    nominal: Calibrated,
    sources: Vec<Perturbation>,
}

struct Perturbation {
    id: SourceName,
    kind: &'static str,
    normal: bool,
    /// The slots it moves and their values at its lower and upper limit.
    slots: Vec<SlotId>,
    limits: [(Vec<f64>, Calibrated); 2],
}

impl Perturbations {
    pub fn of(plan: &Plan) -> Result<Perturbations, EvalError> {
        let mut values = plan.nominal.clone();
        let mut at =
            |slots: &[SlotId], xs: Vec<f64>| -> Result<(Vec<f64>, Calibrated), EvalError> {
                for (&s, &x) in slots.iter().zip(&xs) {
                    values[s.index()] = x;
                }
                let calibrated = plan.calibration(&values);
                for &s in slots {
                    values[s.index()] = plan.nominal[s.index()];
                }
                Ok((xs, calibrated?))
            };
        let mut sources = Vec::new();
        for (s, slot) in SlotId::all(plan.slots.len()).zip(&plan.slots) {
            if slot.kind == SourceKind::Exact {
                continue;
            }
            let own = own_fraction(&plan.groups, s);
            let (low, high) = if own == 1.0 {
                (slot.nominal - slot.minus, slot.nominal + slot.plus)
            } else {
                let (h, mid) = half_width(slot);
                (mid - own * h, mid + own * h)
            };
            sources.push(Perturbation {
                id: slot.id.clone(),
                kind: slot.kind.name(),
                normal: slot.normal,
                slots: vec![s],
                limits: [at(&[s], vec![low])?, at(&[s], vec![high])?],
            });
        }
        for group in &plan.groups {
            let slots: Vec<SlotId> = group.parts.iter().map(|p| p.slot).collect();
            let side = |sign: f64| -> Vec<f64> {
                group
                    .parts
                    .iter()
                    .map(|p| {
                        let (h, mid) = half_width(&plan.slots[p.slot.index()]);
                        mid + sign * p.common * h
                    })
                    .collect()
            };
            sources.push(Perturbation {
                id: group.id.clone(),
                kind: group.kind,
                normal: group.normal,
                limits: [at(&slots, side(-1.0))?, at(&slots, side(1.0))?],
                slots,
            });
        }
        Ok(Perturbations {
            nominal: plan.calibration(&plan.nominal)?,
            sources,
        })
    }
}

/// The GUM expanded uncertainty at one condition, without noise (which
/// averages out of a slow alarm).
pub fn gum_expanded_at(
    plan: &Plan,
    env: &Env,
    sources: &Perturbations,
    k: f64,
) -> Result<f64, EvalError> {
    let quiet = Noise {
        terms: Vec::new(),
        referred: Vec::new(),
        enbw_hz: None,
        total_v: 0.0,
        sigma: 0.0,
        sigma_averaged: 0.0,
        average: 1,
        noise_free: 0.0,
        noise_free_averaged: 0.0,
        lsb: 0.0,
    };
    Ok(point(plan, env, sources, &quiet, k)?.gum_expanded)
}

/// Each source's reading change at its lower and upper limit, the
/// perturbed chains evaluated [`LANES`] at a time (the last batch padded
/// with the nominal chain).
fn source_effects(
    plan: &Plan,
    env: &Env,
    sources: &Perturbations,
    r0: f64,
) -> Result<Vec<(f64, f64)>, EvalError> {
    let n = plan.nominal.len();
    let limits: Vec<(&[SlotId], &[f64], Calibrated)> = sources
        .sources
        .iter()
        .flat_map(|p| {
            p.limits
                .iter()
                .map(move |(xs, c)| (p.slots.as_slice(), xs.as_slice(), *c))
        })
        .collect();
    let mut values = Batch::new(plan.nominal.repeat(LANES));
    let mut scratch = LaneColumns::default();
    let mut readings = [0.0; LANES];
    let mut changes = Vec::with_capacity(limits.len());
    for batch in limits.chunks(LANES) {
        let mut calibrated = [sources.nominal; LANES];
        let rows = values.rows_mut();
        for (lane, &(slots, xs, c)) in batch.iter().enumerate() {
            for (&slot, &x) in slots.iter().zip(xs) {
                rows[lane * n + slot.index()] = x;
            }
            calibrated[lane] = c;
        }
        plan.unquantized_readings_calibrated(
            &values,
            env,
            &calibrated,
            &mut readings,
            &mut scratch,
        )?;
        let rows = values.rows_mut();
        for (lane, &(slots, ..)) in batch.iter().enumerate() {
            for &slot in slots {
                rows[lane * n + slot.index()] = plan.nominal[slot.index()];
            }
            changes.push(readings[lane] - r0);
        }
    }
    Ok(changes.chunks(2).map(|c| (c[0], c[1])).collect())
}

/// Quantization at its limits, as every other source: the reading with the
/// converter's exact code half a code below and above, through the chain's
/// inverse at the point, less the nominal reading. On a nonlinear chain
/// the two sides differ. Where the inverse has no answer there (a flat
/// chain, E504) the step is the linear one, zero when flat.
fn quantization(
    plan: &Plan,
    env: &Env,
    calibrated: &Calibrated,
    r0: f64,
    codes_per_unit: f64,
) -> (f64, f64) {
    let half_lsb = code_step(codes_per_unit) / 2.0;
    if half_lsb == 0.0 {
        return (0.0, 0.0);
    }
    let at = |codes: f64| plan.reading_codes_away(&plan.nominal, env, calibrated, codes);
    match (at(-0.5), at(0.5)) {
        (Ok(low), Ok(high)) => (low - r0, high - r0),
        _ => (-half_lsb, half_lsb),
    }
}

/// Each perturbed source's contribution from its effects on the reading
/// at its two limits.
fn source_contributions(
    plan: &Plan,
    sources: &Perturbations,
    effects: &[(f64, f64)],
) -> Vec<Contribution> {
    // Below this an effect is the arithmetic's rounding, not the source's.
    let floor = 1e-9 * (plan.range.1 - plan.range.0);
    // Below this an effect cannot be told from zero: a source a
    // calibration cancels leaves about 1e-15 of the range.
    let rounding = 1e-12 * (plan.range.1 - plan.range.0);
    let mut contributions = Vec::with_capacity(sources.sources.len() + 3);
    for (source, &(low, high)) in sources.sources.iter().zip(effects) {
        let divisor = if source.normal { 3.0 } else { SQRT3 };
        // A tracking group moves its slots together, each to its limit: the
        // first slot's limits place the source's two ends.
        let (minus, plus) = source.slots.first().map_or((1.0, 1.0), |&s| {
            (plan.slots[s.index()].minus, plan.slots[s.index()].plus)
        });
        let (low, high) = (
            beyond_rounding(low, rounding),
            beyond_rounding(high, rounding),
        );
        let (standard, linear) = standard_uncertainty((low, high), (minus, plus), divisor, floor);
        contributions.push(Contribution {
            id: source.id.clone(),
            kind: source.kind,
            low,
            high,
            worst: low.abs().max(high.abs()),
            standard,
            linear,
        });
    }
    contributions
}

/// An effect at or below the floor is the arithmetic's rounding: zero, so
/// it is neither printed nor summed as if the source moved the reading.
pub(super) fn beyond_rounding(effect: f64, floor: f64) -> f64 {
    if effect.abs() <= floor {
        0.0
    } else {
        effect
    }
}

/// Noise as a 3σ bound in the worst case (common practice), σ in the GUM
/// sum; none where there is none.
fn noise_contribution(noise: &Noise) -> Option<Contribution> {
    (noise.sigma_averaged > 0.0).then(|| {
        let three = 3.0 * noise.sigma_averaged;
        Contribution {
            id: SourceName::whole("noise"),
            kind: "noise",
            low: -three,
            high: three,
            worst: three,
            standard: noise.sigma_averaged,
            linear: true,
        }
    })
}

fn point(
    plan: &Plan,
    env: &Env,
    sources: &Perturbations,
    noise: &Noise,
    k: f64,
) -> Result<Point, EvalError> {
    let r0 = plan.unquantized_reading_calibrated(&plan.nominal, env, &sources.nominal)?;
    let (volts_per_unit, codes_per_unit) = slopes(plan, env)?;
    let effects = source_effects(plan, env, sources, r0)?;
    let mut contributions = source_contributions(plan, sources, &effects);
    // Sources computed from the chain rather than a slot.
    let (low, high) = quantization(plan, env, &sources.nominal, r0, codes_per_unit);
    // Summed channels round each code: n half-codes at worst, √n of one
    // code's standard uncertainty (Monte Carlo draws the worst-case span,
    // on the safe side).
    let n = plan.summed_codes() as f64;
    contributions.push(Contribution {
        id: SourceName::whole("quantization"),
        kind: "quantization",
        low: low * n,
        high: high * n,
        worst: n * low.abs().max(high.abs()),
        standard: (high - low).abs() / 2.0 / SQRT3 * n.sqrt(),
        linear: true,
    });
    contributions.extend(noise_contribution(noise));
    let linearisation = r0 - env.measurand;
    if linearisation.abs() > 1e-9 * (plan.range.1 - plan.range.0) {
        // A known error the firmware leaves uncorrected: in the totals as a
        // bound of its size (rectangular in the GUM sum).
        contributions.push(Contribution {
            id: SourceName::whole("conversion"),
            kind: "linearisation",
            low: linearisation,
            high: linearisation,
            worst: linearisation.abs(),
            standard: linearisation.abs() / SQRT3,
            linear: true,
        });
    }
    contributions.sort_by(|a, b| b.worst.total_cmp(&a.worst).then_with(|| a.id.cmp(&b.id)));
    let worst_case = contributions.iter().map(|c| c.worst).sum();
    let linear = contributions.iter().all(|c| c.linear);
    let gum_standard = contributions
        .iter()
        .map(|c| c.standard * c.standard)
        .sum::<f64>()
        .sqrt();
    Ok(Point {
        measurand: env.measurand,
        ambient: env.ambient,
        linearisation,
        contributions,
        worst_case,
        gum_standard,
        gum_expanded: k * gum_standard,
        linear,
        volts_per_unit,
        codes_per_unit,
    })
}
