//! `report.txt` and the console summary: aligned plain-text tables, with
//! ANSI colour only when the caller says the output is a terminal.

use super::format::{self, FEATURE_HEADERS, PAIR_HEADERS, TOP_PAIRS};
use super::{Flag, ProtectedResult, Renderer, Report, WholeSet};

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
    Proxy,
    Review,
    Clear,
    Muted,
}

impl Style {
    fn code(self) -> &'static str {
        match self {
            Self::Heading => "\x1b[1;38;5;75m",
            Self::Headline => "\x1b[1m",
            Self::Proxy => "\x1b[1;38;5;203m",
            Self::Review => "\x1b[38;5;179m",
            Self::Clear => "\x1b[38;5;108m",
            Self::Muted => "\x1b[2m",
        }
    }

    fn for_flag(flag: Flag) -> Self {
        match flag {
            Flag::Proxy => Self::Proxy,
            Flag::Review => Self::Review,
            Flag::Clear => Self::Clear,
            Flag::Unresolved => Self::Muted,
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

    fn heading(&self, out: &mut String, text: &str) {
        out.push('\n');
        out.push_str(&self.paint(Style::Heading, text));
        out.push('\n');
    }

    /// Columns padded to their widest cell; `numeric` columns right-aligned
    /// so decimals line up; the cell in `flag_column` coloured by its flag.
    fn table(
        &self,
        headers: &[&str],
        rows: &[Vec<String>],
        numeric: &[usize],
        flag_column: Option<usize>,
    ) -> String {
        let widths: Vec<usize> = (0..headers.len())
            .map(|c| {
                rows.iter()
                    .map(|r| r[c].chars().count())
                    .chain(std::iter::once(headers[c].chars().count()))
                    .max()
                    .unwrap_or(0)
            })
            .collect();
        let align = |c: usize, cell: &str, width: usize| pad(cell, width, numeric.contains(&c));
        let header = headers
            .iter()
            .zip(&widths)
            .enumerate()
            .map(|(c, (h, &w))| align(c, h, w))
            .collect::<Vec<_>>()
            .join("  ");
        let mut out = format!("  {}\n", self.paint(Style::Muted, header.trim_end()));
        for row in rows {
            let line = row
                .iter()
                .zip(&widths)
                .enumerate()
                .map(|(c, (cell, &width))| {
                    let padded = align(c, cell, width);
                    match flag_column
                        .filter(|&f| f == c)
                        .and_then(|_| flag_style(cell))
                    {
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

    fn protected_section(&self, out: &mut String, result: &ProtectedResult, report: &Report) {
        let positive = result
            .positive
            .as_deref()
            .map(|p| format!(", positive class: {p}"))
            .unwrap_or_default();
        self.heading(
            out,
            &format!(
                "Protected attribute: {} ({}{positive})",
                result.protected, result.kind
            ),
        );
        out.push_str(&self.paint(Style::Headline, &wrap(&result.headline, "  ")));
        out.push('\n');
        self.features_table(out, result);
        self.pairs_table(out, result);
        if let Some(whole) = &result.whole_set {
            self.whole_set(out, whole, report.settings.target_auc);
        }
    }

    fn features_table(&self, out: &mut String, result: &ProtectedResult) {
        self.heading(out, "Features ranked by AUC");
        let rows: Vec<Vec<String>> = format::ranked_features(result)
            .into_iter()
            .map(|f| format::feature_cells(f).to_vec())
            .collect();
        out.push_str(&self.table(&FEATURE_HEADERS, &rows, &[2, 3, 4], Some(5)));
    }

    fn pairs_table(&self, out: &mut String, result: &ProtectedResult) {
        if result.pairs.is_empty() {
            return;
        }
        let top = format::top_pairs(result, TOP_PAIRS);
        self.heading(
            out,
            &format!(
                "Pairs with the largest gain (top {} of {})",
                top.len(),
                result.pairs.len()
            ),
        );
        let rows: Vec<Vec<String>> = top
            .into_iter()
            .map(|p| format::pair_cells(p).to_vec())
            .collect();
        out.push_str(&self.table(&PAIR_HEADERS, &rows, &[1, 2], Some(3)));
    }

    fn whole_set(&self, out: &mut String, whole: &WholeSet, target_auc: f64) {
        self.heading(out, "Whole feature set");
        out.push_str(&format!(
            "  {} surrogate on {} features: AUC {}, balanced error rate {:.3}\n",
            whole.surrogate,
            whole.features_used,
            format::auc_interval(Some(whole.auc), Some(whole.auc_low), Some(whole.auc_high)),
            whole.ber
        ));
        self.heading(out, &format!("Removal plan (target AUC {target_auc:.2})"));
        let rows: Vec<Vec<String>> = whole
            .removal_plan
            .iter()
            .enumerate()
            .map(|(i, step)| {
                vec![
                    (i + 1).to_string(),
                    step.remove.clone(),
                    format::auc_interval(
                        Some(step.auc_after),
                        Some(step.auc_low),
                        Some(step.auc_high),
                    ),
                ]
            })
            .collect();
        if !rows.is_empty() {
            out.push_str(&self.table(
                &["step", "remove", "AUC after [95% CI]"],
                &rows,
                &[0, 2],
                None,
            ));
        }
        out.push_str(&wrap(&format::removal_outcome(whole, target_auc), "  "));
        out.push('\n');
    }

    fn trailer(&self, out: &mut String, report: &Report) {
        if !report.skipped_columns.is_empty() {
            self.heading(out, "Skipped columns");
            for column in &report.skipped_columns {
                out.push_str(&format!("  {}: {}\n", column.name, column.reason));
            }
        }
        if !report.notes.is_empty() {
            self.heading(out, "Notes");
            for note in &report.notes {
                // A hanging indent: continuation lines align with the text, not the dash.
                out.push_str("  - ");
                out.push_str(wrap(note, "    ").trim_start());
                out.push('\n');
            }
        }
        self.heading(out, "Caution");
        out.push_str(&wrap(&report.caution, "  "));
        out.push('\n');
    }
}

impl Renderer for TerminalRenderer {
    fn file_name(&self) -> &'static str {
        "report.txt"
    }

    fn render(&self, report: &Report) -> String {
        let d = &report.dataset;
        let mut out = self.paint(
            Style::Heading,
            &format!(
                "{} {}: leakage screen of {} ({} of {} rows used)",
                report.tool.name, report.tool.version, d.source, d.rows_used, d.rows
            ),
        );
        out.push('\n');
        for result in &report.results {
            self.protected_section(&mut out, result, report);
        }
        self.trailer(&mut out, report);
        out
    }
}

fn flag_style(cell: &str) -> Option<Style> {
    [Flag::Proxy, Flag::Review, Flag::Unresolved, Flag::Clear]
        .into_iter()
        .find(|f| f.as_str() == cell)
        .map(Style::for_flag)
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
        assert!(text.contains(&format!("{}proxy", Style::Proxy.code())));
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
