//! Typed ports: which signals each stage takes and gives. The port rules
//! of the language live here and nowhere else.

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
pub enum Signal {
    CurrentExcitation,
    VoltageExcitation,
    /// A resistance, to be wired into a bridge arm.
    Element,
    Voltage,
    Code,
    Reading,
}

impl Signal {
    pub fn noun(self) -> &'static str {
        match self {
            Signal::CurrentExcitation => "a current excitation",
            Signal::VoltageExcitation => "a voltage excitation",
            Signal::Element => "a resistive element",
            Signal::Voltage => "a voltage",
            Signal::Code => "a converter code",
            Signal::Reading => "a reading",
        }
    }
}

#[derive(Clone, Copy, Debug, PartialEq)]
pub struct InputSpec {
    pub port: Port,
    pub accepts: &'static [Signal],
    pub required: bool,
    /// Takes several edges (bridge arms).
    pub multi: bool,
}

const fn input(port: Port, accepts: &'static [Signal], required: bool) -> InputSpec {
    InputSpec {
        port,
        accepts,
        required,
        multi: false,
    }
}

const EXCITATIONS: &[Signal] = &[Signal::CurrentExcitation, Signal::VoltageExcitation];
/// What a `ref` input takes: a voltage, from a source or another stage.
const REFERENCES: &[Signal] = &[Signal::Voltage, Signal::VoltageExcitation];

pub fn is_resistive(model: Option<&str>) -> bool {
    matches!(
        model,
        Some("rtd" | "thermistor" | "strain_gauge" | "resistor")
    )
}

/// The inputs of a stage, default first. `params` decide the optional
/// ones (an ADC needs `ref` only without `vref`).
pub fn inputs(
    kind: StageKind,
    model: Option<&str>,
    param: &dyn Fn(&str) -> Option<ParamValue>,
) -> Vec<InputSpec> {
    match kind {
        StageKind::Excitation => vec![],
        StageKind::Sensor => match model {
            m if is_resistive(m) => vec![input(Port::In, &[Signal::CurrentExcitation], false)],
            Some("thermocouple") => vec![],
            Some("transducer") => {
                vec![input(
                    Port::In,
                    EXCITATIONS,
                    transducer_is_ratiometric(param),
                )]
            }
            _ => vec![input(Port::In, &[Signal::VoltageExcitation], false)],
        },
        StageKind::Bridge => vec![
            input(Port::Exc, EXCITATIONS, true),
            InputSpec {
                port: Port::Arm,
                accepts: &[Signal::Element],
                required: true,
                multi: true,
            },
        ],
        StageKind::Amplifier => vec![
            input(Port::In, &[Signal::Voltage], true),
            input(Port::Ref, REFERENCES, false),
        ],
        StageKind::Filter => vec![input(Port::In, &[Signal::Voltage], true)],
        StageKind::Adc => vec![
            input(Port::In, &[Signal::Voltage], true),
            input(Port::Ref, REFERENCES, param("vref").is_none()),
        ],
        StageKind::Convert => vec![
            input(Port::In, &[Signal::Code], true),
            input(Port::Cj, &[Signal::Reading], false),
        ],
    }
}

/// A transducer rated in mV/V (a plain ratio) needs its excitation.
fn transducer_is_ratiometric(param: &dyn Fn(&str) -> Option<ParamValue>) -> bool {
    matches!(param("sensitivity"), Some(ParamValue::At { value_dim, .. }) if value_dim == Dim::NONE)
}

/// What a stage's output carries. A resistive sensor driven by a current
/// gives the voltage across it; undriven it is an element for a bridge.
pub fn output(kind: StageKind, model: Option<&str>, driven_by_current: bool) -> Signal {
    match kind {
        StageKind::Excitation if model == Some("voltage") => Signal::VoltageExcitation,
        StageKind::Excitation => Signal::CurrentExcitation,
        StageKind::Sensor if is_resistive(model) && !driven_by_current => Signal::Element,
        StageKind::Sensor if model == Some("ic_current") => Signal::CurrentExcitation,
        StageKind::Sensor | StageKind::Bridge | StageKind::Amplifier | StageKind::Filter => {
            Signal::Voltage
        }
        StageKind::Adc => Signal::Code,
        StageKind::Convert => Signal::Reading,
    }
}

/// Bridge arms by model.
pub fn arm_count(model: Option<&str>) -> usize {
    match model {
        Some("half") => 2,
        Some("full") => 4,
        _ => 1,
    }
}
