//! The regression gate: expectation files that pin the numbers of chosen games, so that
//! a user's CI fails when a solver's worst-case count drifts.
//!
//! An expectation file is TOML (by convention in `adversaries/expectations/`, named like
//! its scenario: `adversaries/expectations/halving.toml` for `adversaries/halving.toml`;
//! outside `adversaries/` itself so that `sweep adversaries/*.toml` plays only scenarios),
//! a list of `[[game]]` tables. Each table selects games by any of the keys `scenario`,
//! `adversary`, `method`, `dim`, `accuracy` (rho or eps, compared exactly as `f64`) and
//! `seed` (a key left out matches every game), and pins one or more numbers of every
//! game it selects:
//!
//! ```toml
//! [[game]]
//! method = "midpoint"
//! dim = 2
//! accuracy = 1e-2
//! queries_used = 13                        # exactly 13
//! certified_lower_bound = { min = 13 }     # at least 13
//!
//! [[game]]
//! method = "ellipsoid"
//! queries_used = { min = 10, max = 400 }   # every ellipsoid game of the sweep
//! certified_uncertainty = { max = 1e-2 }   # first-order games: eps_cert
//! ```
//!
//! A number is a whole number or float (exactly that value) or a table with `min`,
//! `max` (inclusive) and/or `exact`. `queries_used` of a game the budget ended is its
//! censored count (the budget); a game without a verified certificate has no certified
//! lower bound, which fails every expectation on it. A table that selects no game at
//! all is a drift too (the game disappeared), except when only one shard of a sweep is
//! checked. Parsing is strict: an unknown key or a wrong type is an error naming the
//! file, line and column.
//!
//! `naysayer play --expect FILE` and `naysayer sweep --expect FILE` check their results
//! against the file and exit with [`crate::cli::EXIT_DRIFT`] when any number drifts,
//! printing one line per drift that names the game and both numbers.

use std::fmt;
use std::path::{Path, PathBuf};

use serde::Deserialize;
use toml::Spanned;

use crate::error::Error;
use crate::runner::{GameSpec, Report};
use crate::sweep::{split_csv_line, ClassFacts, COLUMNS};

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawFile {
    #[serde(default)]
    game: Vec<Spanned<RawGame>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawGame {
    scenario: Option<String>,
    adversary: Option<String>,
    method: Option<String>,
    dim: Option<u64>,
    accuracy: Option<f64>,
    seed: Option<u64>,
    queries_used: Option<Spanned<RawRange>>,
    certified_lower_bound: Option<Spanned<RawRange>>,
    certified_uncertainty: Option<Spanned<RawRange>>,
}

#[derive(Deserialize)]
#[serde(untagged)]
enum RawRange {
    Integer(i64),
    Float(f64),
    Table(RawBounds),
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawBounds {
    min: Option<f64>,
    max: Option<f64>,
    exact: Option<f64>,
}

/// The numbers of a game an expectation can pin.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Quantity {
    /// Queries the method asked (the budget when the budget ended the game).
    QueriesUsed,
    /// T* + 1, from the verified certificate.
    CertifiedLowerBound,
    /// eps_cert of a first-order game (docs/theory.md §2.2).
    CertifiedUncertainty,
}

impl Quantity {
    /// The name used in files and messages.
    pub fn name(self) -> &'static str {
        match self {
            Quantity::QueriesUsed => "queries used",
            Quantity::CertifiedLowerBound => "certified lower bound",
            Quantity::CertifiedUncertainty => "certified uncertainty",
        }
    }
}

/// An inclusive range `min <= value <= max` (either end may be open).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Range {
    /// Least value allowed.
    pub min: Option<f64>,
    /// Largest value allowed.
    pub max: Option<f64>,
}

impl Range {
    fn holds(&self, value: f64) -> bool {
        self.min.is_none_or(|m| value >= m) && self.max.is_none_or(|m| value <= m)
    }
}

impl fmt::Display for Range {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match (self.min, self.max) {
            (Some(a), Some(b)) if a == b => write!(f, "exactly {a}"),
            (Some(a), Some(b)) => write!(f, "between {a} and {b}"),
            (Some(a), None) => write!(f, "at least {a}"),
            (None, Some(b)) => write!(f, "at most {b}"),
            (None, None) => write!(f, "any value"),
        }
    }
}

/// One `[[game]]` table: which games it selects and what it pins.
#[derive(Clone, Debug, PartialEq)]
pub struct Expectation {
    /// 1-based line of the table in its file.
    pub line: usize,
    /// Selectors; `None` matches every game.
    pub scenario: Option<String>,
    /// Adversary selector.
    pub adversary: Option<String>,
    /// Method selector.
    pub method: Option<String>,
    /// Dimension selector.
    pub dim: Option<usize>,
    /// Accuracy (rho or eps) selector, exact.
    pub accuracy: Option<f64>,
    /// Seed selector.
    pub seed: Option<u64>,
    /// The pinned numbers.
    pub checks: Vec<(Quantity, Range)>,
}

/// A parsed expectation file.
#[derive(Clone, Debug, PartialEq)]
pub struct Expectations {
    /// The file (for messages).
    pub path: PathBuf,
    /// Its tables, in file order.
    pub games: Vec<Expectation>,
}

/// The numbers of one finished game, as the gate compares them.
#[derive(Clone, Debug, PartialEq)]
pub struct GameResult {
    /// Scenario name (empty for `play`).
    pub scenario: String,
    /// Adversary name.
    pub adversary: String,
    /// Method name.
    pub method: String,
    /// Query dimension.
    pub dim: usize,
    /// rho or eps (NaN for classes without one).
    pub accuracy: f64,
    /// The method's seed.
    pub seed: u64,
    /// Queries used (the budget when censored).
    pub queries_used: u64,
    /// True when the budget ended the game.
    pub censored: bool,
    /// T* + 1, when the certificate was verified.
    pub certified_lower_bound: Option<u64>,
    /// eps_cert, for first-order games with a verified certificate.
    pub certified_uncertainty: Option<f64>,
}

impl GameResult {
    /// The result of a game played by [`crate::runner`].
    pub fn from_report(spec: &GameSpec, report: &Report) -> GameResult {
        let facts = ClassFacts::of(&spec.class);
        let verdict = report.verdict.as_ref().ok();
        GameResult {
            scenario: String::new(),
            adversary: spec.adversary.clone(),
            method: report.header.method.clone(),
            dim: facts.dim,
            accuracy: facts.accuracy,
            seed: spec.seed,
            queries_used: report.record.queries_used,
            censored: matches!(
                report.record.ending,
                crate::transcript::Ending::BudgetExhausted
            ),
            certified_lower_bound: verdict.and_then(|v| v.certified_lower_bound()),
            certified_uncertainty: verdict.and_then(|v| v.certified_uncertainty),
        }
    }

    /// Reads every row of a sweep's `games.csv`.
    pub fn from_csv(path: &Path) -> Result<Vec<GameResult>, Error> {
        let text = std::fs::read_to_string(path).map_err(|source| Error::Io {
            action: "cannot read",
            path: path.to_path_buf(),
            source,
        })?;
        let column = |name: &str| COLUMNS.iter().position(|c| *c == name).unwrap_or(0);
        let bad = |line: usize, what: &str| Error::Results {
            path: path.to_path_buf(),
            reason: format!("line {line}: {what}"),
        };
        let mut results = Vec::new();
        for (i, line) in text.lines().enumerate().skip(1) {
            let f = split_csv_line(line);
            if f.len() != COLUMNS.len() {
                return Err(bad(i + 1, "wrong number of fields"));
            }
            let get = |name: &str| f[column(name)].as_str();
            let number = |name: &str| -> Result<u64, Error> {
                get(name).parse().map_err(|_| bad(i + 1, name))
            };
            results.push(GameResult {
                scenario: get("scenario").to_string(),
                adversary: get("adversary").to_string(),
                method: get("method").to_string(),
                dim: number("dim")? as usize,
                accuracy: get("accuracy").parse().unwrap_or(f64::NAN),
                seed: number("seed")?,
                queries_used: number("queries_used")?,
                censored: get("censored") == "true",
                certified_lower_bound: get("certified_lower_bound").parse().ok(),
                certified_uncertainty: get("certified_uncertainty").parse().ok(),
            });
        }
        Ok(results)
    }

    /// A name for messages: scenario, method, adversary, d, accuracy, seed.
    pub fn label(&self) -> String {
        let scenario = if self.scenario.is_empty() {
            String::new()
        } else {
            format!("scenario {}, ", self.scenario)
        };
        format!(
            "{scenario}method {} against {}, d = {}, accuracy {}, seed {}",
            self.method, self.adversary, self.dim, self.accuracy, self.seed
        )
    }

    fn value(&self, quantity: Quantity) -> Option<f64> {
        match quantity {
            Quantity::QueriesUsed => Some(self.queries_used as f64),
            Quantity::CertifiedLowerBound => self.certified_lower_bound.map(|b| b as f64),
            Quantity::CertifiedUncertainty => self.certified_uncertainty,
        }
    }
}

/// One number that left its expected range.
#[derive(Clone, Debug, PartialEq)]
pub struct Drift {
    /// The expectation file.
    pub path: PathBuf,
    /// Line of the `[[game]]` table.
    pub line: usize,
    /// The game ([`GameResult::label`]), or `None` when the table selected no game.
    pub game: Option<String>,
    /// What drifted.
    pub quantity: Option<Quantity>,
    /// The number found ("none" when the game has none).
    pub found: String,
    /// The expected range.
    pub expected: String,
}

impl fmt::Display for Drift {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match (&self.game, self.quantity) {
            (Some(game), Some(q)) => write!(
                f,
                "{}:{}: game ({game}): {} {}, expected {}",
                self.path.display(),
                self.line,
                q.name(),
                self.found,
                self.expected
            ),
            _ => write!(
                f,
                "{}:{}: the expectation selects no game of these results",
                self.path.display(),
                self.line
            ),
        }
    }
}

fn range_of(raw: &Spanned<RawRange>, error: &dyn Fn(usize, &str) -> Error) -> Result<Range, Error> {
    let bad = |reason: &str| error(raw.span().start, reason);
    let range = match raw.get_ref() {
        RawRange::Integer(v) => Range {
            min: Some(*v as f64),
            max: Some(*v as f64),
        },
        RawRange::Float(v) => Range {
            min: Some(*v),
            max: Some(*v),
        },
        RawRange::Table(b) => {
            if b.exact.is_some() && (b.min.is_some() || b.max.is_some()) {
                return Err(bad("give either `exact` or `min`/`max`, not both"));
            }
            match b.exact {
                Some(v) => Range {
                    min: Some(v),
                    max: Some(v),
                },
                None => Range {
                    min: b.min,
                    max: b.max,
                },
            }
        }
    };
    if [range.min, range.max]
        .iter()
        .flatten()
        .any(|v| !v.is_finite())
    {
        return Err(bad("expected values must be finite"));
    }
    if range.min.is_none() && range.max.is_none() {
        return Err(bad("give `exact`, `min` or `max`"));
    }
    if let (Some(a), Some(b)) = (range.min, range.max) {
        if a > b {
            return Err(bad("`min` exceeds `max`"));
        }
    }
    Ok(range)
}

impl Expectations {
    /// Reads and validates an expectation file.
    pub fn from_file(path: &Path) -> Result<Expectations, Error> {
        let text = std::fs::read_to_string(path).map_err(|source| Error::Io {
            action: "cannot read expectation file",
            path: path.to_path_buf(),
            source,
        })?;
        Expectations::parse(&text, path)
    }

    /// Parses an expectation file's text; `path` is used in messages.
    pub fn parse(text: &str, path: &Path) -> Result<Expectations, Error> {
        let position = |offset: usize| {
            let before = &text[..offset.min(text.len())];
            let line = before.matches('\n').count() + 1;
            let column = before.len() - before.rfind('\n').map_or(0, |i| i + 1) + 1;
            (line, column)
        };
        let error = |offset: usize, reason: &str| {
            let (line, column) = position(offset);
            Error::Scenario {
                path: path.to_path_buf(),
                line,
                column,
                reason: format!("expectation file: {reason}"),
            }
        };
        let raw: RawFile = toml::from_str(text).map_err(|e| {
            let offset = e.span().map_or(0, |s| s.start);
            error(offset, e.message())
        })?;
        let mut games = Vec::new();
        for table in &raw.game {
            let start = table.span().start;
            let g = table.get_ref();
            let mut checks = Vec::new();
            for (quantity, raw) in [
                (Quantity::QueriesUsed, &g.queries_used),
                (Quantity::CertifiedLowerBound, &g.certified_lower_bound),
                (Quantity::CertifiedUncertainty, &g.certified_uncertainty),
            ] {
                if let Some(raw) = raw {
                    checks.push((quantity, range_of(raw, &error)?));
                }
            }
            if checks.is_empty() {
                return Err(error(
                    start,
                    "a [[game]] table must pin queries_used, certified_lower_bound or \
                     certified_uncertainty",
                ));
            }
            games.push(Expectation {
                line: position(start).0,
                scenario: g.scenario.clone(),
                adversary: g.adversary.clone(),
                method: g.method.clone(),
                dim: g.dim.map(|d| d as usize),
                accuracy: g.accuracy,
                seed: g.seed,
                checks,
            });
        }
        if games.is_empty() {
            return Err(error(0, "no [[game]] table"));
        }
        Ok(Expectations {
            path: path.to_path_buf(),
            games,
        })
    }

    /// Every drift of `results` from these expectations; with `require_match`, a table
    /// that selects no game is a drift too.
    pub fn check(&self, results: &[GameResult], require_match: bool) -> Vec<Drift> {
        let mut drifts = Vec::new();
        for e in &self.games {
            let mut matched = false;
            for r in results.iter().filter(|r| e.selects(r)) {
                matched = true;
                for (quantity, range) in &e.checks {
                    let value = r.value(*quantity);
                    if value.is_some_and(|v| range.holds(v)) {
                        continue;
                    }
                    let found = match value {
                        None => "none".to_string(),
                        Some(v) if *quantity == Quantity::QueriesUsed && r.censored => {
                            format!("{v} (censored by the budget)")
                        }
                        Some(v) => v.to_string(),
                    };
                    drifts.push(Drift {
                        path: self.path.clone(),
                        line: e.line,
                        game: Some(r.label()),
                        quantity: Some(*quantity),
                        found,
                        expected: range.to_string(),
                    });
                }
            }
            if require_match && !matched {
                drifts.push(Drift {
                    path: self.path.clone(),
                    line: e.line,
                    game: None,
                    quantity: None,
                    found: String::new(),
                    expected: String::new(),
                });
            }
        }
        drifts
    }
}

impl Expectation {
    fn selects(&self, r: &GameResult) -> bool {
        self.scenario.as_ref().is_none_or(|s| *s == r.scenario)
            && self.adversary.as_ref().is_none_or(|a| *a == r.adversary)
            && self.method.as_ref().is_none_or(|m| *m == r.method)
            && self.dim.is_none_or(|d| d == r.dim)
            && self.accuracy.is_none_or(|a| a == r.accuracy)
            && self.seed.is_none_or(|s| s == r.seed)
    }
}
