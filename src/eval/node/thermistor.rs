//! An NTC thermistor: β or Steinhart–Hart, with its self-heating
//! (`eval/element.rs`).

use super::{Cx, Run};
use crate::eval::fault::{FaultKind, Faulted};
use crate::eval::lanes::{Column, LaneRun, Lost};
use crate::eval::plan::{EvalError, NodeId, Senses, Signal, SlotId, SourceKind};
use crate::model::schema;
use crate::model::typed::{self, ThermistorLaw};

#[derive(Clone, Debug, PartialEq)]
pub struct Thermistor {
    pub r25: SlotId,
    pub curve: ThermistorCurve,
    pub dissipation: Option<SlotId>,
    pub input: Option<NodeId>,
    pub senses: Senses,
    pub valid: Option<(f64, f64)>,
}

#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ThermistorCurve {
    Beta { beta: SlotId },
    SteinhartHart { a: f64, b: f64, c: f64 },
}

pub(super) fn lower(m: &typed::Thermistor, cx: &mut Cx<'_>) -> Result<Thermistor, EvalError> {
    let r25 = cx.measure(schema::param::R25, SourceKind::Tolerance, &m.r25);
    let curve = match &m.law {
        ThermistorLaw::Beta(beta) => ThermistorCurve::Beta {
            beta: cx.measure(schema::param::BETA, SourceKind::Tolerance, beta),
        },
        ThermistorLaw::SteinhartHart([a, b, c]) => ThermistorCurve::SteinhartHart {
            a: *a,
            b: *b,
            c: *c,
        },
    };
    let dissipation = m
        .dissipation
        .as_ref()
        .map(|d| cx.measure(schema::param::DISSIPATION, SourceKind::Tolerance, d));
    Ok(Thermistor {
        r25,
        curve,
        dissipation,
        input: cx.inputs.input,
        senses: cx.senses,
        valid: m.range,
    })
}

/// An element opens (a cracked element, a broken wire) or shorts.
pub(super) const FAULTS: &[FaultKind] = &[FaultKind::Open, FaultKind::Short];

impl Thermistor {
    /// The element open or shorted.
    pub(super) fn faulted(&self, run: &Run<'_>, kind: FaultKind) -> Result<Faulted, EvalError> {
        run.element_fault(kind, self.input, 0.0)
    }

    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let current = run.current_into(self.input);
        let r = run
            .plan
            .driven_element(run.i, run.values, run.env, current)?;
        Ok(run.element(r, self.input))
    }

    /// [`Thermistor::eval`] in every lane of a batch.
    #[inline(always)]
    pub(super) fn eval_lanes(&self, run: &LaneRun<'_>, out: &mut Column) -> Result<(), Lost> {
        let current = run.current_into(self.input);
        let r = run.plan.driven_elements(run.i, run, current)?;
        run.element_into(&r, self.input, out);
        Ok(())
    }
}
