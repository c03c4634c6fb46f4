//! [`LANES`] evaluations side by side as structure of arrays: each node's
//! signal is a column of values, one per lane, so a node's kind is matched
//! once per batch and its arithmetic is one loop over the lanes, which the
//! compiler vectorises. Errors and non-finite values are not reported lane
//! by lane: a batch that meets one is redone by the single-run evaluator,
//! which names the error a single run meets first.

use super::convert::JunctionEmfs;
use super::plan::{DriftSlot, Env, NodeId, Plan, Senses, Signal, SlotId};
use super::run::{Mode, Reach, LANES, MAX_NODES, WITHIN_SLACK};
use crate::units::ZERO_CELSIUS_K;
use std::sync::atomic::{AtomicU64, Ordering};

/// Which [`Signal`] a node gives: the same in every lane of a batch (it
/// follows from the node's kind and wiring), so one tag per column.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub(super) enum Tag {
    #[default]
    None,
    Current,
    Source,
    Element,
    Voltage,
    Code,
    Reading,
}

/// A node's signal in every lane. `x` is the main value (a voltage's
/// differential value, a code's exact value); `cm` and `rs` belong to a
/// voltage, `code` to a code, rounded only in a run that quantizes
/// ([`Mode`]'s `quantized`; an unquantized run reads the exact code and
/// leaves `code` as it was).
#[derive(Clone, Copy, Debug, Default)]
pub(super) struct Column {
    pub tag: Tag,
    pub x: [f64; LANES],
    pub cm: [f64; LANES],
    pub rs: [f64; LANES],
    pub code: [i64; LANES],
}

/// Some lane met an error or a value that is not finite: the batch is
/// redone one lane at a time.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) struct Lost;

impl Column {
    /// Lane `k`'s signal, for the code a kernel shares with single runs.
    #[inline(always)]
    pub fn signal(&self, k: usize) -> Signal {
        let x = self.x[k];
        match self.tag {
            Tag::None => Signal::None,
            Tag::Current => Signal::Current(x),
            Tag::Source => Signal::Source(x),
            Tag::Element => Signal::Element(x),
            Tag::Voltage => Signal::Voltage {
                v: x,
                cm: self.cm[k],
                rs: self.rs[k],
            },
            Tag::Code => Signal::Code {
                exact: x,
                code: self.code[k],
            },
            Tag::Reading => Signal::Reading(x),
        }
    }

    /// Sets lane `k` to `s`; a signal of another kind than lane 0's loses
    /// the batch.
    #[inline(always)]
    pub fn set(&mut self, k: usize, s: Signal) -> Result<(), Lost> {
        let (tag, x) = match s {
            Signal::None => (Tag::None, 0.0),
            Signal::Current(x) => (Tag::Current, x),
            Signal::Source(x) => (Tag::Source, x),
            Signal::Element(x) => (Tag::Element, x),
            Signal::Voltage { v, cm, rs } => {
                self.cm[k] = cm;
                self.rs[k] = rs;
                (Tag::Voltage, v)
            }
            Signal::Code { exact, code } => {
                self.code[k] = code;
                (Tag::Code, exact)
            }
            Signal::Reading(x) => (Tag::Reading, x),
        };
        if k == 0 {
            self.tag = tag;
        } else if tag != self.tag {
            return Err(Lost);
        }
        self.x[k] = x;
        Ok(())
    }

    /// Every value the signal carries is finite in every lane.
    #[inline(always)]
    pub fn finite(&self) -> bool {
        let all = all_finite;
        match self.tag {
            Tag::None => true,
            Tag::Current | Tag::Source | Tag::Element | Tag::Reading | Tag::Code => all(&self.x),
            Tag::Voltage => all(&self.x) & all(&self.cm) & all(&self.rs),
        }
    }

    /// The values, where the signal is `tag`.
    #[inline(always)]
    pub fn of(&self, tag: Tag) -> Option<&[f64; LANES]> {
        (self.tag == tag).then_some(&self.x)
    }
}

/// Every value of `c` is finite. x × 0 is zero for a finite x and NaN
/// for an infinite one or NaN, and a sum is NaN once any term is: four
/// running sums of those are vector instructions, where a test of each
/// value's class is compiled to integer tests one value at a time.
#[inline(always)]
pub fn all_finite(c: &[f64; LANES]) -> bool {
    let mut sums = [0.0; 4];
    for four in c.chunks_exact(4) {
        for (sum, x) in sums.iter_mut().zip(four) {
            *sum += x * 0.0;
        }
    }
    sums.iter().sum::<f64>() == 0.0
}

/// Every value of `c` is finite and above zero.
#[inline(always)]
pub fn all_positive(c: &[f64; LANES]) -> bool {
    let mut lowest = [f64::INFINITY; 4];
    for four in c.chunks_exact(4) {
        for (low, &x) in lowest.iter_mut().zip(four) {
            // Not `min`, which passes over a NaN: all_finite finds it.
            *low = if x < *low { x } else { *low };
        }
    }
    all_finite(c) && lowest.iter().all(|&low| low > 0.0)
}

/// `f64::clamp`, as selects, which keep a lane loop in vector registers
/// where `clamp`'s own form does not (NaN stays NaN).
#[inline(always)]
pub(super) fn clamped(x: f64, lo: f64, hi: f64) -> f64 {
    let x = if x < lo { lo } else { x };
    if x > hi {
        hi
    } else {
        x
    }
}

/// A batch's values, lane after lane, each lane a plan's slots, stamped
/// anew whenever they may change: columns loaded from a batch are kept
/// while its stamp holds, with no need to compare the values (a batch is
/// read at every point of a run, and a chain has dozens of slots).
#[derive(Debug)]
pub struct Batch {
    rows: Vec<f64>,
    stamp: u64,
}

/// No two batches of a process, nor two states of one, share a stamp.
static STAMPS: AtomicU64 = AtomicU64::new(0);

fn fresh_stamp() -> u64 {
    STAMPS.fetch_add(1, Ordering::Relaxed)
}

impl Batch {
    pub fn new(rows: Vec<f64>) -> Batch {
        Batch {
            rows,
            stamp: fresh_stamp(),
        }
    }

    pub fn rows(&self) -> &[f64] {
        &self.rows
    }

    /// The values, to change: the batch takes a new stamp.
    pub fn rows_mut(&mut self) -> &mut [f64] {
        self.stamp = fresh_stamp();
        &mut self.rows
    }
}

/// The columns of a batch: every node's signals and every slot's values,
/// reused from batch to batch (every node is written before it is read).
#[derive(Clone, Debug)]
pub struct LaneColumns {
    pub(super) nodes: [Column; MAX_NODES],
    /// Slot by slot, each lane's value.
    pub(super) values: Vec<[f64; LANES]>,
    /// The stamp of the batch the values were loaded from.
    loaded: Option<u64>,
    /// The run the columns hold, complete, with the values now loaded:
    /// the next run with the same key keeps the columns of the nodes the
    /// measurand does not reach.
    pub(super) last: Option<RunKey>,
    /// The main conversion's junction EMFs, kept from point to point.
    pub(super) junction_emfs: JunctionEmfs,
    /// The last thermocouple EMF at a condition's cold junction: the
    /// couple's node, the junction temperature's bits, the EMF. Points of
    /// one ambient share it.
    pub(super) junction_mv: Option<(NodeId, u64, Option<f64>)>,
}

/// What a node's column depends on besides the values and the measurand:
/// the rest of the condition, the nodes run and how.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) struct RunKey {
    pub ambient: u64,
    pub cold_junction: u64,
    pub reach: Reach,
    pub mode: Mode,
}

impl RunKey {
    pub fn of(env: &Env, reach: Reach, mode: Mode) -> RunKey {
        RunKey {
            ambient: env.ambient.to_bits(),
            cold_junction: env.cold_junction.to_bits(),
            reach,
            mode,
        }
    }
}

impl Default for LaneColumns {
    fn default() -> LaneColumns {
        LaneColumns {
            nodes: [Column::default(); MAX_NODES],
            values: Vec::new(),
            loaded: None,
            last: None,
            junction_emfs: JunctionEmfs::default(),
            junction_mv: None,
        }
    }
}

impl LaneColumns {
    /// The values of `batch` (`n` slots a lane) as columns. Values as
    /// loaded last (the same batch with the same stamp, as when a batch
    /// is read at several points) are kept; new ones void the last run.
    #[inline(always)]
    pub(super) fn load(&mut self, batch: &Batch, n: usize) {
        if self.loaded != Some(batch.stamp) {
            self.reload(batch.rows(), n);
            self.loaded = Some(batch.stamp);
        }
    }

    /// New values: the last run is void.
    fn reload(&mut self, rows: &[f64], n: usize) {
        self.last = None;
        self.values.resize(n, [0.0; LANES]);
        for (s, column) in self.values.iter_mut().enumerate() {
            for (k, x) in column.iter_mut().enumerate() {
                *x = rows[k * n + s];
            }
        }
    }
}

/// Each lane's temperature `t`, K, as °C held to `range` as a single run's
/// [`within`](super::run::within) holds it; a lane beyond it loses the batch. One pass, no
/// early exit.
#[inline(always)]
pub(super) fn celsius_within(t: &mut [f64; LANES], range: (f64, f64)) -> Result<(), Lost> {
    // `within`'s test and clamp, as selects over the column.
    let (lo, hi) = range;
    let (lowest, highest) = (lo - WITHIN_SLACK, hi + WITHIN_SLACK);
    let mut outside = false;
    for t in t.iter_mut() {
        let c = *t - ZERO_CELSIUS_K;
        let inside = (lowest <= c) & (c <= highest);
        outside |= !inside;
        // Clamped in every lane, then chosen (c is a number where it is
        // inside): a clamp within the choice would be a branch.
        let c = clamped(c, lo, hi);
        *t = if inside { c } else { 0.0 };
    }
    if outside {
        Err(Lost)
    } else {
        Ok(())
    }
}

/// The column of a slot a stage does not have.
static ZEROS: [f64; LANES] = [0.0; LANES];

/// One node's view of a batch: the plan, the values as rows (for the
/// single-run functions a lane calls) and as columns, the conditions and
/// the columns of the nodes before it.
pub(in crate::eval) struct LaneRun<'a> {
    pub plan: &'a Plan,
    pub i: NodeId,
    pub rows: &'a [f64],
    pub values: &'a [[f64; LANES]],
    pub env: &'a Env,
    pub s: &'a [Column],
    pub mode: Mode,
    pub junction_mv: Option<f64>,
}

impl LaneRun<'_> {
    /// Lane `k`'s values.
    #[inline(always)]
    pub fn row(&self, k: usize) -> &[f64] {
        let n = self.values.len();
        &self.rows[k * n..(k + 1) * n]
    }

    /// Slot `s`'s column, borrowed: a column is 256 bytes at 32 lanes,
    /// and a copy of it is a call to `memcpy`.
    #[inline(always)]
    pub fn slot(&self, s: SlotId) -> &[f64; LANES] {
        &self.values[s.index()]
    }

    #[inline(always)]
    pub fn or_zero(&self, s: Option<SlotId>) -> &[f64; LANES] {
        s.map_or(&ZEROS, |s| &self.values[s.index()])
    }

    /// [`Plan::drifted`] in every lane, into `out`.
    #[inline(always)]
    pub fn drifted_into(
        &self,
        value: &[f64; LANES],
        drift: Option<DriftSlot>,
        out: &mut [f64; LANES],
    ) {
        let dt = self.env.ambient - self.plan.reference;
        match drift {
            None => *out = *value,
            Some(d) => {
                let c = &self.values[d.slot.index()];
                for k in 0..LANES {
                    out[k] = if d.relative {
                        value[k] * (1.0 + c[k] * dt)
                    } else {
                        value[k] + c[k] * dt
                    };
                }
            }
        }
    }

    /// [`Plan::drifted`] in every lane.
    #[inline(always)]
    pub fn drifted(&self, value: &[f64; LANES], drift: Option<DriftSlot>) -> [f64; LANES] {
        let mut out = [0.0; LANES];
        self.drifted_into(value, drift, &mut out);
        out
    }

    /// [`Plan::sensed`] in every lane: the temperature the node senses.
    #[inline(always)]
    pub fn sensed(&self, senses: Senses) -> [f64; LANES] {
        let mut t = [0.0; LANES];
        self.sensed_into(self.i, senses, &mut t);
        t
    }

    /// [`Plan::sensed`] of node `n` in every lane, into `out`, term by
    /// term as a single run adds them (a term it lacks adds zero there
    /// too).
    #[inline(always)]
    pub fn sensed_into(&self, n: NodeId, senses: Senses, out: &mut [f64; LANES]) {
        let terms = self.plan.sense_terms(n, senses, self.env);
        let column = |s: SlotId| &self.values[s.index()];
        let (class, half_width) = terms.class.map_or((&ZEROS, 0.0), |(w, s)| (column(s), w));
        let absolute = self.or_zero(terms.absolute);
        let (of_reading, distance) = terms
            .of_reading
            .map_or((&ZEROS, 0.0), |(s, d)| (column(s), d));
        for (k, out) in out.iter_mut().enumerate() {
            *out = terms.t + class[k] * half_width + absolute[k] + of_reading[k] * distance;
        }
    }

    /// The current a current source drives into `input`, if it is one.
    #[inline(always)]
    pub fn current_into(&self, input: Option<NodeId>) -> Option<&[f64; LANES]> {
        input.and_then(|n| self.s[n.index()].of(Tag::Current))
    }

    /// `Run::element` in every lane, into `out`: a resistive element of
    /// `r` Ω.
    #[inline(always)]
    pub fn element_into(&self, r: &[f64; LANES], input: Option<NodeId>, out: &mut Column) {
        let Some(a) = self.current_into(input) else {
            out.tag = Tag::Element;
            out.x = *r;
            return;
        };
        // Each lane's sum of the drops below it, term by term in the single
        // run's order and from the value an empty sum starts at.
        let mut lift = [std::iter::empty::<f64>().sum::<f64>(); LANES];
        for &n in &self.plan.series_below[self.i.index()] {
            let below = &self.s[n.index()];
            let voltage = below.tag == Tag::Voltage;
            for (lift, &v) in lift.iter_mut().zip(&below.x) {
                *lift += if voltage { v } else { 0.0 };
            }
        }
        out.tag = Tag::Voltage;
        for k in 0..LANES {
            out.x[k] = a[k] * r[k];
            out.cm[k] = lift[k] + a[k] * r[k] / 2.0;
        }
        out.rs = *r;
    }
}

#[cfg(test)]
mod tests {
    use super::{Batch, LaneColumns, Lost};
    use crate::eval::plan::{Env, Plan, Signal};
    use crate::eval::run::{Mode, Reach, LANES, MAX_NODES};
    use crate::eval::wide;
    use crate::units::ZERO_CELSIUS_K;

    /// Each odd value alone in a column of ones, in every lane, against
    /// the class tests the checks stand for.
    #[test]
    fn column_checks_find_each_odd_value_in_any_lane() {
        let odd = [
            f64::NAN,
            -f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
            0.0,
            -0.0,
            -1.0,
            f64::MIN_POSITIVE / 4.0,
            f64::MAX,
            -f64::MAX,
        ];
        for value in odd {
            for k in 0..LANES {
                let mut c = [1.0; LANES];
                c[k] = value;
                let finite = value.is_finite();
                assert_eq!(super::all_finite(&c), finite, "{value} in lane {k}");
                let positive = finite && value > 0.0;
                assert_eq!(super::all_positive(&c), positive, "{value} in lane {k}");
            }
        }
        assert!(super::all_finite(&[-3.0; LANES]) && super::all_positive(&[3.0; LANES]));
    }

    /// The plan of the first chain of `spec`, up to its converter (a
    /// conversion need not fit: a divider's element above a current
    /// source changes no code).
    fn plan(spec: &str) -> Plan {
        crate::eval::lower_stages(&super::check::chain(spec))
            .expect("lowers")
            .0
    }

    /// Each lane's values, one lane after another: every slot moved from
    /// its nominal by its own fraction of its limit, up to half again
    /// beyond it, different in every lane and every `batch`.
    fn rows(plan: &Plan, batch: usize) -> Vec<f64> {
        let n = plan.slots.len();
        let mut rows = Vec::with_capacity(n * LANES);
        for k in 0..LANES {
            for (s, slot) in plan.slots.iter().enumerate() {
                let mix = (k * 7919 + s * 104_729 + batch * 1_299_709) % 1001;
                let u = mix as f64 / 1000.0 * 3.0 - 1.5;
                let limit = if u < 0.0 { slot.minus } else { slot.plus };
                rows.push(slot.nominal + u * limit);
            }
        }
        rows
    }

    const MODE: Mode = Mode {
        quantized: true,
        clip: true,
        calibrating: false,
        faulted: None,
        fault_pull: None,
    };

    /// A signal's values, to the bit.
    fn bits(s: Signal) -> (u8, [u64; 3], i64) {
        let b = |x: f64| x.to_bits();
        match s {
            Signal::None => (0, [0; 3], 0),
            Signal::Current(x) => (1, [b(x), 0, 0], 0),
            Signal::Source(x) => (2, [b(x), 0, 0], 0),
            Signal::Element(x) => (3, [b(x), 0, 0], 0),
            Signal::Voltage { v, cm, rs } => (4, [b(v), b(cm), b(rs)], 0),
            Signal::Code { exact, code } => (5, [b(exact), 0, 0], code),
            Signal::Reading(x) => (6, [b(x), 0, 0], 0),
        }
    }

    /// Runs the chain's electronics over a batch of `rows` both ways: one
    /// lane at a time and as columns. Where every lane evaluates, the
    /// columns hold each lane's signals to the bit; where one fails, the
    /// batch is lost. Returns how many lanes failed.
    fn compare(plan: &Plan, rows: &[f64], env: &Env) -> usize {
        let n = plan.slots.len();
        let reach = Reach::Electronics(plan.adc.index() + 1);
        let single: Vec<_> = (0..LANES)
            .map(|k| {
                let mut s = [Signal::None; MAX_NODES];
                plan.run(&rows[k * n..(k + 1) * n], env, &mut s, reach, MODE)
                    .map(|()| s)
            })
            .collect();
        let failed = single.iter().filter(|s| s.is_err()).count();
        // The kernels as this CPU runs them, then as built for the
        // baseline.
        for portable in [false, true] {
            let mut columns = LaneColumns::default();
            columns.load(&Batch::new(rows.to_vec()), n);
            let mut run = || plan.run_columns(rows, env, &mut columns, reach, MODE);
            let lanes = if portable { wide::portable(run) } else { run() };
            if failed > 0 {
                assert_eq!(lanes, Err(Lost), "a failing lane loses the batch");
                continue;
            }
            assert_eq!(lanes, Ok(()), "every lane evaluates, so the batch does");
            for (k, single) in single.iter().enumerate() {
                let single = single.as_ref().expect("evaluates");
                for i in plan.node_ids().take(plan.adc.index() + 1) {
                    let lane = columns.nodes[i.index()].signal(k);
                    assert_eq!(
                        bits(lane),
                        bits(single[i.index()]),
                        "lane {k}, node {}: {lane:?} vs {:?}",
                        plan.names[i.index()],
                        single[i.index()]
                    );
                }
            }
        }
        failed
    }

    /// [`compare`] over many batches and conditions across the range.
    fn compare_over_range(spec: &str) {
        let plan = plan(spec);
        let (lo, hi) = plan.range;
        for batch in 0..40 {
            let x = batch as f64 / 39.0;
            let env = Env {
                measurand: lo + (hi - lo) * x,
                ambient: ZERO_CELSIUS_K + 5.0 + 35.0 * (1.0 - x),
                cold_junction: ZERO_CELSIUS_K + 25.0,
            };
            assert_eq!(compare(&plan, &rows(&plan, batch), &env), 0);
        }
    }

    fn chain(stages: &str, wiring: &str) -> String {
        format!(
            "chain t {{\n    measurand temperature -20 degC .. 80 degC\n{stages}\n    amplifier front {{ gain 10 ± 0.1 % }}\n    adc conv {{\n        bits 24\n        input differential\n        vref 2.5 V\n    }}\n    convert reading {{ method exact }}\n{wiring}\n}}\n"
        )
    }

    const NTC: &str = "    sensor ntc {\n        thermistor\n        r25 10 kohm ± 1 %\n        beta 3435 K ± 1 %\n        dissipation 1.5 mW/K ± 20 %\n    }";

    fn pt100(name: &str) -> String {
        format!("    sensor {name} {{\n        rtd pt100\n        class A\n        wires 3\n        lead 1 ohm ± 0.3 ohm\n        dissipation 5 mW/K ± 20 %\n    }}")
    }

    #[test]
    fn a_heated_thermistor_divider_on_a_voltage_matches_the_single_run() {
        let stages = format!("    excitation rail {{ voltage 2.5 V ± 0.5 % }}\n{NTC}\n    bridge div {{\n        divider\n        r 10 kohm ± 0.1 % drift 25 ppm/K\n    }}");
        compare_over_range(&chain(
            &stages,
            "    rail -> div -> front -> conv -> reading\n    ntc -> div.arm",
        ));
    }

    #[test]
    fn a_heated_rtd_divider_on_a_current_matches_the_single_run() {
        for side in ["low", "high"] {
            let stages = format!("    excitation drive {{ current 1 mA ± 0.5 % }}\n{}\n    bridge div {{\n        divider\n        sensor {side}\n        r 100 ohm ± 0.1 %\n    }}", pt100("probe"));
            compare_over_range(&chain(
                &stages,
                "    drive -> div -> front -> conv -> reading\n    probe -> div.arm",
            ));
        }
    }

    #[test]
    fn heated_bridges_match_the_single_run() {
        let quarter = format!("    excitation supply {{ voltage 2 V ± 0.5 % }}\n{}\n    bridge b {{\n        quarter\n        r 100 ohm ± 0.1 % drift 10 ppm/K\n    }}", pt100("probe"));
        compare_over_range(&chain(
            &quarter,
            "    supply -> b -> front -> conv -> reading\n    probe -> b.arm",
        ));
        let half = format!("    excitation drive {{ current 2 mA ± 0.5 % }}\n{}\n{}\n    bridge b {{\n        half\n        r 100 ohm ± 0.1 %\n    }}", pt100("p1"), pt100("p2"));
        compare_over_range(&chain(
            &half,
            "    drive -> b -> front -> conv -> reading\n    p1 -> b.arm\n    p2 -> b.arm",
        ));
        let full = format!("    excitation supply {{ voltage 2 V ± 0.5 % }}\n{}\n{}\n{}\n{NTC}\n    bridge b {{ full }}", pt100("p1"), pt100("p2"), pt100("p3"));
        compare_over_range(&chain(&full, "    supply -> b -> front -> conv -> reading\n    p1 -> b.arm\n    p2 -> b.arm\n    p3 -> b.arm\n    ntc -> b.arm"));
    }

    /// A thermocouple's class tolerance, an RTD's stated tolerance and a
    /// semiconductor sensor's share of reading enter the sensed
    /// temperature column by column as in a single run.
    #[test]
    fn sensed_temperatures_match_the_single_run() {
        let couple = "    sensor tc {\n        thermocouple type K\n        class 2\n        bias_voltage 1.25 V ± 2 %\n        bias_resistor 10 kohm ± 1 %\n    }";
        compare_over_range(&chain(couple, "    tc -> front -> conv -> reading"));
        let pt = "    excitation drive { current 1 mA ± 0.5 % }\n    sensor probe {\n        rtd pt100\n        wires 4\n        tolerance ± 0.3 K\n    }";
        compare_over_range(&chain(pt, "    drive -> probe -> front -> conv -> reading"));
        let ic = "    sensor ic {\n        ic_voltage\n        slope 10 mV/K ± 0.5 %\n        output 750 mV at 25 degC\n        accuracy ± 1 % of reading\n    }";
        compare_over_range(&chain(ic, "    ic -> front -> conv -> reading"));
    }

    /// A lane whose dissipation constant is not positive has no
    /// self-heating: the single run fails there, and the batch is lost,
    /// in a divider and in a bridge.
    #[test]
    fn a_lane_without_self_heating_loses_the_batch() {
        let divider = format!("    excitation rail {{ voltage 2.5 V }}\n{NTC}\n    bridge div {{\n        divider\n        r 10 kohm\n    }}");
        let quarter = format!("    excitation supply {{ voltage 2 V }}\n{}\n    bridge b {{\n        quarter\n        r 100 ohm\n    }}", pt100("probe"));
        let specs = [
            chain(
                &divider,
                "    rail -> div -> front -> conv -> reading\n    ntc -> div.arm",
            ),
            chain(
                &quarter,
                "    supply -> b -> front -> conv -> reading\n    probe -> b.arm",
            ),
        ];
        for spec in &specs {
            let plan = plan(spec);
            let n = plan.slots.len();
            let dissipation = plan
                .slots
                .iter()
                .position(|s| s.id.as_str().ends_with("dissipation"))
                .expect("a dissipation constant");
            let mut rows = rows(&plan, 0);
            rows[3 * n + dissipation] = -1e-3;
            let env = Env {
                measurand: ZERO_CELSIUS_K + 20.0,
                ambient: ZERO_CELSIUS_K + 25.0,
                cold_junction: ZERO_CELSIUS_K + 25.0,
            };
            assert_eq!(compare(&plan, &rows, &env), 1);
        }
    }
}

/// What the column kernels' tests share: a plan from a spec, values spread
/// over the slots' limits, and a node's column checked against the
/// single-run evaluator lane by lane.
#[cfg(test)]
pub(super) mod check {
    use std::path::Path;

    use super::{Column, LaneRun, Lost};
    use crate::diagnostics::SourceFile;
    use crate::eval::plan::{Env, NodeId, Plan, Signal};
    use crate::eval::run::{Mode, LANES, MAX_NODES};
    use crate::model::{Chain, PartsCache};
    use crate::units::ZERO_CELSIUS_K;

    /// The first chain of `spec`, parsed and resolved without errors.
    pub fn chain(spec: &str) -> Chain {
        let file = SourceFile::new("t.catena", spec);
        let (ast, mut findings) = crate::syntax::parse(&file);
        let mut parts = PartsCache::default();
        let (chains, more) = crate::model::resolve(&file, &ast, Path::new("."), None, &mut parts);
        findings.extend(more);
        assert!(!findings.has_errors(), "{findings:?}");
        chains.into_iter().next().expect("a chain")
    }

    /// The plan of the first chain of `spec`.
    pub fn plan(spec: &str) -> Plan {
        crate::eval::lower(&chain(spec)).expect("lowers")
    }

    /// The conditions at `measurand_c` °C with the ambient, and the cold
    /// junction in it, at `ambient_c` °C.
    pub fn env_c(measurand_c: f64, ambient_c: f64) -> Env {
        Env {
            measurand: measurand_c + ZERO_CELSIUS_K,
            ambient: ambient_c + ZERO_CELSIUS_K,
            cold_junction: ambient_c + ZERO_CELSIUS_K,
        }
    }

    /// The node of stage `name`.
    pub fn node(plan: &Plan, name: &str) -> NodeId {
        let index = plan.names.iter().position(|n| n == name);
        NodeId::new(index.unwrap_or_else(|| panic!("no stage `{name}`")))
    }

    /// A run reading the exact code or the rounded one, as a calibration
    /// or not.
    pub fn mode(quantized: bool, calibrating: bool) -> Mode {
        Mode {
            quantized,
            clip: true,
            calibrating,
            faulted: None,
            fault_pull: None,
        }
    }

    /// Values for every lane, one lane after another: each slot's nominal
    /// moved by a share of its limits that differs from lane to lane and
    /// from slot to slot.
    pub fn spread(plan: &Plan) -> Vec<f64> {
        const SHARES: [f64; 8] = [0.0, 1.0, -1.0, 0.5, -0.3, 0.9, -0.7, 0.2];
        let mut rows = Vec::with_capacity(LANES * plan.slots.len());
        for k in 0..LANES {
            for (s, slot) in plan.slots.iter().enumerate() {
                let share = SHARES[(k + s) % SHARES.len()];
                let limit = if share < 0.0 { slot.minus } else { slot.plus };
                rows.push(plan.nominal[s] + share * limit);
            }
        }
        rows
    }

    /// `rows` with slot `slot` set to `value` in lane `lane`.
    pub fn with(plan: &Plan, mut rows: Vec<f64>, lane: usize, slot: &str, value: f64) -> Vec<f64> {
        let s = plan.slots.iter().position(|s| s.id.as_str() == slot);
        let s = s.unwrap_or_else(|| panic!("no slot `{slot}`"));
        rows[lane * plan.slots.len() + s] = value;
        rows
    }

    /// Node `i`'s column for the lanes' values `rows`, checked against the
    /// single-run evaluator: in every lane the same signal to the bit
    /// (Debug prints an f64 so that it reads back to the same bits), or
    /// `Lost` where some lane's run fails. The nodes before it are run one
    /// lane at a time and must not fail.
    pub fn matches_single_runs(
        plan: &Plan,
        i: NodeId,
        rows: &[f64],
        env: &Env,
        mode: Mode,
    ) -> Result<Column, Lost> {
        let n = plan.slots.len();
        let mut columns = [Column::default(); MAX_NODES];
        let mut single = Vec::with_capacity(LANES);
        for k in 0..LANES {
            let row = &rows[k * n..(k + 1) * n];
            let mut s = [Signal::None; MAX_NODES];
            for j in NodeId::all(i.index()) {
                let signal = plan.node(j, row, env, &s, mode, None);
                s[j.index()] = signal.expect("the nodes before it run");
                columns[j.index()]
                    .set(k, s[j.index()])
                    .expect("one kind of signal per node");
            }
            single.push(plan.node(i, row, env, &s, mode, None));
        }
        let values: Vec<[f64; LANES]> = (0..n)
            .map(|s| std::array::from_fn(|k| rows[k * n + s]))
            .collect();
        let run = LaneRun {
            plan,
            i,
            rows,
            values: &values,
            env,
            s: &columns[..i.index()],
            mode,
            junction_mv: None,
        };
        let mut column = Column::default();
        let got = plan.node_lanes(&run, &mut column).map(|()| column);
        if single.iter().any(Result::is_err) {
            assert_eq!(got.err(), Some(Lost), "a lane fails: the batch is lost");
            return Err(Lost);
        }
        let column = got.expect("every lane runs");
        for (k, want) in single.into_iter().enumerate() {
            let want = want.expect("checked above");
            let got = column.signal(k);
            assert_eq!(format!("{got:?}"), format!("{want:?}"), "lane {k}");
        }
        Ok(column)
    }
}
