//! Typed ports: which signals each stage takes and gives. The port rules
//! of the language live here and nowhere else.

use super::schema::{self, Role};
use super::value::ParamValue;
use crate::syntax::ast::StageKind;
use crate::units::Dim;

#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Port {
    In,
    Exc,
    Arm,
    Ref,
    Cj,
    Out,
}

impl Port {
    pub const ALL: [Port; 6] = [
        Port::In,
        Port::Exc,
        Port::Arm,
        Port::Ref,
        Port::Cj,
        Port::Out,
    ];

    pub fn name(self) -> &'static str {
        match self {
            Port::In => "in",
            Port::Exc => "exc",
            Port::Arm => "arm",
            Port::Ref => "ref",
            Port::Cj => "cj",
            Port::Out => "out",
        }
    }

    pub fn from_name(name: &str) -> Option<Port> {
        Port::ALL.into_iter().find(|p| p.name() == name)
    }
}

/// What travels along an edge.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum SignalKind {
    CurrentExcitation,
    VoltageExcitation,
    /// A resistance, to be wired into a bridge arm.
    Element,
    Voltage,
    Code,
    Reading,
}

impl SignalKind {
    pub fn noun(self) -> &'static str {
        match self {
            SignalKind::CurrentExcitation => "a current excitation",
            SignalKind::VoltageExcitation => "a voltage excitation",
            SignalKind::Element => "a resistive element",
            SignalKind::Voltage => "a voltage",
            SignalKind::Code => "a converter code",
            SignalKind::Reading => "a reading",
        }
    }
}

#[derive(Clone, Copy, Debug, PartialEq)]
pub struct InputSpec {
    pub port: Port,
    pub accepts: &'static [SignalKind],
    pub required: bool,
    /// Takes several edges (bridge arms).
    pub multi: bool,
}

const fn input(port: Port, accepts: &'static [SignalKind], required: bool) -> InputSpec {
    InputSpec {
        port,
        accepts,
        required,
        multi: false,
    }
}

const EXCITATIONS: &[SignalKind] = &[SignalKind::CurrentExcitation, SignalKind::VoltageExcitation];
/// What a `ref` input takes: a voltage, from a source or another stage.
const REFERENCES: &[SignalKind] = &[SignalKind::Voltage, SignalKind::VoltageExcitation];

/// What a stage's model takes and gives, from its schema row. A stage
/// whose model line is missing or rejected (already reported) is checked
/// as its kind's plainest model.
fn role(kind: StageKind, model: Option<&str>) -> Role {
    let spec = match model {
        Some(word) => schema::model(kind, word),
        None => schema::implicit_model(kind),
    };
    match (spec, kind) {
        (Some(spec), _) => spec.role,
        (None, StageKind::Excitation) => Role::CurrentSource,
        (None, StageKind::Sensor) => Role::Powered,
        (None, StageKind::Bridge) => Role::Bridge { arms: 1 },
        (None, StageKind::Amplifier) => Role::Amplifier,
        (None, StageKind::Filter) => Role::Filter,
        (None, StageKind::Adc) => Role::Adc,
        (None, StageKind::Convert) => Role::Convert,
    }
}

/// The inputs of a stage, default first. `params` decide the optional
/// ones (an ADC needs `ref` only without `vref`).
pub fn inputs(
    kind: StageKind,
    model: Option<&str>,
    param: &dyn Fn(&str) -> Option<ParamValue>,
) -> Vec<InputSpec> {
    match role(kind, model) {
        Role::CurrentSource | Role::VoltageSource | Role::Floating => vec![],
        Role::Resistive => vec![input(Port::In, &[SignalKind::CurrentExcitation], false)],
        Role::Transducer => vec![input(
            Port::In,
            EXCITATIONS,
            transducer_is_ratiometric(param),
        )],
        Role::Powered | Role::PoweredCurrent => {
            vec![input(Port::In, &[SignalKind::VoltageExcitation], false)]
        }
        Role::Bridge { .. } => vec![
            input(Port::Exc, EXCITATIONS, true),
            InputSpec {
                port: Port::Arm,
                accepts: &[SignalKind::Element],
                required: true,
                multi: true,
            },
        ],
        Role::Amplifier => vec![
            input(Port::In, &[SignalKind::Voltage], true),
            input(Port::Ref, REFERENCES, false),
        ],
        Role::Filter => vec![input(Port::In, &[SignalKind::Voltage], true)],
        Role::Adc => vec![
            input(Port::In, &[SignalKind::Voltage], true),
            // A channel works against its converter's reference.
            input(
                Port::Ref,
                REFERENCES,
                param(schema::VREF).is_none() && param(schema::CHANNEL_OF).is_none(),
            ),
        ],
        Role::Convert => vec![
            input(Port::In, &[SignalKind::Code], true),
            input(Port::Cj, &[SignalKind::Reading], false),
        ],
    }
}

/// A transducer rated in mV/V (a plain ratio) needs its excitation.
fn transducer_is_ratiometric(param: &dyn Fn(&str) -> Option<ParamValue>) -> bool {
    matches!(param(schema::SENSITIVITY), Some(ParamValue::At { value_dim, .. }) if value_dim == Dim::NONE)
}

/// What a stage's output carries. A resistive sensor driven by a current
/// gives the voltage across it; undriven it is an element for a bridge.
pub fn output(kind: StageKind, model: Option<&str>, driven_by_current: bool) -> SignalKind {
    match role(kind, model) {
        Role::CurrentSource | Role::PoweredCurrent => SignalKind::CurrentExcitation,
        Role::VoltageSource => SignalKind::VoltageExcitation,
        Role::Resistive if !driven_by_current => SignalKind::Element,
        Role::Resistive
        | Role::Floating
        | Role::Transducer
        | Role::Powered
        | Role::Bridge { .. }
        | Role::Amplifier
        | Role::Filter => SignalKind::Voltage,
        Role::Adc => SignalKind::Code,
        Role::Convert => SignalKind::Reading,
    }
}

/// Bridge arms by model.
pub fn arm_count(model: Option<&str>) -> usize {
    match role(StageKind::Bridge, model) {
        Role::Bridge { arms } => arms,
        Role::CurrentSource
        | Role::VoltageSource
        | Role::Resistive
        | Role::Floating
        | Role::Transducer
        | Role::Powered
        | Role::PoweredCurrent
        | Role::Amplifier
        | Role::Filter
        | Role::Adc
        | Role::Convert => 1,
    }
}
