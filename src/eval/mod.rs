//! The checked chain lowered to a flat evaluation plan that every analysis
//! drives: stages in evaluation order, each a pure function of its input
//! signals, the parameter values and the environment.
//!
//! Parameter values live in one slice indexed by [`SlotId`], separate from
//! the plan: a range sweep, an error budget or a Monte Carlo run perturbs a
//! copy of [`Plan::nominal`] and evaluates the same plan with it. Evaluation
//! allocates nothing and looks nothing up by name.

mod convert;
mod element;
mod env;
mod error;
pub mod fault;
mod ids;
mod lanes;
mod lower;
pub mod node;
mod plan;
mod run;
mod stated;
mod track;
pub mod wide;

pub use convert::{grid, Calibrated, Calibration, Conversion, Firmware, Method, TableUse};
pub use lanes::{Batch, LaneColumns};
pub use lower::{lower, lower_stages, lower_unvalidated, valid_measurand_range};
pub use node::{AmpReference, BridgeKind, Node};
pub use plan::{
    ClassTolerance, Env, EvalError, Named, NodeId, Plan, SenseError, Senses, Signal, Slot, SlotId,
    SourceKind, SourceName,
};
pub use run::{LaneSignals, Outcome, LANES, MAX_NODES};
pub use stated::{Noise, NoiseBasis, SamplingInput, Stated};
pub use track::{half_width, own_fraction, Group, GroupPart};

/// Plans and conditions from spec text, for the tests of every layer.
#[cfg(test)]
pub(crate) mod testing {
    pub(crate) use super::lanes::check::{env_c, plan};
}
