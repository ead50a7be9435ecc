//! Per-level composition of a feature by protected group, with small cells suppressed.

use super::evaluate::Target;
use crate::data::EncodedColumn;
use crate::report::LevelComposition;
use crate::stats::contingency::Contingency;

/// Levels shown in a composition table; the rest are summarised by the table's length.
const MAX_LEVELS: usize = 60;

/// Count and group shares of each level, largest levels first. Levels with
/// fewer than `min_cell` rows are not named (a rare label can identify a
/// person, an identifier always does): they are pooled into one last row,
/// itself suppressed when it holds fewer than `min_cell` rows. A row where any
/// group has fewer than `min_cell` rows shows its count but no shares (one
/// hidden share could otherwise be recovered from the others).
pub fn composition(
    column: &EncodedColumn,
    table: &Contingency,
    target: &Target<'_>,
    min_cell: u64,
) -> Vec<LevelComposition> {
    let k = target.n_classes();
    let mut pooled = vec![0u64; k];
    let mut small_levels = 0;
    let mut rows: Vec<LevelComposition> = Vec::new();
    for level in 0..table.rows {
        let counts = &table.counts[level * k..(level + 1) * k];
        let total: u64 = counts.iter().sum();
        if total >= min_cell.max(1) {
            rows.push(level_row(&column.labels[level], counts, total, min_cell));
        } else if total > 0 {
            small_levels += 1;
            pooled.iter_mut().zip(counts).for_each(|(p, c)| *p += c);
        }
    }
    rows.sort_by(|a, b| {
        b.count
            .unwrap_or(0)
            .cmp(&a.count.unwrap_or(0))
            .then_with(|| a.label.cmp(&b.label))
    });
    rows.truncate(MAX_LEVELS);
    if small_levels > 0 {
        let label = pooled_label(small_levels, min_cell);
        rows.push(level_row(&label, &pooled, pooled.iter().sum(), min_cell));
    }
    rows
}

/// The label of the row pooling the levels under `min_cell` rows.
#[must_use]
pub fn pooled_label(levels: usize, min_cell: u64) -> String {
    let plural = if levels == 1 { "" } else { "s" };
    format!("({levels} level{plural} with fewer than {min_cell} rows each, pooled)")
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::encode::encode_levels;
    use crate::data::{FeatureKind, ProtectedAttribute};

    #[test]
    fn levels_under_the_minimum_are_pooled_and_never_named() {
        // 40 rows of `common`, 3 of `rare-1`, 4 of `rare-2`: the two rare labels
        // must not appear; their 7 rows pool into one suppressed row.
        let mut values = vec!["common"; 40];
        values.extend(["rare-1"; 3]);
        values.extend(["rare-2"; 4]);
        let column = encode_levels(
            "occupation",
            FeatureKind::Categorical,
            values.iter().map(|v| Some(*v)),
        );
        let codes: Vec<u32> = (0..values.len() as u32).map(|i| i % 2).collect();
        let labels = vec!["a".to_string(), "b".to_string()];
        let group = ProtectedAttribute::from_codes("group".into(), labels, codes, 1);
        let target = Target::new(&group, 2, 0);
        let table = Contingency::from_codes(&column.codes, column.n_levels, target.codes(), 2);
        let rows = composition(&column, &table, &target, 10);
        assert_eq!(rows.len(), 2);
        assert_eq!(rows[0].label, "common");
        assert!(rows.iter().all(|r| !r.label.contains("rare")));
        assert_eq!(rows[1].label, pooled_label(2, 10));
        assert_eq!(rows[1].count, None, "7 pooled rows are under 10");
    }
}
