//! The indices a plan is addressed by.

/// Index into the parameter values.
pub type SlotId = usize;
/// Index into the plan's nodes (and the signals of one evaluation).
pub type NodeId = usize;
