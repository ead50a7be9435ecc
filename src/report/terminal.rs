//! `report.txt` and the console summary: aligned plain-text tables, with
//! ANSI colour only when the caller says the output is a terminal.

use super::Flag;
use super::page::{
    Backend, CellStyle, Detail, KeyValues, Page, Role, Row, Section, Table, Tone, verdict_tone,
};

/// Plain-text renderer; `colour` adds ANSI styles (decide it with
/// `std::io::IsTerminal` on the destination stream).
pub struct TerminalRenderer {
    /// Emit ANSI colour sequences.
    pub colour: bool,
}

/// Text width for wrapped paragraphs.
const WRAP_WIDTH: usize = 78;

/// Our palette, as ANSI SGR sequences.
#[derive(Clone, Copy)]
enum Style {
    Heading,
    Headline,
    Muted,
    Tone(Tone),
}

impl Style {
    fn code(self) -> &'static str {
        match self {
            Self::Heading => "\x1b[1;38;5;75m",
            Self::Headline => "\x1b[1m",
            Self::Muted => "\x1b[2m",
            Self::Tone(Tone::Alarm) => "\x1b[1;38;5;203m",
            Self::Tone(Tone::Caution) => "\x1b[38;5;179m",
            Self::Tone(Tone::Calm) => "\x1b[38;5;108m",
        }
    }

    /// The colour of a cell, if its style has one.
    fn of_cell(style: CellStyle) -> Option<Self> {
        match style {
            CellStyle::Verdict(flag) => Some(Self::Tone(verdict_tone(flag))),
            CellStyle::Toned(tone) => Some(Self::Tone(tone)),
            _ => None,
        }
    }
}

const RESET: &str = "\x1b[0m";

impl TerminalRenderer {
    /// `text` in `style` when colour is on, unchanged otherwise.
    fn paint(&self, style: Style, text: &str) -> String {
        if self.colour && !text.is_empty() {
            format!("{}{text}{RESET}", style.code())
        } else {
            text.to_owned()
        }
    }

    /// A heading line after a blank line, with its verdict if any.
    fn heading(&self, text: &str, verdict: Option<Flag>) -> String {
        let verdict = verdict
            .map(|flag| {
                let word = self.paint(Style::Tone(verdict_tone(flag)), flag.as_str());
                format!(" ({word})")
            })
            .unwrap_or_default();
        format!("\n{}{verdict}\n", self.paint(Style::Heading, text))
    }

    /// Columns padded to their widest cell, numeric columns right-aligned so
    /// decimals line up, verdicts and toned cells coloured; rows outside the
    /// summary left out, and the table with them when none is left.
    fn aligned(&self, table: &Table) -> String {
        let rows: Vec<&Row> = table
            .rows
            .iter()
            .filter(|r| r.detail == Detail::Summary)
            .collect();
        if rows.is_empty() {
            return String::new();
        }
        let widths: Vec<usize> = (0..table.columns.len())
            .map(|c| {
                rows.iter()
                    .map(|r| r.cells[c].text.chars().count())
                    .chain(std::iter::once(table.columns[c].title.chars().count()))
                    .max()
                    .unwrap_or(0)
            })
            .collect();
        let align = |c: usize, text: &str| pad(text, widths[c], table.columns[c].numeric);
        let header = table
            .columns
            .iter()
            .enumerate()
            .map(|(c, column)| align(c, &column.title))
            .collect::<Vec<_>>()
            .join("  ");
        let mut out = format!("  {}\n", self.paint(Style::Muted, header.trim_end()));
        for row in rows {
            let line = row
                .cells
                .iter()
                .enumerate()
                .map(|(c, cell)| {
                    let padded = align(c, &cell.text);
                    match Style::of_cell(cell.style) {
                        Some(style) => self.paint(style, &padded),
                        None => padded,
                    }
                })
                .collect::<Vec<_>>()
                .join("  ");
            out.push_str(&format!("  {}\n", line.trim_end()));
        }
        out
    }
}

impl Backend for TerminalRenderer {
    const FILE_NAME: &'static str = "report.txt";

    /// Footnotes explain marks the summary does not draw; they are left out.
    fn paragraph(&self, role: Role, text: &str) -> String {
        let wrapped = wrap(text, "  ");
        match role {
            Role::Headline => self.paint(Style::Headline, &wrapped) + "\n",
            Role::Footnote => String::new(),
            Role::Body | Role::Meta => wrapped + "\n",
        }
    }

    fn key_values(&self, kv: &KeyValues) -> String {
        kv.rows
            .iter()
            .map(|(key, value)| format!("  {key}: {}\n", value.text))
            .collect()
    }

    fn table(&self, table: &Table) -> String {
        self.aligned(table)
    }

    /// A hanging indent: continuation lines align with the text, not the dash.
    fn list(&self, items: &[String]) -> String {
        items
            .iter()
            .map(|item| format!("  - {}\n", wrap(item, "    ").trim_start()))
            .collect()
    }

    fn callout(&self, label: &str, text: &str) -> String {
        self.heading(label, None) + &wrap(text, "  ") + "\n"
    }

    /// Full-detail sections are left out of the summary.
    fn section(&self, section: &Section, _level: usize, body: &str) -> String {
        match &section.heading {
            _ if section.detail == Detail::Full => String::new(),
            Some(heading) => self.heading(&heading.text, heading.verdict) + body,
            None => format!("\n{body}"),
        }
    }

    /// The title, the sections, then the lead blocks (the caution), where a
    /// console leaves them in view.
    fn document(&self, page: &Page, lead: &str, sections: &str) -> String {
        let subtitle = page
            .subtitle
            .as_ref()
            .map(|s| format!("{s}\n"))
            .unwrap_or_default();
        format!(
            "{}\n{subtitle}{sections}{lead}",
            self.paint(Style::Heading, &page.title)
        )
    }
}

fn pad(cell: &str, width: usize, right: bool) -> String {
    let fill = " ".repeat(width.saturating_sub(cell.chars().count()));
    if right {
        format!("{fill}{cell}")
    } else {
        format!("{cell}{fill}")
    }
}

/// Greedy word wrap at [`WRAP_WIDTH`], each line starting with `indent`.
fn wrap(text: &str, indent: &str) -> String {
    let mut lines: Vec<String> = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        let needed = indent.len() + line.chars().count() + 1 + word.chars().count();
        if !line.is_empty() && needed > WRAP_WIDTH {
            lines.push(std::mem::take(&mut line));
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    lines.push(line);
    lines
        .iter()
        .map(|l| format!("{indent}{l}"))
        .collect::<Vec<_>>()
        .join("\n")
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::Renderer;
    use crate::report::sample::{AWKWARD_NAME, sample_report};

    fn render(colour: bool) -> String {
        TerminalRenderer { colour }.render(&sample_report())
    }

    #[test]
    fn plain_output_has_no_escape_sequences() {
        assert!(!render(false).contains('\x1b'));
    }

    #[test]
    fn coloured_output_styles_the_flags() {
        let text = render(true);
        assert!(text.contains(&format!("{}proxy", Style::Tone(Tone::Alarm).code())));
        assert!(text.contains(RESET));
    }

    #[test]
    fn headline_comes_before_the_feature_table() {
        let text = render(false);
        let report = sample_report();
        let headline = text.find("Dropping sex does not hide it").unwrap();
        let table = text.find("Features ranked by AUC").unwrap();
        assert!(headline < table);
        assert!(text.contains(&report.results[0].headline[..40]));
    }

    #[test]
    fn feature_rows_align_their_columns() {
        let text = render(false);
        let rows: Vec<&str> = text
            .lines()
            .filter(|l| l.contains("categorical") || l.contains("  numeric"))
            .take(3)
            .collect();
        let kind_column: Vec<usize> = rows
            .iter()
            .map(|l| {
                l.char_indices()
                    .position(|(i, _)| {
                        l[i..].starts_with("categorical") || l[i..].starts_with("numeric")
                    })
                    .unwrap()
            })
            .collect();
        assert_eq!(rows.len(), 3);
        assert!(kind_column.windows(2).all(|w| w[0] == w[1]), "{rows:#?}");
    }

    #[test]
    fn lists_accepted_marker_pairs_plan_and_caution() {
        let text = render(false);
        let awkward_row = text.lines().find(|l| l.contains(AWKWARD_NAME)).unwrap();
        assert!(awkward_row.trim_end().ends_with("accepted"));
        assert!(text.contains("income + tenure_months"));
        assert!(text.contains("+0.076"));
        assert!(text.contains("0.583 [0.568, 0.598]"));
        assert!(text.contains("batch_id: constant"));
        assert!(text.contains("legal determination"));
    }
}
