//! What a run needs before it starts: memory, refused beyond a cap, and time, said when a
//! run will obviously take hours ([`time`]).
//!
//! **Memory.** A game needs what its built-in method holds, what its adversary holds
//! (each states it in its registry entry, `MethodInfo::memory` and
//! `AdversaryInfo::memory`, priced by [`crate::memory`]) and what every game holds
//! ([`crate::memory::GAME_BASE`] plus the answers in flight), counted over the queries
//! the game is sure to ask ([`sure_queries`]). An external program's own memory is its
//! own business and is not counted. A game whose need exceeds the cap
//! ([`crate::memory::Cap`]: the machine's available memory, or `--max-memory`) is refused
//! before anything is played or written, with a message naming the part that needs it,
//! the parameters that drive it, the estimate and the cap (exit code 2). A sweep checks
//! every game of its grid (each class with each method) before its first game, and the
//! games it plays at once (`--jobs`) together.

pub mod time;

use std::path::Path;

use crate::class::Class;
use crate::error::Error;
use crate::memory::{self, format_size, Cap};
use crate::scenario::Scenario;

/// One part of a game's memory need.
#[derive(Clone, Debug, PartialEq)]
pub struct Part {
    /// What holds it: `method "ellipsoid"`, `adversary "halving"`, `the game itself`.
    pub what: String,
    /// The estimate in bytes.
    pub bytes: u64,
    /// What dominates it, in a few words.
    pub note: &'static str,
}

/// A game's memory need, by part.
#[derive(Clone, Debug, PartialEq)]
pub struct Need {
    /// The parts, largest first.
    pub parts: Vec<Part>,
}

impl Need {
    /// The whole need in bytes (saturating).
    pub fn total(&self) -> u64 {
        self.parts
            .iter()
            .fold(0u64, |sum, p| sum.saturating_add(p.bytes))
    }
}

/// The queries a game is sure to ask, at most `budget`, with the reason in words: what
/// the adversary forces (box halving: d k + 1 on every method, docs/theory.md §1.1; slab
/// funnel: d ceil(log_7(L R / (2 eps))) on deterministic methods, §2.4; lattice halving:
/// floor(log2 |S|) + 1, corner: 2^n and mixed corner: 2^n (d k + 1) on every method,
/// §4), what the method plans itself (the subgradient methods: ceil((L R sqrt(d) /
/// eps)^2)), or a large-scale game's horizon; at least 1.
///
/// Memory is counted over these queries, not over the whole budget: a method that stops
/// early (as most do, far below the default budget of 10^6) never builds what the
/// budget would allow, and a correct one cannot stop before them.
pub fn sure_queries(
    class: &Class,
    method: Option<&str>,
    adversary: &str,
    budget: u64,
) -> (u64, String) {
    let deterministic =
        method.is_some_and(|m| crate::method::info(m).is_some_and(|i| i.deterministic));
    let forced = match (class, adversary) {
        (Class::Feasibility(c), "halving") => Some((
            crate::bounds::halving_lower_bound(c),
            "that every method needs (docs/theory.md §1.1)",
        )),
        (Class::FirstOrder(c), "slab-funnel") if deterministic => Some((
            crate::bounds::slab_funnel_lower_bound(c),
            "that every deterministic method needs (docs/theory.md §2.4)",
        )),
        (Class::Lattice(c), "lattice-half") => crate::bounds::lattice_half_lower_bound(c)
            .map(|q| (q, "that every method needs (docs/theory.md §4)")),
        (Class::Lattice(c), "corner" | "mixed-corner") => crate::bounds::corner_count(c)
            .map(|q| (q, "that the corner construction forces (docs/theory.md §4)")),
        (Class::LargeScale(c), _) => Some((c.horizon, "of the horizon")),
        _ => None,
    };
    let (mut count, mut why) = forced.map_or((1, "it asks at least".to_string()), |(q, why)| {
        (q, why.to_string())
    });
    if let (Class::FirstOrder(c), Some(name @ ("subgradient" | "subgradient-decaying"))) =
        (class, method)
    {
        let rule = crate::method::subgradient::StepRule::Fixed;
        let plan = crate::method::subgradient::Subgradient::new(c, rule).planned();
        if plan > count {
            count = plan;
            why = format!("that {name} plans, ceil((L R sqrt(d) / eps)^2)");
        }
    }
    if count > budget {
        count = budget;
        why = "of the budget".into();
    }
    (count.max(1), why)
}

/// The name of the part every game needs ([`memory::GAME_BASE`]).
const GAME_ITSELF: &str = "the game itself";

/// The memory one game needs: the built-in `method` (`None` for an external program,
/// whose memory is not counted), the `adversary` (unknown names count nothing: building
/// the game refuses them), and the game itself, on `class`, counted over the queries the
/// game is sure to ask with `budget` ([`sure_queries`]).
pub fn game_need(class: &Class, method: Option<&str>, adversary: &str, budget: u64) -> Need {
    let (queries, _) = sure_queries(class, method, adversary, budget);
    let mut parts = Vec::new();
    // A method or adversary that does not play the class counts nothing here: building
    // the game refuses it with its own message.
    let plays = |m: &&crate::method::MethodInfo| crate::method::supports(m.name, class).is_ok();
    if let Some(info) = method.and_then(crate::method::info).filter(plays) {
        parts.push(Part {
            what: format!("method {:?}", info.name),
            bytes: (info.memory)(class, queries),
            note: info.memory_note,
        });
    }
    let fits = |a: &&crate::adversary::AdversaryInfo| {
        a.family == class.family_name() && a.restriction.is_none_or(|check| check(class).is_ok())
    };
    if let Some(info) = crate::adversary::info(adversary).filter(fits) {
        parts.push(Part {
            what: format!("adversary {:?}", info.name),
            bytes: (info.memory)(class, queries),
            note: info.memory_note,
        });
    }
    parts.push(Part {
        what: GAME_ITSELF.into(),
        bytes: memory::bytes(memory::GAME_BASE + 64.0 * class.query_dim() as f64),
        note: "the program, its buffers and the verifier's answers held in memory",
    });
    parts.sort_by_key(|p| std::cmp::Reverse(p.bytes));
    Need { parts }
}

/// Which words of advice a refusal ends with.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Advice {
    /// The command line's flags (`play`, `hunt`, `replay`).
    Flags,
    /// A scenario file's keys (`sweep`, `demo`).
    Scenario,
}

/// The parameters that size a class, for messages: `d = 1000000`,
/// `n = 2, d = 1000000` (lattice), `d = 1000000, horizon T = 100000` (large-scale).
pub fn size_words(class: &Class) -> String {
    match class {
        Class::Feasibility(c) => format!("d = {}", c.dim),
        Class::FirstOrder(c) => format!("d = {}", c.dim),
        Class::Lattice(c) => format!("n = {}, d = {}", c.int_dim(), c.cont_dim),
        Class::LargeScale(c) => format!("d = {}, horizon T = {}", c.function.dim(), c.horizon),
    }
}

/// A game's parameters in full, for naming one game of a sweep.
pub fn game_words(class: &Class, method: &str, budget: u64) -> String {
    let accuracy = match class {
        Class::Feasibility(c) => format!(", rho = {}", c.rho),
        Class::FirstOrder(c) => format!(", eps = {}", c.eps),
        Class::Lattice(c) if c.cont_dim > 0 => format!(", rho = {}", c.rho),
        _ => String::new(),
    };
    format!(
        "method {method:?} at {}{accuracy}, budget {budget}",
        size_words(class)
    )
}

/// Whether `budget` drives the need: the need at budget 1 is less than 90% of it.
fn budget_drives(
    class: &Class,
    method: Option<&str>,
    adversary: &str,
    budget: u64,
    need: u64,
) -> bool {
    let small = game_need(class, method, adversary, 1).total();
    budget > 1 && (small as f64) < 0.9 * need as f64
}

/// The flags (or scenario keys) that lower the need.
fn advice(class: &Class, budget: bool, advice: Advice) -> String {
    let sizes: &[&str] = match (class, advice) {
        (Class::Lattice(_), Advice::Flags) => &["--int-dim", "--cont-dim"],
        (Class::LargeScale(_), Advice::Flags) => &["--dim", "--horizon"],
        (_, Advice::Flags) => &["--dim"],
        (Class::Lattice(_), Advice::Scenario) => &["dims", "cont_dim"],
        (Class::LargeScale(_), Advice::Scenario) => &["dim", "horizon"],
        (_, Advice::Scenario) => &["dims"],
    };
    let mut lower: Vec<&str> = sizes.to_vec();
    if budget && !matches!(class, Class::LargeScale(_)) {
        lower.push(if advice == Advice::Flags {
            "--budget"
        } else {
            "budget"
        });
    }
    let last = lower.pop().unwrap_or("the sizes");
    let list = if lower.is_empty() {
        last.to_string()
    } else {
        format!("{} or {last}", lower.join(", "))
    };
    match advice {
        Advice::Flags => format!("lower {list}, or raise --max-memory"),
        Advice::Scenario => format!("lower the scenario's {list}, or raise --max-memory"),
    }
}

/// The refusal of a need over the cap, without a prefix: "method \"ellipsoid\" needs
/// about 8.0 TB at d = 1000000 (a d x d matrix), more than the 21.3 GB available; lower
/// --dim, or raise --max-memory"; `None` when the need fits.
pub fn refusal(
    class: &Class,
    method: Option<&str>,
    adversary: &str,
    budget: u64,
    cap: &Cap,
    advice_for: Advice,
) -> Option<String> {
    let need = game_need(class, method, adversary, budget);
    let total = need.total();
    if total <= cap.bytes {
        return None;
    }
    let drives = budget_drives(class, method, adversary, budget, total);
    let mut at = size_words(class);
    if drives {
        let (queries, why) = sure_queries(class, method, adversary, budget);
        at.push_str(&format!(" over the {queries} queries {why}"));
    }
    let big: Vec<&Part> = need
        .parts
        .iter()
        .filter(|p| p.bytes as f64 >= 0.1 * total as f64)
        .collect();
    let who = match big.as_slice() {
        [one] => format!(
            "{} needs about {} ({}) at {at}",
            one.what,
            format_size(total),
            one.note
        ),
        many => {
            let each: Vec<String> = many
                .iter()
                .map(|p| format!("{} (about {}: {})", p.what, format_size(p.bytes), p.note))
                .collect();
            format!(
                "{} need about {} together at {at}",
                each.join(" and "),
                format_size(total)
            )
        }
    };
    let advice = if big.first().is_some_and(|p| p.what == GAME_ITSELF) {
        "raise --max-memory (every game needs about this much)".to_string()
    } else {
        advice(class, drives, advice_for)
    };
    Some(format!("{who}, more than {}; {advice}", cap.describe()))
}

/// Refuses (exit code 2) a game of `command` whose need exceeds `cap`.
pub fn check_game(
    command: &str,
    class: &Class,
    method: Option<&str>,
    adversary: &str,
    budget: u64,
    cap: &Cap,
) -> Result<(), Error> {
    match refusal(class, method, adversary, budget, cap, Advice::Flags) {
        None => Ok(()),
        Some(reason) => Err(Error::Memory {
            context: command.to_string(),
            reason,
        }),
    }
}

/// Checks every game of a scenario's grid against `cap` before any is played: each
/// class with each method it plays (seeds change nothing), then the `jobs` largest played
/// at once. `path` names the scenario file in messages.
pub fn check_scenario(
    command: &str,
    scenario: &Scenario,
    path: &Path,
    cap: &Cap,
    jobs: usize,
) -> Result<(), Error> {
    let context = || format!("{command}: {}", path.display());
    let mut largest: Option<(u64, String)> = None;
    let mut games = 0u64;
    for point in 0..scenario.grid.len() {
        let Ok(class) = scenario.grid.class(point) else {
            continue;
        };
        let budget = scenario.budget_for(&class);
        for name in &scenario.methods {
            let external = scenario.external_method(name).is_some();
            if !external && crate::method::supports(name, &class).is_err() {
                continue;
            }
            let method = (!external).then_some(name.as_str());
            games += if scenario.deterministic(name) {
                1
            } else {
                scenario.seeds.len() as u64
            };
            if let Some(reason) = refusal(
                &class,
                method,
                &scenario.adversary,
                budget,
                cap,
                Advice::Scenario,
            ) {
                return Err(Error::Memory {
                    context: format!(
                        "{}: the game of {} against {:?}",
                        context(),
                        game_words(&class, name, budget),
                        scenario.adversary
                    ),
                    reason,
                });
            }
            let total = game_need(&class, method, &scenario.adversary, budget).total();
            if largest.as_ref().is_none_or(|(bytes, _)| total > *bytes) {
                largest = Some((total, game_words(&class, name, budget)));
            }
        }
    }
    let at_once = (jobs as u64).min(games).max(1);
    if let Some((bytes, words)) = largest {
        let together = bytes.saturating_mul(at_once);
        if at_once > 1 && together > cap.bytes {
            return Err(Error::Memory {
                context: context(),
                reason: format!(
                    "{at_once} games played at once (--jobs {jobs}) may need about {} \
                     together (the largest: the game of {words}, about {} each), more than \
                     {}; lower --jobs, or raise --max-memory",
                    format_size(together),
                    format_size(bytes),
                    cap.describe()
                ),
            });
        }
    }
    Ok(())
}

/// The memory a hunt needs: at each depth every line of the beam
/// (`width`) makes a child per candidate answer (two a direction: the 2 d axis signs, the
/// `random` directions and the `recent` queries' directions), and each node holds a copy
/// of the method (none for an external program, which runs as its own process), its line
/// of queries and answers, and its alive set (the cuts and their polytope; on
/// first-order classes a copy of the slab funnel), each as deep as the adversary's own
/// game ([`sure_queries`] against halving or the slab funnel, at most `budget`).
pub fn hunt_need(
    class: &Class,
    method: Option<&str>,
    width: usize,
    random: usize,
    recent: usize,
    budget: u64,
) -> u64 {
    let d = class.query_dim() as f64;
    let adversary = match class {
        Class::FirstOrder(_) => "slab-funnel",
        _ => "halving",
    };
    // A line is about as deep as the adversary's own game.
    let (depth, _) = sure_queries(class, method, adversary, budget);
    let b = depth as f64;
    let nodes = width as f64 * (2.0 * (d + random as f64 + recent as f64) + 2.0);
    let method_bytes = method
        .and_then(crate::method::info)
        .map_or(0, |m| (m.memory)(class, depth)) as f64;
    let line = b * (memory::F64 * 2.0 * d + memory::EXACT * (d + 1.0) + 2.0 * memory::VEC);
    let alive = match class {
        Class::FirstOrder(_) => {
            crate::adversary::info("slab-funnel").map_or(0, |a| (a.memory)(class, depth)) as f64
        }
        _ => memory::polytope(d, b) + b * (memory::F64 * d + 48.0),
    };
    let search_lp = 2.0 * memory::lp_work(b + 2.0 * d, d + 1.0, b * (d + 1.0) + 2.0 * d);
    memory::bytes(nodes * (method_bytes + line + alive) + search_lp + memory::GAME_BASE)
}

/// Refuses (exit code 2) a hunt whose need ([`hunt_need`]) exceeds `cap`.
pub fn check_hunt(
    class: &Class,
    method: Option<&str>,
    width: usize,
    random: usize,
    recent: usize,
    budget: u64,
    cap: &Cap,
) -> Result<(), Error> {
    let need = hunt_need(class, method, width, random, recent, budget);
    if need <= cap.bytes {
        return Ok(());
    }
    let who = method.map_or("the external program's lines".to_string(), |m| {
        format!("copies of method {m:?} and of the alive set")
    });
    Err(Error::Memory {
        context: "hunt".into(),
        reason: format!(
            "the search ({width} lines, each with a child per candidate answer, holding {who}) \
             needs about {} at {}, more than {}; lower --width or {}, or raise --max-memory",
            format_size(need),
            size_words(class),
            cap.describe(),
            if matches!(class, Class::Lattice(_)) {
                "--int-dim"
            } else {
                "--dim"
            }
        ),
    })
}

/// Refuses (exit code 2) a game against one saved witness function (`naysayer replay`)
/// whose need exceeds `cap`: the method, the game itself and the witness's exact oracle
/// (`pieces` affine pieces of d + 1 exact numbers each, with `f64` interval views).
pub fn check_replay(
    class: &Class,
    method: &str,
    pieces: usize,
    budget: u64,
    cap: &Cap,
) -> Result<(), Error> {
    let mut need = game_need(class, Some(method), "", budget);
    let d = class.query_dim() as f64;
    need.parts.push(Part {
        what: "the witness's oracle".into(),
        bytes: memory::bytes(pieces as f64 * (d + 1.0) * (memory::EXACT + 16.0) * 2.0),
        note: "its pieces, each d + 1 exact numbers",
    });
    let total = need.total();
    if total <= cap.bytes {
        return Ok(());
    }
    need.parts.sort_by_key(|p| std::cmp::Reverse(p.bytes));
    let top = &need.parts[0];
    Err(Error::Memory {
        context: "replay".into(),
        reason: format!(
            "the game needs about {} at {}, budget {budget} ({}: about {}, {}), more than {}; \
             lower --budget, or raise --max-memory",
            format_size(total),
            size_words(class),
            top.what,
            format_size(top.bytes),
            top.note,
            cap.describe()
        ),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::class::{FeasibilityClass, FirstOrderClass, LipschitzNorm, Promise};
    use crate::memory::CapSource;

    fn feasibility(d: usize) -> Class {
        Class::Feasibility(FeasibilityClass::new(d, 1.0, 1e-3, Promise::MayBeEmpty).unwrap())
    }

    #[test]
    fn sure_queries_follow_the_forced_and_planned_counts() {
        // Box halving, d = 4, R/rho = 1000: k = 9 (2^-9 > 1e-3 > 2^-10), d k + 1 = 37
        // (docs/theory.md §1.1; derived by hand).
        let c = feasibility(4);
        assert_eq!(
            sure_queries(&c, Some("midpoint"), "halving", 1_000_000).0,
            37
        );
        assert_eq!(sure_queries(&c, Some("midpoint"), "halving", 10).0, 10);
        assert_eq!(sure_queries(&c, None, "halving", 1_000_000).0, 37);
        // Slab funnel, d = 2, L R / (2 eps) = 50: d ceil(log_7 50) = 2 * 3 = 6 for a
        // deterministic method (docs/theory.md §2.4), nothing forced on a seeded one.
        let f = FirstOrderClass::new(2, 1.0, 1e-2, 1.0, LipschitzNorm::L2).unwrap();
        let f = Class::FirstOrder(f);
        assert_eq!(sure_queries(&f, Some("kelley"), "slab-funnel", 1000).0, 6);
        assert_eq!(sure_queries(&f, Some("kelley"), "orthant", 1000).0, 1);
        // The subgradient method plans ceil((L R sqrt(d) / eps)^2): d = 1, eps = 1/8: 64.
        let g =
            Class::FirstOrder(FirstOrderClass::new(1, 1.0, 0.125, 1.0, LipschitzNorm::L2).unwrap());
        let (q, why) = sure_queries(&g, Some("subgradient"), "orthant", 1000);
        assert_eq!(q, 64);
        assert!(why.contains("subgradient plans"), "{why}");
    }

    #[test]
    fn a_refusal_names_the_part_its_size_and_the_cap() {
        let cap = Cap {
            bytes: 1_000_000_000,
            source: CapSource::Flag,
        };
        // 8 d^2 = 8e10 bytes for the ellipsoid at d = 10^5.
        let text = refusal(
            &feasibility(100_000),
            Some("ellipsoid"),
            "halving",
            10,
            &cap,
            Advice::Flags,
        )
        .unwrap();
        assert!(
            text.starts_with("method \"ellipsoid\" needs about 80."),
            "{text}"
        );
        assert!(text.contains("GB (a d x d matrix) at d = 100000"), "{text}");
        assert!(
            text.contains("more than the 1.0 GB of --max-memory; lower --dim"),
            "{text}"
        );
        assert_eq!(
            refusal(
                &feasibility(100),
                Some("ellipsoid"),
                "halving",
                10,
                &cap,
                Advice::Flags
            ),
            None
        );
    }
}
