//! End-to-end tests of the `naysayer` binary, each run in its own temporary directory.
//!
//! Expected counts follow docs/theory.md §1.1: d*k + 1 (d*k under the nonempty promise), with
//! k = max{j >= 0 : R 2^-j > rho}, derived by hand below for each class used.

use std::path::Path;
use std::process::{Command, Output};

use naysayer::method::METHODS;
use tempfile::TempDir;

const BIN: &str = env!("CARGO_BIN_EXE_naysayer");

fn run_in(dir: &Path, args: &[&str]) -> Output {
    Command::new(BIN)
        .current_dir(dir)
        .args(args)
        .output()
        .unwrap()
}

fn stdout(out: &Output) -> String {
    String::from_utf8(out.stdout.clone()).expect("utf-8 stdout")
}

fn stderr(out: &Output) -> String {
    String::from_utf8(out.stderr.clone()).expect("utf-8 stderr")
}

/// The first whitespace-separated token after `label` on the line that starts with it.
fn field<'a>(text: &'a str, label: &str) -> Option<&'a str> {
    text.lines()
        .find_map(|line| line.strip_prefix(label))
        .and_then(|rest| rest.split_whitespace().next())
}

fn files_in(dir: &Path) -> Vec<String> {
    std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect()
}

#[test]
fn play_without_transcript_prints_the_counts_and_writes_nothing() {
    // d = 3, rho = 1e-3: k = 9 (2^-9 > 1e-3 > 2^-10), d*k + 1 = 28; R/rho = 1000 is not a
    // power of two, so midpoint stops at exactly 28.
    let dir = TempDir::new().unwrap();
    let out = run_in(dir.path(), &["play", "-d", "3", "--rho", "1e-3"]);
    let text = stdout(&out);
    assert_eq!(out.status.code(), Some(0), "{text}{}", stderr(&out));
    assert_eq!(field(&text, "queries used"), Some("28"), "{text}");
    assert_eq!(field(&text, "certified lower bound"), Some("28"), "{text}");
    assert!(text.contains("at least 28 queries"), "{text}");
    assert!(text.contains("certificate valid"), "{text}");
    assert!(!text.contains("transcript "), "{text}");
    assert!(
        files_in(dir.path()).is_empty(),
        "play wrote files without -t"
    );
}

#[test]
fn play_with_transcript_writes_a_file_that_check_accepts() {
    let dir = TempDir::new().unwrap();
    let out = run_in(
        dir.path(),
        &["play", "-d", "3", "--rho", "1e-3", "-t", "game.jsonl"],
    );
    let text = stdout(&out);
    assert_eq!(out.status.code(), Some(0), "{text}{}", stderr(&out));
    assert!(text.contains("game.jsonl"), "{text}");
    let written = std::fs::read_to_string(dir.path().join("game.jsonl")).unwrap();
    // Header, 28 queries, final record.
    assert_eq!(written.lines().count(), 30);
    let out = run_in(dir.path(), &["check", "game.jsonl"]);
    let text = stdout(&out);
    assert_eq!(out.status.code(), Some(0), "{text}{}", stderr(&out));
    assert!(text.contains("valid certificate"), "{text}");
    assert_eq!(field(&text, "certified lower bound"), Some("28"), "{text}");
    assert_eq!(field(&text, "queries used"), Some("28"), "{text}");
}

#[test]
fn play_with_a_seeded_method_and_the_long_transcript_flag() {
    let dir = TempDir::new().unwrap();
    let out = run_in(
        dir.path(),
        &[
            "play",
            "--method",
            "random",
            "--seed",
            "7",
            "-d",
            "2",
            "--rho",
            "0.01",
            "--transcript",
            "r.jsonl",
        ],
    );
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let header = std::fs::read_to_string(dir.path().join("r.jsonl")).unwrap();
    let header: serde_json::Value = serde_json::from_str(header.lines().next().unwrap()).unwrap();
    assert_eq!(header["data"]["method"], "random");
    assert_eq!(header["data"]["seed"], 7);
    assert_eq!(
        run_in(dir.path(), &["check", "r.jsonl"]).status.code(),
        Some(0)
    );
}

#[test]
fn play_nonempty_certifies_d_k() {
    // d = 2, rho = 0.01: k = 6 (2^-6 > 0.01 > 2^-7); the promise-feasible bound is d*k = 12.
    let dir = TempDir::new().unwrap();
    let out = run_in(
        dir.path(),
        &[
            "play",
            "-d",
            "2",
            "--rho",
            "0.01",
            "--nonempty",
            "-t",
            "n.jsonl",
        ],
    );
    let text = stdout(&out);
    assert_eq!(out.status.code(), Some(0), "{text}{}", stderr(&out));
    assert!(text.contains("promised"), "{text}");
    assert_eq!(field(&text, "certified lower bound"), Some("12"), "{text}");
    assert!(text.contains("at least 12 queries"), "{text}");
    let written = std::fs::read_to_string(dir.path().join("n.jsonl")).unwrap();
    let header: serde_json::Value = serde_json::from_str(written.lines().next().unwrap()).unwrap();
    assert_eq!(header["data"]["class"]["promise"], "nonempty");
}

#[test]
fn play_with_a_bad_rho_exits_2_naming_rho() {
    let dir = TempDir::new().unwrap();
    // Zero, negative, not below R = 1, NaN, infinite, subnormal, not a number.
    for rho in ["0", "-1", "1", "2", "NaN", "inf", "1e-320", "abc"] {
        let out = run_in(dir.path(), &["play", &format!("--rho={rho}")]);
        let err = stderr(&out);
        assert_eq!(out.status.code(), Some(2), "rho = {rho}: {err}");
        assert!(err.contains("rho"), "rho = {rho}: {err}");
        assert!(stdout(&out).is_empty(), "rho = {rho}: printed a result");
    }
    assert!(files_in(dir.path()).is_empty());
}

#[test]
fn play_with_an_unknown_method_or_adversary_exits_2() {
    let dir = TempDir::new().unwrap();
    let out = run_in(
        dir.path(),
        &["play", "-m", "no-such-method", "-t", "x.jsonl"],
    );
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("no-such-method"), "{err}");
    let out = run_in(
        dir.path(),
        &["play", "-a", "no-such-adversary", "-t", "y.jsonl"],
    );
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("no-such-adversary"), "{err}");
    assert!(
        files_in(dir.path()).is_empty(),
        "a transcript was left behind"
    );
}

#[test]
fn check_a_missing_file_exits_2_naming_the_path() {
    let dir = TempDir::new().unwrap();
    let missing = dir.path().join("nowhere").join("missing.jsonl");
    let out = Command::new(BIN)
        .arg("check")
        .arg(&missing)
        .output()
        .unwrap();
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains(&missing.display().to_string()), "{err}");
}

#[test]
fn bounds_prints_the_lower_bound_with_its_source() {
    let dir = TempDir::new().unwrap();
    // (d, rho, nonempty, expected lower bound): k = 9 for 1e-3, 19 for 1e-6
    // (2^-19 > 1e-6 > 2^-20), 5 for 1/64 (2^-5 > 2^-6 = rho).
    let cases = [
        ("3", "1e-3", false, 28),
        ("3", "1e-3", true, 27),
        ("8", "1e-6", false, 153),
        ("10", "0.015625", false, 51),
    ];
    for (d, rho, nonempty, expected) in cases {
        let mut args = vec!["bounds", "-d", d, "--rho", rho];
        if nonempty {
            args.push("--nonempty");
        }
        let out = run_in(dir.path(), &args);
        let text = stdout(&out);
        assert_eq!(out.status.code(), Some(0), "{text}{}", stderr(&out));
        assert_eq!(
            field(&text, "lower"),
            Some(expected.to_string().as_str()),
            "{args:?}: {text}"
        );
        assert!(text.contains("source"), "{text}");
    }
    let out = run_in(dir.path(), &["bounds", "--rho", "5"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("rho"));
}

#[test]
fn list_names_the_methods_and_adversaries() {
    let dir = TempDir::new().unwrap();
    let out = run_in(dir.path(), &["list"]);
    let text = stdout(&out);
    assert_eq!(out.status.code(), Some(0));
    for name in ["midpoint", "ellipsoid", "halving"] {
        assert!(text.contains(name), "{name} missing: {text}");
    }
    for info in METHODS {
        assert!(text.contains(info.name), "{} missing: {text}", info.name);
    }
}

#[test]
fn demo_table_shows_midpoint_at_the_bound() {
    // d = 8, R/rho = 1e6: k = 19, d*k + 1 = 8*19 + 1 = 153.
    let dir = TempDir::new().unwrap();
    let out = run_in(dir.path(), &["demo"]);
    let text = stdout(&out);
    assert_eq!(out.status.code(), Some(0), "{text}{}", stderr(&out));
    let row: Vec<&str> = text
        .lines()
        .find(|l| l.starts_with("midpoint"))
        .unwrap_or_else(|| panic!("no midpoint row: {text}"))
        .split_whitespace()
        .collect();
    // method, seed, queries used, certified lower bound, verified.
    assert_eq!(&row[..5], ["midpoint", "0", "153", "153", "yes"], "{text}");
    let class = naysayer::class::Class::Feasibility(
        naysayer::class::FeasibilityClass::new(8, 1.0, 1e-6, naysayer::class::Promise::MayBeEmpty)
            .unwrap(),
    );
    for info in METHODS {
        // Methods for other classes, and centroid (exact only in d <= 2), are absent.
        if naysayer::method::supports(info.name, &class).is_err() {
            continue;
        }
        assert!(
            text.lines().any(|l| l.starts_with(info.name)),
            "{} missing: {text}",
            info.name
        );
    }
    assert!(!text.contains("REJECTED"), "{text}");
    let results = dir.path().join("results").join("demo");
    assert!(results.join("games.csv").is_file(), "no games.csv: {text}");
    // A second run plays every game again (the demo never resumes: a fresh clone's
    // committed results must not turn the README's first command into a no-op), and
    // writes the report.
    let again = stdout(&run_in(dir.path(), &["demo"]));
    assert!(again.contains("280 games played"), "{again}");
    assert!(results.join("report.html").is_file(), "{again}");
}

#[test]
fn no_arguments_or_an_unknown_command_exits_2() {
    let dir = TempDir::new().unwrap();
    assert_eq!(run_in(dir.path(), &[]).status.code(), Some(2));
    assert_eq!(run_in(dir.path(), &["frobnicate"]).status.code(), Some(2));
}

/// `bounds --class lattice`: the lattice-halving lower bound floor(log2 |S|) + 1 (docs/theory.md
/// §4, derived) and the corner count 2^n, labelled as our construction, not a theorem.
/// {0..3}^3: |S| = 64, so floor(log2 64) + 1 = 7 (by hand).
#[test]
fn bounds_prints_lattice_lines_with_their_status() {
    let dir = TempDir::new().unwrap();
    let out = run_in(
        dir.path(),
        &[
            "bounds",
            "--class",
            "lattice",
            "--int-dim",
            "3",
            "--int-upper",
            "3",
        ],
    );
    let text = stdout(&out);
    assert_eq!(out.status.code(), Some(0), "{text}{}", stderr(&out));
    assert_eq!(field(&text, "lower"), Some("7"), "{text}");
    assert!(text.contains("corner construction"), "{text}");
    assert!(text.contains("not a theorem"), "{text}");
    assert!(text.contains("Oertel, Wagner & Weismantel"), "{text}");
}

#[test]
fn first_order_bad_input_exits_2_naming_the_flag() {
    let dir = TempDir::new().unwrap();
    // (flags, the flag the message must name, a word of the reason)
    let cases: [(&[&str], &str, &str); 7] = [
        (&["--eps=0"], "--eps", "positive"),
        (&["--eps=-1e-3"], "--eps", "positive"),
        (&["--eps=NaN"], "--eps", "positive"),
        (&["--eps=0.5"], "--eps", "L R / 2"),
        (&["--eps=0.3", "--lipschitz=0.5"], "--eps", "L R / 2"),
        (&["--lipschitz=0"], "--lipschitz", "positive"),
        (&["--lipschitz=inf"], "--lipschitz", "positive"),
    ];
    for command in ["play", "bounds"] {
        for (flags, flag, word) in cases {
            let mut args = vec![command, "--class", "first-order"];
            args.extend_from_slice(flags);
            let out = run_in(dir.path(), &args);
            let err = stderr(&out);
            assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
            assert!(err.contains(flag) && err.contains(word), "{args:?}: {err}");
            assert!(stdout(&out).is_empty(), "{args:?}: printed a result");
        }
    }
    // At eps >= L R / 2 the message says that the bound asks for no query.
    let out = run_in(dir.path(), &["play", "--class", "first-order", "--eps=0.7"]);
    assert!(stderr(&out).contains("no query"), "{}", stderr(&out));
    assert!(files_in(dir.path()).is_empty());
}

#[test]
fn first_order_play_and_bounds_print_the_slab_funnel_theorem() {
    let dir = TempDir::new().unwrap();
    // docs/theory.md §2.4, derived: d * ceil(log_7(L R / (2 eps))) = 2 * 7 = 14 at d = 2,
    // L = R = 1, eps = 1e-6 (500000 lies in (7^6, 7^7]).
    let out = run_in(
        dir.path(),
        &[
            "bounds",
            "--class",
            "first-order",
            "-d",
            "2",
            "--eps",
            "1e-6",
        ],
    );
    let text = stdout(&out);
    assert_eq!(out.status.code(), Some(0), "{text}");
    assert_eq!(field(&text, "lower"), Some("14"), "{text}");
    assert!(text.contains("docs/theory.md §2.4"), "{text}");
    assert!(text.contains("Nemirovski & Yudin"), "{text}");
    let out = run_in(
        dir.path(),
        &[
            "play",
            "--class",
            "first-order",
            "-m",
            "kelley",
            "-d",
            "2",
            "--eps",
            "1e-6",
        ],
    );
    let text = stdout(&out);
    assert_eq!(out.status.code(), Some(0), "{text}");
    assert_eq!(field(&text, "adversary"), Some("slab-funnel"), "{text}");
    let theory = text
        .lines()
        .find(|l| l.starts_with("theory"))
        .unwrap_or_default();
    assert!(
        theory.contains("at least 14 queries") && theory.contains("docs/theory.md §2.4"),
        "{text}"
    );
    let bound: u64 = field(&text, "certified lower bound")
        .and_then(|v| v.parse().ok())
        .unwrap();
    assert!(bound >= 14, "{text}");
    // `list` says that orthant leaks.
    let list = stdout(&run_in(dir.path(), &["list"]));
    let orthant = list
        .lines()
        .find(|l| l.trim_start().starts_with("orthant"))
        .unwrap();
    assert!(orthant.contains("leaks"), "{list}");
    assert!(list.contains("slab-funnel"), "{list}");
}

/// Each message of issue 17 (item 5) with its documented exit code.
#[test]
fn bad_input_gets_a_sentence_and_the_documented_exit_code() {
    let dir = TempDir::new().unwrap();
    let d = dir.path();
    // check of an empty or garbage file: bad input (2), not a rejected certificate (1).
    std::fs::write(d.join("empty.jsonl"), "").unwrap();
    std::fs::write(d.join("garbage.jsonl"), "hello\n").unwrap();
    for file in ["empty.jsonl", "garbage.jsonl"] {
        let out = run_in(d, &["check", file]);
        assert_eq!(out.status.code(), Some(2), "{file}: {}", stderr(&out));
        assert!(
            stderr(&out).contains("not a naysayer transcript"),
            "{}",
            stderr(&out)
        );
    }
    // A zero budget is refused by play as by scenarios and hunt.
    let out = run_in(d, &["play", "--budget", "0"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("--budget"), "{}", stderr(&out));
    // Negative numbers reach validation (no hint to use `--`, which starts a program).
    let out = run_in(d, &["play", "--rho", "-1e-4"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("rho = -0.0001"), "{}", stderr(&out));
    assert!(!stderr(&out).contains("'--"), "{}", stderr(&out));
    // A large-scale horizon of 0 is refused, not silently made 1.
    let out = run_in(d, &["bounds", "--class", "large-scale", "--horizon", "0"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("horizon T = 0"), "{}", stderr(&out));
    // An expectation of the wrong type says what was expected, where.
    std::fs::write(d.join("e.toml"), "[[game]]\nqueries_used = \"many\"\n").unwrap();
    let out = run_in(d, &["play", "--expect", "e.toml"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("e.toml:2:16") && stderr(&out).contains("expected a number"),
        "{}",
        stderr(&out)
    );
    // A scenario whose adversary plays another family: line and column, no folder made.
    let scenario = "name = \"mixed\"\ndescription = \"x\"\n[class]\nfamily = \"feasibility\"\n\
                    dims = [2]\nhalf_width = 1.0\nrho = [1e-2]\n[adversary]\nname = \"corner\"\n\
                    [play]\nmethods = [\"midpoint\"]\nseeds = [0]\nbudget = 100\n";
    std::fs::write(d.join("mixed.toml"), scenario).unwrap();
    let out = run_in(d, &["sweep", "mixed.toml"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("mixed.toml:9:8") && stderr(&out).contains("lattice family"),
        "{}",
        stderr(&out)
    );
    assert!(!d.join("results").exists());
    // An enumeration over a box beyond its point cap is refused when the scenario is read.
    let lattice = "name = \"huge\"\ndescription = \"x\"\n[class]\nfamily = \"lattice\"\n\
                   dims = [30]\nhalf_width = 1.0\n[adversary]\nname = \"corner\"\n[play]\n\
                   methods = [\"enumerate\"]\nseeds = [0]\nbudget = 100\n";
    std::fs::write(d.join("huge.toml"), lattice).unwrap();
    let out = run_in(d, &["sweep", "huge.toml"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("huge.toml:10:12") && stderr(&out).contains("lattice points"),
        "{}",
        stderr(&out)
    );
    // An I/O error prints its cause once.
    let out = run_in(d, &["check", "missing.jsonl"]);
    assert_eq!(
        stderr(&out).matches("No such file").count(),
        1,
        "{}",
        stderr(&out)
    );
}

/// `play --json`: one JSON object on stdout.
fn play_json(dir: &Path, args: &[&str]) -> (Option<i32>, serde_json::Value) {
    let mut all = vec!["play", "--json"];
    all.extend_from_slice(args);
    let out = run_in(dir, &all);
    let text = stdout(&out);
    assert_eq!(text.lines().count(), 1, "one line expected: {text}");
    let value = serde_json::from_str(&text)
        .unwrap_or_else(|e| panic!("not JSON ({e}): {text}{}", stderr(&out)));
    (out.status.code(), value)
}

/// The number printed after `label` in a text summary, as JSON (`none` is null).
fn text_number(text: &str, label: &str) -> serde_json::Value {
    match field(text, label) {
        Some("none") | None => serde_json::Value::Null,
        Some(t) => serde_json::from_str(&t.parse::<f64>().unwrap().to_string()).unwrap(),
    }
}

#[test]
fn play_json_holds_the_numbers_of_the_text_summary_and_of_check() {
    let dir = TempDir::new().unwrap();
    // Separation: d = 3, rho = 1e-3, midpoint stops at d*k + 1 = 28 (k = 9, as above).
    let (code, v) = play_json(dir.path(), &["-d", "3", "--rho", "1e-3", "-t", "g.jsonl"]);
    assert_eq!(code, Some(0), "{v}");
    assert_eq!(v["kind"], "certificate");
    assert_eq!(v["family"], "feasibility");
    assert_eq!(v["class"]["dim"], 3);
    assert_eq!(v["method"], "midpoint");
    assert_eq!(v["adversary"], "halving");
    assert_eq!(v["queries_used"], 28);
    assert_eq!(v["censored"], false);
    assert_eq!(v["certified_lower_bound"], 28);
    assert_eq!(v["certified_uncertainty"], serde_json::Value::Null);
    assert_eq!(v["outcome"], "output-stands");
    assert_eq!(v["verified"], true);
    assert_eq!(v["transcript"], "g.jsonl");
    let check = run_in(dir.path(), &["check", "g.jsonl"]);
    let text = stdout(&check);
    assert_eq!(check.status.code(), Some(0), "{text}");
    assert_eq!(text_number(&text, "certified lower bound"), 28, "{text}");

    // First-order (slab funnel): every number equals the text summary's.
    let args = [
        "--class",
        "first-order",
        "-m",
        "kelley",
        "-d",
        "2",
        "--eps",
        "1e-4",
    ];
    let (code, v) = play_json(dir.path(), &args);
    assert_eq!(code, Some(0), "{v}");
    let mut text_args = vec!["play"];
    text_args.extend_from_slice(&args);
    let text = stdout(&run_in(dir.path(), &text_args));
    for (key, label) in [
        ("queries_used", "queries used"),
        ("certified_lower_bound", "certified lower bound"),
        ("certified_uncertainty", "certified uncertainty"),
    ] {
        assert_eq!(v[key], text_number(&text, label), "{key}: {v} vs {text}");
    }
    assert!(v["certified_uncertainty"].as_f64().unwrap() > 0.0, "{v}");
    assert_eq!(v["adversary"], "slab-funnel");
    assert_eq!(v["transcript"], serde_json::Value::Null);

    // Large-scale demonstration: gap and lower curve as the text summary prints them.
    let args = [
        "--class",
        "large-scale",
        "--kind",
        "smooth",
        "-d",
        "100",
        "--horizon",
        "10",
        "-m",
        "accelerated",
    ];
    let (code, v) = play_json(dir.path(), &args);
    assert_eq!(code, Some(0), "{v}");
    let mut text_args = vec!["play"];
    text_args.extend_from_slice(&args);
    let text = stdout(&run_in(dir.path(), &text_args));
    assert_eq!(v["kind"], "demonstration");
    assert_eq!(v["gap"], text_number(&text, "gap"), "{v} vs {text}");
    assert_eq!(
        v["lower_bound"],
        text_number(&text, "lower curve"),
        "{text}"
    );
    assert_eq!(v["claimed"], true);
    assert_eq!(v["holds"], true);
    assert_eq!(v["certified_lower_bound"], serde_json::Value::Null);
    assert_eq!(v["outcome"], "output");

    // A failed method keeps the exit code 3 and still prints the object.
    let (code, v) = play_json(
        dir.path(),
        &[
            "-d",
            "2",
            "--exec",
            "--",
            "/nonexistent/naysayer-test-program",
        ],
    );
    assert_eq!(code, Some(3), "{v}");
    assert_eq!(v["outcome"], "method-failed");
    assert!(
        v["method_failure"]
            .as_str()
            .is_some_and(|r| r.contains("cannot start")),
        "{v}"
    );

    // --json and --expect do not go together (the gate prints its own lines).
    let out = run_in(dir.path(), &["play", "--json", "--expect", "x.toml"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("--expect"), "{}", stderr(&out));
}
