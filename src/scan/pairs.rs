//! Pair scan: the frequency surrogate over the joint codes of two features,
//! and the pair's gain over the better of its two members.

use super::evaluate::{Target, evaluate};
use super::verdict::pair_flag;
use super::{PairMode, Progress, ScanOptions};
use crate::data::{EncodedColumn, FeatureKind};
use crate::report::{FeatureResult, PairResult};
use crate::surrogate::{FrequencySurrogate, cross_fit};
use rayon::prelude::*;
use std::collections::HashMap;

/// Pairs kept in the report, by gain.
const MAX_REPORTED_PAIRS: usize = 200;

/// Whether a feature takes part in the pair scan. An identifier-like column
/// is left out: nearly every cell of a pair with it holds one row, which the
/// held-out fold never sees, so the pair surrogate could only repeat the
/// partner's own evidence (the single-feature scan still screens it).
pub fn pairs_with(feature: &EncodedColumn) -> bool {
    feature.kind != FeatureKind::IdentifierLike
}

/// Indices of the feature pairs to scan under the pair budget.
fn chosen_pairs(
    features: &[EncodedColumn],
    singles: &[FeatureResult],
    options: &ScanOptions,
) -> Vec<(usize, usize)> {
    let eligible: Vec<usize> = (0..features.len())
        .filter(|&i| pairs_with(&features[i]))
        .collect();
    let all = options.pairs == PairMode::All && eligible.len() <= options.pair_budget_features;
    let pool: Vec<usize> = match options.pairs {
        PairMode::None => return Vec::new(),
        _ if all => eligible,
        _ => top_by_heldout(features, singles, options.pair_budget_features),
    };
    pool.iter()
        .enumerate()
        .flat_map(|(i, &a)| pool[i + 1..].iter().map(move |&b| (a.min(b), a.max(b))))
        .collect()
}

/// The `budget` features with the most held-out information (ties by AUC).
fn top_by_heldout(
    features: &[EncodedColumn],
    singles: &[FeatureResult],
    budget: usize,
) -> Vec<usize> {
    let index: HashMap<&str, usize> = features
        .iter()
        .enumerate()
        .map(|(i, f)| (f.name.as_str(), i))
        .collect();
    let mut ranked: Vec<&FeatureResult> = singles.iter().collect();
    ranked.sort_by(|a, b| {
        b.heldout_info_nats
            .unwrap_or(f64::NEG_INFINITY)
            .total_cmp(&a.heldout_info_nats.unwrap_or(f64::NEG_INFINITY))
            .then_with(|| b.auc.unwrap_or(0.0).total_cmp(&a.auc.unwrap_or(0.0)))
            .then_with(|| a.name.cmp(&b.name))
    });
    let mut chosen: Vec<usize> = ranked
        .iter()
        .filter_map(|f| index.get(f.name.as_str()).copied())
        .filter(|&i| pairs_with(&features[i]))
        .take(budget)
        .collect();
    chosen.sort_unstable();
    chosen
}

/// Scans the pairs chosen under the pair budget; sorted by gain, highest first.
pub fn scan_pairs(
    features: &[EncodedColumn],
    singles: &[FeatureResult],
    target: &Target<'_>,
    options: &ScanOptions,
    progress: &dyn Progress,
) -> Vec<PairResult> {
    let pairs = chosen_pairs(features, singles, options);
    let mut results = evaluate_pairs(features, &pairs, singles, target, options, progress);
    results.truncate(MAX_REPORTED_PAIRS);
    results
}

/// The frequency pair surrogate on each listed pair; sorted by gain, highest first.
pub fn evaluate_pairs(
    features: &[EncodedColumn],
    pairs: &[(usize, usize)],
    singles: &[FeatureResult],
    target: &Target<'_>,
    options: &ScanOptions,
    progress: &dyn Progress,
) -> Vec<PairResult> {
    let single_auc: HashMap<&str, f64> = singles
        .iter()
        .map(|f| (f.name.as_str(), f.auc.unwrap_or(0.5)))
        .collect();
    progress.stage(
        &format!("pairs: {}", target.attribute.name),
        pairs.len() as u64,
    );
    let model = FrequencySurrogate::default();
    let mut results: Vec<PairResult> = pairs
        .par_iter()
        .filter_map(|&(a, b)| {
            let columns = [&features[a], &features[b]];
            let scores = cross_fit(
                &model,
                &columns,
                target.codes(),
                target.n_classes(),
                &target.folds,
                target.n_folds,
            )
            .ok();
            progress.advance(1);
            let evaluation = evaluate(&scores?, target)?;
            let interval = evaluation.interval();
            let better_single =
                single_auc[columns[0].name.as_str()].max(single_auc[columns[1].name.as_str()]);
            Some(PairResult {
                features: [columns[0].name.clone(), columns[1].name.clone()],
                auc: interval.auc,
                auc_low: interval.auc_low,
                auc_high: interval.auc_high,
                auc_se: interval.auc_se,
                gain: interval.auc - better_single,
                heldout_info_nats: Some(evaluation.heldout_info_nats),
                flag: pair_flag(interval.auc_low, &options.thresholds),
            })
        })
        .collect();
    results.sort_by(|a, b| {
        b.gain
            .total_cmp(&a.gain)
            .then_with(|| a.features.cmp(&b.features))
    });
    results
}
