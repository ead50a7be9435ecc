//! Scan orchestration: for each protected attribute, single features, pairs,
//! the whole feature set, drop-one ablation and a removal plan, then the
//! flags and the headline. Parallel over features with rayon; every score is
//! out-of-fold; results do not depend on the thread count.

mod composition;
mod evaluate;
pub mod explain;
mod joints;
#[cfg(test)]
mod monte_carlo;
mod outcome;
mod pairs;
mod plan;
pub mod progress;
mod singles;
mod utility;
mod verdict;
mod whole;

pub use progress::{Progress, Silent};
pub use utility::DEFAULT_MAX_UTILITY_LOSS;
pub use verdict::flag_for;

use crate::data::{EncodedTable, ProtectedAttribute};
use crate::report::{Flag, LevelCount, ProtectedResult, Thresholds};
use crate::stats::fitting::{DEFAULT_INFLATION, REPLICATES};
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
    /// Smallest protected class (rows) for which AUC flags and gates are
    /// issued; see [`DEFAULT_MIN_CLASS`].
    pub min_class: u64,
    /// With an outcome: the outcome AUC the recommended frontier set may
    /// lose against the full set; see [`utility::DEFAULT_MAX_UTILITY_LOSS`].
    pub max_utility_loss: f64,
}

/// Default minimum class size: the smallest class at which an AUC of 0.80
/// (a clear proxy, 0.10 beyond the proxy line) clears the review line 0.60
/// with 80 % power, by [`crate::stats::fitting::min_class_size`] with the
/// default fitting-variance factor. Below it the screen is mostly noise:
/// intervals rest on a handful of rows and most real proxies would be missed.
pub const DEFAULT_MIN_CLASS: u64 = 28;

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
            min_class: DEFAULT_MIN_CLASS,
            max_utility_loss: utility::DEFAULT_MAX_UTILITY_LOSS,
        }
    }
}

/// The verdict surrogate's cross-fitted AUC of one column for `attribute`
/// with its fitting-inclusive interval, exactly as the single-feature scan
/// reports it.
#[must_use]
pub fn fitted_auc(
    column: &crate::data::EncodedColumn,
    attribute: &ProtectedAttribute,
    options: &ScanOptions,
) -> crate::stats::fitting::FittedAuc {
    let target = Target::new(attribute, options.folds, options.seed);
    singles::fitted_interval(column, &target, options.seed)
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
    let mut pairs = pairs::scan_pairs(&table.features, &features, &target, options, progress);
    let mut whole_set = options
        .whole_set
        .then(|| {
            let joints = joints::nested_joints(&table.features, &target, options, progress);
            let inputs = whole::AttackInputs::new(&table.features, joints);
            let flagged = flagged_features(&table.features, &features);
            whole::scan_whole_set(
                &inputs,
                &target,
                options,
                &flagged,
                table.outcome.as_ref(),
                progress,
            )
        })
        .flatten();
    if let Some(outcome) = &table.outcome {
        let screen = outcome::OutcomeScan::new(outcome, &target, options);
        screen.annotate_features(&table.features, &mut features, options, progress);
        if let Some(whole) = whole_set.as_mut() {
            (whole.outcome, whole.protected_auc_within_outcome) = screen.whole_set(&table.features);
        }
    }
    let smallest = attribute.counts.iter().copied().min().unwrap_or(0);
    let flags_withheld = verdict::withheld_reason(smallest, options.min_class);
    if flags_withheld.is_some() {
        features.iter_mut().for_each(|f| f.flag = Flag::Unresolved);
        pairs.iter_mut().for_each(|p| p.flag = Flag::Unresolved);
    }
    let inflation = fitting_inflation(&features);
    let positive = attribute.is_binary().then_some(attribute.positive as usize);
    let power = verdict::power(
        verdict::power_classes(&attribute.counts, positive),
        inflation.unwrap_or(DEFAULT_INFLATION),
        &options.thresholds,
    );
    let mut result = ProtectedResult {
        protected: attribute.name.clone(),
        kind: attribute.kind().to_string(),
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
        headline: String::new(),
        detectable_auc: power.detectable_auc,
        fitting_inflation: inflation,
        power_statement: power.statement,
        flags_withheld,
        features: Vec::new(),
        pairs: Vec::new(),
        whole_set,
    };
    result.headline = verdict::headline(&result, &features, &pairs, &options.thresholds);
    result.features = features;
    result.pairs = pairs;
    result
}

/// The measured fitting-variance factor: the median over features of the
/// fitting-inclusive standard error over the DeLong one (`None` without a
/// feature that has both).
fn fitting_inflation(features: &[crate::report::FeatureResult]) -> Option<f64> {
    let mut ratios: Vec<f64> = features
        .iter()
        .filter_map(|f| Some(f.auc_se? / f.auc_delong_se?))
        .filter(|r| r.is_finite() && *r > 0.0)
        .collect();
    ratios.sort_by(f64::total_cmp);
    let n = ratios.len();
    (n > 0).then(|| (ratios[(n - 1) / 2] + ratios[n / 2]) / 2.0)
}

/// Indices of the features the single-feature scan flagged `proxy` or `review`.
fn flagged_features(
    columns: &[crate::data::EncodedColumn],
    results: &[crate::report::FeatureResult],
) -> Vec<usize> {
    use crate::report::Flag;
    columns
        .iter()
        .enumerate()
        .filter(|(_, c)| {
            results
                .iter()
                .any(|r| r.name == c.name && matches!(r.flag, Flag::Proxy | Flag::Review))
        })
        .map(|(i, _)| i)
        .collect()
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
    let (reading, mut notes) = reading_info(table);
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
    for result in &results {
        notes.extend(whole::weaker_attacker_note(result));
        if let Some(whole) = &result.whole_set {
            notes.extend(whole::ablation_notes(&result.protected, whole));
        }
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
            min_class: options.min_class,
            interval_method: format!(
                "Poisson bootstrap of the whole cross-fit over the frequency surrogate's \
                 (value, fold, class) count table, {REPLICATES} replicates; 95% normal interval \
                 around the estimate with the bootstrap standard error (fitting variance included)"
            ),
            verdict_surrogate: "frequency surrogate for every column kind, fixed in advance \
                (no best-of-several selection); logistic and tree AUCs are information only"
                .to_string(),
            max_utility_loss: table.outcome.is_some().then_some(options.max_utility_loss),
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
        reading,
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
/// (newly added) features. The attacker gets the scan's joint columns, so the
/// AUC with them is the whole-set AUC the report gives; without them, the
/// joint columns of the new features are left out with their members.
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
            let joints = joints::nested_joints(&table.features, &target, options, &Silent);
            let inputs = whole::AttackInputs::new(&table.features, joints);
            whole::added_features_effect(&inputs, &indices, &target)
        })
        .collect()
}

/// How the table's columns were read, for the report, and one note per
/// judged reading plus one for the missing-value tokens found.
fn reading_info(table: &EncodedTable) -> (crate::report::ReadingInfo, Vec<String>) {
    use crate::report::{ColumnReadingInfo, ReadingInfo};
    let columns: Vec<ColumnReadingInfo> = table
        .readings
        .iter()
        .map(|r| ColumnReadingInfo {
            name: r.name.clone(),
            kind: r.kind.map(|k| k.as_str().to_string()),
            missing_tokens: r.missing_tokens.clone(),
            note: r.note.clone(),
        })
        .collect();
    let mut notes: Vec<String> = columns
        .iter()
        .filter_map(|c| {
            let note = c.note.as_ref()?;
            Some(match &c.kind {
                Some(kind) => format!("{} read as {kind}: {note}", c.name),
                None => format!("{}: {note}", c.name),
            })
        })
        .collect();
    let tokens: Vec<String> = columns
        .iter()
        .filter(|c| !c.missing_tokens.is_empty())
        .map(|c| {
            let counts: Vec<String> = c
                .missing_tokens
                .iter()
                .map(|(token, n)| format!("{token} ×{n}"))
                .collect();
            format!("{} ({})", c.name, counts.join(", "))
        })
        .collect();
    if !tokens.is_empty() {
        notes.push(format!(
            "fields read as missing values (missing-value tokens; --na-values, --no-na-values): {}",
            tokens.join("; ")
        ));
    }
    let info = ReadingInfo {
        missing_tokens: table.missing_tokens.clone(),
        columns,
    };
    (info, notes)
}
