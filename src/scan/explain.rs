//! Everything about one feature, for a reviewer who must justify keeping or
//! dropping it: its measures, its level table, its best partners and a
//! paragraph that can be pasted into a review.

use super::composition::composition;
use super::evaluate::Target;
use super::outcome::OutcomeScan;
use super::pairs::evaluate_pairs;
use super::singles::scan_singles;
use super::verdict::interval_text;
use super::{Progress, ScanOptions};
use crate::data::EncodedTable;
use crate::report::explanation::{DOMINATED_SHARE, Explanation};
use crate::report::{FeatureOutcome, FeatureResult, Flag, LevelComposition, PairResult};
use crate::stats::contingency::Contingency;

/// Partners listed for the feature.
const PARTNERS: usize = 5;

/// Why a feature cannot be explained.
#[derive(Debug, thiserror::Error)]
pub enum ExplainError {
    #[error("feature `{0}` is not among the scanned features{1}")]
    UnknownFeature(String, String),
}

/// Scans `feature` against the protected attribute at `attribute` (an index into `table.protected`).
pub fn explain(
    table: &EncodedTable,
    attribute: usize,
    feature: &str,
    options: &ScanOptions,
    progress: &dyn Progress,
) -> Result<Explanation, ExplainError> {
    let protected = &table.protected[attribute];
    let Some(index) = table.features.iter().position(|f| f.name == feature) else {
        let skipped = table
            .skipped
            .iter()
            .find(|s| s.name == feature)
            .map(|s| format!(" (skipped: {})", s.reason))
            .unwrap_or_default();
        return Err(ExplainError::UnknownFeature(feature.to_string(), skipped));
    };
    let target = Target::new(protected, options.folds, options.seed);
    let singles = scan_singles(&table.features, &target, options, progress);
    // Partners as in the pair scan: identifier-like columns take no part.
    let paired = |j: usize| super::pairs::pairs_with(&table.features[j]);
    let pairs: Vec<(usize, usize)> = (0..table.features.len())
        .filter(|&j| j != index && paired(j) && paired(index))
        .map(|j| (index.min(j), index.max(j)))
        .collect();
    let mut partners = evaluate_pairs(&table.features, &pairs, &target, options, progress);
    partners.truncate(PARTNERS);
    progress.finish();
    let column = &table.features[index];
    let contingency = Contingency::from_codes(
        &column.codes,
        column.n_levels,
        target.codes(),
        target.n_classes() as u32,
    );
    let levels = composition(column, &contingency, &target, options.min_cell);
    let with_shares: Vec<&LevelComposition> = levels
        .iter()
        .filter(|l| l.shares.iter().all(Option::is_some))
        .collect();
    let levels_with_shares = with_shares.len();
    let dominated = with_shares
        .iter()
        .filter(|l| l.shares.iter().flatten().any(|&s| s >= DOMINATED_SHARE))
        .count();
    let mut result = singles
        .into_iter()
        .find(|f| f.name == feature)
        .ok_or_else(|| ExplainError::UnknownFeature(feature.to_string(), String::new()))?;
    let outcome_paragraph = table.outcome.as_ref().map(|outcome| {
        let values =
            OutcomeScan::new(outcome, &target, options).one_feature(column, options, progress);
        let text = outcome_paragraph(&protected.name, &outcome.name, &column.name, &values);
        result.outcome = Some(values);
        text
    });
    let paragraph = paragraph(
        &protected.name,
        &result,
        dominated,
        levels_with_shares,
        contingency.row_totals().iter().filter(|&&t| t > 0).count(),
        partners.iter().find(|p| p.gain_is_resolved()),
    );
    Ok(Explanation {
        protected: protected.name.clone(),
        protected_levels: protected.labels.clone(),
        feature: result,
        levels,
        dominated_levels: dominated,
        levels_with_shares,
        partners,
        paragraph,
        outcome_paragraph,
        min_cell: options.min_cell,
        caution: crate::CAUTION.to_string(),
    })
}

/// The plain-language summary a reviewer can paste.
fn paragraph(
    protected: &str,
    feature: &FeatureResult,
    dominated: usize,
    with_shares: usize,
    levels: usize,
    partner: Option<&PairResult>,
) -> String {
    let mut text = match feature.auc {
        Some(auc) => format!(
            "Knowing `{}` alone recovers `{protected}` with AUC {} (95% interval including the fitting variance, out-of-fold {} surrogate); {}.",
            feature.name,
            interval_text(auc, feature.auc_low, feature.auc_high),
            feature.surrogate.as_deref().unwrap_or("frequency"),
            verdict_clause(feature.flag)
        ),
        None => format!("No surrogate could be fitted on `{}`.", feature.name),
    };
    if with_shares > 0 {
        text.push_str(&format!(
            " {dominated} of its {with_shares} levels shown with group shares (of {levels}) are at least {:.0}% one group.",
            DOMINATED_SHARE * 100.0
        ));
    }
    if let Some(info) = feature.heldout_info_nats {
        text.push_str(&format!(
            " Held-out information: {info:.4} nats (plug-in MI {:.4} nats, adjusted MI {:.4}).",
            feature.mi_nats, feature.ami
        ));
    }
    if let Some(p) = partner {
        let other = if p.features[0] == feature.name {
            &p.features[1]
        } else {
            &p.features[0]
        };
        text.push_str(&format!(
            " Together with `{other}` it reaches AUC {}, a gain of {:+.2} ({:+.2} to {:+.2}) over the better of the two alone.",
            interval_text(p.auc, p.auc_low, p.auc_high),
            p.gain,
            p.gain_low.unwrap_or(f64::NAN),
            p.gain_high.unwrap_or(f64::NAN)
        ));
    }
    text
}

/// How much of the feature's outcome value survives once the protected
/// attribute is known, and whether it still separates the groups among
/// people with the same outcome, in plain words.
fn outcome_paragraph(
    protected: &str,
    outcome: &str,
    name: &str,
    values: &FeatureOutcome,
) -> String {
    let mut text = match values.auc {
        Some(auc) => format!(
            "With the outcome `{outcome}`: `{name}` alone predicts it with AUC {}, {:.2} above chance.",
            interval_text(auc, values.auc_low, values.auc_high),
            auc - 0.5
        ),
        None => {
            format!("With the outcome `{outcome}`: no surrogate could predict it from `{name}`.")
        }
    };
    if let Some(gain) = values.gain_over_protected {
        let bounds = values.gain_low.zip(values.gain_high);
        let interval = bounds.map_or_else(
            || "interval not estimable".to_string(),
            |(low, high)| format!("{low:+.3} to {high:+.3}"),
        );
        let reading = match bounds {
            Some((low, _)) if low > 0.0 => format!(
                "part of its outcome value survives once `{protected}` is known: it carries \
                 information about the outcome that the attribute does not"
            ),
            Some((_, high)) if high < 0.0 => format!(
                "none of its outcome value survives once `{protected}` is known: adding it to the \
                 attribute makes the outcome prediction worse"
            ),
            Some(_) => format!(
                "no outcome value is shown to survive once `{protected}` is known: the interval \
                 covers 0, so what it tells about the outcome may come through the attribute alone"
            ),
            None => "whether any of its outcome value survives is not settled".to_string(),
        };
        text.push_str(&format!(
            " Added to `{protected}`, it changes the outcome AUC by {gain:+.3} ({interval}): {reading}."
        ));
    }
    if let Some(within) = values.protected_auc_within_outcome {
        let separates = values
            .protected_auc_within_outcome_low
            .is_some_and(|low| low > 0.5);
        let reading = if separates {
            "it still separates the groups among people with the same outcome, so a model that \
             uses it cannot give the groups equal error rates (equalized odds)"
        } else {
            "it does not measurably separate the groups among people with the same outcome"
        };
        text.push_str(&format!(
            " Among people with the same outcome it recovers `{protected}` with AUC {}: {reading}.",
            interval_text(
                within,
                values.protected_auc_within_outcome_low,
                values.protected_auc_within_outcome_high
            )
        ));
    }
    text
}

/// The verdict in words, consistent with the interval.
fn verdict_clause(flag: Flag) -> &'static str {
    match flag {
        Flag::Proxy => "its lower bound reaches the proxy line, so it is flagged proxy",
        Flag::Review => "its lower bound reaches the review line, so it is flagged review",
        Flag::Clear => "its whole interval lies below the review line, so it is clear",
        Flag::Unresolved => {
            "its interval does not settle which side of the review line it lies on, so it is unresolved with this data"
        }
    }
}
