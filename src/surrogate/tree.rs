//! A shallow exact classification tree (Gini), grown depth-first.
//!
//! Splits follow CART (Breiman et al. 1984, "Classification and Regression
//! Trees", ch. 4): at each node the threshold maximising the Gini impurity
//! decrease, placed halfway between consecutive distinct training values.
//! Numeric columns split on raw values; categorical columns on their ordinal
//! codes with the missing level ordered first (value −1). Missing raw values
//! are tried on both sides of every threshold and sent to the better one, and
//! an "observed vs missing" split is also tried; a node that saw no missing
//! value in training sends them to its larger child. Each node's candidate
//! values are scanned as a sorted run of distinct values with class counts,
//! so the search is exact, not binned.

use super::{Fitted, Surrogate, SurrogateError, check_inputs};
use crate::data::{EncodedColumn, FeatureKind};

/// Rank given to a missing raw value.
const MISSING: u32 = u32::MAX;

/// The tree surrogate's parameters.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct TreeSurrogate {
    /// Maximum depth (root = depth 0); 4 keeps the tree readable and the fit fast.
    pub max_depth: usize,
    /// Fewest training rows a leaf may hold.
    pub min_samples_leaf: usize,
}

impl Default for TreeSurrogate {
    fn default() -> Self {
        Self {
            max_depth: 4,
            min_samples_leaf: 1,
        }
    }
}

/// The value a tree sees for `row`: the raw number (`NaN` = missing) or the
/// ordinal code of a categorical column, with its missing level as −1.
#[must_use]
pub fn ordinal_value(column: &EncodedColumn, row: usize) -> f64 {
    match &column.raw {
        Some(raw) => raw[row],
        None if Some(column.codes[row]) == column.missing_code => -1.0,
        None => f64::from(column.codes[row]),
    }
}

/// One column's training values as ranks into its sorted distinct values.
struct Ranked {
    /// Rank per row of the whole table (only training rows are filled); `MISSING` for NaN.
    rank: Vec<u32>,
    /// Distinct training values, ascending.
    values: Vec<f64>,
}

impl Ranked {
    fn new(column: &EncodedColumn, train: &[usize]) -> Self {
        if column.raw.is_none() || column.kind == FeatureKind::IntegerCoded {
            Self::from_codes(column, train)
        } else {
            Self::from_sorted_raw(column, train)
        }
    }

    /// Codes already ordered by value (categoricals; integer-coded columns), O(N).
    fn from_codes(column: &EncodedColumn, train: &[usize]) -> Self {
        let mut value_of: Vec<Option<f64>> = vec![None; column.n_levels as usize];
        for &row in train {
            let code = column.codes[row] as usize;
            if value_of[code].is_none() {
                value_of[code] = Some(ordinal_value(column, row));
            }
        }
        let mut present: Vec<(f64, usize)> = value_of
            .iter()
            .enumerate()
            .filter_map(|(code, v)| v.filter(|x| !x.is_nan()).map(|x| (x, code)))
            .collect();
        present.sort_by(|a, b| a.0.total_cmp(&b.0));
        let mut rank_of_code = vec![MISSING; column.n_levels as usize];
        for (rank, &(_, code)) in present.iter().enumerate() {
            rank_of_code[code] = rank as u32;
        }
        let mut rank = vec![MISSING; column.codes.len()];
        for &row in train {
            rank[row] = rank_of_code[column.codes[row] as usize];
        }
        Self {
            rank,
            values: present.into_iter().map(|(v, _)| v).collect(),
        }
    }

    /// Continuous raw values: one sort of the training rows, O(N log N).
    fn from_sorted_raw(column: &EncodedColumn, train: &[usize]) -> Self {
        let mut by_value: Vec<(f64, usize)> = train
            .iter()
            .map(|&row| (ordinal_value(column, row), row))
            .filter(|(v, _)| !v.is_nan())
            .collect();
        by_value.sort_unstable_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        let mut rank = vec![MISSING; column.codes.len()];
        let mut values: Vec<f64> = Vec::new();
        for &(v, row) in &by_value {
            if values.last() != Some(&v) {
                values.push(v);
            }
            rank[row] = (values.len() - 1) as u32;
        }
        Self { rank, values }
    }
}

/// Class counts of a node's rows per distinct value present, ascending, plus the missing rows.
struct NodeHistogram {
    ranks: Vec<u32>,
    /// `ranks.len() × k` class counts.
    counts: Vec<f64>,
    missing: Vec<f64>,
}

impl NodeHistogram {
    fn new(ranked: &Ranked, rows: &[usize], target: &[u32], k: usize) -> Self {
        let mut missing = vec![0.0; k];
        let mut keys: Vec<u64> = Vec::with_capacity(rows.len());
        for &row in rows {
            let r = ranked.rank[row];
            if r == MISSING {
                missing[target[row] as usize] += 1.0;
            } else {
                keys.push(u64::from(r) * k as u64 + u64::from(target[row]));
            }
        }
        let (ranks, counts) = if keys.len() * 8 < ranked.values.len() {
            run_lengths_by_sort(keys, k)
        } else {
            run_lengths_dense(&keys, k, ranked.values.len())
        };
        Self {
            ranks,
            counts,
            missing,
        }
    }
}

/// Distinct ranks and class counts of `rank·k + class` keys, for small nodes.
fn run_lengths_by_sort(mut keys: Vec<u64>, k: usize) -> (Vec<u32>, Vec<f64>) {
    keys.sort_unstable();
    let mut ranks: Vec<u32> = Vec::new();
    let mut counts: Vec<f64> = Vec::new();
    for key in keys {
        let rank = (key / k as u64) as u32;
        if ranks.last() != Some(&rank) {
            ranks.push(rank);
            counts.extend(std::iter::repeat_n(0.0, k));
        }
        let base = counts.len() - k;
        counts[base + (key % k as u64) as usize] += 1.0;
    }
    (ranks, counts)
}

/// Same as [`run_lengths_by_sort`] through a dense table, for large nodes.
fn run_lengths_dense(keys: &[u64], k: usize, n_ranks: usize) -> (Vec<u32>, Vec<f64>) {
    let mut table = vec![0.0; n_ranks * k];
    for &key in keys {
        table[key as usize] += 1.0;
    }
    let mut ranks = Vec::new();
    let mut counts = Vec::new();
    for (rank, cell) in table.chunks_exact(k).enumerate() {
        if cell.iter().any(|&c| c > 0.0) {
            ranks.push(rank as u32);
            counts.extend_from_slice(cell);
        }
    }
    (ranks, counts)
}

/// Σ_k n_k² / n: the Gini proxy (larger is purer); n·(1 − Gini) = this.
fn gini_proxy(counts: &[f64]) -> f64 {
    let n: f64 = counts.iter().sum();
    if n <= 0.0 {
        0.0
    } else {
        counts.iter().map(|c| c * c).sum::<f64>() / n
    }
}

/// A candidate split of one node.
#[derive(Debug, Clone, Copy)]
struct Split {
    feature: usize,
    threshold: f64,
    missing_left: bool,
    score: f64,
}

/// A node of the fitted tree.
#[derive(Debug, Clone)]
enum Node {
    Leaf(Vec<f64>),
    Branch {
        feature: usize,
        threshold: f64,
        missing_left: bool,
        left: usize,
        right: usize,
    },
}

/// Halfway between two consecutive values, kept below the upper one (as CART does).
fn midpoint(low: f64, high: f64) -> f64 {
    let mid = low / 2.0 + high / 2.0;
    if mid == high || !mid.is_finite() {
        low
    } else {
        mid
    }
}

struct Grower<'a> {
    params: TreeSurrogate,
    ranked: Vec<Ranked>,
    target: &'a [u32],
    k: usize,
    nodes: Vec<Node>,
}

impl Grower<'_> {
    fn class_counts(&self, rows: &[usize]) -> Vec<f64> {
        let mut counts = vec![0.0; self.k];
        for &row in rows {
            counts[self.target[row] as usize] += 1.0;
        }
        counts
    }

    /// Best split of `rows` on `feature`: thresholds with missing right, then
    /// with missing left, then observed-vs-missing; a later one wins only if strictly better.
    fn best_on_feature(&self, feature: usize, rows: &[usize], best: &mut Option<Split>) {
        let ranked = &self.ranked[feature];
        let hist = NodeHistogram::new(ranked, rows, self.target, self.k);
        let k = self.k;
        let observed: Vec<f64> = (0..k)
            .map(|c| hist.counts.iter().skip(c).step_by(k).sum())
            .collect();
        let has_missing = hist.missing.iter().any(|&c| c > 0.0);
        let min_leaf = self.params.min_samples_leaf.max(1) as f64;
        let mut consider = |left: &[f64], missing_left: bool, threshold: f64| {
            let right: Vec<f64> = (0..k)
                .map(|c| observed[c] + hist.missing[c] - left[c])
                .collect();
            let (n_left, n_right): (f64, f64) = (left.iter().sum(), right.iter().sum());
            if n_left < min_leaf || n_right < min_leaf {
                return;
            }
            // A node that saw no missing value sends them to its larger child.
            let missing_left = if has_missing {
                missing_left
            } else {
                n_left > n_right
            };
            let score = gini_proxy(left) + gini_proxy(&right);
            if best.is_none_or(|b| score > b.score) {
                *best = Some(Split {
                    feature,
                    threshold,
                    missing_left,
                    score,
                });
            }
        };
        for missing_left in [false, true].into_iter().take(1 + usize::from(has_missing)) {
            let mut left: Vec<f64> = if missing_left {
                hist.missing.clone()
            } else {
                vec![0.0; k]
            };
            for i in 0..hist.ranks.len().saturating_sub(1) {
                left.iter_mut()
                    .zip(&hist.counts[i * k..(i + 1) * k])
                    .for_each(|(l, c)| *l += c);
                let low = ranked.values[hist.ranks[i] as usize];
                let high = ranked.values[hist.ranks[i + 1] as usize];
                consider(&left, missing_left, midpoint(low, high));
            }
        }
        if has_missing && !hist.ranks.is_empty() {
            consider(&observed, false, f64::INFINITY);
        }
    }

    fn grow(&mut self, rows: &[usize], depth: usize) -> usize {
        let counts = self.class_counts(rows);
        let n = rows.len();
        let pure = counts.iter().filter(|&&c| c > 0.0).count() <= 1;
        let too_small = n < 2 || n < 2 * self.params.min_samples_leaf;
        let split = if depth >= self.params.max_depth || pure || too_small {
            None
        } else {
            let mut best = None;
            (0..self.ranked.len()).for_each(|f| self.best_on_feature(f, rows, &mut best));
            best
        };
        let Some(split) = split else {
            self.nodes
                .push(Node::Leaf(counts.iter().map(|c| c / n as f64).collect()));
            return self.nodes.len() - 1;
        };
        let (left_rows, right_rows) = self.partition(rows, &split);
        let id = self.nodes.len();
        self.nodes.push(Node::Leaf(Vec::new()));
        let left = self.grow(&left_rows, depth + 1);
        let right = self.grow(&right_rows, depth + 1);
        self.nodes[id] = Node::Branch {
            feature: split.feature,
            threshold: split.threshold,
            missing_left: split.missing_left,
            left,
            right,
        };
        id
    }

    fn partition(&self, rows: &[usize], split: &Split) -> (Vec<usize>, Vec<usize>) {
        let ranked = &self.ranked[split.feature];
        rows.iter().partition(|&&row| {
            let r = ranked.rank[row];
            if r == MISSING {
                split.missing_left
            } else {
                ranked.values[r as usize] <= split.threshold
            }
        })
    }
}

/// A fitted tree.
struct FittedTree {
    nodes: Vec<Node>,
}

impl FittedTree {
    fn leaf_of(&self, columns: &[&EncodedColumn], row: usize) -> &[f64] {
        let mut id = 0;
        loop {
            match &self.nodes[id] {
                Node::Leaf(proba) => return proba,
                Node::Branch {
                    feature,
                    threshold,
                    missing_left,
                    left,
                    right,
                } => {
                    let x = ordinal_value(columns[*feature], row);
                    id = if x.is_nan() {
                        if *missing_left { *left } else { *right }
                    } else if x <= *threshold {
                        *left
                    } else {
                        *right
                    };
                }
            }
        }
    }
}

impl Fitted for FittedTree {
    fn predict_proba(&self, columns: &[&EncodedColumn], rows: &[usize]) -> Vec<f64> {
        rows.iter()
            .flat_map(|&row| self.leaf_of(columns, row).iter().copied())
            .collect()
    }
}

impl Surrogate for TreeSurrogate {
    fn name(&self) -> &'static str {
        "tree"
    }

    fn fit(
        &self,
        columns: &[&EncodedColumn],
        target: &[u32],
        n_classes: usize,
        train: &[usize],
    ) -> Result<Box<dyn Fitted>, SurrogateError> {
        check_inputs(self.name(), columns, n_classes, train)?;
        let mut grower = Grower {
            params: *self,
            ranked: columns.iter().map(|c| Ranked::new(c, train)).collect(),
            target,
            k: n_classes,
            nodes: Vec::new(),
        };
        grower.grow(train, 0);
        Ok(Box::new(FittedTree {
            nodes: grower.nodes,
        }))
    }
}
