//! `telltale explain DATA --protected A --feature F`: the evidence on one feature.

use super::Status;
use super::data_args::DataArgs;
use super::output::write_one;
use super::progress::TerminalProgress;
use super::scan::ScanSettingsArgs;
use anyhow::{Context, Result};
use clap::Args;
use std::io::IsTerminal;
use std::path::PathBuf;
use telltale::pipeline;
use telltale::report::page::Backend;
use telltale::report::terminal::TerminalRenderer;

#[derive(Debug, Args)]
pub struct ExplainArgs {
    #[command(flatten)]
    pub data: DataArgs,
    /// The feature to explain.
    #[arg(long, value_name = "COL")]
    pub feature: String,
    #[command(flatten)]
    pub settings: ScanSettingsArgs,
    /// Also write the explanation as JSON to this file (`-` for standard output only).
    #[arg(long, value_name = "PATH")]
    pub json: Option<PathBuf>,
    /// Replace an existing JSON file.
    #[arg(long)]
    pub force: bool,
}

pub fn run(args: &ExplainArgs) -> Result<Status> {
    let progress = TerminalProgress::with_timings(args.data.quiet, args.data.timings);
    let options = args.data.screen_options(&args.settings, None)?;
    let explanations = pipeline::explain_file(&args.data.data, &args.feature, &options, &progress)?;
    let to_stdout = args.json.as_ref().is_some_and(|p| p.as_os_str() == "-");
    if !to_stdout {
        let terminal = TerminalRenderer {
            colour: std::io::stdout().is_terminal(),
        };
        for explanation in &explanations {
            print!("{}", terminal.render_page(&explanation.page()));
        }
    }
    if let Some(path) = &args.json {
        let text = serde_json::to_string_pretty(&explanations)
            .context("cannot serialise the explanation")?;
        write_one(path, &format!("{text}\n"), args.force)?;
    }
    Ok(Status::Clean)
}
