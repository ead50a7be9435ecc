//! `telltale diff OLD.json NEW.json`: what changed since the last review.

use super::Status;
use super::output::write_one;
use anyhow::{Result, bail};
use clap::Args;
use std::io::IsTerminal;
use std::path::PathBuf;
use telltale::review::diff::{
    DEFAULT_MIN_EFFECT, compare, load_report, render_diff_markdown, render_diff_text,
};

#[derive(Debug, Args)]
pub struct DiffArgs {
    /// The earlier report.json.
    pub old: PathBuf,
    /// The later report.json.
    pub new: PathBuf,
    /// Significance level of the AUC change tests.
    #[arg(long, default_value_t = 0.05)]
    pub alpha: f64,
    /// Smallest AUC change called significant, however small its p-value.
    #[arg(long, default_value_t = DEFAULT_MIN_EFFECT, value_name = "AUC")]
    pub min_effect: f64,
    /// Also write the comparison as Markdown to this file (`-` for standard output instead of text).
    #[arg(long, value_name = "PATH")]
    pub markdown: Option<PathBuf>,
    /// Write the comparison as JSON to this file (`-` for standard output instead of text).
    #[arg(long, value_name = "PATH")]
    pub json: Option<PathBuf>,
    /// Replace existing output files.
    #[arg(long)]
    pub force: bool,
}

pub fn run(args: &DiffArgs) -> Result<Status> {
    if !(args.alpha > 0.0 && args.alpha < 1.0) {
        bail!("--alpha must be between 0 and 1, got {}", args.alpha);
    }
    let old = load_report(&args.old)?;
    let new = load_report(&args.new)?;
    if !(0.0..1.0).contains(&args.min_effect) {
        bail!(
            "--min-effect must be between 0 and 1, got {}",
            args.min_effect
        );
    }
    let diff = compare(&old, &new, args.alpha, args.min_effect);
    let is_stdout = |p: &Option<PathBuf>| p.as_ref().is_some_and(|p| p.as_os_str() == "-");
    if !is_stdout(&args.markdown) && !is_stdout(&args.json) {
        print!(
            "{}",
            render_diff_text(&diff, std::io::stdout().is_terminal())
        );
    }
    if let Some(path) = &args.markdown {
        write_one(path, &render_diff_markdown(&diff), args.force)?;
    }
    if let Some(path) = &args.json {
        let text = serde_json::to_string_pretty(&diff)?;
        write_one(path, &format!("{text}\n"), args.force)?;
    }
    Ok(if diff.gate_failed() {
        Status::ThresholdExceeded
    } else {
        Status::Clean
    })
}
