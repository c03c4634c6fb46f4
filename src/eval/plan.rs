pub use super::env::{Env, Senses};
pub use super::error::EvalError;
pub use super::ids::{Named, NodeId, SlotId, SourceName};
pub use super::node::Node;
use crate::physics::thermocouple::ThermocoupleType;

/// One numeric parameter: its id (`stage.parameter`), nominal value (SI)
/// and what the datasheet allows around it, for the analyses.
#[derive(Clone, Debug, PartialEq)]
pub struct Slot {
    pub id: SourceName,
    pub kind: SourceKind,
    pub nominal: f64,
    /// Limits below and above the nominal, absolute SI (relative
    /// tolerances are already multiplied out).
    pub minus: f64,
    pub plus: f64,
    /// The limit is a 3σ normal bound; otherwise rectangular.
    pub normal: bool,
}

/// What kind of error source a slot is, for reports.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum SourceKind {
    Tolerance,
    Drift,
    /// An offset bound with nominal zero.
    Bound,
    Gain,
    Bias,
    CommonMode,
    Sensor,
    Lead,
    ColdJunction,
    Nonlinearity,
    Inl,
    Calibration,
    /// Not an error source: an exact value.
    Exact,
}

impl SourceKind {
    pub fn name(self) -> &'static str {
        match self {
            SourceKind::Tolerance => "tolerance",
            SourceKind::Drift => "drift",
            SourceKind::Bound => "offset",
            SourceKind::Gain => "gain",
            SourceKind::Bias => "bias",
            SourceKind::CommonMode => "common_mode",
            SourceKind::Sensor => "sensor",
            SourceKind::Lead => "lead",
            SourceKind::ColdJunction => "cold_junction",
            SourceKind::Nonlinearity => "nonlinearity",
            SourceKind::Inl => "inl",
            SourceKind::Calibration => "calibration",
            SourceKind::Exact => "exact",
        }
    }
}

/// A drift coefficient applied over (ambient − reference).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DriftSlot {
    pub slot: SlotId,
    pub relative: bool,
}

/// A tolerance class whose half-width depends on the temperature. (An
/// RTD's class is its R0 and coefficient tolerances, on the element.)
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ClassTolerance {
    Thermocouple(ThermocoupleType, u8),
}

/// How far a sensor's reading of its temperature may be off: a fraction of
/// its class's half-width (slot value in −1 … 1), an absolute error, K, and
/// a share of its reading (`% of reading`: the slot is the fraction, of the
/// temperature's magnitude measured from the second value, the SI zero of
/// the measurand's unit as written).
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct SenseError {
    pub class: Option<(ClassTolerance, SlotId)>,
    pub absolute: Option<SlotId>,
    pub of_reading: Option<(SlotId, f64)>,
}

/// What a node outputs in one evaluation, in SI.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub enum Signal {
    #[default]
    None,
    /// A current (excitation or a PTAT sensor's output), A.
    Current(f64),
    /// A voltage source, V.
    Source(f64),
    /// A resistance for a bridge arm, Ω.
    Element(f64),
    /// A voltage: differential value and common mode, V, and the source
    /// resistance behind it, Ω (for bias currents and loading).
    Voltage { v: f64, cm: f64, rs: f64 },
    /// A converter code: the exact (unrounded) value and the output code.
    Code { exact: f64, code: i64 },
    /// A reading, SI (kelvin for temperatures).
    Reading(f64),
}

impl Signal {
    /// The main value and its coherent SI unit, for reports.
    pub fn value_unit(self) -> (f64, &'static str) {
        match self {
            Signal::None => (0.0, ""),
            Signal::Current(a) => (a, "A"),
            Signal::Source(v) | Signal::Voltage { v, .. } => (v, "V"),
            Signal::Element(r) => (r, "ohm"),
            Signal::Code { code, .. } => (code as f64, "code"),
            Signal::Reading(x) => (x, "SI"),
        }
    }
}

/// A chain ready to evaluate.
#[derive(Clone, Debug)]
pub struct Plan {
    pub chain: String,
    /// Stage names, by node.
    pub names: Vec<String>,
    /// Nodes in evaluation order (every input before its user).
    pub nodes: Vec<Node>,
    pub slots: Vec<Slot>,
    /// The nominal value of every slot.
    pub nominal: Vec<f64>,
    pub reference: f64,
    /// Measurand range, SI.
    pub range: (f64, f64),
    /// The convert that gives the chain's reading.
    pub reading: NodeId,
    /// The ADC that feeds it.
    pub adc: NodeId,
    /// For an element in a series string on one current source, the
    /// elements below it (towards ground), whose voltages lift its common
    /// mode.
    pub series_below: Vec<Vec<NodeId>>,
    /// By node: whether its signal is the same at every value of the
    /// measurand (it neither senses it nor reads a node that does), so a
    /// batch read at several points with one ambient works it out once.
    pub measurand_free: Vec<bool>,
    /// For each sensor node, the error of the temperature it senses.
    pub sense_error: Vec<SenseError>,
    /// The common components of tracking groups, each moving several
    /// slots together.
    pub groups: Vec<super::track::Group>,
    /// What each node's stage states beyond its error sources (limits,
    /// noise, timing), by node.
    pub stated: Vec<super::stated::Stated>,
}

impl Plan {
    /// Every node's id, in evaluation order.
    pub fn node_ids(&self) -> impl DoubleEndedIterator<Item = NodeId> + ExactSizeIterator {
        NodeId::all(self.nodes.len())
    }

    /// Every slot's id, in order.
    pub fn slot_ids(&self) -> impl DoubleEndedIterator<Item = SlotId> + ExactSizeIterator {
        SlotId::all(self.slots.len())
    }

    /// The node of the stage named `name`.
    pub fn node_named(&self, name: &str) -> Option<NodeId> {
        self.names.iter().position(|n| n == name).map(NodeId::new)
    }

    /// The slot of parameter `param` of the stage at `node`.
    pub fn slot_of(&self, node: NodeId, param: &str) -> Option<SlotId> {
        let stage = &self.names[node.index()];
        self.slots
            .iter()
            .position(|s| s.id.is(stage, param))
            .map(SlotId::new)
    }
}
