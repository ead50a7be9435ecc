//! The evidence on one feature (`telltale explain`) and its text rendering.

use super::{FeatureResult, LevelComposition, PairResult};
use serde::{Deserialize, Serialize};
use std::fmt::Write;

/// Group share from which a level counts as dominated by one group.
pub const DOMINATED_SHARE: f64 = 0.9;

/// Everything about one feature for one protected attribute.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Explanation {
    pub protected: String,
    pub protected_levels: Vec<String>,
    pub feature: FeatureResult,
    /// Every level (or bin), largest first, small cells suppressed.
    pub levels: Vec<LevelComposition>,
    /// Levels shown with shares in which one group has at least `DOMINATED_SHARE`.
    pub dominated_levels: usize,
    /// Levels with their shares shown.
    pub levels_with_shares: usize,
    /// The feature's pairs with the largest gain.
    pub partners: Vec<PairResult>,
    pub paragraph: String,
    pub min_cell: u64,
    pub caution: String,
}

fn share(value: Option<f64>, min_cell: u64) -> String {
    value.map_or_else(|| format!("<{min_cell}"), |s| format!("{:.1}%", 100.0 * s))
}

/// Plain text for the terminal or a ticket.
#[must_use]
pub fn render_text(e: &Explanation) -> String {
    let mut out = String::new();
    let f = &e.feature;
    let _ = writeln!(
        out,
        "`{}` and protected attribute `{}`\n",
        f.name, e.protected
    );
    let _ = writeln!(out, "{}\n", e.paragraph);
    let _ = writeln!(
        out,
        "kind {}, {} levels, {:.1}% missing",
        f.kind,
        f.levels,
        100.0 * f.missing_fraction
    );
    let _ = writeln!(
        out,
        "mutual information {:.4} nats (Miller–Madow {:.4}), adjusted MI {:.4}, normalised MI {:.4}, held-out information {}",
        f.mi_nats,
        f.mi_mm_nats,
        f.ami,
        f.nmi,
        f.heldout_info_nats
            .map_or("n/a".to_string(), |v| format!("{v:.4} nats"))
    );
    let _ = writeln!(
        out,
        "\nverdict: {} (surrogate {})",
        f.flag.as_str(),
        f.surrogate.as_deref().unwrap_or("none")
    );
    let _ = writeln!(
        out,
        "surrogate      AUC (information only; the verdict uses the interval above)"
    );
    for (name, auc) in &f.surrogates {
        let _ = writeln!(out, "{name:<12} {auc:.3}");
    }
    if !e.partners.is_empty() {
        let _ = writeln!(out, "\nbest partners    pair AUC   gain [95% interval]");
        for p in &e.partners {
            let other = if p.features[0] == f.name {
                &p.features[1]
            } else {
                &p.features[0]
            };
            let gain = match (p.gain_low, p.gain_high) {
                (Some(l), Some(h)) if l < h => format!("{:+.3} [{l:+.3}, {h:+.3}]", p.gain),
                _ => format!("{:+.3} [not estimable]", p.gain),
            };
            let _ = writeln!(out, "{other:<16} {:.3}   {gain}", p.auc);
        }
    }
    let _ = writeln!(
        out,
        "\nlevel table (cells under {} rows suppressed)",
        e.min_cell
    );
    let _ = writeln!(
        out,
        "{:<28} {:>8}  {}",
        "level",
        "rows",
        e.protected_levels.join("  ")
    );
    for level in &e.levels {
        let count = level
            .count
            .map_or_else(|| format!("<{}", e.min_cell), |c| c.to_string());
        let shares: Vec<String> = level.shares.iter().map(|s| share(*s, e.min_cell)).collect();
        let _ = writeln!(out, "{:<28} {count:>8}  {}", level.label, shares.join("  "));
    }
    let _ = writeln!(out, "\n{}", e.caution);
    out
}
