//! A strain gauge: ΔR/R = GF · ε, on the tension or compression side.

use super::{Cx, Run};
use crate::eval::fault::{FaultKind, Faulted};
use crate::eval::plan::{EvalError, NodeId, Signal, SlotId, SourceKind};
use crate::model::schema;
use crate::model::typed::{self, GaugeSide};
use crate::physics::strain;
use crate::units::Dim;

#[derive(Clone, Debug, PartialEq)]
pub struct StrainGauge {
    pub r: SlotId,
    pub gauge_factor: SlotId,
    /// +1 in tension, −1 on the compression side.
    pub sign: f64,
    pub input: Option<NodeId>,
}

pub(super) fn lower(m: &typed::StrainGauge, cx: &mut Cx<'_>) -> Result<StrainGauge, EvalError> {
    if cx.measurand.dim != Dim::NONE {
        return Err(cx.not_invertible("a strain gauge needs a `strain` measurand"));
    }
    let r = cx.measure(schema::param::R, SourceKind::Tolerance, &m.r);
    let gauge_factor = cx.measure(
        schema::param::GAUGE_FACTOR,
        SourceKind::Tolerance,
        &m.gauge_factor,
    );
    // A gauge on the compression side sees the strain reversed.
    let sign = match m.side {
        GaugeSide::Tension => 1.0,
        GaugeSide::Compression => -1.0,
    };
    Ok(StrainGauge {
        r,
        gauge_factor,
        sign,
        input: cx.inputs.input,
    })
}

/// An element opens (a cracked element, a broken wire) or shorts.
pub(super) const FAULTS: &[FaultKind] = &[FaultKind::Open, FaultKind::Short];

impl StrainGauge {
    /// The element open or shorted.
    pub(super) fn faulted(&self, run: &Run<'_>, kind: FaultKind) -> Result<Faulted, EvalError> {
        run.element_fault(kind, self.input, 0.0)
    }

    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let r = strain::gauge_resistance(
            run.values[self.r.index()],
            run.values[self.gauge_factor.index()],
            self.sign * run.env.measurand,
        );
        Ok(run.element(r, self.input))
    }
}
