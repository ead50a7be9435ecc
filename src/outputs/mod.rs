//! `outputs`: after training, does the model's score stand in for the
//! protected attribute, and do its selection and error rates differ by group?
//!
//! [`input::read_scored`] reads a scored file; [`build_report`] turns it into
//! an [`OutputsReport`]; [`gate_failures`] says which thresholds it exceeds.

pub(crate) mod bands;
pub mod contract;
pub mod input;
pub(crate) mod layout;
pub(crate) mod proxy;
pub(crate) mod rates;

pub use proxy::{Separation, separation};

pub use contract::*;

use crate::data::ProtectedAttribute;
use crate::pipeline::file_dataset;
use crate::report::format::percent;
use crate::report::{DatasetInfo, SCHEMA_VERSION, ToolInfo};
use bands::{SegmentCount, calibration, score_distribution, thin_segments};
use input::{Levels, ScoredData, ScoredSpec, Selection};
use rates::{
    GroupCounts, count_groups, equalized_odds, group_rates, impact_ratio, mean_difference,
};

/// Settings of the evaluation.
#[derive(Debug, Clone)]
pub struct OutputsOptions {
    pub min_cell: u64,
    /// Confidence level of every interval.
    pub level: f64,
    /// Score bands of the calibration table.
    pub bands: usize,
    /// The gate's thresholds, policy overrides already applied.
    pub thresholds: OutputsThresholds,
    /// The policy file the thresholds came from, if any.
    pub policy: Option<AppliedPolicy>,
}

impl Default for OutputsOptions {
    fn default() -> Self {
        Self {
            min_cell: 10,
            level: 0.95,
            bands: 10,
            thresholds: OutputsThresholds {
                proxy_auc_low: 0.70,
                impact_ratio: 0.8,
                impact_alpha: contract::default_impact_alpha(),
                odds_gap_low: None,
            },
            policy: None,
        }
    }
}

/// Evaluates every protected attribute of a scored file.
#[must_use]
pub fn build_report(
    data: &ScoredData,
    spec: &ScoredSpec,
    options: &OutputsOptions,
    command: String,
) -> OutputsReport {
    let results = data
        .table
        .protected
        .iter()
        .map(|attribute| evaluate(data, attribute, options))
        .collect();
    let mut notes: Vec<String> = data
        .dropped
        .iter()
        .map(|(reason, rows)| format!("{rows} rows dropped: {reason}"))
        .collect();
    notes.extend(
        data.table
            .skipped
            .iter()
            .filter(|s| s.reason != "excluded" && s.reason != "outcome")
            .map(|s| format!("feature `{}` not used: {}", s.name, s.reason)),
    );
    let identifiers: Vec<&str> = data
        .table
        .features
        .iter()
        .filter(|f| f.kind == crate::data::FeatureKind::IdentifierLike)
        .map(|f| f.name.as_str())
        .collect();
    if !identifiers.is_empty() {
        notes.push(format!(
            "identifier-like features are not adjusted for (one mean per row would remove the \
             whole score): {}",
            identifiers.join(", ")
        ));
    }
    for attribute in &data.table.protected {
        let small = attribute
            .counts
            .iter()
            .filter(|&&c| c > 0 && (c as u64) < options.min_cell)
            .count();
        if small > 0 {
            notes.push(format!(
                "`{}`: the score's AUCs and the carriers leave out the {small} class(es) with \
                 fewer than {} rows, as the impact ratio does (a handful of rows would only \
                 widen their intervals)",
                attribute.name, options.min_cell
            ));
        }
    }
    if data.outcome.is_none() {
        notes.push(
            "no --outcome: TPR, FPR, equalized odds and calibration need the observed outcome"
                .to_string(),
        );
    }
    if let Some(policy) = &options.policy {
        notes.push(format!(
            "thresholds of policy {} (SHA-256 {}) applied",
            policy.file, policy.sha256
        ));
    }
    let mut report = OutputsReport {
        schema_version: SCHEMA_VERSION,
        report_kind: "outputs".to_string(),
        tool: ToolInfo {
            name: "telltale".to_string(),
            version: env!("CARGO_PKG_VERSION").to_string(),
        },
        dataset: DatasetInfo {
            rows_dropped_missing_protected: data
                .dropped
                .iter()
                .filter(|(reason, _)| reason.starts_with("protected"))
                .map(|(_, rows)| rows)
                .sum(),
            ..file_dataset(&data.summary, &data.table, None)
        },
        settings: settings(data, spec, options, command),
        results,
        notes,
        policy: options.policy.clone(),
        failing: Vec::new(),
        caution: crate::CAUTION.to_string(),
    };
    report.failing = gate_failures(&report);
    report
}

fn settings(
    data: &ScoredData,
    spec: &ScoredSpec,
    options: &OutputsOptions,
    command: String,
) -> OutputsSettings {
    let (selection, decision, selection_rate) = match &spec.selection {
        Selection::Column(column) => ("column", Some(column.clone()), None),
        Selection::Threshold(_) => ("threshold", None, None),
        Selection::Rate(share) => ("selection_rate", None, Some(*share)),
    };
    OutputsSettings {
        score: spec.score.clone(),
        selection: selection.to_string(),
        decision,
        threshold: data.threshold,
        selection_rate,
        outcome: spec.outcome.clone(),
        segment: spec.segment.clone(),
        features: data.table.features.iter().map(|f| f.name.clone()).collect(),
        min_cell: options.min_cell,
        level: options.level,
        bands: options.bands,
        thresholds: options.thresholds,
        command,
    }
}

/// The rows the score's AUC measures (score AUC, within outcome, carriers)
/// are taken on: those of the classes the report shows (at least `min_cell`
/// rows), classes renumbered in order, as the impact ratio leaves the others
/// out. A handful of rows would otherwise widen the interval enough to pass
/// the gate, or make the measure not estimable for everyone.
struct ShownClasses<'a> {
    score: Vec<f64>,
    classes: Vec<u32>,
    k: usize,
    outcome: Option<Vec<bool>>,
    features: std::borrow::Cow<'a, [crate::data::EncodedColumn]>,
    /// The original class of each shown class.
    original: Vec<usize>,
}

impl<'a> ShownClasses<'a> {
    fn of(data: &'a ScoredData, classes: &[u32], counts: &[GroupCounts], min_cell: u64) -> Self {
        let original: Vec<usize> = (0..counts.len())
            .filter(|&c| counts[c].rows >= min_cell.max(1))
            .collect();
        let mut renumber = vec![u32::MAX; counts.len()];
        for (new, &old) in original.iter().enumerate() {
            renumber[old] = new as u32;
        }
        let rows: Vec<usize> = (0..classes.len())
            .filter(|&r| renumber[classes[r] as usize] != u32::MAX)
            .collect();
        let pick = |values: &[f64]| rows.iter().map(|&r| values[r]).collect::<Vec<f64>>();
        Self {
            score: pick(&data.score),
            classes: rows
                .iter()
                .map(|&r| renumber[classes[r] as usize])
                .collect(),
            k: original.len(),
            outcome: data
                .outcome
                .as_ref()
                .map(|y| rows.iter().map(|&r| y[r]).collect()),
            features: if rows.len() == classes.len() {
                std::borrow::Cow::Borrowed(&data.table.features)
            } else {
                data.table
                    .features
                    .iter()
                    .map(|f| f.select_rows(&rows))
                    .collect()
            },
            original,
        }
    }

    /// The score's separation of the shown classes; per-class AUCs back on
    /// the attribute's `k` classes (`None` for a class left out).
    fn separation(&self, k: usize) -> proxy::Separation {
        let shown = proxy::separation(&self.score, &self.classes, self.k);
        let mut per_class = vec![None; k];
        for (auc, &class) in shown.per_class.iter().zip(&self.original) {
            per_class[class] = *auc;
        }
        proxy::Separation {
            auc: shown.auc,
            per_class,
        }
    }
}

/// Mean score per class (`None` for an empty class).
fn class_means(score: &[f64], classes: &[u32], k: usize) -> Vec<Option<f64>> {
    let mut sums = vec![(0.0, 0u64); k];
    for (&s, &c) in score.iter().zip(classes) {
        sums[c as usize].0 += s;
        sums[c as usize].1 += 1;
    }
    sums.iter()
        .map(|&(sum, n)| (n > 0).then(|| sum / n as f64))
        .collect()
}

fn evaluate(
    data: &ScoredData,
    attribute: &ProtectedAttribute,
    options: &OutputsOptions,
) -> OutputsResult {
    let (classes, labels, k) = (&attribute.codes, &attribute.labels, attribute.n_classes());
    let (min_cell, level) = (options.min_cell, options.level);
    let outcome = data.outcome.as_deref();
    let counts = count_groups(classes, k, &data.selected, outcome);
    let shown = ShownClasses::of(data, classes, &counts, min_cell);
    let separation = shown.separation(k);
    let score_auc = separation.auc;
    let higher_scoring = attribute
        .is_binary()
        .then(|| {
            let positive = attribute.positive as usize;
            let above = separation.per_class[positive]? >= 0.5;
            Some(labels[if above { positive } else { 1 - positive }].clone())
        })
        .flatten();
    let groups = group_rates(
        labels,
        &counts,
        &class_means(&data.score, classes, k),
        &separation.per_class,
        outcome.is_some(),
        min_cell,
        level,
    );
    let focus = attribute.is_binary().then_some(attribute.positive as usize);
    let all_shown = counts.iter().all(|c| c.rows >= min_cell.max(1));
    let standardized_mean_difference = if focus.is_some() && !all_shown {
        None
    } else {
        mean_difference(labels, &data.score, classes, &counts, focus, min_cell)
    };
    let mut result = OutputsResult {
        protected: attribute.name.clone(),
        kind: attribute.kind().to_string(),
        headline: String::new(),
        score_auc,
        higher_scoring,
        score_auc_by_outcome: shown
            .outcome
            .as_ref()
            .map(|y| proxy::by_outcome(&shown.score, &shown.classes, shown.k, y))
            .unwrap_or_default(),
        groups,
        adverse_impact_ratio: impact_ratio(labels, &counts, min_cell, level),
        standardized_mean_difference,
        equalized_odds: outcome.map(|_| equalized_odds(labels, &counts, min_cell, level)),
        calibration: outcome
            .map(|y| {
                calibration(
                    &data.score,
                    classes,
                    labels,
                    y,
                    options.bands,
                    min_cell,
                    level,
                )
            })
            .unwrap_or_default(),
        score_distribution: score_distribution(
            &data.score,
            classes,
            labels,
            options.bands,
            min_cell,
        ),
        thin_segments: thin(data, attribute, &counts, options),
        carriers: proxy::carriers(
            &shown.score,
            &shown.classes,
            shown.k,
            &shown.features,
            score_auc.map(|a| a.auc),
        ),
    };
    result.headline = headline(&result);
    result
}

/// Thin segments among the attribute's classes and the `--segment` column's levels.
fn thin(
    data: &ScoredData,
    attribute: &ProtectedAttribute,
    counts: &[GroupCounts],
    options: &OutputsOptions,
) -> Vec<ThinSegment> {
    let mut segments: Vec<SegmentCount<'_>> = Vec::new();
    let has_outcome = data.outcome.is_some();
    for (label, c) in attribute.labels.iter().zip(counts) {
        push_segment(&mut segments, &attribute.name, label, c, has_outcome);
    }
    let segment_counts;
    if let Some(levels) = &data.segment {
        segment_counts = count_levels(levels, &data.selected, data.outcome.as_deref());
        for (label, c) in levels.labels.iter().zip(&segment_counts) {
            push_segment(&mut segments, &levels.name, label, c, has_outcome);
        }
    }
    thin_segments(&segments, options.min_cell, options.level)
}

fn push_segment<'a>(
    segments: &mut Vec<SegmentCount<'a>>,
    column: &'a str,
    level: &'a str,
    counts: &GroupCounts,
    has_outcome: bool,
) {
    segments.push(SegmentCount {
        column,
        level,
        event: "selected",
        rows: counts.rows,
        events: counts.selected,
    });
    if has_outcome {
        segments.push(SegmentCount {
            column,
            level,
            event: "outcome",
            rows: counts.rows,
            events: counts.positives,
        });
    }
}

fn count_levels(levels: &Levels, selected: &[bool], outcome: Option<&[bool]>) -> Vec<GroupCounts> {
    count_groups(&levels.codes, levels.labels.len(), selected, outcome)
}

/// One sentence: does the score stand in for the attribute, and do rates differ?
fn headline(result: &OutputsResult) -> String {
    let proxy = match result.score_auc {
        Some(a) => {
            let direction = result
                .higher_scoring
                .as_ref()
                .map(|label| format!(" (`{}` = {label} scores higher)", result.protected))
                .unwrap_or_default();
            format!(
                "The score separates the `{}` classes with AUC {:.3} [{:.3}, {:.3}]{direction}",
                result.protected, a.auc, a.auc_low, a.auc_high
            )
        }
        None => format!(
            "The score's AUC for `{}` is not estimable (a class has too few rows: two are needed, four with three classes or more)",
            result.protected
        ),
    };
    let impact = match &result.adverse_impact_ratio {
        Some(ImpactRatio {
            ratio: Some(ratio),
            lowest,
            highest,
            four_fifths,
            fisher_exact_p,
            ..
        }) => format!(
            "; selection rate of {lowest} over {highest}: {ratio:.3} ({} four-fifths; Fisher's \
             exact p {})",
            if four_fifths.below {
                "below"
            } else {
                "not below"
            },
            layout::p_value(*fisher_exact_p)
        ),
        _ => String::new(),
    };
    let odds = match &result.equalized_odds {
        Some(EqualizedOdds {
            tpr_gap: Some(tpr),
            fpr_gap: Some(fpr),
        }) => format!(
            "; TPR gap {} [{}, {}], FPR gap {} [{}, {}]",
            percent(tpr.difference),
            percent(tpr.difference_low),
            percent(tpr.difference_high),
            percent(fpr.difference),
            percent(fpr.difference_low),
            percent(fpr.difference_high)
        ),
        _ => String::new(),
    };
    format!("{proxy}{impact}{odds}.")
}

/// The thresholds a report exceeds, one line each (empty: exit 0): the one
/// gate of `outputs`, whose list the report stores as `failing`.
#[must_use]
pub fn gate_failures(report: &OutputsReport) -> Vec<String> {
    let thresholds = report.settings.thresholds;
    let mut failures = Vec::new();
    for result in &report.results {
        if let Some(a) = result
            .score_auc
            .filter(|a| a.auc_low >= thresholds.proxy_auc_low)
        {
            failures.push(format!(
                "`{}`: the score's AUC lower bound {:.3} reaches {:.2}",
                result.protected, a.auc_low, thresholds.proxy_auc_low
            ));
        }
        if let Some(impact) = &result.adverse_impact_ratio
            && below_impact_threshold(impact, thresholds.impact_ratio)
            && impact_significant(impact, thresholds.impact_alpha)
        {
            failures.push(format!(
                "`{}`: adverse impact ratio {} is below {} (Fisher's exact p {})",
                result.protected,
                impact
                    .ratio
                    .map_or("n/a".to_string(), |r| format!("{r:.3}")),
                thresholds.impact_ratio,
                layout::p_value(impact.fisher_exact_p)
            ));
        }
        let gaps = result
            .equalized_odds
            .iter()
            .flat_map(|odds| [("TPR", &odds.tpr_gap), ("FPR", &odds.fpr_gap)]);
        for (name, gap) in gaps {
            if let (Some(limit), Some(gap)) = (thresholds.odds_gap_low, gap)
                && gap.difference_low >= limit
            {
                failures.push(format!(
                    "`{}`: {name} gap lower bound {:.3} reaches {limit}",
                    result.protected, gap.difference_low
                ));
            }
        }
    }
    failures
}

/// Whether the ratio's difference reaches `alpha` (Fisher's exact p, adjusted
/// for picking the extreme pair); `alpha` 1 or more: always.
#[must_use]
pub fn impact_significant(impact: &ImpactRatio, alpha: f64) -> bool {
    alpha >= 1.0 || impact.fisher_exact_p <= alpha
}

/// Four-fifths decided in exact arithmetic (as the report states it); any
/// other limit on the ratio itself. No ratio (nobody selected) is not below.
fn below_impact_threshold(impact: &ImpactRatio, limit: f64) -> bool {
    if (limit - 0.8).abs() < 1e-12 {
        impact.four_fifths.below
    } else {
        impact.ratio.is_some_and(|r| r < limit)
    }
}
