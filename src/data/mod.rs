//! Data loading, roles, kind inference and one-time encoding.
//!
//! Everything downstream works on [`EncodedTable`]: compact `u32` codes per
//! column plus the raw `f64` values of numeric columns. This module knows about
//! files; nothing after it does.

pub mod demo;
pub mod encode;
pub mod folds;
pub mod join;
pub mod kinds;
pub mod load;
pub mod prepare;
pub mod sample;

use serde::{Deserialize, Serialize};

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
    /// Few distinct integers (e.g. a rating 1–6); one code per value.
    IntegerCoded,
    /// Nearly every value distinct (a reference number); one code per value.
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
    pub raw: Option<Vec<f64>>,
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
            raw: self
                .raw
                .as_ref()
                .map(|raw| rows.iter().map(|&r| raw[r]).collect()),
            missing_count: self
                .missing_code
                .map_or(0, |m| rows.iter().filter(|&&r| self.codes[r] == m).count()),
            ..self.clone()
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

/// The analysis table: every feature and protected attribute encoded once,
/// restricted to rows where all protected attributes are present.
#[derive(Debug, Clone)]
pub struct EncodedTable {
    /// Rows in the source before any drop or sample.
    pub source_rows: usize,
    pub features: Vec<EncodedColumn>,
    pub protected: Vec<ProtectedAttribute>,
    pub skipped: Vec<SkippedColumn>,
}

impl EncodedTable {
    /// Rows used by the analysis.
    #[must_use]
    pub fn rows(&self) -> usize {
        self.protected.first().map_or(0, |p| p.codes.len())
    }
}
