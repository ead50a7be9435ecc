//! Scan orchestration: singles, pairs, whole set, ablation and removal plan.

pub mod progress;
mod verdict;

pub use progress::{Progress, Silent};
pub use verdict::{flag_for, gate_failures, headline};
