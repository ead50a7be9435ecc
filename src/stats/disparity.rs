//! Comparisons of rates between groups: the adverse impact ratio (lowest
//! selection rate over highest) and the largest difference of a rate, each
//! with an interval.

use super::fisher::fisher_exact_two_sided;
use super::proportions::{Interval, katz_ratio, newcombe_difference};
use super::tables::{selection_rate_ratio, violates_four_fifths};
use std::cmp::Ordering;

/// Events out of rows for one group (selections of applicants, true positives of positives...).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Tally {
    pub events: u64,
    pub rows: u64,
}

impl Tally {
    /// `events / rows`, compared exactly by cross-multiplication.
    fn cmp_rate(&self, other: &Self) -> Ordering {
        (u128::from(self.events) * u128::from(other.rows))
            .cmp(&(u128::from(other.events) * u128::from(self.rows)))
    }

    #[must_use]
    pub fn rate(&self) -> f64 {
        self.events as f64 / self.rows as f64
    }
}

/// Indices of the lowest- and highest-rate groups among those with rows
/// (first on ties); `None` with fewer than two such groups.
fn extremes(groups: &[Tally]) -> Option<(usize, usize)> {
    let present: Vec<usize> = (0..groups.len()).filter(|&g| groups[g].rows > 0).collect();
    if present.len() < 2 {
        return None;
    }
    let lowest = *present
        .iter()
        .min_by(|&&a, &&b| groups[a].cmp_rate(&groups[b]).then(a.cmp(&b)))?;
    let highest = *present
        .iter()
        .max_by(|&&a, &&b| groups[a].cmp_rate(&groups[b]).then(b.cmp(&a)))?;
    Some((lowest, highest))
}

/// The level of each pairwise interval so that the intervals of all
/// m = g(g − 1)/2 pairs of the g groups with rows hold together with
/// probability at least `level` (Bonferroni: Dunn 1961, "Multiple
/// comparisons among means", *JASA* 56, 52–64): 1 − (1 − level)/m. The
/// interval of the pair picked from the data (lowest and highest rate) then
/// holds that pair's true value at least `level` of the time; with two
/// groups it is `level` itself.
fn pairwise_level(groups: &[Tally], level: f64) -> f64 {
    1.0 - (1.0 - level) / pair_count(groups)
}

/// m = g(g − 1)/2 for the g groups with rows (at least 1).
fn pair_count(groups: &[Tally]) -> f64 {
    let g = groups.iter().filter(|t| t.rows > 0).count() as f64;
    (g * (g - 1.0) / 2.0).max(1.0)
}

/// The adverse impact ratio of a set of groups.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AdverseImpact {
    /// Index of the group with the lowest selection rate.
    pub lowest: usize,
    /// Index of the group with the highest selection rate.
    pub highest: usize,
    /// Lowest rate over highest; `None` when no group was selected at all.
    pub ratio: Option<f64>,
    /// Katz log interval of the ratio; `None` when a rate is 0.
    pub interval: Option<Interval>,
    /// The ratio is below 4/5, decided in exact integer arithmetic.
    pub below_four_fifths: bool,
    /// Fisher's exact test (two-sided) of the two groups' selection rates,
    /// Bonferroni-adjusted over the pairs when there are more than two groups.
    pub fisher_p: f64,
}

/// Lowest selection rate over the highest (29 CFR 1607.4(D), Uniform
/// Guidelines on Employee Selection Procedures 1978: each group's rate over
/// the highest group's), with the Katz log interval of the ratio of the two
/// groups' rates ([`katz_ratio`]) and Fisher's exact test of their 2×2
/// table. The two groups are picked from the data as the extremes, so with
/// more than two groups the interval is taken at [`pairwise_level`] and the
/// Fisher p-value is multiplied by the number of pairs m (capped at 1), the
/// same Bonferroni correction (Dunn 1961): the extremes are the pair most
/// likely to differ by chance. `None` with fewer than two groups that have
/// rows.
#[must_use]
pub fn adverse_impact(groups: &[Tally], level: f64) -> Option<AdverseImpact> {
    let (lowest, highest) = extremes(groups)?;
    let (low, high) = (groups[lowest], groups[highest]);
    let ratio = selection_rate_ratio(low.events, low.rows, high.events, high.rows);
    Some(AdverseImpact {
        lowest,
        highest,
        ratio: ratio.is_finite().then_some(ratio),
        interval: katz_ratio(
            (low.events, low.rows),
            (high.events, high.rows),
            pairwise_level(groups, level),
        ),
        below_four_fifths: violates_four_fifths(low.events, low.rows, high.events, high.rows),
        fisher_p: (fisher_exact_two_sided([
            [low.events, low.rows - low.events],
            [high.events, high.rows - high.events],
        ]) * pair_count(groups))
        .min(1.0),
    })
}

/// The largest difference of a rate between groups.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Gap {
    pub highest: usize,
    pub lowest: usize,
    /// Highest rate minus lowest rate.
    pub difference: f64,
    /// Newcombe hybrid score interval of the difference ([`newcombe_difference`]).
    pub interval: Interval,
}

/// The largest difference between groups' rates (highest minus lowest),
/// the form of the equalized-odds gaps of Hardt, Price & Srebro (2016),
/// "Equality of Opportunity in Supervised Learning", *NeurIPS*, §3, applied
/// to the true and false positive rates, with the Newcombe interval of the
/// two groups' difference at [`pairwise_level`]. `None` with fewer than two
/// groups that have rows.
#[must_use]
pub fn largest_gap(groups: &[Tally], level: f64) -> Option<Gap> {
    let (lowest, highest) = extremes(groups)?;
    let (low, high) = (groups[lowest], groups[highest]);
    let interval = newcombe_difference(
        (high.events, high.rows),
        (low.events, low.rows),
        pairwise_level(groups, level),
    )?;
    Some(Gap {
        highest,
        lowest,
        difference: high.rate() - low.rate(),
        interval,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tally(events: u64, rows: u64) -> Tally {
        Tally { events, rows }
    }

    /// Q&A on the Uniform Guidelines (1979), WORKED-EXAMPLES §10: hiring
    /// rates 60 %, 45 %, 48 %, 51 % of 100 applicants each.
    fn guidelines_groups() -> [Tally; 4] {
        [
            tally(60, 100),
            tally(45, 100),
            tally(48, 100),
            tally(51, 100),
        ]
    }

    #[test]
    fn uniform_guidelines_example() {
        // The lowest ratio is 45/60 = 75 %, below four-fifths.
        let groups = guidelines_groups();
        let impact = adverse_impact(&groups, 0.95).unwrap();
        assert_eq!((impact.lowest, impact.highest), (1, 0));
        assert!((impact.ratio.unwrap() - 0.75).abs() < 1e-15);
        assert!(impact.below_four_fifths);
        let ci = impact.interval.unwrap();
        assert!(ci.low < 0.75 && 0.75 < ci.high);
    }

    #[test]
    fn the_extreme_pair_of_several_groups_has_a_bonferroni_adjusted_fisher_p() {
        // Four groups, m = 6 pairs: the extremes' two-sided Fisher p times 6
        // (Dunn 1961), against the same 2×2 table tested alone.
        let groups = guidelines_groups();
        let impact = adverse_impact(&groups, 0.95).unwrap();
        let alone = fisher_exact_two_sided([[45, 55], [60, 40]]);
        assert!((impact.fisher_p - (6.0 * alone).min(1.0)).abs() < 1e-12);
        let two = adverse_impact(&groups[..2], 0.95).unwrap();
        assert!((two.fisher_p - alone).abs() < 1e-15);
    }

    #[test]
    fn hardt_price_srebro_check_gap() {
        // WORKED-EXAMPLES §11 (constructed): group a TPR 40/50 = 0.8, group b TPR 24/40 = 0.6:
        // the equal-opportunity gap is 0.2.
        let gap = largest_gap(&[tally(40, 50), tally(24, 40)], 0.95).unwrap();
        assert_eq!((gap.highest, gap.lowest), (0, 1));
        assert!((gap.difference - 0.2).abs() < 1e-15);
        assert!(gap.interval.low < 0.2 && 0.2 < gap.interval.high);
    }

    #[test]
    fn nobody_selected_has_no_ratio_and_empty_groups_are_ignored() {
        let impact = adverse_impact(&[tally(0, 10), tally(0, 12), tally(0, 0)], 0.95).unwrap();
        assert_eq!(impact.ratio, None);
        assert_eq!(impact.interval, None);
        assert!(adverse_impact(&[tally(3, 10), tally(0, 0)], 0.95).is_none());
    }
}
