//! Selection and error rates by group, the adverse impact ratio, the
//! equalized-odds gaps and the standardized mean difference of the scores.

use super::contract::{
    EqualizedOdds, FourFifths, GroupRates, ImpactRatio, MeanDifferenceResult, RateGap,
};
use crate::stats::disparity::{Tally, adverse_impact, largest_gap};
use crate::stats::effect::standardized_mean_difference;
use crate::stats::proportions::clopper_pearson;

/// What the four-fifths comparison is, stated in every report.
pub const FOUR_FIFTHS_BASIS: &str = "common practice: a ratio below 4/5 is read as a sign of \
adverse impact; it is a rule for employee selection in the US under the Uniform Guidelines on \
Employee Selection Procedures (1978), 29 CFR 1607.4(D), and a rule of thumb elsewhere";

/// Counts of one group, the inputs of every rate.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct GroupCounts {
    pub rows: u64,
    pub selected: u64,
    /// Rows with outcome 1, and those among them selected (true positives).
    pub positives: u64,
    pub true_positives: u64,
    /// Rows with outcome 0, and those among them selected (false positives).
    pub negatives: u64,
    pub false_positives: u64,
}

impl GroupCounts {
    fn selection(&self) -> Tally {
        Tally {
            events: self.selected,
            rows: self.rows,
        }
    }

    fn tpr(&self) -> Tally {
        Tally {
            events: self.true_positives,
            rows: self.positives,
        }
    }

    fn fpr(&self) -> Tally {
        Tally {
            events: self.false_positives,
            rows: self.negatives,
        }
    }
}

/// Counts per class.
#[must_use]
pub fn count_groups(
    classes: &[u32],
    k: usize,
    selected: &[bool],
    outcome: Option<&[bool]>,
) -> Vec<GroupCounts> {
    let mut groups = vec![GroupCounts::default(); k];
    for (row, &class) in classes.iter().enumerate() {
        let group = &mut groups[class as usize];
        let chosen = u64::from(selected[row]);
        group.rows += 1;
        group.selected += chosen;
        if let Some(outcome) = outcome {
            if outcome[row] {
                group.positives += 1;
                group.true_positives += chosen;
            } else {
                group.negatives += 1;
                group.false_positives += chosen;
            }
        }
    }
    groups
}

/// Which figures of a group may be shown.
#[derive(Debug, Clone, Copy)]
struct Shown {
    group: bool,
    tpr: bool,
    fpr: bool,
}

/// A rate's denominator is shown only from `min_cell` rows, and a rate needs one row.
fn shown(counts: &GroupCounts, min_cell: u64, has_outcome: bool) -> Shown {
    let enough = |rows: u64| rows >= min_cell.max(1);
    let group = enough(counts.rows);
    Shown {
        group,
        tpr: group && has_outcome && enough(counts.positives),
        fpr: group && has_outcome && enough(counts.negatives),
    }
}

/// Why an error rate is not shown: no rows at all, or too few.
fn missing_rate(name: &str, rows: u64, outcome: u8, min_cell: u64) -> String {
    if rows == 0 {
        format!("{name} not estimable: no rows with outcome {outcome} in this group")
    } else {
        format!("{name} suppressed: fewer than {min_cell} rows with outcome {outcome}")
    }
}

/// A rate and its exact interval as (rate, low, high), when shown.
fn exact(tally: Tally, show: bool, level: f64) -> (Option<f64>, Option<f64>, Option<f64>) {
    match clopper_pearson(tally.events, tally.rows, level).filter(|_| show) {
        Some(ci) => (Some(tally.rate()), Some(ci.low), Some(ci.high)),
        None => (None, None, None),
    }
}

/// The `groups` entries: counts, rates and exact intervals, small cells suppressed.
#[must_use]
pub fn group_rates(
    labels: &[String],
    counts: &[GroupCounts],
    score_means: &[Option<f64>],
    aucs_vs_rest: &[Option<f64>],
    has_outcome: bool,
    min_cell: u64,
    level: f64,
) -> Vec<GroupRates> {
    labels
        .iter()
        .enumerate()
        .map(|(g, label)| {
            let c = counts[g];
            let show = shown(&c, min_cell, has_outcome);
            let mut not_estimable = Vec::new();
            if !show.group {
                not_estimable.push(format!("fewer than {min_cell} rows: suppressed"));
            } else if has_outcome {
                if !show.tpr {
                    not_estimable.push(missing_rate("TPR", c.positives, 1, min_cell));
                }
                if !show.fpr {
                    not_estimable.push(missing_rate("FPR", c.negatives, 0, min_cell));
                }
            }
            let (selection_rate, selection_rate_low, selection_rate_high) =
                exact(c.selection(), show.group, level);
            let (tpr, tpr_low, tpr_high) = exact(c.tpr(), show.tpr, level);
            let (fpr, fpr_low, fpr_high) = exact(c.fpr(), show.fpr, level);
            let if_group = |v: u64| show.group.then_some(v);
            GroupRates {
                label: label.clone(),
                count: if_group(c.rows),
                selected: if_group(c.selected),
                selection_rate,
                selection_rate_low,
                selection_rate_high,
                positives: show.tpr.then_some(c.positives),
                tpr,
                tpr_low,
                tpr_high,
                negatives: show.fpr.then_some(c.negatives),
                fpr,
                fpr_low,
                fpr_high,
                mean_score: score_means[g].filter(|_| show.group),
                score_auc_vs_rest: aucs_vs_rest[g].filter(|_| show.group),
                not_estimable,
            }
        })
        .collect()
}

/// Tallies of the shown groups with their class indices.
fn shown_tallies(
    counts: &[GroupCounts],
    keep: impl Fn(&Shown) -> bool,
    tally: impl Fn(&GroupCounts) -> Tally,
    min_cell: u64,
    has_outcome: bool,
) -> (Vec<usize>, Vec<Tally>) {
    (0..counts.len())
        .filter(|&g| keep(&shown(&counts[g], min_cell, has_outcome)))
        .map(|g| (g, tally(&counts[g])))
        .unzip()
}

/// The adverse impact ratio over the groups with at least `min_cell` rows.
#[must_use]
pub fn impact_ratio(
    labels: &[String],
    counts: &[GroupCounts],
    min_cell: u64,
    level: f64,
) -> Option<ImpactRatio> {
    let (index, tallies) =
        shown_tallies(counts, |s| s.group, GroupCounts::selection, min_cell, false);
    let impact = adverse_impact(&tallies, level)?;
    Some(ImpactRatio {
        ratio: impact.ratio,
        ratio_low: impact.interval.map(|ci| ci.low),
        ratio_high: impact.interval.map(|ci| ci.high),
        lowest: labels[index[impact.lowest]].clone(),
        highest: labels[index[impact.highest]].clone(),
        four_fifths: FourFifths {
            below: impact.below_four_fifths,
            basis: FOUR_FIFTHS_BASIS.to_string(),
        },
        fisher_exact_p: impact.fisher_p,
    })
}

/// The largest TPR and FPR differences over the groups whose rates are shown.
#[must_use]
pub fn equalized_odds(
    labels: &[String],
    counts: &[GroupCounts],
    min_cell: u64,
    level: f64,
) -> EqualizedOdds {
    let gap = |keep: fn(&Shown) -> bool, tally: fn(&GroupCounts) -> Tally| {
        let (index, tallies) = shown_tallies(counts, keep, tally, min_cell, true);
        largest_gap(&tallies, level).map(|gap| RateGap {
            difference: gap.difference,
            difference_low: gap.interval.low,
            difference_high: gap.interval.high,
            highest: labels[index[gap.highest]].clone(),
            lowest: labels[index[gap.lowest]].clone(),
        })
    };
    EqualizedOdds {
        tpr_gap: gap(|s| s.tpr, GroupCounts::tpr),
        fpr_gap: gap(|s| s.fpr, GroupCounts::fpr),
    }
}

/// Standardized mean difference of the scores, one class against all other
/// rows: for a binary attribute the `focus` class, for a multi-class one the
/// shown class with the largest absolute difference.
#[must_use]
pub fn mean_difference(
    labels: &[String],
    score: &[f64],
    classes: &[u32],
    counts: &[GroupCounts],
    focus: Option<usize>,
    min_cell: u64,
) -> Option<MeanDifferenceResult> {
    let candidates: Vec<usize> = match focus {
        Some(g) => vec![g],
        None => (0..labels.len())
            .filter(|&g| shown(&counts[g], min_cell, false).group)
            .collect(),
    };
    candidates
        .into_iter()
        .filter_map(|g| {
            let in_group = |inside: bool| -> Vec<f64> {
                score
                    .iter()
                    .zip(classes)
                    .filter(|&(_, &c)| (c as usize == g) == inside)
                    .map(|(&s, _)| s)
                    .collect()
            };
            let d = standardized_mean_difference(&in_group(true), &in_group(false))?;
            Some(MeanDifferenceResult {
                group: labels[g].clone(),
                smd: d.smd,
                smd_low: d.interval.low,
                smd_high: d.interval.high,
            })
        })
        .max_by(|a, b| a.smd.abs().total_cmp(&b.smd.abs()))
}
