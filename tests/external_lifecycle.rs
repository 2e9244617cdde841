//! The life of an external method around its games (issue 16): signals end games
//! cleanly and take the program's process group with them, the program hears how its
//! game ended, every wait is bounded by a settable limit, sweeps resume only what the
//! same program finished, relative commands resolve against the scenario's folder,
//! failed games make the sweep fail, `hunt --exec` searches an external program, and
//! `play --fail-on-refuted` fails on a refuted output.
//!
//! The programs are small Python scripts written into a temporary folder. These tests
//! need `python3`: without it they FAIL, saying how to install it, unless
//! NAYSAYER_SKIP_PYTHON_TESTS=1 is set.

use std::path::Path;
use std::process::{Child, Command, Output, Stdio};
use std::time::{Duration, Instant};

use tempfile::TempDir;

const BIN: &str = env!("CARGO_BIN_EXE_naysayer");

mod outside;

/// `python3`; `None` only when it is missing and NAYSAYER_SKIP_PYTHON_TESTS=1 (else the
/// test fails, saying how to install it: `tests/outside`).
fn python() -> Option<&'static str> {
    outside::python3()
}

fn run(dir: &Path, args: &[&str]) -> Output {
    Command::new(BIN)
        .current_dir(dir)
        .args(args)
        .output()
        .unwrap()
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

fn both(out: &Output) -> String {
    format!("{}{}", text(&out.stdout), text(&out.stderr))
}

fn examples_python() -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/python")
}

/// Linux process state ('R', 'S', 'Z', ...) of `pid`, or `None` when it is gone.
fn process_state(pid: u32) -> Option<char> {
    let stat = std::fs::read_to_string(format!("/proc/{pid}/stat")).ok()?;
    let after = stat.rsplit_once(')')?.1;
    after.trim_start().chars().next()
}

/// Waits (up to 20 s) until `pid` is gone or a zombie nobody has reaped yet.
fn wait_gone(pid: u32) -> bool {
    let deadline = Instant::now() + Duration::from_secs(20);
    while Instant::now() < deadline {
        if matches!(process_state(pid), None | Some('Z')) {
            return true;
        }
        std::thread::sleep(Duration::from_millis(50));
    }
    false
}

/// A slow feasibility method: writes its pid and a grandchild's pid into the file
/// named by its first argument, then asks the same point again and again, a tenth of
/// a second apart, logging every message it receives into the second argument's file.
const SLOW: &str = r#"
import json, os, subprocess, sys, time
grandchild = subprocess.Popen([sys.executable, "-c", "import time; time.sleep(120)"])
with open(sys.argv[1], "w") as f:
    f.write("%d %d\n" % (os.getpid(), grandchild.pid))
log = open(sys.argv[2], "w")
for line in sys.stdin:
    log.write(line); log.flush()
    msg = json.loads(line)
    if msg["msg"] == "game":
        print(json.dumps({"msg": "ready", "protocol": 1}), flush=True)
    elif msg["msg"] == "over":
        break
    else:
        time.sleep(0.1)
    print(json.dumps({"msg": "query", "point": [0.1] * 2}), flush=True)
"#;

/// Sends `signal` to `child` once `ready` holds (polled for up to 30 s).
fn signal_when(child: &Child, signal: i32, ready: impl Fn() -> bool) {
    let deadline = Instant::now() + Duration::from_secs(30);
    while !ready() {
        assert!(Instant::now() < deadline, "the game never got going");
        std::thread::sleep(Duration::from_millis(20));
    }
    // SAFETY: kill with a valid pid and signal number has no memory effects.
    let sent = unsafe { libc::kill(child.id() as libc::pid_t, signal) };
    assert_eq!(sent, 0);
}

fn query_lines(path: &Path) -> usize {
    std::fs::read_to_string(path)
        .map(|t| {
            t.lines()
                .filter(|l| l.contains("\"type\":\"query\""))
                .count()
        })
        .unwrap_or(0)
}

fn pids(path: &Path) -> (u32, u32) {
    let text = std::fs::read_to_string(path).unwrap();
    let mut it = text.split_whitespace().map(|p| p.parse::<u32>().unwrap());
    (it.next().unwrap(), it.next().unwrap())
}

#[test]
fn a_signal_ends_the_game_with_an_interrupted_record_both_checkers_accept() {
    let Some(python) = python() else { return };
    for (signal, name) in [
        (libc::SIGINT, "SIGINT"),
        (libc::SIGTERM, "SIGTERM"),
        (libc::SIGHUP, "SIGHUP"),
    ] {
        let dir = TempDir::new().unwrap();
        let d = dir.path();
        std::fs::write(d.join("slow.py"), SLOW).unwrap();
        let transcript = d.join("game.jsonl");
        let child = Command::new(BIN)
            .current_dir(d)
            .args([
                "play",
                "-d",
                "2",
                "--rho",
                "1e-3",
                "-t",
                "game.jsonl",
                "--exec",
                "--",
                python,
                "slow.py",
                "pids",
                "log",
            ])
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .unwrap();
        signal_when(&child, signal, || query_lines(&transcript) >= 2);
        let out = child.wait_with_output().unwrap();
        assert_eq!(out.status.code(), Some(6), "{name}: {}", both(&out));
        assert!(
            text(&out.stderr).contains(&format!("interrupted by {name}")),
            "{}",
            both(&out)
        );
        // The program and the grandchild it started are gone.
        let (program, grandchild) = pids(&d.join("pids"));
        assert!(wait_gone(program), "{name}: the program lives on");
        assert!(wait_gone(grandchild), "{name}: its grandchild lives on");
        // The program heard why its game ended.
        let log = std::fs::read_to_string(d.join("log")).unwrap();
        assert!(
            log.lines()
                .last()
                .is_some_and(|l| l.contains(r#""msg":"over","reason":"interrupted""#)),
            "{name}: {log}"
        );
        // The transcript ends with an interrupted record, and both checkers accept it.
        let last = std::fs::read_to_string(&transcript).unwrap();
        let last = last.lines().last().unwrap().to_string();
        assert!(
            last.contains(&format!(
                r#""ending":{{"kind":"interrupted","signal":"{name}"}}"#
            )),
            "{last}"
        );
        let check = run(d, &["check", "game.jsonl"]);
        assert_eq!(check.status.code(), Some(0), "{}", both(&check));
        let checker = Path::new(env!("CARGO_MANIFEST_DIR")).join("tools/check_certificate.py");
        let py = Command::new(python)
            .arg(&checker)
            .arg(&transcript)
            .output()
            .unwrap();
        assert_eq!(py.status.code(), Some(0), "{}", both(&py));
        assert!(
            text(&py.stdout).contains("outcome=interrupted"),
            "{}",
            both(&py)
        );
    }
}

/// A sweep scenario of one slow external method over eight dimensions (eight games).
const SLOW_SWEEP: &str = r#"
name = "slow"
description = "A slow external method, interrupted and resumed."
[class]
family = "feasibility"
half_width = 1.0
dims = [1, 2, 3, 4, 5, 6, 7, 8]
rho = [0.25]
[adversary]
name = "halving"
[play]
methods = ["creeper"]
seeds = [0]
budget = 4
[external.creeper]
command = ["python3", "creeper.py"]
deterministic = true
"#;

/// Answers every message with the box centre after a pause (the game ends by budget).
const CREEPER: &str = r#"
import json, sys, time
for line in sys.stdin:
    msg = json.loads(line)
    if msg["msg"] == "over":
        break
    if msg["msg"] == "game":
        dim = msg["query_dim"]
        print(json.dumps({"msg": "ready", "protocol": 1}), flush=True)
    else:
        time.sleep(0.15)
    print(json.dumps({"msg": "query", "point": [0.0] * dim}), flush=True)
"#;

fn data_rows(csv: &Path) -> usize {
    std::fs::read_to_string(csv)
        .map(|t| t.lines().count().saturating_sub(1))
        .unwrap_or(0)
}

#[test]
fn an_interrupted_sweep_keeps_its_finished_rows_and_resumes() {
    let Some(python) = python() else { return };
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    let scenario = SLOW_SWEEP.replace("\"python3\"", &format!("{python:?}"));
    std::fs::write(d.join("slow.toml"), scenario).unwrap();
    std::fs::write(d.join("creeper.py"), CREEPER).unwrap();
    let csv = d.join("results/slow/games.csv");
    let child = Command::new(BIN)
        .current_dir(d)
        .args(["sweep", "slow.toml", "--jobs", "1", "--no-charts"])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    signal_when(&child, libc::SIGTERM, || data_rows(&csv) >= 2);
    let out = child.wait_with_output().unwrap();
    assert_eq!(out.status.code(), Some(6), "{}", both(&out));
    assert!(
        text(&out.stderr).contains("interrupted by SIGTERM"),
        "{}",
        both(&out)
    );
    let kept = data_rows(&csv);
    assert!((2..8).contains(&kept), "{kept} rows kept");
    // Every kept row is whole (the interrupted game wrote none).
    let table = std::fs::read_to_string(&csv).unwrap();
    assert!(table.ends_with('\n'));
    assert!(!table.contains("interrupted"), "{table}");
    let again = run(d, &["sweep", "slow.toml", "--jobs", "2", "--no-charts"]);
    assert_eq!(again.status.code(), Some(0), "{}", both(&again));
    assert!(
        text(&again.stdout).contains(&format!("({kept} resumed, {} played)", 8 - kept)),
        "{}",
        both(&again)
    );
    assert_eq!(data_rows(&csv), 8);
}

#[test]
fn the_program_hears_why_its_game_ended() {
    let Some(python) = python() else { return };
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    std::fs::write(d.join("slow.py"), SLOW).unwrap();
    // The budget ends the game.
    let out = run(
        d,
        &[
            "play", "-d", "2", "--budget", "3", "--exec", "--", python, "slow.py", "pids", "log",
        ],
    );
    assert_eq!(out.status.code(), Some(0), "{}", both(&out));
    let log = std::fs::read_to_string(d.join("log")).unwrap();
    assert_eq!(
        log.lines().last(),
        Some(r#"{"msg":"over","reason":"budget"}"#),
        "{log}"
    );
    assert_eq!(log.matches(r#""msg":"answer""#).count(), 3, "{log}");
    // The method's output ends it: the example client stops on the message.
    let logger = r#"
import json, sys
log = open("log2", "w")
for line in sys.stdin:
    log.write(line); log.flush()
    msg = json.loads(line)
    if msg["msg"] == "game":
        print(json.dumps({"msg": "ready", "protocol": 1}), flush=True)
        print(json.dumps({"msg": "empty"}), flush=True)
"#;
    std::fs::write(d.join("logger.py"), logger).unwrap();
    let out = run(d, &["play", "-d", "2", "--exec", "--", python, "logger.py"]);
    assert_eq!(out.status.code(), Some(0), "{}", both(&out));
    let log = std::fs::read_to_string(d.join("log2")).unwrap();
    assert_eq!(
        log.lines().last(),
        Some(r#"{"msg":"over","reason":"output-received"}"#),
        "{log}"
    );
}

#[test]
fn the_exit_grace_is_settable_and_bounds_a_program_that_lingers() {
    let Some(python) = python() else { return };
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    // Closes its output after the header and lingers for a minute.
    let lingerer = r#"
import os, sys, time
sys.stdin.readline()
os.close(1)
time.sleep(60)
"#;
    std::fs::write(d.join("linger.py"), lingerer).unwrap();
    let start = Instant::now();
    let out = run(
        d,
        &[
            "play",
            "-d",
            "2",
            "--answer-timeout",
            "60",
            "--exit-grace",
            "0.2",
            "--exec",
            "--",
            python,
            "linger.py",
        ],
    );
    // Neither the answer timeout (60 s) nor the program's minute was waited for: the
    // exit grace (0.2 s) bounds the wait once the output closed. (A liveness bound,
    // far above the expected fraction of a second.)
    assert!(
        start.elapsed() < Duration::from_secs(30),
        "{:?}",
        start.elapsed()
    );
    assert_eq!(out.status.code(), Some(3), "{}", both(&out));
    assert!(both(&out).contains("closed its output"), "{}", both(&out));
    // The flag is named in --help, and a bad value is refused with a sentence.
    let help = run(d, &["play", "--help"]);
    assert!(text(&help.stdout).contains("--exit-grace"));
    let bad = run(
        d,
        &[
            "play",
            "--exit-grace",
            "-1",
            "--exec",
            "--",
            python,
            "linger.py",
        ],
    );
    assert_eq!(bad.status.code(), Some(2), "{}", both(&bad));
    assert!(text(&bad.stderr).contains("--exit-grace"), "{}", both(&bad));
}

#[test]
fn a_program_that_refuses_the_game_has_its_reason_shown() {
    let Some(python) = python() else { return };
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    let refuser = r#"
import json, sys
sys.stdin.readline()
print(json.dumps({"msg": "fail", "reason": "this solver needs an integer class"}), flush=True)
"#;
    std::fs::write(d.join("refuse.py"), refuser).unwrap();
    let out = run(d, &["play", "-d", "2", "--exec", "--", python, "refuse.py"]);
    assert_eq!(out.status.code(), Some(3), "{}", both(&out));
    assert!(
        both(&out).contains(
            "refused the game in reply to the header: this solver needs an integer class"
        ),
        "{}",
        both(&out)
    );
    assert!(!both(&out).contains("ignores the header"));
}

#[test]
fn a_grandchild_holding_the_output_is_named() {
    let Some(python) = python() else { return };
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    // Answers the header, then exits while a child it started keeps stdout open.
    let leaver = r#"
import json, subprocess, sys
sys.stdin.readline()
print(json.dumps({"msg": "ready", "protocol": 1}), flush=True)
subprocess.Popen([sys.executable, "-c", "import time; time.sleep(60)"])
"#;
    std::fs::write(d.join("leave.py"), leaver).unwrap();
    let out = run(
        d,
        &[
            "play",
            "-d",
            "2",
            "--exit-grace",
            "0.5",
            "--exec",
            "--",
            python,
            "leave.py",
        ],
    );
    assert_eq!(out.status.code(), Some(3), "{}", both(&out));
    assert!(
        both(&out).contains("its output is still open in another process"),
        "{}",
        both(&out)
    );
}

/// A sweep of one external method given by a path relative to the scenario's folder.
const RELATIVE_SWEEP: &str = r#"
name = "relative"
description = "An external method named relative to the scenario file."
[class]
family = "feasibility"
half_width = 1.0
dims = [1, 2]
rho = [0.01]
[adversary]
name = "halving"
[play]
methods = ["mine"]
seeds = [0]
budget = 1000
[external.mine]
command = ["python3", "solver/bisection.py"]
deterministic = true
"#;

/// Writes the relative-command scenario and a copy of the bisection example (and its
/// client: `naysayer_method.py` and the package `naysayer_client` beside it, as a copy
/// outside the checkout needs without `pip install ./python`) into `dir/project`;
/// returns the scenario's path.
fn relative_project(dir: &Path, python: &str) -> std::path::PathBuf {
    let project = dir.join("project");
    let package = project.join("solver/naysayer_client");
    std::fs::create_dir_all(&package).unwrap();
    for name in ["bisection.py", "naysayer_method.py"] {
        std::fs::copy(
            examples_python().join(name),
            project.join("solver").join(name),
        )
        .unwrap();
    }
    let source = Path::new(env!("CARGO_MANIFEST_DIR")).join("python/src/naysayer_client");
    for entry in std::fs::read_dir(source).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_some_and(|e| e == "py") {
            std::fs::copy(&path, package.join(path.file_name().unwrap())).unwrap();
        }
    }
    let scenario = project.join("relative.toml");
    std::fs::write(
        &scenario,
        RELATIVE_SWEEP.replace("\"python3\"", &format!("{python:?}")),
    )
    .unwrap();
    scenario
}

#[test]
fn relative_commands_resolve_against_the_scenario_folder() {
    let Some(python) = python() else { return };
    let dir = TempDir::new().unwrap();
    let scenario = relative_project(dir.path(), python);
    // Run from another folder: the command still finds solver/bisection.py.
    let elsewhere = dir.path().join("elsewhere");
    std::fs::create_dir_all(&elsewhere).unwrap();
    let out = run(
        &elsewhere,
        &["sweep", scenario.to_str().unwrap(), "--no-charts"],
    );
    assert_eq!(out.status.code(), Some(0), "{}", both(&out));
    let csv = std::fs::read_to_string(elsewhere.join("results/relative/games.csv")).unwrap();
    assert!(!csv.contains("method-failed"), "{csv}");
    assert_eq!(csv.lines().count(), 3, "{csv}");
}

#[test]
fn resume_refuses_a_changed_program_until_restart() {
    let Some(python) = python() else { return };
    let dir = TempDir::new().unwrap();
    let scenario = relative_project(dir.path(), python);
    let scenario = scenario.to_str().unwrap();
    let d = dir.path();
    let first = run(d, &["sweep", scenario, "--no-charts"]);
    assert_eq!(first.status.code(), Some(0), "{}", both(&first));
    // Unchanged: everything resumes.
    let same = run(d, &["sweep", scenario, "--no-charts"]);
    assert_eq!(same.status.code(), Some(0), "{}", both(&same));
    assert!(
        text(&same.stdout).contains("(2 resumed, 0 played)"),
        "{}",
        both(&same)
    );
    // The solver changes: the finished games would mix two programs.
    let solver = d.join("project/solver/bisection.py");
    let mut code = std::fs::read_to_string(&solver).unwrap();
    code.push_str("\n# tuned\n");
    std::fs::write(&solver, code).unwrap();
    let changed = run(d, &["sweep", scenario, "--no-charts"]);
    assert_eq!(changed.status.code(), Some(2), "{}", both(&changed));
    let message = text(&changed.stderr);
    assert!(
        message.contains("\"mine\" changed") && message.contains("--restart"),
        "{message}"
    );
    let restarted = run(d, &["sweep", scenario, "--no-charts", "--restart"]);
    assert_eq!(restarted.status.code(), Some(0), "{}", both(&restarted));
    assert!(
        text(&restarted.stdout).contains("(0 resumed, 2 played)"),
        "{}",
        both(&restarted)
    );
}

#[test]
fn a_missing_program_stops_the_sweep_before_any_game() {
    let Some(python) = python() else { return };
    let dir = TempDir::new().unwrap();
    let scenario = relative_project(dir.path(), python);
    std::fs::remove_file(dir.path().join("project/solver/bisection.py")).unwrap();
    let out = run(
        dir.path(),
        &["sweep", scenario.to_str().unwrap(), "--no-charts"],
    );
    assert_eq!(out.status.code(), Some(2), "{}", both(&out));
    let message = text(&out.stderr);
    assert!(
        message.contains("cannot find the script \"solver/bisection.py\"")
            && message.contains("scenario's folder"),
        "{message}"
    );
    assert_eq!(data_rows(&dir.path().join("results/relative/games.csv")), 0);
}

#[test]
fn failed_games_make_the_sweep_fail_also_when_resumed() {
    let Some(python) = python() else { return };
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    std::fs::write(
        d.join("crash.py"),
        "import sys\nsys.stdin.readline()\nraise SystemExit('solver crashed')\n",
    )
    .unwrap();
    let scenario = RELATIVE_SWEEP
        .replace("\"python3\"", &format!("{python:?}"))
        .replace("solver/bisection.py", "crash.py");
    std::fs::write(d.join("crash.toml"), scenario).unwrap();
    let out = run(d, &["sweep", "crash.toml", "--no-charts"]);
    assert_eq!(out.status.code(), Some(3), "{}", both(&out));
    assert!(
        text(&out.stdout).contains("2 games ended with the method failing"),
        "{}",
        both(&out)
    );
    let again = run(d, &["sweep", "crash.toml", "--no-charts"]);
    assert_eq!(again.status.code(), Some(3), "{}", both(&again));
    assert!(text(&again.stdout).contains("(2 resumed, 0 played)"));
}

#[test]
fn hunt_searches_an_external_program_and_refuses_a_non_deterministic_one() {
    let Some(python) = python() else { return };
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    let bisection = examples_python().join("bisection.py");
    let out = run(
        d,
        &[
            "hunt",
            "-d",
            "2",
            "--rho",
            "0.05",
            "--replays",
            "60",
            "--width",
            "2",
            "-t",
            "worst.jsonl",
            "--exec",
            "--",
            python,
            bisection.to_str().unwrap(),
        ],
    );
    assert_eq!(out.status.code(), Some(0), "{}", both(&out));
    assert!(text(&out.stdout).contains("external"), "{}", both(&out));
    let check = run(d, &["check", "worst.jsonl"]);
    assert_eq!(check.status.code(), Some(0), "{}", both(&check));
    // A program that asks a random first point: its replays disagree.
    let random = r#"
import json, random, sys
for line in sys.stdin:
    msg = json.loads(line)
    if msg["msg"] == "over":
        break
    if msg["msg"] == "game":
        print(json.dumps({"msg": "ready", "protocol": 1}), flush=True)
    x = [random.uniform(-0.5, 0.5) for _ in range(2)]
    print(json.dumps({"msg": "query", "point": x}), flush=True)
"#;
    std::fs::write(d.join("random.py"), random).unwrap();
    let out = run(
        d,
        &[
            "hunt",
            "-d",
            "2",
            "--rho",
            "0.05",
            "--replays",
            "20",
            "--exec",
            "--",
            python,
            "random.py",
        ],
    );
    assert_eq!(out.status.code(), Some(2), "{}", both(&out));
    assert!(
        text(&out.stderr).contains("not deterministic"),
        "{}",
        both(&out)
    );
}

#[test]
fn fail_on_refuted_shows_the_witness_and_exits_seven() {
    let Some(python) = python() else { return };
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    // Declares K empty after a single query: the adversary keeps a ball alive.
    let hasty = r#"
import json, sys
for line in sys.stdin:
    msg = json.loads(line)
    if msg["msg"] == "over":
        break
    if msg["msg"] == "game":
        print(json.dumps({"msg": "ready", "protocol": 1}), flush=True)
        print(json.dumps({"msg": "query", "point": [0.0, 0.0]}), flush=True)
    else:
        print(json.dumps({"msg": "empty"}), flush=True)
"#;
    std::fs::write(d.join("hasty.py"), hasty).unwrap();
    let args = ["play", "-d", "2", "--exec", "--", python, "hasty.py"];
    let plain = run(d, &args);
    assert_eq!(plain.status.code(), Some(0), "{}", both(&plain));
    let shown = text(&plain.stdout);
    assert!(shown.contains("refuted"), "{shown}");
    assert!(
        shown.contains("refuting witness       #2 of the final record: K is the ball of radius"),
        "{shown}"
    );
    let mut strict = vec!["play", "--fail-on-refuted"];
    strict.extend_from_slice(&args[1..]);
    let out = run(d, &strict);
    assert_eq!(out.status.code(), Some(7), "{}", both(&out));
    assert!(
        text(&out.stderr).contains("--fail-on-refuted"),
        "{}",
        both(&out)
    );
}

#[test]
fn charts_draw_external_methods_in_the_sweep_and_in_the_chart_command() {
    let Some(python) = python() else { return };
    let dir = TempDir::new().unwrap();
    let scenario = relative_project(dir.path(), python);
    let out = run(dir.path(), &["sweep", scenario.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(0), "{}", both(&out));
    let folder = dir.path().join("results/relative");
    for chart in ["queries-vs-dim", "undecided", "game-2d"] {
        assert!(
            folder.join(format!("{chart}.png")).is_file(),
            "{chart} missing: {}",
            both(&out)
        );
    }
    // The chart command redraws them from the results folder, from another directory:
    // the program runs where the sweep ran it.
    let elsewhere = dir.path().join("elsewhere");
    std::fs::create_dir_all(&elsewhere).unwrap();
    std::fs::remove_file(folder.join("game-2d.png")).unwrap();
    let redrawn = run(&elsewhere, &["chart", folder.to_str().unwrap()]);
    assert_eq!(redrawn.status.code(), Some(0), "{}", both(&redrawn));
    assert!(folder.join("game-2d.png").is_file());
    let undecided = std::fs::read_to_string(folder.join("undecided.csv")).unwrap();
    assert!(undecided.contains("mine"), "{undecided}");
}
