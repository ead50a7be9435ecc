//! The score as a proxy: how well it separates the protected classes, within
//! outcome strata, and which features carry the attribute into it.

use super::contract::{Carrier, ScoreAuc, StratumAuc};
use crate::data::{EncodedColumn, FeatureKind};
use crate::stats::{Contingency, auc_from_scores, cramers_v, macro_ovr};

/// The score's separation of the classes and each class's raw AUC against the rest.
pub struct Separation {
    /// `None` when a class has fewer than two rows.
    pub auc: Option<ScoreAuc>,
    /// AUC of the raw score for class c against the rest (`None` when c or the rest is empty).
    pub per_class: Vec<Option<f64>>,
}

/// How well a single score separates `k` classes: for each class c the AUC of
/// the score for c against the rest, oriented so that it is at least ½
/// (the score, or minus the score when class c scores lower), macro-averaged
/// over the classes (scikit-learn `roc_auc_score(multi_class="ovr")` on the
/// oriented columns), with the DeLong-type variance of [`macro_ovr`]. With two
/// classes this is max(AUC, 1 − AUC) of the binary AUC with its DeLong
/// interval (DeLong et al. 1988). The orientation is read from the same
/// rows, so near ½ the estimate leans high by up to the noise of an AUC.
#[must_use]
pub fn separation(score: &[f64], classes: &[u32], k: usize) -> Separation {
    let per_class: Vec<Option<f64>> = (0..k)
        .map(|c| {
            let member: Vec<bool> = classes.iter().map(|&a| a as usize == c).collect();
            auc_from_scores(score, &member)
        })
        .collect();
    let mut oriented = Vec::with_capacity(score.len() * k);
    for &s in score {
        for auc in &per_class {
            oriented.push(if auc.unwrap_or(0.5) >= 0.5 { s } else { -s });
        }
    }
    let auc = macro_ovr(&oriented, k, classes).map(|estimate| ScoreAuc {
        auc: estimate.auc,
        auc_low: estimate.low,
        auc_high: estimate.high,
        auc_se: estimate.se,
    });
    Separation { auc, per_class }
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
