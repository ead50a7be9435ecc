//! The library entry point: one call from a data file (or an encoded table)
//! to a finished report and its gate. `scan`, `demo` and `explain` share it,
//! and so can any other front end. Options are validated here, once; this
//! module knows nothing of flags or the terminal.

use crate::data::EncodedTable;
use crate::data::join::attach_source;
use crate::data::load::{self, FileSummary, LoadOptions};
use crate::data::prepare::{self, EncodeOptions, Roles};
use crate::error::InputError;
use crate::outputs::input::{ScoredSpec, read_scored};
use crate::outputs::{OutputsOptions, OutputsReport};
use crate::report::explanation::Explanation;
use crate::report::{AddedSource, DatasetInfo, Report};
use crate::review::gate::gate_failures;
use crate::review::policy::{Policy, today_utc};
use crate::scan;
use std::path::Path;

pub use crate::scan::explain::{ExplainError, explain as explain_table};
pub use crate::scan::{
    DEFAULT_MAX_UTILITY_LOSS, DEFAULT_MIN_CLASS, PairMode, Progress, ScanOptions, Silent,
    fitted_auc, scan as scan_table,
};

/// Folds a scan may use: at least two, and few enough that each keeps rows.
const FOLDS: std::ops::RangeInclusive<usize> = 2..=50;
/// Quantile bins a numeric feature may be cut into.
const BINS: std::ops::RangeInclusive<usize> = 2..=1024;
/// Fewest rows an ablation sample may have: below this, the intervals of the
/// refitted attacker are too wide for the ranking to mean much.
pub const MIN_ABLATION_ROWS: usize = 1_000;

/// Smallest `--sample`: as `demo --rows`, enough rows for every fold to hold
/// both classes of a typical attribute.
pub const MIN_SAMPLE_ROWS: usize = 100;

/// Largest outcome AUC loss a frontier set may be allowed: half the AUC
/// scale, the distance from a perfect model to chance.
const MAX_UTILITY_LOSS: f64 = 0.5;

/// Everything a screen needs besides the data.
#[derive(Debug, Clone, Default)]
pub struct ScreenOptions {
    /// How to read the file.
    pub load: LoadOptions,
    /// Which column plays which role.
    pub roles: Roles,
    /// How columns are encoded (bins, sample, class limits).
    pub encode: EncodeOptions,
    /// The scan's settings (folds, seed, thresholds, pairs, whole set).
    pub scan: ScanOptions,
    /// A review policy applied to the finished report.
    pub policy: Option<Policy>,
    /// The command line as typed, recorded in the report's settings.
    pub command: String,
}

impl ScreenOptions {
    /// Checks every setting and makes the dependent ones agree: the policy's
    /// thresholds replace the scan's, and encoding uses the scan's folds and
    /// seed. Every error is one line naming the setting and the value.
    pub fn validated(mut self) -> Result<Self, InputError> {
        check_range("folds", self.scan.folds, &FOLDS)?;
        check_range("bins", self.encode.bins, &BINS)?;
        let t = &self.scan.thresholds;
        for (name, value) in [
            ("target AUC", self.scan.target_auc),
            ("proxy AUC threshold", t.proxy_auc_low),
            ("review AUC threshold", t.review_auc_low),
            ("whole-set AUC threshold", t.whole_set_auc_low),
        ] {
            if !(0.5..=1.0).contains(&value) {
                return Err(InputError::Usage(format!(
                    "{name} must be between 0.5 and 1, got {value}"
                )));
            }
        }
        if !(0.0..=MAX_UTILITY_LOSS).contains(&self.scan.max_utility_loss) {
            return Err(InputError::Usage(format!(
                "max utility loss must be between 0 and {MAX_UTILITY_LOSS}, got {}",
                self.scan.max_utility_loss
            )));
        }
        if let Some(rows) = self.encode.sample.filter(|&n| n < MIN_SAMPLE_ROWS) {
            return Err(InputError::Usage(format!(
                "--sample must be at least {MIN_SAMPLE_ROWS} rows, got {rows}"
            )));
        }
        if self.scan.ablation_rows < MIN_ABLATION_ROWS {
            return Err(InputError::Usage(format!(
                "ablation rows must be at least {MIN_ABLATION_ROWS}, got {}",
                self.scan.ablation_rows
            )));
        }
        if let Some(policy) = &self.policy {
            self.scan.thresholds = policy.thresholds.applied_to(self.scan.thresholds);
        }
        let t = &self.scan.thresholds;
        if t.review_auc_low > t.proxy_auc_low {
            return Err(InputError::Usage(format!(
                "the review line {} is above the proxy line {}: --review-auc must not exceed --proxy-auc",
                t.review_auc_low, t.proxy_auc_low
            )));
        }
        self.roles.check_distinct()?;
        self.encode.min_class_rows = self.encode.min_class_rows.max(self.scan.folds);
        self.encode.seed = self.scan.seed;
        Ok(self)
    }
}

fn check_range(
    name: &str,
    value: usize,
    range: &std::ops::RangeInclusive<usize>,
) -> Result<(), InputError> {
    if range.contains(&value) {
        Ok(())
    } else {
        Err(InputError::Usage(format!(
            "{name} must be between {} and {}, got {value}",
            range.start(),
            range.end()
        )))
    }
}

/// A finished screen: the report and what makes it fail its gate.
#[derive(Debug, Clone)]
#[must_use]
pub struct Screening {
    pub report: Report,
    /// Reasons the screen fails (see [`gate_failures`]); empty when it passes.
    pub failures: Vec<String>,
}

impl Screening {
    /// Whether nothing exceeded a threshold or policy.
    #[must_use]
    pub fn passes(&self) -> bool {
        self.failures.is_empty()
    }
}

/// Checks, reads and encodes `path` under `options`.
pub fn load_table(
    path: &Path,
    options: &ScreenOptions,
    progress: &dyn Progress,
) -> Result<(FileSummary, EncodedTable), InputError> {
    progress.stage("checking file", 1);
    let summary = load::inspect(path, options.load)?;
    let plan = prepare::plan_columns(path, &summary.columns, &options.roles)?;
    progress.stage("reading and encoding", 1);
    let columns = load::FileColumns {
        summary: &summary,
        options: options.load,
    };
    let table = prepare::encode_table(path, &columns, &plan, &options.roles, &options.encode)?;
    Ok((summary, table))
}

/// Screens the file at `path`: load, encode, scan, policy, gate.
pub fn screen_file(
    path: &Path,
    options: &ScreenOptions,
    progress: &dyn Progress,
) -> Result<Screening, InputError> {
    let (summary, table) = load_table(path, options, progress)?;
    Ok(screen_table(
        &table,
        file_dataset(&summary, &table, options.encode.sample),
        options,
        progress,
    ))
}

/// Screens an encoded table (generated data, or a front end that encodes
/// its own), then applies the policy and the gate.
pub fn screen_table(
    table: &EncodedTable,
    dataset: DatasetInfo,
    options: &ScreenOptions,
    progress: &dyn Progress,
) -> Screening {
    let report = scan::build_report(
        table,
        dataset,
        &options.scan,
        options.encode.bins,
        options.command.clone(),
        progress,
    );
    finish(report, options)
}

/// Joins the new source at `source` onto `path` by `key`, screens everything,
/// and adds what the new columns change; the key is never a feature.
pub fn screen_with_source(
    path: &Path,
    source: &Path,
    key: &str,
    options: &ScreenOptions,
    progress: &dyn Progress,
) -> Result<Screening, InputError> {
    progress.stage("checking files", 2);
    let base = load::inspect(path, options.load)?;
    let source_load = LoadOptions {
        format: None,
        ..options.load
    };
    let added = load::inspect(source, source_load)?;
    for summary in [&base, &added] {
        if !summary.columns.iter().any(|c| c == key) {
            return Err(InputError::UnknownColumn {
                path: summary.path.clone(),
                column: key.to_string(),
                suggestion: format!(" (key column; columns are: {})", summary.columns.join(", ")),
            });
        }
    }
    let mut roles = options.roles.clone();
    roles.exclude.push(key.to_string());
    let mut needed = prepare::plan_columns(path, &base.columns, &roles)?.needed();
    needed.push(key.to_string());
    progress.stage("reading and joining", 1);
    let base_frame = load::read_columns(&base, &needed, options.load)?;
    let added_frame = load::read_columns(&added, &added.columns, source_load)?;
    let (joined, join) = attach_source(base_frame, path, added_frame, source, key)?;
    if let Some(features) = roles.features.as_mut() {
        features.extend(join.new_columns.iter().cloned());
    }
    let columns: Vec<String> = joined
        .get_column_names()
        .iter()
        .map(|n| n.to_string())
        .collect();
    let plan = prepare::plan_columns(path, &columns, &roles)?;
    progress.stage("encoding", 1);
    let table = prepare::encode_table(path, &joined, &plan, &roles, &options.encode)?;
    let mut dataset = file_dataset(&base, &table, options.encode.sample);
    dataset.columns += join.new_columns.len();
    let mut report = scan::build_report(
        &table,
        dataset,
        &options.scan,
        options.encode.bins,
        options.command.clone(),
        progress,
    );
    report.added_source = Some(AddedSource {
        source: file_name(&added.path),
        sha256: added.sha256.clone(),
        key: key.to_string(),
        per_protected: scan::added_source_effects(&table, &join.new_columns, &options.scan),
        new_columns: join.new_columns,
        base_rows: join.base_rows,
        matched_rows: join.matched_rows,
        unmatched_base_rows: join.unmatched_base_rows,
        unmatched_source_rows: join.unmatched_source_rows,
        duplicate_keys_in_source: join.duplicate_keys_in_source,
        duplicate_keys_in_base: join.duplicate_keys_in_base,
    });
    Ok(finish(report, options))
}

/// Everything about one feature of `path`, once per protected attribute.
pub fn explain_file(
    path: &Path,
    feature: &str,
    options: &ScreenOptions,
    progress: &dyn Progress,
) -> Result<Vec<Explanation>, InputError> {
    let (_, table) = load_table(path, options, progress)?;
    (0..table.protected.len())
        .map(|index| {
            explain_table(&table, index, feature, &options.scan, progress).map_err(|error| {
                InputError::Format {
                    path: path.to_path_buf(),
                    reason: error.to_string(),
                }
            })
        })
        .collect()
}

/// Applies the policy (as of today, UTC) and computes the gate.
fn finish(mut report: Report, options: &ScreenOptions) -> Screening {
    if let Some(policy) = &options.policy {
        policy.apply(&mut report, &today_utc());
    }
    let failures = gate_failures(&report);
    Screening { report, failures }
}

/// What the report says about the file it read.
pub fn file_dataset(
    summary: &FileSummary,
    table: &EncodedTable,
    sample: Option<usize>,
) -> DatasetInfo {
    DatasetInfo {
        source: file_name(&summary.path),
        rows: summary.rows,
        rows_used: table.rows(),
        columns: summary.columns.len(),
        sha256: Some(summary.sha256.clone()),
        rows_dropped_missing_protected: table.protected.first().map_or(0, |p| p.dropped_missing),
        sample,
    }
}

/// The file's name without its folders: reports never carry full paths.
fn file_name(path: &Path) -> String {
    path.file_name().map_or_else(
        || path.display().to_string(),
        |n| n.to_string_lossy().to_string(),
    )
}

/// A finished evaluation of a model's outputs and what makes it fail its gate.
#[derive(Debug, Clone)]
#[must_use]
pub struct OutputsEvaluation {
    pub report: OutputsReport,
    /// Reasons the evaluation fails (see [`crate::outputs::gate_failures`]); empty when it passes.
    pub failures: Vec<String>,
}

/// Evaluates a trained model's scored file (`outputs`): read, evaluate, gate.
pub fn evaluate_outputs(
    spec: &ScoredSpec,
    options: &OutputsOptions,
    command: String,
) -> Result<OutputsEvaluation, InputError> {
    let data = read_scored(spec)?;
    let report = crate::outputs::build_report(&data, spec, options, command);
    let failures = report.failing.clone();
    Ok(OutputsEvaluation { report, failures })
}
