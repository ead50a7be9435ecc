//! Encoding each column once into compact codes.
//!
//! Numeric columns become quantile bins by the rule of pandas
//! `qcut(x, q, duplicates="drop")`, reproduced operation by operation so that
//! published reference values computed with pandas can be matched exactly:
//!
//! 1. probabilities `p_j = j / q` for `j = 0..=q`, formed as numpy's
//!    `linspace(0, 1, q + 1)` does (`j * (1/q)`, last one exactly 1), then
//!    multiplied by 100 and divided by 100 again (pandas hands percentiles to
//!    `numpy.percentile`, which divides by 100);
//! 2. edge `e_j` = linear-interpolated quantile of the non-missing values
//!    (numpy method "linear": virtual index `(n - 1) p_j`, interpolation
//!    `a + (b - a) t`, or `b - (b - a)(1 - t)` when `t ≥ 0.5`);
//! 3. repeated edges are dropped;
//! 4. bins are right-closed, `(e_j, e_{j+1}]`, with the lowest edge included
//!    in the first bin: code = (number of edges `< x`) − 1, and `x = e_0` gives 0.
//!
//! Missing values get the code after the last bin.

use super::{EncodedColumn, FeatureKind, RawValues};
use crate::keys::KeyIndex;
use std::collections::HashMap;

/// The label given to the missing level of every column.
pub const MISSING_LABEL: &str = "<missing>";

/// Quantile bin edges of `sorted` (non-missing, ascending) by the pandas rule above.
#[must_use]
pub fn quantile_edges(sorted: &[f64], q: usize) -> Vec<f64> {
    if sorted.is_empty() || q == 0 {
        return Vec::new();
    }
    let step = 1.0 / q as f64;
    let mut edges: Vec<f64> = (0..=q)
        .map(|j| {
            let p = if j == q { 1.0 } else { j as f64 * step };
            linear_quantile(sorted, (p * 100.0) / 100.0)
        })
        .collect();
    edges.dedup_by(|a, b| a == b);
    edges
}

/// numpy's "linear" quantile of ascending `sorted` at probability `p`.
fn linear_quantile(sorted: &[f64], p: f64) -> f64 {
    let n = sorted.len();
    let virtual_index = (n - 1) as f64 * p;
    let below = virtual_index.floor();
    let t = virtual_index - below;
    let lo = (below as usize).min(n - 1);
    let hi = (lo + 1).min(n - 1);
    let (a, b) = (sorted[lo], sorted[hi]);
    let diff = b - a;
    if t >= 0.5 {
        b - diff * (1.0 - t)
    } else {
        a + diff * t
    }
}

/// Bin code of `x` for right-closed bins over `edges`, lowest edge included.
#[must_use]
pub fn bin_of(edges: &[f64], x: f64) -> u32 {
    let below = edges.partition_point(|&e| e < x);
    below.saturating_sub(1).min(edges.len().saturating_sub(2)) as u32
}

/// Encodes raw numeric values (`NaN` = missing) into at most `q` quantile bins.
///
/// Returns the codes, the number of levels, the edges used and the missing code.
#[must_use]
pub fn quantile_bin_codes(values: &[f64], q: usize) -> (Vec<u32>, u32, Vec<f64>, Option<u32>) {
    let mut sorted: Vec<f64> = values.iter().copied().filter(|v| !v.is_nan()).collect();
    sorted.sort_by(f64::total_cmp);
    let edges = quantile_edges(&sorted, q);
    let bins = edges
        .len()
        .saturating_sub(1)
        .max(usize::from(!sorted.is_empty())) as u32;
    let has_missing = sorted.len() < values.len();
    let missing = has_missing.then_some(bins);
    let codes = values
        .iter()
        .map(|&v| {
            if v.is_nan() {
                bins
            } else if edges.len() < 2 {
                0
            } else {
                bin_of(&edges, v)
            }
        })
        .collect();
    (codes, bins + u32::from(has_missing), edges, missing)
}

/// Encodes a numeric column into quantile bins, keeping the raw values.
#[must_use]
pub fn encode_numeric(name: &str, values: Vec<f64>, q: usize) -> EncodedColumn {
    let (codes, n_levels, edges, missing_code) = quantile_bin_codes(&values, q);
    let mut labels = bin_labels(&edges);
    if missing_code.is_some() {
        labels.push(MISSING_LABEL.to_string());
    }
    let missing_count = values.iter().filter(|v| v.is_nan()).count();
    EncodedColumn {
        name: name.to_string(),
        kind: FeatureKind::Numeric,
        codes,
        n_levels,
        labels,
        missing_code,
        raw: Some(RawValues::new(values)),
        missing_count,
    }
}

/// Bin labels from the quantile edges. The outer bins are open-ended
/// (`≤ b`, `> a`): their outer edges are the smallest and largest values,
/// single rows' values that a report must not show.
fn bin_labels(edges: &[f64]) -> Vec<String> {
    let bins = edges.len().saturating_sub(1);
    if bins == 0 {
        return edges.iter().map(|e| format!("[{e}]")).collect();
    }
    edges
        .windows(2)
        .enumerate()
        .map(|(i, w)| match (i, bins) {
            (_, 1) => "all values".to_string(),
            (0, _) => format!("≤ {}", w[1]),
            (i, n) if i == n - 1 => format!("> {}", w[0]),
            _ => format!("({}, {}]", w[0], w[1]),
        })
        .collect()
}

/// Encodes text levels (`None` = missing) as codes over code-point-sorted labels, missing last.
#[must_use]
pub fn encode_levels<'a, I>(name: &str, kind: FeatureKind, values: I) -> EncodedColumn
where
    I: Iterator<Item = Option<&'a str>> + Clone,
{
    let mut index: HashMap<&str, u32> = HashMap::new();
    for v in values.clone().flatten() {
        let next = index.len() as u32;
        index.entry(v).or_insert(next);
    }
    let mut labels: Vec<&str> = index.keys().copied().collect();
    labels.sort_unstable();
    for (code, label) in labels.iter().enumerate() {
        index.insert(label, code as u32);
    }
    let missing = labels.len() as u32;
    let mut missing_count = 0;
    let codes: Vec<u32> = values
        .map(|v| match v {
            Some(text) => index[text],
            None => {
                missing_count += 1;
                missing
            }
        })
        .collect();
    let mut labels: Vec<String> = labels.into_iter().map(str::to_string).collect();
    let missing_code = (missing_count > 0).then(|| {
        labels.push(MISSING_LABEL.to_string());
        missing
    });
    EncodedColumn {
        name: name.to_string(),
        kind,
        codes,
        n_levels: labels.len() as u32,
        labels,
        missing_code,
        raw: None,
        missing_count,
    }
}

/// Formats a number as a level label: the shortest text that reads back as
/// the same value, so whole numbers (codes, counts) print as written in the
/// file (`194`, not `194.0`).
#[must_use]
pub fn number_label(v: f64) -> String {
    format!("{v}")
}

/// Encodes a numeric column with few distinct values as one level per value,
/// ordered by value, keeping the raw values.
#[must_use]
pub fn encode_integer_coded(name: &str, values: Vec<f64>) -> EncodedColumn {
    let mut distinct: Vec<f64> = values.iter().copied().filter(|v| !v.is_nan()).collect();
    distinct.sort_by(f64::total_cmp);
    distinct.dedup();
    let missing = distinct.len() as u32;
    let mut missing_count = 0;
    let codes = values
        .iter()
        .map(|&v| {
            if v.is_nan() {
                missing_count += 1;
                missing
            } else {
                distinct.partition_point(|&d| d < v) as u32
            }
        })
        .collect();
    let mut labels: Vec<String> = distinct.iter().map(|&v| number_label(v)).collect();
    let missing_code = (missing_count > 0).then(|| {
        labels.push(MISSING_LABEL.to_string());
        missing
    });
    EncodedColumn {
        name: name.to_string(),
        kind: FeatureKind::IntegerCoded,
        codes,
        n_levels: labels.len() as u32,
        labels,
        missing_code,
        raw: Some(RawValues::new(values)),
        missing_count,
    }
}

/// Dense joint codes of two columns: each observed `(a, b)` combination gets
/// one code, numbered in order of first appearance. Returns the codes and how
/// many combinations occur. Keeps pair tables small even for high-cardinality
/// columns, where `levels_a × levels_b` would not fit in memory.
#[must_use]
pub fn combine_codes(a: &[u32], b: &[u32], b_levels: u32) -> (Vec<u32>, u32) {
    let mut index = KeyIndex::with_limit(a.len());
    let codes = a
        .iter()
        .zip(b)
        .map(|(&x, &y)| {
            let key = u64::from(x) * u64::from(b_levels) + u64::from(y);
            // Never `None`: there are no more distinct keys than rows.
            index.number(key).unwrap_or(u32::MAX)
        })
        .collect();
    (codes, index.keys().len() as u32)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn outer_bins_do_not_show_the_extreme_values() {
        let values: Vec<f64> = (0..100).map(f64::from).collect();
        let column = encode_numeric("x", values, 4);
        assert!(column.labels[0].starts_with("≤ "), "{:?}", column.labels);
        assert!(column.labels[3].starts_with("> "), "{:?}", column.labels);
        assert!(
            column
                .labels
                .iter()
                .all(|l| !l.contains("99") && !l.contains("[0")),
            "{:?}",
            column.labels
        );
    }

    #[test]
    fn edges_of_one_to_ten_in_four_bins() {
        // numpy.percentile([1..10], [0, 25, 50, 75, 100]) = 1, 3.25, 5.5, 7.75, 10
        // (linear method, (n-1)p virtual index; numpy documentation example style, computed by hand).
        let x: Vec<f64> = (1..=10).map(f64::from).collect();
        assert_eq!(quantile_edges(&x, 4), vec![1.0, 3.25, 5.5, 7.75, 10.0]);
        let (codes, levels, _, missing) = quantile_bin_codes(&x, 4);
        assert_eq!(levels, 4);
        assert_eq!(missing, None);
        assert_eq!(codes, vec![0, 0, 0, 1, 1, 2, 2, 3, 3, 3]);
    }

    #[test]
    fn repeated_edges_are_dropped_and_missing_gets_last_code() {
        let x = vec![0.0, 0.0, 0.0, 0.0, 1.0, f64::NAN];
        let (codes, levels, edges, missing) = quantile_bin_codes(&x, 4);
        assert_eq!(edges, vec![0.0, 1.0]);
        assert_eq!(levels, 2);
        assert_eq!(missing, Some(1));
        assert_eq!(codes, vec![0, 0, 0, 0, 0, 1]);
    }

    #[test]
    fn levels_sorted_by_code_point_with_missing_last() {
        let values = [Some("b"), None, Some("a"), Some("É"), Some("b")];
        let col = encode_levels("x", FeatureKind::Categorical, values.iter().copied());
        assert_eq!(col.labels, vec!["a", "b", "É", MISSING_LABEL]);
        assert_eq!(col.codes, vec![1, 3, 0, 2, 1]);
        assert_eq!(col.missing_count, 1);
    }
}
