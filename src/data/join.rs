//! Attaching a new data source to the base table by a key column.
//!
//! Every base row is kept, in order (a left join); the new source's columns
//! are missing on base rows whose key it lacks. Nothing is dropped silently:
//! unmatched keys on either side and duplicated keys are counted for the report.
//! A key repeated in the new source keeps its first row.

use crate::error::InputError;
use polars::prelude::*;
use std::collections::{HashMap, HashSet};
use std::path::Path;

/// Counts describing how the new source matched the base table.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct JoinSummary {
    pub new_columns: Vec<String>,
    pub base_rows: usize,
    pub matched_rows: usize,
    pub unmatched_base_rows: usize,
    pub unmatched_source_rows: usize,
    pub duplicate_keys_in_source: usize,
    pub duplicate_keys_in_base: usize,
}

fn key_strings(
    path: &Path,
    frame: &DataFrame,
    key: &str,
) -> Result<Vec<Option<String>>, InputError> {
    let bad = |reason: String| InputError::BadColumn {
        path: path.to_path_buf(),
        column: key.to_string(),
        reason,
    };
    let column = frame.column(key).map_err(|e| bad(e.to_string()))?;
    let text = column
        .cast(&DataType::String)
        .map_err(|e| bad(e.to_string()))?;
    let values = text.str().map_err(|e| bad(e.to_string()))?;
    Ok(values.iter().map(|v| v.map(str::to_string)).collect())
}

/// Keys occurring more than once (missing keys never match and are not counted here).
fn repeated_keys(keys: &[Option<String>]) -> usize {
    let mut counts: HashMap<&str, usize> = HashMap::new();
    for key in keys.iter().flatten() {
        *counts.entry(key).or_default() += 1;
    }
    counts.values().filter(|&&c| c > 1).count()
}

/// Left-joins `source` onto `base` by `key`; returns the joined frame and the match counts.
pub fn attach_source(
    base: DataFrame,
    base_path: &Path,
    source: DataFrame,
    source_path: &Path,
    key: &str,
) -> Result<(DataFrame, JoinSummary), InputError> {
    let base_names: HashSet<String> = base
        .get_column_names()
        .iter()
        .map(|n| n.to_string())
        .collect();
    let new_columns: Vec<String> = source
        .get_column_names()
        .iter()
        .map(|n| n.to_string())
        .filter(|n| n != key)
        .collect();
    if let Some(clash) = new_columns.iter().find(|n| base_names.contains(*n)) {
        return Err(InputError::BadColumn {
            path: source_path.to_path_buf(),
            column: clash.clone(),
            reason: format!(
                "also exists in {}; rename it in one of the files",
                base_path.display()
            ),
        });
    }
    let base_keys = key_strings(base_path, &base, key)?;
    let source_keys = key_strings(source_path, &source, key)?;
    let mut first_row: HashMap<&str, usize> = HashMap::new();
    for (row, k) in source_keys.iter().enumerate() {
        if let Some(k) = k {
            first_row.entry(k.as_str()).or_insert(row);
        }
    }
    let keep: BooleanChunked = source_keys
        .iter()
        .enumerate()
        .map(|(row, k)| k.as_deref().is_some_and(|k| first_row[k] == row))
        .collect();
    let base_key_set: HashSet<&str> = base_keys.iter().flatten().map(String::as_str).collect();
    let matched_rows = base_keys
        .iter()
        .filter(|k| k.as_deref().is_some_and(|k| first_row.contains_key(k)))
        .count();
    let summary = JoinSummary {
        new_columns,
        base_rows: base.height(),
        matched_rows,
        unmatched_base_rows: base.height() - matched_rows,
        unmatched_source_rows: first_row
            .keys()
            .filter(|k| !base_key_set.contains(*k))
            .count()
            + source_keys.iter().filter(|k| k.is_none()).count(),
        duplicate_keys_in_source: repeated_keys(&source_keys),
        duplicate_keys_in_base: repeated_keys(&base_keys),
    };
    let join_error = |e: PolarsError| InputError::Format {
        path: source_path.to_path_buf(),
        reason: format!("cannot join on `{key}`: {e}"),
    };
    let source = source.filter(&keep).map_err(join_error)?;
    let as_text = |frame: DataFrame| frame.lazy().with_column(col(key).cast(DataType::String));
    let args = JoinArgs {
        maintain_order: MaintainOrderJoin::Left,
        ..JoinArgs::new(JoinType::Left)
    };
    let joined = as_text(base)
        .join(as_text(source), [col(key)], [col(key)], args)
        .collect()
        .map_err(join_error)?;
    Ok((joined, summary))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_unmatched_and_duplicated_keys_and_keeps_base_order() {
        let base = df!("id" => ["k3", "k1", "k2", "k9"], "x" => [1, 2, 3, 4]).unwrap();
        let source = df!("id" => ["k1", "k2", "k2", "k7"], "y" => ["a", "b", "c", "d"]).unwrap();
        let (joined, summary) = attach_source(
            base,
            Path::new("base.csv"),
            source,
            Path::new("new.csv"),
            "id",
        )
        .unwrap();
        assert_eq!(summary.matched_rows, 2);
        assert_eq!(summary.unmatched_base_rows, 2);
        assert_eq!(summary.unmatched_source_rows, 1);
        assert_eq!(summary.duplicate_keys_in_source, 1);
        assert_eq!(summary.new_columns, vec!["y"]);
        let ids: Vec<Option<&str>> = joined.column("id").unwrap().str().unwrap().iter().collect();
        assert_eq!(ids, vec![Some("k3"), Some("k1"), Some("k2"), Some("k9")]);
        let y: Vec<Option<&str>> = joined.column("y").unwrap().str().unwrap().iter().collect();
        assert_eq!(y, vec![None, Some("a"), Some("b"), None]);
    }
}
