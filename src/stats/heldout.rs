//! Information that survives cross-fitting: how much the held-out
//! predictions of a surrogate reduce the uncertainty about the protected class.

use super::information::entropy;
use super::multiclass::shapes_agree;

/// Probabilities are floored here before taking logs, so one confident miss
/// costs at most −ln 1e-15 ≈ 34.5 nats instead of infinity.
pub const PROBABILITY_FLOOR: f64 = 1e-15;

/// Held-out information H(A) − (1/N) Σ_i −ln p(a_i | x_i), in nats.
///
/// `proba` holds row-major out-of-fold class probabilities
/// (`proba[i * n_classes + k]`), each row scored by a model that never saw
/// it; `labels` are the true classes. H(A) is the plug-in entropy of
/// `labels` and the second term the mean held-out log-loss (cross-entropy),
/// probabilities floored at [`PROBABILITY_FLOOR`]. Since the cross-entropy
/// of any fixed prediction is at least H(A) on average (Gibbs' inequality,
/// Cover & Thomas 2006, Theorem 2.6.3), the value is ≈ 0 or negative for a
/// feature with no real signal, however many levels it has: unlike plug-in
/// MI it does not reward memorising an identifier. It estimates I(X; A)
/// from below (the log-loss decomposition of Bröcker 2009, QJRMS 135).
///
/// The shrinkage that keeps held-out probabilities finite happens upstream,
/// in the frequency surrogate that produced `proba`: additive smoothing with
/// weight m toward the training-fold class shares,
/// p(a | level) = (n_{level,a} + m·π_a) / (n_level + m). `NaN` when the
/// shapes disagree, a label is out of range or there are no rows.
#[must_use]
pub fn heldout_information(proba: &[f64], n_classes: usize, labels: &[u32]) -> f64 {
    if !shapes_agree(proba, n_classes, labels) {
        return f64::NAN;
    }
    let mut class_counts = vec![0u64; n_classes];
    for &l in labels {
        class_counts[l as usize] += 1;
    }
    let log_loss: f64 = proba
        .chunks(n_classes)
        .zip(labels)
        .map(|(row, &label)| -row[label as usize].max(PROBABILITY_FLOOR).ln())
        .sum::<f64>()
        / labels.len() as f64;
    entropy(&class_counts) - log_loss
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn prior_prediction_carries_no_information() {
        // Predicting the class shares π for every row gives log-loss −Σ π ln π = H(A)
        // (Cover & Thomas 2006, eq. 2.1), hence exactly zero held-out information.
        let labels = [0, 0, 0, 1, 2, 2];
        let proba: Vec<f64> = labels
            .iter()
            .flat_map(|_| [0.5, 1.0 / 6.0, 1.0 / 3.0])
            .collect();
        assert!(heldout_information(&proba, 3, &labels).abs() < 1e-15);
    }

    #[test]
    fn perfect_prediction_recovers_the_entropy_and_misses_are_penalised() {
        // A one-hot correct prediction has zero log-loss, so the value is H(A) = ln 2 for
        // balanced classes; a confident wrong one costs ln(1e15) per row after flooring.
        let labels = [0, 1, 0, 1];
        let right = [1.0, 0.0, 0.0, 1.0, 1.0, 0.0, 0.0, 1.0];
        assert!((heldout_information(&right, 2, &labels) - std::f64::consts::LN_2).abs() < 1e-15);
        let wrong = [0.0, 1.0, 1.0, 0.0, 0.0, 1.0, 1.0, 0.0];
        let expected = std::f64::consts::LN_2 + PROBABILITY_FLOOR.ln();
        assert!((heldout_information(&wrong, 2, &labels) - expected).abs() < 1e-12);
    }
}
