//! A converter: its reference (stated or wired), front-end gain, offset,
//! gain error and INL, and the code it gives.

use super::{Cx, Run};
use crate::eval::fault::{
    input_pull, open_input, positive_pin, pulled_lanes, with_pull, Fault, FaultKind, Faulted, Pull,
};
use crate::eval::lanes::{self, Column, LaneRun, Lost, Tag};
use crate::eval::plan::{DriftSlot, Env, EvalError, NodeId, Plan, Signal, SlotId, SourceKind};
use crate::eval::run::LANES;
use crate::model::schema;
use crate::model::typed::{self, AdcInput, CombineOp};
use crate::model::value::Tolerance;
use crate::physics::adc::{self, Polarity};
use crate::units::Dim;

#[derive(Clone, Debug, PartialEq)]
pub struct Adc {
    pub bits: u32,
    pub polarity: Polarity,
    /// Its lowest and highest code, and codes per volt of V_ref/G
    /// (`physics::adc`), worked out once.
    pub codes: (f64, f64),
    pub per_ref: f64,
    pub differential: bool,
    pub pga: Option<SlotId>,
    pub vref: Option<SlotId>,
    pub vref_drift: Option<DriftSlot>,
    pub reference: Option<NodeId>,
    pub offset: Option<AdcOffset>,
    /// A fraction of the gain, nominal 0.
    pub gain_error: Option<SlotId>,
    /// Integral nonlinearity, a fraction of full scale, nominal 0.
    pub inl: Option<SlotId>,
    pub input: NodeId,
    /// What drives its input when the source opens: a burnout current
    /// or a pull resistor.
    pub pull: Option<Pull>,
    /// Its largest input bias current, A, where stated.
    pub bias: Option<f64>,
    /// The same current as an error source, nominal 0 (its sign is not
    /// stated): times the source resistance, an offset at its input.
    pub bias_slot: Option<SlotId>,
    /// The other channels' codes a conversion combines with this one's.
    pub combine: Option<(CombineOp, Vec<NodeId>)>,
    /// A channel of another stage's converter (`channel_of`): its
    /// reference and the faults of it are that converter's.
    pub channel: bool,
}

/// A converter's offset as it was stated: a voltage at its input, or a
/// number of codes (`± 2 LSB`), which stays a number of codes whatever the
/// reference does.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum AdcOffset {
    /// Volts, added to the input.
    Input(SlotId),
    /// Codes, added to the conversion result.
    Codes(SlotId),
}

pub(super) fn lower(m: &typed::Adc, cx: &mut Cx<'_>) -> Result<Adc, EvalError> {
    // Gain error and INL as fractions of the full-scale span.
    let fraction = |cx: &mut Cx<'_>, name: &str, kind, t: &Option<Tolerance>| {
        t.as_ref()
            .map(|t| cx.limit(name, kind, &fraction_of_span(t, m.bits)))
    };
    let (vref, vref_drift) = match &m.vref {
        Some(v) => (
            Some(cx.measure(schema::VREF, SourceKind::Tolerance, v)),
            v.drift
                .as_ref()
                .map(|d| cx.drift("vref_drift", d.per_kelvin, d.relative)),
        ),
        None => (None, None),
    };
    // Slots in the order the parameters are listed (it seeds Monte Carlo).
    // A channel's gain is its own, whatever its converter shares.
    let owner = std::mem::replace(&mut cx.owner, cx.name);
    let pga = m
        .pga
        .as_ref()
        .map(|g| cx.measure(schema::param::PGA, SourceKind::Tolerance, g));
    cx.owner = owner;
    let offset = m.offset.as_ref().map(|t| {
        let slot = cx.limit(schema::param::OFFSET, SourceKind::Bound, t);
        if t.dim == Dim::CODE {
            AdcOffset::Codes(slot)
        } else {
            AdcOffset::Input(slot)
        }
    });
    let (lo, hi) =
        adc::code_range(m.bits, m.polarity).map_err(|e| cx.not_invertible(&e.to_string()))?;
    let mut adc = Adc {
        bits: m.bits,
        polarity: m.polarity,
        codes: (lo as f64, hi as f64),
        // 2^N unipolar, 2^(N−1) bipolar: one past the highest code.
        per_ref: (hi + 1) as f64,
        differential: m.input == AdcInput::Differential,
        pga,
        vref,
        vref_drift,
        reference: cx.inputs.reference,
        offset,
        gain_error: fraction(
            cx,
            schema::param::GAIN_ERROR,
            SourceKind::Gain,
            &m.gain_error,
        ),
        inl: fraction(cx, schema::param::INL, SourceKind::Inl, &m.inl),
        input: cx
            .inputs
            .input
            .ok_or_else(|| cx.not_invertible("no input"))?,
        pull: input_pull(m.burnout, m.pull),
        bias: m.bias,
        bias_slot: None,
        combine: cx.combine.take(),
        channel: cx.owner != cx.name,
    };
    // After INL: the order the parameters are listed.
    adc.bias_slot = m.bias.map(|most| {
        cx.add(
            schema::param::BIAS,
            SourceKind::Bias,
            0.0,
            most,
            most,
            false,
        )
    });
    Ok(adc)
}

/// Its code stuck at either end, its reference lost or shorted, or its input pin
/// open (its own burnout current drives the pin to a rail; without one
/// the pin floats). A differential input's two pins are one row: a
/// burnout current sourced into the positive pin and sunk from the
/// negative one drives either open pin the same way, upscale.
pub(super) const FAULTS: &[FaultKind] = &[
    FaultKind::OverRange,
    FaultKind::UnderRange,
    FaultKind::ReferenceLost,
    FaultKind::ReferenceShorted,
    FaultKind::InputOpen,
];

/// A channel's faults: its converter's reference is listed, and fails,
/// with the converter, once for every channel of it.
const CHANNEL_FAULTS: &[FaultKind] = &[
    FaultKind::OverRange,
    FaultKind::UnderRange,
    FaultKind::InputOpen,
];

/// A converter's gain error or INL as a fraction of its full-scale span.
/// Written in `LSB`, one code is 1/2^bits of the whole span (of both
/// halves for a bipolar input): the converter's own definition of an LSB.
fn fraction_of_span(t: &Tolerance, bits: u32) -> Tolerance {
    if t.dim != Dim::CODE {
        return t.clone();
    }
    let codes = 2f64.powi(bits as i32);
    Tolerance {
        plus: t.plus / codes,
        minus: t.minus / codes,
        dim: Dim::NONE,
        ..t.clone()
    }
}

impl Adc {
    /// Its input as the pins see it, healthy: its burnout current or
    /// pull resistor moves the source's voltage ([`Pull::lift`]), what
    /// its pins' limits must allow for.
    pub fn input_at_pins(&self, input: Signal) -> Signal {
        match input {
            Signal::Voltage { v, cm, rs } => {
                let pin = positive_pin(v, cm, self.differential);
                let (v, rs) = with_pull(self.pull, v, pin, rs);
                Signal::Voltage { v, cm, rs }
            }
            other => other,
        }
    }

    /// The faults this converter or channel can have.
    pub fn faults(&self) -> &'static [FaultKind] {
        if self.channel {
            CHANNEL_FAULTS
        } else {
            FAULTS
        }
    }

    #[inline(always)]
    pub(super) fn eval(&self, run: &Run<'_>) -> Result<Signal, EvalError> {
        let values = run.values;
        let Signal::Voltage { v, cm, rs } = run.s[self.input.index()] else {
            return Err(run.numeric("no input voltage"));
        };
        let vr = self.reference_voltage(run.plan, values, run.env, run.s);
        if vr <= 0.0 || !vr.is_finite() {
            return Err(run.numeric("the reference voltage is zero or negative"));
        }
        let pin = positive_pin(v, cm, self.differential);
        let (v, rs) = with_pull(run.mode.pull_into(self.input, self.pull), v, pin, rs);
        Ok(self.combined(run, self.code(run, v, rs, vr)))
    }

    /// [`Adc::eval`] in every lane of a batch.
    #[inline(always)]
    pub(super) fn eval_lanes(&self, run: &LaneRun<'_>, out: &mut Column) -> Result<(), Lost> {
        let input = &run.s[self.input.index()];
        if input.tag != Tag::Voltage {
            return Err(Lost);
        }
        let vr = match self.reference.map(|n| &run.s[n.index()]) {
            Some(r) if matches!(r.tag, Tag::Voltage | Tag::Source) => r.x,
            _ => run.drifted(run.or_zero(self.vref), self.vref_drift),
        };
        if !lanes::all_positive(&vr) {
            return Err(Lost);
        }
        match &self.combine {
            None => {
                self.codes_lanes(run, input, &vr, out);
                return Ok(());
            }
            Some((CombineOp::Sum, others)) => {
                self.codes_lanes(run, input, &vr, out);
                return self.summed_lanes(run, others, out);
            }
            Some((CombineOp::Ratio, _)) => {}
        }
        let pull = run.mode.pull_into(self.input, self.pull);
        for (k, &vr) in vr.iter().enumerate() {
            let pin = positive_pin(input.x[k], input.cm[k], self.differential);
            let (v, rs) = with_pull(pull, input.x[k], pin, input.rs[k]);
            let own = self.code_of(run.row(k), v, rs, vr, !run.mode.calibrating);
            let code = self.combine_with(own, |n| run.s[n.index()].signal(k));
            out.set(k, code)?;
        }
        match out.tag {
            Tag::Code => Ok(()),
            _ => Err(Lost),
        }
    }

    /// [`Adc::code_of`] over a whole column, for a converter that
    /// combines no other channel: the same arithmetic, lane by lane. The
    /// rounded codes only where the run reads them (quantized): a Monte
    /// Carlo trial's reading takes the exact code and draws the
    /// quantization apart, and rounding is a third of the loop.
    #[inline(always)]
    fn codes_lanes(&self, run: &LaneRun<'_>, input: &Column, vr: &[f64; LANES], out: &mut Column) {
        let gain = self.gains_lanes(run);
        let none = run.or_zero(None);
        let (off, off_codes) = match self.offset {
            Some(AdcOffset::Input(o)) => (run.slot(o), none),
            Some(AdcOffset::Codes(o)) => (none, run.slot(o)),
            None => (none, none),
        };
        // Each term a column of its own (zeros where it is absent, added
        // as the single run adds its 0.0), so the loop below has no branch.
        let (x, rs) = match run.mode.pull_into(self.input, self.pull) {
            Some(pull) => pulled_lanes(pull, input, self.differential),
            None => (input.x, input.rs),
        };
        let mut bias = [0.0; LANES];
        if let Some(b) = self.bias_slot.map(|b| run.slot(b)) {
            for k in 0..LANES {
                bias[k] = b[k] * rs[k];
            }
        }
        let mut inl = [0.0; LANES];
        if let Some(s) = self.inl.filter(|_| !run.mode.calibrating) {
            let (s, full_scale) = (
                run.slot(s),
                adc::full_scale_codes(self.per_ref, self.polarity),
            );
            for k in 0..LANES {
                inl[k] = s[k] * full_scale;
            }
        }
        let (per_ref, (lo, hi)) = (self.per_ref, self.codes);
        out.tag = Tag::Code;
        for k in 0..LANES {
            let off = off[k] + bias[k];
            out.x[k] = adc::exact_code(x[k] + off, gain[k], vr[k], per_ref, off_codes[k], inl[k]);
        }
        if run.mode.quantized {
            for k in 0..LANES {
                out.code[k] = round_code(out.x[k], lo, hi);
            }
        }
    }

    /// [`Adc::combine_with`] for a sum, over whole columns: `out` holds
    /// this channel's own codes and takes the sum's. The codes add as
    /// integers, which is what the single run's sum of whole numbers
    /// rounds to (each code is within ±2³², so the sum is exact), where
    /// the run rounds them at all.
    #[inline(always)]
    fn summed_lanes(
        &self,
        run: &LaneRun<'_>,
        others: &[NodeId],
        out: &mut Column,
    ) -> Result<(), Lost> {
        let (lo, hi) = self.codes;
        let mut exact = out.x;
        ended_lanes(&mut exact, lo, hi);
        for &n in others {
            let other = &run.s[n.index()];
            if other.tag != Tag::Code {
                return Err(Lost);
            }
            let mut e = other.x;
            ended_lanes(&mut e, lo, hi);
            for k in 0..LANES {
                exact[k] += e[k];
            }
            if run.mode.quantized {
                for k in 0..LANES {
                    out.code[k] += other.code[k];
                }
            }
        }
        if !lanes::all_finite(&exact) {
            return Err(Lost);
        }
        out.x = exact;
        Ok(())
    }

    /// Each lane's gain, its PGA's (1 without) times 1 + its gain error.
    #[inline(always)]
    fn gains_lanes(&self, run: &LaneRun<'_>) -> [f64; LANES] {
        let gain_error = run.or_zero(self.gain_error);
        let mut gain = [0.0; LANES];
        for k in 0..LANES {
            gain[k] = 1.0 + gain_error[k];
        }
        if let Some(pga) = self.pga.map(|g| run.slot(g)) {
            for k in 0..LANES {
                gain[k] *= pga[k];
            }
        }
        gain
    }

    /// Its code combined with the other channels' a conversion reads
    /// with it: added (`sum`), or as a ratio scaled to its own codes of
    /// full scale (`ratio`), rounded as a code.
    #[inline(always)]
    fn combined(&self, run: &Run<'_>, own: Signal) -> Signal {
        self.combine_with(own, |n| run.s[n.index()])
    }

    /// [`Adc::combined`] with the other channels' codes from `code_of`.
    #[inline(always)]
    fn combine_with(&self, own: Signal, code_of: impl Fn(NodeId) -> Signal) -> Signal {
        let Some((op, others)) = &self.combine else {
            return own;
        };
        let Signal::Code { exact, code } = own else {
            return own;
        };
        // A channel driven past its range gives its end code, which is
        // what the firmware adds or divides (the channels share one part).
        let (lo, hi) = self.codes;
        let ended = |e: f64| e.clamp(lo, hi);
        let (mut exact, mut code_f) = (ended(exact), code as f64);
        for &n in others {
            let Signal::Code { exact: e, code: c } = code_of(n) else {
                return Signal::None;
            };
            match op {
                CombineOp::Sum => {
                    exact += ended(e);
                    code_f += c as f64;
                }
                CombineOp::Ratio => {
                    exact = exact / ended(e) * self.per_ref;
                    code_f = code_f / c as f64 * self.per_ref;
                }
            }
        }
        if !exact.is_finite() {
            return Signal::None;
        }
        Signal::Code {
            exact,
            code: if code_f.is_finite() {
                code_f.round() as i64
            } else {
                0
            },
        }
    }

    /// Its code behind a fault upstream, or with one of its own, combined
    /// with the other channels' a conversion reads with it (a code stuck
    /// at a rail still enters the combination).
    pub(super) fn faulted(
        &self,
        run: &Run<'_>,
        fault: Option<&Fault>,
    ) -> Result<Faulted, EvalError> {
        Ok(match self.faulted_own(run, fault)? {
            Faulted::Signal(own) => Faulted::Signal(self.combined(run, own)),
            other => other,
        })
    }

    /// Its own code behind a fault upstream, or with one of its own,
    /// before any combination: what firmware sees of this channel. Without
    /// a reference, an input above zero is beyond full scale and one below
    /// beyond the bottom, as any converter clamps them; an input of zero
    /// too still leaves it at an end, which one being its offset's sign.
    pub(super) fn faulted_own(
        &self,
        run: &Run<'_>,
        fault: Option<&Fault>,
    ) -> Result<Faulted, EvalError> {
        let kind = fault.map(|f| f.kind);
        let (lo, hi) = self.codes;
        let rail = |x: f64| {
            Faulted::Signal(Signal::Code {
                exact: x,
                code: x as i64,
            })
        };
        let Signal::Voltage { v, cm, rs } = run.s[self.input.index()] else {
            return Err(run.numeric("no input voltage"));
        };
        let open = fault.and_then(|f| f.pull);
        let (v, rs) = match (kind, open_input(open, cm)) {
            (Some(FaultKind::InputOpen), Faulted::Signal(Signal::Voltage { v, rs, .. })) => (v, rs),
            (Some(FaultKind::InputOpen), floating) => return Ok(floating),
            _ => (v, rs),
        };
        let pin = positive_pin(v, cm, self.differential);
        // Its own pin open, what the fault states drives it (the stage's
        // own pull, or one a fix tries in its place).
        let pull = match kind {
            Some(FaultKind::InputOpen) => open,
            _ => run.mode.pull_into(self.input, self.pull),
        };
        let (v, rs) = with_pull(pull, v, pin, rs);
        let vr = match kind {
            Some(FaultKind::InputOpen) => {
                self.reference_voltage(run.plan, run.values, run.env, run.s)
            }
            Some(FaultKind::OverRange) => return Ok(rail(hi)),
            Some(FaultKind::UnderRange) => return Ok(rail(lo)),
            // Lost or shorted, nothing balances the input: a shorted pin
            // also holds the node wired to it at 0 V (`Plan::faulted_code_at`).
            Some(FaultKind::ReferenceLost | FaultKind::ReferenceShorted) => 0.0,
            Some(other) => return Err(run.numeric(other.describe())),
            None => self.reference_voltage(run.plan, run.values, run.env, run.s),
        };
        Ok(if vr > 0.0 && vr.is_finite() {
            Faulted::Signal(self.code(run, v, rs, vr))
        } else if v > 0.0 {
            rail(hi)
        } else if v < 0.0 {
            rail(lo)
        } else {
            // No reference to balance against: the modulator or the
            // successive approximation runs to an end, on the side its own
            // offset takes it.
            Faulted::EitherEnd
        })
    }

    /// The code for input `v` from source resistance `rs` against
    /// reference `vr`.
    #[inline(always)]
    fn code(&self, run: &Run<'_>, v: f64, rs: f64, vr: f64) -> Signal {
        self.code_of(run.values, v, rs, vr, !run.mode.calibrating)
    }

    #[inline(always)]
    /// `with_inl`: off for a calibration's reading. INL depends on the
    /// code, so what the calibration point shows of it is not what
    /// another code has: a calibration removes none of it (common
    /// practice in converter error budgets), rather than the whole of it
    /// as a constant offset would be.
    fn code_of(&self, values: &[f64], v: f64, rs: f64, vr: f64, with_inl: bool) -> Signal {
        let gain = self.pga.map(|g| values[g.index()]).unwrap_or(1.0)
            * (1.0 + self.gain_error.map(|g| values[g.index()]).unwrap_or(0.0));
        let (off, off_codes) = match self.offset {
            Some(AdcOffset::Input(o)) => (values[o.index()], 0.0),
            Some(AdcOffset::Codes(o)) => (0.0, values[o.index()]),
            None => (0.0, 0.0),
        };
        // Its input current through the source's resistance, as an
        // amplifier's: an offset at its input.
        let off = off + self.bias_slot.map_or(0.0, |b| values[b.index()] * rs);
        let (per_ref, (lo, hi)) = (self.per_ref, self.codes);
        // INL is a fraction of the full-scale code span.
        let inl = match self.inl.filter(|_| with_inl) {
            Some(s) => values[s.index()] * adc::full_scale_codes(per_ref, self.polarity),
            None => 0.0,
        };
        let exact = adc::exact_code(v + off, gain, vr, per_ref, off_codes, inl);
        Signal::Code {
            exact,
            code: round_code(exact, lo, hi),
        }
    }

    /// The reference it works against: its `ref` input, else its `vref`
    /// with drift.
    #[inline(always)]
    fn reference_voltage(&self, plan: &Plan, values: &[f64], env: &Env, s: &[Signal]) -> f64 {
        match self.reference.map(|n| s[n.index()]) {
            Some(Signal::Voltage { v, .. }) | Some(Signal::Source(v)) => v,
            _ => plan.drifted(
                self.vref.map(|r| values[r.index()]).unwrap_or(0.0),
                self.vref_drift,
                values,
                env,
            ),
        }
    }
}

impl Plan {
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
        let super::Node::Adc(adc) = &self.nodes[node.index()] else {
            return None;
        };
        Some(adc.reference_voltage(self, values, env, signals))
    }

    /// How many rounded codes the chain's code adds: the channels a `sum`
    /// combines, else 1. Each rounds on its own, so the sum's
    /// quantization is that many independent half-codes.
    pub fn summed_codes(&self) -> usize {
        use super::Node;
        match &self.nodes[self.adc.index()] {
            Node::Adc(Adc {
                combine: Some((CombineOp::Sum, others)),
                ..
            }) => 1 + others.len(),
            Node::Excitation(_)
            | Node::Rtd(_)
            | Node::Thermocouple(_)
            | Node::Thermistor(_)
            | Node::IcVoltage(_)
            | Node::IcCurrent(_)
            | Node::StrainGauge(_)
            | Node::Transducer(_)
            | Node::Resistor(_)
            | Node::Bridge(_)
            | Node::Amplifier(_)
            | Node::Filter(_)
            | Node::Adc(_)
            | Node::Convert(_) => 1,
        }
    }

    /// The unrounded code converter `node` gives its own input in one raw
    /// evaluation, before a conversion combines it with other channels'
    /// (what its input range is judged by); None for another kind of node.
    pub fn converter_own_code(
        &self,
        node: NodeId,
        values: &[f64],
        env: &Env,
        signals: &[Signal],
    ) -> Option<f64> {
        let super::Node::Adc(adc) = &self.nodes[node.index()] else {
            return None;
        };
        let Signal::Voltage { v, rs, .. } = signals[adc.input.index()] else {
            return None;
        };
        let vr = adc.reference_voltage(self, values, env, signals);
        match adc.code_of(values, v, rs, vr, true) {
            Signal::Code { exact, .. } => Some(exact),
            _ => None,
        }
    }
}

/// Each lane clamped to `lo ..= hi` ([`lanes::clamped`]).
#[inline(always)]
fn ended_lanes(x: &mut [f64; LANES], lo: f64, hi: f64) {
    for x in x.iter_mut() {
        *x = lanes::clamped(*x, lo, hi);
    }
}

/// The nearest code (halves away from zero) within `lo ..= hi`, both
/// whole and within ±2⁵¹ (a converter has at most 32 bits); 0 for NaN.
/// Adding 1.5 × 2⁵² rounds a number of that size to a whole one (ties to
/// even) in the low bits of the sum, so the code is plain arithmetic,
/// which vectorises, rather than a truncation to i64 (a library call or a
/// scalar conversion) and back; a tie the sum rounded towards zero is then
/// moved away from it.
#[inline(always)]
fn round_code(exact: f64, lo: f64, hi: f64) -> i64 {
    const SHIFTER: f64 = 6_755_399_441_055_744.0;
    debug_assert!(lo.abs() <= 2f64.powi(51) && hi.abs() <= 2f64.powi(51));
    let x = exact.clamp(lo, hi);
    let x = if x.is_nan() { 0.0 } else { x };
    let shifted = x + SHIFTER;
    let nearest = shifted - SHIFTER;
    let off = x - nearest;
    let nearest = shifted.to_bits() as i64 - SHIFTER.to_bits() as i64;
    nearest + i64::from(off == 0.5 && x > 0.0) - i64::from(off == -0.5 && x < 0.0)
}

#[cfg(test)]
mod tests {
    use super::round_code;
    use crate::eval::lanes::check;
    use crate::eval::plan::Env;
    use crate::units::ZERO_CELSIUS_K;

    /// Two load cells on channels of one converter, the codes added: a
    /// cell of each lane's own tolerances, and a range wide enough that
    /// the heaviest loads drive each channel past its full scale.
    const SUMMED: &str = r#"
chain pair "p" {
    measurand mass 0 kg .. 8000 kg
    excitation supply { voltage 5 V ± 0.2 % }
    sensor leg_1 {
        transducer
        sensitivity 2 mV/V ± 0.1 % at 1000 kg
        zero ± 0.05 mV/V
        share 50 %
    }
    sensor leg_2 {
        transducer
        sensitivity 2 mV/V ± 0.1 % at 1000 kg
        zero ± 0.05 mV/V
        share 50 %
    }
    adc conv {
        bits 24
        input differential
        pga 128
        offset 2 uV max
        gain_error ± 0.01 %
        inl ± 2 LSB
    }
    adc leg_2_in {
        channel_of conv
        pga 128
    }
    convert reading {
        method linear
        sum leg_2_in
    }
    supply -> leg_1 -> conv -> reading
    supply -> leg_2 -> leg_2_in
    supply -> conv.ref
}
"#;

    #[test]
    fn summed_codes_in_lanes_match_single_runs() {
        let plan = check::plan(SUMMED);
        let conv = check::node(&plan, "conv");
        let rows = check::spread(&plan);
        for kg in [0.0, 2000.0, 7000.0, 8000.0] {
            let env = Env {
                measurand: kg,
                ambient: ZERO_CELSIUS_K + 25.0,
                cold_junction: ZERO_CELSIUS_K + 25.0,
            };
            for calibrating in [false, true] {
                let mode = check::mode(true, calibrating);
                check::matches_single_runs(&plan, conv, &rows, &env, mode)
                    .expect("every lane runs");
            }
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
        assert_eq!(round_code(f64::NAN, -8.0, 7.0), 0);
    }

    /// At a 32-bit converter's ends, and every half between two codes
    /// near them, as `f64::round` gives them.
    #[test]
    fn codes_round_at_thirty_two_bits() {
        let (lo, hi) = (-(2f64.powi(31)), 2f64.powi(31) - 1.0);
        let near_ends = (0..64).flat_map(|k| [lo + k as f64 * 0.5, hi - k as f64 * 0.5]);
        let beyond = [lo - 0.5, hi + 0.5, 2f64.powi(40), -(2f64.powi(40))];
        for x in near_ends.chain(beyond) {
            let want = x.round().clamp(lo, hi) as i64;
            assert_eq!(round_code(x, lo, hi), want, "{x}");
        }
    }
}
