//! Smoothed class frequencies per level (one column) or per level pair (two columns).
//!
//! For a discrete feature the posterior p(a | x) is the Bayes-optimal score, so
//! its out-of-fold estimate is the natural surrogate. Counts are smoothed with
//! the m-estimate (Cestnik 1990, "Estimating probabilities: a crucial task in
//! machine learning", ECAI): p(a | x) = (n_xa + m·q_a) / (n_x + m), where q is
//! the prior the cell falls back to. A level never seen in training gets q.

use super::{
    Fitted, FoldCounts, FoldedTarget, Scores, Surrogate, SurrogateError, check_inputs,
    class_shares, normalise,
};
use crate::data::EncodedColumn;
use crate::data::encode::combine_codes;

/// Pair grids with at most this many cells are indexed directly; larger ones
/// are numbered over their observed combinations.
pub(super) const DENSE_PAIR_CELLS: u64 = 1 << 16;

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

/// m-estimate of one cell's class shares into `out`: (n_a + m·q_a) / (n + m);
/// `q` itself when the cell is empty and m = 0.
pub(crate) fn smooth_into(counts: &[f64], prior: &[f64], m: f64, out: &mut [f64]) {
    let n: f64 = counts.iter().sum();
    if n + m <= 0.0 {
        out.copy_from_slice(prior);
        return;
    }
    for ((o, &c), &q) in out.iter_mut().zip(counts).zip(prior) {
        *o = (c + m * q) / (n + m);
    }
}

/// Naive-Bayes combination of two single-column posteriors into `out`:
/// p(a | x, y) ∝ p(a | x) p(a | y) / π_a (x and y independent given a).
pub(crate) fn combine_into(left: &[f64], right: &[f64], prior: &[f64], out: &mut [f64]) {
    for (((o, &l), &r), &p) in out.iter_mut().zip(left).zip(right).zip(prior) {
        *o = if p > 0.0 { l * r / p } else { 0.0 };
    }
    normalise(out);
}

/// Working buffers for one posterior: smoothed left and right shares and the back-off.
pub(super) struct Scratch {
    left: Vec<f64>,
    right: Vec<f64>,
    back_off: Vec<f64>,
}

impl Scratch {
    pub(super) fn new(k: usize) -> Self {
        Self {
            left: vec![0.0; k],
            right: vec![0.0; k],
            back_off: vec![0.0; k],
        }
    }
}

/// [`Scratch`] plus the training counts of left, right and cell.
struct Work {
    counts: [Vec<f64>; 3],
    scratch: Scratch,
}

impl Work {
    fn new(k: usize) -> Self {
        Self {
            counts: [vec![0.0; k], vec![0.0; k], vec![0.0; k]],
            scratch: Scratch::new(k),
        }
    }
}

/// The frequency posterior of one row from its training counts: the single
/// column's smoothed shares, or for a pair the cell's shares smoothed toward
/// the naive-Bayes combination of the two singles (the combination itself
/// when the cell was never seen in training).
pub(super) fn posterior(
    singles: [&[f64]; 2],
    cell: Option<&[f64]>,
    prior: &[f64],
    m: f64,
    scratch: &mut Scratch,
    out: &mut [f64],
) {
    let Some(cell) = cell else {
        smooth_into(singles[0], prior, m, out);
        return;
    };
    smooth_into(singles[0], prior, m, &mut scratch.left);
    smooth_into(singles[1], prior, m, &mut scratch.right);
    let shares = [scratch.left.as_slice(), scratch.right.as_slice()];
    pair_posterior(shares, cell, prior, m, &mut scratch.back_off, out);
}

/// A pair cell's posterior from its two members' smoothed shares `shares`
/// and its own training counts `cell`: the cell smoothed toward the
/// naive-Bayes combination `back_off` of the members, or that combination
/// when the cell was never seen in training.
pub(super) fn pair_posterior(
    shares: [&[f64]; 2],
    cell: &[f64],
    prior: &[f64],
    m: f64,
    back_off: &mut [f64],
    out: &mut [f64],
) {
    combine_into(shares[0], shares[1], prior, back_off);
    if cell.iter().sum::<f64>() > 0.0 {
        smooth_into(cell, back_off, m, out);
    } else {
        out.copy_from_slice(back_off);
    }
}

/// The `k` counts of `code` in a `levels × k` table.
fn counts_of(table: &[f64], code: u32, k: usize) -> &[f64] {
    &table[code as usize * k..(code as usize + 1) * k]
}

/// Class counts per code over the training rows of one fit: `levels × k`.
fn train_counts(
    codes: &[u32],
    levels: usize,
    target: &[u32],
    k: usize,
    train: &[usize],
) -> Vec<f64> {
    let mut counts = vec![0.0; levels * k];
    for &row in train {
        counts[codes[row] as usize * k + target[row] as usize] += 1.0;
    }
    counts
}

/// Cell code per row of a pair of columns: the grid position when the grid
/// is small, else the observed combinations numbered in order of appearance.
struct PairCells {
    codes: Vec<u32>,
    cells: usize,
    on_grid: bool,
}

impl PairCells {
    fn new(left: &EncodedColumn, right: &EncodedColumn) -> Self {
        let grid = u64::from(left.n_levels) * u64::from(right.n_levels);
        if grid <= DENSE_PAIR_CELLS {
            let codes = left
                .codes
                .iter()
                .zip(&right.codes)
                .map(|(&a, &b)| a * right.n_levels + b)
                .collect();
            Self {
                codes,
                cells: grid as usize,
                on_grid: true,
            }
        } else {
            let (codes, cells) = combine_codes(&left.codes, &right.codes, right.n_levels);
            Self {
                codes,
                cells: cells as usize,
                on_grid: false,
            }
        }
    }
}

/// Codes of the columns the frequency model counts over: the single column,
/// or the two columns and their pair cell.
struct CountedCodes<'a> {
    singles: Vec<(&'a [u32], usize)>,
    cell: Option<(Vec<u32>, usize)>,
    /// The right column's levels when pair cells are grid positions.
    grid_right: Option<u32>,
}

impl<'a> CountedCodes<'a> {
    fn new(columns: &[&'a EncodedColumn]) -> Self {
        let pair = (columns.len() == 2).then(|| PairCells::new(columns[0], columns[1]));
        Self {
            singles: columns
                .iter()
                .map(|c| (c.codes.as_slice(), c.n_levels as usize))
                .collect(),
            grid_right: pair
                .as_ref()
                .filter(|p| p.on_grid)
                .map(|_| columns[1].n_levels),
            cell: pair.map(|p| (p.codes, p.cells)),
        }
    }

    /// The single-column codes of `row` (the second is 0 for one column).
    fn of_row(&self, row: usize) -> [u32; 2] {
        [
            self.singles[0].0[row],
            self.singles.get(1).map_or(0, |(codes, _)| codes[row]),
        ]
    }
}

/// A fitted frequency model: training counts per level (and per pair cell).
struct FittedFrequency {
    prior: Vec<f64>,
    smoothing: f64,
    singles: Vec<Vec<f64>>,
    /// Cell counts of the pair, with the cell codes of every row.
    cell: Option<(Vec<f64>, Vec<u32>)>,
}

impl Fitted for FittedFrequency {
    fn predict_proba(&self, columns: &[&EncodedColumn], rows: &[usize]) -> Vec<f64> {
        let k = self.prior.len();
        let mut scratch = Scratch::new(k);
        let mut out = vec![0.0; rows.len() * k];
        for (&row, p) in rows.iter().zip(out.chunks_exact_mut(k)) {
            let single = |i: usize| counts_of(&self.singles[i], columns[i].codes[row], k);
            let cell = self
                .cell
                .as_ref()
                .map(|(table, cells)| counts_of(table, cells[row], k));
            let right = if cell.is_some() { single(1) } else { single(0) };
            posterior(
                [single(0), right],
                cell,
                &self.prior,
                self.smoothing,
                &mut scratch,
                p,
            );
        }
        out
    }
}

/// Class shares of the training rows of each fold (all rows but the fold's).
fn training_priors(target: FoldedTarget<'_>) -> Vec<Vec<f64>> {
    let k = target.n_classes;
    let mut per_fold = vec![vec![0.0; k]; target.n_folds];
    for (&class, &fold) in target.classes.iter().zip(target.folds) {
        per_fold[usize::from(fold)][class as usize] += 1.0;
    }
    let total: Vec<f64> = (0..k)
        .map(|c| per_fold.iter().map(|f| f[c]).sum())
        .collect();
    per_fold
        .iter()
        .map(|held_out| {
            let mut prior: Vec<f64> = total.iter().zip(held_out).map(|(t, h)| t - h).collect();
            normalise(&mut prior);
            prior
        })
        .collect()
}

impl FrequencySurrogate {
    fn check(&self, columns: &[&EncodedColumn]) -> Result<(), SurrogateError> {
        if columns.len() > 2 || self.smoothing.is_nan() || self.smoothing < 0.0 {
            return Err(SurrogateError {
                model: self.name(),
                reason: "needs one or two columns and a non-negative smoothing".to_string(),
            });
        }
        Ok(())
    }
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
        check_inputs(self.name(), columns, n_classes, train.len())?;
        self.check(columns)?;
        let codes = CountedCodes::new(columns);
        let count = |(codes, levels): (&[u32], usize)| {
            train_counts(codes, levels, target, n_classes, train)
        };
        Ok(Box::new(FittedFrequency {
            prior: class_shares(target, n_classes, train),
            smoothing: self.smoothing,
            singles: codes.singles.iter().map(|&c| count(c)).collect(),
            cell: codes
                .cell
                .map(|(cells, levels)| (count((&cells, levels)), cells)),
        }))
    }

    /// The same posteriors as fitting fold by fold, from one counting pass:
    /// class counts per (code, fold), each fold's training counts being the
    /// total minus its own. When the cells are few, each (cell, fold)
    /// posterior is computed once and copied to its rows.
    fn out_of_fold(
        &self,
        columns: &[&EncodedColumn],
        target: FoldedTarget<'_>,
    ) -> Result<Scores, SurrogateError> {
        let (n_classes, n_folds) = (target.n_classes, target.n_folds);
        check_inputs(self.name(), columns, n_classes, target.folds.len())?;
        self.check(columns)?;
        let k = n_classes;
        let codes = CountedCodes::new(columns);
        let count = |(codes, levels): (&[u32], usize)| FoldCounts::new(codes, levels, target);
        let model = FoldPosteriors {
            singles: codes.singles.iter().map(|&c| count(c)).collect(),
            cell: codes
                .cell
                .as_ref()
                .map(|(cells, levels)| count((cells, *levels))),
            priors: training_priors(target),
            smoothing: self.smoothing,
        };
        let mut work = Work::new(k);
        let rows = target.classes.len();
        let mut proba = vec![0.0; rows * k];
        if let Some((cell_of_row, table)) = model.cell_table(&codes, rows, &mut work) {
            let cells_and_folds = cell_of_row.iter().zip(target.folds);
            for (p, (&cell, &fold)) in proba.chunks_exact_mut(k).zip(cells_and_folds) {
                let start = (cell as usize * n_folds + usize::from(fold)) * k;
                p.copy_from_slice(&table[start..start + k]);
            }
        } else {
            for (row, p) in proba.chunks_exact_mut(k).enumerate() {
                let cell = codes.cell.as_ref().map_or(0, |(cells, _)| cells[row]);
                model.posterior(codes.of_row(row), cell, target.folds[row], &mut work, p);
            }
        }
        Ok(Scores { n_classes, proba })
    }
}

/// Training counts of every fold from one counting pass, and the posterior
/// of any row from them.
struct FoldPosteriors {
    singles: Vec<FoldCounts>,
    cell: Option<FoldCounts>,
    /// Training-fold class shares, per fold.
    priors: Vec<Vec<f64>>,
    smoothing: f64,
}

impl FoldPosteriors {
    /// Posterior of a row with single-column codes `codes` (the second unused
    /// for one column) and pair cell `cell`, held out in `fold`.
    fn posterior(&self, codes: [u32; 2], cell: u32, fold: u8, work: &mut Work, out: &mut [f64]) {
        let Work {
            counts: [left, right, joint],
            scratch,
        } = work;
        self.singles[0].training(codes[0], fold, left);
        if let Some(cells) = &self.cell {
            self.singles[1].training(codes[1], fold, right);
            cells.training(cell, fold, joint);
        }
        posterior(
            [left, right],
            self.cell.as_ref().map(|_| joint.as_slice()),
            &self.priors[usize::from(fold)],
            self.smoothing,
            scratch,
            out,
        );
    }

    /// Posteriors of every (cell, fold), `cells × folds × k`, with each row's
    /// cell, when the cells are fewer than the rows per fold and map back to
    /// their codes (one column, or a pair on its full grid); `None` otherwise.
    fn cell_table<'c>(
        &self,
        codes: &'c CountedCodes<'_>,
        rows: usize,
        work: &mut Work,
    ) -> Option<(&'c [u32], Vec<f64>)> {
        let n_folds = self.priors.len();
        let k = self.singles[0].k;
        // A cell's codes: the cell itself for one column, its grid position's
        // row and column for a pair.
        let (cell_of_row, cells, grid_right) = match (&codes.cell, codes.grid_right) {
            (None, _) => (codes.singles[0].0, codes.singles[0].1, None),
            (Some((cells, levels)), Some(right)) => (cells.as_slice(), *levels, Some(right)),
            (Some(_), None) => return None,
        };
        let codes_of_cell = |c: u32| grid_right.map_or([c, 0], |right| [c / right, c % right]);
        if cells * n_folds > rows {
            return None;
        }
        let mut table = vec![0.0; cells * n_folds * k];
        for (i, out) in table.chunks_exact_mut(k).enumerate() {
            let (cell, fold) = ((i / n_folds) as u32, (i % n_folds) as u8);
            self.posterior(codes_of_cell(cell), cell, fold, work, out);
        }
        Some((cell_of_row, table))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::FeatureKind;
    use crate::data::encode::encode_levels;
    use crate::surrogate::testing::{assert_probability_rows, folded, max_difference, toy};

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
    fn one_counting_pass_gives_the_fold_by_fold_posteriors() {
        // The override must be the same model as fitting each fold on its own:
        // singles, a small pair grid, and a pair with an identifier-like column
        // (3 000 × 32 cells, numbered over the observed combinations).
        let (columns, target) = toy(3_000, 3, 9);
        let ids: Vec<String> = (0..3_000).map(|i| format!("id{i}")).collect();
        let id = encode_levels(
            "id",
            FeatureKind::IdentifierLike,
            ids.iter().map(|s| Some(s.as_str())),
        );
        let folds = crate::data::folds::stratified_folds(&target, 3, 5, 0);
        let model = FrequencySurrogate::default();
        let sets: [Vec<&EncodedColumn>; 4] = [
            vec![&columns[0]],
            vec![&columns[1]],
            vec![&columns[0], &columns[1]],
            vec![&id, &columns[0]],
        ];
        for set in sets {
            let fast = model.out_of_fold(&set, folded(&target, 3, &folds));
            let slow = crate::surrogate::fold_by_fold(&model, &set, folded(&target, 3, &folds));
            let worst = max_difference(&fast.unwrap(), &slow.unwrap());
            assert!(worst < 1e-12, "{}: {worst}", set.len());
        }
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
