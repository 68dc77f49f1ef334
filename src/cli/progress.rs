//! Progress on standard error: a bar with an ETA on a terminal, and a plain
//! line every few seconds otherwise (a log file, a cluster job), so a long run
//! is never silent (every 5 s, or as `PRIORSMITH_PROGRESS_EVERY` says). Nothing is drawn until the amount of work is known, so the
//! first frame is never a full "0/0" bar.

use indicatif::{ProgressBar, ProgressStyle};
use std::io::IsTerminal;
use std::sync::Mutex;
use std::time::{Duration, Instant};

/// Seconds between two plain progress lines (common practice for log output).
const PLAIN_EVERY: Duration = Duration::from_secs(5);

/// The environment variable that sets the seconds between two plain progress
/// lines (a decimal number from 0 to 86,400; 0 prints one line per step). For
/// logs that want more or fewer lines, and for tests.
pub const PLAIN_EVERY_VAR: &str = "PRIORSMITH_PROGRESS_EVERY";

/// The interval between plain lines: [`PLAIN_EVERY_VAR`] when set to a valid
/// number of seconds, else [`PLAIN_EVERY`] (a bad value is named on stderr once).
fn plain_every() -> Duration {
    let Ok(v) = std::env::var(PLAIN_EVERY_VAR) else {
        return PLAIN_EVERY;
    };
    match v.trim().parse::<f64>() {
        Ok(s) if (0.0..=86_400.0).contains(&s) => Duration::from_secs_f64(s),
        _ => {
            eprintln!(
                "priorsmith: warning: {PLAIN_EVERY_VAR}=\"{v}\" is not a number of seconds from 0 to 86400; progress lines every {} s",
                PLAIN_EVERY.as_secs()
            );
            PLAIN_EVERY
        }
    }
}

pub struct Progress {
    what: String,
    bar: Option<ProgressBar>,
    /// When the last plain line was printed (plain mode only).
    last: Mutex<Instant>,
    start: Instant,
    /// Seconds between two plain lines.
    every: Duration,
}

impl Progress {
    /// A progress display for `what` ("fitting", "models"), or none when quiet.
    pub fn new(quiet: bool, what: &str) -> Option<Self> {
        if quiet {
            return None;
        }
        let bar = std::io::stderr().is_terminal().then(|| {
            let pb = ProgressBar::new_spinner();
            pb.set_style(
                ProgressStyle::with_template("{spinner} {msg} ({elapsed})")
                    .unwrap_or_else(|_| ProgressStyle::default_spinner()),
            );
            pb.set_message(what.to_string());
            pb.enable_steady_tick(Duration::from_millis(250));
            pb
        });
        let now = Instant::now();
        let every = if bar.is_none() {
            plain_every()
        } else {
            PLAIN_EVERY
        };
        Some(Progress {
            what: what.to_string(),
            every,
            bar,
            last: Mutex::new(now),
            start: now,
        })
    }

    /// `done` of `total` steps; `extra` ("2 not met, 1 failed") follows the count.
    pub fn update(&self, done: usize, total: usize, extra: &str) {
        if total == 0 {
            return;
        }
        match &self.bar {
            Some(pb) => {
                if pb.length() != Some(total as u64) {
                    pb.set_style(
                        ProgressStyle::with_template(
                            "{spinner} {msg} [{bar:30}] {pos}/{len} ({elapsed}, about {eta} left)",
                        )
                        .unwrap_or_else(|_| ProgressStyle::default_bar())
                        .progress_chars("=> "),
                    );
                    pb.set_length(total as u64);
                }
                pb.set_position(done as u64);
                pb.set_message(if extra.is_empty() {
                    self.what.clone()
                } else {
                    format!("{} ({extra})", self.what)
                });
            }
            None => {
                let Ok(mut last) = self.last.lock() else {
                    return;
                };
                if last.elapsed() < self.every {
                    return;
                }
                *last = Instant::now();
                let el = self.start.elapsed().as_secs_f64();
                let eta = if done > 0 && done < total {
                    format!(
                        ", about {:.0} s left",
                        el * (total - done) as f64 / done as f64
                    )
                } else {
                    String::new()
                };
                let extra = if extra.is_empty() {
                    String::new()
                } else {
                    format!(", {extra}")
                };
                eprintln!(
                    "priorsmith: {} {done}/{total}{extra} ({el:.0} s elapsed{eta})",
                    self.what
                );
            }
        }
    }

    /// Clear the bar (plain mode prints nothing more).
    pub fn finish(self) {
        if let Some(pb) = self.bar {
            pb.finish_and_clear();
        }
    }
}
