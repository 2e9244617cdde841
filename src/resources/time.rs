//! Rough time estimates, so that a run that will obviously take hours says so before it
//! starts (one line on stderr; never a refusal).
//!
//! An estimate is a count of steps the run cannot avoid times a cost per step, both from
//! the parameters:
//! - a game asks at least the queries it is sure to ask ([`super::sure_queries`]: what
//!   the adversary forces, or what the method plans), never more than the budget;
//! - a hunt makes its replays (one method step each);
//! - a minimax search's time grows geometrically with the size of its query set.
//!
//! The costs per step are rough figures measured on the project's 2-core machine in a
//! release build ([`step_seconds`], [`answer_seconds`], [`MINIMAX_SECONDS`]; common
//! practice, no source): an estimate says "about", and only runs estimated at an hour or
//! more are announced.

use crate::class::Class;
use crate::scenario::Scenario;

/// Runs estimated at this many seconds or more are announced.
pub const ANNOUNCE_SECONDS: f64 = 3600.0;

/// A time estimate and what it rests on.
#[derive(Clone, Debug, PartialEq)]
pub struct Estimate {
    /// Seconds.
    pub seconds: f64,
    /// The count and cost it multiplies, in words.
    pub basis: String,
}

impl Estimate {
    /// The line announcing it: "this run will likely take a long time: about 3.2 h (...)".
    pub fn announce(&self) -> String {
        format!(
            "this run will likely take a long time: about {} ({}; a rough estimate)",
            duration_words(self.seconds),
            self.basis
        )
    }
}

/// A duration in words: "45 s", "12 min", "3.2 h", "5.0 days", "3.1e5 years".
pub fn duration_words(seconds: f64) -> String {
    if !seconds.is_finite() {
        return "forever".into();
    }
    if seconds < 60.0 {
        format!("{seconds:.0} s")
    } else if seconds < 3600.0 {
        format!("{:.0} min", seconds / 60.0)
    } else if seconds < 86_400.0 {
        format!("{:.1} h", seconds / 3600.0)
    } else if seconds < 365.0 * 86_400.0 {
        format!("{:.1} days", seconds / 86_400.0)
    } else {
        let years = seconds / (365.25 * 86_400.0);
        if years < 1e4 {
            format!("{years:.0} years")
        } else {
            format!("{years:.1e} years")
        }
    }
}

/// Rough seconds of one step of built-in method `name` on `class` with `cuts` cuts (or
/// answers) in its model: its dominant arithmetic at about 1 ns an operation, with the
/// constants of measured runs.
pub fn step_seconds(name: &str, class: &Class, cuts: f64) -> f64 {
    let d = class.query_dim() as f64;
    match name {
        // d^2 updates of the shape matrix (3.7 us at d = 100, DEVELOPERS.md).
        "ellipsoid" => 4e-10 * d * d + 1e-8 * d,
        // 10 d^2 + 40 d hit-and-run steps, each a Gaussian direction and a ratio test:
        // about 30 ns a coordinate (2.4 s a query at d = 200 against halving, measured).
        "sampled-centroid" => (10.0 * d * d + 40.0 * d) * 3e-8 * d + lp_seconds(cuts, d),
        // Newton's method (up to d^3 / 3 a factorisation) over every row, and the LP.
        "analytic-center" => {
            2e-8 * (cuts + 2.0 * d) * d * d + 1e-9 * d * d * d + lp_seconds(cuts, d)
        }
        "centroid" | "kelley" | "level" => lp_seconds(cuts, d),
        // An external program in a hunt: one process start a replay (a compiled child
        // starts and plays a game in about 7 ms, DEVELOPERS.md).
        "external" => 5e-3,
        _ => 1e-7 + 1e-8 * d,
    }
}

/// Rough seconds of one interior-point LP over `rows` dense rows of d + 1 entries:
/// about 0.2 ms plus 0.1 us an entry (a `level` step at d = 100 with a few hundred
/// answers takes 2 to 3 ms, DEVELOPERS.md).
fn lp_seconds(rows: f64, d: f64) -> f64 {
    2e-4 + 1e-7 * (rows + 2.0 * d) * (d + 1.0)
}

/// Rough seconds of one answer of adversary `name` on `class`, verification included.
pub fn answer_seconds(name: &str, class: &Class) -> f64 {
    let d = class.query_dim() as f64;
    match name {
        // Exact values, and the streaming verifier's exact checks: about 5 us a query at
        // d = 2 (measured: 10^6 subgradient queries in about 5 s, release build).
        "slab-funnel" | "orthant" => 5e-6 + 1e-8 * d,
        _ => 1e-6 + 1e-8 * d,
    }
}

/// The estimate of one game (built-in `method`), when it reaches [`ANNOUNCE_SECONDS`].
pub fn game(class: &Class, method: &str, adversary: &str, budget: u64) -> Option<Estimate> {
    let (queries, why) = super::sure_queries(class, Some(method), adversary, budget);
    let queries = queries as f64;
    let seconds = game_seconds(class, method, adversary, queries);
    (seconds >= ANNOUNCE_SECONDS).then(|| Estimate {
        seconds,
        basis: format!(
            "the {queries} queries {why}, at about {} each for method {method:?} against \
             {adversary:?} at {}",
            per_query_words(seconds / queries.max(1.0)),
            super::size_words(class)
        ),
    })
}

/// Seconds of `queries` queries: the method's steps and the adversary's answers, with
/// their models growing by one cut a query (evaluated at the middle of the game).
fn game_seconds(class: &Class, method: &str, adversary: &str, queries: f64) -> f64 {
    let middle = queries / 2.0;
    queries * (step_seconds(method, class, middle) + answer_seconds(adversary, class))
}

fn per_query_words(seconds: f64) -> String {
    if seconds >= 1.0 {
        format!("{seconds:.1} s")
    } else if seconds >= 1e-3 {
        format!("{:.1} ms", seconds * 1e3)
    } else {
        format!("{:.1} us", seconds * 1e6)
    }
}

/// The estimate of a sweep's games (a guide: every game of the grid, its share for one of
/// `shards` shards, spread over `jobs` workers; games found finished are not known yet),
/// when it reaches [`ANNOUNCE_SECONDS`].
pub fn sweep(scenario: &Scenario, jobs: usize, shards: u64) -> Option<Estimate> {
    let mut seconds = 0.0;
    let mut games = 0.0;
    for point in 0..scenario.grid.len() {
        let Ok(class) = scenario.grid.class(point) else {
            continue;
        };
        let budget = scenario.budget_for(&class);
        for name in &scenario.methods {
            if scenario.external_method(name).is_some()
                || crate::method::supports(name, &class).is_err()
            {
                continue;
            }
            let seeds = if scenario.deterministic(name) {
                1.0
            } else {
                scenario.seeds.len() as f64
            };
            let (queries, _) = super::sure_queries(&class, Some(name), &scenario.adversary, budget);
            seconds += seeds * game_seconds(&class, name, &scenario.adversary, queries as f64);
            games += seeds;
        }
    }
    let shards = shards.max(1) as f64;
    let seconds = seconds / shards / jobs.max(1) as f64;
    (seconds >= ANNOUNCE_SECONDS).then(|| Estimate {
        seconds,
        basis: format!(
            "{:.0} games of built-in methods, each at least the queries it is sure to ask, on \
             {} workers",
            (games / shards).ceil(),
            jobs.max(1)
        ),
    })
}

/// The estimate of a hunt of `replays` method steps, when it reaches
/// [`ANNOUNCE_SECONDS`].
pub fn hunt(class: &Class, method: &str, replays: u64, game_budget: u64) -> Option<Estimate> {
    let adversary = match class {
        Class::FirstOrder(_) => "slab-funnel",
        _ => "halving",
    };
    // A line of the search is about as deep as the adversary's own game.
    let (depth, _) = super::sure_queries(class, Some(method), adversary, game_budget);
    let depth = depth as f64;
    let step = step_seconds(method, class, depth / 2.0) + answer_seconds(adversary, class);
    let seconds = replays as f64 * step;
    (seconds >= ANNOUNCE_SECONDS).then(|| Estimate {
        seconds,
        basis: format!(
            "{replays} replays, one step of method {method:?} each at about {}",
            per_query_words(step)
        ),
    })
}

/// Measured minimax searches, one core, release build (README): {0..3}^2 with
/// half-integer queries (49 points) 19 s; {0..8}^2 with lattice queries (81 points)
/// 359 s; {0..4}^2 with half-integer queries (81 points) over 600 s. The time grows
/// about 1.13 times a point of Q beyond 49: [`MINIMAX_SECONDS`] at 49 points.
pub const MINIMAX_SECONDS: f64 = 19.0;

/// The estimate of a minimax search over `points` query points (the method's worst case
/// with `method`, which replays the method at every node), when it reaches
/// [`ANNOUNCE_SECONDS`].
pub fn minimax(points: usize, method: bool) -> Option<Estimate> {
    let growth = 1.13f64;
    // A method's worst case replays the method from scratch at every node of its game
    // tree (no memo): measured 296 s on 25 points ({0..2}^2 half-integer, enumerate).
    let (base, at) = if method {
        (296.0, 25.0)
    } else {
        (MINIMAX_SECONDS, 49.0)
    };
    let seconds = base * growth.powf(points as f64 - at);
    (seconds >= ANNOUNCE_SECONDS).then(|| Estimate {
        seconds,
        basis: format!(
            "{points} query points; measured searches grow about {growth} times a point \
             ({base} s at {at} points)"
        ),
    })
}
