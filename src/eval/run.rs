//! One evaluation: every node in order, each a pure function of its
//! inputs' signals, the parameter values and the environment.

use super::convert::{calibration_env, Calibrated, Calibration, Conversion, Firmware};
use super::lanes::{Batch, LaneColumns, LaneRun, Lost, RunKey, Tag};
use super::node;
use super::plan::{
    ClassTolerance, DriftSlot, Env, EvalError, Node, NodeId, Plan, Senses, Signal, SlotId,
};
use crate::model::typed::CombineOp;
use crate::physics::thermocouple;
use crate::units::ZERO_CELSIUS_K;

/// How a run's nodes evaluate: whether conversions see the rounded code or
/// the exact one, amplifiers clip, and a calibration reads the chain.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) struct Mode {
    pub(super) quantized: bool,
    /// Amplifiers clip at their swing and rail outside their common-mode
    /// range; off, they amplify linearly, to see how far a signal would go.
    pub(super) clip: bool,
    /// A calibration's reading of the chain: what depends on the direction
    /// of approach (hysteresis) is not the reading's.
    pub(super) calibrating: bool,
    /// A node under a fault: what it outputs is the fault's, so a bridge
    /// does not work its arm's self-heating out again from the curve.
    pub(super) faulted: Option<NodeId>,
    /// What the fault says drives the faulted node from the stage
    /// reading it (a trial current or resistor, when a help searches for
    /// one).
    pub(super) fault_pull: Option<super::fault::Pull>,
}

// The fault's pull is a stated or searched current or resistor, never
// NaN, so equality on the mode is an equivalence.
impl Eq for Mode {}

impl Mode {
    const FULL: Mode = Mode {
        quantized: true,
        clip: true,
        calibrating: false,
        faulted: None,
        fault_pull: None,
    };
    const CODES: Mode = Mode {
        quantized: true,
        clip: true,
        calibrating: false,
        faulted: None,
        fault_pull: None,
    };
    const RAW: Mode = Mode {
        quantized: true,
        clip: false,
        calibrating: false,
        faulted: None,
        fault_pull: None,
    };
    const CALIBRATION: Mode = Mode {
        quantized: true,
        clip: true,
        calibrating: true,
        faulted: None,
        fault_pull: None,
    };
    pub(super) const FAULT: Mode = Mode {
        quantized: true,
        clip: true,
        calibrating: false,
        faulted: None,
        fault_pull: None,
    };
    const UNQUANTIZED: Mode = Mode {
        quantized: false,
        clip: true,
        calibrating: false,
        faulted: None,
        fault_pull: None,
    };
}

/// Which nodes a run evaluates: the first so many.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum Reach {
    /// Every node, conversions included.
    All(usize),
    /// The chain's electronics, up to a converter's code: what the
    /// firmware models, so conversions (which invert that model) are left
    /// out.
    Electronics(usize),
}

impl Plan {
    /// The nodes of a run, in order.
    #[inline(always)]
    fn reach(&self, reach: Reach) -> impl Iterator<Item = NodeId> + '_ {
        let (until, conversions) = match reach {
            Reach::All(until) => (until, true),
            Reach::Electronics(until) => (until, false),
        };
        NodeId::all(until.min(self.nodes.len()))
            .filter(move |&i| conversions || !matches!(self.nodes[i.index()], Node::Convert(_)))
    }
}

/// The plan is the firmware model its conversions invert.
impl Firmware for Plan {
    fn reference(&self) -> f64 {
        self.reference
    }

    fn nominal(&self) -> &[f64] {
        &self.nominal
    }

    fn code(&self, values: &[f64], env: &Env, adc: NodeId) -> Result<f64, EvalError> {
        self.exact_code(values, env, adc)
    }

    fn calibration_code(&self, values: &[f64], env: &Env, adc: NodeId) -> Result<f64, EvalError> {
        Plan::calibration_code(self, values, env, adc)
    }

    fn numeric(&self, node: NodeId, what: &str) -> EvalError {
        Plan::numeric(self, node, what)
    }
}

/// Plans are small; a fixed bound keeps every evaluation on the stack.
pub const MAX_NODES: usize = 32;
/// Evaluations [`Plan::unquantized_readings_calibrated`] runs side by side.
pub const LANES: usize = 32;
/// The signals of [`LANES`] evaluations.
pub type LaneSignals = [[Signal; MAX_NODES]; LANES];

/// The signals of one evaluation, by node.
#[derive(Clone, Debug, PartialEq)]
pub struct Outcome {
    pub signals: Vec<Signal>,
}

impl Plan {
    /// Every node's signal in one run, on the stack.
    fn signals(
        &self,
        values: &[f64],
        env: &Env,
        reach: Reach,
        mode: Mode,
    ) -> Result<[Signal; MAX_NODES], EvalError> {
        let mut signals = [Signal::None; MAX_NODES];
        self.run(values, env, &mut signals, reach, mode)?;
        Ok(signals)
    }

    /// Evaluates every node, conversions included.
    pub fn evaluate(&self, values: &[f64], env: &Env) -> Result<Outcome, EvalError> {
        let signals = self.signals(values, env, Reach::All(self.nodes.len()), Mode::FULL)?;
        Ok(Outcome {
            signals: signals[..self.nodes.len()].to_vec(),
        })
    }

    /// Every node up to the converters' codes, conversions left out: what
    /// a plan whose conversion could not be fitted still shows.
    pub fn evaluate_codes(&self, values: &[f64], env: &Env) -> Result<Outcome, EvalError> {
        let signals = self.signals(
            values,
            env,
            Reach::Electronics(self.nodes.len()),
            Mode::CODES,
        )?;
        Ok(Outcome {
            signals: signals[..self.nodes.len()].to_vec(),
        })
    }

    /// The chain's reading at `env`, SI.
    pub fn reading(&self, values: &[f64], env: &Env) -> Result<f64, EvalError> {
        let mut signals = [Signal::None; MAX_NODES];
        self.run(
            values,
            env,
            &mut signals,
            Reach::All(self.reading.index() + 1),
            Mode::FULL,
        )?;
        match signals[self.reading.index()] {
            Signal::Reading(x) => Ok(x),
            _ => Err(self.numeric(self.reading, "no reading")),
        }
    }

    /// The unrounded code of `adc` with the given values: what the
    /// firmware's model of the chain predicts.
    pub fn exact_code(&self, values: &[f64], env: &Env, adc: NodeId) -> Result<f64, EvalError> {
        let mut signals = [Signal::None; MAX_NODES];
        self.run(
            values,
            env,
            &mut signals,
            Reach::Electronics(adc.index() + 1),
            Mode::CODES,
        )?;
        match signals[adc.index()] {
            Signal::Code { exact, .. } => Ok(exact),
            _ => Err(self.numeric(adc, "no code")),
        }
    }

    /// [`Plan::exact_code`] as a calibration reads it.
    pub(super) fn calibration_code(
        &self,
        values: &[f64],
        env: &Env,
        adc: NodeId,
    ) -> Result<f64, EvalError> {
        let mut signals = [Signal::None; MAX_NODES];
        self.run(
            values,
            env,
            &mut signals,
            Reach::Electronics(adc.index() + 1),
            Mode::CALIBRATION,
        )?;
        match signals[adc.index()] {
            Signal::Code { exact, .. } => Ok(exact),
            _ => Err(self.numeric(adc, "no code")),
        }
    }

    /// Runs the nodes `reach` covers.
    pub(super) fn run(
        &self,
        values: &[f64],
        env: &Env,
        signals: &mut [Signal; MAX_NODES],
        reach: Reach,
        mode: Mode,
    ) -> Result<(), EvalError> {
        for i in self.reach(reach) {
            let s = self.node(i, values, env, signals, mode, None)?;
            if !finite(s) {
                return Err(self.numeric(i, "a signal is not a finite number"));
            }
            signals[i.index()] = s;
        }
        Ok(())
    }

    /// A numerical failure at stage `node`: `what` went wrong there.
    pub fn numeric(&self, node: NodeId, what: &str) -> EvalError {
        EvalError::Numeric {
            stage: self.names[node.index()].clone(),
            what: what.to_string(),
        }
    }

    /// The temperature node `i` senses, as its own tolerance makes it
    /// read: the true one plus its class's (temperature-dependent) error
    /// and any stated absolute error. Whether the true temperature is
    /// inside the sensor's range of validity is the plan's question, asked
    /// once of the whole range (`lower::check_validity`), not of each
    /// shifted reading.
    pub(super) fn sensed(&self, i: NodeId, senses: Senses, env: &Env, values: &[f64]) -> f64 {
        let terms = self.sense_terms(i, senses, env);
        let class = terms
            .class
            .map(|(half_width, slot)| values[slot.index()] * half_width);
        let of_reading = terms
            .of_reading
            .map(|(s, distance)| values[s.index()] * distance);
        terms.t
            + class.unwrap_or(0.0)
            + terms.absolute.map(|s| values[s.index()]).unwrap_or(0.0)
            + of_reading.unwrap_or(0.0)
    }

    /// What node `i`'s sensed temperature is made of at a condition, the
    /// same in every run: the condition's temperature, and the slots of
    /// its stated errors with what scales each.
    #[inline(always)]
    pub(super) fn sense_terms(&self, i: NodeId, senses: Senses, env: &Env) -> SenseTerms {
        let t = match senses {
            Senses::Measurand => env.measurand,
            Senses::ColdJunction => env.cold_junction,
        };
        let error = &self.sense_error[i.index()];
        let class = error.class.map(|(class, slot)| {
            let t_c = t - ZERO_CELSIUS_K;
            let half_width = match class {
                ClassTolerance::Thermocouple(ty, c) => thermocouple::class_tolerance_k(ty, c, t_c),
            };
            (half_width.unwrap_or(0.0), slot)
        });
        SenseTerms {
            t,
            class,
            absolute: error.absolute,
            of_reading: error.of_reading.map(|(s, zero)| (s, (t - zero).abs())),
        }
    }

    pub(super) fn drifted(
        &self,
        value: f64,
        drift: Option<DriftSlot>,
        values: &[f64],
        env: &Env,
    ) -> f64 {
        match drift {
            None => value,
            Some(d) if d.relative => {
                value * (1.0 + values[d.slot.index()] * (env.ambient - self.reference))
            }
            Some(d) => value + values[d.slot.index()] * (env.ambient - self.reference),
        }
    }

    pub(super) fn out_of_range(
        &self,
        node: NodeId,
        what: &str,
        t_k: f64,
        range_c: (f64, f64),
    ) -> EvalError {
        EvalError::OutOfRange {
            stage: self.names[node.index()].clone(),
            what: what.to_string(),
            low: range_c.0 + ZERO_CELSIUS_K,
            high: range_c.1 + ZERO_CELSIUS_K,
            value: t_k,
            celsius: true,
        }
    }
}

/// By node, whether the measurand reaches it (see `Plan::measurand_free`):
/// not if it does not read the measurand itself, nor any node it reads.
pub(super) fn measurand_free(nodes: &[Node], series_below: &[Vec<NodeId>]) -> Vec<bool> {
    let mut free: Vec<bool> = Vec::with_capacity(nodes.len());
    for (i, node) in nodes.iter().enumerate() {
        let mut reads = node
            .inputs()
            .into_iter()
            .chain(series_below[i].iter().copied());
        // Inputs come first in the plan's order; one that does not would
        // be a plan this cannot vouch for.
        let inputs_free = reads.all(|n| n.index() < i && free[n.index()]);
        free.push(inputs_free && !node.reads_measurand());
    }
    free
}

/// Range ends written in °C come back through kelvin a few ulps off;
/// within a nanokelvin of an end counts as the end.
/// A sensed temperature's parts at one condition (see
/// [`Plan::sense_terms`]).
#[derive(Clone, Copy, Debug)]
pub(super) struct SenseTerms {
    /// The condition's temperature, K.
    pub t: f64,
    /// The class tolerance's half-width at `t`, K, and the slot of the
    /// share of it taken.
    pub class: Option<(f64, SlotId)>,
    /// An absolute error's slot.
    pub absolute: Option<SlotId>,
    /// A share-of-reading error's slot and the distance, K, from the
    /// reading's zero it is a share of.
    pub of_reading: Option<(SlotId, f64)>,
}

/// How far (°C) a temperature may lie beyond a curve's range and count as
/// at its end: rounding in the sums that lead to it.
pub(super) const WITHIN_SLACK: f64 = 1e-9;

pub(super) fn within(t_c: f64, (lo, hi): (f64, f64)) -> Option<f64> {
    (lo - WITHIN_SLACK..=hi + WITHIN_SLACK)
        .contains(&t_c)
        .then(|| t_c.clamp(lo, hi))
}

fn finite(s: Signal) -> bool {
    match s {
        Signal::None => true,
        Signal::Current(x) | Signal::Source(x) | Signal::Element(x) | Signal::Reading(x) => {
            x.is_finite()
        }
        Signal::Voltage { v, cm, rs } => v.is_finite() && cm.is_finite() && rs.is_finite(),
        Signal::Code { exact, .. } => exact.is_finite(),
    }
}

impl Plan {
    /// The main converter's input voltage and exact code: the chain's
    /// transfer at one point, for slopes.
    pub fn converter_input_and_code(
        &self,
        values: &[f64],
        env: &Env,
    ) -> Result<(f64, f64), EvalError> {
        let mut signals = [Signal::None; MAX_NODES];
        self.run(
            values,
            env,
            &mut signals,
            Reach::Electronics(self.adc.index() + 1),
            Mode::CODES,
        )?;
        let volts = |n: NodeId| match signals[n.index()] {
            Signal::Voltage { v, .. } => v,
            _ => 0.0,
        };
        let v = match &self.nodes[self.adc.index()] {
            // Channels added in the conversion: their inputs add as well.
            Node::Adc(node::Adc {
                input,
                combine: Some((CombineOp::Sum, others)),
                ..
            }) => others
                .iter()
                .fold(volts(*input), |acc, &o| match &self.nodes[o.index()] {
                    Node::Adc(node::Adc { input, .. }) => acc + volts(*input),
                    Node::Excitation(_)
                    | Node::Rtd(_)
                    | Node::Thermocouple(_)
                    | Node::Thermistor(_)
                    | Node::IcVoltage(_)
                    | Node::IcCurrent(_)
                    | Node::StrainGauge(_)
                    | Node::Transducer(_)
                    | Node::Resistor(_)
                    | Node::Bridge(_)
                    | Node::Amplifier(_)
                    | Node::Filter(_)
                    | Node::Convert(_) => acc,
                }),
            Node::Adc(node::Adc { input, .. }) => volts(*input),
            Node::Excitation(_)
            | Node::Rtd(_)
            | Node::Thermocouple(_)
            | Node::Thermistor(_)
            | Node::IcVoltage(_)
            | Node::IcCurrent(_)
            | Node::StrainGauge(_)
            | Node::Transducer(_)
            | Node::Resistor(_)
            | Node::Bridge(_)
            | Node::Amplifier(_)
            | Node::Filter(_)
            | Node::Convert(_) => 0.0,
        };
        match signals[self.adc.index()] {
            Signal::Code { exact, .. } => Ok((v, exact)),
            _ => Err(self.numeric(self.adc, "no code")),
        }
    }

    /// Every node but the conversions, with amplifiers unclipped: how far
    /// each signal would go, for the range checks.
    pub fn evaluate_raw(&self, values: &[f64], env: &Env) -> Result<Outcome, EvalError> {
        let signals = self.raw_signals(values, env)?;
        Ok(Outcome {
            signals: signals[..self.nodes.len()].to_vec(),
        })
    }

    /// [`Plan::evaluate_raw`] without allocating, for the analyses' loops.
    pub fn raw_signals(&self, values: &[f64], env: &Env) -> Result<[Signal; MAX_NODES], EvalError> {
        self.signals(values, env, Reach::Electronics(self.nodes.len()), Mode::RAW)
    }

    /// The reading the firmware would compute from the converter's exact
    /// (unrounded) code: the chain without quantization.
    pub fn unquantized_reading(&self, values: &[f64], env: &Env) -> Result<f64, EvalError> {
        let calibrated = self.calibration(values)?;
        self.unquantized_reading_calibrated(values, env, &calibrated)
    }

    /// What the main conversion's calibration saw with these values.
    pub fn calibration(&self, values: &[f64]) -> Result<Calibrated, EvalError> {
        self.main_conversion()?.calibrate(self, values)
    }

    /// [`Plan::unquantized_reading`] with the calibration already known
    /// (from [`Plan::calibration`] with the same values).
    pub fn unquantized_reading_calibrated(
        &self,
        values: &[f64],
        env: &Env,
        calibrated: &Calibrated,
    ) -> Result<f64, EvalError> {
        self.reading_codes_away(values, env, calibrated, 0.0)
    }

    /// The reading the firmware computes from the converter's exact code
    /// moved by `codes`: the chain's own inverse at the point, so a step of
    /// half a code either side is quantization's effect there, however
    /// nonlinear the chain.
    pub fn reading_codes_away(
        &self,
        values: &[f64],
        env: &Env,
        calibrated: &Calibrated,
        codes: f64,
    ) -> Result<f64, EvalError> {
        let mut signals = [Signal::None; MAX_NODES];
        self.run(
            values,
            env,
            &mut signals,
            Reach::All(self.reading.index()),
            Mode::UNQUANTIZED,
        )?;
        let Signal::Code { exact, .. } = signals[self.adc.index()] else {
            return Err(self.numeric(self.adc, "no code"));
        };
        let Node::Convert(node::Convert { cj, conversion, .. }) = &self.nodes[self.reading.index()]
        else {
            return Err(self.numeric(self.reading, "no conversion"));
        };
        let cj = cj.and_then(|n| match signals[n.index()] {
            Signal::Reading(t) => Some(t),
            _ => None,
        });
        let x = conversion.invert(self, values, env, exact + codes, cj)?;
        conversion.correct(self, x, calibrated)
    }

    /// [`Plan::unquantized_reading_calibrated`] for [`LANES`] sets of
    /// values at once (`batch` holds them one after another), each lane's
    /// calibration known, into `readings`.
    ///
    /// The nodes run one at a time across every lane rather than one lane
    /// through every node: each run is a long chain of dependent arithmetic
    /// that would keep the processor waiting, and independent lanes fill
    /// the wait. The arithmetic is the single-run code, lane by lane, so the
    /// readings are the same to the bit; on any error the lanes are redone
    /// one by one, so the error is the one a single run meets first.
    ///
    /// `scratch` holds the lanes' signals; it needs no clearing between
    /// calls (every node is written before it is read).
    pub fn unquantized_readings_calibrated(
        &self,
        batch: &Batch,
        env: &Env,
        calibrated: &[Calibrated; LANES],
        readings: &mut [f64; LANES],
        scratch: &mut LaneColumns,
    ) -> Result<(), EvalError> {
        let n = self.slots.len();
        if self
            .column_readings(batch, env, calibrated, readings, scratch)
            .is_err()
        {
            for (lane, reading) in readings.iter_mut().enumerate() {
                let values = &batch.rows()[lane * n..(lane + 1) * n];
                *reading = self.unquantized_reading_calibrated(values, env, &calibrated[lane])?;
            }
        }
        Ok(())
    }

    /// Every node but the conversions, amplifiers unclipped (as
    /// [`Plan::raw_signals`]), for [`LANES`] sets of values at once.
    pub fn raw_signals_lanes(
        &self,
        values: &[f64],
        env: &Env,
        scratch: &mut LaneSignals,
    ) -> Result<(), EvalError> {
        let n = self.slots.len();
        if self
            .run_lanes(
                values,
                env,
                scratch,
                Reach::Electronics(self.nodes.len()),
                Mode::RAW,
            )
            .is_err()
        {
            for (lane, signals) in scratch.iter_mut().enumerate() {
                *signals = self.raw_signals(&values[lane * n..(lane + 1) * n], env)?;
            }
        }
        Ok(())
    }

    /// The readings of a batch, column by column (see [`super::lanes`]),
    /// each lane's calibration `known`: the chain node by node across the
    /// lanes, then the conversion's inverse and correction.
    fn column_readings(
        &self,
        batch: &Batch,
        env: &Env,
        known: &[Calibrated; LANES],
        readings: &mut [f64; LANES],
        columns: &mut LaneColumns,
    ) -> Result<(), Lost> {
        super::wide::run(
            #[inline(always)]
            || self.column_readings_kernel(batch, env, known, readings, columns),
        )
    }

    #[inline(always)]
    fn column_readings_kernel(
        &self,
        batch: &Batch,
        env: &Env,
        known: &[Calibrated; LANES],
        readings: &mut [f64; LANES],
        columns: &mut LaneColumns,
    ) -> Result<(), Lost> {
        let n = self.slots.len();
        columns.load(batch, n);
        let values = batch.rows();
        let lane = |k: usize| &values[k * n..(k + 1) * n];
        let conversion = self.main_conversion().map_err(|_| Lost)?;
        self.run_columns(
            values,
            env,
            columns,
            Reach::All(self.reading.index()),
            Mode::UNQUANTIZED,
        )?;
        let Node::Convert(node::Convert { cj, .. }) = &self.nodes[self.reading.index()] else {
            return Err(Lost);
        };
        let exact = *columns.nodes[self.adc.index()].of(Tag::Code).ok_or(Lost)?;
        let cj = cj.and_then(|c| columns.nodes[c.index()].of(Tag::Reading));
        *readings = exact;
        let answered = conversion.direct_lanes(lane, env, readings, cj, &mut columns.junction_emfs);
        if answered.contains(&false) {
            for (k, x) in readings.iter_mut().enumerate() {
                if !answered[k] {
                    let cj = cj.map(|t| t[k]);
                    *x = conversion
                        .invert(self, lane(k), env, exact[k], cj)
                        .map_err(|_| Lost)?;
                }
            }
        }
        conversion.correct_lanes(self, readings, known)
    }

    /// The calibration's exact codes, lane by lane, point by point (none
    /// without a calibration). `columns` holds the batch's values.
    #[inline(always)]
    fn calibration_codes_lanes(
        &self,
        conversion: &Conversion,
        values: &[f64],
        columns: &mut LaneColumns,
    ) -> Result<[[f64; 2]; LANES], Lost> {
        let mut codes = [[0.0; 2]; LANES];
        for (j, p) in conversion.calibration_points().enumerate() {
            self.run_columns(
                values,
                &calibration_env(self, p),
                columns,
                Reach::Electronics(self.adc.index() + 1),
                Mode::CALIBRATION,
            )?;
            let exact = columns.nodes[self.adc.index()].of(Tag::Code).ok_or(Lost)?;
            for (lane_codes, &exact) in codes.iter_mut().zip(exact) {
                lane_codes[j] = exact;
            }
        }
        Ok(codes)
    }

    /// [`Plan::calibration`] of each of the first `count` lanes of a
    /// batch (`batch`, lane after lane) into `out`: a full batch through
    /// the columns, else, or where a lane fails there, lane by lane, so
    /// the error is the one a single run meets first.
    pub fn calibrations(
        &self,
        batch: &Batch,
        count: usize,
        out: &mut [Calibrated; LANES],
        scratch: &mut LaneColumns,
    ) -> Result<(), EvalError> {
        if count == LANES && self.column_calibrations(batch, out, scratch).is_ok() {
            return Ok(());
        }
        let (n, values) = (self.slots.len(), batch.rows());
        for (lane, out) in out.iter_mut().enumerate().take(count) {
            *out = self.calibration(&values[lane * n..(lane + 1) * n])?;
        }
        Ok(())
    }

    fn column_calibrations(
        &self,
        batch: &Batch,
        out: &mut [Calibrated; LANES],
        columns: &mut LaneColumns,
    ) -> Result<(), Lost> {
        let conversion = self.main_conversion().map_err(|_| Lost)?;
        if conversion.calibration == Calibration::None {
            *out = [Calibrated::None; LANES];
            return Ok(());
        }
        let n = self.slots.len();
        columns.load(batch, n);
        let values = batch.rows();
        let codes = super::wide::run(
            #[inline(always)]
            || self.calibration_codes_lanes(conversion, values, columns),
        )?;
        for (lane, (out, codes)) in out.iter_mut().zip(&codes).enumerate() {
            let values = &values[lane * n..(lane + 1) * n];
            *out = conversion
                .calibrated_from(self, values, codes)
                .map_err(|_| Lost)?;
        }
        Ok(())
    }

    /// [`Plan::run`] for every lane, node by node, each node's signals a
    /// column.
    pub(super) fn run_columns(
        &self,
        values: &[f64],
        env: &Env,
        columns: &mut LaneColumns,
        reach: Reach,
        mode: Mode,
    ) -> Result<(), Lost> {
        let key = RunKey::of(env, reach, mode);
        let keep = columns.last.take() == Some(key);
        let LaneColumns {
            nodes,
            values: slots,
            last,
            junction_mv: kept_junction,
            ..
        } = columns;
        for i in self.reach(reach) {
            if keep && self.measurand_free[i.index()] {
                continue;
            }
            let (before, after) = nodes.split_at_mut(i.index());
            let run = LaneRun {
                plan: self,
                i,
                rows: values,
                values: slots,
                env,
                s: before,
                mode,
                junction_mv: self.junction_mv_kept(i, env, kept_junction),
            };
            self.finite_node_lanes(&run, &mut after[0])?;
        }
        *last = Some(key);
        Ok(())
    }

    /// [`Plan::junction_mv`], kept in `kept` from one condition to the
    /// next with the same cold junction (a polynomial and an exponential
    /// a batch and point otherwise).
    fn junction_mv_kept(
        &self,
        i: NodeId,
        env: &Env,
        kept: &mut Option<(NodeId, u64, Option<f64>)>,
    ) -> Option<f64> {
        let junction = env.cold_junction.to_bits();
        if let Some((node, bits, mv)) = *kept {
            if node == i && bits == junction {
                return mv;
            }
        }
        let mv = self.junction_mv(i, env);
        if mv.is_some() {
            *kept = Some((i, junction, mv));
        }
        mv
    }

    /// What depends on the condition alone, worked out once for all
    /// lanes: a thermocouple's EMF at the (actual) cold junction.
    fn junction_mv(&self, i: NodeId, env: &Env) -> Option<f64> {
        match self.nodes[i.index()] {
            Node::Thermocouple(node::Thermocouple { ty, .. }) => {
                thermocouple::emf_mv(ty, super::node::junction_c(ty, env)).ok()
            }
            Node::Excitation(_)
            | Node::Rtd(_)
            | Node::Thermistor(_)
            | Node::IcVoltage(_)
            | Node::IcCurrent(_)
            | Node::StrainGauge(_)
            | Node::Transducer(_)
            | Node::Resistor(_)
            | Node::Bridge(_)
            | Node::Amplifier(_)
            | Node::Filter(_)
            | Node::Adc(_)
            | Node::Convert(_) => None,
        }
    }

    /// [`Plan::run`] for every lane, node by node.
    fn run_lanes(
        &self,
        values: &[f64],
        env: &Env,
        signals: &mut [[Signal; MAX_NODES]; LANES],
        reach: Reach,
        mode: Mode,
    ) -> Result<(), EvalError> {
        let n = self.slots.len();
        for i in self.reach(reach) {
            let junction_mv = self.junction_mv(i, env);
            for (k, lane) in signals.iter_mut().enumerate() {
                let s = self.node(i, &values[k * n..(k + 1) * n], env, lane, mode, junction_mv)?;
                if !finite(s) {
                    return Err(self.numeric(i, "a signal is not a finite number"));
                }
                lane[i.index()] = s;
            }
        }
        Ok(())
    }

    fn main_conversion(&self) -> Result<&Conversion, EvalError> {
        match &self.nodes[self.reading.index()] {
            Node::Convert(node::Convert { conversion, .. }) => Ok(conversion),
            Node::Excitation(_)
            | Node::Rtd(_)
            | Node::Thermocouple(_)
            | Node::Thermistor(_)
            | Node::IcVoltage(_)
            | Node::IcCurrent(_)
            | Node::StrainGauge(_)
            | Node::Transducer(_)
            | Node::Resistor(_)
            | Node::Bridge(_)
            | Node::Amplifier(_)
            | Node::Filter(_)
            | Node::Adc(_) => Err(self.numeric(self.reading, "no conversion")),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::super::element::self_heated;
    use crate::physics::{rtd, thermistor};

    /// The fixed point by plain iteration, far past convergence.
    fn settled(at: impl Fn(f64) -> f64, cold: f64) -> f64 {
        (0..200).fold(cold, |r, _| at(r))
    }

    #[test]
    fn self_heating_matches_the_settled_fixed_point() {
        // A Pt100 at 1 mA and 0.5 mW/K heats by 0.2 K; a 10 kΩ thermistor
        // (β 3950) at 100 µA and 1 mW/K by 0.1 K; the same at 10 µA/mW/K
        // scales show the extrapolation does no harm when nothing heats.
        let cvd = rtd::CvdCoefficients::IEC_60751;
        for (amps, delta) in [(1e-3, 5e-4), (3e-3, 5e-4), (1e-6, 5e-4)] {
            let at = |r: f64| rtd::resistance(100.0, cvd, 20.0 + amps * amps / delta * r);
            let want = settled(at, at(0.0));
            let got = self_heated(rtd::resistance(100.0, cvd, 20.0), false, |r| {
                Ok::<_, ()>(at(r))
            });
            let got = got.unwrap();
            assert!((got - want).abs() < 1e-10, "{amps} A: {got} vs {want}");
        }
        let t = 298.15;
        for (amps, delta) in [(1e-4, 1e-3), (3e-4, 1e-3)] {
            let at = |r: f64| {
                thermistor::beta_resistance(1e4, 298.15, 3950.0, t + amps * amps / delta * r)
                    .unwrap()
            };
            let want = settled(at, at(0.0));
            let got = self_heated(at(0.0), true, |r| Ok::<_, ()>(at(r))).unwrap();
            assert!(
                (got - want).abs() < 1e-8 * want,
                "{amps} A: {got} vs {want}"
            );
        }
    }
}
