//! Helpers shared by the tests that run both checkers (`naysayer`'s verifier and the
//! independent `tools/check_certificate.py`) and require them to agree.
//!
//! The Python checker needs `python3`: without it these tests FAIL with a message saying
//! how to install it, unless NAYSAYER_SKIP_PYTHON_TESTS=1 is set (`tests/outside`; every
//! test binary that uses this module declares `mod outside;` too).
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::Command;

use naysayer::certificate::{verify_file, Verdict};
use naysayer::family::boxes::outcome_name;

pub const CHECKER: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/tools/check_certificate.py");
pub const BIN: &str = env!("CARGO_BIN_EXE_naysayer");

/// Whether the Python checker can run: true when `python3` runs; false only when it is
/// missing and NAYSAYER_SKIP_PYTHON_TESTS=1 allows skipping (otherwise this panics,
/// saying how to install it).
#[track_caller]
pub fn python_present() -> bool {
    crate::outside::python3().is_some()
}

/// Runs the Python checker once over `paths`: each file's verdict line, in order. Its
/// standard error must be empty (no traceback, whatever the input).
pub fn python_verdicts(paths: &[PathBuf]) -> Vec<String> {
    let out = Command::new("python3")
        .arg(CHECKER)
        .args(paths)
        .output()
        .expect("python3 runs");
    let text = String::from_utf8_lossy(&out.stdout).into_owned();
    let lines: Vec<String> = text.lines().map(String::from).collect();
    assert_eq!(
        lines.len(),
        paths.len(),
        "one verdict line per file expected, got {text:?} (stderr {})",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(
        out.stderr.is_empty(),
        "the Python checker wrote to stderr: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    // The exit code is the largest of the files' codes: 0 valid, 1 rejected.
    let worst = if lines.iter().all(|l| l.starts_with("VALID ")) {
        0
    } else {
        1
    };
    assert_eq!(out.status.code(), Some(worst), "{text}");
    lines
}

/// `key=value` fields of a verdict line.
pub fn verdict_field<'a>(line: &'a str, key: &str) -> &'a str {
    line.split_whitespace()
        .find_map(|t| t.strip_prefix(key).and_then(|r| r.strip_prefix('=')))
        .unwrap_or_else(|| panic!("no {key} in {line}"))
}

/// Both checkers on every file; panics when they disagree. Returns which are valid.
pub fn agree_all(paths: &[PathBuf]) -> Vec<bool> {
    let lines = python_verdicts(paths);
    paths
        .iter()
        .zip(&lines)
        .map(|(path, line)| {
            eprintln!("{line}");
            match verify_file(path) {
                Ok(v) => {
                    assert!(
                        line.starts_with(&format!("VALID {}: ", path.display())),
                        "Rust accepts {}, Python: {line}",
                        path.display()
                    );
                    compare(&v, line, path);
                    true
                }
                Err(e) => {
                    assert!(
                        line.starts_with(&format!("REJECTED {}: ", path.display())),
                        "Rust rejects {} ({e}), Python: {line}",
                        path.display()
                    );
                    false
                }
            }
        })
        .collect()
}

pub fn agree(path: &Path) -> bool {
    agree_all(&[path.to_path_buf()])[0]
}

/// The Rust verdict's numbers and outcome are the Python line's.
pub fn compare(v: &Verdict, line: &str, path: &Path) {
    let ctx = format!("{}: {line}", path.display());
    assert_eq!(
        verdict_field(line, "queries_used"),
        v.queries_used.to_string(),
        "{ctx}"
    );
    assert_eq!(
        verdict_field(line, "censored"),
        if v.censored { "yes" } else { "no" },
        "{ctx}"
    );
    let bound = v
        .certified_lower_bound()
        .map_or("none".to_string(), |b| b.to_string());
    assert_eq!(verdict_field(line, "certified_lower_bound"), bound, "{ctx}");
    assert_eq!(
        verdict_field(line, "outcome"),
        outcome_name(&v.outcome),
        "{ctx}"
    );
    let eps = verdict_field(line, "certified_uncertainty");
    match v.certified_uncertainty {
        None => assert_eq!(eps, "none", "{ctx}"),
        Some(u) => {
            let p: f64 = eps.parse().unwrap_or_else(|_| panic!("{ctx}"));
            assert_eq!(p.to_bits(), u.to_bits(), "eps_cert differs: {ctx}");
        }
    }
}

/// Writes `lines`, each followed by a line break, to `dir/name`.
pub fn write_lines(dir: &Path, name: &str, lines: &[String]) -> PathBuf {
    let path = dir.join(name);
    let mut text = lines.join("\n");
    text.push('\n');
    std::fs::write(&path, text).unwrap();
    path
}

/// Both checkers reject `path`; returns (Rust reason, Python verdict line).
pub fn both_reject(path: &Path) -> (String, String) {
    let line = python_verdicts(&[path.to_path_buf()]).remove(0);
    let reason = match verify_file(path) {
        Ok(v) => panic!("Rust accepts {}: {v:?}; Python: {line}", path.display()),
        Err(e) => e.to_string(),
    };
    assert!(
        line.starts_with(&format!("REJECTED {}: ", path.display())),
        "Rust rejects {} ({reason}), Python: {line}",
        path.display()
    );
    (reason, line)
}

/// `naysayer check FILE`: (exit code, stdout).
pub fn check_cli(path: &Path) -> (Option<i32>, String) {
    let out = Command::new(BIN).arg("check").arg(path).output().unwrap();
    (
        out.status.code(),
        String::from_utf8_lossy(&out.stdout).into_owned(),
    )
}
