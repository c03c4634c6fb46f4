//! One evaluation: every node in order, each a pure function of its
//! inputs' signals, the parameter values and the environment.

use super::convert::{calibration_env, Calibrated, Conversion};
use super::element::Supply;
use super::plan::{
    AdcOffset, AmpReference, BridgeKind, ClassTolerance, DriftSlot, Env, EvalError, Node, NodeId,
    Plan, RtdCurve, Senses, Signal, SlotId,
};
use crate::physics::adc::Polarity;
use crate::physics::{rtd, semiconductor, strain, thermocouple, transducer};
use crate::units::ZERO_CELSIUS_K;

/// What a run computes: conversions (the firmware model inside a
/// conversion runs without them, so it does not recurse) and whether
/// conversions see the rounded code or the exact one.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) struct Mode {
    convert: bool,
    quantized: bool,
    /// Amplifiers clip at their swing and rail outside their common-mode
    /// range; off, they amplify linearly, to see how far a signal would go.
    clip: bool,
    /// A calibration's reading of the chain: what depends on the direction
    /// of approach (hysteresis) is not the reading's.
    calibrating: bool,
}

impl Mode {
    const FULL: Mode = Mode {
        convert: true,
        quantized: true,
        clip: true,
        calibrating: false,
    };
    const CODES: Mode = Mode {
        convert: false,
        quantized: true,
        clip: true,
        calibrating: false,
    };
    const RAW: Mode = Mode {
        convert: false,
        quantized: true,
        clip: false,
        calibrating: false,
    };
    const CALIBRATION: Mode = Mode {
        convert: false,
        quantized: true,
        clip: true,
        calibrating: true,
    };
    const UNQUANTIZED: Mode = Mode {
        convert: true,
        quantized: false,
        clip: true,
        calibrating: false,
    };
}

impl RtdCurve {
    /// Where the curve is defined, °C.
    pub fn range_c(self) -> (f64, f64) {
        match self {
            RtdCurve::Cvd { .. } => CVD_RANGE_C,
            RtdCurve::Nickel => NICKEL_RANGE_C,
            RtdCurve::Copper => COPPER_RANGE_C,
        }
    }
}

/// A bridge's completion resistors: the first (value, drift) and the
/// others, each its own part.
type Completion<'a> = (
    Option<usize>,
    Option<DriftSlot>,
    &'a [(usize, Option<DriftSlot>)],
);

/// Plans are small; a fixed bound keeps every evaluation on the stack.
pub const MAX_NODES: usize = 32;
/// Evaluations [`Plan::unquantized_readings`] runs side by side.
pub const LANES: usize = 8;
/// The signals of [`LANES`] evaluations.
pub type LaneSignals = [[Signal; MAX_NODES]; LANES];

/// The signals of one evaluation, by node.
#[derive(Clone, Debug, PartialEq)]
pub struct Outcome {
    pub signals: Vec<Signal>,
}

/// Callendar–Van Dusen is defined over −200 … 850 °C (IEC 60751).
const CVD_RANGE_C: (f64, f64) = (-200.0, 850.0);
/// DIN 43760 nickel curve range (recalled from memory of the standard).
const NICKEL_RANGE_C: (f64, f64) = (-60.0, 180.0);
/// Copper elements: common practice limits the linear model to −50 … 150 °C.
const COPPER_RANGE_C: (f64, f64) = (-50.0, 150.0);

impl Plan {
    /// Every node's signal in one run, on the stack.
    fn signals(
        &self,
        values: &[f64],
        env: &Env,
        until: usize,
        mode: Mode,
    ) -> Result<[Signal; MAX_NODES], EvalError> {
        let mut signals = [Signal::None; MAX_NODES];
        self.run(values, env, &mut signals, until, mode)?;
        Ok(signals)
    }

    /// Evaluates every node, conversions included.
    pub fn evaluate(&self, values: &[f64], env: &Env) -> Result<Outcome, EvalError> {
        let signals = self.signals(values, env, self.nodes.len(), Mode::FULL)?;
        Ok(Outcome {
            signals: signals[..self.nodes.len()].to_vec(),
        })
    }

    /// Every node up to the converters' codes, conversions left out: what
    /// a plan whose conversion could not be fitted still shows.
    pub fn evaluate_codes(&self, values: &[f64], env: &Env) -> Result<Outcome, EvalError> {
        let signals = self.signals(values, env, self.nodes.len(), Mode::CODES)?;
        Ok(Outcome {
            signals: signals[..self.nodes.len()].to_vec(),
        })
    }

    /// The chain's reading at `env`, SI.
    pub fn reading(&self, values: &[f64], env: &Env) -> Result<f64, EvalError> {
        let mut signals = [Signal::None; MAX_NODES];
        self.run(values, env, &mut signals, self.reading + 1, Mode::FULL)?;
        match signals[self.reading] {
            Signal::Reading(x) => Ok(x),
            _ => Err(self.numeric(self.reading, "no reading")),
        }
    }

    /// The unrounded code of `adc` with the given values: what the
    /// firmware's model of the chain predicts.
    pub fn exact_code(&self, values: &[f64], env: &Env, adc: NodeId) -> Result<f64, EvalError> {
        let mut signals = [Signal::None; MAX_NODES];
        self.run(values, env, &mut signals, adc + 1, Mode::CODES)?;
        match signals[adc] {
            Signal::Code { exact, .. } => Ok(exact),
            _ => Err(self.numeric(adc, "no code")),
        }
    }

    /// [`Plan::exact_code`] as a calibration reads it.
    pub(super) fn calibration_code(
        &self,
        values: &[f64],
        env: &Env,
        adc: NodeId,
    ) -> Result<f64, EvalError> {
        let mut signals = [Signal::None; MAX_NODES];
        self.run(values, env, &mut signals, adc + 1, Mode::CALIBRATION)?;
        match signals[adc] {
            Signal::Code { exact, .. } => Ok(exact),
            _ => Err(self.numeric(adc, "no code")),
        }
    }

    /// Runs nodes `0..until`.
    pub(super) fn run(
        &self,
        values: &[f64],
        env: &Env,
        signals: &mut [Signal; MAX_NODES],
        until: usize,
        mode: Mode,
    ) -> Result<(), EvalError> {
        for i in 0..until.min(self.nodes.len()) {
            if !mode.convert && matches!(self.nodes[i], Node::Convert { .. }) {
                continue;
            }
            let s = self.node(i, values, env, signals, mode, None)?;
            if !finite(s) {
                return Err(self.numeric(i, "a signal is not a finite number"));
            }
            signals[i] = s;
        }
        Ok(())
    }

    pub(super) fn numeric(&self, node: NodeId, what: &str) -> EvalError {
        EvalError::Numeric {
            stage: self.names[node].clone(),
            what: what.to_string(),
        }
    }

    /// The temperature node `i` senses, as its own tolerance makes it
    /// read: the true one plus its class's (temperature-dependent) error
    /// and any stated absolute error. Whether the true temperature is
    /// inside the sensor's range of validity is the plan's question, asked
    /// once of the whole range (`lower::check_validity`), not of each
    /// shifted reading.
    pub(super) fn sensed(&self, i: NodeId, senses: Senses, env: &Env, values: &[f64]) -> f64 {
        let t = match senses {
            Senses::Measurand => env.measurand,
            Senses::ColdJunction => env.cold_junction,
        };
        let error = &self.sense_error[i];
        let class = error.class.map(|(class, slot)| {
            let t_c = t - ZERO_CELSIUS_K;
            let half_width = match class {
                ClassTolerance::Thermocouple(ty, c) => thermocouple::class_tolerance_k(ty, c, t_c),
            };
            values[slot] * half_width.unwrap_or(0.0)
        });
        let of_reading = error
            .of_reading
            .map(|(s, zero)| values[s] * (t - zero).abs());
        t + class.unwrap_or(0.0)
            + error.absolute.map(|s| values[s]).unwrap_or(0.0)
            + of_reading.unwrap_or(0.0)
    }

    fn drifted(&self, value: f64, drift: Option<DriftSlot>, values: &[f64], env: &Env) -> f64 {
        match drift {
            None => value,
            Some(d) if d.relative => {
                value * (1.0 + values[d.slot] * (env.ambient - self.reference))
            }
            Some(d) => value + values[d.slot] * (env.ambient - self.reference),
        }
    }

    /// The reference a converter works against: its `ref` input, else its
    /// `vref` with drift.
    #[inline(always)]
    fn reference_of(
        &self,
        reference: Option<NodeId>,
        vref: Option<SlotId>,
        vref_drift: Option<DriftSlot>,
        values: &[f64],
        env: &Env,
        s: &[Signal],
    ) -> f64 {
        match reference.map(|n| s[n]) {
            Some(Signal::Voltage { v, .. }) | Some(Signal::Source(v)) => v,
            _ => self.drifted(
                vref.map(|r| values[r]).unwrap_or(0.0),
                vref_drift,
                values,
                env,
            ),
        }
    }

    /// The voltage an amplifier's output is referred to (0 V without a
    /// reference); None where its reference stage gives no voltage.
    #[inline(always)]
    fn shift_of(
        &self,
        reference: Option<AmpReference>,
        values: &[f64],
        env: &Env,
        s: &[Signal],
    ) -> Option<f64> {
        match reference {
            Some(AmpReference::Stated { value, drift }) => {
                Some(self.drifted(values[value], drift, values, env))
            }
            Some(AmpReference::Stage(n)) => match s[n] {
                Signal::Voltage { v, .. } | Signal::Source(v) => Some(v),
                _ => None,
            },
            None => Some(0.0),
        }
    }

    /// The reference amplifier `node` refers its output to in one raw
    /// evaluation; None for another kind of node.
    pub fn amplifier_reference(
        &self,
        node: NodeId,
        values: &[f64],
        env: &Env,
        signals: &[Signal],
    ) -> Option<f64> {
        match &self.nodes[node] {
            Node::Amplifier { reference, .. } => self.shift_of(*reference, values, env, signals),
            _ => None,
        }
    }

    /// The reference voltage converter `node` works against in one raw
    /// evaluation (`signals` from [`Plan::raw_signals`]); None for another
    /// kind of node.
    pub fn converter_reference(
        &self,
        node: NodeId,
        values: &[f64],
        env: &Env,
        signals: &[Signal],
    ) -> Option<f64> {
        match &self.nodes[node] {
            Node::Adc {
                reference,
                vref,
                vref_drift,
                ..
            } => Some(self.reference_of(*reference, *vref, *vref_drift, values, env, signals)),
            _ => None,
        }
    }

    pub(super) fn out_of_range(
        &self,
        node: NodeId,
        what: &str,
        t_k: f64,
        range_c: (f64, f64),
    ) -> EvalError {
        EvalError::OutOfRange {
            stage: self.names[node].clone(),
            what: what.to_string(),
            low: range_c.0 + ZERO_CELSIUS_K,
            high: range_c.1 + ZERO_CELSIUS_K,
            value: t_k,
            celsius: true,
        }
    }

    #[inline(always)]
    fn node(
        &self,
        i: NodeId,
        values: &[f64],
        env: &Env,
        s: &[Signal; MAX_NODES],
        mode: Mode,
        junction_mv: Option<f64>,
    ) -> Result<Signal, EvalError> {
        let current_into = |input: Option<NodeId>| match input.map(|n| s[n]) {
            Some(Signal::Current(a)) => Some(a),
            _ => None,
        };
        let lift: f64 = self.series_below[i]
            .iter()
            .map(|&n| match s[n] {
                Signal::Voltage { v, .. } => v,
                _ => 0.0,
            })
            .sum();
        let element = |r: f64, input: Option<NodeId>| match current_into(input) {
            Some(a) => Signal::Voltage {
                v: a * r,
                cm: lift + a * r / 2.0,
                rs: r,
            },
            None => Signal::Element(r),
        };
        Ok(match &self.nodes[i] {
            Node::Excitation {
                current,
                value,
                drift,
            } => {
                let v = self.drifted(values[*value], *drift, values, env);
                if *current {
                    Signal::Current(v)
                } else {
                    Signal::Source(v)
                }
            }
            Node::Rtd {
                wiring,
                leads,
                input,
                ..
            } => {
                let r = self.driven_element(i, values, env, current_into(*input))?;
                let lead = leads
                    .map(|(a, b)| rtd::lead_series_resistance(*wiring, values[a], values[b]))
                    .unwrap_or(0.0);
                element(r + lead, *input)
            }
            Node::Thermocouple {
                ty,
                senses,
                class: _,
                bias,
                bias_resistor,
            } => {
                let range = ty.range_c();
                let t = self.sensed(i, *senses, env, values) - ZERO_CELSIUS_K;
                // Messages are built only on the way out: this runs in
                // every Monte Carlo trial.
                let kind = || format!("type {} thermocouple", ty.letter());
                let t = within(t, range)
                    .ok_or_else(|| self.out_of_range(i, &kind(), t + ZERO_CELSIUS_K, range))?;
                let e = |t_c: f64| {
                    thermocouple::emf_mv(*ty, t_c).map_err(|e| {
                        self.out_of_range(i, &kind(), t_c + ZERO_CELSIUS_K, (e.low, e.high))
                    })
                };
                let at_junction = match junction_mv {
                    Some(e) => e,
                    None => e(junction_c(*ty, env))?,
                };
                let v = (e(t)? - at_junction) * 1e-3;
                // A couple floats: its common mode is where a bias holds
                // it, else 0 V.
                let cm = bias
                    .map(|(b, drift)| self.drifted(values[b], drift, values, env))
                    .unwrap_or(0.0);
                Signal::Voltage {
                    v,
                    cm,
                    rs: bias_resistor.map(|r| values[r]).unwrap_or(0.0),
                }
            }
            Node::Thermistor { input, .. } => {
                let r = self.driven_element(i, values, env, current_into(*input))?;
                element(r, *input)
            }
            Node::IcVoltage {
                slope,
                v0,
                t0,
                senses,
                rout,
            } => {
                let t = self.sensed(i, *senses, env, values);
                let v = semiconductor::linear_voltage_v(
                    values[*v0],
                    values[*slope],
                    t0 - ZERO_CELSIUS_K,
                    t - ZERO_CELSIUS_K,
                );
                Signal::Voltage {
                    v,
                    cm: v / 2.0,
                    rs: rout.map(|r| values[r]).unwrap_or(0.0),
                }
            }
            Node::IcCurrent { slope, senses } => {
                let t = self.sensed(i, *senses, env, values);
                let a = semiconductor::ptat_current_a(values[*slope], t)
                    .map_err(|_| self.numeric(i, "no PTAT current at this temperature"))?;
                Signal::Current(a)
            }
            Node::StrainGauge {
                r,
                gauge_factor,
                sign,
                input,
            } => element(
                strain::gauge_resistance(values[*r], values[*gauge_factor], sign * env.measurand),
                *input,
            ),
            Node::Transducer {
                sensitivity,
                ratiometric,
                full_scale,
                zero,
                nonlinearity,
                linearity,
                hysteresis,
                zero_drift,
                span_drift,
                input,
                r,
            } => {
                let slot = |o: &Option<usize>| o.map(|o| values[o]).unwrap_or(0.0);
                let dt = env.ambient - self.reference;
                let s_fs = values[*sensitivity];
                // Output as a ratio of excitation (or volts): span with its
                // drift, then the errors stated as fractions of full scale.
                let u = env.measurand / full_scale;
                let bow = transducer::nonlinearity_shape(*linearity, u);
                // Hysteresis depends on the direction of approach: the
                // calibration's is not the reading's, so it sees none.
                let hysteresis = if mode.calibrating {
                    0.0
                } else {
                    slot(hysteresis)
                };
                let fraction = s_fs * (1.0 + slot(span_drift) * dt) * u
                    + s_fs * (slot(nonlinearity) * bow + hysteresis + slot(zero_drift) * dt)
                    + slot(zero);
                let (v, cm) = match (ratiometric, input.map(|n| s[n])) {
                    (true, Some(Signal::Source(exc))) => (fraction * exc, exc / 2.0),
                    (true, _) => {
                        return Err(self
                            .numeric(i, "a transducer rated in mV/V needs a voltage excitation"))
                    }
                    (false, _) => (fraction, fraction / 2.0),
                };
                Signal::Voltage {
                    v,
                    cm,
                    rs: r.map(|r| values[r] / 2.0).unwrap_or(0.0),
                }
            }
            Node::Resistor { r, drift, input } => {
                element(self.drifted(values[*r], *drift, values, env), *input)
            }
            Node::Bridge {
                kind,
                r,
                drift,
                others,
                exc,
                arms,
            } => self.bridge(i, *kind, (*r, *drift, others), *exc, arms, values, env, s)?,
            Node::Amplifier {
                gain,
                offset,
                cmrr,
                bias,
                offset_drift,
                gain_drift,
                input,
                reference,
                input_range,
                output,
            } => {
                let Signal::Voltage { v, cm, rs } = s[*input] else {
                    return Err(self.numeric(i, "no input voltage"));
                };
                let shift = self
                    .shift_of(*reference, values, env, s)
                    .ok_or_else(|| self.numeric(i, "no reference voltage"))?;
                let slot = |o: &Option<usize>| o.map(|o| values[o]).unwrap_or(0.0);
                // Vout = G (Vdiff + Vos + Ib·Rs + Vcm/CMRR), then the swing.
                let dt = env.ambient - self.reference;
                let error =
                    slot(offset) + slot(offset_drift) * dt + slot(bias) * rs + slot(cmrr) * cm;
                // Output = gain × input + reference.
                let mut out = values[*gain] * (1.0 + slot(gain_drift) * dt) * (v + error) + shift;
                let (lo, hi) = output.unwrap_or((f64::NEG_INFINITY, f64::INFINITY));
                // Outside its common-mode range an amplifier no longer
                // amplifies: its output goes to a rail.
                if let (true, Some((cm_lo, cm_hi))) = (mode.clip, input_range) {
                    if cm < *cm_lo {
                        out = if lo.is_finite() { lo } else { 0.0 };
                    } else if cm > *cm_hi {
                        out = if hi.is_finite() { hi } else { 0.0 };
                    }
                }
                let out = if mode.clip { out.clamp(lo, hi) } else { out };
                Signal::Voltage {
                    v: out,
                    cm: out / 2.0,
                    rs: 0.0,
                }
            }
            Node::Filter { input, series } => match s[*input] {
                Signal::Voltage { v, cm, rs } => Signal::Voltage {
                    v,
                    cm,
                    rs: rs + series.map(|r| values[r]).unwrap_or(0.0),
                },
                other => other,
            },
            Node::Adc {
                bits,
                polarity,
                pga,
                vref,
                vref_drift,
                reference,
                offset,
                gain_error,
                inl,
                input,
                ..
            } => {
                let Signal::Voltage { v, .. } = s[*input] else {
                    return Err(self.numeric(i, "no input voltage"));
                };
                let vr = self.reference_of(*reference, *vref, *vref_drift, values, env, s);
                if vr <= 0.0 || !vr.is_finite() {
                    return Err(self.numeric(i, "the reference voltage is zero or negative"));
                }
                let gain = pga.map(|g| values[g]).unwrap_or(1.0)
                    * (1.0 + gain_error.map(|g| values[g]).unwrap_or(0.0));
                let (off, off_codes) = match offset {
                    Some(AdcOffset::Input(o)) => (values[*o], 0.0),
                    Some(AdcOffset::Codes(o)) => (0.0, values[*o]),
                    None => (0.0, 0.0),
                };
                let per_ref = match polarity {
                    // A shift, not `powi`: that is a library call per run.
                    Polarity::Unipolar => (1u64 << *bits) as f64,
                    Polarity::Bipolar => (1u64 << (*bits - 1)) as f64,
                };
                // INL is a fraction of the full-scale code span.
                let full_scale = match polarity {
                    Polarity::Unipolar => per_ref,
                    Polarity::Bipolar => 2.0 * per_ref,
                };
                let exact = (v + off) * gain / vr * per_ref
                    + off_codes
                    + inl.map(|s| values[s]).unwrap_or(0.0) * full_scale;
                let (lo, hi) = match polarity {
                    Polarity::Unipolar => (0.0, per_ref - 1.0),
                    Polarity::Bipolar => (-per_ref, per_ref - 1.0),
                };
                Signal::Code {
                    exact,
                    code: round_code(exact, lo, hi),
                }
            }
            Node::Convert {
                input,
                cj,
                conversion,
            } => {
                let Signal::Code { code, exact } = s[*input] else {
                    return Err(self.numeric(i, "no code"));
                };
                let code = if mode.quantized { code as f64 } else { exact };
                let cj_reading = cj.and_then(|n| match s[n] {
                    Signal::Reading(t) => Some(t),
                    _ => None,
                });
                Signal::Reading(conversion.apply(self, values, env, code, cj_reading)?)
            }
        })
    }

    #[allow(clippy::too_many_arguments)]
    fn bridge(
        &self,
        i: NodeId,
        kind: BridgeKind,
        (r, drift, others): Completion,
        exc: NodeId,
        arms: &[NodeId],
        values: &[f64],
        env: &Env,
        s: &[Signal; MAX_NODES],
    ) -> Result<Signal, EvalError> {
        let fixed = r
            .map(|r| self.drifted(values[r], drift, values, env))
            .unwrap_or(0.0);
        // Each further completion resistor is its own part.
        let other = |k: usize| {
            others
                .get(k)
                .map(|&(r, drift)| self.drifted(values[r], drift, values, env))
                .unwrap_or(fixed)
        };
        let arm = |k: usize| match arms.get(k).map(|&n| s[n]) {
            Some(Signal::Element(r)) => Ok(r),
            _ => Err(self.numeric(i, "a bridge arm has no element")),
        };
        let bad = |_| self.numeric(i, "the bridge has no output (an arm of zero resistance)");
        // Arms by position, as drawn in `physics::strain`: r1 r2 on the
        // positive side, r3 r4 on the negative; active elements in edge
        // order go to r2, r3, r1, r4.
        let (r1, r2, r3, r4) = match kind {
            BridgeKind::Divider { sensor_high } => {
                // A current source's current flows through the lower resistor.
                let supply = match s[exc] {
                    Signal::Source(v) => Supply::Voltage { v, other: fixed },
                    Signal::Current(a) if !sensor_high => Supply::Current(a),
                    _ => Supply::None,
                };
                let element = match arms.first() {
                    Some(&n) => self.heated_divider_element(n, arm(0)?, supply, values, env)?,
                    None => arm(0)?,
                };
                let (low, high) = if sensor_high {
                    (fixed, element)
                } else {
                    (element, fixed)
                };
                let v = match s[exc] {
                    Signal::Source(v) => strain::divider_output(v, low, high).map_err(bad)?,
                    Signal::Current(a) => a * low,
                    _ => return Err(self.numeric(i, "no excitation")),
                };
                let rs = if low + high > 0.0 {
                    low * high / (low + high)
                } else {
                    0.0
                };
                return Ok(Signal::Voltage { v, cm: v / 2.0, rs });
            }
            BridgeKind::Quarter => (fixed, arm(0)?, other(0), other(1)),
            BridgeKind::Half => (fixed, arm(0)?, arm(1)?, other(0)),
            BridgeKind::Full => (arm(2)?, arm(0)?, arm(1)?, arm(3)?),
        };
        let at = |k: usize| arms.get(k).copied();
        let placed = match kind {
            BridgeKind::Quarter => [None, at(0), None, None],
            BridgeKind::Half => [None, at(0), at(1), None],
            BridgeKind::Full | BridgeKind::Divider { .. } => [at(2), at(0), at(1), at(3)],
        };
        let [r1, r2, r3, r4] =
            self.heated_bridge_arms([r1, r2, r3, r4], placed, s[exc], values, env)?;
        let v_exc = match s[exc] {
            Signal::Source(v) => v,
            Signal::Current(a) => a * ((r1 + r2) * (r3 + r4) / (r1 + r2 + r3 + r4)),
            _ => return Err(self.numeric(i, "no excitation")),
        };
        let v = strain::bridge_output(v_exc, r1, r2, r3, r4).map_err(bad)?;
        let cm = strain::bridge_common_mode(v_exc, r1, r2, r3, r4).map_err(bad)?;
        let rs = strain::bridge_output_resistance(r1, r2, r3, r4).map_err(bad)?;
        Ok(Signal::Voltage { v, cm, rs })
    }
}

/// The cold junction's temperature for a couple of type `ty`, °C, held to
/// the type's range (a junction beyond it is the sensor's finding, not the
/// couple's).
fn junction_c(ty: thermocouple::ThermocoupleType, env: &Env) -> f64 {
    let tj = env.cold_junction - ZERO_CELSIUS_K;
    within(tj, ty.range_c()).unwrap_or(tj)
}

/// Range ends written in °C come back through kelvin a few ulps off;
/// within a nanokelvin of an end counts as the end.
pub(super) fn within(t_c: f64, (lo, hi): (f64, f64)) -> Option<f64> {
    const SLACK: f64 = 1e-9;
    (lo - SLACK..=hi + SLACK)
        .contains(&t_c)
        .then(|| t_c.clamp(lo, hi))
}

/// The nearest code (halves away from zero) within `lo ..= hi`, both
/// whole: `f64::round` is a library call on baseline x86-64, and every
/// evaluation rounds.
fn round_code(exact: f64, lo: f64, hi: f64) -> i64 {
    let x = exact.clamp(lo, hi);
    let whole = x as i64;
    let fraction = x - whole as f64;
    whole + i64::from(fraction >= 0.5) - i64::from(fraction <= -0.5)
}

fn finite(s: Signal) -> bool {
    match s {
        Signal::None => true,
        Signal::Current(x) | Signal::Source(x) | Signal::Element(x) | Signal::Reading(x) => {
            x.is_finite()
        }
        Signal::Voltage { v, cm, rs } => v.is_finite() && cm.is_finite() && rs.is_finite(),
        Signal::Code { exact, .. } => exact.is_finite(),
    }
}

impl Plan {
    /// The main converter's input voltage and exact code: the chain's
    /// transfer at one point, for slopes.
    pub fn converter_input_and_code(
        &self,
        values: &[f64],
        env: &Env,
    ) -> Result<(f64, f64), EvalError> {
        let mut signals = [Signal::None; MAX_NODES];
        self.run(values, env, &mut signals, self.adc + 1, Mode::CODES)?;
        let v = match &self.nodes[self.adc] {
            Node::Adc { input, .. } => match signals[*input] {
                Signal::Voltage { v, .. } => v,
                _ => 0.0,
            },
            _ => 0.0,
        };
        match signals[self.adc] {
            Signal::Code { exact, .. } => Ok((v, exact)),
            _ => Err(self.numeric(self.adc, "no code")),
        }
    }

    /// Every node but the conversions, with amplifiers unclipped: how far
    /// each signal would go, for the range checks.
    pub fn evaluate_raw(&self, values: &[f64], env: &Env) -> Result<Outcome, EvalError> {
        let signals = self.raw_signals(values, env)?;
        Ok(Outcome {
            signals: signals[..self.nodes.len()].to_vec(),
        })
    }

    /// [`Plan::evaluate_raw`] without allocating, for the analyses' loops.
    pub fn raw_signals(&self, values: &[f64], env: &Env) -> Result<[Signal; MAX_NODES], EvalError> {
        self.signals(values, env, self.nodes.len(), Mode::RAW)
    }

    /// The reading the firmware would compute from the converter's exact
    /// (unrounded) code: the chain without quantization.
    pub fn unquantized_reading(&self, values: &[f64], env: &Env) -> Result<f64, EvalError> {
        let calibrated = self.calibration(values)?;
        self.unquantized_reading_calibrated(values, env, &calibrated)
    }

    /// What the main conversion's calibration saw with these values.
    pub fn calibration(&self, values: &[f64]) -> Result<Calibrated, EvalError> {
        self.main_conversion()?.calibrate(self, values)
    }

    /// [`Plan::unquantized_reading`] with the calibration already known
    /// (from [`Plan::calibration`] with the same values).
    pub fn unquantized_reading_calibrated(
        &self,
        values: &[f64],
        env: &Env,
        calibrated: &Calibrated,
    ) -> Result<f64, EvalError> {
        self.reading_codes_away(values, env, calibrated, 0.0)
    }

    /// The reading the firmware computes from the converter's exact code
    /// moved by `codes`: the chain's own inverse at the point, so a step of
    /// half a code either side is quantization's effect there, however
    /// nonlinear the chain.
    pub fn reading_codes_away(
        &self,
        values: &[f64],
        env: &Env,
        calibrated: &Calibrated,
        codes: f64,
    ) -> Result<f64, EvalError> {
        let mut signals = [Signal::None; MAX_NODES];
        self.run(values, env, &mut signals, self.reading, Mode::UNQUANTIZED)?;
        let Signal::Code { exact, .. } = signals[self.adc] else {
            return Err(self.numeric(self.adc, "no code"));
        };
        let Node::Convert { cj, conversion, .. } = &self.nodes[self.reading] else {
            return Err(self.numeric(self.reading, "no conversion"));
        };
        let cj = cj.and_then(|n| match signals[n] {
            Signal::Reading(t) => Some(t),
            _ => None,
        });
        let x = conversion.invert(self, values, env, exact + codes, cj)?;
        conversion.correct(self, x, calibrated)
    }

    /// [`Plan::unquantized_reading`] for [`LANES`] sets of values at once
    /// (`values` holds them one after another), into `readings`.
    ///
    /// The nodes run one at a time across every lane rather than one lane
    /// through every node: each run is a long chain of dependent arithmetic
    /// that would keep the processor waiting, and independent lanes fill
    /// the wait. The arithmetic is the single-run code, lane by lane, so the
    /// readings are the same to the bit; on any error the lanes are redone
    /// one by one, so the error is the one a single run meets first.
    ///
    /// `scratch` holds the lanes' signals; it needs no clearing between
    /// calls (every node is written before it is read).
    pub fn unquantized_readings(
        &self,
        values: &[f64],
        env: &Env,
        readings: &mut [f64; LANES],
        scratch: &mut LaneSignals,
    ) -> Result<(), EvalError> {
        let n = self.slots.len();
        if self
            .lane_readings(values, env, None, readings, scratch)
            .is_err()
        {
            for (lane, reading) in readings.iter_mut().enumerate() {
                *reading = self.unquantized_reading(&values[lane * n..(lane + 1) * n], env)?;
            }
        }
        Ok(())
    }

    /// [`Plan::unquantized_readings`] with each lane's calibration known
    /// (as [`Plan::unquantized_reading_calibrated`]).
    pub fn unquantized_readings_calibrated(
        &self,
        values: &[f64],
        env: &Env,
        calibrated: &[Calibrated; LANES],
        readings: &mut [f64; LANES],
        scratch: &mut LaneSignals,
    ) -> Result<(), EvalError> {
        let n = self.slots.len();
        if self
            .lane_readings(values, env, Some(calibrated), readings, scratch)
            .is_err()
        {
            for (lane, reading) in readings.iter_mut().enumerate() {
                let values = &values[lane * n..(lane + 1) * n];
                *reading = self.unquantized_reading_calibrated(values, env, &calibrated[lane])?;
            }
        }
        Ok(())
    }

    /// Every node but the conversions, amplifiers unclipped (as
    /// [`Plan::raw_signals`]), for [`LANES`] sets of values at once.
    pub fn raw_signals_lanes(
        &self,
        values: &[f64],
        env: &Env,
        scratch: &mut LaneSignals,
    ) -> Result<(), EvalError> {
        let n = self.slots.len();
        if self
            .run_lanes(values, env, scratch, self.nodes.len(), Mode::RAW)
            .is_err()
        {
            for (lane, signals) in scratch.iter_mut().enumerate() {
                *signals = self.raw_signals(&values[lane * n..(lane + 1) * n], env)?;
            }
        }
        Ok(())
    }

    fn lane_readings(
        &self,
        values: &[f64],
        env: &Env,
        known: Option<&[Calibrated; LANES]>,
        readings: &mut [f64; LANES],
        signals: &mut LaneSignals,
    ) -> Result<(), EvalError> {
        let n = self.slots.len();
        let lane = |k: usize| &values[k * n..(k + 1) * n];
        let conversion = self.main_conversion()?;
        // The calibration's exact codes, lane by lane, point by point.
        let mut codes = [[0.0; 2]; LANES];
        let points = conversion
            .calibration_points()
            .take(if known.is_some() { 0 } else { 2 });
        for (j, p) in points.enumerate() {
            self.run_lanes(
                values,
                &calibration_env(self, p),
                signals,
                self.adc + 1,
                Mode::CALIBRATION,
            )?;
            for (k, lane_codes) in codes.iter_mut().enumerate() {
                let Signal::Code { exact, .. } = signals[k][self.adc] else {
                    return Err(self.numeric(self.adc, "no code"));
                };
                lane_codes[j] = exact;
            }
        }
        self.run_lanes(values, env, signals, self.reading, Mode::UNQUANTIZED)?;
        let Node::Convert { cj, .. } = &self.nodes[self.reading] else {
            return Err(self.numeric(self.reading, "no conversion"));
        };
        for (k, reading) in readings.iter_mut().enumerate() {
            let Signal::Code { exact, .. } = signals[k][self.adc] else {
                return Err(self.numeric(self.adc, "no code"));
            };
            let cj = cj.and_then(|c| match signals[k][c] {
                Signal::Reading(t) => Some(t),
                _ => None,
            });
            let x = conversion.invert(self, lane(k), env, exact, cj)?;
            let calibrated = match known {
                Some(known) => known[k],
                None => conversion.calibrated_from(self, lane(k), &codes[k])?,
            };
            *reading = conversion.correct(self, x, &calibrated)?;
        }
        Ok(())
    }

    /// [`Plan::run`] for every lane, node by node.
    fn run_lanes(
        &self,
        values: &[f64],
        env: &Env,
        signals: &mut [[Signal; MAX_NODES]; LANES],
        until: usize,
        mode: Mode,
    ) -> Result<(), EvalError> {
        let n = self.slots.len();
        for i in 0..until.min(self.nodes.len()) {
            if !mode.convert && matches!(self.nodes[i], Node::Convert { .. }) {
                continue;
            }
            // What depends on the condition alone is worked out once for
            // all lanes: the couple's EMF at the (actual) cold junction.
            let junction_mv = match self.nodes[i] {
                Node::Thermocouple { ty, .. } => thermocouple::emf_mv(ty, junction_c(ty, env)).ok(),
                _ => None,
            };
            for (k, lane) in signals.iter_mut().enumerate() {
                let s = self.node(i, &values[k * n..(k + 1) * n], env, lane, mode, junction_mv)?;
                if !finite(s) {
                    return Err(self.numeric(i, "a signal is not a finite number"));
                }
                lane[i] = s;
            }
        }
        Ok(())
    }

    fn main_conversion(&self) -> Result<&Conversion, EvalError> {
        match &self.nodes[self.reading] {
            Node::Convert { conversion, .. } => Ok(conversion),
            _ => Err(self.numeric(self.reading, "no conversion")),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::super::element::self_heated;
    use super::round_code;
    use crate::physics::{rtd, thermistor};

    /// The fixed point by plain iteration, far past convergence.
    fn settled(at: impl Fn(f64) -> f64, cold: f64) -> f64 {
        (0..200).fold(cold, |r, _| at(r))
    }

    #[test]
    fn self_heating_matches_the_settled_fixed_point() {
        // A Pt100 at 1 mA and 0.5 mW/K heats by 0.2 K; a 10 kΩ thermistor
        // (β 3950) at 100 µA and 1 mW/K by 0.1 K; the same at 10 µA/mW/K
        // scales show the extrapolation does no harm when nothing heats.
        let cvd = rtd::CvdCoefficients::IEC_60751;
        for (amps, delta) in [(1e-3, 5e-4), (3e-3, 5e-4), (1e-6, 5e-4)] {
            let at = |r: f64| rtd::resistance(100.0, cvd, 20.0 + amps * amps / delta * r);
            let want = settled(at, at(0.0));
            let got = self_heated(rtd::resistance(100.0, cvd, 20.0), false, |r| {
                Ok::<_, ()>(at(r))
            });
            let got = got.unwrap();
            assert!((got - want).abs() < 1e-10, "{amps} A: {got} vs {want}");
        }
        let t = 298.15;
        for (amps, delta) in [(1e-4, 1e-3), (3e-4, 1e-3)] {
            let at = |r: f64| {
                thermistor::beta_resistance(1e4, 298.15, 3950.0, t + amps * amps / delta * r)
                    .unwrap()
            };
            let want = settled(at, at(0.0));
            let got = self_heated(at(0.0), true, |r| Ok::<_, ()>(at(r))).unwrap();
            assert!(
                (got - want).abs() < 1e-8 * want,
                "{amps} A: {got} vs {want}"
            );
        }
    }

    #[test]
    fn codes_round_as_f64_round_then_clamp() {
        let halves = (-40..=40).map(|k| k as f64 * 0.5);
        let near = [
            0.49999999999999994,
            -0.49999999999999994,
            2.5000000000000004,
        ];
        for x in halves.chain(near).chain([f64::MAX, f64::MIN, 1e300]) {
            let want = x.round().clamp(-8.0, 7.0) as i64;
            assert_eq!(round_code(x, -8.0, 7.0), want, "{x}");
        }
    }
}
