//! A sampling converter's acquisition settling (R630): the source
//! resistance behind its input, at its largest over the ranges and the
//! tolerances (the range envelope `Limit::ConverterSettling`), against
//! the largest that settles the sampling capacitor within ½ LSB in the
//! acquisition time (`physics::sampling`).

use super::ranges::{Envelope, Limit};
use crate::diagnostics::{Code, Finding, Findings};
use crate::eval::{node, Node, NodeId, Plan};
use crate::model::schema;
use crate::model::Chain;
use crate::physics::sampling::{
    largest_resistance, settling_error_lsb, shortest_acquisition, SETTLED_LSB,
};
use crate::units::format::{from_si, trimmed, with_prefix};

/// What a converter states of its sampling input.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Sampling {
    pub bits: u32,
    /// Sampling capacitance, F.
    pub capacitance: f64,
    /// Acquisition time, s.
    pub acquisition: f64,
    /// The sampling switch's own resistance, Ω.
    pub switch: f64,
}

impl Sampling {
    /// The sampling input of converter `node`, where it states both its
    /// capacitance and its acquisition time and nothing but a source
    /// resistance feeds it: a filter right at its input holds charge of
    /// its own (or drives it from an output this model does not know), so
    /// there the check does not apply.
    pub fn of(plan: &Plan, node: NodeId, bits: u32, input: NodeId) -> Option<Self> {
        if matches!(plan.nodes[input.index()], Node::Filter(_)) {
            return None;
        }
        let stated = plan.stated[node.index()].sampling?;
        Some(Sampling {
            bits,
            capacitance: stated.capacitance,
            acquisition: stated.acquisition,
            switch: stated.switch,
        })
    }

    /// The largest source resistance that settles within ½ LSB, Ω
    /// (negative: not even the switch alone does).
    pub fn largest_source(&self) -> f64 {
        largest_resistance(self.bits, self.capacitance, self.acquisition, SETTLED_LSB) - self.switch
    }

    /// The unsettled part of a full-scale step behind `source` Ω, LSB.
    pub fn error_lsb(&self, source: f64) -> f64 {
        settling_error_lsb(
            self.bits,
            source + self.switch,
            self.capacitance,
            self.acquisition,
        )
    }
}

/// R630 for every sampling converter whose source resistance, at its
/// largest, leaves more than ½ LSB unsettled.
pub fn findings(chain: &Chain, plan: &Plan, envelopes: &[Envelope]) -> Findings {
    let mut out = Findings::new();
    for e in envelopes
        .iter()
        .filter(|e| e.limit == Limit::ConverterSettling)
    {
        let Node::Adc(node::Adc { bits, input, .. }) = plan.nodes[e.node.index()] else {
            continue;
        };
        let Some(sampling) = Sampling::of(plan, e.node, bits, input) else {
            continue;
        };
        let source = e.reach.1;
        let error = sampling.error_lsb(source);
        if error <= SETTLED_LSB {
            continue;
        }
        let Some(stage) = chain
            .stages
            .iter()
            .find(|s| s.name == plan.names[e.node.index()])
        else {
            continue;
        };
        let unit = chain.measurand_unit();
        let message = format!(
            "the input of `{}` settles only to within {} LSB of its final value in its acquisition time, behind a source resistance of {} (at {} {unit}, ambient {} degC)",
            stage.name,
            trimmed(error, 3),
            with_prefix(source, "ohm", 4),
            trimmed(from_si(e.worst_at.0, &unit), 6),
            trimmed(from_si(e.worst_at.1, "degC"), 4),
        );
        let needed = shortest_acquisition(
            bits,
            source + sampling.switch,
            sampling.capacitance,
            SETTLED_LSB,
        );
        let largest = sampling.largest_source();
        let help = if largest > 0.0 {
            format!(
                "within ½ LSB at {bits} bits the source may be at most {}: lower it there, add a buffer amplifier ahead of `{}`, or lengthen the acquisition to at least {}",
                with_prefix(largest, "ohm", 4),
                stage.name,
                with_prefix(needed, "s", 4)
            )
        } else {
            format!(
                "no source settles within ½ LSB at {bits} bits in this acquisition time, not even a buffer: lengthen it to at least {}",
                with_prefix(needed, "s", 4)
            )
        };
        let mut f =
            Finding::new(Code::R630, &chain.file, message).label(stage.name_span, "this converter");
        for (name, text) in [
            (schema::param::ACQUISITION_TIME, "acquisition time"),
            (
                schema::param::SAMPLING_CAPACITANCE,
                "charged through the source",
            ),
        ] {
            if let Some(p) = stage.params.iter().find(|p| p.name == name) {
                if std::sync::Arc::ptr_eq(&p.file, &chain.file) {
                    f = f.label(p.span, text);
                }
            }
        }
        if let Some(source_stage) = chain
            .stages
            .iter()
            .find(|s| s.name == plan.names[input.index()])
        {
            f = f.label(source_stage.name_span, "the source behind its input");
        }
        out.push(f.help(help));
    }
    out
}
