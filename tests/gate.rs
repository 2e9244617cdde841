//! The regression gate (issue 8): expectation files for `play` and `sweep`, the drift
//! exit code 5 and its message naming the game and both numbers.
//!
//! Expected counts follow docs/theory.md §1.1: midpoint against halving meets d*k + 1 exactly;
//! d = 3, rho = 1e-3 gives k = 9 (2^-9 > 1e-3 > 2^-10), so 28 queries (the same figure
//! as tests/cli.rs), and d = 1, 2 with rho = 1e-2 give k = 6, so 7 and 13.

use std::path::Path;
use std::process::{Command, Output};

use naysayer::class::{Class, FeasibilityClass, Promise};
use naysayer::cli::EXIT_DRIFT;
use naysayer::error::Error;
use naysayer::expect::{Expectations, GameResult};
use naysayer::method::{self, Method};
use naysayer::oracle::{Answer, Output as MethodOutput, Step};
use naysayer::runner::{self, GameSpec};
use tempfile::TempDir;

const BIN: &str = env!("CARGO_BIN_EXE_naysayer");

fn run_in(dir: &Path, args: &[&str]) -> Output {
    Command::new(BIN)
        .current_dir(dir)
        .args(args)
        .output()
        .unwrap()
}

fn stderr(out: &Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

/// A test-only change of a method: it plays `inner` but gives up ("empty") one query
/// earlier than `inner` would stop.
struct OneQueryShort {
    inner: Box<dyn Method + Send>,
    stop_after: u64,
    asked: u64,
}

impl Method for OneQueryShort {
    fn name(&self) -> &str {
        self.inner.name()
    }
    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        if self.asked == self.stop_after {
            return Ok(Step::Output(MethodOutput::Empty));
        }
        self.asked += 1;
        self.inner.next(query)
    }
    fn observe(&mut self, query: &[f64], answer: &Answer) -> Result<(), Error> {
        self.inner.observe(query, answer)
    }
}

const PINNED: &str = r#"
[[game]]
method = "midpoint"
adversary = "halving"
dim = 3
accuracy = 1e-3
queries_used = 28
certified_lower_bound = { min = 28 }
"#;

#[test]
fn a_method_one_query_short_of_its_expectation_fails_the_gate() {
    let class =
        Class::Feasibility(FeasibilityClass::new(3, 1.0, 1e-3, Promise::MayBeEmpty).unwrap());
    let spec = GameSpec {
        class: class.clone(),
        adversary: "halving".into(),
        method: "midpoint".into(),
        seed: 0,
        budget: 1000,
        transcript: None,
    };
    let expectations = Expectations::parse(PINNED, Path::new("midpoint.expect.toml")).unwrap();

    // The unchanged method meets its expectation.
    let report = runner::run(&spec).unwrap();
    let result = GameResult::from_certificate(&spec, &report);
    assert_eq!(result.get("queries_used"), "28");
    assert!(expectations.check(&[result], true).is_empty());

    // The changed method stops after 27 queries.
    let mut short = OneQueryShort {
        inner: method::build("midpoint", &class, 0).unwrap(),
        stop_after: 27,
        asked: 0,
    };
    let report = runner::run_with(&spec, &mut short, &mut []).unwrap();
    let result = GameResult::from_certificate(&spec, &report);
    assert_eq!(result.get("queries_used"), "27");
    let drifts = expectations.check(&[result], true);
    let text: Vec<String> = drifts.iter().map(|d| d.to_string()).collect();
    assert_eq!(
        text,
        [
            "midpoint.expect.toml:2: game (method midpoint against halving, d = 3, accuracy \
          0.001, seed 0): queries used 27, expected exactly 28"
        ]
    );
    // The certified lower bound still holds: the witnesses agree with all 27 answers, and
    // the early "empty" is refuted by the ball witness.
    let verdict = report.verdict.as_ref().unwrap();
    assert_eq!(verdict.certified_lower_bound(), Some(28));
    assert!(matches!(
        verdict.outcome,
        naysayer::certificate::Outcome::EmptyRefuted { .. }
    ));
}

#[test]
fn play_exits_with_the_drift_code_and_names_the_game_and_both_numbers() {
    let dir = TempDir::new().unwrap();
    let args = ["play", "-d", "3", "--rho", "1e-3", "--expect", "e.toml"];
    std::fs::write(dir.path().join("e.toml"), PINNED).unwrap();
    let out = run_in(dir.path(), &args);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    assert!(String::from_utf8_lossy(&out.stdout).contains("expectations"));

    // The expectation is one query above what the method needs.
    std::fs::write(
        dir.path().join("e.toml"),
        PINNED.replace("queries_used = 28", "queries_used = 29"),
    )
    .unwrap();
    let out = run_in(dir.path(), &args);
    assert_eq!(out.status.code(), Some(i32::from(EXIT_DRIFT)));
    assert_eq!(EXIT_DRIFT, 5);
    let err = stderr(&out);
    assert!(
        err.contains("drift: e.toml:2: game (method midpoint against halving, d = 3")
            && err.contains("queries used 28, expected exactly 29"),
        "{err}"
    );
}

#[test]
fn a_bad_expectation_file_is_an_input_error_naming_line_and_column() {
    let dir = TempDir::new().unwrap();
    std::fs::write(
        dir.path().join("e.toml"),
        "[[game]]\nmethod = \"midpoint\"\nqueries = 3\n",
    )
    .unwrap();
    let out = run_in(dir.path(), &["play", "--expect", "e.toml"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("e.toml:3:1"), "{}", stderr(&out));
    std::fs::write(
        dir.path().join("e.toml"),
        "[[game]]\nmethod = \"midpoint\"\n",
    )
    .unwrap();
    let out = run_in(dir.path(), &["play", "--expect", "e.toml"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("must pin"), "{}", stderr(&out));
}

const SCENARIO: &str = r#"
name = "gated"
description = "Midpoint against halving, pinned by an expectation file."
[class]
family = "feasibility"
dims = [1, 2]
half_width = 1.0
rho = [1e-2]
[adversary]
name = "halving"
[play]
methods = ["midpoint"]
seeds = [0]
budget = 1000
"#;

#[test]
fn sweep_checks_every_game_and_exits_with_the_drift_code() {
    let dir = TempDir::new().unwrap();
    std::fs::write(dir.path().join("gated.toml"), SCENARIO).unwrap();
    let expect = |text: &str| std::fs::write(dir.path().join("gated.expect.toml"), text).unwrap();
    let sweep = |dir: &Path| {
        run_in(
            dir,
            &[
                "sweep",
                "gated.toml",
                "--jobs",
                "1",
                "--no-charts",
                "--expect",
                "gated.expect.toml",
            ],
        )
    };
    expect(
        "[[game]]\nscenario = \"gated\"\ndim = 1\nqueries_used = 7\n\n\
         [[game]]\ndim = 2\nqueries_used = { min = 13, max = 13 }\ncertified_lower_bound = 13\n",
    );
    let out = sweep(dir.path());
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));

    // d = 2 needs 13; an expectation of 14 drifts (resumed games are checked too).
    expect("[[game]]\ndim = 2\nqueries_used = { exact = 14 }\n");
    let out = sweep(dir.path());
    assert_eq!(out.status.code(), Some(5), "{}", stderr(&out));
    let err = stderr(&out);
    assert!(
        err.contains("game (scenario gated, method midpoint against halving, d = 2, accuracy 0.01, seed 0): queries used 13, expected exactly 14"),
        "{err}"
    );

    // A table that selects no game is a drift: the game went missing.
    expect("[[game]]\ndim = 4\nqueries_used = { min = 1 }\n");
    let out = sweep(dir.path());
    assert_eq!(out.status.code(), Some(5));
    assert!(stderr(&out).contains("selects no game"), "{}", stderr(&out));
}

#[test]
fn the_committed_halving_gallery_meets_its_committed_expectations() {
    // Resumes the committed results (nothing is replayed) and checks the gallery's own
    // expectation file against every row.
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let dir = TempDir::new().unwrap();
    let out = dir.path().join("halving");
    std::fs::create_dir_all(&out).unwrap();
    for file in ["games.csv", "scenario.toml"] {
        std::fs::copy(root.join("results/halving").join(file), out.join(file)).unwrap();
    }
    let result = Command::new(BIN)
        .current_dir(root)
        .args([
            "sweep",
            "adversaries/halving.toml",
            "--no-charts",
            "--jobs",
            "1",
            "--out",
        ])
        .arg(dir.path())
        .args(["--expect", "adversaries/expectations/halving.toml"])
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&result.stdout);
    assert_eq!(result.status.code(), Some(0), "{text}{}", stderr(&result));
    assert!(text.contains("0 played"), "{text}");
    assert!(text.contains("held (5 tables)"), "{text}");
}
