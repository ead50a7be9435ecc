//! L2-penalised logistic regression, fitted by Newton's method on grouped rows.
//!
//! Objective (the one scikit-learn's `LogisticRegression(C)` minimises):
//! C · Σ_i −log p(y_i | x_i) + ½‖w‖², intercepts unpenalised; binary uses one
//! weight vector (class 0 as reference), more classes the full softmax with one
//! vector per class (Hastie, Tibshirani & Friedman 2009, "The Elements of
//! Statistical Learning", §4.4.1 for the Newton/IRLS update). Rows with the
//! same design row are merged into one weighted pattern first, so a discrete
//! feature costs O(N) once and then O(levels) per iteration. A single numeric
//! column whose values are indexed (real data is rounded: a few thousand
//! distinct values in a million rows) is fitted per fold on the class counts
//! of its values, taken from one counting pass for all folds, so each
//! iteration costs O(distinct values); other continuous columns keep one
//! pattern per row.
//!
//! Features per column: a numeric or integer-coded column gives its raw value
//! with training-fold median imputation, plus a missing indicator when the
//! training fold has missing values, both standardised with training-fold mean
//! and (population) standard deviation; any other column gives a one-hot of its
//! codes. A column with more than `max_one_hot` levels keeps its
//! `max_one_hot − 1` most frequent training levels and pools the rest into one
//! column, which bounds the Newton system; such columns are better screened by
//! the frequency surrogate anyway.

use super::{
    Fitted, FoldCounts, FoldedTarget, Scores, Surrogate, SurrogateError, check_inputs,
    class_shares, distinct_values, fold_by_fold,
};
use crate::data::{EncodedColumn, FeatureKind, RawValues};
use rayon::prelude::*;

/// Patterns beyond this many distinct code combinations are not merged.
const MAX_GROUPED_PATTERNS: u64 = 1 << 16;

/// The logistic surrogate's parameters.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LogisticSurrogate {
    /// Inverse penalty strength C (1.0 as in scikit-learn's default).
    pub inverse_penalty: f64,
    /// One-hot columns kept per categorical column (see the module notes).
    pub max_one_hot: usize,
    /// Newton iterations at most; convergence is quadratic, so 50 is ample.
    pub max_iter: usize,
}

impl Default for LogisticSurrogate {
    fn default() -> Self {
        Self {
            inverse_penalty: 1.0,
            max_one_hot: 64,
            max_iter: 50,
        }
    }
}

/// How one column becomes design features.
#[derive(Debug, Clone)]
enum Block {
    /// Standardised imputed value, and the standardised indicator if `indicator` is set.
    Numeric {
        median: f64,
        indicator: bool,
        mean: [f64; 2],
        scale: [f64; 2],
    },
    /// Feature offset (within the block) per code.
    OneHot { slot_of_code: Vec<u32> },
}

impl Block {
    fn fit(column: &EncodedColumn, train: &[usize], max_one_hot: usize) -> Self {
        match &column.raw {
            Some(raw) => Self::fit_numeric(raw, train),
            None => Self::fit_one_hot(column, train, max_one_hot),
        }
    }

    /// From the training rows: their observed values sorted into distinct
    /// values with counts.
    fn fit_numeric(raw: &RawValues, train: &[usize]) -> Self {
        let mut observed: Vec<f64> = train
            .iter()
            .map(|&r| raw.value(r))
            .filter(|v| !v.is_nan())
            .collect();
        observed.sort_unstable_by(f64::total_cmp);
        let mut values: Vec<f64> = Vec::new();
        let mut counts: Vec<f64> = Vec::new();
        for run in observed.chunk_by(|a, b| a == b) {
            values.push(run[0]);
            counts.push(run.len() as f64);
        }
        let missing = (train.len() - observed.len()) as f64;
        Self::numeric_from_counts(&values, &counts, missing)
    }

    /// Median imputation, missing indicator and standardisation of a numeric
    /// column from its training values: ascending distinct `values` with their
    /// row `counts`, and the number of missing rows.
    fn numeric_from_counts(values: &[f64], counts: &[f64], missing: f64) -> Self {
        let observed: f64 = counts.iter().sum();
        let n = observed + missing;
        let median = weighted_median(values, counts);
        let mean =
            (values.iter().zip(counts).map(|(v, c)| v * c).sum::<f64>() + missing * median) / n;
        let var = (values
            .iter()
            .zip(counts)
            .map(|(v, c)| c * (v - mean).powi(2))
            .sum::<f64>()
            + missing * (median - mean).powi(2))
            / n;
        let missing_share = missing / n;
        let indicator_var = missing_share * (1.0 - missing_share);
        Self::Numeric {
            median,
            indicator: missing > 0.0,
            mean: [mean, missing_share],
            scale: [unit_if_zero(var.sqrt()), unit_if_zero(indicator_var.sqrt())],
        }
    }

    fn fit_one_hot(column: &EncodedColumn, train: &[usize], max_one_hot: usize) -> Self {
        let levels = column.n_levels as usize;
        if levels <= max_one_hot {
            return Self::OneHot {
                slot_of_code: (0..levels as u32).collect(),
            };
        }
        let mut counts = vec![0usize; levels];
        train
            .iter()
            .for_each(|&r| counts[column.codes[r] as usize] += 1);
        let mut by_count: Vec<usize> = (0..levels).collect();
        by_count.sort_by_key(|&c| (std::cmp::Reverse(counts[c]), c));
        let pooled = max_one_hot.saturating_sub(1) as u32;
        let mut slot_of_code = vec![pooled; levels];
        for (slot, &code) in by_count.iter().take(pooled as usize).enumerate() {
            slot_of_code[code] = slot as u32;
        }
        Self::OneHot { slot_of_code }
    }

    fn width(&self) -> usize {
        match self {
            Self::Numeric { indicator, .. } => 1 + usize::from(*indicator),
            Self::OneHot { slot_of_code } => {
                slot_of_code.iter().max().map_or(0, |&m| m as usize + 1)
            }
        }
    }

    /// Appends this column's non-zero features of `row`, offset by `base`.
    fn push(&self, column: &EncodedColumn, row: usize, base: u32, out: &mut SparseRow) {
        match self {
            Self::Numeric { .. } => {
                let v = column.raw.as_ref().map_or(f64::NAN, |raw| raw.value(row));
                self.push_number(v, base, out);
            }
            Self::OneHot { slot_of_code } => {
                if let Some(&slot) = slot_of_code.get(column.codes[row] as usize) {
                    out.push(base + slot, 1.0);
                }
            }
        }
    }

    /// Appends the features of the number `v` (`NaN` = missing) of a numeric block.
    fn push_number(&self, v: f64, base: u32, out: &mut SparseRow) {
        match self {
            Self::Numeric {
                median,
                indicator,
                mean,
                scale,
            } => {
                let missing = v.is_nan();
                let value = if missing { *median } else { v };
                out.push(base, (value - mean[0]) / scale[0]);
                if *indicator {
                    out.push(
                        base + 1,
                        (f64::from(u8::from(missing)) - mean[1]) / scale[1],
                    );
                }
            }
            Self::OneHot { .. } => {}
        }
    }
}

/// scikit-learn's StandardScaler leaves a constant feature unscaled.
fn unit_if_zero(sd: f64) -> f64 {
    if sd > 0.0 { sd } else { 1.0 }
}

/// Median of ascending distinct `values` holding `counts` rows each (the
/// mean of the two middle rows for an even count); 0 when there are none.
fn weighted_median(values: &[f64], counts: &[f64]) -> f64 {
    let n: f64 = counts.iter().sum();
    if n == 0.0 {
        return 0.0;
    }
    // 0-based positions of the middle rows: n/2 (odd) or n/2 − 1 and n/2 (even).
    let upper_rank = (n / 2.0).floor();
    let lower_rank = if n % 2.0 == 1.0 {
        upper_rank
    } else {
        upper_rank - 1.0
    };
    let value_at = |rank: f64| {
        let mut seen = 0.0;
        for (&v, &c) in values.iter().zip(counts) {
            seen += c;
            if seen > rank {
                return v;
            }
        }
        values[values.len() - 1]
    };
    (value_at(lower_rank) + value_at(upper_rank)) / 2.0
}

/// The design: blocks per column and their feature offsets.
#[derive(Debug, Clone)]
struct Design {
    blocks: Vec<Block>,
    offsets: Vec<u32>,
    width: usize,
}

impl Design {
    fn fit(columns: &[&EncodedColumn], train: &[usize], max_one_hot: usize) -> Self {
        Self::of_blocks(
            columns
                .iter()
                .map(|c| Block::fit(c, train, max_one_hot))
                .collect(),
        )
    }

    fn of_blocks(blocks: Vec<Block>) -> Self {
        let mut offsets = Vec::with_capacity(blocks.len());
        let mut width = 0;
        for block in &blocks {
            offsets.push(width as u32);
            width += block.width();
        }
        Self {
            blocks,
            offsets,
            width,
        }
    }

    fn features(&self, columns: &[&EncodedColumn], row: usize, out: &mut SparseRow) {
        out.index.clear();
        out.value.clear();
        for ((block, column), &base) in self.blocks.iter().zip(columns).zip(&self.offsets) {
            block.push(column, row, base, out);
        }
    }
}

/// One design row's non-zero features.
#[derive(Debug, Default)]
struct SparseRow {
    index: Vec<u32>,
    value: Vec<f64>,
}

impl SparseRow {
    fn push(&mut self, index: u32, value: f64) {
        self.index.push(index);
        self.value.push(value);
    }
}

/// Weighted design rows: sparse features (compressed rows) and class counts per pattern.
#[derive(Default)]
struct Patterns {
    /// Pattern `i` has the non-zeros `start[i]..start[i + 1]` of `index`/`value`.
    start: Vec<usize>,
    index: Vec<u32>,
    value: Vec<f64>,
    /// `patterns × k` class counts.
    counts: Vec<f64>,
}

/// Mixed-radix code of the row's codes when every column is discrete and the
/// combinations are few; `None` means rows are kept apart.
fn pattern_radix(columns: &[&EncodedColumn]) -> Option<Vec<u64>> {
    let discrete = columns
        .iter()
        .all(|c| c.raw.is_none() || c.kind == FeatureKind::IntegerCoded);
    let mut radix = Vec::with_capacity(columns.len());
    let mut total: u64 = 1;
    for c in columns {
        radix.push(total);
        total = total.checked_mul(u64::from(c.n_levels.max(1)))?;
    }
    (discrete && total <= MAX_GROUPED_PATTERNS).then_some(radix)
}

impl Patterns {
    fn build(
        design: &Design,
        columns: &[&EncodedColumn],
        target: &[u32],
        k: usize,
        train: &[usize],
    ) -> Self {
        let radix = pattern_radix(columns);
        let key = |row: usize| -> usize {
            radix.as_ref().map_or(0, |radix| {
                columns
                    .iter()
                    .zip(radix)
                    .map(|(c, &r)| u64::from(c.codes[row]) * r)
                    .sum::<u64>() as usize
            })
        };
        let n_keys = radix
            .as_ref()
            .and_then(|r| r.last().zip(columns.last()))
            .map_or(0, |(&r, c)| r as usize * c.n_levels as usize);
        // Without grouping every row is its own pattern (`pattern_of_key` stays empty).
        let mut pattern_of_key = vec![usize::MAX; n_keys];
        let mut patterns = Self {
            start: vec![0],
            ..Self::default()
        };
        let mut x = SparseRow::default();
        for &row in train {
            let key = key(row);
            let known = pattern_of_key
                .get(key)
                .copied()
                .filter(|&p| p != usize::MAX);
            let pattern = known.unwrap_or_else(|| {
                let new = patterns.len();
                if let Some(slot) = pattern_of_key.get_mut(key) {
                    *slot = new;
                }
                design.features(columns, row, &mut x);
                patterns.push(&x, k);
                new
            });
            patterns.counts[pattern * k + target[row] as usize] += 1.0;
        }
        patterns
    }

    /// Appends a pattern with no rows counted yet.
    fn push(&mut self, x: &SparseRow, k: usize) {
        self.push_features(x);
        self.counts.extend(std::iter::repeat_n(0.0, k));
    }

    /// Appends a pattern with its class counts.
    fn push_counts(&mut self, x: &SparseRow, counts: &[f64]) {
        self.push_features(x);
        self.counts.extend_from_slice(counts);
    }

    fn push_features(&mut self, x: &SparseRow) {
        self.index.extend_from_slice(&x.index);
        self.value.extend_from_slice(&x.value);
        self.start.push(self.index.len());
    }

    fn len(&self) -> usize {
        self.start.len() - 1
    }

    fn row(&self, i: usize) -> (&[u32], &[f64]) {
        let range = self.start[i]..self.start[i + 1];
        (&self.index[range.clone()], &self.value[range])
    }
}

/// Coefficients: `slots` rows of `width + 1` (weights, then intercept).
/// Binary: one slot for class 1 (class 0 has logit 0). Otherwise one per class.
#[derive(Debug, Clone)]
struct Coefficients {
    k: usize,
    width: usize,
    theta: Vec<f64>,
}

impl Coefficients {
    /// Zero weights and the prior's log-odds (or log-shares) as intercepts.
    fn start(k: usize, width: usize, prior: &[f64]) -> Self {
        let mut coef = Self {
            k,
            width,
            theta: Vec::new(),
        };
        let stride = width + 1;
        coef.theta = vec![0.0; coef.slots() * stride];
        let log_share = |c: usize| prior[c].max(1e-12).ln();
        for slot in 0..coef.slots() {
            let class = coef.slot_class(slot);
            coef.theta[slot * stride + width] = if k == 2 {
                log_share(1) - log_share(0)
            } else {
                log_share(class)
            };
        }
        coef
    }

    fn slots(&self) -> usize {
        if self.k == 2 { 1 } else { self.k }
    }

    fn slot_class(&self, slot: usize) -> usize {
        if self.k == 2 { 1 } else { slot }
    }

    /// Class probabilities of a sparse design row (stable softmax) into `out`.
    fn proba(&self, theta: &[f64], index: &[u32], value: &[f64], out: &mut [f64]) {
        let stride = self.width + 1;
        out.fill(0.0);
        for slot in 0..self.slots() {
            let w = &theta[slot * stride..(slot + 1) * stride];
            let dot: f64 = index
                .iter()
                .zip(value)
                .map(|(&j, &v)| w[j as usize] * v)
                .sum();
            out[self.slot_class(slot)] = w[self.width] + dot;
        }
        let top = out.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        out.iter_mut().for_each(|z| *z = (*z - top).exp());
        super::normalise(out);
    }
}

/// Penalised objective with its gradient and Hessian (row-major, `dim × dim`).
struct Evaluation {
    value: f64,
    grad: Vec<f64>,
    hess: Vec<f64>,
}

/// Fills `p` with the pattern's class probabilities and returns −Σ counts · log p.
/// Binary rows use one exponential: with e = exp(−|z|), −log p₁ = softplus(−z)
/// and −log p₀ = softplus(z), where softplus(t) = max(t, 0) + ln(1 + e).
fn pattern_loss(
    coef: &Coefficients,
    theta: &[f64],
    index: &[u32],
    x: &[f64],
    counts: &[f64],
    p: &mut [f64],
) -> f64 {
    if coef.k != 2 {
        coef.proba(theta, index, x, p);
        return -counts
            .iter()
            .zip(p.iter())
            .filter(|(m, _)| **m > 0.0)
            .map(|(&m, &q)| m * q.max(1e-300).ln())
            .sum::<f64>();
    }
    let z = theta[coef.width]
        + index
            .iter()
            .zip(x)
            .map(|(&j, &v)| theta[j as usize] * v)
            .sum::<f64>();
    let e = (-z.abs()).exp();
    let log_one_plus_e = e.ln_1p();
    p[1] = if z >= 0.0 {
        1.0 / (1.0 + e)
    } else {
        e / (1.0 + e)
    };
    p[0] = 1.0 - p[1];
    counts[1] * ((-z).max(0.0) + log_one_plus_e) + counts[0] * (z.max(0.0) + log_one_plus_e)
}

/// Evaluates C · Σ counts · (−log p) + ½‖w‖² and its derivatives at `theta`.
fn evaluate(coef: &Coefficients, patterns: &Patterns, theta: &[f64], c: f64) -> Evaluation {
    let stride = coef.width + 1;
    let dim = coef.slots() * stride;
    let mut value = 0.0;
    let mut grad = vec![0.0; dim];
    let mut hess = vec![0.0; dim * dim];
    let mut p = vec![0.0; coef.k];
    let mut nonzeros: Vec<(usize, f64)> = Vec::new();
    for i in 0..patterns.len() {
        let (index, x) = patterns.row(i);
        let counts = &patterns.counts[i * coef.k..(i + 1) * coef.k];
        value += c * pattern_loss(coef, theta, index, x, counts, &mut p);
        let n: f64 = counts.iter().sum();
        nonzeros.clear();
        nonzeros.extend(index.iter().map(|&j| j as usize).zip(x.iter().copied()));
        nonzeros.push((coef.width, 1.0));
        for a in 0..coef.slots() {
            let ca = coef.slot_class(a);
            let residual = c * (n * p[ca] - counts[ca]);
            for &(j, v) in &nonzeros {
                grad[a * stride + j] += residual * v;
            }
            for b in 0..coef.slots() {
                let curvature =
                    c * n * p[ca] * (f64::from(u8::from(a == b)) - p[coef.slot_class(b)]);
                for &(i, vi) in &nonzeros {
                    let row = (a * stride + i) * dim + b * stride;
                    for &(j, vj) in &nonzeros {
                        hess[row + j] += curvature * vi * vj;
                    }
                }
            }
        }
    }
    let mut evaluation = Evaluation { value, grad, hess };
    add_penalty(coef, theta, &mut evaluation);
    evaluation
}

/// Adds ½‖w‖² (intercepts excluded). A 1e-8 ridge on multinomial intercepts
/// picks one point of their flat direction (softmax ignores a common shift),
/// which leaves every probability unchanged.
fn add_penalty(coef: &Coefficients, theta: &[f64], evaluation: &mut Evaluation) {
    let stride = coef.width + 1;
    let dim = theta.len();
    for (i, &t) in theta.iter().enumerate() {
        let is_intercept = i % stride == coef.width;
        let strength = match (is_intercept, coef.k > 2) {
            (false, _) => 1.0,
            (true, true) => 1e-8,
            (true, false) => 0.0,
        };
        evaluation.value += 0.5 * strength * t * t;
        evaluation.grad[i] += strength * t;
        evaluation.hess[i * dim + i] += strength;
    }
}

/// Solves `h · x = b` for symmetric positive definite `h` (Cholesky); `None` if not PD.
fn solve_spd(mut h: Vec<f64>, mut b: Vec<f64>) -> Option<Vec<f64>> {
    let n = b.len();
    for j in 0..n {
        let diag = h[j * n + j] - (0..j).map(|k| h[j * n + k] * h[j * n + k]).sum::<f64>();
        if diag.is_nan() || diag <= 0.0 {
            return None;
        }
        let d = diag.sqrt();
        h[j * n + j] = d;
        for i in j + 1..n {
            let s = h[i * n + j] - (0..j).map(|k| h[i * n + k] * h[j * n + k]).sum::<f64>();
            h[i * n + j] = s / d;
        }
    }
    for i in 0..n {
        b[i] = (b[i] - (0..i).map(|k| h[i * n + k] * b[k]).sum::<f64>()) / h[i * n + i];
    }
    for i in (0..n).rev() {
        b[i] = (b[i] - (i + 1..n).map(|k| h[k * n + i] * b[k]).sum::<f64>()) / h[i * n + i];
    }
    Some(b)
}

/// Newton's method with step halving; one pass over the patterns per accepted
/// step. Stops when the Newton decrement gᵀH⁻¹g / 2 (the predicted decrease,
/// Boyd & Vandenberghe 2004, "Convex Optimization", §9.5.1) falls below 1e-12
/// relative to the objective, before rounding noise can stall the line search.
fn newton(
    coef: &mut Coefficients,
    patterns: &Patterns,
    c: f64,
    max_iter: usize,
) -> Result<(), String> {
    let mut current = evaluate(coef, patterns, &coef.theta, c);
    for _ in 0..max_iter {
        let step = solve_spd(current.hess.clone(), current.grad.clone())
            .ok_or("Newton system is not positive definite")?;
        let decrement: f64 = current
            .grad
            .iter()
            .zip(&step)
            .map(|(g, s)| g * s)
            .sum::<f64>()
            / 2.0;
        if decrement <= 1e-12 * current.value.abs().max(1.0) {
            break;
        }
        let mut scale = 1.0;
        let accepted = (0..40).find_map(|_| {
            let trial: Vec<f64> = coef
                .theta
                .iter()
                .zip(&step)
                .map(|(t, s)| t - scale * s)
                .collect();
            let next = evaluate(coef, patterns, &trial, c);
            scale /= 2.0;
            (next.value <= current.value).then_some((trial, next))
        });
        let Some((trial, next)) = accepted else { break };
        coef.theta = trial;
        current = next;
    }
    Ok(())
}

/// A fitted logistic model.
struct FittedLogistic {
    design: Design,
    coef: Coefficients,
}

impl Fitted for FittedLogistic {
    fn predict_proba(&self, columns: &[&EncodedColumn], rows: &[usize]) -> Vec<f64> {
        let k = self.coef.k;
        let mut x = SparseRow::default();
        let mut out = vec![0.0; rows.len() * k];
        for (&row, p) in rows.iter().zip(out.chunks_exact_mut(k)) {
            self.design.features(columns, row, &mut x);
            self.coef.proba(&self.coef.theta, &x.index, &x.value, p);
        }
        out
    }
}

impl Surrogate for LogisticSurrogate {
    fn name(&self) -> &'static str {
        "logistic"
    }

    fn fit(
        &self,
        columns: &[&EncodedColumn],
        target: &[u32],
        n_classes: usize,
        train: &[usize],
    ) -> Result<Box<dyn Fitted>, SurrogateError> {
        check_inputs(self.name(), columns, n_classes, train.len())?;
        let design = Design::fit(columns, train, self.max_one_hot.max(1));
        let patterns = Patterns::build(&design, columns, target, n_classes, train);
        let prior = class_shares(target, n_classes, train);
        let mut coef = Coefficients::start(n_classes, design.width, &prior);
        self.solve(&mut coef, &patterns)?;
        Ok(Box::new(FittedLogistic { design, coef }))
    }

    /// One numeric column with indexed values (no more distinct values than
    /// rows): each fold is fitted on the class counts of the distinct values
    /// (one counting pass for all folds) and scored once per value.
    fn out_of_fold(
        &self,
        columns: &[&EncodedColumn],
        folded: FoldedTarget<'_>,
    ) -> Result<Scores, SurrogateError> {
        let rows = folded.classes.len();
        let distinct = match columns {
            [column] if column.raw.is_some() => distinct_values(column, rows),
            _ => None,
        };
        let Some((values, of_row)) = distinct else {
            return fold_by_fold(self, columns, folded);
        };
        check_inputs(self.name(), columns, folded.n_classes, rows)?;
        let k = folded.n_classes;
        let counts = FoldCounts::new(&of_row, values.len() + 1, folded);
        let per_fold: Vec<Vec<f64>> = (0..folded.n_folds as u8)
            .into_par_iter()
            .map(|fold| self.fit_histogram(&values, &counts.training_table(fold), k))
            .collect::<Result<_, _>>()?;
        let mut proba = vec![0.0; rows * k];
        for ((p, &v), &fold) in proba.chunks_exact_mut(k).zip(&of_row).zip(folded.folds) {
            let table = &per_fold[usize::from(fold)];
            p.copy_from_slice(&table[v as usize * k..(v as usize + 1) * k]);
        }
        Ok(Scores {
            n_classes: k,
            proba,
        })
    }
}

impl LogisticSurrogate {
    fn solve(&self, coef: &mut Coefficients, patterns: &Patterns) -> Result<(), SurrogateError> {
        newton(coef, patterns, self.inverse_penalty, self.max_iter).map_err(|reason| {
            SurrogateError {
                model: self.name(),
                reason,
            }
        })
    }

    /// Fits one fold from `counts` (`(values + 1) × k`, missing last) and
    /// returns the class probabilities of every value and of a missing one.
    fn fit_histogram(
        &self,
        values: &[f64],
        counts: &[f64],
        k: usize,
    ) -> Result<Vec<f64>, SurrogateError> {
        let rows_of = |v: usize| counts[v * k..(v + 1) * k].iter().sum::<f64>();
        let observed: Vec<f64> = (0..values.len()).map(rows_of).collect();
        let block = Block::numeric_from_counts(values, &observed, rows_of(values.len()));
        let numbers: Vec<f64> = values.iter().copied().chain([f64::NAN]).collect();
        let mut x = SparseRow::default();
        let features_of = |v: f64, x: &mut SparseRow| {
            x.index.clear();
            x.value.clear();
            block.push_number(v, 0, x);
        };
        let mut patterns = Patterns {
            start: vec![0],
            ..Patterns::default()
        };
        for (v, cell) in numbers.iter().zip(counts.chunks_exact(k)) {
            if cell.iter().sum::<f64>() > 0.0 {
                features_of(*v, &mut x);
                patterns.push_counts(&x, cell);
            }
        }
        let mut prior = vec![0.0; k];
        for cell in counts.chunks_exact(k) {
            prior.iter_mut().zip(cell).for_each(|(p, c)| *p += c);
        }
        super::normalise(&mut prior);
        let mut coef = Coefficients::start(k, block.width(), &prior);
        self.solve(&mut coef, &patterns)?;
        let mut table = vec![0.0; numbers.len() * k];
        for (&v, out) in numbers.iter().zip(table.chunks_exact_mut(k)) {
            features_of(v, &mut x);
            coef.proba(&coef.theta, &x.index, &x.value, out);
        }
        Ok(table)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::encode::{encode_integer_coded, encode_levels};
    use crate::surrogate::testing::{
        assert_probability_rows, folded, max_difference, rounded, toy,
    };

    #[test]
    fn one_hot_fit_reproduces_cell_shares_when_counts_dwarf_the_penalty() {
        // Without penalty, logistic regression on a one-hot (saturated) design
        // reproduces each level's observed share (McCullagh & Nelder 1989,
        // "Generalized Linear Models", §4.4: fitted margins equal observed
        // ones). With ½‖w‖² and 20 000 rows per level the shift is of order
        // w / n ≈ 1e-4, so 1e-3 bounds it.
        let levels: Vec<&str> = (0..60_000).map(|i| ["a", "b", "c"][i % 3]).collect();
        let target: Vec<u32> = (0..60_000)
            .map(|i| u32::from((i / 3) % 10 < [2, 5, 9][i % 3]))
            .collect();
        let x = encode_levels(
            "x",
            FeatureKind::Categorical,
            levels.iter().map(|s| Some(*s)),
        );
        let train: Vec<usize> = (0..60_000).collect();
        let model = LogisticSurrogate::default()
            .fit(&[&x], &target, 2, &train)
            .unwrap();
        let proba = model.predict_proba(&[&x], &[0, 1, 2]);
        for (level, share) in [0.2, 0.5, 0.9].iter().enumerate() {
            assert!((proba[2 * level + 1] - share).abs() < 1e-3, "{proba:?}");
        }
    }

    #[test]
    fn median_is_the_middle_value_or_the_mean_of_the_two_middle_values() {
        // Definition of the sample median (e.g. numpy.median documentation).
        assert_eq!(weighted_median(&[1.0, 2.0, 3.0], &[1.0, 1.0, 1.0]), 2.0);
        assert_eq!(weighted_median(&[1.0, 2.0, 3.0, 4.0], &[1.0; 4]), 2.5);
        // Counts stand for repeated rows: 1, 1, 1, 5 has median (1 + 1) / 2 = 1,
        // and 1, 5, 5, 5, 9 has median 5.
        assert_eq!(weighted_median(&[1.0, 5.0], &[3.0, 1.0]), 1.0);
        assert_eq!(weighted_median(&[1.0, 5.0, 9.0], &[1.0, 3.0, 1.0]), 5.0);
    }

    #[test]
    fn fits_on_value_counts_equal_fits_on_rows() {
        // The per-fold histogram path minimises the same objective over the
        // same data as fitting the rows: probabilities agree up to the order
        // of floating-point sums (1e-9 leaves ample room over ~1e-13 seen).
        let (columns, target) = toy(5_000, 3, 8);
        let column = rounded(&columns);
        let folds = crate::data::folds::stratified_folds(&target, 3, 5, 0);
        let model = LogisticSurrogate::default();
        let fast = model.out_of_fold(&[&column], folded(&target, 3, &folds));
        let slow = fold_by_fold(&model, &[&column], folded(&target, 3, &folds));
        let worst = max_difference(&fast.unwrap(), &slow.unwrap());
        assert!(worst < 1e-9, "{worst}");
    }

    #[test]
    fn missing_indicator_carries_a_missingness_signal() {
        // Missing values only in class 1 and no signal in the observed values:
        // the indicator alone must rank missing rows above observed ones.
        let values: Vec<f64> = (0..400)
            .map(|i| {
                if i % 4 == 3 && i % 8 == 7 {
                    f64::NAN
                } else {
                    f64::from(i % 5)
                }
            })
            .collect();
        let target: Vec<u32> = (0..400).map(|i| u32::from(i % 4 == 3)).collect();
        let x = encode_integer_coded("x", values);
        let train: Vec<usize> = (0..400).collect();
        let model = LogisticSurrogate::default()
            .fit(&[&x], &target, 2, &train)
            .unwrap();
        let proba = model.predict_proba(&[&x], &[7, 3]);
        assert!(proba[1] > proba[3], "{proba:?}");
    }

    #[test]
    fn multinomial_probabilities_sum_to_one() {
        let (columns, target) = toy(3_000, 4, 3);
        let refs: Vec<&EncodedColumn> = columns.iter().collect();
        let train: Vec<usize> = (0..2_000).collect();
        let rows: Vec<usize> = (2_000..3_000).collect();
        let model = LogisticSurrogate::default()
            .fit(&refs, &target, 4, &train)
            .unwrap();
        assert_probability_rows(&model.predict_proba(&refs, &rows), 4);
    }
}
