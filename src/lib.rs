//! Catena: a compiler for measurement-chain specifications.
//!
//! The pipeline, one module per stage: [`syntax`] parses a spec to a typed
//! AST, [`units`] gives quantities their dimensions, [`model`] resolves
//! names and checks the chain graph, [`physics`] holds the sensor and
//! signal models, and [`cli`] drives them. Every stage reports through
//! [`diagnostics`].

pub mod analysis;
pub mod check;
pub mod cli;
pub mod config;
pub mod diagnostics;
pub mod emit;
pub mod eval;
pub mod model;
pub mod physics;
pub mod syntax;
pub mod units;
