//! The external-method line protocol: misbehaving programs (one test each), end-to-end
//! games of the Python examples and of a compiled Rust child through the binary, and
//! identity of protocol and in-process transcripts.
//!
//! Child programs are small Python scripts written into a temporary directory and the
//! example `examples/protocol_method.rs`, built on demand. The Python tests need
//! `python3`: without it they FAIL, saying how to install it, unless
//! NAYSAYER_SKIP_PYTHON_TESTS=1 is set (`tests/outside`).

use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use std::time::Duration;

use naysayer::class::{Class, FeasibilityClass, Promise};
use naysayer::method::external::ExternalSettings;
use naysayer::runner::{self, GameSpec};
use naysayer::transcript::Ending;
use tempfile::TempDir;

const BIN: &str = env!("CARGO_BIN_EXE_naysayer");

mod outside;

/// `python3`; `None` only when it is missing and NAYSAYER_SKIP_PYTHON_TESTS=1 allows
/// skipping (otherwise the test fails, saying how to install it).
#[track_caller]
fn python() -> Option<&'static str> {
    outside::python3()
}

fn examples_python() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/python")
}

/// Builds (if needed) and returns `examples/protocol_method`.
fn protocol_method() -> PathBuf {
    let status = Command::new(env!("CARGO"))
        .args([
            "build",
            "--quiet",
            "--profile",
            "test",
            "--example",
            "protocol_method",
        ])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .status()
        .expect("cargo runs");
    assert!(status.success(), "cannot build examples/protocol_method");
    let exe = std::env::current_exe().unwrap();
    let profile_dir = exe.parent().unwrap().parent().unwrap();
    let path = profile_dir
        .join("examples")
        .join(format!("protocol_method{}", std::env::consts::EXE_SUFFIX));
    assert!(path.exists(), "{} not found", path.display());
    path
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

/// The common start of every misbehaving child: records its pid (and the pid of a
/// grandchild it starts, to check that the whole process group is killed).
const PRELUDE: &str = r#"
import os, subprocess, sys, time
pids = open(sys.argv[1], "w")
grandchild = subprocess.Popen([sys.executable, "-c", "import time; time.sleep(60)"])
pids.write("%d %d\n" % (os.getpid(), grandchild.pid)); pids.close()
def send(line):
    sys.stdout.write(line + "\n"); sys.stdout.flush()
def ready():
    sys.stdin.readline(); send('{"msg":"ready","protocol":1}')
def answer():
    return sys.stdin.readline()
"#;

/// Linux process state ('R', 'S', 'Z', ...) of `pid`, or `None` when it is gone.
fn process_state(pid: u32) -> Option<char> {
    let stat = std::fs::read_to_string(format!("/proc/{pid}/stat")).ok()?;
    let after = stat.rsplit_once(')')?.1;
    after.trim_start().chars().next()
}

fn feasibility_2d() -> Class {
    Class::Feasibility(FeasibilityClass::new(2, 1.0, 1e-2, Promise::MayBeEmpty).unwrap())
}

fn quick_settings() -> ExternalSettings {
    ExternalSettings {
        answer_timeout: Duration::from_millis(1500),
        max_line_bytes: 4096,
        max_output_bytes: 1 << 20,
        exit_grace: Duration::from_millis(500),
        stderr_pass_bytes: 1024,
        working_dir: None,
    }
}

/// Plays `body` (after the prelude) as a failing child twice: through the library
/// (checking that the child is reaped and its grandchild killed) and through the
/// binary (exit code 3, the message on stderr, a transcript that `check` accepts).
/// Returns the failure reason from the library run; every `expect` must appear in it.
fn failing_child(body: &str, expect: &[&str], cli_limits: &[&str]) -> Option<String> {
    let python = python()?;
    let dir = TempDir::new().unwrap();
    let script = dir.path().join("child.py");
    std::fs::write(&script, format!("{PRELUDE}\n{body}\n")).unwrap();
    let pid_file = dir.path().join("pids.txt");
    let command: Vec<String> = vec![
        python.into(),
        script.to_string_lossy().into_owned(),
        pid_file.to_string_lossy().into_owned(),
    ];

    // Library: reaping and killing.
    let spec = GameSpec {
        class: feasibility_2d(),
        adversary: "halving".into(),
        method: String::new(),
        seed: 0,
        budget: 1000,
        transcript: Some(dir.path().join("lib.jsonl")),
    };
    let report = runner::run_external(&spec, &command, &quick_settings()).unwrap();
    let Ending::MethodFailed { reason } = &report.record.ending else {
        panic!("expected a method failure, got {:?}", report.record.ending);
    };
    for e in expect {
        assert!(reason.contains(e), "{e:?} not in {reason:?}");
    }
    assert!(report.verdict.is_ok(), "{:?}", report.verdict);
    let pids = std::fs::read_to_string(&pid_file).unwrap();
    let mut pids = pids.split_whitespace().map(|p| p.parse::<u32>().unwrap());
    let (child, grandchild) = (pids.next().unwrap(), pids.next().unwrap());
    // The child was reaped by naysayer: no zombie left.
    assert_eq!(process_state(child), None, "child {child} left behind");
    // The grandchild was killed with the group (it may linger as a zombie of init,
    // which is dead and reaped by whoever adopted it, never a running orphan).
    std::thread::sleep(Duration::from_millis(100));
    let state = process_state(grandchild);
    assert!(
        state.is_none() || state == Some('Z'),
        "grandchild {grandchild} still running ({state:?})"
    );

    // Binary: exit code 3, the reason on stderr, the transcript verifies.
    let mut args: Vec<&str> = vec![
        "play",
        "-d",
        "2",
        "--rho",
        "1e-2",
        "--budget",
        "1000",
        "-t",
        "cli.jsonl",
        "--answer-timeout",
        "1.5",
        "--max-line-bytes",
        "4096",
        "--max-output-bytes",
        "1048576",
    ];
    args.extend_from_slice(cli_limits);
    args.push("--exec");
    args.push("--");
    let cmd: Vec<&str> = command.iter().map(String::as_str).collect();
    args.extend_from_slice(&cmd);
    let out = run(dir.path(), &args);
    let stderr = text(&out.stderr);
    let tail = &stderr[stderr.len().saturating_sub(2000)..];
    assert_eq!(out.status.code(), Some(3), "{}{tail}", text(&out.stdout));
    for e in expect {
        assert!(tail.contains(e), "{e:?} not in stderr {tail:?}");
    }
    let check = run(dir.path(), &["check", "cli.jsonl"]);
    assert_eq!(
        check.status.code(),
        Some(0),
        "{}{}",
        text(&check.stdout),
        text(&check.stderr)
    );
    assert!(text(&check.stdout).contains("method failed"));
    Some(reason.clone())
}

#[test]
fn a_child_that_hangs_is_killed_after_the_answer_time_limit() {
    failing_child(
        "ready()\nsend('{\"msg\":\"query\",\"point\":[0.0,0.0]}')\nanswer()\ntime.sleep(60)",
        &["no reply within 1.5 s after answer 1", "protocol line 3"],
        &[],
    );
}

#[test]
fn a_line_longer_than_the_cap_is_refused() {
    failing_child(
        "ready()\nsys.stdout.write('{\"msg\":\"query\",\"point\":[' + '0,' * 100000)\nsys.stdout.flush()\ntime.sleep(60)",
        &["protocol line 2: longer than 4096 bytes"],
        &[],
    );
}

#[test]
fn total_output_is_capped() {
    // Every line is a valid query (padded with JSON whitespace to about 4000 bytes,
    // under the 4096-byte line cap), but 400 of them exceed the 1 MiB output cap.
    failing_child(
        "ready()\nfor _ in range(400):\n    send('{\"msg\":\"query\",' + ' ' * 4000 + '\"point\":[0.0,0.0]}')\n    answer()",
        &["more than 1048576 bytes on stdout and stderr together"],
        &[],
    );
}

#[test]
fn a_child_that_exits_early_is_named() {
    failing_child(
        "ready()\nsend('{\"msg\":\"query\",\"point\":[0.5,0.5]}')\nanswer()\nsys.exit(0)",
        // The prelude's grandchild inherited stdout: the message says what is known.
        &[
            "exited with status 0 after answer 1, before protocol line 3",
            "its output is still open in another process",
        ],
        &[],
    );
}

#[test]
fn a_child_that_exits_non_zero_is_named() {
    failing_child(
        "ready()\nsys.exit(7)",
        &["before protocol line 2", "exited with status 7"],
        &[],
    );
}

#[test]
fn garbage_is_refused_with_its_line_number() {
    failing_child(
        "ready()\nsend('{\"msg\":\"query\",\"point\":[0.0,0.0]}')\nanswer()\nsend('hello, naysayer')",
        &["protocol line 3: not valid JSON", "hello, naysayer"],
        &[],
    );
}

#[test]
fn a_partial_line_before_exit_is_named() {
    failing_child(
        "ready()\nsys.stdout.write('{\"msg\":\"query\",\"po')\nsys.stdout.flush()\nsys.exit(0)",
        &[
            "protocol line 2: incomplete (18 bytes without a newline)",
            "exited with status 0",
        ],
        &[],
    );
}

#[test]
fn nan_is_refused() {
    failing_child(
        "ready()\nsend('{\"msg\":\"query\",\"point\":[NaN,0.0]}')",
        &["protocol line 2: a non-finite number"],
        &[],
    );
}

#[test]
fn infinity_is_refused() {
    failing_child(
        "ready()\nsend('{\"msg\":\"output\",\"point\":[0.0,Infinity]}')",
        &["protocol line 2: a non-finite number"],
        &[],
    );
}

#[test]
fn a_number_beyond_f64_is_refused() {
    failing_child(
        "ready()\nsend('{\"msg\":\"query\",\"point\":[1e999,0.0]}')",
        &["protocol line 2: a number out of the f64 range"],
        &[],
    );
}

#[test]
fn a_point_of_the_wrong_length_is_refused() {
    failing_child(
        "ready()\nsend('{\"msg\":\"query\",\"point\":[0.0,0.0]}')\nanswer()\nsend('{\"msg\":\"query\",\"point\":[0.0,0.0,0.0]}')",
        &["protocol line 3: the query point has 3 coordinates, expected 2"],
        &[],
    );
}

#[test]
fn invalid_utf8_is_refused() {
    failing_child(
        "ready()\nsys.stdout.buffer.write(b'{\"msg\":\"empty\\xff\"}\\n')\nsys.stdout.flush()\ntime.sleep(60)",
        &["protocol line 2: not valid UTF-8"],
        &[],
    );
}

#[test]
fn a_stderr_flood_is_stopped_by_the_output_cap() {
    failing_child(
        "ready()\nwhile True:\n    sys.stderr.write('x' * 65536)",
        &["more than 1048576 bytes on stdout and stderr together"],
        &[],
    );
}

#[test]
fn a_child_that_ignores_the_header_is_named() {
    failing_child(
        "send('{\"msg\":\"query\",\"point\":[0.0,0.0]}')\ntime.sleep(60)",
        &[
            "protocol line 1: expected",
            "got a query message (the program ignores the header)",
        ],
        &[],
    );
}

#[test]
fn a_child_that_does_not_read_its_input_is_killed() {
    // It writes a ready line without reading the header, then sleeps: the header fits
    // the pipe, so the failure is caught by the ready rule or the time limit.
    failing_child(
        "send('{\"msg\":\"ready\",\"protocol\":1}')\ntime.sleep(60)",
        &["no reply within 1.5 s after the header", "protocol line 2"],
        &[],
    );
}

#[test]
fn a_child_that_gives_up_is_reported() {
    failing_child(
        "ready()\nsend('{\"msg\":\"fail\",\"reason\":\"out of ideas\"}')\ntime.sleep(60)",
        &["protocol line 2: the program gave up: out of ideas"],
        &[],
    );
}

#[test]
fn a_missing_program_is_a_method_failure_with_a_transcript() {
    let dir = TempDir::new().unwrap();
    let out = run(
        dir.path(),
        &[
            "play",
            "-t",
            "game.jsonl",
            "--exec",
            "--",
            "./no-such-program-here",
        ],
    );
    assert_eq!(out.status.code(), Some(3));
    assert!(text(&out.stderr).contains("cannot start the program"));
    let check = run(dir.path(), &["check", "game.jsonl"]);
    assert_eq!(check.status.code(), Some(0), "{}", text(&check.stdout));
}

#[test]
fn exec_and_a_command_go_together() {
    let dir = TempDir::new().unwrap();
    let out = run(dir.path(), &["play", "--", "python3", "x.py"]);
    assert_eq!(out.status.code(), Some(2), "{}", text(&out.stderr));
    assert!(text(&out.stderr).contains("needs --exec"));
    let out = run(dir.path(), &["play", "--exec"]);
    assert_eq!(out.status.code(), Some(2), "{}", text(&out.stderr));
}

#[test]
fn the_transcript_is_flushed_after_every_record() {
    // The child looks at the transcript on disk after its second answer: the header and
    // both query records must already be there, although the game is not over.
    let Some(python) = python() else { return };
    let dir = TempDir::new().unwrap();
    let script = dir.path().join("peek.py");
    std::fs::write(
        &script,
        format!(
            "{PRELUDE}\nready()\nfor p in ([0.5, 0.5], [0.25, 0.25]):\n    \
             send('{{\"msg\":\"query\",\"point\":[%r,%r]}}' % tuple(p))\n    answer()\n\
             lines = open(sys.argv[2]).read().count('\\n')\n\
             open(sys.argv[3], 'w').write(str(lines))\nsend('{{\"msg\":\"empty\"}}')\n"
        ),
    )
    .unwrap();
    let out = run(
        dir.path(),
        &[
            "play",
            "-d",
            "2",
            "-t",
            "game.jsonl",
            "--exec",
            "--",
            python,
            script.to_str().unwrap(),
            "pids.txt",
            "game.jsonl",
            "seen.txt",
        ],
    );
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let seen = std::fs::read_to_string(dir.path().join("seen.txt")).unwrap();
    assert_eq!(seen, "3", "header and two query records on disk mid-game");
}

/// The transcript's lines with the header's method name blanked.
fn without_method_name(path: &Path) -> Vec<String> {
    let text = std::fs::read_to_string(path).unwrap();
    text.lines()
        .enumerate()
        .map(|(i, line)| {
            if i > 0 {
                return line.to_string();
            }
            let mut value: serde_json::Value = serde_json::from_str(line).unwrap();
            value["data"]["method"] = serde_json::Value::Null;
            value.to_string()
        })
        .collect()
}

/// Plays `builtin` in-process and `command` through the protocol on the same class
/// arguments; both must verify, and the transcripts must agree except for the method
/// name. Returns the number of records.
fn same_transcript(class_args: &[&str], builtin: &str, command: &[&str]) -> usize {
    let dir = TempDir::new().unwrap();
    let mut args = vec!["play"];
    args.extend_from_slice(class_args);
    let mut inproc = args.clone();
    inproc.extend_from_slice(&["-m", builtin, "-t", "in.jsonl"]);
    let out = run(dir.path(), &inproc);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let mut external = args.clone();
    external.extend_from_slice(&["-t", "ex.jsonl", "--exec", "--"]);
    external.extend_from_slice(command);
    let out = run(dir.path(), &external);
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}{}",
        text(&out.stdout),
        text(&out.stderr)
    );
    assert!(text(&out.stdout).contains("certificate valid"));
    let check = run(dir.path(), &["check", "ex.jsonl"]);
    assert_eq!(check.status.code(), Some(0), "{}", text(&check.stdout));
    let a = without_method_name(&dir.path().join("in.jsonl"));
    let b = without_method_name(&dir.path().join("ex.jsonl"));
    assert_eq!(a, b, "{builtin} in-process and through the protocol differ");
    let header = std::fs::read_to_string(dir.path().join("ex.jsonl")).unwrap();
    assert!(header.contains("\"method\":\"external: "));
    a.len()
}

#[test]
fn python_bisection_plays_exactly_like_midpoint() {
    let Some(python) = python() else { return };
    let script = examples_python().join("bisection.py");
    // d = 3, rho = 1e-3: k = 9, d k + 1 = 28 queries (docs/theory.md §1.1, by hand), so 30
    // records with the header and the final record.
    let records = same_transcript(
        &["-d", "3", "--rho", "1e-3"],
        "midpoint",
        &[python, script.to_str().unwrap()],
    );
    assert_eq!(records, 30);
    // Under the nonempty promise, and at another box, too.
    same_transcript(
        &[
            "-d",
            "2",
            "--rho",
            "1e-2",
            "--half-width",
            "3",
            "--nonempty",
        ],
        "midpoint",
        &[python, script.to_str().unwrap()],
    );
}

#[test]
fn python_subgradient_plays_exactly_like_the_builtin() {
    let Some(python) = python() else { return };
    let script = examples_python().join("subgradient.py");
    // d = 2, R = L = 1, eps = 0.2: N = ceil((sqrt 2 / 0.2)^2) = 50 queries (2 / eps^2 is a
    // hair below 50 for the double 0.2), so 52 records.
    let records = same_transcript(
        &["--class", "first-order", "-d", "2", "--eps", "0.2"],
        "subgradient",
        &[python, script.to_str().unwrap()],
    );
    assert_eq!(records, 52);
    // The l1 class: L' = L sqrt(3), N = ceil(3 * 3 / 0.4^2) = ceil(56.25) = 57.
    let records = same_transcript(
        &[
            "--class",
            "first-order",
            "-d",
            "3",
            "--eps",
            "0.4",
            "--norm",
            "l1",
        ],
        "subgradient",
        &[python, script.to_str().unwrap()],
    );
    assert_eq!(records, 59);
    same_transcript(
        &["--class", "first-order", "-d", "3", "--eps", "0.3"],
        "subgradient-decaying",
        &[python, script.to_str().unwrap(), "--decaying"],
    );
}

/// Plays a large-scale demonstration (docs/theory.md §3) in-process with `builtin` and
/// through the protocol with `command`: the transcripts (answers as plain f64 arrays,
/// the completed witness in the final record) agree except for the method name, the
/// judge finds the gap at least the lower curve, and `check` refuses the file (a
/// demonstration is not a certificate).
fn same_demonstration(class_args: &[&str], builtin: &str, command: &[&str]) -> usize {
    let dir = TempDir::new().unwrap();
    let mut args = vec!["play", "--class", "large-scale"];
    args.extend_from_slice(class_args);
    let mut inproc = args.clone();
    inproc.extend_from_slice(&["-m", builtin, "-t", "in.jsonl"]);
    let out = run(dir.path(), &inproc);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let mut external = args.clone();
    external.extend_from_slice(&["-t", "ex.jsonl", "--exec", "--"]);
    external.extend_from_slice(command);
    let out = run(dir.path(), &external);
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}{}",
        text(&out.stdout),
        text(&out.stderr)
    );
    assert!(
        text(&out.stdout).contains("the gap is at least the lower curve"),
        "{}",
        text(&out.stdout)
    );
    let check = run(dir.path(), &["check", "ex.jsonl"]);
    assert_ne!(
        check.status.code(),
        Some(0),
        "check must refuse a demonstration"
    );
    let said = format!("{}{}", text(&check.stdout), text(&check.stderr));
    assert!(said.contains("not a certificate"), "{said}");
    let a = without_method_name(&dir.path().join("in.jsonl"));
    let b = without_method_name(&dir.path().join("ex.jsonl"));
    assert_eq!(a, b, "{builtin} in-process and through the protocol differ");
    a.len()
}

#[test]
fn python_gradient_descent_plays_the_large_scale_classes_like_the_builtins() {
    let Some(python) = python() else { return };
    let script = examples_python().join("gradient_descent.py");
    let script = script.to_str().unwrap();
    // T = 12 queries: 14 records with the header and the final record.
    let records = same_demonstration(
        &["--kind", "smooth", "-d", "40", "--horizon", "12"],
        "gradient",
        &[python, script],
    );
    assert_eq!(records, 14);
    same_demonstration(
        &["--kind", "nonsmooth", "-d", "30", "--horizon", "10"],
        "unconstrained-subgradient",
        &[python, script],
    );
    same_demonstration(
        &[
            "--kind",
            "strongly-convex",
            "-d",
            "50",
            "--horizon",
            "8",
            "--smoothness",
            "10",
            "--strong-convexity",
            "0.5",
            "-a",
            "strongly-convex-chain",
        ],
        "gradient",
        &[python, script],
    );
}

#[test]
fn a_compiled_child_plays_every_class_like_the_builtin() {
    let exe = protocol_method();
    let exe = exe.to_str().unwrap();
    same_transcript(
        &["-d", "4", "--rho", "1e-3"],
        "midpoint",
        &[exe, "midpoint"],
    );
    same_transcript(
        &["-d", "3", "--rho", "1e-2"],
        "ellipsoid",
        &[exe, "ellipsoid"],
    );
    same_transcript(
        &["--class", "first-order", "-d", "2", "--eps", "1e-2"],
        "kelley",
        &[exe, "kelley"],
    );
    same_transcript(
        &["--class", "lattice", "--int-dim", "3", "-a", "corner"],
        "enumerate",
        &[exe, "enumerate"],
    );
    same_transcript(
        &[
            "--class",
            "lattice",
            "--int-dim",
            "2",
            "--cont-dim",
            "1",
            "--rho",
            "0.1",
            "-a",
            "mixed-corner",
        ],
        "fibre-bisection",
        &[exe, "fibre-bisection"],
    );
}

/// A scenario with an external method; line numbers below count from 1.
const EXTERNAL_SCENARIO: &str = r#"name = "external"
description = "Midpoint in-process and as a Python program."
[class]
family = "feasibility"
dims = [1, 2]
half_width = 1.0
rho = [1e-2]
[adversary]
name = "halving"
[play]
methods = ["midpoint", "py-bisection"]
seeds = [0, 1]
budget = 1000
transcripts = true
[external.py-bisection]
command = ["python3", "PATH"]
answer_timeout = 20.0
"#;

fn external_scenario() -> String {
    let script = examples_python().join("bisection.py");
    EXTERNAL_SCENARIO.replace("PATH", script.to_str().unwrap())
}

#[test]
fn scenarios_name_external_methods() {
    use naysayer::scenario::Scenario;
    let text = external_scenario();
    let scenario = Scenario::parse(&text, Path::new("external.toml")).unwrap();
    assert_eq!(scenario.external.len(), 1);
    let entry = &scenario.external[0];
    assert_eq!(entry.name, "py-bisection");
    assert_eq!(entry.command[0], "python3");
    assert!(entry.deterministic);
    assert_eq!(entry.answer_timeout, 20.0);
    // Two dimensions, two deterministic methods, the first seed only: four games.
    let games: Vec<_> = scenario.games().collect();
    assert_eq!(games.len(), 4);
    assert_eq!(games[1].method, "py-bisection");
}

#[test]
fn bad_external_entries_name_line_and_column() {
    use naysayer::scenario::Scenario;
    use naysayer::Error;
    let script = examples_python().join("bisection.py");
    let base = EXTERNAL_SCENARIO;
    // (what, text to replace, replacement, line, column, word)
    let cases: &[(&str, &str, &str, usize, usize, &str)] = &[
        (
            "defined but not played",
            "methods = [\"midpoint\", \"py-bisection\"]",
            "methods = [\"midpoint\"]",
            16,
            11,
            "not listed in play.methods",
        ),
        (
            "empty command",
            "[\"python3\", \"PATH\"]",
            "[]",
            16,
            11,
            "command is empty",
        ),
        (
            "unknown key",
            "answer_timeout = 20.0",
            "answer_limit = 20.0",
            17,
            1,
            "unknown field",
        ),
        (
            "bad time limit",
            "answer_timeout = 20.0",
            "answer_timeout = -1.0",
            17,
            18,
            "answer_timeout",
        ),
        (
            "clash with a built-in",
            "[external.py-bisection]",
            "[external.ellipsoid]",
            16,
            11,
            "built-in",
        ),
    ];
    for (what, from, to, line, column, word) in cases {
        let text = base.replace(from, to);
        assert_ne!(text, base, "{what}: nothing replaced");
        let text = text.replace("PATH", script.to_str().unwrap());
        let error = Scenario::parse(&text, Path::new("bad.toml")).unwrap_err();
        let message = error.to_string();
        let Error::Scenario {
            line: l,
            column: c,
            reason,
            ..
        } = &error
        else {
            panic!("{what}: {message}");
        };
        assert_eq!((*l, *c), (*line, *column), "{what}: {message}");
        assert!(reason.contains(word), "{what}: {message}");
    }
}

#[test]
fn a_sweep_plays_an_external_method_like_the_builtin() {
    let Some(_) = python() else { return };
    let dir = TempDir::new().unwrap();
    std::fs::write(dir.path().join("external.toml"), external_scenario()).unwrap();
    let out = run(
        dir.path(),
        &["sweep", "external.toml", "--jobs", "2", "--no-charts"],
    );
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}{}",
        text(&out.stdout),
        text(&out.stderr)
    );
    let csv = std::fs::read_to_string(dir.path().join("results/external/games.csv")).unwrap();
    let rows: Vec<Vec<String>> = csv.lines().skip(1).map(naysayer::csv::split).collect();
    assert_eq!(rows.len(), 4, "{csv}");
    let col = |name: &str| {
        naysayer::family::boxes::COLUMNS
            .iter()
            .position(|c| *c == name)
            .unwrap()
    };
    for pair in rows.chunks(2) {
        assert_eq!(pair[0][col("method")], "midpoint");
        assert_eq!(pair[1][col("method")], "py-bisection");
        for name in [
            "queries_used",
            "certified_lower_bound",
            "outcome",
            "verified",
        ] {
            assert_eq!(pair[0][col(name)], pair[1][col(name)], "{name}: {csv}");
        }
    }
    // Transcripts of the two methods agree apart from the method name.
    let transcripts = dir.path().join("results/external/transcripts");
    assert_eq!(
        without_method_name(&transcripts.join("game-0.jsonl")),
        without_method_name(&transcripts.join("game-1.jsonl"))
    );
}
