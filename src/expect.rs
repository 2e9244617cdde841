//! The regression gate: expectation files that pin the numbers of chosen games, so that
//! a user's CI fails when a solver's worst-case count drifts.
//!
//! An expectation file is TOML (by convention in `adversaries/expectations/`, named like
//! its scenario: `adversaries/expectations/halving.toml` for `adversaries/halving.toml`;
//! outside `adversaries/` itself so that `sweep adversaries/*.toml` plays only scenarios),
//! a list of `[[game]]` tables. Each table selects games by any of the identity columns
//! of `games.csv` ([`SELECTORS`]: `scenario`, `adversary`, `method`, `dim`, `accuracy`
//! (rho or eps, compared exactly as `f64`), `seed`, `horizon` for large-scale games, ...;
//! a key left out matches every game), and pins one or more results of every game it
//! selects ([`PINS`]):
//!
//! ```toml
//! [[game]]
//! method = "midpoint"
//! dim = 2
//! accuracy = 1e-2
//! queries_used = 13                        # exactly 13
//! certified_lower_bound = { min = 13 }     # at least 13
//! outcome = "output-stands"                # a text result, exactly
//!
//! [[game]]
//! method = "ellipsoid"
//! queries_used = { min = 10, max = 400 }   # every ellipsoid game of the sweep
//! certified_uncertainty = { max = 1e-2 }   # first-order games: certified uncertainty
//!
//! [[game]]
//! adversary = "rotation"                   # large-scale demonstrations
//! horizon = 64
//! gap_over_lower = { min = 1.0 }
//! holds = "yes"
//! ```
//!
//! A number is a whole number or float (exactly that value) or a table with `min`,
//! `max` (inclusive) and/or `exact`; a text result is a string, compared exactly.
//! `queries_used` of a game the budget ended is its censored count (the budget); a game
//! without a verified certificate has no certified lower bound, which fails every
//! expectation on it (an empty cell never satisfies a pin). A table that selects no game
//! at all is a drift too (the game disappeared), except when only one shard of a sweep
//! is checked. Parsing is strict: an unknown key or a wrong type is an error naming the
//! file, line and column.
//!
//! `naysayer play --expect FILE` and `naysayer sweep --expect FILE` check their results
//! against the file and exit with [`crate::cli::EXIT_DRIFT`] when any result drifts,
//! printing one line per drift that names the game and both values.

use std::collections::BTreeMap;
use std::fmt;
use std::path::{Path, PathBuf};

use toml::{Spanned, Value};

use crate::csv;
use crate::error::Error;
use crate::family::boxes::{outcome_name, ClassFacts};
use crate::family::GameReport;
use crate::runner::{DemoReport, GameSpec, Report};
use crate::transcript::Ending;

/// The keys that select games (identity columns of `games.csv`).
pub const SELECTORS: &[&str] = &[
    "scenario",
    "family",
    "adversary",
    "method",
    "seed",
    "dim",
    "half_width",
    "accuracy",
    "ratio",
    "lipschitz",
    "promise",
    "cont_dim",
    "int_lower",
    "int_upper",
    "budget",
    "kind",
    "radius",
    "smoothness",
    "strong_convexity",
    "horizon",
];

/// The results an expectation can pin: numbers first, then texts.
pub const PINS: &[&str] = &[
    "queries_used",
    "certified_lower_bound",
    "certified_uncertainty",
    "gap",
    "gap_over_lower",
    "replayed",
    "outcome",
    "verified",
    "censored",
    "claimed",
    "holds",
];

/// The pinned results that are texts.
const TEXT_PINS: &[&str] = &["outcome", "verified", "censored", "claimed", "holds"];

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

/// What a key of a `[[game]]` table asks of a game's cell.
#[derive(Clone, Debug, PartialEq)]
pub enum Check {
    /// A number in a range.
    Number(Range),
    /// Exactly this text.
    Text(String),
}

impl Check {
    fn holds(&self, cell: &str) -> bool {
        match self {
            Check::Text(t) => cell == t,
            Check::Number(range) => cell.parse::<f64>().is_ok_and(|v| range.holds(v)),
        }
    }

    fn expected(&self) -> String {
        match self {
            Check::Text(t) => format!("exactly {t:?}"),
            Check::Number(range) => range.to_string(),
        }
    }
}

/// One `[[game]]` table: which games it selects and what it pins.
#[derive(Clone, Debug, PartialEq)]
pub struct Expectation {
    /// 1-based line of the table in its file.
    pub line: usize,
    /// Selectors (column, wanted value); a column left out matches every game.
    pub selectors: Vec<(String, Check)>,
    /// The pinned results (column, check).
    pub checks: Vec<(String, Check)>,
}

/// A parsed expectation file.
#[derive(Clone, Debug, PartialEq)]
pub struct Expectations {
    /// The file (for messages).
    pub path: PathBuf,
    /// Its tables, in file order.
    pub games: Vec<Expectation>,
}

/// The results of one finished game, as the gate compares them: its `games.csv` cells by
/// column name.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct GameResult {
    /// Cells by column name.
    pub cells: BTreeMap<String, String>,
}

impl GameResult {
    fn set(&mut self, column: &str, value: impl ToString) {
        self.cells.insert(column.to_string(), value.to_string());
    }

    /// The cell of `column` (empty when the game has no such column).
    pub fn get(&self, column: &str) -> &str {
        self.cells.get(column).map_or("", String::as_str)
    }

    /// The result of a certificate game played outside a sweep.
    pub fn from_certificate(spec: &GameSpec, report: &Report) -> GameResult {
        Self::from_parts(spec, Some(report), None)
    }

    /// The result of a game played by `naysayer play` (no scenario).
    pub fn from_report(spec: &GameSpec, report: &GameReport) -> GameResult {
        match report {
            GameReport::Certificate(r) => Self::from_parts(spec, Some(r), None),
            GameReport::Demonstration(r) => Self::from_parts(spec, None, Some(r)),
        }
    }

    fn from_parts(
        spec: &GameSpec,
        certificate: Option<&Report>,
        demonstration: Option<&DemoReport>,
    ) -> GameResult {
        let mut r = GameResult::default();
        r.set("scenario", "");
        r.set("family", spec.class.family_name());
        r.set("adversary", &spec.adversary);
        r.set("seed", spec.seed);
        r.set("budget", spec.budget);
        let number = |v: f64| {
            if v.is_nan() {
                String::new()
            } else {
                v.to_string()
            }
        };
        match (certificate, demonstration) {
            (Some(report), _) => {
                let facts = ClassFacts::of(&spec.class);
                r.set("family", facts.family);
                r.set("method", &report.header.method);
                r.set("dim", facts.dim);
                r.set("accuracy", number(facts.accuracy));
                r.set("queries_used", report.record.queries_used);
                r.set(
                    "censored",
                    matches!(report.record.ending, Ending::BudgetExhausted),
                );
                match &report.verdict {
                    Ok(v) => {
                        r.set(
                            "certified_lower_bound",
                            v.certified_lower_bound()
                                .map_or(String::new(), |b| b.to_string()),
                        );
                        r.set(
                            "certified_uncertainty",
                            v.certified_uncertainty
                                .map_or(String::new(), |u| u.to_string()),
                        );
                        r.set("outcome", outcome_name(&v.outcome));
                        r.set("verified", "yes");
                    }
                    Err(e) => {
                        r.set("outcome", format!("rejected: {}", e.chain()));
                        r.set("verified", "no");
                    }
                }
            }
            (None, None) => {}
            (None, Some(report)) => {
                r.set("method", &report.header.method);
                r.set("dim", spec.class.query_dim());
                r.set("horizon", spec.budget);
                r.set("queries_used", report.record.queries_used);
                r.set(
                    "censored",
                    matches!(report.record.ending, Ending::BudgetExhausted),
                );
                if let Ok(v) = &report.judgement {
                    r.set("gap", v.gap.map_or(String::new(), |g| g.to_string()));
                    r.set(
                        "gap_over_lower",
                        v.gap
                            .map_or(String::new(), |g| (g / v.lower_bound).to_string()),
                    );
                    r.set("claimed", if v.claimed { "yes" } else { "no" });
                    r.set(
                        "holds",
                        v.holds.map_or("", |h| if h { "yes" } else { "no" }),
                    );
                    r.set("replayed", v.replayed);
                }
            }
        }
        r
    }

    /// Reads every row of a sweep's `games.csv` (any family: the header names the
    /// columns).
    pub fn from_csv(path: &Path) -> Result<Vec<GameResult>, Error> {
        let text = std::fs::read_to_string(path).map_err(|source| Error::Io {
            action: "cannot read",
            path: path.to_path_buf(),
            source,
        })?;
        let mut lines = text.lines();
        let columns = csv::split(lines.next().unwrap_or_default());
        let mut results = Vec::new();
        for (i, line) in lines.enumerate() {
            let fields = csv::split(line);
            if fields.len() != columns.len() {
                return Err(Error::Results {
                    path: path.to_path_buf(),
                    reason: format!("line {}: wrong number of fields", i + 2),
                });
            }
            results.push(GameResult {
                cells: columns.iter().cloned().zip(fields).collect(),
            });
        }
        Ok(results)
    }

    /// A name for messages: scenario, method, adversary, d, accuracy or horizon, seed.
    pub fn label(&self) -> String {
        let scenario = match self.get("scenario") {
            "" => String::new(),
            s => format!("scenario {s}, "),
        };
        let place = match self.get("horizon") {
            "" => format!(
                "accuracy {}",
                self.get("accuracy").parse::<f64>().unwrap_or(f64::NAN)
            ),
            t => format!("horizon {t}"),
        };
        format!(
            "{scenario}method {} against {}, d = {}, {place}, seed {}",
            self.get("method"),
            self.get("adversary"),
            self.get("dim"),
            self.get("seed")
        )
    }
}

/// One result that left its expected range.
#[derive(Clone, Debug, PartialEq)]
pub struct Drift {
    /// The expectation file.
    pub path: PathBuf,
    /// Line of the `[[game]]` table.
    pub line: usize,
    /// The game ([`GameResult::label`]), or `None` when the table selected no game.
    pub game: Option<String>,
    /// The column that drifted.
    pub quantity: Option<String>,
    /// The value found ("none" when the game has none).
    pub found: String,
    /// The expected range.
    pub expected: String,
}

impl fmt::Display for Drift {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match (&self.game, &self.quantity) {
            (Some(game), Some(q)) => write!(
                f,
                "{}:{}: game ({game}): {} {}, expected {}",
                self.path.display(),
                self.line,
                q.replace('_', " "),
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

/// Reads one pinned number: a number, or a table with `exact` or `min`/`max`.
fn range_of(value: &Value, bad: &dyn Fn(&str) -> Error) -> Result<Range, Error> {
    let number = |v: &Value| -> Result<f64, Error> {
        match v {
            Value::Integer(i) => Ok(*i as f64),
            Value::Float(f) => Ok(*f),
            other => Err(bad(&format!(
                "expected a number, found {}",
                other.type_str()
            ))),
        }
    };
    let range = match value {
        Value::Integer(_) | Value::Float(_) => {
            let v = number(value)?;
            Range {
                min: Some(v),
                max: Some(v),
            }
        }
        Value::Table(t) => {
            if let Some(key) = t
                .keys()
                .find(|k| !["min", "max", "exact"].contains(&k.as_str()))
            {
                return Err(bad(&format!(
                    "unknown key {key:?} in a range (use `exact`, `min`, `max`)"
                )));
            }
            let get = |k: &str| t.get(k).map(number).transpose();
            let (exact, min, max) = (get("exact")?, get("min")?, get("max")?);
            if exact.is_some() && (min.is_some() || max.is_some()) {
                return Err(bad("give either `exact` or `min`/`max`, not both"));
            }
            match exact {
                Some(v) => Range {
                    min: Some(v),
                    max: Some(v),
                },
                None => Range { min, max },
            }
        }
        other => {
            return Err(bad(&format!(
                "expected a number or a table {{ min = ..., max = ... }}, found {}",
                other.type_str()
            )))
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
        let text =
            crate::files::read_capped(path, crate::files::MAX_SMALL_FILE, "expectation file")?;
        Expectations::parse(&text, path)
    }

    /// Parses an expectation file's text; `path` is used in messages.
    pub fn parse(text: &str, path: &Path) -> Result<Expectations, Error> {
        let error = |offset: usize, reason: &str| {
            crate::family::error_at(path, text, offset, format!("expectation file: {reason}"))
        };
        #[derive(serde::Deserialize)]
        #[serde(deny_unknown_fields)]
        struct RawFile {
            #[serde(default)]
            game: Vec<Spanned<BTreeMap<String, Spanned<Value>>>>,
        }
        let raw: RawFile = toml::from_str(text).map_err(|e| {
            let offset = e.span().map_or(0, |s| s.start);
            error(offset, e.message().trim())
        })?;
        let mut games = Vec::new();
        for table in &raw.game {
            let start = table.span().start;
            let mut selectors = Vec::new();
            let mut checks = Vec::new();
            for (key, value) in table.get_ref() {
                let at = value.span().start;
                let bad = |reason: &str| error(at, &format!("{key}: {reason}"));
                if SELECTORS.contains(&key.as_str()) {
                    let check = match value.get_ref() {
                        Value::String(s) => Check::Text(s.clone()),
                        Value::Integer(i) => Check::Number(Range {
                            min: Some(*i as f64),
                            max: Some(*i as f64),
                        }),
                        Value::Float(f) if f.is_finite() => Check::Number(Range {
                            min: Some(*f),
                            max: Some(*f),
                        }),
                        other => {
                            return Err(bad(&format!(
                                "a selector is a string or a number, not {}",
                                other.type_str()
                            )))
                        }
                    };
                    selectors.push((key.clone(), check));
                } else if TEXT_PINS.contains(&key.as_str()) {
                    match value.get_ref() {
                        Value::String(s) => checks.push((key.clone(), Check::Text(s.clone()))),
                        other => {
                            return Err(bad(&format!(
                                "expected a string, found {}",
                                other.type_str()
                            )))
                        }
                    }
                } else if PINS.contains(&key.as_str()) {
                    checks.push((key.clone(), Check::Number(range_of(value.get_ref(), &bad)?)));
                } else {
                    return Err(error(
                        at,
                        &format!(
                            "unknown key {key:?}; a [[game]] table selects by {} and pins {}",
                            SELECTORS.join(", "),
                            PINS.join(", ")
                        ),
                    ));
                }
            }
            if checks.is_empty() {
                return Err(error(
                    start,
                    &format!("a [[game]] table must pin a result ({})", PINS.join(", ")),
                ));
            }
            games.push(Expectation {
                line: text[..start.min(text.len())].matches('\n').count() + 1,
                selectors,
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
                for (column, check) in &e.checks {
                    let cell = r.get(column);
                    if check.holds(cell) {
                        continue;
                    }
                    let found = match cell {
                        "" => "none".to_string(),
                        v if column == "queries_used" && r.get("censored") == "true" => {
                            format!("{v} (censored by the budget)")
                        }
                        v => v.to_string(),
                    };
                    drifts.push(Drift {
                        path: self.path.clone(),
                        line: e.line,
                        game: Some(r.label()),
                        quantity: Some(column.clone()),
                        found,
                        expected: check.expected(),
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
        self.selectors
            .iter()
            .all(|(column, check)| check.holds(r.get(column)))
    }
}
