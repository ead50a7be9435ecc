//! Deciding how each column is read, by one documented rule.
//!
//! A field is missing when it is empty or matches a missing-value token
//! (`super::missing`). A column is numeric when every other field parses as a
//! finite number (surrounding spaces allowed). Numeric columns are refined:
//!
//! - two distinct values 0/1 → boolean;
//! - whole numbers with at most [`KindRule::level_limit`] distinct values →
//!   integer-coded: one level per value for the frequency surrogate and the
//!   information measures, and the numeric order for logistic regression, the
//!   tree and the whole-set attacker (a branch number or a postcode is a code,
//!   an amount is a quantity: both readings are kept, so neither is lost);
//! - anything else → numeric: quantile bins for the frequency surrogate, raw
//!   values for the others. When most rows share one value the bins merge into
//!   one; the column then keeps one level per distinct value instead.
//!
//! A numeric column is never read as an identifier: its order may carry
//! information (a reference number issued over time), so a column the user
//! knows to be a reference number is left out with `--exclude`. Text columns:
//! two distinct levels → boolean; nearly all distinct → identifier-like
//! (screened alone, not in pairs); otherwise categorical.
//!
//! Each reading that involved a judgment (whole numbers with many distinct
//! values, collapsed bins, a nearly unique text column, a mostly numeric
//! column read as text) comes with a note for the report.

use super::FeatureKind;

/// Limits used by the kind rule.
#[derive(Debug, Clone, Copy)]
pub struct KindRule {
    /// Whole numbers with at most this many distinct values are levels at any
    /// size (a rating, a count of children): no judgment is involved.
    pub max_integer_levels: usize,
    /// Above that, whole numbers keep one level per value while each level has
    /// on average at least this many rows.
    pub rows_per_level: usize,
    /// Share of distinct values (among non-missing) from which a text column is identifier-like.
    pub identifier_share: f64,
    /// Fewest non-missing values before the identifier rule applies.
    pub identifier_min_rows: usize,
}

impl Default for KindRule {
    /// 10 rows per level, measured by `scripts/level-limit.py` (5 seeds per
    /// row): for 80 unrelated integer codes, one level per value beat 32
    /// quantile bins at every size tried (frequency surrogate AUC 0.760
    /// against 0.634 at 10 rows per level, Bayes 0.797), and for a
    /// whole-number amount the best surrogate's AUC was the same under both
    /// readings (logistic regression and the tree keep the order), while the
    /// frequency surrogate alone lost 0.04 to bins at 5 and 10 rows per
    /// level. Below 10 rows (8 per training fold at 5 folds) a level's class
    /// shares rest mostly on the prior, so the column is binned.
    fn default() -> Self {
        Self {
            max_integer_levels: 10,
            rows_per_level: 10,
            identifier_share: 0.9,
            identifier_min_rows: 50,
        }
    }
}

impl KindRule {
    /// Most distinct whole numbers kept as levels for `present` non-missing values.
    #[must_use]
    pub fn level_limit(&self, present: usize) -> usize {
        self.max_integer_levels
            .max(present / self.rows_per_level.max(1))
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

/// Every present field as a number, fields that are not numbers as missing;
/// also returns how many fields were not numbers.
#[must_use]
pub fn parse_numbers_lenient<'a>(
    values: impl Iterator<Item = Option<&'a str>>,
) -> (Vec<f64>, usize) {
    let mut failed = 0;
    let numbers = values
        .map(|value| match value.map(parse_number) {
            None => f64::NAN,
            Some(Some(v)) => v,
            Some(None) => {
                failed += 1;
                f64::NAN
            }
        })
        .collect();
    (numbers, failed)
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

    fn percent(self) -> f64 {
        100.0 * self.count as f64 / self.present.max(1) as f64
    }
}

/// What the kind rule needs to know about a numeric column's values.
#[derive(Debug, Clone, Copy)]
pub struct NumericProfile {
    pub distinct: Distinct,
    /// Every present value is a whole number.
    pub whole: bool,
    /// The distinct values are exactly 0 and 1.
    pub zero_one: bool,
}

impl NumericProfile {
    /// Profiles `values` (`NaN` = missing).
    #[must_use]
    pub fn of(values: &[f64]) -> Self {
        let mut present: Vec<f64> = values.iter().copied().filter(|v| !v.is_nan()).collect();
        present.sort_unstable_by(f64::total_cmp);
        let whole = present.iter().all(|v| v.fract() == 0.0);
        let n_present = present.len();
        // −0 and +0 are one value.
        present.dedup_by(|a, b| a == b);
        Self {
            distinct: Distinct {
                count: present.len(),
                present: n_present,
            },
            whole,
            zero_one: present == [0.0, 1.0],
        }
    }
}

/// Kind of a numeric column: boolean, integer-coded (levels and order) or numeric (bins and order).
#[must_use]
pub fn numeric_kind(profile: &NumericProfile, rule: &KindRule) -> FeatureKind {
    let limit = rule.level_limit(profile.distinct.present);
    if profile.zero_one {
        FeatureKind::Boolean
    } else if profile.whole && profile.distinct.count <= limit {
        FeatureKind::IntegerCoded
    } else {
        FeatureKind::Numeric
    }
}

/// The note explaining a numeric reading that involved a judgment: whole
/// numbers with more than [`KindRule::max_integer_levels`] distinct values.
#[must_use]
pub fn numeric_note(
    profile: &NumericProfile,
    kind: FeatureKind,
    rule: &KindRule,
) -> Option<String> {
    let Distinct { count, present } = profile.distinct;
    if !profile.whole || count <= rule.max_integer_levels {
        return None;
    }
    let limit = rule.level_limit(present);
    Some(match kind {
        FeatureKind::IntegerCoded => format!(
            "whole numbers with {count} distinct values: one level per value for the frequency \
             surrogate and the information measures, numeric order for the other surrogates \
             (levels are kept up to one per {} values: {limit} here)",
            rule.rows_per_level
        ),
        _ if profile.distinct.looks_like_identifier(rule) => format!(
            "whole numbers, {:.0}% of them distinct: read as a quantity (numeric order kept); \
             if it is a reference number, leave it out with --exclude",
            profile.distinct.percent()
        ),
        _ => format!(
            "whole numbers with {count} distinct values, more than the {limit} levels kept for \
             {present} values: quantile bins for the frequency surrogate, numeric order for the \
             other surrogates; --categorical reads one level per value"
        ),
    })
}

/// The note for a numeric column whose quantile bins merged into one.
#[must_use]
pub fn collapsed_bins_note(distinct: usize, bins: usize) -> String {
    format!(
        "most rows share one value, so its {bins} quantile bins merge into one: one level per \
         distinct value ({distinct}) for the frequency surrogate and the information measures, \
         raw values for the other surrogates"
    )
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

/// The note explaining a text reading that involved a judgment: a mostly
/// numeric column read as text because some fields are not numbers, or a
/// nearly unique column read as identifier-like.
#[must_use]
pub fn text_note(kind: FeatureKind, distinct: Distinct, not_numbers: usize) -> Option<String> {
    if not_numbers > 0 && 2 * not_numbers <= distinct.present {
        return Some(format!(
            "{not_numbers} of {} present fields are not numbers, so it is read as text; \
             --numeric reads those fields as missing (--na-values sets the texts read as missing)",
            distinct.present
        ));
    }
    (kind == FeatureKind::IdentifierLike)
        .then(|| format!("text, {:.0}% of values distinct", distinct.percent()))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn kind_of(values: &[f64], rule: &KindRule) -> FeatureKind {
        numeric_kind(&NumericProfile::of(values), rule)
    }

    #[test]
    fn numeric_refinements() {
        let rule = KindRule::default();
        assert_eq!(
            kind_of(&[0.0, 1.0, f64::NAN, 1.0], &rule),
            FeatureKind::Boolean
        );
        assert_eq!(
            kind_of(&[1.0, 2.0, 6.0, 3.0], &rule),
            FeatureKind::IntegerCoded
        );
        // Unique whole numbers keep their order: numeric, never identifier-like.
        let ids: Vec<f64> = (0..100).map(f64::from).collect();
        assert_eq!(kind_of(&ids, &rule), FeatureKind::Numeric);
        let reals: Vec<f64> = (0..100).map(|i| f64::from(i) / 7.0).collect();
        assert_eq!(kind_of(&reals, &rule), FeatureKind::Numeric);
    }

    #[test]
    fn level_limit_grows_with_rows() {
        let rule = KindRule::default();
        assert_eq!(rule.level_limit(50), 10);
        assert_eq!(rule.level_limit(800), 80);
        // 80 codes: levels from 800 values on, bins below.
        let codes = |n: usize| -> Vec<f64> { (0..n).map(|i| (1000 + i % 80) as f64).collect() };
        assert_eq!(kind_of(&codes(800), &rule), FeatureKind::IntegerCoded);
        assert_eq!(kind_of(&codes(790), &rule), FeatureKind::Numeric);
    }

    #[test]
    fn judgment_calls_carry_notes() {
        let rule = KindRule::default();
        let small = NumericProfile::of(&[1.0, 2.0, 3.0]);
        assert!(numeric_note(&small, FeatureKind::IntegerCoded, &rule).is_none());
        let amounts: Vec<f64> = (0..200).map(|i| f64::from(i * 13)).collect();
        let profile = NumericProfile::of(&amounts);
        let note = numeric_note(&profile, numeric_kind(&profile, &rule), &rule).unwrap();
        assert!(
            note.contains("100% of them distinct") && note.contains("--exclude"),
            "{note}"
        );
        let mostly_numbers = Distinct {
            count: 40,
            present: 100,
        };
        assert!(text_note(FeatureKind::Categorical, mostly_numbers, 3).is_some());
        assert!(text_note(FeatureKind::Categorical, mostly_numbers, 0).is_none());
    }

    #[test]
    fn only_finite_numbers_parse() {
        assert_eq!(parse_number(" 2.5 "), Some(2.5));
        assert_eq!(parse_number("inf"), None);
        assert_eq!(parse_number("NaN"), None);
        assert!(parse_numbers([Some("1"), None, Some("x")].into_iter()).is_none());
        let (numbers, failed) = parse_numbers_lenient([Some("1"), None, Some("x")].into_iter());
        assert_eq!((numbers[0], failed), (1.0, 1));
        assert!(numbers[1].is_nan() && numbers[2].is_nan());
    }
}
