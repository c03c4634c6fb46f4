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
        }
    }
}

/// One fault of one node.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Fault {
    pub node: NodeId,
    pub kind: FaultKind,
    /// The burnout current, A, that the input reading an open sensor
    /// sources into it (from the amplifier's or converter's `burnout`);
    /// None when nothing gives the open input a path.
    pub burnout: Option<f64>,
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
        for i in (0..self.nodes.len()).filter(|&i| feeds[i]) {
            for &kind in self.nodes[i].faults() {
                out.push(Fault {
                    node: i,
                    kind,
                    burnout: self.burnout_into(i),
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
            if !std::mem::replace(&mut feeds[n], true) {
                stack.extend(self.nodes[n].inputs());
            }
        }
        feeds
    }

    /// The burnout current the stage reading node `i` sources into it.
    pub fn burnout_into(&self, i: NodeId) -> Option<f64> {
        self.nodes.iter().find_map(|n| match n {
            Node::Amplifier(a) if a.input == i => a.burnout,
            Node::Adc(a) if a.input == i => a.burnout,
            _ => None,
        })
    }

    /// The current source an open element would starve: a series string
    /// on one current source carries nothing once one element opens.
    fn starved_source(&self, fault: &Fault) -> Option<NodeId> {
        if fault.kind != FaultKind::Open {
            return None;
        }
        let input = self.nodes[fault.node].element_input()?;
        match &self.nodes[input] {
            Node::Excitation(e) if e.current => Some(input),
            _ => None,
        }
    }

    /// The main converter's exact code with `fault` present.
    pub fn faulted_code(
        &self,
        values: &[f64],
        env: &Env,
        fault: &Fault,
    ) -> Result<FaultCode, EvalError> {
        let mut signals = [Signal::None; MAX_NODES];
        let starved = self.starved_source(fault);
        for i in 0..=self.adc {
            if matches!(self.nodes[i], Node::Convert(_)) {
                continue;
            }
            let here = if i == fault.node { Some(fault) } else { None };
            let s = if starved == Some(i) {
                Faulted::Signal(Signal::Current(0.0))
            } else {
                self.faulted_node(
                    i,
                    values,
                    env,
                    &signals,
                    Mode {
                        faulted: Some(fault.node),
                        ..Mode::FAULT
                    },
                    here,
                )?
            };
            match s {
                Faulted::Signal(s) => signals[i] = s,
                Faulted::Undetermined(why) => return Ok(FaultCode::Undetermined(why)),
                Faulted::EitherEnd => return Ok(FaultCode::EitherEnd),
            }
        }
        match signals[self.adc] {
            Signal::Code { exact, .. } => Ok(FaultCode::Code(exact)),
            _ => Err(self.numeric(self.adc, "no code")),
        }
    }
}
