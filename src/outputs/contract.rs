//! The JSON contract of `telltale outputs` (`schema_version` 1, `report_kind`
//! `"outputs"`). Field names are fixed so other tools can read them; fields
//! may be added, none renamed without a new schema version. Figures that
//! cannot be estimated are `null` with the reason in `notes` or in the
//! entry's `not_estimable`; counts under `min_cell` are `null` (suppressed).

use crate::report::{DatasetInfo, ToolInfo};
use serde::{Deserialize, Serialize};

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct OutputsReport {
    pub schema_version: u32,
    /// Always `outputs`: tells this report from a `scan` report.
    pub report_kind: String,
    pub tool: ToolInfo,
    pub dataset: DatasetInfo,
    pub settings: OutputsSettings,
    /// One entry per protected attribute.
    pub results: Vec<OutputsResult>,
    /// Statements about what was not computed and why, and rows dropped.
    pub notes: Vec<String>,
    /// The policy file whose `[outputs]` thresholds were applied, if any.
    pub policy: Option<AppliedPolicy>,
    /// Every threshold exceeded, one line each; non-empty exactly when the exit status is 1.
    pub failing: Vec<String>,
    pub caution: String,
}

/// A policy file named by its exact bytes.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct AppliedPolicy {
    pub file: String,
    pub sha256: String,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct OutputsSettings {
    pub score: String,
    /// How selection was decided: `column`, `threshold` or `selection_rate`.
    pub selection: String,
    /// The decision column, when `selection` is `column`.
    pub decision: Option<String>,
    /// The score threshold (given, or derived from the selection rate): selected = score ≥ it.
    pub threshold: Option<f64>,
    /// The requested share selected, when `selection` is `selection_rate`.
    pub selection_rate: Option<f64>,
    pub outcome: Option<String>,
    pub segment: Option<String>,
    pub features: Vec<String>,
    pub min_cell: u64,
    /// Confidence level of every interval.
    pub level: f64,
    /// Score bands of the calibration table.
    pub bands: usize,
    pub thresholds: OutputsThresholds,
    pub command: String,
}

/// The gates of the exit status.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq)]
pub struct OutputsThresholds {
    /// Exit 1 when the score AUC's lower bound reaches this.
    pub proxy_auc_low: f64,
    /// Exit 1 when the adverse impact ratio is below this (4/5 by default, decided exactly).
    pub impact_ratio: f64,
    /// Exit 1 when an equalized-odds gap's lower bound reaches this (off when `null`).
    pub odds_gap_low: Option<f64>,
}

/// An AUC with its 95 % interval.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq)]
pub struct ScoreAuc {
    pub auc: f64,
    pub auc_low: f64,
    pub auc_high: f64,
    pub auc_se: f64,
}

/// The score's AUC for the attribute within one outcome stratum.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct StratumAuc {
    /// The outcome value, `0` or `1`.
    pub outcome: u8,
    pub rows: u64,
    /// `null` when not estimable in this stratum (a class with fewer than two rows).
    pub score_auc: Option<ScoreAuc>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct OutputsResult {
    pub protected: String,
    /// `binary` or `multiclass`.
    pub kind: String,
    /// The one-sentence answer for this attribute.
    pub headline: String,
    /// Strength of the score as a proxy: the AUC with which the score separates
    /// the classes, each class's direction taken from the data (0.5 = none, 1 = complete).
    pub score_auc: Option<ScoreAuc>,
    /// Binary attributes: the class whose members tend to score higher.
    pub higher_scoring: Option<String>,
    /// The same within each outcome stratum (what breaks equalized odds), when an outcome is given.
    pub score_auc_by_outcome: Vec<StratumAuc>,
    pub groups: Vec<GroupRates>,
    pub adverse_impact_ratio: Option<ImpactRatio>,
    pub standardized_mean_difference: Option<MeanDifferenceResult>,
    pub equalized_odds: Option<EqualizedOdds>,
    pub calibration: Vec<CalibrationBand>,
    /// The score's distribution by group: each class's share of rows per
    /// pooled-score band (the calibration table's bands).
    pub score_distribution: Vec<DistributionBand>,
    pub thin_segments: Vec<ThinSegment>,
    /// Which features carry the attribute into the score (with `--features`).
    pub carriers: Vec<Carrier>,
}

/// A rate with its exact interval: `events / rows`.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq)]
pub struct Rate {
    pub rate: f64,
    pub low: f64,
    pub high: f64,
}

/// One class of the protected attribute. Rates whose denominator is under
/// `min_cell` are `null`, and so are the counts they would reveal.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct GroupRates {
    pub label: String,
    /// `null` when the group has fewer than `min_cell` rows (everything else is then `null` too).
    pub count: Option<u64>,
    pub selected: Option<u64>,
    pub selection_rate: Option<f64>,
    pub selection_rate_low: Option<f64>,
    pub selection_rate_high: Option<f64>,
    /// Rows with outcome 1 (the denominator of the TPR).
    pub positives: Option<u64>,
    /// P(selected | outcome 1), `null` without an outcome, when suppressed or not estimable.
    pub tpr: Option<f64>,
    pub tpr_low: Option<f64>,
    pub tpr_high: Option<f64>,
    /// Rows with outcome 0 (the denominator of the FPR).
    pub negatives: Option<u64>,
    /// P(selected | outcome 0).
    pub fpr: Option<f64>,
    pub fpr_low: Option<f64>,
    pub fpr_high: Option<f64>,
    pub mean_score: Option<f64>,
    /// AUC of the raw score for this class against the rest (below 0.5: the class scores lower).
    pub score_auc_vs_rest: Option<f64>,
    /// Why a figure of this group is `null` (suppressed, no positive outcomes...).
    pub not_estimable: Vec<String>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct ImpactRatio {
    /// Lowest selection rate over the highest, among groups with at least `min_cell` rows.
    pub ratio: Option<f64>,
    /// Katz log interval (Katz et al. 1978), Bonferroni-adjusted over the
    /// pairs of groups when there are more than two; `null` when a rate is 0.
    pub ratio_low: Option<f64>,
    pub ratio_high: Option<f64>,
    pub lowest: String,
    pub highest: String,
    pub four_fifths: FourFifths,
    /// Fisher's exact test (two-sided) of the lowest and highest groups'
    /// selection rates, with more than two groups multiplied by the number of
    /// group pairs (Bonferroni, capped at 1), since the two are picked as the
    /// extremes; 0 where it underflows a double (below about 1e-308).
    /// Computed by `stats::adverse_impact`.
    pub fisher_exact_p: f64,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct FourFifths {
    /// The ratio is below 4/5 (decided in exact arithmetic; exactly 4/5 is not below).
    pub below: bool,
    /// What the comparison is: common practice, and where it is a rule.
    pub basis: String,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct MeanDifferenceResult {
    /// The class compared with all other rows (binary: the less frequent class;
    /// multi-class: the class with the largest absolute difference).
    pub group: String,
    /// (mean score of the group − mean of the rest) / pooled sd.
    pub smd: f64,
    pub smd_low: f64,
    pub smd_high: f64,
}

/// The largest difference of a rate between groups, with its Newcombe
/// interval (Bonferroni-adjusted over the pairs of groups when there are more than two).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct RateGap {
    pub difference: f64,
    pub difference_low: f64,
    pub difference_high: f64,
    pub highest: String,
    pub lowest: String,
}

/// Hardt, Price & Srebro (2016): equal TPR and equal FPR across groups.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct EqualizedOdds {
    pub tpr_gap: Option<RateGap>,
    pub fpr_gap: Option<RateGap>,
}

/// One score band of the calibration table.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct CalibrationBand {
    /// `[low, high]` of the scores in the band (right-closed quantile bands).
    pub score_low: f64,
    pub score_high: f64,
    pub groups: Vec<CalibrationCell>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct CalibrationCell {
    pub label: String,
    /// `null` below `min_cell`, with every figure of the cell.
    pub count: Option<u64>,
    pub mean_score: Option<f64>,
    /// Observed share with outcome 1, with its exact interval.
    pub outcome_rate: Option<Rate>,
}

/// One pooled-score band of the score's distribution by group.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct DistributionBand {
    pub score_low: f64,
    pub score_high: f64,
    pub groups: Vec<BandShare>,
}

/// One class's rows in a band; `null` below `min_cell` rows (in the band or the class).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct BandShare {
    pub label: String,
    pub count: Option<u64>,
    /// `count` over the class's rows.
    pub share: Option<f64>,
}

/// A segment whose event count is too small for its rate to be read as a
/// measurement: the exact upper bound says how high the rate may still be.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct ThinSegment {
    /// The protected attribute or the `--segment` column.
    pub column: String,
    pub level: String,
    /// `selected` or `outcome`.
    pub event: String,
    pub rows: u64,
    pub events: u64,
    pub rate: Rate,
    /// e.g. "0 selected in 10 rows: the rate may still be as high as 30.8% (95% exact upper bound)".
    pub statement: String,
}

/// How much of the score's leakage one feature explains.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Carrier {
    pub feature: String,
    /// Cramér's V between the feature (levels or bins) and the attribute: association.
    pub association: f64,
    /// Share of the score's variance between the feature's levels (η²): influence on the score.
    pub influence: f64,
    /// The score AUC after removing each level's mean score from the score.
    pub auc_adjusted: Option<f64>,
    /// `score_auc − auc_adjusted`: the leakage the feature carries into the score.
    pub auc_drop: Option<f64>,
}
