//! Calibration by group (observed outcome rate per score band) and thin
//! segments (event counts too small for a rate to be read as a measurement).

use super::contract::{
    BandShare, CalibrationBand, CalibrationCell, DistributionBand, Rate, ThinSegment,
};
use crate::data::encode::{bin_of, quantile_edges};
use crate::report::format::percent;
use crate::stats::proportions::clopper_pearson;

/// Below this many events a rate is "thin": common practice (the n·p ≥ 5
/// rule of thumb for normal approximations to the binomial), not a standard.
pub const THIN_EVENTS: u64 = 5;

/// A rate with its Clopper–Pearson interval; `None` without rows.
fn exact_rate(events: u64, rows: u64, level: f64) -> Option<Rate> {
    let ci = clopper_pearson(events, rows, level)?;
    Some(Rate {
        rate: events as f64 / rows as f64,
        low: ci.low,
        high: ci.high,
    })
}

/// Observed outcome rate per score band and class: bands are the pooled
/// score's quantile bins (the pandas `qcut(score, bands, duplicates="drop")`
/// rule of `crate::data::encode`), each cell with its mean score and the
/// share with outcome 1 with a Clopper–Pearson interval. A well-calibrated
/// score has the same outcome rate in a band for every group (Kleinberg,
/// Mullainathan & Raghavan 2017, "Inherent Trade-Offs in the Fair
/// Determination of Risk Scores", ITCS, calibration within groups). Cells
/// under `min_cell` rows are suppressed. Empty when the score is constant.
#[must_use]
pub fn calibration(
    score: &[f64],
    classes: &[u32],
    labels: &[String],
    outcome: &[bool],
    bands: usize,
    min_cell: u64,
    level: f64,
) -> Vec<CalibrationBand> {
    let edges = band_edges(score, bands);
    if edges.len() < 2 {
        return Vec::new();
    }
    let n_bands = edges.len() - 1;
    let k = labels.len();
    // (rows, outcome 1, score sum) per band × class.
    let mut cells = vec![(0u64, 0u64, 0.0f64); n_bands * k];
    for ((&s, &c), &y) in score.iter().zip(classes).zip(outcome) {
        let cell = &mut cells[bin_of(&edges, s) as usize * k + c as usize];
        cell.0 += 1;
        cell.1 += u64::from(y);
        cell.2 += s;
    }
    (0..n_bands)
        .map(|band| CalibrationBand {
            score_low: edges[band],
            score_high: edges[band + 1],
            groups: (0..k)
                .map(|c| {
                    let (rows, events, sum) = cells[band * k + c];
                    let shown = rows >= min_cell.max(1);
                    CalibrationCell {
                        label: labels[c].clone(),
                        count: shown.then_some(rows),
                        mean_score: shown.then(|| sum / rows as f64),
                        outcome_rate: exact_rate(events, rows, level).filter(|_| shown),
                    }
                })
                .collect(),
        })
        .collect()
}

/// Edges of the pooled score's quantile bands; fewer than two when the score is constant.
fn band_edges(score: &[f64], bands: usize) -> Vec<f64> {
    let mut sorted = score.to_vec();
    sorted.sort_by(f64::total_cmp);
    quantile_edges(&sorted, bands)
}

/// Each class's share of its rows in each pooled-score band (the bands of
/// [`calibration`]): how the score is distributed within each group. A
/// score that does not stand in for the attribute puts every group's rows
/// in the bands in about equal shares. Cells under `min_cell` rows, and
/// every cell of a class under `min_cell` rows, are suppressed.
#[must_use]
pub fn score_distribution(
    score: &[f64],
    classes: &[u32],
    labels: &[String],
    bands: usize,
    min_cell: u64,
) -> Vec<DistributionBand> {
    let edges = band_edges(score, bands);
    if edges.len() < 2 {
        return Vec::new();
    }
    let k = labels.len();
    let mut counts = vec![0u64; (edges.len() - 1) * k];
    let mut class_rows = vec![0u64; k];
    for (&s, &c) in score.iter().zip(classes) {
        counts[bin_of(&edges, s) as usize * k + c as usize] += 1;
        class_rows[c as usize] += 1;
    }
    let floor = min_cell.max(1);
    edges
        .windows(2)
        .enumerate()
        .map(|(band, edge)| DistributionBand {
            score_low: edge[0],
            score_high: edge[1],
            groups: (0..k)
                .map(|c| {
                    let rows = counts[band * k + c];
                    let shown = rows >= floor && class_rows[c] >= floor;
                    BandShare {
                        label: labels[c].clone(),
                        count: shown.then_some(rows),
                        share: shown.then(|| rows as f64 / class_rows[c] as f64),
                    }
                })
                .collect(),
        })
        .collect()
}

/// One level of a column: its rows and events of one kind.
pub struct SegmentCount<'a> {
    pub column: &'a str,
    pub level: &'a str,
    /// `selected` or `outcome`.
    pub event: &'a str,
    pub rows: u64,
    pub events: u64,
}

/// The segments with at least `min_cell` rows but fewer than [`THIN_EVENTS`]
/// events, each with its exact interval and a sentence stating the upper
/// end of the two-sided Clopper–Pearson interval (a one-sided
/// (1 + level)/2 bound): "0 selected in 10 rows: the rate may still be as
/// high as 30.8%", so that a zero rate on a small segment is not read as no risk.
#[must_use]
pub fn thin_segments(segments: &[SegmentCount<'_>], min_cell: u64, level: f64) -> Vec<ThinSegment> {
    segments
        .iter()
        .filter(|s| s.rows >= min_cell.max(1) && s.events < THIN_EVENTS)
        .filter_map(|s| {
            let rate = exact_rate(s.events, s.rows, level)?;
            let noun = if s.event == "selected" {
                "selected"
            } else {
                "with outcome 1"
            };
            let statement = format!(
                "{} {noun} in {} rows: the rate may still be as high as {} (upper end of the \
                 {} exact interval)",
                s.events,
                s.rows,
                percent(rate.high),
                percent(level).replace(".0%", "%"),
            );
            Some(ThinSegment {
                column: s.column.to_string(),
                level: s.level.to_string(),
                event: s.event.to_string(),
                rows: s.rows,
                events: s.events,
                rate,
                statement,
            })
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn zero_events_in_ten_rows_may_still_be_thirty_one_percent() {
        // 1 − 0.025^{1/10} = 0.3085 (Clopper & Pearson 1934 at x = 0).
        let segments = [SegmentCount {
            column: "branch",
            level: "Greyholm",
            event: "selected",
            rows: 10,
            events: 0,
        }];
        let thin = thin_segments(&segments, 10, 0.95);
        assert_eq!(thin.len(), 1);
        assert_eq!(
            thin[0].statement,
            "0 selected in 10 rows: the rate may still be as high as 30.8% (upper end of the 95% \
             exact interval)"
        );
        // Under min_cell rows: suppressed, not listed.
        assert!(thin_segments(&segments, 11, 0.95).is_empty());
    }

    #[test]
    fn distribution_shares_sum_to_one_and_small_cells_are_suppressed() {
        let score: Vec<f64> = (0..60).map(f64::from).collect();
        // Class a: rows 0..40, class b: rows 40..60; two bands split at 29.5.
        let classes: Vec<u32> = (0..60).map(|i| u32::from(i >= 40)).collect();
        let labels = vec!["a".to_string(), "b".to_string()];
        let bands = score_distribution(&score, &classes, &labels, 2, 10);
        assert_eq!(bands.len(), 2);
        assert_eq!(bands[0].groups[0].count, Some(30));
        assert_eq!(bands[1].groups[0].count, Some(10));
        assert_eq!(bands[0].groups[0].share, Some(0.75));
        assert_eq!(
            bands[0].groups[1].count, None,
            "no row of b in the low band"
        );
        assert_eq!(bands[1].groups[1].share, Some(1.0));
        let b_suppressed = score_distribution(&score, &classes, &labels, 2, 21);
        assert!(
            b_suppressed
                .iter()
                .all(|band| band.groups[1].share.is_none())
        );
    }

    #[test]
    fn calibration_suppresses_small_cells() {
        let score: Vec<f64> = (0..40).map(|i| f64::from(i) / 40.0).collect();
        let classes: Vec<u32> = (0..40).map(|i| u32::from(i >= 35)).collect();
        let outcome: Vec<bool> = (0..40).map(|i| i % 2 == 0).collect();
        let labels = vec!["a".to_string(), "b".to_string()];
        let bands = calibration(&score, &classes, &labels, &outcome, 2, 10, 0.95);
        assert_eq!(bands.len(), 2);
        assert_eq!(bands[0].groups[0].count, Some(20));
        assert_eq!(
            bands[1].groups[1].count, None,
            "5 rows of class b: suppressed"
        );
        assert_eq!(bands[1].groups[1].outcome_rate, None);
    }
}
