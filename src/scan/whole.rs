//! Whole-set attack: the boosted surrogate on every feature, drop-one
//! ablation, and the greedy removal plan.

use super::evaluate::{Evaluation, Target, compare, evaluate, roc};
use super::{Progress, ScanOptions};
use crate::data::encode::combine_codes;
use crate::data::sample::stratified_sample;
use crate::data::{EncodedColumn, FeatureKind};
use crate::report::{DropOne, RemovalStep, WholeSet};
use crate::surrogate::{BoostedSurrogate, Scores, Surrogate, cross_fit};
use rayon::prelude::*;

/// The boosted attacker's out-of-fold scores and measures on a feature subset.
struct Attack {
    scores: Scores,
    evaluation: Evaluation,
}

/// The features, plus joint columns for pairs that leak mainly together.
///
/// Greedy tree growth cannot find a proxy that exists only in a pair (an
/// exclusive-or pattern: neither first split gains anything), so the pairs the
/// pair scan found with a large gain are handed to the attacker as one joint
/// categorical column each, present only while both members are.
pub struct AttackInputs<'a> {
    pub features: &'a [EncodedColumn],
    pub joints: Vec<(usize, usize, EncodedColumn)>,
}

impl<'a> AttackInputs<'a> {
    /// Joint columns for up to `MAX_JOINTS` reported pairs with gain ≥ `JOINT_GAIN`.
    pub fn new(features: &'a [EncodedColumn], pairs: &[crate::report::PairResult]) -> Self {
        let index = |name: &str| features.iter().position(|f| f.name == name);
        let joints = pairs
            .iter()
            .filter(|p| p.gain >= JOINT_GAIN)
            .take(MAX_JOINTS)
            .filter_map(|p| {
                let (a, b) = (index(&p.features[0])?, index(&p.features[1])?);
                let (codes, levels) =
                    combine_codes(&features[a].codes, &features[b].codes, features[b].n_levels);
                let column = EncodedColumn {
                    name: format!("{} × {}", features[a].name, features[b].name),
                    kind: FeatureKind::Categorical,
                    codes,
                    n_levels: levels,
                    labels: (0..levels).map(|l| l.to_string()).collect(),
                    missing_code: None,
                    raw: None,
                    missing_count: 0,
                };
                Some((a, b, column))
            })
            .collect();
        Self { features, joints }
    }
}

/// Pair gain from which the pair is given to the attacker as a joint column.
const JOINT_GAIN: f64 = 0.05;
/// Joint columns at most.
const MAX_JOINTS: usize = 5;

fn attack(inputs: &AttackInputs<'_>, subset: &[usize], target: &Target<'_>) -> Option<Attack> {
    let model = BoostedSurrogate::default();
    let joints = inputs
        .joints
        .iter()
        .filter(|(a, b, _)| subset.contains(a) && subset.contains(b))
        .map(|(_, _, column)| column);
    let columns: Vec<&EncodedColumn> = subset
        .iter()
        .map(|&i| &inputs.features[i])
        .chain(joints)
        .collect();
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
    inputs: &AttackInputs<'_>,
    target: &Target<'_>,
    options: &ScanOptions,
    progress: &dyn Progress,
) -> Option<WholeSet> {
    let features = inputs.features;
    let all: Vec<usize> = (0..features.len()).collect();
    progress.stage(&format!("whole set: {}", target.attribute.name), 1);
    let full = attack(inputs, &all, target)?;
    progress.advance(1);
    let (drop_one, removal_plan, target_reached, ablation_rows) = if options.ablation {
        sampled_ablation(inputs, target, options, &full, progress)
    } else {
        (Vec::new(), Vec::new(), false, None)
    };
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
        outcome: None,
        protected_auc_within_outcome: None,
        ablation: options.ablation,
        ablation_rows,
    })
}

/// Drop-one ablation and removal plan, with the rows they ran on when sampled.
type AblationResult = (Vec<DropOne>, Vec<RemovalStep>, bool, Option<usize>);

/// The ablation on every row, or, above `ablation_rows` rows, on a seeded
/// sample stratified by the protected attribute: every drop and every plan
/// step refits the attacker, so the sample bounds a cost that otherwise grows
/// with rows × features. The full set is refitted on the sample, so every
/// comparison (delta, DeLong's paired test, the plan's stopping rule) is
/// between fits on the same rows.
fn sampled_ablation(
    inputs: &AttackInputs<'_>,
    target: &Target<'_>,
    options: &ScanOptions,
    full: &Attack,
    progress: &dyn Progress,
) -> AblationResult {
    let attribute = target.attribute;
    if attribute.codes.len() <= options.ablation_rows {
        let (drops, plan, reached) = ablation(inputs, target, options, full, progress);
        return (drops, plan, reached, None);
    }
    let rows = stratified_sample(
        &attribute.codes,
        attribute.n_classes(),
        options.ablation_rows,
        options.seed,
    );
    let sampled_attribute = attribute.select_rows(&rows);
    let sampled_target = Target::new(&sampled_attribute, options.folds, options.seed);
    let features: Vec<EncodedColumn> = inputs
        .features
        .iter()
        .map(|f| f.select_rows(&rows))
        .collect();
    let sampled_inputs = AttackInputs {
        features: &features,
        joints: inputs
            .joints
            .iter()
            .map(|(a, b, joint)| (*a, *b, joint.select_rows(&rows)))
            .collect(),
    };
    let all: Vec<usize> = (0..features.len()).collect();
    let Some(sampled_full) = attack(&sampled_inputs, &all, &sampled_target) else {
        return (Vec::new(), Vec::new(), false, Some(rows.len()));
    };
    let (drops, plan, reached) = ablation(
        &sampled_inputs,
        &sampled_target,
        options,
        &sampled_full,
        progress,
    );
    (drops, plan, reached, Some(rows.len()))
}

/// Drop-one ablation (every feature, DeLong p-value against the full set)
/// and the removal plan that starts from it.
fn ablation(
    inputs: &AttackInputs<'_>,
    target: &Target<'_>,
    options: &ScanOptions,
    full: &Attack,
    progress: &dyn Progress,
) -> (Vec<DropOne>, Vec<RemovalStep>, bool) {
    let features = inputs.features;
    let all: Vec<usize> = (0..features.len()).collect();
    progress.stage(
        &format!("drop-one: {}", target.attribute.name),
        features.len() as u64,
    );
    let drops: Vec<(usize, Option<Attack>)> = if features.len() > 1 {
        all.par_iter()
            .map(|&i| {
                let result = attack(inputs, &without(&all, i), target);
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
        inputs,
        target,
        options,
        &full.evaluation,
        first_step,
        progress,
    );
    (drop_one, removal_plan, target_reached)
}

/// Greedy plan: each step removes the candidate whose removal lowers the
/// whole-set AUC most, until the AUC is below the target or no feature is
/// left. The first step weighs every feature (the drop-one results); later
/// steps re-fit only the `removal_candidates` features that cost the most at
/// the previous step, a documented budget that keeps the plan to O(F) fits.
fn removal_plan(
    inputs: &AttackInputs<'_>,
    target: &Target<'_>,
    options: &ScanOptions,
    full: &Evaluation,
    first_step: Vec<(usize, Evaluation)>,
    progress: &dyn Progress,
) -> (Vec<RemovalStep>, bool) {
    let features = inputs.features;
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
                        attack(inputs, &without(&remaining, i), target)?.evaluation,
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
    inputs: &AttackInputs<'_>,
    added: &[usize],
    target: &Target<'_>,
) -> Option<crate::report::AddedSourceEffect> {
    let features = inputs.features;
    let all: Vec<usize> = (0..features.len()).collect();
    let base: Vec<usize> = all.iter().copied().filter(|i| !added.contains(i)).collect();
    let with = attack(inputs, &all, target)?;
    let without = if base.is_empty() {
        None
    } else {
        attack(inputs, &base, target)
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
