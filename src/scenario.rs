//! Scenario files: TOML descriptions of a sweep (one per file in `adversaries/`).
//!
//! One format for every family: the keys below are common; the `[class]` table (and the
//! optional `[charts]` table) belong to the family named in `class.family`, which reads
//! them ([`crate::family`]; the examples here are the feasibility family's, the other
//! families' keys are in the rustdoc of [`crate::family::feasibility`],
//! [`crate::family::first_order`], [`crate::family::lattice`] and
//! [`crate::family::large_scale`]).
//!
//! ```toml
//! name = "halving"                      # results go to results/<name>/
//! description = "Every method against the box-halving adversary."
//!
//! [class]
//! family = "feasibility"                # separation-oracle feasibility (docs/theory.md §1)
//! dims = [1, 2, 4, 8]                   # grid of dimensions d
//! half_width = 1.0                      # R: the box is [-R, R]^d
//! rho = [1e-2, 1e-4, 1e-6]              # grid of accuracies
//! promise = "may-be-empty"              # or "nonempty" (default "may-be-empty")
//!
//! [adversary]
//! name = "halving"
//!
//! [play]
//! methods = ["midpoint", "ellipsoid", "random"]
//! seeds = [0, 1, 2]                     # seeded methods play every seed; deterministic
//!                                       # methods play the first seed only
//! budget = 100000                       # queries per game
//! transcripts = false                   # write results/<name>/transcripts/game-N.jsonl
//!
//! [charts]                              # optional
//! dim = 8                               # d of the "queries against log2(R/rho)" chart
//! rho = 1e-6                            # rho of the "queries against d" chart
//! ```
//!
//! External methods (programs speaking the line protocol of
//! [`crate::method::external`]) are named in an optional `[external.<name>]` table and
//! then listed in `play.methods` under that name:
//!
//! ```toml
//! [external.py-bisection]
//! command = ["python3", "../examples/python/bisection.py"]   # argv, no shell
//! deterministic = true                  # optional (default true): first seed only
//! answer_timeout = 30.0                 # optional: seconds per reply (default 30)
//! exit_grace = 5.0                      # optional: seconds to exit when over (default 5)
//! version = "2.1"                       # optional: what identifies the program
//! ```
//!
//! The program runs in the scenario file's folder, so relative paths in its command
//! resolve against that folder (a relative program path with a `/` too), wherever
//! naysayer runs. A sweep records what each external method was (its `version`, or its
//! command and a content hash of every file the command names) in
//! `external-methods.txt` beside `games.csv`, and refuses to resume results written by
//! another version of the program (`sweep --restart` starts over).
//!
//! Parsing is strict: an unknown key, a wrong type or an impossible value (an empty
//! grid, a negative rho, an unknown method or adversary, an adversary of another family,
//! a method that supports no class of the grid) is an error naming the file, line and
//! column. The file is read once; the games are enumerated lazily ([`Scenario::games`]),
//! so memory does not grow with the size of the grid.

use std::path::{Path, PathBuf};
use std::sync::Mutex;

use serde::Deserialize;
use toml::Spanned;

use crate::class::Class;
use crate::error::Error;
use crate::family::{self, Grid, Lineup, ScenarioText};
pub use crate::family::{ExternalEntry, GridGame};
use crate::method;

/// The common keys of a scenario file (the family's tables are read by the family).
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawScenario {
    name: Spanned<String>,
    description: String,
    class: RawClassFamily,
    adversary: RawAdversary,
    play: RawPlay,
    #[serde(default)]
    #[allow(dead_code)]
    charts: Option<toml::Table>,
    #[serde(default)]
    external: Option<Spanned<std::collections::BTreeMap<String, RawExternal>>>,
}

/// The `[class]` table as the common parser sees it: its `family`, the rest for the
/// family's parser.
#[derive(Deserialize)]
struct RawClassFamily {
    family: Spanned<String>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawExternal {
    command: Spanned<Vec<Spanned<String>>>,
    #[serde(default)]
    deterministic: Option<bool>,
    #[serde(default)]
    answer_timeout: Option<Spanned<f64>>,
    #[serde(default)]
    exit_grace: Option<Spanned<f64>>,
    #[serde(default)]
    version: Option<Spanned<String>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawAdversary {
    name: Spanned<String>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawPlay {
    methods: Spanned<Vec<Spanned<String>>>,
    seeds: Spanned<Vec<Spanned<i64>>>,
    #[serde(default)]
    budget: Option<Spanned<i64>>,
    #[serde(default)]
    transcripts: bool,
}

/// A validated scenario.
#[derive(Debug)]
pub struct Scenario {
    /// Name; results go to `results/<name>/`.
    pub name: String,
    /// What the scenario shows.
    pub description: String,
    /// The family's grid of classes (it knows its family).
    pub grid: Box<dyn Grid>,
    /// Adversary name.
    pub adversary: String,
    /// Method names, in file order.
    pub methods: Vec<String>,
    /// Seeds, in file order.
    pub seeds: Vec<u64>,
    /// The `[play]` budget (queries per game), when the family takes one.
    pub budget: Option<u64>,
    /// Whether to write a transcript per game.
    pub transcripts: bool,
    /// The TOML text, for fingerprinting resumed sweeps.
    pub source_text: String,
    /// External methods named in `[external.<name>]` tables, in name order.
    pub external: Vec<ExternalEntry>,
}

impl Scenario {
    /// The external method called `name`, if the scenario defines one.
    pub fn external_method(&self, name: &str) -> Option<&ExternalEntry> {
        self.external.iter().find(|e| e.name == name)
    }
}

impl Scenario {
    /// Reads and validates the scenario file at `path` (read once).
    pub fn from_file(path: &Path) -> Result<Scenario, Error> {
        let text = crate::files::read_capped(path, crate::files::MAX_SMALL_FILE, "scenario")?;
        Scenario::parse(&text, path)
    }

    /// Parses and validates scenario text; `path` names it in errors.
    pub fn parse(text: &str, path: &Path) -> Result<Scenario, Error> {
        let error_at = |offset: usize, reason: String| family::error_at(path, text, offset, reason);
        let error =
            |spanned: std::ops::Range<usize>, reason: String| error_at(spanned.start, reason);
        let raw: RawScenario = toml::from_str(text).map_err(|e| {
            let offset = e.span().map_or(0, |s| s.start);
            error_at(offset, e.message().trim().to_string())
        })?;
        let name = raw.name.get_ref().clone();
        if name.is_empty()
            || !name
                .chars()
                .all(|c| c.is_ascii_alphanumeric() || c == '-' || c == '_')
        {
            return Err(error(
                raw.name.span(),
                "name must be non-empty and use only letters, digits, '-' and '_'".into(),
            ));
        }
        let family_name = raw.class.family.get_ref().as_str();
        let Some(family) = family::find(family_name) else {
            return Err(error(
                raw.class.family.span(),
                format!(
                    "unknown class family {family_name:?}; known: {}",
                    family::names()
                ),
            ));
        };
        let adversary = raw.adversary.name.get_ref().clone();
        match crate::adversary::info(&adversary) {
            None => {
                return Err(error(
                    raw.adversary.name.span(),
                    format!("unknown adversary {adversary:?}; `naysayer list` shows them"),
                ))
            }
            Some(info) if info.family != family.name() => {
                return Err(error(
                    raw.adversary.name.span(),
                    format!(
                        "adversary {adversary:?} plays the {} family, not {}",
                        info.family,
                        family.name()
                    ),
                ))
            }
            Some(_) => {}
        }
        let grid = family.parse(&ScenarioText {
            path,
            text,
            adversary: &raw.adversary.name,
            budget: raw.play.budget.as_ref(),
        })?;
        // The adversary must play every class of the grid (a cheap check, not a build).
        if let Some(check) = crate::adversary::info(&adversary).and_then(|a| a.restriction) {
            for point in 0..grid.len() {
                if let Ok(class) = grid.class(point) {
                    if let Err(reason) = check(&class) {
                        return Err(error(
                            raw.adversary.name.span(),
                            format!(
                                "adversary {adversary:?} cannot play a class of the grid: {reason}"
                            ),
                        ));
                    }
                }
            }
        }
        let at = Locator { path, text };
        let mut external: Vec<ExternalEntry> = Vec::new();
        if let Some(table) = &raw.external {
            for (name, entry) in table.get_ref() {
                let here = &entry.command;
                if name.is_empty()
                    || !name
                        .chars()
                        .all(|c| c.is_ascii_alphanumeric() || c == '-' || c == '_')
                {
                    return Err(at.error(
                        here,
                        format!(
                            "external method name {name:?} must be non-empty and use only \
                             letters, digits, '-' and '_'"
                        ),
                    ));
                }
                if method::info(name).is_some() {
                    return Err(at.error(
                        here,
                        format!("external method {name:?} has the name of a built-in method"),
                    ));
                }
                if entry.command.get_ref().is_empty() {
                    return Err(at.error(
                        here,
                        "the command is empty: give a program and its arguments",
                    ));
                }
                let mut command = Vec::new();
                for part in entry.command.get_ref() {
                    if part.get_ref().is_empty() {
                        return Err(at.error(part, "an empty string in the command"));
                    }
                    command.push(part.get_ref().clone());
                }
                let answer_timeout = match &entry.answer_timeout {
                    None => 30.0,
                    Some(t) => {
                        let value = *t.get_ref();
                        if !(value.is_finite() && value > 0.0 && value <= 1e6) {
                            return Err(at.error(
                                t,
                                format!("answer_timeout = {value} must be a positive number of seconds, at most 1e6"),
                            ));
                        }
                        value
                    }
                };
                let exit_grace = match &entry.exit_grace {
                    None => 5.0,
                    Some(t) => {
                        let value = *t.get_ref();
                        if !(value.is_finite() && (0.0..=1e6).contains(&value)) {
                            return Err(at.error(
                                t,
                                format!("exit_grace = {value} must be a number of seconds between 0 and 1e6"),
                            ));
                        }
                        value
                    }
                };
                let folder = path.parent().map(|p| {
                    if p.as_os_str().is_empty() {
                        std::path::Path::new(".").to_path_buf()
                    } else {
                        p.to_path_buf()
                    }
                });
                external.push(ExternalEntry {
                    name: name.clone(),
                    command,
                    working_dir: folder
                        .filter(|p| p.is_dir())
                        .map(|p| std::fs::canonicalize(&p).unwrap_or(p)),
                    deterministic: entry.deterministic.unwrap_or(true),
                    answer_timeout,
                    exit_grace,
                    version: entry.version.as_ref().map(|v| v.get_ref().clone()),
                });
            }
        }
        if raw.play.methods.get_ref().is_empty() {
            return Err(at.error(&raw.play.methods, "the list of methods is empty"));
        }
        let mut methods = Vec::new();
        for m in raw.play.methods.get_ref() {
            let name = m.get_ref();
            if methods.contains(name) {
                return Err(at.error(m, format!("method {name:?} is listed twice")));
            }
            if external.iter().any(|e| &e.name == name) {
                methods.push(name.clone());
                continue;
            }
            if method::info(name).is_none() {
                return Err(at.error(
                    m,
                    format!("unknown method {name:?}; `naysayer list` shows the built-in methods"),
                ));
            }
            let mut reason = None;
            let any_class = (0..grid.len()).any(|p| match grid.class(p) {
                Ok(c) => match method::supports(name, &c) {
                    Ok(()) => true,
                    Err(why) => {
                        reason.get_or_insert(why);
                        false
                    }
                },
                Err(_) => false,
            });
            if !any_class {
                return Err(at.error(
                    m,
                    format!(
                        "method {name:?} supports no class of the grid{}",
                        reason.map_or(String::new(), |r| format!(": {r}"))
                    ),
                ));
            }
            methods.push(name.clone());
        }
        if let Some(entry) = external.iter().find(|e| !methods.contains(&e.name)) {
            let table = raw.external.as_ref().expect("entries come from the table");
            return Err(at.error(
                &table.get_ref()[&entry.name].command,
                format!(
                    "external method {:?} is defined but not listed in play.methods",
                    entry.name
                ),
            ));
        }
        if raw.play.seeds.get_ref().is_empty() {
            return Err(at.error(&raw.play.seeds, "the list of seeds is empty"));
        }
        let mut seeds = Vec::new();
        for s in raw.play.seeds.get_ref() {
            let value = *s.get_ref();
            if value < 0 {
                return Err(at.error(s, format!("seed {value} must be non-negative")));
            }
            if seeds.contains(&(value as u64)) {
                return Err(at.error(s, format!("seed {value} is listed twice")));
            }
            seeds.push(value as u64);
        }
        Ok(Scenario {
            name,
            description: raw.description,
            grid,
            adversary,
            methods,
            seeds,
            budget: raw.play.budget.map(|b| *b.get_ref() as u64),
            transcripts: raw.play.transcripts,
            source_text: text.to_string(),
            external,
        })
    }

    /// The common keys, as a family's grid needs them.
    pub fn lineup(&self) -> Lineup<'_> {
        Lineup {
            name: &self.name,
            adversary: &self.adversary,
            methods: &self.methods,
            seeds: &self.seeds,
            budget: self.budget,
            external: &self.external,
        }
    }

    /// The family's grid as its concrete type, for callers that know it.
    pub fn grid_as<G: Grid>(&self) -> Option<&G> {
        self.grid.as_any().downcast_ref::<G>()
    }

    /// Every game in canonical order, lazily: the grid's classes in its order, then
    /// methods in file order, then seeds in file order (deterministic methods play the
    /// first seed only). Pairs a method does not support are left out.
    pub fn games(&self) -> GridGames<'_> {
        GridGames {
            scenario: self,
            point: 0,
            class: None,
            method: 0,
            seed: 0,
            index: 0,
        }
    }

    /// The number of games of the grid (one pass over [`Scenario::games`]).
    pub fn game_count(&self) -> u64 {
        self.games().count() as u64
    }

    /// The query budget of a game of `class`.
    pub fn budget_for(&self, class: &Class) -> u64 {
        self.grid.budget(class, self.budget)
    }

    /// Whether method `name` plays only its first seed.
    pub fn deterministic(&self, name: &str) -> bool {
        match self.external_method(name) {
            Some(entry) => entry.deterministic,
            None => method::info(name).is_some_and(|m| m.deterministic),
        }
    }

    /// The results folder: `<root>/<name>`.
    pub fn results_dir(&self, root: &Path) -> PathBuf {
        root.join(&self.name)
    }
}

/// The games of a scenario in canonical order ([`Scenario::games`]).
pub struct GridGames<'a> {
    scenario: &'a Scenario,
    point: u64,
    class: Option<Class>,
    method: usize,
    seed: usize,
    index: u64,
}

impl Iterator for GridGames<'_> {
    type Item = GridGame;

    fn next(&mut self) -> Option<GridGame> {
        let s = self.scenario;
        loop {
            if self.class.is_none() {
                if self.point >= s.grid.len() {
                    return None;
                }
                let point = self.point;
                self.point += 1;
                if let Ok(class) = s.grid.class(point) {
                    self.class = Some(class);
                    self.method = 0;
                    self.seed = 0;
                }
                continue;
            }
            let class = self.class.as_ref().expect("set above");
            let Some(name) = s.methods.get(self.method) else {
                self.class = None;
                continue;
            };
            let seeds = if s.deterministic(name) {
                1
            } else {
                s.seeds.len()
            };
            let playable =
                s.external_method(name).is_some() || method::supports(name, class).is_ok();
            if !playable || self.seed >= seeds {
                self.method += 1;
                self.seed = 0;
                continue;
            }
            let game = GridGame {
                index: self.index,
                class: class.clone(),
                method: name.clone(),
                seed: s.seeds[self.seed],
            };
            self.seed += 1;
            self.index += 1;
            return Some(game);
        }
    }
}

/// A shared, lazily enumerated queue of games, for parallel workers.
pub struct GameQueue<'a> {
    games: Mutex<Box<dyn Iterator<Item = GridGame> + Send + 'a>>,
}

impl<'a> GameQueue<'a> {
    /// Wraps an iterator of games.
    pub fn new(games: impl Iterator<Item = GridGame> + Send + 'a) -> Self {
        GameQueue {
            games: Mutex::new(Box::new(games)),
        }
    }

    /// The next game, or `None` when the queue is empty.
    pub fn next(&self) -> Option<GridGame> {
        self.games.lock().ok()?.next()
    }
}

struct Locator<'a> {
    path: &'a Path,
    text: &'a str,
}

impl Locator<'_> {
    fn error<T>(&self, spanned: &Spanned<T>, reason: impl Into<String>) -> Error {
        family::error_at(self.path, self.text, spanned.span().start, reason)
    }
}
