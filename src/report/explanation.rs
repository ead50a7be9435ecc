//! The evidence on one feature (`telltale explain`) and its page.

use super::format;
use super::layout::{CAUTION_LABEL, composition_table, pair_row};
use super::page::{Block, Cell, Column, KeyValues, Page, Role, Row, Section, Table};
use super::{FeatureResult, LevelComposition, PairResult};
use serde::{Deserialize, Serialize};

/// Group share from which a level counts as dominated by one group.
pub const DOMINATED_SHARE: f64 = 0.9;

/// Everything about one feature for one protected attribute.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Explanation {
    /// The protected attribute (`scan::explain::explain`).
    pub protected: String,
    /// Its classes, in the order of every share below.
    pub protected_levels: Vec<String>,
    /// The feature's row of the scan report, as the scan computes it.
    pub feature: FeatureResult,
    /// Every level (or bin), largest first, small cells suppressed.
    pub levels: Vec<LevelComposition>,
    /// Levels shown with shares in which one group has at least `DOMINATED_SHARE`.
    pub dominated_levels: usize,
    /// Levels with their shares shown.
    pub levels_with_shares: usize,
    /// The feature's pairs with the largest gain.
    pub partners: Vec<PairResult>,
    /// What the figures mean, in plain words.
    pub paragraph: String,
    /// With an outcome: how much of the feature's outcome value survives
    /// once the protected attribute is known, in plain words.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outcome_paragraph: Option<String>,
    /// Smallest count shown; smaller cells are suppressed.
    pub min_cell: u64,
    /// The caution every report carries.
    pub caution: String,
}

impl Explanation {
    /// The explanation as a page: the paragraph, the feature's measures,
    /// its surrogates, its best partners and its level table.
    #[must_use]
    pub fn page(&self) -> Page<'static> {
        let f = &self.feature;
        let mut opening = vec![Block::paragraph(Role::Body, &self.paragraph)];
        opening.extend(
            self.outcome_paragraph
                .iter()
                .map(|text| Block::paragraph(Role::Body, text)),
        );
        let mut sections = vec![
            Section::untitled(opening),
            Section::new("Measures", vec![measures(f)]),
            Section::new("Surrogates", vec![Block::Table(surrogates(f))]),
        ];
        if !self.partners.is_empty() {
            sections.push(Section::new(
                "Best partners",
                vec![Block::Table(self.partners_table())],
            ));
        }
        let class_labels: Vec<&str> = self.protected_levels.iter().map(String::as_str).collect();
        sections.push(Section::new(
            format!(
                "Level table (cells under {} rows suppressed)",
                self.min_cell
            ),
            vec![Block::Table(composition_table(
                &self.levels,
                &class_labels,
                self.min_cell,
            ))],
        ));
        Page {
            title: format!("`{}` and protected attribute `{}`", f.name, self.protected),
            subtitle: None,
            lead: vec![Block::Callout {
                label: CAUTION_LABEL,
                text: self.caution.clone(),
            }],
            sections,
        }
    }

    fn partners_table(&self) -> Table {
        let name = &self.feature.name;
        let rows = self
            .partners
            .iter()
            .map(|p| {
                let other = if &p.features[0] == name {
                    &p.features[1]
                } else {
                    &p.features[0]
                };
                pair_row(other.clone(), p)
            })
            .collect();
        Table {
            name: "partners",
            columns: vec![
                Column::text("partner"),
                Column::numeric("pair AUC [95% CI]"),
                Column::numeric("gain"),
                Column::text("flag"),
            ],
            rows,
        }
    }
}

/// Kind, levels, missing share and the information measures of one feature.
fn measures(f: &FeatureResult) -> Block<'static> {
    let nats = |v: f64| Cell::plain(format!("{v:.4} nats"));
    let rows = vec![
        ("kind", Cell::plain(&f.kind)),
        ("levels", Cell::plain(f.levels.to_string())),
        ("missing", Cell::plain(format::percent(f.missing_fraction))),
        ("mutual information", nats(f.mi_nats)),
        ("mutual information (Miller–Madow)", nats(f.mi_mm_nats)),
        ("adjusted MI", Cell::plain(format!("{:.4}", f.ami))),
        ("normalised MI", Cell::plain(format!("{:.4}", f.nmi))),
        (
            "held-out information",
            Cell::plain(f.heldout_info_nats.map_or_else(
                || format::NOT_COMPUTED.to_owned(),
                |v| format!("{v:.4} nats"),
            )),
        ),
    ];
    Block::KeyValues(KeyValues {
        labels: Some(["measure", "value"]),
        rows: rows.into_iter().map(|(k, v)| (k.to_owned(), v)).collect(),
    })
}

/// Every surrogate's out-of-fold AUC: information only, the verdict rests on
/// the surrogate fixed in advance and its interval.
fn surrogates(f: &FeatureResult) -> Table {
    Table {
        name: "surrogates",
        columns: vec![
            Column::text("surrogate"),
            Column::numeric("AUC (information only)"),
        ],
        rows: f
            .surrogates
            .iter()
            .map(|(name, auc)| Row::from(vec![Cell::plain(name), Cell::plain(format!("{auc:.3}"))]))
            .collect(),
    }
}
