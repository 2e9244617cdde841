//! `naysayer hunt`: search the answers that make one deterministic method slowest
//! ([`crate::hunt`]), write and verify the worst game's transcript; or, with
//! `--replay FILE`, feed a transcript's recorded answers back to the method its header
//! names and check that it reproduces the same queries, count and ending.
//!
//! Exit codes: 0 success (hunt verified, or replay reproduced); 1 the worst game's
//! certificate was rejected, or the replay did not reproduce the recording; 2 bad
//! arguments (including a method that is not deterministic); 4 an I/O error.

use clap::Args;

use crate::class::Class;
use crate::cli::play::{describe_outcome, lower_bound_text, queries_used_text};
use crate::cli::{
    describe_class, ClassArgs, Family, FirstOrderArgs, PathArg, EXIT_OK, EXIT_REJECTED,
};
use crate::error::Error;
use crate::hunt::{self, replay, GameFigures, HuntReport, HuntSettings};

/// Arguments of `naysayer hunt`.
#[derive(Debug, Args)]
pub struct HuntArgs {
    /// Built-in method to hunt (see `naysayer list`); it must be deterministic for its
    /// seed.
    #[arg(short, long, default_value = "analytic-center")]
    pub method: String,
    /// The family of classes: feasibility (search over strict cuts) or first-order
    /// (search over the slab funnel's free choices, docs/theory.md §2.4).
    #[arg(long = "class", value_enum, default_value_t = Family::Feasibility)]
    pub family: Family,
    /// The class.
    #[command(flatten)]
    pub class: ClassArgs,
    /// First-order parameters (`--class first-order`).
    #[command(flatten)]
    pub first_order: FirstOrderArgs,
    /// Seed of the method (randomized methods are deterministic given it).
    #[arg(long, default_value_t = 0, allow_negative_numbers = true)]
    pub seed: u64,
    /// Beam width: lines kept at each depth.
    #[arg(long, default_value_t = 8, allow_negative_numbers = true)]
    pub width: usize,
    /// Search budget: method replays (one replay = one method step driven by the search).
    #[arg(long, default_value_t = 10_000, allow_negative_numbers = true)]
    pub replays: u64,
    /// Seed of the hunt's random candidate directions.
    #[arg(long = "hunt-seed", default_value_t = 0, allow_negative_numbers = true)]
    pub hunt_seed: u64,
    /// Random candidate directions per query.
    #[arg(
        long = "random-directions",
        default_value_t = 4,
        allow_negative_numbers = true
    )]
    pub random_directions: usize,
    /// Candidate directions from this many of the method's most recent queries.
    #[arg(
        long = "recent-queries",
        default_value_t = 2,
        allow_negative_numbers = true
    )]
    pub recent_queries: usize,
    /// Most queries the method may ask in one game.
    #[arg(long, default_value_t = 10_000, allow_negative_numbers = true)]
    pub budget: u64,
    /// Write the worst game's transcript here (JSON Lines); it is verified from the file.
    #[arg(short, long)]
    pub transcript: Option<PathArg>,
    /// Instead of hunting: replay the answers recorded in this transcript to the method
    /// its header names (with its seed) and check that it reproduces them.
    #[arg(long, value_name = "FILE")]
    pub replay: Option<PathArg>,
    /// Hunt an external method (`--exec -- PROGRAM ARGS...`) instead of a built-in one.
    /// Every line of the search replays the program from scratch through the protocol,
    /// so it must be deterministic: a program whose two replays of the same answers
    /// differ is refused, saying where they parted.
    #[command(flatten)]
    pub exec: crate::cli::play::ExecArgs,
    /// Progress (`--quiet`) and the memory cap.
    #[command(flatten)]
    pub work: crate::cli::progress::WorkArgs,
}

/// Runs `hunt`.
pub fn run(args: &HuntArgs) -> Result<u8, Error> {
    if args.exec.exec && args.replay.is_some() {
        return Err(Error::InvalidSetting {
            name: "--replay",
            reason: "replays the built-in method a transcript names; it cannot be combined \
                     with --exec"
                .into(),
        });
    }
    if let Some(path) = &args.replay {
        return run_replay(path);
    }
    let settings = HuntSettings {
        width: args.width,
        replays: args.replays,
        seed: args.hunt_seed,
        random_directions: args.random_directions,
        recent_queries: args.recent_queries,
        game_budget: args.budget,
    };
    if !args.exec.exec && !args.exec.command.is_empty() {
        return Err(Error::InvalidSetting {
            name: "command line",
            reason: "a program after `--` needs --exec".into(),
        });
    }
    settings.validate()?;
    check_resources(args)?;
    let bar = crate::cli::progress::Report::start(
        "hunt",
        "replays",
        &crate::progress::SEARCH,
        args.work.quiet,
    );
    crate::progress::SEARCH.set_total(args.replays);
    let mut on_progress = |p: &hunt::HuntProgress| {
        crate::progress::SEARCH.set(p.replays_used.min(p.replay_budget));
        bar.set_message(format!(
            "pass {}, depth {}, worst certified count so far {}",
            p.pass + 1,
            p.depth,
            p.best_certified
        ));
    };
    let found = search(args, &settings, &mut on_progress);
    // A signal during the search (or its determinism re-check) ends the hunt as
    // interrupted, whatever the search was doing when it came.
    let report = match found {
        Err(_) if crate::interrupt::requested() => {
            crate::note!(
                "naysayer: interrupted by {} before the hunt found a worst game",
                crate::interrupt::signal_name().unwrap_or("a signal")
            );
            return Ok(crate::cli::EXIT_INTERRUPTED);
        }
        other => other?,
    };
    bar.finish();
    crate::say_text!("{}", summary(args, &report));
    if crate::interrupt::requested() {
        crate::note!(
            "naysayer: interrupted by {}; the worst game found before it is shown above",
            crate::interrupt::signal_name().unwrap_or("a signal")
        );
        return Ok(crate::cli::EXIT_INTERRUPTED);
    }
    Ok(if report.verdict.is_ok() {
        EXIT_OK
    } else {
        EXIT_REJECTED
    })
}

/// Runs the hunt the arguments ask for: a built-in or an external method, feasibility or
/// first-order.
fn search(
    args: &HuntArgs,
    settings: &HuntSettings,
    on_progress: &mut dyn FnMut(&hunt::HuntProgress),
) -> Result<HuntReport, Error> {
    Ok(match args.family {
        Family::Feasibility if args.exec.exec => {
            let inner = args.class.to_class()?;
            let factory = external_factory(args, &Class::Feasibility(inner.clone()))?;
            hunt::hunt(
                &inner,
                args.seed,
                &factory,
                settings,
                on_progress,
                args.transcript.as_deref(),
            )?
        }
        Family::FirstOrder if args.exec.exec => {
            let inner = args.first_order.to_class(&args.class)?;
            let class = Class::FirstOrder(inner.clone());
            let factory = external_factory(args, &class)?;
            hunt::first_order::hunt_first_order(
                &inner,
                args.seed,
                &factory,
                settings,
                on_progress,
                args.transcript.as_deref(),
            )?
        }
        Family::Feasibility => hunt::hunt_builtin(
            &args.method,
            &args.class.to_class()?,
            args.seed,
            settings,
            on_progress,
            args.transcript.as_deref(),
        )?,
        Family::FirstOrder => hunt::first_order::hunt_first_order_builtin(
            &args.method,
            &args.first_order.to_class(&args.class)?,
            args.seed,
            settings,
            on_progress,
            args.transcript.as_deref(),
        )?,
        Family::Lattice => {
            return Err(Error::Unsupported {
                what: "hunt".into(),
                reason: "lattice classes have no hunt; use `naysayer minimax` for small ones"
                    .into(),
            })
        }
        Family::LargeScale => {
            return Err(Error::Unsupported {
                what: "hunt".into(),
                reason: "the large-scale family has no hunt: its adaptive-rotation \
                     adversaries already bind every deterministic method \
                     (docs/theory.md §3)"
                    .into(),
            })
        }
    })
}

/// Builds a fresh external method for every replay of the search (its own process).
fn external_factory(
    args: &HuntArgs,
    class: &Class,
) -> Result<impl Fn() -> Result<Box<dyn crate::method::Method + Send>, Error> + Sync, Error> {
    let settings = args.exec.to_settings()?;
    let command = args.exec.command.clone();
    let class = class.clone();
    let (budget, seed) = (args.budget, args.seed);
    Ok(move || {
        crate::method::external::ExternalMethod::new(
            &command,
            &class,
            budget,
            seed,
            settings.clone(),
        )
        .map(|m| Box::new(m) as Box<dyn crate::method::Method + Send>)
    })
}

/// Refuses a hunt that cannot fit in memory, and says when it will likely take hours.
fn check_resources(args: &HuntArgs) -> Result<(), Error> {
    let class = match args.family {
        Family::Feasibility => Class::Feasibility(args.class.to_class()?),
        Family::FirstOrder => Class::FirstOrder(args.first_order.to_class(&args.class)?),
        // Refused below with their own message.
        Family::Lattice | Family::LargeScale => return Ok(()),
    };
    let method = (!args.exec.exec).then_some(args.method.as_str());
    crate::resources::check_hunt(
        &class,
        method,
        args.width,
        args.random_directions,
        args.recent_queries,
        args.budget,
        &args.work.cap(),
    )?;
    if let Some(estimate) = crate::resources::time::hunt(
        &class,
        method.unwrap_or("external"),
        args.replays,
        args.budget,
    ) {
        crate::cli::progress::announce("hunt", &estimate);
    }
    Ok(())
}

fn figures_text(f: &GameFigures) -> String {
    let bound = f
        .certified_lower_bound
        .map_or("none".to_string(), |b| b.to_string());
    format!(
        "{} queries (certified lower bound {bound})",
        queries_used_text(f.queries_used, f.censored)
    )
}

fn summary(args: &HuntArgs, report: &HuntReport) -> String {
    let mut out = String::new();
    let mut line = |label: &str, text: String| out.push_str(&format!("{label:<23}{text}\n"));
    line("class", describe_class(&report.header.class));
    line(
        "method",
        format!("{} (seed {})", report.header.method, args.seed),
    );
    line(
        "search",
        format!(
            "beam search, width {}, {} passes, hunt seed {}",
            args.width, report.passes, args.hunt_seed
        ),
    );
    let first_order = matches!(report.header.class, Class::FirstOrder(_));
    let (generic, theorem) = if first_order {
        (
            "slab-funnel",
            "every deterministic method (theorem: slab funnel, docs/theory.md §2.4)",
        )
    } else {
        (
            "halving",
            "every method (theorem: box halving, docs/theory.md §1.1)",
        )
    };
    line("worst found", figures_text(&report.worst));
    line(
        &format!("{generic} adversary"),
        figures_text(&report.generic),
    );
    line(
        "lower bound",
        format!("{} queries for {theorem}", report.lower_bound),
    );
    line(
        "found by",
        if report.found_by_search {
            format!("the search (longer than the {generic} game)")
        } else {
            format!("the seed line: no searched line beat the {generic} game")
        },
    );
    line(
        "budget used",
        if first_order {
            format!(
                "{} of {} replays; {} admissible answers tried (ties of the funnel's answer)",
                report.replays_used, report.replay_budget, report.candidates_tested
            )
        } else {
            format!(
                "{} of {} replays; {} candidate answers tested, {} rejected by the exact \
                 check after the LP accepted them",
                report.replays_used,
                report.replay_budget,
                report.candidates_tested,
                report.rejected_by_exact_check
            )
        },
    );
    if report.method_failures.0 > 0 {
        line(
            "method failures",
            format!(
                "{} searched lines ended with the method failing; first: {}",
                report.method_failures.0,
                report.method_failures.1.as_deref().unwrap_or("?")
            ),
        );
    }
    match &report.verdict {
        Ok(verdict) => {
            line("certified lower bound", lower_bound_text(verdict));
            line(
                "outcome",
                describe_outcome(&verdict.outcome, &verdict.ending),
            );
            line(
                "verifier",
                "certificate valid (exact rational check)".into(),
            );
        }
        Err(e) => line("verifier", format!("REJECTED: {e}")),
    }
    if let Some(path) = &args.transcript {
        line(
            "transcript",
            format!(
                "{} (replay it with `naysayer hunt --replay {}`)",
                path.display(),
                path.display()
            ),
        );
    }
    out.push_str(
        "note                   a measured count for this method and seed, not a theorem: \
         longer lines may exist\n",
    );
    out
}

fn run_replay(path: &std::path::Path) -> Result<u8, Error> {
    let records = replay::read_records(path)?;
    let (header, _, _) = replay::split_records(&records)?;
    let mut method = crate::method::build(&header.method, &header.class, header.seed)?;
    let report = replay::replay_answers(method.as_mut(), &records)?;
    crate::say!(
        "replayed {} against {} recorded answers from {}",
        header.method,
        report.original.queries_used,
        path.display()
    );
    crate::say!("{}", report.describe());
    crate::say!(
        "method {} after {} queries",
        replay::ending_words(&report.record.ending),
        report.record.queries_used
    );
    Ok(if report.reproduced() {
        EXIT_OK
    } else {
        EXIT_REJECTED
    })
}
