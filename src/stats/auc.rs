//! Area under the ROC curve: Mann–Whitney point estimate, DeLong variance and
//! interval, comparison of two AUCs, and the empirical ROC curve.

use super::ranks::{order_key, sort_by_score, sorted_keys, tie_groups};
use super::special::{Z_975, two_sided_p_value};
use crate::keys::KeyIndex;

/// An AUC with its estimated variance and 95 % normal-theory interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AucEstimate {
    /// Mann–Whitney AUC (or a macro average of them).
    pub auc: f64,
    /// Estimated variance of `auc`.
    pub variance: f64,
    /// Standard error, √variance.
    pub se: f64,
    /// Lower end of `auc ± 1.96·se`, clamped to `[0, 1]`.
    pub low: f64,
    /// Upper end of `auc ± 1.96·se`, clamped to `[0, 1]`.
    pub high: f64,
}

impl AucEstimate {
    /// Builds the estimate and its Wald interval from an AUC and its variance.
    #[must_use]
    pub fn from_variance(auc: f64, variance: f64) -> Self {
        let se = variance.max(0.0).sqrt();
        Self {
            auc,
            variance,
            se,
            low: (auc - Z_975 * se).clamp(0.0, 1.0),
            high: (auc + Z_975 * se).clamp(0.0, 1.0),
        }
    }
}

/// A test of the difference of two AUCs: `z = difference / se`, two-sided normal p-value.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AucComparison {
    /// AUC of the first score.
    pub auc_a: f64,
    /// AUC of the second score.
    pub auc_b: f64,
    /// `auc_a − auc_b`.
    pub difference: f64,
    /// Standard error of the difference.
    pub se: f64,
    /// `difference / se`.
    pub z: f64,
    /// Two-sided p-value of `z` under N(0, 1).
    pub p_value: f64,
}

impl AucComparison {
    /// Builds the z test from two AUCs and the variance of their difference.
    /// A zero variance gives `z = 0, p = 1` for equal AUCs and `z = ±∞, p = 0` otherwise.
    #[must_use]
    pub fn from_variance(auc_a: f64, auc_b: f64, variance: f64) -> Self {
        let difference = auc_a - auc_b;
        let se = variance.max(0.0).sqrt();
        let z = if se > 0.0 {
            difference / se
        } else if difference == 0.0 {
            0.0
        } else {
            difference.signum() * f64::INFINITY
        };
        Self {
            auc_a,
            auc_b,
            difference,
            se,
            z,
            p_value: two_sided_p_value(z),
        }
    }
}

/// Scores collapsed into a rating table: one category per distinct score,
/// ascending, with the class counts in each.
#[derive(Default)]
pub(crate) struct ScoreTable {
    /// Order keys of the distinct scores, ascending.
    keys: Vec<u64>,
    /// Negatives per category.
    pub negatives: Vec<u64>,
    /// Positives per category.
    pub positives: Vec<u64>,
}

impl ScoreTable {
    /// Groups `scores` by tied value: each class's scores are sorted on
    /// their own and the two runs merged. `None` when the lengths differ.
    pub fn new(scores: &[f64], positive: &[bool]) -> Option<Self> {
        if scores.len() != positive.len() {
            return None;
        }
        let limit = (scores.len() / 8).max(GROUPED_DISTINCT_MIN);
        Some(
            Self::grouped(scores, positive, limit)
                .unwrap_or_else(|| Self::sorted(scores, positive)),
        )
    }

    /// Counting path for scores with few distinct values (every surrogate over
    /// codes, and logistic scores of rounded numbers): one hashing pass counts
    /// each class per distinct score, then only the distinct scores are
    /// sorted. `None` once more than `limit` distinct scores are seen.
    fn grouped(scores: &[f64], positive: &[bool], limit: usize) -> Option<Self> {
        let mut index = KeyIndex::with_limit(limit);
        let mut counts: Vec<[usize; 2]> = Vec::new();
        for (&score, &is_positive) in scores.iter().zip(positive) {
            let group = index.number(order_key(score))? as usize;
            if group == counts.len() {
                counts.push([0, 0]);
            }
            counts[group][usize::from(is_positive)] += 1;
        }
        let mut order: Vec<usize> = (0..counts.len()).collect();
        order.sort_unstable_by_key(|&g| index.keys()[g]);
        let mut table = Self::default();
        for g in order {
            table.push(index.keys()[g], counts[g][0], counts[g][1]);
        }
        Some(table)
    }

    /// Sorting path: each class's scores are sorted on their own and the two runs merged.
    fn sorted(scores: &[f64], positive: &[bool]) -> Self {
        let of_class = |class: bool| {
            sorted_keys(
                scores
                    .iter()
                    .zip(positive)
                    .filter(move |&(_, &p)| p == class)
                    .map(|(s, _)| s),
            )
        };
        let (pos_keys, neg_keys) = (of_class(true), of_class(false));
        let mut table = Self::default();
        let (mut i, mut j) = (0, 0);
        loop {
            let key = match (pos_keys.get(i), neg_keys.get(j)) {
                (None, None) => break,
                (Some(&a), Some(&b)) => a.min(b),
                (Some(&a), None) => a,
                (None, Some(&b)) => b,
            };
            let pos = run_length(&pos_keys[i..], key);
            let neg = run_length(&neg_keys[j..], key);
            table.push(key, neg, pos);
            i += pos;
            j += neg;
        }
        table
    }

    /// Appends a category with `neg` negatives and `pos` positives.
    fn push(&mut self, key: u64, neg: usize, pos: usize) {
        self.keys.push(key);
        self.negatives.push(neg as u64);
        self.positives.push(pos as u64);
    }
}

/// Fewest distinct scores the counting path of [`ScoreTable`] accepts before
/// it gives way to sorting (beyond an eighth of the rows, sorting is cheaper).
const GROUPED_DISTINCT_MIN: usize = 1 << 16;

/// How many leading keys of ascending `sorted` equal `key`.
fn run_length(sorted: &[u64], key: u64) -> usize {
    sorted.iter().take_while(|&&k| k == key).count()
}

/// Mann–Whitney AUC: the probability that a random positive scores above a
/// random negative, ties counted ½ (Hanley & McNeil 1982, eq. 1; Mann &
/// Whitney 1947). O(N log N): one sort per class, then a merge of tie groups.
/// `None` when either class is empty or the lengths differ.
#[must_use]
pub fn auc_from_scores(scores: &[f64], positive: &[bool]) -> Option<f64> {
    let table = ScoreTable::new(scores, positive)?;
    auc_from_rating_table(&table.negatives, &table.positives)
}

/// Mann–Whitney AUC of a rating table in O(L): `negatives[c]` and
/// `positives[c]` count each class in category `c`, categories in ascending
/// order of suspicion (Hanley & McNeil 1982, Table I and eq. 1). Computed in
/// exact integer arithmetic. `None` when a class is empty or the lengths differ.
#[must_use]
pub fn auc_from_rating_table(negatives: &[u64], positives: &[u64]) -> Option<f64> {
    let (n_neg, n_pos) = class_totals(negatives, positives)?;
    let mut negatives_below = 0u128;
    let mut twice_wins = 0u128;
    for (&neg, &pos) in negatives.iter().zip(positives) {
        twice_wins += u128::from(pos) * (2 * negatives_below + u128::from(neg));
        negatives_below += u128::from(neg);
    }
    Some(twice_wins as f64 / (2 * u128::from(n_neg) * u128::from(n_pos)) as f64)
}

/// Mann–Whitney AUC of weighted scores: each item is (score, negative
/// weight, positive weight), weights possibly fractional. The items are
/// sorted in place and tied scores merged into one rating category, then
/// Hanley & McNeil (1982, eq. 1) as in [`auc_from_rating_table`]. Serves
/// count tables and row-weighted (bootstrap) scores alike. `None` when a
/// class has no weight.
#[must_use]
pub fn auc_from_weighted_scores(items: &mut [(f64, f64, f64)]) -> Option<f64> {
    items.sort_unstable_by(|a, b| a.0.total_cmp(&b.0));
    let (mut negatives_below, mut twice_wins) = (0.0, 0.0);
    let (mut n_neg, mut n_pos) = (0.0, 0.0);
    for group in items.chunk_by(|a, b| a.0 == b.0) {
        let neg: f64 = group.iter().map(|g| g.1).sum();
        let pos: f64 = group.iter().map(|g| g.2).sum();
        twice_wins += pos * (2.0 * negatives_below + neg);
        negatives_below += neg;
        n_neg += neg;
        n_pos += pos;
    }
    (n_neg > 0.0 && n_pos > 0.0).then(|| twice_wins / (2.0 * n_neg * n_pos))
}

/// Class totals of a rating table; `None` when either is zero or the lengths differ.
fn class_totals(negatives: &[u64], positives: &[u64]) -> Option<(u64, u64)> {
    let n_neg: u64 = negatives.iter().sum();
    let n_pos: u64 = positives.iter().sum();
    (negatives.len() == positives.len() && n_neg > 0 && n_pos > 0).then_some((n_neg, n_pos))
}

/// Hanley & McNeil (1982) standard error of an AUC, eq. 2, with their
/// approximations Q1 = A/(2−A) and Q2 = 2A²/(1+A) (exponential model, §III).
#[must_use]
pub fn hanley_mcneil_se(auc: f64, n_pos: usize, n_neg: usize) -> f64 {
    let q1 = auc / (2.0 - auc);
    let q2 = 2.0 * auc * auc / (1.0 + auc);
    let (m, n) = (n_pos as f64, n_neg as f64);
    let variance =
        (auc * (1.0 - auc) + (m - 1.0) * (q1 - auc * auc) + (n - 1.0) * (q2 - auc * auc)) / (m * n);
    variance.max(0.0).sqrt()
}

/// DeLong structural components of each rating category: the AUC, and per
/// category V10 (share of negatives a positive there beats, ties ½) and V01
/// (share of positives that beat a negative there). DeLong, DeLong &
/// Clarke-Pearson (1988), §2.
struct Placements {
    auc: f64,
    n_neg: u64,
    n_pos: u64,
    v10: Vec<f64>,
    v01: Vec<f64>,
}

impl Placements {
    /// `None` when either class has fewer than two members (no variance).
    fn new(negatives: &[u64], positives: &[u64]) -> Option<Self> {
        let (n_neg, n_pos) = class_totals(negatives, positives)?;
        if n_neg < 2 || n_pos < 2 {
            return None;
        }
        let auc = auc_from_rating_table(negatives, positives)?;
        let (mut negatives_below, mut positives_below) = (0u64, 0u64);
        let (mut v10, mut v01) = (Vec::new(), Vec::new());
        for (&neg, &pos) in negatives.iter().zip(positives) {
            v10.push((negatives_below as f64 + 0.5 * neg as f64) / n_neg as f64);
            let positives_above = n_pos - positives_below - pos;
            v01.push((positives_above as f64 + 0.5 * pos as f64) / n_pos as f64);
            negatives_below += neg;
            positives_below += pos;
        }
        Some(Self {
            auc,
            n_neg,
            n_pos,
            v10,
            v01,
        })
    }

    /// Scale that turns a centred component into a row's share of the
    /// variance: 1/√(c(c−1)) for a class of size c (the 1/(m−1)·1/m of S10/m).
    fn scale(class_size: u64) -> f64 {
        1.0 / ((class_size * (class_size - 1)) as f64).sqrt()
    }

    /// Influence of a positive (`true`) or negative row in `category`.
    fn influence(&self, category: usize, is_positive: bool) -> f64 {
        if is_positive {
            (self.v10[category] - self.auc) * Self::scale(self.n_pos)
        } else {
            (self.v01[category] - self.auc) * Self::scale(self.n_neg)
        }
    }

    /// DeLong variance S10/m + S01/n, summed over categories with their counts.
    fn variance(&self, negatives: &[u64], positives: &[u64]) -> f64 {
        (0..self.v10.len())
            .map(|c| {
                let pos = self.influence(c, true);
                let neg = self.influence(c, false);
                positives[c] as f64 * pos * pos + negatives[c] as f64 * neg * neg
            })
            .sum()
    }
}

/// Per-row linear influence of one AUC: the AUC and φ_i with Σ_i φ_i² equal
/// to the DeLong variance and Σ_i φ_i ψ_i equal to the DeLong covariance with
/// another AUC on the same rows and classes.
pub(crate) struct Influence {
    /// The AUC (or macro average) the influences belong to.
    pub auc: f64,
    /// φ_i for every input row, in input order.
    pub values: Vec<f64>,
}

impl Influence {
    /// `None` when a class has fewer than two rows or the lengths differ.
    pub fn new(scores: &[f64], positive: &[bool]) -> Option<Self> {
        if scores.len() != positive.len() {
            return None;
        }
        let sorted = sort_by_score(scores);
        let mut table = ScoreTable::default();
        for group in tie_groups(&sorted) {
            let pos = group.iter().filter(|&&(_, r)| positive[r as usize]).count();
            table.push(group[0].0, group.len() - pos, pos);
        }
        let placements = Placements::new(&table.negatives, &table.positives)?;
        let mut values = vec![0.0; scores.len()];
        for (category, group) in tie_groups(&sorted).enumerate() {
            for &(_, row) in group {
                let row = row as usize;
                values[row] = placements.influence(category, positive[row]);
            }
        }
        Some(Self {
            auc: placements.auc,
            values,
        })
    }

    /// Σ_i (φ_i − ψ_i)²: the DeLong variance of the difference of two AUCs.
    pub fn difference_variance(&self, other: &Self) -> f64 {
        self.values
            .iter()
            .zip(&other.values)
            .map(|(a, b)| (a - b) * (a - b))
            .sum()
    }
}

/// DeLong et al. (1988) variance and 95 % interval of the AUC of `scores`.
///
/// V10/V01 structural components from mid-rank placements in O(N) after an
/// O(N log N) sort (the fast algorithm of Sun & Xu 2014, IEEE SPL 21(11), §III);
/// variance S10/m + S01/n (DeLong et al. 1988, §2). `None` when a class has
/// fewer than two rows or the lengths differ.
#[must_use]
pub fn delong(scores: &[f64], positive: &[bool]) -> Option<AucEstimate> {
    let table = ScoreTable::new(scores, positive)?;
    delong_rating_table(&table.negatives, &table.positives)
}

/// DeLong et al. (1988) variance and interval of a rating table's AUC in O(L)
/// (categories ascending; see [`auc_from_rating_table`]).
#[must_use]
pub fn delong_rating_table(negatives: &[u64], positives: &[u64]) -> Option<AucEstimate> {
    let placements = Placements::new(negatives, positives)?;
    let variance = placements.variance(negatives, positives);
    Some(AucEstimate::from_variance(placements.auc, variance))
}

/// DeLong et al. (1988) test of two correlated AUCs on the same rows:
/// Var(θ̂_a − θ̂_b) = L S Lᵀ with L = (1, −1) and S = S10/m + S01/n (§2).
/// `None` when a class has fewer than two rows or the lengths differ.
#[must_use]
pub fn delong_compare(
    scores_a: &[f64],
    scores_b: &[f64],
    positive: &[bool],
) -> Option<AucComparison> {
    let a = Influence::new(scores_a, positive)?;
    let b = Influence::new(scores_b, positive)?;
    let variance = a.difference_variance(&b);
    Some(AucComparison::from_variance(a.auc, b.auc, variance))
}

/// AUC pooled within strata: only pairs (one positive, one negative) from the
/// same stratum are compared, so a score that separates the classes only by
/// separating the strata gets 0.5. The covariate-adjusted AUC of Janes &
/// Pepe (2009), "Adjusting for covariate effects on classification accuracy
/// using the covariate-adjusted ROC curve", Biometrika 96(2), §2: a weighted
/// mean of stratum AUCs; here each stratum weighs by its number of pairs
/// n₁ₛn₀ₛ, so the result is the Mann–Whitney statistic over within-stratum
/// pairs. Strata are independent, so Var = Σ wₛ² Varₛ with each stratum's
/// DeLong variance. Strata lacking two rows of a class are left out; `None`
/// when none is left.
#[must_use]
pub fn stratified_auc(scores: &[f64], positive: &[bool], strata: &[u32]) -> Option<AucEstimate> {
    let n_strata = strata.iter().max().map_or(0, |&s| s as usize + 1);
    let mut members: Vec<Vec<usize>> = vec![Vec::new(); n_strata];
    for (row, &stratum) in strata.iter().enumerate() {
        members[stratum as usize].push(row);
    }
    let parts: Vec<(f64, AucEstimate)> = members
        .iter()
        .filter_map(|rows| {
            let s: Vec<f64> = rows.iter().map(|&r| scores[r]).collect();
            let p: Vec<bool> = rows.iter().map(|&r| positive[r]).collect();
            let n1 = p.iter().filter(|&&x| x).count() as f64;
            let n0 = p.len() as f64 - n1;
            delong(&s, &p).map(|estimate| (n1 * n0, estimate))
        })
        .collect();
    let total: f64 = parts.iter().map(|(pairs, _)| pairs).sum();
    if parts.is_empty() || total <= 0.0 {
        return None;
    }
    let auc = parts.iter().map(|(w, e)| w / total * e.auc).sum();
    let variance = parts
        .iter()
        .map(|(w, e)| (w / total).powi(2) * e.variance)
        .sum();
    Some(AucEstimate::from_variance(auc, variance))
}

/// Two cross-validated AUCs on the same rows and folds compared as LeDell,
/// Petersen & van der Laan (2015), "Computationally efficient confidence
/// intervals for cross-validated area under the ROC curve estimates",
/// Electron. J. Stat. 9, §2–3: each AUC is the mean of the per-fold AUCs
/// (scores of different fold models are never ranked against each other,
/// which removes the bias of pooling them), and the variance of the
/// difference is (1/V²) Σ_v Σ_{i∈v} (φ_i − ψ_i)², the per-fold influence
/// values of the two AUCs. `None` when some fold lacks two rows of a class.
#[must_use]
pub fn cross_validated_compare(
    scores_a: &[f64],
    scores_b: &[f64],
    positive: &[bool],
    folds: &[u8],
    n_folds: usize,
) -> Option<AucComparison> {
    let (mut auc_a, mut auc_b, mut variance) = (0.0, 0.0, 0.0);
    for fold in 0..n_folds {
        let rows: Vec<usize> = (0..folds.len())
            .filter(|&r| usize::from(folds[r]) == fold)
            .collect();
        let pick = |values: &[f64]| rows.iter().map(|&r| values[r]).collect::<Vec<f64>>();
        let labels: Vec<bool> = rows.iter().map(|&r| positive[r]).collect();
        let a = Influence::new(&pick(scores_a), &labels)?;
        let b = Influence::new(&pick(scores_b), &labels)?;
        auc_a += a.auc;
        auc_b += b.auc;
        variance += a.difference_variance(&b);
    }
    let v = n_folds as f64;
    Some(AucComparison::from_variance(
        auc_a / v,
        auc_b / v,
        variance / (v * v),
    ))
}

/// Empirical ROC curve: (FPR, TPR) points from (0, 0) to (1, 1), one per
/// distinct score threshold taken from the highest down (Fawcett 2006,
/// Pattern Recogn. Lett. 27, Algorithm 2), thinned to at most `max_points`
/// (at least 2) evenly spaced points that keep both ends. Every step between
/// two points covers at least `min_rows` rows (thresholds are merged until it
/// does), so that no step gives away a small group's class counts. Empty when
/// a class is empty.
#[must_use]
pub fn roc_curve(
    scores: &[f64],
    positive: &[bool],
    max_points: usize,
    min_rows: u64,
) -> Vec<[f64; 2]> {
    let Some(table) = ScoreTable::new(scores, positive) else {
        return Vec::new();
    };
    let Some((n_neg, n_pos)) = class_totals(&table.negatives, &table.positives) else {
        return Vec::new();
    };
    let point = |fp: u64, tp: u64| [fp as f64 / n_neg as f64, tp as f64 / n_pos as f64];
    let mut points = vec![[0.0, 0.0]];
    let (mut false_pos, mut true_pos, mut since_last) = (0u64, 0u64, 0u64);
    for (&neg, &pos) in table.negatives.iter().zip(&table.positives).rev() {
        false_pos += neg;
        true_pos += pos;
        since_last += neg + pos;
        if since_last >= min_rows && false_pos + true_pos < n_neg + n_pos {
            points.push(point(false_pos, true_pos));
            since_last = 0;
        }
    }
    // The last step, up to (1, 1), must be as large as the others.
    if since_last < min_rows && points.len() > 1 {
        points.pop();
    }
    points.push([1.0, 1.0]);
    thin(points, max_points.max(2))
}

/// Keeps `max_points` evenly spaced points of `points`, first and last included.
fn thin(points: Vec<[f64; 2]>, max_points: usize) -> Vec<[f64; 2]> {
    if points.len() <= max_points {
        return points;
    }
    let last = points.len() - 1;
    (0..max_points)
        .map(|i| points[(i * last + (max_points - 1) / 2) / (max_points - 1)])
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::SplitMix64;
    use crate::stats::special::normal_cdf;
    use proptest::prelude::*;

    /// Hanley & McNeil (1982), Table I: ratings 1..5 of 58 normal and 51 abnormal cases.
    const HM_NORMAL: [u64; 5] = [33, 6, 6, 11, 2];
    const HM_ABNORMAL: [u64; 5] = [3, 2, 2, 11, 33];

    /// WORKED-EXAMPLES §2 constructed two-score example.
    const Y: [bool; 12] = [
        true, true, true, true, true, false, false, false, false, false, false, false,
    ];
    const S1: [f64; 12] = [
        0.9, 0.8, 0.7, 0.55, 0.4, 0.6, 0.5, 0.35, 0.3, 0.2, 0.1, 0.45,
    ];
    const S2: [f64; 12] = [
        0.7, 0.9, 0.3, 0.6, 0.5, 0.8, 0.2, 0.4, 0.1, 0.35, 0.25, 0.65,
    ];

    #[test]
    fn hanley_mcneil_table_auc_and_se() {
        // Hanley & McNeil (1982), Table I: A = 2642/2958 = 0.893171 (pair counting),
        // published W = 0.893, SE = 0.032; approximation SE = 0.032487 (WORKED-EXAMPLES §1).
        let auc = auc_from_rating_table(&HM_NORMAL, &HM_ABNORMAL).unwrap();
        assert!((auc - 2642.0 / 2958.0).abs() < 1e-15);
        let se = hanley_mcneil_se(auc, 51, 58);
        assert!((se - 0.032_487).abs() < 5e-7, "se {se}"); // 6 printed decimals
        assert!((se - 0.032).abs() < 5e-4); // 3 published decimals
    }

    #[test]
    fn delong_on_hanley_mcneil_table() {
        // DeLong et al. (1988) on Hanley & McNeil Table I: Var = 0.000943989, SE = 0.030724,
        // 95 % CI 0.832952–0.953390 (WORKED-EXAMPLES §2); Stata roctab: SE 0.0307,
        // CI 0.83295–0.95339 (WORKED-EXAMPLES §1). Tolerance: half a unit of the last printed digit.
        let est = delong_rating_table(&HM_NORMAL, &HM_ABNORMAL).unwrap();
        assert!((est.variance - 0.000_943_989).abs() < 5e-10);
        assert!((est.se - 0.030_724).abs() < 5e-7);
        assert!((est.low - 0.832_952).abs() < 5e-7);
        assert!((est.high - 0.953_390).abs() < 5e-7);
    }

    #[test]
    fn weighted_scores_give_the_rating_table_auc() {
        // Hanley & McNeil (1982) Table I as five weighted scores (one per
        // rating, listed out of order and with one rating split in two):
        // AUC 0.893171 (WORKED-EXAMPLES §1).
        let mut items = [
            (5.0, 2.0, 33.0),
            (1.0, 33.0, 3.0),
            (3.0, 3.0, 1.0),
            (2.0, 6.0, 2.0),
            (4.0, 11.0, 11.0),
            (3.0, 3.0, 1.0),
        ];
        let auc = auc_from_weighted_scores(&mut items).unwrap();
        let table = auc_from_rating_table(&HM_NORMAL, &HM_ABNORMAL).unwrap();
        assert!((auc - table).abs() < 1e-12 && (auc - 0.893_171).abs() < 5e-7);
        assert_eq!(auc_from_weighted_scores(&mut [(1.0, 2.0, 0.0)]), None);
    }

    #[test]
    fn delong_from_scores_equals_rating_table() {
        // Expanding Hanley & McNeil Table I into one score per case must give the same
        // DeLong estimate as the table (same data, two code paths).
        let (mut scores, mut positive) = (Vec::new(), Vec::new());
        for (rating, (&n, &a)) in HM_NORMAL.iter().zip(&HM_ABNORMAL).enumerate() {
            for (count, label) in [(n, false), (a, true)] {
                scores.extend(std::iter::repeat_n(rating as f64, count as usize));
                positive.extend(std::iter::repeat_n(label, count as usize));
            }
        }
        let est = delong(&scores, &positive).unwrap();
        assert!((est.se - 0.030_724).abs() < 5e-7);
        assert!((est.auc - 0.893_171).abs() < 5e-7);
    }

    #[test]
    fn delong_two_score_comparison() {
        // WORKED-EXAMPLES §2 constructed check (brute-force ψ and mid-rank agree there):
        // AUC1 = 31/35, AUC2 = 26/35, SE1 = 0.102353, SE2 = 0.153862,
        // SE(diff) = 0.146152, z = 0.977453, p = 0.328345. Tolerance: printed precision.
        let a = delong(&S1, &Y).unwrap();
        let b = delong(&S2, &Y).unwrap();
        assert!((a.auc - 31.0 / 35.0).abs() < 1e-15);
        assert!((b.auc - 26.0 / 35.0).abs() < 1e-15);
        assert!((a.se - 0.102_353).abs() < 5e-7);
        assert!((b.se - 0.153_862).abs() < 5e-7);
        let cmp = delong_compare(&S1, &S2, &Y).unwrap();
        assert!((cmp.se - 0.146_152).abs() < 5e-7);
        assert!((cmp.z - 0.977_453).abs() < 5e-6);
        assert!((cmp.p_value - 0.328_345).abs() < 5e-7);
    }

    #[test]
    fn roc_steps_cover_at_least_the_minimum_rows() {
        // A rare score shared by 3 rows (2 positive, 1 negative) among 200: at
        // min_rows 10 no step may isolate it, and every step holds >= 10 rows.
        let mut scores = vec![0.9; 3];
        let mut positive = vec![true, true, false];
        for i in 0..197 {
            scores.push(f64::from(i % 40) / 100.0);
            positive.push(i % 3 == 0);
        }
        let n_pos = positive.iter().filter(|&&p| p).count() as f64;
        let n_neg = positive.len() as f64 - n_pos;
        let curve = roc_curve(&scores, &positive, 1000, 10);
        assert_eq!(curve.last(), Some(&[1.0, 1.0]));
        for w in curve.windows(2) {
            let rows = (w[1][0] - w[0][0]) * n_neg + (w[1][1] - w[0][1]) * n_pos;
            assert!(rows > 9.5, "a step of {rows} rows: {w:?}");
        }
    }

    #[test]
    fn roc_curve_runs_corner_to_corner_and_thins() {
        // Fawcett (2006): the empirical ROC is a staircase from (0,0) to (1,1); its
        // trapezoidal area equals the Mann–Whitney AUC (Hanley & McNeil 1982, §II).
        let curve = roc_curve(&S1, &Y, 1000, 0);
        assert_eq!(curve.first(), Some(&[0.0, 0.0]));
        assert_eq!(curve.last(), Some(&[1.0, 1.0]));
        let area: f64 = curve
            .windows(2)
            .map(|w| (w[1][0] - w[0][0]) * (w[1][1] + w[0][1]) / 2.0)
            .sum();
        assert!((area - 31.0 / 35.0).abs() < 1e-12);
        let thinned = roc_curve(&S1, &Y, 4, 0);
        assert_eq!(thinned.len(), 4);
        assert_eq!(thinned[3], [1.0, 1.0]);
    }

    #[test]
    fn delong_interval_covers_binormal_auc() {
        // Binormal model: positives N(1,1), negatives N(0,1), true AUC = Φ(1/√2)
        // (binormal ROC area Φ(δ/√2) with δ = 1, unit variances). 4000 seeded replicates of
        // 100 + 100 rows. Nominal coverage 0.95; binomial sd √(0.95·0.05/4000) = 0.00345, so
        // the observed rate must lie within ±3 sd: [0.9397, 0.9603]. Observed: 0.944.
        let truth = normal_cdf(1.0 / std::f64::consts::SQRT_2);
        let mut rng = SplitMix64::new(2026);
        let positive: Vec<bool> = (0..200).map(|i| i < 100).collect();
        let covered = (0..4000)
            .filter(|_| {
                let scores: Vec<f64> = positive
                    .iter()
                    .map(|&p| rng.normal() + f64::from(u8::from(p)))
                    .collect();
                let est = delong(&scores, &positive).unwrap();
                est.low <= truth && truth <= est.high
            })
            .count();
        let rate = covered as f64 / 4000.0;
        assert!((0.9397..=0.9603).contains(&rate), "coverage {rate}");
    }

    fn scores_and_labels() -> impl Strategy<Value = (Vec<f64>, Vec<bool>)> {
        (2usize..60).prop_flat_map(|n| {
            (
                prop::collection::vec(-50i32..50, n).prop_map(|v| {
                    v.into_iter()
                        .map(|x| f64::from(x) / 7.0)
                        .collect::<Vec<_>>()
                }),
                prop::collection::vec(any::<bool>(), n),
            )
        })
    }

    proptest! {
        // Mann–Whitney symmetry: reversing the scores swaps wins and losses, so
        // AUC(−s) = AUC(1 − s) = 1 − AUC(s) (Hanley & McNeil 1982, eq. 1).
        #[test]
        fn auc_of_reversed_scores_is_complement((scores, positive) in scores_and_labels()) {
            let flipped: Vec<f64> = scores.iter().map(|s| 1.0 - s).collect();
            if let (Some(a), Some(b)) = (auc_from_scores(&scores, &positive), auc_from_scores(&flipped, &positive)) {
                prop_assert!((a + b - 1.0).abs() < 1e-12);
            }
        }

        // The counting path of the rating table (few distinct scores) and the
        // sorting path must build the same table: same tie groups, same order,
        // same counts, with −0 and +0 tied.
        #[test]
        fn counting_and_sorting_build_the_same_rating_table((mut scores, positive) in scores_and_labels()) {
            if let Some(s) = scores.first_mut() { *s = -0.0; }
            let sorted = ScoreTable::sorted(&scores, &positive);
            let grouped = ScoreTable::grouped(&scores, &positive, scores.len()).unwrap();
            prop_assert_eq!(&grouped.keys, &sorted.keys);
            prop_assert_eq!(&grouped.negatives, &sorted.negatives);
            prop_assert_eq!(&grouped.positives, &sorted.positives);
            prop_assert!(ScoreTable::grouped(&scores, &positive, sorted.keys.len() - 1).is_none());
        }

        // The AUC depends on the scores only through their order (Bamber 1975,
        // J. Math. Psychol. 12): a strictly increasing transform leaves it unchanged.
        #[test]
        fn auc_invariant_under_monotone_transform((scores, positive) in scores_and_labels()) {
            let transformed: Vec<f64> = scores.iter().map(|s| (s / 3.0).exp() * 5.0 - 2.0).collect();
            prop_assert_eq!(auc_from_scores(&scores, &positive), auc_from_scores(&transformed, &positive));
        }
    }
    /// Janes & Pepe's pooled AUC is the Mann–Whitney statistic over
    /// within-stratum pairs: checked by brute force over every pair.
    #[test]
    fn stratified_auc_counts_only_within_stratum_pairs() {
        let scores = [0.9, 0.1, 0.8, 0.3, 0.3, 0.7, 0.2, 0.6, 0.5, 0.4, 0.95, 0.05];
        let positive = [
            true, false, true, false, true, false, true, false, true, false, true, false,
        ];
        let strata = [0, 0, 0, 0, 0, 0, 1, 1, 1, 1, 1, 1];
        let (mut wins, mut pairs) = (0.0, 0.0);
        for i in 0..12 {
            for j in 0..12 {
                if positive[i] && !positive[j] && strata[i] == strata[j] {
                    pairs += 1.0;
                    wins += match scores[i].partial_cmp(&scores[j]).unwrap() {
                        std::cmp::Ordering::Greater => 1.0,
                        std::cmp::Ordering::Equal => 0.5,
                        std::cmp::Ordering::Less => 0.0,
                    };
                }
            }
        }
        let pooled = stratified_auc(&scores, &positive, &strata).unwrap();
        assert!((pooled.auc - wins / pairs).abs() < 1e-12, "{}", pooled.auc);
        // A score that only tells the strata apart carries nothing within them.
        let by_stratum: Vec<f64> = strata.iter().map(|&s| f64::from(s)).collect();
        let flat = stratified_auc(&by_stratum, &positive, &strata).unwrap();
        assert!((flat.auc - 0.5).abs() < 1e-12);
    }
}
