//! A semiconductor temperature sensor that is a current source
//! proportional to absolute temperature (PTAT).

use super::{Cx, Run};
use crate::eval::plan::{EvalError, Senses, Signal, SlotId, SourceKind};
use crate::model::typed;
use crate::physics::semiconductor;

#[derive(Clone, Debug, PartialEq)]
pub struct IcCurrent {
    pub slope: SlotId,
    pub senses: Senses,
}

pub(super) fn lower(m: &typed::IcCurrent, cx: &mut Cx<'_>) -> Result<IcCurrent, EvalError> {
    let slope = cx.measure("slope", SourceKind::Tolerance, &m.slope);
    if let Some(t) = &m.accuracy {
        cx.stated_error("accuracy", t);
    }
    Ok(IcCurrent {
        slope,
        senses: cx.senses,
    })
}

impl IcCurrent {
    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let t = run.sensed(self.senses);
        let a = semiconductor::ptat_current_a(run.values[self.slope], t)
            .map_err(|_| run.numeric("no PTAT current at this temperature"))?;
        Ok(Signal::Current(a))
    }
}
