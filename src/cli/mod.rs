//! Command-line interface: parses flags and delegates to the library.
//! Exit status: 0 clean, 1 a threshold or policy was exceeded, 2 usage or input error.

mod data_args;
mod demo;
mod diff;
mod explain;
mod output;
mod outputs;
mod progress;
mod scan;

use clap::{Parser, Subcommand};
use std::process::ExitCode;

#[derive(Debug, Parser)]
#[command(
    name = "telltale",
    version,
    about = "Screens a dataset for features that stand in for a protected attribute",
    long_about = "Trains cross-validated surrogate models that try to rebuild each protected \
attribute from every feature, every pair and the whole feature set, and reports the leakage \
(mutual information, AUC with intervals that include the fitting variance, balanced error rate). A statistical screen, \
not a legal determination."
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Scan a CSV or Parquet file for proxies of the protected attribute(s).
    Scan(scan::ScanArgs),
    /// Everything about one feature: level table, surrogates, partners, a paragraph for the review.
    Explain(explain::ExplainArgs),
    /// Compare two reports: new proxies, flag changes, significant AUC changes.
    Diff(diff::DiffArgs),
    /// After training: does the model's score stand in for the protected attribute, and do
    /// selection and error rates differ by group?
    Outputs(outputs::OutputsArgs),
    /// Generate the fictional demo dataset, scan it and write the report.
    Demo(demo::DemoArgs),
}

/// Runs the command line and maps the outcome to an exit status.
#[must_use]
pub fn run() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(error) => {
            let _ = error.print();
            return ExitCode::from(if error.use_stderr() { 2 } else { 0 });
        }
    };
    let outcome = match cli.command {
        Command::Scan(args) => scan::run(&args),
        Command::Explain(args) => explain::run(&args),
        Command::Diff(args) => diff::run(&args),
        Command::Outputs(args) => outputs::run(&args),
        Command::Demo(args) => demo::run(&args),
    };
    match outcome {
        Ok(status) => status.into(),
        Err(error) => {
            eprintln!("telltale: error: {}", one_line(&error));
            ExitCode::from(2)
        }
    }
}

/// The error and its causes on one line.
fn one_line(error: &anyhow::Error) -> String {
    error
        .chain()
        .map(ToString::to_string)
        .collect::<Vec<_>>()
        .join(": ")
}

/// What a command found, as an exit status.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Status {
    Clean,
    ThresholdExceeded,
}

impl From<Status> for ExitCode {
    fn from(status: Status) -> Self {
        match status {
            Status::Clean => ExitCode::SUCCESS,
            Status::ThresholdExceeded => ExitCode::from(1),
        }
    }
}
