//! Data loading, roles, kind inference and one-time encoding.
//!
//! Everything downstream works on [`EncodedTable`]: compact `u32` codes per
//! column plus the raw `f64` values of numeric columns. This module knows about
//! files; nothing after it does.

pub mod demo;
pub mod encode;
pub(crate) mod folds;
pub(crate) mod join;
pub(crate) mod kinds;
pub mod load;
pub mod missing;
pub mod prepare;
pub(crate) mod sample;

use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// How a column is interpreted; recorded in the report for every feature.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum FeatureKind {
    /// Real-valued; encoded as quantile bins plus a missing bin.
    Numeric,
    /// Two values (0/1, yes/no, true/false).
    Boolean,
    /// Text levels; one code per level.
    Categorical,
    /// Whole numbers with few enough distinct values (a rating, a branch
    /// number): one code per value, raw values kept for their order.
    IntegerCoded,
    /// Text with nearly every value distinct (a reference number); one code per value.
    IdentifierLike,
}

impl FeatureKind {
    /// The name used in reports.
    #[must_use]
    pub fn as_str(self) -> &'static str {
        match self {
            Self::Numeric => "numeric",
            Self::Boolean => "boolean",
            Self::Categorical => "categorical",
            Self::IntegerCoded => "integer-coded",
            Self::IdentifierLike => "identifier-like",
        }
    }
}

/// One feature encoded once into codes `0..n_levels` (missing has its own code).
#[derive(Debug, Clone)]
pub struct EncodedColumn {
    pub name: String,
    pub kind: FeatureKind,
    /// One code per row, each `< n_levels`.
    pub codes: Vec<u32>,
    /// Number of distinct codes, including the missing code if present.
    pub n_levels: u32,
    /// A readable label per code: the level text, the bin interval or `<missing>`.
    pub labels: Vec<String>,
    /// The code given to missing values, when the column has any.
    pub missing_code: Option<u32>,
    /// Raw values of a numeric column (`NaN` = missing), for models that need them.
    pub raw: Option<RawValues>,
    /// Rows whose value is missing.
    pub missing_count: usize,
}

impl EncodedColumn {
    /// Share of rows whose value is missing.
    #[must_use]
    pub fn missing_fraction(&self) -> f64 {
        if self.codes.is_empty() {
            0.0
        } else {
            self.missing_count as f64 / self.codes.len() as f64
        }
    }

    /// Keeps only the given rows, in the given order (used by row sampling).
    #[must_use]
    pub fn select_rows(&self, rows: &[usize]) -> Self {
        Self {
            codes: rows.iter().map(|&r| self.codes[r]).collect(),
            raw: self.raw.as_ref().map(|raw| raw.select_rows(rows)),
            missing_count: self
                .missing_code
                .map_or(0, |m| rows.iter().filter(|&&r| self.codes[r] == m).count()),
            ..self.clone()
        }
    }
}

/// Raw values of a numeric column. Real columns are rounded, so most have few
/// distinct values: each row then keeps a `u32` index into the ascending
/// distinct values (half the memory of an `f64`, and the grouping that
/// single-column models fit on); a column with more distinct values than
/// half its rows keeps the values themselves.
#[derive(Debug, Clone)]
pub enum RawValues {
    /// `index[row]` points into `distinct`; `distinct.len()` marks a missing value.
    Indexed {
        distinct: Vec<f64>,
        index: Vec<u32>,
    },
    Dense(Vec<f64>),
}

impl RawValues {
    /// Indexes `values` (`NaN` = missing) when at most half of them are distinct.
    #[must_use]
    pub fn new(values: Vec<f64>) -> Self {
        let mut numbering = crate::keys::KeyIndex::with_limit(values.len() / 2);
        let first_seen: Option<Vec<u32>> = values
            .iter()
            .map(|&v| {
                if v.is_nan() {
                    Some(u32::MAX)
                } else {
                    numbering.number((v + 0.0).to_bits())
                }
            })
            .collect();
        let Some(first_seen) = first_seen else {
            return Self::Dense(values);
        };
        let seen: Vec<f64> = numbering
            .keys()
            .iter()
            .map(|&b| f64::from_bits(b))
            .collect();
        let mut order: Vec<u32> = (0..seen.len() as u32).collect();
        order.sort_unstable_by(|&a, &b| seen[a as usize].total_cmp(&seen[b as usize]));
        let mut rank = vec![0u32; seen.len()];
        for (r, &id) in order.iter().enumerate() {
            rank[id as usize] = r as u32;
        }
        let missing = seen.len() as u32;
        Self::Indexed {
            distinct: order.iter().map(|&id| seen[id as usize]).collect(),
            index: first_seen
                .into_iter()
                .map(|id| rank.get(id as usize).copied().unwrap_or(missing))
                .collect(),
        }
    }

    /// The value of `row` (`NaN` = missing).
    #[must_use]
    pub fn value(&self, row: usize) -> f64 {
        match self {
            Self::Indexed { distinct, index } => distinct
                .get(index[row] as usize)
                .copied()
                .unwrap_or(f64::NAN),
            Self::Dense(values) => values[row],
        }
    }

    /// The ascending distinct values and each row's index into them (missing
    /// = their number), for an indexed column.
    #[must_use]
    pub fn indexed(&self) -> Option<(&[f64], &[u32])> {
        match self {
            Self::Indexed { distinct, index } => Some((distinct, index)),
            Self::Dense(_) => None,
        }
    }

    /// Keeps only the given rows, in the given order.
    #[must_use]
    pub fn select_rows(&self, rows: &[usize]) -> Self {
        match self {
            Self::Indexed { distinct, index } => Self::Indexed {
                distinct: distinct.clone(),
                index: rows.iter().map(|&r| index[r]).collect(),
            },
            Self::Dense(values) => Self::Dense(rows.iter().map(|&r| values[r]).collect()),
        }
    }
}

/// A protected attribute as class codes `0..k` over code-point-sorted labels.
#[derive(Debug, Clone)]
pub struct ProtectedAttribute {
    pub name: String,
    pub labels: Vec<String>,
    /// Class code per analysed row.
    pub codes: Vec<u32>,
    /// Rows per class.
    pub counts: Vec<usize>,
    /// For a binary attribute, the class scored as "positive": the less
    /// frequent class, on a tie the code-point-larger label.
    pub positive: u32,
    /// Rows dropped because this attribute was missing.
    pub dropped_missing: usize,
}

impl ProtectedAttribute {
    /// Builds the attribute from class codes, choosing the positive class by the minority rule.
    #[must_use]
    pub fn from_codes(name: String, labels: Vec<String>, codes: Vec<u32>, dropped: usize) -> Self {
        let mut counts = vec![0usize; labels.len()];
        for &c in &codes {
            counts[c as usize] += 1;
        }
        let positive = (0..labels.len())
            .min_by_key(|&k| (counts[k], std::cmp::Reverse(k)))
            .unwrap_or(0) as u32;
        Self {
            name,
            labels,
            codes,
            counts,
            positive,
            dropped_missing: dropped,
        }
    }

    #[must_use]
    pub fn n_classes(&self) -> usize {
        self.labels.len()
    }

    #[must_use]
    pub fn is_binary(&self) -> bool {
        self.labels.len() == 2
    }

    /// `binary` or `multiclass`, as reports name it.
    #[must_use]
    pub fn kind(&self) -> &'static str {
        if self.is_binary() {
            "binary"
        } else {
            "multiclass"
        }
    }

    /// The attribute on `rows` only (in that order), keeping its labels and positive class.
    #[must_use]
    pub fn select_rows(&self, rows: &[usize]) -> Self {
        let codes: Vec<u32> = rows.iter().map(|&r| self.codes[r]).collect();
        let mut counts = vec![0usize; self.labels.len()];
        for &c in &codes {
            counts[c as usize] += 1;
        }
        Self {
            name: self.name.clone(),
            labels: self.labels.clone(),
            codes,
            counts,
            positive: self.positive,
            dropped_missing: self.dropped_missing,
        }
    }

    /// The same attribute with `label` as its positive class, when it has that class.
    #[must_use]
    pub fn with_positive(mut self, label: &str) -> Self {
        if let Some(k) = self.labels.iter().position(|l| l == label) {
            self.positive = k as u32;
        }
        self
    }

    /// 1 for rows of the positive class, else 0 (binary attributes).
    #[must_use]
    pub fn positive_indicator(&self) -> Vec<bool> {
        self.codes.iter().map(|&c| c == self.positive).collect()
    }
}

/// A column left out of the scan, and why.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct SkippedColumn {
    pub name: String,
    pub reason: String,
}

/// How one column's fields were read, for a column the report must mention:
/// fields read as missing through a token, or a reading that involved a
/// judgment (see [`kinds`]).
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct ColumnReading {
    pub name: String,
    /// The kind the column was read as (`None` for a protected attribute or a skipped column).
    pub kind: Option<FeatureKind>,
    /// Fields read as missing, per token, over every row of the file.
    pub missing_tokens: BTreeMap<String, usize>,
    /// How the column was read and why, when the rule had to judge.
    pub note: Option<String>,
}

impl ColumnReading {
    /// Whether there is anything to report.
    #[must_use]
    pub fn is_notable(&self) -> bool {
        !self.missing_tokens.is_empty() || self.note.is_some()
    }
}

/// The analysis table: every feature and protected attribute encoded once,
/// restricted to rows where all protected attributes are present.
#[derive(Debug, Clone)]
pub struct EncodedTable {
    /// Rows in the source before any drop or sample.
    pub source_rows: usize,
    pub features: Vec<EncodedColumn>,
    pub protected: Vec<ProtectedAttribute>,
    /// The binary outcome (`--outcome`), on the same rows; never a feature.
    pub outcome: Option<ProtectedAttribute>,
    pub skipped: Vec<SkippedColumn>,
    /// The missing-value tokens in effect (empty when turned off).
    pub missing_tokens: Vec<String>,
    /// Columns whose reading the report must mention, in file order of roles
    /// (protected attributes first).
    pub readings: Vec<ColumnReading>,
}

impl EncodedTable {
    /// Rows used by the analysis.
    #[must_use]
    pub fn rows(&self) -> usize {
        self.protected.first().map_or(0, |p| p.codes.len())
    }
}

#[cfg(test)]
mod tests {
    use super::RawValues;

    #[test]
    fn raw_values_are_indexed_when_few_and_read_back_exactly() {
        let values = vec![2.5, -0.0, f64::NAN, 2.5, 0.0, -1.0, 7.0, 2.5];
        let raw = RawValues::new(values.clone());
        let (distinct, index) = raw.indexed().expect("4 distinct of 8 values");
        // −0 and +0 are one value; missing gets the index past the values.
        assert_eq!(distinct, &[-1.0, 0.0, 2.5, 7.0]);
        assert_eq!(index, &[2, 1, 4, 2, 1, 0, 3, 2]);
        for (row, &v) in values.iter().enumerate() {
            assert!(raw.value(row) == v || (v.is_nan() && raw.value(row).is_nan()));
        }
        assert_eq!(raw.select_rows(&[6, 0]).indexed().unwrap().1, &[3, 2]);
    }

    #[test]
    fn mostly_distinct_values_stay_dense() {
        let values: Vec<f64> = (0..10).map(f64::from).collect();
        let raw = RawValues::new(values);
        assert!(raw.indexed().is_none());
        assert_eq!(raw.value(7), 7.0);
    }
}
