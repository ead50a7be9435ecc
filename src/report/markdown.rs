//! `report.md`: the report as it is pasted into a review ticket or merge
//! request, with the settings needed to reproduce the run.

use super::format::{self, Cell, FEATURE_HEADERS, PAIR_HEADERS, TOP_PAIRS};
use super::{
    AddedSource, FeatureResult, LevelComposition, PolicyOutcome, ProtectedResult, Renderer, Report,
    WholeSet,
};

/// GitHub-flavoured Markdown renderer.
pub struct MarkdownRenderer;

/// Characters with an inline meaning in CommonMark or GFM (emphasis, code,
/// links, raw HTML, entities, strikethrough, table cells, math).
const INLINE_SIGNIFICANT: &[char] = &['\\', '`', '*', '_', '[', ']', '<', '>', '|', '~', '&', '$'];

/// Characters that open a block (list, heading, quote) at the start of a line.
const BLOCK_OPENERS: &[char] = &['-', '+', '#', '=', '>'];

/// Escapes `text` so it shows literally where it may start a line (list
/// items, paragraphs): a backslash before inline punctuation and before a
/// leading block opener or list number (any ASCII punctuation may be
/// escaped, CommonMark 0.31 §2.4).
#[must_use]
pub fn escape(text: &str) -> String {
    escape_with(text, true)
}

/// Escapes `text` for places that cannot open a block (table cells,
/// headings after their marker, emphasis), so numbers such as `-0.002` stay readable.
#[must_use]
pub fn escape_inline(text: &str) -> String {
    escape_with(text, false)
}

fn escape_with(text: &str, at_line_start: bool) -> String {
    let leading_digits = text.chars().take_while(char::is_ascii_digit).count();
    let mut out = String::with_capacity(text.len() + 8);
    for (i, c) in text.chars().enumerate() {
        let opens_block = at_line_start
            && ((i == 0 && BLOCK_OPENERS.contains(&c))
                || (i == leading_digits && i > 0 && (c == '.' || c == ')')));
        match c {
            '\n' | '\r' => out.push(' '),
            c if opens_block || INLINE_SIGNIFICANT.contains(&c) => {
                out.push('\\');
                out.push(c);
            }
            c => out.push(c),
        }
    }
    out
}

/// A code span for a table cell: fenced by more backticks than it contains,
/// with `|` escaped because GFM splits cells before reading code spans.
fn table_code(text: &str) -> String {
    let longest_run = text.split(|c| c != '`').map(str::len).max().unwrap_or(0);
    let fence = "`".repeat(longest_run + 1);
    format!("{fence} {} {fence}", text.replace('|', "\\|"))
}

/// A table from already-escaped cells.
fn table(headers: &[&str], rows: &[Vec<String>]) -> String {
    let mut out = format!("| {} |\n", headers.join(" | "));
    out.push_str(&format!("|{}\n", "---|".repeat(headers.len())));
    for row in rows {
        out.push_str(&format!("| {} |\n", row.join(" | ")));
    }
    out.push('\n');
    out
}

/// Escapes every cell of a row built by [`format`].
fn escaped<const N: usize>(cells: [String; N]) -> Vec<String> {
    cells.iter().map(|c| escape_inline(c)).collect()
}

fn settings_section(report: &Report) -> String {
    let rows: Vec<Vec<String>> = format::settings(report)
        .into_iter()
        .map(|s| {
            let value = if s.literal {
                table_code(&s.value)
            } else {
                escape_inline(&s.value)
            };
            vec![s.label.to_owned(), value]
        })
        .collect();
    format!(
        "## Dataset and settings\n\n{}",
        table(&["setting", "value"], &rows)
    )
}

fn protected_section(result: &ProtectedResult, report: &Report) -> String {
    let mut out = format!(
        "## Protected attribute: {}\n\n",
        escape_inline(&result.protected)
    );
    out.push_str(&format!("**{}**\n\n", escape_inline(&result.headline)));
    out.push_str(&format::attribute_summary(
        result,
        report.settings.min_cell,
        escape_inline,
    ));
    out.push_str("\n\n");
    out.push_str("### Features ranked by AUC\n\n");
    let rows: Vec<Vec<String>> = format::ranked_features(result)
        .into_iter()
        .map(|f| escaped(format::feature_cells(f)))
        .collect();
    out.push_str(&table(&FEATURE_HEADERS, &rows));
    out.push_str(&pairs_section(result));
    if let Some(whole) = &result.whole_set {
        out.push_str(&whole_set_section(whole, report.settings.target_auc));
    }
    out.push_str(&compositions_section(result, report.settings.min_cell));
    out
}

fn pairs_section(result: &ProtectedResult) -> String {
    if result.pairs.is_empty() {
        return String::new();
    }
    let top = format::top_pairs(result, TOP_PAIRS);
    let heading = format!(
        "### Pairs with the largest gain (top {} of {})\n\n",
        top.len(),
        result.pairs.len()
    );
    let rows: Vec<Vec<String>> = top
        .into_iter()
        .map(|p| escaped(format::pair_cells(p)))
        .collect();
    heading + &table(&PAIR_HEADERS, &rows)
}

fn whole_set_section(whole: &WholeSet, target_auc: f64) -> String {
    let mut out = format!(
        "### Whole feature set\n\nSurrogate {} on {} features: AUC {}, balanced error rate {:.3}{}.\n\n",
        escape_inline(&whole.surrogate),
        whole.features_used,
        format::auc_interval(Some(whole.auc), Some(whole.auc_low), Some(whole.auc_high)),
        whole.ber,
        whole
            .hand_till
            .map(|m| format!(", Hand and Till's M {m:.3}"))
            .unwrap_or_default()
    );
    if !whole.drop_one.is_empty() {
        let mut drops: Vec<_> = whole.drop_one.iter().collect();
        drops.sort_by(|a, b| b.delta.total_cmp(&a.delta));
        let rows: Vec<Vec<String>> = drops
            .into_iter()
            .map(|d| {
                vec![
                    escape_inline(&d.feature),
                    format::auc_interval(Some(d.auc), Some(d.auc_low), Some(d.auc_high)),
                    escape_inline(&format::signed(d.delta, 3)),
                    format::fixed(d.p_value, 4),
                ]
            })
            .collect();
        out.push_str("#### Drop-one ablation\n\n");
        out.push_str(&table(
            &["without", "AUC [95% CI]", "AUC lost", "p (DeLong)"],
            &rows,
        ));
    }
    out.push_str(&format!(
        "#### Removal plan (target AUC {target_auc:.2})\n\n"
    ));
    let rows: Vec<Vec<String>> = whole
        .removal_plan
        .iter()
        .enumerate()
        .map(|(i, s)| {
            vec![
                (i + 1).to_string(),
                escape_inline(&s.remove),
                format::auc_interval(Some(s.auc_after), Some(s.auc_low), Some(s.auc_high)),
            ]
        })
        .collect();
    if !rows.is_empty() {
        out.push_str(&table(&["step", "remove", "AUC after [95% CI]"], &rows));
    }
    out.push_str(&format!(
        "{}\n\n",
        escape(&format::removal_outcome(whole, target_auc))
    ));
    out
}

fn compositions_section(result: &ProtectedResult, min_cell: u64) -> String {
    let flagged = format::flagged_compositions(result);
    if flagged.is_empty() {
        return String::new();
    }
    let mut out = String::from("### Level composition of flagged features\n\n");
    for (feature, levels) in flagged {
        out.push_str(&composition_table(feature, levels, result, min_cell));
    }
    out.push_str(&format!(
        "{}: fewer than {min_cell} rows; withheld, with the shares of that level.\n\n",
        escape(&format::suppressed(min_cell))
    ));
    out
}

fn composition_table(
    feature: &FeatureResult,
    levels: &[LevelComposition],
    result: &ProtectedResult,
    min_cell: u64,
) -> String {
    let share_headers: Vec<String> = result
        .levels
        .iter()
        .map(|l| format!("share {}", escape_inline(&l.label)))
        .collect();
    let mut headers = vec!["level", "rows"];
    headers.extend(share_headers.iter().map(String::as_str));
    let rows: Vec<Vec<String>> = levels
        .iter()
        .map(|level| {
            std::iter::once(escape_inline(&level.label))
                .chain(
                    format::composition_cells(level)
                        .into_iter()
                        .map(|c| match c {
                            Cell::Value(v) => escape_inline(&v),
                            Cell::Suppressed => escape_inline(&format::suppressed(min_cell)),
                        }),
                )
                .collect()
        })
        .collect();
    format!(
        "#### {} ({})\n\n{}",
        escape_inline(&feature.name),
        feature.flag.as_str(),
        table(&headers, &rows)
    )
}

fn bullet_list(heading: &str, items: impl Iterator<Item = String>) -> String {
    let lines: Vec<String> = items.map(|i| format!("- {i}\n")).collect();
    if lines.is_empty() {
        return String::new();
    }
    format!("## {heading}\n\n{}\n", lines.concat())
}

/// A comma-separated list of escaped names, or `none`.
fn names(list: &[String]) -> String {
    if list.is_empty() {
        return "none".to_owned();
    }
    list.iter()
        .map(|n| escape_inline(n))
        .collect::<Vec<_>>()
        .join(", ")
}

fn policy_section(policy: &PolicyOutcome) -> String {
    let rows = vec![
        vec!["file".to_owned(), escape_inline(&policy.file)],
        vec!["SHA-256".to_owned(), table_code(&policy.sha256)],
        vec![
            "evaluated on".to_owned(),
            escape_inline(&policy.evaluated_on),
        ],
        vec!["accepted".to_owned(), names(&policy.accepted_features)],
        vec![
            "expired acceptances".to_owned(),
            names(&policy.expired_acceptances),
        ],
        vec!["failing".to_owned(), names(&policy.failing)],
    ];
    format!("## Review policy\n\n{}", table(&["", ""], &rows))
}

fn added_source_section(added: &AddedSource) -> String {
    let rows = vec![
        vec!["source".to_owned(), escape_inline(&added.source)],
        vec!["SHA-256".to_owned(), table_code(&added.sha256)],
        vec!["join key".to_owned(), escape_inline(&added.key)],
        vec!["new columns".to_owned(), names(&added.new_columns)],
        vec![
            "rows matched".to_owned(),
            format!("{} of {}", added.matched_rows, added.base_rows),
        ],
        vec![
            "unmatched (base / source)".to_owned(),
            format!(
                "{} / {}",
                added.unmatched_base_rows, added.unmatched_source_rows
            ),
        ],
        vec![
            "duplicate keys (base / source)".to_owned(),
            format!(
                "{} / {}",
                added.duplicate_keys_in_base, added.duplicate_keys_in_source
            ),
        ],
    ];
    let effects: Vec<Vec<String>> = added
        .per_protected
        .iter()
        .map(|e| {
            let interval = |a: &super::AucInterval| {
                format::auc_interval(Some(a.auc), Some(a.auc_low), Some(a.auc_high))
            };
            vec![
                escape_inline(&e.protected),
                interval(&e.auc_without),
                interval(&e.auc_with),
                escape_inline(&format::signed(e.difference, 3)),
                e.p_value
                    .map_or_else(|| "n/a".to_string(), |p| format!("{p:.4}")),
            ]
        })
        .collect();
    format!(
        "## Added source\n\n{}{}",
        table(&["", ""], &rows),
        table(
            &[
                "protected",
                "AUC without",
                "AUC with",
                "difference",
                "p (DeLong)"
            ],
            &effects
        )
    )
}

impl Renderer for MarkdownRenderer {
    fn file_name(&self) -> &'static str {
        "report.md"
    }

    fn render(&self, report: &Report) -> String {
        let mut out = format!(
            "# Proxy leakage screen: {}\n\n> **Caution.** {}\n\n",
            escape_inline(&report.dataset.source),
            escape_inline(&report.caution)
        );
        out.push_str(&settings_section(report));
        for result in &report.results {
            out.push_str(&protected_section(result, report));
        }
        out.push_str(&bullet_list(
            "Skipped columns",
            report
                .skipped_columns
                .iter()
                .map(|c| format!("{}: {}", escape(&c.name), escape_inline(&c.reason))),
        ));
        out.push_str(&bullet_list(
            "Notes",
            report.notes.iter().map(|n| escape(n)),
        ));
        if let Some(policy) = &report.policy {
            out.push_str(&policy_section(policy));
        }
        if let Some(added) = &report.added_source {
            out.push_str(&added_source_section(added));
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::sample::{AWKWARD_NAME, PIPE_NAME, SUPPRESSED_SHARE, sample_report};

    fn render() -> String {
        MarkdownRenderer.render(&sample_report())
    }

    #[test]
    fn caution_sits_near_the_top() {
        let text = render();
        let caution = text.find("legal determination").unwrap();
        assert!(caution < text.find("## Dataset and settings").unwrap());
    }

    #[test]
    fn settings_allow_the_run_to_be_reproduced() {
        let text = render();
        let report = sample_report();
        let hash = report.dataset.sha256.unwrap();
        for expected in [
            format!("| SHA-256 | ` {hash} ` |"),
            "| Folds | 5 |".to_owned(),
            "| Seed | 42 |".to_owned(),
            "| Bins | 32 |".to_owned(),
            "| Minimum cell | 10 |".to_owned(),
            "| Tool | telltale 0.1.0 |".to_owned(),
            "AUC lower bound ≥ 0.70".to_owned(),
            "--protected sex --report out/".to_owned(),
        ] {
            assert!(text.contains(&expected), "missing {expected}");
        }
    }

    #[test]
    fn names_are_escaped_everywhere() {
        let text = render();
        assert!(!text.contains(AWKWARD_NAME));
        assert!(!text.contains(PIPE_NAME));
        assert!(text.contains(r#"\<b\>\&"x""#));
        assert!(text.contains(r"région\|code"));
    }

    #[test]
    fn table_rows_keep_their_column_count() {
        let text = render();
        let header_cells = FEATURE_HEADERS.len();
        let row = text
            .lines()
            .find(|l| l.starts_with(r"| région\|code"))
            .unwrap();
        let unescaped_bars = row.matches('|').count() - row.matches(r"\|").count();
        assert_eq!(unescaped_bars, header_cells + 1);
    }

    #[test]
    fn suppressed_level_shows_placeholder_not_values() {
        let text = render();
        let row = text.lines().find(|l| l.starts_with("| island")).unwrap();
        assert_eq!(row, r"| island | \<10 | \<10 | \<10 |");
        assert!(!text.contains(&format::percent(SUPPRESSED_SHARE)));
    }

    #[test]
    fn leading_list_markers_are_neutralised() {
        assert_eq!(escape("1. first"), r"1\. first");
        assert_eq!(escape("-x_y"), r"\-x\_y");
        assert_eq!(escape("a-b 1.5"), "a-b 1.5");
    }

    #[test]
    fn code_span_fence_outgrows_embedded_backticks() {
        assert_eq!(table_code("a``b|c"), "``` a``b\\|c ```");
    }
}
