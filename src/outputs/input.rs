//! Reading a scored file: the score, the decision (a column, a threshold or a
//! selection rate), the outcome, an optional segment column, the protected
//! attributes and the features, on the rows where every required value is present.

use crate::data::encode::{encode_levels, number_label};
use crate::data::kinds::parse_number;
use crate::data::load::{self, FileSummary, LoadOptions};
use crate::data::missing::MissingTokens;
use crate::data::prepare::{self, EncodeOptions, Roles, Values, values_of};
use crate::data::{EncodedTable, FeatureKind};
use crate::error::InputError;
use polars::prelude::{BooleanChunked, DataFrame, NewChunkedArray};
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// How the selected rows are decided.
#[derive(Debug, Clone, PartialEq)]
pub enum Selection {
    /// A 0/1 column: 1 = selected.
    Column(String),
    /// Selected when the score is at least this.
    Threshold(f64),
    /// The given share of rows with the highest scores (ties at the cut all selected).
    Rate(f64),
}

/// What to read from the scored file.
#[derive(Debug, Clone)]
pub struct ScoredSpec {
    pub path: PathBuf,
    pub load: LoadOptions,
    /// Protected attributes, bands, `--intersect` and `--categorical` (features only).
    pub roles: Roles,
    pub score: String,
    pub selection: Selection,
    pub outcome: Option<String>,
    pub segment: Option<String>,
    pub encode: EncodeOptions,
}

/// A column read as levels: one code per row over code-point-sorted labels (`<missing>` last).
#[derive(Debug, Clone)]
pub struct Levels {
    pub name: String,
    pub labels: Vec<String>,
    pub codes: Vec<u32>,
}

/// The analysis rows of a scored file.
#[derive(Debug, Clone)]
pub struct ScoredData {
    pub summary: FileSummary,
    /// Protected attributes and encoded features, on the analysed rows.
    pub table: EncodedTable,
    pub score: Vec<f64>,
    pub selected: Vec<bool>,
    /// The score threshold in use (given, or derived from the selection rate).
    pub threshold: Option<f64>,
    pub outcome: Option<Vec<bool>>,
    pub segment: Option<Levels>,
    /// Rows dropped, by reason (e.g. "score missing").
    pub dropped: BTreeMap<String, usize>,
}

/// Checks, reads and aligns every column of a scored file.
pub fn read_scored(spec: &ScoredSpec) -> Result<ScoredData, InputError> {
    let path = spec.path.as_path();
    spec.roles.check_distinct()?;
    let summary = load::inspect(path, spec.load)?;
    let mut roles = spec.roles.clone();
    roles.outcome = None;
    let features = roles.features.take().unwrap_or_default();
    // A segment column may also be a feature; the score, decision and
    // outcome never are (the outcome is checked here, as 0/1).
    roles.exclude = role_columns(spec)
        .into_iter()
        .chain(spec.outcome.iter().cloned())
        .filter(|c| !features.contains(c))
        .collect();
    roles.features = Some(features);
    roles.features_optional = true;
    let plan = prepare::plan_columns(path, &summary.columns, &roles)?;
    let mut needed = plan.needed();
    needed.extend(role_columns(spec));
    needed.extend(spec.outcome.iter().cloned());
    needed.sort();
    needed.dedup();
    let frame = load::read_columns(&summary, &needed, spec.load)?;
    let missing = &spec.encode.missing;
    let (keep, dropped) = complete_rows(
        &Columns {
            path,
            frame: &frame,
            missing,
        },
        spec,
    )?;
    let frame = frame
        .filter(&BooleanChunked::from_slice("keep".into(), &keep))
        .map_err(|e| InputError::Format {
            path: path.to_path_buf(),
            reason: e.to_string(),
        })?;
    if frame.height() == 0 {
        return Err(InputError::Format {
            path: path.to_path_buf(),
            reason: "no row has every required value (score, decision, outcome, protected)".into(),
        });
    }
    let table = prepare::encode_table(path, &frame, &plan, &roles, &spec.encode)?;
    let columns = Columns {
        path,
        frame: &frame,
        missing,
    };
    let score = numbers(&columns, &spec.score, "score")?;
    let (selected, threshold) = match &spec.selection {
        Selection::Column(column) => (binary(&columns, column, "decision")?, None),
        Selection::Threshold(t) => (select_at(path, &spec.score, &score, *t)?, Some(*t)),
        Selection::Rate(share) => {
            let t = rate_threshold(&score, *share);
            (select_at(path, &spec.score, &score, t)?, Some(t))
        }
    };
    let outcome = match &spec.outcome {
        Some(column) => Some(binary(&columns, column, "outcome")?),
        None => None,
    };
    let segment = match &spec.segment {
        Some(column) => Some(levels(&columns, column)?),
        None => None,
    };
    Ok(ScoredData {
        summary,
        table,
        score,
        selected,
        threshold,
        outcome,
        segment,
        dropped,
    })
}

/// Score, decision and segment columns: read, checked, never features.
fn role_columns(spec: &ScoredSpec) -> Vec<String> {
    let mut columns = vec![spec.score.clone()];
    if let Selection::Column(decision) = &spec.selection {
        columns.push(decision.clone());
    }
    columns.extend(spec.segment.iter().cloned());
    columns
}

/// The read columns of one file and the field texts read as missing
/// (`--na-values`, as `scan` reads them).
struct Columns<'a> {
    path: &'a Path,
    frame: &'a DataFrame,
    missing: &'a MissingTokens,
}

impl<'a> Columns<'a> {
    /// A column's values, missing tokens read as missing.
    fn values(&self, column: &str) -> Result<Values<'a>, InputError> {
        let values = self
            .frame
            .column(column)
            .map_err(|e| bad(self.path, column, e.to_string()))?;
        values_of(self.path, values, self.missing).map(|(values, _)| values)
    }
}

fn bad(path: &Path, column: &str, reason: String) -> InputError {
    InputError::BadColumn {
        path: path.to_path_buf(),
        column: column.to_string(),
        reason,
    }
}

/// Per row: is it missing in `column`?
fn missing_mask(columns: &Columns, column: &str) -> Result<Vec<bool>, InputError> {
    Ok(match columns.values(column)? {
        Values::Text(text) => text.iter().map(Option::is_none).collect(),
        Values::Numbers(numbers) => numbers.iter().map(|v| v.is_nan()).collect(),
    })
}

/// Rows where the score, the decision, the outcome and every protected
/// attribute are present, and how many rows each missing column drops.
fn complete_rows(
    columns: &Columns,
    spec: &ScoredSpec,
) -> Result<(Vec<bool>, BTreeMap<String, usize>), InputError> {
    let mut required: Vec<(String, &str)> = vec![(spec.score.clone(), "score")];
    if let Selection::Column(decision) = &spec.selection {
        required.push((decision.clone(), "decision"));
    }
    if let Some(outcome) = &spec.outcome {
        required.push((outcome.clone(), "outcome"));
    }
    for protected in &spec.roles.protected {
        required.push((protected.clone(), "protected attribute"));
    }
    let mut keep = vec![true; columns.frame.height()];
    let mut dropped = BTreeMap::new();
    for (column, role) in &required {
        let missing = missing_mask(columns, column)?;
        let newly = keep
            .iter()
            .zip(&missing)
            .filter(|(k, m)| **k && **m)
            .count();
        if newly > 0 {
            dropped.insert(format!("{role} `{column}` missing"), newly);
        }
        for (k, m) in keep.iter_mut().zip(missing) {
            *k &= !m;
        }
    }
    Ok((keep, dropped))
}

/// The values of a column that must be numeric on every (present) row.
fn numbers(columns: &Columns, column: &str, role: &str) -> Result<Vec<f64>, InputError> {
    let path = columns.path;
    match columns.values(column)? {
        Values::Numbers(numbers) => Ok(numbers),
        Values::Text(text) => text
            .iter()
            .map(|field| {
                let field = field.unwrap_or("");
                parse_number(field).ok_or_else(|| {
                    bad(
                        path,
                        column,
                        format!("the {role} must be numeric, but a row holds `{field}`"),
                    )
                })
            })
            .collect(),
    }
}

/// A 0/1 column as booleans (`true`/`false`, `yes`/`no`, `t`/`f`, `y`/`n`
/// in any case are read too); any other value is an input error.
fn binary(columns: &Columns, column: &str, role: &str) -> Result<Vec<bool>, InputError> {
    let path = columns.path;
    let not_binary = |value: String| {
        bad(
            path,
            column,
            format!(
                "the {role} must be 0 or 1 (or true/false, yes/no) on every row, but a row holds `{value}`"
            ),
        )
    };
    match columns.values(column)? {
        Values::Numbers(numbers) => numbers
            .iter()
            .map(|&v| match v {
                0.0 => Ok(false),
                1.0 => Ok(true),
                other => Err(not_binary(other.to_string())),
            })
            .collect(),
        Values::Text(text) => text
            .iter()
            .map(|field| {
                let field = field.unwrap_or("").trim();
                binary_token(field).ok_or_else(|| not_binary(field.to_string()))
            })
            .collect(),
    }
}

/// The truth value a field spells, if it spells one.
fn binary_token(field: &str) -> Option<bool> {
    match field.to_ascii_lowercase().as_str() {
        "1" | "true" | "t" | "yes" | "y" => Some(true),
        "0" | "false" | "f" | "no" | "n" => Some(false),
        number => match parse_number(number) {
            Some(0.0) => Some(false),
            Some(1.0) => Some(true),
            _ => None,
        },
    }
}

/// Selected = score ≥ `threshold`, which must lie within the scores' range.
fn select_at(
    path: &Path,
    column: &str,
    score: &[f64],
    threshold: f64,
) -> Result<Vec<bool>, InputError> {
    let (low, high) = score
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &s| {
            (l.min(s), h.max(s))
        });
    if !(low..=high).contains(&threshold) {
        return Err(bad(
            path,
            column,
            format!("threshold {threshold} is outside the score range [{low}, {high}]"),
        ));
    }
    Ok(score.iter().map(|&s| s >= threshold).collect())
}

/// The score of the k-th highest row, k = max(1, round(share · rows)):
/// selecting every score at or above it selects `share` of the rows (more on ties).
#[must_use]
pub fn rate_threshold(score: &[f64], share: f64) -> f64 {
    let mut sorted = score.to_vec();
    sorted.sort_by(|a, b| b.total_cmp(a));
    let k = ((share * sorted.len() as f64).round() as usize).clamp(1, sorted.len());
    sorted[k - 1]
}

/// A column's values as sorted levels, missing as its own level.
fn levels(columns: &Columns, column: &str) -> Result<Levels, InputError> {
    let text: Vec<Option<String>> = match columns.values(column)? {
        Values::Text(text) => text.iter().map(|v| v.map(str::to_string)).collect(),
        Values::Numbers(numbers) => numbers
            .iter()
            .map(|v| (!v.is_nan()).then(|| number_label(*v)))
            .collect(),
    };
    let encoded = encode_levels(
        column,
        FeatureKind::Categorical,
        text.iter().map(Option::as_deref),
    );
    Ok(Levels {
        name: column.to_string(),
        labels: encoded.labels,
        codes: encoded.codes,
    })
}

#[cfg(test)]
mod tests {
    use super::binary_token;

    #[test]
    fn truth_values_are_read_in_their_usual_spellings() {
        for yes in ["1", "1.0", "true", "TRUE", "Yes", "y", "T"] {
            assert_eq!(binary_token(yes), Some(true), "{yes}");
        }
        for no in ["0", "0.0", "false", "False", "NO", "n", "f"] {
            assert_eq!(binary_token(no), Some(false), "{no}");
        }
        for neither in ["2", "0.5", "maybe", "", "approved"] {
            assert_eq!(binary_token(neither), None, "{neither}");
        }
    }
}
