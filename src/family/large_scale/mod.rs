//! The large-scale family (docs/theory.md §3): first-order classes in a dimension d far
//! above the number of queries, played at a grid of horizons T. Games end in
//! published-theorem demonstrations, judged to a stated relative tolerance
//! ([`crate::demonstration`]); `naysayer check` refuses them.
//!
//! ```toml
//! name = "large-scale"                  # results go to results/<name>/
//! description = "Non-span methods against the adaptive-rotation adversary."
//!
//! [class]
//! family = "large-scale"
//! kind = "nonsmooth"                    # "nonsmooth", "smooth" or "strongly-convex"
//! dim = 400                             # d, at least what the adversary needs at the largest T
//! radius = 1.0                          # R >= ||x_0 - x*||
//! lipschitz = 1.0                       # M (nonsmooth only)
//! # smoothness = 1.0                    # beta (smooth and strongly-convex)
//! # strong_convexity = 0.01             # mu (strongly-convex only), 0 < mu < beta
//! horizon = [1, 2, 4, 8, 16, 32, 64]    # grid of T (each game lasts T queries)
//!
//! [adversary]
//! name = "rotation"                     # an adaptive adversary or a published instance
//!
//! [play]
//! methods = ["unconstrained-subgradient", "coordinate-search", "random-direction"]
//! seeds = [0, 1, 2]                     # seeded methods play every seed
//! transcripts = false                   # true: results/<name>/transcripts/game-N.jsonl
//! ```
//!
//! The budget of a game is its horizon, so `[play]` takes no `budget`. Adversaries:
//! `rotation` (nonsmooth, any deterministic method, d >= 2T + 2), `rotation-chain`
//! (smooth and strongly convex, d >= 3T + 2), and the published instances
//! `drori-teboulle`, `nesterov-nonsmooth` (nonsmooth, d >= T + 1), `smooth-chain`,
//! `strongly-convex-chain` (d >= 2T + 1), which bind span methods only.

pub mod charts;

use std::any::Any;
use std::path::{Path, PathBuf};

use serde::Deserialize;
use toml::Spanned;

use crate::class::{Class, LargeScale, LargeScaleClass};
use crate::error::Error;
use crate::family::{Evidence, Family, GameReport, Grid, GridGame, Lineup, ScenarioText};
use crate::transcript::Ending;

/// The large-scale family.
pub struct LargeScaleFamily;

/// The registered instance.
pub const LARGE_SCALE: LargeScaleFamily = LargeScaleFamily;

impl Family for LargeScaleFamily {
    fn name(&self) -> &'static str {
        "large-scale"
    }

    fn evidence(&self) -> Evidence {
        Evidence::Demonstration
    }

    fn parse(&self, text: &ScenarioText<'_>) -> Result<Box<dyn Grid>, Error> {
        Ok(Box::new(parse(text)?))
    }

    fn default_adversary(&self, class: &Class) -> &'static str {
        match class {
            Class::LargeScale(c) if !matches!(c.function, LargeScaleClass::Nonsmooth { .. }) => {
                "rotation-chain"
            }
            _ => "rotation",
        }
    }
}

/// A validated large-scale grid: one function class, a grid of horizons.
#[derive(Clone, Debug, PartialEq)]
pub struct LargeScaleGrid {
    /// The function class (with its dimension).
    pub function: LargeScaleClass,
    /// The grid of horizons T, ascending, distinct.
    pub horizons: Vec<u64>,
}

/// Largest horizon of a scenario grid.
pub const MAX_SCENARIO_HORIZON: i64 = 100_000;

#[derive(Deserialize)]
struct View {
    class: RawClass,
    #[serde(default)]
    charts: Option<toml::Table>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawClass {
    #[allow(dead_code)]
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
    horizon: Spanned<Vec<Spanned<i64>>>,
}

/// Reads the `[class]` table of a large-scale scenario.
pub fn parse(at: &ScenarioText<'_>) -> Result<LargeScaleGrid, Error> {
    let view: View = at.read()?;
    if let Some(charts) = &view.charts {
        if let Some(key) = charts.keys().next() {
            return Err(at.error(
                at.adversary,
                format!("the large-scale family has no [charts] settings (found {key:?})"),
            ));
        }
    }
    if let Some(b) = at.budget {
        return Err(at.error(
            b,
            "the budget of a large-scale game is its horizon: remove play.budget",
        ));
    }
    let c = &view.class;
    let dim = *c.dim.get_ref();
    if dim < 1 {
        return Err(at.error(&c.dim, format!("dim = {dim} must be at least 1")));
    }
    let dim = dim as usize;
    let radius = *c.radius.get_ref();
    let kind = c.kind.get_ref().as_str();
    let refuse = |field: &Option<Spanned<f64>>, key: &str| -> Result<(), Error> {
        match field {
            Some(v) => Err(at.error(v, format!("{key} does not belong to the {kind} kind"))),
            None => Ok(()),
        }
    };
    let need = |field: &Option<Spanned<f64>>, key: &str| -> Result<f64, Error> {
        field
            .as_ref()
            .map(|v| *v.get_ref())
            .ok_or_else(|| at.error(&c.kind, format!("the {kind} kind needs {key} = ...")))
    };
    let function = match kind {
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
            return Err(at.error(
                &c.kind,
                format!(
                    "kind must be \"nonsmooth\", \"smooth\" or \"strongly-convex\", not {other:?}"
                ),
            ))
        }
    }
    .map_err(|e| at.error(&c.kind, e.to_string()))?;
    if c.horizon.get_ref().is_empty() {
        return Err(at.error(&c.horizon, "the grid of horizons is empty"));
    }
    let mut horizons = Vec::new();
    for q in c.horizon.get_ref() {
        let value = *q.get_ref();
        if !(1..=MAX_SCENARIO_HORIZON).contains(&value) {
            return Err(at.error(
                q,
                format!("horizon = {value} must be between 1 and {MAX_SCENARIO_HORIZON}"),
            ));
        }
        horizons.push(value as u64);
    }
    horizons.sort_unstable();
    horizons.dedup();
    // The adversary must play the class, and the dimension must suffice at the largest
    // horizon: building it there checks both.
    let largest = LargeScale::new(function, *horizons.last().expect("non-empty"))?;
    let name = at.adversary.get_ref();
    if let Some(info) = crate::adversary::info(name) {
        if info.family == "large-scale" {
            if let Err(e) = (info.build)(&Class::LargeScale(largest)) {
                let place = match e {
                    Error::DimensionTooSmall { .. } => c.dim.span().start,
                    _ => at.adversary.span().start,
                };
                return Err(at.error_at(place, e.to_string()));
            }
        }
    }
    Ok(LargeScaleGrid { function, horizons })
}

/// The columns of a large-scale `games.csv`.
///
/// `kind` is the function class; `horizon` is T (the budget); `gap` is the gap in the
/// class's accuracy measure (best queried point or output for the nonsmooth class, the
/// output for the smooth ones; empty when undefined); `lower_bound` is the published
/// lower curve at T and `upper_bound` the method's own upper curve (when it has one);
/// `claimed` says whether the lower curve binds this game (an adaptive adversary, or a
/// published instance against a span method) and `holds` whether the gap is at least the
/// curve to the relative tolerance 1e-12; `replayed` counts the answers the judge
/// replayed against the function (0 without transcripts).
pub const COLUMNS: &[&str] = &[
    "game",
    "scenario",
    "family",
    "kind",
    "adversary",
    "method",
    "seed",
    "dim",
    "radius",
    "lipschitz",
    "smoothness",
    "strong_convexity",
    "horizon",
    "budget",
    "queries_used",
    "censored",
    "outcome",
    "gap",
    "lower_bound",
    "upper_bound",
    "gap_over_lower",
    "claimed",
    "holds",
    "replayed",
    "wall_time_ms",
];

/// The columns that identify a large-scale game.
pub const IDENTITY_COLUMNS: &[&str] = &[
    "game",
    "scenario",
    "family",
    "kind",
    "adversary",
    "method",
    "seed",
    "dim",
    "radius",
    "lipschitz",
    "smoothness",
    "strong_convexity",
    "horizon",
    "budget",
];

fn yes_no(value: bool) -> String {
    if value { "yes" } else { "no" }.into()
}

impl Grid for LargeScaleGrid {
    fn family(&self) -> &'static dyn Family {
        &LARGE_SCALE
    }

    fn len(&self) -> u64 {
        self.horizons.len() as u64
    }

    fn class(&self, point: u64) -> Result<Class, Error> {
        Ok(Class::LargeScale(LargeScale::new(
            self.function,
            self.horizons[point as usize],
        )?))
    }

    fn budget(&self, class: &Class, _budget: Option<u64>) -> u64 {
        match class {
            Class::LargeScale(c) => c.horizon,
            _ => 1,
        }
    }

    fn columns(&self) -> &'static [&'static str] {
        COLUMNS
    }

    fn identity_columns(&self) -> &'static [&'static str] {
        IDENTITY_COLUMNS
    }

    fn identity(&self, lineup: &Lineup<'_>, game: &GridGame) -> Vec<Option<String>> {
        let horizon = self.budget(&game.class, None);
        let (lipschitz, smoothness, mu) = match self.function {
            LargeScaleClass::Nonsmooth { lipschitz, .. } => (Some(lipschitz), None, None),
            LargeScaleClass::Smooth { smoothness, .. } => (None, Some(smoothness), None),
            LargeScaleClass::StronglyConvex {
                smoothness,
                strong_convexity,
                ..
            } => (None, Some(smoothness), Some(strong_convexity)),
        };
        let text = |v: Option<f64>| v.map_or(String::new(), |v| v.to_string());
        let mut cells = vec![
            Some(game.index.to_string()),
            Some(lineup.name.to_string()),
            Some("large-scale".into()),
            Some(self.function.kind().into()),
            Some(lineup.adversary.to_string()),
            Some(game.method.clone()),
            Some(game.seed.to_string()),
            Some(self.function.dim().to_string()),
            Some(self.function.radius().to_string()),
            Some(text(lipschitz)),
            Some(text(smoothness)),
            Some(text(mu)),
            Some(horizon.to_string()),
            Some(horizon.to_string()),
        ];
        cells.resize(COLUMNS.len(), None);
        cells
    }

    fn row(&self, lineup: &Lineup<'_>, game: &GridGame, report: &GameReport) -> Vec<String> {
        let GameReport::Demonstration(report) = report else {
            unreachable!("the large-scale family plays demonstration games");
        };
        let mut cells: Vec<String> = self
            .identity(lineup, game)
            .into_iter()
            .take(IDENTITY_COLUMNS.len())
            .map(|c| c.unwrap_or_default())
            .collect();
        let censored = matches!(report.record.ending, Ending::BudgetExhausted);
        let outcome = |ending: &Ending| match ending {
            Ending::Output { .. } => "output".to_string(),
            Ending::BudgetExhausted => "budget-exhausted".to_string(),
            Ending::Interrupted { .. } => "interrupted".to_string(),
            Ending::MethodFailed { .. } => "method-failed".to_string(),
        };
        cells.extend([report.record.queries_used.to_string(), censored.to_string()]);
        match &report.judgement {
            Ok(v) => {
                let gap = v.gap.map_or(String::new(), |g| format!("{g:e}"));
                cells.extend([
                    outcome(&report.record.ending),
                    gap,
                    format!("{:e}", v.lower_bound),
                    v.upper_bound.map_or(String::new(), |u| format!("{u:e}")),
                    v.gap
                        .map_or(String::new(), |g| format!("{:.6}", g / v.lower_bound)),
                    yes_no(v.claimed),
                    v.holds.map_or(String::new(), yes_no),
                    v.replayed.to_string(),
                ]);
            }
            Err(e) => {
                cells.push(format!("rejected: {}", e.chain()));
                cells.extend(std::iter::repeat_n(String::new(), 7));
            }
        }
        cells.push(format!("{:.3}", report.wall_time.as_secs_f64() * 1e3));
        cells
    }

    fn draw_charts(&self, dir: &Path, lineup: &Lineup<'_>) -> Result<Vec<PathBuf>, Error> {
        charts::draw_all(dir, lineup, self)
    }

    fn as_any(&self) -> &dyn Any {
        self
    }
}
