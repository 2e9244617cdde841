//! The command line: clap-derive structs hold raw arguments; each command validates
//! them into library types, runs, and prints.
//!
//! Exit codes (documented in the README):
//! 0 success; 1 a certificate was rejected by the verifier; 2 bad arguments or bad
//! input (a file that cannot be read or parsed, an invalid class); 3 the method failed;
//! 4 an I/O error while writing output; 5 a result drifted from its expectation
//! (`--expect`).

pub mod audit;
pub mod bounds;
pub mod chart;
pub mod check;
pub mod demo;
pub mod hunt;
pub mod list;
pub mod minimax;
pub mod output;
pub mod play;
pub mod replay;
pub mod report;
pub mod sweep;

use std::path::PathBuf;

use clap::{Args, Parser, Subcommand};

use crate::class::{Class, FeasibilityClass, Promise};
use crate::error::Error;

/// Exit code: success.
pub const EXIT_OK: u8 = 0;
/// Exit code: the verifier rejected a certificate.
pub const EXIT_REJECTED: u8 = 1;
/// Exit code: bad arguments or bad input.
pub const EXIT_BAD_INPUT: u8 = 2;
/// Exit code: the method failed.
pub const EXIT_METHOD_FAILED: u8 = 3;
/// Exit code: an I/O error while writing output.
pub const EXIT_IO: u8 = 4;
/// Exit code: a result drifted from its expectation (`--expect`, [`crate::expect`]).
pub const EXIT_DRIFT: u8 = 5;
/// Exit code: a signal (SIGINT, SIGTERM, SIGHUP) ended the command
/// ([`crate::interrupt`]).
pub const EXIT_INTERRUPTED: u8 = crate::interrupt::EXIT_INTERRUPTED;
/// Exit code: `play --fail-on-refuted` and the method's output is refuted.
pub const EXIT_REFUTED: u8 = 7;

/// Checks `results` against the expectation file at `path`, prints one line per drift on
/// stderr, and returns the exit code: `code` when it is already nonzero (a lower code
/// wins), [`EXIT_DRIFT`] when anything drifted, else [`EXIT_OK`].
pub fn gate(
    path: &std::path::Path,
    results: &[crate::expect::GameResult],
    require_match: bool,
    code: u8,
) -> Result<u8, Error> {
    let expectations = crate::expect::Expectations::from_file(path)?;
    let drifts = expectations.check(results, require_match);
    for drift in &drifts {
        crate::note!("naysayer: drift: {drift}");
    }
    Ok(if code != EXIT_OK {
        code
    } else if drifts.is_empty() {
        crate::say!(
            "expectations           {} held ({} tables)",
            path.display(),
            expectations.games.len()
        );
        EXIT_OK
    } else {
        EXIT_DRIFT
    })
}

/// Plays optimization methods against resisting oracles and certifies query lower
/// bounds exactly.
#[derive(Debug, Parser)]
#[command(name = "naysayer", version, about)]
pub struct Cli {
    /// The command.
    #[command(subcommand)]
    pub command: Command,
}

/// The commands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Play one method against one adversary, write the transcript, verify the certificate.
    Play(play::PlayArgs),
    /// Re-verify a transcript file; the exit code says whether its certificate holds.
    Check(check::CheckArgs),
    /// Print the lower bound and every upper-bound line for a class, with sources.
    Bounds(bounds::BoundsArgs),
    /// List the built-in methods and adversaries.
    List,
    /// Play every built-in method against the halving adversary at d = 8, R/rho = 1e6.
    Demo(demo::DemoArgs),
    /// Play every game of one or more scenario files in parallel; write CSV and charts.
    Sweep(sweep::SweepArgs),
    /// Merge the shard folders of a sharded sweep into one games.csv.
    Merge(sweep::MergeArgs),
    /// Draw the charts of a sweep's results folder.
    Chart(chart::ChartArgs),
    /// Write report.html and report.md of a sweep's results folder.
    Report(report::ReportArgs),
    /// Exact minimax value of a small integer class over a finite query set (docs/theory.md §6).
    Minimax(minimax::MinimaxArgs),
    /// Play a built-in method against one saved first-order witness function (from a
    /// transcript's final record or an audit's witness file) with its exact oracle.
    Replay(replay::ReplayArgs),
    /// Search the answers that make one deterministic method slowest; verify the worst
    /// game found (or, with --replay FILE, replay a transcript's answers to its method).
    Hunt(hunt::HuntArgs),
}

/// Which family of classes a command plays.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum, Default)]
pub enum Family {
    /// Separation-oracle feasibility (docs/theory.md §1): --rho, --nonempty.
    #[default]
    Feasibility,
    /// First-order minimisation (docs/theory.md §2): --eps, --lipschitz, --norm.
    FirstOrder,
    /// Integer and mixed-integer feasibility (docs/theory.md §4): --int-dim, --int-lower,
    /// --int-upper, --cont-dim, with --half-width and --rho for the continuous part.
    Lattice,
    /// Large-scale first-order demonstrations (docs/theory.md §3): --kind, --horizon,
    /// --radius, --lipschitz (nonsmooth), --smoothness, --strong-convexity, with -d.
    LargeScale,
}

/// Parameters of the large-scale classes (docs/theory.md §3), as raw arguments.
#[derive(Debug, Clone, Args)]
pub struct LargeScaleArgs {
    /// Large-scale class: nonsmooth (uses --lipschitz), smooth or strongly-convex.
    #[arg(long, default_value = "nonsmooth", value_parser = ["nonsmooth", "smooth", "strongly-convex"])]
    pub kind: String,
    /// Horizon T of a large-scale game: its number of queries (and the methods' plan).
    #[arg(long, default_value_t = 100, allow_negative_numbers = true)]
    pub horizon: u64,
    /// R >= ||x_0 - x*|| (large-scale classes).
    #[arg(long, default_value_t = 1.0, allow_hyphen_values = true)]
    pub radius: f64,
    /// Smoothness beta (smooth and strongly-convex large-scale classes).
    #[arg(long, default_value_t = 1.0, allow_hyphen_values = true)]
    pub smoothness: f64,
    /// Strong convexity mu (strongly-convex large-scale class), 0 < mu < beta.
    #[arg(
        long = "strong-convexity",
        default_value_t = 0.01,
        allow_hyphen_values = true
    )]
    pub strong_convexity: f64,
}

impl LargeScaleArgs {
    /// Validates into a large-scale class at its horizon, with d from `shape` and M from
    /// `first_order`.
    pub fn to_class(
        &self,
        shape: &ClassArgs,
        first_order: &FirstOrderArgs,
    ) -> Result<crate::class::LargeScale, Error> {
        use crate::class::LargeScaleClass;
        let d = shape.dim;
        let function = match self.kind.as_str() {
            "nonsmooth" => LargeScaleClass::nonsmooth(d, first_order.lipschitz, self.radius)?,
            "smooth" => LargeScaleClass::smooth(d, self.smoothness, self.radius)?,
            _ => LargeScaleClass::strongly_convex(
                d,
                self.smoothness,
                self.strong_convexity,
                self.radius,
            )?,
        };
        crate::class::LargeScale::new(function, self.horizon)
    }
}

/// The class a command plays: the family and every family's parameters (only the
/// chosen family's are used).
#[derive(Debug, Clone, Args)]
pub struct ClassSelection {
    /// The family of classes.
    #[arg(long = "class", value_enum, default_value_t = Family::Feasibility)]
    pub family: Family,
    /// The class's dimension, box and separation accuracy.
    #[command(flatten)]
    pub shape: ClassArgs,
    /// First-order parameters.
    #[command(flatten)]
    pub first_order: FirstOrderArgs,
    /// Lattice class parameters (`--class lattice`).
    #[command(flatten)]
    pub lattice: crate::cli::minimax::LatticeArgs,
    /// Large-scale class parameters (`--class large-scale`).
    #[command(flatten)]
    pub large_scale: LargeScaleArgs,
}

impl ClassSelection {
    /// Validates into a class.
    pub fn to_class(&self) -> Result<Class, Error> {
        Ok(match self.family {
            Family::Feasibility => Class::Feasibility(self.shape.to_class()?),
            Family::FirstOrder => Class::FirstOrder(self.first_order.to_class(&self.shape)?),
            Family::Lattice => Class::Lattice(self.lattice.to_class(&self.shape)?),
            Family::LargeScale => {
                Class::LargeScale(self.large_scale.to_class(&self.shape, &self.first_order)?)
            }
        })
    }
}

/// First-order class parameters, as raw arguments.
#[derive(Debug, Clone, Args)]
pub struct FirstOrderArgs {
    /// Additive accuracy eps (first-order classes).
    #[arg(long, default_value_t = 1e-4, allow_hyphen_values = true)]
    pub eps: f64,
    /// Lipschitz constant L (first-order classes).
    #[arg(long, default_value_t = 1.0, allow_hyphen_values = true)]
    pub lipschitz: f64,
    /// The norm L is measured in: l1, l2 or linf (first-order classes).
    #[arg(long, default_value = "l2", value_parser = ["l1", "l2", "linf"])]
    pub norm: String,
}

impl FirstOrderArgs {
    /// Validates into a first-order class with the dimension and box of `shape`: L and
    /// eps finite and positive, eps < L R / 2 (errors name the flag).
    pub fn to_class(&self, shape: &ClassArgs) -> Result<crate::class::FirstOrderClass, Error> {
        let norm = match self.norm.as_str() {
            "l1" => crate::class::LipschitzNorm::L1,
            "linf" => crate::class::LipschitzNorm::Linf,
            _ => crate::class::LipschitzNorm::L2,
        };
        let (l, eps) = (self.lipschitz, self.eps);
        if !(l.is_finite() && l > 0.0) {
            return Err(Error::InvalidSetting {
                name: "--lipschitz",
                reason: format!("L = {l} must be a finite positive number"),
            });
        }
        if !(eps.is_finite() && eps > 0.0) {
            return Err(Error::InvalidSetting {
                name: "--eps",
                reason: format!("eps = {eps} must be a finite positive number"),
            });
        }
        let class = crate::class::FirstOrderClass::new(shape.dim, shape.half_width, eps, l, norm)?;
        class
            .check_accuracy_below_half_range()
            .map_err(|e| Error::InvalidSetting {
                name: "--eps",
                reason: match e {
                    Error::InvalidClass { reason } => {
                        format!("{reason} (L is --lipschitz, R is --half-width)")
                    }
                    other => other.to_string(),
                },
            })?;
        Ok(class)
    }
}

/// The separation feasibility class, as raw arguments.
#[derive(Debug, Clone, Args)]
pub struct ClassArgs {
    /// Dimension d.
    #[arg(
        short = 'd',
        long = "dim",
        default_value_t = 2,
        allow_negative_numbers = true
    )]
    pub dim: usize,
    /// Box half-width R (the box is [-R, R]^d).
    #[arg(long = "half-width", default_value_t = 1.0, allow_hyphen_values = true)]
    pub half_width: f64,
    /// Accuracy rho: K is empty or contains a Euclidean ball of this radius.
    #[arg(long, default_value_t = 1e-3, allow_hyphen_values = true)]
    pub rho: f64,
    /// Promise that K is nonempty (a method may not answer "empty").
    #[arg(long)]
    pub nonempty: bool,
}

impl ClassArgs {
    /// Validates into a class.
    pub fn to_class(&self) -> Result<FeasibilityClass, Error> {
        let promise = if self.nonempty {
            Promise::Nonempty
        } else {
            Promise::MayBeEmpty
        };
        FeasibilityClass::new(self.dim, self.half_width, self.rho, promise)
    }
}

/// Runs a parsed command line and returns the exit code.
pub fn run(cli: Cli) -> Result<u8, Error> {
    if matches!(
        cli.command,
        Command::Play(_) | Command::Sweep(_) | Command::Demo(_) | Command::Hunt(_)
    ) {
        crate::interrupt::install();
    }
    match cli.command {
        Command::Play(args) => play::run(&args),
        Command::Check(args) => check::run(&args),
        Command::Bounds(args) => bounds::run(&args),
        Command::List => list::run(),
        Command::Demo(args) => demo::run(&args),
        Command::Sweep(args) => sweep::run(&args),
        Command::Merge(args) => sweep::run_merge(&args),
        Command::Chart(args) => chart::run(&args),
        Command::Report(args) => report::run(&args),
        Command::Minimax(args) => minimax::run(&args),
        Command::Hunt(args) => hunt::run(&args),
        Command::Replay(args) => replay::run(&args),
    }
}

/// The exit code for a library error.
pub fn exit_code_for(error: &Error) -> u8 {
    match error {
        Error::Transcript { .. } => EXIT_REJECTED,
        Error::Io { action, .. }
            if action.starts_with("cannot write") || action.starts_with("cannot create") =>
        {
            EXIT_IO
        }
        Error::MethodFailed { .. } => EXIT_METHOD_FAILED,
        _ => EXIT_BAD_INPUT,
    }
}

/// Describes a class in one line.
pub fn describe_class(class: &Class) -> String {
    match class {
        Class::Feasibility(c) => format!(
            "separation feasibility, d = {}, box [-{}, {}]^{}, rho = {} ({})",
            c.dim,
            c.half_width,
            c.half_width,
            c.dim,
            c.rho,
            match c.promise {
                Promise::MayBeEmpty => "K empty or containing a rho-ball",
                Promise::Nonempty => "K promised to contain a rho-ball",
            }
        ),
        Class::FirstOrder(c) => format!(
            "first-order, convex {L}-Lipschitz ({norm:?} norm) f on [-{R}, {R}]^{d}, \
             accuracy eps = {eps}",
            L = c.lipschitz,
            norm = c.norm,
            R = c.half_width,
            d = c.dim,
            eps = c.eps
        ),
        Class::Lattice(c) => c.describe(),
        Class::LargeScale(c) => c.describe(),
    }
}

/// A path argument.
pub type PathArg = PathBuf;
