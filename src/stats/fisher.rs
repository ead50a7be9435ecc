//! Fisher's exact test of a 2×2 table.

use super::special::ln_factorial;

/// Relative tolerance under which a table counts as "no more probable than
/// the observed one": R's `fisher.test` (`relErr = 1 + 1e-7`) and scipy's
/// `fisher_exact` use the same, so that tables tied in exact arithmetic are
/// not lost to rounding.
const RELATIVE_TOLERANCE: f64 = 1e-7;

/// Two-sided p-value of Fisher's exact test for the table
/// `[[a, b], [c, d]]` (Fisher 1935, *The Design of Experiments*, §2; Agresti
/// 2013, *Categorical Data Analysis*, §3.5): with the margins fixed, the
/// top-left count is hypergeometric, and the p-value sums the probabilities
/// of every table no more probable than the observed one (within a relative
/// tolerance of 1e-7), as R `fisher.test` and scipy `fisher_exact` do.
/// 1 when a margin is zero (only one table is possible).
#[must_use]
pub fn fisher_exact_two_sided([[a, b], [c, d]]: [[u64; 2]; 2]) -> f64 {
    let law = Hypergeometric::of_table(a, b, c, d);
    let probabilities = law.probabilities();
    let observed = probabilities[(a - law.low) as usize];
    let cutoff = observed * (1.0 + RELATIVE_TOLERANCE);
    probabilities
        .iter()
        .filter(|&&p| p <= cutoff)
        .sum::<f64>()
        .min(1.0)
}

/// The distribution of the top-left count given a 2×2 table's margins.
struct Hypergeometric {
    row1: u64,
    row2: u64,
    col1: u64,
    low: u64,
    high: u64,
}

impl Hypergeometric {
    fn of_table(a: u64, b: u64, c: u64, d: u64) -> Self {
        let (row1, row2, col1) = (a + b, c + d, a + c);
        Self {
            row1,
            row2,
            col1,
            low: col1.saturating_sub(row2),
            high: row1.min(col1),
        }
    }

    /// ln of C(row1, k)·C(row2, col1 − k), the unnormalised probability of k.
    fn ln_weight(&self, k: u64) -> f64 {
        let ln_choose = |n: u64, r: u64| ln_factorial(n) - ln_factorial(r) - ln_factorial(n - r);
        ln_choose(self.row1, k) + ln_choose(self.row2, self.col1 - k)
    }

    /// P(k) for k = low..=high, normalised by their sum (scaled by the
    /// largest weight first, so that no term underflows before the division).
    fn probabilities(&self) -> Vec<f64> {
        let ln_weights: Vec<f64> = (self.low..=self.high).map(|k| self.ln_weight(k)).collect();
        let largest = ln_weights.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let weights: Vec<f64> = ln_weights.iter().map(|w| (w - largest).exp()).collect();
        let total: f64 = weights.iter().sum();
        weights.iter().map(|w| w / total).collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lady_tasting_tea() {
        // Fisher (1935), The Design of Experiments, ch. 2: 8 cups, 4 of each kind, 3 of the
        // 4 milk-first cups named correctly: [[3, 1], [1, 3]]. The hypergeometric
        // probabilities of 0..4 correct are 1, 16, 36, 16, 1 out of 70, so the two-sided
        // p-value sums 1 + 16 + 16 + 1 = 34/70 = 0.4857.
        let tea = [[3, 1], [1, 3]];
        assert!((fisher_exact_two_sided(tea) - 34.0 / 70.0).abs() < 1e-14);
        // All four right: 2/70 two-sided.
        assert!((fisher_exact_two_sided([[4, 0], [0, 4]]) - 2.0 / 70.0).abs() < 1e-15);
    }

    #[test]
    fn degenerate_margins_give_one() {
        assert_eq!(fisher_exact_two_sided([[0, 5], [0, 7]]), 1.0);
        assert_eq!(fisher_exact_two_sided([[0, 0], [3, 4]]), 1.0);
    }
}
