//! `report.html`: one self-contained page (inline CSS and SVG; no script,
//! font, image or address of any kind) that reads on screen and prints on A4.

use super::format::{self, Cell, FEATURE_HEADERS, PAIR_HEADERS, TOP_PAIRS, escape_markup as esc};
use super::svg::{self, MAX_ROC_CURVES, RocSeries};
use super::{
    AddedSource, AucInterval, Flag, LevelComposition, PolicyOutcome, ProtectedResult, Renderer,
    Report, WholeSet,
};

/// Self-contained HTML renderer.
pub struct HtmlRenderer;

/// The whole stylesheet: screen layout, then print rules for A4.
const STYLE: &str = r#"
:root { --ink: #1f2933; --muted: #5f6b77; --rule: #d5dae0; --paper: #ffffff; --tint: #f4f6f8; }
* { box-sizing: border-box; }
body { margin: 0; background: var(--paper); color: var(--ink);
  font: 15px/1.5 system-ui, "Segoe UI", "DejaVu Sans", sans-serif; }
main { max-width: 980px; margin: 0 auto; padding: 24px 28px 48px; }
h1 { font-size: 1.7em; margin: 0 0 4px; }
h2 { font-size: 1.35em; margin: 36px 0 8px; padding-bottom: 4px; border-bottom: 2px solid var(--ink); }
h3 { font-size: 1.1em; margin: 26px 0 6px; }
h4 { font-size: 1em; margin: 18px 0 4px; }
.subtitle, .meta, figcaption, .footnote { color: var(--muted); }
.caution { border: 2px solid #8a5a00; background: #fff6e0; padding: 12px 16px; margin: 18px 0; border-radius: 4px; }
.headline { font-size: 1.15em; font-weight: 600; background: var(--tint); border-left: 5px solid var(--ink); padding: 8px 14px; }
table { border-collapse: collapse; margin: 8px 0 14px; font-size: 0.9em; }
th, td { padding: 4px 10px; border-bottom: 1px solid var(--rule); text-align: left; vertical-align: top; }
th { background: var(--tint); font-weight: 600; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
td:first-child { overflow-wrap: anywhere; max-width: 320px; }
table.settings th { width: 150px; }
code { font-family: ui-monospace, "DejaVu Sans Mono", monospace; font-size: 0.92em; overflow-wrap: anywhere; }
.flag { display: inline-block; min-width: 54px; padding: 0 6px; border-radius: 3px; color: #fff; text-align: center; font-size: 0.85em; font-weight: 600; }
.flag-proxy { background: #b3261e; }
.flag-review { background: #d98c00; }
.flag-clear { background: #5e8f6e; }
.accepted { font-weight: 600; }
td.suppressed { color: var(--muted); font-style: italic; }
figure { margin: 14px 0 20px; }
svg.chart { display: block; width: 100%; max-width: 860px; height: auto; }
svg.chart text { font-family: system-ui, "DejaVu Sans", sans-serif; }
ul { padding-left: 22px; }
@page { size: A4; margin: 14mm 12mm; }
@media print {
  body { font-size: 10pt; }
  main { max-width: none; padding: 0; }
  section.protected { break-before: page; }
  svg.chart { max-width: 100%; }
  h2, h3, h4 { break-after: avoid; }
  figure, .caution, .headline, table.composition, table.settings { break-inside: avoid; }
  tr { break-inside: avoid; }
  thead { display: table-header-group; }
  * { print-color-adjust: exact; -webkit-print-color-adjust: exact; }
}
"#;

/// A header row and body rows of already-escaped cells; `numeric` columns align right.
fn table(class: &str, headers: &[&str], rows: &[Vec<String>], numeric: &[usize]) -> String {
    let align = |c: usize| {
        if numeric.contains(&c) {
            r#" class="num""#
        } else {
            ""
        }
    };
    let head: String = headers
        .iter()
        .enumerate()
        .map(|(c, h)| format!("<th{}>{}</th>", align(c), esc(h)))
        .collect();
    let body: String = rows
        .iter()
        .map(|row| {
            let cells: String = row
                .iter()
                .enumerate()
                .map(|(c, cell)| format!("<td{}>{cell}</td>", align(c)))
                .collect();
            format!("<tr>{cells}</tr>\n")
        })
        .collect();
    format!(r#"<table class="{class}"><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"#)
}

/// Label/value rows, values already escaped.
fn key_values(class: &str, rows: &[(&str, String)]) -> String {
    let body: String = rows
        .iter()
        .map(|(k, v)| format!("<tr><th>{}</th><td>{v}</td></tr>\n", esc(k)))
        .collect();
    format!(r#"<table class="{class}"><tbody>{body}</tbody></table>"#)
}

fn flag_badge(flag: Flag) -> String {
    format!(r#"<span class="flag flag-{0}">{0}</span>"#, flag.as_str())
}

/// An escaped name that may wrap after `_`, `.` or `|` in narrow table columns.
fn breakable(name: &str) -> String {
    let mut out = String::new();
    for c in name.chars() {
        out.push_str(&esc(c.encode_utf8(&mut [0; 4])));
        if matches!(c, '_' | '.' | '|') {
            out.push_str("<wbr>");
        }
    }
    out
}

fn code(text: &str) -> String {
    format!("<code>{}</code>", esc(text))
}

/// A chart with a caption below it.
fn figure(chart: String, caption: &str) -> String {
    format!(
        "<figure>{chart}<figcaption>{}</figcaption></figure>\n",
        esc(caption)
    )
}

fn names(list: &[String]) -> String {
    if list.is_empty() {
        return "none".to_owned();
    }
    list.iter().map(|n| esc(n)).collect::<Vec<_>>().join(", ")
}

fn interval(a: &AucInterval) -> String {
    format::auc_interval(Some(a.auc), Some(a.auc_low), Some(a.auc_high))
}

fn settings_section(report: &Report) -> String {
    let rows: Vec<(&str, String)> = format::settings(report)
        .into_iter()
        .map(|s| {
            let value = if s.literal {
                code(&s.value)
            } else {
                esc(&s.value)
            };
            (s.label, value)
        })
        .collect();
    format!(
        "<section><h2>Dataset and settings</h2>{}</section>\n",
        key_values("settings", &rows)
    )
}

fn protected_section(result: &ProtectedResult, report: &Report) -> String {
    let mut out = format!(
        r#"<section class="protected"><h2>Protected attribute: {}</h2><p class="headline">{}</p><p class="meta">{}</p>"#,
        esc(&result.protected),
        esc(&result.headline),
        format::attribute_summary(result, report.settings.min_cell, esc)
    );
    out.push_str(&features_part(result, report));
    out.push_str(&pairs_part(result));
    if let Some(whole) = &result.whole_set {
        out.push_str(&whole_set_part(whole, result, report.settings.target_auc));
    }
    out.push_str(&compositions_part(result, report.settings.min_cell));
    out.push_str("</section>\n");
    out
}

fn features_part(result: &ProtectedResult, report: &Report) -> String {
    let ranked = format::ranked_features(result);
    let with_auc = ranked.iter().filter(|f| f.auc.is_some()).count();
    let shown = with_auc.min(svg::MAX_BARS);
    let bars = svg::leakage_bars(
        &format!("Leakage of {} per feature", result.protected),
        &ranked,
        &report.settings.thresholds,
    );
    let caption = format!(
        "Out-of-fold AUC of the best surrogate per feature ({shown} of {} features drawn; \
         features without an AUC are listed in the table). Flags apply to the interval's lower bound.",
        ranked.len()
    );
    let rows: Vec<Vec<String>> = ranked
        .iter()
        .map(|f| {
            let [name, kind, auc, info, ami, _, policy] = format::feature_cells(f);
            vec![
                breakable(&name),
                esc(&kind),
                auc,
                info,
                ami,
                flag_badge(f.flag),
                format!(r#"<span class="accepted">{}</span>"#, esc(&policy)),
            ]
        })
        .collect();
    let mut out = format!("<h3>Features ranked by AUC</h3>{}", figure(bars, &caption));
    out.push_str(&table("features", &FEATURE_HEADERS, &rows, &[2, 3, 4]));
    out.push_str(&roc_part(result, &ranked));
    out
}

fn roc_part(result: &ProtectedResult, ranked: &[&super::FeatureResult]) -> String {
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
        return String::new();
    }
    let chart = svg::roc_curves(&format!("ROC curves for {}", result.protected), &series);
    String::from("<h4>ROC curves</h4>")
        + &figure(
            chart,
            "ROC curves of the best out-of-fold surrogates; the heavy line is the whole feature set, the dashed diagonal is chance.",
        )
}

fn pairs_part(result: &ProtectedResult) -> String {
    if result.pairs.is_empty() {
        return String::new();
    }
    let all = format::top_pairs(result, result.pairs.len());
    let chart = svg::pair_heatmap(&format!("Pair gains for {}", result.protected), &all);
    let top = &all[..all.len().min(TOP_PAIRS)];
    let rows: Vec<Vec<String>> = top
        .iter()
        .map(|p| {
            let [pair, auc, gain, _] = format::pair_cells(p);
            vec![breakable(&pair), auc, gain, flag_badge(p.flag)]
        })
        .collect();
    format!(
        "<h3>Pairs with the largest gain (top {} of {})</h3>{}{}",
        top.len(),
        result.pairs.len(),
        figure(
            chart,
            "Gain of each pair's AUC over its better single feature; warm cells are leakage that appears only jointly."
        ),
        table("pairs", &PAIR_HEADERS, &rows, &[1, 2])
    )
}

fn whole_set_part(whole: &WholeSet, result: &ProtectedResult, target_auc: f64) -> String {
    let hand_till = whole
        .hand_till
        .map(|m| format!(", Hand and Till's M {m:.3}"))
        .unwrap_or_default();
    let mut out = format!(
        "<h3>Whole feature set</h3><p>Surrogate {} on {} features: AUC {}, balanced error rate {:.3}{hand_till}.</p>",
        esc(&whole.surrogate),
        whole.features_used,
        format::auc_interval(Some(whole.auc), Some(whole.auc_low), Some(whole.auc_high)),
        whole.ber
    );
    out.push_str(&drop_one_table(whole));
    out.push_str(&format!(
        "<h4>Removal plan (target AUC {target_auc:.2})</h4>"
    ));
    let chart = svg::removal_steps(
        &format!("Removal plan for {}", result.protected),
        whole,
        target_auc,
    );
    out.push_str(&figure(
        chart,
        "Whole-set AUC after each greedy removal, with its 95% DeLong interval; dashed line: target.",
    ));
    let rows: Vec<Vec<String>> = whole
        .removal_plan
        .iter()
        .enumerate()
        .map(|(i, s)| {
            vec![
                (i + 1).to_string(),
                breakable(&s.remove),
                format::auc_interval(Some(s.auc_after), Some(s.auc_low), Some(s.auc_high)),
            ]
        })
        .collect();
    if !rows.is_empty() {
        out.push_str(&table(
            "plan",
            &["step", "remove", "AUC after [95% CI]"],
            &rows,
            &[0, 2],
        ));
    }
    out.push_str(&format!(
        "<p>{}</p>",
        esc(&format::removal_outcome(whole, target_auc))
    ));
    out
}

fn drop_one_table(whole: &WholeSet) -> String {
    if whole.drop_one.is_empty() {
        return String::new();
    }
    let mut drops: Vec<_> = whole.drop_one.iter().collect();
    drops.sort_by(|a, b| b.delta.total_cmp(&a.delta));
    let rows: Vec<Vec<String>> = drops
        .into_iter()
        .map(|d| {
            vec![
                esc(&d.feature),
                format::auc_interval(Some(d.auc), Some(d.auc_low), Some(d.auc_high)),
                format::signed(d.delta, 3),
                format::fixed(d.p_value, 4),
            ]
        })
        .collect();
    format!(
        "<h4>Drop-one ablation</h4>{}",
        table(
            "drop-one",
            &["without", "AUC [95% CI]", "AUC lost", "p (DeLong)"],
            &rows,
            &[1, 2, 3]
        )
    )
}

fn compositions_part(result: &ProtectedResult, min_cell: u64) -> String {
    let flagged = format::flagged_compositions(result);
    if flagged.is_empty() {
        return String::new();
    }
    let mut out = String::from("<h3>Level composition of flagged features</h3>");
    for (feature, levels) in flagged {
        out.push_str(&format!(
            "<h4>{} {}</h4>{}",
            esc(&feature.name),
            flag_badge(feature.flag),
            composition_table(levels, result, min_cell)
        ));
    }
    out.push_str(&format!(
        r#"<p class="footnote"><sup>*</sup> {}: fewer than {min_cell} rows; the count and the group shares of that level are withheld.</p>"#,
        esc(&format::suppressed(min_cell))
    ));
    out
}

fn composition_table(
    levels: &[LevelComposition],
    result: &ProtectedResult,
    min_cell: u64,
) -> String {
    let share_headers: Vec<String> = result
        .levels
        .iter()
        .map(|l| format!("share {}", l.label))
        .collect();
    let mut headers = vec!["level", "rows"];
    headers.extend(share_headers.iter().map(String::as_str));
    let suppressed = format!(
        r#"<span class="suppressed">{}<sup>*</sup></span>"#,
        esc(&format::suppressed(min_cell))
    );
    let rows: Vec<Vec<String>> = levels
        .iter()
        .map(|level| {
            std::iter::once(esc(&level.label))
                .chain(
                    format::composition_cells(level)
                        .into_iter()
                        .map(|c| match c {
                            Cell::Value(v) => v,
                            Cell::Suppressed => suppressed.clone(),
                        }),
                )
                .collect()
        })
        .collect();
    let numeric: Vec<usize> = (1..headers.len()).collect();
    table("composition", &headers, &rows, &numeric)
}

fn list_section(heading: &str, items: &[String]) -> String {
    if items.is_empty() {
        return String::new();
    }
    let items: String = items.iter().map(|i| format!("<li>{i}</li>")).collect();
    format!(
        "<section><h2>{}</h2><ul>{items}</ul></section>\n",
        esc(heading)
    )
}

fn policy_section(policy: &PolicyOutcome) -> String {
    let rows = [
        ("file", esc(&policy.file)),
        ("SHA-256", code(&policy.sha256)),
        ("evaluated on", esc(&policy.evaluated_on)),
        ("accepted", names(&policy.accepted_features)),
        ("expired acceptances", names(&policy.expired_acceptances)),
        ("failing", names(&policy.failing)),
    ];
    format!(
        "<section><h2>Review policy</h2>{}</section>\n",
        key_values("settings", &rows)
    )
}

fn added_source_section(added: &AddedSource) -> String {
    let rows = [
        ("source", esc(&added.source)),
        ("SHA-256", code(&added.sha256)),
        ("join key", esc(&added.key)),
        ("new columns", names(&added.new_columns)),
        (
            "rows matched",
            format!("{} of {}", added.matched_rows, added.base_rows),
        ),
        (
            "unmatched (base / source)",
            format!(
                "{} / {}",
                added.unmatched_base_rows, added.unmatched_source_rows
            ),
        ),
        (
            "duplicate keys (base / source)",
            format!(
                "{} / {}",
                added.duplicate_keys_in_base, added.duplicate_keys_in_source
            ),
        ),
    ];
    let effects: Vec<Vec<String>> = added
        .per_protected
        .iter()
        .map(|e| {
            vec![
                esc(&e.protected),
                interval(&e.auc_without),
                interval(&e.auc_with),
                format::signed(e.difference, 3),
                e.p_value
                    .map_or_else(|| "n/a".to_string(), |p| format!("{p:.4}")),
            ]
        })
        .collect();
    format!(
        "<section><h2>Added source</h2>{}{}</section>\n",
        key_values("settings", &rows),
        table(
            "added",
            &[
                "protected",
                "AUC without",
                "AUC with",
                "difference",
                "p (DeLong)"
            ],
            &effects,
            &[1, 2, 3, 4]
        )
    )
}

impl Renderer for HtmlRenderer {
    fn file_name(&self) -> &'static str {
        "report.html"
    }

    fn render(&self, report: &Report) -> String {
        let source = esc(&report.dataset.source);
        let mut out = format!(
            "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\
             <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\
             <title>Proxy leakage screen: {source}</title><style>{STYLE}</style></head>\n<body><main>\
             <h1>Proxy leakage screen: {source}</h1><p class=\"subtitle\">{} {}; {} of {} rows used.</p>\
             <aside class=\"caution\" role=\"note\"><strong>Caution.</strong> {}</aside>\n",
            esc(&report.tool.name),
            esc(&report.tool.version),
            report.dataset.rows_used,
            report.dataset.rows,
            esc(&report.caution)
        );
        out.push_str(&settings_section(report));
        for result in &report.results {
            out.push_str(&protected_section(result, report));
        }
        let skipped: Vec<String> = report
            .skipped_columns
            .iter()
            .map(|c| format!("{}: {}", esc(&c.name), esc(&c.reason)))
            .collect();
        out.push_str(&list_section("Skipped columns", &skipped));
        let notes: Vec<String> = report.notes.iter().map(|n| esc(n)).collect();
        out.push_str(&list_section("Notes", &notes));
        if let Some(policy) = &report.policy {
            out.push_str(&policy_section(policy));
        }
        if let Some(added) = &report.added_source {
            out.push_str(&added_source_section(added));
        }
        out.push_str("</main></body></html>\n");
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::sample::{AWKWARD_NAME, SUPPRESSED_SHARE, sample_report};

    fn render() -> String {
        HtmlRenderer.render(&sample_report())
    }

    /// Every `<svg …>…</svg>` fragment of the page.
    fn charts(html: &str) -> Vec<&str> {
        html.match_indices("<svg")
            .map(|(start, _)| {
                let end = html[start..].find("</svg>").unwrap() + start;
                &html[start..end]
            })
            .collect()
    }

    #[test]
    fn has_the_five_chart_kinds() {
        let html = render();
        for kind in ["chart-leakage", "chart-roc", "chart-pairs", "chart-removal"] {
            assert!(html.contains(kind), "missing {kind}");
        }
        assert!(html.contains(r#"<table class="composition">"#));
    }

    #[test]
    fn every_chart_has_a_title_first_and_axis_labels() {
        let html = render();
        let charts = charts(&html);
        assert!(charts.len() >= 4);
        for chart in charts {
            let opening_end = chart.find('>').unwrap();
            assert!(
                chart[opening_end + 1..].starts_with("<title>"),
                "{chart:.80}"
            );
            assert!(chart.contains(r#"class="axis-label""#), "{chart:.80}");
        }
    }

    #[test]
    fn is_self_contained() {
        let html = render();
        for forbidden in [
            "http://", "https://", "src=", "<link", "<script", "xmlns", "url(",
        ] {
            assert!(!html.contains(forbidden), "found {forbidden}");
        }
    }

    #[test]
    fn escapes_awkward_column_names() {
        let html = render();
        assert!(!html.contains(AWKWARD_NAME));
        assert!(html.contains("&lt;b&gt;&amp;&quot;x&quot;"));
        assert!(html.contains("région|code"));
    }

    #[test]
    fn suppressed_cells_show_placeholder_and_hide_values() {
        let html = render();
        let row_start = html.find("<td>island</td>").unwrap();
        let row = &html[row_start..row_start + html[row_start..].find("</tr>").unwrap()];
        assert_eq!(row.matches("&lt;10<sup>*</sup>").count(), 3);
        assert!(!html.contains(&format::percent(SUPPRESSED_SHARE)));
        assert!(!html.contains(&format::percent(1.0 - SUPPRESSED_SHARE)));
        assert!(html.contains(r#"<p class="footnote">"#));
    }

    #[test]
    fn caution_precedes_the_results_and_settings_are_listed() {
        let html = render();
        let caution = html.find(r#"class="caution""#).unwrap();
        assert!(caution < html.find("Protected attribute:").unwrap());
        assert!(html.contains(&"9f2c".repeat(16)));
        assert!(html.contains("batch_id: constant"));
        assert!(html.contains("identifier-like column"));
    }
}
