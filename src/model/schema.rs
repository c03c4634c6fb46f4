//! What each stage kind accepts: its models, their parameters, the shape
//! and dimension of each value, what is required and what is plausible.
//! Adding a parameter is one line here (and its use in `physics`).

use super::chain::Bill;
use super::typed::{
    Adc, AdcInput, Amplifier, Bridge, BridgeForm, CalibrationMethod, ColdJunction, Combine,
    CombineOp, ConversionMethod, Convert, Excitation, Filter, GaugeSide, IcCurrent, IcVoltage,
    Resistor, Rtd, RtdCurveName, Sampling, Side, Source, StageModel, StrainGauge, Thermistor,
    ThermistorLaw, Thermocouple, Transducer,
};
use super::value::{Measure, ParamValue, ResolvedParam, Tolerance};
use crate::physics::adc::Polarity;
use crate::physics::filter::Response;
use crate::physics::rtd::{ToleranceClass, Wiring};
use crate::physics::thermocouple::ThermocoupleType;
use crate::physics::transducer::LinearityLine;
use crate::syntax::ast::StageKind;
use crate::units::Dim;

/// What a number must be.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Expect {
    Dim(Dim),
    /// An absolute temperature (`25 degC`, `298.15 K`).
    Temperature,
    /// A temperature difference (`0.5 K`, `± 0.5 degC`).
    TempDiff,
    /// A plain number, `%` or `ppm`.
    Ratio,
    /// A plain number with no unit at all (a price in the team's currency).
    Number,
    /// `dB` (amplitude) or a plain ratio.
    Decibel,
    /// In the chain's measurand unit (`500 N`).
    Measurand,
    /// A quantity per kelvin: relative (`ppm/K`) or of the given dimension.
    PerKelvin(Dim),
    /// Any of these dimensions (noise as rms or as a density).
    OneOf(&'static [Dim]),
    /// A transducer's output: a ratio of its excitation (`mV/V`), a
    /// voltage, or in `%` or `ppm` a share of its rated output, as load
    /// cell datasheets state a zero balance (`± 1 %` of rated output).
    RatedOutput,
}

/// The word of a value's drift clause (`10 kohm ± 0.1 % drift 25 ppm/K`).
pub const DRIFT_CLAUSE: &str = "drift";

#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Shape {
    /// `nominal [± tol] [normal] [max] [drift d]`; `tol`/`drift` say
    /// whether a tolerance and a `drift` clause are accepted.
    Measure {
        expect: Expect,
        tol: bool,
        drift: bool,
    },
    /// A bound with nominal zero: `± x`, `x max` or `x`.
    Limit(Expect),
    /// `lo .. hi` with `lo` below `hi`.
    Range(Expect),
    /// `lo .. hi` or a single value, where a range may be a point: a
    /// range whose ends are equal is that point, as the single value is.
    RangeOrPoint(Expect),
    /// One word of the list.
    Words(&'static [&'static str]),
    /// An integer in `min..=max`.
    Count { min: u32, max: u32 },
    /// Exactly `n` plain numbers.
    Numbers(usize),
    /// Exactly `n` plain numbers, each with an optional tolerance
    /// (relative, `± 0.1 %`, or absolute, `± 2e-6`).
    TolerancedNumbers(usize),
    /// `value at point`.
    At { value: Expect, at: Expect },
    /// `value to point`, with no tolerance (`pull 10 Mohm to 0 V`).
    To { value: Expect, to: Expect },
    /// `exact | linear | table n | poly n`
    Method,
    /// `offset at T ± u` or `two_point at T1, T2 ± u`
    Calibrate,
    /// `± x K` or the name of another stage.
    LimitOrStage(Expect),
    /// The name of another stage.
    StageName,
    /// Names of other stages, separated by commas.
    StageNames,
    /// `type K`
    ThermocoupleType,
    /// A model line with no values.
    Flag,
}

/// What a model takes and gives: the port rules (`ports.rs`) follow it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Role {
    /// Drives a current into what it feeds.
    CurrentSource,
    /// A voltage across what it feeds.
    VoltageSource,
    /// A resistance: a voltage on a current source, else a bridge arm.
    Resistive,
    /// A voltage of its own with no input (a thermocouple).
    Floating,
    /// A bridge transducer: excited by a current or a voltage, which it
    /// needs when rated in mV/V.
    Transducer,
    /// A voltage output from an optional supply.
    Powered,
    /// A current output (PTAT) from an optional supply.
    PoweredCurrent,
    /// A divider or bridge of so many active arms.
    Bridge {
        arms: usize,
    },
    Amplifier,
    Filter,
    Adc,
    Convert,
}

/// The quantity a model senses.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Measures {
    Temperature,
    LoadOrStrain,
    /// Not a sensor of the measurand (a source, a fixed resistor, a
    /// stage that conditions a signal).
    Nothing,
}

impl Measures {
    /// The quantity in words, None for `Nothing`.
    pub fn words(self) -> Option<&'static str> {
        match self {
            Measures::Temperature => Some("temperature"),
            Measures::LoadOrStrain => Some("a load or strain"),
            Measures::Nothing => None,
        }
    }
}

/// The smallest and largest plausible value (SI), checked after units.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Plausible {
    Any,
    Positive,
    NonNegative,
    NonZero,
}

#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ParamSpec {
    pub name: &'static str,
    pub shape: Shape,
    pub required: bool,
    pub plausible: Plausible,
}

/// One model of a stage kind: the word of its model line (None for kinds
/// without one) and the parameters it takes besides the model line.
#[derive(Debug)]
pub struct ModelSpec {
    pub kind: StageKind,
    pub model: Option<&'static str>,
    /// What it takes and gives, for the port rules (`ports.rs`).
    pub role: Role,
    /// The quantity it senses, which the channels of one sum must share.
    pub measures: Measures,
    /// The model line itself (`rtd pt1000`, `current 250 uA ± 0.5 %`).
    pub model_shape: Shape,
    pub params: &'static [ParamSpec],
    /// Pairs that cannot both be given.
    pub exclusive: &'static [(&'static str, &'static str)],
    /// Groups of which at least one must be given.
    pub one_of: &'static [&'static [&'static str]],
    /// Groups given all together or not at all: what one of them states
    /// means nothing without the others.
    pub together: &'static [&'static [&'static str]],
    /// The typed model from the checked lines; None where a value it needs
    /// is missing or was rejected (already reported).
    pub read: fn(&Reader<'_>) -> Option<StageModel>,
}

const fn p(name: &'static str, shape: Shape) -> ParamSpec {
    ParamSpec {
        name,
        shape,
        required: false,
        plausible: Plausible::Any,
    }
}

impl ParamSpec {
    const fn required(mut self) -> Self {
        self.required = true;
        self
    }
    const fn positive(mut self) -> Self {
        self.plausible = Plausible::Positive;
        self
    }
    const fn non_negative(mut self) -> Self {
        self.plausible = Plausible::NonNegative;
        self
    }
    const fn non_zero(mut self) -> Self {
        self.plausible = Plausible::NonZero;
        self
    }
}

const fn measure(expect: Expect) -> Shape {
    Shape::Measure {
        expect,
        tol: true,
        drift: true,
    }
}

const fn plain(expect: Expect) -> Shape {
    Shape::Measure {
        expect,
        tol: false,
        drift: false,
    }
}

const fn toleranced(expect: Expect) -> Shape {
    Shape::Measure {
        expect,
        tol: true,
        drift: false,
    }
}

const VOLT: Expect = Expect::Dim(Dim::VOLTAGE);
const AMP: Expect = Expect::Dim(Dim::CURRENT);
const OHM: Expect = Expect::Dim(Dim::RESISTANCE);
const SECOND: Expect = Expect::Dim(Dim::TIME);
const HERTZ: Expect = Expect::Dim(Dim::FREQUENCY);
const FARAD: Expect = Expect::Dim(Dim::CAPACITANCE);

const VOLTAGE_NOISE: Expect = Expect::OneOf(&[Dim::VOLTAGE, Dim::VOLTAGE_DENSITY]);
/// A converter quantity in volts or in codes (`LSB`).
const VOLTAGE_OR_CODES: Expect = Expect::OneOf(&[Dim::VOLTAGE, Dim::CODE]);
/// A converter quantity as a ratio or in codes (`LSB` of full scale).
const RATIO_OR_CODES: Expect = Expect::OneOf(&[Dim::NONE, Dim::CODE]);
const CURRENT_NOISE: Expect = Expect::OneOf(&[Dim::CURRENT, Dim::CURRENT_DENSITY]);

const TIME_CONSTANT: ParamSpec = p("time_constant", plain(SECOND)).non_negative();
const DISSIPATION: ParamSpec = p(
    param::DISSIPATION,
    toleranced(Expect::Dim(Dim::DISSIPATION)),
)
.positive();
const LEAD: ParamSpec = p("lead", toleranced(OHM)).non_negative();
/// One unit's price, in whatever currency the team prices parts in (a
/// plain number), for the trade table of `catena compare`.
/// A resistor from an input pin to a voltage (`pull 10 Mohm to 0 V`):
/// what drives an open input, in place of a burnout current.
const PULL: ParamSpec = p(
    param::PULL,
    Shape::To {
        value: OHM,
        to: VOLT,
    },
);
const COST: ParamSpec = p("cost", plain(Expect::Number)).non_negative();
/// What the stage draws from its supplies, W.
const POWER: ParamSpec = p("power", plain(Expect::Dim(Dim::POWER))).non_negative();

/// Parameter names other layers name a line or an error source by
/// (a slot's id is `stage.parameter`): each is written here once.
pub mod param {
    pub const ACCURACY: &str = "accuracy";
    pub const ACQUISITION_TIME: &str = "acquisition_time";
    pub const BURNOUT: &str = "burnout";
    pub const PULL: &str = "pull";
    pub const AVERAGE: &str = "average";
    pub const BETA: &str = "beta";
    pub const BIAS: &str = "bias";
    pub const LEAD: &str = "lead";
    pub const BIAS_RESISTOR: &str = "bias_resistor";
    pub const BIAS_VOLTAGE: &str = "bias_voltage";
    pub const CALIBRATE: &str = "calibrate";
    pub const CLASS: &str = "class";
    pub const CMRR: &str = "cmrr";
    pub const COMPLIANCE: &str = "compliance";
    /// A current source's model line, which states its value.
    pub const CURRENT: &str = "current";
    pub const CURRENT_NOISE: &str = "current_noise";
    pub const DISSIPATION: &str = "dissipation";
    pub const DRIFT: &str = "drift";
    pub const GAIN: &str = "gain";
    pub const GAIN_DRIFT: &str = "gain_drift";
    pub const GAIN_ERROR: &str = "gain_error";
    pub const GAUGE_FACTOR: &str = "gauge_factor";
    pub const HYSTERESIS: &str = "hysteresis";
    pub const INL: &str = "inl";
    pub const INPUT: &str = "input";
    pub const LIMIT: &str = "limit";
    pub const MAX_CURRENT: &str = "max_current";
    pub const NOISE: &str = "noise";
    pub const NONLINEARITY: &str = "nonlinearity";
    pub const OFFSET: &str = "offset";
    pub const OFFSET_DRIFT: &str = "offset_drift";
    pub const OUTPUT: &str = "output";
    pub const OUTPUT_RESISTANCE: &str = "output_resistance";
    pub const PGA: &str = "pga";
    pub const R: &str = "r";
    pub const R0: &str = "r0";
    pub const R25: &str = "r25";
    pub const RAILS: &str = "rails";
    pub const REF_RANGE: &str = "ref_range";
    pub const SAMPLING_CAPACITANCE: &str = "sampling_capacitance";
    pub const SLOPE: &str = "slope";
    pub const SPAN_DRIFT: &str = "span_drift";
    /// A strain gauge's apparent strain per kelvin of its temperature.
    pub const THERMAL_OUTPUT: &str = "thermal_output";
    /// A voltage source's model line, which states its value.
    pub const VOLTAGE: &str = "voltage";
    pub const TOLERANCE: &str = "tolerance";
    pub const ZERO: &str = "zero";
    pub const ZERO_DRIFT: &str = "zero_drift";
}

/// Lines the port rules and graph checks look up before a typed model
/// exists (a stage with a rejected line has none), for the line's
/// position: each name is written here once, for its row and its reader.
pub const COLD_JUNCTION: &str = "cold_junction";
/// An amplifier's stated reference voltage.
pub const REFERENCE: &str = "reference";
/// A converter's stated reference voltage.
pub const VREF: &str = "vref";
/// A transducer's rated output.
pub const SENSITIVITY: &str = "sensitivity";
/// A converter's channel: it names the converter whose part it shares.
pub const CHANNEL_OF: &str = "channel_of";
/// A conversion's channels added to its input.
pub const SUM: &str = "sum";
/// A converter's scan sequence: the order it converts its inputs in.
pub const SCAN: &str = "scan";
/// The part of the measurand a load cell carries.
pub const SHARE: &str = "share";
/// A conversion's channel its input is divided by.
pub const RATIO: &str = "ratio";

/// Required lines another line makes unnecessary, as (given, waived): a
/// converter's channel states no part of its own.
pub const WAIVED: &[(&str, &str)] = &[(CHANNEL_OF, "bits")];

/// The thermocouple model's word.
pub const THERMOCOUPLE: &str = "thermocouple";

pub const RTD_CURVES: &[&str] = &[
    "pt100", "pt500", "pt1000", "ni100", "ni120", "ni1000", "cu10", "cu100", "custom",
];
pub const THERMOCOUPLE_TYPES: &[&str] = &["B", "E", "J", "K", "N", "R", "S", "T"];

static MODELS: &[ModelSpec] = &[
    ModelSpec {
        kind: StageKind::Excitation,
        model: Some(param::CURRENT),
        role: Role::CurrentSource,
        measures: Measures::Nothing,
        model_shape: measure(AMP),
        params: &[
            p(param::DRIFT, Shape::Limit(Expect::PerKelvin(Dim::CURRENT))),
            p(param::NOISE, Shape::Limit(CURRENT_NOISE)),
            p(param::COMPLIANCE, plain(VOLT)).positive(),
            COST,
            POWER,
        ],
        exclusive: &[],
        one_of: &[],
        together: &[],
        read: read_current,
    },
    ModelSpec {
        kind: StageKind::Excitation,
        model: Some(param::VOLTAGE),
        role: Role::VoltageSource,
        measures: Measures::Nothing,
        model_shape: measure(VOLT),
        params: &[
            p(param::DRIFT, Shape::Limit(Expect::PerKelvin(Dim::VOLTAGE))),
            p(param::NOISE, Shape::Limit(VOLTAGE_NOISE)),
            p(param::LIMIT, plain(AMP)).positive(),
            COST,
            POWER,
        ],
        exclusive: &[],
        one_of: &[],
        together: &[],
        read: read_voltage,
    },
    ModelSpec {
        kind: StageKind::Sensor,
        model: Some("rtd"),
        role: Role::Resistive,
        measures: Measures::Temperature,
        model_shape: Shape::Words(RTD_CURVES),
        params: &[
            p(param::R0, toleranced(OHM)).positive(),
            p("coefficients", Shape::TolerancedNumbers(3)),
            p(param::CLASS, Shape::Words(&["AA", "A", "B", "C"])),
            p(param::TOLERANCE, Shape::Limit(Expect::TempDiff)),
            p("wires", Shape::Count { min: 2, max: 4 }),
            LEAD,
            DISSIPATION,
            TIME_CONSTANT,
            p(param::MAX_CURRENT, plain(AMP)).positive(),
            COST,
            POWER,
        ],
        exclusive: &[("class", "tolerance")],
        one_of: &[],
        together: &[],
        read: read_rtd,
    },
    ModelSpec {
        kind: StageKind::Sensor,
        model: Some(THERMOCOUPLE),
        role: Role::Floating,
        measures: Measures::Temperature,
        model_shape: Shape::ThermocoupleType,
        params: &[
            p(param::CLASS, Shape::Count { min: 1, max: 3 }),
            p(param::TOLERANCE, Shape::Limit(Expect::TempDiff)),
            p(COLD_JUNCTION, Shape::LimitOrStage(Expect::TempDiff)),
            LEAD,
            TIME_CONSTANT,
            p(param::BIAS_VOLTAGE, measure(VOLT)),
            p(param::BIAS_RESISTOR, toleranced(OHM)).positive(),
            COST,
            POWER,
        ],
        exclusive: &[("class", "tolerance")],
        one_of: &[],
        together: &[&["bias_resistor", "bias_voltage"]],
        read: read_thermocouple,
    },
    ModelSpec {
        kind: StageKind::Sensor,
        model: Some("thermistor"),
        role: Role::Resistive,
        measures: Measures::Temperature,
        model_shape: Shape::Flag,
        params: &[
            p(param::R25, toleranced(OHM)).required().positive(),
            p(param::BETA, toleranced(Expect::TempDiff)).positive(),
            p("steinhart", Shape::Numbers(3)),
            DISSIPATION,
            p("range", Shape::Range(Expect::Temperature)),
            TIME_CONSTANT,
            p(param::MAX_CURRENT, plain(AMP)).positive(),
            COST,
            POWER,
        ],
        exclusive: &[("beta", "steinhart")],
        one_of: &[&["beta", "steinhart"]],
        together: &[],
        read: read_thermistor,
    },
    ModelSpec {
        kind: StageKind::Sensor,
        model: Some("ic_voltage"),
        role: Role::Powered,
        measures: Measures::Temperature,
        model_shape: Shape::Flag,
        params: &[
            p(param::SLOPE, toleranced(Expect::PerKelvin(Dim::VOLTAGE)))
                .required()
                .non_zero(),
            p(
                param::OUTPUT,
                Shape::At {
                    value: VOLT,
                    at: Expect::Temperature,
                },
            )
            .required(),
            p(param::ACCURACY, Shape::Limit(Expect::TempDiff)),
            p(param::NOISE, Shape::Limit(VOLTAGE_NOISE)),
            p(param::OUTPUT_RESISTANCE, plain(OHM)).non_negative(),
            p("supply", Shape::Range(VOLT)),
            p("supply_current", plain(AMP)).non_negative(),
            TIME_CONSTANT,
            COST,
            POWER,
        ],
        exclusive: &[],
        one_of: &[],
        together: &[],
        read: read_ic_voltage,
    },
    ModelSpec {
        kind: StageKind::Sensor,
        model: Some("ic_current"),
        role: Role::PoweredCurrent,
        measures: Measures::Temperature,
        model_shape: Shape::Flag,
        params: &[
            p(param::SLOPE, toleranced(Expect::PerKelvin(Dim::CURRENT)))
                .required()
                .positive(),
            p(param::ACCURACY, Shape::Limit(Expect::TempDiff)),
            p("supply", Shape::Range(VOLT)),
            TIME_CONSTANT,
            COST,
            POWER,
        ],
        exclusive: &[],
        one_of: &[],
        together: &[],
        read: read_ic_current,
    },
    ModelSpec {
        kind: StageKind::Sensor,
        model: Some("strain_gauge"),
        role: Role::Resistive,
        measures: Measures::LoadOrStrain,
        model_shape: Shape::Flag,
        params: &[
            p(param::R, measure(OHM)).required().positive(),
            p(param::GAUGE_FACTOR, measure(Expect::Ratio))
                .required()
                .positive(),
            p(
                param::THERMAL_OUTPUT,
                Shape::Limit(Expect::PerKelvin(Dim::NONE)),
            ),
            p("side", Shape::Words(&["tension", "compression"])),
            TIME_CONSTANT,
            COST,
            POWER,
        ],
        exclusive: &[],
        one_of: &[],
        together: &[],
        read: read_strain_gauge,
    },
    ModelSpec {
        kind: StageKind::Sensor,
        model: Some("transducer"),
        role: Role::Transducer,
        measures: Measures::LoadOrStrain,
        model_shape: Shape::Flag,
        params: &[
            p(
                SENSITIVITY,
                Shape::At {
                    value: Expect::OneOf(&[Dim::NONE, Dim::VOLTAGE]),
                    at: Expect::Measurand,
                },
            )
            .required(),
            p(param::ZERO, Shape::Limit(Expect::RatedOutput)),
            p(param::NONLINEARITY, Shape::Limit(Expect::Ratio)),
            p("linearity", Shape::Words(&["terminal", "best_fit"])),
            p(param::HYSTERESIS, Shape::Limit(Expect::Ratio)),
            p(
                param::ZERO_DRIFT,
                Shape::Limit(Expect::PerKelvin(Dim::NONE)),
            ),
            p(
                param::SPAN_DRIFT,
                Shape::Limit(Expect::PerKelvin(Dim::NONE)),
            ),
            p(param::R, toleranced(OHM)).positive(),
            p(SHARE, plain(Expect::Ratio)).positive(),
            TIME_CONSTANT,
            COST,
            POWER,
        ],
        exclusive: &[],
        one_of: &[],
        together: &[],
        read: read_transducer,
    },
    ModelSpec {
        kind: StageKind::Sensor,
        model: Some("resistor"),
        role: Role::Resistive,
        measures: Measures::Nothing,
        model_shape: measure(OHM),
        params: &[COST, POWER],
        exclusive: &[],
        one_of: &[],
        together: &[],
        read: read_resistor,
    },
    ModelSpec {
        kind: StageKind::Bridge,
        model: Some("divider"),
        role: Role::Bridge { arms: 1 },
        measures: Measures::Nothing,
        model_shape: Shape::Flag,
        params: &[
            p(param::R, measure(OHM)).required().positive(),
            p("sensor", Shape::Words(&Side::WORDS)),
            COST,
            POWER,
        ],
        exclusive: &[],
        one_of: &[],
        together: &[],
        read: read_divider,
    },
    ModelSpec {
        kind: StageKind::Bridge,
        model: Some("quarter"),
        role: Role::Bridge { arms: 1 },
        measures: Measures::Nothing,
        model_shape: Shape::Flag,
        params: &[p(param::R, measure(OHM)).required().positive(), COST, POWER],
        exclusive: &[],
        one_of: &[],
        together: &[],
        read: read_quarter,
    },
    ModelSpec {
        kind: StageKind::Bridge,
        model: Some("half"),
        role: Role::Bridge { arms: 2 },
        measures: Measures::Nothing,
        model_shape: Shape::Flag,
        params: &[p(param::R, measure(OHM)).required().positive(), COST, POWER],
        exclusive: &[],
        one_of: &[],
        together: &[],
        read: read_half,
    },
    ModelSpec {
        kind: StageKind::Bridge,
        model: Some("full"),
        role: Role::Bridge { arms: 4 },
        measures: Measures::Nothing,
        model_shape: Shape::Flag,
        params: &[COST, POWER],
        exclusive: &[],
        one_of: &[],
        together: &[],
        read: read_full,
    },
    ModelSpec {
        kind: StageKind::Amplifier,
        model: None,
        role: Role::Amplifier,
        measures: Measures::Nothing,
        model_shape: Shape::Flag,
        params: &[
            p(param::GAIN, toleranced(Expect::Ratio))
                .required()
                .positive(),
            p(param::OFFSET, Shape::Limit(VOLT)),
            p(
                param::OFFSET_DRIFT,
                Shape::Limit(Expect::PerKelvin(Dim::VOLTAGE)),
            ),
            p(
                param::GAIN_DRIFT,
                Shape::Limit(Expect::PerKelvin(Dim::NONE)),
            ),
            p(param::NOISE, plain(Expect::Dim(Dim::VOLTAGE_DENSITY))).non_negative(),
            p("noise_corner", plain(HERTZ)).non_negative(),
            p(
                param::CURRENT_NOISE,
                plain(Expect::Dim(Dim::CURRENT_DENSITY)),
            )
            .non_negative(),
            p(param::BIAS, Shape::Limit(AMP)),
            p(param::BURNOUT, plain(AMP)).positive(),
            PULL,
            p(param::CMRR, plain(Expect::Decibel)).positive(),
            p(param::INPUT, Shape::Range(VOLT)),
            p(param::OUTPUT, Shape::Range(VOLT)),
            p("bandwidth", plain(HERTZ)).positive(),
            p(REFERENCE, measure(VOLT)),
            COST,
            POWER,
        ],
        exclusive: &[(param::BURNOUT, param::PULL)],
        one_of: &[],
        together: &[],
        read: read_amplifier,
    },
    ModelSpec {
        kind: StageKind::Filter,
        model: Some("lowpass"),
        role: Role::Filter,
        measures: Measures::Nothing,
        model_shape: Shape::Words(&["rc", "butterworth", "bessel"]),
        params: &[
            p("order", Shape::Count { min: 1, max: 8 }),
            p("cutoff", toleranced(HERTZ)).positive(),
            p(param::R, toleranced(OHM)).positive(),
            p("c", toleranced(FARAD)).positive(),
            COST,
            POWER,
        ],
        exclusive: &[("cutoff", "r"), ("cutoff", "c")],
        one_of: &[&["cutoff", "r"]],
        together: &[],
        read: read_filter,
    },
    ModelSpec {
        kind: StageKind::Adc,
        model: None,
        role: Role::Adc,
        measures: Measures::Nothing,
        model_shape: Shape::Flag,
        params: &[
            p("bits", Shape::Count { min: 1, max: 32 }).required(),
            p(param::INPUT, Shape::Words(&["single", "differential"])),
            p("polarity", Shape::Words(&["unipolar", "bipolar"])),
            p(VREF, measure(VOLT)).positive(),
            p(param::PGA, toleranced(Expect::Ratio)).positive(),
            p(param::OFFSET, Shape::Limit(VOLTAGE_OR_CODES)),
            p(param::GAIN_ERROR, Shape::Limit(RATIO_OR_CODES)),
            p(param::INL, Shape::Limit(RATIO_OR_CODES)),
            p(param::NOISE, Shape::Limit(VOLTAGE_OR_CODES)),
            p("rate", plain(HERTZ)).positive(),
            p("notch", plain(HERTZ)).positive(),
            p(param::REF_RANGE, Shape::Range(VOLT)),
            p(param::RAILS, Shape::Range(VOLT)),
            p(param::BURNOUT, plain(AMP)).positive(),
            PULL,
            p(param::BIAS, plain(AMP)).non_negative(),
            p(param::SAMPLING_CAPACITANCE, plain(FARAD)).positive(),
            p("sampling_resistance", plain(OHM)).non_negative(),
            p(param::ACQUISITION_TIME, plain(SECOND)).positive(),
            COST,
            POWER,
            p(CHANNEL_OF, Shape::StageName),
            p(SCAN, Shape::StageNames),
        ],
        // A channel shares its converter's part: only its gain and its
        // burnout current (a per-input current source) are its own.
        exclusive: &[
            (CHANNEL_OF, "bits"),
            (CHANNEL_OF, "input"),
            (CHANNEL_OF, "polarity"),
            (CHANNEL_OF, "vref"),
            (CHANNEL_OF, "offset"),
            (CHANNEL_OF, "gain_error"),
            (CHANNEL_OF, "inl"),
            (CHANNEL_OF, param::NOISE),
            (CHANNEL_OF, "rate"),
            (CHANNEL_OF, "notch"),
            (CHANNEL_OF, "ref_range"),
            (CHANNEL_OF, "rails"),
            (CHANNEL_OF, "bias"),
            (CHANNEL_OF, "sampling_capacitance"),
            (CHANNEL_OF, "sampling_resistance"),
            (CHANNEL_OF, "acquisition_time"),
            (CHANNEL_OF, SCAN),
            (param::BURNOUT, param::PULL),
        ],
        one_of: &[],
        together: &[&["sampling_capacitance", "acquisition_time"]],
        read: read_adc,
    },
    ModelSpec {
        kind: StageKind::Convert,
        model: None,
        role: Role::Convert,
        measures: Measures::Nothing,
        model_shape: Shape::Flag,
        params: &[
            p("method", Shape::Method),
            p(
                param::AVERAGE,
                Shape::Count {
                    min: 1,
                    max: 1_000_000,
                },
            ),
            p(param::CALIBRATE, Shape::Calibrate),
            p(SUM, Shape::StageNames),
            p(RATIO, Shape::StageName),
            COST,
            POWER,
        ],
        exclusive: &[(SUM, RATIO)],
        one_of: &[],
        together: &[],
        read: read_convert,
    },
];

/// The value a tracking group acts on in a typed model, with the name of
/// the line that states it: a fixed resistor's value, a bridge's
/// completion resistors, an excitation's output.
pub fn tracked_line(model: &StageModel) -> Option<(&'static str, &Measure)> {
    match model {
        StageModel::Resistor(r) => Some(("resistor", &r.r)),
        StageModel::Bridge(b) => Some(("r", b.r.as_ref()?)),
        StageModel::Excitation(e) => Some((
            match e.source {
                Source::Current { .. } => param::CURRENT,
                Source::Voltage { .. } => param::VOLTAGE,
            },
            &e.value,
        )),
        StageModel::StrainGauge(g) => Some((param::R, &g.r)),
        StageModel::Rtd(_)
        | StageModel::Thermocouple(_)
        | StageModel::Thermistor(_)
        | StageModel::IcVoltage(_)
        | StageModel::IcCurrent(_)
        | StageModel::Transducer(_)
        | StageModel::Amplifier(_)
        | StageModel::Filter(_)
        | StageModel::Adc(_)
        | StageModel::Convert(_) => None,
    }
}

/// Lines a model needs beyond its table's, by the word of its model
/// line: a custom RTD curve has no table values to fall back on.
pub fn required_for_word(model: &ModelSpec, word: &str) -> &'static [&'static str] {
    match (model.model, word) {
        (Some("rtd"), "custom") => &["r0", "coefficients"],
        _ => &[],
    }
}

/// A line the model line's word leaves unused, and how to use it.
pub struct Unused {
    pub line: &'static str,
    pub help: &'static str,
}

/// A standard RTD curve has its own coefficients, so stated ones would
/// go unused.
pub fn unused_for_word(model: &ModelSpec, word: &str) -> Option<Unused> {
    match (model.model, word) {
        (Some("rtd"), w) if w != "custom" => Some(Unused {
            line: "coefficients",
            help: "write `rtd custom` with `r0` to use these coefficients (a characterised probe), or remove the line",
        }),
        _ => None,
    }
}

/// The models of a kind.
pub fn models(kind: StageKind) -> impl Iterator<Item = &'static ModelSpec> {
    MODELS.iter().filter(move |m| m.kind == kind)
}

/// The model without a model line, for kinds that have one model only.
pub fn implicit_model(kind: StageKind) -> Option<&'static ModelSpec> {
    models(kind).find(|m| m.model.is_none())
}

pub fn model(kind: StageKind, word: &str) -> Option<&'static ModelSpec> {
    models(kind).find(|m| m.model == Some(word))
}

impl ModelSpec {
    pub fn param(&self, name: &str) -> Option<&'static ParamSpec> {
        self.params.iter().find(|p| p.name == name)
    }

    /// Every name a parameter line may start with in this model.
    pub fn names(&self) -> impl Iterator<Item = &'static str> + '_ {
        self.model
            .into_iter()
            .chain(self.params.iter().map(|p| p.name))
    }
}

/// Every parameter name of every model, for the language reference test.
pub fn all_names() -> impl Iterator<Item = &'static str> {
    MODELS.iter().flat_map(|m| m.names())
}

/// The checked lines of one stage, read by name: only the readers below
/// look a parameter up by its name.
pub struct Reader<'a> {
    params: &'a [ResolvedParam],
}

impl<'a> Reader<'a> {
    pub fn new(params: &'a [ResolvedParam]) -> Self {
        Reader { params }
    }

    fn get(&self, name: &str) -> Option<&'a ParamValue> {
        self.params
            .iter()
            .find(|p| p.name == name)
            .map(|p| &p.value)
    }

    fn measure(&self, name: &str) -> Option<Measure> {
        match self.get(name) {
            Some(ParamValue::Measure(m)) => Some(m.clone()),
            _ => None,
        }
    }

    /// A plain value (no tolerance, no drift), SI.
    fn value(&self, name: &str) -> Option<f64> {
        self.measure(name).map(|m| m.nominal)
    }

    fn limit(&self, name: &str) -> Option<Tolerance> {
        match self.get(name) {
            Some(ParamValue::Limit(t)) => Some(t.clone()),
            _ => None,
        }
    }

    fn range(&self, name: &str) -> Option<(f64, f64)> {
        match self.get(name) {
            Some(ParamValue::Range { low, high }) => Some((*low, *high)),
            _ => None,
        }
    }

    fn word(&self, name: &str) -> Option<&'a str> {
        match self.get(name) {
            Some(ParamValue::Word(w)) => Some(w.as_str()),
            _ => None,
        }
    }

    /// A word of a list, read into its type. Given but not one of the
    /// words (already reported where it was read): `Err`, so the model is
    /// not built on a guess.
    fn choice<T>(
        &self,
        name: &str,
        from_word: impl Fn(&str) -> Option<T>,
    ) -> Result<Option<T>, ()> {
        match self.word(name) {
            Some(w) => from_word(w).map(Some).ok_or(()),
            None => Ok(None),
        }
    }

    fn count(&self, name: &str) -> Option<u32> {
        match self.get(name) {
            Some(ParamValue::Count(n)) => Some(*n),
            _ => None,
        }
    }

    /// `value at point`: the value, its dimension and the point.
    /// `value to point` as (value, point).
    fn to(&self, name: &str) -> Option<(f64, f64)> {
        match self.get(name) {
            Some(ParamValue::At { value, at, .. }) => Some((value.nominal, *at)),
            _ => None,
        }
    }

    fn at(&self, name: &str) -> Option<(Measure, Dim, f64)> {
        match self.get(name) {
            Some(ParamValue::At {
                value,
                value_dim,
                at,
            }) => Some((value.clone(), *value_dim, *at)),
            _ => None,
        }
    }
}

/// What a stage of any kind states for the bill of materials and the
/// power budget.
pub fn read_bill(r: &Reader<'_>) -> Bill {
    Bill {
        cost: r.value("cost"),
        power: r.value("power"),
    }
}

fn read_excitation(r: &Reader<'_>, source: Source, name: &str) -> Option<StageModel> {
    Some(StageModel::Excitation(Excitation {
        source,
        value: r.measure(name)?,
        drift: r.limit(param::DRIFT),
        noise: r.limit(param::NOISE),
    }))
}

fn read_current(r: &Reader<'_>) -> Option<StageModel> {
    let source = Source::Current {
        compliance: r.value(param::COMPLIANCE),
    };
    read_excitation(r, source, param::CURRENT)
}

fn read_voltage(r: &Reader<'_>) -> Option<StageModel> {
    let source = Source::Voltage {
        limit: r.value(param::LIMIT),
    };
    read_excitation(r, source, param::VOLTAGE)
}

fn read_rtd(r: &Reader<'_>) -> Option<StageModel> {
    let curve = r.choice("rtd", RtdCurveName::from_word).ok()??;
    let coefficients = match r.get("coefficients") {
        Some(ParamValue::Measures(m)) => Some(Box::new(<[Measure; 3]>::try_from(m.clone()).ok()?)),
        _ => None,
    };
    if curve == RtdCurveName::Custom && (coefficients.is_none() || r.get(param::R0).is_none()) {
        return None;
    }
    let class = r
        .choice("class", |w| match w {
            "AA" => Some(ToleranceClass::AA),
            "A" => Some(ToleranceClass::A),
            "B" => Some(ToleranceClass::B),
            "C" => Some(ToleranceClass::C),
            _ => None,
        })
        .ok()?;
    let wiring = match r.count("wires") {
        Some(2) => Wiring::TwoWire,
        Some(3) => Wiring::ThreeWire,
        Some(4) | None => Wiring::FourWire,
        Some(_) => return None,
    };
    Some(StageModel::Rtd(Rtd {
        curve,
        r0: r.measure(param::R0),
        coefficients,
        class,
        tolerance: r.limit(param::TOLERANCE),
        wiring,
        lead: r.measure("lead"),
        dissipation: r.measure(param::DISSIPATION),
        time_constant: r.value("time_constant"),
        max_current: r.value(param::MAX_CURRENT),
    }))
}

fn read_thermocouple(r: &Reader<'_>) -> Option<StageModel> {
    let ty = r
        .choice(THERMOCOUPLE, ThermocoupleType::from_letter)
        .ok()??;
    let cold_junction = match r.get(COLD_JUNCTION) {
        Some(ParamValue::Limit(t)) => Some(ColdJunction::Error(t.clone())),
        Some(ParamValue::StageRef { name, .. }) => Some(ColdJunction::Stage(name.clone())),
        _ => None,
    };
    Some(StageModel::Thermocouple(Thermocouple {
        ty,
        class: match r.count(param::CLASS) {
            Some(c) => Some(u8::try_from(c).ok()?),
            None => None,
        },
        tolerance: r.limit(param::TOLERANCE),
        cold_junction,
        lead: r.measure("lead"),
        time_constant: r.value("time_constant"),
        bias_voltage: r.measure(param::BIAS_VOLTAGE),
        bias_resistor: r.measure(param::BIAS_RESISTOR),
    }))
}

fn read_thermistor(r: &Reader<'_>) -> Option<StageModel> {
    let law = match (r.measure(param::BETA), r.get("steinhart")) {
        (Some(beta), _) => ThermistorLaw::Beta(beta),
        (None, Some(ParamValue::Numbers(n))) => {
            ThermistorLaw::SteinhartHart(<[f64; 3]>::try_from(n.as_slice()).ok()?)
        }
        _ => return None,
    };
    Some(StageModel::Thermistor(Thermistor {
        r25: r.measure(param::R25)?,
        law,
        dissipation: r.measure(param::DISSIPATION),
        range: r.range("range"),
        time_constant: r.value("time_constant"),
        max_current: r.value(param::MAX_CURRENT),
    }))
}

fn read_ic_voltage(r: &Reader<'_>) -> Option<StageModel> {
    let (output, _, output_at) = r.at(param::OUTPUT)?;
    Some(StageModel::IcVoltage(IcVoltage {
        slope: r.measure(param::SLOPE)?,
        output,
        output_at,
        accuracy: r.limit(param::ACCURACY),
        noise: r.limit(param::NOISE),
        output_resistance: r.measure(param::OUTPUT_RESISTANCE),
        supply: r.range("supply"),
        supply_current: r.value("supply_current"),
        time_constant: r.value("time_constant"),
    }))
}

fn read_ic_current(r: &Reader<'_>) -> Option<StageModel> {
    Some(StageModel::IcCurrent(IcCurrent {
        slope: r.measure(param::SLOPE)?,
        accuracy: r.limit(param::ACCURACY),
        supply: r.range("supply"),
        time_constant: r.value("time_constant"),
    }))
}

fn read_strain_gauge(r: &Reader<'_>) -> Option<StageModel> {
    let side = r.choice("side", GaugeSide::from_word).ok()?;
    Some(StageModel::StrainGauge(StrainGauge {
        r: r.measure(param::R)?,
        gauge_factor: r.measure(param::GAUGE_FACTOR)?,
        thermal_output: r.limit(param::THERMAL_OUTPUT),
        side: side.unwrap_or(GaugeSide::Tension),
        time_constant: r.value("time_constant"),
    }))
}

fn read_transducer(r: &Reader<'_>) -> Option<StageModel> {
    let (sensitivity, sensitivity_dim, rated) = r.at(SENSITIVITY)?;
    // A cell carrying a share of the measurand reaches its rated load at
    // the measurand's rated / share.
    let share = r.value(SHARE);
    let full_scale = rated / share.unwrap_or(1.0);
    let linearity = r
        .choice("linearity", |w| match w {
            "terminal" => Some(LinearityLine::Terminal),
            "best_fit" => Some(LinearityLine::BestFit),
            _ => None,
        })
        .ok()?;
    Some(StageModel::Transducer(Transducer {
        sensitivity,
        sensitivity_dim,
        full_scale,
        share,
        zero: r.limit(param::ZERO),
        nonlinearity: r.limit(param::NONLINEARITY),
        linearity: linearity.unwrap_or(LinearityLine::Terminal),
        hysteresis: r.limit(param::HYSTERESIS),
        zero_drift: r.limit(param::ZERO_DRIFT),
        span_drift: r.limit(param::SPAN_DRIFT),
        r: r.measure(param::R),
        time_constant: r.value("time_constant"),
    }))
}

fn read_resistor(r: &Reader<'_>) -> Option<StageModel> {
    Some(StageModel::Resistor(Resistor {
        r: r.measure("resistor")?,
    }))
}

fn read_bridge(r: &Reader<'_>, form: BridgeForm) -> Option<StageModel> {
    Some(StageModel::Bridge(Bridge {
        form,
        r: r.measure(param::R),
    }))
}

fn read_divider(r: &Reader<'_>) -> Option<StageModel> {
    let side = r.choice("sensor", Side::from_word).ok()?;
    read_bridge(r, BridgeForm::Divider(side.unwrap_or(Side::Low)))
}

fn read_quarter(r: &Reader<'_>) -> Option<StageModel> {
    read_bridge(r, BridgeForm::Quarter)
}

fn read_half(r: &Reader<'_>) -> Option<StageModel> {
    read_bridge(r, BridgeForm::Half)
}

fn read_full(r: &Reader<'_>) -> Option<StageModel> {
    read_bridge(r, BridgeForm::Full)
}

fn read_amplifier(r: &Reader<'_>) -> Option<StageModel> {
    Some(StageModel::Amplifier(Amplifier {
        gain: r.measure(param::GAIN)?,
        offset: r.limit(param::OFFSET),
        offset_drift: r.limit(param::OFFSET_DRIFT),
        gain_drift: r.limit(param::GAIN_DRIFT),
        noise: r.value(param::NOISE),
        noise_corner: r.value("noise_corner"),
        current_noise: r.value(param::CURRENT_NOISE),
        bias: r.limit(param::BIAS),
        burnout: r.value(param::BURNOUT),
        pull: r.to(param::PULL),
        cmrr: r.value(param::CMRR),
        input: r.range(param::INPUT),
        output: r.range(param::OUTPUT),
        bandwidth: r.value("bandwidth"),
        reference: r.measure(REFERENCE),
    }))
}

fn read_filter(r: &Reader<'_>) -> Option<StageModel> {
    let response = r
        .choice("lowpass", |w| match w {
            "rc" => Some(Response::Rc),
            "butterworth" => Some(Response::Butterworth),
            "bessel" => Some(Response::Bessel),
            _ => None,
        })
        .ok()??;
    Some(StageModel::Filter(Filter {
        response,
        order: r.count("order"),
        cutoff: r.measure("cutoff"),
        r: r.measure(param::R),
        c: r.measure("c"),
    }))
}

fn read_adc(r: &Reader<'_>) -> Option<StageModel> {
    let input = r
        .choice("input", |w| match w {
            "single" => Some(AdcInput::Single),
            "differential" => Some(AdcInput::Differential),
            _ => None,
        })
        .ok()?
        .unwrap_or(AdcInput::Single);
    let polarity = r
        .choice("polarity", |w| match w {
            "unipolar" => Some(Polarity::Unipolar),
            "bipolar" => Some(Polarity::Bipolar),
            _ => None,
        })
        .ok()?;
    let sampling = match (
        r.value(param::SAMPLING_CAPACITANCE),
        r.value(param::ACQUISITION_TIME),
    ) {
        (Some(capacitance), Some(acquisition_time)) => Some(Sampling {
            capacitance,
            acquisition_time,
            resistance: r.value("sampling_resistance"),
        }),
        _ => None,
    };
    let channel_of = match r.get(CHANNEL_OF) {
        Some(ParamValue::StageRef { name, .. }) => Some(name.clone()),
        _ => None,
    };
    // A channel's bits are its converter's, filled in with the rest of
    // its part once the converter is known (`model::channels`).
    let bits = match (r.count("bits"), &channel_of) {
        (Some(bits), _) => bits,
        (None, Some(_)) => 0,
        (None, None) => return None,
    };
    Some(StageModel::Adc(Adc {
        bits,
        input,
        polarity: polarity.unwrap_or(match input {
            AdcInput::Differential => Polarity::Bipolar,
            AdcInput::Single => Polarity::Unipolar,
        }),
        vref: r.measure(VREF),
        pga: r.measure(param::PGA),
        offset: r.limit(param::OFFSET),
        gain_error: r.limit(param::GAIN_ERROR),
        inl: r.limit(param::INL),
        noise: r.limit(param::NOISE),
        rate: r.value("rate"),
        notch: r.value("notch"),
        ref_range: r.range(param::REF_RANGE),
        rails: r.range(param::RAILS),
        burnout: r.value(param::BURNOUT),
        pull: r.to(param::PULL),
        bias: r.value(param::BIAS),
        sampling,
        channel_of,
        channels: 1,
        reads: 1,
    }))
}

fn read_convert(r: &Reader<'_>) -> Option<StageModel> {
    let method = match r.get("method") {
        Some(ParamValue::Method { method, points }) => match (method.as_str(), points) {
            ("exact", None) => ConversionMethod::Exact,
            ("linear", None) => ConversionMethod::Linear,
            ("table", Some(n)) => ConversionMethod::Table(*n),
            ("poly", Some(n)) => ConversionMethod::Poly(*n),
            _ => return None,
        },
        Some(_) => return None,
        None => ConversionMethod::Exact,
    };
    let calibrate = match r.get(param::CALIBRATE) {
        Some(ParamValue::Calibrate {
            method,
            points,
            uncertainty,
        }) => Some(match (method.as_str(), points.as_slice()) {
            ("offset", [at]) => CalibrationMethod::Offset {
                at: *at,
                uncertainty: uncertainty.clone(),
            },
            ("two_point", [a, b]) => CalibrationMethod::TwoPoint {
                at: (*a, *b),
                uncertainty: uncertainty.clone(),
            },
            _ => return None,
        }),
        Some(_) => return None,
        None => None,
    };
    let combine = match (r.get(SUM), r.get(RATIO)) {
        (Some(ParamValue::StageRefs(names)), _) => Some(Combine {
            op: CombineOp::Sum,
            channels: names.iter().map(|(n, _)| n.clone()).collect(),
        }),
        (_, Some(ParamValue::StageRef { name, .. })) => Some(Combine {
            op: CombineOp::Ratio,
            channels: vec![name.clone()],
        }),
        _ => None,
    };
    Some(StageModel::Convert(Convert {
        method,
        average: r.count(param::AVERAGE),
        calibrate,
        combine,
    }))
}

/// Names datasheets and other habits give to what the language states
/// another way, with the way it does.
const SAID_OTHERWISE: [(StageKind, &[&str], &str); 3] = [
    (
        StageKind::Adc,
        &["range", "span", "full_scale", "input_range"],
        "a converter's span follows from its reference (`vref`, or a source wired to its `ref`) and its `polarity`",
    ),
    (
        StageKind::Adc,
        &["resolution"],
        "a converter's resolution is its `bits`",
    ),
    (
        StageKind::Amplifier,
        &["vref", "ref"],
        "an amplifier's output is lifted by its `reference`",
    ),
];

pub fn said_otherwise(kind: StageKind, name: &str) -> Option<&'static str> {
    SAID_OTHERWISE
        .iter()
        .find(|(k, names, _)| *k == kind && names.contains(&name))
        .map(|(_, _, hint)| *hint)
}

#[cfg(test)]
mod tests {
    use super::{model, ParamValue, Reader, ResolvedParam, StageModel};
    use crate::diagnostics::{SourceFile, Span};
    use crate::physics::rtd::{ToleranceClass, Wiring};
    use crate::syntax::ast::StageKind;

    fn line(name: &'static str, value: ParamValue) -> ResolvedParam {
        ResolvedParam {
            name,
            value,
            span: Span::new(0, 0),
            file: SourceFile::new("t.catena", ""),
        }
    }

    fn rtd(lines: &[ResolvedParam]) -> Option<StageModel> {
        let spec = model(StageKind::Sensor, "rtd").expect("an rtd row");
        (spec.read)(&Reader::new(lines))
    }

    /// Words become their enums; what is not stated takes the documented
    /// default (four wires); a word outside its list builds no model rather
    /// than a guessed one.
    #[test]
    fn words_are_read_into_types_and_never_guessed() {
        let curve = line("rtd", ParamValue::Word("pt100".into()));
        let Some(StageModel::Rtd(m)) = rtd(std::slice::from_ref(&curve)) else {
            panic!("an rtd");
        };
        assert_eq!((m.class, m.wiring), (None, Wiring::FourWire));
        let class = line("class", ParamValue::Word("B".into()));
        let wires = line("wires", ParamValue::Count(3));
        let Some(StageModel::Rtd(m)) = rtd(&[curve.clone(), class, wires]) else {
            panic!("an rtd");
        };
        assert_eq!(
            (m.class, m.wiring),
            (Some(ToleranceClass::B), Wiring::ThreeWire)
        );
        let unknown = line("class", ParamValue::Word("D".into()));
        assert_eq!(rtd(&[curve, unknown]), None);
        let custom = line("rtd", ParamValue::Word("custom".into()));
        assert_eq!(rtd(&[custom]), None, "a custom curve needs coefficients");
    }

    /// Every model's reader builds its model from nothing but its required
    /// lines, or asks for them: none panics on a missing line.
    #[test]
    fn every_reader_handles_missing_lines() {
        for spec in super::MODELS {
            let built = (spec.read)(&Reader::new(&[]));
            let needs =
                spec.params.iter().any(|p| p.required) || spec.model_shape != super::Shape::Flag;
            assert!(built.is_some() || needs, "{:?} {:?}", spec.kind, spec.model);
        }
    }
}
