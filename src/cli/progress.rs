//! Progress on stderr: a bar with the time left for counted work (replicates, targets, batch
//! pairs) when stderr is a terminal, one line per step otherwise (a log file, a scheduler's output,
//! a pipe). No colours are ever written, so `NO_COLOR` holds; `TERM=dumb` gets the lines.

use crate::analysis::Progress;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::IsTerminal;
use std::sync::Mutex;

/// Progress on stderr, unless `--quiet`.
pub struct Stderr {
    /// Suppress messages.
    quiet: bool,
    /// Draw bars (stderr is a terminal that can move the cursor).
    bars: bool,
    /// The bar being drawn, with what it counts.
    bar: Mutex<Option<(String, ProgressBar)>>,
}

impl Stderr {
    /// Progress on stderr; bars only where stderr is a terminal and `TERM` is not `dumb`.
    pub fn new(quiet: bool) -> Stderr {
        let dumb = std::env::var_os("TERM").is_some_and(|t| t == "dumb");
        Stderr::with_bars(quiet, std::io::stderr().is_terminal() && !dumb)
    }

    /// Progress on stderr, with bars or lines as told.
    pub fn with_bars(quiet: bool, bars: bool) -> Stderr {
        Stderr {
            quiet,
            bars,
            bar: Mutex::new(None),
        }
    }

    fn line(message: &str) {
        eprintln!("forebear: {}", crate::text::for_terminal(message));
    }

    /// The bar for `what` of `total`: the current one, or a new one (the former one cleared).
    fn bar_for(&self, what: &str, total: u64) -> ProgressBar {
        let mut slot = self.bar.lock().unwrap_or_else(|e| e.into_inner());
        if let Some((current, bar)) = slot.as_ref() {
            if current == what && bar.length() == Some(total) && !bar.is_finished() {
                return bar.clone();
            }
            bar.finish_and_clear();
        }
        let bar = ProgressBar::with_draw_target(Some(total), ProgressDrawTarget::stderr())
            .with_style(
                ProgressStyle::with_template(
                    "forebear: {prefix} [{bar:30}] {pos}/{len}, {eta} left",
                )
                .expect("a fixed template")
                .progress_chars("=> "),
            )
            .with_prefix(crate::text::for_terminal(what));
        *slot = Some((what.to_string(), bar.clone()));
        bar
    }
}

impl Progress for Stderr {
    fn say(&self, message: &str) {
        if self.quiet {
            return;
        }
        let slot = self.bar.lock().unwrap_or_else(|e| e.into_inner());
        match slot.as_ref() {
            // A line while a bar is drawn goes above it.
            Some((_, bar)) if !bar.is_finished() => bar.suspend(|| Stderr::line(message)),
            _ => Stderr::line(message),
        }
    }

    fn advance(&self, what: &str, done: u64, total: u64) {
        if self.quiet {
            return;
        }
        if !self.bars {
            if crate::analysis::is_progress_step(done, total) {
                Stderr::line(&format!("{what} done: {done}/{total}"));
            }
            return;
        }
        let bar = self.bar_for(what, total);
        bar.set_position(done);
        if done >= total {
            bar.finish_and_clear();
            Stderr::line(&format!("{what} done: {done}/{total}"));
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn without_a_terminal_counted_work_is_one_line_per_tenth() {
        let steps: Vec<u64> = (1..=25)
            .filter(|&d| crate::analysis::is_progress_step(d, 25))
            .collect();
        assert_eq!(steps, [2, 4, 6, 8, 10, 12, 14, 16, 18, 20, 22, 24, 25]);
        let steps: Vec<u64> = (1..=100)
            .filter(|&d| crate::analysis::is_progress_step(d, 100))
            .collect();
        assert_eq!(steps, [10, 20, 30, 40, 50, 60, 70, 80, 90, 100]);
        assert!(crate::analysis::is_progress_step(3, 3));
    }

    #[test]
    fn a_bar_is_replaced_when_other_work_is_counted() {
        let progress = Stderr::with_bars(false, true);
        let first = progress.bar_for("replicates", 10);
        assert!(first.length() == Some(10));
        let again = progress.bar_for("replicates", 10);
        again.set_position(4);
        assert_eq!(
            first.position(),
            4,
            "the same bar while the same work goes on"
        );
        let other = progress.bar_for("targets", 3);
        assert!(first.is_finished(), "the former bar is cleared");
        assert_eq!(other.length(), Some(3));
        other.finish_and_clear();
    }
}
