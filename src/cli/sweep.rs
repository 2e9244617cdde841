//! `naysayer sweep` and `naysayer merge`.

use std::path::PathBuf;

use clap::Args;

use crate::cli::{EXIT_INTERRUPTED, EXIT_METHOD_FAILED, EXIT_OK, EXIT_REJECTED};
use crate::error::Error;
use crate::family::Evidence;
use crate::scenario::Scenario;
use crate::sweep::{self, Shard, SweepSettings};

/// Arguments of `naysayer sweep`.
#[derive(Debug, Args)]
pub struct SweepArgs {
    /// Scenario files (TOML; see `adversaries/`).
    #[arg(required = true)]
    pub scenarios: Vec<PathBuf>,
    /// Worker threads (default: the number of cores).
    #[arg(short, long, allow_negative_numbers = true)]
    pub jobs: Option<usize>,
    /// Play only shard K of N (K/N, 1-based), for cluster job arrays.
    #[arg(long, value_parser = Shard::parse)]
    pub shard: Option<Shard>,
    /// Root folder of the results.
    #[arg(long, default_value = "results")]
    pub out: PathBuf,
    /// Do not draw charts after the sweep.
    #[arg(long)]
    pub no_charts: bool,
    /// Expectation file (TOML, see `naysayer::expect`) checked against the games of
    /// every scenario given: exit 5 when a number drifts.
    #[arg(long)]
    pub expect: Option<PathBuf>,
    /// Start over: delete the scenario's earlier games (its `games.csv`, transcripts and
    /// charts) instead of resuming them. Needed when an external method's program
    /// changed since the games were played.
    #[arg(long)]
    pub restart: bool,
    /// Progress and the memory cap.
    #[command(flatten)]
    pub work: crate::cli::progress::WorkArgs,
}

/// Arguments of `naysayer merge`.
#[derive(Debug, Args)]
pub struct MergeArgs {
    /// The scenario's results folder holding shard-K-of-N folders.
    pub folder: PathBuf,
    /// Do not draw charts after merging.
    #[arg(long)]
    pub no_charts: bool,
}

/// Runs `sweep`.
pub fn run(args: &SweepArgs) -> Result<u8, Error> {
    // Validate every scenario (and the expectations) before playing any game.
    let mut scenarios = Vec::new();
    for path in &args.scenarios {
        scenarios.push(Scenario::from_file(path)?);
    }
    if let Some(path) = &args.expect {
        crate::expect::Expectations::from_file(path)?;
    }
    let jobs = args
        .jobs
        .unwrap_or_else(|| std::thread::available_parallelism().map_or(1, |n| n.get()));
    // Every game of every grid must fit before any is played.
    let cap = args.work.cap();
    for (scenario, path) in scenarios.iter().zip(&args.scenarios) {
        crate::resources::check_scenario("sweep", scenario, path, &cap, jobs)?;
    }
    let mut results = Vec::new();
    let settings = SweepSettings {
        jobs,
        shard: args.shard,
        root: args.out.clone(),
        progress: true,
        restart: args.restart,
    };
    let mut code = EXIT_OK;
    for scenario in &scenarios {
        let shards = args.shard.map_or(1, |s| s.count);
        if let Some(estimate) = crate::resources::time::sweep(scenario, jobs, shards) {
            crate::cli::progress::announce(&format!("sweep: {}", scenario.name), &estimate);
        }
        let progress = crate::cli::progress::Report::start(
            &format!("sweep: {}", scenario.name),
            "games",
            &crate::progress::GAMES,
            args.work.quiet,
        );
        let summary = sweep::run(scenario, &settings);
        progress.finish();
        let summary = summary?;
        if args.expect.is_some() {
            results.extend(crate::expect::GameResult::from_csv(&summary.csv)?);
        }
        let demonstration = scenario.grid.family().evidence() == Evidence::Demonstration;
        crate::say!(
            "{}: {} {}games ({} resumed, {} played) -> {}",
            scenario.name,
            summary.games,
            if demonstration { "demonstration " } else { "" },
            summary.resumed,
            summary.played,
            summary.csv.display()
        );
        if summary.rejected > 0 {
            if demonstration {
                crate::say!(
                    "{}: {} games fell below a claimed lower curve or were refused by the \
                     judge (see the holds and outcome columns)",
                    scenario.name,
                    summary.rejected
                );
            } else {
                crate::say!(
                    "{}: {} certificates REJECTED by the verifier (see the outcome column)",
                    scenario.name,
                    summary.rejected
                );
            }
            code = EXIT_REJECTED;
        }
        if summary.failed > 0 {
            crate::say!(
                "{}: {} games ended with the method failing (see the outcome column; \
                 `naysayer play --exec` on one of them shows the program's messages)",
                scenario.name,
                summary.failed
            );
            if code == EXIT_OK {
                code = EXIT_METHOD_FAILED;
            }
        }
        if summary.interrupted {
            crate::note!(
                "naysayer: interrupted by {}; the {} finished rows of {} are kept and the \
                 same command resumes from them",
                crate::interrupt::signal_name().unwrap_or("a signal"),
                summary.resumed + summary.played,
                summary.csv.display()
            );
            return Ok(EXIT_INTERRUPTED);
        }
        if args.shard.is_none() {
            let columns = scenario.grid.columns();
            let table = crate::report::summary::terminal_summary(
                &scenario.results_dir(&args.out),
                columns,
            )?;
            crate::say_text!("{table}");
        }
        if !args.no_charts && args.shard.is_none() {
            scenario
                .grid
                .draw_charts(&scenario.results_dir(&args.out), &scenario.lineup())?;
            crate::report::write(
                &scenario.results_dir(&args.out),
                &crate::report::ReportOptions {
                    scenario_path: None,
                    results_root: Some(args.out.clone()),
                },
            )?;
        }
    }
    match &args.expect {
        Some(path) => crate::cli::gate(path, &results, args.shard.is_none(), code),
        None => Ok(code),
    }
}

/// Runs `merge`.
pub fn run_merge(args: &MergeArgs) -> Result<u8, Error> {
    let out = sweep::merge(&args.folder)?;
    crate::say!("merged -> {}", out.display());
    if !args.no_charts {
        crate::cli::chart::draw_all(&args.folder)?;
    }
    Ok(EXIT_OK)
}
