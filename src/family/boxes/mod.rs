//! The grid shared by the three certificate families (feasibility, first-order, lattice):
//! a grid of dimensions and accuracies over a box, their `games.csv` columns, and their
//! charts ([`crate::gallery::boxes`]).
//!
//! Canonical order of the classes: d ascending, then accuracy descending (R/rho or
//! L R/eps ascending). For lattice classes the grid dimension is the integer dimension n;
//! a pure integer class has no accuracy (its cells are empty).

pub mod charts;

use std::any::Any;
use std::path::{Path, PathBuf};

use serde::Deserialize;
use toml::Spanned;

use crate::bounds::{
    centre_of_gravity_upper_bound, ellipsoid_upper_bound,
    first_order_centre_of_gravity_upper_bound, halving_lower_bound, lattice_half_lower_bound,
    slab_funnel_lower_bound,
};
use crate::certificate::Outcome;
use crate::class::{
    Class, FeasibilityClass, FirstOrderClass, LatticeClass, LipschitzNorm, Promise,
};
use crate::error::Error;
use crate::family::{Family, GameReport, Grid, GridGame, Lineup, ScenarioText};
use crate::transcript::Ending;

/// The accuracy of every game of a pure integer scenario, which has none: `games.csv`
/// leaves the `accuracy` and `ratio` cells empty and reads them back as this value.
pub const NO_ACCURACY: f64 = f64::NAN;

/// The rho a pure integer class carries (unused: it has no continuous part).
const PURE_INTEGER_RHO: f64 = 0.5;

/// Which of the three box families, with the parameters that do not vary over the grid.
#[derive(Clone, Debug, PartialEq)]
pub enum BoxKind {
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

impl BoxKind {
    /// The family name.
    pub fn family_name(&self) -> &'static str {
        match self {
            BoxKind::Feasibility { .. } => "feasibility",
            BoxKind::FirstOrder { .. } => "first-order",
            BoxKind::Lattice { .. } => "lattice",
        }
    }

    /// The class of this kind at (d, accuracy).
    pub fn class(&self, d: usize, half_width: f64, accuracy: f64) -> Result<Class, Error> {
        Ok(match self {
            BoxKind::Feasibility { promise } => {
                Class::Feasibility(FeasibilityClass::new(d, half_width, accuracy, *promise)?)
            }
            BoxKind::FirstOrder { lipschitz, norm } => {
                let class = FirstOrderClass::new(d, half_width, accuracy, *lipschitz, *norm)?;
                class.check_accuracy_below_half_range()?;
                Class::FirstOrder(class)
            }
            BoxKind::Lattice {
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
}

/// A validated grid of a box family.
#[derive(Clone, Debug, PartialEq)]
pub struct BoxGrid {
    /// The family and its fixed parameters.
    pub kind: BoxKind,
    /// Dimensions, ascending, distinct (d, or n for lattice classes).
    pub dims: Vec<usize>,
    /// Box half-width R.
    pub half_width: f64,
    /// Accuracies (rho or eps), descending (so R/rho or L R/eps ascends), distinct;
    /// `[NO_ACCURACY]` for pure integer classes.
    pub accuracies: Vec<f64>,
    /// d of the "queries against log2(R/rho)" chart (default: the largest d).
    pub chart_dim: usize,
    /// Accuracy of the "queries against d" chart (default: the smallest).
    pub chart_accuracy: f64,
}

impl BoxGrid {
    /// The class at dimension `d` and accuracy `accuracy` (rho or eps).
    pub fn class_at(&self, d: usize, accuracy: f64) -> Result<Class, Error> {
        self.kind.class(d, self.half_width, accuracy)
    }

    /// The name of the accuracy parameter: "rho" or "eps".
    pub fn accuracy_name(&self) -> &'static str {
        match self.kind {
            BoxKind::Feasibility { .. } | BoxKind::Lattice { .. } => "rho",
            BoxKind::FirstOrder { .. } => "eps",
        }
    }
}

/// The `[class]` and `[charts]` tables of a box family, as written.
#[derive(Deserialize)]
struct View {
    class: RawClass,
    #[serde(default)]
    charts: Option<RawCharts>,
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
struct RawCharts {
    #[serde(default)]
    dim: Option<Spanned<i64>>,
    #[serde(default)]
    rho: Option<Spanned<f64>>,
    #[serde(default)]
    eps: Option<Spanned<f64>>,
}

/// Reads the `[class]` and `[charts]` tables of the box family `family` ("feasibility",
/// "first-order" or "lattice").
pub fn parse(at: &ScenarioText<'_>, family: &'static str) -> Result<BoxGrid, Error> {
    let view: View = at.read()?;
    let raw = view.class;
    let first_order = family == "first-order";
    let lattice = family == "lattice";
    // Keys that belong to one family only.
    let owned: [(&str, Option<usize>, &str); 6] = [
        (
            "promise",
            raw.promise.as_ref().map(|v| v.span().start),
            "feasibility",
        ),
        (
            "lipschitz",
            raw.lipschitz.as_ref().map(|v| v.span().start),
            "first-order",
        ),
        (
            "norm",
            raw.norm.as_ref().map(|v| v.span().start),
            "first-order",
        ),
        (
            "int_lower",
            raw.int_lower.as_ref().map(|v| v.span().start),
            "lattice",
        ),
        (
            "int_upper",
            raw.int_upper.as_ref().map(|v| v.span().start),
            "lattice",
        ),
        (
            "cont_dim",
            raw.cont_dim.as_ref().map(|v| v.span().start),
            "lattice",
        ),
    ];
    for (key, offset, owner) in owned {
        if let Some(offset) = offset {
            if owner != family {
                return Err(at.error_at(offset, format!("{key} belongs to the {owner} family")));
            }
        }
    }
    let kind = if first_order {
        if let Some(r) = &raw.rho {
            return Err(at.error(r, "the first-order family takes eps, not rho"));
        }
        let lipschitz = raw.lipschitz.as_ref().map_or(1.0, |l| *l.get_ref());
        if let Some(l) = &raw.lipschitz {
            if !(lipschitz.is_finite() && lipschitz > 0.0) {
                return Err(at.error(l, "lipschitz must be a positive finite number"));
            }
        }
        let norm = match &raw.norm {
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
        BoxKind::FirstOrder { lipschitz, norm }
    } else if lattice {
        if let Some(e) = &raw.eps {
            return Err(at.error(
                e,
                "the lattice family takes rho (when cont_dim > 0), not eps",
            ));
        }
        let int_lower = raw.int_lower.as_ref().map_or(0, |v| *v.get_ref());
        let int_upper = raw.int_upper.as_ref().map_or(1, |v| *v.get_ref());
        let cont_dim = match &raw.cont_dim {
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
                .int_upper
                .as_ref()
                .or(raw.int_lower.as_ref())
                .map_or(raw.family.span().start, |v| v.span().start);
            return Err(at.error_at(place, e.to_string()));
        }
        if cont_dim == 0 {
            if let Some(r) = &raw.rho {
                return Err(at.error(
                    r,
                    "a pure integer class (cont_dim = 0) has no accuracy; remove rho",
                ));
            }
        }
        BoxKind::Lattice {
            int_lower,
            int_upper,
            cont_dim,
        }
    } else {
        if let Some(e) = &raw.eps {
            return Err(at.error(e, "the feasibility family takes rho, not eps"));
        }
        let promise = match &raw.promise {
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
        BoxKind::Feasibility { promise }
    };
    let half_width = *raw.half_width.get_ref();
    if !(half_width.is_finite() && half_width > 0.0) {
        return Err(at.error(
            &raw.half_width,
            "half_width must be a positive finite number",
        ));
    }
    if raw.dims.get_ref().is_empty() {
        return Err(at.error(&raw.dims, "the grid of dimensions is empty"));
    }
    let mut dims = Vec::new();
    for d in raw.dims.get_ref() {
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
    let pure_integer = matches!(kind, BoxKind::Lattice { cont_dim: 0, .. });
    let grid_name = if first_order { "eps" } else { "rho" };
    let mut accuracies = Vec::new();
    if pure_integer {
        accuracies.push(NO_ACCURACY);
    } else {
        let grid = match (&raw.rho, &raw.eps, first_order) {
            (Some(r), _, false) => r,
            (_, Some(e), true) => e,
            _ => {
                return Err(at.error(
                    &raw.family,
                    format!("the {family} family needs a grid {grid_name} = [...]"),
                ))
            }
        };
        if grid.get_ref().is_empty() {
            return Err(at.error(grid, format!("the grid of accuracies {grid_name} is empty")));
        }
        for r in grid.get_ref() {
            let value = *r.get_ref();
            kind.class(1, half_width, value)
                .map_err(|e| at.error(r, format!("{grid_name} = {value}: {e}")))?;
            accuracies.push(value);
        }
        accuracies.sort_by(|a, b| b.total_cmp(a));
        accuracies.dedup();
    }
    let (mut chart_dim, mut chart_accuracy) = (
        *dims.last().expect("non-empty"),
        *accuracies.last().expect("non-empty"),
    );
    if let Some(charts) = &view.charts {
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
                    format!("charts.{key} does not belong to this family (use charts.{grid_name})"),
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
    match at.budget {
        None => {
            return Err(at.error(
                at.adversary,
                format!("the {family} family needs play.budget (the most queries per game)"),
            ))
        }
        Some(b) if *b.get_ref() < 1 => {
            return Err(at.error(b, format!("budget {} must be at least 1", b.get_ref())))
        }
        Some(_) => {}
    }
    Ok(BoxGrid {
        kind,
        dims,
        half_width,
        accuracies,
        chart_dim,
        chart_accuracy,
    })
}

/// The columns of `games.csv` for the box families, in order. Timing columns
/// (`wall_time_ms`) are the only ones that differ between two runs of the same sweep.
///
/// `accuracy` is rho (feasibility, mixed-integer) or eps (first-order); `ratio` is R/rho
/// or L R/eps; both are empty for pure integer classes, which have no accuracy. `dim` is
/// the grid dimension: d, or the integer dimension n for lattice classes, whose
/// continuous dimension and integer box are in `cont_dim`, `int_lower`, `int_upper`
/// (empty for the other families). `lipschitz` and `certified_uncertainty` are empty
/// for feasibility classes, `promise` for first-order ones; bound columns are empty
/// where the class has no proven number (for lattice classes `lower_bound` is the
/// lattice-halving bound of docs/theory.md §4, pure integer only; for first-order classes
/// the slab-funnel bound of docs/theory.md §2.4, deterministic methods).
pub const COLUMNS: &[&str] = &[
    "game",
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
    "queries_used",
    "censored",
    "certified_lower_bound",
    "certified_uncertainty",
    "outcome",
    "verified",
    "lower_bound",
    "upper_centre_of_gravity",
    "upper_ellipsoid",
    "wall_time_ms",
];

/// The columns that identify a game of a box family.
pub const IDENTITY_COLUMNS: &[&str] = &[
    "game",
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
];

impl Grid for BoxGrid {
    fn family(&self) -> &'static dyn Family {
        crate::family::find(self.kind.family_name()).expect("registered")
    }

    fn len(&self) -> u64 {
        (self.dims.len() * self.accuracies.len()) as u64
    }

    fn class(&self, point: u64) -> Result<Class, Error> {
        let n = self.accuracies.len() as u64;
        let d = self.dims[(point / n) as usize];
        let accuracy = self.accuracies[(point % n) as usize];
        self.class_at(d, accuracy)
    }

    fn budget(&self, _class: &Class, budget: Option<u64>) -> u64 {
        budget.unwrap_or(1)
    }

    fn columns(&self) -> &'static [&'static str] {
        COLUMNS
    }

    fn identity_columns(&self) -> &'static [&'static str] {
        IDENTITY_COLUMNS
    }

    fn identity(&self, lineup: &Lineup<'_>, game: &GridGame) -> Vec<Option<String>> {
        let facts = ClassFacts::of(&game.class);
        let budget = self.budget(&game.class, lineup.budget);
        let mut cells: Vec<Option<String>> = vec![
            Some(game.index.to_string()),
            Some(lineup.name.to_string()),
            Some(facts.family.into()),
            Some(lineup.adversary.to_string()),
            Some(game.method.clone()),
            Some(game.seed.to_string()),
            Some(facts.dim.to_string()),
            Some(facts.half_width.to_string()),
            Some(number(facts.accuracy)),
            Some(number(facts.ratio)),
            Some(facts.lipschitz.map_or(String::new(), |l| l.to_string())),
            Some(facts.promise.unwrap_or_default().into()),
            Some(
                facts
                    .lattice
                    .map_or(String::new(), |(d, _, _)| d.to_string()),
            ),
            Some(
                facts
                    .lattice
                    .map_or(String::new(), |(_, l, _)| l.to_string()),
            ),
            Some(
                facts
                    .lattice
                    .map_or(String::new(), |(_, _, u)| u.to_string()),
            ),
            Some(budget.to_string()),
        ];
        cells.resize(COLUMNS.len(), None);
        cells
    }

    fn row(&self, lineup: &Lineup<'_>, game: &GridGame, report: &GameReport) -> Vec<String> {
        let GameReport::Certificate(report) = report else {
            unreachable!("box families play certificate games");
        };
        let facts = ClassFacts::of(&game.class);
        let censored = matches!(report.record.ending, Ending::BudgetExhausted);
        let (lower, uncertainty, outcome, verified) = match &report.verdict {
            Ok(v) => (
                v.certified_lower_bound()
                    .map_or(String::new(), |b| b.to_string()),
                v.certified_uncertainty
                    .map_or(String::new(), |u| u.to_string()),
                outcome_name(&v.outcome).to_string(),
                "yes",
            ),
            Err(e) => (
                String::new(),
                String::new(),
                format!("rejected: {}", e.chain()),
                "no",
            ),
        };
        let mut cells: Vec<String> = self
            .identity(lineup, game)
            .into_iter()
            .take(IDENTITY_COLUMNS.len())
            .map(|c| c.unwrap_or_default())
            .collect();
        cells.extend([
            report.record.queries_used.to_string(),
            censored.to_string(),
            lower,
            uncertainty,
            outcome,
            verified.into(),
            opt(facts.lower_bound),
            opt(facts.upper_centre_of_gravity),
            opt(facts.upper_ellipsoid),
            format!("{:.3}", report.wall_time.as_secs_f64() * 1e3),
        ]);
        cells
    }

    fn draw_charts(&self, dir: &Path, lineup: &Lineup<'_>) -> Result<Vec<PathBuf>, Error> {
        charts::draw_all(dir, lineup, self)
    }

    fn as_any(&self) -> &dyn Any {
        self
    }
}

/// A number cell; NaN (no such number) is written as an empty cell.
fn number(value: f64) -> String {
    if value.is_nan() {
        String::new()
    } else {
        value.to_string()
    }
}

fn opt(value: Option<u64>) -> String {
    value.map_or(String::new(), |v| v.to_string())
}

/// The per-class numbers a games.csv row records.
#[derive(Clone, Debug, PartialEq)]
pub struct ClassFacts {
    /// "feasibility", "first-order", "lattice" or "mixed-integer".
    pub family: &'static str,
    /// Dimension d (n for lattice classes).
    pub dim: usize,
    /// Half-width R.
    pub half_width: f64,
    /// rho or eps.
    pub accuracy: f64,
    /// R/rho or L R/eps.
    pub ratio: f64,
    /// L (first-order).
    pub lipschitz: Option<f64>,
    /// The promise (feasibility).
    pub promise: Option<&'static str>,
    /// Continuous dimension, integer lower and upper bound (lattice classes).
    pub lattice: Option<(usize, i64, i64)>,
    /// The proven lower bound, where the class has one with a constant.
    pub lower_bound: Option<u64>,
    /// The centre-of-gravity upper bound.
    pub upper_centre_of_gravity: Option<u64>,
    /// The ellipsoid upper bound.
    pub upper_ellipsoid: Option<u64>,
}

impl ClassFacts {
    /// The facts of a box class (a large-scale class has none of these numbers).
    pub fn of(class: &Class) -> ClassFacts {
        match class {
            Class::Feasibility(c) => ClassFacts {
                family: "feasibility",
                dim: c.dim,
                half_width: c.half_width,
                accuracy: c.rho,
                ratio: c.half_width / c.rho,
                lipschitz: None,
                promise: Some(match c.promise {
                    Promise::MayBeEmpty => "may-be-empty",
                    Promise::Nonempty => "nonempty",
                }),
                lattice: None,
                lower_bound: Some(halving_lower_bound(c)),
                upper_centre_of_gravity: Some(centre_of_gravity_upper_bound(c)),
                upper_ellipsoid: Some(ellipsoid_upper_bound(c)),
            },
            Class::FirstOrder(c) => ClassFacts {
                family: "first-order",
                dim: c.dim,
                half_width: c.half_width,
                accuracy: c.eps,
                ratio: c.lipschitz * c.half_width / c.eps,
                lipschitz: Some(c.lipschitz),
                promise: None,
                lattice: None,
                lower_bound: Some(slab_funnel_lower_bound(c)),
                upper_centre_of_gravity: Some(first_order_centre_of_gravity_upper_bound(c)),
                upper_ellipsoid: None,
            },
            Class::Lattice(c) => ClassFacts {
                family: if c.cont_dim == 0 {
                    "lattice"
                } else {
                    "mixed-integer"
                },
                dim: c.int_dim(),
                half_width: c.half_width,
                accuracy: if c.cont_dim == 0 { NO_ACCURACY } else { c.rho },
                ratio: if c.cont_dim == 0 {
                    f64::NAN
                } else {
                    c.half_width / c.rho
                },
                lipschitz: None,
                promise: None,
                lattice: Some((c.cont_dim, c.lower[0], c.upper[0])),
                lower_bound: lattice_half_lower_bound(c),
                upper_centre_of_gravity: None,
                upper_ellipsoid: None,
            },
            Class::LargeScale(c) => ClassFacts {
                family: "large-scale",
                dim: c.function.dim(),
                half_width: c.function.radius(),
                accuracy: NO_ACCURACY,
                ratio: f64::NAN,
                lipschitz: None,
                promise: None,
                lattice: None,
                lower_bound: None,
                upper_centre_of_gravity: None,
                upper_ellipsoid: None,
            },
        }
    }
}

/// A short stable name for an outcome (CSV and charts).
pub fn outcome_name(outcome: &Outcome) -> &'static str {
    match outcome {
        Outcome::OutputRefuted { .. } => "output-refuted",
        Outcome::EmptyRefuted { .. } => "empty-refuted",
        Outcome::EmptyBreaksPromise => "empty-breaks-promise",
        Outcome::OutputStands => "output-stands",
        Outcome::BudgetExhausted => "budget-exhausted",
        Outcome::Interrupted => "interrupted",
        Outcome::MethodFailed { .. } => "method-failed",
    }
}
