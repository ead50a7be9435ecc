//! The page of a [`Report`]: every section, in order, with its wording and
//! number formats. A new report section is one function here, listed in
//! [`report_page`] or [`protected_section`].

use super::format::MapQuadrant;
use super::format::{self, TOP_PAIRS};
use super::page::{
    Block, Cell, CellStyle, Chart, Column, Heading, KeyValues, Page, Role, Row, Section, Table,
};
use super::svg::{self, MAX_ROC_CURVES, RocSeries};
use super::{
    AddedSource, AucInterval, FeatureResult, LevelComposition, PairResult, PolicyOutcome,
    ProtectedResult, Report, Settings, Thresholds, WholeSet,
};

/// Lead-in of the caution every report carries.
pub const CAUTION_LABEL: &str = "Caution";

/// The whole report as a page.
#[must_use]
pub fn report_page(report: &Report) -> Page<'_> {
    let d = &report.dataset;
    let mut sections = vec![settings_section(report)];
    sections.extend(report.results.iter().map(|r| protected_section(r, report)));
    sections.extend(list_section(
        "Skipped columns",
        report
            .skipped_columns
            .iter()
            .map(|c| format!("{}: {}", c.name, c.reason))
            .collect(),
    ));
    sections.extend(list_section("Notes", report.notes.clone()));
    sections.extend(report.policy.as_ref().map(policy_section));
    sections.extend(report.added_source.as_ref().map(added_source_section));
    Page {
        title: format!("Proxy leakage screen: {}", d.source),
        subtitle: Some(format!(
            "{} {}; {} of {} rows used.",
            report.tool.name, report.tool.version, d.rows_used, d.rows
        )),
        lead: vec![Block::Callout {
            label: CAUTION_LABEL,
            text: report.caution.clone(),
        }],
        sections,
    }
}

fn settings_section(report: &Report) -> Section<'static> {
    let rows = format::settings(report)
        .into_iter()
        .map(|s| {
            let value = if s.literal {
                Cell::literal(s.value)
            } else {
                Cell::plain(s.value)
            };
            (s.label.to_owned(), value)
        })
        .collect();
    Section::new(
        "Dataset and settings",
        vec![Block::KeyValues(KeyValues {
            labels: Some(["setting", "value"]),
            rows,
        })],
    )
    .full_only()
}

fn protected_section<'a>(result: &'a ProtectedResult, report: &'a Report) -> Section<'a> {
    let settings = &report.settings;
    let mut blocks = vec![
        Block::paragraph(Role::Headline, &result.headline),
        Block::paragraph(
            Role::Meta,
            format::attribute_summary(result, settings.min_cell),
        ),
        Block::Section(features_section(result, report)),
    ];
    blocks.extend(outcome_section(result, &settings.thresholds).map(Block::Section));
    blocks.extend(pairs_section(result).map(Block::Section));
    if let Some(whole) = &result.whole_set {
        blocks.push(Block::Section(whole_set_section(whole, result, settings)));
    }
    blocks.extend(compositions_section(result, settings.min_cell).map(Block::Section));
    Section {
        starts_page: true,
        ..Section::new(format!("Protected attribute: {}", result.protected), blocks)
    }
}

fn features_section<'a>(result: &'a ProtectedResult, report: &'a Report) -> Section<'a> {
    let ranked = format::ranked_features(result);
    let with_auc = ranked.iter().filter(|f| f.auc.is_some()).count();
    let caption = format!(
        "Out-of-fold AUC of the best surrogate per feature ({} of {} features drawn; \
         features without an AUC are listed in the table). Flags apply to the interval's lower bound.",
        with_auc.min(svg::MAX_BARS),
        ranked.len()
    );
    let table = Table {
        name: "features",
        columns: vec![
            Column::text("feature"),
            Column::text("kind"),
            Column::numeric("AUC [95% CI]"),
            Column::numeric("held-out info (nats)"),
            Column::numeric("AMI"),
            Column::text("flag"),
            Column::text("policy"),
        ],
        rows: ranked.iter().map(|f| feature_row(f)).collect(),
    };
    let mut blocks = vec![
        Block::Figure {
            chart: Chart::LeakageBars {
                title: format!("Leakage of {} per feature", result.protected),
                features: ranked.clone(),
                thresholds: &report.settings.thresholds,
            },
            caption,
        },
        Block::Table(table),
    ];
    blocks.extend(roc_section(result, &ranked).map(Block::Section));
    Section::new("Features ranked by AUC", blocks)
}

fn feature_row(feature: &FeatureResult) -> Row {
    vec![
        Cell::name(&feature.name),
        Cell::plain(&feature.kind),
        Cell::plain(format::auc_interval(
            feature.auc,
            feature.auc_low,
            feature.auc_high,
        )),
        Cell::plain(format::fixed(feature.heldout_info_nats, 4)),
        Cell::plain(format!("{:.4}", feature.ami)),
        Cell::verdict(feature.flag),
        Cell::styled(format::acceptance_marker(feature), CellStyle::Acceptance),
    ]
    .into()
}

fn roc_section<'a>(
    result: &'a ProtectedResult,
    ranked: &[&'a FeatureResult],
) -> Option<Section<'a>> {
    let mut series: Vec<RocSeries> = ranked
        .iter()
        .filter_map(|f| {
            f.roc.as_deref().map(|points| RocSeries {
                label: &f.name,
                auc: f.auc,
                points,
                emphasis: false,
            })
        })
        .take(MAX_ROC_CURVES)
        .collect();
    if let Some((whole, points)) = result
        .whole_set
        .as_ref()
        .and_then(|w| w.roc.as_deref().map(|p| (w, p)))
    {
        series.insert(
            0,
            RocSeries {
                label: "whole feature set",
                auc: Some(whole.auc),
                points,
                emphasis: true,
            },
        );
    }
    if series.is_empty() {
        return None;
    }
    let figure = Block::Figure {
        chart: Chart::Roc {
            title: format!("ROC curves for {}", result.protected),
            series,
        },
        caption: "ROC curves of the best out-of-fold surrogates; the heavy line is the whole \
                  feature set, the dashed diagonal is chance."
            .to_owned(),
    };
    Some(Section::new("ROC curves", vec![figure]).full_only())
}

/// With an outcome: each feature's leakage beside its value for the outcome
/// and its leakage among people with the same outcome (features in AUC order),
/// the map of the two, and each feature's reading of the map.
fn outcome_section<'a>(
    result: &'a ProtectedResult,
    thresholds: &'a Thresholds,
) -> Option<Section<'a>> {
    let ranked = format::ranked_features(result);
    let rows: Vec<Row> = ranked
        .iter()
        .filter_map(|f| {
            let o = f.outcome.as_ref()?;
            let gain = match (o.gain_over_protected, o.gain_low, o.gain_high) {
                (Some(g), Some(l), Some(h)) if l < h => format!(
                    "{} [{}, {}]",
                    format::signed(g, 3),
                    format::signed(l, 3),
                    format::signed(h, 3)
                ),
                (Some(g), _, _) => format!("{} [not estimable]", format::signed(g, 3)),
                _ => format::NOT_COMPUTED.to_owned(),
            };
            Some(Row::from(vec![
                Cell::name(&f.name),
                Cell::plain(format::auc_interval(f.auc, f.auc_low, f.auc_high)),
                Cell::plain(format::auc_interval(o.auc, o.auc_low, o.auc_high)),
                Cell::plain(gain),
                Cell::plain(format::auc_interval(
                    o.protected_auc_within_outcome,
                    o.protected_auc_within_outcome_low,
                    o.protected_auc_within_outcome_high,
                )),
                Cell::verdict(f.flag),
                Cell::plain(
                    MapQuadrant::of(f, thresholds).map_or(format::NOT_COMPUTED, MapQuadrant::label),
                ),
            ]))
        })
        .collect();
    if rows.is_empty() {
        return None;
    }
    let table = Table {
        name: "outcome",
        columns: vec![
            Column::text("feature"),
            Column::numeric("leakage AUC [95% CI]"),
            Column::numeric("outcome AUC [95% CI]"),
            Column::numeric("outcome gain over the attribute [95% CI]"),
            Column::numeric("leakage within outcome [95% CI]"),
            Column::text("flag"),
            Column::text("reading"),
        ],
        rows,
    };
    let map = Block::Figure {
        chart: Chart::LeakageUtilityMap {
            title: format!("Leakage and legitimate value for {}", result.protected),
            features: ranked
                .iter()
                .copied()
                .filter(|f| f.outcome.is_some())
                .collect(),
            thresholds,
        },
        caption: format!(
            "Each feature by its leakage AUC (alone) and its outcome gain over the protected \
             attribute, with 95% intervals, coloured by flag. The dashed vertical line is the \
             review line ({:.2}), the dashed horizontal line zero gain; a feature's reading in \
             the table uses its intervals (leaks: the leakage interval reaches the review line; \
             adds value: the gain interval lies above 0).",
            thresholds.review_auc_low
        ),
    };
    let note = "A proxy whose outcome gain covers 0 carries nothing about the outcome that the \
                protected attribute does not: the first to remove. A proxy with a gain above 0 \
                needs a written justification, which is a legal judgment for the organisation \
                and its counsel, not for this screen.";
    Some(Section::new(
        "Leakage and legitimate value",
        vec![map, Block::Table(table), Block::paragraph(Role::Body, note)],
    ))
}

fn pairs_section(result: &ProtectedResult) -> Option<Section<'_>> {
    if result.pairs.is_empty() {
        return None;
    }
    let all = format::top_pairs(result, result.pairs.len());
    let top = &all[..all.len().min(TOP_PAIRS)];
    let table = Table {
        name: "pairs",
        columns: vec![
            Column::text("pair"),
            Column::numeric("AUC [95% CI]"),
            Column::numeric("gain [95% CI]"),
            Column::text("flag"),
        ],
        rows: top
            .iter()
            .map(|p| pair_row(format!("{} + {}", p.features[0], p.features[1]), p))
            .collect(),
    };
    let heading = format!(
        "Pairs with the largest gain (top {} of {})",
        top.len(),
        result.pairs.len()
    );
    let figure = Block::Figure {
        chart: Chart::PairHeatmap {
            title: format!("Pair gains for {}", result.protected),
            pairs: all.clone(),
        },
        caption: "Gain of each pair's AUC over its better single feature; warm cells are \
                  leakage that appears only jointly."
            .to_owned(),
    };
    Some(Section::new(heading, vec![figure, Block::Table(table)]))
}

/// A pair's row: `label`, its AUC with interval, its gain over the better
/// single feature and its verdict.
#[must_use]
pub fn pair_row(label: String, pair: &PairResult) -> Row {
    Row::from(vec![
        Cell::name(label),
        Cell::plain(format::auc_interval(
            Some(pair.auc),
            pair.auc_low,
            pair.auc_high,
        )),
        Cell::plain(format::gain_interval(pair)),
        Cell::verdict(pair.flag),
    ])
}

/// An AUC with its 95% interval.
#[must_use]
pub fn interval_cell(auc: f64, low: f64, high: f64) -> Cell {
    Cell::plain(format::auc_interval(Some(auc), Some(low), Some(high)))
}

fn whole_set_section<'a>(
    whole: &'a WholeSet,
    result: &ProtectedResult,
    settings: &Settings,
) -> Section<'a> {
    let hand_till = whole
        .hand_till
        .map(|m| format!(", Hand and Till's M {m:.3}"))
        .unwrap_or_default();
    let summary = format!(
        "Surrogate {} on {} features: AUC {}, balanced error rate {:.3}{hand_till}.",
        whole.surrogate,
        whole.features_used,
        format::auc_interval(Some(whole.auc), Some(whole.auc_low), Some(whole.auc_high)),
        whole.ber
    );
    let mut blocks = vec![Block::paragraph(Role::Body, summary)];
    if let Some(outcome) = &whole.outcome {
        let within = whole.protected_auc_within_outcome.as_ref().map_or_else(
            || format::NOT_COMPUTED.to_owned(),
            |w| format::auc_interval(Some(w.auc), Some(w.auc_low), Some(w.auc_high)),
        );
        blocks.push(Block::paragraph(
            Role::Body,
            format!(
                "Outcome AUC from every feature: {}; leakage AUC among people with the same \
                 outcome: {within}.",
                format::auc_interval(
                    Some(outcome.auc),
                    Some(outcome.auc_low),
                    Some(outcome.auc_high)
                )
            ),
        ));
    }
    blocks.extend(drop_one_section(whole).map(Block::Section));
    blocks.push(Block::Section(removal_section(
        whole,
        result,
        settings.target_auc,
    )));
    blocks.extend(frontier_section(whole, result, settings.max_utility_loss).map(Block::Section));
    Section::new("Whole feature set", blocks)
}

fn drop_one_section(whole: &WholeSet) -> Option<Section<'static>> {
    if whole.drop_one.is_empty() {
        return None;
    }
    let table = Table {
        name: "drop-one",
        columns: vec![
            Column::text("without"),
            Column::numeric("AUC [95% CI]"),
            Column::numeric("AUC lost"),
            Column::numeric("p (paired)"),
        ],
        rows: format::drop_one_by_loss(whole)
            .into_iter()
            .map(|d| {
                Row::from(vec![
                    Cell::plain(&d.feature),
                    interval_cell(d.auc, d.auc_low, d.auc_high),
                    Cell::plain(format::signed(d.delta, 3)),
                    Cell::plain(format::p_value(d.p_value)),
                ])
            })
            .collect(),
    };
    Some(Section::new("Drop-one ablation", vec![Block::Table(table)]).full_only())
}

fn removal_section<'a>(
    whole: &'a WholeSet,
    result: &ProtectedResult,
    target_auc: f64,
) -> Section<'a> {
    let mut blocks = vec![Block::Figure {
        chart: Chart::RemovalSteps {
            title: format!("Removal plan for {}", result.protected),
            whole,
            target_auc,
        },
        caption: "Whole-set AUC after each greedy removal, with its 95% interval (fitting \
                  variance included); dashed line: target."
            .to_owned(),
    }];
    if !whole.removal_plan.is_empty() {
        blocks.push(Block::Table(plan_table(whole)));
    }
    blocks.push(Block::paragraph(
        Role::Body,
        format::removal_outcome(whole, target_auc),
    ));
    Section::new(format!("Removal plan (target AUC {target_auc:.2})"), blocks)
}

/// The plan's steps; with an outcome, the outcome AUC left after each.
fn plan_table(whole: &WholeSet) -> Table {
    let with_outcome = whole
        .removal_plan
        .iter()
        .any(|s| s.outcome_auc_after.is_some());
    let mut columns = vec![
        Column::numeric("step"),
        Column::text("remove"),
        Column::numeric("AUC after [95% CI]"),
    ];
    if with_outcome {
        columns.push(Column::numeric("outcome AUC after [95% CI]"));
    }
    let rows = whole
        .removal_plan
        .iter()
        .enumerate()
        .map(|(i, s)| {
            let mut cells = vec![
                Cell::plain((i + 1).to_string()),
                Cell::name(&s.remove),
                interval_cell(s.auc_after, s.auc_low, s.auc_high),
            ];
            if with_outcome {
                cells.push(Cell::plain(format::auc_interval(
                    s.outcome_auc_after,
                    s.outcome_auc_low,
                    s.outcome_auc_high,
                )));
            }
            Row::from(cells)
        })
        .collect();
    Table {
        name: "plan",
        columns,
        rows,
    }
}

/// With an outcome: the feature sets the plan visits as leakage against
/// utility, and the set named within the tolerance.
fn frontier_section<'a>(
    whole: &'a WholeSet,
    result: &ProtectedResult,
    max_loss: Option<f64>,
) -> Option<Section<'a>> {
    let max_loss = max_loss?;
    if whole.frontier.is_empty() {
        return None;
    }
    let named = whole.recommended_within_tolerance.as_ref();
    let full = whole.frontier[0].outcome.auc;
    let rows = whole
        .frontier
        .iter()
        .map(|p| {
            let standing = if named == Some(p) {
                "named set"
            } else if p.outcome.auc >= full - max_loss {
                "within tolerance"
            } else {
                "beyond tolerance"
            };
            Row::from(vec![
                Cell::plain(p.steps.to_string()),
                Cell::name(format::frontier_set(p)),
                interval_cell(p.leakage.auc, p.leakage.auc_low, p.leakage.auc_high),
                interval_cell(p.outcome.auc, p.outcome.auc_low, p.outcome.auc_high),
                Cell::plain(standing),
            ])
        })
        .collect();
    let mut blocks = vec![
        Block::Figure {
            chart: Chart::Frontier {
                title: format!("Leakage against utility for {}", result.protected),
                whole,
                max_loss,
            },
            caption: format!(
                "Each feature set the removal plan visits (numbered by step; `all` is every \
                 feature) by its leakage AUC and its outcome AUC, with 95% intervals. Dashed \
                 line: the full set's outcome AUC less the tolerated loss ({max_loss:.3}); the \
                 ringed set leaks least above it."
            ),
        },
        Block::Table(Table {
            name: "frontier",
            columns: vec![
                Column::numeric("steps"),
                Column::text("feature set"),
                Column::numeric("leakage AUC [95% CI]"),
                Column::numeric("outcome AUC [95% CI]"),
                Column::text("tolerance"),
            ],
            rows,
        }),
    ];
    blocks.extend(
        format::frontier_choice(whole, max_loss).map(|text| Block::paragraph(Role::Body, text)),
    );
    Some(Section::new("Leakage against utility", blocks))
}

fn compositions_section(result: &ProtectedResult, min_cell: u64) -> Option<Section<'static>> {
    let flagged = format::flagged_compositions(result);
    if flagged.is_empty() {
        return None;
    }
    let class_labels: Vec<&str> = result.levels.iter().map(|l| l.label.as_str()).collect();
    let mut blocks: Vec<Block> = flagged
        .into_iter()
        .map(|(feature, levels)| {
            let table = composition_table(levels, &class_labels, min_cell);
            Block::Section(Section {
                heading: Some(Heading {
                    text: feature.name.clone(),
                    verdict: Some(feature.flag),
                }),
                ..Section::untitled(vec![Block::Table(table)])
            })
        })
        .collect();
    blocks.push(Block::paragraph(
        Role::Footnote,
        suppression_footnote(min_cell),
    ));
    Some(Section::new("Level composition of flagged features", blocks).full_only())
}

/// What the suppressed-cell placeholder means.
fn suppression_footnote(min_cell: u64) -> String {
    format!(
        "{}: fewer than {min_cell} rows (in the level, or of one group in it); that figure, and \
         every share that would reveal it, is withheld.",
        format::suppressed(min_cell)
    )
}

/// Rows and per-class shares of each level; a suppressed count suppresses
/// the whole row, since its shares would reveal the small counts.
#[must_use]
pub fn composition_table(
    levels: &[LevelComposition],
    class_labels: &[&str],
    min_cell: u64,
) -> Table {
    let mut columns = vec![Column::text("level"), Column::numeric("rows")];
    columns.extend(
        class_labels
            .iter()
            .map(|l| Column::numeric(format!("share {l}"))),
    );
    let suppressed = || Cell::styled(format::suppressed(min_cell), CellStyle::Suppressed);
    let rows = levels
        .iter()
        .map(|level| {
            let mut cells = vec![Cell::plain(&level.label)];
            match level.count {
                None => cells.extend((0..=level.shares.len()).map(|_| suppressed())),
                Some(count) => {
                    cells.push(Cell::plain(count.to_string()));
                    cells.extend(level.shares.iter().map(|share| {
                        share.map_or_else(suppressed, |s| Cell::plain(format::percent(s)))
                    }));
                }
            }
            Row::from(cells)
        })
        .collect();
    Table {
        name: "composition",
        columns,
        rows,
    }
}

fn list_section(heading: &str, items: Vec<String>) -> Option<Section<'static>> {
    (!items.is_empty()).then(|| Section::new(heading, vec![Block::List(items)]))
}

/// Names joined by commas, or `none`.
#[must_use]
pub fn names_or_none(list: &[String]) -> String {
    if list.is_empty() {
        "none".to_owned()
    } else {
        list.join(", ")
    }
}

/// Label/value rows without column titles.
fn facts(rows: Vec<(&str, Cell)>) -> Block<'static> {
    Block::KeyValues(KeyValues {
        labels: None,
        rows: rows.into_iter().map(|(k, v)| (k.to_owned(), v)).collect(),
    })
}

fn policy_section(policy: &PolicyOutcome) -> Section<'static> {
    let facts = facts(vec![
        ("file", Cell::plain(&policy.file)),
        ("SHA-256", Cell::literal(&policy.sha256)),
        ("evaluated on", Cell::plain(&policy.evaluated_on)),
        (
            "accepted",
            Cell::plain(names_or_none(&policy.accepted_features)),
        ),
        (
            "expired acceptances",
            Cell::plain(names_or_none(&policy.expired_acceptances)),
        ),
        ("failing", Cell::plain(names_or_none(&policy.failing))),
    ]);
    Section::new("Review policy", vec![facts]).full_only()
}

fn added_source_section(added: &AddedSource) -> Section<'static> {
    let pair = |a: usize, b: usize| Cell::plain(format!("{a} / {b}"));
    let facts = facts(vec![
        ("source", Cell::plain(&added.source)),
        ("SHA-256", Cell::literal(&added.sha256)),
        ("join key", Cell::plain(&added.key)),
        (
            "new columns",
            Cell::plain(names_or_none(&added.new_columns)),
        ),
        (
            "rows matched",
            Cell::plain(format!("{} of {}", added.matched_rows, added.base_rows)),
        ),
        (
            "unmatched (base / source)",
            pair(added.unmatched_base_rows, added.unmatched_source_rows),
        ),
        (
            "duplicate keys (base / source)",
            pair(added.duplicate_keys_in_base, added.duplicate_keys_in_source),
        ),
    ]);
    let interval = |a: &AucInterval| interval_cell(a.auc, a.auc_low, a.auc_high);
    let effects = Table {
        name: "added",
        columns: vec![
            Column::text("protected"),
            Column::numeric("AUC without"),
            Column::numeric("AUC with"),
            Column::numeric("difference"),
            Column::numeric("p (paired)"),
        ],
        rows: added
            .per_protected
            .iter()
            .map(|e| {
                Row::from(vec![
                    Cell::plain(&e.protected),
                    interval(&e.auc_without),
                    interval(&e.auc_with),
                    Cell::plain(format::signed(e.difference, 3)),
                    Cell::plain(format::p_value(e.p_value)),
                ])
            })
            .collect(),
    };
    Section::new("Added source", vec![facts, Block::Table(effects)])
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::Renderer;
    use crate::report::html::HtmlRenderer;
    use crate::report::markdown::MarkdownRenderer;
    use crate::report::page::Backend;
    use crate::report::sample::{AWKWARD_NAME, sample_report, sample_report_with_outcome};
    use crate::report::terminal::TerminalRenderer;

    #[test]
    fn suppressed_count_withholds_every_share_of_the_level() {
        let level = LevelComposition {
            label: "rare".into(),
            count: None,
            shares: vec![Some(0.25), Some(0.75)],
        };
        let table = composition_table(&[level], &["a", "b"], 10);
        let cells = &table.rows[0].cells;
        assert_eq!(cells.len(), table.columns.len());
        assert!(
            cells[1..]
                .iter()
                .all(|c| c.style == CellStyle::Suppressed && c.text == "<10")
        );
    }

    #[test]
    fn a_section_added_to_the_page_reaches_every_format() {
        let report = sample_report();
        let mut page = report_page(&report);
        page.sections.push(Section::new(
            "Outcome check",
            vec![Block::paragraph(
                Role::Body,
                format!("About {AWKWARD_NAME}."),
            )],
        ));
        let md = MarkdownRenderer.render_page(&page);
        let html = HtmlRenderer.render_page(&page);
        let text = TerminalRenderer { colour: false }.render_page(&page);
        for out in [&md, &html, &text] {
            assert!(out.contains("Outcome check"), "{out}");
        }
        assert!(!md.contains(AWKWARD_NAME) && !html.contains(AWKWARD_NAME));
    }

    #[test]
    fn full_detail_stays_out_of_the_terminal_summary() {
        let report = sample_report();
        let terminal = TerminalRenderer { colour: false }.render(&report);
        let markdown = MarkdownRenderer.render(&report);
        for full_only in [
            "Dataset and settings",
            "Drop-one ablation",
            "Level composition",
        ] {
            assert!(markdown.contains(full_only), "{full_only}");
            assert!(!terminal.contains(full_only), "{full_only}");
        }
    }

    #[test]
    fn the_outcome_map_frontier_and_plan_columns_reach_every_format() {
        let report = sample_report_with_outcome();
        let md = MarkdownRenderer.render(&report);
        let html = HtmlRenderer.render(&report);
        let text = TerminalRenderer { colour: false }.render(&report);
        for out in [&md, &html, &text] {
            for needle in [
                "outcome AUC after",
                "Leakage against utility",
                "named set",
                "leaks, adds nothing: remove first",
                "leaks and adds value: justify in writing",
            ] {
                assert!(out.contains(needle), "{needle} missing: {out}");
            }
        }
        assert!(html.contains("chart-map") && html.contains("chart-frontier"));
        assert!(!md.contains(AWKWARD_NAME) && !html.contains(AWKWARD_NAME));
    }
}
