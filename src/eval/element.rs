//! Resistive temperature elements: their resistance at the temperature
//! they sense plus any self-heating, and the self-heating fixed point
//! wherever they sit (on a current source, in a divider or a bridge).

use super::env::Senses;
use super::lanes::{all_finite, all_positive, celsius_within, Column, LaneRun, Lost};
use super::node::{self, Node, RtdCurve, ThermistorCurve};
use super::plan::{Env, EvalError, NodeId, Plan, Signal, SlotId};
use super::run::{within, LANES};
use crate::physics::{exp, rtd, strain, thermistor};
use crate::units::ZERO_CELSIUS_K;

/// What drives a divider's element: a voltage across it in series with
/// the divider's other resistor, a current through it, or nothing.
#[derive(Clone, Copy, Debug)]
pub(super) enum Supply {
    Voltage { v: f64, other: f64 },
    Current(f64),
    None,
}

impl Supply {
    /// The power, W, an element of `r` Ω dissipates on this supply, with
    /// `leads` Ω of its leads in series.
    #[inline(always)]
    fn power_w(self, r: f64, leads: f64) -> f64 {
        match self {
            Supply::Voltage { v, other } => strain::series_element_power_w(v, r, leads + other),
            Supply::Current(a) => a * a * r,
            Supply::None => 0.0,
        }
    }

    /// What a divider's excitation `exc` puts through its element, the
    /// other resistor `fixed` Ω: a current source's current flows through
    /// the lower resistor only.
    #[inline(always)]
    pub(super) fn of_divider(exc: Signal, fixed: f64, sensor_high: bool) -> Supply {
        match exc {
            Signal::Source(v) => Supply::Voltage { v, other: fixed },
            Signal::Current(a) if !sensor_high => Supply::Current(a),
            _ => Supply::None,
        }
    }
}

/// [`Supply`] in every lane of a batch: its kind follows from the
/// excitation's, the same in every lane, so it is matched once a batch
/// and the lanes' powers computed side by side.
#[derive(Clone, Copy, Debug)]
pub(super) enum SupplyLanes<'a> {
    Voltage {
        v: &'a [f64; LANES],
        other: &'a [f64; LANES],
    },
    Current(&'a [f64; LANES]),
    None,
}

impl<'a> SupplyLanes<'a> {
    /// [`Supply::of_divider`] of every lane: `exc` the excitation's
    /// column.
    #[inline(always)]
    pub(super) fn of_divider(
        exc: &'a Column,
        fixed: &'a [f64; LANES],
        sensor_high: bool,
    ) -> SupplyLanes<'a> {
        // The kind is the first lane's, as a single run takes it.
        match Supply::of_divider(exc.signal(0), fixed[0], sensor_high) {
            Supply::Voltage { .. } => SupplyLanes::Voltage {
                v: &exc.x,
                other: fixed,
            },
            Supply::Current(_) => SupplyLanes::Current(&exc.x),
            Supply::None => SupplyLanes::None,
        }
    }
}

/// The heated element in each arm of a bridge, if any.
type ArmHeating = [Option<(NodeId, Heating)>; 4];

/// How an element heats: its dissipation constant's slot and whether its
/// response is strongly curved (a thermistor), for [`self_heated`].
#[derive(Clone, Copy, Debug)]
pub struct Heating {
    pub dissipation: SlotId,
    pub curved: bool,
    /// What the element's temperature is: the measurand, or a cold
    /// junction (which the measurand does not move).
    pub senses: Senses,
}

impl Plan {
    /// The element's self-heating, if it states a dissipation constant:
    /// the one answer the evaluator and the checklist's review item share.
    #[inline]
    pub fn heating(&self, n: NodeId) -> Option<Heating> {
        match &self.nodes[n.index()] {
            Node::Rtd(node::Rtd {
                dissipation: Some(d),
                senses,
                ..
            }) => Some(Heating {
                dissipation: *d,
                curved: false,
                senses: *senses,
            }),
            Node::Thermistor(node::Thermistor {
                dissipation: Some(d),
                senses,
                ..
            }) => Some(Heating {
                dissipation: *d,
                curved: true,
                senses: *senses,
            }),
            Node::Rtd(node::Rtd {
                dissipation: None, ..
            })
            | Node::Thermistor(node::Thermistor {
                dissipation: None, ..
            })
            | Node::Excitation(_)
            | Node::Thermocouple(_)
            | Node::IcVoltage(_)
            | Node::IcCurrent(_)
            | Node::StrainGauge(_)
            | Node::Transducer(_)
            | Node::Resistor(_)
            | Node::Bridge(_)
            | Node::Amplifier(_)
            | Node::Filter(_)
            | Node::Adc(_)
            | Node::Convert(_) => None,
        }
    }

    /// The lead resistance element node `n` adds to its arm value in a
    /// bridge or divider: the arm less this is the element itself,
    /// without evaluating its curve again.
    fn element_leads(&self, n: NodeId, values: &[f64]) -> f64 {
        self.lead_slots(n).map_or(0.0, |(wiring, a, b)| {
            rtd::arm_lead_resistance(wiring, values[a.index()], values[b.index()])
        })
    }

    /// [`Plan::element_leads`] in every lane, from the leads' columns.
    #[inline(always)]
    fn element_leads_lanes(&self, n: NodeId, run: &LaneRun<'_>) -> [f64; LANES] {
        let Some((wiring, a, b)) = self.lead_slots(n) else {
            return [0.0; LANES];
        };
        let (a, b) = (run.slot(a), run.slot(b));
        std::array::from_fn(|k| rtd::arm_lead_resistance(wiring, a[k], b[k]))
    }

    /// The lead resistance, Ω, element node `n` puts in the next arm on
    /// its side of a bridge or divider: a three-wire element's wire 2.
    pub(crate) fn next_arm_lead(&self, n: NodeId, values: &[f64]) -> f64 {
        self.lead_slots(n).map_or(0.0, |(wiring, _, b)| {
            rtd::next_arm_lead_resistance(wiring, values[b.index()])
        })
    }

    /// [`Plan::next_arm_lead`] in every lane, from the lead's column.
    #[inline(always)]
    pub(super) fn next_arm_lead_lanes(&self, n: NodeId, run: &LaneRun<'_>) -> [f64; LANES] {
        let Some((wiring, _, b)) = self.lead_slots(n) else {
            return [0.0; LANES];
        };
        let b = run.slot(b);
        std::array::from_fn(|k| rtd::next_arm_lead_resistance(wiring, b[k]))
    }

    /// The wiring and the two leads' slots of element node `n`, if it has
    /// leads.
    fn lead_slots(&self, n: NodeId) -> Option<(rtd::Wiring, SlotId, SlotId)> {
        match &self.nodes[n.index()] {
            Node::Rtd(node::Rtd {
                wiring,
                leads: Some((a, b)),
                ..
            }) => Some((*wiring, *a, *b)),
            Node::Rtd(node::Rtd { leads: None, .. })
            | Node::Thermistor(_)
            | Node::Excitation(_)
            | Node::Thermocouple(_)
            | Node::IcVoltage(_)
            | Node::IcCurrent(_)
            | Node::StrainGauge(_)
            | Node::Transducer(_)
            | Node::Resistor(_)
            | Node::Bridge(_)
            | Node::Amplifier(_)
            | Node::Filter(_)
            | Node::Adc(_)
            | Node::Convert(_) => None,
        }
    }

    /// Element `n`'s resistance where it sits on a current source of
    /// `current` A (or in a bridge arm: `None`), self-heated by I²R when it
    /// states a dissipation constant.
    #[inline(always)]
    pub(super) fn driven_element(
        &self,
        n: NodeId,
        values: &[f64],
        env: &Env,
        current: Option<f64>,
    ) -> Result<f64, EvalError> {
        let (curve, t) = self.element_curve(n, values, env)?;
        let cold = curve.resistance(t).map_err(|_| self.no_resistance(n))?;
        match (current, self.heating(n)) {
            (Some(a), Some(heating)) => {
                let delta = values[heating.dissipation.index()];
                self_heated(cold, heating.curved, |r| {
                    curve.heated_resistance(t, a * a * r, delta)
                })
                .map_err(|e| self.unheated(n, e))
            }
            _ => Ok(cold),
        }
    }

    /// Only a thermistor's curve can have no resistance (an RTD's always
    /// has one).
    fn no_resistance(&self, n: NodeId) -> EvalError {
        self.numeric(
            n,
            "the thermistor curve has no resistance at this temperature",
        )
    }

    /// Element `n`'s curve with this run's values, and the temperature it
    /// senses in the curve's unit (°C for an RTD, K for a thermistor). The
    /// curve's range is checked here, at the sensed temperature; the few
    /// millikelvin of self-heating are the element's own doing, not a
    /// reading.
    #[inline(always)]
    fn element_curve(
        &self,
        n: NodeId,
        values: &[f64],
        env: &Env,
    ) -> Result<(ElementCurve, f64), EvalError> {
        match &self.nodes[n.index()] {
            Node::Rtd(node::Rtd {
                curve,
                coefficient_errors,
                r0,
                deviation,
                senses,
                ..
            }) => {
                let t = self.sensed(n, *senses, env, values);
                let range = curve.range_c();
                let t_c = within(t - ZERO_CELSIUS_K, range)
                    .ok_or_else(|| self.out_of_range(n, "the element's curve", t, range))?;
                let error = |k: usize| {
                    coefficient_errors[k]
                        .map(|s| values[s.index()])
                        .unwrap_or(0.0)
                };
                let curve = match *curve {
                    RtdCurve::Cvd { a, b, c } => RtdCurve::Cvd {
                        a: a + error(0),
                        b: b + error(1),
                        c: c + error(2),
                    },
                    other => other,
                };
                let element = ElementCurve::Rtd {
                    curve,
                    r0: values[r0.index()],
                    deviation: deviation.map(|(d0, da)| (values[d0.index()], values[da.index()])),
                };
                Ok((element, t_c))
            }
            Node::Thermistor(node::Thermistor {
                r25, curve, senses, ..
            }) => {
                let element = match curve {
                    ThermistorCurve::Beta { beta } => ElementCurve::Beta {
                        r25: values[r25.index()],
                        beta: values[beta.index()],
                    },
                    ThermistorCurve::SteinhartHart { a, b, c } => {
                        ElementCurve::SteinhartHart(thermistor::SteinhartHart {
                            a: *a,
                            b: *b,
                            c: *c,
                        })
                    }
                };
                Ok((element, self.sensed(n, *senses, env, values)))
            }
            Node::Excitation(_)
            | Node::Thermocouple(_)
            | Node::IcVoltage(_)
            | Node::IcCurrent(_)
            | Node::StrainGauge(_)
            | Node::Transducer(_)
            | Node::Resistor(_)
            | Node::Bridge(_)
            | Node::Amplifier(_)
            | Node::Filter(_)
            | Node::Adc(_)
            | Node::Convert(_) => Err(self.numeric(n, "not a temperature element")),
        }
    }

    /// Element `n`'s resistance heated by the power it dissipates where it
    /// sits: `power(r)`, W, at its resistance `r`, and ΔT = P/δ. From
    /// `cold`, its resistance unheated.
    pub(super) fn heated(
        &self,
        n: NodeId,
        heating: Heating,
        cold: f64,
        values: &[f64],
        env: &Env,
        power: impl Fn(f64) -> f64,
    ) -> Result<f64, EvalError> {
        let delta = values[heating.dissipation.index()];
        let (curve, t) = self.element_curve(n, values, env)?;
        self_heated(cold, heating.curved, |r| {
            curve.heated_resistance(t, power(r), delta)
        })
        .map_err(|e| self.unheated(n, e))
    }

    /// Why a self-heated element has no resistance.
    fn unheated(&self, n: NodeId, why: Unheated) -> EvalError {
        match why {
            Unheated::Curve => self.no_resistance(n),
            Unheated::Heating => self.numeric(
                n,
                "the self-heating has no value (a dissipation constant at or below zero)",
            ),
        }
    }
}

impl Plan {
    /// A divider's element heated by what its supply puts through it:
    /// `element` is its arm value (element and leads); only the element
    /// itself dissipates into its sensing point.
    pub(super) fn heated_divider_element(
        &self,
        node: NodeId,
        element: f64,
        supply: Supply,
        values: &[f64],
        env: &Env,
    ) -> Result<f64, EvalError> {
        let Some(heating) = self.heating(node) else {
            return Ok(element);
        };
        let leads = self.element_leads(node, values);
        let cold = element - leads;
        let power = |r: f64| supply.power_w(r, leads);
        Ok(self.heated(node, heating, cold, values, env, power)? + leads)
    }

    /// Each arm's heated element and the passes they take (one for a
    /// single heated element, two where several heat); None where no arm
    /// heats.
    fn arm_heating(&self, nodes: [Option<NodeId>; 4]) -> Option<(ArmHeating, usize)> {
        let heating: ArmHeating =
            std::array::from_fn(|k| nodes[k].and_then(|n| self.heating(n).map(|h| (n, h))));
        match heating.iter().flatten().count() {
            0 => None,
            1 => Some((heating, 1)),
            _ => Some((heating, 2)),
        }
    }

    /// The arms of a Wheatstone bridge (r1 r2 | r3 r4, as in
    /// `physics::strain`) with each heated element's self-heating, from
    /// the power the solved bridge puts in it. `nodes` says which element
    /// sits in each arm. Elements couple only weakly through the
    /// excitation, so each is solved with the others held (one pass for a
    /// single heated element, which is exact; two where several heat).
    pub(super) fn heated_bridge_arms(
        &self,
        mut arms: [f64; 4],
        nodes: [Option<NodeId>; 4],
        exc: Signal,
        values: &[f64],
        env: &Env,
    ) -> Result<[f64; 4], EvalError> {
        let Some((heating, passes)) = self.arm_heating(nodes) else {
            return Ok(arms);
        };
        let mut leads = [0.0; 4];
        for (k, heated) in heating.iter().enumerate() {
            if let Some((n, _)) = heated {
                leads[k] = self.element_leads(*n, values);
            }
        }
        for _ in 0..passes {
            for (k, heated) in heating.iter().enumerate() {
                let Some((n, h)) = *heated else {
                    continue;
                };
                let power = |r: f64| arm_power_w(arms, k, r, leads[k], exc);
                let start = arms[k] - leads[k];
                arms[k] = self.heated(n, h, start, values, env, power)? + leads[k];
            }
        }
        Ok(arms)
    }
}

/// The power, W, the element in arm `k` of a bridge (arms as in
/// [`Plan::heated_bridge_arms`]) dissipates at `r` Ω, `leads` Ω of its
/// leads in series, the other arms held.
#[inline(always)]
fn arm_power_w(arms: [f64; 4], k: usize, r: f64, leads: f64, exc: Signal) -> f64 {
    let mut with = arms;
    with[k] = r + leads;
    let v = match exc {
        Signal::Source(v) => v,
        Signal::Current(a) => {
            let (top, bottom) = (with[0] + with[1], with[2] + with[3]);
            a * top * bottom / (top + bottom)
        }
        _ => 0.0,
    };
    strain::series_element_power_w(v, r, leads + with[k ^ 1])
}

/// A temperature element's curve with one run's values.
#[derive(Clone, Copy, Debug)]
enum ElementCurve {
    Rtd {
        curve: RtdCurve,
        r0: f64,
        /// The class's R0 and coefficient deviations, relative.
        deviation: Option<(f64, f64)>,
    },
    Beta {
        r25: f64,
        beta: f64,
    },
    SteinhartHart(thermistor::SteinhartHart),
}

/// Why [`ElementCurve::heated_resistance`] has no value.
#[derive(Clone, Copy, Debug)]
enum Unheated {
    /// The curve has no resistance at the heated temperature.
    Curve,
    /// The power or the dissipation constant allows no self-heating.
    Heating,
}

impl ElementCurve {
    /// The resistance at `t` raised by the self-heating of `power_w` W
    /// into a dissipation constant of `dissipation` W/K.
    #[inline(always)]
    fn heated_resistance(self, t: f64, power_w: f64, dissipation: f64) -> Result<f64, Unheated> {
        let rise = rtd::self_heating_k(power_w, dissipation).map_err(|_| Unheated::Heating)?;
        self.resistance(t + rise).map_err(|()| Unheated::Curve)
    }

    /// The resistance at `t` (°C for an RTD, K for a thermistor), or none
    /// where the curve has none.
    #[inline(always)]
    fn resistance(self, t: f64) -> Result<f64, ()> {
        match self {
            ElementCurve::Rtd {
                curve,
                r0,
                deviation,
            } => {
                let r = rtd_resistance(curve, r0, t);
                Ok(match deviation {
                    Some((d0, da)) => rtd::deviated_resistance(r, r0, d0, da),
                    None => r,
                })
            }
            ElementCurve::Beta { r25, beta } => {
                thermistor::beta_resistance(r25, 25.0 + ZERO_CELSIUS_K, beta, t).map_err(|_| ())
            }
            ElementCurve::SteinhartHart(k) => thermistor::sh_resistance(k, t).map_err(|_| ()),
        }
    }
}

/// Aitken's Δ² extrapolation of the steps `cold`, `r1`, `r2` (the last
/// step where the steps no longer curve).
#[inline(always)]
fn aitken(cold: f64, r1: f64, r2: f64) -> f64 {
    let curvature = (r2 - r1) - (r1 - cold);
    let extrapolated = r2 - (r2 - r1) * (r2 - r1) / curvature;
    if extrapolated.is_finite() {
        extrapolated
    } else {
        r2
    }
}

impl Plan {
    /// [`Plan::driven_element`] in every lane of a batch.
    #[inline(always)]
    pub(super) fn driven_elements(
        &self,
        n: NodeId,
        run: &LaneRun<'_>,
        current: Option<&[f64; LANES]>,
    ) -> Result<[f64; LANES], Lost> {
        let mut t = [0.0; LANES];
        let curves = self.element_curves(n, run, &mut t)?;
        let mut cold = [0.0; LANES];
        curves.resistances(&t, &mut cold)?;
        let (Some(a), Some(heating)) = (current, self.heating(n)) else {
            return Ok(cold);
        };
        let cold = ColdLanes::of(&curves, &t, &cold, heating, run);
        cold.heated(
            #[inline(always)]
            |k, r| a[k] * a[k] * r,
        )
    }

    /// Each lane's [`Plan::element_curve`]: the curves, borrowed from the
    /// batch's columns, and into `t` the temperatures they sense, checked
    /// against the curve's range across the lanes (no early exit).
    #[inline(always)]
    fn element_curves<'r>(
        &self,
        n: NodeId,
        run: &'r LaneRun<'_>,
        t: &mut [f64; LANES],
    ) -> Result<CurveLanes<'r>, Lost> {
        match &self.nodes[n.index()] {
            Node::Rtd(node::Rtd {
                curve,
                coefficient_errors,
                r0,
                deviation,
                senses,
                ..
            }) => {
                run.sensed_into(n, *senses, t);
                celsius_within(t, curve.range_c())?;
                Ok(CurveLanes::Rtd {
                    curve: *curve,
                    errors: coefficient_errors.map(|e| run.or_zero(e)),
                    r0: run.slot(*r0),
                    deviation: deviation.map(|(d0, da)| (run.slot(d0), run.slot(da))),
                })
            }
            Node::Thermistor(node::Thermistor {
                r25, curve, senses, ..
            }) => {
                run.sensed_into(n, *senses, t);
                Ok(match curve {
                    ThermistorCurve::Beta { beta } => CurveLanes::Beta {
                        r25: run.slot(*r25),
                        beta: run.slot(*beta),
                    },
                    ThermistorCurve::SteinhartHart { a, b, c } => {
                        CurveLanes::SteinhartHart(thermistor::SteinhartHart {
                            a: *a,
                            b: *b,
                            c: *c,
                        })
                    }
                })
            }
            Node::Excitation(_)
            | Node::Thermocouple(_)
            | Node::IcVoltage(_)
            | Node::IcCurrent(_)
            | Node::StrainGauge(_)
            | Node::Transducer(_)
            | Node::Resistor(_)
            | Node::Bridge(_)
            | Node::Amplifier(_)
            | Node::Filter(_)
            | Node::Adc(_)
            | Node::Convert(_) => Err(Lost),
        }
    }

    /// [`Plan::heated_divider_element`] in every lane of a batch, each
    /// lane on its own supply.
    #[inline(always)]
    pub(super) fn heated_divider_elements(
        &self,
        node: NodeId,
        element: &[f64; LANES],
        supply: SupplyLanes<'_>,
        run: &LaneRun<'_>,
    ) -> Result<[f64; LANES], Lost> {
        let Some(heating) = self.heating(node) else {
            return Ok(*element);
        };
        let leads = self.element_leads_lanes(node, run);
        let cold = std::array::from_fn(|k| element[k] - leads[k]);
        let mut t = [0.0; LANES];
        let curves = self.element_curves(node, run, &mut t)?;
        let cold = ColdLanes::of(&curves, &t, &cold, heating, run);
        // One kind of supply a loop: each lane's Supply is built where its
        // kind is known, so its power_w compiles to that kind's formula.
        let heated = match supply {
            SupplyLanes::Voltage { v, other } => cold.heated(
                #[inline(always)]
                |k, r| {
                    Supply::Voltage {
                        v: v[k],
                        other: other[k],
                    }
                    .power_w(r, leads[k])
                },
            ),
            SupplyLanes::Current(a) => cold.heated(
                #[inline(always)]
                |k, r| Supply::Current(a[k]).power_w(r, leads[k]),
            ),
            SupplyLanes::None => cold.heated(
                #[inline(always)]
                |k, r| Supply::None.power_w(r, leads[k]),
            ),
        }?;
        Ok(std::array::from_fn(|k| heated[k] + leads[k]))
    }

    /// [`Plan::heated_bridge_arms`] in every lane of a batch: `arms` lane
    /// by lane, `exc` the excitation's column. Each lane takes the single
    /// run's passes and steps in their order.
    pub(super) fn heated_bridge_arm_lanes(
        &self,
        mut arms: [[f64; 4]; LANES],
        nodes: [Option<NodeId>; 4],
        exc: &Column,
        run: &LaneRun<'_>,
    ) -> Result<[[f64; 4]; LANES], Lost> {
        let Some((heating, passes)) = self.arm_heating(nodes) else {
            return Ok(arms);
        };
        let excitation: [Signal; LANES] = std::array::from_fn(|j| exc.signal(j));
        let mut leads = [[0.0; LANES]; 4];
        let (mut curves, mut t) = ([None; 4], [[0.0; LANES]; 4]);
        for (k, heated) in heating.iter().enumerate() {
            if let Some((n, _)) = heated {
                leads[k] = self.element_leads_lanes(*n, run);
                curves[k] = Some(self.element_curves(*n, run, &mut t[k])?);
            }
        }
        for _ in 0..passes {
            for (k, heated) in heating.iter().enumerate() {
                let (Some((_, h)), Some(curves)) = (heated, &curves[k]) else {
                    continue;
                };
                let leads = &leads[k];
                let start = std::array::from_fn(|j| arms[j][k] - leads[j]);
                let cold = ColdLanes::of(curves, &t[k], &start, *h, run);
                let heated = cold.heated(
                    #[inline(always)]
                    |j, r| arm_power_w(arms[j], k, r, leads[j], excitation[j]),
                )?;
                for (j, arms) in arms.iter_mut().enumerate() {
                    arms[k] = heated[j] + leads[j];
                }
            }
        }
        Ok(arms)
    }
}

/// Every lane's element curve: the node's kind of curve with each lane's
/// values, borrowed from the batch's columns.
#[derive(Clone, Copy)]
enum CurveLanes<'a> {
    Rtd {
        curve: RtdCurve,
        /// The Callendar–Van Dusen coefficients' errors (zero for another
        /// curve or where none is stated).
        errors: [&'a [f64; LANES]; 3],
        r0: &'a [f64; LANES],
        deviation: Option<(&'a [f64; LANES], &'a [f64; LANES])>,
    },
    Beta {
        r25: &'a [f64; LANES],
        beta: &'a [f64; LANES],
    },
    SteinhartHart(thermistor::SteinhartHart),
}

impl CurveLanes<'_> {
    /// Lane `k`'s curve, as [`Plan::element_curve`] gives it in a single run.
    #[inline(always)]
    fn lane(&self, k: usize) -> ElementCurve {
        match *self {
            CurveLanes::Rtd {
                curve,
                errors,
                r0,
                deviation,
            } => ElementCurve::Rtd {
                curve: rtd_curve_at(curve, &errors, k),
                r0: r0[k],
                deviation: deviation.map(|(d0, da)| (d0[k], da[k])),
            },
            CurveLanes::Beta { r25, beta } => ElementCurve::Beta {
                r25: r25[k],
                beta: beta[k],
            },
            CurveLanes::SteinhartHart(sh) => ElementCurve::SteinhartHart(sh),
        }
    }

    /// Every lane's [`ElementCurve::resistance`] at its temperature `t`,
    /// into `out`: one match on the curve, then a loop over the lanes the
    /// compiler vectorises (each lane the single run's arithmetic). A lane
    /// with no resistance loses the batch.
    #[inline(always)]
    fn resistances(&self, t: &[f64; LANES], out: &mut [f64; LANES]) -> Result<(), Lost> {
        if let CurveLanes::Beta { r25, beta } = *self {
            return beta_resistances(r25, beta, t, out);
        }
        let CurveLanes::Rtd {
            curve,
            errors,
            r0,
            deviation,
        } = *self
        else {
            let mut none = false;
            for (k, out) in out.iter_mut().enumerate() {
                match self.lane(k).resistance(t[k]) {
                    Ok(r) => *out = r,
                    Err(()) => none = true,
                }
            }
            return if none { Err(Lost) } else { Ok(()) };
        };
        // A loop for each kind of curve, so that the kind is known inside
        // it and the lanes' arithmetic has no branch.
        // A function, not a closure: a closure used three times may be
        // left out of line, built for the baseline CPU.
        #[inline(always)]
        fn lane(
            curve: RtdCurve,
            errors: &[&[f64; LANES]; 3],
            r0: &[f64; LANES],
            t: &[f64; LANES],
            k: usize,
        ) -> f64 {
            rtd_resistance(rtd_curve_at(curve, errors, k), r0[k], t[k])
        }
        match curve {
            RtdCurve::Cvd { .. } => {
                for (k, r) in out.iter_mut().enumerate() {
                    *r = lane(curve, &errors, r0, t, k);
                }
            }
            RtdCurve::Nickel => {
                for (k, r) in out.iter_mut().enumerate() {
                    *r = lane(curve, &errors, r0, t, k);
                }
            }
            RtdCurve::Copper => {
                for (k, r) in out.iter_mut().enumerate() {
                    *r = lane(curve, &errors, r0, t, k);
                }
            }
        }
        if let Some((d0, da)) = deviation {
            for k in 0..LANES {
                out[k] = rtd::deviated_resistance(out[k], r0[k], d0[k], da[k]);
            }
        }
        Ok(())
    }
}

/// [`thermistor::beta_resistance`] of every lane: its checks made on the
/// columns (a lane that fails one loses the batch), the exponents side
/// by side, then the exponentials.
#[inline(always)]
fn beta_resistances(
    r25: &[f64; LANES],
    beta: &[f64; LANES],
    t: &[f64; LANES],
    out: &mut [f64; LANES],
) -> Result<(), Lost> {
    let t_ref = 25.0 + ZERO_CELSIUS_K;
    let takes = all_positive(r25) && all_finite(beta) && all_positive(t);
    for k in 0..LANES {
        out[k] = thermistor::beta_exponent(t_ref, beta[k], t[k]);
    }
    exp::exp_each(out);
    for k in 0..LANES {
        out[k] *= r25[k];
    }
    if takes && all_finite(out) {
        Ok(())
    } else {
        Err(Lost)
    }
}

/// Lane `k`'s RTD curve: a Callendar–Van Dusen curve's coefficients with
/// that lane's errors added, another curve as it is.
#[inline(always)]
fn rtd_curve_at(curve: RtdCurve, errors: &[&[f64; LANES]; 3], k: usize) -> RtdCurve {
    match curve {
        RtdCurve::Cvd { a, b, c } => RtdCurve::Cvd {
            a: a + errors[0][k],
            b: b + errors[1][k],
            c: c + errors[2][k],
        },
        other => other,
    }
}

/// A column of elements before they heat: their curves, each lane's
/// sensed temperature `t` (as the curves take it) and cold resistance,
/// whether the response is strongly curved, and each lane's dissipation
/// constant `delta`.
struct ColdLanes<'a, 'c> {
    curves: &'a CurveLanes<'c>,
    t: &'a [f64; LANES],
    cold: &'a [f64; LANES],
    curved: bool,
    delta: &'a [f64; LANES],
}

impl<'a, 'c> ColdLanes<'a, 'c> {
    /// The column of elements at `t` with cold resistances `cold` that
    /// heat as `heating` says, their dissipation constants from `run`.
    #[inline(always)]
    fn of(
        curves: &'a CurveLanes<'c>,
        t: &'a [f64; LANES],
        cold: &'a [f64; LANES],
        heating: Heating,
        run: &'a LaneRun<'_>,
    ) -> ColdLanes<'a, 'c> {
        ColdLanes {
            curves,
            t,
            cold,
            curved: heating.curved,
            delta: run.slot(heating.dissipation),
        }
    }

    /// [`self_heated`] in every lane of a batch: each step taken across
    /// the lanes before the next, so the lanes' curve evaluations run
    /// side by side. Every lane takes the same steps (none settles
    /// early), so each does the single run's operations in their order.
    /// `power(k, r)` is lane `k`'s dissipation at `r` Ω.
    #[inline(always)]
    fn heated(&self, power: impl Fn(usize, f64) -> f64) -> Result<[f64; LANES], Lost> {
        let ColdLanes {
            curves,
            t,
            cold,
            curved,
            delta,
        } = *self;
        // rtd::self_heating_k's check of the dissipation constants, once
        // for every step.
        if !all_positive(delta) {
            return Err(Lost);
        }
        let step = |from: &[f64; LANES]| heating_step(curves, t, delta, &power, from);
        let r1 = step(cold)?;
        let r2 = step(&r1)?;
        let mut r = [0.0; LANES];
        for k in 0..LANES {
            r[k] = aitken(cold[k], r1[k], r2[k]);
        }
        if curved {
            step(&r)
        } else {
            Ok(r)
        }
    }
}

/// One step of [`ColdLanes::heated`]: [`ElementCurve::heated_resistance`]
/// over the column, each lane's rise (`rtd::self_heating_k`'s check of
/// the power made over the lanes, not returned; `delta` already
/// checked), then the curve's resistances, one kind of curve a loop.
/// Inlined, so a kernel built for a wider vector unit builds it so too.
#[inline(always)]
fn heating_step(
    curves: &CurveLanes<'_>,
    t: &[f64; LANES],
    delta: &[f64; LANES],
    power: &impl Fn(usize, f64) -> f64,
    from: &[f64; LANES],
) -> Result<[f64; LANES], Lost> {
    let (mut heated, mut refused) = ([0.0; LANES], false);
    for k in 0..LANES {
        let p = power(k, from[k]);
        // A boolean or, not a count, keeps the loop in vector registers.
        refused |= !(0.0..f64::INFINITY).contains(&p);
        heated[k] = t[k] + p / delta[k];
    }
    if refused {
        return Err(Lost);
    }
    let mut to = [0.0; LANES];
    curves.resistances(&heated, &mut to)?;
    Ok(to)
}

/// Resistance of an RTD curve at `t_c` °C.
#[inline(always)]
fn rtd_resistance(curve: RtdCurve, r0: f64, t_c: f64) -> f64 {
    match curve {
        RtdCurve::Cvd { a, b, c } => rtd::resistance(r0, rtd::CvdCoefficients { a, b, c }, t_c),
        RtdCurve::Nickel => rtd::nickel_resistance(r0, rtd::NickelCoefficients::DIN_43760, t_c),
        RtdCurve::Copper => rtd::linear_resistance(r0, rtd::COPPER_ALPHA, t_c),
    }
}

/// The resistance of an element that self-heats by P(r)/δ: the fixed point
/// of `r = at(r)` (`at` the resistance at the temperature the element
/// reaches dissipating at `r`), from `cold`, its resistance unheated. The
/// map contracts strongly (|dr'/dr| = |dP/dr|/δ · |dR/dT| ≪ 1), so two
/// steps and Aitken's Δ² extrapolation land where many plain steps would.
/// What Aitken leaves grows with the curve's curvature: for an RTD (nearly
/// straight) it is within 1e-10 Ω of the settled value at 2 K of heating;
/// a thermistor's `curved` response takes one more step.
#[inline]
pub(super) fn self_heated<E>(
    cold: f64,
    curved: bool,
    at: impl Fn(f64) -> Result<f64, E>,
) -> Result<f64, E> {
    let r1 = at(cold)?;
    let r2 = at(r1)?;
    let r = aitken(cold, r1, r2);
    if curved {
        at(r)
    } else {
        Ok(r)
    }
}

#[cfg(test)]
mod tests {
    use super::{beta_resistances, thermistor, LANES};
    use crate::units::ZERO_CELSIUS_K;

    /// Every lane's resistance is `thermistor::beta_resistance`'s, to the
    /// bit, from −70 °C to 240 °C; a lane that function refuses (a
    /// resistance or temperature not above zero, a value not finite, an
    /// exponential that overflows) refuses the batch.
    #[test]
    fn beta_resistances_are_each_lanes_own() {
        let r25: [f64; LANES] = std::array::from_fn(|k| 1e4 * (1.0 + k as f64 / 100.0));
        let beta: [f64; LANES] = std::array::from_fn(|k| 3000.0 + 30.0 * k as f64);
        let t: [f64; LANES] = std::array::from_fn(|k| 203.15 + 10.0 * k as f64);
        let t_ref = 25.0 + ZERO_CELSIUS_K;
        let alone = |r: f64, b: f64, t: f64| thermistor::beta_resistance(r, t_ref, b, t);
        let mut out = [0.0; LANES];
        assert!(beta_resistances(&r25, &beta, &t, &mut out).is_ok());
        for k in 0..LANES {
            let want = alone(r25[k], beta[k], t[k]).expect("a resistance");
            assert_eq!(out[k].to_bits(), want.to_bits(), "lane {k}");
        }
        let refused = [
            (0.0, 3435.0, 300.0),
            (-1e4, 3435.0, 300.0),
            (1e4, f64::NAN, 300.0),
            (1e4, 3435.0, 0.0),
            (1e4, 3435.0, -5.0),
            (f64::INFINITY, 3435.0, 300.0),
            (1e4, 1e6, 1.0),
        ];
        for (r, b, temperature) in refused {
            assert!(alone(r, b, temperature).is_err(), "{r} {b} {temperature}");
            let (mut r25, mut beta, mut t) = (r25, beta, t);
            (r25[7], beta[7], t[7]) = (r, b, temperature);
            let batch = beta_resistances(&r25, &beta, &t, &mut out);
            assert!(batch.is_err(), "{r} {b} {temperature}");
        }
    }
}
