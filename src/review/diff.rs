//! `diff`: what changed between two reports, and whether the change should
//! stop a pipeline. [`ReportDiff::page`] lays the comparison out for the
//! shared backends; the only statistic is the z-test of two independent AUCs.

use crate::report::format;
use crate::report::layout::names_or_none;
use crate::report::markdown::MarkdownRenderer;
use crate::report::page::{
    Backend, Block, Cell, CellStyle, Column, Detail, Page, Role, Row, Section, Table, Tone,
};
use crate::report::terminal::TerminalRenderer;
use crate::report::{FeatureOutcome, FeatureResult, Flag, ProtectedResult, Report, SCHEMA_VERSION};
use crate::stats::two_sided_p_value;
use serde::Serialize;
use std::collections::HashMap;
use std::path::{Path, PathBuf};
use thiserror::Error;

/// Significance level used when the caller has no reason to pick another.
pub const DEFAULT_ALPHA: f64 = 0.05;

/// Smallest AUC change `diff` calls significant, however small its p-value:
/// 0.02 AUC, half the 0.04 gap between adjacent verdict-relevant values a
/// reviewer reads off a two-decimal report, and well above the run-to-run
/// spread of a million-row scan (common practice: a material change must be
/// both statistically and practically significant).
pub const DEFAULT_MIN_EFFECT: f64 = 0.02;

/// Why a report file could not be read; each message is one line naming the file.
#[derive(Debug, Error)]
pub enum ReviewError {
    /// The file could not be opened or is not UTF-8 text.
    #[error("{path}: cannot read report: {reason}")]
    Unreadable { path: PathBuf, reason: String },
    /// JSON syntax error or truncated file.
    #[error("{path}: not valid JSON (line {line}, column {column}): {reason}")]
    NotJson {
        path: PathBuf,
        line: usize,
        column: usize,
        reason: String,
    },
    #[error(
        "{path}: schema_version {found} is not supported (this build reads version {supported})"
    )]
    UnsupportedSchema {
        path: PathBuf,
        found: String,
        supported: u32,
    },
    #[error(
        "{path}: not a complete report: missing field `{field}` (line {line}, column {column})"
    )]
    MissingField {
        path: PathBuf,
        field: String,
        line: usize,
        column: usize,
    },
    /// Valid JSON with a value of the wrong type or shape.
    #[error("{path}: line {line}, column {column}: {reason}")]
    Invalid {
        path: PathBuf,
        line: usize,
        column: usize,
        reason: String,
    },
}

/// Reads a `report.json` written by `scan`, checking its `schema_version`
/// before the layout so an old or newer file gets a clear message.
pub fn load_report(path: &Path) -> Result<Report, ReviewError> {
    let text = std::fs::read_to_string(path).map_err(|e| ReviewError::Unreadable {
        path: path.to_path_buf(),
        reason: e.to_string(),
    })?;
    let value: serde_json::Value = serde_json::from_str(&text).map_err(|e| json_error(path, &e))?;
    check_schema_version(path, &value)?;
    serde_json::from_str(&text).map_err(|e| json_error(path, &e))
}

fn check_schema_version(path: &Path, value: &serde_json::Value) -> Result<(), ReviewError> {
    if !value.is_object() {
        return Err(ReviewError::Invalid {
            path: path.to_path_buf(),
            line: 1,
            column: 1,
            reason: "a report is a JSON object".to_string(),
        });
    }
    if let Some(kind) = value.get("report_kind").and_then(|k| k.as_str()) {
        return Err(ReviewError::Invalid {
            path: path.to_path_buf(),
            line: 1,
            column: 1,
            reason: format!(
                "this is an `{kind}` report; diff compares the report.json files of `scan`"
            ),
        });
    }
    match value.get("schema_version") {
        Some(found) if found.as_u64() != Some(u64::from(SCHEMA_VERSION)) => {
            Err(ReviewError::UnsupportedSchema {
                path: path.to_path_buf(),
                found: found.to_string(),
                supported: SCHEMA_VERSION,
            })
        }
        _ => Ok(()),
    }
}

fn json_error(path: &Path, error: &serde_json::Error) -> ReviewError {
    let (line, column) = (error.line(), error.column());
    let full = error.to_string();
    let reason = full
        .strip_suffix(&format!(" at line {line} column {column}"))
        .unwrap_or(&full)
        .to_string();
    let path = path.to_path_buf();
    if error.is_syntax() || error.is_eof() {
        return ReviewError::NotJson {
            path,
            line,
            column,
            reason,
        };
    }
    match missing_field_name(&reason) {
        Some(field) => ReviewError::MissingField {
            path,
            field,
            line,
            column,
        },
        None => ReviewError::Invalid {
            path,
            line,
            column,
            reason,
        },
    }
}

/// serde's wording for an absent field is "missing field `name`".
fn missing_field_name(reason: &str) -> Option<String> {
    reason
        .strip_prefix("missing field `")?
        .strip_suffix('`')
        .map(str::to_string)
}

/// Everything that changed between two reports.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct ReportDiff {
    /// Two-sided significance level of the AUC tests.
    pub alpha: f64,
    /// Smallest absolute AUC change that counts as significant.
    pub min_effect: f64,
    /// Dataset, tool and settings fields side by side.
    pub context: Vec<ContextItem>,
    /// Reasons the comparison is weaker than it looks (settings differ, same data...).
    pub warnings: Vec<String>,
    /// Protected attributes only in the new report.
    pub protected_added: Vec<String>,
    /// Protected attributes only in the old report.
    pub protected_removed: Vec<String>,
    /// One entry per protected attribute present in either report.
    pub protected: Vec<ProtectedDiff>,
}

/// One dataset, tool or settings field in both reports.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct ContextItem {
    /// Dotted JSON path, e.g. `settings.folds`.
    pub field: String,
    /// Its value in the old report.
    pub old: String,
    /// Its value in the new report.
    pub new: String,
    /// `old != new`.
    pub changed: bool,
    /// True for fields whose change makes AUCs not strictly comparable.
    pub affects_comparison: bool,
}

/// Whether a protected attribute is in both reports or only one.
#[derive(Debug, Clone, Copy, Serialize, PartialEq, Eq)]
#[serde(rename_all = "lowercase")]
pub enum AttributeStatus {
    /// In both reports.
    Both,
    /// Only in the new report.
    Added,
    /// Only in the old report.
    Removed,
}

/// Changes for one protected attribute.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct ProtectedDiff {
    /// The protected attribute.
    pub protected: String,
    /// In both reports, or only one.
    pub status: AttributeStatus,
    /// Features only in the new report, in its order.
    pub features_added: Vec<String>,
    /// Features only in the old report, in its order.
    pub features_removed: Vec<String>,
    /// Features whose flag differs, including added (old `None`) and removed (new `None`) ones.
    pub flag_changes: Vec<FlagChange>,
    /// Features in both reports, in the new report's order.
    pub auc_changes: Vec<AucChange>,
    /// The whole-set attacker's AUC, when both reports have one.
    pub whole_set: Option<AucChange>,
    /// With an outcome in both reports: each common feature's outcome AUC
    /// and gain over the protected attribute, then the whole set's outcome
    /// AUC, tested as the AUC changes are (standard errors read from the
    /// 95% intervals where the report stores no standard error).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub outcome_changes: Vec<AucChange>,
}

/// A feature whose verdict changed.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct FlagChange {
    /// The feature.
    pub feature: String,
    /// `None` when the feature is new.
    pub old: Option<Flag>,
    /// `None` when the feature was removed.
    pub new: Option<Flag>,
    /// The new report carries an active policy acceptance for the feature.
    pub accepted: bool,
}

impl FlagChange {
    /// Proxy now, not proxy (or absent) before, and not accepted: what fails the gate.
    #[must_use]
    pub fn is_new_proxy(&self) -> bool {
        self.new == Some(Flag::Proxy) && self.old != Some(Flag::Proxy) && !self.accepted
    }
}

/// One AUC in both reports with the test of their difference.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct AucChange {
    /// Feature name, or `whole set`.
    pub name: String,
    /// The AUC in the old report.
    pub old_auc: Option<f64>,
    /// The AUC in the new report.
    pub new_auc: Option<f64>,
    /// New minus old.
    pub change: Option<f64>,
    /// `change / sqrt(se_old² + se_new²)`; `None` without both standard errors.
    pub z: Option<f64>,
    /// Two-sided p-value of `z` under the standard normal.
    pub p_value: Option<f64>,
    /// `p_value < alpha` and |change| ≥ the minimum effect size, both AUCs
    /// from the same surrogate.
    pub significant: bool,
    /// The surrogate of the old and of the new AUC; when they differ the
    /// change is shown but not tested (`z`, `p_value` null).
    pub surrogates: [Option<String>; 2],
}

impl AucChange {
    /// Compares two AUCs from independent samples with the critical ratio
    /// z = (A₂ − A₁) / √(SE₁² + SE₂²): Hanley & McNeil's (1983, "A method of
    /// comparing the areas under ROC curves derived from the same cases",
    /// Radiology 148:839–843) statistic with the correlation term set to 0, as
    /// for separate samples. When both reports come from the same rows the AUCs
    /// are positively correlated and this test is conservative.
    /// Only AUCs of the same surrogate are tested against each other, and a
    /// change below `min_effect` is never significant.
    #[must_use]
    pub fn test(name: &str, old: AucPoint, new: AucPoint, alpha: f64, min_effect: f64) -> Self {
        let change = old.auc.zip(new.auc).map(|(a, b)| b - a);
        let like_for_like = old.surrogate == new.surrogate;
        let z = change
            .zip(combined_se(old.se, new.se))
            .filter(|_| like_for_like)
            .map(|(d, se)| d / se);
        let p_value = z.map(two_sided_p_value);
        Self {
            name: name.to_string(),
            old_auc: old.auc,
            new_auc: new.auc,
            change,
            z,
            p_value,
            significant: p_value.is_some_and(|p| p < alpha)
                && change.is_some_and(|d| d.abs() >= min_effect),
            surrogates: [old.surrogate, new.surrogate],
        }
    }

    /// The AUC went up and the rise is significant.
    #[must_use]
    pub fn rose_significantly(&self) -> bool {
        self.significant && self.change.is_some_and(|d| d > 0.0)
    }
}

/// An AUC, its standard error and the surrogate behind it, as read from a report.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct AucPoint {
    /// The AUC.
    pub auc: Option<f64>,
    /// Its standard error (stored, or read back from the 95 % interval).
    pub se: Option<f64>,
    /// The surrogate that produced it (`diff` compares like with like).
    pub surrogate: Option<String>,
}

impl AucPoint {
    fn of_feature(feature: &FeatureResult) -> Self {
        Self {
            auc: feature.auc,
            se: feature.auc_se,
            surrogate: feature.surrogate.clone(),
        }
    }

    /// A value with a 95% normal interval: its standard error is the
    /// interval's width over 2 × 1.959964.
    fn of_interval(value: Option<f64>, low: Option<f64>, high: Option<f64>, model: &str) -> Self {
        Self {
            auc: value,
            se: low.zip(high).map(|(l, h)| (h - l) / (2.0 * Z_975)),
            surrogate: Some(model.to_string()),
        }
    }

    fn of_whole_set_outcome(result: &ProtectedResult) -> Option<Self> {
        let w = result.whole_set.as_ref()?;
        w.outcome.as_ref().map(|o| Self {
            auc: Some(o.auc),
            se: Some(o.auc_se),
            surrogate: Some(w.surrogate.clone()),
        })
    }

    fn of_whole_set(result: &ProtectedResult) -> Option<Self> {
        result.whole_set.as_ref().map(|w| Self {
            auc: Some(w.auc),
            se: Some(w.auc_se),
            surrogate: Some(w.surrogate.clone()),
        })
    }
}

/// The 97.5% point of the standard normal.
const Z_975: f64 = 1.959_964;

/// Outcome AUC and gain of each feature in both reports, then the whole
/// set's outcome AUC.
fn outcome_changes(
    order: &[&str],
    old: &HashMap<&str, &FeatureResult>,
    new: &HashMap<&str, &FeatureResult>,
    whole: Option<(AucPoint, AucPoint)>,
    tests: Tests,
) -> Vec<AucChange> {
    let test = |name: &str, o: AucPoint, n: AucPoint| {
        AucChange::test(name, o, n, tests.alpha, tests.min_effect)
    };
    let utility =
        |o: &FeatureOutcome| AucPoint::of_interval(o.auc, o.auc_low, o.auc_high, "outcome");
    let gain = |o: &FeatureOutcome| {
        AucPoint::of_interval(
            o.gain_over_protected,
            o.gain_low,
            o.gain_high,
            "outcome gain",
        )
    };
    order
        .iter()
        .filter_map(|name| {
            let o = old.get(name)?.outcome.as_ref()?;
            let n = new.get(name)?.outcome.as_ref()?;
            Some([
                test(&format!("{name}: outcome AUC"), utility(o), utility(n)),
                test(
                    &format!("{name}: outcome gain over the attribute"),
                    gain(o),
                    gain(n),
                ),
            ])
        })
        .flatten()
        .chain(whole.map(|(o, n)| test("whole set: outcome AUC", o, n)))
        .collect()
}

fn combined_se(old: Option<f64>, new: Option<f64>) -> Option<f64> {
    let se = old?.hypot(new?);
    (se.is_finite() && se > 0.0).then_some(se)
}

/// Compares two reports: per protected attribute, features added and removed,
/// flag changes and AUC changes tested at `alpha` (two-sided), plus the
/// dataset and settings context. Pass [`DEFAULT_ALPHA`] and
/// [`DEFAULT_MIN_EFFECT`] unless there is a reason.
#[must_use]
pub fn compare(old: &Report, new: &Report, alpha: f64, min_effect: f64) -> ReportDiff {
    let tests = Tests { alpha, min_effect };
    let context = context_items(old, new);
    let warnings = comparison_warnings(old, new, &context);
    let old_names: Vec<&str> = old.results.iter().map(|r| r.protected.as_str()).collect();
    let new_names: Vec<&str> = new.results.iter().map(|r| r.protected.as_str()).collect();
    let protected = new_names
        .iter()
        .chain(old_names.iter().filter(|n| !new_names.contains(n)))
        .map(|name| {
            ProtectedDiff::between(name, find_result(old, name), find_result(new, name), tests)
        })
        .collect();
    ReportDiff {
        alpha,
        min_effect,
        context,
        warnings,
        protected_added: missing_from(&new_names, &old_names),
        protected_removed: missing_from(&old_names, &new_names),
        protected,
    }
}

/// Significance level and minimum effect size of the AUC change tests.
#[derive(Debug, Clone, Copy)]
struct Tests {
    alpha: f64,
    min_effect: f64,
}

fn find_result<'a>(report: &'a Report, protected: &str) -> Option<&'a ProtectedResult> {
    report.results.iter().find(|r| r.protected == protected)
}

/// Names in `these` that are not in `others`, in `these` order.
fn missing_from(these: &[&str], others: &[&str]) -> Vec<String> {
    these
        .iter()
        .filter(|n| !others.contains(n))
        .map(|n| (*n).to_string())
        .collect()
}

impl ProtectedDiff {
    fn between(
        protected: &str,
        old: Option<&ProtectedResult>,
        new: Option<&ProtectedResult>,
        tests: Tests,
    ) -> Self {
        let status = match (old, new) {
            (Some(_), None) => AttributeStatus::Removed,
            (None, Some(_)) => AttributeStatus::Added,
            _ => AttributeStatus::Both,
        };
        let old_features = features_by_name(old);
        let new_features = features_by_name(new);
        let old_order = feature_names(old);
        let new_order = feature_names(new);
        let flag_changes = new_order
            .iter()
            .chain(old_order.iter().filter(|n| !new_features.contains_key(*n)))
            .filter_map(|name| flag_change(name, old_features.get(name), new_features.get(name)))
            .collect();
        let auc_changes = new_order
            .iter()
            .filter_map(|name| {
                let (o, n) = (old_features.get(name)?, new_features.get(name)?);
                Some(AucChange::test(
                    name,
                    AucPoint::of_feature(o),
                    AucPoint::of_feature(n),
                    tests.alpha,
                    tests.min_effect,
                ))
            })
            .collect();
        let whole_set = old
            .and_then(AucPoint::of_whole_set)
            .zip(new.and_then(AucPoint::of_whole_set))
            .map(|(o, n)| AucChange::test("whole set", o, n, tests.alpha, tests.min_effect));
        let outcome_changes = outcome_changes(
            &new_order,
            &old_features,
            &new_features,
            old.and_then(AucPoint::of_whole_set_outcome)
                .zip(new.and_then(AucPoint::of_whole_set_outcome)),
            tests,
        );
        Self {
            protected: protected.to_string(),
            status,
            features_added: missing_from(&new_order, &old_order),
            features_removed: missing_from(&old_order, &new_order),
            flag_changes,
            auc_changes,
            whole_set,
            outcome_changes,
        }
    }
}

fn feature_names(result: Option<&ProtectedResult>) -> Vec<&str> {
    result
        .map(|r| r.features.iter().map(|f| f.name.as_str()).collect())
        .unwrap_or_default()
}

fn features_by_name(result: Option<&ProtectedResult>) -> HashMap<&str, &FeatureResult> {
    result
        .map(|r| r.features.iter().map(|f| (f.name.as_str(), f)).collect())
        .unwrap_or_default()
}

fn flag_change(
    name: &str,
    old: Option<&&FeatureResult>,
    new: Option<&&FeatureResult>,
) -> Option<FlagChange> {
    let (old_flag, new_flag) = (old.map(|f| f.flag), new.map(|f| f.flag));
    (old_flag != new_flag).then(|| FlagChange {
        feature: name.to_string(),
        old: old_flag,
        new: new_flag,
        accepted: new
            .and_then(|f| f.accepted.as_ref())
            .is_some_and(|a| a.active),
    })
}

fn context_items(old: &Report, new: &Report) -> Vec<ContextItem> {
    let item = |field: &str, old: String, new: String, affects_comparison: bool| ContextItem {
        field: field.to_string(),
        changed: old != new,
        old,
        new,
        affects_comparison,
    };
    let sha = |r: &Report| r.dataset.sha256.clone().unwrap_or_else(|| "none".into());
    let (os, ns) = (&old.settings, &new.settings);
    let (ot, nt) = (&os.thresholds, &ns.thresholds);
    vec![
        item(
            "tool.version",
            old.tool.version.clone(),
            new.tool.version.clone(),
            true,
        ),
        item(
            "dataset.source",
            old.dataset.source.clone(),
            new.dataset.source.clone(),
            false,
        ),
        item("dataset.sha256", sha(old), sha(new), false),
        item(
            "dataset.rows",
            old.dataset.rows.to_string(),
            new.dataset.rows.to_string(),
            false,
        ),
        item(
            "dataset.rows_used",
            old.dataset.rows_used.to_string(),
            new.dataset.rows_used.to_string(),
            false,
        ),
        item(
            "settings.folds",
            os.folds.to_string(),
            ns.folds.to_string(),
            true,
        ),
        item(
            "settings.seed",
            os.seed.to_string(),
            ns.seed.to_string(),
            true,
        ),
        item(
            "settings.bins",
            os.bins.to_string(),
            ns.bins.to_string(),
            true,
        ),
        item(
            "settings.min_cell",
            os.min_cell.to_string(),
            ns.min_cell.to_string(),
            true,
        ),
        item(
            "settings.thresholds.proxy_auc_low",
            ot.proxy_auc_low.to_string(),
            nt.proxy_auc_low.to_string(),
            true,
        ),
        item(
            "settings.thresholds.review_auc_low",
            ot.review_auc_low.to_string(),
            nt.review_auc_low.to_string(),
            true,
        ),
        item(
            "settings.verdict_surrogate",
            os.verdict_surrogate.clone(),
            ns.verdict_surrogate.clone(),
            true,
        ),
        item(
            "settings.interval_method",
            os.interval_method.clone(),
            ns.interval_method.clone(),
            true,
        ),
        item("settings.pairs", os.pairs.clone(), ns.pairs.clone(), true),
        item(
            "settings.target_auc",
            os.target_auc.to_string(),
            ns.target_auc.to_string(),
            true,
        ),
    ]
}

fn comparison_warnings(old: &Report, new: &Report, context: &[ContextItem]) -> Vec<String> {
    let differing: Vec<&str> = context
        .iter()
        .filter(|c| c.changed && c.affects_comparison)
        .map(|c| c.field.as_str())
        .collect();
    let mut warnings = Vec::new();
    if !differing.is_empty() {
        warnings.push(format!(
            "settings differ ({}): AUCs and flags are not strictly comparable",
            differing.join(", ")
        ));
    }
    if old.dataset.sha256.is_some() && old.dataset.sha256 == new.dataset.sha256 {
        warnings.push(
            "both reports come from the same data file: the AUC tests assume independent \
             samples and are conservative here"
                .to_string(),
        );
    }
    warnings
}

impl ReportDiff {
    fn tests(&self) -> Tests {
        Tests {
            alpha: self.alpha,
            min_effect: self.min_effect,
        }
    }

    /// One line per reason the change should stop a pipeline: a feature newly
    /// flagged proxy without an active acceptance, or a whole-set AUC that rose significantly.
    #[must_use]
    pub fn gate_reasons(&self) -> Vec<String> {
        self.protected
            .iter()
            .flat_map(|p| {
                let proxies = p.flag_changes.iter().filter(|c| c.is_new_proxy()).map(|c| {
                    format!(
                        "{}: `{}` is newly flagged proxy (was {})",
                        p.protected,
                        c.feature,
                        flag_label(c.old)
                    )
                });
                let whole = p
                    .whole_set
                    .iter()
                    .filter(|w| w.rose_significantly())
                    .map(|w| {
                        format!(
                            "{}: whole-set AUC rose significantly ({})",
                            p.protected,
                            auc_change_summary(w)
                        )
                    });
                proxies.chain(whole).collect::<Vec<_>>()
            })
            .collect()
    }

    /// Whether the new report should fail a review gate (see [`Self::gate_reasons`]).
    #[must_use]
    pub fn gate_failed(&self) -> bool {
        !self.gate_reasons().is_empty()
    }
}

fn flag_label(flag: Option<Flag>) -> &'static str {
    flag.map_or("absent", Flag::as_str)
}

/// A verdict cell, or `absent` for a feature missing from one report.
fn flag_cell(flag: Option<Flag>) -> Cell {
    flag.map_or_else(|| Cell::plain(flag_label(None)), Cell::verdict)
}

fn signed_or_missing(value: Option<f64>) -> String {
    value.map_or_else(|| format::NOT_COMPUTED.to_owned(), |v| format::signed(v, 3))
}

fn auc_change_summary(change: &AucChange) -> String {
    format!(
        "{} → {}, change {}, z = {}, p = {}",
        format::fixed(change.old_auc, 3),
        format::fixed(change.new_auc, 3),
        signed_or_missing(change.change),
        format::fixed(change.z, 2),
        format::p_value(change.p_value)
    )
}

fn yes_no(value: bool) -> &'static str {
    if value { "yes" } else { "no" }
}

/// Rows that show the summary: significant AUC changes, the whole set, changed context.
fn summary_if(shown: bool) -> Detail {
    if shown { Detail::Summary } else { Detail::Full }
}

impl ReportDiff {
    /// The comparison as a page: the gate and the warnings first, then the
    /// context, then each protected attribute.
    #[must_use]
    pub fn page(&self) -> Page<'static> {
        let reasons = self.gate_reasons();
        let gate = if reasons.is_empty() {
            "Gate: passed."
        } else {
            "Gate: FAILED."
        };
        let mut gate_blocks = vec![Block::paragraph(Role::Headline, gate)];
        if !reasons.is_empty() {
            gate_blocks.push(Block::List(reasons));
        }
        gate_blocks.extend(self.warnings.iter().map(|w| Block::Callout {
            label: "Warning",
            text: w.clone(),
        }));
        let mut sections = vec![Section::untitled(gate_blocks), self.context_section()];
        sections.extend(self.protected.iter().map(|p| p.section(self.tests())));
        Page {
            title: "Report comparison".to_owned(),
            subtitle: None,
            lead: Vec::new(),
            sections,
        }
    }

    fn context_section(&self) -> Section<'static> {
        let rows = self
            .context
            .iter()
            .map(|item| Row {
                cells: vec![
                    Cell::plain(&item.field),
                    Cell::plain(&item.old),
                    Cell::plain(&item.new),
                    if item.changed {
                        Cell::styled(yes_no(true), CellStyle::Toned(Tone::Caution))
                    } else {
                        Cell::plain(yes_no(false))
                    },
                ],
                detail: summary_if(item.changed),
            })
            .collect();
        let table = Table {
            name: "context",
            columns: vec![
                Column::text("field"),
                Column::text("old"),
                Column::text("new"),
                Column::text("changed"),
            ],
            rows,
        };
        let attributes = format!(
            "Protected attributes added: {}. Removed: {}.",
            names_or_none(&self.protected_added),
            names_or_none(&self.protected_removed)
        );
        Section::new(
            "Context",
            vec![
                Block::Table(table),
                Block::paragraph(Role::Body, attributes),
            ],
        )
    }
}

impl ProtectedDiff {
    fn section(&self, tests: Tests) -> Section<'static> {
        let status = format!("{:?}", self.status).to_lowercase();
        let mut blocks = vec![Block::List(vec![
            format!("Features added: {}", names_or_none(&self.features_added)),
            format!(
                "Features removed: {}",
                names_or_none(&self.features_removed)
            ),
        ])];
        if !self.flag_changes.is_empty() {
            blocks.push(Block::Table(self.flag_table()));
        }
        if !self.auc_changes.is_empty() || self.whole_set.is_some() {
            let significant = self.auc_changes.iter().filter(|c| c.significant).count();
            blocks.push(Block::paragraph(
                Role::Body,
                format!(
                    "AUC changes, two-sided z-test at α = {} (independent samples), counted \
                     only when at least {} AUC: {significant} of {} significant.",
                    tests.alpha,
                    tests.min_effect,
                    self.auc_changes.len()
                ),
            ));
            blocks.push(Block::Table(self.auc_table()));
        }
        if !self.outcome_changes.is_empty() {
            let significant = self
                .outcome_changes
                .iter()
                .filter(|c| c.significant)
                .count();
            blocks.push(Block::paragraph(
                Role::Body,
                format!(
                    "Outcome AUCs and gains over the attribute, the same test: {significant} of {} \
                     significant.",
                    self.outcome_changes.len()
                ),
            ));
            blocks.push(Block::Table(change_table(
                "outcome-changes",
                "measure",
                self.outcome_changes
                    .iter()
                    .map(|c| (c, summary_if(c.significant))),
            )));
        }
        Section::new(format!("{} ({status})", self.protected), blocks)
    }

    fn flag_table(&self) -> Table {
        let rows = self
            .flag_changes
            .iter()
            .map(|c| {
                let tone = if c.is_new_proxy() {
                    Tone::Alarm
                } else {
                    Tone::Caution
                };
                Row::from(vec![
                    Cell::styled(&c.feature, CellStyle::Toned(tone)),
                    flag_cell(c.old),
                    flag_cell(c.new),
                    Cell::plain(yes_no(c.accepted)),
                ])
            })
            .collect();
        Table {
            name: "flag-changes",
            columns: vec![
                Column::text("feature"),
                Column::text("old flag"),
                Column::text("new flag"),
                Column::text("accepted"),
            ],
            rows,
        }
    }

    fn auc_table(&self) -> Table {
        let whole = self.whole_set.iter().map(|c| (c, Detail::Summary));
        change_table(
            "auc-changes",
            "feature",
            self.auc_changes
                .iter()
                .map(|c| (c, summary_if(c.significant)))
                .chain(whole),
        )
    }
}

/// Tested changes as a table, significant ones toned: for leakage a rise
/// is an alarm and a fall calm; for outcome measures (`outcome-changes`)
/// either way is worth a look.
fn change_table<'c>(
    name: &'static str,
    first: &str,
    changes: impl Iterator<Item = (&'c AucChange, Detail)>,
) -> Table {
    let rows = changes
        .map(|(c, detail)| {
            let label = if !c.significant {
                Cell::plain(&c.name)
            } else if name == "outcome-changes" {
                Cell::styled(&c.name, CellStyle::Toned(Tone::Caution))
            } else if c.rose_significantly() {
                Cell::styled(&c.name, CellStyle::Toned(Tone::Alarm))
            } else {
                Cell::styled(&c.name, CellStyle::Toned(Tone::Calm))
            };
            Row {
                cells: vec![
                    label,
                    Cell::plain(format::fixed(c.old_auc, 3)),
                    Cell::plain(format::fixed(c.new_auc, 3)),
                    Cell::plain(signed_or_missing(c.change)),
                    Cell::plain(format::fixed(c.z, 2)),
                    Cell::plain(format::p_value(c.p_value)),
                    Cell::plain(yes_no(c.significant)),
                ],
                detail,
            }
        })
        .collect();
    Table {
        name,
        columns: vec![
            Column::text(first),
            Column::numeric("old AUC"),
            Column::numeric("new AUC"),
            Column::numeric("change"),
            Column::numeric("z"),
            Column::numeric("p"),
            Column::text("significant"),
        ],
        rows,
    }
}

/// Terminal rendering of a diff; `colour` adds ANSI colours for a TTY.
#[must_use]
pub fn render_diff_text(diff: &ReportDiff, colour: bool) -> String {
    TerminalRenderer { colour }.render_page(&diff.page())
}

/// Markdown rendering of a diff, for a review ticket or a pull request.
#[must_use]
pub fn render_diff_markdown(diff: &ReportDiff) -> String {
    MarkdownRenderer.render_page(&diff.page())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::sample::{AWKWARD_NAME, sample_report_with_outcome};

    #[test]
    fn outcome_values_are_compared_with_the_auc_rule_and_escaped() {
        // The sample's intervals are ±0.02 wide around each gain, so a gain
        // raised by 0.2 is about 14 combined standard errors away: significant
        // at any usual α and far above the minimum effect; the untouched
        // values do not change at all.
        let old = sample_report_with_outcome();
        let mut new = old.clone();
        let raised = new.results[0].features[1].name.clone();
        let outcome = new.results[0].features[1]
            .outcome
            .as_mut()
            .expect("sample outcome");
        for value in [
            &mut outcome.gain_over_protected,
            &mut outcome.gain_low,
            &mut outcome.gain_high,
        ] {
            *value = value.map(|v| v + 0.2);
        }
        let diff = compare(&old, &new, DEFAULT_ALPHA, DEFAULT_MIN_EFFECT);
        let changes = &diff.protected[0].outcome_changes;
        let features = old.results[0].features.len();
        assert_eq!(changes.len(), 2 * features + 1);
        let significant: Vec<&str> = changes
            .iter()
            .filter(|c| c.significant)
            .map(|c| c.name.as_str())
            .collect();
        assert_eq!(
            significant,
            [format!("{raised}: outcome gain over the attribute")]
        );
        assert_eq!(
            changes.last().map(|c| c.name.as_str()),
            Some("whole set: outcome AUC")
        );
        let markdown = render_diff_markdown(&diff);
        assert!(markdown.contains("outcome gain over the attribute"));
        assert!(!markdown.contains(AWKWARD_NAME), "{markdown}");
    }
}
