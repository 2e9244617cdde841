//! Writing to standard output and standard error without panicking.
//!
//! `println!` panics when standard output is closed (a reader such as `head` exited) or
//! failing (a full disk); the commands write through [`say!`] instead, which returns an
//! [`Error::Io`] naming standard output, so the command ends with exit code 4 (and, for a
//! closed pipe, quietly, as Unix tools do; see `main.rs`). Messages for standard error
//! go through [`note!`], which never fails: a failure is remembered
//! ([`stderr_failed`]) and turns the exit code into 4 at the end.
//!
//! [`say!`]: crate::say
//! [`note!`]: crate::note

use std::fmt;
use std::io::Write;
use std::sync::atomic::{AtomicBool, Ordering};

use crate::error::Error;

static STDERR_FAILED: AtomicBool = AtomicBool::new(false);

/// Writes `text` and a line break to standard output.
pub fn line(text: fmt::Arguments<'_>) -> Result<(), Error> {
    let mut out = std::io::stdout().lock();
    out.write_fmt(text)
        .and_then(|_| out.write_all(b"\n"))
        .and_then(|_| out.flush())
        .map_err(stdout_error)
}

/// Writes `text` (no line break) to standard output.
pub fn text(text: fmt::Arguments<'_>) -> Result<(), Error> {
    let mut out = std::io::stdout().lock();
    out.write_fmt(text)
        .and_then(|_| out.flush())
        .map_err(stdout_error)
}

/// The error of a failed write to standard output.
pub fn stdout_error(source: std::io::Error) -> Error {
    Error::Io {
        action: "cannot write to",
        path: "standard output".into(),
        source,
    }
}

/// Writes `text` and a line break to standard error; a failure is remembered, never
/// raised.
pub fn note_line(text: fmt::Arguments<'_>) {
    let mut err = std::io::stderr().lock();
    if err
        .write_fmt(text)
        .and_then(|_| err.write_all(b"\n"))
        .is_err()
    {
        STDERR_FAILED.store(true, Ordering::Relaxed);
    }
}

/// True when a write to standard error failed during this run.
pub fn stderr_failed() -> bool {
    STDERR_FAILED.load(Ordering::Relaxed)
}

/// `println!` that returns an error instead of panicking (use inside a function that
/// returns `Result<_, Error>`).
#[macro_export]
macro_rules! say {
    () => {
        $crate::cli::output::line(format_args!(""))?
    };
    ($($arg:tt)*) => {
        $crate::cli::output::line(format_args!($($arg)*))?
    };
}

/// `print!` that returns an error instead of panicking.
#[macro_export]
macro_rules! say_text {
    ($($arg:tt)*) => {
        $crate::cli::output::text(format_args!($($arg)*))?
    };
}

/// `eprintln!` that never panics.
#[macro_export]
macro_rules! note {
    ($($arg:tt)*) => {
        $crate::cli::output::note_line(format_args!($($arg)*))
    };
}
