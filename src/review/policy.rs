//! Review policies: a TOML file that overrides the flag thresholds and
//! records accepted features (who accepted, why, until when). Applying a
//! policy to a report marks the accepted features, re-flags with the policy's
//! thresholds and lists what still fails, which decides the exit status.

use super::gate::gate_failures;
use crate::outputs::OutputsThresholds;
use crate::report::{Acceptance, PolicyOutcome, Report, Thresholds};
use crate::scan::flag_for;
use serde::Deserialize;
use sha2::{Digest, Sha256};
use std::ops::Range;
use std::path::Path;
use thiserror::Error;
use toml::Spanned;

/// A policy file that cannot be used; each message is one line with the file
/// and, where the parser knows it, the line.
#[derive(Debug, Error)]
pub enum PolicyError {
    /// The file could not be opened or is not UTF-8 text.
    #[error("{file}: cannot read policy: {reason}")]
    Unreadable { file: String, reason: String },
    /// A syntax, key, type or value problem at a known line.
    #[error("{file}: line {line}: {reason}")]
    Invalid {
        file: String,
        line: usize,
        reason: String,
    },
    /// A problem the parser could not place on a line.
    #[error("{file}: {reason}")]
    Malformed { file: String, reason: String },
}

/// Threshold overrides; `None` keeps the report's own value.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct PolicyThresholds {
    /// Overrides [`Thresholds::proxy_auc_low`].
    pub proxy_auc_low: Option<f64>,
    /// Overrides [`Thresholds::review_auc_low`].
    pub review_auc_low: Option<f64>,
    /// Fail when the whole-set AUC interval's lower bound reaches this.
    pub whole_set_auc_low: Option<f64>,
}

impl PolicyThresholds {
    /// Whether any flag threshold is overridden (so flags must be recomputed).
    #[must_use]
    pub fn overrides_flags(&self) -> bool {
        self.proxy_auc_low.is_some() || self.review_auc_low.is_some()
    }

    /// `base` with this policy's overrides applied.
    #[must_use]
    pub fn applied_to(&self, base: Thresholds) -> Thresholds {
        Thresholds {
            proxy_auc_low: self.proxy_auc_low.unwrap_or(base.proxy_auc_low),
            review_auc_low: self.review_auc_low.unwrap_or(base.review_auc_low),
            whole_set_auc_low: self.whole_set_auc_low.unwrap_or(base.whole_set_auc_low),
        }
    }
}

/// The `[outputs]` table: thresholds of the `outputs` gate; `None` keeps
/// the command line's value. `scan` ignores it, `outputs` ignores the rest.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct OutputsPolicyThresholds {
    /// Fail when the score AUC's lower bound reaches this.
    pub score_auc_low: Option<f64>,
    /// Fail when the adverse impact ratio is below this.
    pub impact_ratio_min: Option<f64>,
    /// The significance a ratio below `impact_ratio_min` needs to fail.
    pub impact_alpha: Option<f64>,
    /// Fail when an equalized-odds gap's lower bound reaches this.
    pub odds_gap_low: Option<f64>,
}

impl OutputsPolicyThresholds {
    /// Whether the policy sets any outputs threshold.
    #[must_use]
    pub fn is_set(&self) -> bool {
        self.score_auc_low.is_some()
            || self.impact_ratio_min.is_some()
            || self.impact_alpha.is_some()
            || self.odds_gap_low.is_some()
    }

    /// `base` with this policy's overrides applied.
    #[must_use]
    pub fn applied_to(&self, base: OutputsThresholds) -> OutputsThresholds {
        OutputsThresholds {
            proxy_auc_low: self.score_auc_low.unwrap_or(base.proxy_auc_low),
            impact_ratio: self.impact_ratio_min.unwrap_or(base.impact_ratio),
            impact_alpha: self.impact_alpha.unwrap_or(base.impact_alpha),
            odds_gap_low: self.odds_gap_low.or(base.odds_gap_low),
        }
    }
}

/// One `[[accept]]` entry: a feature a reviewer has accepted despite its flag.
#[derive(Debug, Clone, PartialEq)]
pub struct AcceptRule {
    /// The protected attribute it applies to; every attribute when `None`.
    pub protected: Option<String>,
    /// Feature name exactly as in the report.
    pub feature: String,
    /// Why the feature is kept despite its flag.
    pub reason: String,
    /// Who accepted it.
    pub reviewer: String,
    /// Last day the acceptance holds, `YYYY-MM-DD`.
    pub expires: String,
    /// Line of the entry in the policy file, for warnings.
    pub line: usize,
}

impl AcceptRule {
    fn matches(&self, protected: &str, feature: &str) -> bool {
        self.feature == feature && self.protected.as_deref().is_none_or(|p| p == protected)
    }

    /// Active through its `expires` day; ISO dates order as strings.
    fn is_active_on(&self, today: &str) -> bool {
        self.expires.as_str() >= today
    }
}

/// A parsed, validated review policy.
#[derive(Debug, Clone, PartialEq)]
pub struct Policy {
    /// File name as given, for messages and the report.
    pub file: String,
    /// SHA-256 of the policy text, so a report names the exact policy it passed.
    pub sha256: String,
    /// Threshold overrides from `[thresholds]`.
    pub thresholds: PolicyThresholds,
    /// The `[[accept]]` entries in file order; a later match overrides an earlier one.
    pub accept: Vec<AcceptRule>,
    /// Thresholds of the `outputs` gate from `[outputs]`.
    pub outputs: OutputsPolicyThresholds,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawPolicy {
    #[serde(default)]
    thresholds: RawThresholds,
    #[serde(default)]
    accept: Vec<Spanned<RawAccept>>,
    #[serde(default)]
    outputs: RawOutputsThresholds,
}

#[derive(Deserialize, Default)]
#[serde(deny_unknown_fields)]
struct RawOutputsThresholds {
    score_auc_low: Option<Spanned<f64>>,
    impact_ratio_min: Option<Spanned<f64>>,
    impact_alpha: Option<Spanned<f64>>,
    odds_gap_low: Option<Spanned<f64>>,
}

#[derive(Deserialize, Default)]
#[serde(deny_unknown_fields)]
struct RawThresholds {
    proxy_auc_low: Option<Spanned<f64>>,
    review_auc_low: Option<Spanned<f64>>,
    whole_set_auc_low: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawAccept {
    protected: Option<String>,
    feature: String,
    reason: Spanned<String>,
    reviewer: Spanned<String>,
    /// A quoted `"2027-06-30"` or a bare TOML date `2027-06-30`.
    expires: Spanned<toml::Value>,
}

impl Policy {
    /// Reads and validates a policy file (see [`Policy::from_toml_str`]).
    pub fn load(path: &Path) -> Result<Self, PolicyError> {
        let file = path.file_name().map_or_else(
            || path.display().to_string(),
            |n| n.to_string_lossy().into_owned(),
        );
        let text = std::fs::read_to_string(path).map_err(|e| PolicyError::Unreadable {
            file: file.clone(),
            reason: e.to_string(),
        })?;
        Self::from_toml_str(&text, &file)
    }

    /// Parses policy text. Unknown keys, wrong types, missing `feature`,
    /// `reason`, `reviewer` or `expires`, blank reasons, impossible dates and
    /// thresholds outside [0, 1] are errors naming `file_name` and the line.
    pub fn from_toml_str(text: &str, file_name: &str) -> Result<Self, PolicyError> {
        let located = Locator { text, file_name };
        let raw: RawPolicy = toml::from_str(text).map_err(|e| located.toml_error(&e))?;
        Ok(Self {
            file: file_name.to_string(),
            sha256: sha256_hex(text.as_bytes()),
            thresholds: located.thresholds(raw.thresholds)?,
            accept: raw
                .accept
                .into_iter()
                .map(|entry| located.accept_rule(entry))
                .collect::<Result<_, _>>()?,
            outputs: located.outputs_thresholds(raw.outputs)?,
        })
    }

    /// Applies the policy to `report` as of `today` (`YYYY-MM-DD`): re-flags with
    /// the policy thresholds when it sets any, marks accepted features (inactive
    /// once `expires < today`), notes acceptances that match nothing, lists
    /// failing items, stores the outcome in `report.policy` and returns it.
    /// The report passes when `failing` is empty.
    pub fn apply(&self, report: &mut Report, today: &str) -> PolicyOutcome {
        debug_assert!(
            is_valid_iso_date(today),
            "today must be YYYY-MM-DD: {today}"
        );
        clear_acceptances(report);
        report.settings.thresholds = self.thresholds.applied_to(report.settings.thresholds);
        if self.thresholds.overrides_flags() {
            self.reflag(report);
        }
        self.mark_acceptances(report, today);
        let outcome = PolicyOutcome {
            file: self.file.clone(),
            sha256: self.sha256.clone(),
            evaluated_on: today.to_string(),
            accepted_features: acceptances(report, true),
            expired_acceptances: acceptances(report, false),
            failing: gate_failures(report),
        };
        report.policy = Some(outcome.clone());
        outcome
    }

    fn reflag(&self, report: &mut Report) {
        let thresholds = report.settings.thresholds;
        // Attributes whose flags are withheld (smallest class below the
        // minimum class size) stay unresolved whatever the thresholds.
        for result in report
            .results
            .iter_mut()
            .filter(|r| r.flags_withheld.is_none())
        {
            for feature in &mut result.features {
                feature.flag = flag_for(feature.auc_low, feature.auc_high, &thresholds);
            }
            for pair in &mut result.pairs {
                pair.flag = flag_for(pair.auc_low, pair.auc_high, &thresholds);
            }
        }
        report.notes.push(format!(
            "flags recomputed with the thresholds of policy {}",
            self.file
        ));
    }

    fn mark_acceptances(&self, report: &mut Report, today: &str) {
        for rule in &self.accept {
            let mut matched = false;
            for result in &mut report.results {
                let protected = result.protected.clone();
                for feature in &mut result.features {
                    if rule.matches(&protected, &feature.name) {
                        feature.accepted = Some(Acceptance {
                            reason: rule.reason.clone(),
                            reviewer: rule.reviewer.clone(),
                            expires: rule.expires.clone(),
                            active: rule.is_active_on(today),
                        });
                        matched = true;
                    }
                }
            }
            if !matched {
                report.notes.push(self.unmatched_warning(rule));
            }
        }
    }

    fn unmatched_warning(&self, rule: &AcceptRule) -> String {
        let scope = rule
            .protected
            .as_ref()
            .map_or_else(String::new, |p| format!(" for protected attribute `{p}`"));
        format!(
            "warning: {} line {}: acceptance of feature `{}`{scope} matches no feature in the report",
            self.file, rule.line, rule.feature
        )
    }
}

/// Drops acceptances left by an earlier policy, so only this one counts.
fn clear_acceptances(report: &mut Report) {
    report
        .results
        .iter_mut()
        .flat_map(|r| r.features.iter_mut())
        .for_each(|f| f.accepted = None);
}

/// `protected/feature` of every accepted feature whose acceptance is (in)active.
fn acceptances(report: &Report, active: bool) -> Vec<String> {
    report
        .results
        .iter()
        .flat_map(|r| {
            r.features
                .iter()
                .filter(move |f| f.accepted.as_ref().is_some_and(|a| a.active == active))
                .map(move |f| format!("{}/{}", r.protected, f.name))
        })
        .collect()
}

/// Turns parse positions into line numbers of one policy text.
struct Locator<'a> {
    text: &'a str,
    file_name: &'a str,
}

impl Locator<'_> {
    fn line_of(&self, span: &Range<usize>) -> usize {
        let end = span.start.min(self.text.len());
        self.text.as_bytes()[..end]
            .iter()
            .filter(|&&b| b == b'\n')
            .count()
            + 1
    }

    fn invalid(&self, span: &Range<usize>, reason: impl Into<String>) -> PolicyError {
        PolicyError::Invalid {
            file: self.file_name.to_string(),
            line: self.line_of(span),
            reason: reason.into(),
        }
    }

    fn toml_error(&self, error: &toml::de::Error) -> PolicyError {
        let reason = error.message().trim().replace('\n', " ");
        match error.span() {
            Some(span) => self.invalid(&span, reason),
            None => PolicyError::Malformed {
                file: self.file_name.to_string(),
                reason,
            },
        }
    }

    fn thresholds(&self, raw: RawThresholds) -> Result<PolicyThresholds, PolicyError> {
        Ok(PolicyThresholds {
            proxy_auc_low: self.unit_interval("proxy_auc_low", raw.proxy_auc_low)?,
            review_auc_low: self.unit_interval("review_auc_low", raw.review_auc_low)?,
            whole_set_auc_low: self.unit_interval("whole_set_auc_low", raw.whole_set_auc_low)?,
        })
    }

    fn outputs_thresholds(
        &self,
        raw: RawOutputsThresholds,
    ) -> Result<OutputsPolicyThresholds, PolicyError> {
        Ok(OutputsPolicyThresholds {
            score_auc_low: self.unit_interval("score_auc_low", raw.score_auc_low)?,
            impact_ratio_min: self.unit_interval("impact_ratio_min", raw.impact_ratio_min)?,
            impact_alpha: self.unit_interval("impact_alpha", raw.impact_alpha)?,
            odds_gap_low: self.unit_interval("odds_gap_low", raw.odds_gap_low)?,
        })
    }

    fn unit_interval(
        &self,
        key: &str,
        value: Option<Spanned<f64>>,
    ) -> Result<Option<f64>, PolicyError> {
        let Some(value) = value else {
            return Ok(None);
        };
        let number = *value.get_ref();
        if (0.0..=1.0).contains(&number) {
            Ok(Some(number))
        } else {
            Err(self.invalid(&value.span(), format!("{key} = {number} is outside 0..1")))
        }
    }

    fn accept_rule(&self, entry: Spanned<RawAccept>) -> Result<AcceptRule, PolicyError> {
        let line = self.line_of(&entry.span());
        let raw = entry.into_inner();
        let reason = self.non_blank("reason", raw.reason)?;
        let reviewer = self.non_blank("reviewer", raw.reviewer)?;
        let expires = self.iso_date(raw.expires)?;
        Ok(AcceptRule {
            protected: raw.protected,
            feature: raw.feature,
            reason,
            reviewer,
            expires,
            line,
        })
    }

    fn non_blank(&self, key: &str, value: Spanned<String>) -> Result<String, PolicyError> {
        if value.get_ref().trim().is_empty() {
            return Err(self.invalid(&value.span(), format!("`{key}` must not be blank")));
        }
        Ok(value.into_inner())
    }

    fn iso_date(&self, value: Spanned<toml::Value>) -> Result<String, PolicyError> {
        let text = match value.get_ref() {
            toml::Value::String(text) => text.clone(),
            toml::Value::Datetime(date) if date.time.is_none() && date.offset.is_none() => {
                date.to_string()
            }
            other => other.to_string(),
        };
        if is_valid_iso_date(&text) {
            return Ok(text);
        }
        Err(self.invalid(
            &value.span(),
            format!("expires = {text} is not a calendar date in YYYY-MM-DD form"),
        ))
    }
}

fn sha256_hex(bytes: &[u8]) -> String {
    crate::data::load::hex(&Sha256::digest(bytes))
}

/// `YYYY-MM-DD` naming a real day of the proleptic Gregorian calendar.
fn is_valid_iso_date(text: &str) -> bool {
    let parts: Vec<&str> = text.split('-').collect();
    let [year, month, day] = parts.as_slice() else {
        return false;
    };
    let digits = |s: &str, n: usize| s.len() == n && s.bytes().all(|b| b.is_ascii_digit());
    if !(digits(year, 4) && digits(month, 2) && digits(day, 2)) {
        return false;
    }
    let (Ok(year), Ok(month), Ok(day)) = (year.parse(), month.parse(), day.parse::<u32>()) else {
        return false;
    };
    (1..=12).contains(&month) && (1..=days_in_month(year, month)).contains(&day)
}

/// Gregorian leap rule: every 4th year, except centuries not divisible by 400.
fn days_in_month(year: i64, month: u32) -> u32 {
    let leap = (year % 4 == 0 && year % 100 != 0) || year % 400 == 0;
    match month {
        2 if leap => 29,
        2 => 28,
        4 | 6 | 9 | 11 => 30,
        _ => 31,
    }
}

/// Today's date in UTC as `YYYY-MM-DD`, from the system clock.
#[must_use]
pub fn today_utc() -> String {
    let seconds = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map_or(0, |d| d.as_secs());
    let days = i64::try_from(seconds / 86_400).unwrap_or(i64::MAX / 2);
    let (year, month, day) = civil_from_days(days);
    format!("{year:04}-{month:02}-{day:02}")
}

/// Days since 1970-01-01 → (year, month, day), proleptic Gregorian
/// (H. Hinnant 2013, "chrono-Compatible Low-Level Date Algorithms", `civil_from_days`).
fn civil_from_days(days: i64) -> (i64, u32, u32) {
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let day_of_era = z.rem_euclid(146_097);
    let year_of_era =
        (day_of_era - day_of_era / 1460 + day_of_era / 36_524 - day_of_era / 146_096) / 365;
    let day_of_year = day_of_era - (365 * year_of_era + year_of_era / 4 - year_of_era / 100);
    let shifted_month = (5 * day_of_year + 2) / 153;
    let day = day_of_year - (153 * shifted_month + 2) / 5 + 1;
    let month = if shifted_month < 10 {
        shifted_month + 3
    } else {
        shifted_month - 9
    };
    let year = year_of_era + era * 400 + i64::from(month <= 2);
    (year, month as u32, day as u32)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn outputs_table_overrides_only_the_thresholds_it_sets() {
        let policy = Policy::from_toml_str(
            "[outputs]\nimpact_ratio_min = 0.9\nodds_gap_low = 0.05\n",
            "p.toml",
        )
        .unwrap();
        let base = OutputsThresholds {
            proxy_auc_low: 0.7,
            impact_ratio: 0.8,
            impact_alpha: 0.05,
            odds_gap_low: None,
        };
        let applied = policy.outputs.applied_to(base);
        assert_eq!(applied.proxy_auc_low, 0.7);
        assert_eq!(applied.impact_ratio, 0.9);
        assert_eq!(applied.odds_gap_low, Some(0.05));
        let error = Policy::from_toml_str("[outputs]\n\nscore_auc_low = 1.5\n", "p.toml")
            .unwrap_err()
            .to_string();
        assert_eq!(error, "p.toml: line 3: score_auc_low = 1.5 is outside 0..1");
        let unknown = Policy::from_toml_str("[outputs]\nimpact = 0.8\n", "p.toml").unwrap_err();
        assert!(
            unknown.to_string().starts_with("p.toml: line 2:"),
            "{unknown}"
        );
    }

    // Unix times and their UTC dates as printed by GNU coreutils `date -u -d @T`:
    // 0 → 1970-01-01 (the POSIX epoch), 946684800 → 2000-01-01,
    // 951782400 → 2000-02-29 (leap day of a year divisible by 400),
    // 1709164800 → 2024-02-29. Days = T / 86400.
    #[test]
    fn civil_from_days_matches_known_dates() {
        let cases = [
            (0, (1970, 1, 1)),
            (946_684_800 / 86_400, (2000, 1, 1)),
            (951_782_400 / 86_400, (2000, 2, 29)),
            (1_709_164_800 / 86_400, (2024, 2, 29)),
            (-1, (1969, 12, 31)),
        ];
        for (days, expected) in cases {
            assert_eq!(civil_from_days(days), expected, "day {days}");
        }
    }

    // Gregorian leap rule (Inter gravissimas, 1582): 1900 is not a leap year,
    // 2000 and 2028 are; April has 30 days.
    #[test]
    fn iso_dates_follow_the_gregorian_calendar() {
        for valid in ["2027-06-30", "2000-02-29", "2028-02-29", "1999-12-31"] {
            assert!(is_valid_iso_date(valid), "{valid}");
        }
        for invalid in [
            "2027-02-30",
            "1900-02-29",
            "2027-04-31",
            "2027-13-01",
            "2027-6-30",
            "30/06/2027",
            "2027-06-3x",
        ] {
            assert!(!is_valid_iso_date(invalid), "{invalid}");
        }
    }

    // SHA-256("abc") from FIPS 180-2, Appendix B.1.
    #[test]
    fn policy_hash_is_sha256() {
        assert_eq!(
            sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }
}
