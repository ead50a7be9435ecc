//! The review workflow: what changed between two reports (`diff`) and whether
//! a report passes an organisation's review policy (`policy`). Both work on
//! finished [`crate::report::Report`] values and never touch the data.

pub mod diff;
pub mod gate;
pub mod policy;

pub use diff::{
    AttributeStatus, AucChange, AucPoint, ContextItem, DEFAULT_ALPHA, FlagChange, ProtectedDiff,
    ReportDiff, ReviewError, compare, load_report, render_diff_markdown, render_diff_text,
};
pub use policy::{AcceptRule, Policy, PolicyError, PolicyThresholds, today_utc};
