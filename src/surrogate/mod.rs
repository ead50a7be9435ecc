//! Surrogate models that try to rebuild a protected attribute from features.
//!
//! Each surrogate is a parameter value whose `fit` on training rows yields a
//! fitted model that scores other rows; [`cross_fit`] only knows this trait,
//! so nothing is ever scored on rows it was fitted on.

pub(crate) mod boosted;
pub(crate) mod count_table;
pub(crate) mod frequency;
pub(crate) mod logistic;
#[cfg(test)]
mod oracles;
#[cfg(test)]
mod reference;
pub(crate) mod tree;

pub use boosted::BoostedSurrogate;
pub use count_table::CountTable;
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

    /// Out-of-fold class probabilities for every row. By default each fold is
    /// fitted and scored on its own; a model that can share work across folds
    /// overrides this with the same result.
    fn out_of_fold(
        &self,
        columns: &[&EncodedColumn],
        target: FoldedTarget<'_>,
    ) -> Result<Scores, SurrogateError> {
        fold_by_fold(self, columns, target)
    }
}

/// Class codes of the protected attribute (`0..n_classes`) and the fold of each row.
#[derive(Debug, Clone, Copy)]
pub struct FoldedTarget<'a> {
    pub classes: &'a [u32],
    pub n_classes: usize,
    pub folds: &'a [u8],
    pub n_folds: usize,
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

/// Out-of-fold probabilities of `model`: every row is scored by a model
/// fitted on the other folds only.
pub fn cross_fit(
    model: &dyn Surrogate,
    columns: &[&EncodedColumn],
    target: &[u32],
    n_classes: usize,
    folds: &[u8],
    n_folds: usize,
) -> Result<Scores, SurrogateError> {
    let target = FoldedTarget {
        classes: target,
        n_classes,
        folds,
        n_folds,
    };
    model.out_of_fold(columns, target)
}

/// Fits `model` on all folds but one and scores the held-out fold, for each fold.
///
/// Folds are fitted in parallel; each fold writes only its own rows, so the
/// result is the same at any thread count.
fn fold_by_fold<S: Surrogate + ?Sized>(
    model: &S,
    columns: &[&EncodedColumn],
    folded: FoldedTarget<'_>,
) -> Result<Scores, SurrogateError> {
    let (target, n_classes) = (folded.classes, folded.n_classes);
    let per_fold: Vec<(Vec<usize>, Vec<f64>)> = (0..folded.n_folds as u8)
        .into_par_iter()
        .map(|fold| {
            let (train, held_out) = crate::data::folds::split(folded.folds, fold);
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

/// Class counts per (code, fold) over all rows: the training counts of any
/// fold are the total minus that fold's, so one pass serves every fold.
pub(crate) struct FoldCounts {
    n_folds: usize,
    pub(crate) k: usize,
    /// `levels × n_folds × k`.
    counts: Vec<u32>,
}

impl FoldCounts {
    pub(crate) fn new(codes: &[u32], levels: usize, target: FoldedTarget<'_>) -> Self {
        let (n_folds, k) = (target.n_folds, target.n_classes);
        let mut counts = vec![0u32; levels * n_folds * k];
        for ((&code, &class), &fold) in codes.iter().zip(target.classes).zip(target.folds) {
            counts[(code as usize * n_folds + fold as usize) * k + class as usize] += 1;
        }
        Self { n_folds, k, counts }
    }

    /// Class counts of `code` in every fold but `fold`, into `out`.
    pub(crate) fn training(&self, code: u32, fold: u8, out: &mut [f64]) {
        let start = code as usize * self.n_folds * self.k;
        let block = &self.counts[start..start + self.n_folds * self.k];
        out.fill(0.0);
        for (f, per_fold) in block.chunks_exact(self.k).enumerate() {
            if f != usize::from(fold) {
                out.iter_mut()
                    .zip(per_fold)
                    .for_each(|(o, &c)| *o += f64::from(c));
            }
        }
    }

    /// Training counts of every code for `fold`: `levels × k`.
    pub(crate) fn training_table(&self, fold: u8) -> Vec<f64> {
        let levels = self.counts.len() / (self.n_folds * self.k);
        let mut table = vec![0.0; levels * self.k];
        for (code, out) in table.chunks_exact_mut(self.k).enumerate() {
            self.training(code as u32, fold, out);
        }
        table
    }
}

/// One column's rows as indices into its distinct values, ascending, with
/// missing raw values last (index = number of values). A column of codes has
/// one value per level, its code (the missing level −1, ordered first); a
/// numeric column has the distinct values it was encoded with, and gives
/// `None` when they are not indexed or exceed `limit`. Single-column
/// surrogates fit on these values' class counts instead of on rows.
pub(crate) fn distinct_values(
    column: &EncodedColumn,
    limit: usize,
) -> Option<(Vec<f64>, Vec<u32>)> {
    if let Some(raw) = &column.raw {
        let (distinct, index) = raw.indexed().filter(|(d, _)| d.len() <= limit)?;
        return Some((distinct.to_vec(), index.to_vec()));
    }
    let missing = column.missing_code;
    let order: Vec<u32> = missing
        .into_iter()
        .chain((0..column.n_levels).filter(|&c| Some(c) != missing))
        .collect();
    let mut rank_of = vec![0u32; order.len()];
    for (rank, &code) in order.iter().enumerate() {
        rank_of[code as usize] = rank as u32;
    }
    let values = order
        .iter()
        .map(|&c| {
            if Some(c) == missing {
                -1.0
            } else {
                f64::from(c)
            }
        })
        .collect();
    let of_row = column.codes.iter().map(|&c| rank_of[c as usize]).collect();
    Some((values, of_row))
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
    n_train: usize,
) -> Result<(), SurrogateError> {
    let reason = if columns.is_empty() {
        "no feature column given"
    } else if n_train == 0 {
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

/// Small seeded data sets shared by the surrogate unit tests.
#[cfg(test)]
pub(crate) mod testing {
    use crate::data::encode::{encode_levels, encode_numeric};
    use crate::data::{EncodedColumn, FeatureKind};
    use crate::rng::SplitMix64;

    /// `n` rows: a class in `0..k`, a numeric column shifted by the class (with
    /// about 5% missing, more often for class 0), and a 6-level categorical
    /// column loosely tied to the class.
    pub fn toy(n: usize, k: u32, seed: u64) -> (Vec<EncodedColumn>, Vec<u32>) {
        let mut rng = SplitMix64::new(seed);
        let target: Vec<u32> = (0..n).map(|_| rng.below(k as usize) as u32).collect();
        let numeric: Vec<f64> = target
            .iter()
            .map(|&t| {
                let missing_rate = if t == 0 { 0.08 } else { 0.02 };
                if rng.next_f64() < missing_rate {
                    f64::NAN
                } else {
                    rng.normal() + 0.7 * f64::from(t)
                }
            })
            .collect();
        let levels: Vec<String> = target
            .iter()
            .map(|&t| {
                let shifted = rng.below(6) + usize::from(rng.next_f64() < 0.3) * t as usize;
                format!("level{}", shifted % 6)
            })
            .collect();
        let columns = vec![
            encode_numeric("numeric", numeric, 32),
            encode_levels(
                "categorical",
                FeatureKind::Categorical,
                levels.iter().map(|s| Some(s.as_str())),
            ),
        ];
        (columns, target)
    }

    /// Column 0 of `toy` rounded to one decimal, so that values repeat as in
    /// real data (and the distinct-value paths of the surrogates are taken).
    pub fn rounded(columns: &[EncodedColumn]) -> EncodedColumn {
        let raw = columns[0].raw.as_ref().expect("toy column 0 is numeric");
        let values = (0..columns[0].codes.len())
            .map(|row| (raw.value(row) * 10.0).round() / 10.0)
            .collect();
        encode_numeric("rounded", values, 32)
    }

    /// `target` with `n_classes` classes over `folds` (5 folds).
    pub fn folded<'a>(
        target: &'a [u32],
        n_classes: usize,
        folds: &'a [u8],
    ) -> super::FoldedTarget<'a> {
        super::FoldedTarget {
            classes: target,
            n_classes,
            folds,
            n_folds: 5,
        }
    }

    /// Largest absolute difference between two sets of probabilities.
    pub fn max_difference(a: &super::Scores, b: &super::Scores) -> f64 {
        a.proba
            .iter()
            .zip(&b.proba)
            .map(|(x, y)| (x - y).abs())
            .fold(0.0, f64::max)
    }

    /// Asserts every row of `proba` (row-major, `k` per row) is a probability vector.
    pub fn assert_probability_rows(proba: &[f64], k: usize) {
        for row in proba.chunks_exact(k) {
            assert!(row.iter().all(|p| (0.0..=1.0).contains(p)), "{row:?}");
            assert!((row.iter().sum::<f64>() - 1.0).abs() < 1e-12, "{row:?}");
        }
    }
}

#[cfg(test)]
mod tests {
    use super::testing::{assert_probability_rows, toy};
    use super::*;
    use crate::data::folds::stratified_folds;

    fn all_models() -> Vec<Box<dyn Surrogate>> {
        vec![
            Box::new(FrequencySurrogate::default()),
            Box::new(LogisticSurrogate::default()),
            Box::new(TreeSurrogate::default()),
            Box::new(BoostedSurrogate::default()),
        ]
    }

    fn scores_with_threads(model: &dyn Surrogate, threads: usize) -> Scores {
        // 12 500 rows: the boosted model's 10 000 training rows (4 of 5 folds)
        // are exceeded, so its seeded early-stopping split is exercised too.
        let (columns, target) = toy(12_500, 3, 11);
        let refs: Vec<&EncodedColumn> = if model.name() == "frequency" {
            vec![&columns[1]]
        } else {
            columns.iter().collect()
        };
        let folds = stratified_folds(&target, 3, 5, 0);
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        pool.install(|| cross_fit(model, &refs, &target, 3, &folds, 5).unwrap())
    }

    #[test]
    fn every_surrogate_is_bit_identical_at_one_and_four_threads() {
        for model in all_models() {
            let one = scores_with_threads(model.as_ref(), 1);
            let four = scores_with_threads(model.as_ref(), 4);
            let bits = |s: &Scores| s.proba.iter().map(|p| p.to_bits()).collect::<Vec<_>>();
            assert_eq!(bits(&one), bits(&four), "{}", model.name());
            assert_probability_rows(&one.proba, 3);
        }
    }

    #[test]
    fn cross_fit_scores_each_row_with_a_model_not_fitted_on_it() {
        // A frequency table over a unique-per-row identifier only knows the
        // prior for rows it has not seen: every out-of-fold score must then be
        // the training folds' class share, never the row's own label.
        let target: Vec<u32> = (0..50).map(|i| u32::from(i % 5 == 0)).collect();
        let ids: Vec<String> = (0..50).map(|i| format!("id{i}")).collect();
        let column = crate::data::encode::encode_levels(
            "id",
            crate::data::FeatureKind::IdentifierLike,
            ids.iter().map(|s| Some(s.as_str())),
        );
        let folds = stratified_folds(&target, 2, 5, 0);
        let scores = cross_fit(
            &FrequencySurrogate::default(),
            &[&column],
            &target,
            2,
            &folds,
            5,
        )
        .unwrap();
        // Stratified folds of 50 rows with 10 positives: every training part has 8 of 40.
        for p in scores.column(1) {
            assert!((p - 8.0 / 40.0).abs() < 1e-12, "{p}");
        }
    }
}
