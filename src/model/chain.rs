//! The resolved chain: settings checked, stages with SI parameters, and
//! connections between typed ports.

use std::sync::Arc;

use super::ports::Port;
use super::typed::{Side, StageModel};
use super::value::{ParamValue, ResolvedParam};
use crate::diagnostics::{Cause, SourceFile, Span};
use crate::syntax::ast::StageKind;
use crate::units::Dim;

#[derive(Clone, Debug)]
pub struct Chain {
    pub name: String,
    pub name_span: Span,
    pub label: Option<String>,
    pub title: Option<String>,
    pub file: Arc<SourceFile>,
    pub measurand: Option<Measurand>,
    /// Kelvin; a single ambient is `(t, t)`.
    pub ambient: (f64, f64),
    /// Kelvin: the datasheet conditions drifts are relative to.
    pub reference: f64,
    pub requirements: Vec<Requirement>,
    pub alarms: Vec<Alarm>,
    /// What the chain states it protects (`protects people`).
    pub protects: Option<Protects>,
    pub stages: Vec<Stage>,
    pub connections: Vec<Connection>,
    /// Stages whose values track each other (`track` lines).
    pub groups: Vec<TrackGroup>,
}

impl Chain {
    /// The measurand's unit as written (empty without a measurand).
    pub fn measurand_unit(&self) -> String {
        self.measurand
            .as_ref()
            .map(|m| m.unit.clone())
            .unwrap_or_default()
    }

    /// Whether the chain guards people or property: it trips or alarms,
    /// or says so (`protects`). Such a chain's outputs carry the cautions,
    /// and a fault it cannot detect is an error rather than a warning.
    pub fn is_protective(&self) -> bool {
        !self.alarms.is_empty() || self.protects.is_some()
    }

    /// The unit errors are shown in (the measurand's difference unit: K
    /// for temperatures) and the factor from SI to it.
    pub fn difference_unit(&self) -> (String, f64) {
        match &self.measurand {
            Some(m) => m.difference_unit(),
            None => (String::new(), 1.0),
        }
    }
}

#[derive(Clone, Debug)]
pub struct Measurand {
    /// `temperature`, `force`, ...
    pub quantity: String,
    /// The unit as written in the range, for reports (`degC`).
    pub unit: String,
    pub dim: Dim,
    /// SI (kelvin for temperatures).
    pub low: f64,
    pub high: f64,
    pub span: Span,
}

impl Measurand {
    /// The SI value of the written unit's zero (273.15 K for `degC`), which
    /// a reading's magnitude is measured from.
    pub fn zero(&self) -> f64 {
        crate::units::format::to_si(0.0, &self.unit)
    }

    /// How a difference of the measurand is written (`K` for `degC`) and
    /// the factor from SI to it.
    pub fn difference_unit(&self) -> (String, f64) {
        let unit = self.unit.clone();
        if unit == "degC" || unit == "K" {
            return ("K".into(), 1.0);
        }
        match crate::units::parse_unit(&unit) {
            Ok(u) if u.scale != 0.0 => (unit, u.per_si()),
            _ => (unit, 1.0),
        }
    }
}

#[derive(Clone, Debug)]
pub struct Requirement {
    pub kind: super::RequirementKind,
    pub value: ParamValue,
    pub span: Span,
}

/// A chain's statement that it protects people or property.
#[derive(Clone, Debug)]
pub struct Protects {
    pub people: bool,
    pub property: bool,
    pub span: Span,
}

#[derive(Clone, Debug)]
pub struct Alarm {
    pub side: Side,
    /// SI (kelvin for temperatures).
    pub at: f64,
    pub span: Span,
}

#[derive(Clone, Debug)]
pub struct Stage {
    pub name: String,
    pub name_span: Span,
    pub kind: StageKind,
    /// The model line's word (`rtd`, `divider`); None for kinds with one model.
    pub model: Option<&'static str>,
    pub params: Vec<ResolvedParam>,
    /// The model with its parameters typed, when every line was accepted.
    pub typed: Option<StageModel>,
    /// Its price and power, where it states them.
    pub bill: Bill,
    pub span: Span,
    /// Parameters written but rejected (already reported): present for
    /// the checks that ask whether something was given.
    pub invalid: Vec<String>,
    /// Its model, part or an edge naming it was rejected, so what the
    /// graph checks would say about it would only echo that finding.
    pub incomplete: bool,
    /// A finding that probably meant this stage (an edge naming an unknown
    /// stage one typo away from it): what the graph checks say about this
    /// stage follows from it.
    pub misnamed: Option<Cause>,
}

/// What a stage (or its part) states for the bill of materials and the
/// power budget, whatever its kind.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Bill {
    /// One unit's price, in the team's currency.
    pub cost: Option<f64>,
    /// What it draws from its supplies, W.
    pub power: Option<f64>,
}

impl Stage {
    pub fn param(&self, name: &str) -> Option<&ParamValue> {
        self.params
            .iter()
            .find(|p| p.name == name)
            .map(|p| &p.value)
    }
}

/// An edge between two ports, stages by index into `Chain::stages`.
#[derive(Clone, Debug, PartialEq)]
pub struct Connection {
    pub from: usize,
    pub from_port: Port,
    pub to: usize,
    pub to_port: Port,
    pub span: Span,
}

/// A tracking group: stages from one network or lot. Each member's
/// value keeps its own tolerance; the ratio of any two holds within
/// ± `ratio`, and their drifts differ by at most `tracking` per kelvin.
#[derive(Clone, Debug, PartialEq)]
pub struct TrackGroup {
    pub name: String,
    pub name_span: Span,
    pub members: Vec<TrackMember>,
    /// The ratio tolerance, a fraction.
    pub ratio: f64,
    /// The tracking drift, a fraction per kelvin; without it the members'
    /// drifts stay independent.
    pub tracking: Option<f64>,
    pub span: Span,
}

#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TrackMember {
    /// Index into `Chain::stages`.
    pub stage: usize,
    pub span: Span,
}
