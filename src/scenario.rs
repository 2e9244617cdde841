//! Scenario files: TOML descriptions of a sweep (one per file in `adversaries/`).
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
//! command = ["python3", "examples/python/bisection.py"]   # argv, no shell; relative
//!                                       # paths are relative to where naysayer runs
//! deterministic = true                  # optional (default true): first seed only
//! answer_timeout = 30.0                 # optional: seconds per reply (default 30)
//! ```
//!
//! Parsing is strict: an unknown key, a wrong type or an impossible value (an empty
//! grid, a negative rho, an unknown method or adversary, a method that supports no
//! dimension of the grid) is an error naming the file, line and column.

use std::path::{Path, PathBuf};

use serde::Deserialize;
use toml::Spanned;

use crate::adversary::ADVERSARIES;
use crate::class::{
    Class, FeasibilityClass, FirstOrderClass, LatticeClass, LipschitzNorm, Promise,
};
use crate::error::Error;
use crate::method::{self, METHODS};

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawScenario {
    name: Spanned<String>,
    description: String,
    class: RawClass,
    adversary: RawAdversary,
    play: RawPlay,
    #[serde(default)]
    charts: Option<RawCharts>,
    #[serde(default)]
    external: Option<Spanned<std::collections::BTreeMap<String, RawExternal>>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawExternal {
    command: Spanned<Vec<Spanned<String>>>,
    #[serde(default)]
    deterministic: Option<bool>,
    #[serde(default)]
    answer_timeout: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawClass {
    family: Spanned<String>,
    dims: Spanned<Vec<Spanned<i64>>>,
    half_width: Spanned<f64>,
    #[serde(default)]
    rho: Option<Spanned<Vec<Spanned<f64>>>>,
    #[serde(default)]
    eps: Option<Spanned<Vec<Spanned<f64>>>>,
    #[serde(default)]
    lipschitz: Option<Spanned<f64>>,
    #[serde(default)]
    norm: Option<Spanned<String>>,
    #[serde(default)]
    promise: Option<Spanned<String>>,
    #[serde(default)]
    int_lower: Option<Spanned<i64>>,
    #[serde(default)]
    int_upper: Option<Spanned<i64>>,
    #[serde(default)]
    cont_dim: Option<Spanned<i64>>,
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
    budget: Spanned<i64>,
    #[serde(default)]
    transcripts: bool,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawCharts {
    #[serde(default)]
    dim: Option<Spanned<i64>>,
    #[serde(default)]
    rho: Option<Spanned<f64>>,
    #[serde(default)]
    eps: Option<Spanned<f64>>,
}

pub use crate::large_scale::scenario::{is_large_scale, LargeScaleScenario};

/// Reads the scenario file at `path` as a `large-scale` scenario (docs/theory.md §3, parsed
/// strictly by [`LargeScaleScenario::parse`]) when its `class.family` says so; `Ok(None)`
/// for every other family, which [`Scenario::from_file`] reads.
pub fn read_large_scale(path: &Path) -> Result<Option<LargeScaleScenario>, Error> {
    let text = std::fs::read_to_string(path).map_err(|source| Error::Io {
        action: "cannot read scenario",
        path: path.to_path_buf(),
        source,
    })?;
    if is_large_scale(&text) {
        LargeScaleScenario::parse(&text, path).map(Some)
    } else {
        Ok(None)
    }
}

/// A validated scenario.
#[derive(Clone, Debug, PartialEq)]
pub struct Scenario {
    /// Name; results go to `results/<name>/`.
    pub name: String,
    /// What the scenario shows.
    pub description: String,
    /// Dimensions, ascending, distinct.
    pub dims: Vec<usize>,
    /// Box half-width R.
    pub half_width: f64,
    /// Accuracies (rho or eps), descending (so R/rho or L R/eps ascends), distinct.
    pub accuracies: Vec<f64>,
    /// The family and its fixed parameters.
    pub family: Family,
    /// Adversary name.
    pub adversary: String,
    /// Method names, in file order.
    pub methods: Vec<String>,
    /// Seeds, in file order.
    pub seeds: Vec<u64>,
    /// Query budget per game.
    pub budget: u64,
    /// Whether to write a transcript per game.
    pub transcripts: bool,
    /// d of the "queries against log2(R/rho)" chart (default: the largest d).
    pub chart_dim: usize,
    /// Accuracy of the "queries against d" chart (default: the smallest).
    pub chart_accuracy: f64,
    /// The TOML text, for fingerprinting resumed sweeps.
    pub source_text: String,
    /// External methods named in `[external.<name>]` tables, in name order.
    pub external: Vec<ExternalEntry>,
}

/// An external method of a scenario: a program speaking the line protocol.
#[derive(Clone, Debug, PartialEq)]
pub struct ExternalEntry {
    /// The name used in `play.methods` and in `games.csv`.
    pub name: String,
    /// Program and arguments (no shell).
    pub command: Vec<String>,
    /// Whether it plays the first seed only (default true).
    pub deterministic: bool,
    /// Seconds it may take for each reply (default 30).
    pub answer_timeout: f64,
}

impl Scenario {
    /// The external method called `name`, if the scenario defines one.
    pub fn external_method(&self, name: &str) -> Option<&ExternalEntry> {
        self.external.iter().find(|e| e.name == name)
    }
}

/// The class of `family` at (d, accuracy), for validation before a [`Scenario`] exists.
fn class_for(family: &Family, d: usize, half_width: f64, accuracy: f64) -> Result<Class, Error> {
    Ok(match family {
        Family::Feasibility { promise } => {
            Class::Feasibility(FeasibilityClass::new(d, half_width, accuracy, *promise)?)
        }
        Family::FirstOrder { lipschitz, norm } => {
            let class = FirstOrderClass::new(d, half_width, accuracy, *lipschitz, *norm)?;
            class.check_accuracy_below_half_range()?;
            Class::FirstOrder(class)
        }
        Family::Lattice {
            int_lower,
            int_upper,
            cont_dim,
        } => Class::Lattice(LatticeClass::mixed(
            d,
            *int_lower,
            *int_upper,
            *cont_dim,
            half_width,
            if *cont_dim == 0 {
                PURE_INTEGER_RHO
            } else {
                accuracy
            },
        )?),
    })
}

/// The accuracy of every game of a pure integer scenario, which has none: `games.csv`
/// leaves the `accuracy` and `ratio` cells empty and reads them back as this value.
pub const NO_ACCURACY: f64 = f64::NAN;

/// The rho a pure integer class carries (unused: it has no continuous part).
const PURE_INTEGER_RHO: f64 = 0.5;

/// The family of a scenario's classes, with the parameters that do not vary.
#[derive(Clone, Debug, PartialEq)]
pub enum Family {
    /// Separation-oracle feasibility (`rho` grid).
    Feasibility {
        /// The class promise.
        promise: Promise,
    },
    /// First-order minimisation (`eps` grid).
    FirstOrder {
        /// Lipschitz constant L.
        lipschitz: f64,
        /// The norm L is measured in.
        norm: LipschitzNorm,
    },
    /// Integer and mixed-integer feasibility over {int_lower..int_upper}^n x [-R, R]^d
    /// (`dims` is the grid of n; a `rho` grid when d > 0, none when d = 0).
    Lattice {
        /// Lower bound of every integer coordinate.
        int_lower: i64,
        /// Upper bound of every integer coordinate.
        int_upper: i64,
        /// Continuous dimension d (0: pure integer).
        cont_dim: usize,
    },
}

impl Scenario {
    /// The class at dimension `d` and accuracy `accuracy` (rho or eps).
    pub fn class_at(&self, d: usize, accuracy: f64) -> Result<Class, Error> {
        class_for(&self.family, d, self.half_width, accuracy)
    }

    /// The name of the accuracy parameter: "rho" or "eps".
    pub fn accuracy_name(&self) -> &'static str {
        match self.family {
            Family::Feasibility { .. } | Family::Lattice { .. } => "rho",
            Family::FirstOrder { .. } => "eps",
        }
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

/// A scenario error at byte `offset` of `text`, with its 1-based line and column.
pub(crate) fn error_at(path: &Path, text: &str, offset: usize, reason: impl Into<String>) -> Error {
    let offset = offset.min(text.len());
    let before = &text[..offset];
    Error::Scenario {
        path: path.to_path_buf(),
        line: before.matches('\n').count() + 1,
        column: before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1,
        reason: reason.into(),
    }
}

struct Locator<'a> {
    path: &'a Path,
    text: &'a str,
}

impl Locator<'_> {
    fn error_at(&self, offset: usize, reason: impl Into<String>) -> Error {
        error_at(self.path, self.text, offset, reason)
    }

    fn error<T>(&self, spanned: &Spanned<T>, reason: impl Into<String>) -> Error {
        self.error_at(spanned.span().start, reason)
    }
}

impl Scenario {
    /// Reads and validates the scenario file at `path`.
    pub fn from_file(path: &Path) -> Result<Scenario, Error> {
        let text = std::fs::read_to_string(path).map_err(|source| Error::Io {
            action: "cannot read scenario",
            path: path.to_path_buf(),
            source,
        })?;
        Scenario::parse(&text, path)
    }

    /// Parses and validates scenario text; `path` names it in errors.
    pub fn parse(text: &str, path: &Path) -> Result<Scenario, Error> {
        let at = Locator { path, text };
        let raw: RawScenario = toml::from_str(text).map_err(|e| {
            let offset = e.span().map_or(0, |s| s.start);
            at.error_at(offset, e.message().trim().to_string())
        })?;
        let name = raw.name.get_ref().clone();
        if name.is_empty()
            || !name
                .chars()
                .all(|c| c.is_ascii_alphanumeric() || c == '-' || c == '_')
        {
            return Err(at.error(
                &raw.name,
                "name must be non-empty and use only letters, digits, '-' and '_'",
            ));
        }
        let family_name = raw.class.family.get_ref().as_str();
        if !["feasibility", "first-order", "lattice"].contains(&family_name) {
            return Err(at.error(
                &raw.class.family,
                format!(
                    "unknown class family {family_name:?}; known: \"feasibility\", \
                     \"first-order\", \"lattice\", \"large-scale\""
                ),
            ));
        }
        let first_order = family_name == "first-order";
        let lattice = family_name == "lattice";
        // Keys that belong to one family only.
        let owned: [(&str, Option<usize>, &str); 6] = [
            (
                "promise",
                raw.class.promise.as_ref().map(|v| v.span().start),
                "feasibility",
            ),
            (
                "lipschitz",
                raw.class.lipschitz.as_ref().map(|v| v.span().start),
                "first-order",
            ),
            (
                "norm",
                raw.class.norm.as_ref().map(|v| v.span().start),
                "first-order",
            ),
            (
                "int_lower",
                raw.class.int_lower.as_ref().map(|v| v.span().start),
                "lattice",
            ),
            (
                "int_upper",
                raw.class.int_upper.as_ref().map(|v| v.span().start),
                "lattice",
            ),
            (
                "cont_dim",
                raw.class.cont_dim.as_ref().map(|v| v.span().start),
                "lattice",
            ),
        ];
        for (key, offset, owner) in owned {
            if let Some(offset) = offset {
                if owner != family_name {
                    return Err(at.error_at(offset, format!("{key} belongs to the {owner} family")));
                }
            }
        }
        let promise = match &raw.class.promise {
            None => Promise::MayBeEmpty,
            Some(p) => match p.get_ref().as_str() {
                "may-be-empty" => Promise::MayBeEmpty,
                "nonempty" => Promise::Nonempty,
                other => {
                    return Err(at.error(
                        p,
                        format!("promise must be \"may-be-empty\" or \"nonempty\", not {other:?}"),
                    ))
                }
            },
        };
        let family = if first_order {
            if let Some(r) = &raw.class.rho {
                return Err(at.error(r, "the first-order family takes eps, not rho"));
            }
            let lipschitz = raw.class.lipschitz.as_ref().map_or(1.0, |l| *l.get_ref());
            if let Some(l) = &raw.class.lipschitz {
                if !(lipschitz.is_finite() && lipschitz > 0.0) {
                    return Err(at.error(l, "lipschitz must be a positive finite number"));
                }
            }
            let norm = match &raw.class.norm {
                None => LipschitzNorm::L2,
                Some(n) => match n.get_ref().as_str() {
                    "l1" => LipschitzNorm::L1,
                    "l2" => LipschitzNorm::L2,
                    "linf" => LipschitzNorm::Linf,
                    other => {
                        return Err(at.error(
                            n,
                            format!("norm must be \"l1\", \"l2\" or \"linf\", not {other:?}"),
                        ))
                    }
                },
            };
            Family::FirstOrder { lipschitz, norm }
        } else if lattice {
            if let Some(e) = &raw.class.eps {
                return Err(at.error(
                    e,
                    "the lattice family takes rho (when cont_dim > 0), not eps",
                ));
            }
            let int_lower = raw.class.int_lower.as_ref().map_or(0, |v| *v.get_ref());
            let int_upper = raw.class.int_upper.as_ref().map_or(1, |v| *v.get_ref());
            let cont_dim = match &raw.class.cont_dim {
                None => 0,
                Some(v) if !(0..=1_000_000).contains(v.get_ref()) => {
                    return Err(at.error(
                        v,
                        format!("cont_dim = {} must be between 0 and 1000000", v.get_ref()),
                    ))
                }
                Some(v) => *v.get_ref() as usize,
            };
            if let Err(e) = LatticeClass::integer(1, int_lower, int_upper) {
                let place = raw
                    .class
                    .int_upper
                    .as_ref()
                    .or(raw.class.int_lower.as_ref())
                    .map_or(raw.class.family.span().start, |v| v.span().start);
                return Err(at.error_at(place, e.to_string()));
            }
            if cont_dim == 0 {
                if let Some(r) = &raw.class.rho {
                    return Err(at.error(
                        r,
                        "a pure integer class (cont_dim = 0) has no accuracy; remove rho",
                    ));
                }
            }
            Family::Lattice {
                int_lower,
                int_upper,
                cont_dim,
            }
        } else {
            if let Some(e) = &raw.class.eps {
                return Err(at.error(e, "the feasibility family takes rho, not eps"));
            }
            Family::Feasibility { promise }
        };
        let half_width = *raw.class.half_width.get_ref();
        if !(half_width.is_finite() && half_width > 0.0) {
            return Err(at.error(
                &raw.class.half_width,
                "half_width must be a positive finite number",
            ));
        }
        if raw.class.dims.get_ref().is_empty() {
            return Err(at.error(&raw.class.dims, "the grid of dimensions is empty"));
        }
        let mut dims = Vec::new();
        for d in raw.class.dims.get_ref() {
            let value = *d.get_ref();
            if !(1..=1_000_000).contains(&value) {
                return Err(at.error(
                    d,
                    format!("dimension {value} must be between 1 and 1000000"),
                ));
            }
            dims.push(value as usize);
        }
        dims.sort_unstable();
        dims.dedup();
        let pure_integer = matches!(family, Family::Lattice { cont_dim: 0, .. });
        let grid_name = if first_order { "eps" } else { "rho" };
        let mut accuracies = Vec::new();
        if pure_integer {
            accuracies.push(NO_ACCURACY);
        } else {
            let grid = match (&raw.class.rho, &raw.class.eps, first_order) {
                (Some(r), _, false) => r,
                (_, Some(e), true) => e,
                _ => {
                    return Err(at.error(
                        &raw.class.family,
                        format!("the {family_name} family needs a grid {grid_name} = [...]"),
                    ))
                }
            };
            if grid.get_ref().is_empty() {
                return Err(at.error(grid, format!("the grid of accuracies {grid_name} is empty")));
            }
            let probe = |value: f64| -> Result<(), Error> {
                class_for(&family, 1, half_width, value).map(|_| ())
            };
            for r in grid.get_ref() {
                let value = *r.get_ref();
                probe(value).map_err(|e| at.error(r, format!("{grid_name} = {value}: {e}")))?;
                accuracies.push(value);
            }
            accuracies.sort_by(|a, b| b.total_cmp(a));
            accuracies.dedup();
        }
        let adversary = raw.adversary.name.get_ref().clone();
        if !ADVERSARIES.iter().any(|a| a.name == adversary) {
            return Err(at.error(
                &raw.adversary.name,
                format!("unknown adversary {adversary:?}; `naysayer list` shows them"),
            ));
        }
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
                if METHODS.iter().any(|m| m.name == name) {
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
                external.push(ExternalEntry {
                    name: name.clone(),
                    command,
                    deterministic: entry.deterministic.unwrap_or(true),
                    answer_timeout,
                });
            }
        }
        if raw.play.methods.get_ref().is_empty() {
            return Err(at.error(&raw.play.methods, "the list of methods is empty"));
        }
        let mut methods = Vec::new();
        for m in raw.play.methods.get_ref() {
            let name = m.get_ref();
            if external.iter().any(|e| &e.name == name) {
                if methods.contains(name) {
                    return Err(at.error(m, format!("method {name:?} is listed twice")));
                }
                methods.push(name.clone());
                continue;
            }
            if !METHODS.iter().any(|info| info.name == name) {
                return Err(at.error(
                    m,
                    format!("unknown method {name:?}; `naysayer list` shows the built-in methods"),
                ));
            }
            let any_dim = dims.iter().any(|&d| {
                class_for(&family, d, half_width, accuracies[0])
                    .map(|c| method::supports(name, &c).is_ok())
                    .unwrap_or(false)
            });
            if !any_dim {
                return Err(at.error(
                    m,
                    format!("method {name:?} supports no dimension of the grid"),
                ));
            }
            if methods.contains(name) {
                return Err(at.error(m, format!("method {name:?} is listed twice")));
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
        let budget = *raw.play.budget.get_ref();
        if budget < 1 {
            return Err(at.error(
                &raw.play.budget,
                format!("budget {budget} must be at least 1"),
            ));
        }
        let (mut chart_dim, mut chart_accuracy) = (
            *dims.last().expect("non-empty"),
            *accuracies.last().expect("non-empty"),
        );
        if let Some(charts) = &raw.charts {
            if let Some(d) = &charts.dim {
                let value = *d.get_ref();
                if value < 1 || !dims.contains(&(value as usize)) {
                    return Err(at.error(
                        d,
                        format!("charts.dim = {value} is not in the grid of dimensions"),
                    ));
                }
                chart_dim = value as usize;
            }
            for (key, spanned) in [("rho", &charts.rho), ("eps", &charts.eps)] {
                let Some(r) = spanned else { continue };
                let value = *r.get_ref();
                if key != grid_name {
                    return Err(at.error(
                        r,
                        format!(
                            "charts.{key} does not belong to this family (use charts.{grid_name})"
                        ),
                    ));
                }
                if !accuracies.contains(&value) {
                    return Err(at.error(
                        r,
                        format!("charts.{key} = {value} is not in the grid of accuracies"),
                    ));
                }
                chart_accuracy = value;
            }
        }
        Ok(Scenario {
            name,
            description: raw.description,
            dims,
            half_width,
            accuracies,
            family,
            adversary,
            methods,
            seeds,
            budget: budget as u64,
            transcripts: raw.play.transcripts,
            chart_dim,
            chart_accuracy,
            source_text: text.to_string(),
            external,
        })
    }

    /// Every game in canonical order: d ascending, then accuracy descending (R/rho or
    /// L R/eps ascending), then methods in file order, then seeds in file order
    /// (deterministic methods play the first seed only). Pairs a method does not support
    /// are left out.
    pub fn games(&self) -> Vec<GridGame> {
        let mut games = Vec::new();
        for &d in &self.dims {
            for &accuracy in &self.accuracies {
                let Ok(class) = self.class_at(d, accuracy) else {
                    continue;
                };
                for name in &self.methods {
                    let external = self.external_method(name);
                    if external.is_none() && method::supports(name, &class).is_err() {
                        continue;
                    }
                    let deterministic = match external {
                        Some(entry) => entry.deterministic,
                        None => METHODS
                            .iter()
                            .find(|m| m.name == name)
                            .is_some_and(|m| m.deterministic),
                    };
                    let seeds = if deterministic {
                        &self.seeds[..1]
                    } else {
                        &self.seeds[..]
                    };
                    for &seed in seeds {
                        games.push(GridGame {
                            index: games.len() as u64,
                            class: class.clone(),
                            method: name.clone(),
                            seed,
                        });
                    }
                }
            }
        }
        games
    }

    /// The results folder: `<root>/<name>`.
    pub fn results_dir(&self, root: &Path) -> PathBuf {
        root.join(&self.name)
    }
}
