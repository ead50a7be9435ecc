//! Field texts read as missing values.
//!
//! Files saved by statistics packages, spreadsheets and databases write a
//! missing value as text: `NA` (R), `.` (SAS, Stata), `#N/A` (spreadsheets),
//! `NULL` (database exports), `NaN`/`nan` (Python). An empty field is always
//! missing; a field whose text, without surrounding spaces, equals one of the
//! tokens below is missing too, and counted per column and token in the report.
//!
//! The default set is the list pandas' `read_csv` treats as missing by default
//! (pandas 2.x documentation of `na_values`), adapted: `.` (the numeric missing
//! value of SAS and Stata exports), `?` (the convention of the UCI machine
//! learning repository) and the spreadsheet error values are added, and a
//! blank field (spaces only) is missing like an empty one.

use std::collections::BTreeMap;

/// The tokens read as missing unless `--na-values` replaces them.
pub const DEFAULT_TOKENS: &[&str] = &[
    "", "#N/A", "#N/A N/A", "#NA", "-1.#IND", "-1.#QNAN", "-NaN", "-nan", "1.#IND", "1.#QNAN",
    "<NA>", "N/A", "NA", "NULL", "NaN", "None", "n/a", "nan", "null", ".", "?", "#DIV/0!",
    "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#NULL!",
];

/// Fields read as missing, per token.
pub type TokenCounts = BTreeMap<String, usize>;

/// How a blank field (spaces only) is named in token counts.
pub const BLANK_LABEL: &str = "<blank>";

/// The set of field texts read as missing.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct MissingTokens {
    tokens: Vec<String>,
}

impl Default for MissingTokens {
    fn default() -> Self {
        Self::new(DEFAULT_TOKENS.iter().map(|t| (*t).to_string()))
    }
}

impl MissingTokens {
    /// Exactly these tokens (compared without surrounding spaces).
    #[must_use]
    pub fn new(tokens: impl IntoIterator<Item = String>) -> Self {
        let mut tokens: Vec<String> = tokens.into_iter().map(|t| t.trim().to_string()).collect();
        tokens.sort_unstable();
        tokens.dedup();
        Self { tokens }
    }

    /// No token: only empty fields are missing, every other text is kept.
    #[must_use]
    pub fn none() -> Self {
        Self { tokens: Vec::new() }
    }

    /// The tokens in use, sorted.
    #[must_use]
    pub fn tokens(&self) -> &[String] {
        &self.tokens
    }

    /// Replaces every field matching a token by `None`; returns the fields and,
    /// per token, how many fields it made missing.
    #[must_use]
    pub fn apply<'a>(
        &self,
        fields: impl Iterator<Item = Option<&'a str>>,
    ) -> (Vec<Option<&'a str>>, TokenCounts) {
        // Tokens by length: most fields match no token's length and need one
        // comparison of lengths, the rest a few byte comparisons.
        let mut by_length: Vec<Vec<(usize, &str)>> = Vec::new();
        for (i, token) in self.tokens.iter().enumerate() {
            if by_length.len() <= token.len() {
                by_length.resize(token.len() + 1, Vec::new());
            }
            by_length[token.len()].push((i, token));
        }
        let mut hits = vec![0usize; self.tokens.len()];
        let kept = fields
            .map(|field| {
                let text = field?;
                let trimmed = text.trim();
                let token = by_length
                    .get(trimmed.len())
                    .and_then(|bucket| bucket.iter().find(|(_, t)| *t == trimmed));
                match token {
                    Some(&(i, _)) => {
                        hits[i] += 1;
                        None
                    }
                    None => Some(text),
                }
            })
            .collect();
        let counts = self
            .tokens
            .iter()
            .zip(hits)
            .filter(|(_, n)| *n > 0)
            .map(|(t, n)| {
                let name = if t.is_empty() { BLANK_LABEL } else { t };
                (name.to_string(), n)
            })
            .collect();
        (kept, counts)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn default_tokens_are_missing_and_counted() {
        let fields = [
            Some("12"),
            Some("NA"),
            None,
            Some(" NULL "),
            Some("NA"),
            Some("  "),
            Some("na"),
            Some("N.A."),
        ];
        let (kept, counts) = MissingTokens::default().apply(fields.iter().copied());
        assert_eq!(
            kept,
            vec![
                Some("12"),
                None,
                None,
                None,
                None,
                None,
                Some("na"),
                Some("N.A.")
            ]
        );
        assert_eq!(counts["NA"], 2);
        assert_eq!(counts["NULL"], 1);
        assert_eq!(counts[BLANK_LABEL], 1);
        assert_eq!(counts.len(), 3, "an empty field is not a token: {counts:?}");
    }

    #[test]
    fn replaced_and_disabled_sets() {
        let fields = [Some("NA"), Some("-999"), Some("NULL")];
        let only = MissingTokens::new(["-999".to_string()]);
        let (kept, counts) = only.apply(fields.iter().copied());
        assert_eq!(kept, vec![Some("NA"), None, Some("NULL")]);
        assert_eq!(counts["-999"], 1);
        let (kept, counts) = MissingTokens::none().apply(fields.iter().copied());
        assert_eq!(kept, fields.to_vec());
        assert!(counts.is_empty());
    }
}
