//! Scan orchestration: for each protected attribute, single features, pairs,
//! the whole feature set, drop-one ablation and a removal plan, then the
//! flags and the headline. Parallel over features with rayon; every score is
//! out-of-fold; results do not depend on the thread count.

mod composition;
mod evaluate;
pub mod explain;
mod outcome;
mod pairs;
pub mod progress;
mod singles;
mod verdict;
mod whole;

pub use progress::{Progress, Silent};
pub use verdict::{flag_for, pair_flag};

use crate::data::{EncodedTable, ProtectedAttribute};
use crate::report::{LevelCount, ProtectedResult, Thresholds};
use crate::stats::information::entropy;
use evaluate::Target;

/// Which pairs of features are scanned.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PairMode {
    /// Every pair when there are at most `pair_budget_features` features, else `Top`.
    All,
    /// Pairs among the `pair_budget_features` features with the most held-out information.
    Top,
    /// No pair scan.
    None,
}

impl PairMode {
    #[must_use]
    pub fn as_str(self) -> &'static str {
        match self {
            Self::All => "all",
            Self::Top => "top",
            Self::None => "none",
        }
    }
}

/// Settings of a scan.
#[derive(Debug, Clone)]
pub struct ScanOptions {
    pub folds: usize,
    pub seed: u64,
    pub pairs: PairMode,
    /// Feature count up to which all pairs are scanned; beyond it, pairs among this many top features.
    pub pair_budget_features: usize,
    pub target_auc: f64,
    pub thresholds: Thresholds,
    pub min_cell: u64,
    /// Features re-evaluated at each removal-plan step (those whose drop-one
    /// loss was largest at the previous step).
    pub removal_candidates: usize,
    /// Whole-set analysis (boosted attacker, ablation, removal plan).
    pub whole_set: bool,
    /// Drop-one ablation and removal plan (one boosted fit per feature and step).
    pub ablation: bool,
    /// Rows beyond which the ablation and removal plan run on a seeded
    /// stratified sample of this many rows.
    pub ablation_rows: usize,
}

impl Default for ScanOptions {
    fn default() -> Self {
        Self {
            folds: 5,
            seed: 0,
            pairs: PairMode::All,
            pair_budget_features: 60,
            target_auc: 0.60,
            thresholds: Thresholds::default(),
            min_cell: 10,
            removal_candidates: 5,
            whole_set: true,
            ablation: true,
            ablation_rows: 200_000,
        }
    }
}

/// Scans every protected attribute of `table`.
#[must_use]
pub fn scan(
    table: &EncodedTable,
    options: &ScanOptions,
    progress: &dyn Progress,
) -> Vec<ProtectedResult> {
    let results = table
        .protected
        .iter()
        .map(|attribute| scan_attribute(table, attribute, options, progress))
        .collect();
    progress.finish();
    results
}

fn scan_attribute(
    table: &EncodedTable,
    attribute: &ProtectedAttribute,
    options: &ScanOptions,
    progress: &dyn Progress,
) -> ProtectedResult {
    let target = Target::new(attribute, options.folds, options.seed);
    let mut features = singles::scan_singles(&table.features, &target, options, progress);
    let pairs = pairs::scan_pairs(&table.features, &features, &target, options, progress);
    let mut whole_set = options
        .whole_set
        .then(|| {
            let inputs = whole::AttackInputs::new(&table.features, &pairs);
            whole::scan_whole_set(&inputs, &target, options, progress)
        })
        .flatten();
    if let Some(outcome) = &table.outcome {
        let screen = outcome::OutcomeScan::new(outcome, &target, options);
        screen.annotate_features(&table.features, &mut features, options, progress);
        if let Some(whole) = whole_set.as_mut() {
            (whole.outcome, whole.protected_auc_within_outcome) = screen.whole_set(&table.features);
        }
    }
    let headline = verdict::headline(
        &attribute.name,
        whole_set.as_ref(),
        &features,
        &options.thresholds,
    );
    ProtectedResult {
        protected: attribute.name.clone(),
        kind: if attribute.is_binary() {
            "binary"
        } else {
            "multiclass"
        }
        .to_string(),
        levels: level_counts(attribute, options.min_cell),
        positive: attribute
            .is_binary()
            .then(|| attribute.labels[attribute.positive as usize].clone()),
        entropy_nats: entropy(
            &attribute
                .counts
                .iter()
                .map(|&c| c as u64)
                .collect::<Vec<_>>(),
        ),
        headline,
        features,
        pairs,
        whole_set,
    }
}

/// Each class with its count; counts under `min_cell` suppressed.
fn level_counts(attribute: &ProtectedAttribute, min_cell: u64) -> Vec<LevelCount> {
    attribute
        .labels
        .iter()
        .zip(&attribute.counts)
        .map(|(label, &count)| LevelCount {
            label: label.clone(),
            count: (count as u64 >= min_cell).then_some(count as u64),
        })
        .collect()
}

/// Assembles the full report for a scanned table.
#[must_use]
pub fn build_report(
    table: &EncodedTable,
    dataset: crate::report::DatasetInfo,
    options: &ScanOptions,
    bins: usize,
    command: String,
    progress: &dyn Progress,
) -> crate::report::Report {
    use crate::report::{
        OutcomeInfo, Report, SCHEMA_VERSION, Settings, SkippedColumnInfo, ToolInfo,
    };
    let results = scan(table, options, progress);
    let mut notes = Vec::new();
    if !options.whole_set {
        notes.push(
            "whole-set attack, drop-one ablation and removal plan were not run (--no-whole-set)"
                .to_string(),
        );
    }
    if options.whole_set && !options.ablation {
        notes.push("drop-one ablation and removal plan were not run (--no-ablation)".to_string());
    }
    if let Some(rows) = results
        .iter()
        .find_map(|r| r.whole_set.as_ref()?.ablation_rows)
    {
        notes.push(format!(
            "drop-one ablation and removal plan ran on a seeded stratified sample of {rows} rows \
             (--ablation-rows); the whole-set AUC uses every row"
        ));
    }
    let unpaired: Vec<&str> = table
        .features
        .iter()
        .filter(|f| !pairs::pairs_with(f))
        .map(|f| f.name.as_str())
        .collect();
    if options.pairs == PairMode::None {
        notes.push("pair scan not run (--pairs none)".to_string());
    } else if !unpaired.is_empty() {
        notes.push(format!(
            "identifier-like columns are screened alone, not in pairs (nearly every pair cell \
             would hold a single row): {}",
            unpaired.join(", ")
        ));
    }
    let budgeted = options.pairs == PairMode::Top
        || table.features.len() - unpaired.len() > options.pair_budget_features;
    if options.pairs != PairMode::None && budgeted {
        notes.push(format!(
            "pairs scanned only among the {} features with the most held-out information",
            options.pair_budget_features
        ));
    }
    Report {
        schema_version: SCHEMA_VERSION,
        tool: ToolInfo {
            name: "telltale".to_string(),
            version: env!("CARGO_PKG_VERSION").to_string(),
        },
        dataset,
        settings: Settings {
            folds: options.folds,
            seed: options.seed,
            bins,
            min_cell: options.min_cell,
            thresholds: options.thresholds,
            pairs: options.pairs.as_str().to_string(),
            target_auc: options.target_auc,
            command,
        },
        results,
        skipped_columns: table
            .skipped
            .iter()
            .map(|s| SkippedColumnInfo {
                name: s.name.clone(),
                reason: s.reason.clone(),
            })
            .collect(),
        added_source: None,
        policy: None,
        outcome: table.outcome.as_ref().map(|outcome| OutcomeInfo {
            column: outcome.name.clone(),
            positive: outcome.labels[outcome.positive as usize].clone(),
            levels: level_counts(outcome, options.min_cell),
            rows_dropped_missing: outcome.dropped_missing,
        }),
        notes,
        caution: crate::CAUTION.to_string(),
    }
}

/// For each protected attribute, the whole-set AUC with and without the named
/// (newly added) features.
#[must_use]
pub fn added_source_effects(
    table: &EncodedTable,
    added: &[String],
    options: &ScanOptions,
) -> Vec<crate::report::AddedSourceEffect> {
    let indices: Vec<usize> = table
        .features
        .iter()
        .enumerate()
        .filter(|(_, f)| added.contains(&f.name))
        .map(|(i, _)| i)
        .collect();
    table
        .protected
        .iter()
        .filter_map(|attribute| {
            let target = Target::new(attribute, options.folds, options.seed);
            let inputs = whole::AttackInputs::new(&table.features, &[]);
            whole::added_features_effect(&inputs, &indices, &target)
        })
        .collect()
}
