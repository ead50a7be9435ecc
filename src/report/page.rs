//! A format-neutral page: what a document says, in which order, with every
//! number already formatted. Page builders ([`super::layout`], the diff and
//! the explanation) decide content, wording, ordering and number formats
//! once; the Markdown, HTML and terminal backends only add syntax, escaping
//! and colour.

use super::svg::RocSeries;
use super::svg::groups::{GroupLine, LineAxes, RatePanel};
use super::{FeatureResult, Flag, PairResult, Thresholds, WholeSet};

/// One document: a title, blocks before the first section, then sections.
#[derive(Debug, Clone)]
pub struct Page<'a> {
    /// The document title.
    pub title: String,
    /// A line under the title (tool, rows), if any.
    pub subtitle: Option<String>,
    /// Blocks that frame the document, e.g. the caution: documents show them
    /// before the first section, the terminal summary after the last.
    pub lead: Vec<Block<'a>>,
    /// Top-level sections in reading order.
    pub sections: Vec<Section<'a>>,
}

/// A titled part of a page; sections nest through [`Block::Section`].
#[derive(Debug, Clone)]
pub struct Section<'a> {
    /// The section title; `None` for an untitled group of blocks.
    pub heading: Option<Heading>,
    /// Whether the short (terminal) summary shows this section.
    pub detail: Detail,
    /// A printed page should start with this section.
    pub starts_page: bool,
    /// The content in reading order.
    pub blocks: Vec<Block<'a>>,
}

impl<'a> Section<'a> {
    /// A titled section shown in every format.
    #[must_use]
    pub fn new(heading: impl Into<String>, blocks: Vec<Block<'a>>) -> Self {
        Self {
            heading: Some(Heading {
                text: heading.into(),
                verdict: None,
            }),
            detail: Detail::Summary,
            starts_page: false,
            blocks,
        }
    }

    /// Untitled blocks shown in every format.
    #[must_use]
    pub fn untitled(blocks: Vec<Block<'a>>) -> Self {
        Self {
            heading: None,
            detail: Detail::Summary,
            starts_page: false,
            blocks,
        }
    }

    /// The same section, left out of the short summary.
    #[must_use]
    pub fn full_only(self) -> Self {
        Self {
            detail: Detail::Full,
            ..self
        }
    }
}

/// A section title, optionally followed by a verdict badge.
#[derive(Debug, Clone)]
pub struct Heading {
    /// The title text.
    pub text: String,
    /// The verdict the section is about, shown after the text.
    pub verdict: Option<Flag>,
}

/// Whether a part belongs to the short summary or only to the full document.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Detail {
    /// Shown everywhere, including the terminal summary.
    Summary,
    /// Shown in the full documents (Markdown, HTML) only.
    Full,
}

/// What a paragraph is for; backends style each role.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Role {
    /// Ordinary running text.
    Body,
    /// The one sentence a reader must not miss.
    Headline,
    /// Facts about the subject (kind, classes), secondary to the results.
    Meta,
    /// Explains the cells marked as suppressed in the tables above.
    Footnote,
}

/// How strongly a part asks for attention; backends map it to a colour.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Tone {
    /// A problem: a proxy, a failed gate.
    Alarm,
    /// Worth a look: review, a warning.
    Caution,
    /// Nothing to act on.
    Calm,
    /// Not resolved either way: neither an alarm nor a clearance.
    Muted,
}

/// Every verdict, in the order legends list them.
pub const VERDICTS: [Flag; 4] = [Flag::Proxy, Flag::Review, Flag::Unresolved, Flag::Clear];

/// The tone of a verdict: the one place a new [`Flag`] needs a rendering arm.
#[must_use]
pub fn verdict_tone(flag: Flag) -> Tone {
    match flag {
        Flag::Proxy => Tone::Alarm,
        Flag::Review => Tone::Caution,
        Flag::Clear => Tone::Calm,
        Flag::Unresolved => Tone::Muted,
    }
}

/// One piece of a section.
#[derive(Debug, Clone)]
pub enum Block<'a> {
    /// A paragraph of plain text.
    Paragraph {
        /// How it is styled.
        role: Role,
        /// The text, unescaped.
        text: String,
    },
    /// Label/value rows.
    KeyValues(KeyValues),
    /// A table with a header row.
    Table(Table),
    /// A bulleted list of plain-text items.
    List(Vec<String>),
    /// A chart with a caption; formats that cannot draw leave it out.
    Figure {
        /// The chart's data.
        chart: Chart<'a>,
        /// What the chart shows.
        caption: String,
    },
    /// A boxed remark such as the caution or a warning.
    Callout {
        /// The lead-in word, e.g. `Caution`.
        label: &'static str,
        /// The remark.
        text: String,
    },
    /// A nested section, one heading level down.
    Section(Section<'a>),
}

impl Block<'_> {
    /// A paragraph in `role`.
    #[must_use]
    pub fn paragraph(role: Role, text: impl Into<String>) -> Self {
        Self::Paragraph {
            role,
            text: text.into(),
        }
    }
}

/// Label/value rows, e.g. settings.
#[derive(Debug, Clone)]
pub struct KeyValues {
    /// Column titles for formats whose tables need a header row.
    pub labels: Option<[&'static str; 2]>,
    /// The rows: a label and its value.
    pub rows: Vec<(String, Cell)>,
}

/// A table: columns, then rows of cells in column order.
#[derive(Debug, Clone)]
pub struct Table {
    /// A stable name for styling, e.g. `features`.
    pub name: &'static str,
    /// The columns.
    pub columns: Vec<Column>,
    /// The rows.
    pub rows: Vec<Row>,
}

/// A table column.
#[derive(Debug, Clone)]
pub struct Column {
    /// The header text.
    pub title: String,
    /// Numbers: aligned right.
    pub numeric: bool,
}

impl Column {
    /// A text column.
    #[must_use]
    pub fn text(title: impl Into<String>) -> Self {
        Self {
            title: title.into(),
            numeric: false,
        }
    }

    /// A column of numbers.
    #[must_use]
    pub fn numeric(title: impl Into<String>) -> Self {
        Self {
            title: title.into(),
            numeric: true,
        }
    }
}

/// A table row.
#[derive(Debug, Clone)]
pub struct Row {
    /// The cells, in column order.
    pub cells: Vec<Cell>,
    /// Whether the short summary shows the row.
    pub detail: Detail,
}

impl From<Vec<Cell>> for Row {
    fn from(cells: Vec<Cell>) -> Self {
        Self {
            cells,
            detail: Detail::Summary,
        }
    }
}

/// One cell: its text and how it is presented.
#[derive(Debug, Clone, PartialEq)]
pub struct Cell {
    /// The text, unescaped.
    pub text: String,
    /// How the text is presented.
    pub style: CellStyle,
}

/// How a cell's text is presented.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum CellStyle {
    /// Plain text.
    Plain,
    /// A column or feature name that may wrap after `_`, `.` or `|`.
    Name,
    /// Shown verbatim in code style (hashes, commands).
    Literal,
    /// A verdict word, shown as a badge or in the verdict's colour.
    Verdict(Flag),
    /// A standing policy decision, shown emphasised.
    Acceptance,
    /// A count below the minimum cell, shown as its placeholder.
    Suppressed,
    /// Text in a tone, e.g. a newly failing feature.
    Toned(Tone),
}

impl Cell {
    /// Plain text.
    #[must_use]
    pub fn plain(text: impl Into<String>) -> Self {
        Self::styled(text, CellStyle::Plain)
    }

    /// A name that may wrap.
    #[must_use]
    pub fn name(text: impl Into<String>) -> Self {
        Self::styled(text, CellStyle::Name)
    }

    /// Verbatim text.
    #[must_use]
    pub fn literal(text: impl Into<String>) -> Self {
        Self::styled(text, CellStyle::Literal)
    }

    /// A verdict; its word comes from [`Flag::as_str`].
    #[must_use]
    pub fn verdict(flag: Flag) -> Self {
        Self::styled(flag.as_str(), CellStyle::Verdict(flag))
    }

    /// `text` in `style`.
    #[must_use]
    pub fn styled(text: impl Into<String>, style: CellStyle) -> Self {
        Self {
            text: text.into(),
            style,
        }
    }
}

/// The data of one chart kind; the HTML backend draws it as SVG.
#[derive(Debug, Clone)]
pub enum Chart<'a> {
    /// Ranked per-feature AUC bars with intervals and thresholds.
    LeakageBars {
        /// Chart title.
        title: String,
        /// Features, ranked.
        features: Vec<&'a FeatureResult>,
        /// The flag thresholds drawn as lines.
        thresholds: &'a Thresholds,
    },
    /// ROC curves, the whole set first when present.
    Roc {
        /// Chart title.
        title: String,
        /// The curves.
        series: Vec<RocSeries<'a>>,
    },
    /// Gains of every pair.
    PairHeatmap {
        /// Chart title.
        title: String,
        /// Pairs by gain, largest first.
        pairs: Vec<&'a PairResult>,
    },
    /// Each feature by its leakage AUC and its outcome gain over the
    /// protected attribute, with the quadrants of [`super::format::MapQuadrant`].
    LeakageUtilityMap {
        /// Chart title.
        title: String,
        /// Features with an outcome.
        features: Vec<&'a FeatureResult>,
        /// The review line drawn across the leakage axis.
        thresholds: &'a Thresholds,
    },
    /// The removal plan's feature sets by leakage AUC and outcome AUC.
    Frontier {
        /// Chart title.
        title: String,
        /// The whole-set result holding the frontier.
        whole: &'a WholeSet,
        /// The outcome AUC loss tolerated for the named set.
        max_loss: f64,
    },
    /// Whole-set AUC after each greedy removal.
    RemovalSteps {
        /// Chart title.
        title: String,
        /// The whole-set result holding the plan.
        whole: &'a WholeSet,
        /// The target drawn as a line.
        target_auc: f64,
    },
    /// A rate per group with its interval, one panel per rate.
    RatePanels {
        /// Chart title.
        title: String,
        /// The panels, top to bottom.
        panels: Vec<RatePanel>,
    },
    /// One line per group over a shared axis, e.g. score bands.
    GroupLines {
        /// Chart title.
        title: String,
        /// Axis titles and ranges.
        axes: LineAxes,
        /// The lines.
        lines: Vec<GroupLine>,
    },
}

/// A document format: the syntax of each kind of block and of a section's
/// frame. The walk through the page is shared ([`Backend::render_page`]).
pub trait Backend {
    /// File name of the format inside a report folder, e.g. `report.md`.
    const FILE_NAME: &'static str;

    /// A paragraph.
    fn paragraph(&self, role: Role, text: &str) -> String;

    /// Label/value rows.
    fn key_values(&self, rows: &KeyValues) -> String;

    /// A table.
    fn table(&self, table: &Table) -> String;

    /// A bulleted list.
    fn list(&self, items: &[String]) -> String;

    /// A boxed remark.
    fn callout(&self, label: &str, text: &str) -> String;

    /// A chart; formats that cannot draw leave it out.
    fn figure(&self, _chart: &Chart, _caption: &str) -> String {
        String::new()
    }

    /// A section at heading `level` (2 for top-level sections) around its
    /// already rendered `body`.
    fn section(&self, section: &Section, level: usize, body: &str) -> String;

    /// The whole document from the rendered lead blocks and sections.
    fn document(&self, page: &Page, lead: &str, sections: &str) -> String;

    /// The page in this format.
    fn render_page(&self, page: &Page) -> String {
        let lead = blocks(self, &page.lead, 1);
        let mut sections = String::new();
        for section in &page.sections {
            sections.push_str(&nested(self, section, 2));
        }
        self.document(page, &lead, &sections)
    }
}

/// Blocks in order; nested sections one heading level below `level`.
fn blocks<B: Backend + ?Sized>(backend: &B, blocks: &[Block], level: usize) -> String {
    blocks
        .iter()
        .map(|block| match block {
            Block::Paragraph { role, text } => backend.paragraph(*role, text),
            Block::KeyValues(rows) => backend.key_values(rows),
            Block::Table(table) => backend.table(table),
            Block::List(items) => backend.list(items),
            Block::Figure { chart, caption } => backend.figure(chart, caption),
            Block::Callout { label, text } => backend.callout(label, text),
            Block::Section(inner) => nested(backend, inner, level + 1),
        })
        .collect()
}

fn nested<B: Backend + ?Sized>(backend: &B, section: &Section, level: usize) -> String {
    backend.section(section, level, &blocks(backend, &section.blocks, level))
}
