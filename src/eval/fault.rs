//! Faults through the evaluator: a fault transforms one node (its value,
//! its source resistance), and the nodes after it compute what the
//! converter then really gives. Each node kind declares its own faults and
//! how it behaves under each, in its own file (`node/`).

use super::node::Node;
use super::plan::{Env, EvalError, NodeId, Plan, Signal};
use super::run::{Mode, MAX_NODES};

/// An open circuit's resistance, Ω: insulation-grade leakage, so an open
/// element stays a finite number every formula (divider, self-heating,
/// burnout) can carry (common practice for simulation; any value far above
/// the chain's impedances gives the same code).
pub const OPEN_OHMS: f64 = 1e12;
/// A short circuit's resistance, Ω: a solder bridge or crushed cable.
pub const SHORT_OHMS: f64 = 1e-3;

/// What can go wrong at one node.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum FaultKind {
    /// A sensor or element open (a broken wire, a burnt-out couple).
    Open,
    /// A sensor or element shorted.
    Short,
    /// A thermocouple wired with its legs swapped.
    Reversed,
    /// An excitation source or an IC sensor's supply lost.
    Lost,
    /// An amplifier's output stuck at its high or low swing.
    SaturatedHigh,
    SaturatedLow,
    /// A converter's code stuck at its top or bottom code.
    OverRange,
    UnderRange,
    /// A converter's reference lost.
    ReferenceLost,
    /// A converter's reference pin shorted to ground: the reference, and
    /// any stage wired to the same node, at 0 V.
    ReferenceShorted,
    /// A current source at its compliance: its output stands at the
    /// compliance voltage, so the load draws what that voltage drives
    /// through it instead of the set current (its regulation lost).
    AtCompliance,
    /// A voltage source at its current limit with its output shorted: it
    /// sags to the limit current times the short.
    AtCurrentLimit,
    /// A 3-wire RTD's compensation lead open.
    CompensationLeadOpen,
    /// A 4-wire RTD's force lead open: the one carrying the excitation
    /// current in, or the one returning it.
    ForceLeadOpen,
    ReturnLeadOpen,
    /// A 4-wire RTD's sense lead open, at the end the current enters or
    /// at the end it leaves.
    SenseLeadOpen,
    ReturnSenseLeadOpen,
    /// A 4-wire RTD's two sense leads shorted together.
    SenseLeadsShorted,
    /// An IC sensor's output stuck at its supply.
    StuckHigh,
    /// An amplifier's or converter's input pin open.
    InputOpen,
    /// A bridge's or divider's completion resistor `n` (1, 2, 3: `r` or
    /// `r_1`, `r_2`, `r_3`) open or shorted.
    CompletionOpen(u8),
    CompletionShort(u8),
    /// A bridge transducer's excitation lead open: the positive one, or
    /// the return.
    ExcitationLeadOpen,
    ExcitationReturnOpen,
    /// A bridge transducer's signal lead open.
    SignalLeadOpen,
}

/// A completion resistor's faults by its number, 1 to 3.
const COMPLETION_OPEN: [&str; 3] = [
    "completion_1_open",
    "completion_2_open",
    "completion_3_open",
];
const COMPLETION_SHORT: [&str; 3] = [
    "completion_1_short",
    "completion_2_short",
    "completion_3_short",
];
const COMPLETION_OPEN_WORDS: [&str; 3] = [
    "completion resistor 1 open",
    "completion resistor 2 open",
    "completion resistor 3 open",
];
const COMPLETION_SHORT_WORDS: [&str; 3] = [
    "completion resistor 1 shorted",
    "completion resistor 2 shorted",
    "completion resistor 3 shorted",
];

/// Resistor `n` (1-based) of a table of three.
fn nth(table: &[&'static str; 3], n: u8) -> &'static str {
    table[usize::from(n.clamp(1, 3)) - 1]
}

impl FaultKind {
    /// A stable name, for JSON and tables.
    pub fn name(self) -> &'static str {
        match self {
            FaultKind::Open => "open",
            FaultKind::Short => "short",
            FaultKind::Reversed => "reversed",
            FaultKind::Lost => "lost",
            FaultKind::SaturatedHigh => "saturated_high",
            FaultKind::SaturatedLow => "saturated_low",
            FaultKind::OverRange => "over_range",
            FaultKind::UnderRange => "under_range",
            FaultKind::ReferenceLost => "reference_lost",
            FaultKind::ReferenceShorted => "reference_shorted",
            FaultKind::AtCompliance => "at_compliance",
            FaultKind::AtCurrentLimit => "at_current_limit",
            FaultKind::CompensationLeadOpen => "compensation_lead_open",
            FaultKind::ForceLeadOpen => "force_lead_open",
            FaultKind::ReturnLeadOpen => "return_lead_open",
            FaultKind::SenseLeadOpen => "sense_lead_open",
            FaultKind::ReturnSenseLeadOpen => "return_sense_lead_open",
            FaultKind::SenseLeadsShorted => "sense_leads_shorted",
            FaultKind::StuckHigh => "stuck_high",
            FaultKind::InputOpen => "input_open",
            FaultKind::CompletionOpen(n) => nth(&COMPLETION_OPEN, n),
            FaultKind::CompletionShort(n) => nth(&COMPLETION_SHORT, n),
            FaultKind::ExcitationLeadOpen => "excitation_lead_open",
            FaultKind::ExcitationReturnOpen => "excitation_return_open",
            FaultKind::SignalLeadOpen => "signal_lead_open",
        }
    }

    /// The condition in words, for findings and the checklist.
    pub fn describe(self) -> &'static str {
        match self {
            FaultKind::Open => "open circuit",
            FaultKind::Short => "short circuit",
            FaultKind::Reversed => "wired reversed",
            FaultKind::Lost => "supply or excitation lost",
            FaultKind::SaturatedHigh => "output saturated high",
            FaultKind::SaturatedLow => "output saturated low",
            FaultKind::OverRange => "converter over-range (top code)",
            FaultKind::UnderRange => "converter under-range (bottom code)",
            FaultKind::ReferenceLost => "reference lost",
            FaultKind::ReferenceShorted => "reference shorted to ground",
            FaultKind::AtCompliance => "output at its compliance voltage (regulation lost)",
            FaultKind::AtCurrentLimit => "output shorted, held at its current limit",
            FaultKind::CompensationLeadOpen => "compensation lead open",
            FaultKind::ForceLeadOpen => "force lead open (current in)",
            FaultKind::ReturnLeadOpen => "force lead open (current return)",
            FaultKind::SenseLeadOpen => "sense lead open (current-in end)",
            FaultKind::ReturnSenseLeadOpen => "sense lead open (return end)",
            FaultKind::SenseLeadsShorted => "sense leads shorted together",
            FaultKind::StuckHigh => "output stuck at its supply",
            FaultKind::InputOpen => "input pin open",
            FaultKind::CompletionOpen(n) => nth(&COMPLETION_OPEN_WORDS, n),
            FaultKind::CompletionShort(n) => nth(&COMPLETION_SHORT_WORDS, n),
            FaultKind::ExcitationLeadOpen => "excitation lead open",
            FaultKind::ExcitationReturnOpen => "excitation return lead open",
            FaultKind::SignalLeadOpen => "signal lead open",
        }
    }

    /// Whether the fault breaks the loop a current source drives, so the
    /// source (and every element in its string) carries nothing.
    pub fn breaks_loop(self) -> bool {
        matches!(
            self,
            FaultKind::Open | FaultKind::ForceLeadOpen | FaultKind::ReturnLeadOpen
        )
    }
}

/// Why an open input's code is undetermined without a burnout current.
pub const FLOATING: &str =
    "nothing gives the open input a path: its bias current charges it toward an unknown rail";

impl Mode {
    /// What drives node `input` from the stage reading it: that stage's
    /// own `burnout` or `pull` unless the fault at that node states one.
    #[inline(always)]
    pub(super) fn pull_into(&self, input: NodeId, own: Option<Pull>) -> Option<Pull> {
        match self.faulted {
            Some(n) if n == input => self.fault_pull.or(own),
            _ => own,
        }
    }
}

/// An input pin cut off from its source: a burnout current (`burnout`
/// on the stage that reads it) has only the open circuit to flow into,
/// so it drives the pin to a rail, and a pull resistor holds it at its
/// voltage ([`Pull::lift`] across the open circuit's resistance);
/// without either the pin floats.
pub fn open_input(pull: Option<Pull>, cm: f64) -> Faulted {
    match pull {
        Some(_) => Faulted::Signal(Signal::Voltage {
            v: 0.0,
            cm,
            rs: OPEN_OHMS,
        }),
        None => Faulted::Undetermined(FLOATING),
    }
}

/// What an amplifier's or converter's input does to an open source: a
/// burnout current it sources, or a resistor from the pin to a voltage.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Pull {
    /// `burnout`: a current out of the positive pin, A.
    Current(f64),
    /// `pull R to V`: a resistor of `ohms` from the pin to `volts`.
    Resistor { ohms: f64, volts: f64 },
}

impl Pull {
    /// The input's voltage where the source gives `v` behind `rs` Ω and
    /// the positive pin stands at `pin` (`v` on a single-ended input,
    /// the common mode plus half of `v` on a differential one). A
    /// current I flows back through the source, so the pin sits I × rs
    /// above the source; a resistor R to V_p divides with the source, so
    /// the pin moves (V_p − pin) rs / (R + rs) toward V_p (Ohm's law,
    /// Thévenin), and the input with it. Healthy, a small offset or
    /// loading; with the source open, `rs` is the open circuit's and the
    /// pin runs to a rail, or to V_p.
    ///
    /// With it, the source's resistance seen from the pin: a current
    /// source's own is infinite, so a burnout current leaves `rs` as it
    /// is; a resistor sits in parallel (what a bias current then flows
    /// through).
    #[inline(always)]
    pub fn lift(self, v: f64, pin: f64, rs: f64) -> (f64, f64) {
        match self {
            Pull::Current(current) => (v + current * rs, rs),
            Pull::Resistor { ohms, volts } => {
                let share = rs / (ohms + rs);
                (v + (volts - pin) * share, ohms * share)
            }
        }
    }
}

/// The positive pin's voltage of an input that reads `v` about common
/// mode `cm`: `v` itself on a single-ended input.
#[inline(always)]
pub(super) fn positive_pin(v: f64, cm: f64, differential: bool) -> f64 {
    if differential {
        cm + v / 2.0
    } else {
        v
    }
}

/// [`with_pull`] in every lane of a column: the pins' voltages and the
/// resistances behind them.
#[inline(always)]
pub(super) fn pulled_lanes(
    pull: Pull,
    input: &super::lanes::Column,
    differential: bool,
) -> ([f64; super::run::LANES], [f64; super::run::LANES]) {
    let mut out = (input.x, input.rs);
    for k in 0..super::run::LANES {
        let pin = positive_pin(input.x[k], input.cm[k], differential);
        (out.0[k], out.1[k]) = pull.lift(input.x[k], pin, input.rs[k]);
    }
    out
}

/// A stage's stated `burnout` current or `pull` resistor (never both).
pub(super) fn input_pull(burnout: Option<f64>, pull: Option<(f64, f64)>) -> Option<Pull> {
    burnout
        .map(Pull::Current)
        .or(pull.map(|(ohms, volts)| Pull::Resistor { ohms, volts }))
}

/// The voltage at a stage's input, V, and the resistance behind it, Ω,
/// with its pull ([`Pull::lift`]); `pin` is its positive pin's voltage.
#[inline(always)]
pub(super) fn with_pull(pull: Option<Pull>, v: f64, pin: f64, rs: f64) -> (f64, f64) {
    match pull {
        Some(pull) => pull.lift(v, pin, rs),
        None => (v, rs),
    }
}

/// A node's signal with its output shorted to ground: a source gives
/// nothing, a voltage across an element is gone (the short carries the
/// current; the element's foot stays where it was).
fn grounded_signal(s: Signal) -> Signal {
    match s {
        Signal::Source(_) => Signal::Source(0.0),
        Signal::Voltage { v, cm, .. } => Signal::Voltage {
            v: 0.0,
            cm: cm - v / 2.0,
            rs: SHORT_OHMS,
        },
        other => other,
    }
}

/// One fault of one node.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Fault {
    pub node: NodeId,
    pub kind: FaultKind,
    /// What the input reading an open sensor drives it with (the
    /// amplifier's or converter's `burnout` or `pull`; for an input pin
    /// open, that stage's own); None when nothing gives the open input a
    /// path.
    pub pull: Option<Pull>,
}

/// A node's signal under a fault, or why nothing determines it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Faulted {
    Signal(Signal),
    Undetermined(&'static str),
    /// A converter at one of its end codes, which one its own offset
    /// decides (no reference and no input: it rails either way).
    EitherEnd,
}

/// The converter's exact code under a fault, or why nothing determines it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum FaultCode {
    Code(f64),
    Undetermined(&'static str),
    /// At the bottom or the top code, which one is not determined.
    EitherEnd,
}

impl Plan {
    /// Every fault the nodes that feed the main converter declare, in
    /// node order. (A fault behind another converter, a cold junction's,
    /// moves the reading through the conversion, not the code: it is not
    /// judged here.)
    pub fn faults(&self) -> Vec<Fault> {
        let feeds = self.feeds(self.adc);
        let mut out = Vec::new();
        for i in NodeId::all(self.nodes.len()).filter(|&i| feeds[i.index()]) {
            for &kind in self.nodes[i.index()].faults() {
                let pull = match kind {
                    FaultKind::InputOpen => self.pull_of(i),
                    _ => self.pull_into(i),
                };
                out.push(Fault {
                    node: i,
                    kind,
                    pull,
                });
            }
        }
        out
    }

    /// Which nodes `target`'s signal depends on, itself included.
    pub fn feeds(&self, target: NodeId) -> Vec<bool> {
        let mut feeds = vec![false; self.nodes.len()];
        let mut stack = vec![target];
        while let Some(n) = stack.pop() {
            if !std::mem::replace(&mut feeds[n.index()], true) {
                stack.extend(self.nodes[n.index()].inputs());
            }
        }
        feeds
    }

    /// What the stage reading node `i` drives it with when it opens
    /// (see [`Plan::pull_of`]).
    pub fn pull_into(&self, i: NodeId) -> Option<Pull> {
        let reader = NodeId::new(self.nodes.iter().position(|n| match n {
            Node::Amplifier(a) => a.input == i,
            Node::Adc(a) => a.input == i,
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
            | Node::Filter(_)
            | Node::Convert(_) => false,
        })?);
        self.pull_of(reader)
    }

    /// What amplifier or converter `i` drives its own open input with: a
    /// pull resistor, or a burnout current when it outweighs the input's
    /// largest bias current (a bias current as large or larger, with
    /// nowhere else to go, leaves the open input's direction
    /// undetermined).
    pub fn pull_of(&self, i: NodeId) -> Option<Pull> {
        let pull = match &self.nodes[i.index()] {
            Node::Amplifier(a) => a.pull,
            Node::Adc(a) => a.pull,
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
            | Node::Filter(_)
            | Node::Convert(_) => None,
        }?;
        match pull {
            Pull::Current(current) => (current > self.input_bias(i).unwrap_or(0.0)).then_some(pull),
            // Its current into an open pin, V_p / R at 0 V, is the pin's
            // path whatever the bias (common practice: a resistor far
            // below the pin's leakage resistance).
            Pull::Resistor { .. } => Some(pull),
        }
    }

    /// The largest input bias current amplifier or converter `i` states,
    /// A: an amplifier's `bias` at its limit, a converter's `bias`.
    pub fn input_bias(&self, i: NodeId) -> Option<f64> {
        match &self.nodes[i.index()] {
            Node::Amplifier(amp) => amp.bias.map(|b| {
                let slot = &self.slots[b.index()];
                slot.nominal.abs() + slot.plus.max(slot.minus)
            }),
            Node::Adc(adc) => adc.bias,
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
            | Node::Filter(_)
            | Node::Convert(_) => None,
        }
        .filter(|&most| most > 0.0)
    }

    /// The current source an open element would starve: a series string
    /// on one current source carries nothing once one element opens.
    fn starved_source(&self, fault: &Fault) -> Option<NodeId> {
        if !fault.kind.breaks_loop() {
            return None;
        }
        let input = self.nodes[fault.node.index()].element_input()?;
        match &self.nodes[input.index()] {
            Node::Excitation(e) if e.current => Some(input),
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
            | Node::Adc(_)
            | Node::Convert(_) => None,
        }
    }

    /// The node a converter's shorted reference pin holds at 0 V: the
    /// stage wired to its `ref` input, which every other stage on that
    /// node then sees at 0 V too (a ratiometric excitation goes with it).
    fn shorted_reference(&self, fault: &Fault) -> Option<NodeId> {
        let Node::Adc(adc) = &self.nodes[fault.node.index()] else {
            return None;
        };
        (fault.kind == FaultKind::ReferenceShorted)
            .then_some(adc.reference)
            .flatten()
    }

    /// The main converter's exact code with `fault` present.
    pub fn faulted_code(
        &self,
        values: &[f64],
        env: &Env,
        fault: &Fault,
    ) -> Result<FaultCode, EvalError> {
        self.faulted_code_at(values, env, fault, None)
    }

    /// With `fault` present, the code firmware sees at `channel`: that
    /// converter channel's own code, before a conversion combines it with
    /// others'; or, for None, the main converter's code as the conversion
    /// reads it.
    pub fn faulted_code_at(
        &self,
        values: &[f64],
        env: &Env,
        fault: &Fault,
        channel: Option<NodeId>,
    ) -> Result<FaultCode, EvalError> {
        let mut signals = [Signal::None; MAX_NODES];
        let starved = self.starved_source(fault);
        let grounded = self.shorted_reference(fault);
        let mode = Mode {
            faulted: Some(fault.node),
            fault_pull: fault.pull,
            ..Mode::FAULT
        };
        // The channels one conversion combines share their converter's
        // reference: losing it, or shorting it, leaves every one of them
        // without it.
        let shared = |i: NodeId| {
            matches!(
                fault.kind,
                FaultKind::ReferenceLost | FaultKind::ReferenceShorted
            ) && self.combined(i)
                && self.combined(fault.node)
                && (self.is_channel(i) || self.is_channel(fault.node))
        };
        let here = |i: NodeId| (i == fault.node || shared(i)).then_some(fault);
        // A channel read before the main converter needs nothing after it.
        let last = channel.unwrap_or(self.adc);
        for i in NodeId::all(last.index() + 1) {
            if matches!(self.nodes[i.index()], Node::Convert(_)) {
                continue;
            }
            let s = if starved == Some(i) {
                Faulted::Signal(Signal::Current(0.0))
            } else if grounded == Some(i) {
                match self.faulted_node(i, values, env, &signals, mode, None)? {
                    Faulted::Signal(s) => Faulted::Signal(grounded_signal(s)),
                    other => other,
                }
            } else if channel == Some(i) {
                self.faulted_own_code(i, values, env, &signals, mode, here(i))?
            } else {
                self.faulted_node(i, values, env, &signals, mode, here(i))?
            };
            match s {
                Faulted::Signal(s) => signals[i.index()] = s,
                Faulted::Undetermined(why) => return Ok(FaultCode::Undetermined(why)),
                // One channel of a sum or a ratio at an end nothing
                // chooses leaves the combination anywhere among the ends'
                // combinations: only the channel's own code is determined
                // (at one end or the other).
                Faulted::EitherEnd if channel.is_none() && self.combined(i) => {
                    return Ok(FaultCode::Undetermined(
                        "a combined channel is left at an end nothing chooses, so the conversion's code is not determined",
                    ))
                }
                Faulted::EitherEnd => return Ok(FaultCode::EitherEnd),
            }
        }
        match signals[last.index()] {
            Signal::Code { exact, .. } => Ok(FaultCode::Code(exact)),
            _ => Err(self.numeric(last, "no code")),
        }
    }

    /// Whether node `i` is a channel of another stage's converter.
    fn is_channel(&self, i: NodeId) -> bool {
        self.nodes[i.index()]
            .as_adc()
            .is_some_and(|adc| adc.channel)
    }

    /// Whether node `i` is a channel the main converter's conversion
    /// combines (`sum` or `ratio`; the main converter itself included).
    fn combined(&self, i: NodeId) -> bool {
        match &self.nodes[self.adc.index()] {
            Node::Adc(adc) => match &adc.combine {
                Some((_, others)) => i == self.adc || others.contains(&i),
                None => false,
            },
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
            | Node::Convert(_) => false,
        }
    }
}
