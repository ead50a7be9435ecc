//! Single-feature scan: information measures and every surrogate's AUC.

use super::composition::composition;
use super::evaluate::{Evaluation, Target, evaluate, fold_mean_auc, roc};
use super::verdict::flag_for;
use super::{Progress, ScanOptions};
use crate::data::EncodedColumn;
use crate::report::{FeatureResult, Flag};
use crate::stats::contingency::Contingency;
use crate::stats::fitting::{
    FittedAuc, REPLICATES, bootstrap_counts, degenerate_interval, from_replicates, stream_of,
};
use crate::stats::information::summarize;
use crate::surrogate::{
    CountTable, FrequencySurrogate, LogisticSurrogate, Surrogate, TreeSurrogate, cross_fit,
};
use rayon::prelude::*;
use std::collections::BTreeMap;

/// Features whose ROC curve is kept for the charts.
const ROC_FEATURES: usize = 5;

/// Every measure for every feature, sorted by AUC (highest first, ties by name).
pub fn scan_singles(
    features: &[EncodedColumn],
    target: &Target<'_>,
    options: &ScanOptions,
    progress: &dyn Progress,
) -> Vec<FeatureResult> {
    progress.stage(
        &format!("singles: {}", target.attribute.name),
        features.len() as u64,
    );
    let mut results: Vec<(FeatureResult, Option<Vec<[f64; 2]>>)> = features
        .par_iter()
        .map(|column| {
            let result = scan_feature(column, target, options);
            progress.advance(1);
            result
        })
        .collect();
    results.sort_by(|(a, _), (b, _)| {
        b.auc
            .unwrap_or(0.0)
            .total_cmp(&a.auc.unwrap_or(0.0))
            .then_with(|| a.name.cmp(&b.name))
    });
    results
        .into_iter()
        .enumerate()
        .map(|(rank, (mut feature, roc))| {
            if rank < ROC_FEATURES {
                feature.roc = roc;
            }
            feature
        })
        .collect()
}

/// The surrogate every verdict rests on, fixed in advance for every column
/// kind: the smoothed frequency model over the encoded codes (levels, or
/// quantile bins of a numeric) is the Bayes-optimal score of the encoded
/// feature, and fixing it means no best-of-three selection inflates the AUC.
/// The other surrogates' AUCs are kept as information.
pub const VERDICT_SURROGATE: &str = "frequency";

/// The single-feature surrogates, in report order.
fn single_surrogates() -> Vec<Box<dyn Surrogate>> {
    vec![
        Box::new(FrequencySurrogate::default()),
        Box::new(LogisticSurrogate::default()),
        Box::new(TreeSurrogate::default()),
    ]
}

/// The frequency surrogate's cross-validated AUC with its fitting-inclusive
/// interval: a Poisson bootstrap over its (value, fold, class) count table,
/// with the fixed-model variance (see [`crate::stats::fitting`]).
pub(super) fn fitted_interval(column: &EncodedColumn, target: &Target<'_>, seed: u64) -> FittedAuc {
    let table = CountTable::single(
        &column.codes,
        column.n_levels as usize,
        target.folded(),
        FrequencySurrogate::default().smoothing,
    );
    let positive = target.attribute.positive as usize;
    let point = table.auc(&table.counts, positive).unwrap_or(f64::NAN);
    let replicates = bootstrap_counts(
        &table.counts,
        REPLICATES,
        seed,
        stream_of(&column.name),
        |counts| table.auc(counts, positive).map(|auc| [auc]),
    );
    let aucs: Vec<f64> = replicates.iter().map(|[auc]| *auc).collect();
    let fitted = from_replicates(point, &aucs, table.fixed_model_variance(positive));
    or_degenerate(fitted, target)
}

/// `fitted`, or when resampling showed no spread the degenerate interval
/// ([`degenerate_interval`]) at the attribute's class sizes.
pub(super) fn or_degenerate(fitted: FittedAuc, target: &Target<'_>) -> FittedAuc {
    if fitted.low.is_some() {
        return fitted;
    }
    let attribute = target.attribute;
    let positive = attribute.is_binary().then_some(attribute.positive as usize);
    let (small, other) = super::verdict::power_classes(&attribute.counts, positive);
    degenerate_interval(fitted.auc, small, other)
}

fn scan_feature(
    column: &EncodedColumn,
    target: &Target<'_>,
    options: &ScanOptions,
) -> (FeatureResult, Option<Vec<[f64; 2]>>) {
    let table = Contingency::from_codes(
        &column.codes,
        column.n_levels,
        target.codes(),
        target.n_classes() as u32,
    );
    let info = summarize(&table);
    let columns = [column];
    let mut surrogates = BTreeMap::new();
    let mut verdict: Option<(Evaluation, crate::surrogate::Scores)> = None;
    for model in single_surrogates() {
        let Ok(scores) = cross_fit(
            model.as_ref(),
            &columns,
            target.codes(),
            target.n_classes(),
            &target.folds,
            target.n_folds,
        ) else {
            continue;
        };
        if let Some(evaluation) = evaluate(&scores, target) {
            if let Some(auc) = fold_mean_auc(&scores, target) {
                surrogates.insert(model.name().to_string(), auc);
            }
            if model.name() == VERDICT_SURROGATE {
                verdict = Some((evaluation, scores));
            }
        }
    }
    let fitted = verdict
        .as_ref()
        .map(|_| fitted_interval(column, target, options.seed));
    let flag = flag_for(
        fitted.and_then(|f| f.low),
        fitted.and_then(|f| f.high),
        &options.thresholds,
    );
    let evaluation = verdict.as_ref().map(|(e, _)| e);
    let result = FeatureResult {
        name: column.name.clone(),
        kind: column.kind.as_str().to_string(),
        levels: column.n_levels,
        missing_fraction: column.missing_fraction(),
        mi_nats: info.mi_nats,
        mi_mm_nats: info.mi_mm_nats,
        ami: info.ami,
        nmi: info.nmi,
        heldout_info_nats: evaluation.map(|e| e.heldout_info_nats),
        auc: fitted.map(|f| f.auc).filter(|a| a.is_finite()),
        auc_low: fitted.and_then(|f| f.low),
        auc_high: fitted.and_then(|f| f.high),
        auc_se: fitted.and_then(|f| f.se),
        auc_delong_se: evaluation.map(|e| e.estimate.se),
        hand_till: evaluation.and_then(|e| e.hand_till),
        ber: evaluation.map(|e| e.ber),
        surrogate: evaluation.map(|_| VERDICT_SURROGATE.to_string()),
        surrogates,
        flag,
        accepted: None,
        composition: matches!(flag, Flag::Proxy | Flag::Review)
            .then(|| composition(column, &table, target, options.min_cell)),
        roc: None,
        outcome: None,
    };
    let roc = verdict.map(|(_, scores)| roc(&scores, target, options.min_cell));
    (result, roc)
}
