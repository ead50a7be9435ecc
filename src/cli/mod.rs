//! Command-line interface: parses flags and delegates to the library.

mod progress;

use std::process::ExitCode;

/// Entry point of the binary.
#[must_use]
pub fn run() -> ExitCode {
    let _ = progress::TerminalProgress::new(true);
    ExitCode::SUCCESS
}
