//! Whole-set attack: the boosted surrogate on every feature, drop-one
//! ablation, and the greedy removal plan.

use super::evaluate::{Evaluation, Target, compare, evaluate, roc};
use super::{Progress, ScanOptions};
use crate::data::EncodedColumn;
use crate::report::{DropOne, RemovalStep, WholeSet};
use crate::surrogate::{BoostedSurrogate, Scores, Surrogate, cross_fit};
use rayon::prelude::*;

/// The boosted attacker's out-of-fold scores and measures on a feature subset.
struct Attack {
    scores: Scores,
    evaluation: Evaluation,
}

fn attack(features: &[EncodedColumn], subset: &[usize], target: &Target<'_>) -> Option<Attack> {
    let model = BoostedSurrogate::default();
    let columns: Vec<&EncodedColumn> = subset.iter().map(|&i| &features[i]).collect();
    let scores = cross_fit(
        &model,
        &columns,
        target.codes(),
        target.n_classes(),
        &target.folds,
        target.n_folds,
    )
    .ok()?;
    let evaluation = evaluate(&scores, target)?;
    Some(Attack { scores, evaluation })
}

fn without(subset: &[usize], feature: usize) -> Vec<usize> {
    subset.iter().copied().filter(|&i| i != feature).collect()
}

/// Whole-set AUC with interval, BER, drop-one ablation and removal plan.
pub fn scan_whole_set(
    features: &[EncodedColumn],
    target: &Target<'_>,
    options: &ScanOptions,
    progress: &dyn Progress,
) -> Option<WholeSet> {
    let all: Vec<usize> = (0..features.len()).collect();
    progress.stage(&format!("whole set: {}", target.attribute.name), 1);
    let full = attack(features, &all, target)?;
    progress.advance(1);
    progress.stage(
        &format!("drop-one: {}", target.attribute.name),
        features.len() as u64,
    );
    let drops: Vec<(usize, Option<Attack>)> = if features.len() > 1 {
        all.par_iter()
            .map(|&i| {
                let result = attack(features, &without(&all, i), target);
                progress.advance(1);
                (i, result)
            })
            .collect()
    } else {
        Vec::new()
    };
    let drop_one = drops
        .iter()
        .filter_map(|(i, a)| {
            let a = a.as_ref()?;
            let interval = a.evaluation.interval();
            Some(DropOne {
                feature: features[*i].name.clone(),
                auc: interval.auc,
                auc_low: interval.auc_low,
                auc_high: interval.auc_high,
                delta: full.evaluation.estimate.auc - interval.auc,
                p_value: compare(&full.scores, &a.scores, target).map(|c| c.p_value),
            })
        })
        .collect();
    let first_step: Vec<(usize, Evaluation)> = drops
        .into_iter()
        .filter_map(|(i, a)| Some((i, a?.evaluation)))
        .collect();
    let (removal_plan, target_reached) = removal_plan(
        features,
        target,
        options,
        &full.evaluation,
        first_step,
        progress,
    );
    let interval = full.evaluation.interval();
    Some(WholeSet {
        auc: interval.auc,
        auc_low: interval.auc_low,
        auc_high: interval.auc_high,
        auc_se: interval.auc_se,
        ber: full.evaluation.ber,
        hand_till: full.evaluation.hand_till,
        surrogate: BoostedSurrogate::default().name().to_string(),
        features_used: features.len(),
        roc: Some(roc(&full.scores, target)),
        drop_one,
        removal_plan,
        target_reached,
    })
}

/// Greedy plan: each step removes the candidate whose removal lowers the
/// whole-set AUC most, until the AUC is below the target or no feature is
/// left. The first step weighs every feature (the drop-one results); later
/// steps re-fit only the `removal_candidates` features that cost the most at
/// the previous step, a documented budget that keeps the plan to O(F) fits.
fn removal_plan(
    features: &[EncodedColumn],
    target: &Target<'_>,
    options: &ScanOptions,
    full: &Evaluation,
    first_step: Vec<(usize, Evaluation)>,
    progress: &dyn Progress,
) -> (Vec<RemovalStep>, bool) {
    let mut remaining: Vec<usize> = (0..features.len()).collect();
    let mut candidates = first_step;
    let mut steps = Vec::new();
    let mut auc = full.estimate.auc;
    if features.len() == 1 {
        candidates = vec![(0, chance_evaluation(full))];
    }
    progress.stage(
        &format!("removal plan: {}", target.attribute.name),
        features.len() as u64,
    );
    while auc >= options.target_auc && !candidates.is_empty() {
        candidates.sort_by(|a, b| {
            a.1.estimate
                .auc
                .total_cmp(&b.1.estimate.auc)
                .then(a.0.cmp(&b.0))
        });
        let (removed, evaluation) = candidates.remove(0);
        remaining.retain(|&i| i != removed);
        auc = evaluation.estimate.auc;
        let interval = evaluation.interval();
        steps.push(RemovalStep {
            remove: features[removed].name.clone(),
            auc_after: interval.auc,
            auc_low: interval.auc_low,
            auc_high: interval.auc_high,
        });
        progress.advance(1);
        if auc < options.target_auc || remaining.is_empty() {
            break;
        }
        let next: Vec<usize> = candidates
            .iter()
            .take(options.removal_candidates)
            .map(|(i, _)| *i)
            .collect();
        candidates = if remaining.len() == 1 {
            vec![(remaining[0], chance_evaluation(full))]
        } else {
            next.par_iter()
                .filter_map(|&i| {
                    Some((
                        i,
                        attack(features, &without(&remaining, i), target)?.evaluation,
                    ))
                })
                .collect()
        };
    }
    (steps, auc < options.target_auc)
}

/// With no feature left, an attacker can only guess: AUC ½ exactly.
fn chance_evaluation(full: &Evaluation) -> Evaluation {
    let mut chance = full.clone();
    chance.estimate.auc = 0.5;
    chance.estimate.low = 0.5;
    chance.estimate.high = 0.5;
    chance.estimate.se = 0.0;
    chance.estimate.variance = 0.0;
    chance.hand_till = chance.hand_till.map(|_| 0.5);
    chance
}

/// Whole-set AUC without and with the `added` features, and DeLong's test
/// of the difference (same rows, same folds).
pub fn added_features_effect(
    features: &[EncodedColumn],
    added: &[usize],
    target: &Target<'_>,
) -> Option<crate::report::AddedSourceEffect> {
    let all: Vec<usize> = (0..features.len()).collect();
    let base: Vec<usize> = all.iter().copied().filter(|i| !added.contains(i)).collect();
    let with = attack(features, &all, target)?;
    let without = if base.is_empty() {
        None
    } else {
        attack(features, &base, target)
    };
    let auc_with = with.evaluation.interval();
    let Some(without) = without else {
        let chance = chance_evaluation(&with.evaluation).interval();
        return Some(crate::report::AddedSourceEffect {
            protected: target.attribute.name.clone(),
            auc_without: chance,
            auc_with,
            difference: auc_with.auc - 0.5,
            p_value: None,
        });
    };
    let comparison = compare(&with.scores, &without.scores, target)?;
    Some(crate::report::AddedSourceEffect {
        protected: target.attribute.name.clone(),
        auc_without: without.evaluation.interval(),
        auc_with,
        difference: auc_with.auc - without.evaluation.estimate.auc,
        p_value: Some(comparison.p_value),
    })
}
