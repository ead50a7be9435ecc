//! Plain-text summary of an [`OutputsReport`] for the terminal. Renders only;
//! computes nothing.

use super::contract::{GroupRates, OutputsReport, OutputsResult, Rate};
use crate::report::format::{NOT_COMPUTED, percent, suppressed};
use std::fmt::Write;

/// `53.6% [51.7%, 55.4%]`, or `n/a`.
fn rate(value: Option<f64>, low: Option<f64>, high: Option<f64>) -> String {
    match (value, low, high) {
        (Some(v), Some(l), Some(h)) => format!("{} [{}, {}]", percent(v), percent(l), percent(h)),
        _ => NOT_COMPUTED.to_string(),
    }
}

fn exact_rate(value: Option<&Rate>) -> String {
    value.map_or_else(
        || NOT_COMPUTED.to_string(),
        |r| rate(Some(r.rate), Some(r.low), Some(r.high)),
    )
}

/// `= 0.012`, `= 3.7e-25`, or `< 1e-300` where the double underflows.
fn p_value(p: f64) -> String {
    if p < 1e-300 {
        "< 1e-300".to_string()
    } else if p < 1e-3 {
        format!("= {p:.1e}")
    } else {
        format!("= {p:.3}")
    }
}

fn count(value: Option<u64>, min_cell: u64) -> String {
    value.map_or_else(|| suppressed(min_cell), |v| v.to_string())
}

/// The whole summary.
#[must_use]
pub fn render(report: &OutputsReport) -> String {
    let mut out = String::new();
    let settings = &report.settings;
    let selection = match (&settings.decision, settings.threshold) {
        (Some(column), _) => format!("decision column `{column}`"),
        (None, Some(t)) => format!("score ≥ {t}"),
        _ => NOT_COMPUTED.to_string(),
    };
    let _ = writeln!(
        out,
        "telltale outputs: {} ({} of {} rows used)\nscore `{}`; selected: {selection}{}\n",
        report.dataset.source,
        report.dataset.rows_used,
        report.dataset.rows,
        settings.score,
        settings
            .outcome
            .as_ref()
            .map(|o| format!("; outcome `{o}`"))
            .unwrap_or_default()
    );
    for result in &report.results {
        render_result(&mut out, result, settings.min_cell);
    }
    for note in &report.notes {
        let _ = writeln!(out, "note: {note}");
    }
    let _ = writeln!(out, "\n{}", report.caution);
    out
}

fn render_result(out: &mut String, result: &OutputsResult, min_cell: u64) {
    let _ = writeln!(
        out,
        "{} ({})\n  {}",
        result.protected, result.kind, result.headline
    );
    for stratum in &result.score_auc_by_outcome {
        let auc = stratum.score_auc.map_or_else(
            || "not estimable".to_string(),
            |a| format!("{:.3} [{:.3}, {:.3}]", a.auc, a.auc_low, a.auc_high),
        );
        let _ = writeln!(out, "  score AUC within outcome {}: {auc}", stratum.outcome);
    }
    let _ = writeln!(
        out,
        "  {:<16} {:>8} {:>8} {:<26} {:<26} {:<26} {:>10}",
        "group", "rows", "selected", "selection rate [95%]", "TPR [95%]", "FPR [95%]", "mean score"
    );
    for group in &result.groups {
        render_group(out, group, min_cell);
    }
    if let Some(impact) = &result.adverse_impact_ratio {
        let ratio = match (impact.ratio, impact.ratio_low, impact.ratio_high) {
            (Some(r), Some(l), Some(h)) => format!("{r:.3} [{l:.3}, {h:.3}]"),
            (Some(r), _, _) => format!("{r:.3} (interval not estimable: a rate is 0)"),
            _ => "not estimable (nobody selected)".to_string(),
        };
        let _ = writeln!(
            out,
            "  adverse impact ratio ({} over {}): {ratio}; {} four-fifths; Fisher exact p {}\n    \
             four-fifths: {}",
            impact.lowest,
            impact.highest,
            if impact.four_fifths.below {
                "below"
            } else {
                "not below"
            },
            p_value(impact.fisher_exact_p),
            impact.four_fifths.basis
        );
    }
    if let Some(d) = &result.standardized_mean_difference {
        let _ = writeln!(
            out,
            "  standardized mean difference of the score ({} vs the rest): {:+.3} [{:+.3}, {:+.3}]",
            d.group, d.smd, d.smd_low, d.smd_high
        );
    }
    if let Some(odds) = &result.equalized_odds {
        for (name, gap) in [("TPR", &odds.tpr_gap), ("FPR", &odds.fpr_gap)] {
            let text = gap.as_ref().map_or_else(
                || "not estimable".to_string(),
                |g| {
                    format!(
                        "{} [{}, {}] ({} − {})",
                        percent(g.difference),
                        percent(g.difference_low),
                        percent(g.difference_high),
                        g.highest,
                        g.lowest
                    )
                },
            );
            let _ = writeln!(out, "  equalized odds, largest {name} gap: {text}");
        }
    }
    render_calibration(out, result, min_cell);
    for thin in &result.thin_segments {
        let _ = writeln!(
            out,
            "  thin: {} = {}: {}",
            thin.column, thin.level, thin.statement
        );
    }
    if !result.carriers.is_empty() {
        let _ = writeln!(
            out,
            "  features carrying `{}` into the score (AUC drop when the score is adjusted for the feature):",
            result.protected
        );
        for carrier in &result.carriers {
            let _ = writeln!(
                out,
                "    {:<24} drop {:>7}  association (Cramér's V) {:.3}  influence (η²) {:.3}",
                carrier.feature,
                carrier
                    .auc_drop
                    .map_or_else(|| NOT_COMPUTED.to_string(), |d| format!("{d:+.3}")),
                carrier.association,
                carrier.influence
            );
        }
    }
    out.push('\n');
}

fn render_group(out: &mut String, group: &GroupRates, min_cell: u64) {
    let _ = writeln!(
        out,
        "  {:<16} {:>8} {:>8} {:<26} {:<26} {:<26} {:>10}",
        group.label,
        count(group.count, min_cell),
        group
            .selected
            .map_or_else(|| NOT_COMPUTED.to_string(), |s| s.to_string()),
        rate(
            group.selection_rate,
            group.selection_rate_low,
            group.selection_rate_high
        ),
        rate(group.tpr, group.tpr_low, group.tpr_high),
        rate(group.fpr, group.fpr_low, group.fpr_high),
        group
            .mean_score
            .map_or_else(|| NOT_COMPUTED.to_string(), |m| format!("{m:.4}"))
    );
    for reason in &group.not_estimable {
        let _ = writeln!(out, "    {}: {reason}", group.label);
    }
}

fn render_calibration(out: &mut String, result: &OutputsResult, min_cell: u64) {
    let Some(first) = result.calibration.first() else {
        return;
    };
    let _ = write!(
        out,
        "  calibration: outcome rate by score band\n    {:<22}",
        "score band"
    );
    for cell in &first.groups {
        let _ = write!(out, " {:<30}", cell.label);
    }
    trim_line_end(out);
    out.push('\n');
    for band in &result.calibration {
        let _ = write!(
            out,
            "    {:<22}",
            format!("[{:.4}, {:.4}]", band.score_low, band.score_high)
        );
        for cell in &band.groups {
            let text = match cell.count {
                Some(n) => format!("{} (n={n})", exact_rate(cell.outcome_rate.as_ref())),
                None => suppressed(min_cell),
            };
            let _ = write!(out, " {text:<30}");
        }
        trim_line_end(out);
        out.push('\n');
    }
}

/// Removes the padding after the last column of a line.
fn trim_line_end(out: &mut String) {
    let kept = out.trim_end_matches(' ').len();
    out.truncate(kept);
}
