//! Smoothed class frequencies per level (one column) or per level pair (two columns).
//!
//! For a discrete feature the posterior p(a | x) is the Bayes-optimal score, so
//! its out-of-fold estimate is the natural surrogate. Counts are smoothed with
//! the m-estimate (Cestnik 1990, "Estimating probabilities: a crucial task in
//! machine learning", ECAI): p(a | x) = (n_xa + m·q_a) / (n_x + m), where q is
//! the prior the cell falls back to. A level never seen in training gets q.

use super::{Fitted, Surrogate, SurrogateError, check_inputs, class_shares, normalise};
use crate::data::EncodedColumn;
use std::collections::HashMap;

/// Pair tables with at most this many cells are indexed densely; larger ones by hash.
const DENSE_PAIR_CELLS: u64 = 1 << 22;

/// The frequency surrogate's parameters.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FrequencySurrogate {
    /// Pseudo-count m pulling each cell toward its prior. The default 1.0 (one
    /// pseudo-observation, common practice for the m-estimate) keeps large cells
    /// at their observed shares and sends singletons halfway to the prior, which
    /// keeps held-out log-loss finite without flattening real signal.
    pub smoothing: f64,
}

impl Default for FrequencySurrogate {
    fn default() -> Self {
        Self { smoothing: 1.0 }
    }
}

/// Smoothed posterior table of one column: `n_levels × n_classes`, row-major.
#[derive(Debug, Clone)]
struct LevelTable {
    n_classes: usize,
    proba: Vec<f64>,
}

impl LevelTable {
    /// Counts classes per level on `train` and smooths each level toward `prior`.
    fn fit(column: &EncodedColumn, target: &[u32], prior: &[f64], m: f64, train: &[usize]) -> Self {
        let k = prior.len();
        let mut counts = vec![0.0; column.n_levels as usize * k];
        for &row in train {
            counts[column.codes[row] as usize * k + target[row] as usize] += 1.0;
        }
        let proba = counts
            .chunks_exact(k)
            .flat_map(|cell| smoothed(cell, prior, m))
            .collect();
        Self {
            n_classes: k,
            proba,
        }
    }

    fn posterior(&self, code: u32) -> &[f64] {
        let start = code as usize * self.n_classes;
        &self.proba[start..start + self.n_classes]
    }
}

/// m-estimate of one cell's class shares: (n_a + m·q_a) / (n + m); `q` itself when empty.
fn smoothed(counts: &[f64], prior: &[f64], m: f64) -> Vec<f64> {
    let n: f64 = counts.iter().sum();
    if n + m <= 0.0 {
        return prior.to_vec();
    }
    counts
        .iter()
        .zip(prior)
        .map(|(&c, &q)| (c + m * q) / (n + m))
        .collect()
}

/// Naive-Bayes combination of two single-column posteriors:
/// p(a | x, y) ∝ p(a | x) p(a | y) / π_a (x and y independent given a).
fn combine_singles(left: &[f64], right: &[f64], prior: &[f64]) -> Vec<f64> {
    let mut combined: Vec<f64> = left
        .iter()
        .zip(right)
        .zip(prior)
        .map(|((&l, &r), &p)| if p > 0.0 { l * r / p } else { 0.0 })
        .collect();
    normalise(&mut combined);
    combined
}

/// Class counts of the observed pair cells, densely or by hash.
enum PairCounts {
    Dense(Vec<f64>),
    Sparse(HashMap<u64, Vec<f64>>),
}

/// A fitted frequency model.
struct FittedFrequency {
    prior: Vec<f64>,
    smoothing: f64,
    singles: Vec<LevelTable>,
    /// Present for a pair of columns; `right_levels` forms the cell key.
    pair: Option<(PairCounts, u64)>,
}

/// Key of the pair cell of `row`: left code × right levels + right code.
fn pair_key(columns: &[&EncodedColumn], row: usize, right_levels: u64) -> u64 {
    u64::from(columns[0].codes[row]) * right_levels + u64::from(columns[1].codes[row])
}

impl FittedFrequency {
    /// Appends the posterior of `row` to `out`.
    fn push_posterior(&self, columns: &[&EncodedColumn], row: usize, out: &mut Vec<f64>) {
        let left = self.singles[0].posterior(columns[0].codes[row]);
        let Some((counts, right_levels)) = &self.pair else {
            out.extend_from_slice(left);
            return;
        };
        let right = self.singles[1].posterior(columns[1].codes[row]);
        let back_off = combine_singles(left, right, &self.prior);
        let key = pair_key(columns, row, *right_levels);
        let k = self.prior.len();
        let cell = match counts {
            PairCounts::Dense(all) => Some(&all[key as usize * k..(key as usize + 1) * k]),
            PairCounts::Sparse(map) => map.get(&key).map(Vec::as_slice),
        };
        match cell {
            Some(c) => out.extend(smoothed(c, &back_off, self.smoothing)),
            None => out.extend(back_off),
        }
    }
}

impl Fitted for FittedFrequency {
    fn predict_proba(&self, columns: &[&EncodedColumn], rows: &[usize]) -> Vec<f64> {
        let mut out = Vec::with_capacity(rows.len() * self.prior.len());
        for &row in rows {
            self.push_posterior(columns, row, &mut out);
        }
        out
    }
}

/// Class counts of every pair cell seen in `train`.
fn count_pairs(
    columns: &[&EncodedColumn],
    target: &[u32],
    k: usize,
    train: &[usize],
) -> (PairCounts, u64) {
    let right_levels = u64::from(columns[1].n_levels);
    let cells = u64::from(columns[0].n_levels) * right_levels;
    let key = |row: usize| pair_key(columns, row, right_levels);
    let counts = if cells <= DENSE_PAIR_CELLS {
        let mut dense = vec![0.0; cells as usize * k];
        for &row in train {
            dense[key(row) as usize * k + target[row] as usize] += 1.0;
        }
        PairCounts::Dense(dense)
    } else {
        let mut sparse: HashMap<u64, Vec<f64>> = HashMap::new();
        for &row in train {
            sparse.entry(key(row)).or_insert_with(|| vec![0.0; k])[target[row] as usize] += 1.0;
        }
        PairCounts::Sparse(sparse)
    };
    (counts, right_levels)
}

impl Surrogate for FrequencySurrogate {
    fn name(&self) -> &'static str {
        "frequency"
    }

    /// One column: smoothed shares per level. Two columns: shares per pair cell,
    /// smoothed toward the naive-Bayes combination of the two single posteriors,
    /// so a sparse cell says what the singles say.
    fn fit(
        &self,
        columns: &[&EncodedColumn],
        target: &[u32],
        n_classes: usize,
        train: &[usize],
    ) -> Result<Box<dyn Fitted>, SurrogateError> {
        check_inputs(self.name(), columns, n_classes, train)?;
        if columns.len() > 2 || self.smoothing.is_nan() || self.smoothing < 0.0 {
            return Err(SurrogateError {
                model: self.name(),
                reason: "needs one or two columns and a non-negative smoothing".to_string(),
            });
        }
        let prior = class_shares(target, n_classes, train);
        let singles = columns
            .iter()
            .map(|c| LevelTable::fit(c, target, &prior, self.smoothing, train))
            .collect();
        let pair = (columns.len() == 2).then(|| count_pairs(columns, target, n_classes, train));
        Ok(Box::new(FittedFrequency {
            prior,
            smoothing: self.smoothing,
            singles,
            pair,
        }))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::FeatureKind;
    use crate::data::encode::encode_levels;
    use crate::surrogate::testing::{assert_probability_rows, toy};

    fn column(levels: &[&str]) -> EncodedColumn {
        encode_levels(
            "x",
            FeatureKind::Categorical,
            levels.iter().map(|s| Some(*s)),
        )
    }

    fn fit(columns: &[&EncodedColumn], target: &[u32], train: &[usize]) -> Box<dyn Fitted> {
        FrequencySurrogate::default()
            .fit(columns, target, 2, train)
            .unwrap()
    }

    #[test]
    fn cell_shares_follow_the_m_estimate() {
        // Cestnik (1990), m-estimate p = (n_a + m q_a) / (n + m); by hand with
        // m = 1, level "a" holding 3 of class 1 and 1 of class 0, prior
        // q = (4/8, 4/8): p(1 | a) = (3 + 0.5) / 5 = 0.7.
        let x = column(&["a", "a", "a", "a", "b", "b", "b", "b"]);
        let target = [1, 1, 1, 0, 0, 0, 0, 1];
        let train: Vec<usize> = (0..8).collect();
        let proba = fit(&[&x], &target, &train).predict_proba(&[&x], &[0, 4]);
        assert!((proba[1] - 0.7).abs() < 1e-15);
        assert!((proba[3] - 0.3).abs() < 1e-15);
    }

    #[test]
    fn level_unseen_in_training_gets_the_training_prior() {
        let x = column(&["a", "a", "b", "b", "b", "c"]);
        let target = [1, 0, 0, 0, 0, 1];
        let train = [0, 1, 2, 3, 4];
        let proba = fit(&[&x], &target, &train).predict_proba(&[&x], &[5]);
        assert_eq!(proba, vec![4.0 / 5.0, 1.0 / 5.0]);
    }

    #[test]
    fn sparse_pair_cell_backs_off_to_the_combined_singles() {
        // Naive Bayes: p(a | x, y) ∝ p(a | x) p(a | y) / π_a. The pair (a, d) is
        // never seen in training, so it gets exactly that combination; the
        // pair (a, c) seen once moves halfway (m = 1) from it toward its label.
        let x = column(&["a", "a", "a", "b", "b", "b", "a"]);
        let y = column(&["c", "c", "c", "d", "d", "c", "d"]);
        let target = [1, 1, 0, 0, 0, 1, 0];
        let train = [0, 1, 2, 3, 4, 5];
        let model = fit(&[&x, &y], &target, &train);
        let m = 1.0;
        let prior = [0.5, 0.5];
        let single = |counts: [f64; 2]| -> Vec<f64> {
            let n = counts[0] + counts[1];
            (0..2)
                .map(|c| (counts[c] + m * prior[c]) / (n + m))
                .collect()
        };
        let (x_a, y_d, y_c) = (single([1.0, 2.0]), single([2.0, 0.0]), single([1.0, 3.0]));
        let combine = |l: &[f64], r: &[f64]| -> Vec<f64> {
            let raw: Vec<f64> = (0..2).map(|c| l[c] * r[c] / prior[c]).collect();
            raw.iter().map(|v| v / (raw[0] + raw[1])).collect()
        };
        let unseen = model.predict_proba(&[&x, &y], &[6]);
        let expected = combine(&x_a, &y_d);
        assert!(
            unseen
                .iter()
                .zip(&expected)
                .all(|(a, b)| (a - b).abs() < 1e-12)
        );
        let seen = model.predict_proba(&[&x, &y], &[0]);
        let back_off = combine(&x_a, &y_c);
        let expected: Vec<f64> = (0..2)
            .map(|c| ([1.0, 2.0][c] + m * back_off[c]) / (3.0 + m))
            .collect();
        assert!(
            seen.iter()
                .zip(&expected)
                .all(|(a, b)| (a - b).abs() < 1e-12)
        );
    }

    #[test]
    fn probabilities_sum_to_one_for_singles_and_pairs() {
        let (columns, target) = toy(2_000, 3, 5);
        let train: Vec<usize> = (0..1_500).collect();
        let rows: Vec<usize> = (1_500..2_000).collect();
        for cols in [vec![&columns[0]], vec![&columns[0], &columns[1]]] {
            let model = FrequencySurrogate::default()
                .fit(&cols, &target, 3, &train)
                .unwrap();
            assert_probability_rows(&model.predict_proba(&cols, &rows), 3);
        }
    }
}
