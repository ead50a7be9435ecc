//! telltale screens a dataset for features that stand in for a protected attribute.
//!
//! Data flows one way: `data` loads and encodes columns once, `stats` holds the
//! pure estimators, `surrogate` the cross-fitted models that try to rebuild the
//! protected attribute, `scan` orchestrates them into a `report::Report`, and
//! `report` renders it. `cli` only parses flags and delegates.

pub mod cli;
pub mod data;
pub mod error;
pub mod keys;
pub mod outputs;
pub mod pipeline;
pub mod report;
pub mod review;
pub mod rng;
pub mod scan;
pub mod stats;
pub mod surrogate;

/// Wording carried by every report: a statistical screen is evidence, not a ruling.
pub const CAUTION: &str = "This is a statistical screen, not a legal determination. \
Laws on protected attributes and proxy discrimination differ by jurisdiction; \
local law, your organisation's compliance function and qualified counsel decide \
what these figures mean for a given model or decision.";
