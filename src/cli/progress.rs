//! Progress of a long command on standard error: a bar while standard error
//! is a terminal and `--quiet` was not given, nothing otherwise (scripts,
//! cron and pipes see only the results and the diagnostics).
//!
//! Every long library computation takes a `&dyn passlane_plan::Progress`
//! (`report(fraction)`, `cancelled()`); [`Bar`] implements it (the command
//! line never cancels: Ctrl-C ends the process).

use std::io::IsTerminal;
use std::time::Duration;

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

/// Steps of the bar: fine enough for a smooth bar, coarse enough that a
/// report which changes nothing visible costs only a comparison.
const STEPS: u64 = 1000;

/// One stage of a long command (e.g. "contact windows", then "plan").
pub struct Bar {
    bar: Option<ProgressBar>,
}

impl Bar {
    /// A bar labelled `label`, shown only when `quiet` is false and standard
    /// error is a terminal.
    pub fn new(label: &str, quiet: bool) -> Bar {
        if quiet || !std::io::stderr().is_terminal() {
            return Bar::hidden();
        }
        let bar = ProgressBar::with_draw_target(Some(STEPS), ProgressDrawTarget::stderr());
        // The template is a constant, so it always parses; the fallback keeps
        // the default style rather than failing a command over its bar.
        if let Ok(style) =
            ProgressStyle::with_template("{msg:<16} [{bar:32}] {percent:>3}%  {elapsed}")
        {
            bar.set_style(style.progress_chars("=> "));
        }
        bar.set_message(label.to_string());
        // Redraw on a timer too, so the elapsed time moves while a slow first
        // step reports nothing.
        bar.enable_steady_tick(Duration::from_millis(200));
        Bar { bar: Some(bar) }
    }

    /// A bar that never draws.
    pub fn hidden() -> Bar {
        Bar { bar: None }
    }

    /// Records the fraction done (0–1).
    pub fn set_fraction(&self, fraction: f64) {
        if let Some(bar) = &self.bar {
            let steps = (fraction.clamp(0.0, 1.0) * STEPS as f64).round() as u64;
            if steps != bar.position() {
                bar.set_position(steps);
            }
        }
    }

    /// Removes the bar from the terminal, so that the results printed next
    /// (often to the same terminal) start on a clean line.
    pub fn finish(&self) {
        if let Some(bar) = &self.bar {
            bar.finish_and_clear();
        }
    }
}

impl passlane_plan::Progress for Bar {
    fn report(&self, fraction: f64) {
        self.set_fraction(fraction);
    }
}

impl Drop for Bar {
    fn drop(&mut self) {
        // A command that fails half-way leaves no half-drawn bar before its
        // error message.
        self.finish();
    }
}
