//! A semiconductor temperature sensor that is a current source
//! proportional to absolute temperature (PTAT).

use super::{Cx, Run};
use crate::eval::fault::{FaultKind, Faulted};
use crate::eval::lanes::{Column, LaneRun, Lost, Tag};
use crate::eval::plan::{EvalError, NodeId, Senses, Signal, SlotId, SourceKind};
use crate::eval::run::LANES;
use crate::model::schema;
use crate::model::typed;
use crate::physics::semiconductor;

#[derive(Clone, Debug, PartialEq)]
pub struct IcCurrent {
    pub slope: SlotId,
    pub senses: Senses,
    /// The excitation wired to it as its supply.
    pub input: Option<NodeId>,
}

pub(super) fn lower(m: &typed::IcCurrent, cx: &mut Cx<'_>) -> Result<IcCurrent, EvalError> {
    let slope = cx.measure(schema::param::SLOPE, SourceKind::Tolerance, &m.slope);
    if let Some(t) = &m.accuracy {
        cx.stated_error(schema::param::ACCURACY, t);
    }
    Ok(IcCurrent {
        slope,
        senses: cx.senses,
        input: cx.inputs.input,
    })
}

/// Its supply lost: no current. Stuck high: the two-terminal sensor fails
/// short, and only its load limits the current its supply drives.
pub(super) const FAULTS: &[FaultKind] = &[FaultKind::Lost, FaultKind::StuckHigh];

impl IcCurrent {
    pub(super) fn faulted(&self, run: &Run<'_>, kind: FaultKind) -> Result<Faulted, EvalError> {
        match kind {
            FaultKind::Lost => Ok(Faulted::Signal(Signal::Current(0.0))),
            FaultKind::StuckHigh => {
                let Some(Signal::Source(v)) = self.input.map(|n| run.s[n.index()]) else {
                    return Ok(Faulted::Undetermined(
                        "the sensor's supply is not wired: nothing says what limits its current once it shorts",
                    ));
                };
                let load = run
                    .plan
                    .load_resistance(run.i, run.values, run.env, run.s)?;
                Ok(Faulted::Signal(Signal::Current(v / load)))
            }
            _ => Err(run.numeric(kind.describe())),
        }
    }

    /// Its output behind a fault upstream: a lost supply is its own loss.
    pub(super) fn behind(&self, run: &Run<'_>) -> Result<Faulted, EvalError> {
        match self.input.map(|n| run.s[n.index()]) {
            Some(Signal::Source(v)) if v <= 0.0 => self.faulted(run, FaultKind::Lost),
            _ => self.eval(run).map(Faulted::Signal),
        }
    }

    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let t = run.sensed(self.senses);
        let a = semiconductor::ptat_current_a(run.values[self.slope.index()], t)
            .map_err(|_| run.numeric("no PTAT current at this temperature"))?;
        Ok(Signal::Current(a))
    }

    /// [`IcCurrent::eval`] in every lane of a batch.
    #[inline(always)]
    pub(super) fn eval_lanes(&self, run: &LaneRun<'_>, out: &mut Column) -> Result<(), Lost> {
        let t = run.sensed(self.senses);
        let slope = run.slot(self.slope);
        out.tag = Tag::Current;
        for k in 0..LANES {
            out.x[k] = semiconductor::ptat_current_a(slope[k], t[k]).map_err(|_| Lost)?;
        }
        Ok(())
    }
}

#[cfg(test)]
pub(super) mod tests {
    use crate::eval::lanes::{check, Lost};

    /// A PTAT current into a load resistor, converted with an offset
    /// calibration.
    pub const BUSBAR: &str = r#"
chain busbar "b" {
    measurand temperature -20 degC .. 100 degC
    ambient -20 degC .. 60 degC
    excitation supply { voltage 5 V ± 5 % }
    sensor ptat {
        ic_current
        slope 1 uA/K ± 0.5 %
        accuracy ± 0.5 K
    }
    sensor load { resistor 8.2 kohm ± 0.1 % drift 25 ppm/K }
    adc conv {
        bits 12
        input single
        vref 4.096 V ± 0.1 % drift 20 ppm/K
        offset 1 mV max
        gain_error ± 0.1 %
    }
    convert reading {
        method exact
        calibrate offset at 25 degC ± 0.2 K
    }
    supply -> ptat -> load -> conv -> reading
}
"#;

    #[test]
    fn lanes_match_single_runs() {
        let plan = check::plan(BUSBAR);
        let ptat = check::node(&plan, "ptat");
        let rows = check::spread(&plan);
        for (t, ambient) in [(-20.0, -20.0), (40.0, 25.0), (100.0, 60.0)] {
            let env = check::env_c(t, ambient);
            check::matches_single_runs(&plan, ptat, &rows, &env, check::mode(true, false))
                .expect("every lane runs");
        }
        // A sensed temperature below absolute zero in one lane: no PTAT
        // current there, so the batch is lost.
        let rows = check::with(&plan, rows, 3, "ptat.accuracy", -1000.0);
        let env = check::env_c(40.0, 25.0);
        let got = check::matches_single_runs(&plan, ptat, &rows, &env, check::mode(true, false));
        assert_eq!(got.err(), Some(Lost));
    }
}
