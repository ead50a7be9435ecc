//! Surrogate models that try to rebuild a protected attribute from features.
//!
//! Each surrogate is a parameter value whose `fit` on training rows yields a
//! fitted model that scores other rows; [`cross_fit`] only knows this trait,
//! so nothing is ever scored on rows it was fitted on.

use crate::data::EncodedColumn;
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
pub fn cross_fit(
    model: &dyn Surrogate,
    columns: &[&EncodedColumn],
    target: &[u32],
    n_classes: usize,
    folds: &[u8],
    n_folds: usize,
) -> Result<Scores, SurrogateError> {
    let mut proba = vec![0.0; target.len() * n_classes];
    for fold in 0..n_folds as u8 {
        let (train, held_out) = crate::data::folds::split(folds, fold);
        let fitted = model.fit(columns, target, n_classes, &train)?;
        let predicted = fitted.predict_proba(columns, &held_out);
        for (i, &row) in held_out.iter().enumerate() {
            proba[row * n_classes..(row + 1) * n_classes]
                .copy_from_slice(&predicted[i * n_classes..(i + 1) * n_classes]);
        }
    }
    Ok(Scores { n_classes, proba })
}
