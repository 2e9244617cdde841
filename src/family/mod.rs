//! Families of classes: the one registry through which scenarios, sweeps, charts and
//! `play` reach every class the tool knows.
//!
//! A family (feasibility, first-order, lattice, large-scale) is one registered type
//! ([`Family`]) that knows how to read its part of a scenario file (the `[class]` and
//! `[charts]` tables) into a [`Grid`], and whether its games end in a certificate (checked
//! by the exact verifier, [`crate::certificate`]) or in a demonstration (checked to a
//! stated tolerance, [`crate::demonstration`], never accepted by `naysayer check`). The
//! grid enumerates its classes in canonical order, plays one game, writes its row of
//! `games.csv` and draws its charts. Everything else (the common scenario keys, the game
//! loop, resume, shards, merge, expectations) is shared.
//!
//! To add a family: write `src/family/<name>.rs` with a type implementing [`Family`] (and
//! a grid implementing [`Grid`]), and list it in [`FAMILIES`].

pub mod boxes;
pub mod feasibility;
pub mod first_order;
pub mod large_scale;
pub mod lattice;

use std::any::Any;
use std::path::{Path, PathBuf};

use toml::Spanned;

use crate::class::Class;
use crate::error::Error;
use crate::method::external::{ExternalMethod, ExternalSettings};
use crate::method::Method;
use crate::runner::{self, DemoReport, GameSpec, Report};
use crate::transcript::Flush;

/// What a family's games end in.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Evidence {
    /// A certificate, checked exactly by the verifier.
    Certificate,
    /// A published-theorem demonstration, checked to a stated relative tolerance.
    Demonstration,
}

/// A registered family of classes.
pub trait Family: Sync {
    /// The name in scenario files and on the command line (`--class`).
    fn name(&self) -> &'static str;
    /// Certificate or demonstration.
    fn evidence(&self) -> Evidence;
    /// Reads the family's tables (`[class]`, `[charts]`) of a scenario.
    fn parse(&self, text: &ScenarioText<'_>) -> Result<Box<dyn Grid>, Error>;
    /// The adversary `play` uses for `class` when none is named.
    fn default_adversary(&self, class: &Class) -> &'static str;
}

/// Every registered family.
pub const FAMILIES: &[&dyn Family] = &[
    &feasibility::FEASIBILITY,
    &first_order::FIRST_ORDER,
    &lattice::LATTICE,
    &large_scale::LARGE_SCALE,
];

/// The family called `name`.
pub fn find(name: &str) -> Option<&'static dyn Family> {
    FAMILIES.iter().copied().find(|f| f.name() == name)
}

/// The family of `class`.
pub fn of(class: &Class) -> &'static dyn Family {
    find(class.family_name()).expect("every class belongs to a registered family")
}

/// The names of every family, quoted and comma-separated (for messages).
pub fn names() -> String {
    FAMILIES
        .iter()
        .map(|f| format!("{:?}", f.name()))
        .collect::<Vec<_>>()
        .join(", ")
}

/// The result of one game, whatever its evidence.
#[derive(Debug)]
pub enum GameReport {
    /// A certificate game, verified exactly.
    Certificate(Report),
    /// A demonstration game, judged to its tolerance.
    Demonstration(DemoReport),
}

impl GameReport {
    /// Whether the verifier (or the demonstration judge) accepted the game: `false` is an
    /// adversary bug, or a claimed lower curve that does not hold.
    pub fn accepted(&self) -> bool {
        match self {
            GameReport::Certificate(r) => r.verdict.is_ok(),
            GameReport::Demonstration(r) => r.judgement.as_ref().is_ok_and(|v| v.consistent()),
        }
    }

    /// How the game ended.
    pub fn ending(&self) -> &crate::transcript::Ending {
        match self {
            GameReport::Certificate(r) => &r.record.ending,
            GameReport::Demonstration(r) => &r.record.ending,
        }
    }

    /// Queries the method asked (the budget when the budget ended the game).
    pub fn queries_used(&self) -> u64 {
        match self {
            GameReport::Certificate(r) => r.record.queries_used,
            GameReport::Demonstration(r) => r.record.queries_used,
        }
    }
}

/// Builds the method of a game of a scenario: a built-in, or the scenario's external
/// program (run in the scenario's folder; its transcript is flushed after every record,
/// since it may not be replayable).
pub fn build_player(
    lineup: &Lineup<'_>,
    spec: &GameSpec,
) -> Result<(Box<dyn Method + Send>, Flush), Error> {
    match lineup.external_method(&spec.method) {
        Some(entry) => {
            let settings = ExternalSettings {
                answer_timeout: std::time::Duration::from_secs_f64(entry.answer_timeout),
                exit_grace: std::time::Duration::from_secs_f64(entry.exit_grace),
                working_dir: entry.working_dir.clone(),
                ..Default::default()
            };
            let method = ExternalMethod::new(
                &entry.resolved_command(),
                &spec.class,
                spec.budget,
                spec.seed,
                settings,
            )?;
            Ok((Box::new(method), Flush::EveryRecord))
        }
        None => Ok((
            crate::method::build(&spec.method, &spec.class, spec.seed)?,
            Flush::Periodic,
        )),
    }
}

/// Plays one game of `class`'s family with `method`, verified or judged as the family's
/// evidence requires.
pub fn play(spec: &GameSpec, method: &mut dyn Method, flush: Flush) -> Result<GameReport, Error> {
    match of(&spec.class).evidence() {
        Evidence::Certificate => Ok(GameReport::Certificate(runner::run_with_flush(
            spec,
            method,
            &mut [],
            flush,
        )?)),
        Evidence::Demonstration => Ok(GameReport::Demonstration(runner::demonstrate_with_flush(
            spec, method, flush,
        )?)),
    }
}

/// A family's grid of classes, read from a scenario.
pub trait Grid: std::fmt::Debug + Send + Sync + Any {
    /// The family.
    fn family(&self) -> &'static dyn Family;
    /// Number of classes in the grid.
    fn len(&self) -> u64;
    /// True when the grid has no class (never, for a parsed scenario).
    fn is_empty(&self) -> bool {
        self.len() == 0
    }
    /// Class number `point` (from 0) in canonical order.
    fn class(&self, point: u64) -> Result<Class, Error>;
    /// The query budget of a game of `class` (`budget` is the scenario's `[play]`
    /// budget; the large-scale family uses the horizon).
    fn budget(&self, class: &Class, budget: Option<u64>) -> u64;
    /// The columns of `games.csv`, in order; the first is `game`.
    fn columns(&self) -> &'static [&'static str];
    /// The columns that identify a game (checked against the grid on resume, and usable
    /// as selectors in expectation files); the rest are results.
    fn identity_columns(&self) -> &'static [&'static str];
    /// The cells of one game's row, in column order (results from `report`).
    fn row(&self, lineup: &Lineup<'_>, game: &GridGame, report: &GameReport) -> Vec<String>;
    /// The identity cells of a game before it is played (`None` in result columns).
    fn identity(&self, lineup: &Lineup<'_>, game: &GridGame) -> Vec<Option<String>>;
    /// Draws the family's charts of a results folder; returns the PNG paths.
    fn draw_charts(&self, dir: &Path, lineup: &Lineup<'_>) -> Result<Vec<PathBuf>, Error>;
    /// As [`Any`], for callers that know the concrete grid.
    fn as_any(&self) -> &dyn Any;
}

/// The common part of a scenario a family's grid needs to write rows and draw charts.
#[derive(Clone, Copy, Debug)]
pub struct Lineup<'a> {
    /// The scenario's name.
    pub name: &'a str,
    /// The adversary.
    pub adversary: &'a str,
    /// The methods, in file order (built-in or external).
    pub methods: &'a [String],
    /// The seeds, in file order.
    pub seeds: &'a [u64],
    /// The `[play]` budget, when the family takes one.
    pub budget: Option<u64>,
    /// The external methods the scenario defines.
    pub external: &'a [ExternalEntry],
}

impl Lineup<'_> {
    /// The external method called `name`, if the scenario defines one.
    pub fn external_method(&self, name: &str) -> Option<&ExternalEntry> {
        self.external.iter().find(|e| e.name == name)
    }
}

/// One game of a sweep.
#[derive(Clone, Debug, PartialEq)]
pub struct GridGame {
    /// Position in the canonical order (from 0).
    pub index: u64,
    /// The class.
    pub class: Class,
    /// Method name.
    pub method: String,
    /// Seed.
    pub seed: u64,
}

/// An external method of a scenario: a program speaking the line protocol.
#[derive(Clone, Debug, PartialEq)]
pub struct ExternalEntry {
    /// The name used in `play.methods` and in `games.csv`.
    pub name: String,
    /// Program and arguments (no shell), as written in the scenario.
    pub command: Vec<String>,
    /// The folder the program runs in: the scenario file's folder, so that relative
    /// paths in the command resolve against it (`None` for a scenario without a file).
    pub working_dir: Option<std::path::PathBuf>,
    /// Whether it plays the first seed only (default true).
    pub deterministic: bool,
    /// Seconds it may take for each reply (default 30).
    pub answer_timeout: f64,
    /// Seconds it may take to exit once its game is over (default 5).
    pub exit_grace: f64,
    /// A version the user gives (`version = "..."`); when absent, the fingerprint is the
    /// command and the contents of the files it names.
    pub version: Option<String>,
}

impl ExternalEntry {
    /// The command with a relative program path (one with a `/`) made absolute against
    /// the working folder (the arguments stay as written: the program runs in that
    /// folder, so they resolve against it).
    pub fn resolved_command(&self) -> Vec<String> {
        let mut command = self.command.clone();
        if let (Some(dir), Some(program)) = (&self.working_dir, command.first_mut()) {
            let path = std::path::Path::new(program.as_str());
            if path.is_relative() && program.contains('/') {
                *program = dir.join(path).to_string_lossy().into_owned();
            }
        }
        command
    }

    /// What the program is, for refusing to resume results it did not write: the user's
    /// `version` if given, else the command with a content hash (FNV-1a, 64 bits: it
    /// detects edits, not deliberate collisions) of every file the command names that
    /// exists (relative paths against the working folder). A file that cannot be read
    /// counts as "unreadable".
    pub fn fingerprint(&self) -> String {
        if let Some(version) = &self.version {
            return format!("version {version:?}");
        }
        let mut parts = vec![format!("command {:?}", self.command)];
        for arg in &self.command {
            let path = std::path::Path::new(arg.as_str());
            let path = match (&self.working_dir, path.is_relative()) {
                (Some(dir), true) => dir.join(path),
                _ => path.to_path_buf(),
            };
            if path.is_file() {
                let hash = std::fs::read(&path)
                    .map(|bytes| format!("{:016x}", fnv1a(&bytes)))
                    .unwrap_or_else(|_| "unreadable".into());
                parts.push(format!("{arg} {hash}"));
            }
        }
        parts.join("; ")
    }
}

/// FNV-1a, 64 bits (Fowler, Noll & Vo; the published offset basis and prime).
fn fnv1a(bytes: &[u8]) -> u64 {
    let mut hash: u64 = 0xcbf2_9ce4_8422_2325;
    for b in bytes {
        hash ^= u64::from(*b);
        hash = hash.wrapping_mul(0x0000_0100_0000_01b3);
    }
    hash
}

/// A scenario's text, for a family's parser: the raw text (every family reads its own
/// tables from it with spans), the file name for errors, and what the common parser
/// already read.
pub struct ScenarioText<'a> {
    /// The file, for error messages.
    pub path: &'a Path,
    /// The TOML text.
    pub text: &'a str,
    /// The adversary named in `[adversary]`, with its place.
    pub adversary: &'a Spanned<String>,
    /// The `[play]` budget, if given, with its place.
    pub budget: Option<&'a Spanned<i64>>,
}

impl ScenarioText<'_> {
    /// A scenario error at byte `offset`.
    pub fn error_at(&self, offset: usize, reason: impl Into<String>) -> Error {
        error_at(self.path, self.text, offset, reason)
    }

    /// A scenario error at a spanned value.
    pub fn error<T>(&self, spanned: &Spanned<T>, reason: impl Into<String>) -> Error {
        self.error_at(spanned.span().start, reason)
    }

    /// Deserializes the whole text into a family's view `T` (which reads only its own
    /// tables, strictly); a TOML error names its line and column.
    pub fn read<T: serde::de::DeserializeOwned>(&self) -> Result<T, Error> {
        toml::from_str(self.text).map_err(|e| {
            let offset = e.span().map_or(0, |s| s.start);
            self.error_at(offset, e.message().trim().to_string())
        })
    }
}

/// A scenario error at byte `offset` of `text`, with its 1-based line and column
/// (columns count characters).
pub fn error_at(path: &Path, text: &str, offset: usize, reason: impl Into<String>) -> Error {
    let mut offset = offset.min(text.len());
    while !text.is_char_boundary(offset) {
        offset -= 1;
    }
    let before = &text[..offset];
    Error::Scenario {
        path: path.to_path_buf(),
        line: before.matches('\n').count() + 1,
        column: before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1,
        reason: reason.into(),
    }
}
