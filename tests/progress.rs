//! Long work shows progress (issue 17 item 6, issue 18 item 4): with standard error not a
//! terminal, `play`, `minimax`, `sweep` and `hunt` print a plain progress line at a
//! steady interval (set short here with `NAYSAYER_PROGRESS_INTERVAL_MS`, which the README
//! documents for tests and logs), `--quiet` silences them, and a run that will obviously
//! take hours says so with its estimate before it starts. Runs that would take long are
//! stopped (killed by their process id) as soon as the line looked for has appeared.

use std::io::{BufRead, BufReader};
use std::path::Path;
use std::process::{Child, Command, Output, Stdio};
use std::time::{Duration, Instant};

use tempfile::TempDir;

const BIN: &str = env!("CARGO_BIN_EXE_naysayer");

/// The interval used here: short, so that runs of about a second print several lines.
const INTERVAL_MS: &str = "100";

fn command(dir: &Path, args: &[&str]) -> Command {
    let mut cmd = Command::new(BIN);
    cmd.current_dir(dir)
        .args(args)
        .env("NAYSAYER_PROGRESS_INTERVAL_MS", INTERVAL_MS);
    cmd
}

fn run(dir: &Path, args: &[&str]) -> Output {
    command(dir, args).output().unwrap()
}

fn progress_lines(stderr: &[u8], prefix: &str) -> Vec<String> {
    String::from_utf8_lossy(stderr)
        .lines()
        .filter(|l| l.starts_with(prefix))
        .map(str::to_string)
        .collect()
}

/// Starts `args` with stderr piped, reads stderr until a line satisfies `wanted` (or the
/// program ends, or `limit` passes), then kills the program; returns every line read.
fn first_lines_until(
    dir: &Path,
    args: &[&str],
    mut wanted: impl FnMut(&str) -> bool,
    limit: Duration,
) -> Vec<String> {
    let mut child: Child = command(dir, args)
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let stderr = child.stderr.take().unwrap();
    let (send, receive) = std::sync::mpsc::channel();
    std::thread::spawn(move || {
        for line in BufReader::new(stderr).lines() {
            let Ok(line) = line else { break };
            if send.send(line).is_err() {
                break;
            }
        }
    });
    let start = Instant::now();
    let mut lines = Vec::new();
    while start.elapsed() < limit {
        match receive.recv_timeout(Duration::from_millis(50)) {
            Ok(line) => {
                let done = wanted(&line);
                lines.push(line);
                if done {
                    break;
                }
            }
            Err(std::sync::mpsc::RecvTimeoutError::Timeout) => {}
            Err(std::sync::mpsc::RecvTimeoutError::Disconnected) => break,
        }
    }
    let _ = child.kill();
    let _ = child.wait();
    lines
}

/// A play of about a second: midpoint against halving at d = 10, rho = 1e-301, capped at
/// 300 000 queries (then verified).
const LONG_PLAY: [&str; 9] = [
    "play", "-m", "midpoint", "-d", "10", "--rho", "1e-301", "--budget", "300000",
];

#[test]
fn a_long_play_prints_progress_lines_when_stderr_is_not_a_terminal() {
    let dir = TempDir::new().unwrap();
    let out = run(dir.path(), &LONG_PLAY);
    assert_eq!(out.status.code(), Some(0));
    let lines = progress_lines(&out.stderr, "naysayer: play: ");
    assert!(
        !lines.is_empty(),
        "no progress line: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    for line in &lines {
        // "naysayer: play: 1520000 queries, 12 s elapsed" (plus a stage after the game).
        let rest = line.strip_prefix("naysayer: play: ").unwrap();
        let (count, rest) = rest.split_once(" queries, ").expect(line);
        assert!(count.parse::<u64>().unwrap() <= 300_000, "{line}");
        assert!(rest.contains(" elapsed"), "{line}");
    }
    // The game's output is untouched.
    assert!(String::from_utf8_lossy(&out.stdout).contains("queries used"));
}

#[test]
fn quiet_silences_progress() {
    let dir = TempDir::new().unwrap();
    let mut args = LONG_PLAY.to_vec();
    args.push("--quiet");
    let out = run(dir.path(), &args);
    assert_eq!(out.status.code(), Some(0));
    assert!(
        progress_lines(&out.stderr, "naysayer:").is_empty(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let out = run(
        dir.path(),
        &[
            "minimax",
            "--int-dim",
            "2",
            "--int-upper",
            "2",
            "--queries",
            "lattice",
            "--quiet",
        ],
    );
    assert_eq!(out.status.code(), Some(0));
    assert!(progress_lines(&out.stderr, "naysayer:").is_empty());
}

#[test]
fn minimax_prints_its_states_as_it_searches() {
    let dir = TempDir::new().unwrap();
    // {0..3}^2 with half-integer queries: 49 points, several seconds; stopped after the
    // second progress line.
    let args = ["minimax", "--int-dim", "2", "--int-upper", "3"];
    let mut seen = 0;
    let lines = first_lines_until(
        dir.path(),
        &args,
        |l| {
            if l.starts_with("naysayer: minimax: ") {
                seen += 1;
            }
            seen >= 2
        },
        Duration::from_secs(60),
    );
    let progress: Vec<&String> = lines
        .iter()
        .filter(|l| l.starts_with("naysayer: minimax: "))
        .collect();
    assert!(progress.len() >= 2, "{lines:?}");
    assert!(progress
        .iter()
        .all(|l| l.contains(" states, ") && l.contains(" elapsed")));
}

#[test]
fn a_sweep_prints_games_done_of_its_total() {
    let dir = TempDir::new().unwrap();
    let scenario = dir.path().join("steady.toml");
    std::fs::write(
        &scenario,
        r#"name = "steady"
description = "Ellipsoid games up to d = 64, more than a second in all."
[class]
family = "feasibility"
dims = [16, 24, 32, 40, 48, 64]
half_width = 1.0
rho = [1e-2, 1e-4, 1e-6]
[adversary]
name = "halving"
[play]
methods = ["ellipsoid", "midpoint"]
seeds = [0]
budget = 100000
"#,
    )
    .unwrap();
    let args = [
        "sweep",
        scenario.to_str().unwrap(),
        "--jobs",
        "1",
        "--no-charts",
        "--out",
        "out",
    ];
    let lines = first_lines_until(
        dir.path(),
        &args,
        |l| l.starts_with("naysayer: sweep: steady: "),
        Duration::from_secs(60),
    );
    let line = lines
        .iter()
        .find(|l| l.starts_with("naysayer: sweep: steady: "))
        .unwrap_or_else(|| panic!("no progress line: {lines:?}"));
    // "naysayer: sweep: steady: 4/36 games, 1 s elapsed[, about 8 s left]"
    let rest = line.strip_prefix("naysayer: sweep: steady: ").unwrap();
    let (counts, rest) = rest.split_once(" games, ").expect(line);
    let (done, total) = counts.split_once('/').expect(line);
    assert_eq!(total, "36", "{line}");
    assert!(done.parse::<u64>().unwrap() <= 36, "{line}");
    assert!(rest.contains(" elapsed"), "{line}");
}

#[test]
fn runs_that_will_take_hours_say_so_before_they_start() {
    let dir = TempDir::new().unwrap();
    let cases: [&[&str]; 4] = [
        // 10^9 replays of a method step of about a millisecond.
        &[
            "hunt",
            "-m",
            "analytic-center",
            "-d",
            "3",
            "--replays",
            "1000000000",
        ],
        // 125 query points: far beyond the measured 81-point searches.
        &[
            "minimax",
            "--int-dim",
            "3",
            "--int-upper",
            "4",
            "--queries",
            "lattice",
        ],
        // The subgradient method plans (L R sqrt(d) / eps)^2 = 2e12 queries; the budget
        // lets it ask 10^10 of them.
        &[
            "play",
            "--class",
            "first-order",
            "-m",
            "subgradient",
            "-d",
            "2",
            "--eps",
            "1e-6",
            "--budget",
            "10000000000",
        ],
        // Every method needs 1801 queries; each averages 10 d^2 + 40 d hit-and-run steps.
        &[
            "play",
            "-m",
            "sampled-centroid",
            "-d",
            "200",
            "--rho",
            "1e-3",
        ],
    ];
    for args in cases {
        let lines = first_lines_until(
            dir.path(),
            args,
            |l| l.contains("will likely take"),
            Duration::from_secs(60),
        );
        let line = lines
            .iter()
            .find(|l| l.contains("will likely take"))
            .unwrap_or_else(|| panic!("{args:?}: no estimate line in {lines:?}"));
        assert!(
            line.starts_with(&format!("naysayer: {}: ", args[0])),
            "{line}"
        );
        assert!(line.contains("about "), "{line}");
        assert!(
            line.contains(" h ") || line.contains(" days") || line.contains(" years"),
            "{line}"
        );
    }
    // An ordinary game says nothing of the kind.
    let out = run(dir.path(), &["play", "-m", "ellipsoid", "-d", "4"]);
    assert!(!String::from_utf8_lossy(&out.stderr).contains("will likely take"));
}
