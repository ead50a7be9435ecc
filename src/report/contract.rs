//! The report contract (JSON `schema_version` 1). Field names are fixed so
//! other tools can read reports; fields may be added, none renamed without a
//! new schema version. Values not computed are `None` (JSON `null`) with the
//! reason in `notes`, never a made-up number.

use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// Current version of the JSON layout.
pub const SCHEMA_VERSION: u32 = 1;

/// A finished screen (built by `scan::build_report`, policy and added source
/// filled in by `pipeline`).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Report {
    /// Layout version ([`SCHEMA_VERSION`]).
    pub schema_version: u32,
    /// The program that wrote the report.
    pub tool: ToolInfo,
    /// What was read (`pipeline::file_dataset`, or the demo's description).
    pub dataset: DatasetInfo,
    /// The settings the scan ran with.
    pub settings: Settings,
    /// One entry per protected attribute (`scan::scan`).
    pub results: Vec<ProtectedResult>,
    /// Columns not scanned, with the reason (constant, all missing, excluded...).
    #[serde(default)]
    pub skipped_columns: Vec<SkippedColumnInfo>,
    /// How the columns were read: the missing-value tokens in effect and every
    /// column where a token was found or the reading was a judgment call.
    #[serde(default)]
    pub reading: ReadingInfo,
    /// What a new data source adds (`scan --add-source`), when given.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub added_source: Option<AddedSource>,
    /// Outcome of the review policy, when one was given.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub policy: Option<PolicyOutcome>,
    /// The outcome column, when `--outcome` was given.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outcome: Option<OutcomeInfo>,
    /// Statements about what was not computed and why.
    #[serde(default)]
    pub notes: Vec<String>,
    /// A statistical screen is not a legal determination (`crate::CAUTION`).
    pub caution: String,
}

/// Name and version of the program that wrote a report.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct ToolInfo {
    /// Always `telltale`.
    pub name: String,
    /// The crate version.
    pub version: String,
}

/// The data a report describes (`pipeline::file_dataset`).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct DatasetInfo {
    /// File name (or `demo:<seed>:<rows>` for generated data); never a full path.
    pub source: String,
    /// Data rows in the source.
    pub rows: usize,
    /// Rows analysed after dropping missing protected values and sampling.
    pub rows_used: usize,
    /// Columns in the source.
    pub columns: usize,
    /// SHA-256 of the source file's bytes (`null` for generated data).
    pub sha256: Option<String>,
    /// Rows dropped because a protected value was missing.
    #[serde(default)]
    pub rows_dropped_missing_protected: usize,
    /// Requested stratified sample size, when `--sample` was given.
    #[serde(default)]
    pub sample: Option<usize>,
}

/// The settings a scan ran with (`scan::build_report`), enough to repeat it.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Settings {
    /// Cross-fitting folds (stratified by the protected attribute).
    pub folds: usize,
    /// Seed of folds, samples and models.
    pub seed: u64,
    /// Quantile bins of numeric features.
    pub bins: usize,
    /// Cells with fewer rows are suppressed in every rendering.
    pub min_cell: u64,
    /// Flag and gate thresholds (after any policy override).
    pub thresholds: Thresholds,
    /// `all`, `top` or `none`.
    pub pairs: String,
    /// The removal plan stops once the whole-set AUC is below this.
    pub target_auc: f64,
    /// The command line as typed.
    pub command: String,
    /// Smallest protected class (rows) for which AUC flags and gates are
    /// issued (`--min-class`); below it the attribute's flags are withheld.
    #[serde(default)]
    pub min_class: u64,
    /// How feature and pair AUC intervals are made (method and replicates).
    #[serde(default)]
    pub interval_method: String,
    /// Which surrogate the verdicts rest on and how it was chosen.
    #[serde(default)]
    pub verdict_surrogate: String,
    /// With an outcome: the outcome AUC the recommended frontier set may lose
    /// against the full set (`--max-utility-loss`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max_utility_loss: Option<f64>,
}

/// Flag thresholds (DESIGN §3 defaults are common practice, not a standard).
/// The lines apply to the AUC interval, never to the number of levels:
/// mutual information is reported as information only.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq)]
pub struct Thresholds {
    /// `proxy` when the AUC interval's lower bound reaches this.
    pub proxy_auc_low: f64,
    /// `review` when the AUC interval's lower bound reaches this; `clear`
    /// only when its upper bound is below it.
    pub review_auc_low: f64,
    /// The gate fails when the whole-set AUC interval's lower bound reaches this
    /// (see `review::gate::gate_failures`). Reports written before this field
    /// existed used the default.
    #[serde(default = "default_whole_set_auc_low")]
    pub whole_set_auc_low: f64,
}

fn default_whole_set_auc_low() -> f64 {
    Thresholds::default().whole_set_auc_low
}

impl Default for Thresholds {
    fn default() -> Self {
        Self {
            proxy_auc_low: 0.70,
            review_auc_low: 0.60,
            whole_set_auc_low: 0.70,
        }
    }
}

/// Verdict on one feature or pair, read off its AUC interval.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq, Eq, PartialOrd, Ord)]
#[serde(rename_all = "lowercase")]
pub enum Flag {
    /// The whole interval lies below the review line: shown not to be a proxy at that line.
    Clear,
    /// Not resolved with this data: the interval straddles the review line,
    /// cannot be estimated, or the attribute's smallest class is below the
    /// minimum class size so no flag is issued.
    Unresolved,
    /// The lower bound reaches the review line.
    Review,
    /// The lower bound reaches the proxy line.
    Proxy,
}

impl Flag {
    #[must_use]
    pub fn as_str(self) -> &'static str {
        match self {
            Self::Clear => "clear",
            Self::Unresolved => "unresolved",
            Self::Review => "review",
            Self::Proxy => "proxy",
        }
    }
}

/// A class of the protected attribute and its row count.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct LevelCount {
    /// The class as written in the data (banded attributes: the band).
    pub label: String,
    /// `null` when the count is below `min_cell` (suppressed).
    pub count: Option<u64>,
}

/// Everything found for one protected attribute (`scan::scan_attribute`).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct ProtectedResult {
    /// The protected attribute's column (or the intersection's name).
    pub protected: String,
    /// `binary` or `multiclass`.
    pub kind: String,
    /// Its classes with their counts (small counts suppressed).
    pub levels: Vec<LevelCount>,
    /// The class scored as positive for binary AUCs.
    pub positive: Option<String>,
    /// Entropy H(A) of the attribute, nats: the ceiling for any information measure.
    pub entropy_nats: f64,
    /// The one-sentence answer to "does dropping the attribute hide it?".
    pub headline: String,
    /// Smallest AUC a single feature (or pair) needs for its 95% lower bound
    /// to clear the review line with 80% power at these class sizes
    /// (Hanley & McNeil 1982 standard error × `fitting_inflation`); `null`
    /// when even an AUC of 1 would not.
    #[serde(default)]
    pub detectable_auc: Option<f64>,
    /// Measured ratio of the fitting-inclusive to the DeLong standard error
    /// (median over the features), used in `detectable_auc`.
    #[serde(default)]
    pub fitting_inflation: Option<f64>,
    /// `detectable_auc` in a sentence, for every renderer.
    #[serde(default)]
    pub power_statement: String,
    /// Why no AUC flag or gate is issued for this attribute (its smallest
    /// class is below `settings.min_class`); `null` when flags are issued.
    #[serde(default)]
    pub flags_withheld: Option<String>,
    /// Every feature alone (`scan::singles::scan_singles`), highest AUC first.
    pub features: Vec<FeatureResult>,
    /// Scanned pairs (`scan::pairs::scan_pairs`), highest gain first.
    pub pairs: Vec<PairResult>,
    /// The whole feature set (`scan::whole::scan_whole_set`); `null` when not run.
    pub whole_set: Option<WholeSet>,
}

/// An AUC with its 95% interval and standard error; for the boosted
/// attacker, DeLong's standard error × √2 so that it includes the fitting
/// variance (`scan::evaluate::ATTACKER_FITTING_FACTOR`).
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq)]
pub struct AucInterval {
    /// Out-of-fold AUC (`stats::auc::delong`, or macro one-vs-rest for more classes).
    pub auc: f64,
    /// Lower end of the 95% interval.
    pub auc_low: f64,
    /// Upper end of the 95% interval.
    pub auc_high: f64,
    /// Standard error behind the interval.
    pub auc_se: f64,
}

/// One feature alone against the protected attribute (`scan::singles::scan_feature`).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct FeatureResult {
    /// The column's name.
    pub name: String,
    /// How the column was read (`data::FeatureKind::as_str`).
    pub kind: String,
    /// Encoded levels (categories, or bins of a numeric column), missing included.
    pub levels: u32,
    /// Share of rows where the feature is missing.
    pub missing_fraction: f64,
    /// Plug-in mutual information I(X;A) of the encoded feature, nats (`stats::information::summarize`).
    pub mi_nats: f64,
    /// The same with Miller–Madow's bias correction.
    pub mi_mm_nats: f64,
    /// Adjusted mutual information (Vinh, Epps & Bailey 2010): ≈ 0 for chance agreement.
    pub ami: f64,
    /// Normalised mutual information (arithmetic mean of the entropies).
    pub nmi: f64,
    /// H(A) minus the frequency surrogate's held-out log-loss, nats (`stats::heldout::heldout_information`).
    pub heldout_info_nats: Option<f64>,
    /// Out-of-fold AUC of the reported surrogate (`scan::evaluate::evaluate`).
    pub auc: Option<f64>,
    /// 95% interval including the fitting variance (see
    /// `settings.interval_method`); `null` when not estimable.
    pub auc_low: Option<f64>,
    /// Upper end of its 95% interval.
    pub auc_high: Option<f64>,
    /// Standard error behind `auc_low`/`auc_high` (lets `diff` test changes).
    pub auc_se: Option<f64>,
    /// DeLong standard error of the same AUC (scores taken as fixed), for comparison.
    #[serde(default)]
    pub auc_delong_se: Option<f64>,
    /// Hand & Till's M, multi-class attributes only.
    pub hand_till: Option<f64>,
    /// Balanced error rate of the class-balanced decision on the out-of-fold scores (`stats::ber::balanced_error_rate`).
    pub ber: Option<f64>,
    /// The surrogate `auc` and the verdict come from (fixed in advance, see
    /// `settings.verdict_surrogate`).
    pub surrogate: Option<String>,
    /// Out-of-fold AUC of every surrogate tried (information only).
    pub surrogates: BTreeMap<String, f64>,
    /// The verdict on the AUC's interval (`scan::verdict::flag_for`): `proxy`,
    /// `review`, `unresolved` or `clear`.
    pub flag: Flag,
    /// Set when a review policy accepts this feature.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub accepted: Option<Acceptance>,
    /// Per-level counts and group shares (aggregates, small cells suppressed),
    /// kept for flagged features so reviewers can see where the leakage sits.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub composition: Option<Vec<LevelComposition>>,
    /// The feature against the outcome (`--outcome`): its value for the
    /// outcome beside its leakage (`scan::outcome::feature_outcome`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outcome: Option<FeatureOutcome>,
    /// ROC curve points (false positive rate, true positive rate) of the best surrogate,
    /// thinned to at most 101 points; kept for the top features.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub roc: Option<Vec<[f64; 2]>>,
}

/// A feature's value for the outcome, and its leakage among people with the
/// same outcome (`scan::outcome::feature_outcome`). `null` where not estimable.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct FeatureOutcome {
    /// Out-of-fold AUC of the outcome from this feature alone (its utility):
    /// the same surrogates, folds and intervals as the leakage AUCs.
    pub auc: Option<f64>,
    /// Lower end of its 95% interval.
    pub auc_low: Option<f64>,
    /// Upper end of its 95% interval.
    pub auc_high: Option<f64>,
    /// Outcome AUC from the protected attribute with this feature, minus from
    /// the attribute alone (frequency surrogate, same rows and folds): the
    /// outcome information the feature carries beyond the attribute.
    pub gain_over_protected: Option<f64>,
    /// Lower end of the gain's 95% interval (DeLong's paired test).
    pub gain_low: Option<f64>,
    /// Upper end of the gain's 95% interval.
    pub gain_high: Option<f64>,
    /// Leakage AUC within outcome strata: the frequency surrogate of the
    /// attribute from the feature and the outcome, scored on pairs with the
    /// same outcome only (`stats::auc::stratified_auc`); binary attributes.
    pub protected_auc_within_outcome: Option<f64>,
    /// Lower end of its 95% interval.
    pub protected_auc_within_outcome_low: Option<f64>,
    /// Upper end of its 95% interval.
    pub protected_auc_within_outcome_high: Option<f64>,
}

/// One level (or bin) of a feature: how many rows and how they split by group.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct LevelComposition {
    /// The level's label (a bin's range for binned numerics).
    pub label: String,
    /// `null` when below `min_cell`.
    pub count: Option<u64>,
    /// Share of each protected class within this level, in the order of
    /// `ProtectedResult::levels`; `null` entries are suppressed cells.
    pub shares: Vec<Option<f64>>,
}

/// Two features together (`scan::pairs::evaluate_pairs`): the frequency
/// surrogate over their joint codes.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct PairResult {
    /// The two features, in column order.
    pub features: [String; 2],
    /// Out-of-fold AUC of the pair surrogate.
    pub auc: f64,
    /// 95% interval including the fitting variance; `null` when not estimable.
    pub auc_low: Option<f64>,
    /// Upper end of the interval.
    pub auc_high: Option<f64>,
    /// Standard error behind the interval.
    pub auc_se: Option<f64>,
    /// AUC of the pair minus the better of its two features' AUCs, the same
    /// (frequency) surrogate on the same rows.
    pub gain: f64,
    /// 95% interval of `gain` from the same paired bootstrap replicates;
    /// `null` when not estimable. Only a gain whose interval lies above 0
    /// counts as a joint effect.
    #[serde(default)]
    pub gain_low: Option<f64>,
    /// Upper end of the gain's interval.
    #[serde(default)]
    pub gain_high: Option<f64>,
    /// Held-out information of the pair surrogate about the attribute, in
    /// nats (`surrogate::count_table::CountTable::heldout_information`).
    pub heldout_info_nats: Option<f64>,
    /// The verdict on the pair's interval (`scan::flag_for`).
    pub flag: Flag,
}

impl PairResult {
    /// Whether the pair shows a joint effect: its gain's interval lies above 0.
    #[must_use]
    pub fn gain_is_resolved(&self) -> bool {
        self.gain_low.is_some_and(|low| low > 0.0)
    }
}

/// The boosted attacker on every feature (`scan::whole::scan_whole_set`).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct WholeSet {
    /// Out-of-fold AUC of the attacker on all features.
    pub auc: f64,
    /// Lower end of its 95% interval.
    pub auc_low: f64,
    /// Upper end of its 95% interval.
    pub auc_high: f64,
    /// Standard error behind the interval.
    pub auc_se: f64,
    /// Balanced error rate of its out-of-fold scores.
    pub ber: f64,
    /// Hand & Till's M, multi-class attributes only.
    pub hand_till: Option<f64>,
    /// The attacker's name (`boosted`).
    pub surrogate: String,
    /// Feature columns the attacker saw (joint pair columns not counted).
    pub features_used: usize,
    /// ROC curve points of the attacker, thinned to at most 101.
    pub roc: Option<Vec<[f64; 2]>>,
    /// The attacker refitted without each feature, in turn (`scan::whole::ablation`).
    pub drop_one: Vec<DropOne>,
    /// Features to remove, in order, until the AUC is below the target (`scan::whole::removal_plan`).
    pub removal_plan: Vec<RemovalStep>,
    /// The boosted model's out-of-fold AUC for the outcome from every feature:
    /// the business side of every trade-off (`scan::outcome::whole_set_outcome`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outcome: Option<AucInterval>,
    /// The whole-set leakage among people with the same outcome: the boosted
    /// attacker given every feature and the outcome, scored on pairs with the
    /// same outcome only (binary attributes).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub protected_auc_within_outcome: Option<AucInterval>,
    /// Whether the removal plan brought the AUC below the target.
    pub target_reached: bool,
    /// Whether drop-one ablation and the removal plan were run (`--no-ablation` skips them).
    #[serde(default = "ran")]
    pub ablation: bool,
    /// Rows of the stratified sample the ablation and removal plan ran on,
    /// when the data had more than `--ablation-rows`; absent when all rows.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ablation_rows: Option<usize>,
    /// Pairs handed to the attacker as joint columns, each chosen inside the
    /// training folds (never on the rows it scores), with how many folds chose it.
    #[serde(default)]
    pub joint_columns: Vec<JointColumn>,
    /// Boosted cross-fits run by drop-one and the removal plan (the whole-set fit not counted).
    #[serde(default)]
    pub refits: usize,
    /// With an outcome: boosted cross-fits of the outcome model the removal
    /// plan ran to weigh utility (one per feature set weighed, the full set included).
    #[serde(default, skip_serializing_if = "is_zero")]
    pub outcome_refits: usize,
    /// How each drop-one value was obtained (exact shortcut, refit, screening rule).
    #[serde(default)]
    pub drop_one_rule: String,
    /// Features the attacker used so little that drop-one did not refit them (see `drop_one_rule`).
    #[serde(default)]
    pub drop_one_screened: Vec<String>,
    /// Whole-set AUC without every screened feature at once (the set drop-one and the plan refit from).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub drop_one_screened_auc: Option<AucInterval>,
    /// Whole-set AUC of every feature except those the plan removes, refitted
    /// at full width when the plan ran on a screened set.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub plan_check: Option<AucInterval>,
    /// Why no removal plan was made (the protected attribute's smallest class
    /// is below `settings.min_class`); absent when the plan ran.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub plan_withheld: Option<String>,
    /// Groups of features that rebuild each other, with what removing them together and alone does.
    #[serde(default)]
    pub redundancy_groups: Vec<RedundancyGroup>,
    /// The removal plan's rule: candidates, step choice, acceptance and when the target counts as reached.
    #[serde(default)]
    pub plan_rule: String,
    /// With an outcome: every feature set the removal plan visits, the full
    /// set first, as (leakage AUC, outcome AUC) with intervals, on the rows
    /// the plan ran on.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub frontier: Vec<FrontierPoint>,
    /// The frontier set with the lowest leakage AUC among those whose outcome
    /// AUC is at most `settings.max_utility_loss` below the full set's.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub recommended_within_tolerance: Option<FrontierPoint>,
}

/// A pair of features given to the whole-set attacker as one joint column.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct JointColumn {
    /// The pair's two features.
    pub features: [String; 2],
    /// Training folds (of `settings.folds`) whose own pair screen chose this pair.
    pub folds: usize,
}

/// Features that rebuild each other: removing one leaves the others to carry
/// the same information, so only removing them together shows their weight.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct RedundancyGroup {
    /// The group's members.
    pub features: Vec<String>,
    /// Smallest pairwise share of information one member carries about the
    /// other: Miller–Madow mutual information over the smaller entropy (0 to 1).
    pub redundancy: f64,
    /// Whole-set AUC after removing the whole group, on the set the plan held
    /// when it tested the group.
    pub auc_without_group: AucInterval,
    /// Whole-set AUC after removing each member alone from that same set, in the order of `features`.
    pub auc_without_each: Vec<Option<f64>>,
}

/// Reports written before `ablation` existed always ran it.
fn ran() -> bool {
    true
}

/// Counts of zero are left out of the JSON.
#[allow(clippy::trivially_copy_pass_by_ref)]
fn is_zero(count: &usize) -> bool {
    *count == 0
}

/// The whole-set attacker without one feature.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct DropOne {
    /// The feature left out.
    pub feature: String,
    /// Out-of-fold AUC without it.
    pub auc: f64,
    /// Lower end of its 95% interval.
    pub auc_low: f64,
    /// Upper end of its 95% interval.
    pub auc_high: f64,
    /// Whole-set AUC minus this AUC.
    pub delta: f64,
    /// DeLong's test of the two correlated AUCs (same rows), its variance
    /// doubled to include the fitting variance (`scan::evaluate::compare`).
    pub p_value: Option<f64>,
    /// False when no fold's attacker split on the feature: its drop-one AUC is
    /// then the whole set's exactly, without a refit.
    #[serde(default = "ran")]
    pub refit: bool,
}

/// One step of the removal plan.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct RemovalStep {
    /// The feature removed, or the members of a redundancy group joined by " + ".
    pub remove: String,
    /// Whole-set AUC once it and every earlier step's feature are removed.
    pub auc_after: f64,
    /// Lower end of its 95% interval.
    pub auc_low: f64,
    /// Upper end of its 95% interval.
    pub auc_high: f64,
    /// Every feature removed at this step (one, or a redundancy group).
    #[serde(default)]
    pub features: Vec<String>,
    /// Whole-set AUC before this step.
    #[serde(default)]
    pub auc_before: Option<f64>,
    /// With an outcome: the boosted model's out-of-fold AUC for the outcome
    /// from every feature not removed so far (the outcome's own folds), the
    /// utility left after this step (`scan::plan`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outcome_auc_after: Option<f64>,
    /// Lower end of its 95% interval.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outcome_auc_low: Option<f64>,
    /// Upper end of its 95% interval.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outcome_auc_high: Option<f64>,
}

/// One feature set the removal plan visits, as a point of leakage against
/// utility (`scan::plan::frontier`).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct FrontierPoint {
    /// Plan steps taken to reach this set (0: every feature).
    pub steps: usize,
    /// Features removed from the full set, in plan order.
    pub removed: Vec<String>,
    /// The attacker's AUC for the protected attribute from the set (leakage).
    pub leakage: AucInterval,
    /// The boosted model's AUC for the outcome from the set (utility).
    pub outcome: AucInterval,
}

/// How the columns were read.
#[derive(Debug, Clone, Default, Serialize, Deserialize, PartialEq)]
pub struct ReadingInfo {
    /// Field texts (besides empty fields) read as missing; empty when turned off.
    pub missing_tokens: Vec<String>,
    /// Columns whose reading the report states, protected attributes first.
    pub columns: Vec<ColumnReadingInfo>,
}

/// How one column was read.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct ColumnReadingInfo {
    /// The column's name in the file.
    pub name: String,
    /// The kind it was read as; `null` for a protected attribute or a skipped column.
    pub kind: Option<String>,
    /// Fields read as missing, per token, over every row of the file.
    pub missing_tokens: BTreeMap<String, usize>,
    /// How it was read and why, when the reading was a judgment call.
    pub note: Option<String>,
}

/// A column left out of the scan (`data::prepare::encode_table`).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct SkippedColumnInfo {
    /// The column's name.
    pub name: String,
    /// Why: constant, all missing, excluded, outcome...
    pub reason: String,
}

/// A policy acceptance applied to a feature.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Acceptance {
    /// Why the feature is kept despite its flag.
    pub reason: String,
    /// Who accepted it.
    pub reviewer: String,
    /// Last day the acceptance holds, `YYYY-MM-DD`.
    pub expires: String,
    /// False when the acceptance has expired (it then counts as not accepted).
    pub active: bool,
}

/// A review policy applied to the report (`review::policy::Policy::apply`).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct PolicyOutcome {
    /// The policy file's name.
    pub file: String,
    /// SHA-256 of the policy's text.
    pub sha256: String,
    /// The day (UTC) expiries were judged against.
    pub evaluated_on: String,
    /// `protected/feature` of every active acceptance.
    pub accepted_features: Vec<String>,
    /// `protected/feature` of every expired acceptance.
    pub expired_acceptances: Vec<String>,
    /// What fails the gate (`review::gate::gate_failures`); empty means it passes.
    pub failing: Vec<String>,
}

/// What a newly joined source adds to the existing features.
/// What a newly joined source adds to the existing features
/// (`pipeline::screen_with_source`; counts from `data::join::attach_source`).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct AddedSource {
    /// The new source's file name.
    pub source: String,
    /// SHA-256 of its bytes.
    pub sha256: String,
    /// The key column shared with the base file (never a feature).
    pub key: String,
    /// Columns the source adds.
    pub new_columns: Vec<String>,
    /// Rows of the base file.
    pub base_rows: usize,
    /// Base rows whose key the source has.
    pub matched_rows: usize,
    /// Base rows whose key the source lacks.
    pub unmatched_base_rows: usize,
    /// Source rows whose key the base lacks.
    pub unmatched_source_rows: usize,
    /// Repeated keys in the source (the first row of each is used).
    pub duplicate_keys_in_source: usize,
    /// Repeated keys in the base file.
    pub duplicate_keys_in_base: usize,
    /// The whole-set AUC without and with the new columns, per attribute (`scan::added_source_effects`).
    pub per_protected: Vec<AddedSourceEffect>,
}

/// The whole-set attacker without and with the new columns, on the same rows.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct AddedSourceEffect {
    /// The protected attribute.
    pub protected: String,
    /// AUC from the base features alone.
    pub auc_without: AucInterval,
    /// AUC with the new columns as well.
    pub auc_with: AucInterval,
    /// `auc_with − auc_without`.
    pub difference: f64,
    /// DeLong's test of the difference, its variance doubled to include the
    /// fitting variance (`scan::evaluate::compare`); `null` when the base has
    /// no features.
    pub p_value: Option<f64>,
}

/// The outcome a screen weighs leakage against.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct OutcomeInfo {
    /// The outcome column.
    pub column: String,
    /// The value counted as the positive outcome.
    pub positive: String,
    /// Its values with their counts (small counts suppressed).
    pub levels: Vec<LevelCount>,
    /// Rows dropped because the outcome was missing.
    pub rows_dropped_missing: usize,
}
