//! The page of an [`OutputsReport`]: every section in order with its wording
//! and number formats, rendered by the report backends (Markdown, HTML,
//! terminal) exactly like the scan's page. Computes nothing.

use super::contract::{
    CalibrationBand, Carrier, DistributionBand, GroupRates, ImpactRatio, OutputsReport,
    OutputsResult, OutputsSettings, Rate, RateGap,
};
use crate::report::format::{NOT_COMPUTED, auc_interval, percent, signed, suppressed};
use crate::report::layout::{CAUTION_LABEL, names_or_none};
use crate::report::page::{
    Block, Cell, CellStyle, Chart, Column, KeyValues, Page, Role, Row, Section, Table, Tone,
};
use crate::report::svg::groups::{
    GroupLine, IntervalPoint, LineAxes, LinePoint, RatePanel, Reference,
};

/// The share of the highest selection rate below which a rate fails the
/// four-fifths comparison (common practice; a rule in 29 CFR 1607.4(D)).
const FOUR_FIFTHS: f64 = 0.8;

impl OutputsReport {
    /// The whole report as a page, for any backend.
    #[must_use]
    pub fn page(&self) -> Page<'static> {
        outputs_page(self)
    }
}

fn outputs_page(report: &OutputsReport) -> Page<'static> {
    let d = &report.dataset;
    let mut sections = vec![settings_section(report)];
    sections.extend(
        report
            .results
            .iter()
            .map(|r| attribute_section(r, &report.settings)),
    );
    if !report.notes.is_empty() {
        sections.push(Section::new(
            "Notes",
            vec![Block::List(report.notes.clone())],
        ));
    }
    sections.push(gate_section(report));
    Page {
        title: format!("Model outputs check: {}", d.source),
        subtitle: Some(format!(
            "{} {}; {} of {} rows used; {}.",
            report.tool.name,
            report.tool.version,
            d.rows_used,
            d.rows,
            selection_summary(report)
        )),
        lead: vec![Block::Callout {
            label: CAUTION_LABEL,
            text: report.caution.clone(),
        }],
        sections,
    }
}

/// `score `s`; selected: decision column `d`; outcome `y``.
fn selection_summary(report: &OutputsReport) -> String {
    let s = &report.settings;
    let selection = match (&s.decision, s.threshold, s.selection_rate) {
        (Some(column), _, _) => format!("decision column `{column}`"),
        (None, Some(t), Some(share)) => {
            format!("the top {} of scores (score ≥ {t})", percent(share))
        }
        (None, Some(t), None) => format!("score ≥ {t}"),
        _ => NOT_COMPUTED.to_owned(),
    };
    let outcome = s
        .outcome
        .as_ref()
        .map(|o| format!("; outcome `{o}`"))
        .unwrap_or_default();
    format!("score `{}`; selected: {selection}{outcome}", s.score)
}

fn settings_section(report: &OutputsReport) -> Section<'static> {
    let (d, s) = (&report.dataset, &report.settings);
    let t = &s.thresholds;
    let optional = |value: &Option<String>| value.clone().unwrap_or_else(|| "none".to_owned());
    let rows = vec![
        ("File", Cell::plain(&d.source)),
        (
            "SHA-256",
            Cell::literal(d.sha256.clone().unwrap_or_else(|| "none".to_owned())),
        ),
        (
            "Rows",
            Cell::plain(format!("{} in source, {} used", d.rows, d.rows_used)),
        ),
        ("Selection", Cell::plain(selection_summary(report))),
        ("Outcome", Cell::plain(optional(&s.outcome))),
        ("Segment", Cell::plain(optional(&s.segment))),
        ("Features", Cell::plain(names_or_none(&s.features))),
        ("Minimum cell", Cell::plain(s.min_cell.to_string())),
        (
            "Intervals",
            Cell::plain(format!("{} two-sided", percent(s.level))),
        ),
        ("Score bands", Cell::plain(s.bands.to_string())),
        ("Thresholds", Cell::plain(thresholds_text(t))),
        (
            "Tool",
            Cell::plain(format!("{} {}", report.tool.name, report.tool.version)),
        ),
        ("Command", Cell::literal(&s.command)),
    ];
    Section::new(
        "Dataset and settings",
        vec![Block::KeyValues(KeyValues {
            labels: Some(["setting", "value"]),
            rows: rows.into_iter().map(|(k, v)| (k.to_owned(), v)).collect(),
        })],
    )
    .full_only()
}

fn thresholds_text(t: &super::OutputsThresholds) -> String {
    let odds = t
        .odds_gap_low
        .map_or_else(|| "off".to_owned(), |g| format!("lower bound ≥ {g}"));
    let significance = if t.impact_alpha >= 1.0 {
        String::new()
    } else {
        format!(" with Fisher's exact p ≤ {}", t.impact_alpha)
    };
    format!(
        "score AUC: lower bound ≥ {:.2}; adverse impact ratio: below {}{significance}; \
         equalized-odds gap: {odds}",
        t.proxy_auc_low, t.impact_ratio
    )
}

fn attribute_section(result: &OutputsResult, settings: &OutputsSettings) -> Section<'static> {
    let min_cell = settings.min_cell;
    let mut blocks = vec![
        Block::paragraph(Role::Headline, &result.headline),
        Block::Section(proxy_section(result, min_cell)),
        Block::Section(rates_section(result, settings)),
    ];
    blocks.extend(calibration_section(result, min_cell).map(Block::Section));
    if !result.thin_segments.is_empty() {
        let items = result
            .thin_segments
            .iter()
            .map(|t| format!("{} = {}: {}", t.column, t.level, t.statement))
            .collect();
        blocks.push(Block::Section(Section::new(
            "Thin segments",
            vec![Block::List(items)],
        )));
    }
    blocks.extend(carriers_section(result).map(Block::Section));
    Section {
        starts_page: true,
        ..Section::new(format!("Protected attribute: {}", result.protected), blocks)
    }
}

fn interval_text(value: f64, low: f64, high: f64) -> String {
    format!("{} [{}, {}]", percent(value), percent(low), percent(high))
}

fn proxy_section(result: &OutputsResult, min_cell: u64) -> Section<'static> {
    let mut rows = vec![(
        format!("score AUC for {}", result.protected),
        Cell::plain(result.score_auc.map_or_else(
            || "not estimable (a class has too few rows: two are needed, four with three classes or more)".to_owned(),
            |a| auc_interval(Some(a.auc), Some(a.auc_low), Some(a.auc_high)),
        )),
    )];
    if let Some(label) = &result.higher_scoring {
        rows.push(("scores higher".to_owned(), Cell::plain(label)));
    }
    for stratum in &result.score_auc_by_outcome {
        rows.push((
            format!(
                "score AUC within outcome {} ({} rows)",
                stratum.outcome, stratum.rows
            ),
            Cell::plain(stratum.score_auc.map_or_else(
                || "not estimable".to_owned(),
                |a| auc_interval(Some(a.auc), Some(a.auc_low), Some(a.auc_high)),
            )),
        ));
    }
    if let Some(d) = &result.standardized_mean_difference {
        rows.push((
            format!("standardized mean difference ({} vs the rest)", d.group),
            Cell::plain(format!(
                "{} [{}, {}]",
                signed(d.smd, 3),
                signed(d.smd_low, 3),
                signed(d.smd_high, 3)
            )),
        ));
    }
    let mut blocks = vec![
        Block::KeyValues(KeyValues {
            labels: Some(["figure", "value"]),
            rows,
        }),
        Block::paragraph(
            Role::Meta,
            "Score AUC: how well the score alone tells the classes apart (0.5: not at all, \
             1: completely), with its 95% DeLong interval. With three classes or more: \
             macro one-vs-rest, each half of the rows turned by the other half's direction \
             and measured on its own, the interval widened for the halves' dependence and \
             kept within [0.5, 1] (0.5: no separation shown).",
        ),
    ];
    if let Some(chart) = distribution_chart(result) {
        blocks.push(chart);
        blocks.push(Block::Section(distribution_section(
            &result.score_distribution,
            min_cell,
        )));
    }
    Section::new("The score as a proxy", blocks)
}

/// Midpoint of a band, where its point is drawn.
fn band_middle(low: f64, high: f64) -> f64 {
    (low + high) / 2.0
}

/// The score's range over the bands, for a chart axis.
fn score_range(bands: impl Iterator<Item = (f64, f64)>) -> (f64, f64) {
    bands.fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), (l, h)| {
        (lo.min(l), hi.max(h))
    })
}

fn distribution_chart(result: &OutputsResult) -> Option<Block<'static>> {
    let bands = &result.score_distribution;
    let first = bands.first()?;
    let lines: Vec<GroupLine> = (0..first.groups.len())
        .map(|g| GroupLine {
            label: first.groups[g].label.clone(),
            points: bands
                .iter()
                .filter_map(|band| {
                    Some(LinePoint {
                        x: band_middle(band.score_low, band.score_high),
                        y: band.groups[g].share?,
                        interval: None,
                    })
                })
                .collect(),
        })
        .collect();
    let top = bands
        .iter()
        .flat_map(|b| b.groups.iter().filter_map(|g| g.share))
        .fold(0.0, f64::max);
    let axes = LineAxes {
        x_label: "score (middle of each equal-count band of the pooled score)".to_owned(),
        y_label: "share of the group's rows".to_owned(),
        x: score_range(bands.iter().map(|b| (b.score_low, b.score_high))),
        y: (0.0, (top * 10.0).ceil() / 10.0),
        diagonal: false,
    };
    Some(Block::Figure {
        chart: Chart::GroupLines {
            title: format!("Score distribution by {}", result.protected),
            axes,
            lines,
        },
        caption: "Share of each group's rows in each band of the pooled score. A score that does \
                  not stand in for the attribute gives overlapping flat lines; cells under the \
                  minimum cell are left out."
            .to_owned(),
    })
}

fn suppressed_cell(min_cell: u64) -> Cell {
    Cell::styled(suppressed(min_cell), CellStyle::Suppressed)
}

fn footnote(min_cell: u64) -> Block<'static> {
    Block::paragraph(
        Role::Footnote,
        format!(
            "{}: fewer than {min_cell} rows; the count and every figure computed from it are withheld.",
            suppressed(min_cell)
        ),
    )
}

fn band_label(low: f64, high: f64) -> String {
    format!("[{low:.4}, {high:.4}]")
}

fn distribution_section(bands: &[DistributionBand], min_cell: u64) -> Section<'static> {
    let table = band_table(
        "distribution",
        bands
            .iter()
            .map(|b| (b.score_low, b.score_high, b.groups.as_slice())),
        |g| format!("{}: share (rows)", g.label),
        |g| match (g.share, g.count) {
            (Some(share), Some(count)) => Cell::plain(format!("{} ({count})", percent(share))),
            _ => suppressed_cell(min_cell),
        },
    );
    Section::new(
        "Score distribution by group",
        vec![Block::Table(table), footnote(min_cell)],
    )
    .full_only()
}

/// One row per score band (`low`, `high`, its groups), one column per group
/// as the first band lists them: `column` heads a group's column, `cell`
/// fills it.
fn band_table<'a, G: 'a>(
    name: &'static str,
    bands: impl Iterator<Item = (f64, f64, &'a [G])>,
    column: impl Fn(&G) -> String,
    cell: impl Fn(&G) -> Cell,
) -> Table {
    let mut columns = vec![Column::text("score band")];
    let mut rows = Vec::new();
    for (low, high, groups) in bands {
        if rows.is_empty() {
            columns.extend(groups.iter().map(|g| Column::numeric(column(g))));
        }
        let mut cells = vec![Cell::plain(band_label(low, high))];
        cells.extend(groups.iter().map(&cell));
        rows.push(Row::from(cells));
    }
    Table {
        name,
        columns,
        rows,
    }
}

fn rates_section(result: &OutputsResult, settings: &OutputsSettings) -> Section<'static> {
    let min_cell = settings.min_cell;
    let has_outcome = result.equalized_odds.is_some();
    let mut blocks = vec![rates_chart(result, has_outcome)];
    blocks.push(Block::Table(groups_table(
        &result.groups,
        has_outcome,
        min_cell,
    )));
    if result.groups.iter().any(|g| g.count.is_none()) {
        blocks.push(footnote(min_cell));
    }
    let reasons: Vec<String> = result
        .groups
        .iter()
        .flat_map(|g| {
            g.not_estimable
                .iter()
                .map(move |r| format!("{}: {r}", g.label))
        })
        .collect();
    if !reasons.is_empty() {
        blocks.push(Block::List(reasons));
    }
    if let Some(impact) = &result.adverse_impact_ratio {
        let compared = result.groups.iter().filter(|g| g.count.is_some()).count();
        blocks.push(Block::paragraph(
            Role::Body,
            impact_text(impact, compared, settings.thresholds.impact_alpha),
        ));
        blocks.push(Block::paragraph(
            Role::Meta,
            format!(
                "Four-fifths comparison: {}.",
                impact.four_fifths.basis.trim_end_matches('.')
            ),
        ));
    }
    if let Some(odds) = &result.equalized_odds {
        blocks.push(Block::paragraph(
            Role::Body,
            format!(
                "Equalized odds (Hardt, Price & Srebro 2016), largest differences between groups: \
                 TPR {}; FPR {}.",
                gap_text(odds.tpr_gap.as_ref()),
                gap_text(odds.fpr_gap.as_ref())
            ),
        ));
    }
    Section::new("Selection and error rates by group", blocks)
}

fn rate_point(
    label: &str,
    value: Option<f64>,
    low: Option<f64>,
    high: Option<f64>,
) -> Option<IntervalPoint> {
    Some(IntervalPoint {
        label: label.to_owned(),
        value: value?,
        low: low?,
        high: high?,
    })
}

/// A group's rate and its interval's ends, each `None` when not shown.
type RateTriple = (Option<f64>, Option<f64>, Option<f64>);

fn rates_chart(result: &OutputsResult, has_outcome: bool) -> Block<'static> {
    let points = |pick: fn(&GroupRates) -> RateTriple| -> Vec<IntervalPoint> {
        result
            .groups
            .iter()
            .filter_map(|g| {
                let (v, l, h) = pick(g);
                rate_point(&g.label, v, l, h)
            })
            .collect()
    };
    let selection = points(|g| {
        (
            g.selection_rate,
            g.selection_rate_low,
            g.selection_rate_high,
        )
    });
    let highest = selection.iter().map(|p| p.value).fold(0.0, f64::max);
    let mut panels = vec![RatePanel {
        name: "selection rate".to_owned(),
        reference: (highest > 0.0).then(|| Reference {
            value: FOUR_FIFTHS * highest,
            label: format!(
                "four-fifths of the highest rate: {} (common practice)",
                percent(FOUR_FIFTHS * highest)
            ),
        }),
        points: selection,
    }];
    if has_outcome {
        panels.push(RatePanel {
            name: "true positive rate (selected among outcome 1)".to_owned(),
            points: points(|g| (g.tpr, g.tpr_low, g.tpr_high)),
            reference: None,
        });
        panels.push(RatePanel {
            name: "false positive rate (selected among outcome 0)".to_owned(),
            points: points(|g| (g.fpr, g.fpr_low, g.fpr_high)),
            reference: None,
        });
    }
    Block::Figure {
        chart: Chart::RatePanels {
            title: format!("Selection and error rates by {}", result.protected),
            panels,
        },
        caption:
            "Each group's rate with its exact (Clopper–Pearson) 95% interval; the dashed line \
                  is four-fifths of the highest selection rate. Groups under the minimum cell are \
                  left out."
                .to_owned(),
    }
}

fn rate_cell(value: Option<f64>, low: Option<f64>, high: Option<f64>) -> Cell {
    Cell::plain(match (value, low, high) {
        (Some(v), Some(l), Some(h)) => interval_text(v, l, h),
        _ => NOT_COMPUTED.to_owned(),
    })
}

fn groups_table(groups: &[GroupRates], has_outcome: bool, min_cell: u64) -> Table {
    let mut columns = vec![
        Column::text("group"),
        Column::numeric("rows"),
        Column::numeric("selected"),
        Column::numeric("selection rate [95%]"),
    ];
    if has_outcome {
        columns.push(Column::numeric("TPR [95%]"));
        columns.push(Column::numeric("FPR [95%]"));
    }
    columns.push(Column::numeric("mean score"));
    let width = columns.len();
    let rows = groups
        .iter()
        .map(|g| {
            let mut cells = vec![Cell::plain(&g.label)];
            let Some(count) = g.count else {
                cells.extend((1..width).map(|_| suppressed_cell(min_cell)));
                return Row::from(cells);
            };
            cells.push(Cell::plain(count.to_string()));
            cells.push(Cell::plain(
                g.selected
                    .map_or_else(|| NOT_COMPUTED.to_owned(), |s| s.to_string()),
            ));
            cells.push(rate_cell(
                g.selection_rate,
                g.selection_rate_low,
                g.selection_rate_high,
            ));
            if has_outcome {
                cells.push(rate_cell(g.tpr, g.tpr_low, g.tpr_high));
                cells.push(rate_cell(g.fpr, g.fpr_low, g.fpr_high));
            }
            cells.push(Cell::plain(
                g.mean_score
                    .map_or_else(|| NOT_COMPUTED.to_owned(), |m| format!("{m:.4}")),
            ));
            Row::from(cells)
        })
        .collect();
    Table {
        name: "groups",
        columns,
        rows,
    }
}

/// `= 0.012`, `= 3.7e-25`, or `< 1e-300` where the double underflows.
pub(super) fn p_value(p: f64) -> String {
    if p < 1e-300 {
        "< 1e-300".to_owned()
    } else if p < 1e-3 {
        format!("= {p:.1e}")
    } else {
        format!("= {p:.3}")
    }
}

/// The ratio sentence; `compared` groups with rows shown (more than two:
/// the p-value is adjusted for picking the extreme pair). A ratio below
/// four-fifths whose difference does not reach `alpha` is said not to fail
/// the gate, with the rule's own small-numbers clause.
fn impact_text(impact: &ImpactRatio, compared: usize, alpha: f64) -> String {
    let ratio = match (impact.ratio, impact.ratio_low, impact.ratio_high) {
        (Some(r), Some(l), Some(h)) => format!("{r:.3} [{l:.3}, {h:.3}]"),
        (Some(r), _, _) => format!("{r:.3} (interval not estimable: a rate is 0)"),
        _ => "not estimable (nobody selected)".to_owned(),
    };
    let verdict = if impact.four_fifths.below {
        "below"
    } else {
        "not below"
    };
    let adjusted = if compared > 2 {
        format!(
            " (Bonferroni-adjusted over the {} pairs of {compared} groups)",
            compared * (compared - 1) / 2
        )
    } else {
        String::new()
    };
    let small_numbers = if impact.four_fifths.below && !super::impact_significant(impact, alpha) {
        format!(
            " The difference is not significant at {alpha}: differences on small numbers that \
             are not statistically significant may not constitute adverse impact (29 CFR \
             1607.4(D)), so the gate does not fail on it (--impact-alpha 1 gates on the ratio \
             alone)."
        )
    } else {
        String::new()
    };
    format!(
        "Adverse impact ratio (selection rate of {} over that of {}): {ratio}, {verdict} \
         four-fifths. Fisher's exact test of the two rates{adjusted}: p {}.{small_numbers}",
        impact.lowest,
        impact.highest,
        p_value(impact.fisher_exact_p)
    )
}

fn gap_text(gap: Option<&RateGap>) -> String {
    gap.map_or_else(
        || "not estimable".to_owned(),
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
    )
}

fn calibration_section(result: &OutputsResult, min_cell: u64) -> Option<Section<'static>> {
    let bands = &result.calibration;
    if bands.is_empty() {
        return None;
    }
    let table = band_table(
        "calibration",
        bands
            .iter()
            .map(|b| (b.score_low, b.score_high, b.groups.as_slice())),
        |g| format!("{}: outcome rate [95%] (rows)", g.label),
        |g| match g.count {
            Some(n) => Cell::plain(format!("{} ({n})", rate_text(g.outcome_rate.as_ref()))),
            None => suppressed_cell(min_cell),
        },
    );
    let blocks = vec![
        calibration_chart(result, bands),
        Block::Table(table),
        footnote(min_cell),
        Block::paragraph(
            Role::Meta,
            "A score calibrated within groups has the same outcome rate in a band for every \
             group (Kleinberg, Mullainathan & Raghavan 2017).",
        ),
    ];
    Some(Section::new("Calibration by group", blocks).full_only())
}

fn rate_text(rate: Option<&Rate>) -> String {
    rate.map_or_else(
        || NOT_COMPUTED.to_owned(),
        |r| interval_text(r.rate, r.low, r.high),
    )
}

fn calibration_chart(result: &OutputsResult, bands: &[CalibrationBand]) -> Block<'static> {
    let lines: Vec<GroupLine> = (0..bands[0].groups.len())
        .map(|g| GroupLine {
            label: bands[0].groups[g].label.clone(),
            points: bands
                .iter()
                .filter_map(|band| {
                    let cell = &band.groups[g];
                    let rate = cell.outcome_rate?;
                    Some(LinePoint {
                        x: cell.mean_score?,
                        y: rate.rate,
                        interval: Some((rate.low, rate.high)),
                    })
                })
                .collect(),
        })
        .collect();
    let x = score_range(bands.iter().map(|b| (b.score_low, b.score_high)));
    let axes = LineAxes {
        x_label: "mean score in the band".to_owned(),
        y_label: "observed outcome rate".to_owned(),
        diagonal: x.0 >= 0.0 && x.1 <= 1.0,
        x,
        y: (0.0, 1.0),
    };
    Block::Figure {
        chart: Chart::GroupLines {
            title: format!("Calibration by {}", result.protected),
            axes,
            lines,
        },
        caption: "Observed outcome rate per score band and group with exact 95% intervals; lines \
                  apart at the same score mean the score means different things for different \
                  groups. The dashed diagonal (scores read as probabilities) is drawn when the \
                  scores lie in [0, 1]."
            .to_owned(),
    }
}

fn carriers_section(result: &OutputsResult) -> Option<Section<'static>> {
    if result.carriers.is_empty() {
        return None;
    }
    let rows = result.carriers.iter().map(carrier_row).collect();
    let table = Table {
        name: "carriers",
        columns: vec![
            Column::text("feature"),
            Column::numeric("AUC drop"),
            Column::numeric("AUC adjusted"),
            Column::numeric("association (Cramér's V)"),
            Column::numeric("influence (η²)"),
        ],
        rows,
    };
    let method = "AUC drop: the score's AUC for the attribute minus its AUC after each level's mean \
                  score is removed from the score. A feature carries the attribute into the score \
                  when it is associated with the attribute and influences the score (association \
                  together with influence, as framed by Datta, Fredrikson, Ko, Mardziel & Sen 2017).";
    Some(Section::new(
        format!("Features carrying {} into the score", result.protected),
        vec![Block::Table(table), Block::paragraph(Role::Meta, method)],
    ))
}

fn carrier_row(carrier: &Carrier) -> Row {
    let optional =
        |v: Option<f64>, text: fn(f64) -> String| v.map_or_else(|| NOT_COMPUTED.to_owned(), text);
    Row::from(vec![
        Cell::name(&carrier.feature),
        Cell::plain(optional(carrier.auc_drop, |d| signed(d, 3))),
        Cell::plain(optional(carrier.auc_adjusted, |a| format!("{a:.3}"))),
        Cell::plain(format!("{:.3}", carrier.association)),
        Cell::plain(format!("{:.3}", carrier.influence)),
    ])
}

/// The thresholds and what exceeds them: the report's `failing` list, which
/// also decides the exit status.
fn gate_section(report: &OutputsReport) -> Section<'static> {
    let failures = &report.failing;
    let verdict = if failures.is_empty() {
        Cell::styled("passes (exit 0)", CellStyle::Toned(Tone::Calm))
    } else {
        Cell::styled(
            format!("{} exceeded (exit 1)", failures.len()),
            CellStyle::Toned(Tone::Alarm),
        )
    };
    let mut rows: Vec<(String, Cell)> = report
        .policy
        .iter()
        .map(|p| {
            let text = format!("{} (SHA-256 {})", p.file, p.sha256);
            ("policy".to_owned(), Cell::plain(text))
        })
        .collect();
    rows.push((
        "thresholds".to_owned(),
        Cell::plain(thresholds_text(&report.settings.thresholds)),
    ));
    rows.push(("result".to_owned(), verdict));
    let mut blocks = vec![Block::KeyValues(KeyValues { labels: None, rows })];
    if !failures.is_empty() {
        blocks.push(Block::List(failures.clone()));
    }
    Section::new("Gate", blocks)
}
