//! Long work: a progress bar on a terminal, and a stop request (Ctrl-C) honoured between steps.
//!
//! The Monte Carlo and the sensitivity grid can run for seconds. Their loops call
//! [`Progress::step`], which shows an indicatif bar once the work has lasted about a second and
//! only when standard error is a terminal (so logs and pipes stay clean), and which turns a stop
//! request into [`Error::Interrupted`]. The binary's Ctrl-C handler calls [`request_stop`]; the
//! error then unwinds through the ordinary error path, so nothing is written (the outputs are
//! only moved into place after every step has finished, see `staging`).

use std::io::IsTerminal;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::OnceLock;
use std::time::{Duration, Instant};

use indicatif::{MultiProgress, ProgressBar, ProgressDrawTarget, ProgressStyle};

use crate::error::{Error, Result};

/// Set once a stop has been requested; never cleared (one process runs one command).
static STOP: AtomicBool = AtomicBool::new(false);
/// Set by a command run with `--quiet`: no bar is shown, terminal or not.
static QUIET: AtomicBool = AtomicBool::new(false);

/// No bar from now on (`hurdle universe --quiet`: standard error carries errors only).
pub fn set_quiet() {
    QUIET.store(true, Ordering::SeqCst);
}

/// Every shown bar, one line each: the analyses run side by side (the grid, the two Monte Carlo
/// intervals), and bars drawn on their own would overwrite each other's line.
fn shown_bars() -> &'static MultiProgress {
    static BARS: OnceLock<MultiProgress> = OnceLock::new();
    BARS.get_or_init(|| MultiProgress::with_draw_target(ProgressDrawTarget::stderr()))
}

/// How long work runs before a bar appears: shorter work would only flicker.
const SHOW_AFTER: Duration = Duration::from_secs(1);

/// Asks the work in progress to stop. Returns whether a stop had already been requested, so a
/// second Ctrl-C can be told apart from the first.
pub fn request_stop() -> bool {
    STOP.swap(true, Ordering::SeqCst)
}

/// Whether a stop has been requested.
pub fn stop_requested() -> bool {
    STOP.load(Ordering::SeqCst)
}

/// `Err(Interrupted)` once a stop has been requested.
pub fn check_stop() -> Result<()> {
    if stop_requested() {
        Err(Error::Interrupted)
    } else {
        Ok(())
    }
}

/// A counter of steps with a bar that appears on a terminal once the work lasts a second.
pub struct Progress {
    bar: ProgressBar,
    started: Instant,
    shown: bool,
    terminal: bool,
}

impl Progress {
    /// Work of `total` steps, described by `label` (e.g. "Monte Carlo draws").
    pub fn new(label: &str, total: u64) -> Progress {
        Progress::styled(label, total, "{msg} {wide_bar} {pos}/{len} ({eta})")
    }

    /// Reading `total` bytes (a panel of a whole market, which takes seconds): the bytes read,
    /// the rate and the time left.
    pub fn of_bytes(label: &str, total: u64) -> Progress {
        let template = "{msg} {wide_bar} {bytes}/{total_bytes}  {bytes_per_sec}  about {eta} left";
        Progress::styled(label, total, template)
    }

    /// Reading `total` rows (a Parquet panel): the rows read, the rate and the time left.
    pub fn of_rows(label: &str, total: u64) -> Progress {
        let template = "{msg} {wide_bar} {pos}/{len} rows  {per_sec}  about {eta} left";
        Progress::styled(label, total, template)
    }

    fn styled(label: &str, total: u64, template: &str) -> Progress {
        let bar = ProgressBar::with_draw_target(Some(total), ProgressDrawTarget::hidden());
        if let Ok(style) = ProgressStyle::with_template(template) {
            bar.set_style(style);
        }
        bar.set_message(label.to_string());
        Progress {
            bar,
            started: Instant::now(),
            shown: false,
            terminal: std::io::stderr().is_terminal() && !QUIET.load(Ordering::SeqCst),
        }
    }

    /// Describes the work anew (e.g. with a count the bar's own total does not hold).
    pub fn relabel(&self, label: String) {
        self.bar.set_message(label);
    }

    /// Counts one step; `Err(Interrupted)` when a stop has been requested.
    pub fn step(&mut self) -> Result<()> {
        self.advance(1)
    }

    /// Counts `n` steps (bytes, rows); `Err(Interrupted)` when a stop has been requested.
    pub fn advance(&mut self, n: u64) -> Result<()> {
        check_stop()?;
        self.bar.inc(n);
        // Reading the clock on every step costs nanoseconds against microseconds of work.
        if self.terminal && !self.shown && self.started.elapsed() >= SHOW_AFTER {
            self.bar = shown_bars().add(self.bar.clone());
            self.shown = true;
        }
        Ok(())
    }
}

impl Drop for Progress {
    /// Clears the bar whether the work finished or failed, so no half-drawn line remains.
    fn drop(&mut self) {
        self.bar.finish_and_clear();
        if self.shown {
            shown_bars().remove(&self.bar);
        }
    }
}
