//! Scan orchestration: singles, pairs, whole set, ablation and removal plan.

pub mod progress;

pub use progress::{Progress, Silent};
