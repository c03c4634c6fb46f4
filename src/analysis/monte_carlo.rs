//! Monte Carlo propagation (JCGM 101:2008): every source drawn together,
//! the whole chain evaluated per trial, and the probabilistically
//! symmetric 95 % coverage interval of the error.
//!
//! Every source draws from its own stable stream (see [`super::draws`]):
//! its value in trial t is a function of (seed, its id, t) alone, the same
//! at every condition. So a trial's calibration is worked out once for
//! all of them, the trials can be split among threads any way, and an
//! edit to one source leaves every other source's draws bit-identical.

use rayon::prelude::*;

use super::budget::Point;
use super::draws::{cells_of, normals_each, normals_of, uniform_of, uniforms_of, Stream, SPAN};
use super::noise::Noise;
use super::shares::GROUP;
use super::tails::{order_statistics, Ranks};
use crate::eval::wide;
use crate::eval::{
    half_width, own_fraction, Batch, Calibrated, Env, EvalError, Group, LaneColumns, Plan, Slot,
    SlotId, SourceKind, LANES,
};

/// Trials per task: large enough to amortise the split, small enough to
/// balance two to many cores. The default 10⁴ trials make ten tasks, five
/// per core on two (2048 made five, three on one core and two on the
/// other: best of ten wall times 0.16 → 0.15 s for the creamery demo,
/// 0.12 → 0.11 s for the bakery oven; 2·10⁵ trials unchanged).
const CHUNK: usize = 1024;
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

    /// The standard draws (normal, or uniform on [0, 1)) a batch's `bits`
    /// give, which `origin + scale · x` makes its values.
    #[inline(always)]
    fn standard(&self, bits: &[u64; LANES], x: &mut [f64; LANES]) {
        if self.normal {
            normals_of(bits, x);
        } else {
            uniforms_of(bits, x);
        }
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

    /// The draws on the unit half-width that a batch's `bits` give.
    #[inline(always)]
    fn units(&self, bits: &[u64; LANES], x: &mut [f64; LANES]) {
        if self.normal {
            normals_of(bits, x);
            for x in x.iter_mut() {
                *x /= 3.0;
            }
        } else {
            uniforms_of(bits, x);
            for x in x.iter_mut() {
                *x = 2.0 * *x - 1.0;
            }
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
    /// The reading's change per move of the code by q (−½ … ½) below and
    /// above the code: each side of the budget's quantization over ½.
    /// (The change, q times a slope, is 2q times the side to the bit: a
    /// product with 2 is exact.)
    fn quantization_slopes(&self) -> (f64, f64) {
        let (low, high) = self.quantization;
        (-2.0 * low, 2.0 * high)
    }

    /// Whether the code's steps move the reading here.
    fn quantizes(&self) -> bool {
        self.quantization != (0.0, 0.0)
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

/// Trials held in memory at once, across the conditions run together:
/// 64 MiB of errors, and at 10⁶ trials a point a full [`GROUP`] of
/// conditions, whose shares one pass over each source's cells sums (half
/// as many took a 10⁶-trial run a fifth longer: 0.31 s against 0.26 s).
const TRIALS_IN_FLIGHT: usize = 1 << 23;

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
    let mut sampled = run.at(&[condition], &mut Buffers::default())?;
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
    run.in_groups(conditions, TRIALS_IN_FLIGHT, progress)
}

/// The sources' draws, shared by every condition of a trial: each keyed by
/// the seed and its id alone, so one trial is one instance of the chain
/// at every point, and its calibration (taken at the reference, not at
/// the point) is worked out once for all of them.
struct Sources {
    /// The sources that vary, each with its stream.
    drawn: Vec<(Draw, Stream)>,
    /// The sources whose limits are zero, at their one value.
    fixed: Vec<(SlotId, f64)>,
    /// Tracking groups' common parts, each with its id's stream.
    groups: Vec<(Common, Stream)>,
}

impl Sources {
    fn new(plan: &Plan, seed: u64) -> Sources {
        let (mut drawn, mut fixed) = (Vec::new(), Vec::new());
        for (s, slot) in SlotId::all(plan.slots.len()).zip(&plan.slots) {
            if slot.kind == SourceKind::Exact {
                continue;
            }
            let draw = Draw::of(s, slot, own_fraction(&plan.groups, s));
            if draw.scale == 0.0 {
                fixed.push((s, draw.origin));
            } else {
                drawn.push((draw, Stream::source(seed, slot.id.as_str())));
            }
        }
        let groups = plan
            .groups
            .iter()
            .map(|g| (Common::of(g, plan), Stream::source(seed, g.id.as_str())))
            .collect();
        Sources {
            drawn,
            fixed,
            groups,
        }
    }

    /// The streams that vary: the drawn sources, then the groups.
    fn columns(&self) -> usize {
        self.drawn.len() + self.groups.len()
    }

    /// The values of trials `t0 .. t0 + lanes`, lane after lane, into
    /// `values` (exact slots are left at their nominal), and each drawn
    /// stream's partition cell into `cells` from index `at` on.
    fn fill(&self, values: &mut [f64], slots: usize, t0: u64, lanes: usize, cells: &mut Cells) {
        wide::run(
            #[inline(always)]
            || self.fill_kernel(values, slots, t0, lanes, cells),
        )
    }

    #[inline(always)]
    fn fill_kernel(
        &self,
        values: &mut [f64],
        slots: usize,
        t0: u64,
        lanes: usize,
        cells: &mut Cells,
    ) {
        for &(slot, value) in &self.fixed {
            for lane in 0..lanes {
                values[lane * slots + slot.index()] = value;
            }
        }
        // Each stream a batch at a time: its bits, its standard draws, then
        // the lanes' values.
        let (mut bits, mut x) = ([0; LANES], [0.0; LANES]);
        for (k, &(draw, stream)) in self.drawn.iter().enumerate() {
            stream.bits_each(t0, &mut bits);
            draw.standard(&bits, &mut x);
            for lane in 0..lanes {
                values[lane * slots + draw.slot.index()] = draw.origin + draw.scale * x[lane];
            }
            cells.record_each(k, &bits[..lanes]);
        }
        for (g, (common, stream)) in self.groups.iter().enumerate() {
            stream.bits_each(t0, &mut bits);
            common.units(&bits, &mut x);
            for lane in 0..lanes {
                for &(slot, scale) in &common.parts {
                    values[lane * slots + slot.index()] += scale * x[lane];
                }
            }
            cells.record_each(self.drawn.len() + g, &bits[..lanes]);
        }
    }

    /// Every source's id and where its cells are in the shares' order
    /// (slots, then groups): the index of its column, none if fixed.
    fn named<'a>(&'a self, plan: &'a Plan) -> impl Iterator<Item = (&'a str, Varies)> + 'a {
        let mut drawn = self.drawn.iter().enumerate().peekable();
        let slots = SlotId::all(plan.slots.len())
            .zip(&plan.slots)
            .filter(|(_, slot)| slot.kind != SourceKind::Exact)
            .map(move |(s, slot)| {
                let column = drawn.next_if(|(_, (d, _))| d.slot == s).map(|(k, _)| k);
                (slot.id.as_str(), column.map_or(Varies::Not, Varies::Column))
            });
        let first = self.drawn.len();
        let groups = plan
            .groups
            .iter()
            .enumerate()
            .map(move |(g, group)| (group.id.as_str(), Varies::Column(first + g)));
        slots.chain(groups)
    }
}

/// Where a source's partition cells for the shares come from.
#[derive(Clone, Copy)]
enum Varies {
    /// A fixed source: no cells, no share.
    Not,
    /// Recorded while drawing, in this column.
    Column(usize),
}

/// A chunk's part of every recorded column of partition cells (none when
/// no shares are asked for), from index `at` of the chunk: the sources',
/// then the reading's noise and quantization, each shared by every
/// condition.
struct Cells<'a> {
    columns: Vec<&'a mut [u8]>,
    count: usize,
    at: usize,
}

impl Cells<'_> {
    /// Each lane's cell in `column`, from its draw's bits.
    #[inline(always)]
    fn record_each(&mut self, column: usize, bits: &[u64]) {
        let (at, count) = (self.at, self.count);
        if let Some(cells) = self.columns.get_mut(column) {
            cells_of(bits, count, &mut cells[at..at + bits.len()]);
        }
    }
}

/// What each reading adds: its noise and its quantization, where they
/// act, each drawn once a trial from a stream keyed by the seed and its
/// id alone, like a source's, and scaled at each condition (by the
/// chain's noise, and by the condition's code step either side). A
/// condition's results come from its own trials alone, so drawing its
/// readings' noise apart from another condition's would change no
/// result's distribution; drawn alike, the draws cost one trial, not one
/// a condition, and the intervals move smoothly from point to point
/// (common random numbers).
#[derive(Clone, Copy)]
struct Reading {
    noise: Option<Stream>,
    quantization: Option<Stream>,
    /// The first of their cell columns, after the sources'.
    first_column: usize,
}

impl Reading {
    fn new(conditions: &[Condition], noise: &Noise, sources: &Sources, seed: u64) -> Reading {
        let acts = |on: bool, id| on.then(|| Stream::source(seed, id));
        Reading {
            noise: acts(noise.sigma_averaged != 0.0, NOISE_ID),
            quantization: acts(conditions.iter().any(Condition::quantizes), QUANTIZATION_ID),
            first_column: sources.columns(),
        }
    }

    /// The streams that act, each a cell column.
    fn columns(&self) -> usize {
        usize::from(self.noise.is_some()) + usize::from(self.quantization.is_some())
    }

    /// The cell columns of the noise and the quantization, where they act.
    fn column_of(&self) -> (Option<usize>, Option<usize>) {
        let noise = self.noise.map(|_| self.first_column);
        let after = self.first_column + usize::from(noise.is_some());
        (noise, self.quantization.map(|_| after))
    }

    /// The streams acting at `condition`, each with its cell column.
    fn named<'a>(self, condition: &Condition) -> impl Iterator<Item = (&'a str, Varies)> {
        let (noise, quantization) = self.column_of();
        let quantization = quantization.filter(|_| condition.quantizes());
        let noise = noise.map(|k| (NOISE_ID as &'a str, Varies::Column(k)));
        let quantization = quantization.map(|k| (QUANTIZATION_ID as &'a str, Varies::Column(k)));
        noise.into_iter().chain(quantization)
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

/// What a run's trials are written into: each condition's errors, and the
/// shares' partition cells of each varying source and reading stream
/// (shared by every condition), each kind in one block of memory. Kept
/// from one group of conditions to the next, so a long run maps its
/// memory once; every cell in use is written before it is read.
#[derive(Default)]
struct Buffers {
    errors: Vec<f64>,
    cells: Vec<u8>,
}

/// Slices of the buffers: one a condition's errors and one a source's
/// cells, whole for a group of conditions or a chunk's part of each.
type Parts<'a> = (Vec<&'a mut [f64]>, Vec<&'a mut [u8]>);

/// Buffers a finished run left, for the next: a budget runs each chain
/// in turn, and memory already mapped costs the next run no faults.
static SPARE: std::sync::Mutex<Option<Buffers>> = std::sync::Mutex::new(None);

impl Buffers {
    /// The buffers a run left, or none yet (runs at once take their own).
    fn spare() -> Buffers {
        let spare = SPARE.lock().map(|mut s| s.take());
        spare.ok().flatten().unwrap_or_default()
    }

    /// Keeps these for the next run, the larger where two runs ended.
    fn put_back(self) {
        let Ok(mut spare) = SPARE.lock() else { return };
        let size = |b: &Buffers| b.errors.len() * 8 + b.cells.len();
        if spare.as_ref().is_none_or(|kept| size(kept) < size(&self)) {
            *spare = Some(self);
        }
    }

    /// `trials` of each of `conditions`, and, when `columns` streams vary
    /// and shares are asked for, their cells.
    fn shaped(&mut self, conditions: usize, trials: usize, columns: Option<usize>) -> Parts<'_> {
        (
            split(&mut self.errors, (0..conditions).map(|_| trials)),
            split(&mut self.cells, (0..columns.unwrap_or(0)).map(|_| trials)),
        )
    }
}

/// `block` cut into slices of `lens`, grown first if it is too short.
fn split<T: Copy + Default>(
    block: &mut Vec<T>,
    lens: impl Iterator<Item = usize> + Clone,
) -> Vec<&mut [T]> {
    let total: usize = lens.clone().sum();
    // The slices start on a huge page's boundary, so every whole huge
    // page of them can be one.
    let skip = |block: &Vec<T>| block.as_ptr().align_offset(HUGE_PAGE).min(block.len());
    if block.len() < skip(block) + total {
        // Fresh zeroed memory is mapped, not written: the trials touch it
        // first, on every core. The slices' last huge page lies whole
        // inside it too (the kernel maps one only there), so no part of
        // them falls to small pages, each a fault of its own (about 2.5 µs
        // apiece on a 2-core x86-64 virtual machine, against 0.2 ms for a
        // huge page: 2 MiB of small pages costs six times as much).
        let per_page = HUGE_PAGE / std::mem::size_of::<T>();
        *block = vec![T::default(); total.next_multiple_of(per_page) + per_page];
        advise_huge_pages(block);
    }
    let skip = skip(block);
    let mut rest = &mut block[skip..];
    lens.map(|len| {
        let (part, after) = std::mem::take(&mut rest).split_at_mut(len);
        rest = after;
        part
    })
    .collect()
}

/// The size of a huge page (x86-64's and AArch64's usual 2 MiB).
const HUGE_PAGE: usize = 2 << 20;

/// Asks the kernel to map `block` in huge pages where it can: a run's
/// buffers reach tens of megabytes, and with a fault a small page a
/// 10⁶-trial run spent about a fifth of its CPU in the kernel.
#[cfg(target_os = "linux")]
fn advise_huge_pages<T>(block: &mut [T]) {
    const PAGE: usize = 4096;
    let start = block.as_mut_ptr() as usize;
    let (first, end) = (
        start.next_multiple_of(PAGE),
        (start + std::mem::size_of_val(block)) / PAGE * PAGE,
    );
    if end > first {
        // SAFETY: whole pages inside `block`, which is ours; advice
        // changes no contents.
        unsafe { libc::madvise(first as *mut libc::c_void, end - first, libc::MADV_HUGEPAGE) };
    }
}

#[cfg(not(target_os = "linux"))]
fn advise_huge_pages<T>(_: &mut [T]) {}

/// Each chunk's slices of every condition's errors and every cell column
/// (an empty column an empty slice in every chunk).
fn chunk_tasks<'a>(
    errors: &'a mut [&mut [f64]],
    cells: &'a mut [&mut [u8]],
    trials: usize,
) -> Vec<Parts<'a>> {
    let mut tasks: Vec<Parts> = (0..trials.div_ceil(CHUNK))
        .map(|_| {
            (
                Vec::with_capacity(errors.len()),
                Vec::with_capacity(cells.len()),
            )
        })
        .collect();
    for all in errors {
        for (task, out) in tasks.iter_mut().zip(all.chunks_mut(CHUNK)) {
            task.0.push(out);
        }
    }
    for column in cells {
        for (task, part) in tasks.iter_mut().zip(column.chunks_mut(CHUNK)) {
            task.1.push(part);
        }
    }
    tasks
}

/// The first failure of the first failing condition, in trial order,
/// whatever the thread count.
fn first_failure(
    mut outcomes: Vec<Vec<Result<(), EvalError>>>,
    conditions: usize,
) -> Result<(), EvalError> {
    for c in 0..conditions {
        for outcome in &mut outcomes {
            std::mem::replace(&mut outcome[c], Ok(()))?;
        }
    }
    Ok(())
}

impl Run<'_> {
    /// [`Run::at`] each group of `conditions` that keeps at most
    /// `in_flight` trials in memory (one condition at least), the buffers
    /// kept from group to group.
    fn in_groups(
        &self,
        conditions: &[Condition],
        in_flight: usize,
        progress: &dyn Fn(usize, usize),
    ) -> Result<Vec<Sampled>, EvalError> {
        let group = (in_flight / self.trials.max(1)).max(1);
        let mut out = Vec::with_capacity(conditions.len());
        let mut buffers = Buffers::spare();
        let mut groups = || {
            for batch in conditions.chunks(group) {
                progress(out.len(), conditions.len());
                out.extend(self.at(batch, &mut buffers)?);
            }
            Ok(())
        };
        let done = groups();
        buffers.put_back();
        done.map(|()| out)
    }

    /// The intervals of `conditions`, their trials on every core together,
    /// written into `buffers`.
    fn at(
        &self,
        conditions: &[Condition],
        buffers: &mut Buffers,
    ) -> Result<Vec<Sampled>, EvalError> {
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
        let sources = Sources::new(plan, seed);
        let reading = Reading::new(conditions, noise, &sources, seed);
        let columns = sources.columns() + reading.columns();
        let (mut errors, mut cells) =
            buffers.shaped(conditions.len(), trials, shares.then_some(columns));
        let count = super::shares::cells(trials);
        let tasks = chunk_tasks(&mut errors, &mut cells, trials);
        let outcomes: Vec<Vec<Result<(), EvalError>>> = tasks
            .into_par_iter()
            .enumerate()
            .map(|(chunk, (mut outs, columns))| {
                let block = Block {
                    plan,
                    sources: &sources,
                    reading,
                    noise,
                };
                let mut cells = Cells {
                    columns,
                    count,
                    at: 0,
                };
                block.errors(conditions, chunk * CHUNK, &mut outs, &mut cells)
            })
            .collect();
        first_failure(outcomes, conditions.len())?;
        // The order statistics and the shares read the same errors, side
        // by side.
        let (intervals, mut shared): (Vec<Interval>, _) = rayon::join(
            || errors.par_iter().map(|all| coverage(all)).collect(),
            || {
                if shares {
                    let streams = (&sources, reading);
                    variance_shares(plan, streams, conditions, &cells, &errors)
                } else {
                    Vec::new()
                }
            },
        );
        shared.resize(intervals.len(), Vec::new());
        Ok(intervals
            .into_iter()
            .zip(shared)
            .map(|(interval, shares)| Sampled { interval, shares })
            .collect())
    }
}

/// Each source's share of the variance of each condition's `errors`, from
/// the cells recorded in `columns`; a fixed one's is 0. Conditions go
/// [`GROUP`] at a time through one pass over each column; the groups'
/// passes are spread over the cores, and every sum still runs in trial
/// order, whichever thread takes it.
fn variance_shares(
    plan: &Plan,
    (sources, reading): (&Sources, Reading),
    conditions: &[Condition],
    columns: &[&mut [u8]],
    errors: &[&mut [f64]],
) -> Vec<Vec<Share>> {
    use super::shares::{first_order_columns, CellColumn, CenteredGroup, ColumnSpace};
    let runs: Vec<&[f64]> = errors.iter().map(|e| &**e).collect();
    let trials = runs.first().map_or(0, |r| r.len());
    let cells = super::shares::cells(trials);
    let columns: Vec<CellColumn> = columns
        .par_iter()
        .map(|c| CellColumn::new(c, trials))
        .collect();
    let groups: Vec<CenteredGroup> = runs.par_chunks(GROUP).map(CenteredGroup::new).collect();
    let by_group: Vec<Vec<[f64; GROUP]>> = groups
        .par_iter()
        .map_init(ColumnSpace::default, |space, group| {
            first_order_columns(group, &columns, cells, space)
        })
        .collect();
    conditions
        .iter()
        .enumerate()
        .map(|(c, condition)| {
            sources
                .named(plan)
                .chain(reading.named(condition))
                .map(|(id, varies)| Share {
                    id: id.to_string(),
                    share: match varies {
                        Varies::Not => 0.0,
                        Varies::Column(k) => by_group[c / GROUP][k][c % GROUP],
                    },
                })
                .collect()
        })
        .collect()
}

/// What one chunk of trials needs besides its conditions.
struct Block<'a> {
    plan: &'a Plan,
    sources: &'a Sources,
    reading: Reading,
    noise: &'a Noise,
}

impl Block<'_> {
    /// The errors of trials `first ..` at every condition into `outs` (one
    /// buffer a condition, all as long): each trial's values drawn and its
    /// calibration worked out once, then read at every condition; then
    /// the readings' noise and quantization, drawn once a trial. A
    /// condition stops at its first failure.
    fn errors(
        &self,
        at: &[Condition],
        first: usize,
        outs: &mut [&mut [f64]],
        cells: &mut Cells,
    ) -> Vec<Result<(), EvalError>> {
        let plan = self.plan;
        let slots = plan.nominal.len();
        let len = outs.first().map_or(0, |o| o.len());
        // Trials go through the evaluator LANES at a time; each value is its
        // trial's, so the lane count changes no result.
        let mut values = Batch::new(plan.nominal.repeat(LANES));
        let mut calibrated = [Calibrated::None; LANES];
        let mut lanes = Lanes {
            readings: [0.0; LANES],
            scratch: LaneColumns::default(),
        };
        let mut outcome: Vec<Result<(), EvalError>> = at.iter().map(|_| Ok(())).collect();
        for start in (0..len).step_by(LANES) {
            let count = LANES.min(len - start);
            let t0 = (first + start) as u64;
            cells.at = start;
            self.sources
                .fill(values.rows_mut(), slots, t0, count, cells);
            let calibration =
                plan.calibrations(&values, count, &mut calibrated, &mut lanes.scratch);
            let conditions = at.iter().zip(outs.iter_mut());
            for ((at, out), result) in conditions.zip(&mut outcome) {
                if result.is_err() {
                    continue;
                }
                let out = &mut out[start..start + count];
                let known = calibration.as_ref().ok().map(|()| &calibrated);
                *result = self.block(at, &values, known, out, &mut lanes);
            }
        }
        wide::run(
            #[inline(always)]
            || self.add_reading_errors(at, first as u64, outs, &outcome, cells),
        );
        outcome
    }

    /// One block of trials at one condition into `out`: each reading less
    /// the true value. Without a calibration (it failed in some lane)
    /// each lane runs whole, so the error is the one a single run meets
    /// first.
    fn block(
        &self,
        at: &Condition,
        batch: &Batch,
        calibrated: Option<&[Calibrated; LANES]>,
        out: &mut [f64],
        lanes: &mut Lanes,
    ) -> Result<(), EvalError> {
        let (plan, env) = (self.plan, &at.env);
        let (slots, values) = (plan.nominal.len(), batch.rows());
        let lane_values = |lane: usize| &values[lane * slots..(lane + 1) * slots];
        let readings = &mut lanes.readings;
        match calibrated {
            Some(known) if out.len() == LANES => {
                plan.unquantized_readings_calibrated(
                    batch,
                    env,
                    known,
                    readings,
                    &mut lanes.scratch,
                )?;
            }
            Some(known) => {
                for (lane, reading) in readings.iter_mut().enumerate().take(out.len()) {
                    *reading =
                        plan.unquantized_reading_calibrated(lane_values(lane), env, &known[lane])?;
                }
            }
            None => {
                for (lane, reading) in readings.iter_mut().enumerate().take(out.len()) {
                    *reading = plan.unquantized_reading(lane_values(lane), env)?;
                }
            }
        }
        for (error, reading) in out.iter_mut().zip(readings) {
            *error = *reading - env.measurand;
        }
        Ok(())
    }

    /// What noise and quantization add to the errors `outs` of trials
    /// `t0 ..` at `conditions` (those whose `outcome` is a failure left
    /// alone), a span of trials at a time: each stream's draws and cells
    /// once, then each condition's errors. Each error gains its noise,
    /// then its quantization, as `reading − true + noise + quantization`
    /// adds them.
    #[inline(always)]
    fn add_reading_errors(
        &self,
        conditions: &[Condition],
        t0: u64,
        outs: &mut [&mut [f64]],
        outcome: &[Result<(), EvalError>],
        cells: &mut Cells,
    ) {
        let sigma = self.noise.sigma_averaged;
        let (noise_column, quantization_column) = self.reading.column_of();
        let len = outs.first().map_or(0, |o| o.len());
        let (mut bits, mut z, mut q) = ([0; SPAN], [0.0; SPAN], [0.0; SPAN]);
        for first in (0..len).step_by(SPAN) {
            let n = SPAN.min(len - first);
            let t = t0 + first as u64;
            cells.at = first;
            // Absent, a stream adds zero, as it always has.
            if let (Some(stream), Some(k)) = (self.reading.noise, noise_column) {
                stream.bits_from(t, &mut bits[..n]);
                normals_each(&bits[..n], &mut z[..n]);
                cells.record_each(k, &bits[..n]);
            }
            if let (Some(stream), Some(k)) = (self.reading.quantization, quantization_column) {
                stream.bits_from(t, &mut bits[..n]);
                cells.record_each(k, &bits[..n]);
                for (q, &bits) in q.iter_mut().zip(&bits[..n]) {
                    *q = uniform_of(bits) - 0.5;
                }
            }
            let at = conditions.iter().zip(outs.iter_mut()).zip(outcome);
            for ((condition, out), _) in at.filter(|(_, r)| r.is_ok()) {
                let (below, above) = condition.quantization_slopes();
                for ((error, z), &q) in out[first..first + n].iter_mut().zip(&z).zip(&q) {
                    *error += z * sigma;
                    *error += q * if q < 0.0 { below } else { above };
                }
            }
        }
    }
}

/// The evaluator's working space for one block of lanes.
struct Lanes {
    readings: [f64; LANES],
    scratch: LaneColumns,
}

/// The probabilistically symmetric 95 % interval of `all` (not empty).
fn coverage(all: &[f64]) -> Interval {
    // Four order statistics, found in the two tails rather than by
    // sorting a million errors.
    let tail = (1.0 - COVERAGE) / 2.0;
    let n = all.len();
    let rank = |p: f64| ((p * n as f64).floor() as usize).min(n - 1);
    let (low_rank, high_rank) = (rank(tail), rank(1.0 - tail));
    // The count of trials below a p-quantile is binomial: ±1.96 of its
    // standard deviation in rank brackets the end at 95 %, read on the
    // end's outer side.
    let m = n as f64;
    let reach = (1.96 * (m * tail * (1.0 - tail)).sqrt()).ceil() as usize;
    let above = n - 1 - high_rank;
    let beyond_high = high_rank + if above == 0 { 0 } else { reach.clamp(1, above) };
    let (low, beyond_low) = if low_rank < high_rank {
        let below = if low_rank == 0 {
            0
        } else {
            reach.clamp(1, low_rank)
        };
        (low_rank, low_rank - below)
    } else {
        (high_rank, high_rank)
    };
    let ranks = Ranks {
        low: (beyond_low, low),
        high: (high_rank, beyond_high),
    };
    let [outer_low, low, high, outer_high] = order_statistics(all, ranks);
    let spread = |outer: usize, end: usize, width: f64| if outer == end { 0.0 } else { width };
    Interval {
        low,
        high,
        numerical: spread(beyond_high, ranks.high.0, outer_high - high).max(spread(
            beyond_low,
            ranks.low.1,
            low - outer_low,
        )),
    }
}

#[cfg(test)]
mod tests {
    use super::{coverage, Condition, Run, Sampled};
    use crate::analysis::draws::Stream;
    use crate::eval::testing::{env_c, plan};

    /// A Pt100 on a current source, an amplifier and a 16-bit converter
    /// with noise: sources shared by every condition, and a noise and a
    /// quantization of each condition's own.
    const NOISY_RTD: &str = r#"
chain t "t" {
    measurand temperature 0 degC .. 100 degC
    excitation drive { current 1 mA ± 0.1 % }
    sensor probe {
        rtd pt100
        wires 4
        r0 100 ohm ± 0.05 %
    }
    amplifier front { gain 10 ± 0.1 % }
    adc conv {
        bits 16
        input differential
        vref 2.5 V ± 0.05 %
        noise 20 uV
    }
    convert reading { method exact }
    drive -> probe -> front -> conv -> reading
}
"#;

    /// The same run in groups of one, of two and all at once: the buffers
    /// a group leaves behind, shaped for other conditions (one whose
    /// quantization does not act among them), change nothing, to the bit.
    #[test]
    fn groups_of_any_size_give_the_same_results() {
        let plan = plan(NOISY_RTD);
        let env = env_c(50.0, 25.0);
        let noise = crate::analysis::noise::noise(&plan, &env, 1e-3, 1e-3);
        assert!(noise.sigma_averaged > 0.0);
        let conditions: Vec<Condition> = [(0.0, 0.01), (30.0, 0.0), (60.0, 0.02), (90.0, 0.01)]
            .iter()
            .map(|&(t, q)| Condition {
                env: env_c(t, 25.0),
                quantization: (-q, q),
            })
            .collect();
        let trials = 3000;
        let run = Run {
            plan: &plan,
            noise: &noise,
            trials,
            seed: 7,
            shares: true,
        };
        let bits = |sampled: Vec<Sampled>| -> Vec<Vec<u64>> {
            sampled
                .iter()
                .map(|s| {
                    let i = s.interval;
                    let ends = [i.low, i.high, i.numerical].map(f64::to_bits);
                    ends.into_iter()
                        .chain(s.shares.iter().map(|s| s.share.to_bits()))
                        .collect()
                })
                .collect()
        };
        let whole = bits(run.in_groups(&conditions, usize::MAX, &|_, _| {}).unwrap());
        assert_eq!(
            whole[1].len(),
            whole[0].len() - 1,
            "no quantization at 30 degC"
        );
        for in_flight in [trials, 2 * trials] {
            let grouped = run.in_groups(&conditions, in_flight, &|_, _| {}).unwrap();
            assert_eq!(bits(grouped), whole, "{in_flight} trials in flight");
        }
    }

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
            let i = coverage(&normal_sample(seed, M));
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
