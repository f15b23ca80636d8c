//! The one progress bar: a live line on standard error while a long command runs.
//!
//! Shown only when standard error is a terminal (pipes, files and logs stay clean: nothing at
//! all is written there). Two kinds: a bar over units of work ([`Progress::new`], shots: rate
//! per second, ETA and a message such as the failures so far) and a list of steps
//! ([`Progress::steps`], for work that has no natural count, e.g. the distance searches: which
//! step runs and for how long). The line redraws itself every quarter second, so a step that
//! blocks in a library call still shows its elapsed time, and is removed when the command ends
//! (also on an error: dropping the bar clears it). Libraries report progress through callbacks;
//! only `cli` draws.

use std::io::IsTerminal;
use std::time::{Duration, Instant};

/// A progress line on standard error (nothing when standard error is not a terminal).
pub struct Progress {
    bar: Option<indicatif::ProgressBar>,
    start: Instant,
}

/// A rate with three significant figures and a k/M suffix: `950`, `12.3k`, `1.20M`.
fn rate_text(r: f64) -> String {
    let (v, suffix) = if r >= 1e6 {
        (r / 1e6, "M")
    } else if r >= 1e3 {
        (r / 1e3, "k")
    } else {
        (r, "")
    };
    let decimals = if v >= 100.0 {
        0
    } else if v >= 10.0 {
        1
    } else {
        2
    };
    format!("{v:.decimals$}{suffix}")
}

impl Progress {
    /// A bar for `total` units named `unit` (e.g. `shots`), with units per second and ETA.
    pub fn new(total: u64, unit: &'static str) -> Progress {
        Progress::drawn(
            total,
            &format!(
                "{{elapsed_precise}} [{{bar:16}}] {{human_pos}}/{{human_len}} {unit}, \
                 {{prefix}}/s, eta {{eta}} {{wide_msg}}"
            ),
        )
    }

    /// A line over `total` named steps: `[k/total] step name (elapsed)`.
    pub fn steps(total: u64) -> Progress {
        Progress::drawn(
            total,
            "{spinner} {elapsed_precise} [{pos}/{len}] {wide_msg}",
        )
    }

    fn drawn(total: u64, template: &str) -> Progress {
        if !std::io::stderr().is_terminal() {
            return Progress {
                bar: None,
                start: Instant::now(),
            };
        }
        let bar = indicatif::ProgressBar::new(total);
        if let Ok(style) = indicatif::ProgressStyle::with_template(template) {
            bar.set_style(style.progress_chars("=> "));
        }
        bar.set_prefix("0");
        bar.enable_steady_tick(Duration::from_millis(250));
        Progress {
            bar: Some(bar),
            start: Instant::now(),
        }
    }

    /// Shows the mean rate since the start, in three significant figures (`12.3k`).
    fn show_rate(&self, bar: &indicatif::ProgressBar) {
        let secs = self.start.elapsed().as_secs_f64();
        if secs > 0.0 {
            bar.set_prefix(rate_text(bar.position() as f64 / secs));
        }
    }

    /// Changes the total, for work whose size becomes known as it runs.
    pub fn set_total(&mut self, total: u64) {
        if let Some(bar) = &self.bar {
            bar.set_length(total);
        }
    }

    /// Adds `n` finished units.
    pub fn advance(&mut self, n: u64) {
        if let Some(bar) = &self.bar {
            bar.inc(n);
            self.show_rate(bar);
        }
    }

    /// Sets the number of finished units.
    pub fn set_position(&mut self, done: u64) {
        if let Some(bar) = &self.bar {
            bar.set_position(done);
            self.show_rate(bar);
        }
    }

    /// Sets the text after the counts (e.g. failures so far).
    pub fn set_message(&mut self, message: String) {
        if let Some(bar) = &self.bar {
            bar.set_message(message);
        }
    }

    /// Starts step `k` (counting from 1) of a [`Progress::steps`] line, named `name`.
    pub fn step(&mut self, k: u64, name: &str) {
        if let Some(bar) = &self.bar {
            bar.set_position(k);
            bar.set_message(name.to_string());
        }
    }

    /// Runs `f` (which prints lines of its own on stderr) with the bar hidden, so the lines do
    /// not tear it.
    pub fn suspend<R>(&mut self, f: impl FnOnce() -> R) -> R {
        match &self.bar {
            Some(bar) => bar.suspend(f),
            None => f(),
        }
    }

    /// Removes the line.
    pub fn finish(&mut self) {
        if let Some(bar) = self.bar.take() {
            bar.finish_and_clear();
        }
    }
}

impl Drop for Progress {
    fn drop(&mut self) {
        self.finish();
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rates_read_in_three_figures() {
        assert_eq!(rate_text(950.4), "950");
        assert_eq!(rate_text(12_345.0), "12.3k");
        assert_eq!(rate_text(1_204_000.0), "1.20M");
        assert_eq!(rate_text(3.0), "3.00");
    }
}
