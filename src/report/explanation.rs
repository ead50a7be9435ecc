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
    let _ = writeln!(out, "\nsurrogate      AUC    95% interval");
    for (name, i) in &f.surrogate_intervals {
        let _ = writeln!(
            out,
            "{name:<12} {:.3}   {:.3}–{:.3}",
            i.auc, i.auc_low, i.auc_high
        );
    }
    if !e.partners.is_empty() {
        let _ = writeln!(out, "\nbest partners   pair AUC   gain");
        for p in &e.partners {
            let other = if p.features[0] == f.name {
                &p.features[1]
            } else {
                &p.features[0]
            };
            let _ = writeln!(out, "{other:<16} {:.3}   {:+.3}", p.auc, p.gain);
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
