//! `telltale scan DATA --protected COL ...`: the screen itself.

use super::Status;
use super::data_args::DataArgs;
use super::output::{write_one, write_report_dir};
use super::progress::TerminalProgress;
use anyhow::{Result, bail};
use clap::{Args, ValueEnum};
use std::io::IsTerminal;
use std::path::PathBuf;
use telltale::pipeline::{self, Screening};
use telltale::pipeline::{PairMode, ScanOptions};
use telltale::report::html::HtmlRenderer;
use telltale::report::json::JsonRenderer;
use telltale::report::markdown::MarkdownRenderer;
use telltale::report::terminal::TerminalRenderer;
use telltale::report::{Renderer, Report, Thresholds};
use telltale::review::policy::Policy;

#[derive(Debug, Clone, Copy, ValueEnum)]
pub enum PairsArg {
    All,
    Top,
    None,
}

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
    /// Smallest protected class (rows) for which AUC flags and the gate are
    /// issued; below it the report says why none are. The default is the
    /// class size at which an AUC of 0.80 clears the review line with 80% power.
    #[arg(long, default_value_t = telltale::pipeline::DEFAULT_MIN_CLASS, value_name = "ROWS")]
    pub min_class: u64,
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
    /// With `--outcome`: the outcome AUC the recommended feature set may lose
    /// against the full set; the report names the set within it that cuts leakage most.
    #[arg(long, default_value_t = telltale::pipeline::DEFAULT_MAX_UTILITY_LOSS, value_name = "AUC")]
    pub max_utility_loss: f64,
}

impl ScanSettingsArgs {
    /// The scan's settings; validated with the rest by
    /// [`ScreenOptions::validated`](telltale::pipeline::ScreenOptions::validated).
    pub fn options(&self, folds: usize, seed: u64, min_cell: u64) -> ScanOptions {
        ScanOptions {
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
                whole_set_auc_low: self.whole_set_auc,
            },
            min_cell,
            whole_set: !self.no_whole_set,
            ablation: !self.no_ablation,
            ablation_rows: self.ablation_rows,
            min_class: self.min_class,
            max_utility_loss: self.max_utility_loss,
            ..ScanOptions::default()
        }
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

pub fn run(args: &ScanArgs) -> Result<Status> {
    let progress = TerminalProgress::with_timings(args.data.quiet, args.data.timings);
    let policy = args.policy.as_deref().map(Policy::load).transpose()?;
    let options = args.data.screen_options(&args.settings, policy)?;
    check_outputs(args.report.as_ref(), args.json.as_ref(), args.force)?;
    let screening = match (&args.add_source, &args.key) {
        (Some(source), Some(key)) => {
            pipeline::screen_with_source(&args.data.data, source, key, &options, &progress)?
        }
        _ => {
            let (summary, table) = pipeline::load_table(&args.data.data, &options, &progress)?;
            progress.note_timing("floor pass", floor_pass(&table));
            let dataset = pipeline::file_dataset(&summary, &table, options.encode.sample);
            pipeline::screen_table(&table, dataset, &options, &progress)
        }
    };
    emit(
        &screening.report,
        args.report.as_ref(),
        args.json.as_ref(),
        args.force,
    )?;
    Ok(gate_status(&screening))
}

/// Prints each gate failure to standard error and maps the gate to an exit status.
pub fn gate_status(screening: &Screening) -> Status {
    for failure in &screening.failures {
        eprintln!("telltale: threshold exceeded: {failure}");
    }
    if screening.passes() {
        Status::Clean
    } else {
        Status::ThresholdExceeded
    }
}

/// Seconds for one plain pass reading every encoded code once: the
/// memory-bandwidth floor the benchmark compares the single-feature scan with.
fn floor_pass(table: &telltale::data::EncodedTable) -> f64 {
    let start = std::time::Instant::now();
    let total: u64 = table
        .features
        .iter()
        .map(|f| f.codes.iter().map(|&c| u64::from(c)).sum::<u64>())
        .sum();
    std::hint::black_box(total);
    start.elapsed().as_secs_f64()
}

/// Refuses up front to overwrite outputs or to write into a missing folder,
/// so no time is spent scanning first and no report is printed for nothing.
pub fn check_outputs(report: Option<&PathBuf>, json: Option<&PathBuf>, force: bool) -> Result<()> {
    if let Some(path) = json.filter(|p| p.as_os_str() != "-") {
        let folder = path.parent().filter(|f| !f.as_os_str().is_empty());
        if let Some(folder) = folder.filter(|f| !f.is_dir()) {
            bail!(
                "{}: folder {} does not exist",
                path.display(),
                folder.display()
            );
        }
    }
    if force {
        return Ok(());
    }
    if let Some(dir) = report {
        let existing: Vec<String> = folder_renderers()
            .iter()
            .map(|r| dir.join(r.file_name()))
            .filter(|p| p.exists())
            .map(|p| p.display().to_string())
            .collect();
        if !existing.is_empty() {
            bail!(
                "{}: a report is already there ({}); choose another folder or pass --force to replace it",
                dir.display(),
                existing.join(", ")
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
