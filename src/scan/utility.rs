//! The outcome side of the removal plan: what each feature set the plan
//! weighs is worth for the outcome, the rule that trades leakage removed
//! against utility lost, and the frontier of the sets the plan visits.

use super::ScanOptions;
use super::evaluate::{Evaluation, Target, evaluate};
use super::plan::chance_evaluation;
use crate::data::{EncodedColumn, ProtectedAttribute};
use crate::report::FrontierPoint;
use crate::surrogate::{BoostedSurrogate, cross_fit};
use std::collections::HashMap;
use std::sync::Mutex;
use std::sync::atomic::{AtomicUsize, Ordering};

/// Outcome AUC lost per feature removed below which losses count as equal
/// (our choice: half a hundredth of AUC, under the refit-to-refit spread of
/// an out-of-fold AUC on a few thousand rows), so that a removal that costs
/// nothing is ranked by the leakage it removes per feature, as without an
/// outcome, and never divides by zero.
pub const LOSS_FLOOR: f64 = 0.005;

/// Default `--max-utility-loss`: the outcome AUC the recommended set may
/// lose against the full set. Our choice: 0.02 is twice the spread between
/// outcome AUCs that the report's 95% intervals resolve on a few thousand
/// rows (half-width about 0.01 at 20,000 rows), so the recommended set's loss
/// is a real but small one a reviewer can weigh.
pub const DEFAULT_MAX_UTILITY_LOSS: f64 = 0.02;

/// The boosted model's out-of-fold outcome AUC from a set of features (plain
/// columns, the outcome's own stratified folds, as `whole_set.outcome`),
/// cached by set; the fits are counted.
pub struct Utility<'a> {
    features: &'a [EncodedColumn],
    outcome: Target<'a>,
    fits: AtomicUsize,
    known: Mutex<HashMap<Vec<usize>, Option<Evaluation>>>,
}

impl<'a> Utility<'a> {
    pub fn new(
        features: &'a [EncodedColumn],
        outcome: &'a ProtectedAttribute,
        options: &ScanOptions,
    ) -> Self {
        Self {
            features,
            outcome: Target::new(outcome, options.folds, options.seed),
            fits: AtomicUsize::new(0),
            known: Mutex::new(HashMap::new()),
        }
    }

    /// Outcome cross-fits run so far.
    pub fn fits(&self) -> usize {
        self.fits.load(Ordering::Relaxed)
    }

    /// The outcome measures of `set` (sorted feature indices): chance with
    /// nothing left, `None` when the model cannot be fitted.
    pub fn of(&self, set: &[usize]) -> Option<Evaluation> {
        if let Some(known) = self.lock().get(set) {
            return known.clone();
        }
        let result = if set.is_empty() {
            let all: Vec<usize> = (0..self.features.len()).collect();
            self.of(&all).map(|full| chance_evaluation(&full))
        } else {
            self.fits.fetch_add(1, Ordering::Relaxed);
            let columns: Vec<&EncodedColumn> = set.iter().map(|&i| &self.features[i]).collect();
            let target = &self.outcome;
            cross_fit(
                &BoostedSurrogate::default(),
                &columns,
                target.codes(),
                target.n_classes(),
                &target.folds,
                target.n_folds,
            )
            .ok()
            .and_then(|scores| evaluate(&scores, target))
        };
        self.lock().insert(set.to_vec(), result.clone());
        result
    }

    fn lock(&self) -> std::sync::MutexGuard<'_, HashMap<Vec<usize>, Option<Evaluation>>> {
        self.known
            .lock()
            .unwrap_or_else(std::sync::PoisonError::into_inner)
    }
}

/// The step rule with an outcome: leakage AUC removed per unit of outcome
/// AUC lost, the loss floored at [`LOSS_FLOOR`] per feature removed. Among
/// removals that cost (next to) nothing it ranks by leakage removed per
/// feature, the rule without an outcome; a removal that costs utility must
/// remove proportionally more leakage. Only removals that lower the leakage
/// AUC are weighed at all.
#[must_use]
pub fn tradeoff(leakage_drop: f64, utility_loss: f64, removed: usize) -> f64 {
    leakage_drop / utility_loss.max(LOSS_FLOOR * removed as f64)
}

/// The frontier set with the lowest leakage AUC among those whose outcome
/// AUC is at most `max_loss` below the first (full) set's; the earlier set on
/// a tie. The full set always qualifies.
#[must_use]
pub fn within_tolerance(frontier: &[FrontierPoint], max_loss: f64) -> Option<FrontierPoint> {
    let full = frontier.first()?.outcome.auc;
    frontier
        .iter()
        .filter(|p| p.outcome.auc >= full - max_loss)
        .min_by(|a, b| {
            a.leakage
                .auc
                .total_cmp(&b.leakage.auc)
                .then(a.steps.cmp(&b.steps))
        })
        .cloned()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::AucInterval;

    fn point(steps: usize, leakage: f64, outcome: f64) -> FrontierPoint {
        let interval = |auc: f64| AucInterval {
            auc,
            auc_low: auc - 0.01,
            auc_high: auc + 0.01,
            auc_se: 0.005,
        };
        FrontierPoint {
            steps,
            removed: (0..steps).map(|s| format!("f{s}")).collect(),
            leakage: interval(leakage),
            outcome: interval(outcome),
        }
    }

    #[test]
    fn the_named_set_cuts_leakage_most_within_the_tolerance() {
        let frontier = [
            point(0, 0.95, 0.80),
            point(1, 0.85, 0.795),
            point(2, 0.70, 0.781),
            point(3, 0.55, 0.70),
        ];
        let chosen = within_tolerance(&frontier, 0.02).expect("the full set qualifies");
        assert_eq!(chosen.steps, 2);
        assert_eq!(within_tolerance(&frontier, 0.0).map(|p| p.steps), Some(0));
        assert_eq!(within_tolerance(&frontier, 0.2).map(|p| p.steps), Some(3));
    }

    #[test]
    fn a_free_removal_ranks_by_leakage_per_feature_and_a_costly_one_pays_for_its_loss() {
        // Below the floor, losses are equal: two features that remove 0.10
        // weigh as one that removes 0.05.
        assert!((tradeoff(0.10, 0.0, 2) - tradeoff(0.05, 0.001, 1)).abs() < 1e-12);
        // A removal that costs 0.05 outcome AUC must remove ten times the
        // leakage of a free one to rank level with it.
        assert!(tradeoff(0.20, 0.05, 1) < tradeoff(0.03, 0.0, 1));
        assert!(tradeoff(0.31, 0.05, 1) > tradeoff(0.03, 0.0, 1));
    }
}
