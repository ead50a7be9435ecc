//! Progress bars on a terminal; silence when piped or with `--quiet`.
//! With `--timings`, each stage's wall time is printed to standard error
//! (used by the benchmark script).

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::IsTerminal;
use std::sync::Mutex;
use std::time::Instant;
use telltale::pipeline::Progress;

/// Draws one bar per stage on standard error when it is a terminal.
pub struct TerminalProgress {
    state: Mutex<State>,
    bars: bool,
    timings: bool,
}

#[derive(Default)]
struct State {
    bar: Option<ProgressBar>,
    stage: Option<(String, Instant)>,
}

impl TerminalProgress {
    /// Bars only when standard error is a terminal and `quiet` is false;
    /// each stage's duration is printed when `timings` is true.
    #[must_use]
    pub fn with_timings(quiet: bool, timings: bool) -> Self {
        Self {
            state: Mutex::new(State::default()),
            bars: !quiet && std::io::stderr().is_terminal(),
            timings,
        }
    }

    /// Prints a measurement line when timings are on.
    pub fn note_timing(&self, what: &str, seconds: f64) {
        if self.timings {
            eprintln!("timing\t{what}\t{seconds:.6}");
        }
    }

    fn close_stage(&self, state: &mut State) {
        if let Some(bar) = state.bar.take() {
            bar.finish_and_clear();
        }
        if let Some((name, start)) = state.stage.take() {
            self.note_timing(&name, start.elapsed().as_secs_f64());
        }
    }
}

fn bar_style() -> ProgressStyle {
    ProgressStyle::with_template("{msg:>28} [{bar:32}] {pos}/{len} {elapsed}")
        .unwrap_or_else(|_| ProgressStyle::default_bar())
        .progress_chars("=> ")
}

impl Progress for TerminalProgress {
    fn stage(&self, name: &str, total: u64) {
        let Ok(mut state) = self.state.lock() else {
            return;
        };
        self.close_stage(&mut state);
        state.stage = Some((name.to_string(), Instant::now()));
        if self.bars {
            let bar = ProgressBar::with_draw_target(Some(total), ProgressDrawTarget::stderr());
            bar.set_style(bar_style());
            bar.set_message(name.to_string());
            state.bar = Some(bar);
        }
    }

    fn advance(&self, steps: u64) {
        if !self.bars {
            return;
        }
        if let Ok(state) = self.state.lock()
            && let Some(bar) = &state.bar
        {
            bar.inc(steps);
        }
    }

    fn finish(&self) {
        if let Ok(mut state) = self.state.lock() {
            self.close_stage(&mut state);
        }
    }
}
