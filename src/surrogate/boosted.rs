//! Histogram gradient boosting over the whole feature set.
//!
//! Gradient boosting with second-order (Newton) leaf values on binned
//! features (Friedman 2001, "Greedy function approximation: a gradient
//! boosting machine", Ann. Statist. 29; Chen & Guestrin 2016, "XGBoost", KDD,
//! eq. 6–7 for leaf values and split gain; Ke et al. 2017, "LightGBM", NeurIPS,
//! for histograms, leaf-wise growth and the histogram subtraction trick).
//! Defaults follow scikit-learn's `HistGradientBoostingClassifier`: learning
//! rate 0.1, 100 iterations, 31 leaves grown best-first, 20 rows per leaf, no
//! L2 penalty, at most 255 bins per numeric column (quantiles of the training
//! fold, missing values in their own bin routed to the better side), native
//! categorical splits (categories ordered by gradient/hessian ratio, Fisher
//! 1958, "On grouping for maximum homogeneity", JASA 53), binary log-loss or
//! softmax with one tree per class, and early stopping on a stratified 10%
//! validation split above 10 000 training rows.
//!
//! Histograms are built per feature in parallel, each as one sequential sum in
//! row order, so the model is bit-identical at any thread count.

use super::{Fitted, Surrogate, SurrogateError, check_inputs, class_shares};
use crate::data::EncodedColumn;
use crate::rng::SplitMix64;
use rayon::prelude::*;

/// Least hessian a child may carry (scikit-learn's `min_hessian_to_split`).
const MIN_CHILD_HESSIAN: f64 = 1e-3;
/// Fewest rows a category needs to take part in a categorical split, also the
/// smoothing added to its hessian when ordering categories (as scikit-learn).
const MIN_CATEGORY_SUPPORT: f64 = 10.0;
/// Most categories on the left of a categorical split.
const MAX_CATEGORY_THRESHOLD: usize = 32;
/// Rows used to find quantile bin edges; more add little precision.
const BINNING_SAMPLE: usize = 200_000;
/// Probabilities are kept in [ε, 1 − ε] when turned into log-odds or logs.
const PROBABILITY_FLOOR: f64 = 1e-15;

/// The boosted surrogate's parameters.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoostedSurrogate {
    /// Shrinkage applied to every leaf value.
    pub learning_rate: f64,
    /// Boosting iterations at most (each adds one tree per class, one in all when binary).
    pub max_iter: usize,
    /// Leaves per tree, grown best-first (largest gain next).
    pub max_leaf_nodes: usize,
    /// Fewest fitting rows a leaf may hold.
    pub min_samples_leaf: usize,
    /// L2 penalty λ on leaf values: value = −G / (H + λ).
    pub l2_regularization: f64,
    /// Bins for non-missing values of a numeric column (≤ 255).
    pub max_bins: usize,
    /// Early stopping is used when the training rows exceed this.
    pub early_stopping_above: usize,
    /// Share of the training rows held out (per class) to watch the loss.
    pub validation_fraction: f64,
    /// Stop after this many iterations without a validation-loss gain above `tolerance`.
    pub n_iter_no_change: usize,
    pub tolerance: f64,
    /// Seed of the validation split and of the binning subsample.
    pub seed: u64,
}

impl Default for BoostedSurrogate {
    fn default() -> Self {
        Self {
            learning_rate: 0.1,
            max_iter: 100,
            max_leaf_nodes: 31,
            min_samples_leaf: 20,
            l2_regularization: 0.0,
            max_bins: 255,
            early_stopping_above: 10_000,
            validation_fraction: 0.1,
            n_iter_no_change: 10,
            tolerance: 1e-7,
            seed: 0,
        }
    }
}

/// How one column's values become bins `0..value_bins`, with bin `value_bins` for missing.
#[derive(Debug, Clone)]
enum Binner {
    /// Bin = number of thresholds below the value.
    Thresholds(Vec<f64>),
    /// Bin per code (categorical columns with at most `max_bins` levels).
    Codes { bin_of_code: Vec<u8>, missing: u8 },
}

impl Binner {
    /// Numeric columns and categoricals with too many levels (taken as ordinal codes) use thresholds.
    fn fit(column: &EncodedColumn, rows: &[usize], max_bins: usize, seed: u64) -> Self {
        let non_missing_levels =
            column.n_levels as usize - usize::from(column.missing_code.is_some());
        if column.raw.is_none() && non_missing_levels <= max_bins {
            let missing = non_missing_levels as u8;
            let bin_of_code = (0..column.n_levels)
                .map(|c| {
                    if Some(c) == column.missing_code {
                        missing
                    } else {
                        c as u8
                    }
                })
                .collect();
            return Self::Codes {
                bin_of_code,
                missing,
            };
        }
        let mut values: Vec<f64> = sample_rows(rows, seed)
            .iter()
            .map(|&r| numeric_value(column, r))
            .filter(|v| !v.is_nan())
            .collect();
        values.sort_unstable_by(f64::total_cmp);
        Self::Thresholds(bin_thresholds(&values, max_bins))
    }

    fn value_bins(&self) -> usize {
        match self {
            Self::Thresholds(t) => t.len() + 1,
            Self::Codes { missing, .. } => usize::from(*missing),
        }
    }

    fn bin(&self, column: &EncodedColumn, row: usize) -> u8 {
        match self {
            Self::Thresholds(t) => {
                let v = numeric_value(column, row);
                if v.is_nan() {
                    t.len() as u8 + 1
                } else {
                    t.partition_point(|&e| e < v) as u8
                }
            }
            Self::Codes {
                bin_of_code,
                missing,
            } => bin_of_code
                .get(column.codes[row] as usize)
                .copied()
                .unwrap_or(*missing),
        }
    }

    fn is_categorical(&self) -> bool {
        matches!(self, Self::Codes { .. })
    }
}

/// The raw value, or the ordinal code of a column without raw values (`NaN` = missing).
fn numeric_value(column: &EncodedColumn, row: usize) -> f64 {
    match &column.raw {
        Some(raw) => raw.value(row),
        None if Some(column.codes[row]) == column.missing_code => f64::NAN,
        None => f64::from(column.codes[row]),
    }
}

/// At most `BINNING_SAMPLE` of `rows`, drawn without replacement with the seed.
fn sample_rows(rows: &[usize], seed: u64) -> Vec<usize> {
    let mut sample = rows.to_vec();
    if sample.len() > BINNING_SAMPLE {
        SplitMix64::derive(seed, 0xB175).shuffle(&mut sample);
        sample.truncate(BINNING_SAMPLE);
    }
    sample
}

/// Bin thresholds of sorted values: midpoints between distinct values when they
/// are few, otherwise the midpoint-interpolated quantiles at j / max_bins.
fn bin_thresholds(sorted: &[f64], max_bins: usize) -> Vec<f64> {
    let mut distinct = sorted.to_vec();
    distinct.dedup();
    if distinct.len() <= max_bins {
        return distinct
            .windows(2)
            .map(|w| w[0] + (w[1] - w[0]) / 2.0)
            .collect();
    }
    let n = sorted.len();
    let mut thresholds: Vec<f64> = (1..max_bins)
        .map(|j| {
            let position = (n - 1) as f64 * j as f64 / max_bins as f64;
            let (lo, hi) = (position.floor() as usize, position.ceil() as usize);
            (sorted[lo] + sorted[hi]) / 2.0
        })
        .collect();
    thresholds.dedup();
    thresholds
}

/// Binned training matrix, feature-major.
struct Binned {
    bins: Vec<Vec<u8>>,
    /// Value bins per feature (the missing bin is this index).
    value_bins: Vec<usize>,
    categorical: Vec<bool>,
}

impl Binned {
    fn new(binners: &[Binner], columns: &[&EncodedColumn], rows: &[usize]) -> Self {
        let bins = binners
            .par_iter()
            .zip(columns)
            .map(|(b, c)| rows.iter().map(|&r| b.bin(c, r)).collect())
            .collect();
        Self {
            bins,
            value_bins: binners.iter().map(Binner::value_bins).collect(),
            categorical: binners.iter().map(Binner::is_categorical).collect(),
        }
    }

    fn width(&self, feature: usize) -> usize {
        self.value_bins[feature] + 1
    }
}

/// Gradient, hessian and row count of a bin or node.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
struct Sums {
    g: f64,
    h: f64,
    n: f64,
}

impl Sums {
    fn add(&mut self, other: Sums) {
        self.g += other.g;
        self.h += other.h;
        self.n += other.n;
    }

    fn minus(self, other: Sums) -> Sums {
        Sums {
            g: self.g - other.g,
            h: self.h - other.h,
            n: self.n - other.n,
        }
    }

    /// G² / (H + λ): the loss reduction of a Newton step on these rows (Chen & Guestrin 2016, eq. 6).
    fn score(self, l2: f64) -> f64 {
        self.g * self.g / (self.h + l2)
    }
}

/// Sums per bin of one feature: its value bins, then its missing bin.
type Histogram = Vec<Sums>;

/// How a split sends rows left.
#[derive(Debug, Clone, PartialEq)]
enum Rule {
    /// Value bins `≤ bin` go left; the missing bin goes left iff `missing_left`.
    Threshold { bin: u8, missing_left: bool },
    /// Bins in the set go left.
    Categories([u64; 4]),
}

impl Rule {
    fn goes_left(&self, bin: u8, missing_bin: u8) -> bool {
        match self {
            Self::Threshold {
                bin: t,
                missing_left,
            } => {
                if bin == missing_bin {
                    *missing_left
                } else {
                    bin <= *t
                }
            }
            Self::Categories(set) => set[usize::from(bin / 64)] >> (bin % 64) & 1 == 1,
        }
    }
}

/// The best split found for a node.
#[derive(Debug, Clone)]
struct Split {
    feature: usize,
    rule: Rule,
    gain: f64,
}

struct SplitContext<'a> {
    params: &'a BoostedSurrogate,
    total: Sums,
}

impl SplitContext<'_> {
    fn gain(&self, left: Sums) -> Option<f64> {
        let right = self.total.minus(left);
        let min_rows = self.params.min_samples_leaf as f64;
        let allowed = left.n >= min_rows
            && right.n >= min_rows
            && left.h >= MIN_CHILD_HESSIAN
            && right.h >= MIN_CHILD_HESSIAN;
        let l2 = self.params.l2_regularization;
        let gain = left.score(l2) + right.score(l2) - self.total.score(l2);
        (allowed && gain > 0.0).then_some(gain)
    }

    /// Numeric: thresholds with missing right (left to right), then with missing left.
    fn numeric(&self, feature: usize, hist: &[Sums]) -> Option<Split> {
        let value_bins = hist.len() - 1;
        let missing = hist[value_bins];
        let mut best: Option<Split> = None;
        let mut offer = |gain: Option<f64>, bin: usize, missing_left: bool| {
            if let Some(gain) = gain.filter(|&g| best.as_ref().is_none_or(|b| g > b.gain)) {
                let rule = Rule::Threshold {
                    bin: bin as u8,
                    missing_left,
                };
                best = Some(Split {
                    feature,
                    rule,
                    gain,
                });
            }
        };
        let last = if missing.n > 0.0 {
            value_bins
        } else {
            value_bins - 1
        };
        let mut left = Sums::default();
        for (bin, sums) in hist.iter().enumerate().take(last) {
            left.add(*sums);
            offer(self.gain(left), bin, false);
        }
        if missing.n > 0.0 {
            let mut left = missing;
            for (bin, sums) in hist.iter().enumerate().take(value_bins.saturating_sub(1)) {
                left.add(*sums);
                offer(self.gain(left), bin, true);
            }
        }
        best
    }

    /// Categorical: categories with enough rows ordered by G / (H + smoothing),
    /// prefixes from either end of that order go left.
    fn categorical(&self, feature: usize, hist: &[Sums]) -> Option<Split> {
        let mut used: Vec<usize> = (0..hist.len())
            .filter(|&b| hist[b].n >= MIN_CATEGORY_SUPPORT)
            .collect();
        if used.len() <= 1 {
            return None;
        }
        let ratio = |b: usize| hist[b].g / (hist[b].h + MIN_CATEGORY_SUPPORT);
        used.sort_by(|&a, &b| ratio(a).total_cmp(&ratio(b)).then(a.cmp(&b)));
        let max_left = MAX_CATEGORY_THRESHOLD.min(used.len().div_ceil(2));
        let mut best: Option<(f64, Vec<usize>)> = None;
        for order in [used.clone(), used.iter().rev().copied().collect()] {
            let mut left = Sums::default();
            for size in 1..=max_left {
                left.add(hist[order[size - 1]]);
                if let Some(g) = self
                    .gain(left)
                    .filter(|&g| best.as_ref().is_none_or(|b| g > b.0))
                {
                    best = Some((g, order[..size].to_vec()));
                }
            }
        }
        best.map(|(gain, members)| {
            let mut set = [0u64; 4];
            members.iter().for_each(|&b| set[b / 64] |= 1 << (b % 64));
            Split {
                feature,
                rule: Rule::Categories(set),
                gain,
            }
        })
    }
}

/// A node of a fitted tree.
#[derive(Debug, Clone)]
enum Node {
    Leaf(f64),
    Branch {
        feature: usize,
        rule: Rule,
        left: usize,
        right: usize,
        /// Loss reduction of the split (G²/H of the children minus the parent's).
        gain: f64,
    },
}

/// One regression tree on bins.
#[derive(Debug, Clone)]
struct Tree {
    nodes: Vec<Node>,
}

impl Tree {
    fn value(&self, binned: &Binned, row: usize) -> f64 {
        let mut id = 0;
        loop {
            match &self.nodes[id] {
                Node::Leaf(v) => return *v,
                Node::Branch {
                    feature,
                    rule,
                    left,
                    right,
                    ..
                } => {
                    let missing = binned.value_bins[*feature] as u8;
                    id = if rule.goes_left(binned.bins[*feature][row], missing) {
                        *left
                    } else {
                        *right
                    };
                }
            }
        }
    }
}

/// A leaf while growing: its rows (a range of the shared index buffer), histograms and best split.
struct GrowingLeaf {
    node: usize,
    start: usize,
    end: usize,
    total: Sums,
    hist: Vec<Histogram>,
    split: Option<Split>,
}

/// Grows one tree best-first on gradients `g`, hessians `h`.
struct TreeGrower<'a> {
    params: &'a BoostedSurrogate,
    binned: &'a Binned,
    g: &'a [f64],
    h: &'a [f64],
    rows: Vec<u32>,
    nodes: Vec<Node>,
}

impl TreeGrower<'_> {
    /// Per-feature histograms of rows `start..end`; gradients are gathered
    /// into row order once so each feature's pass reads them contiguously.
    fn histograms(&self, start: usize, end: usize) -> Vec<Histogram> {
        let rows = &self.rows[start..end];
        let gradients: Vec<[f64; 2]> = rows
            .iter()
            .map(|&r| [self.g[r as usize], self.h[r as usize]])
            .collect();
        (0..self.binned.bins.len())
            .into_par_iter()
            .map(|f| {
                let mut hist = vec![Sums::default(); self.binned.width(f)];
                let bins = &self.binned.bins[f];
                for (&r, &[g, h]) in rows.iter().zip(&gradients) {
                    let cell = &mut hist[usize::from(bins[r as usize])];
                    cell.g += g;
                    cell.h += h;
                    cell.n += 1.0;
                }
                hist
            })
            .collect()
    }

    fn best_split(&self, total: Sums, hist: &[Histogram]) -> Option<Split> {
        if total.n < 2.0 * self.params.min_samples_leaf as f64 {
            return None;
        }
        let context = SplitContext {
            params: self.params,
            total,
        };
        let candidates: Vec<Option<Split>> = hist
            .par_iter()
            .enumerate()
            .map(|(f, hist)| {
                if self.binned.categorical[f] {
                    context.categorical(f, hist)
                } else {
                    context.numeric(f, hist)
                }
            })
            .collect();
        candidates
            .into_iter()
            .flatten()
            .fold(None, |best: Option<Split>, s| match &best {
                Some(b) if b.gain >= s.gain => best,
                _ => Some(s),
            })
    }

    fn leaf(&mut self, start: usize, end: usize, hist: Vec<Histogram>) -> GrowingLeaf {
        let total = hist.first().map_or(Sums::default(), |h| {
            h.iter().fold(Sums::default(), |mut acc, s| {
                acc.add(*s);
                acc
            })
        });
        let split = self.best_split(total, &hist);
        self.nodes.push(Node::Leaf(self.leaf_value(total)));
        GrowingLeaf {
            node: self.nodes.len() - 1,
            start,
            end,
            total,
            hist,
            split,
        }
    }

    fn leaf_value(&self, total: Sums) -> f64 {
        -self.params.learning_rate * total.g / (total.h + self.params.l2_regularization + 1e-15)
    }

    /// Stable partition of the leaf's rows; returns where the right part starts.
    fn partition(&mut self, leaf: &GrowingLeaf, split: &Split) -> usize {
        let bins = &self.binned.bins[split.feature];
        let missing = self.binned.value_bins[split.feature] as u8;
        let mut right = Vec::new();
        let mut middle = leaf.start;
        for i in leaf.start..leaf.end {
            let r = self.rows[i];
            if split.rule.goes_left(bins[r as usize], missing) {
                self.rows[middle] = r;
                middle += 1;
            } else {
                right.push(r);
            }
        }
        self.rows[middle..leaf.end].copy_from_slice(&right);
        middle
    }

    /// Splits a leaf; the smaller child's histograms are built, the larger's subtracted.
    fn split(&mut self, leaf: GrowingLeaf, split: Split) -> (GrowingLeaf, GrowingLeaf) {
        let middle = self.partition(&leaf, &split);
        let left_smaller = middle - leaf.start <= leaf.end - middle;
        let (small_start, small_end) = if left_smaller {
            (leaf.start, middle)
        } else {
            (middle, leaf.end)
        };
        let small = self.histograms(small_start, small_end);
        let large: Vec<Histogram> = leaf
            .hist
            .iter()
            .zip(&small)
            .map(|(p, s)| p.iter().zip(s).map(|(p, s)| p.minus(*s)).collect())
            .collect();
        let (left_hist, right_hist) = if left_smaller {
            (small, large)
        } else {
            (large, small)
        };
        let left = self.leaf(leaf.start, middle, left_hist);
        let right = self.leaf(middle, leaf.end, right_hist);
        self.nodes[leaf.node] = Node::Branch {
            feature: split.feature,
            rule: split.rule,
            left: left.node,
            right: right.node,
            gain: split.gain,
        };
        (left, right)
    }

    /// Grows the tree; returns it and each leaf's value per training row position.
    fn grow(mut self) -> (Tree, Vec<(usize, usize, f64)>, Vec<u32>) {
        let n = self.rows.len();
        let hist = self.histograms(0, n);
        let root = self.leaf(0, n, hist);
        let mut leaves = vec![root];
        while leaves.len() < self.params.max_leaf_nodes {
            let best = leaves
                .iter()
                .enumerate()
                .filter_map(|(i, l)| l.split.as_ref().map(|s| (i, s.gain)))
                .max_by(|a, b| a.1.total_cmp(&b.1).then(b.0.cmp(&a.0)));
            let Some((index, _)) = best else { break };
            let mut leaf = leaves.remove(index);
            let Some(split) = leaf.split.take() else {
                break;
            };
            let (left, right) = self.split(leaf, split);
            leaves.push(left);
            leaves.push(right);
        }
        let ranges = leaves
            .iter()
            .map(|l| (l.start, l.end, self.leaf_value(l.total)))
            .collect();
        (Tree { nodes: self.nodes }, ranges, self.rows)
    }
}

/// Log-odds (binary: one slot) or log-probabilities (one slot per class) of the training shares.
fn baseline(shares: &[f64]) -> Vec<f64> {
    let clamp = |p: f64| p.clamp(PROBABILITY_FLOOR, 1.0 - PROBABILITY_FLOOR);
    if shares.len() == 2 {
        let p = clamp(shares[1]);
        vec![(p / (1.0 - p)).ln()]
    } else {
        shares.iter().map(|&p| clamp(p).ln()).collect()
    }
}

/// Class probabilities from one row's raw scores (sigmoid for one slot, softmax otherwise).
fn probabilities(raw: &[f64], out: &mut [f64]) {
    if raw.len() == 1 {
        let p = 1.0 / (1.0 + (-raw[0]).exp());
        out[0] = 1.0 - p;
        out[1] = p;
        return;
    }
    let top = raw.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    out.iter_mut()
        .zip(raw)
        .for_each(|(o, &z)| *o = (z - top).exp());
    super::normalise(out);
}

/// Probability of `class` from one row's raw scores, as [`probabilities`] gives it.
fn class_probability(raw: &[f64], class: usize) -> f64 {
    if raw.len() == 1 {
        let p = 1.0 / (1.0 + (-raw[0]).exp());
        return if class == 1 { p } else { 1.0 - p };
    }
    let top = raw.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    (raw[class] - top).exp() / raw.iter().map(|&z| (z - top).exp()).sum::<f64>()
}

/// Log-loss of one row: −log p(y) from its raw scores.
fn row_loss(raw: &[f64], class: usize) -> f64 {
    if raw.len() == 1 {
        let z = raw[0];
        let softplus = if z > 0.0 {
            z + (-z).exp().ln_1p()
        } else {
            z.exp().ln_1p()
        };
        softplus - if class == 1 { z } else { 0.0 }
    } else {
        let top = raw.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        top + raw.iter().map(|&z| (z - top).exp()).sum::<f64>().ln() - raw[class]
    }
}

/// Gradients and hessians of the log-loss, slot-major (`slots × rows`):
/// g = p − 1[y = class], h = p (1 − p) for each slot's class.
fn gradients(raw: &[f64], classes: &[u32], slots: usize) -> (Vec<f64>, Vec<f64>) {
    let n = classes.len();
    let mut g = vec![0.0; slots * n];
    let mut h = vec![0.0; slots * n];
    let slot_class = |s: usize| if slots == 1 { 1 } else { s };
    for slot in 0..slots {
        let class = slot_class(slot) as u32;
        g[slot * n..(slot + 1) * n]
            .par_iter_mut()
            .zip(h[slot * n..(slot + 1) * n].par_iter_mut())
            .enumerate()
            .for_each(|(row, (g, h))| {
                let q = class_probability(&raw[row * slots..(row + 1) * slots], class as usize);
                *g = q - f64::from(u8::from(classes[row] == class));
                *h = q * (1.0 - q);
            });
    }
    (g, h)
}

/// Mean log-loss of rows given their raw scores (sequential sum: reproducible).
fn mean_loss(raw: &[f64], classes: &[u32], slots: usize) -> f64 {
    let total: f64 = raw
        .chunks_exact(slots)
        .zip(classes)
        .map(|(z, &y)| row_loss(z, y as usize))
        .sum();
    total / classes.len().max(1) as f64
}

/// Training rows split into fitting rows and a stratified validation sample.
fn validation_split(
    params: &BoostedSurrogate,
    target: &[u32],
    k: usize,
    train: &[usize],
) -> (Vec<usize>, Vec<usize>) {
    if train.len() <= params.early_stopping_above {
        return (train.to_vec(), Vec::new());
    }
    let mut by_class: Vec<Vec<usize>> = vec![Vec::new(); k];
    train
        .iter()
        .for_each(|&r| by_class[target[r] as usize].push(r));
    let mut validation = Vec::new();
    for (class, rows) in by_class.iter_mut().enumerate() {
        SplitMix64::derive(params.seed, 0x5A11 + class as u64).shuffle(rows);
        let take = (rows.len() as f64 * params.validation_fraction).round() as usize;
        validation.extend_from_slice(&rows[..take]);
    }
    validation.sort_unstable();
    let mut is_validation = vec![false; target.len()];
    validation.iter().for_each(|&r| is_validation[r] = true);
    let fitting = train
        .iter()
        .copied()
        .filter(|&r| !is_validation[r])
        .collect();
    (fitting, validation)
}

/// True when none of the last `n` losses beat the one before them by more than `tolerance`
/// (scikit-learn's rule for `scoring="loss"`).
fn should_stop(losses: &[f64], n: usize, tolerance: f64) -> bool {
    if losses.len() <= n {
        return false;
    }
    let reference = losses[losses.len() - n - 1];
    losses[losses.len() - n..]
        .iter()
        .all(|&l| l >= reference - tolerance)
}

/// A fitted boosted model.
pub struct FittedBoosted {
    binners: Vec<Binner>,
    k: usize,
    baseline: Vec<f64>,
    /// Trees per iteration, one per slot.
    trees: Vec<Vec<Tree>>,
}

impl FittedBoosted {
    /// Total split gain per input column over every tree: 0 for a column no
    /// split ever used, which the model then never reads (its predictions do
    /// not depend on that column at all).
    #[must_use]
    pub fn split_gains(&self) -> Vec<f64> {
        let mut gains = vec![0.0; self.binners.len()];
        for tree in self.trees.iter().flatten() {
            for node in &tree.nodes {
                if let Node::Branch { feature, gain, .. } = node {
                    gains[*feature] += gain;
                }
            }
        }
        gains
    }

    fn bin(&self, columns: &[&EncodedColumn], rows: &[usize]) -> Binned {
        Binned::new(&self.binners, columns, rows)
    }

    /// Raw scores of binned rows, row-major (`rows × slots`).
    fn raw_scores(&self, binned: &Binned, n_rows: usize) -> Vec<f64> {
        let slots = self.baseline.len();
        let mut raw: Vec<f64> = (0..n_rows)
            .flat_map(|_| self.baseline.iter().copied())
            .collect();
        raw.par_chunks_exact_mut(slots)
            .enumerate()
            .for_each(|(row, z)| {
                for iteration in &self.trees {
                    z.iter_mut()
                        .zip(iteration)
                        .for_each(|(v, tree)| *v += tree.value(binned, row));
                }
            });
        raw
    }
}

impl Fitted for FittedBoosted {
    fn predict_proba(&self, columns: &[&EncodedColumn], rows: &[usize]) -> Vec<f64> {
        let binned = self.bin(columns, rows);
        let raw = self.raw_scores(&binned, rows.len());
        let mut proba = vec![0.0; rows.len() * self.k];
        proba
            .chunks_exact_mut(self.k)
            .zip(raw.chunks_exact(self.baseline.len()))
            .for_each(|(p, z)| probabilities(z, p));
        proba
    }
}

impl BoostedSurrogate {
    /// Adds one tree per slot to `model`, updating the fitting rows' raw scores.
    fn boost_once(
        &self,
        model: &mut FittedBoosted,
        binned: &Binned,
        classes: &[u32],
        raw: &mut [f64],
    ) {
        let slots = model.baseline.len();
        let (g, h) = gradients(raw, classes, slots);
        let n = classes.len();
        let mut iteration = Vec::with_capacity(slots);
        for slot in 0..slots {
            let grower = TreeGrower {
                params: self,
                binned,
                g: &g[slot * n..(slot + 1) * n],
                h: &h[slot * n..(slot + 1) * n],
                rows: (0..classes.len() as u32).collect(),
                nodes: Vec::new(),
            };
            let (tree, leaves, rows) = grower.grow();
            for (start, end, value) in leaves {
                rows[start..end]
                    .iter()
                    .for_each(|&r| raw[r as usize * slots + slot] += value);
            }
            iteration.push(tree);
        }
        model.trees.push(iteration);
    }
}

impl BoostedSurrogate {
    /// Fits on `train` rows; the concrete model, whose [`FittedBoosted::split_gains`]
    /// tell which columns it uses.
    ///
    /// Training is deterministic and each column is binned on its own (its
    /// binning seed derives from its name, not its position), and the best
    /// split is the first column with the largest gain. So a column no split
    /// used can be removed without changing a single tree: refitting without
    /// it gives bit-identical predictions.
    ///
    /// # Errors
    /// No column, no training row, fewer than two classes, or invalid parameters.
    pub fn fit_model(
        &self,
        columns: &[&EncodedColumn],
        target: &[u32],
        n_classes: usize,
        train: &[usize],
    ) -> Result<FittedBoosted, SurrogateError> {
        check_inputs(self.name(), columns, n_classes, train.len())?;
        if !(1..=255).contains(&self.max_bins) || self.max_leaf_nodes < 2 {
            return Err(SurrogateError {
                model: self.name(),
                reason: "max_bins must be in 1..=255 and max_leaf_nodes at least 2".to_string(),
            });
        }
        let (fitting, validation) = validation_split(self, target, n_classes, train);
        let binners: Vec<Binner> = columns
            .par_iter()
            .map(|c| Binner::fit(c, &fitting, self.max_bins, column_seed(self.seed, &c.name)))
            .collect();
        let baseline = baseline(&class_shares(target, n_classes, &fitting));
        let mut model = FittedBoosted {
            binners,
            k: n_classes,
            baseline,
            trees: Vec::new(),
        };
        let binned = model.bin(columns, &fitting);
        let classes: Vec<u32> = fitting.iter().map(|&r| target[r]).collect();
        let slots = model.baseline.len();
        let mut raw: Vec<f64> = classes
            .iter()
            .flat_map(|_| model.baseline.iter().copied())
            .collect();
        let validation_binned = model.bin(columns, &validation);
        let validation_classes: Vec<u32> = validation.iter().map(|&r| target[r]).collect();
        let mut validation_raw = model.raw_scores(&validation_binned, validation.len());
        let mut losses = vec![mean_loss(&validation_raw, &validation_classes, slots)];
        for _ in 0..self.max_iter {
            self.boost_once(&mut model, &binned, &classes, &mut raw);
            if validation.is_empty() {
                continue;
            }
            let newest = model.trees.last().map_or(&[][..], Vec::as_slice);
            validation_raw
                .par_chunks_exact_mut(slots)
                .enumerate()
                .for_each(|(row, z)| {
                    z.iter_mut()
                        .zip(newest)
                        .for_each(|(v, tree)| *v += tree.value(&validation_binned, row));
                });
            losses.push(mean_loss(&validation_raw, &validation_classes, slots));
            if should_stop(&losses, self.n_iter_no_change, self.tolerance) {
                break;
            }
        }
        Ok(model)
    }
}

/// Binning seed of a column: the model seed mixed with an FNV-1a hash of the
/// column's name, so a column bins the same whatever else is in the model.
fn column_seed(seed: u64, name: &str) -> u64 {
    let hash = name.bytes().fold(0xcbf2_9ce4_8422_2325_u64, |h, b| {
        (h ^ u64::from(b)).wrapping_mul(0x0100_0000_01b3)
    });
    seed ^ hash
}

impl Surrogate for BoostedSurrogate {
    fn name(&self) -> &'static str {
        "boosted"
    }

    fn fit(
        &self,
        columns: &[&EncodedColumn],
        target: &[u32],
        n_classes: usize,
        train: &[usize],
    ) -> Result<Box<dyn Fitted>, SurrogateError> {
        Ok(Box::new(self.fit_model(columns, target, n_classes, train)?))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::folds::stratified_folds;
    use crate::stats::auc::auc_from_scores;
    use crate::surrogate::cross_fit;
    use crate::surrogate::testing::{assert_probability_rows, toy};

    #[test]
    fn few_distinct_values_get_midpoint_thresholds() {
        // Below max_bins distinct values every value gets its own bin, split
        // halfway between neighbours (scikit-learn's `_find_binning_thresholds`).
        assert_eq!(bin_thresholds(&[1.0, 1.0, 2.0, 4.0], 255), vec![1.5, 3.0]);
    }

    #[test]
    fn early_stopping_waits_for_n_iterations_without_gain() {
        // Rule of scikit-learn's `_should_stop`: stop when none of the last n
        // losses improves on the loss n + 1 iterations back by more than tol.
        assert!(!should_stop(&[1.0, 0.9, 0.9], 2, 1e-7));
        assert!(should_stop(&[1.0, 0.9, 0.9, 0.9], 2, 1e-7));
        assert!(!should_stop(&[1.0, 0.9, 0.9, 0.8], 2, 1e-7));
    }

    #[test]
    fn a_categorical_signal_is_found_and_probabilities_sum_to_one() {
        // Class 1 lives on levels 1 and 4 only: a native categorical split
        // separates that set in one step, which an ordinal threshold cannot.
        let (columns, _) = toy(2_000, 2, 7);
        let target: Vec<u32> = columns[1]
            .codes
            .iter()
            .map(|&c| u32::from(c == 1 || c == 4))
            .collect();
        let refs: Vec<&EncodedColumn> = vec![&columns[1]];
        let folds = stratified_folds(&target, 2, 5, 0);
        let scores = cross_fit(&BoostedSurrogate::default(), &refs, &target, 2, &folds, 5).unwrap();
        assert_probability_rows(&scores.proba, 2);
        let positive: Vec<bool> = target.iter().map(|&t| t == 1).collect();
        assert!(auc_from_scores(&scores.column(1), &positive).unwrap() > 0.999);
    }

    #[test]
    fn a_column_no_split_uses_can_be_removed_without_changing_the_model() {
        // A level held by 10 rows can never be split off: both children of a
        // split need `min_samples_leaf` = 20 rows (scikit-learn's default).
        // Such a column gets zero split gain, and dropping it from the middle
        // of the column list (shifting the later columns' positions) leaves
        // every prediction bit-identical: training is deterministic.
        let (columns, target) = toy(2_000, 2, 3);
        let rare = crate::data::encode::encode_levels(
            "rare",
            crate::data::FeatureKind::Categorical,
            (0..2_000).map(|r| Some(if r % 200 == 0 { "b" } else { "a" })),
        );
        let with: Vec<&EncodedColumn> = vec![&columns[0], &rare, &columns[1]];
        let without: Vec<&EncodedColumn> = vec![&columns[0], &columns[1]];
        let train: Vec<usize> = (0..1_500).collect();
        let held_out: Vec<usize> = (1_500..2_000).collect();
        let model = BoostedSurrogate::default();
        let fitted = model.fit_model(&with, &target, 2, &train).unwrap();
        let gains = fitted.split_gains();
        assert_eq!(gains[1], 0.0);
        assert!(gains[0] > 0.0 && gains[2] > 0.0);
        let refitted = model.fit_model(&without, &target, 2, &train).unwrap();
        assert_eq!(
            fitted.predict_proba(&with, &held_out),
            refitted.predict_proba(&without, &held_out)
        );
    }
}
