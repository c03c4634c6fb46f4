//! A divider or a Wheatstone bridge (quarter, half, full): its completion
//! resistors, each its own part, and the output, common mode and source
//! resistance of the solved circuit (`physics::strain`), with the
//! self-heating of the elements in its arms (`eval/element.rs`).

use super::{Cx, Run};
use crate::eval::element::{Supply, SupplyLanes};
use crate::eval::fault::{FaultKind, Faulted, OPEN_OHMS, SHORT_OHMS};
use crate::eval::lanes::{Column, LaneRun, Lost, Tag};
use crate::eval::plan::{DriftSlot, EvalError, NodeId, Signal, SlotId, SourceKind};
use crate::eval::run::{Mode, LANES};
use crate::model::schema;
use crate::model::typed::{self, BridgeForm, Side};
use crate::physics::strain;

#[derive(Clone, Debug, PartialEq)]
pub struct Bridge {
    pub kind: BridgeKind,
    /// The completion resistor (the first, where there are several).
    pub r: Option<SlotId>,
    pub drift: Option<DriftSlot>,
    /// The other completion resistors, each its own tolerance and
    /// drift: a quarter bridge's r3 and r4, a half bridge's r4.
    pub others: Vec<(SlotId, Option<DriftSlot>)>,
    pub exc: NodeId,
    pub arms: Vec<NodeId>,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum BridgeKind {
    Divider { sensor_high: bool },
    Quarter,
    Half,
    Full,
}

pub(super) fn lower(m: &typed::Bridge, cx: &mut Cx<'_>) -> Result<Bridge, EvalError> {
    let kind = match m.form {
        BridgeForm::Divider(side) => BridgeKind::Divider {
            sensor_high: side == Side::High,
        },
        BridgeForm::Quarter => BridgeKind::Quarter,
        BridgeForm::Half => BridgeKind::Half,
        BridgeForm::Full => BridgeKind::Full,
    };
    // Each completion resistor is its own part, with its own tolerance
    // and drift.
    let parts = m.form.completion_resistors();
    let mut completion = Vec::new();
    if let Some(r) = &m.r {
        for k in 1..=parts {
            let name = if parts == 1 {
                schema::param::R.to_string()
            } else {
                format!("r_{k}")
            };
            let value = cx.measure(&name, SourceKind::Tolerance, r);
            completion.push((value, cx.drift_of(&name, r)));
        }
    }
    let (r, drift) = match completion.first() {
        Some(&(r, drift)) => (Some(r), drift),
        None => (None, None),
    };
    let others = completion.get(1..).unwrap_or_default().to_vec();
    let exc = cx
        .inputs
        .exc
        .ok_or_else(|| cx.not_invertible("no excitation"))?;
    Ok(Bridge {
        kind,
        r,
        drift,
        others,
        exc,
        arms: cx.inputs.arms.clone(),
    })
}

/// Each completion resistor open or shorted (its arms are elements of
/// their own, each with its own faults).
const COMPLETION: [&[FaultKind]; 4] = [
    &[],
    &[FaultKind::CompletionOpen(1), FaultKind::CompletionShort(1)],
    &[
        FaultKind::CompletionOpen(1),
        FaultKind::CompletionShort(1),
        FaultKind::CompletionOpen(2),
        FaultKind::CompletionShort(2),
    ],
    &[
        FaultKind::CompletionOpen(1),
        FaultKind::CompletionShort(1),
        FaultKind::CompletionOpen(2),
        FaultKind::CompletionShort(2),
        FaultKind::CompletionOpen(3),
        FaultKind::CompletionShort(3),
    ],
];

impl Bridge {
    /// One open and one short per completion resistor it has.
    pub(super) fn faults(&self) -> &'static [FaultKind] {
        let parts = usize::from(self.r.is_some()) + self.others.len();
        COMPLETION[parts.min(COMPLETION.len() - 1)]
    }

    /// The circuit with one completion resistor open or shorted: the
    /// solved bridge then gives what the converter sees.
    pub(super) fn faulted(&self, run: &Run<'_>, kind: FaultKind) -> Result<Faulted, EvalError> {
        let replaced = match kind {
            FaultKind::CompletionOpen(n) => (n, OPEN_OHMS),
            FaultKind::CompletionShort(n) => (n, SHORT_OHMS),
            _ => return Err(run.numeric(kind.describe())),
        };
        self.solve(run, Some(replaced)).map(Faulted::Signal)
    }

    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        self.solve(run, None)
    }

    /// The solved circuit, with completion resistor `n` (1-based) of
    /// `ohms` in place of its part where `replaced` says so.
    #[inline(always)]
    fn solve(&self, run: &Run<'_>, replaced: Option<(u8, f64)>) -> Result<Signal, EvalError> {
        let (values, s) = (run.values, run.s);
        let part = |n: u8, value: f64| match replaced {
            Some((k, ohms)) if k == n => ohms,
            _ => value,
        };
        let nominal_fixed = self
            .r
            .map(|r| run.drifted(values[r.index()], self.drift))
            .unwrap_or(0.0);
        let fixed = part(1, nominal_fixed);
        // Each further completion resistor is its own part.
        let other = |k: usize| {
            let value = self
                .others
                .get(k)
                .map(|&(r, drift)| run.drifted(values[r.index()], drift))
                .unwrap_or(nominal_fixed);
            part(k as u8 + 2, value)
        };
        let arm = |k: usize| match self.arms.get(k).map(|&n| s[n.index()]) {
            Some(Signal::Element(r)) => Ok(r),
            _ => Err(run.numeric("a bridge arm has no element")),
        };
        // Arms by position, as drawn in `physics::strain`: r1 r2 on the
        // positive side, r3 r4 on the negative; active elements in edge
        // order go to r2, r3, r1, r4.
        let next_lead = |n: NodeId| run.plan.next_arm_lead(n, values);
        let (r1, r2, r3, r4) = match self.kind {
            BridgeKind::Divider { sensor_high } => {
                let fixed = fixed + self.arms.first().map_or(0.0, |&n| next_lead(n));
                return self.divider(run, sensor_high, fixed, arm(0)?);
            }
            BridgeKind::Quarter => (fixed, arm(0)?, other(0), other(1)),
            BridgeKind::Half => (fixed, arm(0)?, arm(1)?, other(0)),
            BridgeKind::Full => (arm(2)?, arm(0)?, arm(1)?, arm(3)?),
        };
        let mut arms = [r1, r2, r3, r4];
        for (k, n) in self.next_arms() {
            arms[k] += next_lead(n);
        }
        let exc = s[self.exc.index()];
        let placed = self.placed(run.mode);
        let [r1, r2, r3, r4] = run
            .plan
            .heated_bridge_arms(arms, placed, exc, values, run.env)?;
        let v_exc = match exc {
            Signal::Source(v) => v,
            Signal::Current(a) => strain::bridge_excitation_v(a, r1, r2, r3, r4),
            _ => return Err(run.numeric("no excitation")),
        };
        let bad = |_| run.numeric("the bridge has no output (an arm of zero resistance)");
        let v = strain::bridge_output(v_exc, r1, r2, r3, r4).map_err(bad)?;
        let cm = strain::bridge_common_mode(v_exc, r1, r2, r3, r4).map_err(bad)?;
        let rs = strain::bridge_output_resistance(r1, r2, r3, r4).map_err(bad)?;
        Ok(Signal::Voltage { v, cm, rs })
    }

    /// A divider: the element below or above the fixed resistor.
    #[inline(always)]
    fn divider(
        &self,
        run: &Run<'_>,
        sensor_high: bool,
        fixed: f64,
        arm: f64,
    ) -> Result<Signal, EvalError> {
        let exc = run.s[self.exc.index()];
        let supply = Supply::of_divider(exc, fixed, sensor_high);
        let element = match self.heated_arm(run.mode) {
            Some(n) => run
                .plan
                .heated_divider_element(n, arm, supply, run.values, run.env)?,
            None => arm,
        };
        let (low, high) = if sensor_high {
            (fixed, element)
        } else {
            (element, fixed)
        };
        let bad = |_| run.numeric("the bridge has no output (an arm of zero resistance)");
        let v = match exc {
            Signal::Source(v) => strain::divider_output(v, low, high).map_err(bad)?,
            Signal::Current(a) => a * low,
            _ => return Err(run.numeric("no excitation")),
        };
        Ok(Signal::Voltage {
            v,
            cm: v / 2.0,
            rs: strain::divider_output_resistance(low, high),
        })
    }

    /// Which element sits in each arm by position (r1 r2 | r3 r4), as
    /// `Bridge::solve` places them; a divider's element is its first.
    #[inline(always)]
    pub(crate) fn positions(&self) -> [Option<NodeId>; 4] {
        let at = |k: usize| self.arms.get(k).copied();
        match self.kind {
            BridgeKind::Quarter => [None, at(0), None, None],
            BridgeKind::Half => [None, at(0), at(1), None],
            BridgeKind::Full | BridgeKind::Divider { .. } => [at(2), at(0), at(1), at(3)],
        }
    }

    /// Each element with the position of the next arm on its side, the
    /// one sharing its output node (k ^ 1), where a three-wire element's
    /// wire 2 runs.
    pub(crate) fn next_arms(&self) -> impl Iterator<Item = (usize, NodeId)> {
        let positions = self.positions().into_iter().enumerate();
        positions.filter_map(|(k, n)| Some((k ^ 1, n?)))
    }

    /// [`Bridge::positions`] for self-heating: a faulted arm is what the
    /// fault made it, not heated again.
    #[inline(always)]
    fn placed(&self, mode: Mode) -> [Option<NodeId>; 4] {
        self.positions()
            .map(|n| n.filter(|&n| mode.faulted != Some(n)))
    }

    /// A divider's element, for its self-heating, unless it is faulted.
    #[inline(always)]
    fn heated_arm(&self, mode: Mode) -> Option<NodeId> {
        self.arms
            .first()
            .copied()
            .filter(|&n| mode.faulted != Some(n))
    }
}

impl Bridge {
    /// [`Bridge::eval`] in every lane of a batch.
    #[inline(always)]
    pub(super) fn eval_lanes(&self, run: &LaneRun<'_>, out: &mut Column) -> Result<(), Lost> {
        let exc = &run.s[self.exc.index()];
        if !matches!(exc.tag, Tag::Source | Tag::Current) {
            return Err(Lost);
        }
        let fixed = self
            .r
            .map(|r| run.drifted(run.slot(r), self.drift))
            .unwrap_or([0.0; LANES]);
        // Each further completion resistor is its own part.
        let other = |k: usize| {
            self.others
                .get(k)
                .map(|&(r, drift)| run.drifted(run.slot(r), drift))
                .unwrap_or(fixed)
        };
        let arm = |k: usize| {
            let n = self.arms.get(k).ok_or(Lost)?;
            run.s[n.index()].of(Tag::Element).copied().ok_or(Lost)
        };
        // Arms by position, as in `Bridge::solve`.
        let next_lead = |n: NodeId| run.plan.next_arm_lead_lanes(n, run);
        let (r1, r2, r3, r4) = match self.kind {
            BridgeKind::Divider { sensor_high } => {
                let lead = self.arms.first().map_or([0.0; LANES], |&n| next_lead(n));
                let fixed = std::array::from_fn(|j| fixed[j] + lead[j]);
                return self.divider_lanes(run, sensor_high, &fixed, &arm(0)?, out);
            }
            BridgeKind::Quarter => (fixed, arm(0)?, other(0), other(1)),
            BridgeKind::Half => (fixed, arm(0)?, arm(1)?, other(0)),
            BridgeKind::Full => (arm(2)?, arm(0)?, arm(1)?, arm(3)?),
        };
        let mut arms: [[f64; 4]; LANES] = std::array::from_fn(|j| [r1[j], r2[j], r3[j], r4[j]]);
        for (k, n) in self.next_arms() {
            for (arms, lead) in arms.iter_mut().zip(next_lead(n)) {
                arms[k] += lead;
            }
        }
        let arms = run
            .plan
            .heated_bridge_arm_lanes(arms, self.placed(run.mode), exc, run)?;
        out.tag = Tag::Voltage;
        for (j, &[r1, r2, r3, r4]) in arms.iter().enumerate() {
            let v_exc = match exc.tag {
                Tag::Current => strain::bridge_excitation_v(exc.x[j], r1, r2, r3, r4),
                _ => exc.x[j],
            };
            let lost = |_| Lost;
            out.x[j] = strain::bridge_output(v_exc, r1, r2, r3, r4).map_err(lost)?;
            out.cm[j] = strain::bridge_common_mode(v_exc, r1, r2, r3, r4).map_err(lost)?;
            out.rs[j] = strain::bridge_output_resistance(r1, r2, r3, r4).map_err(lost)?;
        }
        Ok(())
    }

    /// [`Bridge::divider`] in every lane of a batch.
    #[inline(always)]
    fn divider_lanes(
        &self,
        run: &LaneRun<'_>,
        sensor_high: bool,
        fixed: &[f64; LANES],
        arm: &[f64; LANES],
        out: &mut Column,
    ) -> Result<(), Lost> {
        let exc = &run.s[self.exc.index()];
        let supply = SupplyLanes::of_divider(exc, fixed, sensor_high);
        let element = match self.heated_arm(run.mode) {
            Some(n) => run.plan.heated_divider_elements(n, arm, supply, run)?,
            None => *arm,
        };
        out.tag = Tag::Voltage;
        for j in 0..LANES {
            let (low, high) = if sensor_high {
                (fixed[j], element[j])
            } else {
                (element[j], fixed[j])
            };
            let v = match exc.tag {
                Tag::Current => exc.x[j] * low,
                _ => strain::divider_output(exc.x[j], low, high).map_err(|_| Lost)?,
            };
            out.x[j] = v;
            out.cm[j] = v / 2.0;
            out.rs[j] = strain::divider_output_resistance(low, high);
        }
        Ok(())
    }
}
