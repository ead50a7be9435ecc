//! Balanced error rate of predicting the protected attribute (Feldman,
//! Friedler, Moeller, Scheidegger & Venkatasubramanian 2015, "Certifying and
//! removing disparate impact", KDD, §3): the mean over classes of the share
//! of that class that is misclassified. ½ (binary) or 1 − 1/K is chance.

use super::auc::ScoreTable;
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

/// BER (FPR + FNR)/2 when `scores ≥ t` is predicted positive (Feldman et al.
/// 2015, §3, binary case). `NaN` when a class is empty or the lengths differ.
#[must_use]
pub fn ber_at_threshold(scores: &[f64], positive: &[bool], t: f64) -> f64 {
    if scores.len() != positive.len() {
        return f64::NAN;
    }
    let (mut n_pos, mut n_neg, mut false_neg, mut false_pos) = (0u64, 0u64, 0u64, 0u64);
    for (&s, &p) in scores.iter().zip(positive) {
        let flagged = s >= t;
        if p {
            n_pos += 1;
            false_neg += u64::from(!flagged);
        } else {
            n_neg += 1;
            false_pos += u64::from(flagged);
        }
    }
    error_rate(false_pos, n_neg, false_neg, n_pos)
}

/// (FP/n_neg + FN/n_pos) / 2; `NaN` when a class is empty.
fn error_rate(false_pos: u64, n_neg: u64, false_neg: u64, n_pos: u64) -> f64 {
    if n_neg == 0 || n_pos == 0 {
        return f64::NAN;
    }
    (false_pos as f64 / n_neg as f64 + (1.0 - (n_pos - false_neg) as f64 / n_pos as f64)) / 2.0
}

/// Minimum BER over all thresholds and the threshold reaching it: the
/// candidates are +∞ (nothing flagged, BER ½) and every distinct score,
/// from the highest down; the first minimum, i.e. the highest such
/// threshold, wins (Feldman et al. 2015, §3, minimised over cut-offs of an
/// ROC curve as in Fawcett 2006, Algorithm 2). Optimistic when chosen on the
/// rows it is reported on. `(NaN, NaN)` when a class is empty.
#[must_use]
pub fn min_ber(scores: &[f64], positive: &[bool]) -> (f64, f64) {
    let Some(table) = ScoreTable::new(scores, positive) else {
        return (f64::NAN, f64::NAN);
    };
    let n_neg: u64 = table.negatives.iter().sum();
    let n_pos: u64 = table.positives.iter().sum();
    if n_neg == 0 || n_pos == 0 {
        return (f64::NAN, f64::NAN);
    }
    let mut best = (0.5, f64::INFINITY);
    let (mut flagged_neg, mut flagged_pos) = (0u64, 0u64);
    for category in (0..table.len()).rev() {
        flagged_neg += table.negatives[category];
        flagged_pos += table.positives[category];
        let ber = error_rate(flagged_neg, n_neg, n_pos - flagged_pos, n_pos);
        if ber < best.0 {
            best = (ber, table.score(category));
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Ten rows per group: group X = 0 has `selected_0` selected, X = 1 has `selected_1`.
    fn groups(selected_0: usize, selected_1: usize) -> (Vec<f64>, Vec<bool>) {
        let decision = |selected: usize| (0..10).map(move |i| f64::from(u8::from(i < selected)));
        let scores = decision(selected_0).chain(decision(selected_1)).collect();
        let in_group_1 = (0..20).map(|i| i >= 10).collect();
        (scores, in_group_1)
    }

    #[test]
    fn decision_as_predictor_of_group() {
        // Feldman et al. (2015), WORKED-EXAMPLES §9 check: with p0 = 0.30 and p1 = 0.60,
        // predicting X = 1 iff selected gives BER = [(1 − p1) + p0]/2 = 0.35 ≤ ½ − β/8 = 0.4625;
        // at the boundary p0 = 0.40, p1 = 0.50 it is 0.45, equal to the bound.
        let bound = |beta: f64| 0.5 - beta / 8.0;
        let (scores, group) = groups(3, 6);
        let ber = ber_at_threshold(&scores, &group, 0.5);
        assert!((ber - 0.35).abs() < 1e-15);
        assert!(ber <= bound(0.30));
        let (scores, group) = groups(4, 5);
        assert!((ber_at_threshold(&scores, &group, 0.5) - bound(0.40)).abs() < 1e-15);
    }

    #[test]
    fn min_ber_takes_the_highest_best_threshold() {
        // Scores 0.9 (pos), 0.8 (neg), 0.7 (pos), 0.1 (neg): thresholds +∞, 0.9, 0.8, 0.7, 0.1
        // give BER 0.5, 0.25, 0.5, 0.25, 0.5 (hand computation); the first minimum is at 0.9.
        let scores = [0.9, 0.8, 0.7, 0.1];
        let positive = [true, false, true, false];
        assert_eq!(min_ber(&scores, &positive), (0.25, 0.9));
        // A useless score never beats the "flag nobody" threshold.
        assert_eq!(min_ber(&[0.5, 0.5], &[true, false]), (0.5, f64::INFINITY));
    }

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
