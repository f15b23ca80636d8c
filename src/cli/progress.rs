//! The one progress bar: a live line on standard error while a long command runs.
//!
//! Shown only when standard error is a terminal (pipes and logs stay clean) and only once the
//! run has taken a second, so short runs print nothing. Libraries report progress through
//! callbacks; only `cli` draws.

use std::io::IsTerminal;
use std::time::{Duration, Instant};

/// A progress bar over `total` units of work (shots).
pub struct Progress {
    total: u64,
    unit: &'static str,
    done: u64,
    message: String,
    start: Instant,
    bar: Option<indicatif::ProgressBar>,
    enabled: bool,
}

impl Progress {
    /// A bar for `total` units named `unit` (e.g. `shots`).
    pub fn new(total: u64, unit: &'static str) -> Progress {
        Progress {
            total,
            unit,
            done: 0,
            message: String::new(),
            start: Instant::now(),
            bar: None,
            enabled: std::io::stderr().is_terminal(),
        }
    }

    /// Changes the total, for work whose size becomes known as it runs.
    pub fn set_total(&mut self, total: u64) {
        self.total = total;
        if let Some(bar) = &self.bar {
            bar.set_length(total);
        }
    }

    /// Adds `n` finished units.
    pub fn advance(&mut self, n: u64) {
        self.set_position(self.done + n);
    }

    /// Sets the number of finished units.
    pub fn set_position(&mut self, done: u64) {
        self.done = done;
        if !self.enabled {
            return;
        }
        if self.bar.is_none() && self.start.elapsed() > Duration::from_secs(1) {
            let bar = indicatif::ProgressBar::new(self.total);
            if let Ok(style) = indicatif::ProgressStyle::with_template(&format!(
                "{{elapsed_precise}} [{{bar:40}}] {{pos}}/{{len}} {} ({{per_sec}}, eta {{eta}}) {{msg}}",
                self.unit
            )) {
                bar.set_style(style.progress_chars("=> "));
            }
            bar.set_message(self.message.clone());
            self.bar = Some(bar);
        }
        if let Some(bar) = &self.bar {
            bar.set_position(self.done);
        }
    }

    /// Sets the text after the counts (e.g. failures so far).
    pub fn set_message(&mut self, message: String) {
        if let Some(bar) = &self.bar {
            bar.set_message(message.clone());
        }
        self.message = message;
    }

    /// Removes the bar.
    pub fn finish(&mut self) {
        if let Some(bar) = self.bar.take() {
            bar.finish_and_clear();
        }
    }
}
