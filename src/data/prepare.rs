//! Assigning roles to columns and encoding the analysis table once.

use super::encode::{encode_integer_coded, encode_levels, encode_numeric, number_label};
use super::kinds::{Distinct, KindRule, numeric_kind, parse_numbers, text_kind};
use super::sample::stratified_sample;
use super::{EncodedColumn, EncodedTable, FeatureKind, ProtectedAttribute, SkippedColumn};
use crate::error::InputError;
use polars::prelude::{Column, DataFrame, DataType};
use rayon::prelude::*;
use std::collections::{BTreeMap, HashSet};
use std::path::{Path, PathBuf};

/// Which columns play which role.
#[derive(Debug, Clone, Default)]
pub struct Roles {
    pub protected: Vec<String>,
    pub outcome: Option<String>,
    pub exclude: Vec<String>,
    /// Restricts the features to these columns when given.
    pub features: Option<Vec<String>>,
    /// Columns read as categories even if they look numeric.
    pub categorical: Vec<String>,
    /// Band edges for numeric protected attributes (e.g. age).
    pub bands: BTreeMap<String, Vec<f64>>,
    /// Adds the combination of all protected attributes as one more attribute.
    pub intersect: bool,
}

/// Encoding settings.
#[derive(Debug, Clone)]
pub struct EncodeOptions {
    pub bins: usize,
    pub max_classes: usize,
    /// Each protected class needs at least this many rows (the fold count).
    pub min_class_rows: usize,
    pub sample: Option<usize>,
    pub seed: u64,
    pub kinds: KindRule,
}

impl Default for EncodeOptions {
    fn default() -> Self {
        Self {
            bins: 32,
            max_classes: 50,
            min_class_rows: 5,
            sample: None,
            seed: 0,
            kinds: KindRule::default(),
        }
    }
}

/// The columns to read, by role, after checking every name against the file.
#[derive(Debug, Clone)]
pub struct ColumnPlan {
    pub protected: Vec<String>,
    pub features: Vec<String>,
    pub excluded: Vec<String>,
}

impl ColumnPlan {
    /// Every column that must be read.
    #[must_use]
    pub fn needed(&self) -> Vec<String> {
        self.protected
            .iter()
            .chain(&self.features)
            .cloned()
            .collect()
    }
}

/// Checks the named columns exist and decides the feature list.
pub fn plan_columns(
    path: &Path,
    columns: &[String],
    roles: &Roles,
) -> Result<ColumnPlan, InputError> {
    let known = |name: &String| -> Result<(), InputError> {
        if columns.contains(name) {
            Ok(())
        } else {
            Err(InputError::UnknownColumn {
                path: path.to_path_buf(),
                column: name.clone(),
                suggestion: suggest(name, columns),
            })
        }
    };
    let named = roles
        .protected
        .iter()
        .chain(&roles.outcome)
        .chain(&roles.exclude)
        .chain(roles.features.iter().flatten())
        .chain(&roles.categorical)
        .chain(roles.bands.keys());
    for name in named {
        known(name)?;
    }
    if roles.protected.is_empty() {
        return Err(InputError::Usage(
            "give at least one --protected column".into(),
        ));
    }
    let not_feature: HashSet<&String> = roles
        .protected
        .iter()
        .chain(&roles.outcome)
        .chain(&roles.exclude)
        .collect();
    let candidates = roles.features.as_deref().unwrap_or(columns);
    let features = candidates
        .iter()
        .filter(|c| !not_feature.contains(c))
        .cloned()
        .collect();
    let excluded = columns
        .iter()
        .filter(|c| not_feature.contains(c) && !roles.protected.contains(c))
        .cloned()
        .collect();
    Ok(ColumnPlan {
        protected: roles.protected.clone(),
        features,
        excluded,
    })
}

/// ", did you mean `a` or `b`?" for the closest names by edit distance.
fn suggest(name: &str, columns: &[String]) -> String {
    let lower = name.to_lowercase();
    let mut scored: Vec<(usize, &String)> = columns
        .iter()
        .map(|c| (edit_distance(&lower, &c.to_lowercase()), c))
        .filter(|(d, c)| *d <= (c.chars().count().max(name.chars().count()) / 2).max(2))
        .collect();
    scored.sort();
    let names: Vec<String> = scored
        .iter()
        .take(3)
        .map(|(_, c)| format!("`{c}`"))
        .collect();
    if names.is_empty() {
        format!(" (columns are: {})", preview(columns))
    } else {
        format!("; did you mean {}?", names.join(" or "))
    }
}

fn preview(columns: &[String]) -> String {
    let shown: Vec<&str> = columns.iter().take(12).map(String::as_str).collect();
    let more = columns.len().saturating_sub(shown.len());
    let tail = if more > 0 {
        format!(", … {more} more")
    } else {
        String::new()
    };
    format!("{}{tail}", shown.join(", "))
}

/// Levenshtein distance over characters.
fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut previous: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut current = vec![i + 1; b.len() + 1];
        for (j, &cb) in b.iter().enumerate() {
            let substitute = previous[j] + usize::from(ca != cb);
            current[j + 1] = substitute.min(previous[j + 1] + 1).min(current[j] + 1);
        }
        previous = current;
    }
    previous[b.len()]
}

/// A column's values as read: text fields or numbers (`NaN` = missing).
enum Values<'a> {
    Text(Vec<Option<&'a str>>),
    Numbers(Vec<f64>),
}

fn values_of<'a>(path: &Path, column: &'a Column) -> Result<Values<'a>, InputError> {
    let bad = |reason: String| InputError::BadColumn {
        path: path.to_path_buf(),
        column: column.name().to_string(),
        reason,
    };
    match column.dtype() {
        DataType::String => Ok(Values::Text(
            column
                .str()
                .map_err(|e| bad(e.to_string()))?
                .iter()
                .collect(),
        )),
        dtype if dtype.is_primitive_numeric() => {
            let cast = column
                .cast(&DataType::Float64)
                .map_err(|e| bad(e.to_string()))?;
            let numbers = cast.f64().map_err(|e| bad(e.to_string()))?;
            Ok(Values::Numbers(
                numbers.iter().map(|v| v.unwrap_or(f64::NAN)).collect(),
            ))
        }
        other => Err(bad(format!(
            "type {other} is not supported; store it as text or numbers"
        ))),
    }
}

/// Where [`encode_table`] gets its columns: a frame already in memory, or a
/// file read a few columns at a time (see [`crate::data::load::FileColumns`]).
pub trait ColumnSource: Sync {
    /// A frame holding the named columns.
    fn read(&self, columns: &[String]) -> Result<DataFrame, InputError>;
}

impl ColumnSource for DataFrame {
    fn read(&self, columns: &[String]) -> Result<DataFrame, InputError> {
        self.select(columns.iter().map(String::as_str))
            .map_err(|e| InputError::Usage(format!("columns {}: {e}", columns.join(", "))))
    }
}

/// Memory allowed for the text of one batch of feature columns: the columns
/// are read and encoded a batch at a time, so only their codes stay.
const BATCH_TEXT_BYTES: usize = 96 << 20;
/// Bytes a text value takes in a frame (a 16-byte view plus a typical field).
const TEXT_VALUE_BYTES: usize = 24;

/// Encodes the protected attributes and features of `source` into an [`EncodedTable`].
pub fn encode_table(
    path: &Path,
    source: &dyn ColumnSource,
    plan: &ColumnPlan,
    roles: &Roles,
    options: &EncodeOptions,
) -> Result<EncodedTable, InputError> {
    let targets: Vec<String> = plan
        .protected
        .iter()
        .chain(&roles.outcome)
        .cloned()
        .collect();
    let protected_frame = source.read(&targets)?;
    let source_rows = protected_frame.height();
    let labels: Vec<Vec<Option<String>>> = plan
        .protected
        .iter()
        .map(|name| protected_labels(path, &protected_frame, name, roles.bands.get(name)))
        .collect::<Result<_, _>>()?;
    let outcome_labels = roles
        .outcome
        .as_ref()
        .map(|name| protected_labels(path, &protected_frame, name, None))
        .transpose()?;
    drop(protected_frame);
    let mut kept: Vec<usize> = (0..source_rows)
        .filter(|&r| labels.iter().all(|l| l[r].is_some()))
        .collect();
    let mut protected = build_protected(path, plan, &labels, &kept, roles.intersect)?;
    let mut outcome_missing = 0;
    if let Some(outcome) = &outcome_labels {
        let before = kept.len();
        kept.retain(|&r| outcome[r].is_some());
        outcome_missing = before - kept.len();
        if outcome_missing > 0 {
            protected = build_protected(path, plan, &labels, &kept, roles.intersect)?;
        }
    }
    if kept.is_empty() {
        return Err(InputError::BadProtected {
            path: path.to_path_buf(),
            column: plan.protected.join(", "),
            reason: "is missing on every row".into(),
        });
    }
    if let Some(target) = options.sample {
        let first = &protected[0];
        let rows = stratified_sample(&first.codes, first.n_classes(), target, options.seed);
        kept = rows.iter().map(|&r| kept[r]).collect();
        protected = build_protected(path, plan, &labels, &kept, roles.intersect)?;
    }
    for attribute in &protected {
        check_protected(path, attribute, options)?;
    }
    let outcome = match (&roles.outcome, &outcome_labels) {
        (Some(name), Some(outcome)) => Some(build_outcome(
            path,
            name,
            outcome,
            &kept,
            outcome_missing,
            options,
        )?),
        _ => None,
    };
    let rows = if kept.len() == source_rows {
        None
    } else {
        Some(kept.as_slice())
    };
    let batch = (BATCH_TEXT_BYTES / (source_rows.max(1) * TEXT_VALUE_BYTES)).max(2);
    let mut encoded: Vec<Result<EncodedColumn, SkippedColumn>> = Vec::new();
    for names in plan.features.chunks(batch) {
        let frame = source.read(names)?;
        if frame.height() != source_rows {
            // Each batch reads the file again; a file replaced meanwhile must not mix.
            return Err(InputError::Format {
                path: path.to_path_buf(),
                reason: format!(
                    "changed while being read ({} rows, then {}); scan it again",
                    source_rows,
                    frame.height()
                ),
            });
        }
        encoded.par_extend(
            names
                .par_iter()
                .map(|name| encode_named(path, &frame, name, rows, roles, options)),
        );
    }
    let mut features = Vec::new();
    let mut skipped: Vec<SkippedColumn> = plan
        .excluded
        .iter()
        .map(|name| SkippedColumn {
            name: name.clone(),
            reason: if roles.outcome.as_ref() == Some(name) {
                "outcome".into()
            } else {
                "excluded".into()
            },
        })
        .collect();
    for result in encoded {
        match result {
            Ok(column) => features.push(column),
            Err(skip) => skipped.push(skip),
        }
    }
    Ok(EncodedTable {
        source_rows,
        features,
        protected,
        outcome,
        skipped,
    })
}

/// Reads and encodes one feature of `frame`, keeping `rows` (all when `None`).
fn encode_named(
    path: &Path,
    frame: &DataFrame,
    name: &str,
    rows: Option<&[usize]>,
    roles: &Roles,
    options: &EncodeOptions,
) -> Result<EncodedColumn, SkippedColumn> {
    let skip = |reason: String| SkippedColumn {
        name: name.to_string(),
        reason,
    };
    let column = frame.column(name).map_err(|e| skip(e.to_string()))?;
    let values = values_of(path, column).map_err(|e| skip(e.to_string()))?;
    let values = match rows {
        Some(rows) => select(values, rows),
        None => values,
    };
    let categorical = roles.categorical.iter().any(|c| c == name);
    encode_feature(name, values, categorical, options)
}

fn select<'a>(values: Values<'a>, rows: &[usize]) -> Values<'a> {
    match values {
        Values::Text(v) => Values::Text(rows.iter().map(|&r| v[r]).collect()),
        Values::Numbers(v) => Values::Numbers(rows.iter().map(|&r| v[r]).collect()),
    }
}

/// Encodes one feature, or says why it is skipped (all missing, constant).
fn encode_feature(
    name: &str,
    values: Values<'_>,
    force_categorical: bool,
    options: &EncodeOptions,
) -> Result<EncodedColumn, SkippedColumn> {
    let skip = |reason: &str| SkippedColumn {
        name: name.to_string(),
        reason: reason.to_string(),
    };
    let column = match values {
        Values::Text(text) if force_categorical => {
            encode_levels(name, FeatureKind::Categorical, text.iter().copied())
        }
        Values::Text(text) => match parse_numbers(text.iter().copied()) {
            Some(numbers) => encode_numbers(name, numbers, Some(&text), options),
            None => encode_text(name, &text, options),
        },
        Values::Numbers(numbers) if force_categorical => {
            let text: Vec<Option<String>> = numbers
                .iter()
                .map(|v| (!v.is_nan()).then(|| number_label(*v)))
                .collect();
            encode_levels(
                name,
                FeatureKind::Categorical,
                text.iter().map(Option::as_deref),
            )
        }
        Values::Numbers(numbers) => encode_numbers(name, numbers, None, options),
    };
    if column.missing_count == column.codes.len() {
        Err(skip("all values missing"))
    } else if column.n_levels <= 1 {
        Err(skip("constant (one value on every row)"))
    } else {
        Ok(column)
    }
}

fn encode_text(name: &str, text: &[Option<&str>], options: &EncodeOptions) -> EncodedColumn {
    let column = encode_levels(name, FeatureKind::Categorical, text.iter().copied());
    let present = column.codes.len() - column.missing_count;
    let count = column.labels.len() - usize::from(column.missing_code.is_some());
    let kind = text_kind(Distinct { count, present }, &options.kinds);
    EncodedColumn { kind, ..column }
}

fn encode_numbers(
    name: &str,
    numbers: Vec<f64>,
    text: Option<&[Option<&str>]>,
    options: &EncodeOptions,
) -> EncodedColumn {
    match numeric_kind(&numbers, &options.kinds) {
        FeatureKind::Boolean => EncodedColumn {
            kind: FeatureKind::Boolean,
            ..encode_integer_coded(name, numbers)
        },
        FeatureKind::IntegerCoded => encode_integer_coded(name, numbers),
        FeatureKind::IdentifierLike => {
            let owned: Vec<Option<String>>;
            let fields: Vec<Option<&str>> = match text {
                Some(t) => t.to_vec(),
                None => {
                    owned = numbers
                        .iter()
                        .map(|v| (!v.is_nan()).then(|| number_label(*v)))
                        .collect();
                    owned.iter().map(Option::as_deref).collect()
                }
            };
            encode_levels(name, FeatureKind::IdentifierLike, fields.into_iter())
        }
        _ => encode_numeric(name, numbers, options.bins),
    }
}

/// Text label per source row of a protected attribute (`None` = missing),
/// banding numbers when band edges are given.
fn protected_labels(
    path: &Path,
    frame: &DataFrame,
    name: &str,
    bands: Option<&Vec<f64>>,
) -> Result<Vec<Option<String>>, InputError> {
    let column = frame.column(name).map_err(|e| InputError::BadColumn {
        path: path.to_path_buf(),
        column: name.to_string(),
        reason: e.to_string(),
    })?;
    let values = values_of(path, column)?;
    let bad = |reason: String| InputError::BadProtected {
        path: path.to_path_buf(),
        column: name.to_string(),
        reason,
    };
    Ok(match (values, bands) {
        (Values::Text(text), None) => text.iter().map(|v| v.map(str::to_string)).collect(),
        (Values::Numbers(numbers), None) => numbers
            .iter()
            .map(|v| (!v.is_nan()).then(|| number_label(*v)))
            .collect(),
        (Values::Text(text), Some(edges)) => {
            let numbers = parse_numbers(text.iter().copied()).ok_or_else(|| {
                bad("has non-numeric values, so it cannot be banded with --band".into())
            })?;
            band_labels(&numbers, edges)
        }
        (Values::Numbers(numbers), Some(edges)) => band_labels(&numbers, edges),
    })
}

/// Band label of each value for ascending edges `e_0 < … < e_m`:
/// `<e_0`, `[e_i, e_{i+1})`, `≥e_m`. Labels sort in band order as zero-padded ranks.
fn band_labels(numbers: &[f64], edges: &[f64]) -> Vec<Option<String>> {
    let names: Vec<String> = (0..=edges.len())
        .map(|i| match i {
            0 => format!("<{}", edges[0]),
            i if i == edges.len() => format!("≥{}", edges[i - 1]),
            i => format!("{}–{}", edges[i - 1], edges[i]),
        })
        .enumerate()
        .map(|(i, name)| format!("{i:02} {name}"))
        .collect();
    numbers
        .iter()
        .map(|&v| (!v.is_nan()).then(|| names[edges.partition_point(|&e| e <= v)].clone()))
        .collect()
}

fn build_protected(
    path: &Path,
    plan: &ColumnPlan,
    labels: &[Vec<Option<String>>],
    rows: &[usize],
    intersect: bool,
) -> Result<Vec<ProtectedAttribute>, InputError> {
    let dropped = labels[0].len() - rows.len();
    let mut attributes: Vec<ProtectedAttribute> = plan
        .protected
        .iter()
        .zip(labels)
        .map(|(name, l)| {
            attribute_from(name.clone(), rows.iter().map(|&r| l[r].as_deref()), dropped)
        })
        .collect();
    if intersect && labels.len() > 1 {
        let combined: Vec<String> = rows
            .iter()
            .map(|&r| {
                labels
                    .iter()
                    .map(|l| l[r].as_deref().unwrap_or(""))
                    .collect::<Vec<_>>()
                    .join(" × ")
            })
            .collect();
        let name = plan.protected.join(" × ");
        attributes.push(attribute_from(
            name,
            combined.iter().map(|s| Some(s.as_str())),
            dropped,
        ));
    }
    if attributes.is_empty() {
        return Err(InputError::Usage(format!(
            "{}: no protected attribute",
            path.display()
        )));
    }
    Ok(attributes)
}

fn attribute_from<'a>(
    name: String,
    values: impl Iterator<Item = Option<&'a str>> + Clone,
    dropped: usize,
) -> ProtectedAttribute {
    let column = encode_levels(&name, FeatureKind::Categorical, values);
    ProtectedAttribute::from_codes(name, column.labels, column.codes, dropped)
}

/// Whether an outcome label reads as the positive outcome: the number 1, or
/// `true`, `yes` or `y` in any case. With no such label, the rarer class is
/// positive (as for protected attributes).
fn reads_positive(label: &str) -> bool {
    let lower = label.trim().to_lowercase();
    matches!(lower.as_str(), "true" | "yes" | "y") || lower.parse::<f64>() == Ok(1.0)
}

/// The outcome on the kept rows: binary, each class with at least one row per fold.
fn build_outcome(
    path: &Path,
    name: &str,
    labels: &[Option<String>],
    rows: &[usize],
    dropped: usize,
    options: &EncodeOptions,
) -> Result<ProtectedAttribute, InputError> {
    let mut outcome = attribute_from(
        name.to_string(),
        rows.iter().map(|&r| labels[r].as_deref()),
        dropped,
    );
    if let Some(label) = outcome.labels.iter().find(|l| reads_positive(l)).cloned() {
        outcome = outcome.with_positive(&label);
    }
    let bad = |reason: String| InputError::BadColumn {
        path: path.to_path_buf(),
        column: name.to_string(),
        reason,
    };
    if !outcome.is_binary() {
        return Err(bad(format!(
            "the outcome must have exactly two values (e.g. 0/1); found {} ({}); \
             multi-class and numeric outcomes are not supported yet",
            outcome.n_classes(),
            outcome
                .labels
                .iter()
                .take(5)
                .cloned()
                .collect::<Vec<_>>()
                .join(", ")
        )));
    }
    if let Some((label, &count)) = outcome
        .labels
        .iter()
        .zip(&outcome.counts)
        .find(|(_, c)| **c < options.min_class_rows)
    {
        return Err(bad(format!(
            "outcome `{label}` has only {count} rows; each outcome needs at least {} (one per fold)",
            options.min_class_rows
        )));
    }
    Ok(outcome)
}

fn check_protected(
    path: &Path,
    attribute: &ProtectedAttribute,
    options: &EncodeOptions,
) -> Result<(), InputError> {
    let bad = |reason: String| InputError::BadProtected {
        path: PathBuf::from(path),
        column: attribute.name.clone(),
        reason,
    };
    let k = attribute.n_classes();
    if k < 2 {
        return Err(bad(format!(
            "has a single class (`{}`) on the rows analysed; nothing to recover",
            attribute.labels.first().map_or("", String::as_str)
        )));
    }
    if k > options.max_classes {
        return Err(bad(format!(
            "has {k} classes, more than the limit of {} (raise --max-classes or band it with --band)",
            options.max_classes
        )));
    }
    if let Some((label, &count)) = attribute
        .labels
        .iter()
        .zip(&attribute.counts)
        .find(|(_, c)| **c < options.min_class_rows)
    {
        return Err(bad(format!(
            "class `{label}` has only {count} rows; each class needs at least {} (one per fold)",
            options.min_class_rows
        )));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn suggestions_find_close_names() {
        let columns = vec![
            "region".to_string(),
            "income".to_string(),
            "age".to_string(),
        ];
        assert!(suggest("regoin", &columns).contains("`region`"));
        assert!(suggest("zzzzzzzz", &columns).contains("columns are"));
    }

    #[test]
    fn bands_are_ordered_and_half_open() {
        let labels = band_labels(&[17.0, 18.0, 30.0, 65.0, f64::NAN], &[18.0, 25.0, 65.0]);
        assert_eq!(labels[0].as_deref(), Some("00 <18"));
        assert_eq!(labels[1].as_deref(), Some("01 18–25"));
        assert_eq!(labels[2].as_deref(), Some("02 25–65"));
        assert_eq!(labels[3].as_deref(), Some("03 ≥65"));
        assert_eq!(labels[4], None);
    }
}
