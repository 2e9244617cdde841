//! The Python package under `python/` (`naysayer_client`), run from source
//! (`PYTHONPATH=python/src`, nothing installed globally): its own unit tests, an install
//! with pip into a temporary folder, and real games through this binary played with its
//! `play()`, whose numbers must be what `naysayer check` and the library's verifier find
//! in the transcript.
//!
//! Python 3.9 or later is required: without it these tests fail with an install message,
//! unless NAYSAYER_SKIP_PYTHON_TESTS=1, which skips them with a notice. The scipy example
//! is skipped with a notice when scipy is not installed (it exits with status 77).

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use naysayer::certificate::{verify_file, Verdict};
use naysayer::family::boxes::outcome_name;
use serde_json::Value;
use tempfile::TempDir;

const BIN: &str = env!("CARGO_BIN_EXE_naysayer");

/// The status with which `examples/python/scipy_minimize.py` says scipy is missing.
const EXIT_NO_SCIPY: i32 = 77;

/// `python3`, checked to be 3.9 or later; `None` (with a notice) only when
/// NAYSAYER_SKIP_PYTHON_TESTS=1, else a failure that says what to install.
fn python3() -> Option<&'static str> {
    let recent = Command::new("python3")
        .args([
            "-c",
            "import sys; sys.exit(0 if sys.version_info >= (3, 9) else 1)",
        ])
        .output()
        .map(|o| o.status.success())
        .unwrap_or(false);
    if recent {
        return Some("python3");
    }
    if std::env::var("NAYSAYER_SKIP_PYTHON_TESTS").is_ok_and(|v| v == "1") {
        eprintln!(
            "SKIPPED: python3 (3.9 or later) is not installed and NAYSAYER_SKIP_PYTHON_TESTS=1; \
             the Python package is not tested"
        );
        return None;
    }
    panic!(
        "python3 (3.9 or later) is needed by the Python package tests: install it (for \
         example `apt-get install python3`), or set NAYSAYER_SKIP_PYTHON_TESTS=1 to skip them"
    );
}

fn repo() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// `python3 ARGS` with the package from source and this binary; no bytecode is written
/// into the source tree.
fn python(py: &str, dir: &Path, args: &[&str]) -> Output {
    Command::new(py)
        .current_dir(dir)
        .args(args)
        .env("PYTHONPATH", repo().join("python/src"))
        .env("NAYSAYER_BIN", BIN)
        .env("PYTHONDONTWRITEBYTECODE", "1")
        .output()
        .unwrap()
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

fn example(name: &str) -> String {
    repo()
        .join("examples/python")
        .join(name)
        .to_str()
        .unwrap()
        .to_string()
}

/// Plays each game with `naysayer_client.play` and returns what the Python caller got
/// (the `GameResult` fields, without `raw`, `command` and `stderr`), one per game.
/// `games` is a JSON list of `{"method": argv, "kwargs": {...}}`.
fn play_in_python(py: &str, dir: &Path, games: &Value) -> Vec<Value> {
    const DRIVER: &str = r#"
import dataclasses, json, sys
from naysayer_client import play
for game in json.loads(sys.argv[1]):
    result = play(game["method"], **game["kwargs"])
    if result.method_failure:
        print(result.stderr, file=sys.stderr)
    fields = dataclasses.asdict(result)
    for key in ("raw", "command", "stderr"):
        del fields[key]
    print(json.dumps(fields))
"#;
    let out = python(py, dir, &["-c", DRIVER, &games.to_string()]);
    assert!(
        out.status.success(),
        "the driver failed: {}{}",
        text(&out.stdout),
        text(&out.stderr)
    );
    let results: Vec<Value> = text(&out.stdout)
        .lines()
        .map(|line| serde_json::from_str(line).unwrap())
        .collect();
    assert_eq!(results.len(), games.as_array().unwrap().len());
    results
}

/// The rest of the line of `naysayer check`'s output that starts with `label`.
fn check_field(text: &str, label: &str) -> String {
    text.lines()
        .find_map(|line| line.strip_prefix(label))
        .unwrap_or_else(|| panic!("no {label:?} in {text}"))
        .trim()
        .to_string()
}

/// Asserts that the Python result is what `naysayer check` prints and what the exact
/// verifier finds in the transcript; returns the verdict.
fn assert_matches_check(result: &Value) -> Verdict {
    let path = PathBuf::from(result["transcript"].as_str().expect("a transcript path"));
    assert!(path.is_absolute(), "{result}");
    let check = Command::new(BIN).arg("check").arg(&path).output().unwrap();
    let said = text(&check.stdout);
    assert_eq!(
        check.status.code(),
        Some(0),
        "{said}{}",
        text(&check.stderr)
    );
    assert!(said.starts_with("valid certificate"), "{said}");
    assert_eq!(result["verified"], true, "{result}");

    // queries used: `28`, or `> 5 (censored by the budget)`.
    let queries = check_field(&said, "queries used");
    let censored = queries.starts_with('>');
    let count: u64 = queries
        .trim_start_matches('>')
        .split_whitespace()
        .next()
        .unwrap()
        .parse()
        .unwrap();
    assert_eq!(result["queries_used"], count, "{result} vs {said}");
    assert_eq!(result["censored"], censored, "{result} vs {said}");
    // certified lower bound: `28 (witnesses agree ...)` or `none (...)`.
    let bound = check_field(&said, "certified lower bound");
    let bound = bound.split_whitespace().next().unwrap();
    match bound {
        "none" => assert_eq!(result["certified_lower_bound"], Value::Null, "{result}"),
        n => assert_eq!(result["certified_lower_bound"], n.parse::<u64>().unwrap()),
    }

    // The library's verifier on the same file: every number, exactly.
    let verdict = verify_file(&path).unwrap();
    assert_eq!(result["queries_used"], verdict.queries_used);
    assert_eq!(result["censored"], verdict.censored);
    assert_eq!(
        result["certified_lower_bound"],
        serde_json::json!(verdict.certified_lower_bound())
    );
    assert_eq!(result["outcome"], outcome_name(&verdict.outcome));
    assert_eq!(
        result["certified_uncertainty"],
        serde_json::json!(verdict.certified_uncertainty),
        "{result}"
    );
    assert_eq!(result["transcript"], path.to_str().unwrap());
    verdict
}

#[test]
fn the_packages_unit_tests_pass_with_nothing_skipped() {
    let Some(py) = python3() else { return };
    let out = python(
        py,
        repo(),
        &["-m", "unittest", "discover", "-s", "python/tests", "-v"],
    );
    let report = text(&out.stderr);
    assert!(out.status.success(), "{}{report}", text(&out.stdout));
    // The games in test_game.py are skipped without a binary; here there is one.
    assert!(!report.contains("skipped"), "{report}");
    let ran: usize = report
        .lines()
        .find_map(|l| l.strip_prefix("Ran "))
        .and_then(|l| l.split_whitespace().next())
        .and_then(|n| n.parse().ok())
        .unwrap_or_else(|| panic!("no test count in {report}"));
    assert!(ran >= 30, "only {ran} tests ran: {report}");
}

#[test]
fn pip_installs_the_package_into_a_folder() {
    let Some(py) = python3() else { return };
    let dir = TempDir::new().unwrap();
    // A copy of python/ (pyproject.toml, README.md, src/): pip builds in the source folder,
    // which must not get build output during the tests.
    let source = dir.path().join("python");
    copy_tree(&repo().join("python"), &source);
    // Offline when setuptools can build wheels by itself (setuptools >= 70.1, or the
    // `wheel` package beside it): the package has no dependencies. Otherwise pip's
    // isolated build fetches setuptools from the package index.
    let probe = Command::new(py)
        .args([
            "-c",
            "import importlib.util, setuptools\n\
             v = tuple(int(p) for p in setuptools.__version__.split('.')[:2])\n\
             print('offline' if v >= (70, 1) or importlib.util.find_spec('wheel') else 'isolated')",
        ])
        .output()
        .unwrap();
    let offline = text(&probe.stdout).trim() == "offline";
    let target = dir.path().join("site");
    let mut args = vec!["-m", "pip", "install", "--quiet", "--no-deps"];
    if offline {
        args.extend(["--no-build-isolation", "--no-index"]);
    } else {
        eprintln!(
            "note: setuptools cannot build wheels offline here (no `wheel` package); pip \
             fetches its build requirements from the package index"
        );
    }
    args.extend([
        "--target",
        target.to_str().unwrap(),
        source.to_str().unwrap(),
    ]);
    let out = Command::new(py)
        .current_dir(dir.path())
        .args(&args)
        .env("PIP_DISABLE_PIP_VERSION_CHECK", "1")
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "pip install {args:?} failed: {}{}",
        text(&out.stdout),
        text(&out.stderr)
    );
    assert!(target.join("naysayer_client/__init__.py").is_file());
    assert!(target.join("naysayer_client/game.py").is_file());

    // The installed copy plays a game: a method and a driver that import only it.
    let method = dir.path().join("halver.py");
    std::fs::write(
        &method,
        r#"import naysayer_client
from naysayer_client import EMPTY, main
assert "site" in naysayer_client.__file__, naysayer_client.__file__

class Halver:
    def __init__(self, game):
        self.lower, self.upper, self.rho = game.lower[0], game.upper[0], game.rho
    def ask(self):
        if self.upper - self.lower <= 2 * self.rho:
            return EMPTY
        return [0.5 * (self.lower + self.upper)]
    def tell(self, point, answer):
        if answer.sign == 1:
            self.upper = answer.offset

main(Halver)
"#,
    )
    .unwrap();
    let driver = r#"
import json, sys, naysayer_client
result = naysayer_client.play(sys.argv[1], dim=1, rho=0.25, transcript="game.jsonl")
print(json.dumps([naysayer_client.__file__, result.queries_used, result.certified_lower_bound,
                  result.outcome, result.verified, result.transcript]))
"#;
    let out = Command::new(py)
        .current_dir(dir.path())
        .args(["-c", driver, method.to_str().unwrap()])
        .env("PYTHONPATH", &target)
        .env("NAYSAYER_BIN", BIN)
        .env("PYTHONDONTWRITEBYTECODE", "1")
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", text(&out.stderr));
    let got: Value = serde_json::from_str(text(&out.stdout).trim()).unwrap();
    assert!(
        got[0]
            .as_str()
            .unwrap()
            .starts_with(target.to_str().unwrap()),
        "{got}"
    );
    // The README's exchange: d = 1, rho = 1/4, queries 0 and -1/2, then "empty"; the
    // halving adversary certifies k + 1 = 2 (k = 1: 2^-1 > 1/4 >= 2^-2; docs/theory.md
    // §1.1, by hand).
    assert_eq!(got[1], 2, "{got}");
    assert_eq!(got[2], 2, "{got}");
    assert_eq!(got[3], "output-stands");
    assert_eq!(got[4], true);
    assert_eq!(got[5], dir.path().join("game.jsonl").to_str().unwrap());
}

fn copy_tree(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).unwrap();
    for entry in std::fs::read_dir(from).unwrap() {
        let entry = entry.unwrap();
        let name = entry.file_name();
        let name = name.to_str().unwrap();
        if matches!(name, "build" | "__pycache__" | "tests") || name.ends_with(".egg-info") {
            continue;
        }
        let target = to.join(name);
        if entry.file_type().unwrap().is_dir() {
            copy_tree(&entry.path(), &target);
        } else {
            std::fs::copy(entry.path(), &target).unwrap();
        }
    }
}

#[test]
fn separation_games_played_from_python_verify_to_the_numbers_python_returns() {
    let Some(py) = python3() else { return };
    let dir = TempDir::new().unwrap();
    let t = |name: &str| dir.path().join(name).to_str().unwrap().to_string();
    let bisection = example("bisection.py");
    let games = serde_json::json!([
        {"method": [py, bisection], "kwargs": {"dim": 3, "rho": 1e-3, "transcript": t("a.jsonl")}},
        {"method": bisection, "kwargs": {"dim": 2, "rho": 1e-2, "half_width": 3, "nonempty": true,
                                         "transcript": t("b.jsonl")}},
        {"method": bisection, "kwargs": {"dim": 4, "rho": 1e-3, "budget": 7,
                                         "transcript": t("c.jsonl")}},
    ]);
    let results = play_in_python(py, dir.path(), &games);
    for result in &results {
        assert_matches_check(result);
        assert_eq!(result["family"], "feasibility");
        assert_eq!(result["adversary"], "halving");
        assert_eq!(result["exit_code"], 0, "{result}");
    }
    // d = 3, rho = 1e-3: k = 9 (2^-9 > 1e-3 > 2^-10), so bisection asks d k + 1 = 28 and
    // the halving adversary certifies 28 (docs/theory.md §1.1, by hand).
    assert_eq!(results[0]["queries_used"], 28);
    assert_eq!(results[0]["certified_lower_bound"], 28);
    assert_eq!(results[0]["outcome"], "output-stands");
    // R = 3, rho = 1e-2 under the nonempty promise: k = 8 (3 * 2^-8 > 1e-2 > 3 * 2^-9), so
    // the certified bound is d k = 16 (docs/theory.md §1.1, by hand); bisection asks one
    // more query than that, as the built-in midpoint does (17).
    assert_eq!(results[1]["certified_lower_bound"], 16);
    assert_eq!(results[1]["queries_used"], 17);
    // A budget of 7 ends the game after 7 queries; the program stops quietly.
    assert_eq!(results[2]["queries_used"], 7);
    assert_eq!(results[2]["censored"], true);
    assert_eq!(results[2]["outcome"], "budget-exhausted");
    assert_eq!(results[2]["method_failure"], Value::Null);
}

#[test]
fn first_order_games_played_from_python_verify_to_the_numbers_python_returns() {
    let Some(py) = python3() else { return };
    let dir = TempDir::new().unwrap();
    let t = |name: &str| dir.path().join(name).to_str().unwrap().to_string();
    let subgradient = example("subgradient.py");
    let games = serde_json::json!([
        {"method": subgradient, "kwargs": {"class_": "first-order", "dim": 2, "eps": 0.2,
                                           "transcript": t("a.jsonl")}},
        {"method": [py, subgradient, "--decaying"],
         "kwargs": {"class_": "first-order", "dim": 3, "eps": 0.3, "transcript": t("b.jsonl")}},
        {"method": subgradient, "kwargs": {"class_": "first-order", "dim": 2, "eps": 0.05,
                                           "budget": 12, "transcript": t("c.jsonl")}},
    ]);
    let results = play_in_python(py, dir.path(), &games);
    for result in &results {
        let verdict = assert_matches_check(result);
        assert_eq!(result["family"], "first-order");
        assert_eq!(result["adversary"], "slab-funnel");
        assert!(
            verdict.certified_uncertainty.is_some_and(|u| u > 0.0),
            "{result}"
        );
    }
    // d = 2, R = L = 1, eps = 0.2: the method plans N = ceil((L R sqrt(d) / eps)^2)
    // queries (Nesterov 2004, sec. 3.2.3, from memory), computed exactly: the f64 0.2 is
    // a little above 1/5, so (L R sqrt(d) / eps)^2 is a little below 50 and N = 50
    // (counted by hand; an f64 evaluation rounds it to 50.000000000000007, giving 51).
    assert_eq!(results[0]["queries_used"], 50);
    assert!(results[0]["certified_lower_bound"].as_u64().unwrap() >= 2);
    assert_eq!(results[2]["queries_used"], 12);
    assert_eq!(results[2]["censored"], true);
    assert_eq!(results[2]["method_failure"], Value::Null);
}

#[test]
fn the_scipy_example_plays_or_is_skipped_with_a_message() {
    let Some(py) = python3() else { return };
    let dir = TempDir::new().unwrap();
    let script = example("scipy_minimize.py");

    // Without scipy (a stand-in package that fails to import): the documented status 77.
    let fake = dir.path().join("no-scipy");
    std::fs::create_dir_all(fake.join("scipy")).unwrap();
    std::fs::write(
        fake.join("scipy/__init__.py"),
        "raise ImportError('scipy hidden by the test')\n",
    )
    .unwrap();
    let hidden = |args: &[&str]| {
        Command::new(py)
            .current_dir(dir.path())
            .args(args)
            .env("PYTHONPATH", &fake)
            .env("NAYSAYER_BIN", BIN)
            .env("PYTHONDONTWRITEBYTECODE", "1")
            .output()
            .unwrap()
    };
    let out = hidden(&[&script]);
    assert_eq!(
        out.status.code(),
        Some(EXIT_NO_SCIPY),
        "{}",
        text(&out.stderr)
    );
    assert!(
        text(&out.stderr).contains("scipy is not installed (pip install scipy)"),
        "{}",
        text(&out.stderr)
    );
    // Served to naysayer without scipy: the game fails, naming the reason.
    let out = Command::new(BIN)
        .current_dir(dir.path())
        .args(["play", "--class", "first-order", "--exec", "--"])
        .args([py, &script, "serve"])
        .env("PYTHONPATH", &fake)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(3));
    assert!(
        text(&out.stderr).contains("scipy is not installed"),
        "{}",
        text(&out.stderr)
    );

    // With scipy, if present.
    let out = python(py, dir.path(), &[&script]);
    if out.status.code() == Some(EXIT_NO_SCIPY) {
        eprintln!(
            "SKIPPED: scipy is not installed, so examples/python/scipy_minimize.py was not \
             played (pip install scipy to run it): {}",
            text(&out.stderr).trim()
        );
        return;
    }
    let said = text(&out.stdout);
    assert!(out.status.success(), "{said}{}", text(&out.stderr));
    for name in ["Nelder-Mead", "SLSQP"] {
        let line = said
            .lines()
            .find(|l| l.starts_with(name))
            .unwrap_or_else(|| panic!("no {name} line: {said}"));
        assert!(line.contains("verified True"), "{said}");
    }
    assert!(said.contains("scipy SLSQP: success="), "{said}");
    let t = |name: &str| dir.path().join(name).to_str().unwrap().to_string();
    let games = serde_json::json!([
        {"method": [py, script, "serve", "SLSQP"],
         "kwargs": {"class_": "first-order", "dim": 2, "eps": 0.05, "budget": 400,
                    "transcript": t("slsqp.jsonl")}},
        {"method": [py, script, "serve", "Nelder-Mead"],
         "kwargs": {"class_": "first-order", "dim": 3, "eps": 0.05, "budget": 60,
                    "transcript": t("nm.jsonl")}},
    ]);
    for result in play_in_python(py, dir.path(), &games) {
        assert_matches_check(&result);
        assert_eq!(result["method_failure"], Value::Null, "{result}");
    }
}

/// The ```python blocks of the README's section "Writing your method in Python".
fn readme_python_blocks() -> Vec<String> {
    let readme = std::fs::read_to_string(repo().join("README.md")).unwrap();
    let start = readme
        .find("## Writing your method in Python")
        .expect("the README has the section");
    let section = &readme[start..];
    let end = section[3..].find("\n## ").map_or(section.len(), |i| i + 3);
    section[..end]
        .split("```python\n")
        .skip(1)
        .map(|block| block.split("```").next().unwrap().to_string())
        .collect()
}

#[test]
fn the_readme_example_plays_as_shown() {
    let Some(py) = python3() else { return };
    let blocks = readme_python_blocks();
    assert_eq!(blocks.len(), 2, "the method and the play() call");
    assert!(blocks[0].lines().count() <= 16, "{}", blocks[0]);
    let dir = TempDir::new().unwrap();
    std::fs::write(dir.path().join("my_method.py"), &blocks[0]).unwrap();
    let out = python(py, dir.path(), &["-c", &blocks[1]]);
    let said = text(&out.stdout);
    assert!(out.status.success(), "{said}{}", text(&out.stderr));
    // queries_used certified_lower_bound outcome verified transcript
    let words: Vec<&str> = said.split_whitespace().collect();
    assert_eq!(words.len(), 5, "{said}");
    assert_eq!(words[0], "100", "the method asks 100 queries: {said}");
    assert_eq!(words[3], "True", "{said}");
    let path = dir.path().join("game.jsonl");
    assert_eq!(words[4], path.to_str().unwrap());
    let verdict = verify_file(&path).unwrap();
    assert_eq!(verdict.queries_used, 100);
    assert_eq!(
        words[1],
        verdict
            .certified_lower_bound()
            .map_or("None".to_string(), |b| b.to_string())
    );
    assert_eq!(words[2], outcome_name(&verdict.outcome));
}
