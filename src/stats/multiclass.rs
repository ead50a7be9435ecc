//! Multi-class AUC on row-major class probabilities (`proba[i * k + c]` is
//! row `i`'s score for class `c`): macro one-vs-rest with a DeLong-type
//! variance, and Hand & Till's M.
//!
//! # Variance of the macro one-vs-rest AUC
//!
//! For class `c`, DeLong et al. (1988, §2) write θ̂_c − θ_c as a sum of
//! structural components: to first order (Hoeffding's projection of the
//! two-sample U-statistic) θ̂_c − θ_c ≈ Σ_i φ_ic with
//! φ_ic = (V10_ic − θ̂_c)/√(m_c(m_c−1)) for a row of class `c` and
//! φ_ic = (V01_ic − θ̂_c)/√(n_c(n_c−1)) for any other row (m_c, n_c the class
//! sizes). With this scaling Σ_i φ_ic² is exactly DeLong's S10/m + S01/n, and
//! Σ_i φ_ic φ_id is DeLong's covariance whenever two AUCs share their classes.
//! The macro average θ̄ = (1/K) Σ_c θ̂_c is linear, so its influence is
//! φ̄_i = (1/K) Σ_c φ_ic and Var(θ̄) ≈ Σ_i φ̄_i², which keeps every
//! between-class covariance. With two classes and `p₀ = 1 − p₁` both
//! one-vs-rest AUCs and their influences coincide, and the variance reduces
//! exactly to the binary DeLong variance. Comparing two models on the same
//! rows uses Σ_i (φ̄_i^a − φ̄_i^b)², DeLong's contrast L = (1, −1).

use super::auc::{AucComparison, AucEstimate, Influence, auc_from_scores};

/// Column `class` of row-major `proba` with `n_classes` columns.
fn class_column(proba: &[f64], n_classes: usize, class: usize) -> Vec<f64> {
    proba
        .iter()
        .skip(class)
        .step_by(n_classes)
        .copied()
        .collect()
}

/// `true` when there are rows, one row of `n_classes` scores per label and
/// every label is below `n_classes`.
pub(crate) fn shapes_agree(proba: &[f64], n_classes: usize, labels: &[u32]) -> bool {
    !labels.is_empty()
        && proba.len() == n_classes * labels.len()
        && labels.iter().all(|&l| (l as usize) < n_classes)
}

/// Macro-averaged one-vs-rest AUC and its averaged per-row influence.
fn macro_influence(proba: &[f64], n_classes: usize, labels: &[u32]) -> Option<Influence> {
    if n_classes < 2 || !shapes_agree(proba, n_classes, labels) {
        return None;
    }
    let mut total = Influence {
        auc: 0.0,
        values: vec![0.0; labels.len()],
    };
    for class in 0..n_classes {
        let positive: Vec<bool> = labels.iter().map(|&l| l as usize == class).collect();
        let one = Influence::new(&class_column(proba, n_classes, class), &positive)?;
        total.auc += one.auc / n_classes as f64;
        for (sum, value) in total.values.iter_mut().zip(&one.values) {
            *sum += value / n_classes as f64;
        }
    }
    Some(total)
}

/// Macro one-vs-rest AUC, (1/K) Σ_c AUC(class c vs the rest, scored by p_c),
/// as scikit-learn `roc_auc_score(multi_class="ovr", average="macro")`
/// (Provost & Domingos 2000; Fawcett 2006, §10), with the DeLong-type
/// variance derived in the module documentation. `None` when a class has
/// fewer than two rows, every row is in one class, or the shapes disagree.
#[must_use]
pub fn macro_ovr(proba: &[f64], n_classes: usize, labels: &[u32]) -> Option<AucEstimate> {
    let influence = macro_influence(proba, n_classes, labels)?;
    let variance = influence.values.iter().map(|v| v * v).sum();
    Some(AucEstimate::from_variance(influence.auc, variance))
}

/// Test of two models' macro one-vs-rest AUCs on the same rows, with the
/// variance of the difference from the averaged influences (module docs;
/// DeLong et al. 1988, §2, contrast L = (1, −1)).
#[must_use]
pub fn macro_ovr_compare(
    proba_a: &[f64],
    proba_b: &[f64],
    n_classes: usize,
    labels: &[u32],
) -> Option<AucComparison> {
    let a = macro_influence(proba_a, n_classes, labels)?;
    let b = macro_influence(proba_b, n_classes, labels)?;
    let variance = a.difference_variance(&b);
    Some(AucComparison::from_variance(a.auc, b.auc, variance))
}

/// Hand & Till (2001) M: the mean over class pairs i < j of
/// [Â(i|j) + Â(j|i)]/2, where Â(i|j) is the AUC of p_i separating class i
/// from class j on the rows of those two classes (eq. 7). Matches
/// scikit-learn `roc_auc_score(multi_class="ovo")`. `None` when a class is
/// absent or the shapes disagree.
#[must_use]
pub fn hand_till(proba: &[f64], n_classes: usize, labels: &[u32]) -> Option<f64> {
    if n_classes < 2 || !shapes_agree(proba, n_classes, labels) {
        return None;
    }
    let mut sum = 0.0;
    for i in 0..n_classes {
        for j in i + 1..n_classes {
            let a_ij = pairwise_auc(proba, n_classes, labels, i, j)?;
            let a_ji = pairwise_auc(proba, n_classes, labels, j, i)?;
            sum += (a_ij + a_ji) / 2.0;
        }
    }
    Some(2.0 * sum / (n_classes * (n_classes - 1)) as f64)
}

/// Â(i|j): AUC of the class-`i` score with class `i` positive, on rows of classes `i` and `j`.
fn pairwise_auc(
    proba: &[f64],
    n_classes: usize,
    labels: &[u32],
    i: usize,
    j: usize,
) -> Option<f64> {
    let (scores, positive): (Vec<f64>, Vec<bool>) = labels
        .iter()
        .enumerate()
        .filter(|&(_, &l)| l as usize == i || l as usize == j)
        .map(|(row, &l)| (proba[row * n_classes + i], l as usize == i))
        .unzip();
    auc_from_scores(&scores, &positive)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::stats::auc::{delong, delong_compare};

    /// WORKED-EXAMPLES §8 tiny check (inputs from a public crate's doc example).
    const PROBA: [f64; 21] = [
        0.3, 0.1, 0.6, 0.5, 0.2, 0.3, 0.2, 0.7, 0.1, 0.3, 0.3, 0.4, 0.5, 0.1, 0.4, 0.8, 0.1, 0.1,
        0.3, 0.5, 0.2,
    ];
    const LABELS: [u32; 7] = [2, 1, 1, 2, 0, 2, 0];

    #[test]
    fn hand_till_m_of_tiny_example() {
        // Hand & Till (2001) eq. 7 on WORKED-EXAMPLES §8: M = 97/144 = 0.673611
        // (scikit-learn roc_auc_score(multi_class='ovo') gives the same).
        let m = hand_till(&PROBA, 3, &LABELS).unwrap();
        assert!((m - 97.0 / 144.0).abs() < 1e-12);
    }

    #[test]
    fn macro_ovr_of_tiny_example() {
        // scikit-learn roc_auc_score(multi_class='ovr', average='macro') = 0.672222
        // on WORKED-EXAMPLES §8 (printed to 6 decimals).
        let est = macro_ovr(&PROBA, 3, &LABELS).unwrap();
        assert!((est.auc - 0.672_222).abs() < 5e-7, "{}", est.auc);
        assert!(est.se > 0.0 && est.low <= est.auc && est.auc <= est.high);
    }

    #[test]
    fn two_class_macro_ovr_reduces_to_binary_delong() {
        // Module derivation: with p0 = 1 − p1 both one-vs-rest AUCs equal the binary AUC
        // and the influences coincide, so macro OvR equals DeLong et al. (1988) exactly.
        // Data: WORKED-EXAMPLES §2 constructed example.
        let y = [1u32, 1, 1, 1, 1, 0, 0, 0, 0, 0, 0, 0];
        let s1 = [
            0.9, 0.8, 0.7, 0.55, 0.4, 0.6, 0.5, 0.35, 0.3, 0.2, 0.1, 0.45,
        ];
        let s2 = [
            0.7, 0.9, 0.3, 0.6, 0.5, 0.8, 0.2, 0.4, 0.1, 0.35, 0.25, 0.65,
        ];
        let as_proba = |s: &[f64]| s.iter().flat_map(|&p| [1.0 - p, p]).collect::<Vec<_>>();
        let positive: Vec<bool> = y.iter().map(|&l| l == 1).collect();
        let binary = delong(&s1, &positive).unwrap();
        let multi = macro_ovr(&as_proba(&s1), 2, &y).unwrap();
        assert!((binary.auc - multi.auc).abs() < 1e-12);
        assert!((binary.variance - multi.variance).abs() < 1e-12);
        // WORKED-EXAMPLES §2: SE(AUC1 − AUC2) = 0.146152.
        let cmp = macro_ovr_compare(&as_proba(&s1), &as_proba(&s2), 2, &y).unwrap();
        let reference = delong_compare(&s1, &s2, &positive).unwrap();
        assert!((cmp.se - 0.146_152).abs() < 5e-7);
        assert!((cmp.z - reference.z).abs() < 1e-9);
    }

    #[test]
    fn shape_mismatch_is_rejected() {
        assert!(macro_ovr(&PROBA[..20], 3, &LABELS).is_none());
        assert!(hand_till(&PROBA, 1, &LABELS).is_none());
    }
}
