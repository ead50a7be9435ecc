//! Per-level composition of a feature by protected group, with small cells suppressed.

use super::evaluate::Target;
use crate::data::EncodedColumn;
use crate::report::LevelComposition;
use crate::stats::contingency::Contingency;

/// Levels shown in a composition table; the rest are summarised by the table's length.
const MAX_LEVELS: usize = 60;

/// Count and group shares of each level, largest levels first. A level with
/// fewer than `min_cell` rows shows neither count nor shares; a level where any
/// group has fewer than `min_cell` rows shows its count but no shares (one
/// hidden share could otherwise be recovered from the others).
pub fn composition(
    column: &EncodedColumn,
    table: &Contingency,
    target: &Target<'_>,
    min_cell: u64,
) -> Vec<LevelComposition> {
    let k = target.n_classes();
    let mut rows: Vec<LevelComposition> = (0..table.rows)
        .filter_map(|level| {
            let counts = &table.counts[level * k..(level + 1) * k];
            let total: u64 = counts.iter().sum();
            (total > 0).then(|| level_row(&column.labels[level], counts, total, min_cell))
        })
        .collect();
    rows.sort_by(|a, b| {
        b.count
            .unwrap_or(0)
            .cmp(&a.count.unwrap_or(0))
            .then_with(|| a.label.cmp(&b.label))
    });
    rows.truncate(MAX_LEVELS);
    rows
}

fn level_row(label: &str, counts: &[u64], total: u64, min_cell: u64) -> LevelComposition {
    if total < min_cell {
        return LevelComposition {
            label: label.to_string(),
            count: None,
            shares: vec![None; counts.len()],
        };
    }
    let any_small = counts.iter().any(|&c| c < min_cell);
    let shares = counts
        .iter()
        .map(|&c| (!any_small).then(|| c as f64 / total as f64))
        .collect();
    LevelComposition {
        label: label.to_string(),
        count: Some(total),
        shares,
    }
}
