//! The score as a proxy: how well it separates the protected classes, within
//! outcome strata, and which features carry the attribute into it.

use super::contract::{Carrier, ScoreAuc, StratumAuc};
use crate::data::{EncodedColumn, FeatureKind};
use crate::rng::SplitMix64;
use crate::stats::special::Z_975;
use crate::stats::{AucEstimate, Contingency, auc_from_scores, cramers_v, delong, macro_ovr};

/// The score's separation of the classes and each class's raw AUC against the rest.
pub struct Separation {
    /// `None` when a class has too few rows (see [`separation`]).
    pub auc: Option<ScoreAuc>,
    /// AUC of the raw score for class c against the rest (`None` when c or the rest is empty).
    pub per_class: Vec<Option<f64>>,
}

/// How well a single score separates `k` classes: for each class c the AUC of
/// the score for c against the rest, oriented so that it is at least ½
/// (the score, or minus the score when class c scores lower), macro-averaged
/// over the classes (scikit-learn `roc_auc_score(multi_class="ovr")` on the
/// oriented columns), with the DeLong-type variance of [`macro_ovr`].
///
/// With two classes this is max(AUC, 1 − AUC) of the binary AUC with its
/// DeLong interval (DeLong et al. 1988): the estimate minus ½ is |AUC − ½|,
/// so the interval holds the truth as often as DeLong's does.
///
/// With three or more classes, orienting each class on the rows it is then
/// measured on would average |AUC_c − ½| over the classes and lean high:
/// on a score unrelated to three equal classes the 95 % interval held ½ in
/// only 86–88 % of data sets (`tests/outputs_coverage.rs`). So the rows are
/// split in two seeded halves, stratified by class; each half is oriented
/// by the other half's AUCs and measured on its own rows (sample splitting
/// against selection bias; Cox 1975, "A note on data-splitting for the
/// evaluation of significance levels", Biometrika 62), and the estimate is
/// the mean of the two halves' macro AUCs, at least ½ (the estimand is). Its
/// interval ([`split_interval`]) allows for the two halves' dependence
/// through the orientation and for the downward pull of a direction the
/// other half misreads. `None` when a class has fewer than two rows (four
/// with three classes or more: two in each half).
#[must_use]
pub fn separation(score: &[f64], classes: &[u32], k: usize) -> Separation {
    let per_class = class_aucs(score, classes, k);
    let auc = if k <= 2 {
        oriented_macro(score, classes, k, &orientation(&per_class)).map(|estimate| ScoreAuc {
            auc: estimate.auc,
            auc_low: estimate.low,
            auc_high: estimate.high,
            auc_se: estimate.se,
        })
    } else {
        split_oriented_macro(score, classes, k)
    };
    Separation { auc, per_class }
}

/// AUC of the raw score for each class against the rest.
fn class_aucs(score: &[f64], classes: &[u32], k: usize) -> Vec<Option<f64>> {
    (0..k)
        .map(|c| {
            let member: Vec<bool> = classes.iter().map(|&a| a as usize == c).collect();
            auc_from_scores(score, &member)
        })
        .collect()
}

/// +1 for a class whose AUC is at least ½ (or unknown), −1 otherwise.
fn orientation(per_class: &[Option<f64>]) -> Vec<f64> {
    per_class
        .iter()
        .map(|auc| if auc.unwrap_or(0.5) >= 0.5 { 1.0 } else { -1.0 })
        .collect()
}

/// Macro one-vs-rest AUC of the score multiplied, for class c, by `signs[c]`.
fn oriented_macro(score: &[f64], classes: &[u32], k: usize, signs: &[f64]) -> Option<AucEstimate> {
    let oriented: Vec<f64> = score
        .iter()
        .flat_map(|&s| signs.iter().map(move |&sign| sign * s))
        .collect();
    macro_ovr(&oriented, k, classes)
}

/// Seed of the split into halves, fixed so that a report is reproducible.
const HALVES_SEED: u64 = 0x005E_ED0F_4A17;

/// A class's direction counts as settled when both halves agree on it and
/// its one-vs-rest AUC is at least this many DeLong standard errors from ½
/// in each half.
const SETTLED_Z: f64 = 3.0;

/// The largest expected downward pull on a class's oriented AUC from a
/// direction the other half may misread, in units of its half-sample
/// standard error σ: the expected pull is 2|A − ½|·Φ(−|A − ½|/σ) (the
/// direction is wrong with probability Φ(−|A − ½|/σ), and then the class
/// scores 1 − A instead of A), largest at |A − ½| = 0.75σ, where it is
/// 0.34σ. A single misread pulls by 2|A − ½|; the allowance offsets the
/// bias on average, not in every data set.
const MISREAD_PULL: f64 = 0.34;

/// One half's measures: its classes' own AUCs against the rest with their
/// DeLong standard errors, and its macro AUC oriented by the other half.
struct Half {
    classes: Vec<AucEstimate>,
    oriented: AucEstimate,
}

/// Each half oriented by the other and measured on its own rows; the mean
/// of the two estimates (see [`separation`]) with [`split_interval`].
fn split_oriented_macro(score: &[f64], classes: &[u32], k: usize) -> Option<ScoreAuc> {
    let halves = stratified_halves(classes, k);
    let part = |h: usize| -> (Vec<f64>, Vec<u32>) {
        halves[h]
            .iter()
            .map(|&row| (score[row], classes[row]))
            .unzip()
    };
    let parts = [part(0), part(1)];
    let own: Vec<Vec<AucEstimate>> = parts
        .iter()
        .map(|(s, c)| {
            (0..k)
                .map(|class| {
                    let member: Vec<bool> = c.iter().map(|&a| a as usize == class).collect();
                    delong(s, &member)
                })
                .collect::<Option<_>>()
        })
        .collect::<Option<_>>()?;
    let signs: Vec<Vec<f64>> = own
        .iter()
        .map(|aucs| orientation(&aucs.iter().map(|a| Some(a.auc)).collect::<Vec<_>>()))
        .collect();
    let mut measured = Vec::with_capacity(2);
    for (h, ((s, c), aucs)) in parts.iter().zip(own).enumerate() {
        measured.push(Half {
            oriented: oriented_macro(s, c, k, &signs[1 - h])?,
            classes: aucs,
        });
    }
    Some(split_interval(&measured, &signs))
}

/// The split estimate's interval. When every class's direction is settled
/// ([`SETTLED_Z`]), the directions are fixed and the halves independent:
/// se = √((V₁ + V₂)/4). Otherwise the halves move together through the
/// directions, so se is the mean of the halves' (the Cauchy–Schwarz bound
/// for two correlated halves, given each half's se; those se miss some of
/// the direction's own variation, sd/se up to 1.12 on weak signals), and
/// the upper limit is raised by the largest expected pull of the unsettled
/// classes, (1/K)·Σ [`MISREAD_PULL`]·σ_c. The interval is kept within
/// [½, 1], where the estimand lies. Rule and allowance from an independent
/// review's Monte Carlo (3 to 6 classes, 10 to 1,000 rows per class, equal
/// and unequal shares, no, weak and strong signal; 4,000 data sets per
/// design), checked against this code to 2e-16: coverage 0.940–0.977 on the
/// weak and small designs where the plain mean of the halves' standard
/// errors gave 0.870–0.928 (there the upper limit still misses in 4–5 % of
/// data sets, the lower in under 1 %), 0.955–0.962 on strong ones instead
/// of 0.992–0.995 (intervals 0.71–0.74 as wide), 0.987 on no signal.
fn split_interval(halves: &[Half], signs: &[Vec<f64>]) -> ScoreAuc {
    let k = signs[0].len();
    let settled: Vec<bool> = (0..k)
        .map(|c| {
            signs[0][c] == signs[1][c]
                && halves.iter().all(|h| {
                    let a = h.classes[c];
                    (a.auc - 0.5).abs() >= SETTLED_Z * a.se
                })
        })
        .collect();
    let estimate = halves.iter().map(|h| h.oriented.auc).sum::<f64>() / 2.0;
    let se = if settled.iter().all(|&s| s) {
        (halves.iter().map(|h| h.oriented.variance).sum::<f64>() / 4.0).sqrt()
    } else {
        halves.iter().map(|h| h.oriented.se).sum::<f64>() / 2.0
    };
    let pull: f64 = (0..k)
        .filter(|&c| !settled[c])
        .map(|c| MISREAD_PULL * halves.iter().map(|h| h.classes[c].se).sum::<f64>() / 2.0)
        .sum::<f64>()
        / k as f64;
    ScoreAuc {
        auc: estimate.max(0.5),
        auc_low: (estimate - Z_975 * se).clamp(0.5, 1.0),
        auc_high: (estimate + Z_975 * se + pull).clamp(0.5, 1.0),
        auc_se: se,
    }
}

/// The rows split in two, each class's rows shuffled with [`HALVES_SEED`]
/// and dealt alternately, so both halves hold each class's rows in equal
/// numbers (±1) whatever the file's row order.
fn stratified_halves(classes: &[u32], k: usize) -> [Vec<usize>; 2] {
    let mut by_class: Vec<Vec<usize>> = vec![Vec::new(); k];
    for (row, &c) in classes.iter().enumerate() {
        by_class[c as usize].push(row);
    }
    let mut rng = SplitMix64::new(HALVES_SEED);
    let mut halves = [Vec::new(), Vec::new()];
    for rows in &mut by_class {
        rng.shuffle(rows);
        for (i, &row) in rows.iter().enumerate() {
            halves[i % 2].push(row);
        }
    }
    halves.iter_mut().for_each(|h| h.sort_unstable());
    halves
}

/// [`separation`] within each outcome stratum (outcome 0, then 1).
#[must_use]
pub fn by_outcome(score: &[f64], classes: &[u32], k: usize, outcome: &[bool]) -> Vec<StratumAuc> {
    [false, true]
        .into_iter()
        .map(|value| {
            let rows: Vec<usize> = (0..score.len()).filter(|&i| outcome[i] == value).collect();
            let stratum_score: Vec<f64> = rows.iter().map(|&i| score[i]).collect();
            let stratum_classes: Vec<u32> = rows.iter().map(|&i| classes[i]).collect();
            StratumAuc {
                outcome: u8::from(value),
                rows: rows.len() as u64,
                score_auc: separation(&stratum_score, &stratum_classes, k).auc,
            }
        })
        .collect()
}

/// Mean score per level of `codes` (0 for an empty level).
fn level_means(score: &[f64], codes: &[u32], levels: usize) -> Vec<f64> {
    let mut sums = vec![0.0; levels];
    let mut counts = vec![0usize; levels];
    for (&s, &c) in score.iter().zip(codes) {
        sums[c as usize] += s;
        counts[c as usize] += 1;
    }
    sums.iter()
        .zip(&counts)
        .map(|(&sum, &n)| if n > 0 { sum / n as f64 } else { 0.0 })
        .collect()
}

/// Correlation ratio η² = SS_between / SS_total of the score over the
/// levels of a feature (Pearson 1905; Fisher 1925, *Statistical Methods for
/// Research Workers*, §45): the share of the score's variance that the
/// feature's levels account for. 0 for a constant score.
fn correlation_ratio(score: &[f64], codes: &[u32], means: &[f64]) -> f64 {
    let grand = score.iter().sum::<f64>() / score.len() as f64;
    let total: f64 = score.iter().map(|s| (s - grand) * (s - grand)).sum();
    let within: f64 = score
        .iter()
        .zip(codes)
        .map(|(s, &c)| (s - means[c as usize]) * (s - means[c as usize]))
        .sum();
    if total > 0.0 {
        (1.0 - within / total).clamp(0.0, 1.0)
    } else {
        0.0
    }
}

/// For each feature, how much of the score's separation of the classes it
/// carries: the score is adjusted for the feature by removing the mean score
/// of the row's level (or quantile bin, missing its own level), and the drop
/// of [`separation`] from the raw score to the adjusted score is the
/// attribute information that reaches the score through the feature. With
/// it: the feature's association with the attribute (Cramér's V) and its
/// influence on the score (η², [`correlation_ratio`]). A proxy in use needs
/// both, as in Datta, Fredrikson, Ko, Mardziel & Sen (2017), "Proxy
/// Non-Discrimination in Data-Driven Systems", arXiv:1707.08120, which
/// defines proxy use as association with the protected class together with
/// influence on the output. Identifier-like features are left out: removing
/// one mean per row would remove the whole score. Sorted by the drop, largest first.
#[must_use]
pub fn carriers(
    score: &[f64],
    classes: &[u32],
    k: usize,
    features: &[EncodedColumn],
    raw_auc: Option<f64>,
) -> Vec<Carrier> {
    let mut carriers: Vec<Carrier> = features
        .iter()
        .filter(|f| f.kind != FeatureKind::IdentifierLike)
        .map(|feature| {
            let levels = feature.n_levels as usize;
            let means = level_means(score, &feature.codes, levels);
            let adjusted: Vec<f64> = score
                .iter()
                .zip(&feature.codes)
                .map(|(s, &c)| s - means[c as usize])
                .collect();
            let auc_adjusted = separation(&adjusted, classes, k).auc.map(|a| a.auc);
            let table =
                Contingency::from_codes(&feature.codes, feature.n_levels, classes, k as u32);
            Carrier {
                feature: feature.name.clone(),
                association: cramers_v(&table),
                influence: correlation_ratio(score, &feature.codes, &means),
                auc_adjusted,
                auc_drop: raw_auc.zip(auc_adjusted).map(|(raw, adj)| raw - adj),
            }
        })
        .collect();
    carriers.sort_by(|a, b| {
        b.auc_drop
            .unwrap_or(f64::NEG_INFINITY)
            .total_cmp(&a.auc_drop.unwrap_or(f64::NEG_INFINITY))
    });
    carriers
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn separation_folds_a_reversed_score() {
        // Class 1 scores lower on every row: its raw AUC is 0, the separation 1.
        let score = [0.9, 0.8, 0.7, 0.2, 0.1, 0.05];
        let classes = [0, 0, 0, 1, 1, 1];
        let s = separation(&score, &classes, 2);
        assert_eq!(s.per_class, vec![Some(1.0), Some(0.0)]);
        assert!((s.auc.unwrap().auc - 1.0).abs() < 1e-15);
    }

    #[test]
    fn adjusting_for_the_carrier_removes_the_separation() {
        // The score is the feature's level plus small noise unrelated to the class; the
        // feature is the class itself. Removing the level means leaves noise: AUC near ½.
        let classes: Vec<u32> = (0..40).map(|i| u32::from(i % 2 == 0)).collect();
        let noise: Vec<f64> = (0..40).map(|i| ((i * 7) % 11) as f64 / 100.0).collect();
        let score: Vec<f64> = classes
            .iter()
            .zip(&noise)
            .map(|(&c, n)| c as f64 + n)
            .collect();
        let feature = EncodedColumn {
            name: "carrier".into(),
            kind: FeatureKind::Boolean,
            codes: classes.clone(),
            n_levels: 2,
            labels: vec!["0".into(), "1".into()],
            missing_code: None,
            raw: None,
            missing_count: 0,
        };
        let raw = separation(&score, &classes, 2).auc.unwrap().auc;
        assert_eq!(raw, 1.0);
        let found = carriers(&score, &classes, 2, &[feature], Some(raw));
        assert!(found[0].auc_drop.unwrap() > 0.3, "{:?}", found[0]);
        assert!((found[0].association - 1.0).abs() < 1e-12);
        assert!(found[0].influence > 0.9);
    }
}
