//! Single-feature scan: information measures and every surrogate's AUC.

use super::composition::composition;
use super::evaluate::{Evaluation, Target, evaluate, roc};
use super::verdict::flag_for;
use super::{Progress, ScanOptions};
use crate::data::EncodedColumn;
use crate::report::{FeatureResult, Flag};
use crate::stats::contingency::Contingency;
use crate::stats::information::summarize;
use crate::surrogate::{
    FrequencySurrogate, LogisticSurrogate, Surrogate, TreeSurrogate, cross_fit,
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

/// The single-feature surrogates, in report order.
fn single_surrogates() -> Vec<Box<dyn Surrogate>> {
    vec![
        Box::new(FrequencySurrogate::default()),
        Box::new(LogisticSurrogate::default()),
        Box::new(TreeSurrogate::default()),
    ]
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
    let mut evaluations: Vec<(&'static str, Evaluation)> = Vec::new();
    let mut heldout = None;
    // Scores of the best surrogate so far (ties go to the later one, as `max_by`
    // picks the last maximum); only its ROC curve is ever reported.
    let mut best_scores: Option<(f64, crate::surrogate::Scores)> = None;
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
            if model.name() == "frequency" {
                heldout = Some(evaluation.heldout_info_nats);
            }
            let auc = evaluation.estimate.auc;
            if best_scores.as_ref().is_none_or(|(best, _)| auc >= *best) {
                best_scores = Some((auc, scores));
            }
            evaluations.push((model.name(), evaluation));
        }
    }
    let best = evaluations
        .iter()
        .max_by(|a, b| a.1.estimate.auc.total_cmp(&b.1.estimate.auc));
    let interval = best.map(|(_, e)| e.interval());
    let flag = flag_for(interval.map(|i| i.auc_low), info.ami, &options.thresholds);
    let result = FeatureResult {
        name: column.name.clone(),
        kind: column.kind.as_str().to_string(),
        levels: column.n_levels,
        missing_fraction: column.missing_fraction(),
        mi_nats: info.mi_nats,
        mi_mm_nats: info.mi_mm_nats,
        ami: info.ami,
        nmi: info.nmi,
        heldout_info_nats: heldout,
        auc: interval.map(|i| i.auc),
        auc_low: interval.map(|i| i.auc_low),
        auc_high: interval.map(|i| i.auc_high),
        auc_se: interval.map(|i| i.auc_se),
        hand_till: best.and_then(|(_, e)| e.hand_till),
        ber: best.map(|(_, e)| e.ber),
        surrogate: best.map(|(name, _)| (*name).to_string()),
        surrogates: evaluations
            .iter()
            .map(|(name, e)| ((*name).to_string(), e.estimate.auc))
            .collect(),
        surrogate_intervals: evaluations
            .iter()
            .map(|(name, e)| ((*name).to_string(), e.interval()))
            .collect::<BTreeMap<_, _>>(),
        flag,
        accepted: None,
        composition: (flag != Flag::Clear)
            .then(|| composition(column, &table, target, options.min_cell)),
        roc: None,
        outcome: None,
    };
    let roc = best_scores.map(|(_, scores)| roc(&scores, target));
    (result, roc)
}
