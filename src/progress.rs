//! Progress a person can read, on stderr: a bar with its rate and the time
//! left for each long step (reading, detection, each chain's build and
//! search, the statistics) when stderr is a terminal, plain lines when it is
//! not (a CI log), nothing with `--quiet`.
//!
//! Place in the data flow: at the bottom beside `error` and `ids`; `bench`
//! reports through it and the CLI chooses the [`Progress`] mode. A
//! [`Progress`] is `Sync`, so chains built on several threads report through
//! one value; lines and bars never interleave (bars are drawn by one
//! `indicatif::MultiProgress`, lines are printed above them).
//!
//! Nothing here reaches an output file: progress cannot change a report.

use std::io::IsTerminal;
use std::time::{Duration, Instant};

use indicatif::{MultiProgress, ProgressBar, ProgressDrawTarget, ProgressState, ProgressStyle};

/// Prefix of every progress line.
const PREFIX: &str = "postassay: ";

/// How progress is shown.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Mode {
    /// Nothing at all (`--quiet`).
    Quiet,
    /// One line per finished step (stderr is not a terminal).
    Lines,
    /// Live bars, and the same lines above them (stderr is a terminal).
    Bars,
}

/// Where progress goes; see the module docs.
#[derive(Debug)]
pub struct Progress {
    mode: Mode,
    bars: Option<MultiProgress>,
}

impl Progress {
    /// Bars when stderr is a terminal, plain lines otherwise; nothing when
    /// `quiet`.
    pub fn for_stderr(quiet: bool) -> Progress {
        Progress::new(if quiet {
            Mode::Quiet
        } else if std::io::stderr().is_terminal() {
            Mode::Bars
        } else {
            Mode::Lines
        })
    }

    /// Progress in the given mode.
    pub fn new(mode: Mode) -> Progress {
        let bars = (mode == Mode::Bars)
            .then(|| MultiProgress::with_draw_target(ProgressDrawTarget::stderr_with_hz(8)));
        Progress { mode, bars }
    }

    /// Progress that shows nothing (library callers and tests).
    pub fn quiet() -> Progress {
        Progress::new(Mode::Quiet)
    }

    /// The mode.
    pub fn mode(&self) -> Mode {
        self.mode
    }

    /// Print one line (`postassay: ` and `message`) on stderr, above any
    /// live bars.
    pub fn line(&self, message: &str) {
        match (&self.bars, self.mode) {
            (_, Mode::Quiet) => {}
            (Some(bars), _) => {
                // println fails only when the terminal is gone; the line is
                // then lost like any other write to a closed stderr.
                if bars.println(format!("{PREFIX}{message}")).is_err() {
                    eprintln!("{PREFIX}{message}");
                }
            }
            (None, _) => eprintln!("{PREFIX}{message}"),
        }
    }

    /// A step of `total` units (`unit`: "posts", "queries", "tests", …;
    /// "bytes" shows binary sizes). The
    /// bar shows `label`, the count, the rate and the time left; it
    /// disappears when the step is [finished](Step::finish).
    pub fn step(&self, label: &str, total: u64, unit: &str) -> Step {
        let bar = self.bars.as_ref().map(|bars| {
            let bar = bars.add(ProgressBar::new(total));
            let template = if unit == "bytes" {
                "{prefix:.bold} [{bar:30}] {binary_bytes}/{binary_total_bytes} \
                 {binary_bytes_per_sec} ({eta} left)"
                    .to_string()
            } else {
                format!(
                    "{{prefix:.bold}} [{{bar:30}}] {{human_pos}}/{{human_len}} {unit} \
                     {{rate}} ({{eta}} left)"
                )
            };
            // The template is fixed text: it always parses.
            if let Ok(style) = ProgressStyle::with_template(&template) {
                let style = style.progress_chars("=> ").with_key(
                    "rate",
                    |state: &ProgressState, w: &mut dyn std::fmt::Write| {
                        let _ = write!(w, "{:.0}/s", state.per_sec());
                    },
                );
                bar.set_style(style);
            }
            bar.set_prefix(label.to_string());
            bar.enable_steady_tick(Duration::from_millis(250));
            bar
        });
        Step { bar, started: Instant::now() }
    }
}

/// One step in progress, from [`Progress::step`]. `Sync`: threads sharing a
/// step each [`advance`](Step::advance) it.
#[derive(Debug)]
pub struct Step {
    bar: Option<ProgressBar>,
    started: Instant,
}

impl Step {
    /// `n` more units done.
    pub fn advance(&self, n: u64) {
        if let Some(bar) = &self.bar {
            bar.inc(n);
        }
    }

    /// Seconds since the step began.
    pub fn seconds(&self) -> f64 {
        self.started.elapsed().as_secs_f64()
    }

    /// Remove the bar and print `message` as a [line](Progress::line).
    pub fn finish(self, progress: &Progress, message: &str) {
        if let Some(bar) = &self.bar {
            bar.finish_and_clear();
        }
        progress.line(message);
    }
}

impl Drop for Step {
    fn drop(&mut self) {
        // A step abandoned by an error leaves no bar on the screen.
        if let Some(bar) = &self.bar {
            if !bar.is_finished() {
                bar.finish_and_clear();
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quiet_and_line_modes_draw_no_bar() {
        for mode in [Mode::Quiet, Mode::Lines] {
            let progress = Progress::new(mode);
            assert!(progress.step("chain x", 10, "posts").bar.is_none(), "{mode:?}");
        }
    }

    #[test]
    fn bars_mode_keeps_a_bar_per_step_until_finished() {
        let progress = Progress::new(Mode::Bars);
        let step = progress.step("reading", 10, "posts");
        // Threads sharing a step each advance it.
        std::thread::scope(|s| {
            for _ in 0..2 {
                s.spawn(|| (0..5).for_each(|_| step.advance(1)));
            }
        });
        let bar = step.bar.clone().expect("a bar in Bars mode");
        assert_eq!(bar.position(), 10);
        step.finish(&progress, "read");
        assert!(bar.is_finished());
    }
}
