//! L2-penalised logistic regression, fitted by Newton's method on grouped rows.
//!
//! Objective (the one scikit-learn's `LogisticRegression(C)` minimises):
//! C · Σ_i −log p(y_i | x_i) + ½‖w‖², intercepts unpenalised; binary uses one
//! weight vector (class 0 as reference), more classes the full softmax with one
//! vector per class (Hastie, Tibshirani & Friedman 2009, "The Elements of
//! Statistical Learning", §4.4.1 for the Newton/IRLS update). Rows with the
//! same design row are merged into one weighted pattern first, so a discrete
//! feature costs O(N) once and then O(levels) per iteration. A single numeric
//! column merges rows with equal values (real data is rounded: a few thousand
//! distinct values in a million rows), so each iteration costs O(distinct
//! values); several continuous columns keep one pattern per row.
//!
//! Features per column: a numeric or integer-coded column gives its raw value
//! with training-fold median imputation, plus a missing indicator when the
//! training fold has missing values, both standardised with training-fold mean
//! and (population) standard deviation; any other column gives a one-hot of its
//! codes. A column with more than `max_one_hot` levels keeps its
//! `max_one_hot − 1` most frequent training levels and pools the rest into one
//! column, which bounds the Newton system; such columns are better screened by
//! the frequency surrogate anyway.

use super::{Fitted, Surrogate, SurrogateError, check_inputs, class_shares};
use crate::data::{EncodedColumn, FeatureKind};
use crate::keys::KeyIndex;

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

    fn fit_numeric(raw: &[f64], train: &[usize]) -> Self {
        let mut observed: Vec<f64> = train
            .iter()
            .map(|&r| raw[r])
            .filter(|v| !v.is_nan())
            .collect();
        let indicator = observed.len() < train.len();
        let median = median(&mut observed);
        let n = train.len() as f64;
        let missing_share = 1.0 - observed.len() as f64 / n;
        let imputed = |v: f64| if v.is_nan() { median } else { v };
        let mean = train.iter().map(|&r| imputed(raw[r])).sum::<f64>() / n;
        let var = train
            .iter()
            .map(|&r| (imputed(raw[r]) - mean).powi(2))
            .sum::<f64>()
            / n;
        let indicator_var = missing_share * (1.0 - missing_share);
        Self::Numeric {
            median,
            indicator,
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
            Self::Numeric {
                median,
                indicator,
                mean,
                scale,
            } => {
                let v = column.raw.as_ref().map_or(f64::NAN, |raw| raw[row]);
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
            Self::OneHot { slot_of_code } => {
                if let Some(&slot) = slot_of_code.get(column.codes[row] as usize) {
                    out.push(base + slot, 1.0);
                }
            }
        }
    }
}

/// scikit-learn's StandardScaler leaves a constant feature unscaled.
fn unit_if_zero(sd: f64) -> f64 {
    if sd > 0.0 { sd } else { 1.0 }
}

/// Median of `values` (mean of the two middle ones for an even count); 0 when empty.
fn median(values: &mut [f64]) -> f64 {
    let n = values.len();
    if n == 0 {
        return 0.0;
    }
    let (_, &mut upper, _) = values.select_nth_unstable_by(n / 2, f64::total_cmp);
    if n % 2 == 1 {
        return upper;
    }
    let lower = values[..n / 2]
        .iter()
        .copied()
        .fold(f64::NEG_INFINITY, f64::max);
    (lower + upper) / 2.0
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
        let blocks: Vec<Block> = columns
            .iter()
            .map(|c| Block::fit(c, train, max_one_hot))
            .collect();
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

/// How training rows are merged into patterns.
enum Grouping {
    /// Discrete columns with few combinations: the mixed-radix code indexes
    /// `pattern_of_key` directly.
    Radix(Vec<u64>),
    /// One column: rows with the same value (raw bits, or code) are numbered
    /// by hashing, in the order the patterns are created.
    Hashed(KeyIndex),
    /// Every row is its own pattern.
    Rows,
}

impl Grouping {
    fn of(columns: &[&EncodedColumn], train: &[usize]) -> Self {
        match pattern_radix(columns) {
            Some(radix) => Self::Radix(radix),
            None if columns.len() == 1 => Self::Hashed(KeyIndex::with_limit(train.len())),
            None => Self::Rows,
        }
    }
}

/// The value of `row` in a single column as a hash key: the raw number's
/// bits (all missing values alike, −0 as +0), or the code.
fn value_key(column: &EncodedColumn, row: usize) -> u64 {
    match &column.raw {
        Some(raw) if raw[row].is_nan() => u64::MAX,
        Some(raw) => (raw[row] + 0.0).to_bits(),
        None => u64::from(column.codes[row]),
    }
}

impl Patterns {
    fn build(
        design: &Design,
        columns: &[&EncodedColumn],
        target: &[u32],
        k: usize,
        train: &[usize],
    ) -> Self {
        let mut grouping = Grouping::of(columns, train);
        let n_keys = match &grouping {
            Grouping::Radix(radix) => radix
                .last()
                .zip(columns.last())
                .map_or(0, |(&r, c)| r as usize * c.n_levels as usize),
            _ => 0,
        };
        let mut pattern_of_key = vec![usize::MAX; n_keys];
        let mut patterns = Self {
            start: vec![0],
            ..Self::default()
        };
        let mut x = SparseRow::default();
        for &row in train {
            let known = match &mut grouping {
                Grouping::Radix(radix) => {
                    let key = columns
                        .iter()
                        .zip(radix.iter())
                        .map(|(c, &r)| u64::from(c.codes[row]) * r)
                        .sum::<u64>() as usize;
                    let known = pattern_of_key[key];
                    if known == usize::MAX {
                        pattern_of_key[key] = patterns.len();
                    }
                    (known != usize::MAX).then_some(known)
                }
                Grouping::Hashed(index) => index
                    .number(value_key(columns[0], row))
                    .map(|p| p as usize)
                    .filter(|&p| p < patterns.len()),
                Grouping::Rows => None,
            };
            let pattern = known.unwrap_or_else(|| {
                design.features(columns, row, &mut x);
                patterns.push(&x, k);
                patterns.len() - 1
            });
            patterns.counts[pattern * k + target[row] as usize] += 1.0;
        }
        patterns
    }

    fn push(&mut self, x: &SparseRow, k: usize) {
        self.index.extend_from_slice(&x.index);
        self.value.extend_from_slice(&x.value);
        self.start.push(self.index.len());
        self.counts.extend(std::iter::repeat_n(0.0, k));
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
        newton(&mut coef, &patterns, self.inverse_penalty, self.max_iter).map_err(|reason| {
            SurrogateError {
                model: self.name(),
                reason,
            }
        })?;
        Ok(Box::new(FittedLogistic { design, coef }))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::encode::{encode_integer_coded, encode_levels};
    use crate::surrogate::testing::{assert_probability_rows, toy};

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
        assert_eq!(median(&mut [3.0, 1.0, 2.0]), 2.0);
        assert_eq!(median(&mut [4.0, 1.0, 3.0, 2.0]), 2.5);
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
