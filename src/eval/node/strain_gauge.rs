//! A strain gauge: ΔR/R = GF · ε, on the tension or compression side,
//! with its gauge factor's temperature coefficient and its thermal output
//! (the apparent strain of its temperature) at the ambient, which the
//! gauge on its structure shares.

use super::{Cx, Lost, Run};
use crate::eval::fault::{FaultKind, Faulted};
use crate::eval::lanes::{Column, LaneRun};
use crate::eval::plan::{DriftSlot, EvalError, NodeId, Signal, SlotId, SourceKind};
use crate::eval::run::LANES;
use crate::model::schema;
use crate::model::typed::{self, GaugeSide};
use crate::physics::strain;
use crate::units::Dim;

#[derive(Clone, Debug, PartialEq)]
pub struct StrainGauge {
    pub r: SlotId,
    pub gauge_factor: SlotId,
    pub gauge_factor_drift: Option<DriftSlot>,
    /// Apparent strain per kelvin, about zero.
    pub thermal_output: Option<SlotId>,
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
    let gauge_factor_drift = cx.drift_of(schema::param::GAUGE_FACTOR, &m.gauge_factor);
    let thermal_output = m
        .thermal_output
        .as_ref()
        .map(|t| cx.limit(schema::param::THERMAL_OUTPUT, SourceKind::Drift, t));
    // A gauge on the compression side sees the strain reversed.
    let sign = match m.side {
        GaugeSide::Tension => 1.0,
        GaugeSide::Compression => -1.0,
    };
    Ok(StrainGauge {
        r,
        gauge_factor,
        gauge_factor_drift,
        thermal_output,
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
        let dt = run.env.ambient - run.plan.reference;
        let gauge_factor = run.drifted(
            run.values[self.gauge_factor.index()],
            self.gauge_factor_drift,
        );
        // The apparent strain is the gauge's own, whichever side it is on.
        let apparent = strain::thermal_output_strain(run.or_zero(self.thermal_output), dt);
        let r = strain::gauge_resistance(
            run.values[self.r.index()],
            gauge_factor,
            self.sign * run.env.measurand + apparent,
        );
        Ok(run.element(r, self.input))
    }

    /// [`StrainGauge::eval`] in every lane of a batch.
    #[inline(always)]
    pub(super) fn eval_lanes(&self, run: &LaneRun<'_>, out: &mut Column) -> Result<(), Lost> {
        let dt = run.env.ambient - run.plan.reference;
        let r0 = run.slot(self.r);
        let gauge_factor = run.drifted(run.slot(self.gauge_factor), self.gauge_factor_drift);
        let thermal_output = run.or_zero(self.thermal_output);
        let strain = self.sign * run.env.measurand;
        let mut r = [0.0; LANES];
        for k in 0..LANES {
            let apparent = strain::thermal_output_strain(thermal_output[k], dt);
            r[k] = strain::gauge_resistance(r0[k], gauge_factor[k], strain + apparent);
        }
        run.element_into(&r, self.input, out);
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use crate::eval::lanes::check;
    use crate::eval::plan::Env;
    use crate::units::ZERO_CELSIUS_K;

    /// A gauge as a quarter bridge's arm.
    const QUARTER: &str = r#"
chain beam "q" {
    measurand strain -1000 ue .. 1000 ue
    excitation supply { voltage 5 V ± 0.1 % drift 10 ppm/K }
    sensor gauge {
        strain_gauge
        r 350 ohm ± 0.3 %
        gauge_factor 2.0 ± 1 % drift 90 ppm/K
        thermal_output ± 1.8 ue/K
        side compression
    }
    bridge completion {
        quarter
        r 350 ohm ± 0.1 % drift 5 ppm/K
    }
    amplifier front {
        gain 100 ± 0.1 %
        offset 20 uV max
    }
    adc conv {
        bits 24
        input differential
        gain_error ± 2 LSB
    }
    convert reading { method linear }
    supply -> completion -> front -> conv -> reading
    gauge -> completion.arm
    supply -> conv.ref
}
"#;

    /// Two gauges in series on one current source, the lower one the
    /// converter's reference: the upper one's common mode sits on the
    /// lower one's voltage.
    const STRING: &str = r#"
chain beam "s" {
    measurand strain -1000 ue .. 1000 ue
    excitation drive { current 1 mA ± 0.1 % }
    sensor lower {
        strain_gauge
        r 350 ohm ± 0.3 %
        gauge_factor 2.0 ± 1 %
    }
    sensor upper {
        strain_gauge
        r 350 ohm ± 0.3 %
        gauge_factor 2.1 ± 1 %
        side compression
    }
    adc conv {
        bits 24
        input differential
    }
    convert reading { method linear }
    drive -> upper -> conv -> reading
    drive -> lower -> conv.ref
}
"#;

    #[test]
    fn lanes_match_single_runs() {
        for (spec, gauges) in [(QUARTER, &["gauge"][..]), (STRING, &["upper", "lower"])] {
            let plan = check::plan(spec);
            let rows = check::spread(&plan);
            for &name in gauges {
                let gauge = check::node(&plan, name);
                for strain in [-1e-3, 0.0, 3e-4, 1e-3] {
                    let env = Env {
                        measurand: strain,
                        ambient: 35.0 + ZERO_CELSIUS_K,
                        cold_junction: 35.0 + ZERO_CELSIUS_K,
                    };
                    let mode = check::mode(true, false);
                    check::matches_single_runs(&plan, gauge, &rows, &env, mode)
                        .expect("every lane runs");
                }
                // A gauge fails in no lane: a value that is not a number
                // gives a resistance that is not one, which loses the
                // batch in its run.
                let id = format!("{name}.gauge_factor");
                let rows = check::with(&plan, rows.clone(), 6, &id, f64::NAN);
                let env = Env {
                    measurand: 5e-4,
                    ambient: 300.0,
                    cold_junction: 300.0,
                };
                let column =
                    check::matches_single_runs(&plan, gauge, &rows, &env, check::mode(true, false))
                        .expect("every lane runs");
                assert!(!column.finite());
            }
        }
    }
}
