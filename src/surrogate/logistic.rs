//! L2-penalised logistic regression, fitted by Newton's method on grouped rows.
//!
//! Objective (the one scikit-learn's `LogisticRegression(C)` minimises):
//! C · Σ_i −log p(y_i | x_i) + ½‖w‖², intercepts unpenalised; binary uses one
//! weight vector (class 0 as reference), more classes the full softmax with one
//! vector per class (Hastie, Tibshirani & Friedman 2009, "The Elements of
//! Statistical Learning", §4.4.1 for the Newton/IRLS update). Rows with the
//! same design row are merged into one weighted pattern first, so a discrete
//! feature costs O(N) once and then O(levels) per iteration; continuous
//! columns keep one pattern per row with one or two non-zero features.
//!
//! Features per column: a numeric or integer-coded column gives its raw value
//! with training-fold median imputation, plus a missing indicator when the
//! training fold has missing values, both standardised with training-fold mean
//! and (population) standard deviation; any other column gives a one-hot of its
//! codes. A column with more than `max_one_hot` levels keeps its
//! `max_one_hot − 1` most frequent training levels and pools the rest into one
//! column, which bounds the Newton system; such columns are better screened by
//! the frequency surrogate anyway.

use super::{Fitted, Surrogate, SurrogateError, check_inputs};
use crate::data::{EncodedColumn, FeatureKind};

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
    fn push(&self, column: &EncodedColumn, row: usize, base: u32, out: &mut Vec<(u32, f64)>) {
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
                out.push((base, (value - mean[0]) / scale[0]));
                if *indicator {
                    out.push((
                        base + 1,
                        (f64::from(u8::from(missing)) - mean[1]) / scale[1],
                    ));
                }
            }
            Self::OneHot { slot_of_code } => {
                if let Some(&slot) = slot_of_code.get(column.codes[row] as usize) {
                    out.push((base + slot, 1.0));
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

    fn features(&self, columns: &[&EncodedColumn], row: usize, out: &mut Vec<(u32, f64)>) {
        out.clear();
        for ((block, column), &base) in self.blocks.iter().zip(columns).zip(&self.offsets) {
            block.push(column, row, base, out);
        }
    }
}

/// Weighted design rows: sparse features and class counts per pattern.
struct Patterns {
    features: Vec<Vec<(u32, f64)>>,
    /// `features.len() × k` class counts.
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
        match pattern_radix(columns) {
            Some(radix) => Self::grouped(design, columns, target, k, train, &radix),
            None => Self::per_row(design, columns, target, k, train),
        }
    }

    fn grouped(
        design: &Design,
        columns: &[&EncodedColumn],
        target: &[u32],
        k: usize,
        train: &[usize],
        radix: &[u64],
    ) -> Self {
        let key = |row: usize| -> usize {
            columns
                .iter()
                .zip(radix)
                .map(|(c, &r)| u64::from(c.codes[row]) * r)
                .sum::<u64>() as usize
        };
        let n_keys = radix
            .last()
            .zip(columns.last())
            .map_or(1, |(&r, c)| r as usize * c.n_levels as usize);
        let mut pattern_of_key = vec![u32::MAX; n_keys];
        let mut patterns = Self {
            features: Vec::new(),
            counts: Vec::new(),
        };
        for &row in train {
            let slot = &mut pattern_of_key[key(row)];
            if *slot == u32::MAX {
                *slot = patterns.features.len() as u32;
                let mut f = Vec::new();
                design.features(columns, row, &mut f);
                patterns.features.push(f);
                patterns.counts.extend(std::iter::repeat_n(0.0, k));
            }
            patterns.counts[*slot as usize * k + target[row] as usize] += 1.0;
        }
        patterns
    }

    fn per_row(
        design: &Design,
        columns: &[&EncodedColumn],
        target: &[u32],
        k: usize,
        train: &[usize],
    ) -> Self {
        let mut counts = vec![0.0; train.len() * k];
        let features = train
            .iter()
            .enumerate()
            .map(|(i, &row)| {
                counts[i * k + target[row] as usize] = 1.0;
                let mut f = Vec::new();
                design.features(columns, row, &mut f);
                f
            })
            .collect();
        Self { features, counts }
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
    fn slots(&self) -> usize {
        if self.k == 2 { 1 } else { self.k }
    }

    fn slot_class(&self, slot: usize) -> usize {
        if self.k == 2 { 1 } else { slot }
    }

    /// Class probabilities of a sparse design row (stable softmax).
    fn proba(&self, x: &[(u32, f64)], theta: &[f64]) -> Vec<f64> {
        let stride = self.width + 1;
        let mut logits = vec![0.0; self.k];
        for slot in 0..self.slots() {
            let w = &theta[slot * stride..(slot + 1) * stride];
            logits[self.slot_class(slot)] =
                w[self.width] + x.iter().map(|&(j, v)| w[j as usize] * v).sum::<f64>();
        }
        let top = logits.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        logits.iter_mut().for_each(|z| *z = (*z - top).exp());
        super::normalise(&mut logits);
        logits
    }
}

/// Penalised negative log-likelihood, its gradient and Hessian at `theta`.
fn objective(
    coef: &Coefficients,
    patterns: &Patterns,
    theta: &[f64],
    c: f64,
    with_derivatives: bool,
) -> (f64, Vec<f64>, Vec<f64>) {
    let stride = coef.width + 1;
    let dim = coef.slots() * stride;
    let mut value = 0.0;
    let mut grad = vec![0.0; if with_derivatives { dim } else { 0 }];
    let mut hess = vec![0.0; if with_derivatives { dim * dim } else { 0 }];
    let mut x_full: Vec<(u32, f64)> = Vec::new();
    for (x, counts) in patterns
        .features
        .iter()
        .zip(patterns.counts.chunks_exact(coef.k))
    {
        let p = coef.proba(x, theta);
        let n: f64 = counts.iter().sum();
        value -= c * counts
            .iter()
            .zip(&p)
            .map(|(&m, &q)| if m > 0.0 { m * q.max(1e-300).ln() } else { 0.0 })
            .sum::<f64>();
        if !with_derivatives {
            continue;
        }
        x_full.clear();
        x_full.extend_from_slice(x);
        x_full.push((coef.width as u32, 1.0));
        for a in 0..coef.slots() {
            let ca = coef.slot_class(a);
            let residual = c * (n * p[ca] - counts[ca]);
            for &(j, v) in &x_full {
                grad[a * stride + j as usize] += residual * v;
            }
            for b in 0..coef.slots() {
                let cb = coef.slot_class(b);
                let curvature = c * n * p[ca] * (f64::from(u8::from(a == b)) - p[cb]);
                for &(i, vi) in &x_full {
                    let row = (a * stride + i as usize) * dim + b * stride;
                    for &(j, vj) in &x_full {
                        hess[row + j as usize] += curvature * vi * vj;
                    }
                }
            }
        }
    }
    add_penalty(
        coef,
        theta,
        &mut value,
        &mut grad,
        &mut hess,
        with_derivatives,
    );
    (value, grad, hess)
}

/// Adds ½‖w‖² (intercepts excluded). A 1e-8 ridge on multinomial intercepts
/// picks one point of their flat direction (softmax ignores a common shift),
/// which leaves every probability unchanged.
fn add_penalty(
    coef: &Coefficients,
    theta: &[f64],
    value: &mut f64,
    grad: &mut [f64],
    hess: &mut [f64],
    derivatives: bool,
) {
    let stride = coef.width + 1;
    let dim = coef.slots() * stride;
    for (i, &t) in theta.iter().enumerate() {
        let intercept = i % stride == coef.width;
        let strength = if !intercept {
            1.0
        } else if coef.k > 2 {
            1e-8
        } else {
            0.0
        };
        *value += 0.5 * strength * t * t;
        if derivatives {
            grad[i] += strength * t;
            hess[i * dim + i] += strength;
        }
    }
}

/// Solves `h · x = b` for symmetric positive definite `h` (Cholesky); `None` if not PD.
fn solve_spd(mut h: Vec<f64>, mut b: Vec<f64>) -> Option<Vec<f64>> {
    let n = b.len();
    for j in 0..n {
        let diag = h[j * n + j] - (0..j).map(|k| h[j * n + k] * h[j * n + k]).sum::<f64>();
        if !(diag > 0.0) {
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

/// Newton's method with step halving; stops when the objective stops moving.
fn newton(
    coef: &mut Coefficients,
    patterns: &Patterns,
    c: f64,
    max_iter: usize,
) -> Result<(), String> {
    for _ in 0..max_iter {
        let (value, grad, hess) = objective(coef, patterns, &coef.theta, c, true);
        let step = solve_spd(hess, grad).ok_or("Newton system is not positive definite")?;
        let mut scale = 1.0;
        let mut accepted = None;
        while scale > 1e-10 {
            let trial: Vec<f64> = coef
                .theta
                .iter()
                .zip(&step)
                .map(|(t, s)| t - scale * s)
                .collect();
            let (trial_value, _, _) = objective(coef, patterns, &trial, c, false);
            if trial_value <= value {
                accepted = Some((trial, trial_value));
                break;
            }
            scale /= 2.0;
        }
        let Some((trial, trial_value)) = accepted else {
            return Ok(());
        };
        coef.theta = trial;
        if value - trial_value <= 1e-12 * value.abs().max(1.0) {
            return Ok(());
        }
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
        let mut x = Vec::new();
        rows.iter()
            .flat_map(|&row| {
                self.design.features(columns, row, &mut x);
                self.coef.proba(&x, &self.coef.theta)
            })
            .collect()
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
        check_inputs(self.name(), columns, n_classes, train)?;
        let design = Design::fit(columns, train, self.max_one_hot.max(1));
        let patterns = Patterns::build(&design, columns, target, n_classes, train);
        let slots = if n_classes == 2 { 1 } else { n_classes };
        let mut coef = Coefficients {
            k: n_classes,
            width: design.width,
            theta: vec![0.0; slots * (design.width + 1)],
        };
        newton(&mut coef, &patterns, self.inverse_penalty, self.max_iter).map_err(|reason| {
            SurrogateError {
                model: self.name(),
                reason,
            }
        })?;
        Ok(Box::new(FittedLogistic { design, coef }))
    }
}
