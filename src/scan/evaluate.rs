//! Turning out-of-fold surrogate scores into the reported measures.

use crate::data::ProtectedAttribute;
use crate::data::folds::stratified_folds;
use crate::report::AucInterval;
use crate::stats::auc::{self, AucComparison, AucEstimate};
use crate::stats::ber::balanced_error_rate;
use crate::stats::heldout::heldout_information;
use crate::surrogate::Scores;

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
