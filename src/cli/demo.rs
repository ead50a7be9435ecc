//! `telltale demo`: generate the fictional demo data, scan it, write the report.

use super::Status;
use super::data_args::command_line;
use super::progress::TerminalProgress;
use super::scan::{ScanSettingsArgs, emit};
use anyhow::{Context, Result, bail};
use clap::Args;
use polars::prelude::{CsvWriter, SerWriter};
use std::path::{Path, PathBuf};
use telltale::data::demo::{DemoSpec, demo_roles, encode_demo, generate, with_scores};
use telltale::data::prepare::EncodeOptions;
use telltale::pipeline::{self, ScreenOptions};
use telltale::report::DatasetInfo;

/// Default folder of the demo report; a free numbered sibling is used if it exists.
const DEFAULT_DIR: &str = "telltale-demo";
/// Smallest cell shown in the demo's reports (the scan's default).
const MIN_CELL: u64 = 10;

/// Columns of the demo data before `--extra-noise`: the protected attribute,
/// the outcome and eleven features.
const DEMO_COLUMNS: usize = 13;

/// Most values (rows × columns) `demo` generates: about 2 GB while generated
/// and scanned, beyond any benchmark here (1,000,000 × 25, 50,000 × 200).
const MAX_DEMO_CELLS: usize = 100_000_000;

#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Rows to generate.
    #[arg(long, default_value_t = 20_000)]
    pub rows: usize,
    /// Seed of the generator and of the scan.
    #[arg(long, default_value_t = 0)]
    pub seed: u64,
    /// Extra pure-noise numeric columns (for wide benchmarks).
    #[arg(long, default_value_t = 0)]
    pub extra_noise: usize,
    /// Report folder (default `telltale-demo/`, or the next free `telltale-demo-N/`).
    #[arg(long, value_name = "DIR")]
    pub report: Option<PathBuf>,
    /// Only write the generated data to this CSV file, for trying `telltale scan` on it.
    #[arg(long, value_name = "FILE")]
    pub write_data: Option<PathBuf>,
    /// Only write the data with a model score, decision and outcome to this CSV file, for trying `telltale outputs`.
    #[arg(long, value_name = "FILE", conflicts_with = "write_data")]
    pub write_scored: Option<PathBuf>,
    /// Replace existing files.
    #[arg(long)]
    pub force: bool,
    /// Cross-validation folds.
    #[arg(long, default_value_t = 5)]
    pub folds: usize,
    /// Quantile bins for numeric features.
    #[arg(long, default_value_t = 32)]
    pub bins: usize,
    /// No progress bars.
    #[arg(long, short = 'q')]
    pub quiet: bool,
    /// Print each stage's wall time to standard error (for benchmarks).
    #[arg(long)]
    pub timings: bool,
    #[command(flatten)]
    pub settings: ScanSettingsArgs,
}

pub fn run(args: &DemoArgs) -> Result<Status> {
    if args.rows < 100 {
        bail!("--rows must be at least 100, got {}", args.rows);
    }
    let columns = DEMO_COLUMNS.saturating_add(args.extra_noise);
    if args.rows.saturating_mul(columns) > MAX_DEMO_CELLS {
        bail!(
            "--rows {} with --extra-noise {} makes {} columns: more than {MAX_DEMO_CELLS} cells \
             of demo data; choose fewer rows or noise columns",
            args.rows,
            args.extra_noise,
            columns
        );
    }
    let options = ScreenOptions {
        roles: demo_roles(),
        encode: EncodeOptions {
            bins: args.bins,
            ..EncodeOptions::default()
        },
        scan: args.settings.options(args.folds, args.seed, MIN_CELL),
        command: command_line(),
        ..ScreenOptions::default()
    }
    .validated()?;
    let spec = DemoSpec {
        rows: args.rows,
        seed: args.seed,
        extra_noise: args.extra_noise,
    };
    let mut data = generate(spec);
    if let Some(path) = &args.write_data {
        write_csv(path, &mut data.frame, args.force)?;
        println!(
            "try: telltale scan {} --protected community",
            path.display()
        );
        return Ok(Status::Clean);
    }
    if let Some(path) = &args.write_scored {
        let mut scored = with_scores(data, args.seed);
        write_csv(path, &mut scored.frame, args.force)?;
        println!(
            "try: telltale outputs {} --score approval_score --decision approved \\\n  \
             --protected community --outcome repaid --segment product \\\n  \
             --features branch_area,months_at_address,loan_amount,has_guarantor,commute_km",
            path.display()
        );
        return Ok(Status::Clean);
    }
    let dir = match &args.report {
        Some(dir) => dir.clone(),
        None => free_folder(Path::new(DEFAULT_DIR)),
    };
    let progress = TerminalProgress::with_timings(args.quiet, args.timings);
    let table = encode_demo(&data, &options.encode)?;
    let dataset = DatasetInfo {
        source: format!("demo:seed={}:rows={}", args.seed, args.rows),
        rows: args.rows,
        rows_used: table.rows(),
        columns: data.frame.width(),
        sha256: None,
        rows_dropped_missing_protected: 0,
        sample: None,
    };
    let screening = pipeline::screen_table(&table, dataset, &options, &progress);
    emit(&screening.report, Some(&dir), None, args.force)?;
    Ok(Status::Clean)
}

/// `base`, or `base-2`, `base-3`... whichever does not exist yet.
fn free_folder(base: &Path) -> PathBuf {
    std::iter::once(base.to_path_buf())
        .chain((2..).map(|n| PathBuf::from(format!("{}-{n}", base.display()))))
        .find(|p| !p.exists())
        .unwrap_or_else(|| base.to_path_buf())
}

fn write_csv(path: &Path, frame: &mut polars::prelude::DataFrame, force: bool) -> Result<()> {
    if path.exists() && !force {
        bail!(
            "{}: file exists; pass --force to replace it",
            path.display()
        );
    }
    let mut file = std::fs::File::create(path)
        .with_context(|| format!("{}: cannot create", path.display()))?;
    CsvWriter::new(&mut file)
        .finish(frame)
        .with_context(|| format!("{}: cannot write CSV", path.display()))?;
    println!("wrote {} rows to {}", frame.height(), path.display());
    Ok(())
}
