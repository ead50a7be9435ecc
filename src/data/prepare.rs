//! Assigning roles to columns and encoding the analysis table once.

use super::encode::{encode_integer_coded, encode_levels, encode_numeric, number_label};
use super::kinds::{
    Distinct, KindRule, NumericProfile, collapsed_bins_note, numeric_kind, numeric_note,
    parse_number, parse_numbers, parse_numbers_lenient, text_kind, text_note,
};
use super::missing::{MissingTokens, TokenCounts};
use super::sample::stratified_sample;
use super::{
    ColumnReading, EncodedColumn, EncodedTable, FeatureKind, ProtectedAttribute, SkippedColumn,
};
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
    /// Columns read as numbers (quantile bins and raw values); fields that
    /// are not numbers become missing.
    pub numeric: Vec<String>,
    /// Band edges for numeric protected attributes (e.g. age).
    pub bands: BTreeMap<String, Vec<f64>>,
    /// Adds the combination of all protected attributes as one more attribute.
    pub intersect: bool,
    /// Whether a table without features is usable (`outputs` needs none;
    /// a scan does, so for it zero usable features is an input error).
    pub features_optional: bool,
}

impl Roles {
    /// A protected attribute named twice, or also given as the outcome, is a
    /// usage error (it would be scanned twice, or against itself).
    pub fn check_distinct(&self) -> Result<(), InputError> {
        for (i, name) in self.protected.iter().enumerate() {
            if self.protected[..i].contains(name) {
                return Err(InputError::Usage(format!(
                    "protected attribute `{name}` is given twice"
                )));
            }
            if self.outcome.as_ref() == Some(name) {
                return Err(InputError::Usage(format!(
                    "`{name}` is given both as a protected attribute and as the outcome"
                )));
            }
        }
        Ok(())
    }
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
    /// Field texts read as missing.
    pub missing: MissingTokens,
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
            missing: MissingTokens::default(),
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
        .chain(&roles.numeric)
        .chain(roles.bands.keys());
    for name in named {
        known(name)?;
    }
    if let Some(both) = roles.numeric.iter().find(|c| roles.categorical.contains(c)) {
        return Err(InputError::Usage(format!(
            "column `{both}` is given to both --numeric and --categorical; choose one"
        )));
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
    let features: Vec<String> = candidates
        .iter()
        .filter(|c| !not_feature.contains(c))
        .cloned()
        .collect();
    if features.is_empty() && !roles.features_optional {
        return Err(InputError::Format {
            path: path.to_path_buf(),
            reason: "no feature column to scan: every column named is protected, the outcome \
                     or excluded"
                .into(),
        });
    }
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

/// ", did you mean `a` or `b`?" for the closest names by edit distance; or,
/// when the header was read as one column that holds the name between
/// separators, the `--delimiter` that would split it.
fn suggest(name: &str, columns: &[String]) -> String {
    if let Some(separator) = other_separator(name, columns) {
        let shown = if separator == '\t' {
            "\\t".to_string()
        } else {
            separator.to_string()
        };
        return format!(
            " (the header is one column `{}`: is the field separator `{shown}`? pass --delimiter '{shown}')",
            columns[0]
        );
    }
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

/// The separator a one-column header holds when splitting it there yields `name`.
fn other_separator(name: &str, columns: &[String]) -> Option<char> {
    let [only] = columns else { return None };
    [';', '\t', '|', ',']
        .into_iter()
        .find(|&c| only.split(c).count() > 1 && only.split(c).any(|part| part.trim() == name))
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
pub(crate) enum Values<'a> {
    Text(Vec<Option<&'a str>>),
    Numbers(Vec<f64>),
}

/// The values of `column`, with fields matching a missing-value token read as
/// missing; also returns how many fields each token made missing.
pub(crate) fn values_of<'a>(
    path: &Path,
    column: &'a Column,
    missing: &MissingTokens,
) -> Result<(Values<'a>, TokenCounts), InputError> {
    let bad = |reason: String| InputError::BadColumn {
        path: path.to_path_buf(),
        column: column.name().to_string(),
        reason,
    };
    match column.dtype() {
        DataType::String => {
            let text = column.str().map_err(|e| bad(e.to_string()))?;
            let (fields, tokens) = missing.apply(text.iter());
            Ok((Values::Text(fields), tokens))
        }
        DataType::Boolean => {
            // A Parquet boolean is a two-level category, read as its text.
            let flags = column.bool().map_err(|e| bad(e.to_string()))?;
            let text = flags
                .iter()
                .map(|v| v.map(|b| if b { "true" } else { "false" }));
            let (fields, tokens) = missing.apply(text);
            Ok((Values::Text(fields), tokens))
        }
        dtype if dtype.is_primitive_numeric() => {
            let cast = column
                .cast(&DataType::Float64)
                .map_err(|e| bad(e.to_string()))?;
            let numbers = cast.f64().map_err(|e| bad(e.to_string()))?;
            Ok((
                Values::Numbers(numbers.iter().map(|v| v.unwrap_or(f64::NAN)).collect()),
                BTreeMap::new(),
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
    let mut readings = Vec::new();
    let mut labels: Vec<Vec<Option<String>>> = Vec::new();
    for name in &plan.protected {
        let (column_labels, tokens) = protected_labels(
            path,
            &protected_frame,
            name,
            roles.bands.get(name),
            &options.missing,
        )?;
        labels.push(column_labels);
        readings.push(ColumnReading {
            name: name.clone(),
            kind: None,
            missing_tokens: tokens,
            note: None,
        });
    }
    let outcome_labels = roles
        .outcome
        .as_ref()
        .map(|name| {
            protected_labels(path, &protected_frame, name, None, &options.missing)
                .map(|(labels, _)| labels)
        })
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
    let mut encoded: Vec<(Result<EncodedColumn, SkippedColumn>, ColumnReading)> = Vec::new();
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
    for (result, reading) in encoded {
        readings.push(reading);
        match result {
            Ok(column) => features.push(column),
            Err(skip) => skipped.push(skip),
        }
    }
    if features.is_empty() && !roles.features_optional {
        return Err(no_usable_feature(path, &skipped));
    }
    readings.retain(ColumnReading::is_notable);
    Ok(EncodedTable {
        source_rows,
        features,
        protected,
        outcome,
        skipped,
        missing_tokens: options.missing.tokens().to_vec(),
        readings,
    })
}

/// The error for a table left with no feature: every candidate was skipped.
fn no_usable_feature(path: &Path, skipped: &[SkippedColumn]) -> InputError {
    let reasons: Vec<String> = skipped
        .iter()
        .map(|s| format!("`{}` {}", s.name, s.reason))
        .collect();
    InputError::Format {
        path: path.to_path_buf(),
        reason: format!("no usable feature column ({})", reasons.join("; ")),
    }
}

/// How the user asked for a column to be read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Forced {
    /// By the kind rule.
    No,
    /// `--categorical`.
    Categorical,
    /// `--numeric`.
    Numeric,
}

/// Reads and encodes one feature of `frame`, keeping `rows` (all when `None`);
/// also says how it was read.
fn encode_named(
    path: &Path,
    frame: &DataFrame,
    name: &str,
    rows: Option<&[usize]>,
    roles: &Roles,
    options: &EncodeOptions,
) -> (Result<EncodedColumn, SkippedColumn>, ColumnReading) {
    let mut reading = ColumnReading {
        name: name.to_string(),
        kind: None,
        missing_tokens: TokenCounts::new(),
        note: None,
    };
    let values = frame
        .column(name)
        .map_err(|e| e.to_string())
        .and_then(|column| values_of(path, column, &options.missing).map_err(|e| e.to_string()));
    let (values, tokens) = match values {
        Ok(read) => read,
        Err(reason) => {
            let skip = SkippedColumn {
                name: name.to_string(),
                reason,
            };
            return (Err(skip), reading);
        }
    };
    reading.missing_tokens = tokens;
    let values = match rows {
        Some(rows) => select(values, rows),
        None => values,
    };
    let forced = if roles.categorical.iter().any(|c| c == name) {
        Forced::Categorical
    } else if roles.numeric.iter().any(|c| c == name) {
        Forced::Numeric
    } else {
        Forced::No
    };
    let (result, note) = encode_feature(name, values, forced, options);
    reading.kind = result.as_ref().ok().map(|c| c.kind);
    reading.note = note;
    (result, reading)
}

fn select<'a>(values: Values<'a>, rows: &[usize]) -> Values<'a> {
    match values {
        Values::Text(v) => Values::Text(rows.iter().map(|&r| v[r]).collect()),
        Values::Numbers(v) => Values::Numbers(rows.iter().map(|&r| v[r]).collect()),
    }
}

/// Encodes one feature, or says why it is skipped (all missing, constant:
/// one value on every row); also returns the note on a judged reading.
fn encode_feature(
    name: &str,
    values: Values<'_>,
    forced: Forced,
    options: &EncodeOptions,
) -> (Result<EncodedColumn, SkippedColumn>, Option<String>) {
    let skip = |reason: &str| SkippedColumn {
        name: name.to_string(),
        reason: reason.to_string(),
    };
    let (column, note) = match (values, forced) {
        (Values::Text(text), Forced::Categorical) => (
            encode_levels(name, FeatureKind::Categorical, text.iter().copied()),
            None,
        ),
        (Values::Text(text), Forced::Numeric) => {
            let (numbers, failed) = parse_numbers_lenient(text.iter().copied());
            let note = (failed > 0).then(|| {
                format!("--numeric: {failed} fields that are not numbers read as missing")
            });
            let (column, collapsed) = encode_binned(name, numbers, options);
            let notes: Vec<String> = note.into_iter().chain(collapsed).collect();
            (column, (!notes.is_empty()).then(|| notes.join("; ")))
        }
        (Values::Text(text), Forced::No) => match parse_numbers(text.iter().copied()) {
            Some(numbers) => encode_numbers(name, numbers, options),
            None => encode_text(name, &text, options),
        },
        (Values::Numbers(numbers), Forced::Categorical) => {
            let text: Vec<Option<String>> = numbers
                .iter()
                .map(|v| (!v.is_nan()).then(|| number_label(*v)))
                .collect();
            let column = encode_levels(
                name,
                FeatureKind::Categorical,
                text.iter().map(Option::as_deref),
            );
            (column, None)
        }
        (Values::Numbers(numbers), Forced::Numeric) => encode_binned(name, numbers, options),
        (Values::Numbers(numbers), Forced::No) => encode_numbers(name, numbers, options),
    };
    let result = if column.missing_count == column.codes.len() {
        Err(skip("all values missing"))
    } else if column.n_levels <= 1 {
        Err(skip("constant (one value on every row)"))
    } else {
        Ok(column)
    };
    (result, note)
}

fn encode_text(
    name: &str,
    text: &[Option<&str>],
    options: &EncodeOptions,
) -> (EncodedColumn, Option<String>) {
    let column = encode_levels(name, FeatureKind::Categorical, text.iter().copied());
    let present = column.codes.len() - column.missing_count;
    let count = column.labels.len() - usize::from(column.missing_code.is_some());
    let distinct = Distinct { count, present };
    let kind = text_kind(distinct, &options.kinds);
    let mut rows_per_code = vec![0usize; column.labels.len()];
    for &code in &column.codes {
        rows_per_code[code as usize] += 1;
    }
    let not_numbers = (0..count)
        .filter(|&code| parse_number(&column.labels[code]).is_none())
        .map(|code| rows_per_code[code])
        .sum();
    (
        EncodedColumn { kind, ..column },
        text_note(kind, distinct, not_numbers),
    )
}

/// Encodes a numeric column by the kind rule: boolean, integer-coded or binned.
fn encode_numbers(
    name: &str,
    numbers: Vec<f64>,
    options: &EncodeOptions,
) -> (EncodedColumn, Option<String>) {
    let profile = NumericProfile::of(&numbers);
    let kind = numeric_kind(&profile, &options.kinds);
    let note = numeric_note(&profile, kind, &options.kinds);
    match kind {
        FeatureKind::Boolean | FeatureKind::IntegerCoded => (
            EncodedColumn {
                kind,
                ..encode_integer_coded(name, numbers)
            },
            note,
        ),
        _ => {
            let (column, collapsed) = encode_binned(name, numbers, options);
            (column, collapsed.or(note))
        }
    }
}

/// Quantile bins and raw values; when most rows share one value and the bins
/// merge into one although the column has several values, one level per
/// distinct value instead (with a note saying so).
fn encode_binned(
    name: &str,
    numbers: Vec<f64>,
    options: &EncodeOptions,
) -> (EncodedColumn, Option<String>) {
    let column = encode_numeric(name, numbers, options.bins);
    let bins = column.n_levels - u32::from(column.missing_code.is_some());
    let Some(raw) = column.raw.as_ref().filter(|_| bins < 2) else {
        return (column, None);
    };
    let numbers: Vec<f64> = (0..column.codes.len()).map(|row| raw.value(row)).collect();
    let distinct = NumericProfile::of(&numbers).distinct.count;
    if distinct < 2 {
        return (column, None);
    }
    let levels = EncodedColumn {
        kind: FeatureKind::Numeric,
        ..encode_integer_coded(name, numbers)
    };
    (levels, Some(collapsed_bins_note(distinct, options.bins)))
}

/// Text label per source row of a protected attribute (`None` = missing),
/// banding numbers when band edges are given; also the missing-token counts.
fn protected_labels(
    path: &Path,
    frame: &DataFrame,
    name: &str,
    bands: Option<&Vec<f64>>,
    missing: &MissingTokens,
) -> Result<(Vec<Option<String>>, TokenCounts), InputError> {
    let column = frame.column(name).map_err(|e| InputError::BadColumn {
        path: path.to_path_buf(),
        column: name.to_string(),
        reason: e.to_string(),
    })?;
    let (values, tokens) = values_of(path, column, missing)?;
    let bad = |reason: String| InputError::BadProtected {
        path: path.to_path_buf(),
        column: name.to_string(),
        reason,
    };
    let labels = match (values, bands) {
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
    };
    Ok((labels, tokens))
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
            "outcome `{label}` has only {count} row(s); each outcome needs at least {} (one per fold)",
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
            "class `{label}` has only {count} row(s); each class needs at least {} (one per fold)",
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
        let one = vec!["sex;region;income".to_string()];
        assert!(suggest("region", &one).contains("--delimiter ';'"));
        let tabbed = vec!["sex\tregion".to_string()];
        assert!(suggest("sex", &tabbed).contains("--delimiter '\\t'"));
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
