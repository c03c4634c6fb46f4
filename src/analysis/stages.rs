//! The signal path through the plan, which the noise, dynamics and
//! accumulation analyses follow.

use crate::eval::{node, Node, NodeId, Plan};

/// The nodes from the converter back to the sensor along the signal path
/// (each node's main input), converter first.
pub fn signal_path(plan: &Plan, adc: NodeId) -> Vec<NodeId> {
    let mut path = vec![adc];
    let mut at = adc;
    loop {
        let next = match &plan.nodes[at.index()] {
            Node::Adc(node::Adc { input, .. })
            | Node::Amplifier(node::Amplifier { input, .. })
            | Node::Filter(node::Filter { input, .. }) => Some(*input),
            Node::Bridge(node::Bridge { exc, .. }) => Some(*exc),
            // A sensor, source or resistor starts the path; a conversion
            // reads the converter, it does not feed it.
            Node::Excitation(_)
            | Node::Rtd(_)
            | Node::Thermocouple(_)
            | Node::Thermistor(_)
            | Node::IcVoltage(_)
            | Node::IcCurrent(_)
            | Node::StrainGauge(_)
            | Node::Transducer(_)
            | Node::Resistor(_)
            | Node::Convert(_) => None,
        };
        match next {
            Some(n) if !path.contains(&n) => {
                path.push(n);
                at = n;
            }
            _ => return path,
        }
    }
}
