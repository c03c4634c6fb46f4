//! Each stage as a typed value: its model, with its parameters as typed
//! fields in SI. The schema's readers (`schema.rs`) build it once from the
//! checked parameter lines, so lowering and everything after it match on
//! types, never on parameter names.

use super::value::{Measure, Tolerance};
use crate::physics::adc::Polarity;
use crate::physics::filter::Response;
use crate::physics::rtd::{ToleranceClass, Wiring};
use crate::physics::thermocouple::ThermocoupleType;
use crate::physics::transducer::LinearityLine;
use crate::units::Dim;

/// A stage's model and its parameters.
#[derive(Clone, Debug, PartialEq)]
pub enum StageModel {
    Excitation(Excitation),
    Rtd(Rtd),
    Thermocouple(Thermocouple),
    Thermistor(Thermistor),
    IcVoltage(IcVoltage),
    IcCurrent(IcCurrent),
    StrainGauge(StrainGauge),
    Transducer(Transducer),
    Resistor(Resistor),
    Bridge(Bridge),
    Amplifier(Amplifier),
    Filter(Filter),
    Adc(Adc),
    Convert(Convert),
}

/// What an excitation drives.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Source {
    /// A current source: `current`, with its compliance, V.
    Current { compliance: Option<f64> },
    /// A voltage source: `voltage`, with its current limit, A.
    Voltage { limit: Option<f64> },
}

#[derive(Clone, Debug, PartialEq)]
pub struct Excitation {
    pub source: Source,
    /// The current (A) or voltage (V) with its tolerance and drift.
    pub value: Measure,
    /// A drift stated on its own line, which takes the value's place.
    pub drift: Option<Tolerance>,
    /// As an rms value or a density.
    pub noise: Option<Tolerance>,
}

/// An RTD's standard curve, or a characterised one.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum RtdCurveName {
    Pt100,
    Pt500,
    Pt1000,
    Ni100,
    Ni120,
    Ni1000,
    Cu10,
    Cu100,
    /// Its own `r0` and `coefficients`.
    Custom,
}

impl RtdCurveName {
    pub fn from_word(word: &str) -> Option<Self> {
        Some(match word {
            "pt100" => Self::Pt100,
            "pt500" => Self::Pt500,
            "pt1000" => Self::Pt1000,
            "ni100" => Self::Ni100,
            "ni120" => Self::Ni120,
            "ni1000" => Self::Ni1000,
            "cu10" => Self::Cu10,
            "cu100" => Self::Cu100,
            "custom" => Self::Custom,
            _ => return None,
        })
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct Rtd {
    pub curve: RtdCurveName,
    pub r0: Option<Measure>,
    /// A, B and C of a custom curve, each with its tolerance.
    pub coefficients: Option<Box<[Measure; 3]>>,
    pub class: Option<ToleranceClass>,
    pub tolerance: Option<Tolerance>,
    /// Four wires when not stated.
    pub wiring: Wiring,
    /// Each lead's resistance, Ω.
    pub lead: Option<Measure>,
    /// W/K.
    pub dissipation: Option<Measure>,
    pub time_constant: Option<f64>,
    pub max_current: Option<f64>,
}

/// A thermocouple's cold junction: a stated error, or the stage that
/// measures it.
#[derive(Clone, Debug, PartialEq)]
pub enum ColdJunction {
    Error(Tolerance),
    Stage(String),
}

#[derive(Clone, Debug, PartialEq)]
pub struct Thermocouple {
    pub ty: ThermocoupleType,
    /// IEC 60584-1 class, 1 … 3.
    pub class: Option<u8>,
    pub tolerance: Option<Tolerance>,
    pub cold_junction: Option<ColdJunction>,
    pub lead: Option<Measure>,
    pub time_constant: Option<f64>,
    pub bias_voltage: Option<Measure>,
    pub bias_resistor: Option<Measure>,
}

#[derive(Clone, Debug, PartialEq)]
pub enum ThermistorLaw {
    /// β, K, with its tolerance.
    Beta(Measure),
    /// Steinhart–Hart A, B, C.
    SteinhartHart([f64; 3]),
}

#[derive(Clone, Debug, PartialEq)]
pub struct Thermistor {
    pub r25: Measure,
    pub law: ThermistorLaw,
    pub dissipation: Option<Measure>,
    /// Its stated range, K.
    pub range: Option<(f64, f64)>,
    pub time_constant: Option<f64>,
    pub max_current: Option<f64>,
}

#[derive(Clone, Debug, PartialEq)]
pub struct IcVoltage {
    /// V/K.
    pub slope: Measure,
    /// The output voltage and the temperature it is stated at, K.
    pub output: Measure,
    pub output_at: f64,
    pub accuracy: Option<Tolerance>,
    pub noise: Option<Tolerance>,
    /// A measure: `max` makes it a bound of nominal zero.
    pub output_resistance: Option<Measure>,
    pub supply: Option<(f64, f64)>,
    /// What it draws from its supply (its quiescent current), A.
    pub supply_current: Option<f64>,
    pub time_constant: Option<f64>,
}

#[derive(Clone, Debug, PartialEq)]
pub struct IcCurrent {
    /// A/K.
    pub slope: Measure,
    pub accuracy: Option<Tolerance>,
    pub supply: Option<(f64, f64)>,
    pub time_constant: Option<f64>,
}

/// The side of a bending beam a gauge sits on.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum GaugeSide {
    Tension,
    Compression,
}

impl GaugeSide {
    pub fn from_word(word: &str) -> Option<Self> {
        match word {
            "tension" => Some(Self::Tension),
            "compression" => Some(Self::Compression),
            _ => None,
        }
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct StrainGauge {
    pub r: Measure,
    /// With its temperature coefficient as its `drift`.
    pub gauge_factor: Measure,
    /// The apparent strain per kelvin of the gauge's temperature from the
    /// reference: a bound around zero.
    pub thermal_output: Option<Tolerance>,
    /// In tension when not stated.
    pub side: GaugeSide,
    pub time_constant: Option<f64>,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Transducer {
    /// Full-scale output: a ratio of the excitation (mV/V) or volts.
    pub sensitivity: Measure,
    /// [`Dim::NONE`] for a ratiometric rating, else [`Dim::VOLTAGE`].
    pub sensitivity_dim: Dim,
    /// The load it is stated at, in the measurand's unit (SI).
    pub full_scale: f64,
    /// The part of the measurand it carries (`share`), where stated: the
    /// cells a conversion sums share the load between them.
    pub share: Option<f64>,
    pub zero: Option<Tolerance>,
    pub nonlinearity: Option<Tolerance>,
    /// Terminal-based unless stated: common practice for load cells.
    pub linearity: LinearityLine,
    pub hysteresis: Option<Tolerance>,
    pub zero_drift: Option<Tolerance>,
    pub span_drift: Option<Tolerance>,
    pub r: Option<Measure>,
    pub time_constant: Option<f64>,
}

impl Transducer {
    /// Rated in mV/V: its output scales with its excitation.
    pub fn ratiometric(&self) -> bool {
        self.sensitivity_dim == Dim::NONE
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct Resistor {
    pub r: Measure,
}

/// One end of a range: where a divider's sensing element sits, or which
/// side of the measurand an alarm guards. Its words are the grammar's.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Side {
    Low,
    High,
}

impl Side {
    /// The grammar's words.
    pub const WORDS: [&'static str; 2] = [Self::Low.word(), Self::High.word()];

    pub fn from_word(word: &str) -> Option<Self> {
        [Self::Low, Self::High]
            .into_iter()
            .find(|s| s.word() == word)
    }

    pub const fn word(self) -> &'static str {
        match self {
            Self::Low => "low",
            Self::High => "high",
        }
    }
}

impl std::fmt::Display for Side {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.pad(self.word())
    }
}

impl serde::Serialize for Side {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(self.word())
    }
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum BridgeForm {
    /// The element low unless stated.
    Divider(Side),
    Quarter,
    Half,
    Full,
}

impl BridgeForm {
    /// Active arms the bridge takes.
    pub fn arms(self) -> usize {
        match self {
            BridgeForm::Divider(_) | BridgeForm::Quarter => 1,
            BridgeForm::Half => 2,
            BridgeForm::Full => 4,
        }
    }

    /// Completion resistors, each its own part.
    pub fn completion_resistors(self) -> usize {
        match self {
            BridgeForm::Quarter => 3,
            BridgeForm::Half => 2,
            BridgeForm::Divider(_) | BridgeForm::Full => 1,
        }
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct Bridge {
    pub form: BridgeForm,
    /// The completion resistors' value (none for a full bridge).
    pub r: Option<Measure>,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Amplifier {
    pub gain: Measure,
    pub offset: Option<Tolerance>,
    pub offset_drift: Option<Tolerance>,
    pub gain_drift: Option<Tolerance>,
    /// V/√Hz.
    pub noise: Option<f64>,
    pub noise_corner: Option<f64>,
    /// A/√Hz.
    pub current_noise: Option<f64>,
    pub bias: Option<Tolerance>,
    /// A current its input sources into an open sensor (burnout
    /// detection), A.
    pub burnout: Option<f64>,
    /// A resistor from its input to a voltage (`pull R to V`): Ω, V.
    pub pull: Option<(f64, f64)>,
    /// As a plain ratio (not dB).
    pub cmrr: Option<f64>,
    /// Common-mode input range and output swing, V.
    pub input: Option<(f64, f64)>,
    pub output: Option<(f64, f64)>,
    pub bandwidth: Option<f64>,
    pub reference: Option<Measure>,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Filter {
    pub response: Response,
    pub order: Option<u32>,
    pub cutoff: Option<Measure>,
    pub r: Option<Measure>,
    pub c: Option<Measure>,
}

/// A converter's input: one-ended or differential.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum AdcInput {
    Single,
    Differential,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Adc {
    pub bits: u32,
    pub input: AdcInput,
    /// A differential converter is bipolar unless told otherwise, a
    /// single-ended one unipolar.
    pub polarity: Polarity,
    pub vref: Option<Measure>,
    pub pga: Option<Measure>,
    /// In volts or in codes (`LSB`): the tolerance's `dim` says which.
    pub offset: Option<Tolerance>,
    /// A fraction, or codes.
    pub gain_error: Option<Tolerance>,
    pub inl: Option<Tolerance>,
    pub noise: Option<Tolerance>,
    pub rate: Option<f64>,
    pub notch: Option<f64>,
    pub ref_range: Option<(f64, f64)>,
    pub rails: Option<(f64, f64)>,
    /// A current its input sources into an open sensor (burnout
    /// detection), A.
    pub burnout: Option<f64>,
    /// A resistor from its input to a voltage (`pull R to V`): Ω, V.
    pub pull: Option<(f64, f64)>,
    /// The largest input bias current its datasheet states, A: what a
    /// burnout current must outweigh to drive an open input to a rail.
    pub bias: Option<f64>,
    /// The sampling input's capacitor, F, and acquisition time, s, given
    /// together; its switch resistance, Ω.
    pub sampling: Option<Sampling>,
    /// On a channel, the converter whose part, reference and conversions
    /// it shares (`channel_of`).
    pub channel_of: Option<String>,
    /// How many conversions one scan of its converter holds (1 without
    /// channels; its channels' count without a `scan`).
    pub channels: u32,
    /// How many of them read this input (`scan` lists it that often; 1
    /// without a `scan`): its output rate is the converter's `rate` ×
    /// `reads` / `channels`.
    pub reads: u32,
}

#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Sampling {
    pub capacitance: f64,
    pub acquisition_time: f64,
    pub resistance: Option<f64>,
}

/// How the firmware converts a code to a reading.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ConversionMethod {
    Exact,
    Linear,
    Table(u32),
    Poly(u32),
}

/// A calibration and the uncertainty of its reference.
#[derive(Clone, Debug, PartialEq)]
pub enum CalibrationMethod {
    Offset {
        at: f64,
        uncertainty: Option<Tolerance>,
    },
    TwoPoint {
        at: (f64, f64),
        uncertainty: Option<Tolerance>,
    },
}

#[derive(Clone, Debug, PartialEq)]
pub struct Convert {
    /// Exact unless stated.
    pub method: ConversionMethod,
    pub average: Option<u32>,
    pub calibrate: Option<CalibrationMethod>,
    /// The code it converts is its input's combined with other channels'
    /// of the same converter (`sum`, `ratio`).
    pub combine: Option<Combine>,
}

/// Codes of several channels combined into the one a conversion reads.
#[derive(Clone, Debug, PartialEq)]
pub struct Combine {
    pub op: CombineOp,
    /// The channels combined with the conversion's input, by stage name.
    pub channels: Vec<String>,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CombineOp {
    /// The codes added: cells sharing a load.
    Sum,
    /// The input's code over the named channel's, in codes of full scale.
    Ratio,
}

impl CombineOp {
    /// The setting that states it.
    pub const fn word(self) -> &'static str {
        match self {
            Self::Sum => super::schema::SUM,
            Self::Ratio => super::schema::RATIO,
        }
    }
}

impl StageModel {
    /// Drives a current through what it feeds: the elements on it are in
    /// series.
    pub fn drives_current(&self) -> bool {
        match self {
            StageModel::Excitation(e) => matches!(e.source, Source::Current { .. }),
            StageModel::IcCurrent(_) => true,
            StageModel::Rtd(_)
            | StageModel::Thermocouple(_)
            | StageModel::Thermistor(_)
            | StageModel::IcVoltage(_)
            | StageModel::StrainGauge(_)
            | StageModel::Transducer(_)
            | StageModel::Resistor(_)
            | StageModel::Bridge(_)
            | StageModel::Amplifier(_)
            | StageModel::Filter(_)
            | StageModel::Adc(_)
            | StageModel::Convert(_) => false,
        }
    }

    /// The time constant a sensor states, s.
    pub fn time_constant(&self) -> Option<f64> {
        match self {
            StageModel::Rtd(m) => m.time_constant,
            StageModel::Thermocouple(m) => m.time_constant,
            StageModel::Thermistor(m) => m.time_constant,
            StageModel::IcVoltage(m) => m.time_constant,
            StageModel::IcCurrent(m) => m.time_constant,
            StageModel::StrainGauge(m) => m.time_constant,
            StageModel::Transducer(m) => m.time_constant,
            StageModel::Excitation(_)
            | StageModel::Resistor(_)
            | StageModel::Bridge(_)
            | StageModel::Amplifier(_)
            | StageModel::Filter(_)
            | StageModel::Adc(_)
            | StageModel::Convert(_) => None,
        }
    }
}
