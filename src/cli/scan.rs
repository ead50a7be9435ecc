//! `telltale scan DATA --protected COL ...`: the screen itself.

use super::Status;
use super::data_args::DataArgs;
use super::output::{write_one, write_report_dir};
use super::progress::TerminalProgress;
use crate::data::load::FileSummary;
use crate::report::html::HtmlRenderer;
use crate::report::json::JsonRenderer;
use crate::report::markdown::MarkdownRenderer;
use crate::report::terminal::TerminalRenderer;
use crate::report::{AddedSource, DatasetInfo, Renderer, Report, Thresholds};
use crate::review::policy::{Policy, today_utc};
use crate::scan::{self, PairMode, ScanOptions};
use anyhow::{Result, bail};
use clap::{Args, ValueEnum};
use std::io::IsTerminal;
use std::path::PathBuf;

#[derive(Debug, Clone, Copy, ValueEnum)]
pub enum PairsArg {
    All,
    Top,
    None,
}

/// Fewest rows an ablation sample may have: below this, DeLong intervals of
/// the refitted attacker are too wide for the ranking to mean much.
const MIN_ABLATION_ROWS: usize = 1_000;

/// Settings of the scan itself (shared by `scan` and `demo`).
#[derive(Debug, Args)]
pub struct ScanSettingsArgs {
    /// Which feature pairs to scan (all pairs up to 60 features, else the top ones).
    #[arg(long, value_enum, default_value = "all")]
    pub pairs: PairsArg,
    /// The removal plan stops once the whole-set AUC is below this.
    #[arg(long, default_value_t = 0.60)]
    pub target_auc: f64,
    /// Flag `proxy` when the AUC interval's lower bound reaches this.
    #[arg(long, default_value_t = 0.70)]
    pub proxy_auc: f64,
    /// Flag `review` when the AUC interval's lower bound reaches this.
    #[arg(long, default_value_t = 0.60)]
    pub review_auc: f64,
    /// Flag `review` when adjusted mutual information reaches this.
    #[arg(long, default_value_t = 0.05)]
    pub review_ami: f64,
    /// Fail (exit 1) when the whole-set AUC's lower bound reaches this.
    #[arg(long, default_value_t = 0.70)]
    pub whole_set_auc: f64,
    /// Skip the whole-set attack, ablation and removal plan.
    #[arg(long)]
    pub no_whole_set: bool,
    /// Run the whole-set attack but skip drop-one ablation and the removal
    /// plan, which refit the attacker once per feature (slow on large data).
    #[arg(long)]
    pub no_ablation: bool,
    /// Above this many rows, drop-one ablation and the removal plan run on a
    /// seeded stratified sample of this size (the whole-set AUC always uses every row).
    #[arg(long, default_value_t = 200_000, value_name = "N")]
    pub ablation_rows: usize,
}

impl ScanSettingsArgs {
    pub fn options(&self, folds: usize, seed: u64, min_cell: u64) -> Result<ScanOptions> {
        for (name, value) in [
            ("--target-auc", self.target_auc),
            ("--proxy-auc", self.proxy_auc),
            ("--review-auc", self.review_auc),
            ("--whole-set-auc", self.whole_set_auc),
        ] {
            if !(0.5..=1.0).contains(&value) {
                bail!("{name} must be between 0.5 and 1, got {value}");
            }
        }
        if self.ablation_rows < MIN_ABLATION_ROWS {
            bail!(
                "--ablation-rows must be at least {MIN_ABLATION_ROWS}, got {}",
                self.ablation_rows
            );
        }
        Ok(ScanOptions {
            folds,
            seed,
            pairs: match self.pairs {
                PairsArg::All => PairMode::All,
                PairsArg::Top => PairMode::Top,
                PairsArg::None => PairMode::None,
            },
            target_auc: self.target_auc,
            thresholds: Thresholds {
                proxy_auc_low: self.proxy_auc,
                review_auc_low: self.review_auc,
                review_ami: self.review_ami,
            },
            min_cell,
            whole_set: !self.no_whole_set,
            ablation: !self.no_ablation,
            ablation_rows: self.ablation_rows,
            ..ScanOptions::default()
        })
    }
}

#[derive(Debug, Args)]
pub struct ScanArgs {
    #[command(flatten)]
    pub data: DataArgs,
    #[command(flatten)]
    pub settings: ScanSettingsArgs,
    /// Write report.json, report.md and report.html into this folder.
    #[arg(long, value_name = "DIR")]
    pub report: Option<PathBuf>,
    /// Write the JSON report to this file (`-` for standard output).
    #[arg(long, value_name = "PATH")]
    pub json: Option<PathBuf>,
    /// Replace existing report files.
    #[arg(long)]
    pub force: bool,
    /// A new data source to join onto DATA by `--key`; the report says what its columns add.
    #[arg(long, value_name = "FILE", requires = "key")]
    pub add_source: Option<PathBuf>,
    /// Key column shared by DATA and the new source.
    #[arg(long, value_name = "COL", requires = "add_source")]
    pub key: Option<String>,
    /// Review policy (TOML): thresholds and accepted features with reason, reviewer and expiry.
    #[arg(long, value_name = "FILE")]
    pub policy: Option<PathBuf>,
}

/// The renderers written into a report folder.
pub fn folder_renderers() -> Vec<Box<dyn Renderer>> {
    vec![
        Box::new(JsonRenderer),
        Box::new(MarkdownRenderer),
        Box::new(HtmlRenderer),
    ]
}

/// Prints the terminal summary (unless JSON goes to standard output) and writes the requested files.
pub fn emit(
    report: &Report,
    dir: Option<&PathBuf>,
    json: Option<&PathBuf>,
    force: bool,
) -> Result<()> {
    let json_to_stdout = json.is_some_and(|p| p.as_os_str() == "-");
    if !json_to_stdout {
        let colour = std::io::stdout().is_terminal();
        print!("{}", TerminalRenderer { colour }.render(report));
    }
    if let Some(dir) = dir {
        let renderers = folder_renderers();
        let refs: Vec<&dyn Renderer> = renderers.iter().map(AsRef::as_ref).collect();
        write_report_dir(dir, report, &refs, force)?;
        if !json_to_stdout {
            println!("report written to {}", dir.display());
        }
    }
    if let Some(path) = json {
        write_one(path, &JsonRenderer.render(report), force)?;
    }
    Ok(())
}

fn dataset_info(
    summary: &FileSummary,
    table: &crate::data::EncodedTable,
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

/// The command line as typed, for the report's settings (file paths reduced to names).
pub fn command_line() -> String {
    std::env::args()
        .skip(1)
        .map(|a| if a.contains(' ') { format!("'{a}'") } else { a })
        .collect::<Vec<_>>()
        .join(" ")
}

pub fn run(args: &ScanArgs) -> Result<Status> {
    let progress = TerminalProgress::with_timings(args.data.quiet, args.data.timings);
    let policy = args.policy.as_deref().map(Policy::load).transpose()?;
    let mut options = args
        .settings
        .options(args.data.folds, args.data.seed, args.data.min_cell)?;
    let mut whole_set_auc = args.settings.whole_set_auc;
    if let Some(policy) = &policy {
        options.thresholds = policy.thresholds.applied_to(options.thresholds);
        whole_set_auc = policy.thresholds.whole_set_auc_low.unwrap_or(whole_set_auc);
    }
    check_outputs(args.report.as_ref(), args.json.as_ref(), args.force)?;
    let mut report = match (&args.add_source, &args.key) {
        (Some(source), Some(key)) => scan_with_source(args, source, key, &options, &progress)?,
        _ => {
            let (summary, table) = args.data.load(&progress)?;
            progress.note_timing("floor pass", floor_pass(&table));
            let dataset = dataset_info(&summary, &table, args.data.sample);
            scan::build_report(
                &table,
                dataset,
                &options,
                args.data.bins,
                command_line(),
                &progress,
            )
        }
    };
    if let Some(policy) = &policy {
        policy.apply(&mut report, &today_utc());
    }
    emit(
        &report,
        args.report.as_ref(),
        args.json.as_ref(),
        args.force,
    )?;
    let failures = scan::gate_failures(&report, whole_set_auc);
    if failures.is_empty() {
        Ok(Status::Clean)
    } else {
        for failure in &failures {
            eprintln!("telltale: threshold exceeded: {failure}");
        }
        Ok(Status::ThresholdExceeded)
    }
}

/// Joins the new source, scans everything, and adds what the new columns change.
fn scan_with_source(
    args: &ScanArgs,
    source: &std::path::Path,
    key: &str,
    options: &ScanOptions,
    progress: &TerminalProgress,
) -> Result<Report> {
    let (base, added, join, table) = args.data.load_with_source(source, key, progress)?;
    let mut dataset = dataset_info(&base, &table, args.data.sample);
    dataset.columns += join.new_columns.len();
    let mut report = scan::build_report(
        &table,
        dataset,
        options,
        args.data.bins,
        command_line(),
        progress,
    );
    report.added_source = Some(AddedSource {
        source: file_name(&added.path),
        sha256: added.sha256.clone(),
        key: key.to_string(),
        new_columns: join.new_columns.clone(),
        base_rows: join.base_rows,
        matched_rows: join.matched_rows,
        unmatched_base_rows: join.unmatched_base_rows,
        unmatched_source_rows: join.unmatched_source_rows,
        duplicate_keys_in_source: join.duplicate_keys_in_source,
        duplicate_keys_in_base: join.duplicate_keys_in_base,
        per_protected: scan::added_source_effects(&table, &join.new_columns, options),
    });
    Ok(report)
}

/// Seconds for one plain pass reading every encoded code once: the
/// memory-bandwidth floor the benchmark compares the single-feature scan with.
fn floor_pass(table: &crate::data::EncodedTable) -> f64 {
    let start = std::time::Instant::now();
    let total: u64 = table
        .features
        .iter()
        .map(|f| f.codes.iter().map(|&c| u64::from(c)).sum::<u64>())
        .sum();
    std::hint::black_box(total);
    start.elapsed().as_secs_f64()
}

fn file_name(path: &std::path::Path) -> String {
    path.file_name().map_or_else(
        || path.display().to_string(),
        |n| n.to_string_lossy().to_string(),
    )
}

/// Refuses up front to overwrite outputs, so no time is spent scanning first.
pub fn check_outputs(report: Option<&PathBuf>, json: Option<&PathBuf>, force: bool) -> Result<()> {
    if force {
        return Ok(());
    }
    if let Some(dir) = report {
        let existing = dir.join(JsonRenderer.file_name());
        if existing.exists() {
            bail!(
                "{}: a report is already there; choose another folder or pass --force to replace it",
                existing.display()
            );
        }
    }
    if let Some(path) = json.filter(|p| p.as_os_str() != "-" && p.exists()) {
        bail!(
            "{}: file exists; pass --force to replace it",
            path.display()
        );
    }
    Ok(())
}
