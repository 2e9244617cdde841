//! `naysayer demo`: the main job on the built-in default scenario (embedded in the
//! binary, so it works from any directory): every built-in method against the
//! box-halving adversary over d = 1..8 and R/rho = 10^2..10^6, written to
//! `results/demo/` with charts, and a table at d = 8, R/rho = 10^6 of queries used and
//! certified lower bounds beside the bound lines.

use std::path::{Path, PathBuf};

use clap::Args;

use crate::bounds::feasibility_bounds;
use crate::class::{FeasibilityClass, Promise};
use crate::cli::{EXIT_OK, EXIT_REJECTED};
use crate::csv::split as split_csv_line;
use crate::error::Error;
use crate::family::boxes::COLUMNS;
use crate::scenario::Scenario;
use crate::sweep::{self, SweepSettings};

/// The embedded default scenario.
pub const DEMO_SCENARIO: &str = include_str!("../../adversaries/demo.toml");

/// Arguments of `naysayer demo`.
#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Root folder of the results.
    #[arg(long, default_value = "results")]
    pub out: PathBuf,
    /// Worker threads (default: the number of cores).
    #[arg(short, long, allow_negative_numbers = true)]
    pub jobs: Option<usize>,
    /// Progress and the memory cap.
    #[command(flatten)]
    pub work: crate::cli::progress::WorkArgs,
}

/// Runs `demo`.
pub fn run(args: &DemoArgs) -> Result<u8, Error> {
    let scenario = Scenario::parse(DEMO_SCENARIO, Path::new("<built-in demo scenario>"))?;
    let settings = SweepSettings {
        jobs: args
            .jobs
            .unwrap_or_else(|| std::thread::available_parallelism().map_or(1, |n| n.get())),
        shard: None,
        root: args.out.clone(),
        progress: true,
        // The demo always plays (it takes about a second): results left by an earlier
        // run, or committed with the gallery, are replaced, not resumed.
        restart: true,
    };
    crate::resources::check_scenario(
        "demo",
        &scenario,
        Path::new("<built-in demo scenario>"),
        &args.work.cap(),
        settings.jobs,
    )?;
    crate::say!("naysayer demo: {}", scenario.description);
    let progress = crate::cli::progress::Report::start(
        "demo",
        "games",
        &crate::progress::GAMES,
        args.work.quiet,
    );
    let summary = sweep::run(&scenario, &settings);
    progress.finish();
    let summary = summary?;
    if summary.interrupted {
        crate::note!(
            "naysayer: interrupted by {}; the finished games are in {} (`naysayer demo` \
             plays them all again next time)",
            crate::interrupt::signal_name().unwrap_or("a signal"),
            summary.csv.display()
        );
        return Ok(crate::cli::EXIT_INTERRUPTED);
    }
    let dir = scenario.results_dir(&args.out);
    crate::say!(
        "{} games played -> {}\n",
        summary.played,
        summary.csv.display()
    );
    print_table(&summary.csv, 8, 1e-6)?;
    let class = FeasibilityClass::new(8, 1.0, 1e-6, Promise::MayBeEmpty)?;
    crate::say!("\nbounds for d = 8, R/rho = 1e6 (queries):");
    for bound in feasibility_bounds(&class) {
        let value = bound
            .queries
            .map_or_else(|| "order only".to_string(), |q| q.to_string());
        crate::say!("  {:<28} {:>12}  ({})", bound.label, value, bound.source);
    }
    crate::say!("\ncharts:");
    for png in crate::cli::chart::draw_all(&dir)? {
        crate::say!("  {}", png.display());
    }
    let report = crate::report::write(
        &dir,
        &crate::report::ReportOptions {
            scenario_path: None,
            results_root: Some(args.out.clone()),
        },
    )?;
    crate::say!("report:\n  {}", report.html.display());
    if summary.rejected > 0 {
        crate::say!(
            "{} certificates were REJECTED by the verifier",
            summary.rejected
        );
        return Ok(EXIT_REJECTED);
    }
    Ok(EXIT_OK)
}

/// Prints queries used and certified lower bounds at (d, rho), every method and seed.
fn print_table(csv: &Path, dim: usize, rho: f64) -> Result<(), Error> {
    let text = std::fs::read_to_string(csv).map_err(|source| Error::Io {
        action: "cannot read",
        path: csv.to_path_buf(),
        source,
    })?;
    let col = |name: &str| {
        COLUMNS
            .iter()
            .position(|c| *c == name)
            .expect("known column")
    };
    crate::say!("d = {dim}, R/rho = {}:", 1.0 / rho);
    crate::say!(
        "{:<18} {:>5} {:>14} {:>22} {:>9}  outcome",
        "method",
        "seed",
        "queries used",
        "certified lower bound",
        "verified"
    );
    for line in text.lines().skip(1) {
        let f = split_csv_line(line);
        if f.len() != COLUMNS.len()
            || f[col("dim")] != dim.to_string()
            || f[col("accuracy")].parse::<f64>().ok() != Some(rho)
        {
            continue;
        }
        let queries = if f[col("censored")] == "true" {
            format!("> {}", f[col("queries_used")])
        } else {
            f[col("queries_used")].clone()
        };
        crate::say!(
            "{:<18} {:>5} {:>14} {:>22} {:>9}  {}",
            f[col("method")],
            f[col("seed")],
            queries,
            f[col("certified_lower_bound")],
            f[col("verified")],
            f[col("outcome")]
        );
    }
    Ok(())
}
