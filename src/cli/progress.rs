//! Progress bars on a terminal; silence when piped or with `--quiet`.

use crate::scan::Progress;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::IsTerminal;
use std::sync::Mutex;

/// Draws one bar per stage on standard error when it is a terminal.
pub struct TerminalProgress {
    bar: Mutex<Option<ProgressBar>>,
    enabled: bool,
}

impl TerminalProgress {
    /// Enabled only when standard error is a terminal and `quiet` is false.
    #[must_use]
    pub fn new(quiet: bool) -> Self {
        Self {
            bar: Mutex::new(None),
            enabled: !quiet && std::io::stderr().is_terminal(),
        }
    }

    fn with_bar(&self, f: impl FnOnce(&mut Option<ProgressBar>)) {
        if let Ok(mut bar) = self.bar.lock() {
            f(&mut bar);
        }
    }
}

impl Progress for TerminalProgress {
    fn stage(&self, name: &str, total: u64) {
        if !self.enabled {
            return;
        }
        self.with_bar(|slot| {
            if let Some(old) = slot.take() {
                old.finish_and_clear();
            }
            let bar = ProgressBar::with_draw_target(Some(total), ProgressDrawTarget::stderr());
            let style = ProgressStyle::with_template("{msg:>24} [{bar:32}] {pos}/{len} {elapsed}")
                .unwrap_or_else(|_| ProgressStyle::default_bar())
                .progress_chars("=> ");
            bar.set_style(style);
            bar.set_message(name.to_string());
            *slot = Some(bar);
        });
    }

    fn advance(&self, steps: u64) {
        if !self.enabled {
            return;
        }
        self.with_bar(|slot| {
            if let Some(bar) = slot {
                bar.inc(steps);
            }
        });
    }

    fn finish(&self) {
        self.with_bar(|slot| {
            if let Some(bar) = slot.take() {
                bar.finish_and_clear();
            }
        });
    }
}
