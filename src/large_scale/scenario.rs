//! The `large-scale` scenario family (docs/theory.md §3): a sweep of demonstration games over
//! a grid of query counts T in one large-scale class.
//!
//! ```toml
//! name = "large-scale"                  # results go to results/<name>/
//! description = "Non-span methods against the adaptive-rotation adversary."
//!
//! [class]
//! family = "large-scale"
//! kind = "nonsmooth"                    # "nonsmooth", "smooth" or "strongly-convex"
//! dim = 400                             # d, at least what the oracle needs at the largest T
//! radius = 1.0                          # R >= ||x_0 - x*||
//! lipschitz = 1.0                       # M (nonsmooth only)
//! # smoothness = 1.0                    # beta (smooth and strongly-convex)
//! # strong_convexity = 0.01             # mu (strongly-convex only), 0 < mu < beta
//! queries = [1, 2, 4, 8, 16, 32, 64]    # grid of T
//!
//! [adversary]
//! name = "rotation"                     # an adversary or an instance (see below)
//!
//! [play]
//! methods = ["subgradient", "coordinate-search", "random-direction"]
//! seeds = [0, 1, 2]                     # seeded methods play every seed
//! transcripts = false                   # true: results/<name>/transcripts/game-N.jsonl,
//!                                       # the demonstration transcript with the rotated
//!                                       # witness (rotation adversaries only)
//! ```
//!
//! Oracles: `rotation` (nonsmooth, any deterministic method, needs d >= 2T + 2),
//! `rotation-chain` (smooth and strongly convex, d >= 3T + 2), and the instances
//! `drori-teboulle`, `nesterov-nonsmooth` (nonsmooth, d >= T + 1), `smooth-chain`,
//! `strongly-convex-chain` (d >= 2T + 1), each built for horizon T. Methods: those of
//! [`crate::method::large_scale::LARGE_SCALE_METHODS`] that play the class.
//!
//! Parsing is strict: an unknown key, a wrong type or an impossible value (a dimension
//! too small for the largest T, a method that does not play the class, a parameter of
//! another kind) is an error naming the file, line and column.

use std::path::Path;

use serde::Deserialize;
use toml::Spanned;

use crate::class::LargeScaleClass;
use crate::error::Error;
use crate::large_scale::game::{needed_dim, oracle_supports, ORACLES};
use crate::method::large_scale::{supports, LARGE_SCALE_METHODS};

/// The family name in scenario files.
pub const FAMILY: &str = "large-scale";

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Raw {
    name: Spanned<String>,
    description: String,
    class: RawClass,
    adversary: RawAdversary,
    play: RawPlay,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawClass {
    family: Spanned<String>,
    kind: Spanned<String>,
    dim: Spanned<i64>,
    radius: Spanned<f64>,
    #[serde(default)]
    lipschitz: Option<Spanned<f64>>,
    #[serde(default)]
    smoothness: Option<Spanned<f64>>,
    #[serde(default)]
    strong_convexity: Option<Spanned<f64>>,
    queries: Spanned<Vec<Spanned<i64>>>,
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
    transcripts: bool,
}

#[derive(Deserialize)]
struct Peek {
    class: Option<PeekClass>,
}

#[derive(Deserialize)]
struct PeekClass {
    family: Option<String>,
}

/// True when `text` is a TOML scenario whose `class.family` is `large-scale`.
pub fn is_large_scale(text: &str) -> bool {
    toml::from_str::<Peek>(text)
        .ok()
        .and_then(|p| p.class?.family)
        .is_some_and(|f| f == FAMILY)
}

/// A validated large-scale scenario.
#[derive(Clone, Debug, PartialEq)]
pub struct LargeScaleScenario {
    /// Name; results go to `results/<name>/`.
    pub name: String,
    /// What the scenario shows.
    pub description: String,
    /// The class (with its dimension).
    pub class: LargeScaleClass,
    /// The grid of T, ascending, distinct.
    pub queries: Vec<u64>,
    /// Oracle name.
    pub oracle: String,
    /// Methods, in file order.
    pub methods: Vec<String>,
    /// Seeds, in file order.
    pub seeds: Vec<u64>,
    /// Whether to write each adversary game's demonstration transcript.
    pub transcripts: bool,
    /// The TOML text.
    pub source_text: String,
}

/// One game of a large-scale sweep.
#[derive(Clone, Debug, PartialEq)]
pub struct LargeScaleGame {
    /// Position in the canonical order (T ascending, methods in file order, seeds).
    pub index: u64,
    /// T.
    pub queries: u64,
    /// Method.
    pub method: String,
    /// Seed.
    pub seed: u64,
}

impl LargeScaleScenario {
    /// Reads and validates the scenario file at `path`.
    pub fn from_file(path: &Path) -> Result<Self, Error> {
        let text = std::fs::read_to_string(path).map_err(|source| Error::Io {
            action: "cannot read scenario",
            path: path.to_path_buf(),
            source,
        })?;
        Self::parse(&text, path)
    }

    /// Parses and validates scenario text; `path` names it in errors.
    pub fn parse(text: &str, path: &Path) -> Result<Self, Error> {
        let at =
            |offset: usize, reason: String| crate::scenario::error_at(path, text, offset, reason);
        let raw: Raw = toml::from_str(text).map_err(|e| {
            at(
                e.span().map_or(0, |s| s.start),
                e.message().trim().to_string(),
            )
        })?;
        let spot = |s: std::ops::Range<usize>| s.start;
        let name = raw.name.get_ref().clone();
        if name.is_empty()
            || !name
                .chars()
                .all(|c| c.is_ascii_alphanumeric() || c == '-' || c == '_')
        {
            return Err(at(
                spot(raw.name.span()),
                "name must be non-empty and use only letters, digits, '-' and '_'".into(),
            ));
        }
        let c = &raw.class;
        if c.family.get_ref() != FAMILY {
            return Err(at(
                spot(c.family.span()),
                format!("this parser reads the {FAMILY:?} family only"),
            ));
        }
        let dim = *c.dim.get_ref();
        if dim < 1 {
            return Err(at(
                spot(c.dim.span()),
                format!("dim = {dim} must be at least 1"),
            ));
        }
        let dim = dim as usize;
        let radius = *c.radius.get_ref();
        let kind = c.kind.get_ref().as_str();
        let refuse = |field: &Option<Spanned<f64>>, key: &str| -> Result<(), Error> {
            match field {
                Some(v) => Err(at(
                    spot(v.span()),
                    format!("{key} does not belong to the {kind} kind"),
                )),
                None => Ok(()),
            }
        };
        let need = |field: &Option<Spanned<f64>>, key: &str| -> Result<f64, Error> {
            field.as_ref().map(|v| *v.get_ref()).ok_or_else(|| {
                at(
                    spot(c.kind.span()),
                    format!("the {kind} kind needs {key} = ..."),
                )
            })
        };
        let class = match kind {
            "nonsmooth" => {
                refuse(&c.smoothness, "smoothness")?;
                refuse(&c.strong_convexity, "strong_convexity")?;
                LargeScaleClass::nonsmooth(dim, need(&c.lipschitz, "lipschitz")?, radius)
            }
            "smooth" => {
                refuse(&c.lipschitz, "lipschitz")?;
                refuse(&c.strong_convexity, "strong_convexity")?;
                LargeScaleClass::smooth(dim, need(&c.smoothness, "smoothness")?, radius)
            }
            "strongly-convex" => {
                refuse(&c.lipschitz, "lipschitz")?;
                LargeScaleClass::strongly_convex(
                    dim,
                    need(&c.smoothness, "smoothness")?,
                    need(&c.strong_convexity, "strong_convexity")?,
                    radius,
                )
            }
            other => {
                return Err(at(
                    spot(c.kind.span()),
                    format!(
                    "kind must be \"nonsmooth\", \"smooth\" or \"strongly-convex\", not {other:?}"
                ),
                ))
            }
        }
        .map_err(|e| at(spot(c.kind.span()), e.to_string()))?;
        if c.queries.get_ref().is_empty() {
            return Err(at(
                spot(c.queries.span()),
                "the grid of queries is empty".into(),
            ));
        }
        let mut queries = Vec::new();
        for q in c.queries.get_ref() {
            let value = *q.get_ref();
            if !(1..=100_000).contains(&value) {
                return Err(at(
                    spot(q.span()),
                    format!("queries = {value} must be between 1 and 100000"),
                ));
            }
            queries.push(value as u64);
        }
        queries.sort_unstable();
        queries.dedup();
        let oracle = raw.adversary.name.get_ref().clone();
        if !ORACLES.iter().any(|o| o.name == oracle) {
            let known: Vec<&str> = ORACLES.iter().map(|o| o.name).collect();
            return Err(at(
                spot(raw.adversary.name.span()),
                format!(
                    "unknown large-scale oracle {oracle:?}; known: {}",
                    known.join(", ")
                ),
            ));
        }
        if !oracle_supports(&oracle, &class) {
            return Err(at(
                spot(raw.adversary.name.span()),
                format!("{oracle} does not play the {kind} class"),
            ));
        }
        let largest = *queries.last().expect("non-empty") as usize;
        let needed = needed_dim(&oracle, largest);
        if dim < needed {
            return Err(at(
                spot(c.dim.span()),
                format!("dim = {dim} is too small: {oracle} at T = {largest} needs d >= {needed}"),
            ));
        }
        if raw.play.methods.get_ref().is_empty() {
            return Err(at(
                spot(raw.play.methods.span()),
                "the list of methods is empty".into(),
            ));
        }
        let mut methods: Vec<String> = Vec::new();
        for m in raw.play.methods.get_ref() {
            let name = m.get_ref();
            if let Err(reason) = supports(name, &class) {
                return Err(at(spot(m.span()), reason));
            }
            if methods.contains(name) {
                return Err(at(
                    spot(m.span()),
                    format!("method {name:?} is listed twice"),
                ));
            }
            methods.push(name.clone());
        }
        if raw.play.seeds.get_ref().is_empty() {
            return Err(at(
                spot(raw.play.seeds.span()),
                "the list of seeds is empty".into(),
            ));
        }
        let mut seeds = Vec::new();
        for s in raw.play.seeds.get_ref() {
            let value = *s.get_ref();
            if value < 0 || seeds.contains(&(value as u64)) {
                return Err(at(
                    spot(s.span()),
                    format!("seed {value} must be non-negative and listed once"),
                ));
            }
            seeds.push(value as u64);
        }
        Ok(LargeScaleScenario {
            name,
            description: raw.description,
            class,
            queries,
            oracle,
            methods,
            seeds,
            transcripts: raw.play.transcripts,
            source_text: text.to_string(),
        })
    }

    /// Every game in canonical order: T ascending, methods in file order, seeds in file
    /// order (deterministic methods play the first seed only).
    pub fn games(&self) -> Vec<LargeScaleGame> {
        let mut games = Vec::new();
        for &t in &self.queries {
            for m in &self.methods {
                let deterministic = LARGE_SCALE_METHODS
                    .iter()
                    .find(|info| info.name == m)
                    .is_some_and(|info| info.deterministic);
                let seeds = if deterministic {
                    &self.seeds[..1]
                } else {
                    &self.seeds[..]
                };
                for &seed in seeds {
                    games.push(LargeScaleGame {
                        index: games.len() as u64,
                        queries: t,
                        method: m.clone(),
                        seed,
                    });
                }
            }
        }
        games
    }
}
