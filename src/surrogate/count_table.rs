//! The frequency surrogate's cross-fitted AUC from its count table alone.
//!
//! Every out-of-fold score of the frequency surrogate is a function of the
//! class counts per (cell, fold): a row's posterior uses its cell's counts in
//! the other folds, and for a pair also the counts of its two single codes
//! (see [`super::frequency`]). So its cross-fitted AUC is a function of that
//! table, and a refit under reweighted rows only needs the reweighted table:
//! O(non-empty (cell, fold) entries) per refit instead of O(rows). This is
//! what makes the bootstrap of [`crate::stats::fitting`] cheap.

use super::FoldedTarget;
use super::frequency::{DENSE_PAIR_CELLS, pair_posterior, smooth_into};
use crate::data::EncodedColumn;
use crate::keys::KeyIndex;
use crate::stats::auc::auc_from_weighted_scores;
use crate::stats::heldout::PROBABILITY_FLOOR;
use crate::stats::information::entropy;
use std::ops::Range;

/// Class counts of the frequency surrogate per non-empty (cell, fold).
#[derive(Debug, Clone)]
pub struct CountTable {
    k: usize,
    n_folds: usize,
    smoothing: f64,
    /// The cell and fold of each entry.
    entries: Vec<(u32, u8)>,
    /// Class counts per entry, `entries × k`.
    pub counts: Vec<f64>,
    n_cells: usize,
    /// For a pair: each cell's two single codes, and the singles' level counts.
    pair: Option<(Vec<[u32; 2]>, [usize; 2])>,
}

/// A pair table's view of one of its two columns: that column's own table
/// and, for every pair entry, the entry of the column's table it adds to.
#[derive(Debug, Clone)]
pub struct Marginal {
    pub table: CountTable,
    entry_of: Vec<u32>,
}

impl Marginal {
    /// Orders the column's entries by fold, keeping the pair entries' map.
    fn order_by_fold(&mut self) {
        let order = self.table.order_by_fold();
        let mut new_index = vec![0u32; order.len()];
        for (new, &old) in order.iter().enumerate() {
            new_index[old] = new as u32;
        }
        self.entry_of
            .iter_mut()
            .for_each(|e| *e = new_index[*e as usize]);
    }

    /// The column's counts from a pair table's `counts`.
    #[must_use]
    pub fn counts(&self, pair_counts: &[f64]) -> Vec<f64> {
        let k = self.table.k;
        let mut out = vec![0.0; self.table.entries.len() * k];
        for (&to, from) in self.entry_of.iter().zip(pair_counts.chunks_exact(k)) {
            let start = to as usize * k;
            out[start..start + k]
                .iter_mut()
                .zip(from)
                .for_each(|(o, c)| *o += c);
        }
        out
    }
}

/// Class counts per (code, fold, class), `levels × folds × k`.
fn dense_counts(codes: &[u32], levels: usize, target: FoldedTarget<'_>) -> Vec<u32> {
    let (f, k) = (target.n_folds, target.n_classes);
    let mut counts = vec![0u32; levels * f * k];
    for ((&code, &class), &fold) in codes.iter().zip(target.classes).zip(target.folds) {
        counts[(code as usize * f + usize::from(fold)) * k + class as usize] += 1;
    }
    counts
}

impl CountTable {
    fn empty(target: FoldedTarget<'_>, smoothing: f64) -> Self {
        Self {
            k: target.n_classes,
            n_folds: target.n_folds,
            smoothing,
            entries: Vec::new(),
            counts: Vec::new(),
            n_cells: 0,
            pair: None,
        }
    }

    /// Appends a cell's non-empty folds from its `folds × k` block.
    fn push_cell(&mut self, block: &[u32]) {
        let cell = self.n_cells as u32;
        for (fold, per_class) in block.chunks_exact(self.k).enumerate() {
            if per_class.iter().any(|&c| c > 0) {
                self.entries.push((cell, fold as u8));
                self.counts.extend(per_class.iter().map(|&c| f64::from(c)));
            }
        }
        self.n_cells += 1;
    }

    /// The table of one column of codes. A level seen in one fold only has
    /// no training rows for that fold, so its rows always score the fold's
    /// training prior; such levels are pooled into one cell per fold (the
    /// same scores, far fewer entries for identifier-like columns), and the
    /// pooling holds under any reweighting.
    #[must_use]
    pub fn single(codes: &[u32], levels: usize, target: FoldedTarget<'_>, smoothing: f64) -> Self {
        let mut rows_of = vec![0u32; levels];
        codes.iter().for_each(|&c| rows_of[c as usize] += 1);
        // Levels with two rows or more, numbered densely; single-row levels
        // are pooled at once.
        let mut number = vec![u32::MAX; levels];
        let mut repeated = 0u32;
        for (n, &rows) in number.iter_mut().zip(&rows_of) {
            if rows >= 2 {
                *n = repeated;
                repeated += 1;
            }
        }
        let (f, k) = (target.n_folds, target.n_classes);
        let mut counts = vec![0u32; (repeated as usize + 1) * f * k];
        let pooled_base = repeated as usize * f * k;
        for ((&code, &class), &fold) in codes.iter().zip(target.classes).zip(target.folds) {
            let cell = number[code as usize];
            let base = if cell == u32::MAX {
                pooled_base
            } else {
                cell as usize * f * k
            };
            counts[base + usize::from(fold) * k + class as usize] += 1;
        }
        let mut table = Self::empty(target, smoothing);
        let mut pooled: Vec<u32> = counts[pooled_base..].to_vec();
        for block in counts[..pooled_base].chunks_exact(f * k) {
            let folds_seen = block
                .chunks_exact(k)
                .filter(|c| c.iter().any(|&n| n > 0))
                .count();
            if folds_seen == 1 {
                pooled.iter_mut().zip(block).for_each(|(p, &c)| *p += c);
            } else {
                table.push_cell(block);
            }
        }
        // One pooled cell per fold: each is seen in its own fold only.
        for fold in 0..f {
            let mut block = vec![0u32; f * k];
            block[fold * k..(fold + 1) * k].copy_from_slice(&pooled[fold * k..(fold + 1) * k]);
            if block.iter().any(|&c| c > 0) {
                table.push_cell(&block);
            }
        }
        table.order_by_fold();
        table
    }

    /// The table of a pair of columns: one cell per observed combination.
    #[must_use]
    pub fn pair(
        left: &EncodedColumn,
        right: &EncodedColumn,
        target: FoldedTarget<'_>,
        smoothing: f64,
    ) -> Self {
        let levels = [left.n_levels as usize, right.n_levels as usize];
        let grid = u64::from(left.n_levels) * u64::from(right.n_levels);
        let (cells, codes_of): (Vec<u32>, Vec<[u32; 2]>) = if grid <= DENSE_PAIR_CELLS {
            let cells = left
                .codes
                .iter()
                .zip(&right.codes)
                .map(|(&a, &b)| a * right.n_levels + b)
                .collect();
            let codes_of = (0..grid as u32)
                .map(|c| [c / right.n_levels, c % right.n_levels])
                .collect();
            (cells, codes_of)
        } else {
            let mut index = KeyIndex::with_limit(left.codes.len());
            let cells = left
                .codes
                .iter()
                .zip(&right.codes)
                .map(|(&a, &b)| {
                    index
                        .number((u64::from(a) << 32) | u64::from(b))
                        .unwrap_or(0)
                })
                .collect();
            let codes_of = index
                .keys()
                .iter()
                .map(|&key| [(key >> 32) as u32, key as u32])
                .collect();
            (cells, codes_of)
        };
        let dense = dense_counts(&cells, codes_of.len(), target);
        let block_len = target.n_folds * target.n_classes;
        let mut table = Self::empty(target, smoothing);
        let mut kept = Vec::new();
        for (block, codes) in dense.chunks_exact(block_len).zip(&codes_of) {
            if block.iter().any(|&c| c > 0) {
                table.push_cell(block);
                kept.push(*codes);
            }
        }
        table.pair = Some((kept, levels));
        table.order_by_fold();
        table
    }

    /// Column `side` (0 left, 1 right) of a pair table.
    #[must_use]
    pub fn marginal(&self, side: usize) -> Option<Marginal> {
        let (codes_of, levels) = self.pair.as_ref()?;
        let (f, k) = (self.n_folds, self.k);
        let mut dense = vec![0u32; levels[side] * f * k];
        for (&(cell, fold), counts) in self.entries.iter().zip(self.counts.chunks_exact(k)) {
            let start = (codes_of[cell as usize][side] as usize * f + usize::from(fold)) * k;
            for (d, &c) in dense[start..start + k].iter_mut().zip(counts) {
                *d += c as u32;
            }
        }
        let mut table = Self::empty_like(self);
        // Entry number of each (code, fold) in the marginal table.
        let mut entry_at = vec![u32::MAX; levels[side] * f];
        for block in dense.chunks_exact(f * k) {
            let code = table.n_cells;
            let before = table.entries.len();
            table.push_cell(block);
            for (offset, &(_, fold)) in table.entries[before..].iter().enumerate() {
                entry_at[code * f + usize::from(fold)] = (before + offset) as u32;
            }
        }
        let entry_of = self
            .entries
            .iter()
            .map(|&(cell, fold)| {
                entry_at[codes_of[cell as usize][side] as usize * f + usize::from(fold)]
            })
            .collect();
        let mut marginal = Marginal { table, entry_of };
        marginal.order_by_fold();
        Some(marginal)
    }

    fn empty_like(other: &Self) -> Self {
        Self {
            k: other.k,
            n_folds: other.n_folds,
            smoothing: other.smoothing,
            entries: Vec::new(),
            counts: Vec::new(),
            n_cells: 0,
            pair: None,
        }
    }

    /// Cross-validated AUC of the frequency surrogate when the table holds
    /// `counts` (same layout as [`Self::counts`]): the mean over folds of
    /// each held-out fold's AUC, the CV-AUC of LeDell, Petersen & van der
    /// Laan (2015, EJS 9, §2). Within one fold every row of a cell shares
    /// its score, so rows are never ordered by which fold's model scored
    /// them (pooling the folds would rank a cell's held-out rows against
    /// the other folds' rows of the same cell, whose scores are
    /// anti-correlated with their labels, and bias the AUC low). With two
    /// classes the AUC of class `positive`, with more the macro
    /// one-vs-rest AUC. Folds lacking a class are left out of the mean;
    /// `None` when every fold lacks one.
    #[must_use]
    pub fn auc(&self, counts: &[f64], positive: usize) -> Option<f64> {
        let posteriors = self.posteriors(counts);
        let k = self.k;
        let classes: Vec<usize> = if k == 2 {
            vec![positive]
        } else {
            (0..k).collect()
        };
        let mut per_fold = Vec::with_capacity(self.n_folds);
        let mut items = Vec::new();
        for range in self.fold_ranges() {
            let fold_counts = counts[range.start * k..range.end * k].chunks_exact(k);
            let fold_posteriors = posteriors[range.start * k..range.end * k].chunks_exact(k);
            let mut total = 0.0;
            let mut defined = true;
            for &class in &classes {
                items.clear();
                let pairs = fold_counts.clone().zip(fold_posteriors.clone());
                // Entries a bootstrap replicate left empty weigh nothing.
                items.extend(
                    pairs
                        .filter(|(c, _)| c.iter().any(|&n| n > 0.0))
                        .map(|(c, p)| (p[class], c.iter().sum::<f64>() - c[class], c[class])),
                );
                match auc_from_weighted_scores(&mut items) {
                    Some(auc) => total += auc,
                    None => defined = false,
                }
            }
            if defined {
                per_fold.push(total / classes.len() as f64);
            }
        }
        (!per_fold.is_empty()).then(|| per_fold.iter().sum::<f64>() / per_fold.len() as f64)
    }

    /// The entries of each fold (entries are kept ordered by fold).
    fn fold_ranges(&self) -> Vec<std::ops::Range<usize>> {
        let mut ranges = Vec::with_capacity(self.n_folds);
        let mut start = 0;
        for fold in 0..self.n_folds as u8 {
            let end = start + self.entries[start..].partition_point(|e| e.1 == fold);
            ranges.push(start..end);
            start = end;
        }
        ranges
    }

    /// Orders the entries (and their counts) by fold, then cell; returns
    /// the old position of each entry in the new order.
    fn order_by_fold(&mut self) -> Vec<usize> {
        let k = self.k;
        let mut order: Vec<usize> = (0..self.entries.len()).collect();
        order.sort_by_key(|&e| (self.entries[e].1, self.entries[e].0));
        self.entries = order.iter().map(|&e| self.entries[e]).collect();
        self.counts = order
            .iter()
            .flat_map(|&e| self.counts[e * k..(e + 1) * k].iter().copied())
            .collect();
        order
    }

    /// Variance of the fold-mean AUC of [`Self::auc`] with each fold's
    /// model taken as fixed, the influence-function variance of LeDell,
    /// Petersen & van der Laan (2015, §3): (1/V²) Σ_f Var(AUC_f). Two classes:
    /// Var(AUC_f) is the DeLong variance of fold f's AUC (DeLong et al. 1988
    /// on the fold's rating table). More: AUC_f is the mean of the k
    /// one-vs-rest AUCs, which share rows, so Var(AUC_f) is Σ_r φ(r)², φ(r)
    /// the mean over classes of each AUC's influence at row r
    /// ([`Self::macro_fold_variance`]). `None` when a fold lacks a class.
    #[must_use]
    pub fn fixed_model_variance(&self, positive: usize) -> Option<f64> {
        let posteriors = self.posteriors(&self.counts);
        let mut total = 0.0;
        for range in self.fold_ranges() {
            total += if self.k == 2 {
                self.fold_variance(&posteriors, range, positive)?
            } else {
                self.macro_fold_variance(&posteriors, range)?
            };
        }
        Some(total / (self.n_folds * self.n_folds) as f64)
    }

    /// DeLong variance of the AUC of `class` against the rest over the
    /// entries in `range` (one fold), from their rating table of posteriors.
    fn fold_variance(&self, posteriors: &[f64], range: Range<usize>, class: usize) -> Option<f64> {
        let k = self.k;
        let mut items: Vec<(f64, u64, u64)> = range
            .map(|e| {
                let c = &self.counts[e * k..][..k];
                let pos = c[class] as u64;
                (
                    posteriors[e * k + class],
                    c.iter().sum::<f64>() as u64 - pos,
                    pos,
                )
            })
            .collect();
        items.sort_by(|a, b| a.0.total_cmp(&b.0));
        let (mut neg, mut pos) = (Vec::new(), Vec::new());
        for group in items.chunk_by(|a, b| a.0 == b.0) {
            neg.push(group.iter().map(|g| g.1).sum());
            pos.push(group.iter().map(|g| g.2).sum());
        }
        Some(crate::stats::auc::delong_rating_table(&neg, &pos)?.variance)
    }

    /// Variance of the macro one-vs-rest AUC over the entries in `range`
    /// with the model fixed: Σ_r φ̄(r)², φ̄ the mean over classes of each
    /// one-vs-rest AUC's DeLong structural component at row r, as
    /// [`crate::stats::macro_ovr`] computes it from rows (derivation in
    /// `stats::multiclass`); the rows of one entry share every component.
    fn macro_fold_variance(&self, posteriors: &[f64], range: Range<usize>) -> Option<f64> {
        let k = self.k;
        let entries: Vec<usize> = range.collect();
        // Component of class c's AUC at entry i's rows of class c
        // (`own[i * k + c]`) and at its rows of the other classes (`other`).
        let (mut own, mut other) = (vec![0.0; entries.len() * k], vec![0.0; entries.len() * k]);
        for class in 0..k {
            let count = |i: usize| &self.counts[entries[i] * k..][..k];
            let positives = |i: usize| count(i)[class];
            let negatives = |i: usize| count(i).iter().sum::<f64>() - count(i)[class];
            let (m, n) = (0..entries.len())
                .fold((0.0, 0.0), |(m, n), i| (m + positives(i), n + negatives(i)));
            if m < 2.0 || n < 2.0 {
                return None;
            }
            let mut order: Vec<usize> = (0..entries.len()).collect();
            let score = |i: usize| posteriors[entries[i] * k + class];
            order.sort_by(|&a, &b| score(a).total_cmp(&score(b)));
            let (mut below_neg, mut auc) = (0.0, 0.0);
            let mut placements = vec![(0.0, 0.0); entries.len()];
            let mut above_pos = m;
            for group in order.chunk_by(|&a, &b| score(a) == score(b)) {
                let tie_neg: f64 = group.iter().map(|&i| negatives(i)).sum();
                let tie_pos: f64 = group.iter().map(|&i| positives(i)).sum();
                above_pos -= tie_pos;
                let v10 = (below_neg + 0.5 * tie_neg) / n;
                let v01 = (above_pos + 0.5 * tie_pos) / m;
                for &i in group {
                    placements[i] = (v10, v01);
                    auc += positives(i) * v10 / m;
                }
                below_neg += tie_neg;
            }
            for (i, &(v10, v01)) in placements.iter().enumerate() {
                own[i * k + class] = (v10 - auc) / (m * (m - 1.0)).sqrt();
                other[i * k + class] = (v01 - auc) / (n * (n - 1.0)).sqrt();
            }
        }
        let mut variance = 0.0;
        for i in 0..entries.len() {
            let all_other: f64 = other[i * k..][..k].iter().sum();
            for class in 0..k {
                let rows = self.counts[entries[i] * k + class];
                if rows > 0.0 {
                    let phi = (all_other - other[i * k + class] + own[i * k + class]) / k as f64;
                    variance += rows * phi * phi;
                }
            }
        }
        Some(variance)
    }

    /// Held-out information of the surrogate on the table's own counts:
    /// H(A) − mean held-out log-loss, as
    /// [`crate::stats::heldout::heldout_information`] computes it from rows
    /// (each entry standing for its rows, probabilities floored alike).
    #[must_use]
    pub fn heldout_information(&self) -> f64 {
        let k = self.k;
        let posteriors = self.posteriors(&self.counts);
        let mut class_totals = vec![0u64; k];
        let mut loss = 0.0;
        for (c, p) in self.counts.chunks_exact(k).zip(posteriors.chunks_exact(k)) {
            for class in 0..k {
                class_totals[class] += c[class] as u64;
                loss -= c[class] * p[class].max(PROBABILITY_FLOOR).ln();
            }
        }
        let rows: u64 = class_totals.iter().sum();
        entropy(&class_totals) - loss / rows as f64
    }

    /// The posterior of every entry, `entries × k`: each entry's training
    /// counts are its cell's total minus its own fold's.
    fn posteriors(&self, counts: &[f64]) -> Vec<f64> {
        let (f, k) = (self.n_folds, self.k);
        let mut fold_totals = vec![0.0; f * k];
        let mut cell_totals = vec![0.0; self.n_cells * k];
        for (&(cell, fold), c) in self.entries.iter().zip(counts.chunks_exact(k)) {
            add(&mut fold_totals[usize::from(fold) * k..][..k], c);
            add(&mut cell_totals[cell as usize * k..][..k], c);
        }
        let priors = training_priors(&fold_totals, f, k);
        let sides = self.pair.as_ref().map(|(codes_of, levels)| {
            [0, 1].map(|side| SideShares::new(self, counts, codes_of, levels[side], side, &priors))
        });
        let mut back_off = vec![0.0; k];
        let mut own = vec![0.0; k];
        let mut out = vec![0.0; self.entries.len() * k];
        for ((&(cell, fold), c), p) in self
            .entries
            .iter()
            .zip(counts.chunks_exact(k))
            .zip(out.chunks_exact_mut(k))
        {
            minus(&cell_totals[cell as usize * k..][..k], c, &mut own);
            let prior = &priors[usize::from(fold) * k..][..k];
            match (&sides, &self.pair) {
                (Some([l, r]), Some((codes_of, _))) => {
                    let [a, b] = codes_of[cell as usize];
                    let shares = [l.of(a, fold), r.of(b, fold)];
                    pair_posterior(shares, &own, prior, self.smoothing, &mut back_off, p);
                }
                _ => smooth_into(&own, prior, self.smoothing, p),
            }
        }
        out
    }
}

/// One column of a pair: the smoothed class shares of each of its codes
/// when each fold is held out, `levels × folds × k`, computed once per
/// count vector and shared by every cell holding the code.
struct SideShares {
    k: usize,
    n_folds: usize,
    shares: Vec<f64>,
}

impl SideShares {
    fn new(
        table: &CountTable,
        counts: &[f64],
        codes_of: &[[u32; 2]],
        levels: usize,
        side: usize,
        priors: &[f64],
    ) -> Self {
        let (f, k) = (table.n_folds, table.k);
        let mut per_fold = vec![0.0; levels * f * k];
        let mut total = vec![0.0; levels * k];
        for (&(cell, fold), c) in table.entries.iter().zip(counts.chunks_exact(k)) {
            let code = codes_of[cell as usize][side] as usize;
            add(&mut per_fold[(code * f + usize::from(fold)) * k..][..k], c);
            add(&mut total[code * k..][..k], c);
        }
        let mut training = vec![0.0; k];
        let mut shares = vec![0.0; levels * f * k];
        for (i, out) in shares.chunks_exact_mut(k).enumerate() {
            let (code, fold) = (i / f, i % f);
            minus(
                &total[code * k..][..k],
                &per_fold[i * k..][..k],
                &mut training,
            );
            smooth_into(&training, &priors[fold * k..][..k], table.smoothing, out);
        }
        Self {
            k,
            n_folds: f,
            shares,
        }
    }

    /// Smoothed shares of `code` when `fold` is held out.
    fn of(&self, code: u32, fold: u8) -> &[f64] {
        let at = (code as usize * self.n_folds + usize::from(fold)) * self.k;
        &self.shares[at..at + self.k]
    }
}

/// Class shares of each fold's training rows (all folds but its own), `folds × k`.
fn training_priors(fold_totals: &[f64], f: usize, k: usize) -> Vec<f64> {
    let total: Vec<f64> = (0..k)
        .map(|c| (0..f).map(|fold| fold_totals[fold * k + c]).sum())
        .collect();
    let mut priors = vec![0.0; f * k];
    for (fold, prior) in priors.chunks_exact_mut(k).enumerate() {
        minus(&total, &fold_totals[fold * k..][..k], prior);
        let sum: f64 = prior.iter().sum();
        if sum > 0.0 {
            prior.iter_mut().for_each(|p| *p /= sum);
        }
    }
    priors
}

fn add(into: &mut [f64], values: &[f64]) {
    into.iter_mut().zip(values).for_each(|(a, v)| *a += v);
}

fn minus(a: &[f64], b: &[f64], out: &mut [f64]) {
    for ((o, x), y) in out.iter_mut().zip(a).zip(b) {
        *o = (x - y).max(0.0);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::FeatureKind;
    use crate::data::encode::encode_levels;
    use crate::data::folds::stratified_folds;
    use crate::stats::auc::auc_from_scores;
    use crate::stats::macro_ovr;
    use crate::surrogate::testing::{folded, toy};
    use crate::surrogate::{FrequencySurrogate, Surrogate};

    /// Mean over the 5 folds of the held-out fold's AUC from row scores.
    fn row_auc(columns: &[&EncodedColumn], target: &[u32], k: usize, folds: &[u8]) -> f64 {
        let scores = FrequencySurrogate::default()
            .out_of_fold(columns, folded(target, k, folds))
            .unwrap();
        let fold_auc = |fold: u8| {
            let rows: Vec<usize> = (0..target.len()).filter(|&r| folds[r] == fold).collect();
            let labels: Vec<u32> = rows.iter().map(|&r| target[r]).collect();
            let proba: Vec<f64> = rows
                .iter()
                .flat_map(|&r| scores.proba[r * k..(r + 1) * k].to_vec())
                .collect();
            if k == 2 {
                let positive: Vec<bool> = labels.iter().map(|&t| t == 1).collect();
                let column: Vec<f64> = proba.chunks_exact(2).map(|p| p[1]).collect();
                auc_from_scores(&column, &positive).unwrap()
            } else {
                macro_ovr(&proba, k, &labels).unwrap().auc
            }
        };
        (0..5).map(fold_auc).sum::<f64>() / 5.0
    }

    /// (1/25) Σ_f variance of the held-out fold's AUC from its row scores:
    /// DeLong's (DeLong et al. 1988) for two classes, the macro one-vs-rest
    /// one of [`macro_ovr`] for more.
    fn fixed_model_variance_from_rows(
        column: &EncodedColumn,
        target: &[u32],
        k: usize,
        folds: &[u8],
    ) -> f64 {
        let scores = FrequencySurrogate::default()
            .out_of_fold(&[column], folded(target, k, folds))
            .unwrap();
        (0..5u8)
            .map(|fold| {
                let rows: Vec<usize> = (0..target.len()).filter(|&r| folds[r] == fold).collect();
                if k == 2 {
                    let s: Vec<f64> = rows.iter().map(|&r| scores.proba[2 * r + 1]).collect();
                    let p: Vec<bool> = rows.iter().map(|&r| target[r] == 1).collect();
                    crate::stats::delong(&s, &p).unwrap().variance
                } else {
                    let proba: Vec<f64> = rows
                        .iter()
                        .flat_map(|&r| scores.proba[r * k..(r + 1) * k].to_vec())
                        .collect();
                    let labels: Vec<u32> = rows.iter().map(|&r| target[r]).collect();
                    macro_ovr(&proba, k, &labels).unwrap().variance
                }
            })
            .sum::<f64>()
            / 25.0
    }

    #[test]
    fn table_auc_equals_the_row_by_row_cross_fit() {
        // Same model, two computations: scoring every row and counting its
        // cells must give the same Mann–Whitney AUC and fixed-model variance
        // (binary and 3 classes; singles, a pair, an identifier-like column
        // pooled per fold).
        for k in [2u32, 3] {
            let (columns, target) = toy(3_000, k, 21);
            let folds = stratified_folds(&target, k as usize, 5, 0);
            let ids: Vec<String> = (0..3_000).map(|i| format!("id{}", i / 2)).collect();
            let id = encode_levels(
                "id",
                FeatureKind::IdentifierLike,
                ids.iter().map(|s| Some(s.as_str())),
            );
            let target_ref = folded(&target, k as usize, &folds);
            for column in [&columns[0], &columns[1], &id] {
                let table =
                    CountTable::single(&column.codes, column.n_levels as usize, target_ref, 1.0);
                let from_table = table.auc(&table.counts, 1).unwrap();
                let from_rows = row_auc(&[column], &target, k as usize, &folds);
                assert!(
                    (from_table - from_rows).abs() < 1e-12,
                    "{k} {}",
                    column.name
                );
                let rows = fixed_model_variance_from_rows(column, &target, k as usize, &folds);
                let table_variance = table.fixed_model_variance(1).unwrap();
                assert!((table_variance - rows).abs() < 1e-15, "{}", column.name);
            }
            let pair = CountTable::pair(&columns[0], &columns[1], target_ref, 1.0);
            let from_rows = row_auc(&[&columns[0], &columns[1]], &target, k as usize, &folds);
            let scores = FrequencySurrogate::default()
                .out_of_fold(&[&columns[0], &columns[1]], target_ref)
                .unwrap();
            let info = crate::stats::heldout_information(&scores.proba, k as usize, &target);
            assert!((pair.heldout_information() - info).abs() < 1e-9);
            assert!((pair.auc(&pair.counts, 1).unwrap() - from_rows).abs() < 1e-12);
            for (side, column) in columns.iter().enumerate() {
                let marginal = pair.marginal(side).unwrap();
                let counts = marginal.counts(&pair.counts);
                let single = row_auc(&[column], &target, k as usize, &folds);
                assert!((marginal.table.auc(&counts, 1).unwrap() - single).abs() < 1e-12);
            }
        }
    }
}
