//! `report.html`: one self-contained page (inline CSS and SVG; no script,
//! font, image or address of any kind) that reads on screen and prints on A4.

use super::Flag;
use super::format::escape_markup as esc;
use super::page::{
    Backend, Cell, CellStyle, Chart, Heading, KeyValues, Page, Role, Section, Table, Tone,
    verdict_tone,
};
use super::svg;

/// Self-contained HTML renderer.
pub struct HtmlRenderer;

/// The whole stylesheet: screen layout, then print rules for A4.
const STYLE: &str = r#"
:root { --ink: #1f2933; --muted: #5f6b77; --rule: #d5dae0; --paper: #ffffff; --tint: #f4f6f8; }
* { box-sizing: border-box; }
body { margin: 0; background: var(--paper); color: var(--ink);
  font: 15px/1.5 system-ui, "Segoe UI", "DejaVu Sans", sans-serif; }
main { max-width: 1080px; margin: 0 auto; padding: 24px 28px 48px; }
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
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; }
td.num { white-space: nowrap; }
td:first-child { overflow-wrap: break-word; max-width: 320px; }
.table-wrap { overflow-x: auto; }
table.settings th { width: 150px; }
code { font-family: ui-monospace, "DejaVu Sans Mono", monospace; font-size: 0.92em; overflow-wrap: anywhere; }
.tone-alarm { color: #b3261e; }
.tone-caution { color: #d98c00; }
.tone-calm { color: #5e8f6e; }
.tone-muted { color: #6b717a; }
.flag { display: inline-block; min-width: 54px; padding: 0 6px; border-radius: 3px; color: #fff; text-align: center; font-size: 0.85em; font-weight: 600; }
.flag.tone-alarm { background: #b3261e; }
.flag.tone-caution { background: #d98c00; }
.flag.tone-calm { background: #5e8f6e; }
.flag.tone-muted { background: #8a8f98; }
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

/// The CSS class of a tone.
fn tone_class(tone: Tone) -> &'static str {
    match tone {
        Tone::Alarm => "tone-alarm",
        Tone::Caution => "tone-caution",
        Tone::Calm => "tone-calm",
        Tone::Muted => "tone-muted",
    }
}

fn verdict_badge(flag: Flag) -> String {
    format!(
        r#"<span class="flag {}">{}</span>"#,
        tone_class(verdict_tone(flag)),
        flag.as_str()
    )
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

fn cell(cell: &Cell) -> String {
    let text = &cell.text;
    match cell.style {
        CellStyle::Plain => esc(text),
        CellStyle::Name => breakable(text),
        CellStyle::Literal => format!("<code>{}</code>", esc(text)),
        CellStyle::Verdict(flag) => verdict_badge(flag),
        CellStyle::Acceptance => format!(r#"<span class="accepted">{}</span>"#, esc(text)),
        CellStyle::Suppressed => {
            format!(
                r#"<span class="suppressed">{}<sup>*</sup></span>"#,
                esc(text)
            )
        }
        CellStyle::Toned(tone) => {
            format!(r#"<span class="{}">{}</span>"#, tone_class(tone), esc(text))
        }
    }
}

/// The SVG of a chart.
fn svg_of(chart: &Chart) -> String {
    match chart {
        Chart::LeakageBars {
            title,
            features,
            thresholds,
        } => svg::leakage_bars(title, features, thresholds),
        Chart::Roc { title, series } => svg::roc_curves(title, series),
        Chart::PairHeatmap { title, pairs } => svg::pair_heatmap(title, pairs),
        Chart::RemovalSteps {
            title,
            whole,
            target_auc,
        } => svg::removal_steps(title, whole, *target_auc),
        Chart::LeakageUtilityMap {
            title,
            features,
            thresholds,
        } => svg::tradeoff::leakage_utility_map(title, features, thresholds),
        Chart::Frontier {
            title,
            whole,
            max_loss,
        } => svg::tradeoff::frontier(title, whole, *max_loss),
        Chart::RatePanels { title, panels } => svg::groups::rate_panels(title, panels),
        Chart::GroupLines { title, axes, lines } => svg::groups::group_lines(title, axes, lines),
    }
}

fn heading(level: usize, heading: &Heading) -> String {
    let badge = heading
        .verdict
        .map(|f| format!(" {}", verdict_badge(f)))
        .unwrap_or_default();
    format!("<h{level}>{}{badge}</h{level}>", esc(&heading.text))
}

impl Backend for HtmlRenderer {
    const FILE_NAME: &'static str = "report.html";

    fn paragraph(&self, role: Role, text: &str) -> String {
        let text = esc(text);
        match role {
            Role::Body => format!("<p>{text}</p>"),
            Role::Headline => format!(r#"<p class="headline">{text}</p>"#),
            Role::Meta => format!(r#"<p class="meta">{text}</p>"#),
            Role::Footnote => format!(r#"<p class="footnote"><sup>*</sup> {text}</p>"#),
        }
    }

    fn key_values(&self, kv: &KeyValues) -> String {
        let body: String = kv
            .rows
            .iter()
            .map(|(k, v)| format!("<tr><th>{}</th><td>{}</td></tr>\n", esc(k), cell(v)))
            .collect();
        format!(r#"<table class="settings"><tbody>{body}</tbody></table>"#)
    }

    fn table(&self, t: &Table) -> String {
        let align = |c: usize| {
            if t.columns[c].numeric {
                r#" class="num""#
            } else {
                ""
            }
        };
        let head: String = t
            .columns
            .iter()
            .enumerate()
            .map(|(c, column)| format!("<th{}>{}</th>", align(c), esc(&column.title)))
            .collect();
        let body: String = t
            .rows
            .iter()
            .map(|row| {
                let cells: String = row
                    .cells
                    .iter()
                    .enumerate()
                    .map(|(c, value)| format!("<td{}>{}</td>", align(c), cell(value)))
                    .collect();
                format!("<tr>{cells}</tr>\n")
            })
            .collect();
        let name = t.name;
        format!(
            r#"<div class="table-wrap"><table class="{name}"><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table></div>"#
        )
    }

    fn list(&self, items: &[String]) -> String {
        let items: String = items
            .iter()
            .map(|i| format!("<li>{}</li>", esc(i)))
            .collect();
        format!("<ul>{items}</ul>")
    }

    fn callout(&self, label: &str, text: &str) -> String {
        let (label, text) = (esc(label), esc(text));
        format!("<aside class=\"caution\" role=\"note\"><strong>{label}.</strong> {text}</aside>\n")
    }

    fn figure(&self, chart: &Chart, caption: &str) -> String {
        let (svg, caption) = (svg_of(chart), esc(caption));
        format!("<figure>{svg}<figcaption>{caption}</figcaption></figure>\n")
    }

    /// Top-level sections are `<section>` elements; deeper ones only headings.
    fn section(&self, section: &Section, level: usize, body: &str) -> String {
        let heading = section
            .heading
            .as_ref()
            .map(|h| heading(level, h))
            .unwrap_or_default();
        if level > 2 {
            return heading + body;
        }
        let class = if section.starts_page {
            r#" class="protected""#
        } else {
            ""
        };
        format!("<section{class}>{heading}{body}</section>\n")
    }

    fn document(&self, page: &Page, lead: &str, sections: &str) -> String {
        let title = esc(&page.title);
        let subtitle = page
            .subtitle
            .as_ref()
            .map(|s| format!(r#"<p class="subtitle">{}</p>"#, esc(s)))
            .unwrap_or_default();
        format!(
            "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\
             <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\
             <title>{title}</title><style>{STYLE}</style></head>\n<body><main><h1>{title}</h1>\
             {subtitle}{lead}{sections}</main></body></html>\n"
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::sample::{AWKWARD_NAME, SUPPRESSED_SHARE, sample_report};
    use crate::report::{Renderer, format};

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
