//! The JSON contract of `telltale outputs` (`schema_version` 1, `report_kind`
//! `"outputs"`). Field names are fixed so other tools can read them; fields
//! may be added, none renamed without a new schema version. Figures that
//! cannot be estimated are `null` with the reason in `notes` or in the
//! entry's `not_estimable`; counts under `min_cell` are `null` (suppressed).

use crate::report::{DatasetInfo, ToolInfo};
use serde::{Deserialize, Serialize};

/// The report of `telltale outputs` (`outputs::build_report`).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct OutputsReport {
    /// Version of this contract (`SCHEMA_VERSION`, shared with the scan report).
    pub schema_version: u32,
    /// Always `outputs`: tells this report from a `scan` report.
    pub report_kind: String,
    /// The telltale that wrote the report.
    pub tool: ToolInfo,
    /// The scored file: name, SHA-256, rows read and used (`pipeline::file_dataset`).
    pub dataset: DatasetInfo,
    /// Everything the figures depend on besides the data (`outputs::build_report`).
    pub settings: OutputsSettings,
    /// One entry per protected attribute.
    pub results: Vec<OutputsResult>,
    /// Statements about what was not computed and why, and rows dropped.
    pub notes: Vec<String>,
    /// The policy file whose `[outputs]` thresholds were applied, if any.
    pub policy: Option<AppliedPolicy>,
    /// Every threshold exceeded, one line each; non-empty exactly when the exit status is 1.
    pub failing: Vec<String>,
    /// The caution every report carries: a statistical screen, not a legal determination.
    pub caution: String,
}

/// A policy file named by its exact bytes.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct AppliedPolicy {
    /// Path of the policy file as given.
    pub file: String,
    /// SHA-256 of its bytes.
    pub sha256: String,
}

/// How the report was made.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct OutputsSettings {
    /// The score column.
    pub score: String,
    /// How selection was decided: `column`, `threshold` or `selection_rate`.
    pub selection: String,
    /// The decision column, when `selection` is `column`.
    pub decision: Option<String>,
    /// The score threshold (given, or derived from the selection rate): selected = score ≥ it.
    pub threshold: Option<f64>,
    /// The requested share selected, when `selection` is `selection_rate`.
    pub selection_rate: Option<f64>,
    /// The observed outcome column (`--outcome`), if given.
    pub outcome: Option<String>,
    /// The column whose levels are screened for thin segments (`--segment`).
    pub segment: Option<String>,
    /// Features screened as carriers of the attribute into the score (`--features`).
    pub features: Vec<String>,
    /// Smallest count shown; smaller cells are `null` (`--min-cell`).
    pub min_cell: u64,
    /// Confidence level of every interval.
    pub level: f64,
    /// Score bands of the calibration table.
    pub bands: usize,
    /// The gate's thresholds after any policy file.
    pub thresholds: OutputsThresholds,
    /// The command line that produced the report.
    pub command: String,
}

/// The gates of the exit status.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq)]
pub struct OutputsThresholds {
    /// Exit 1 when the score AUC's lower bound reaches this.
    pub proxy_auc_low: f64,
    /// Exit 1 when the adverse impact ratio is below this (4/5 by default, decided exactly)
    /// and its Fisher's exact p-value is at most `impact_alpha`.
    pub impact_ratio: f64,
    /// Significance the ratio's difference must reach for the gate: a ratio below
    /// the line on small numbers that is not significant does not fail it
    /// (29 CFR 1607.4(D)); 1 gates on the ratio alone.
    #[serde(default = "default_impact_alpha")]
    pub impact_alpha: f64,
    /// Exit 1 when an equalized-odds gap's lower bound reaches this (off when `null`).
    pub odds_gap_low: Option<f64>,
}

/// Default `impact_alpha`: the conventional 5 % level.
#[must_use]
pub fn default_impact_alpha() -> f64 {
    0.05
}

/// An AUC with its 95 % interval.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq)]
pub struct ScoreAuc {
    /// AUC of the score for the attribute, oriented to be at least ½ (`outputs::separation`).
    pub auc: f64,
    /// Lower end of the 95 % DeLong interval (DeLong et al. 1988; macro one-vs-rest for
    /// more than two classes, `stats::macro_ovr`).
    pub auc_low: f64,
    /// Upper end of the same interval.
    pub auc_high: f64,
    /// Its standard error.
    pub auc_se: f64,
}

/// The score's AUC for the attribute within one outcome stratum.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct StratumAuc {
    /// The outcome value, `0` or `1`.
    pub outcome: u8,
    /// Rows with this outcome.
    pub rows: u64,
    /// `null` when not estimable in this stratum (a class with fewer than two rows, four with three classes or more).
    pub score_auc: Option<ScoreAuc>,
}

/// The evaluation of the score and decisions for one protected attribute.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct OutputsResult {
    /// The protected attribute.
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
    /// Selection and error rates per class (`rates::group_rates`).
    pub groups: Vec<GroupRates>,
    /// Lowest over highest selection rate (`rates::impact_ratio`); `null` with fewer
    /// than two groups shown.
    pub adverse_impact_ratio: Option<ImpactRatio>,
    /// Standardized mean difference of the scores (`rates::mean_difference`).
    pub standardized_mean_difference: Option<MeanDifferenceResult>,
    /// Largest TPR and FPR gaps (`rates::equalized_odds`), with an outcome.
    pub equalized_odds: Option<EqualizedOdds>,
    /// Observed outcome rate per score band and class (`bands::calibration`), with an outcome.
    pub calibration: Vec<CalibrationBand>,
    /// The score's distribution by group: each class's share of rows per
    /// pooled-score band (the calibration table's bands).
    pub score_distribution: Vec<DistributionBand>,
    /// Groups and segment levels with too few events to read a rate (`bands::thin_segments`).
    pub thin_segments: Vec<ThinSegment>,
    /// Which features carry the attribute into the score (with `--features`).
    pub carriers: Vec<Carrier>,
}

/// A rate with its exact interval: `events / rows`.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq)]
pub struct Rate {
    /// `events / rows`.
    pub rate: f64,
    /// Lower end of the exact Clopper–Pearson interval (`stats::clopper_pearson`).
    pub low: f64,
    /// Upper end of the same interval.
    pub high: f64,
}

/// One class of the protected attribute. Rates whose denominator is under
/// `min_cell` are `null`, and so are the counts they would reveal.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct GroupRates {
    /// The class.
    pub label: String,
    /// `null` when the group has fewer than `min_cell` rows (everything else is then `null` too).
    pub count: Option<u64>,
    /// Rows selected.
    pub selected: Option<u64>,
    /// `selected / count` (demographic parity compares these).
    pub selection_rate: Option<f64>,
    /// Clopper–Pearson interval of the selection rate (`stats::clopper_pearson`).
    pub selection_rate_low: Option<f64>,
    /// Upper end of the same interval.
    pub selection_rate_high: Option<f64>,
    /// Rows with outcome 1 (the denominator of the TPR).
    pub positives: Option<u64>,
    /// P(selected | outcome 1), `null` without an outcome, when suppressed or not estimable.
    pub tpr: Option<f64>,
    /// Clopper–Pearson interval of the TPR.
    pub tpr_low: Option<f64>,
    /// Upper end of the same interval.
    pub tpr_high: Option<f64>,
    /// Rows with outcome 0 (the denominator of the FPR).
    pub negatives: Option<u64>,
    /// P(selected | outcome 0).
    pub fpr: Option<f64>,
    /// Clopper–Pearson interval of the FPR.
    pub fpr_low: Option<f64>,
    /// Upper end of the same interval.
    pub fpr_high: Option<f64>,
    /// Mean score of the class.
    pub mean_score: Option<f64>,
    /// AUC of the raw score for this class against the rest (below 0.5: the class scores lower).
    pub score_auc_vs_rest: Option<f64>,
    /// Why a figure of this group is `null` (suppressed, no positive outcomes...).
    pub not_estimable: Vec<String>,
}

/// The adverse impact ratio (`stats::adverse_impact`).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct ImpactRatio {
    /// Lowest selection rate over the highest, among groups with at least `min_cell` rows.
    pub ratio: Option<f64>,
    /// Katz log interval (Katz et al. 1978), Bonferroni-adjusted over the
    /// pairs of groups when there are more than two; `null` when a rate is 0.
    pub ratio_low: Option<f64>,
    /// Upper end of the same interval.
    pub ratio_high: Option<f64>,
    /// The class with the lowest selection rate.
    pub lowest: String,
    /// The class with the highest selection rate.
    pub highest: String,
    /// The four-fifths comparison (`stats::violates_four_fifths`).
    pub four_fifths: FourFifths,
    /// Fisher's exact test (two-sided) of the lowest and highest groups'
    /// selection rates, with more than two groups multiplied by the number of
    /// group pairs (Bonferroni, capped at 1), since the two are picked as the
    /// extremes; 0 where it underflows a double (below about 1e-308).
    /// Computed by `stats::adverse_impact`.
    pub fisher_exact_p: f64,
}

/// The four-fifths comparison of the adverse impact ratio.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct FourFifths {
    /// The ratio is below 4/5 (decided in exact arithmetic; exactly 4/5 is not below).
    pub below: bool,
    /// What the comparison is: common practice, and where it is a rule.
    pub basis: String,
}

/// Standardized mean difference of the scores, one class against the rest.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct MeanDifferenceResult {
    /// The class compared with all other rows (binary: the less frequent class;
    /// multi-class: the class with the largest absolute difference).
    pub group: String,
    /// (mean score of the group − mean of the rest) / pooled sd.
    pub smd: f64,
    /// 95 % interval of the SMD (`stats::standardized_mean_difference`).
    pub smd_low: f64,
    /// Upper end of the same interval.
    pub smd_high: f64,
}

/// The largest difference of a rate between groups, with its Newcombe
/// interval (Bonferroni-adjusted over the pairs of groups when there are more than two).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct RateGap {
    /// Highest rate minus lowest (`stats::largest_gap`).
    pub difference: f64,
    /// Lower end of the interval.
    pub difference_low: f64,
    /// Upper end of the interval.
    pub difference_high: f64,
    /// The class with the highest rate.
    pub highest: String,
    /// The class with the lowest rate.
    pub lowest: String,
}

/// Hardt, Price & Srebro (2016): equal TPR and equal FPR across groups.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct EqualizedOdds {
    /// Largest difference in true positive rates (equal opportunity).
    pub tpr_gap: Option<RateGap>,
    /// Largest difference in false positive rates.
    pub fpr_gap: Option<RateGap>,
}

/// One score band of the calibration table.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct CalibrationBand {
    /// `[low, high]` of the scores in the band (right-closed quantile bands).
    pub score_low: f64,
    /// Upper end of the band.
    pub score_high: f64,
    /// One cell per class.
    pub groups: Vec<CalibrationCell>,
}

/// One class in one score band.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct CalibrationCell {
    /// The class.
    pub label: String,
    /// `null` below `min_cell`, with every figure of the cell.
    pub count: Option<u64>,
    /// Mean score of the cell.
    pub mean_score: Option<f64>,
    /// Observed share with outcome 1, with its exact interval.
    pub outcome_rate: Option<Rate>,
}

/// One pooled-score band of the score's distribution by group.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct DistributionBand {
    /// Lower end of the band (the calibration bands, `bands::score_distribution`).
    pub score_low: f64,
    /// Upper end of the band.
    pub score_high: f64,
    /// One share per class.
    pub groups: Vec<BandShare>,
}

/// One class's rows in a band; `null` below `min_cell` rows (in the band or the class).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct BandShare {
    /// The class.
    pub label: String,
    /// Rows of the class in the band.
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
    /// The level (class or segment value).
    pub level: String,
    /// `selected` or `outcome`.
    pub event: String,
    /// Rows of the level.
    pub rows: u64,
    /// Events among them.
    pub events: u64,
    /// `events / rows` with its exact interval (`bands::thin_segments`).
    pub rate: Rate,
    /// e.g. "0 selected in 10 rows: the rate may still be as high as 30.8% (95% exact upper bound)".
    pub statement: String,
}

/// How much of the score's leakage one feature explains.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Carrier {
    /// The feature (`outputs::proxy::carriers`).
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
