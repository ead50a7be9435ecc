//! Text pieces shared by the human-readable renderers: number formats,
//! escaping, the orderings every format presents (features by AUC, pairs by
//! gain) and the cells of the common tables. Nothing here computes a statistic.

use super::{FeatureResult, LevelComposition, PairResult, ProtectedResult, Report, WholeSet};
use std::cmp::Ordering;

/// Shown where a value was not computed (`null` in the JSON).
pub const NOT_COMPUTED: &str = "n/a";

/// How many pairs the pair tables list.
pub const TOP_PAIRS: usize = 10;

/// `value` with `decimals` places, or [`NOT_COMPUTED`].
#[must_use]
pub fn fixed(value: Option<f64>, decimals: usize) -> String {
    value.map_or_else(|| NOT_COMPUTED.to_owned(), |v| format!("{v:.decimals$}"))
}

/// `value` with an explicit sign, for differences such as pair gains.
#[must_use]
pub fn signed(value: f64, decimals: usize) -> String {
    format!("{value:+.decimals$}")
}

/// A share in `0..=1` as a percentage with one decimal.
#[must_use]
pub fn percent(share: f64) -> String {
    format!("{:.1}%", share * 100.0)
}

/// `0.812 [0.790, 0.834]`: an AUC (3 decimals) with its 95% interval.
#[must_use]
pub fn auc_interval(auc: Option<f64>, low: Option<f64>, high: Option<f64>) -> String {
    match (auc, low, high) {
        (Some(a), Some(l), Some(h)) if l < h => format!("{a:.3} [{l:.3}, {h:.3}]"),
        (Some(a), _, _) => format!("{a:.3} [not estimable]"),
        _ => NOT_COMPUTED.to_owned(),
    }
}

/// Placeholder for a count below `min_cell`, e.g. `<10`.
#[must_use]
pub fn suppressed(min_cell: u64) -> String {
    format!("<{min_cell}")
}

/// Descending order of optional values, `None` last.
fn descending(a: Option<f64>, b: Option<f64>) -> Ordering {
    match (a, b) {
        (Some(x), Some(y)) => y.total_cmp(&x),
        (Some(_), None) => Ordering::Less,
        (None, Some(_)) => Ordering::Greater,
        (None, None) => Ordering::Equal,
    }
}

/// Features by AUC, highest first, not-computed last (the report's ranking).
#[must_use]
pub fn ranked_features(result: &ProtectedResult) -> Vec<&FeatureResult> {
    let mut features: Vec<&FeatureResult> = result.features.iter().collect();
    features.sort_by(|a, b| descending(a.auc, b.auc));
    features
}

/// The `limit` pairs with the largest gain over their better single feature.
#[must_use]
pub fn top_pairs(result: &ProtectedResult, limit: usize) -> Vec<&PairResult> {
    let mut pairs: Vec<&PairResult> = result.pairs.iter().collect();
    pairs.sort_by(|a, b| b.gain.total_cmp(&a.gain));
    pairs.truncate(limit);
    pairs
}

/// Whether a review policy currently accepts the feature.
#[must_use]
pub fn is_accepted(feature: &FeatureResult) -> bool {
    feature.accepted.as_ref().is_some_and(|a| a.active)
}

/// Marker for the policy column: active, expired or no acceptance.
#[must_use]
pub fn acceptance_marker(feature: &FeatureResult) -> &'static str {
    match &feature.accepted {
        Some(a) if a.active => "accepted",
        Some(_) => "acceptance expired",
        None => "",
    }
}

/// Headers of the ranked feature table.
pub const FEATURE_HEADERS: [&str; 7] = [
    "feature",
    "kind",
    "AUC [95% CI]",
    "held-out info (nats)",
    "AMI",
    "flag",
    "policy",
];

/// One row of the ranked feature table, in [`FEATURE_HEADERS`] order.
#[must_use]
pub fn feature_cells(feature: &FeatureResult) -> [String; 7] {
    [
        feature.name.clone(),
        feature.kind.clone(),
        auc_interval(feature.auc, feature.auc_low, feature.auc_high),
        fixed(feature.heldout_info_nats, 4),
        format!("{:.4}", feature.ami),
        feature.flag.as_str().to_owned(),
        acceptance_marker(feature).to_owned(),
    ]
}

/// Headers of the pair table.
pub const PAIR_HEADERS: [&str; 4] = ["pair", "AUC [95% CI]", "gain [95% CI]", "flag"];

/// One row of the pair table, in [`PAIR_HEADERS`] order.
#[must_use]
pub fn pair_cells(pair: &PairResult) -> [String; 4] {
    [
        format!("{} + {}", pair.features[0], pair.features[1]),
        auc_interval(Some(pair.auc), pair.auc_low, pair.auc_high),
        gain_interval(pair),
        pair.flag.as_str().to_owned(),
    ]
}

/// A pair's gain with its interval; a gain whose interval does not lie
/// above 0 is marked as no joint effect.
#[must_use]
pub fn gain_interval(pair: &PairResult) -> String {
    let gain = signed(pair.gain, 3);
    match (pair.gain_low, pair.gain_high) {
        (Some(l), Some(h)) if l < h && pair.gain_is_resolved() => {
            format!("{gain} [{}, {}]", signed(l, 3), signed(h, 3))
        }
        (Some(l), Some(h)) if l < h => {
            format!(
                "{gain} [{}, {}] no joint effect",
                signed(l, 3),
                signed(h, 3)
            )
        }
        _ => format!("{gain} [not estimable]"),
    }
}

/// One reproducibility setting: a label and its value; `literal` values
/// (hashes, commands) are shown verbatim in code style.
pub struct Setting {
    /// What the value is, e.g. `Seed`.
    pub label: &'static str,
    /// The value as plain text.
    pub value: String,
    /// Show verbatim in code style.
    pub literal: bool,
}

/// Everything needed to rerun the scan and check it ran on the same bytes.
#[must_use]
pub fn settings(report: &Report) -> Vec<Setting> {
    let (d, s) = (&report.dataset, &report.settings);
    let t = &s.thresholds;
    let plain = |label, value| Setting {
        label,
        value,
        literal: false,
    };
    let literal = |label, value| Setting {
        label,
        value,
        literal: true,
    };
    vec![
        plain("File", d.source.clone()),
        literal(
            "SHA-256",
            d.sha256
                .clone()
                .unwrap_or_else(|| "none (generated data)".to_owned()),
        ),
        plain("Rows", rows_summary(report)),
        plain("Columns", d.columns.to_string()),
        plain("Folds", s.folds.to_string()),
        plain("Seed", s.seed.to_string()),
        plain("Bins", s.bins.to_string()),
        plain("Minimum cell", s.min_cell.to_string()),
        plain(
            "Thresholds",
            format!(
                "proxy: AUC lower bound ≥ {:.2}; review: AUC lower bound ≥ {:.2}; clear: upper bound < {:.2}; otherwise unresolved",
                t.proxy_auc_low, t.review_auc_low, t.review_auc_low
            ),
        ),
        plain("Minimum class", format!("{} rows", s.min_class)),
        plain("Intervals", s.interval_method.clone()),
        plain("Verdict surrogate", s.verdict_surrogate.clone()),
        plain("Pairs", s.pairs.clone()),
        plain("Target AUC", format!("{:.2}", s.target_auc)),
        plain(
            "Tool",
            format!("{} {}", report.tool.name, report.tool.version),
        ),
        literal("Command", s.command.clone()),
    ]
}

/// `10000 in source, 9882 used (118 dropped: missing protected value)`.
fn rows_summary(report: &Report) -> String {
    let d = &report.dataset;
    let mut text = format!("{} in source, {} used", d.rows, d.rows_used);
    if d.rows_dropped_missing_protected > 0 {
        text.push_str(&format!(
            "; {} dropped for a missing protected value",
            d.rows_dropped_missing_protected
        ));
    }
    if let Some(n) = d.sample {
        text.push_str(&format!("; stratified sample of {n} requested"));
    }
    text
}

/// One cell of a level-composition table.
#[derive(Debug, Clone, PartialEq)]
pub enum Cell {
    /// A formatted count or share.
    Value(String),
    /// Below `min_cell`; the value is withheld.
    Suppressed,
}

/// A composition row: the level label, its row count, then one share per
/// protected class. A suppressed count suppresses the whole row, since its
/// shares would reveal the small counts.
#[must_use]
pub fn composition_cells(level: &LevelComposition) -> Vec<Cell> {
    let Some(count) = level.count else {
        return vec![Cell::Suppressed; level.shares.len() + 1];
    };
    std::iter::once(Cell::Value(count.to_string()))
        .chain(level.shares.iter().map(|share| match share {
            Some(s) => Cell::Value(percent(*s)),
            None => Cell::Suppressed,
        }))
        .collect()
}

/// Features whose flag is raised and whose level composition was kept.
#[must_use]
pub fn flagged_compositions(
    result: &ProtectedResult,
) -> Vec<(&FeatureResult, &[LevelComposition])> {
    ranked_features(result)
        .into_iter()
        .filter(|f| f.flag != super::Flag::Clear)
        .filter_map(|f| f.composition.as_deref().map(|c| (f, c)))
        .collect()
}

/// The sentence that closes a removal plan, shared wording for every format.
#[must_use]
pub fn removal_outcome(whole: &WholeSet, target_auc: f64) -> String {
    let steps = whole.removal_plan.len();
    if !whole.ablation {
        return "Drop-one ablation and the removal plan were not run (--no-ablation).".to_string();
    }
    let sampled = whole.ablation_rows.map_or(String::new(), |rows| {
        format!(" (ablation on a stratified sample of {rows} rows)")
    });
    let outcome = match (whole.target_reached, steps) {
        (true, 0) => format!("The whole set is already below the target AUC {target_auc:.2}"),
        (true, n) => {
            format!("Removing {n} feature(s) brings the AUC below the target {target_auc:.2}")
        }
        (false, _) => {
            format!("The target AUC {target_auc:.2} was not reached even after {steps} removal(s)")
        }
    };
    format!("{outcome}{sampled}.")
}

/// Escapes text for HTML and SVG content and attribute values.
#[must_use]
pub fn escape_markup(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            _ => out.push(c),
        }
    }
    out
}

/// Shortens `text` to at most `max` characters by cutting out its middle
/// (`…` marks the cut), so names that share a prefix stay distinguishable.
#[must_use]
pub fn truncate(text: &str, max: usize) -> String {
    let length = text.chars().count();
    if length <= max {
        return text.to_owned();
    }
    let kept = max.saturating_sub(1);
    let head = kept.div_ceil(2);
    let head_text: String = text.chars().take(head).collect();
    let tail_text: String = text.chars().skip(length - (kept - head)).collect();
    format!("{head_text}…{tail_text}")
}

/// "Kind: …; positive class: …; classes: a (n), …; entropy … nats." for one
/// attribute, every label passed through the format's `escape`.
#[must_use]
pub fn attribute_summary(
    result: &ProtectedResult,
    min_cell: u64,
    escape: fn(&str) -> String,
) -> String {
    let levels: Vec<String> = result
        .levels
        .iter()
        .map(|l| {
            let count = l
                .count
                .map_or_else(|| suppressed(min_cell), |c| c.to_string());
            format!("{} ({})", escape(&l.label), escape(&count))
        })
        .collect();
    let positive = result
        .positive
        .as_deref()
        .map(|p| format!("; positive class: {}", escape(p)))
        .unwrap_or_default();
    format!(
        "Kind: {}{positive}; classes: {}; entropy {:.4} nats.",
        escape(&result.kind),
        levels.join(", "),
        result.entropy_nats
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::sample::sample_report;

    #[test]
    fn suppressed_count_withholds_every_share_of_the_level() {
        let level = LevelComposition {
            label: "rare".into(),
            count: None,
            shares: vec![Some(0.25), Some(0.75)],
        };
        assert_eq!(composition_cells(&level), vec![Cell::Suppressed; 3]);
    }

    #[test]
    fn ranking_puts_highest_auc_first_and_missing_last() {
        let report = sample_report();
        let ranked = ranked_features(&report.results[0]);
        let aucs: Vec<Option<f64>> = ranked.iter().map(|f| f.auc).collect();
        let computed: Vec<f64> = aucs.iter().flatten().copied().collect();
        assert!(computed.windows(2).all(|w| w[0] >= w[1]));
        assert_eq!(aucs.last(), Some(&None));
    }

    #[test]
    fn truncation_keeps_both_ends() {
        assert_eq!(truncate("income_band_2024_q1", 9), "inco…4_q1");
        assert_eq!(truncate("short", 9), "short");
        assert_eq!(truncate("é".repeat(12).as_str(), 5).chars().count(), 5);
    }

    #[test]
    fn markup_escape_covers_the_five_special_characters() {
        assert_eq!(
            escape_markup(r#"<b>&"x"'"#),
            "&lt;b&gt;&amp;&quot;x&quot;&#39;"
        );
    }
}
