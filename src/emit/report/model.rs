//! The review report as one tree of values: every renderer (JSON,
//! Markdown, HTML) reads this and nothing else, so the three agree.
//! Values are in the units a reader sees: errors in the measurand's
//! difference unit (`unit`), positions in the measurand's unit as
//! written (`measurand_unit`), ambients in degC, signals in coherent SI.

use serde::Serialize;

pub use crate::analysis::checklist::Checklist;

/// Bumped when a field changes meaning or goes away; new fields may
/// appear without a bump.
pub const SCHEMA_VERSION: u32 = 1;

/// One report: one spec file with one section per chain.
#[derive(Clone, Debug, Serialize)]
pub struct Report {
    pub schema_version: u32,
    pub provenance: Provenance,
    /// One row per chain, for the table on top.
    pub summary: Vec<SummaryRow>,
    pub chains: Vec<ChainReport>,
}

#[derive(Clone, Debug, Serialize)]
pub struct Provenance {
    /// The spec as given on the command line.
    pub spec: String,
    pub tool: String,
    pub tool_version: String,
    /// The spec's last commit, when it is in a git repository.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub revision: Option<String>,
    /// Whether the working copy of the spec differs from `revision`
    /// (absent outside a repository).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub modified: Option<bool>,
    /// Only with `--timestamp`: the same spec otherwise gives the same bytes.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub timestamp: Option<String>,
    pub trials: usize,
    pub seed: u64,
    pub points: usize,
    /// Headroom below this share of a limit's span is called out.
    pub margin: f64,
}

#[derive(Clone, Debug, Serialize)]
pub struct SummaryRow {
    pub chain: String,
    pub pass: bool,
    /// Requirements met of those stated.
    pub requirements_met: usize,
    pub requirements: usize,
    /// Limits beyond or under margin.
    pub limits_flagged: usize,
    /// Faults firmware cannot tell from a reading (silent or undetermined).
    pub hidden_faults: usize,
    /// The largest GUM expanded uncertainty, in `unit`.
    pub gum_expanded: f64,
    pub unit: String,
    /// Absent when the chain could not be evaluated.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub error: Option<String>,
}

/// Sections in the order a reader meets them.
#[derive(Clone, Debug, Serialize)]
pub struct ChainReport {
    pub name: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub title: Option<String>,
    pub unit: String,
    pub measurand_unit: String,
    /// Why the chain has no analysis (its sections are then empty).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub error: Option<String>,
    pub verdict: Verdict,
    pub summary: ChainSummary,
    pub diagram: Diagram,
    pub stages: Vec<StageRow>,
    pub budget: BudgetSection,
    pub noise: NoiseSection,
    pub dynamics: DynamicsSection,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub calibration: Option<CalibrationSection>,
    /// The fault-and-limit checklist (absent when the faults could not
    /// be evaluated).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub faults: Option<Checklist>,
    pub limits: Vec<LimitRow>,
    pub alarms: Vec<AlarmRow>,
    pub cautions: Vec<String>,
}

#[derive(Clone, Debug, Default, Serialize)]
pub struct Verdict {
    /// Every requirement met, no limit beyond its end and no trip a
    /// fault can mask.
    pub pass: bool,
    pub requirements: Vec<RequirementRow>,
    /// Limits beyond their end (`beyond`) or inside the margin.
    pub limits: Vec<LimitFlag>,
    /// Faults firmware cannot tell from a reading.
    pub faults: Vec<HiddenFault>,
    /// Trips that a fault firmware cannot see would keep from firing
    /// (R672): the chain's protective function fails, so the verdict does.
    pub masked_trips: Vec<MaskedTrip>,
}

#[derive(Clone, Debug, Serialize)]
pub struct MaskedTrip {
    /// `high` or `low`.
    pub side: String,
    /// The alarm's limit, in the measurand's unit.
    pub at: f64,
    pub measurand_unit: String,
    /// Each masking fault as its stage and the fault in words.
    pub masked_by: Vec<MaskingFault>,
}

#[derive(Clone, Debug, Serialize)]
pub struct MaskingFault {
    pub stage: String,
    pub fault: String,
    pub condition: String,
}

#[derive(Clone, Debug, Serialize)]
pub struct HiddenFault {
    pub stage: String,
    pub fault: String,
    /// The fault in words, as the checklist names it.
    pub condition: String,
    /// `silent` or `undetermined`.
    pub verdict: String,
}

#[derive(Clone, Debug, Serialize)]
pub struct RequirementRow {
    /// `accuracy`, `resolution`, `response`, `rejection`.
    pub name: String,
    pub method: String,
    pub limit: f64,
    pub achieved: f64,
    /// How far `achieved` stays inside `limit` (negative: beyond).
    pub margin: f64,
    /// `unit`, `s`, or `dB`.
    pub unit: String,
    pub pass: bool,
    /// Where accuracy is worst: measurand and ambient.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub at: Option<[f64; 2]>,
}

#[derive(Clone, Debug, Serialize)]
pub struct LimitFlag {
    pub stage: String,
    pub limit: String,
    pub headroom: f64,
    pub beyond: bool,
}

#[derive(Clone, Debug, Default, Serialize)]
pub struct ChainSummary {
    pub quantity: String,
    pub range: [f64; 2],
    pub ambient: [f64; 2],
    pub reference: f64,
    pub stages: usize,
    /// Stage names from the sensor to the reading.
    pub signal_path: Vec<String>,
}

#[derive(Clone, Debug, Default, Serialize)]
pub struct Diagram {
    pub nodes: Vec<DiagramNode>,
    pub edges: Vec<DiagramEdge>,
}

#[derive(Clone, Debug, Serialize)]
pub struct DiagramNode {
    pub name: String,
    /// `sensor`, `amplifier`, ...
    pub kind: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub model: Option<String>,
    /// Longest path from a stage with no input: the diagram's column.
    pub layer: usize,
}

#[derive(Clone, Debug, Serialize)]
pub struct DiagramEdge {
    pub from: String,
    pub to: String,
    /// The input it lands on (`in`, `ref`, `exc`, ...).
    pub port: String,
    /// What travels on it: `current`, `voltage`, `resistance`, `code`, ...
    pub signal: String,
}

#[derive(Clone, Debug, Serialize)]
pub struct StageRow {
    pub stage: String,
    pub kind: String,
    /// Parameters as the spec writes them.
    pub parameters: Vec<String>,
    /// Nominal output over the measurand and ambient ranges, in `unit`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub signal: Option<[f64; 2]>,
    pub signal_unit: String,
    /// Output units per measurand unit (on the signal path).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub gain: Option<f64>,
    /// The least headroom to each of its limits, as a share of the span.
    pub headroom: Vec<StageHeadroom>,
}

#[derive(Clone, Debug, Serialize)]
pub struct StageHeadroom {
    pub limit: String,
    pub headroom: f64,
}

#[derive(Clone, Debug, Default, Serialize)]
pub struct BudgetSection {
    /// Each method's largest error and where it lies.
    pub totals: Vec<MethodTotal>,
    /// The worst GUM point's sources, largest first.
    pub contributors: Vec<Contributor>,
    /// Where the contributors are taken: measurand and ambient.
    pub worst_at: [f64; 2],
    pub points: Vec<PointRow>,
    /// Along the signal path at the worst point.
    pub path: Vec<PathRow>,
    /// The accuracy requirement, in `unit`, when stated.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub requirement: Option<f64>,
    /// The Monte Carlo share below which a source cannot be told from one
    /// with no effect at the trials run, when shares were estimated.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub monte_carlo_share_floor: Option<f64>,
}

#[derive(Clone, Debug, Serialize)]
pub struct MethodTotal {
    /// `worst_case`, `gum`, `monte_carlo`.
    pub method: String,
    pub value: f64,
    pub measurand: f64,
    pub ambient: f64,
}

#[derive(Clone, Debug, Serialize)]
pub struct Contributor {
    pub id: String,
    pub kind: String,
    /// Worst-case effect and standard uncertainty, in `unit`.
    pub contribution: f64,
    pub standard_uncertainty: f64,
    /// Share of the GUM variance (0…1).
    pub gum_share: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub monte_carlo_share: Option<f64>,
}

#[derive(Clone, Debug, Serialize)]
pub struct PointRow {
    pub measurand: f64,
    pub ambient: f64,
    pub worst_case: f64,
    pub gum_expanded: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub monte_carlo_95: Option<[f64; 2]>,
    /// GUM validated by Monte Carlo at the point (JCGM 101 §8).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub gum_validated: Option<bool>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub gum_expanded_uncalibrated: Option<f64>,
}

#[derive(Clone, Debug, Serialize)]
pub struct PathRow {
    pub stage: String,
    pub value: f64,
    pub signal_unit: String,
    pub gain: f64,
    /// 1σ error upstream sources put on it, referred to the measurand.
    pub error: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub dominant: Option<String>,
    /// The source this stage cancels most of, where the error falls here.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cancels: Option<CancelRow>,
}

/// A source's 1σ error referred to the measurand at the stage before and
/// at the stage that cancels it.
#[derive(Clone, Debug, Serialize)]
pub struct CancelRow {
    pub source: String,
    pub before: f64,
    pub after: f64,
}

#[derive(Clone, Debug, Default, Serialize)]
pub struct NoiseSection {
    #[serde(skip_serializing_if = "Option::is_none")]
    pub enbw_hz: Option<f64>,
    pub total_v_rms: f64,
    pub sigma: f64,
    pub sigma_averaged: f64,
    pub average: u32,
    pub noise_free: f64,
    pub noise_free_averaged: f64,
    pub lsb: f64,
    /// Each term, 1σ referred to the measurand in `unit`, largest first.
    pub terms: Vec<NoiseTermRow>,
}

#[derive(Clone, Debug, Serialize)]
pub struct NoiseTermRow {
    pub id: String,
    /// At the converter's input, V rms; absent for a term that acts on
    /// the measurand directly (an excitation's noise).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub v_rms: Option<f64>,
    pub referred: f64,
}

#[derive(Clone, Debug, Default, Serialize)]
pub struct DynamicsSection {
    pub sensor_time_constant_s: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub response_90_s: Option<f64>,
    /// The response requirement, s, when stated.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub requirement_s: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rate_hz: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub notch_hz: Option<f64>,
    pub average: u32,
    /// Attenuation in dB at each mains frequency.
    pub mains: Vec<[f64; 2]>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub at_rate_db: Option<f64>,
    /// Step response: time (s) and fraction of the step reached.
    pub step: Vec<[f64; 2]>,
    /// Frequency response: frequency (Hz) and gain (dB).
    pub frequency: Vec<[f64; 2]>,
}

#[derive(Clone, Debug, Serialize)]
pub struct CalibrationSection {
    /// `offset` or `two_point`.
    pub kind: String,
    /// Its points, in `measurand_unit`.
    pub at: Vec<f64>,
    /// Per ambient: the largest GUM expanded uncertainty without and with it.
    pub by_ambient: Vec<CalibrationRow>,
}

#[derive(Clone, Debug, Serialize)]
pub struct CalibrationRow {
    pub ambient: f64,
    pub before: f64,
    pub after: f64,
}

#[derive(Clone, Debug, Serialize)]
pub struct LimitRow {
    pub stage: String,
    pub limit: String,
    /// Coherent SI, or `1` for a share of a converter's full scale.
    pub unit: String,
    pub allowed: [Option<f64>; 2],
    pub reach: [f64; 2],
    pub headroom: f64,
    /// Per measurand point: the reach over ambients and tolerances,
    /// normalised so the allowed interval is 0…1.
    pub profile: Vec<HeadroomPoint>,
}

#[derive(Clone, Debug, Serialize)]
pub struct HeadroomPoint {
    pub measurand: f64,
    pub low: f64,
    pub high: f64,
}

#[derive(Clone, Debug, Serialize)]
pub struct AlarmRow {
    pub side: crate::model::Side,
    pub at: f64,
    pub code: i64,
    pub guard_band: f64,
    pub trip_at: f64,
    pub trip_code: i64,
    /// The converter's end code the trip code lies beyond, when it does.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub trip_code_beyond: Option<i64>,
}
