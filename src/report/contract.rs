//! The report contract (JSON `schema_version` 1). Field names are fixed so
//! other tools can read reports; fields may be added, none renamed without a
//! new schema version. Values not computed are `None` (JSON `null`) with the
//! reason in `notes`, never a made-up number.

use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// Current version of the JSON layout.
pub const SCHEMA_VERSION: u32 = 1;

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Report {
    pub schema_version: u32,
    pub tool: ToolInfo,
    pub dataset: DatasetInfo,
    pub settings: Settings,
    pub results: Vec<ProtectedResult>,
    /// Columns not scanned, with the reason (constant, all missing, excluded...).
    #[serde(default)]
    pub skipped_columns: Vec<SkippedColumnInfo>,
    /// What a new data source adds (`scan --add-source`), when given.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub added_source: Option<AddedSource>,
    /// Outcome of the review policy, when one was given.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub policy: Option<PolicyOutcome>,
    /// Statements about what was not computed and why.
    #[serde(default)]
    pub notes: Vec<String>,
    pub caution: String,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct ToolInfo {
    pub name: String,
    pub version: String,
}

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

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Settings {
    pub folds: usize,
    pub seed: u64,
    pub bins: usize,
    pub min_cell: u64,
    pub thresholds: Thresholds,
    /// `all`, `top` or `none`.
    pub pairs: String,
    pub target_auc: f64,
    pub command: String,
}

/// Flag thresholds (DESIGN §3 defaults are common practice, not a standard).
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq)]
pub struct Thresholds {
    /// `proxy` when the AUC interval's lower bound reaches this.
    pub proxy_auc_low: f64,
    /// `review` when the AUC interval's lower bound reaches this...
    pub review_auc_low: f64,
    /// ...or when adjusted mutual information reaches this.
    pub review_ami: f64,
}

impl Default for Thresholds {
    fn default() -> Self {
        Self {
            proxy_auc_low: 0.70,
            review_auc_low: 0.60,
            review_ami: 0.05,
        }
    }
}

/// Verdict on one feature or pair.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq, Eq, PartialOrd, Ord)]
#[serde(rename_all = "lowercase")]
pub enum Flag {
    Clear,
    Review,
    Proxy,
}

impl Flag {
    #[must_use]
    pub fn as_str(self) -> &'static str {
        match self {
            Self::Clear => "clear",
            Self::Review => "review",
            Self::Proxy => "proxy",
        }
    }
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct LevelCount {
    pub label: String,
    /// `null` when the count is below `min_cell` (suppressed).
    pub count: Option<u64>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct ProtectedResult {
    pub protected: String,
    /// `binary` or `multiclass`.
    pub kind: String,
    pub levels: Vec<LevelCount>,
    /// The class scored as positive for binary AUCs.
    pub positive: Option<String>,
    /// Entropy H(A) of the attribute, nats: the ceiling for any information measure.
    pub entropy_nats: f64,
    /// The one-sentence answer to "does dropping the attribute hide it?".
    pub headline: String,
    pub features: Vec<FeatureResult>,
    pub pairs: Vec<PairResult>,
    pub whole_set: Option<WholeSet>,
}

/// An AUC with its 95% DeLong interval and standard error.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq)]
pub struct AucInterval {
    pub auc: f64,
    pub auc_low: f64,
    pub auc_high: f64,
    pub auc_se: f64,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct FeatureResult {
    pub name: String,
    pub kind: String,
    pub levels: u32,
    pub missing_fraction: f64,
    pub mi_nats: f64,
    pub mi_mm_nats: f64,
    pub ami: f64,
    pub nmi: f64,
    pub heldout_info_nats: Option<f64>,
    pub auc: Option<f64>,
    pub auc_low: Option<f64>,
    pub auc_high: Option<f64>,
    /// DeLong standard error of `auc` (lets `diff` test changes).
    pub auc_se: Option<f64>,
    /// Hand & Till's M, multi-class attributes only.
    pub hand_till: Option<f64>,
    pub ber: Option<f64>,
    pub surrogate: Option<String>,
    /// Out-of-fold AUC of every surrogate tried.
    pub surrogates: BTreeMap<String, f64>,
    /// The same with intervals, for `explain` and the HTML report.
    #[serde(default)]
    pub surrogate_intervals: BTreeMap<String, AucInterval>,
    pub flag: Flag,
    /// Set when a review policy accepts this feature.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub accepted: Option<Acceptance>,
    /// Per-level counts and group shares (aggregates, small cells suppressed),
    /// kept for flagged features so reviewers can see where the leakage sits.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub composition: Option<Vec<LevelComposition>>,
    /// ROC curve points (false positive rate, true positive rate) of the best surrogate,
    /// thinned to at most 101 points; kept for the top features.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub roc: Option<Vec<[f64; 2]>>,
}

/// One level (or bin) of a feature: how many rows and how they split by group.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct LevelComposition {
    pub label: String,
    /// `null` when below `min_cell`.
    pub count: Option<u64>,
    /// Share of each protected class within this level, in the order of
    /// `ProtectedResult::levels`; `null` entries are suppressed cells.
    pub shares: Vec<Option<f64>>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct PairResult {
    pub features: [String; 2],
    pub auc: f64,
    pub auc_low: f64,
    pub auc_high: f64,
    pub auc_se: f64,
    /// AUC of the pair minus the better single feature's AUC.
    pub gain: f64,
    pub heldout_info_nats: Option<f64>,
    pub flag: Flag,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct WholeSet {
    pub auc: f64,
    pub auc_low: f64,
    pub auc_high: f64,
    pub auc_se: f64,
    pub ber: f64,
    pub hand_till: Option<f64>,
    pub surrogate: String,
    pub features_used: usize,
    pub roc: Option<Vec<[f64; 2]>>,
    pub drop_one: Vec<DropOne>,
    pub removal_plan: Vec<RemovalStep>,
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
    /// Groups of features that rebuild each other, with what removing them together and alone does.
    #[serde(default)]
    pub redundancy_groups: Vec<RedundancyGroup>,
    /// The removal plan's rule: candidates, step choice, acceptance and when the target counts as reached.
    #[serde(default)]
    pub plan_rule: String,
}

/// A pair of features given to the whole-set attacker as one joint column.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct JointColumn {
    pub features: [String; 2],
    /// Training folds (of `settings.folds`) whose own pair screen chose this pair.
    pub folds: usize,
}

/// Features that rebuild each other: removing one leaves the others to carry
/// the same information, so only removing them together shows their weight.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct RedundancyGroup {
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

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct DropOne {
    pub feature: String,
    pub auc: f64,
    pub auc_low: f64,
    pub auc_high: f64,
    /// Whole-set AUC minus this AUC.
    pub delta: f64,
    /// DeLong's test of the two correlated AUCs (same rows).
    pub p_value: Option<f64>,
    /// False when no fold's attacker split on the feature: its drop-one AUC is
    /// then the whole set's exactly, without a refit.
    #[serde(default = "ran")]
    pub refit: bool,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct RemovalStep {
    /// The feature removed, or the members of a redundancy group joined by " + ".
    pub remove: String,
    pub auc_after: f64,
    pub auc_low: f64,
    pub auc_high: f64,
    /// Every feature removed at this step (one, or a redundancy group).
    #[serde(default)]
    pub features: Vec<String>,
    /// Whole-set AUC before this step.
    #[serde(default)]
    pub auc_before: Option<f64>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct SkippedColumnInfo {
    pub name: String,
    pub reason: String,
}

/// A policy acceptance applied to a feature.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Acceptance {
    pub reason: String,
    pub reviewer: String,
    pub expires: String,
    /// False when the acceptance has expired (it then counts as not accepted).
    pub active: bool,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct PolicyOutcome {
    pub file: String,
    pub sha256: String,
    pub evaluated_on: String,
    pub accepted_features: Vec<String>,
    pub expired_acceptances: Vec<String>,
    pub failing: Vec<String>,
}

/// What a newly joined source adds to the existing features.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct AddedSource {
    pub source: String,
    pub sha256: String,
    pub key: String,
    pub new_columns: Vec<String>,
    pub base_rows: usize,
    pub matched_rows: usize,
    pub unmatched_base_rows: usize,
    pub unmatched_source_rows: usize,
    pub duplicate_keys_in_source: usize,
    pub duplicate_keys_in_base: usize,
    pub per_protected: Vec<AddedSourceEffect>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct AddedSourceEffect {
    pub protected: String,
    pub auc_without: AucInterval,
    pub auc_with: AucInterval,
    pub difference: f64,
    /// DeLong's test of the difference; `null` when the base has no features.
    pub p_value: Option<f64>,
}
