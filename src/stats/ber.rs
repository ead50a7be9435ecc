//! Balanced error rate of predicting the protected attribute (Feldman,
//! Friedler, Moeller, Scheidegger & Venkatasubramanian 2015, "Certifying and
//! removing disparate impact", KDD, §3): the mean over classes of the share
//! of that class that is misclassified. ½ (binary) or 1 − 1/K is chance.

use super::multiclass::shapes_agree;

/// BER of the class-balanced Bayes decision on row-major probabilities
/// (`proba[i * n_classes + k]`): predict argmax_k p_k/π_k, π the class shares
/// of `labels`, which is the Bayes rule under equal class weights (Feldman et
/// al. 2015, §3; Duda, Hart & Stork 2001, §2.3). BER = mean over the classes
/// present of the within-class error rate. `NaN` when the shapes disagree, a
/// label is out of range or there are no rows.
#[must_use]
pub fn balanced_error_rate(proba: &[f64], n_classes: usize, labels: &[u32]) -> f64 {
    if !shapes_agree(proba, n_classes, labels) {
        return f64::NAN;
    }
    let mut class_sizes = vec![0u64; n_classes];
    for &l in labels {
        class_sizes[l as usize] += 1;
    }
    let mut errors = vec![0u64; n_classes];
    if let [n0, n1] = class_sizes[..]
        && n0 > 0
        && n1 > 0
    {
        // Two classes present: the same decision without the general loop.
        let (n0, n1) = (n0 as f64, n1 as f64);
        for (row, &label) in proba.chunks_exact(2).zip(labels) {
            let decision = usize::from(row[1] / n1 > row[0] / n0);
            errors[label as usize] += u64::from(decision != label as usize);
        }
    } else {
        for (row, &label) in proba.chunks(n_classes).zip(labels) {
            if balanced_decision(row, &class_sizes) != label as usize {
                errors[label as usize] += 1;
            }
        }
    }
    let present: Vec<(u64, u64)> = class_sizes
        .into_iter()
        .zip(errors)
        .filter(|&(size, _)| size > 0)
        .collect();
    present
        .iter()
        .map(|&(size, wrong)| wrong as f64 / size as f64)
        .sum::<f64>()
        / present.len() as f64
}

/// argmax_k p_k / n_k over classes with rows (the first on ties); dividing
/// by counts instead of shares changes no comparison.
fn balanced_decision(row: &[f64], class_sizes: &[u64]) -> usize {
    row.iter()
        .zip(class_sizes)
        .enumerate()
        .filter(|&(_, (_, &n))| n > 0)
        .map(|(k, (&p, &n))| (k, p / n as f64))
        .fold((0, f64::NEG_INFINITY), |best, (k, v)| {
            if v > best.1 { (k, v) } else { best }
        })
        .0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn balanced_decision_corrects_for_class_shares() {
        // 1 positive among 4 rows: its shares are π = (¾, ¼). Row scores p1 = 0.3 exceed
        // π1 = 0.25 relative to p0/π0, so the balanced Bayes rule predicts class 1 for it
        // although argmax p would not (Duda, Hart & Stork 2001, §2.3, equal-cost rule).
        let proba = [0.7, 0.3, 0.8, 0.2, 0.9, 0.1, 0.8, 0.2];
        let labels = [1, 0, 0, 0];
        assert_eq!(balanced_error_rate(&proba, 2, &labels), 0.0);
        // Chance level for a constant score with K = 3: 1 − 1/3 (each class wrong except one).
        let flat = [1.0 / 3.0; 9];
        assert!((balanced_error_rate(&flat, 3, &[0, 1, 2]) - 2.0 / 3.0).abs() < 1e-15);
    }
}
