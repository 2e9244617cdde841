//! Progress of long work on standard error, shared by every command that can run longer
//! than a couple of seconds (`play`, `sweep`, `demo`, `hunt`, `minimax`, `replay`), and
//! their shared flags `--quiet` and `--max-memory`.
//!
//! On a terminal: an indicatif bar (when the total is known) or spinner, redrawn a few
//! times a second and cleared at the end. Otherwise (a log file, a pipe, a cluster job):
//! one plain line at a steady interval, the first after one interval, for example
//! `naysayer: play: 1520000 queries, 12 s elapsed` or
//! `naysayer: sweep: halving: 40/280 games, 2 min elapsed, about 10 min left`. The
//! interval is [`DEFAULT_INTERVAL`] (10 s); the environment variable
//! `NAYSAYER_PROGRESS_INTERVAL_MS` sets another (meant for tests and logs). `--quiet`
//! silences both.
//!
//! The report runs on its own thread and reads a counter ([`crate::progress`]) that the
//! work keeps up to date with relaxed stores, so it never slows the work down; a
//! command's one-line warning that a run will likely take hours
//! ([`crate::resources::time`]) is printed by [`announce`].

use std::io::IsTerminal;
use std::sync::mpsc::{self, RecvTimeoutError};
use std::sync::{Arc, Mutex};
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

use clap::Args;

use crate::progress::{Counter, Stage};
use crate::resources::time::Estimate;

/// The interval between two plain progress lines when standard error is not a terminal.
pub const DEFAULT_INTERVAL: Duration = Duration::from_secs(10);

/// The environment variable that sets the interval in milliseconds (for tests and logs).
pub const INTERVAL_VARIABLE: &str = "NAYSAYER_PROGRESS_INTERVAL_MS";

/// How often a terminal bar is redrawn.
const TERMINAL_TICK: Duration = Duration::from_millis(150);

/// `--quiet` and `--max-memory`, shared by the commands that play or search.
#[derive(Debug, Clone, Default, Args)]
pub struct WorkArgs {
    /// Show no progress: no bar on a terminal, no progress lines otherwise (by default a
    /// line every 10 s when standard error is not a terminal).
    #[arg(long)]
    pub quiet: bool,
    /// The most memory a game may need, for example 512M, 8G or 1T (K, M, G, T: powers
    /// of 1000; KiB, MiB, GiB, TiB: powers of 1024). Default: the memory available
    /// (Linux: MemAvailable), or 4 GiB where it cannot be read. A game whose method and
    /// adversary need more is refused before it starts (exit code 2).
    #[arg(long = "max-memory", value_name = "SIZE", value_parser = crate::memory::parse_size)]
    pub max_memory: Option<u64>,
}

impl WorkArgs {
    /// The memory cap these flags set.
    pub fn cap(&self) -> crate::memory::Cap {
        crate::memory::Cap::new(self.max_memory)
    }
}

/// The interval of plain progress lines: [`INTERVAL_VARIABLE`] when it holds a whole
/// number of milliseconds (at least 10), else [`DEFAULT_INTERVAL`].
pub fn interval() -> Duration {
    std::env::var(INTERVAL_VARIABLE)
        .ok()
        .and_then(|v| v.trim().parse::<u64>().ok())
        .map_or(DEFAULT_INTERVAL, |ms| Duration::from_millis(ms.max(10)))
}

/// Prints the warning that a run will likely take hours (one line on stderr, before the
/// run; never a refusal).
pub fn announce(command: &str, estimate: &Estimate) {
    crate::note!("naysayer: {command}: {}", estimate.announce());
}

/// A running progress report; dropping it stops the report (and clears a bar).
pub struct Report {
    stop: Option<mpsc::Sender<()>>,
    thread: Option<JoinHandle<()>>,
    message: Arc<Mutex<String>>,
    counter: &'static Counter,
}

impl Report {
    /// Starts reporting `counter` (watched from now on) as `label` in `unit`s ("queries",
    /// "games"); nothing is shown with `quiet`.
    pub fn start(
        label: &str,
        unit: &'static str,
        counter: &'static Counter,
        quiet: bool,
    ) -> Report {
        let message = Arc::new(Mutex::new(String::new()));
        if quiet {
            return Report {
                stop: None,
                thread: None,
                message,
                counter,
            };
        }
        counter.watch(true);
        let (stop, stopped) = mpsc::channel::<()>();
        let label = label.to_string();
        let shown = Arc::clone(&message);
        let thread = std::thread::Builder::new()
            .name("progress".into())
            .spawn(move || {
                if std::io::stderr().is_terminal() {
                    draw_bar(&label, unit, counter, &shown, &stopped);
                } else {
                    print_lines(&label, unit, counter, &shown, &stopped, interval());
                }
            })
            .ok();
        Report {
            stop: thread.as_ref().map(|_| stop),
            thread,
            message,
            counter,
        }
    }

    /// Sets the words shown after the counts (a hunt's pass and depth, say).
    pub fn set_message(&self, text: String) {
        if let Ok(mut message) = self.message.lock() {
            *message = text;
        }
    }

    /// Stops the report now.
    pub fn finish(self) {}
}

impl Drop for Report {
    fn drop(&mut self) {
        self.stop = None;
        if let Some(thread) = self.thread.take() {
            let _ = thread.join();
        }
        self.counter.watch(false);
    }
}

/// The words after the counts: the stage, and the command's message.
fn words(counter: &Counter, shown: &Mutex<String>) -> String {
    let message = shown.lock().map(|m| m.clone()).unwrap_or_default();
    match counter.stage() {
        Stage::Working => message,
        Stage::Checking if message.is_empty() => "game over, checking it".into(),
        Stage::Checking => format!("game over, checking it; {message}"),
    }
}

fn draw_bar(
    label: &str,
    unit: &str,
    counter: &Counter,
    shown: &Mutex<String>,
    stopped: &mpsc::Receiver<()>,
) {
    let bar =
        indicatif::ProgressBar::with_draw_target(None, indicatif::ProgressDrawTarget::stderr());
    let mut with_total = false;
    let spinner = format!("{{spinner}} {label}: {{pos}} {unit}, {{elapsed}} elapsed {{msg}}");
    let full = format!(
        "{{bar:40}} {label}: {{pos}}/{{len}} {unit}, {{elapsed}} elapsed, about {{eta}} left \
         {{msg}}"
    );
    if let Ok(style) = indicatif::ProgressStyle::with_template(&spinner) {
        bar.set_style(style);
    }
    loop {
        if let Some(total) = counter.total() {
            if !with_total {
                with_total = true;
                bar.set_length(total);
                if let Ok(style) = indicatif::ProgressStyle::with_template(&full) {
                    bar.set_style(style);
                }
            }
        }
        bar.set_position(counter.done());
        let message = words(counter, shown);
        bar.set_message(if message.is_empty() {
            message
        } else {
            format!("({message})")
        });
        bar.tick();
        match stopped.recv_timeout(TERMINAL_TICK) {
            Err(RecvTimeoutError::Timeout) => {}
            _ => break,
        }
    }
    bar.finish_and_clear();
}

fn print_lines(
    label: &str,
    unit: &str,
    counter: &Counter,
    shown: &Mutex<String>,
    stopped: &mpsc::Receiver<()>,
    every: Duration,
) {
    let start = Instant::now();
    let first = counter.done();
    while let Err(RecvTimeoutError::Timeout) = stopped.recv_timeout(every) {
        let done = counter.done();
        let elapsed = start.elapsed();
        let counts = match counter.total() {
            Some(total) => format!("{done}/{total} {unit}"),
            None => format!("{done} {unit}"),
        };
        let left = match counter.total() {
            Some(total) if done > first && total > done => {
                let rate = (done - first) as f64 / elapsed.as_secs_f64();
                format!(
                    ", about {} left",
                    elapsed_words(Duration::from_secs_f64((total - done) as f64 / rate))
                )
            }
            _ => String::new(),
        };
        let message = words(counter, shown);
        let message = if message.is_empty() {
            message
        } else {
            format!(" ({message})")
        };
        crate::note!(
            "naysayer: {label}: {counts}, {} elapsed{left}{message}",
            elapsed_words(elapsed)
        );
    }
}

/// A duration in words, to the second: "12 s", "2 min 5 s", "1 h 5 min".
pub fn elapsed_words(duration: Duration) -> String {
    let s = duration.as_secs();
    if s < 60 {
        format!("{s} s")
    } else if s < 3600 {
        format!("{} min {} s", s / 60, s % 60)
    } else {
        format!("{} h {} min", s / 3600, (s % 3600) / 60)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn durations_read_as_words() {
        assert_eq!(elapsed_words(Duration::from_secs(12)), "12 s");
        assert_eq!(elapsed_words(Duration::from_secs(125)), "2 min 5 s");
        assert_eq!(elapsed_words(Duration::from_secs(3900)), "1 h 5 min");
    }
}
