//! `telltale outputs DATA --score COL ...`: maps flags onto the library's
//! evaluation of a trained model's scores and decisions.

use super::Status;
use super::data_args::{DataArgs, command_line};
use super::output::{write_documents, write_one};
use super::scan::check_outputs;
use anyhow::{Context, Result, bail};
use clap::{ArgGroup, Args};
use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use telltale::data::prepare::EncodeOptions;
use telltale::outputs::input::{ScoredSpec, Selection};
use telltale::outputs::{AppliedPolicy, OutputsOptions, OutputsReport, OutputsThresholds};
use telltale::pipeline;
use telltale::report::html::HtmlRenderer;
use telltale::report::markdown::MarkdownRenderer;
use telltale::report::page::Backend;
use telltale::report::terminal::TerminalRenderer;
use telltale::review::policy::Policy;

#[derive(Debug, Args)]
#[command(group(ArgGroup::new("selection").required(true).args(["decision", "threshold", "selection_rate"])))]
pub struct OutputsArgs {
    #[command(flatten)]
    pub data: DataArgs,
    /// The model's score column (numeric).
    #[arg(long, value_name = "COL")]
    pub score: String,
    /// The model's decision column: 1 = selected, 0 = not.
    #[arg(long, value_name = "COL")]
    pub decision: Option<String>,
    /// Selected when the score is at least this (negative values allowed, e.g. log-odds scores).
    #[arg(long, value_name = "T", allow_negative_numbers = true)]
    pub threshold: Option<f64>,
    /// Select this share of rows with the highest scores (0 < R < 1).
    #[arg(long, value_name = "R")]
    pub selection_rate: Option<f64>,
    /// Also list thin segments among this column's levels.
    #[arg(long, value_name = "COL")]
    pub segment: Option<String>,
    /// Score bands of the calibration table.
    #[arg(long, default_value_t = 10)]
    pub bands: usize,
    /// Fail (exit 1) when the score's AUC lower bound for an attribute reaches this.
    #[arg(long, default_value_t = 0.70)]
    pub proxy_auc: f64,
    /// Fail (exit 1) when the adverse impact ratio is below this (4/5: the four-fifths rule) and the difference is significant at --impact-alpha.
    #[arg(long, default_value_t = 0.8)]
    pub impact_ratio: f64,
    /// Significance (Fisher's exact p) a ratio below --impact-ratio needs to fail; 1 gates on the ratio alone.
    #[arg(long, value_name = "ALPHA", default_value_t = 0.05)]
    pub impact_alpha: f64,
    /// Fail (exit 1) when a TPR or FPR gap's lower bound reaches this.
    #[arg(long, value_name = "GAP")]
    pub odds_gap: Option<f64>,
    /// Review policy (TOML): its `[outputs]` thresholds replace the four above.
    #[arg(long, value_name = "FILE")]
    pub policy: Option<PathBuf>,
    /// Write report.json, report.md and report.html into this folder.
    #[arg(long, value_name = "DIR")]
    pub report: Option<PathBuf>,
    /// Write the JSON report to this file (`-` for standard output).
    #[arg(long, value_name = "PATH")]
    pub json: Option<PathBuf>,
    /// Replace existing report files.
    #[arg(long)]
    pub force: bool,
}

impl OutputsArgs {
    fn selection(&self) -> Result<Selection> {
        Ok(
            match (&self.decision, self.threshold, self.selection_rate) {
                (Some(column), _, _) => Selection::Column(column.clone()),
                (_, Some(t), _) if t.is_finite() => Selection::Threshold(t),
                (_, _, Some(r)) if r > 0.0 && r < 1.0 => Selection::Rate(r),
                (_, Some(t), _) => bail!("--threshold must be a finite number, got {t}"),
                (_, _, Some(r)) => bail!("--selection-rate must be between 0 and 1, got {r}"),
                _ => bail!("give one of --decision, --threshold or --selection-rate"),
            },
        )
    }

    fn options(&self) -> Result<OutputsOptions> {
        if !(0.5..=1.0).contains(&self.proxy_auc) {
            bail!(
                "--proxy-auc must be between 0.5 and 1, got {}",
                self.proxy_auc
            );
        }
        if !(0.0..=1.0).contains(&self.impact_ratio) {
            bail!(
                "--impact-ratio must be between 0 and 1, got {}",
                self.impact_ratio
            );
        }
        if !(self.impact_alpha > 0.0 && self.impact_alpha <= 1.0) {
            bail!(
                "--impact-alpha must be above 0 and at most 1, got {}",
                self.impact_alpha
            );
        }
        if let Some(gap) = self.odds_gap.filter(|g| !(0.0..=1.0).contains(g)) {
            bail!("--odds-gap must be between 0 and 1, got {gap}");
        }
        if !(2..=100).contains(&self.bands) {
            bail!("--bands must be between 2 and 100, got {}", self.bands);
        }
        let flags = OutputsThresholds {
            proxy_auc_low: self.proxy_auc,
            impact_ratio: self.impact_ratio,
            impact_alpha: self.impact_alpha,
            odds_gap_low: self.odds_gap,
        };
        let policy = self.policy.as_deref().map(Policy::load).transpose()?;
        Ok(OutputsOptions {
            min_cell: self.data.min_cell,
            bands: self.bands,
            thresholds: policy
                .as_ref()
                .map_or(flags, |p| p.outputs.applied_to(flags)),
            policy: policy.map(|p| AppliedPolicy {
                file: p.file,
                sha256: p.sha256,
            }),
            ..OutputsOptions::default()
        })
    }

    fn spec(&self) -> Result<ScoredSpec> {
        if self.data.sample.is_some() {
            bail!("--sample does not apply to outputs: every row counts in a selection rate");
        }
        if !(2..=1024).contains(&self.data.bins) {
            bail!("--bins must be between 2 and 1024, got {}", self.data.bins);
        }
        let encode = self.data.encode_options();
        Ok(ScoredSpec {
            path: self.data.data.clone(),
            load: self.data.load_options()?,
            roles: self.data.roles()?,
            score: self.score.clone(),
            selection: self.selection()?,
            outcome: self.data.outcome.clone(),
            segment: self.segment.clone(),
            encode: EncodeOptions {
                min_class_rows: 1,
                ..encode
            },
        })
    }
}

pub fn run(args: &OutputsArgs) -> Result<Status> {
    let spec = args.spec()?;
    let options = args.options()?;
    check_outputs(args.report.as_ref(), args.json.as_ref(), args.force)?;
    let evaluation = pipeline::evaluate_outputs(&spec, &options, command_line())?;
    emit(
        &evaluation.report,
        args.report.as_deref(),
        args.json.as_deref(),
        args.force,
    )?;
    if evaluation.failures.is_empty() {
        return Ok(Status::Clean);
    }
    for failure in &evaluation.failures {
        eprintln!("telltale: threshold exceeded: {failure}");
    }
    Ok(Status::ThresholdExceeded)
}

/// Prints the summary (unless the JSON goes to standard output) and writes
/// the requested files; every format is rendered from the same page.
fn emit(
    report: &OutputsReport,
    dir: Option<&Path>,
    json: Option<&Path>,
    force: bool,
) -> Result<()> {
    let text = serde_json::to_string_pretty(report).context("cannot serialise the report")? + "\n";
    let json_to_stdout = json.is_some_and(|p| p.as_os_str() == "-");
    let page = report.page();
    if !json_to_stdout {
        let colour = std::io::stdout().is_terminal();
        print!("{}", TerminalRenderer { colour }.render_page(&page));
    }
    if let Some(dir) = dir {
        let documents = [
            ("report.json", text.clone()),
            (
                MarkdownRenderer::FILE_NAME,
                MarkdownRenderer.render_page(&page),
            ),
            (HtmlRenderer::FILE_NAME, HtmlRenderer.render_page(&page)),
        ];
        write_documents(dir, &documents, force)?;
        if !json_to_stdout {
            println!("report written to {}", dir.display());
        }
    }
    if let Some(path) = json {
        write_one(path, &text, force)?;
    }
    Ok(())
}
