//! A low-pass filter: it passes DC; a passive RC adds its series
//! resistance to the source resistance. Its response is the dynamics'.

use super::{Cx, Lost, Run};
use crate::eval::fault::FaultKind;
use crate::eval::lanes::{Column, LaneRun, Tag};
use crate::eval::plan::{EvalError, NodeId, Signal, SlotId, SourceKind};
use crate::model::schema;
use crate::model::typed;
use crate::physics::filter::Response;

#[derive(Clone, Debug, PartialEq)]
pub struct Filter {
    pub input: NodeId,
    pub series: Option<SlotId>,
}

pub(super) fn lower(m: &typed::Filter, cx: &mut Cx<'_>) -> Result<Filter, EvalError> {
    let series = match m.response {
        Response::Rc => {
            m.r.as_ref()
                .map(|r| cx.measure(schema::param::R, SourceKind::Tolerance, r))
        }
        // An active filter's input is its buffer's.
        Response::Butterworth | Response::Bessel => None,
    };
    Ok(Filter {
        input: cx
            .inputs
            .input
            .ok_or_else(|| cx.not_invertible("no input"))?,
        series,
    })
}

/// None of its own yet: a passive network's open or shorted part is not
/// modelled.
pub(super) const FAULTS: &[FaultKind] = &[];

impl Filter {
    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        Ok(match run.s[self.input.index()] {
            Signal::Voltage { v, cm, rs } => Signal::Voltage {
                v,
                cm,
                rs: rs + run.or_zero(self.series),
            },
            other => other,
        })
    }

    /// [`Filter::eval`] in every lane of a batch.
    #[inline(always)]
    pub(super) fn eval_lanes(&self, run: &LaneRun<'_>, out: &mut Column) -> Result<(), Lost> {
        *out = run.s[self.input.index()];
        if out.tag == Tag::Voltage {
            let series = run.or_zero(self.series);
            for (rs, series) in out.rs.iter_mut().zip(series) {
                *rs += series;
            }
        }
        Ok(())
    }
}
