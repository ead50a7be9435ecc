//! Standardized mean difference of a score between two groups.

use super::proportions::Interval;
use super::special::Z_975;

/// Cohen's d with its large-sample 95 % interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MeanDifference {
    /// (mean₁ − mean₂) / pooled sd.
    pub smd: f64,
    pub interval: Interval,
}

/// Mean and sum of squared deviations, in two passes (numerically stable).
fn mean_and_squares(values: &[f64]) -> (f64, f64) {
    let mean = values.iter().sum::<f64>() / values.len() as f64;
    let squares = values.iter().map(|v| (v - mean) * (v - mean)).sum();
    (mean, squares)
}

/// Standardized mean difference of `first` over `second`: Cohen's d,
/// (m₁ − m₂)/s_p with the pooled standard deviation
/// s_p = √(((n₁−1)s₁² + (n₂−1)s₂²)/(n₁ + n₂ − 2)) and s_i² the sample
/// variances with n_i − 1 in the denominator (Cohen 1988, *Statistical Power
/// Analysis for the Behavioral Sciences*, 2nd ed., §2.2; pandas `var(ddof=1)`).
/// The interval is d ± 1.96·√((n₁+n₂)/(n₁n₂) + d²/(2(n₁+n₂))), the
/// large-sample variance of Hedges & Olkin (1985), *Statistical Methods for
/// Meta-Analysis*, ch. 5 (equation number from memory). `None` when a group
/// has fewer than two values or the pooled deviation is 0.
#[must_use]
pub fn standardized_mean_difference(first: &[f64], second: &[f64]) -> Option<MeanDifference> {
    if first.len() < 2 || second.len() < 2 {
        return None;
    }
    let (n1, n2) = (first.len() as f64, second.len() as f64);
    let (mean1, squares1) = mean_and_squares(first);
    let (mean2, squares2) = mean_and_squares(second);
    let pooled = ((squares1 + squares2) / (n1 + n2 - 2.0)).sqrt();
    if pooled <= 0.0 || !pooled.is_finite() {
        return None;
    }
    let smd = (mean1 - mean2) / pooled;
    let se = ((n1 + n2) / (n1 * n2) + smd * smd / (2.0 * (n1 + n2))).sqrt();
    Some(MeanDifference {
        smd,
        interval: Interval {
            low: smd - Z_975 * se,
            high: smd + Z_975 * se,
        },
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hand_computed_example() {
        // Means 2 and 5.5, squared deviations 2 + 5 = 7 on 3 + 4 − 2 = 5 degrees of freedom:
        // pooled sd √1.4, d = −3.5/√1.4 (computed by hand).
        let d = standardized_mean_difference(&[1.0, 2.0, 3.0], &[4.0, 5.0, 6.0, 7.0]).unwrap();
        assert!((d.smd + 3.5 / 1.4f64.sqrt()).abs() < 1e-14);
        assert!(d.interval.low < d.smd && d.smd < d.interval.high);
        assert!(standardized_mean_difference(&[1.0], &[2.0, 3.0]).is_none());
        assert!(standardized_mean_difference(&[1.0, 1.0], &[1.0, 1.0]).is_none());
    }
}
