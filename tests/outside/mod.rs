//! The outside programs some tests need, one helper per program.
//!
//! A test that needs a program this machine lacks FAILS, with a message saying how to
//! install it. Only an explicit environment variable turns the failure into a skip:
//!
//! - `NAYSAYER_SKIP_PYTHON_TESTS=1`: the tests that run `python3` (the independent
//!   checker `tools/check_certificate.py`, the Python protocol examples, external-method
//!   programs written as Python scripts);
//! - `NAYSAYER_SKIP_BROWSER_TESTS=1`: the test that renders the report in a headless
//!   browser (Chromium, or the program named by `NAYSAYER_CHROMIUM`).
//!
//! Both are documented in the README's test section; CI (`.ci/run`) installs the
//! programs instead and never sets them. A skipped test says so on stderr.
#![allow(dead_code)]

use std::path::PathBuf;
use std::process::Command;
use std::sync::OnceLock;

/// The variable that lets the Python tests skip on a machine without `python3`.
pub const SKIP_PYTHON: &str = "NAYSAYER_SKIP_PYTHON_TESTS";
/// The variable that lets the browser test skip on a machine without a headless browser.
pub const SKIP_BROWSER: &str = "NAYSAYER_SKIP_BROWSER_TESTS";

/// Whether `variable` is set to exactly "1".
fn skip_allowed(variable: &str) -> bool {
    std::env::var(variable).as_deref() == Ok("1")
}

/// `Some("python3")` when `python3 --version` runs on this machine. When it does not:
/// `None` (with a notice) if `NAYSAYER_SKIP_PYTHON_TESTS=1`, else a panic saying how to
/// install it. The probe runs once per test binary. The panic names the calling test's
/// line.
#[track_caller]
pub fn python3() -> Option<&'static str> {
    static FOUND: OnceLock<bool> = OnceLock::new();
    let found = *FOUND.get_or_init(|| {
        Command::new("python3")
            .arg("--version")
            .output()
            .is_ok_and(|o| o.status.success())
    });
    if found {
        return Some("python3");
    }
    if skip_allowed(SKIP_PYTHON) {
        eprintln!("skipped: python3 is not installed ({SKIP_PYTHON}=1)");
        return None;
    }
    panic!(
        "python3 is not installed (no `python3` on PATH runs), and this test needs it: it \
         runs the independent checker tools/check_certificate.py or a Python method over \
         the protocol. Install Python 3 (Debian and Ubuntu: `apt-get install -y python3`; \
         the standard library is enough), or set {SKIP_PYTHON}=1 to skip the tests that \
         need it"
    );
}

/// The headless browser: `NAYSAYER_CHROMIUM`, else the first of the usual names on
/// PATH. When there is none: `None` (with a notice) if `NAYSAYER_SKIP_BROWSER_TESTS=1`,
/// else a panic saying how to install one.
#[track_caller]
pub fn browser() -> Option<PathBuf> {
    if let Some(found) = find_browser() {
        return Some(found);
    }
    if skip_allowed(SKIP_BROWSER) {
        eprintln!("skipped: no headless browser ({SKIP_BROWSER}=1)");
        return None;
    }
    panic!(
        "no headless browser found for the report test: install Chromium (Debian and \
         Ubuntu: `apt-get install -y chromium`), or name it with NAYSAYER_CHROMIUM=PATH, \
         or set {SKIP_BROWSER}=1 to skip this test"
    );
}

fn find_browser() -> Option<PathBuf> {
    if let Some(p) = std::env::var_os("NAYSAYER_CHROMIUM") {
        return Some(PathBuf::from(p));
    }
    let path = std::env::var_os("PATH")?;
    for dir in std::env::split_paths(&path) {
        for name in [
            "chromium",
            "chromium-browser",
            "google-chrome",
            "google-chrome-stable",
        ] {
            let candidate = dir.join(name);
            if candidate.is_file() {
                return Some(candidate);
            }
        }
    }
    None
}
