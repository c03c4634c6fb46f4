//! One file per node kind: each holds the kind's node (what the plan keeps
//! of it), its lowering from the typed model ([`Cx`] gives it slots and
//! its wired inputs) and its evaluation in one run ([`Run`]). The plan
//! calls them through [`lower`] and [`Plan::node`], two exhaustive matches.

mod adc;
mod amplifier;
mod bridge;
mod convert;
mod excitation;
mod filter;
mod ic_current;
mod ic_voltage;
mod resistor;
mod rtd;
mod strain_gauge;
mod thermistor;
mod thermocouple;
mod transducer;

pub use adc::{Adc, AdcOffset};
pub use amplifier::{AmpReference, Amplifier};
pub use bridge::{Bridge, BridgeKind};
pub use convert::Convert;
pub use excitation::Excitation;
pub use filter::Filter;
pub use ic_current::IcCurrent;
pub use ic_voltage::IcVoltage;
pub use resistor::Resistor;
pub use rtd::{Rtd, RtdCurve};
pub use strain_gauge::StrainGauge;
pub use thermistor::{Thermistor, ThermistorCurve};
pub(super) use thermocouple::junction_c;
pub use thermocouple::Thermocouple;
pub use transducer::Transducer;

use super::fault::{Fault, FaultKind, Faulted, OPEN_OHMS, SHORT_OHMS};
use super::lanes::{Column, LaneRun, Lost};
use super::plan::{
    DriftSlot, Env, EvalError, NodeId, Plan, SenseError, Senses, Signal, Slot, SlotId, SourceKind,
    SourceName,
};
use super::run::{Mode, MAX_NODES};
use crate::model::typed::{CombineOp, StageModel};
use crate::model::value::{Basis, Measure, Tolerance};
use crate::model::Measurand;

/// A stage in the plan.
#[derive(Clone, Debug, PartialEq)]
pub enum Node {
    Excitation(Excitation),
    Rtd(Rtd),
    Thermocouple(Thermocouple),
    Thermistor(Thermistor),
    IcVoltage(IcVoltage),
    IcCurrent(IcCurrent),
    StrainGauge(StrainGauge),
    Transducer(Transducer),
    Resistor(Resistor),
    Bridge(Bridge),
    Amplifier(Amplifier),
    Filter(Filter),
    Adc(Adc),
    Convert(Convert),
}

/// The node of a stage's typed model.
pub(super) fn lower(model: &StageModel, cx: &mut Cx<'_>) -> Result<Node, EvalError> {
    Ok(match model {
        StageModel::Excitation(m) => Node::Excitation(excitation::lower(m, cx)?),
        StageModel::Rtd(m) => Node::Rtd(rtd::lower(m, cx)?),
        StageModel::Thermocouple(m) => Node::Thermocouple(thermocouple::lower(m, cx)?),
        StageModel::Thermistor(m) => Node::Thermistor(thermistor::lower(m, cx)?),
        StageModel::IcVoltage(m) => Node::IcVoltage(ic_voltage::lower(m, cx)?),
        StageModel::IcCurrent(m) => Node::IcCurrent(ic_current::lower(m, cx)?),
        StageModel::StrainGauge(m) => Node::StrainGauge(strain_gauge::lower(m, cx)?),
        StageModel::Transducer(m) => Node::Transducer(transducer::lower(m, cx)?),
        StageModel::Resistor(m) => Node::Resistor(resistor::lower(m, cx)?),
        StageModel::Bridge(m) => Node::Bridge(bridge::lower(m, cx)?),
        StageModel::Amplifier(m) => Node::Amplifier(amplifier::lower(m, cx)?),
        StageModel::Filter(m) => Node::Filter(filter::lower(m, cx)?),
        StageModel::Adc(m) => Node::Adc(adc::lower(m, cx)?),
        StageModel::Convert(m) => Node::Convert(convert::lower(m, cx)?),
    })
}

impl Node {
    /// The faults this kind of node can have, as its own file declares.
    pub fn faults(&self) -> &'static [FaultKind] {
        match self {
            Node::Excitation(n) => n.faults(),
            Node::Rtd(n) => n.faults(),
            Node::Thermocouple(_) => thermocouple::FAULTS,
            Node::Thermistor(_) => thermistor::FAULTS,
            Node::IcVoltage(_) => ic_voltage::FAULTS,
            Node::IcCurrent(_) => ic_current::FAULTS,
            Node::StrainGauge(_) => strain_gauge::FAULTS,
            Node::Transducer(n) => n.faults(),
            Node::Resistor(_) => resistor::FAULTS,
            Node::Bridge(n) => n.faults(),
            Node::Amplifier(_) => amplifier::FAULTS,
            Node::Filter(_) => filter::FAULTS,
            Node::Adc(n) => n.faults(),
            Node::Convert(_) => convert::FAULTS,
        }
    }

    /// The nodes this one reads, every port.
    pub fn inputs(&self) -> Vec<NodeId> {
        let stage = |r: Option<AmpReference>| match r {
            Some(AmpReference::Stage(n)) => Some(n),
            Some(AmpReference::Stated { .. }) | None => None,
        };
        match self {
            Node::Excitation(_) | Node::Thermocouple(_) => Vec::new(),
            Node::IcVoltage(n) => n.input.into_iter().collect(),
            Node::IcCurrent(n) => n.input.into_iter().collect(),
            Node::Rtd(n) => n.input.into_iter().collect(),
            Node::Thermistor(n) => n.input.into_iter().collect(),
            Node::Resistor(n) => n.input.into_iter().collect(),
            Node::StrainGauge(n) => n.input.into_iter().collect(),
            Node::Transducer(n) => n.input.into_iter().collect(),
            Node::Bridge(n) => std::iter::once(n.exc)
                .chain(n.arms.iter().copied())
                .collect(),
            Node::Amplifier(n) => std::iter::once(n.input).chain(stage(n.reference)).collect(),
            Node::Filter(n) => vec![n.input],
            Node::Adc(n) => std::iter::once(n.input)
                .chain(n.reference)
                .chain(
                    n.combine
                        .iter()
                        .flat_map(|(_, others)| others.iter().copied()),
                )
                .collect(),
            Node::Convert(n) => std::iter::once(n.input).chain(n.cj).collect(),
        }
    }

    /// Whether the node's own signal depends on the measured quantity
    /// (not through its inputs): a sensor of it, or the conversion of it.
    /// A cold junction's conversion reads its firmware model at the
    /// condition's measurand, but that model's code comes from the stages
    /// before its converter, which its input already answers for.
    pub(super) fn reads_measurand(&self) -> bool {
        match self {
            Node::Convert(n) => n.conversion.variable == Senses::Measurand,
            Node::Thermocouple(_) | Node::StrainGauge(_) | Node::Transducer(_) => true,
            Node::Rtd(_)
            | Node::Thermistor(_)
            | Node::IcVoltage(_)
            | Node::IcCurrent(_)
            | Node::Excitation(_)
            | Node::Resistor(_)
            | Node::Bridge(_)
            | Node::Amplifier(_)
            | Node::Filter(_)
            | Node::Adc(_) => self.senses() == Some(Senses::Measurand),
        }
    }

    /// The temperature a temperature sensor's own signal follows (the
    /// measurand, or a cold junction); None for any other stage.
    pub fn senses(&self) -> Option<Senses> {
        match self {
            Node::Rtd(n) => Some(n.senses),
            Node::Thermistor(n) => Some(n.senses),
            Node::IcVoltage(n) => Some(n.senses),
            Node::IcCurrent(n) => Some(n.senses),
            Node::Excitation(_)
            | Node::Thermocouple(_)
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

    /// The converter this node is, if it is one.
    pub fn as_adc(&self) -> Option<&Adc> {
        match self {
            Node::Adc(n) => Some(n),
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
            | Node::Convert(_) => None,
        }
    }

    /// What drives a resistive element (a current source, or nothing for
    /// an arm of a bridge or divider); None for another kind.
    pub fn element_input(&self) -> Option<NodeId> {
        match self {
            Node::Rtd(n) => n.input,
            Node::Thermistor(n) => n.input,
            Node::Resistor(n) => n.input,
            Node::StrainGauge(n) => n.input,
            Node::Excitation(_)
            | Node::Thermocouple(_)
            | Node::IcVoltage(_)
            | Node::IcCurrent(_)
            | Node::Transducer(_)
            | Node::Bridge(_)
            | Node::Amplifier(_)
            | Node::Filter(_)
            | Node::Adc(_)
            | Node::Convert(_) => None,
        }
    }
}

impl Plan {
    /// Node `i`'s signal in a run with `fault` somewhere in the chain:
    /// its own fault when `here` is it, else what it makes of its faulted
    /// inputs (a converter then reads without a reference too).
    #[allow(clippy::too_many_arguments)]
    pub(super) fn faulted_node(
        &self,
        i: NodeId,
        values: &[f64],
        env: &Env,
        s: &[Signal; MAX_NODES],
        mode: Mode,
        here: Option<&Fault>,
    ) -> Result<Faulted, EvalError> {
        let run = Run {
            plan: self,
            i,
            values,
            env,
            s,
            mode,
            junction_mv: None,
        };
        let Some(fault) = here else {
            return match &self.nodes[i.index()] {
                Node::Adc(n) => n.faulted(&run, None),
                Node::IcVoltage(n) => n.behind(&run),
                Node::IcCurrent(n) => n.behind(&run),
                Node::Excitation(_)
                | Node::Rtd(_)
                | Node::Thermocouple(_)
                | Node::Thermistor(_)
                | Node::StrainGauge(_)
                | Node::Transducer(_)
                | Node::Resistor(_)
                | Node::Bridge(_)
                | Node::Amplifier(_)
                | Node::Filter(_)
                | Node::Convert(_) => self
                    .node(i, values, env, s, mode, None)
                    .map(Faulted::Signal),
            };
        };
        let kind = fault.kind;
        match &self.nodes[i.index()] {
            Node::Excitation(n) => n.faulted(&run, kind),
            Node::Rtd(n) => n.faulted(&run, fault),
            Node::Thermocouple(n) => n.faulted(&run, fault),
            Node::Thermistor(n) => n.faulted(&run, kind),
            Node::IcVoltage(n) => n.faulted(&run, kind),
            Node::IcCurrent(n) => n.faulted(&run, kind),
            Node::StrainGauge(n) => n.faulted(&run, kind),
            Node::Resistor(n) => n.faulted(&run, kind),
            Node::Transducer(n) => n.faulted(&run, fault),
            Node::Bridge(n) => n.faulted(&run, kind),
            Node::Amplifier(n) => n.faulted(&run, fault),
            Node::Adc(n) => n.faulted(&run, Some(fault)),
            // Kinds that declare no fault of their own.
            Node::Filter(_) | Node::Convert(_) => Err(run.numeric(kind.describe())),
        }
    }

    /// Converter `i`'s own code under `here` (its fault, if it is the
    /// faulted node), before a conversion combines it with other
    /// channels': `s` holds the faulted run's signals up to it.
    pub(super) fn faulted_own_code(
        &self,
        i: NodeId,
        values: &[f64],
        env: &Env,
        s: &[Signal; MAX_NODES],
        mode: Mode,
        here: Option<&Fault>,
    ) -> Result<Faulted, EvalError> {
        let run = Run {
            plan: self,
            i,
            values,
            env,
            s,
            mode,
            junction_mv: None,
        };
        match &self.nodes[i.index()] {
            Node::Adc(n) => n.faulted_own(&run, here),
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
            | Node::Convert(_) => Err(run.numeric("not a converter")),
        }
    }

    /// Whether source `i` drives elements in a string of its own (each
    /// wired to it as its `in`).
    fn drives_elements(&self, i: NodeId) -> bool {
        self.nodes.iter().any(|n| n.element_input() == Some(i))
    }

    /// Whether source `i` excites a bridge or divider.
    fn excites_bridge(&self, i: NodeId) -> bool {
        self.nodes.iter().any(|n| {
            let Node::Bridge(b) = n else { return false };
            b.exc == i
        })
    }

    /// The resistance, Ω, of the elements current source `i` drives, as
    /// their own nodes give it at a test current small enough to heat
    /// nothing (1 nA: picowatts in any element).
    fn load_resistance(
        &self,
        i: NodeId,
        values: &[f64],
        env: &Env,
        s: &[Signal; MAX_NODES],
    ) -> Result<f64, EvalError> {
        const TEST_AMPS: f64 = 1e-9;
        let mut test = *s;
        test[i.index()] = Signal::Current(TEST_AMPS);
        let mut volts = 0.0;
        for j in NodeId::all(self.nodes.len())
            .filter(|&j| self.nodes[j.index()].element_input() == Some(i))
        {
            if let Signal::Voltage { v, .. } =
                self.node(j, values, env, &test, Mode::FAULT, None)?
            {
                volts += v;
            }
        }
        if volts > 0.0 {
            Ok(volts / TEST_AMPS)
        } else {
            Err(self.numeric(i, "no load on the current source"))
        }
    }

    /// A current source's compliance, V: an excitation's stated one, or
    /// for a current-output sensor the supply it is wired to (with no
    /// load it saturates toward it); None for another node or one that
    /// states none.
    fn compliance(&self, i: NodeId, s: &[Signal; MAX_NODES]) -> Option<f64> {
        match &self.nodes[i.index()] {
            Node::Excitation(e) if e.current => e.compliance,
            Node::IcCurrent(n) => match n.input.map(|supply| s[supply.index()]) {
                Some(Signal::Source(v)) if v > 0.0 => Some(v),
                _ => None,
            },
            Node::Excitation(_)
            | Node::Rtd(_)
            | Node::Thermocouple(_)
            | Node::Thermistor(_)
            | Node::IcVoltage(_)
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

    /// Node `i`'s signal in one run.
    #[inline(always)]
    pub(super) fn node(
        &self,
        i: NodeId,
        values: &[f64],
        env: &Env,
        s: &[Signal; MAX_NODES],
        mode: Mode,
        junction_mv: Option<f64>,
    ) -> Result<Signal, EvalError> {
        let run = Run {
            plan: self,
            i,
            values,
            env,
            s,
            mode,
            junction_mv,
        };
        match &self.nodes[i.index()] {
            Node::Excitation(n) => n.eval(&run),
            Node::Rtd(n) => n.eval(&run),
            Node::Thermocouple(n) => n.eval(&run),
            Node::Thermistor(n) => n.eval(&run),
            Node::IcVoltage(n) => n.eval(&run),
            Node::IcCurrent(n) => n.eval(&run),
            Node::StrainGauge(n) => n.eval(&run),
            Node::Transducer(n) => n.eval(&run),
            Node::Resistor(n) => n.eval(&run),
            Node::Bridge(n) => n.eval(&run),
            Node::Amplifier(n) => n.eval(&run),
            Node::Filter(n) => n.eval(&run),
            Node::Adc(n) => n.eval(&run),
            Node::Convert(n) => n.eval(&run),
        }
    }
}

impl Plan {
    /// [`Plan::finite_node_lanes`] without the test of finiteness: what
    /// the lane tests hold to the single-run evaluator's node, which
    /// makes no such test.
    #[cfg(test)]
    pub(in crate::eval) fn node_lanes(
        &self,
        run: &LaneRun<'_>,
        out: &mut Column,
    ) -> Result<(), Lost> {
        super::wide::run(
            #[inline(always)]
            || self.kernel_lanes(run, out),
        )
    }

    /// Node `i`'s column in a batch, into `out`: one match per batch, then
    /// the kind's loop over the lanes. Written in place, as a column is a
    /// kilobyte at 32 lanes and each move of one a call to `memcpy`. Lost
    /// where a lane's signal is not a finite number, as a run of the chain
    /// needs: tested in the kernel's build for the vector unit, not after
    /// it in the baseline's.
    pub(in crate::eval) fn finite_node_lanes(
        &self,
        run: &LaneRun<'_>,
        out: &mut Column,
    ) -> Result<(), Lost> {
        super::wide::run(
            #[inline(always)]
            || {
                self.kernel_lanes(run, out)?;
                out.finite().then_some(()).ok_or(Lost)
            },
        )
    }

    /// The match and the kind's loop, built for each vector width.
    #[inline(always)]
    fn kernel_lanes(&self, run: &LaneRun<'_>, out: &mut Column) -> Result<(), Lost> {
        match &self.nodes[run.i.index()] {
            Node::Excitation(n) => n.eval_lanes(run, out),
            Node::Rtd(n) => n.eval_lanes(run, out),
            Node::Thermocouple(n) => n.eval_lanes(run, out),
            Node::Thermistor(n) => n.eval_lanes(run, out),
            Node::Resistor(n) => n.eval_lanes(run, out),
            Node::Amplifier(n) => n.eval_lanes(run, out),
            Node::Filter(n) => n.eval_lanes(run, out),
            Node::Adc(n) => n.eval_lanes(run, out),
            Node::Bridge(n) => n.eval_lanes(run, out),
            Node::IcVoltage(n) => n.eval_lanes(run, out),
            Node::IcCurrent(n) => n.eval_lanes(run, out),
            Node::StrainGauge(n) => n.eval_lanes(run, out),
            Node::Transducer(n) => n.eval_lanes(run, out),
            Node::Convert(n) => n.eval_lanes(run, out),
        }
    }
}

/// One node's view of a run: the plan, the values, the conditions and
/// the signals of the nodes before it.
pub(super) struct Run<'a> {
    pub plan: &'a Plan,
    pub i: NodeId,
    pub values: &'a [f64],
    pub env: &'a Env,
    pub s: &'a [Signal; MAX_NODES],
    pub mode: Mode,
    /// A thermocouple's EMF at the cold junction, when the caller worked
    /// it out once for many runs.
    pub junction_mv: Option<f64>,
}

impl Run<'_> {
    #[inline(always)]
    fn or_zero(&self, slot: Option<SlotId>) -> f64 {
        slot.map(|s| self.values[s.index()]).unwrap_or(0.0)
    }

    #[inline(always)]
    fn drifted(&self, value: f64, drift: Option<DriftSlot>) -> f64 {
        self.plan.drifted(value, drift, self.values, self.env)
    }

    #[inline(always)]
    fn sensed(&self, senses: Senses) -> f64 {
        self.plan.sensed(self.i, senses, self.env, self.values)
    }

    fn numeric(&self, what: &str) -> EvalError {
        self.plan.numeric(self.i, what)
    }

    /// The current a current source drives into `input`, if it is one.
    #[inline(always)]
    fn current_into(&self, input: Option<NodeId>) -> Option<f64> {
        match input.map(|n| self.s[n.index()]) {
            Some(Signal::Current(a)) => Some(a),
            _ => None,
        }
    }

    /// A resistive element of `r` Ω: the voltage across it on a current
    /// source (its common mode lifted by the elements below it in a
    /// series string), else an element for a bridge arm.
    #[inline(always)]
    fn element(&self, r: f64, input: Option<NodeId>) -> Signal {
        match self.current_into(input) {
            Some(a) => {
                let lift: f64 = self.plan.series_below[self.i.index()]
                    .iter()
                    .map(|&n| match self.s[n.index()] {
                        Signal::Voltage { v, .. } => v,
                        _ => 0.0,
                    })
                    .sum();
                Signal::Voltage {
                    v: a * r,
                    cm: lift + a * r / 2.0,
                    rs: r,
                }
            }
            None => Signal::Element(r),
        }
    }
}

impl Run<'_> {
    /// A resistive element open or shorted, with `lead` Ω of wiring still
    /// in the measurement. Open on a current source, the source runs to
    /// its compliance (the rest of its string carries nothing); open in a
    /// bridge or divider, the arm is an insulator.
    fn element_fault(
        &self,
        kind: FaultKind,
        input: Option<NodeId>,
        lead: f64,
    ) -> Result<Faulted, EvalError> {
        Ok(match (kind, self.current_into(input)) {
            (FaultKind::Short, _) => Faulted::Signal(self.element(SHORT_OHMS + lead, input)),
            (FaultKind::Open, None) => Faulted::Signal(Signal::Element(OPEN_OHMS)),
            (FaultKind::Open, Some(_)) => match input.and_then(|n| self.plan.compliance(n, self.s))
            {
                // The saturated source holds the node: no source resistance.
                Some(v) => Faulted::Signal(Signal::Voltage {
                    v,
                    cm: v / 2.0,
                    rs: 0.0,
                }),
                None => Faulted::Undetermined("the current source's compliance is not stated"),
            },
            _ => return Err(self.numeric(kind.describe())),
        })
    }
}

/// The nodes a stage's inputs come from, by port.
#[derive(Clone, Debug, Default)]
pub(super) struct Inputs {
    pub input: Option<NodeId>,
    pub exc: Option<NodeId>,
    pub reference: Option<NodeId>,
    pub cj: Option<NodeId>,
    /// A bridge's arms, in edge order.
    pub arms: Vec<NodeId>,
}

/// What lowering a stage needs: the slots so far, the chain's settings and
/// the stage's name, wiring and role.
pub(super) struct Cx<'a> {
    pub slots: Vec<Slot>,
    pub measurand: &'a Measurand,
    /// The ambient range, K.
    pub ambient: (f64, f64),
    /// The SI zero of the measurand's unit as written, which a sensor's
    /// `% of reading` is measured from.
    pub zero: f64,
    /// A stated cold-junction error, for the conversion that reads the
    /// couple.
    pub cj_error: Option<SlotId>,
    pub name: &'a str,
    /// The stage whose name the slots' ids carry: the stage's own, or on
    /// a channel its converter's, whose error sources every channel
    /// shares.
    pub owner: &'a str,
    /// Lowering one member of a converter's scan: a slot whose id exists
    /// already is the same source, not a second one.
    pub shared: bool,
    /// On a converter's code that a conversion combines with other
    /// channels' (`sum`, `ratio`): how, and those channels' nodes.
    pub combine: Option<(CombineOp, Vec<NodeId>)>,
    pub inputs: Inputs,
    pub senses: Senses,
    /// A conversion that feeds another's `cj` input.
    pub feeds_cj: bool,
    /// The error of the temperature the stage senses.
    pub sense_error: SenseError,
}

impl Cx<'_> {
    fn id(&self, parameter: &str) -> SourceName {
        SourceName::param(self.owner, parameter)
    }

    pub(super) fn not_invertible(&self, what: &str) -> EvalError {
        EvalError::NotInvertible {
            stage: self.name.to_string(),
            what: what.to_string(),
        }
    }

    /// A slot of this stage; one with no limits is exact, not a source.
    fn add(
        &mut self,
        parameter: &str,
        kind: SourceKind,
        nominal: f64,
        minus: f64,
        plus: f64,
        normal: bool,
    ) -> SlotId {
        let kind = if minus == 0.0 && plus == 0.0 {
            SourceKind::Exact
        } else {
            kind
        };
        let id = self.id(parameter);
        if self.shared {
            if let Some(existing) = self.slots.iter().position(|s| s.id == id) {
                return SlotId::new(existing);
            }
        }
        self.slots.push(Slot {
            id,
            kind,
            nominal,
            minus,
            plus,
            normal,
        });
        SlotId::new(self.slots.len() - 1)
    }

    fn exact(&mut self, parameter: &str, nominal: f64) -> SlotId {
        self.add(parameter, SourceKind::Exact, nominal, 0.0, 0.0, false)
    }

    /// A measure: its nominal and its tolerance as absolute limits. A
    /// bound (`20 uV max`) has nominal zero.
    fn measure(&mut self, parameter: &str, kind: SourceKind, m: &Measure) -> SlotId {
        let nominal = if m.max { 0.0 } else { m.nominal };
        let (minus, plus, normal) = match &m.tolerance {
            Some(t) => limits(t, m.nominal),
            None if m.max => (m.nominal.abs(), m.nominal.abs(), false),
            None => (0.0, 0.0, false),
        };
        self.add(parameter, kind, nominal, minus, plus, normal)
    }

    /// A limit around a nominal of zero.
    fn limit(&mut self, parameter: &str, kind: SourceKind, t: &Tolerance) -> SlotId {
        self.add(parameter, kind, 0.0, t.minus, t.plus, t.normal)
    }

    /// A drift: the coefficient's sign is unknown, so nominal zero and the
    /// stated value as a limit either way.
    fn drift(&mut self, parameter: &str, per_kelvin: f64, relative: bool) -> DriftSlot {
        let (minus, plus) = (per_kelvin.abs(), per_kelvin.abs());
        let slot = self.add(parameter, SourceKind::Drift, 0.0, minus, plus, false);
        DriftSlot { slot, relative }
    }

    /// The drift a measure states (`drift 50 ppm/K`), as `<parameter>_drift`.
    fn drift_of(&mut self, parameter: &str, m: &Measure) -> Option<DriftSlot> {
        let d = m.drift.as_ref()?;
        Some(self.drift(&format!("{parameter}_drift"), d.per_kelvin, d.relative))
    }

    /// A sensor's stated error: absolute (also `% of span`, converted when
    /// it was read) or a share of its reading.
    fn stated_error(&mut self, parameter: &str, t: &Tolerance) {
        let slot = self.limit(parameter, SourceKind::Sensor, t);
        match t.basis {
            Basis::Reading => self.sense_error.of_reading = Some((slot, self.zero)),
            Basis::Written | Basis::Span => self.sense_error.absolute = Some(slot),
        }
    }
}

/// A tolerance's limits below and above `nominal`, absolute, and whether
/// they are a 3σ normal bound.
fn limits(t: &Tolerance, nominal: f64) -> (f64, f64, bool) {
    if t.relative {
        (t.minus * nominal.abs(), t.plus * nominal.abs(), t.normal)
    } else {
        (t.minus, t.plus, t.normal)
    }
}
