//! Progress of a batch on stderr: an indicatif bar on a terminal, a plain line every few
//! seconds otherwise (logs of cluster jobs), nothing but failed trials with `-q`. The binary
//! chooses the [`ProgressMode`]; failed trials are reported in every mode, one line each.

use std::sync::Mutex;
use std::time::{Duration, Instant};

/// How progress is shown.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ProgressMode {
    /// A progress bar (stderr is a terminal).
    Bar,
    /// A plain line at most every [`LINE_INTERVAL`] and at the end.
    Lines,
    /// Failed trials only.
    Quiet,
}

/// Least time between two plain progress lines.
pub const LINE_INTERVAL: Duration = Duration::from_secs(5);

/// How one trial of a batch ended.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum TrialOutcome {
    /// Run now, outputs written.
    Ran,
    /// Outputs of an earlier run reused (`--resume`).
    Skipped,
    /// Failed; its row carries the error.
    Failed,
}

#[derive(Debug)]
struct Counts {
    done: usize,
    failed: usize,
    skipped: usize,
    last_line: Instant,
}

/// Thread-safe progress of one batch.
#[derive(Debug)]
pub struct Progress {
    mode: ProgressMode,
    total: usize,
    start: Instant,
    bar: Option<indicatif::ProgressBar>,
    counts: Mutex<Counts>,
}

impl Progress {
    /// Progress over `total` trials.
    pub fn new(total: usize, mode: ProgressMode) -> Progress {
        let bar = (mode == ProgressMode::Bar).then(|| {
            let bar = indicatif::ProgressBar::with_draw_target(
                Some(total as u64),
                indicatif::ProgressDrawTarget::stderr(),
            );
            let style = indicatif::ProgressStyle::with_template(
                "{spinner} [{elapsed_precise}] {wide_bar} {pos}/{len} trials, {msg} (eta {eta})",
            )
            .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar());
            bar.set_style(style);
            bar.enable_steady_tick(Duration::from_millis(200));
            bar
        });
        let start = Instant::now();
        Progress {
            mode,
            total,
            start,
            bar,
            counts: Mutex::new(Counts {
                done: 0,
                failed: 0,
                skipped: 0,
                last_line: start,
            }),
        }
    }

    /// Prints a line (above the bar on a terminal); nothing with [`ProgressMode::Quiet`].
    pub fn info(&self, line: &str) {
        if self.mode != ProgressMode::Quiet {
            self.print(line);
        }
    }

    fn print(&self, line: &str) {
        match &self.bar {
            Some(bar) => bar.println(line),
            None => eprintln!("{line}"),
        }
    }

    /// Records a finished trial; `error` is printed for a failed one.
    pub fn trial_done(&self, outcome: TrialOutcome, error: Option<&str>) {
        let Ok(mut c) = self.counts.lock() else {
            return;
        };
        c.done += 1;
        match outcome {
            TrialOutcome::Failed => c.failed += 1,
            TrialOutcome::Skipped => c.skipped += 1,
            TrialOutcome::Ran => {}
        }
        if let Some(e) = error {
            self.print(&format!("error: {e}"));
        }
        let status = format!("{} failed, {} skipped", c.failed, c.skipped);
        match self.mode {
            ProgressMode::Bar => {
                if let Some(bar) = &self.bar {
                    bar.set_message(status);
                    bar.inc(1);
                }
            }
            ProgressMode::Lines => {
                let now = Instant::now();
                if now.duration_since(c.last_line) >= LINE_INTERVAL || c.done == self.total {
                    c.last_line = now;
                    eprintln!(
                        "batch: {}/{} trials done ({status}), {:.0} s",
                        c.done,
                        self.total,
                        now.duration_since(self.start).as_secs_f64()
                    );
                }
            }
            ProgressMode::Quiet => {}
        }
    }

    /// Removes the bar.
    pub fn finish(&self) {
        if let Some(bar) = &self.bar {
            bar.finish_and_clear();
        }
    }
}
