//! Deciding how each column is read, by one documented rule.
//!
//! A column is numeric when every non-empty field parses as a finite number
//! (surrounding spaces allowed); an empty field is the only missing value.
//! Numeric columns are then refined: two distinct values 0/1 → boolean; at most
//! `max_integer_levels` distinct whole numbers → integer-coded categories; whole
//! numbers nearly all distinct → identifier-like; anything else stays numeric
//! and is binned. Text columns: two distinct levels → boolean; nearly all
//! distinct → identifier-like; otherwise categorical.

use super::FeatureKind;

/// Limits used by the kind rule.
#[derive(Debug, Clone, Copy)]
pub struct KindRule {
    /// Numeric columns with at most this many distinct whole numbers become integer-coded.
    pub max_integer_levels: usize,
    /// Share of distinct values (among non-missing) from which a column is identifier-like.
    pub identifier_share: f64,
    /// Fewest non-missing values before the identifier rule applies.
    pub identifier_min_rows: usize,
}

impl Default for KindRule {
    fn default() -> Self {
        Self {
            max_integer_levels: 10,
            identifier_share: 0.9,
            identifier_min_rows: 50,
        }
    }
}

/// Parses a field as a finite number the way the kind rule does.
#[must_use]
pub fn parse_number(field: &str) -> Option<f64> {
    field.trim().parse::<f64>().ok().filter(|v| v.is_finite())
}

/// Parses every present field; `None` if any present field is not a finite number.
#[must_use]
pub fn parse_numbers<'a>(values: impl Iterator<Item = Option<&'a str>>) -> Option<Vec<f64>> {
    // Sized up front: collecting into `Option<Vec>` grows by doubling and can
    // leave up to half the buffer unused for the life of the column.
    let mut numbers = Vec::with_capacity(values.size_hint().0);
    for value in values {
        numbers.push(match value {
            None => f64::NAN,
            Some(text) => parse_number(text)?,
        });
    }
    Some(numbers)
}

/// Summary of the distinct non-missing values of a column.
#[derive(Debug, Clone, Copy)]
pub struct Distinct {
    pub count: usize,
    pub present: usize,
}

impl Distinct {
    fn looks_like_identifier(self, rule: &KindRule) -> bool {
        self.present >= rule.identifier_min_rows
            && self.count as f64 >= rule.identifier_share * self.present as f64
    }
}

/// Kind of a numeric column given its values (`NaN` = missing).
#[must_use]
pub fn numeric_kind(values: &[f64], rule: &KindRule) -> FeatureKind {
    let mut present: Vec<f64> = values.iter().copied().filter(|v| !v.is_nan()).collect();
    present.sort_by(f64::total_cmp);
    let whole = present.iter().all(|v| v.fract() == 0.0);
    let n_present = present.len();
    present.dedup();
    let distinct = Distinct {
        count: present.len(),
        present: n_present,
    };
    if present == [0.0, 1.0] {
        FeatureKind::Boolean
    } else if whole && distinct.count <= rule.max_integer_levels {
        FeatureKind::IntegerCoded
    } else if whole && distinct.looks_like_identifier(rule) {
        FeatureKind::IdentifierLike
    } else {
        FeatureKind::Numeric
    }
}

/// Kind of a text column given its distinct-value summary.
#[must_use]
pub fn text_kind(distinct: Distinct, rule: &KindRule) -> FeatureKind {
    if distinct.count == 2 {
        FeatureKind::Boolean
    } else if distinct.looks_like_identifier(rule) {
        FeatureKind::IdentifierLike
    } else {
        FeatureKind::Categorical
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numeric_refinements() {
        let rule = KindRule::default();
        assert_eq!(
            numeric_kind(&[0.0, 1.0, f64::NAN, 1.0], &rule),
            FeatureKind::Boolean
        );
        assert_eq!(
            numeric_kind(&[1.0, 2.0, 6.0, 3.0], &rule),
            FeatureKind::IntegerCoded
        );
        let ids: Vec<f64> = (0..100).map(f64::from).collect();
        assert_eq!(numeric_kind(&ids, &rule), FeatureKind::IdentifierLike);
        let reals: Vec<f64> = (0..100).map(|i| f64::from(i) / 7.0).collect();
        assert_eq!(numeric_kind(&reals, &rule), FeatureKind::Numeric);
    }

    #[test]
    fn only_finite_numbers_parse() {
        assert_eq!(parse_number(" 2.5 "), Some(2.5));
        assert_eq!(parse_number("inf"), None);
        assert_eq!(parse_number("NaN"), None);
        assert!(parse_numbers([Some("1"), None, Some("x")].into_iter()).is_none());
    }
}
