//! The score as a proxy: how well it separates the protected classes, within
//! outcome strata, and which features carry the attribute into it.

use super::contract::{Carrier, ScoreAuc, StratumAuc};
use crate::data::{EncodedColumn, FeatureKind};
use crate::rng::SplitMix64;
use crate::stats::{AucEstimate, Contingency, auc_from_scores, cramers_v, macro_ovr};

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
/// the mean of the two halves' macro AUCs. The two are not independent (each
/// half's orientation follows its own AUCs, which the other half's estimate
/// then uses): with the variance (V₁ + V₂)/4 of independent halves the
/// interval still held ½ in only 87 % of data sets, the sd of the estimate
/// being 1.31 times that standard error. So the standard error is
/// (se₁ + se₂)/2, the largest the mean's can be whatever the two halves'
/// correlation (Cauchy–Schwarz): valid, and up to √2 wider than needed when
/// every class's orientation is beyond doubt.
/// `None` when a class has fewer than two rows (four with three classes or
/// more: two in each half).
#[must_use]
pub fn separation(score: &[f64], classes: &[u32], k: usize) -> Separation {
    let per_class = class_aucs(score, classes, k);
    let estimate = if k <= 2 {
        oriented_macro(score, classes, k, &orientation(&per_class))
    } else {
        split_oriented_macro(score, classes, k)
    };
    let auc = estimate.map(|estimate| ScoreAuc {
        auc: estimate.auc,
        auc_low: estimate.low,
        auc_high: estimate.high,
        auc_se: estimate.se,
    });
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

/// Each half oriented by the other and measured on its own rows; the mean
/// of the two estimates (see [`separation`]).
fn split_oriented_macro(score: &[f64], classes: &[u32], k: usize) -> Option<AucEstimate> {
    let halves = stratified_halves(classes, k);
    let part = |h: usize| -> (Vec<f64>, Vec<u32>) {
        halves[h]
            .iter()
            .map(|&row| (score[row], classes[row]))
            .unzip()
    };
    let parts = [part(0), part(1)];
    let signs = parts
        .each_ref()
        .map(|(s, c)| orientation(&class_aucs(s, c, k)));
    let [first, second] = [0, 1].map(|h| {
        let (s, c) = &parts[h];
        oriented_macro(s, c, k, &signs[1 - h])
    });
    let (first, second) = (first?, second?);
    let se = (first.se + second.se) / 2.0;
    Some(AucEstimate::from_variance(
        (first.auc + second.auc) / 2.0,
        se * se,
    ))
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
