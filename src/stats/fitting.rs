//! Intervals for cross-fitted AUCs that include the variance of fitting the
//! surrogates, and the power statement built on them.
//!
//! # Why DeLong alone is too narrow
//! DeLong's variance (DeLong, DeLong & Clarke-Pearson 1988) treats the scores
//! as fixed. Out-of-fold scores are not: every row's label also shaped the
//! models that scored the rows of the other folds, so a cross-fitted AUC
//! varies more than its DeLong standard error says, the more so the more
//! levels the surrogate has to learn.
//!
//! # The method: a Poisson bootstrap of the whole cross-fit
//! Each replicate gives every row an independent Poisson(1) weight, keeps
//! the row in its fold, refits every fold's surrogate on the reweighted
//! training rows and recomputes the out-of-fold AUC on the reweighted rows
//! (Poisson weights in place of multinomial resampling: Hanley & MacGibbon
//! 2006, "Creating non-parametric bootstrap samples using Poisson
//! frequencies", Computer Methods and Programs in Biomedicine 83(1)). The
//! standard deviation of the replicates is the bootstrap standard error of
//! the whole procedure, fitting included (Efron & Tibshirani 1993, *An
//! Introduction to the Bootstrap*, ch. 6), and the interval is the standard
//! normal interval θ̂ ± z₀.₉₇₅·se around the estimate itself (ibid., ch. 12),
//! clamped to [0, 1]. Keeping each row in its own fold means a resampled row
//! never sits on both sides of a split.
//!
//! # Why the bootstrap variance is averaged with the fixed-model one
//! Measured on seeded synthetic data (2 000 rows; `tests/verdicts.rs`), the
//! bootstrap standard error is right when the fitted ranking is stable (a
//! planted signal: coverage 0.95–0.97) but too large when it is not (pure
//! noise: coverage 0.98–0.99): each replicate redraws the held-out rows and
//! also lets the refitted ranking chase their chance structure, counting
//! the held-out noise twice. The fixed-model variance of the fold-mean AUC
//! (LeDell, Petersen & van der Laan 2015, "Computationally efficient
//! confidence intervals for cross-validated area under the ROC curve
//! estimates", Electronic Journal of Statistics 9) errs the other way on
//! noise (coverage 0.83–0.87): fold AUCs whose models share training rows
//! are correlated, which it ignores. The reported variance is the mean of
//! the two, an empirical calibration, not a theorem: its measured coverage
//! is 0.96–0.97 for planted signals and 0.93–0.98 for noise, see the README.
//! With more than two classes the fixed-model variance is that of the macro
//! one-vs-rest AUC, with the covariances between the classes' AUCs (see
//! `CountTable::fixed_model_variance`); where it cannot be computed (a fold
//! with fewer than two rows of a class) the bootstrap variance is used
//! alone, which errs on the wide side.
//!
//! A count-based surrogate only sees a row through its (value, fold, class)
//! cell, whose total weight is Poisson(n_cell) (a sum of independent
//! Poisson(1) draws is Poisson), so [`poisson_counts`] redraws the cells
//! directly and a replicate costs O(cells), not O(rows). [`from_replicates`] turns
//! the replicate AUCs (and the fixed-model variance, when known) into the
//! reported interval.

use super::auc::hanley_mcneil_se;
use super::special::{Z_975, normal_quantile};
use crate::rng::SplitMix64;
use rayon::prelude::*;

/// Bootstrap replicates per AUC. The relative sd of a bootstrap standard
/// error from B replicates is about 1/√(2B) (Efron & Tibshirani 1993, §6.4):
/// 5 % at 200, which moves a 95 % interval's coverage by well under a point.
pub const REPLICATES: usize = 200;

/// Bootstrap replicates per pair: pairs are many and each replicate refits
/// the pair and both singles, so fewer; the standard error's relative sd is
/// then about 10 %, which moves a 95 % interval's coverage by about a point.
pub const PAIR_REPLICATES: usize = 50;

/// Fewest usable replicates (both classes present) for a standard error.
const MIN_REPLICATES: usize = 20;

/// Power of the detection statement.
pub const POWER: f64 = 0.80;

/// Ratio of the fitting-inclusive standard error to DeLong's used when a
/// scan has no feature to measure it on, and for the default minimum class
/// size. Measured on pure noise with 6 and 40 levels at 2 000 rows: a mean
/// ratio of 1.42 (`monte_carlo_rates` in `tests/verdicts.rs`; 0.95 for a
/// planted 4-level signal, so 1.4 is the cautious end).
pub const DEFAULT_INFLATION: f64 = 1.4;

/// An AUC with its fitting-inclusive standard error and 95 % interval;
/// the interval is `None` when it cannot be estimated (no spread among the
/// replicates, or too few usable ones).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FittedAuc {
    pub auc: f64,
    pub se: Option<f64>,
    pub low: Option<f64>,
    pub high: Option<f64>,
}

/// The interval of `point` from the statistic's bootstrap `replicates`
/// (non-finite ones, e.g. a replicate that lost a class, are skipped) and,
/// when known, its `fixed_model_variance` (see the module notes):
/// θ̂ ± z₀.₉₇₅·se, se² = the mean of var(replicates) and the fixed-model
/// variance (var(replicates) alone without it), clamped to [0, 1]. Not
/// estimable (`None` bounds) when fewer than 20 replicates are usable or
/// their sd is 0.
#[must_use]
pub fn from_replicates(
    point: f64,
    replicates: &[f64],
    fixed_model_variance: Option<f64>,
) -> FittedAuc {
    let usable: Vec<f64> = replicates
        .iter()
        .copied()
        .filter(|v| v.is_finite())
        .collect();
    let n = usable.len() as f64;
    let mean = usable.iter().sum::<f64>() / n;
    let sd = (usable.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
    if usable.len() < MIN_REPLICATES || sd.is_nan() || sd <= 0.0 || !point.is_finite() {
        return FittedAuc {
            auc: point,
            se: None,
            low: None,
            high: None,
        };
    }
    let se = match fixed_model_variance.filter(|v| v.is_finite() && *v >= 0.0) {
        Some(fixed) => ((sd * sd + fixed) / 2.0).sqrt(),
        None => sd,
    };
    FittedAuc {
        auc: point,
        se: Some(se),
        low: Some((point - Z_975 * se).clamp(0.0, 1.0)),
        high: Some((point + Z_975 * se).clamp(0.0, 1.0)),
    }
}

/// [`from_replicates`] for a difference of two AUCs (a gain): the same
/// interval, clamped to [−1, 1] instead of [0, 1], since a gain may be negative.
#[must_use]
pub fn difference_from_replicates(
    point: f64,
    replicates: &[f64],
    fixed_model_variance: Option<f64>,
) -> FittedAuc {
    let fitted = from_replicates(point, replicates, fixed_model_variance);
    let bound = |side: f64| {
        fitted
            .se
            .map(|se| (point + side * Z_975 * se).clamp(-1.0, 1.0))
    };
    FittedAuc {
        low: fitted.low.and(bound(-1.0)),
        high: fitted.high.and(bound(1.0)),
        ..fitted
    }
}

/// The interval when every replicate gives the same AUC (resampling shows
/// no spread: every score tied, or the classes perfectly separated in every
/// fold). Perfect separation (AUC 1 or 0): the one-sided exact binomial
/// bound for n successes in n trials, n the smaller class, α^{1/n} with
/// α = 0.025 (Clopper & Pearson 1934), as the far end. Otherwise the Hanley
/// & McNeil (1982, eq. 2) standard error at the estimate. `None` bounds
/// when a class is empty.
#[must_use]
pub fn degenerate_interval(point: f64, n_pos: u64, n_neg: u64) -> FittedAuc {
    let n = n_pos.min(n_neg);
    if n == 0 || !point.is_finite() {
        return FittedAuc {
            auc: point,
            se: None,
            low: None,
            high: None,
        };
    }
    let far = 0.025_f64.powf(1.0 / n as f64);
    let (low, high, se) = if point >= 1.0 {
        (far, 1.0, None)
    } else if point <= 0.0 {
        (0.0, 1.0 - far, None)
    } else {
        let se = hanley_mcneil_se(point, n_pos as usize, n_neg as usize);
        (
            (point - Z_975 * se).max(0.0),
            (point + Z_975 * se).min(1.0),
            Some(se),
        )
    };
    FittedAuc {
        auc: point,
        se,
        low: Some(low),
        high: Some(high),
    }
}

/// A 64-bit stream number for a name (FNV-1a, Fowler–Noll–Vo), so that each
/// feature's replicates are fixed by the seed and its name, whatever the
/// thread count or column order.
#[must_use]
pub fn stream_of(name: &str) -> u64 {
    name.bytes().fold(0xcbf2_9ce4_8422_2325, |hash, byte| {
        (hash ^ u64::from(byte)).wrapping_mul(0x0100_0000_01b3)
    })
}

/// Replicate `replicate` of a count table: each count `n` redrawn as
/// Poisson(n), from the stream `derive(seed ^ stream, replicate)`.
#[must_use]
pub fn poisson_counts(counts: &[f64], seed: u64, stream: u64, replicate: u64) -> Vec<f64> {
    let mut rng = SplitMix64::derive(seed ^ stream, replicate);
    counts.iter().map(|&n| rng.poisson(n) as f64).collect()
}

/// `statistic` on `replicates` Poisson redraws of `counts` (in parallel, the
/// result fixed by `seed` and `stream`); a replicate where it is `None`
/// gives NaNs, which [`from_replicates`] skips.
#[must_use]
pub fn bootstrap_counts<const N: usize>(
    counts: &[f64],
    replicates: usize,
    seed: u64,
    stream: u64,
    statistic: impl Fn(&[f64]) -> Option<[f64; N]> + Sync,
) -> Vec<[f64; N]> {
    (0..replicates as u64)
        .into_par_iter()
        .map(|r| statistic(&poisson_counts(counts, seed, stream, r)).unwrap_or([f64::NAN; N]))
        .collect()
}

/// The smallest AUC whose 95 % interval would clear `line` with probability
/// `power`, given the class sizes: the least A with
/// A − line ≥ (z₀.₉₇₅ + z_power) · inflation · SE(A), SE from Hanley &
/// McNeil (1982, eq. 2) and `inflation` the measured ratio of the
/// fitting-inclusive to the DeLong standard error (normal-approximation
/// power, common practice). Searched on a 0.001 grid; `None` when even an
/// AUC of 1 would not do (or a class is empty).
#[must_use]
pub fn detectable_auc(
    line: f64,
    n_pos: u64,
    n_neg: u64,
    inflation: f64,
    power: f64,
) -> Option<f64> {
    if n_pos == 0 || n_neg == 0 {
        return None;
    }
    let z = Z_975 + normal_quantile(power);
    let first = (line * 1000.0).ceil() as u32;
    (first..=1000).map(|m| f64::from(m) / 1000.0).find(|&auc| {
        let se = hanley_mcneil_se(auc, n_pos as usize, n_neg as usize);
        auc - line >= z * inflation * se
    })
}

/// The smallest class size (against a much larger other class) at which an
/// AUC of `auc` is detectable over `line` with `power` (see [`detectable_auc`]);
/// the derivation of the default minimum class size, checked in its tests.
#[cfg(test)]
#[must_use]
pub fn min_class_size(auc: f64, line: f64, inflation: f64, power: f64) -> u64 {
    (2..100_000)
        .find(|&m| {
            detectable_auc(line, m, 1_000_000_000, inflation, power).is_some_and(|d| d <= auc)
        })
        .unwrap_or(100_000)
}

/// How a set of seeded replicate intervals performed: the share that
/// covered the truth, and the sample mean and sd of the estimates over the
/// mean reported standard error (about 1 for a calibrated standard error).
#[cfg(test)]
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Calibration {
    pub coverage: f64,
    pub mean: f64,
    pub sd: f64,
    pub mean_se: f64,
}

#[cfg(test)]
impl Calibration {
    /// Summary of `(estimate, standard error, covered the truth)` per replicate
    /// (at least two).
    #[must_use]
    pub fn of(replicates: &[(f64, f64, bool)]) -> Self {
        let n = replicates.len() as f64;
        let mean = replicates.iter().map(|r| r.0).sum::<f64>() / n;
        let spread = replicates.iter().map(|r| (r.0 - mean).powi(2)).sum::<f64>();
        Self {
            coverage: replicates.iter().filter(|r| r.2).count() as f64 / n,
            mean,
            sd: (spread / (n - 1.0)).sqrt(),
            mean_se: replicates.iter().map(|r| r.1).sum::<f64>() / n,
        }
    }

    /// Sd of the estimates over the mean reported standard error.
    #[must_use]
    pub fn spread_ratio(&self) -> f64 {
        self.sd / self.mean_se
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn interval_is_the_normal_interval_of_the_replicate_spread() {
        // Efron & Tibshirani (1993) ch. 6 and 12: se = sample sd of the
        // replicates, interval θ̂ ± 1.959964·se. Replicates 0.6, 0.7 (×10 each):
        // sd = √(20·0.0025/19) = 0.0512989.
        let replicates: Vec<f64> = (0..20)
            .map(|i| if i % 2 == 0 { 0.6 } else { 0.7 })
            .collect();
        let fitted = from_replicates(0.66, &replicates, None);
        let se = (20.0 * 0.0025 / 19.0_f64).sqrt();
        assert!((fitted.se.unwrap() - se).abs() < 1e-12);
        assert!((fitted.low.unwrap() - (0.66 - Z_975 * se)).abs() < 1e-12);
        assert!((fitted.high.unwrap() - (0.66 + Z_975 * se)).abs() < 1e-12);
        // With a fixed-model variance v the variance is (se² + v)/2.
        let blended = from_replicates(0.66, &replicates, Some(0.0001));
        let expected = ((se * se + 0.0001) / 2.0).sqrt();
        assert!((blended.se.unwrap() - expected).abs() < 1e-12);
    }

    #[test]
    fn no_spread_or_too_few_replicates_is_not_estimable() {
        assert_eq!(from_replicates(0.5, &[0.5; 50], Some(0.01)).low, None);
        assert_eq!(from_replicates(0.5, &[0.4, 0.6, 0.5], None).high, None);
        let mut mostly_lost = vec![f64::NAN; 190];
        mostly_lost.extend([0.4, 0.6].repeat(5));
        assert_eq!(from_replicates(0.5, &mostly_lost, None).se, None);
    }

    #[test]
    fn degenerate_intervals_use_exact_and_hanley_mcneil_bounds() {
        // Clopper & Pearson (1934): 20 of 20 gives a one-sided 97.5 % lower
        // bound 0.025^(1/20) = exp(ln 0.025 / 20) = 0.831567.
        let perfect = degenerate_interval(1.0, 20, 20);
        assert!((perfect.low.unwrap() - 0.831_567).abs() < 5e-7);
        assert_eq!(perfect.high, Some(1.0));
        let tied = degenerate_interval(0.5, 100, 100);
        let se = hanley_mcneil_se(0.5, 100, 100);
        assert!((tied.high.unwrap() - (0.5 + Z_975 * se)).abs() < 1e-12);
        assert_eq!(degenerate_interval(1.0, 0, 5).low, None);
    }

    #[test]
    fn detectable_auc_solves_the_power_relation() {
        // Hanley & McNeil (1982) Table III-style check by hand: 100 + 100
        // rows, no inflation, line 0.5: A = 0.60 has SE(eq. 2) = 0.0398, and
        // (0.60 − 0.5)/0.0398 = 2.51 < 2.80 (z₀.₉₇₅ + z₀.₈); A = 0.62 has SE
        // 0.0392 and 3.06 ≥ 2.80, so the answer lies in (0.60, 0.62].
        let auc = detectable_auc(0.5, 100, 100, 1.0, 0.8).unwrap();
        assert!(auc > 0.60 && auc <= 0.62, "{auc}");
        let z = Z_975 + normal_quantile(0.8);
        assert!(auc - 0.5 >= z * hanley_mcneil_se(auc, 100, 100));
        assert!(auc - 0.001 - 0.5 < z * hanley_mcneil_se(auc - 0.001, 100, 100));
        // More rows detect smaller effects; inflation detects larger ones only.
        assert!(detectable_auc(0.5, 1000, 1000, 1.0, 0.8).unwrap() < auc);
        assert!(detectable_auc(0.5, 100, 100, 1.4, 0.8).unwrap() > auc);
        assert_eq!(detectable_auc(0.5, 0, 100, 1.0, 0.8), None);
    }

    #[test]
    fn min_class_size_is_the_first_size_that_detects_the_auc() {
        let m = min_class_size(0.80, 0.60, DEFAULT_INFLATION, POWER);
        let at = |m| detectable_auc(0.60, m, 1_000_000_000, DEFAULT_INFLATION, POWER).unwrap();
        assert!(at(m) <= 0.80 && at(m - 1) > 0.80, "{m}");
    }
}
