//! Turning out-of-fold surrogate scores into the reported measures.

use crate::data::ProtectedAttribute;
use crate::data::folds::stratified_folds;
use crate::report::AucInterval;
use crate::stats::auc::{self, AucComparison, AucEstimate};
use crate::stats::ber::balanced_error_rate;
use crate::stats::heldout::heldout_information;
use crate::surrogate::{FoldedTarget, Scores};

/// The protected attribute being rebuilt, with its folds.
pub struct Target<'a> {
    pub attribute: &'a ProtectedAttribute,
    /// Rows of the positive class (binary attributes).
    pub positive: Vec<bool>,
    pub folds: Vec<u8>,
    pub n_folds: usize,
}

impl<'a> Target<'a> {
    pub fn new(attribute: &'a ProtectedAttribute, n_folds: usize, seed: u64) -> Self {
        Self {
            attribute,
            positive: attribute.positive_indicator(),
            folds: stratified_folds(&attribute.codes, attribute.n_classes(), n_folds, seed),
            n_folds,
        }
    }

    pub fn n_classes(&self) -> usize {
        self.attribute.n_classes()
    }

    pub fn codes(&self) -> &[u32] {
        &self.attribute.codes
    }

    /// The class codes with their folds, as the surrogates take them.
    pub fn folded(&self) -> FoldedTarget<'_> {
        FoldedTarget {
            classes: &self.attribute.codes,
            n_classes: self.n_classes(),
            folds: &self.folds,
            n_folds: self.n_folds,
        }
    }
}

/// Measures of one set of out-of-fold scores.
#[derive(Debug, Clone)]
pub struct Evaluation {
    pub estimate: AucEstimate,
    pub hand_till: Option<f64>,
    pub ber: f64,
    pub heldout_info_nats: f64,
}

impl Evaluation {
    pub fn interval(&self) -> AucInterval {
        AucInterval {
            auc: self.estimate.auc,
            auc_low: self.estimate.low,
            auc_high: self.estimate.high,
            auc_se: self.estimate.se,
        }
    }
}

/// AUC with DeLong interval (binary: positive class; multi-class: macro one-vs-rest
/// with Hand & Till's M), balanced error rate and held-out information.
pub fn evaluate(scores: &Scores, target: &Target<'_>) -> Option<Evaluation> {
    let k = target.n_classes();
    let (estimate, hand_till) = if target.attribute.is_binary() {
        let positive_scores = scores.column(target.attribute.positive as usize);
        (auc::delong(&positive_scores, &target.positive)?, None)
    } else {
        (
            crate::stats::macro_ovr(&scores.proba, k, target.codes())?,
            crate::stats::hand_till(&scores.proba, k, target.codes()),
        )
    };
    Some(Evaluation {
        estimate,
        hand_till,
        ber: balanced_error_rate(&scores.proba, k, target.codes()),
        heldout_info_nats: heldout_information(&scores.proba, k, target.codes()),
    })
}

/// Cross-validated AUC: the mean over folds of the held-out fold's AUC
/// (binary: positive class; multi-class: macro one-vs-rest), the CV-AUC of
/// LeDell, Petersen & van der Laan (2015, EJS 9, §2); folds lacking a class
/// are left out. The same quantity the frequency surrogate's count table
/// gives (see [`crate::surrogate::CountTable::auc`]), so every surrogate's
/// AUC in a report means the same thing.
pub fn fold_mean_auc(scores: &Scores, target: &Target<'_>) -> Option<f64> {
    let k = target.n_classes();
    let class = target.attribute.positive as usize;
    let per_fold: Vec<f64> = (0..target.n_folds as u8)
        .filter_map(|fold| {
            let (_, rows) = crate::data::folds::split(&target.folds, fold);
            if target.attribute.is_binary() {
                let s: Vec<f64> = rows.iter().map(|&r| scores.proba[r * k + class]).collect();
                let p: Vec<bool> = rows.iter().map(|&r| target.positive[r]).collect();
                auc::auc_from_scores(&s, &p)
            } else {
                let proba: Vec<f64> = rows
                    .iter()
                    .flat_map(|&r| scores.proba[r * k..(r + 1) * k].iter().copied())
                    .collect();
                let labels: Vec<u32> = rows.iter().map(|&r| target.codes()[r]).collect();
                crate::stats::macro_ovr(&proba, k, &labels).map(|e| e.auc)
            }
        })
        .collect();
    (!per_fold.is_empty()).then(|| per_fold.iter().sum::<f64>() / per_fold.len() as f64)
}

/// DeLong's test of two correlated AUCs on the same rows.
pub fn compare(a: &Scores, b: &Scores, target: &Target<'_>) -> Option<AucComparison> {
    if target.attribute.is_binary() {
        let class = target.attribute.positive as usize;
        auc::delong_compare(&a.column(class), &b.column(class), &target.positive)
    } else {
        crate::stats::macro_ovr_compare(&a.proba, &b.proba, target.n_classes(), target.codes())
    }
}

/// ROC points of the scores for the report's charts (binary: positive class;
/// multi-class: the positive class is the first class scored one-vs-rest).
pub fn roc(scores: &Scores, target: &Target<'_>) -> Vec<[f64; 2]> {
    let class = target.attribute.positive as usize;
    let positive: Vec<bool> = if target.attribute.is_binary() {
        target.positive.clone()
    } else {
        target
            .codes()
            .iter()
            .map(|&c| c as usize == class)
            .collect()
    };
    auc::roc_curve(&scores.column(class), &positive, 101)
}
