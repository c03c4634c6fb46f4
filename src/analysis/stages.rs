//! Reading stage parameters that are not error sources (noise densities,
//! bandwidths, time constants) from the checked chain, by plan node.

use crate::eval::{node, Node, NodeId, Plan};
use crate::model::value::{Measure, ParamValue};
use crate::model::{Chain, Stage};
use crate::physics::filter::{rc_cascade_cutoff_hz, LowPass, Response};

pub fn stage<'a>(chain: &'a Chain, plan: &Plan, node: NodeId) -> Option<&'a Stage> {
    chain.stages.iter().find(|s| s.name == plan.names[node])
}

pub fn number(stage: &Stage, name: &str) -> Option<f64> {
    match stage.param(name) {
        Some(ParamValue::Measure(Measure { nominal, .. })) => Some(*nominal),
        Some(ParamValue::Count(n)) => Some(f64::from(*n)),
        Some(ParamValue::Limit(t)) => Some(t.plus.max(t.minus)),
        _ => None,
    }
}

/// The low-pass filter a `filter` stage describes.
pub fn low_pass(stage: &Stage) -> Option<LowPass> {
    let response = match stage.param("lowpass") {
        Some(ParamValue::Word(w)) => match w.as_str() {
            "butterworth" => Response::Butterworth,
            "bessel" => Response::Bessel,
            _ => Response::Rc,
        },
        _ => return None,
    };
    let order = number(stage, "order").unwrap_or(1.0) as u32;
    let cutoff = match (
        number(stage, "cutoff"),
        number(stage, "r"),
        number(stage, "c"),
    ) {
        (Some(f), _, _) => f,
        (None, Some(r), Some(c)) => rc_cascade_cutoff_hz(r, c, order).ok()?,
        _ => return None,
    };
    LowPass::new(response, order, cutoff).ok()
}

/// The nodes from the converter back to the sensor along the signal path
/// (each node's main input), converter first.
pub fn signal_path(plan: &Plan, adc: NodeId) -> Vec<NodeId> {
    let mut path = vec![adc];
    let mut at = adc;
    loop {
        let next = match &plan.nodes[at] {
            Node::Adc(node::Adc { input, .. })
            | Node::Amplifier(node::Amplifier { input, .. })
            | Node::Filter(node::Filter { input, .. }) => Some(*input),
            Node::Bridge(node::Bridge { exc, .. }) => Some(*exc),
            _ => None,
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
