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
use super::{PairMode, ScanOptions};
use crate::data::encode::combine_codes;
use crate::data::{EncodedColumn, FeatureKind, ProtectedAttribute};
use crate::stats::auc::{AucComparison, auc_from_scores, delong_compare};
use crate::stats::heldout::heldout_information;
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
) -> FoldJoints {
    if options.pairs == PairMode::None || target.n_folds < 3 {
        return FoldJoints::none(target.n_folds);
    }
    let per_fold: Vec<Vec<(usize, usize)>> = (0..target.n_folds as u8)
        .map(|fold| chosen_in_fold(features, target, fold, options))
        .collect();
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

    /// AUC of scores: binary, the positive class; multi-class, macro one-vs-rest.
    fn auc(&self, scores: &Scores) -> Option<f64> {
        let k = self.attribute.n_classes();
        if self.attribute.is_binary() {
            let positive = self.attribute.positive_indicator();
            auc_from_scores(&scores.column(self.attribute.positive as usize), &positive)
        } else {
            crate::stats::macro_ovr(&scores.proba, k, &self.attribute.codes).map(|e| e.auc)
        }
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

/// A feature's inner single-column screen.
struct Single {
    scores: Scores,
    auc: f64,
    heldout: f64,
}

/// The pairs one outer fold's training rows choose as joint columns.
fn chosen_in_fold(
    features: &[EncodedColumn],
    target: &Target<'_>,
    outer: u8,
    options: &ScanOptions,
) -> Vec<(usize, usize)> {
    let inner = InnerTarget::new(target, outer);
    let eligible: Vec<usize> = (0..features.len())
        .filter(|&i| pairs_with(&features[i]))
        .collect();
    let columns: Vec<EncodedColumn> = eligible
        .par_iter()
        .map(|&i| features[i].select_rows(&inner.rows))
        .collect();
    let singles: Vec<Option<Single>> = columns
        .par_iter()
        .map(|c| {
            let scores = inner.scores(&[c])?;
            Some(Single {
                auc: inner.auc(&scores)?,
                heldout: heldout_information(
                    &scores.proba,
                    inner.attribute.n_classes(),
                    &inner.attribute.codes,
                ),
                scores,
            })
        })
        .collect();
    let pool = pair_pool(&singles, options);
    let pairs: Vec<(usize, usize)> = pool
        .iter()
        .enumerate()
        .flat_map(|(i, &a)| pool[i + 1..].iter().map(move |&b| (a, b)))
        .collect();
    let mut gains: Vec<(f64, usize, usize, Scores)> = pairs
        .par_iter()
        .filter_map(|&(a, b)| {
            let (sa, sb) = (singles[a].as_ref()?, singles[b].as_ref()?);
            let scores = inner.scores(&[&columns[a], &columns[b]])?;
            let gain = inner.auc(&scores)? - sa.auc.max(sb.auc);
            (gain >= JOINT_GAIN).then_some((gain, a, b, scores))
        })
        .collect();
    gains.sort_by(|x, y| y.0.total_cmp(&x.0).then((x.1, x.2).cmp(&(y.1, y.2))));
    let level = JOINT_LEVEL / (pairs.len().max(1) * target.n_folds) as f64;
    gains
        .iter()
        .filter(|(_, a, b, scores)| {
            let better = [a, b]
                .into_iter()
                .filter_map(|&i| singles[i].as_ref())
                .max_by(|x, y| x.auc.total_cmp(&y.auc));
            better
                .and_then(|s| inner.compare(scores, &s.scores))
                .is_some_and(|c| c.difference > 0.0 && c.p_value < level)
        })
        .take(MAX_JOINTS)
        .map(|(_, a, b, _)| (eligible[*a], eligible[*b]))
        .collect()
}

/// Positions (into the eligible features) among which pairs are screened:
/// all of them within the pair budget, else the budget's worth with the most
/// inner held-out information.
fn pair_pool(singles: &[Option<Single>], options: &ScanOptions) -> Vec<usize> {
    let mut pool: Vec<usize> = (0..singles.len())
        .filter(|&i| singles[i].is_some())
        .collect();
    let budget = options.pair_budget_features;
    if options.pairs == PairMode::Top || pool.len() > budget {
        let heldout = |i: usize| singles[i].as_ref().map_or(f64::NEG_INFINITY, |s| s.heldout);
        pool.sort_by(|&a, &b| heldout(b).total_cmp(&heldout(a)).then(a.cmp(&b)));
        pool.truncate(budget);
        pool.sort_unstable();
    }
    pool
}
