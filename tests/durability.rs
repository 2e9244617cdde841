//! Results survive faults: transcripts reach the disk within a second however slow the
//! game, one sweep writes a results folder at a time, small files are never torn, rows
//! of another scenario are never resumed, and a closed or full output never panics.
//! These tests run real processes (the binary) and real signals.

use std::path::Path;
use std::process::{Command, Output, Stdio};
use std::sync::mpsc;
use std::time::Duration;

use naysayer::class::{Class, FeasibilityClass, Promise};
use naysayer::error::Error;
use naysayer::method::{self, Method};
use naysayer::oracle::{Answer, Step};
use naysayer::runner::{self, GameSpec};
use naysayer::transcript::Flush;
use tempfile::TempDir;

const BIN: &str = env!("CARGO_BIN_EXE_naysayer");

mod outside;

fn naysayer(dir: &Path, args: &[&str]) -> Output {
    Command::new(BIN)
        .args(args)
        .current_dir(dir)
        .output()
        .unwrap()
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

/// Midpoint that tells the test after its first answer, then thinks for a long time.
struct Slow {
    inner: Box<dyn Method + Send>,
    answered: mpsc::Sender<()>,
    asked: u32,
}

impl Method for Slow {
    fn name(&self) -> &str {
        "slow midpoint"
    }
    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        if self.asked == 1 {
            // Long enough for the test to look at the file, short enough to keep it fast.
            std::thread::sleep(Duration::from_millis(2500));
        }
        self.asked += 1;
        if self.asked > 2 {
            return Ok(Step::Output(naysayer::oracle::Output::Empty));
        }
        self.inner.next(query)
    }
    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error> {
        let _ = self.answered.send(());
        self.inner.observe(query, answer)
    }
}

#[test]
fn a_slow_game_has_every_answered_query_on_disk_within_a_second() {
    let dir = TempDir::new().unwrap();
    let path = dir.path().join("slow.jsonl");
    let class =
        Class::Feasibility(FeasibilityClass::new(2, 1.0, 1e-3, Promise::MayBeEmpty).unwrap());
    let spec = GameSpec {
        class: class.clone(),
        adversary: "halving".into(),
        method: "midpoint".into(),
        seed: 0,
        budget: 10,
        transcript: Some(path.clone()),
    };
    let (sender, receiver) = mpsc::channel();
    let game = std::thread::spawn(move || {
        let mut slow = Slow {
            inner: method::build("midpoint", &class, 0).unwrap(),
            answered: sender,
            asked: 0,
        };
        runner::run_with_flush(&spec, &mut slow, &mut [], Flush::Periodic).unwrap()
    });
    receiver.recv().unwrap();
    // The first answer is recorded; the method now thinks for 2.5 s. Within a second the
    // record is on disk (the buffer is flushed by time, not by record count).
    std::thread::sleep(Duration::from_millis(1200));
    let on_disk = std::fs::read_to_string(&path).unwrap();
    assert_eq!(
        on_disk.lines().count(),
        2,
        "the header and the first query record, on disk while the game runs: {on_disk:?}"
    );
    game.join().unwrap();
}

/// The seeds line of [`BUSY`].
const SEEDS: &str = "seeds = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19, 20, 21, 22, 23, 24, 25, 26, 27, 28, 29, 30, 31, 32, 33, 34, 35, 36, 37, 38, 39]";

/// A scenario whose sweep takes a few seconds with one worker.
const BUSY: &str = r#"name = "busy"
description = "Many small games."
[class]
family = "feasibility"
dims = [1, 2, 3, 4, 5, 6, 7, 8]
half_width = 1.0
rho = [1e-2, 1e-4, 1e-6, 1e-8, 1e-10]
[adversary]
name = "halving"
[play]
methods = ["random", "ellipsoid"]
seeds = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19, 20, 21, 22, 23, 24, 25, 26, 27, 28, 29, 30, 31, 32, 33, 34, 35, 36, 37, 38, 39]
budget = 100000
"#;

/// A scenario whose sweep takes a few seconds: a Python method that thinks 20 ms a
/// query (the midpoint of its box, like `examples/python/bisection.py`, without the
/// exact arithmetic), 30 seeded games.
const SLOW_SWEEP: &str = r#"name = "slow"
description = "A slow external method."
[class]
family = "feasibility"
dims = [1]
half_width = 1.0
rho = [1e-3]
[adversary]
name = "halving"
[play]
methods = ["thinker"]
seeds = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19, 20, 21, 22, 23, 24, 25, 26, 27, 28, 29]
budget = 1000
[external.thinker]
command = ["python3", "thinker.py"]
deterministic = false
"#;

const THINKER: &str = r#"import json, sys, time
header = json.loads(sys.stdin.readline())
print(json.dumps({"msg": "ready", "protocol": 1}), flush=True)
lo, hi = -1.0, 1.0
for _ in range(12):
    time.sleep(0.02)
    x = 0.5 * (lo + hi)
    print(json.dumps({"msg": "query", "point": [x]}), flush=True)
    reply = json.loads(sys.stdin.readline())
    cut = reply["answer"]
    sign = cut["normal"]["sign"] if isinstance(cut["normal"], dict) else (1 if cut["normal"][0] > 0 else -1)
    if sign > 0:
        hi = x
    else:
        lo = x
print(json.dumps({"msg": "empty"}), flush=True)
"#;

#[test]
fn two_sweeps_into_one_folder_never_interleave() {
    // The slow method is a Python program: without python3 this test fails, saying how to
    // install it, unless NAYSAYER_SKIP_PYTHON_TESTS=1 (`tests/outside`).
    let Some(python) = outside::python3() else {
        return;
    };
    let dir = TempDir::new().unwrap();
    let scenario = SLOW_SWEEP.replace("[\"python3\", ", &format!("[\"{python}\", "));
    std::fs::write(dir.path().join("slow.toml"), scenario).unwrap();
    std::fs::write(dir.path().join("thinker.py"), THINKER).unwrap();
    let start = || {
        Command::new(BIN)
            .args(["sweep", "slow.toml", "--jobs", "1", "--no-charts"])
            .current_dir(dir.path())
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .unwrap()
    };
    let first = start();
    // Start the second once the first holds the folder (its lock file exists).
    let lock = dir.path().join("results/slow/.naysayer-lock");
    for _ in 0..200 {
        if lock.exists() {
            break;
        }
        std::thread::sleep(Duration::from_millis(10));
    }
    assert!(lock.exists(), "the first sweep took the folder's lock");
    let second = start();
    let (a, b) = (
        first.wait_with_output().unwrap(),
        second.wait_with_output().unwrap(),
    );
    // Exactly one wrote; the other refused, naming the owner.
    let codes = [a.status.code(), b.status.code()];
    assert_eq!(
        codes,
        [Some(0), Some(2)],
        "{}{}",
        text(&a.stderr),
        text(&b.stderr)
    );
    assert!(
        text(&b.stderr).contains("another naysayer (pid"),
        "{}",
        text(&b.stderr)
    );
    // The table is whole: one row per game, in order, no duplicates; a rerun resumes it.
    let csv = std::fs::read_to_string(dir.path().join("results/slow/games.csv")).unwrap();
    let games: Vec<u64> = csv
        .lines()
        .skip(1)
        .map(|l| l.split(',').next().unwrap().parse().unwrap())
        .collect();
    assert_eq!(games, (0..30).collect::<Vec<u64>>());
    let again = naysayer(dir.path(), &["sweep", "slow.toml", "--no-charts"]);
    assert!(
        text(&again.stdout).contains("0 played"),
        "{}",
        text(&again.stdout)
    );
    assert!(!lock.exists());
}

#[test]
fn a_stale_lock_of_a_dead_process_is_taken_over_and_said_so() {
    let dir = TempDir::new().unwrap();
    let small = BUSY
        .replace("dims = [1, 2, 3, 4, 5, 6, 7, 8]", "dims = [1]")
        .replace(SEEDS, "seeds = [0]");
    std::fs::write(dir.path().join("busy.toml"), &small).unwrap();
    let folder = dir.path().join("results/busy");
    std::fs::create_dir_all(&folder).unwrap();
    // A process that ran here and died: start one and reap it.
    let mut gone = Command::new("true").spawn().unwrap();
    let pid = gone.id();
    gone.wait().unwrap();
    // This machine's host name as the kernel reports it (what gethostname returns on
    // Linux), read without starting a program.
    let host = std::fs::read_to_string("/proc/sys/kernel/hostname").unwrap();
    std::fs::write(
        folder.join(".naysayer-lock"),
        format!("pid {pid}\nhost {}\nstarted 1\n", host.trim()),
    )
    .unwrap();
    let out = naysayer(dir.path(), &["sweep", "busy.toml", "--no-charts"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert!(
        text(&out.stderr).contains("taking over the stale lock"),
        "{}",
        text(&out.stderr)
    );
    // A live owner on another host is never taken over.
    std::fs::write(
        folder.join(".naysayer-lock"),
        "pid 1\nhost some-other-machine\nstarted 1\n",
    )
    .unwrap();
    let out = naysayer(dir.path(), &["sweep", "busy.toml", "--no-charts"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        text(&out.stderr).contains("some-other-machine"),
        "{}",
        text(&out.stderr)
    );
}

#[test]
fn a_folder_in_an_unknown_state_is_refused_and_an_empty_scenario_copy_is_rewritten() {
    let dir = TempDir::new().unwrap();
    let small = BUSY
        .replace("dims = [1, 2, 3, 4, 5, 6, 7, 8]", "dims = [1, 2]")
        .replace(SEEDS, "seeds = [0]");
    std::fs::write(dir.path().join("busy.toml"), &small).unwrap();
    let out = naysayer(dir.path(), &["sweep", "busy.toml", "--no-charts"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let folder = dir.path().join("results/busy");
    // games.csv without scenario.toml: nothing says which scenario wrote the rows.
    std::fs::remove_file(folder.join("scenario.toml")).unwrap();
    let out = naysayer(dir.path(), &["sweep", "busy.toml", "--no-charts"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        text(&out.stderr).contains("no scenario.toml"),
        "{}",
        text(&out.stderr)
    );
    // An empty scenario.toml with no rows (an older version killed while writing it):
    // rewritten, and the sweep plays.
    std::fs::remove_file(folder.join("games.csv")).unwrap();
    std::fs::write(folder.join("scenario.toml"), "").unwrap();
    let out = naysayer(dir.path(), &["sweep", "busy.toml", "--no-charts"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert_eq!(
        std::fs::read_to_string(folder.join("scenario.toml")).unwrap(),
        small
    );
    // Rows of another scenario (same name, another grid) are refused with their line.
    let other = small.replace("rho = [1e-2, 1e-4, 1e-6, 1e-8, 1e-10]", "rho = [1e-3]");
    let csv = std::fs::read_to_string(folder.join("games.csv")).unwrap();
    std::fs::write(dir.path().join("busy.toml"), &other).unwrap();
    std::fs::write(folder.join("scenario.toml"), &other).unwrap();
    std::fs::write(folder.join("games.csv"), &csv).unwrap();
    let out = naysayer(dir.path(), &["sweep", "busy.toml", "--no-charts"]);
    assert_eq!(out.status.code(), Some(2));
    let said = text(&out.stderr);
    assert!(
        said.contains("line 2") && said.contains("accuracy"),
        "{said}"
    );
}

#[test]
fn a_closed_or_full_standard_output_never_panics() {
    let dir = TempDir::new().unwrap();
    let out = naysayer(dir.path(), &["play", "-d", "3", "-t", "game.jsonl"]);
    assert_eq!(out.status.code(), Some(0));
    // A reader that stops after one line (like `head -1`).
    for args in [
        &["check", "game.jsonl"][..],
        &["list"][..],
        &["bounds", "-d", "3"][..],
        &["play", "-d", "3"][..],
    ] {
        let mut child = Command::new(BIN)
            .args(args)
            .current_dir(dir.path())
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .unwrap();
        drop(child.stdout.take()); // closed before anything is read
        let out = child.wait_with_output().unwrap();
        assert_ne!(
            out.status.code(),
            Some(101),
            "{args:?} panicked: {}",
            text(&out.stderr)
        );
        assert!(!text(&out.stderr).contains("panicked"), "{args:?}");
    }
    // A full device: exit 4 with a sentence.
    let full = std::fs::File::create("/dev/full");
    if let Ok(full) = full {
        let out = Command::new(BIN)
            .args(["list"])
            .current_dir(dir.path())
            .stdout(full)
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(4), "{}", text(&out.stderr));
        assert!(
            text(&out.stderr).contains("cannot write to standard output"),
            "{}",
            text(&out.stderr)
        );
        assert!(!text(&out.stderr).contains("panicked"));
    }
}

/// A chart file that cannot be written (here a folder stands where the PNG goes) is an
/// I/O error: exit code 4 and one sentence naming the file and the cause, and the other
/// files of the folder are kept.
#[test]
fn a_chart_that_cannot_be_written_is_an_io_error_with_a_sentence() {
    let dir = TempDir::new().unwrap();
    let out = naysayer(dir.path(), &["demo", "--out", "r", "--jobs", "1"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let folder = dir.path().join("r/demo");
    for suffix in ["png", "svg", "csv"] {
        let blocked = folder.join(format!("undecided.{suffix}"));
        std::fs::remove_file(&blocked).unwrap();
        std::fs::create_dir(&blocked).unwrap();
        let out = naysayer(dir.path(), &["chart", "r/demo"]);
        let message = text(&out.stderr);
        assert_eq!(out.status.code(), Some(4), "{suffix}: {message}");
        assert_eq!(
            message.trim(),
            format!("naysayer: error: cannot write r/demo/undecided.{suffix}: Is a directory (os error 21)"),
            "{suffix}"
        );
        std::fs::remove_dir(&blocked).unwrap();
        std::fs::write(&blocked, b"").unwrap();
    }
    assert!(folder.join("games.csv").is_file());
}
