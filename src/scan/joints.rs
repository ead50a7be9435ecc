//! Joint columns for the whole-set attacker, chosen inside each training fold.
//!
//! Greedy tree growth cannot find a proxy that exists only in a pair (an
//! exclusive-or pattern: neither first split gains anything), so pairs that
//! leak mainly together are handed to the boosted attacker as one joint
//! categorical column each. Choosing those pairs on every row and then scoring
//! the attacker on the same rows is optimistic (a noise pair chosen for its
//! chance gain on the held-out rows lifts their scores), so the choice is
//! nested: for each outer fold, the pairs are screened by cross-fitting on
//! that fold's training rows only, with the other folds as inner folds, and
//! the attacker fitted for that fold sees only the joints its training rows
//! chose. The held-out fold never takes part in choosing its own inputs.

use super::evaluate::Target;
use super::pairs::pairs_with;
use super::{PairMode, Progress, ScanOptions};
use crate::data::encode::combine_codes;
use crate::data::{EncodedColumn, FeatureKind, ProtectedAttribute};
use crate::stats::auc::{AucComparison, delong_compare};
use crate::stats::heldout::PROBABILITY_FLOOR;
use crate::stats::information::entropy;
use crate::surrogate::frequency::{combine_into, smooth_into};
use crate::surrogate::{FrequencySurrogate, Scores, cross_fit};
use rayon::prelude::*;

/// Gain of the pair's inner out-of-fold AUC over the better member's (same
/// frequency model, same rows) from which a pair is a joint candidate.
pub const JOINT_GAIN: f64 = 0.05;
/// Joint columns per fold at most.
pub const MAX_JOINTS: usize = 5;
/// Family-wise level of the test that the gain is not chance: DeLong's paired
/// test of the pair's and the better member's inner out-of-fold scores, at
/// `JOINT_LEVEL / (pairs screened × folds)` (Bonferroni), so that pure noise
/// builds a joint column in at most about 5% of scans even when thousands of
/// pairs are screened in every fold.
const JOINT_LEVEL: f64 = 0.05;

/// The joint columns built, and which of them each outer fold chose.
pub struct FoldJoints {
    /// Member indices and the joint column (codes over every row: a function
    /// of the members' codes only, never of the protected attribute).
    pub columns: Vec<(usize, usize, EncodedColumn)>,
    /// Per outer fold, indices into `columns`.
    pub chosen: Vec<Vec<usize>>,
}

impl FoldJoints {
    /// No joint column in any of `n_folds` folds.
    pub fn none(n_folds: usize) -> Self {
        Self {
            columns: Vec::new(),
            chosen: vec![Vec::new(); n_folds],
        }
    }

    /// Each joint pair with the number of folds that chose it.
    pub fn fold_counts(&self) -> Vec<(usize, usize, usize)> {
        self.columns
            .iter()
            .enumerate()
            .map(|(j, (a, b, _))| {
                let folds = self.chosen.iter().filter(|c| c.contains(&j)).count();
                (*a, *b, folds)
            })
            .collect()
    }
}

/// Chooses the joint columns inside each training fold of `target`.
pub fn nested_joints(
    features: &[EncodedColumn],
    target: &Target<'_>,
    options: &ScanOptions,
    progress: &dyn Progress,
) -> FoldJoints {
    if options.pairs == PairMode::None || target.n_folds < 3 {
        return FoldJoints::none(target.n_folds);
    }
    let per_fold = choose_per_fold(features, target, options, progress);
    let mut columns: Vec<(usize, usize, EncodedColumn)> = Vec::new();
    let chosen = per_fold
        .iter()
        .map(|pairs| {
            pairs
                .iter()
                .map(|&(a, b)| {
                    columns
                        .iter()
                        .position(|(x, y, _)| (*x, *y) == (a, b))
                        .unwrap_or_else(|| {
                            columns.push((a, b, joint_column(&features[a], &features[b])));
                            columns.len() - 1
                        })
                })
                .collect()
        })
        .collect();
    FoldJoints { columns, chosen }
}

/// One categorical column whose levels are the observed combinations of two columns.
fn joint_column(a: &EncodedColumn, b: &EncodedColumn) -> EncodedColumn {
    let (codes, levels) = combine_codes(&a.codes, &b.codes, b.n_levels);
    EncodedColumn {
        name: format!("{} × {}", a.name, b.name),
        kind: FeatureKind::Categorical,
        codes,
        n_levels: levels,
        labels: (0..levels).map(|l| l.to_string()).collect(),
        missing_code: None,
        raw: None,
        missing_count: 0,
    }
}

/// The training rows of one outer fold, as a target with the other folds as inner folds.
struct InnerTarget {
    attribute: ProtectedAttribute,
    folds: Vec<u8>,
    n_folds: usize,
    rows: Vec<usize>,
}

impl InnerTarget {
    fn new(target: &Target<'_>, outer: u8) -> Self {
        let rows: Vec<usize> = (0..target.folds.len())
            .filter(|&r| target.folds[r] != outer)
            .collect();
        let folds = rows
            .iter()
            .map(|&r| {
                let f = target.folds[r];
                if f > outer { f - 1 } else { f }
            })
            .collect();
        Self {
            attribute: target.attribute.select_rows(&rows),
            folds,
            n_folds: target.n_folds - 1,
            rows,
        }
    }

    /// Inner out-of-fold frequency scores of `columns` (already restricted to the rows).
    fn scores(&self, columns: &[&EncodedColumn]) -> Option<Scores> {
        cross_fit(
            &FrequencySurrogate::default(),
            columns,
            &self.attribute.codes,
            self.attribute.n_classes(),
            &self.folds,
            self.n_folds,
        )
        .ok()
    }

    fn compare(&self, a: &Scores, b: &Scores) -> Option<AucComparison> {
        if self.attribute.is_binary() {
            let class = self.attribute.positive as usize;
            let positive = self.attribute.positive_indicator();
            delong_compare(&a.column(class), &b.column(class), &positive)
        } else {
            crate::stats::macro_ovr_compare(
                &a.proba,
                &b.proba,
                self.attribute.n_classes(),
                &self.attribute.codes,
            )
        }
    }
}

/// Class counts per (code, fold) of one column or of a pair's cells: any
/// inner fit's training counts (every fold but the outer and the inner one)
/// are sums of these, so one counting pass serves all outer × inner fits.
struct FoldTable {
    n_folds: usize,
    k: usize,
    /// `codes × n_folds × k`.
    counts: Vec<u32>,
}

impl FoldTable {
    fn new(codes: &[u32], levels: usize, target: &Target<'_>) -> Self {
        let (n_folds, k) = (target.n_folds, target.n_classes());
        let mut counts = vec![0u32; levels * n_folds * k];
        for ((&code, &class), &fold) in codes.iter().zip(target.codes()).zip(&target.folds) {
            counts[(code as usize * n_folds + fold as usize) * k + class as usize] += 1;
        }
        Self { n_folds, k, counts }
    }

    fn levels(&self) -> usize {
        self.counts.len() / (self.n_folds * self.k)
    }

    fn in_fold(&self, code: usize, fold: usize) -> &[u32] {
        let start = (code * self.n_folds + fold) * self.k;
        &self.counts[start..start + self.k]
    }

    /// Counts of `code` over every fold but `left_out`, into `out`.
    fn training(&self, code: usize, left_out: [usize; 2], out: &mut [f64]) {
        out.fill(0.0);
        for fold in (0..self.n_folds).filter(|f| !left_out.contains(f)) {
            out.iter_mut()
                .zip(self.in_fold(code, fold))
                .for_each(|(o, &c)| *o += f64::from(c));
        }
    }
}

/// The frequency surrogate of one column or one pair, as count tables.
enum Screen {
    Single(FoldTable),
    Pair {
        left: FoldTable,
        right: FoldTable,
        cells: FoldTable,
        /// The left and right codes of each cell.
        members: Vec<(u32, u32)>,
    },
}

impl Screen {
    fn single(column: &EncodedColumn, target: &Target<'_>) -> Self {
        Self::Single(FoldTable::new(
            &column.codes,
            column.n_levels as usize,
            target,
        ))
    }

    fn pair(a: &EncodedColumn, b: &EncodedColumn, target: &Target<'_>) -> Self {
        let (codes, levels) = combine_codes(&a.codes, &b.codes, b.n_levels);
        let mut members = vec![(0, 0); levels as usize];
        for ((&cell, &x), &y) in codes.iter().zip(&a.codes).zip(&b.codes) {
            members[cell as usize] = (x, y);
        }
        Self::Pair {
            left: FoldTable::new(&a.codes, a.n_levels as usize, target),
            right: FoldTable::new(&b.codes, b.n_levels as usize, target),
            cells: FoldTable::new(&codes, levels as usize, target),
            members,
        }
    }

    fn scored(&self) -> &FoldTable {
        match self {
            Self::Single(table) => table,
            Self::Pair { cells, .. } => cells,
        }
    }

    /// The frequency posterior of `code` fitted without folds `left_out`
    /// (the same arithmetic as [`FrequencySurrogate`]: the m-estimate, and for
    /// a pair the cell smoothed toward the naive-Bayes combination of its members).
    fn posterior(&self, code: usize, left_out: [usize; 2], prior: &[f64], out: &mut [f64]) {
        let k = prior.len();
        let m = FrequencySurrogate::default().smoothing;
        let mut counts = vec![0.0; k];
        match self {
            Self::Single(table) => {
                table.training(code, left_out, &mut counts);
                smooth_into(&counts, prior, m, out);
            }
            Self::Pair {
                left,
                right,
                cells,
                members,
            } => {
                let (x, y) = members[code];
                let (mut l, mut r, mut back_off) = (vec![0.0; k], vec![0.0; k], vec![0.0; k]);
                left.training(x as usize, left_out, &mut counts);
                smooth_into(&counts, prior, m, &mut l);
                right.training(y as usize, left_out, &mut counts);
                smooth_into(&counts, prior, m, &mut r);
                combine_into(&l, &r, prior, &mut back_off);
                cells.training(code, left_out, &mut counts);
                if counts.iter().sum::<f64>() > 0.0 {
                    smooth_into(&counts, &back_off, m, out);
                } else {
                    out.copy_from_slice(&back_off);
                }
            }
        }
    }

    /// Inner out-of-fold AUC and held-out information on the training rows
    /// of fold `outer`: each inner fold is scored by the fit on the others.
    fn inner(&self, outer: usize, class_folds: &FoldTable, positive: Option<usize>) -> Measures {
        let table = self.scored();
        let (n_folds, k) = (table.n_folds, table.k);
        let mut entries: Vec<(Vec<f64>, &[u32])> = Vec::new();
        let mut prior = vec![0.0; k];
        for inner in (0..n_folds).filter(|&f| f != outer) {
            class_folds.training(0, [outer, inner], &mut prior);
            let total: f64 = prior.iter().sum();
            prior.iter_mut().for_each(|p| *p /= total.max(1.0));
            for code in 0..table.levels() {
                let counts = table.in_fold(code, inner);
                if counts.iter().any(|&c| c > 0) {
                    let mut p = vec![0.0; k];
                    self.posterior(code, [outer, inner], &prior, &mut p);
                    entries.push((p, counts));
                }
            }
        }
        Measures::of(&entries, k, positive)
    }
}

/// Inner AUC (binary: the positive class; multi-class: macro one-vs-rest)
/// and held-out information of scored count entries.
struct Measures {
    auc: f64,
    heldout: f64,
}

impl Measures {
    fn of(entries: &[(Vec<f64>, &[u32])], k: usize, positive: Option<usize>) -> Self {
        let mut class_counts = vec![0u64; k];
        let mut loss = 0.0;
        for (p, counts) in entries {
            for (c, &n) in counts.iter().enumerate() {
                class_counts[c] += u64::from(n);
                loss -= f64::from(n) * p[c].max(PROBABILITY_FLOOR).ln();
            }
        }
        let rows = class_counts.iter().sum::<u64>().max(1) as f64;
        let classes: Vec<usize> = positive.map_or_else(|| (0..k).collect(), |c| vec![c]);
        let auc = classes
            .iter()
            .map(|&c| weighted_auc(entries, c))
            .sum::<f64>()
            / classes.len() as f64;
        Self {
            auc,
            heldout: entropy(&class_counts) - loss / rows,
        }
    }
}

/// Mann–Whitney AUC of class `class` against the rest from entries that
/// share a score, ties counting ½ (Hanley & McNeil 1982, from a rating table).
fn weighted_auc(entries: &[(Vec<f64>, &[u32])], class: usize) -> f64 {
    let mut rated: Vec<(f64, f64, f64)> = entries
        .iter()
        .map(|(p, counts)| {
            let pos = f64::from(counts[class]);
            let all: f64 = counts.iter().map(|&c| f64::from(c)).sum();
            (p[class], pos, all - pos)
        })
        .collect();
    rated.sort_by(|a, b| a.0.total_cmp(&b.0));
    let (mut below, mut area, mut pos_total) = (0.0, 0.0, 0.0);
    let mut i = 0;
    while i < rated.len() {
        let j = i + rated[i..].iter().take_while(|e| e.0 == rated[i].0).count();
        let (pos, neg) = rated[i..j]
            .iter()
            .fold((0.0, 0.0), |(p, n), e| (p + e.1, n + e.2));
        area += pos * (below + neg / 2.0);
        below += neg;
        pos_total += pos;
        i = j;
    }
    if pos_total == 0.0 || below == 0.0 {
        return 0.5;
    }
    area / (pos_total * below)
}

/// The pairs each outer fold's training rows choose as joint columns.
fn choose_per_fold(
    features: &[EncodedColumn],
    target: &Target<'_>,
    options: &ScanOptions,
    progress: &dyn Progress,
) -> Vec<Vec<(usize, usize)>> {
    let eligible: Vec<usize> = (0..features.len())
        .filter(|&i| pairs_with(&features[i]))
        .collect();
    let n_folds = target.n_folds;
    let folds_as_codes = vec![0u32; target.folds.len()];
    let class_folds = FoldTable::new(&folds_as_codes, 1, target);
    let positive = target
        .attribute
        .is_binary()
        .then_some(target.attribute.positive as usize);
    let singles: Vec<Vec<Measures>> = eligible
        .par_iter()
        .map(|&i| {
            let screen = Screen::single(&features[i], target);
            (0..n_folds)
                .map(|outer| screen.inner(outer, &class_folds, positive))
                .collect()
        })
        .collect();
    let pools: Vec<Vec<usize>> = (0..n_folds)
        .map(|outer| pair_pool(&singles, outer, options))
        .collect();
    let mut pairs: Vec<(usize, usize)> = pools
        .iter()
        .flat_map(|pool| {
            pool.iter()
                .enumerate()
                .flat_map(move |(i, &a)| pool[i + 1..].iter().map(move |&b| (a, b)))
        })
        .collect();
    pairs.sort_unstable();
    pairs.dedup();
    progress.stage(
        &format!("joint columns: {}", target.attribute.name),
        pairs.len() as u64,
    );
    // Per pair, the outer folds in whose pool it is and where its gain clears the line.
    let candidates: Vec<(usize, usize, usize, f64)> = pairs
        .par_iter()
        .flat_map_iter(|&(a, b)| {
            let screen = Screen::pair(&features[eligible[a]], &features[eligible[b]], target);
            progress.advance(1);
            let singles = &singles;
            let pools = &pools;
            let class_folds = &class_folds;
            (0..n_folds)
                .filter(move |&outer| pools[outer].contains(&a) && pools[outer].contains(&b))
                .filter_map(move |outer| {
                    let auc = screen.inner(outer, class_folds, positive).auc;
                    let gain = auc - singles[a][outer].auc.max(singles[b][outer].auc);
                    (gain >= JOINT_GAIN).then_some((outer, a, b, gain))
                })
                .collect::<Vec<_>>()
        })
        .collect();
    (0..n_folds)
        .map(|outer| {
            let screened = pools[outer].len() * pools[outer].len().saturating_sub(1) / 2;
            confirmed(
                features,
                target,
                outer,
                &eligible,
                &singles,
                &candidates,
                screened,
            )
        })
        .collect()
}

/// The candidates of fold `outer`, by gain, whose gain DeLong's paired test
/// on the inner out-of-fold scores confirms at the Bonferroni level; at most `MAX_JOINTS`.
fn confirmed(
    features: &[EncodedColumn],
    target: &Target<'_>,
    outer: usize,
    eligible: &[usize],
    singles: &[Vec<Measures>],
    candidates: &[(usize, usize, usize, f64)],
    screened: usize,
) -> Vec<(usize, usize)> {
    let mut own: Vec<&(usize, usize, usize, f64)> =
        candidates.iter().filter(|c| c.0 == outer).collect();
    if own.is_empty() {
        return Vec::new();
    }
    own.sort_by(|x, y| y.3.total_cmp(&x.3).then((x.1, x.2).cmp(&(y.1, y.2))));
    let inner = InnerTarget::new(target, outer as u8);
    let level = JOINT_LEVEL / (screened.max(1) * target.n_folds) as f64;
    own.iter()
        .filter(|(_, a, b, _)| {
            let better = if singles[*a][outer].auc >= singles[*b][outer].auc {
                a
            } else {
                b
            };
            let column = |i: usize| features[eligible[i]].select_rows(&inner.rows);
            let (ca, cb, cbetter) = (column(*a), column(*b), column(*better));
            let (Some(pair), Some(single)) = (inner.scores(&[&ca, &cb]), inner.scores(&[&cbetter]))
            else {
                return false;
            };
            inner
                .compare(&pair, &single)
                .is_some_and(|c| c.difference > 0.0 && c.p_value < level)
        })
        .take(MAX_JOINTS)
        .map(|(_, a, b, _)| (eligible[*a], eligible[*b]))
        .collect()
}

/// Positions (into the eligible features) among which fold `outer` screens
/// pairs: all of them within the pair budget, else the budget's worth with
/// the most inner held-out information.
fn pair_pool(singles: &[Vec<Measures>], outer: usize, options: &ScanOptions) -> Vec<usize> {
    let mut pool: Vec<usize> = (0..singles.len()).collect();
    let budget = options.pair_budget_features;
    if options.pairs == PairMode::Top || pool.len() > budget {
        let heldout = |i: usize| singles[i][outer].heldout;
        pool.sort_by(|&a, &b| heldout(b).total_cmp(&heldout(a)).then(a.cmp(&b)));
        pool.truncate(budget);
        pool.sort_unstable();
    }
    pool
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::stats::auc::auc_from_scores;
    use crate::surrogate::testing::toy;

    /// AUC of row scores: binary, the positive class; multi-class, macro one-vs-rest.
    fn row_auc(inner: &InnerTarget, scores: &Scores) -> f64 {
        let attribute = &inner.attribute;
        if attribute.is_binary() {
            let positive = attribute.positive_indicator();
            auc_from_scores(&scores.column(attribute.positive as usize), &positive).unwrap()
        } else {
            crate::stats::macro_ovr(&scores.proba, attribute.n_classes(), &attribute.codes)
                .unwrap()
                .auc
        }
    }

    #[test]
    fn count_tables_give_the_inner_cross_fit_of_the_frequency_surrogate() {
        // The count-table screen must equal fitting the frequency surrogate
        // fold by fold on the outer fold's training rows and ranking their
        // out-of-fold scores (Mann–Whitney), for singles and pairs, binary
        // and three classes.
        for k in [2, 3] {
            let (columns, classes) = toy(1_500, k, 9);
            let labels = (0..k).map(|c| format!("c{c}")).collect();
            let attribute = ProtectedAttribute::from_codes("a".into(), labels, classes, 0);
            let target = Target::new(&attribute, 5, 1);
            let class_folds = FoldTable::new(&vec![0; 1_500], 1, &target);
            let positive = attribute.is_binary().then_some(attribute.positive as usize);
            let single = Screen::single(&columns[1], &target);
            let pair = Screen::pair(&columns[0], &columns[1], &target);
            for outer in [0, 3] {
                let inner = InnerTarget::new(&target, outer as u8);
                let rows = |i: usize| columns[i].select_rows(&inner.rows);
                let (c0, c1) = (rows(0), rows(1));
                let by_rows = row_auc(&inner, &inner.scores(&[&c1]).unwrap());
                let by_counts = single.inner(outer, &class_folds, positive).auc;
                assert!(
                    (by_rows - by_counts).abs() < 1e-12,
                    "{by_rows} vs {by_counts}"
                );
                let by_rows = row_auc(&inner, &inner.scores(&[&c0, &c1]).unwrap());
                let by_counts = pair.inner(outer, &class_folds, positive).auc;
                assert!(
                    (by_rows - by_counts).abs() < 1e-12,
                    "{by_rows} vs {by_counts}"
                );
            }
        }
    }
}
