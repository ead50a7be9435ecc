//! `report.md`: the report as it is pasted into a review ticket or merge
//! request, with the settings needed to reproduce the run.

use super::page::{Backend, Cell, CellStyle, Heading, KeyValues, Page, Role, Section, Table};

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

/// A table from already-escaped header and row cells.
fn table(headers: &[String], rows: &[Vec<String>]) -> String {
    let mut out = format!("| {} |\n", headers.join(" | "));
    out.push_str(&format!("|{}\n", "---|".repeat(headers.len())));
    for row in rows {
        out.push_str(&format!("| {} |\n", row.join(" | ")));
    }
    out.push('\n');
    out
}

/// A cell's text escaped for a table; verbatim text becomes a code span.
fn cell(cell: &Cell) -> String {
    match cell.style {
        CellStyle::Literal => table_code(&cell.text),
        _ => escape_inline(&cell.text),
    }
}

fn heading(level: usize, heading: &Heading) -> String {
    let verdict = heading
        .verdict
        .map(|f| format!(" ({})", f.as_str()))
        .unwrap_or_default();
    format!(
        "{} {}{verdict}\n\n",
        "#".repeat(level),
        escape_inline(&heading.text)
    )
}

impl Backend for MarkdownRenderer {
    const FILE_NAME: &'static str = "report.md";

    fn paragraph(&self, role: Role, text: &str) -> String {
        match role {
            Role::Headline => format!("**{}**\n\n", escape_inline(text)),
            _ => format!("{}\n\n", escape(text)),
        }
    }

    fn key_values(&self, kv: &KeyValues) -> String {
        let [key, value] = kv.labels.unwrap_or(["", ""]);
        let rows: Vec<Vec<String>> = kv
            .rows
            .iter()
            .map(|(k, v)| vec![escape_inline(k), cell(v)])
            .collect();
        table(&[key.to_owned(), value.to_owned()], &rows)
    }

    fn table(&self, t: &Table) -> String {
        let headers: Vec<String> = t.columns.iter().map(|c| escape_inline(&c.title)).collect();
        let rows: Vec<Vec<String>> = t
            .rows
            .iter()
            .map(|r| r.cells.iter().map(cell).collect())
            .collect();
        table(&headers, &rows)
    }

    fn list(&self, items: &[String]) -> String {
        let lines: String = items.iter().map(|i| format!("- {}\n", escape(i))).collect();
        lines + "\n"
    }

    fn callout(&self, label: &str, text: &str) -> String {
        format!(
            "> **{}.** {}\n\n",
            escape_inline(label),
            escape_inline(text)
        )
    }

    /// A section is left out when nothing in it can be shown (charts only).
    fn section(&self, section: &Section, level: usize, body: &str) -> String {
        match &section.heading {
            _ if body.is_empty() => String::new(),
            Some(h) => heading(level, h) + body,
            None => body.to_owned(),
        }
    }

    fn document(&self, page: &Page, lead: &str, sections: &str) -> String {
        let subtitle = page
            .subtitle
            .as_ref()
            .map(|s| format!("{}\n\n", escape(s)))
            .unwrap_or_default();
        format!(
            "# {}\n\n{subtitle}{lead}{sections}",
            escape_inline(&page.title)
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::sample::{AWKWARD_NAME, PIPE_NAME, SUPPRESSED_SHARE, sample_report};
    use crate::report::{Renderer, format};

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
        let header_cells = text
            .lines()
            .find(|l| l.starts_with("| feature |"))
            .unwrap()
            .matches(" | ")
            .count()
            + 1;
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
