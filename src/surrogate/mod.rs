//! Surrogate models that try to rebuild a protected attribute from features.
//!
//! Each surrogate is a parameter value whose `fit` on training rows yields a
//! fitted model that scores other rows; [`cross_fit`] only knows this trait,
//! so nothing is ever scored on rows it was fitted on.

pub mod boosted;
pub mod frequency;
pub mod logistic;
pub mod tree;

pub use boosted::BoostedSurrogate;
pub use frequency::FrequencySurrogate;
pub use logistic::LogisticSurrogate;
pub use tree::TreeSurrogate;

use crate::data::EncodedColumn;
use rayon::prelude::*;
use thiserror::Error;

/// A surrogate could not be fitted (it is then left out of the report with the reason).
#[derive(Debug, Error)]
#[error("{model}: {reason}")]
pub struct SurrogateError {
    pub model: &'static str,
    pub reason: String,
}

/// Parameters of one surrogate.
pub trait Surrogate: Sync {
    /// Name used in reports (`frequency`, `logistic`, `tree`, `boosted`).
    fn name(&self) -> &'static str;

    /// Fits on `train` rows of `columns` to predict `target` (class codes `0..n_classes`).
    fn fit(
        &self,
        columns: &[&EncodedColumn],
        target: &[u32],
        n_classes: usize,
        train: &[usize],
    ) -> Result<Box<dyn Fitted>, SurrogateError>;
}

/// A fitted surrogate.
pub trait Fitted: Send {
    /// Class probabilities for `rows`, row-major (`rows.len() × n_classes`).
    fn predict_proba(&self, columns: &[&EncodedColumn], rows: &[usize]) -> Vec<f64>;
}

/// Out-of-fold class probabilities for every row, row-major.
#[derive(Debug, Clone, PartialEq)]
pub struct Scores {
    pub n_classes: usize,
    pub proba: Vec<f64>,
}

impl Scores {
    /// Probability of class `class` for every row.
    #[must_use]
    pub fn column(&self, class: usize) -> Vec<f64> {
        self.proba
            .iter()
            .skip(class)
            .step_by(self.n_classes)
            .copied()
            .collect()
    }
}

/// Fits `model` on all folds but one and scores the held-out fold, for each fold.
///
/// Folds are fitted in parallel; each fold writes only its own rows, so the
/// result is the same at any thread count.
pub fn cross_fit(
    model: &dyn Surrogate,
    columns: &[&EncodedColumn],
    target: &[u32],
    n_classes: usize,
    folds: &[u8],
    n_folds: usize,
) -> Result<Scores, SurrogateError> {
    let per_fold: Vec<(Vec<usize>, Vec<f64>)> = (0..n_folds as u8)
        .into_par_iter()
        .map(|fold| {
            let (train, held_out) = crate::data::folds::split(folds, fold);
            let fitted = model.fit(columns, target, n_classes, &train)?;
            let predicted = fitted.predict_proba(columns, &held_out);
            Ok((held_out, predicted))
        })
        .collect::<Result<_, SurrogateError>>()?;
    let mut proba = vec![0.0; target.len() * n_classes];
    for (held_out, predicted) in &per_fold {
        for (&row, p) in held_out.iter().zip(predicted.chunks_exact(n_classes)) {
            proba[row * n_classes..(row + 1) * n_classes].copy_from_slice(p);
        }
    }
    Ok(Scores { n_classes, proba })
}

/// Share of each class among the `train` rows (the training-fold prior).
#[must_use]
pub fn class_shares(target: &[u32], n_classes: usize, train: &[usize]) -> Vec<f64> {
    let mut counts = vec![0.0; n_classes];
    for &row in train {
        counts[target[row] as usize] += 1.0;
    }
    let total = train.len().max(1) as f64;
    counts.iter_mut().for_each(|c| *c /= total);
    counts
}

/// Checks the inputs every surrogate shares: columns present and rows to fit on.
fn check_inputs(
    model: &'static str,
    columns: &[&EncodedColumn],
    n_classes: usize,
    train: &[usize],
) -> Result<(), SurrogateError> {
    let reason = if columns.is_empty() {
        "no feature column given"
    } else if train.is_empty() {
        "no training rows"
    } else if n_classes < 2 {
        "the protected attribute has fewer than two classes"
    } else {
        return Ok(());
    };
    Err(SurrogateError {
        model,
        reason: reason.to_string(),
    })
}

/// Scales `values` in place so they sum to one (left unchanged when the sum is not positive).
fn normalise(values: &mut [f64]) {
    let total: f64 = values.iter().sum();
    if total > 0.0 {
        values.iter_mut().for_each(|v| *v /= total);
    }
}
