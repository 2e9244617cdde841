//! Typed errors of the library. "Called wrong" is an [`Error`]; how a game ended is
//! data ([`crate::transcript::Ending`]).

use std::path::PathBuf;

/// Everything that can go wrong when the library is called or reads input.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum Error {
    /// Class parameters violate the class's invariants.
    #[error("invalid class: {reason}")]
    InvalidClass {
        /// What is wrong.
        reason: String,
    },
    /// No built-in method has this name.
    #[error("unknown method {name:?}; `naysayer list` shows the built-in methods")]
    UnknownMethod {
        /// The name given.
        name: String,
    },
    /// No adversary has this name.
    #[error("unknown adversary {name:?}; `naysayer list` shows the adversaries")]
    UnknownAdversary {
        /// The name given.
        name: String,
    },
    /// The method or adversary does not support this class.
    #[error("{what} does not support this class: {reason}")]
    Unsupported {
        /// The method or adversary.
        what: String,
        /// Why.
        reason: String,
    },
    /// A method broke the rules of the game (bad query, internal failure).
    #[error("method {method:?} failed: {reason}")]
    MethodFailed {
        /// Method name.
        method: String,
        /// What went wrong.
        reason: String,
    },
    /// Reading or writing a file failed. Its message names the action and the file; the
    /// cause is the error's source (printed once by the cause chain, or by
    /// [`Error::chain`]).
    #[error("{action} {path}")]
    Io {
        /// "cannot read", "cannot write", ...
        action: &'static str,
        /// The file.
        path: PathBuf,
        /// The cause.
        #[source]
        source: std::io::Error,
    },
    /// A scenario file is malformed or names something impossible.
    #[error("{path}:{line}:{column}: {reason}")]
    Scenario {
        /// The scenario file.
        path: PathBuf,
        /// 1-based line.
        line: usize,
        /// 1-based column.
        column: usize,
        /// What is wrong.
        reason: String,
    },
    /// A results file (games.csv) is malformed or belongs to another sweep.
    #[error("{path}: {reason}")]
    Results {
        /// The file.
        path: PathBuf,
        /// What is wrong.
        reason: String,
    },
    /// A chart could not be drawn.
    #[error("cannot draw chart {path}: {reason}")]
    Chart {
        /// The chart's path stem.
        path: PathBuf,
        /// Why.
        reason: String,
    },
    /// A large-scale instance or adversary needs more dimensions than the class has
    /// (docs/theory.md §3: the rotation adversary needs d >= queries + N + 2).
    #[error("dimension d = {dim} is too small: {what} needs d >= {needed}")]
    DimensionTooSmall {
        /// The class's dimension.
        dim: usize,
        /// The least dimension that works.
        needed: usize,
        /// What needs it.
        what: String,
    },
    /// A setting is out of range (for example a limit of the external-method protocol).
    #[error("invalid {name}: {reason}")]
    InvalidSetting {
        /// Which setting.
        name: &'static str,
        /// What is wrong.
        reason: String,
    },
    /// A run would need more memory than its cap ([`crate::resources`]): refused before
    /// it starts.
    #[error("{context}: {reason}")]
    Memory {
        /// The command and what it was about to run.
        context: String,
        /// Which part needs how much at which parameters, the cap, and what to change.
        reason: String,
    },
    /// A transcript record is malformed or out of place.
    #[error("transcript line {line}: {reason}")]
    Transcript {
        /// 1-based line number (one record a line).
        line: u64,
        /// What is wrong.
        reason: String,
    },
}

impl Error {
    /// The message with every cause after it, `: `-separated (for places that keep an
    /// error as text, such as a CSV cell; the binary prints the same chain).
    pub fn chain(&self) -> String {
        let mut text = self.to_string();
        let mut cause = std::error::Error::source(self);
        while let Some(c) = cause {
            text.push_str(": ");
            text.push_str(&c.to_string());
            cause = c.source();
        }
        text
    }
}
