//! Pair scan: the frequency surrogate over the joint codes of two features,
//! and the pair's gain over the better of its two members.

use super::evaluate::Target;
use super::verdict::flag_for;
use super::{PairMode, Progress, ScanOptions};
use crate::data::{EncodedColumn, FeatureKind};
use crate::report::{FeatureResult, PairResult};
use crate::stats::fitting::{
    PAIR_REPLICATES, bootstrap_counts, difference_from_replicates, from_replicates, stream_of,
};
use crate::surrogate::FrequencySurrogate;
use crate::surrogate::count_table::{CountTable, Marginal};
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
    let mut results = evaluate_pairs(features, &pairs, target, options, progress);
    results.truncate(MAX_REPORTED_PAIRS);
    results
}

/// The frequency pair surrogate on each listed pair; sorted by gain, highest first.
pub fn evaluate_pairs(
    features: &[EncodedColumn],
    pairs: &[(usize, usize)],
    target: &Target<'_>,
    options: &ScanOptions,
    progress: &dyn Progress,
) -> Vec<PairResult> {
    progress.stage(
        &format!("pairs: {}", target.attribute.name),
        pairs.len() as u64,
    );
    let mut results: Vec<PairResult> = pairs
        .par_iter()
        .filter_map(|&(a, b)| {
            let result = evaluate_pair(&features[a], &features[b], target, options);
            progress.advance(1);
            result
        })
        .collect();
    results.sort_by(|a, b| {
        b.gain
            .total_cmp(&a.gain)
            .then_with(|| a.features.cmp(&b.features))
    });
    results
}

/// One pair: the pair's AUC and its gain over the better of its two
/// features, a paired comparison of the same (frequency) surrogate on the
/// same rows. Both intervals come from one Poisson bootstrap of the pair's
/// (cell, fold, class) table, whose margins are the two single tables, so
/// each replicate refits the pair and both singles on the same weights
/// (see [`crate::stats::fitting`]).
fn evaluate_pair(
    left: &EncodedColumn,
    right: &EncodedColumn,
    target: &Target<'_>,
    options: &ScanOptions,
) -> Option<PairResult> {
    let smoothing = FrequencySurrogate::default().smoothing;
    let table = CountTable::pair(left, right, target.folded(), smoothing);
    let margins = [table.marginal(0)?, table.marginal(1)?];
    let positive = target.attribute.positive as usize;
    let aucs = |counts: &[f64]| -> Option<[f64; 2]> {
        let pair = table.auc(counts, positive)?;
        let single = |m: &Marginal| m.table.auc(&m.counts(counts), positive);
        let better = single(&margins[0])?.max(single(&margins[1])?);
        Some([pair, pair - better])
    };
    let [auc, gain] = aucs(&table.counts)?;
    let stream = stream_of(&left.name) ^ stream_of(&right.name).rotate_left(1);
    let replicates = bootstrap_counts(&table.counts, PAIR_REPLICATES, options.seed, stream, aucs);
    let column = |i: usize| replicates.iter().map(|r| r[i]).collect::<Vec<f64>>();
    let fitted = from_replicates(auc, &column(0), table.fixed_model_variance(positive));
    let fitted = super::singles::or_degenerate(fitted, target);
    // The gain's interval rests on the paired bootstrap alone, which errs on
    // the wide side: a joint effect is only claimed when it is clear.
    let gain_fitted = difference_from_replicates(gain, &column(1), None);
    Some(PairResult {
        features: [left.name.clone(), right.name.clone()],
        auc,
        auc_low: fitted.low,
        auc_high: fitted.high,
        auc_se: fitted.se,
        gain,
        gain_low: gain_fitted.low,
        gain_high: gain_fitted.high,
        heldout_info_nats: Some(table.heldout_information()),
        flag: flag_for(fitted.low, fitted.high, &options.thresholds),
    })
}
