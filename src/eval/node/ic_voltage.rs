//! A semiconductor temperature sensor with a linear voltage output.

use super::{Cx, Lost, Run};
use crate::eval::fault::{FaultKind, Faulted};
use crate::eval::lanes::{Column, LaneRun, Tag};
use crate::eval::plan::{EvalError, NodeId, Senses, Signal, SlotId, SourceKind};
use crate::eval::run::LANES;
use crate::model::schema;
use crate::model::typed;
use crate::physics::semiconductor;
use crate::units::ZERO_CELSIUS_K;

#[derive(Clone, Debug, PartialEq)]
pub struct IcVoltage {
    pub slope: SlotId,
    pub v0: SlotId,
    pub t0: f64,
    pub senses: Senses,
    pub rout: Option<SlotId>,
    /// The supply range it runs from, V: where a stuck output goes.
    pub supply: Option<(f64, f64)>,
    /// The excitation wired to it as its supply.
    pub input: Option<NodeId>,
}

pub(super) fn lower(m: &typed::IcVoltage, cx: &mut Cx<'_>) -> Result<IcVoltage, EvalError> {
    let slope = cx.measure(schema::param::SLOPE, SourceKind::Tolerance, &m.slope);
    let v0 = cx.measure(schema::param::OUTPUT, SourceKind::Tolerance, &m.output);
    let rout = m
        .output_resistance
        .as_ref()
        .map(|r| cx.measure(schema::param::OUTPUT_RESISTANCE, SourceKind::Tolerance, r));
    if let Some(t) = &m.accuracy {
        cx.stated_error(schema::param::ACCURACY, t);
    }
    Ok(IcVoltage {
        slope,
        v0,
        t0: m.output_at,
        senses: cx.senses,
        rout,
        supply: m.supply,
        input: cx.inputs.input,
    })
}

/// Its supply lost: the output falls to 0 V behind its output
/// resistance (the same as an output stuck low, so one row). Its output
/// stuck high: at its supply.
pub(super) const FAULTS: &[FaultKind] = &[FaultKind::Lost, FaultKind::StuckHigh];

impl IcVoltage {
    /// A stuck-high output sits at the supply: the excitation wired to
    /// it, else the low end of its stated `supply` range, the least the
    /// output can be stuck at and so the nearest to a rising window
    /// (common practice takes an output stage's high swing as its supply).
    pub(super) fn faulted(&self, run: &Run<'_>, kind: FaultKind) -> Result<Faulted, EvalError> {
        let rs = run.or_zero(self.rout);
        let wired = match self.input.map(|n| run.s[n.index()]) {
            Some(Signal::Source(v)) => Some(v),
            _ => None,
        };
        let v = match (kind, wired, self.supply) {
            (FaultKind::Lost, _, _) => 0.0,
            (FaultKind::StuckHigh, Some(v), _) => v,
            (FaultKind::StuckHigh, None, Some((low, _))) => low,
            (FaultKind::StuckHigh, None, None) => {
                return Ok(Faulted::Undetermined(
                    "the sensor's supply is neither wired nor stated: nothing says where its output sticks",
                ))
            }
            _ => return Err(run.numeric(kind.describe())),
        };
        Ok(Faulted::Signal(Signal::Voltage { v, cm: v / 2.0, rs }))
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
        let v = semiconductor::linear_voltage_v(
            run.values[self.v0.index()],
            run.values[self.slope.index()],
            self.t0 - ZERO_CELSIUS_K,
            t - ZERO_CELSIUS_K,
        );
        Ok(Signal::Voltage {
            v,
            cm: v / 2.0,
            rs: run.or_zero(self.rout),
        })
    }

    /// [`IcVoltage::eval`] in every lane of a batch.
    #[inline(always)]
    pub(super) fn eval_lanes(&self, run: &LaneRun<'_>, out: &mut Column) -> Result<(), Lost> {
        let t = run.sensed(self.senses);
        let (v0, slope) = (run.slot(self.v0), run.slot(self.slope));
        out.tag = Tag::Voltage;
        for k in 0..LANES {
            let v = semiconductor::linear_voltage_v(
                v0[k],
                slope[k],
                self.t0 - ZERO_CELSIUS_K,
                t[k] - ZERO_CELSIUS_K,
            );
            out.x[k] = v;
            out.cm[k] = v / 2.0;
        }
        out.rs = *run.or_zero(self.rout);
        Ok(())
    }
}

#[cfg(test)]
pub(super) mod tests {
    use crate::eval::lanes::check;

    /// A couple read against a voltage-output sensor at its cold junction,
    /// each through its own converter and conversion.
    pub const OVEN: &str = r#"
chain oven "o" {
    measurand temperature 80 degC .. 320 degC
    ambient 10 degC .. 40 degC
    sensor tc {
        thermocouple type K
        class 1
        cold_junction cjs
    }
    sensor cjs {
        ic_voltage
        slope 10 mV/K ± 0.5 %
        output 750 mV at 25 degC
        accuracy ± 0.5 K
        output_resistance 100 ohm
    }
    amplifier front {
        gain 200 ± 0.1 %
        offset 10 uV max
        input -0.3 V .. 3.5 V
        output 0.05 V .. 4.95 V
    }
    adc conv {
        bits 16
        input single
        vref 4.096 V ± 0.04 % drift 5 ppm/K
        offset 0.5 mV max
        gain_error ± 0.05 %
    }
    adc cj_conv {
        bits 12
        input single
        vref 2.5 V ± 0.04 % drift 5 ppm/K
        offset 1 mV max
        gain_error ± 0.1 %
    }
    convert cj_reading { method exact }
    convert reading { method exact }
    tc -> front -> conv -> reading
    cjs -> cj_conv -> cj_reading -> reading.cj
}
"#;

    #[test]
    fn lanes_match_single_runs() {
        let plan = check::plan(OVEN);
        let cjs = check::node(&plan, "cjs");
        let rows = check::spread(&plan);
        for (t, ambient) in [(80.0, 10.0), (200.0, 25.0), (320.0, 40.0)] {
            for calibrating in [false, true] {
                let mode = check::mode(true, calibrating);
                check::matches_single_runs(&plan, cjs, &rows, &check::env_c(t, ambient), mode)
                    .expect("every lane runs");
            }
        }
        // Its output fails in no lane: a value that is not a number gives
        // a signal that is not one, which loses the batch in its run.
        let rows = check::with(&plan, rows, 5, "cjs.slope", f64::NAN);
        let env = check::env_c(200.0, 25.0);
        let column = check::matches_single_runs(&plan, cjs, &rows, &env, check::mode(true, false))
            .expect("every lane runs");
        assert!(!column.finite());
    }
}
