//! Text pieces the page builders share: number formats, the orderings every
//! format presents (features by AUC, pairs by gain, drop-one by loss) and
//! the settings list. Nothing here computes a statistic.

use super::{
    DropOne, FeatureResult, FrontierPoint, LevelComposition, PairResult, ProtectedResult, Report,
    Thresholds, WholeSet,
};
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

/// A p-value in a table, 4 decimals; below 0.0001 `<0.0001` rather than a
/// misleading zero.
#[must_use]
pub fn p_value(p: Option<f64>) -> String {
    match p {
        Some(p) if p < 1e-4 => "<0.0001".to_string(),
        other => fixed(other, 4),
    }
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

/// A pair's gain with its interval; a gain whose interval does not lie
/// above 0 is marked as no joint effect.
#[must_use]
pub fn gain_interval(pair: &PairResult) -> String {
    let gain = signed(pair.gain, 3);
    match (pair.gain_low, pair.gain_high) {
        (Some(l), Some(h)) if l < h => {
            let joint = if pair.gain_is_resolved() {
                ""
            } else {
                " no joint effect"
            };
            format!("{gain} [{}, {}]{joint}", signed(l, 3), signed(h, 3))
        }
        _ => format!("{gain} [not estimable]"),
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

/// Drop-one results by AUC lost, largest loss first.
#[must_use]
pub fn drop_one_by_loss(whole: &WholeSet) -> Vec<&DropOne> {
    let mut drops: Vec<&DropOne> = whole.drop_one.iter().collect();
    drops.sort_by(|a, b| b.delta.total_cmp(&a.delta));
    drops
}

/// The sentence that closes a removal plan, shared wording for every format.
#[must_use]
pub fn removal_outcome(whole: &WholeSet, target_auc: f64) -> String {
    let steps = whole.removal_plan.len();
    if !whole.ablation {
        return "Drop-one ablation and the removal plan were not run (--no-ablation).".to_string();
    }
    if let Some(reason) = &whole.plan_withheld {
        return format!("No removal plan: {reason}.");
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

/// "Kind: …; positive class: …; classes: a (n), …; entropy … nats." for one attribute.
#[must_use]
pub fn attribute_summary(result: &ProtectedResult, min_cell: u64) -> String {
    let levels: Vec<String> = result
        .levels
        .iter()
        .map(|l| {
            let count = l
                .count
                .map_or_else(|| suppressed(min_cell), |c| c.to_string());
            format!("{} ({count})", l.label)
        })
        .collect();
    let positive = result
        .positive
        .as_deref()
        .map(|p| format!("; positive class: {p}"))
        .unwrap_or_default();
    format!(
        "Kind: {}{positive}; classes: {}; entropy {:.4} nats.",
        result.kind,
        levels.join(", "),
        result.entropy_nats
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::sample::sample_report;

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

/// Where a feature sits on the leakage–utility map: whether it leaks (its
/// leakage AUC interval's lower bound reaches the review line) and whether
/// it adds outcome value beyond the protected attribute (its gain interval
/// lies above 0).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum MapQuadrant {
    /// Leaks, and its gain over the attribute is not above 0.
    RemoveFirst,
    /// Leaks, and carries outcome value the attribute does not.
    Justify,
    /// Does not leak, and carries outcome value.
    Keep,
    /// Neither leaks nor adds resolved value.
    Neither,
}

impl MapQuadrant {
    /// The quadrant of `feature`, `None` without an outcome or a leakage AUC.
    #[must_use]
    pub fn of(feature: &FeatureResult, thresholds: &Thresholds) -> Option<Self> {
        let outcome = feature.outcome.as_ref()?;
        let leaks = feature.auc_low? >= thresholds.review_auc_low;
        let adds = outcome.gain_low.is_some_and(|low| low > 0.0);
        Some(match (leaks, adds) {
            (true, false) => Self::RemoveFirst,
            (true, true) => Self::Justify,
            (false, true) => Self::Keep,
            (false, false) => Self::Neither,
        })
    }

    /// The quadrant's label on the map and in the table.
    #[must_use]
    pub fn label(self) -> &'static str {
        match self {
            Self::RemoveFirst => "leaks, adds nothing: remove first",
            Self::Justify => "leaks and adds value: justify in writing",
            Self::Keep => "no leakage, adds value: keep",
            Self::Neither => "neither",
        }
    }
}

/// A frontier set described by what it leaves out.
#[must_use]
pub fn frontier_set(point: &FrontierPoint) -> String {
    if point.removed.is_empty() {
        "all features".to_owned()
    } else {
        format!("all but {}", point.removed.join(", "))
    }
}

/// The sentence naming the frontier set within the utility tolerance.
#[must_use]
pub fn frontier_choice(whole: &WholeSet, max_loss: f64) -> Option<String> {
    let named = whole.recommended_within_tolerance.as_ref()?;
    let full = whole.frontier.first()?;
    Some(format!(
        "Within an outcome AUC loss of {max_loss:.3} from the full set's {:.3}, the set that \
         leaks least is {}: leakage AUC {}, outcome AUC {}. Read the intervals before relying \
         on a difference between two sets; whether a remaining proxy is justified is a legal \
         judgment for the organisation and its counsel.",
        full.outcome.auc,
        frontier_set(named),
        auc_interval(
            Some(named.leakage.auc),
            Some(named.leakage.auc_low),
            Some(named.leakage.auc_high)
        ),
        auc_interval(
            Some(named.outcome.auc),
            Some(named.outcome.auc_low),
            Some(named.outcome.auc_high)
        ),
    ))
}
