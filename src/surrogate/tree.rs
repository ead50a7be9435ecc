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

use super::{
    Fitted, FoldCounts, FoldedTarget, Scores, Surrogate, SurrogateError, check_inputs,
    distinct_values, fold_by_fold,
};
use crate::data::{EncodedColumn, FeatureKind};
use rayon::prelude::*;

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
fn ordinal_value(column: &EncodedColumn, row: usize) -> f64 {
    match &column.raw {
        Some(raw) => raw.value(row),
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
    /// Training rows by ascending rank (ties in row order), missing rows last.
    order: Vec<u32>,
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
        let mut per_rank: Vec<u32> = vec![0; present.len() + 1];
        for &row in train {
            let r = rank_of_code[column.codes[row] as usize];
            rank[row] = r;
            per_rank[(r as usize).min(present.len())] += 1;
        }
        let mut next: Vec<u32> = per_rank
            .iter()
            .scan(0, |sum, &count| {
                let start = *sum;
                *sum += count;
                Some(start)
            })
            .collect();
        let mut order = vec![0u32; train.len()];
        for &row in train {
            let slot = &mut next[(rank[row] as usize).min(present.len())];
            order[*slot as usize] = row as u32;
            *slot += 1;
        }
        Self {
            rank,
            values: present.into_iter().map(|(v, _)| v).collect(),
            order,
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
        let missing_rows = train.iter().filter(|&&row| rank[row] == MISSING);
        let order = by_value
            .iter()
            .map(|&(_, row)| row)
            .chain(missing_rows.copied())
            .map(|row| row as u32)
            .collect();
        Self {
            rank,
            values,
            order,
        }
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

/// What growing a tree needs from a node's training data: its class counts,
/// its best split and its two children. Rows (any number of columns) and a
/// single column's histogram of distinct values implement it, and grow the
/// same tree.
trait TrainingData {
    type Node;
    fn class_counts(&self, node: &Self::Node) -> Vec<f64>;
    fn best_split(&self, node: &Self::Node) -> Option<Split>;
    fn split(&mut self, node: Self::Node, split: &Split) -> (Self::Node, Self::Node);
}

/// Grows the subtree of `node` depth-first into `nodes`; returns its id.
fn grow<T: TrainingData>(
    data: &mut T,
    node: T::Node,
    depth: usize,
    params: &TreeSurrogate,
    nodes: &mut Vec<Node>,
) -> usize {
    let counts = data.class_counts(&node);
    let n: f64 = counts.iter().sum();
    let pure = counts.iter().filter(|&&c| c > 0.0).count() <= 1;
    let too_small = n < 2.0 || n < 2.0 * params.min_samples_leaf as f64;
    let split = if depth >= params.max_depth || pure || too_small {
        None
    } else {
        data.best_split(&node)
    };
    let Some(split) = split else {
        nodes.push(Node::Leaf(counts.iter().map(|c| c / n).collect()));
        return nodes.len() - 1;
    };
    let (left_node, right_node) = data.split(node, &split);
    let id = nodes.len();
    nodes.push(Node::Leaf(Vec::new()));
    let left = grow(data, left_node, depth + 1, params, nodes);
    let right = grow(data, right_node, depth + 1, params, nodes);
    nodes[id] = Node::Branch {
        feature: split.feature,
        threshold: split.threshold,
        missing_left: split.missing_left,
        left,
        right,
    };
    id
}

/// Best split of a node on one feature by the Gini proxy Σ_k n_k²/n summed
/// over both children (n·(1 − Gini) per child; larger is purer). `observed`
/// yields the node's observed values in ascending order as (value index,
/// class, weight); `missing` holds the class counts of its missing values.
/// Thresholds are tried with missing right, then with missing left, then
/// observed-vs-missing; a later one wins only if strictly better.
fn best_on_feature<I>(
    feature: usize,
    values: &[f64],
    observed: I,
    missing: &[f64],
    min_leaf: f64,
    best: &mut Option<Split>,
) where
    I: Iterator<Item = (u32, usize, f64)> + Clone,
{
    let k = missing.len();
    let mut observed_counts = vec![0.0; k];
    observed
        .clone()
        .for_each(|(_, class, w)| observed_counts[class] += w);
    let has_missing = missing.iter().sum::<f64>() > 0.0;
    let total: Vec<f64> = observed_counts
        .iter()
        .zip(missing)
        .map(|(o, m)| o + m)
        .collect();
    let n_total: f64 = total.iter().sum();
    let mut consider = |left: &[f64], missing_left: bool, threshold: f64| {
        let n_left: f64 = left.iter().sum();
        let n_right = n_total - n_left;
        if n_left < min_leaf || n_right < min_leaf {
            return;
        }
        // A node that saw no missing value sends them to its larger child.
        let missing_left = if has_missing {
            missing_left
        } else {
            n_left > n_right
        };
        let left_squares: f64 = left.iter().map(|l| l * l).sum();
        let right_squares: f64 = total.iter().zip(left).map(|(t, l)| (t - l) * (t - l)).sum();
        let score = left_squares / n_left + right_squares / n_right;
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
            missing.to_vec()
        } else {
            vec![0.0; k]
        };
        let mut items = observed.clone().peekable();
        while let Some((low, class, w)) = items.next() {
            left[class] += w;
            match items.peek() {
                Some(&(high, _, _)) if high != low => {
                    let threshold = midpoint(values[low as usize], values[high as usize]);
                    consider(&left, missing_left, threshold);
                }
                _ => {}
            }
        }
    }
    if has_missing && observed_counts.iter().sum::<f64>() > 0.0 {
        consider(&observed_counts, false, f64::INFINITY);
    }
}

/// Training rows, kept sorted by each feature.
struct Rows<'a> {
    params: TreeSurrogate,
    ranked: Vec<Ranked>,
    target: &'a [u32],
    k: usize,
    /// Scratch: the side of each row at the split being applied.
    goes_left: Vec<bool>,
}

impl Rows<'_> {
    fn counts_of(&self, rows: &[u32]) -> Vec<f64> {
        let mut counts = vec![0.0; self.k];
        for &row in rows {
            counts[self.target[row as usize] as usize] += 1.0;
        }
        counts
    }
}

impl TrainingData for Rows<'_> {
    /// The node's rows sorted by each feature.
    type Node = Vec<Vec<u32>>;

    fn class_counts(&self, node: &Self::Node) -> Vec<f64> {
        self.counts_of(&node[0])
    }

    fn best_split(&self, node: &Self::Node) -> Option<Split> {
        let mut best = None;
        let min_leaf = self.params.min_samples_leaf.max(1) as f64;
        for (feature, sorted) in node.iter().enumerate() {
            let ranked = &self.ranked[feature];
            let observed_len = sorted.partition_point(|&row| ranked.rank[row as usize] != MISSING);
            let observed = sorted[..observed_len].iter().map(|&row| {
                let row = row as usize;
                (ranked.rank[row], self.target[row] as usize, 1.0)
            });
            let missing = self.counts_of(&sorted[observed_len..]);
            best_on_feature(
                feature,
                &ranked.values,
                observed,
                &missing,
                min_leaf,
                &mut best,
            );
        }
        best
    }

    /// Stable partition of every feature's sorted rows by the split.
    fn split(&mut self, node: Self::Node, split: &Split) -> (Self::Node, Self::Node) {
        let ranked = &self.ranked[split.feature];
        for &row in &node[0] {
            let r = ranked.rank[row as usize];
            self.goes_left[row as usize] = if r == MISSING {
                split.missing_left
            } else {
                ranked.values[r as usize] <= split.threshold
            };
        }
        node.into_iter()
            .map(|rows| {
                rows.into_iter()
                    .partition(|&row| self.goes_left[row as usize])
            })
            .unzip()
    }
}

/// One column's training counts per distinct value (ascending), with the
/// missing values' counts last: `(values + 1) × k`.
struct Histogram<'a> {
    params: TreeSurrogate,
    values: &'a [f64],
    counts: Vec<f64>,
    k: usize,
}

/// A node of a histogram: values `start..end`, and the missing bucket if `with_missing`.
#[derive(Debug, Clone, Copy)]
struct ValueRange {
    start: usize,
    end: usize,
    with_missing: bool,
}

impl Histogram<'_> {
    fn of_value(&self, v: usize) -> &[f64] {
        &self.counts[v * self.k..(v + 1) * self.k]
    }

    fn missing(&self, node: &ValueRange) -> Vec<f64> {
        if node.with_missing {
            self.of_value(self.values.len()).to_vec()
        } else {
            vec![0.0; self.k]
        }
    }
}

impl TrainingData for Histogram<'_> {
    type Node = ValueRange;

    fn class_counts(&self, node: &ValueRange) -> Vec<f64> {
        let mut counts = self.missing(node);
        for v in node.start..node.end {
            counts
                .iter_mut()
                .zip(self.of_value(v))
                .for_each(|(c, &x)| *c += x);
        }
        counts
    }

    fn best_split(&self, node: &ValueRange) -> Option<Split> {
        let observed = (node.start..node.end).flat_map(|v| {
            self.of_value(v)
                .iter()
                .enumerate()
                .filter(|&(_, &w)| w > 0.0)
                .map(move |(class, &w)| (v as u32, class, w))
        });
        let mut best = None;
        let min_leaf = self.params.min_samples_leaf.max(1) as f64;
        best_on_feature(
            0,
            self.values,
            observed,
            &self.missing(node),
            min_leaf,
            &mut best,
        );
        best
    }

    fn split(&mut self, node: ValueRange, split: &Split) -> (ValueRange, ValueRange) {
        let cut = node.start
            + self.values[node.start..node.end].partition_point(|&v| v <= split.threshold);
        (
            ValueRange {
                start: node.start,
                end: cut,
                with_missing: node.with_missing && split.missing_left,
            },
            ValueRange {
                start: cut,
                end: node.end,
                with_missing: node.with_missing && !split.missing_left,
            },
        )
    }
}

/// A fitted tree.
struct FittedTree {
    nodes: Vec<Node>,
}

impl FittedTree {
    fn leaf_of(&self, columns: &[&EncodedColumn], row: usize) -> &[f64] {
        self.leaf_for(|feature| ordinal_value(columns[feature], row))
    }

    /// The leaf reached by the values `value_of(feature)` (`NaN` = missing).
    fn leaf_for(&self, value_of: impl Fn(usize) -> f64) -> &[f64] {
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
                    let x = value_of(*feature);
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
        check_inputs(self.name(), columns, n_classes, train.len())?;
        let ranked: Vec<Ranked> = columns.iter().map(|c| Ranked::new(c, train)).collect();
        let sorted = ranked.iter().map(|r| r.order.clone()).collect();
        let mut rows = Rows {
            params: *self,
            ranked,
            target,
            k: n_classes,
            goes_left: vec![false; target.len()],
        };
        let mut nodes = Vec::new();
        grow(&mut rows, sorted, 0, self, &mut nodes);
        Ok(Box::new(FittedTree { nodes }))
    }

    /// One column of codes, or of indexed numbers with no more distinct values
    /// than rows: the same trees grown from per-fold histograms of the
    /// distinct values (one counting pass for all folds), each fold's leaves
    /// looked up per value.
    fn out_of_fold(
        &self,
        columns: &[&EncodedColumn],
        folded: FoldedTarget<'_>,
    ) -> Result<Scores, SurrogateError> {
        let (target, n_classes, folds) = (folded.classes, folded.n_classes, folded.folds);
        let distinct = match columns {
            [column] => distinct_values(column, target.len()),
            _ => None,
        };
        let Some((values, of_row)) = distinct else {
            return fold_by_fold(self, columns, folded);
        };
        check_inputs(self.name(), columns, n_classes, folds.len())?;
        let k = n_classes;
        let counts = FoldCounts::new(&of_row, values.len() + 1, folded);
        let leaves_per_fold: Vec<Vec<f64>> = (0..folded.n_folds as u8)
            .into_par_iter()
            .map(|fold| {
                let mut histogram = Histogram {
                    params: *self,
                    values: &values,
                    counts: counts.training_table(fold),
                    k,
                };
                let root = ValueRange {
                    start: 0,
                    end: values.len(),
                    with_missing: true,
                };
                let mut nodes = Vec::new();
                grow(&mut histogram, root, 0, self, &mut nodes);
                let tree = FittedTree { nodes };
                values
                    .iter()
                    .chain([&f64::NAN])
                    .flat_map(|&v| tree.leaf_for(|_| v).to_vec())
                    .collect()
            })
            .collect();
        let mut proba = vec![0.0; target.len() * k];
        for ((p, &v), &fold) in proba.chunks_exact_mut(k).zip(&of_row).zip(folds) {
            let leaves = &leaves_per_fold[usize::from(fold)];
            p.copy_from_slice(&leaves[v as usize * k..(v as usize + 1) * k]);
        }
        Ok(Scores { n_classes, proba })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::encode::encode_numeric;
    use crate::data::folds::stratified_folds;
    use crate::stats::auc::auc_from_scores;
    use crate::surrogate::cross_fit;
    use crate::surrogate::testing::{folded, rounded, toy};

    #[test]
    fn separable_toy_gets_out_of_fold_auc_one() {
        // Class 0 below 50, class 1 above 100: any threshold in the gap
        // separates the classes, so every held-out row lands in a pure leaf of
        // its class and the AUC is 1 by definition.
        let x: Vec<f64> = (0..100).map(|i| f64::from(i + 50 * (i / 50))).collect();
        let target: Vec<u32> = x.iter().map(|&v| u32::from(v >= 100.0)).collect();
        let column = encode_numeric("x", x, 10);
        let folds = stratified_folds(&target, 2, 5, 1);
        let scores =
            cross_fit(&TreeSurrogate::default(), &[&column], &target, 2, &folds, 5).unwrap();
        let positive: Vec<bool> = target.iter().map(|&t| t == 1).collect();
        assert_eq!(auc_from_scores(&scores.column(1), &positive), Some(1.0));
    }

    #[test]
    fn missing_values_follow_the_class_they_resemble() {
        // Missing rows are all class 1, which otherwise holds the high values:
        // the split must send them right, with the high values.
        let x: Vec<f64> = (0..40)
            .map(|i| if i >= 36 { f64::NAN } else { f64::from(i) })
            .collect();
        let target: Vec<u32> = (0..40).map(|i| u32::from(i >= 18)).collect();
        let column = encode_numeric("x", x, 10);
        let train: Vec<usize> = (0..40).collect();
        let tree = TreeSurrogate {
            max_depth: 1,
            min_samples_leaf: 1,
        };
        let model = tree.fit(&[&column], &target, 2, &train).unwrap();
        assert_eq!(model.predict_proba(&[&column], &[37]), vec![0.0, 1.0]);
        assert_eq!(model.predict_proba(&[&column], &[0]), vec![1.0, 0.0]);
    }

    #[test]
    fn histogram_trees_equal_trees_grown_on_rows() {
        // The per-fold histogram path must grow the very trees the row path
        // grows: numeric with missing values (rounded to 1 decimal so values
        // repeat), a categorical column, and a continuous column with too many
        // distinct values, which goes fold by fold.
        let (columns, target) = toy(4_000, 3, 4);
        let rounded = rounded(&columns);
        let folds = stratified_folds(&target, 3, 5, 0);
        let model = TreeSurrogate::default();
        for column in [&rounded, &columns[1], &columns[0]] {
            let fast = model.out_of_fold(&[column], folded(&target, 3, &folds));
            let slow =
                crate::surrogate::fold_by_fold(&model, &[column], folded(&target, 3, &folds));
            assert_eq!(fast.unwrap(), slow.unwrap(), "{}", column.name);
        }
    }

    #[test]
    fn leaf_probabilities_are_class_shares() {
        // A classification tree predicts, in each leaf, the share of each
        // class among the training rows that reach it (Breiman et al. 1984,
        // "Classification and Regression Trees", §2.3; scikit-learn's
        // `DecisionTreeClassifier.predict_proba`). Rows reaching one leaf get
        // one prediction, so grouping the training rows by their prediction
        // and counting their classes must give back that prediction; two
        // leaves with equal shares pool into the same shares.
        let (columns, target) = toy(3_000, 3, 2);
        let refs: Vec<&EncodedColumn> = columns.iter().collect();
        let train: Vec<usize> = (0..2_000).collect();
        let model = TreeSurrogate::default()
            .fit(&refs, &target, 3, &train)
            .unwrap();
        let proba = model.predict_proba(&refs, &train);
        let mut leaves: std::collections::BTreeMap<Vec<u64>, [f64; 3]> = Default::default();
        for (&row, p) in train.iter().zip(proba.chunks_exact(3)) {
            let key = p.iter().map(|v| v.to_bits()).collect();
            leaves.entry(key).or_default()[target[row] as usize] += 1.0;
        }
        assert!(leaves.len() >= 4, "the tree should split: {leaves:?}");
        for (key, counts) in &leaves {
            let n: f64 = counts.iter().sum();
            for (bits, count) in key.iter().zip(counts) {
                let predicted = f64::from_bits(*bits);
                assert!(
                    (predicted - count / n).abs() < 1e-12,
                    "{predicted} vs {count}/{n}"
                );
            }
        }
    }
}
