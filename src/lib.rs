//! telltale screens a dataset for features that stand in for a protected attribute.
//!
//! Data flows one way: `data` loads and encodes columns once, `stats` holds the
//! pure estimators, `surrogate` the cross-fitted models that try to rebuild the
//! protected attribute, `scan` orchestrates them into a `report::Report`, and
//! `report` renders it. The command-line front end lives in the binary
//! (`src/main.rs`, `src/cli/`) and uses only this crate's public API:
//!
//! - [`pipeline`]: runs a screen (file or in-memory table → [`report::Report`]
//!   → gate) and the model-output check, with options validated once;
//! - [`report`]: the report types (the JSON contract) and their renderers;
//! - [`review`]: comparing two reports, review policies and the one gate;
//! - [`outputs`]: the model-output report;
//! - [`data`]: input types, loading and encoding options, the demo generator;
//! - [`stats`]: the estimators behind every printed number, for recomputation.

pub mod data;
pub mod error;
mod keys;
pub mod outputs;
pub mod pipeline;
pub mod report;
pub mod review;
mod rng;
mod scan;
pub mod stats;
mod surrogate;

/// Wording carried by every report: a statistical screen is evidence, not a ruling.
pub const CAUTION: &str = "This is a statistical screen, not a legal determination. \
Laws on protected attributes and proxy discrimination differ by jurisdiction; \
local law, your organisation's compliance function and qualified counsel decide \
what these figures mean for a given model or decision.";
