//! `naysayer play`: one method against one adversary, verified.

use std::time::Duration;

use clap::Args;

use crate::bounds::halving_lower_bound;
use crate::certificate::{Outcome, Verdict};
use crate::class::Class;
use crate::cli::{
    describe_class, ClassArgs, Family, FirstOrderArgs, PathArg, EXIT_METHOD_FAILED, EXIT_OK,
    EXIT_REJECTED,
};
use crate::error::Error;
use crate::method::external::ExternalSettings;
use crate::runner::{self, GameSpec, Report};
use crate::transcript::Ending;

/// Arguments of `naysayer play`.
#[derive(Debug, Args)]
pub struct PlayArgs {
    /// Built-in method (see `naysayer list`).
    #[arg(short, long, default_value = "midpoint")]
    pub method: String,
    /// Adversary (see `naysayer list`; default: halving, or orthant for first-order).
    #[arg(short, long)]
    pub adversary: Option<String>,
    /// The family of classes.
    #[arg(long = "class", value_enum, default_value_t = Family::Feasibility)]
    pub family: Family,
    /// The class's dimension, box and separation accuracy.
    #[command(flatten)]
    pub class: ClassArgs,
    /// First-order parameters.
    #[command(flatten)]
    pub first_order: FirstOrderArgs,
    /// Lattice class parameters (`--class lattice`).
    #[command(flatten)]
    pub lattice: crate::cli::minimax::LatticeArgs,
    /// Most queries the method may ask.
    #[arg(long, default_value_t = 1_000_000)]
    pub budget: u64,
    /// Seed of randomized methods.
    #[arg(long, default_value_t = 0)]
    pub seed: u64,
    /// Write the transcript here (JSON Lines); otherwise it is kept in memory.
    #[arg(short, long)]
    pub transcript: Option<PathArg>,
    /// Expectation file (TOML, see `naysayer::expect`): exit 5 when a number drifts.
    #[arg(long)]
    pub expect: Option<PathArg>,
    /// An external method (`--exec -- PROGRAM ARGS...`).
    #[command(flatten)]
    pub exec: ExecArgs,
}

/// Playing an external program that speaks the line protocol
/// ([`crate::method::external`]).
#[derive(Debug, Clone, Args)]
pub struct ExecArgs {
    /// Play the program given after `--` (program and arguments, started without a
    /// shell) instead of a built-in method.
    #[arg(long = "exec", requires = "command")]
    pub exec: bool,
    /// The external program and its arguments (after `--`, with --exec).
    #[arg(last = true, value_name = "PROGRAM")]
    pub command: Vec<String>,
    /// Seconds an external program may take for each reply before it is killed.
    #[arg(long, default_value_t = 30.0)]
    pub answer_timeout: f64,
    /// Longest protocol line an external program may write, in bytes.
    #[arg(long, default_value_t = 1 << 20)]
    pub max_line_bytes: usize,
    /// Most bytes an external program may write on stdout and stderr together.
    #[arg(long, default_value_t = 1 << 30)]
    pub max_output_bytes: u64,
}

impl ExecArgs {
    /// Validates the limits into settings.
    pub fn to_settings(&self) -> Result<ExternalSettings, Error> {
        let t = self.answer_timeout;
        if !(t.is_finite() && t > 0.0 && t <= 1e6) {
            return Err(Error::InvalidSetting {
                name: "--answer-timeout",
                reason: format!("{t} must be a positive number of seconds, at most 1e6"),
            });
        }
        let settings = ExternalSettings {
            answer_timeout: Duration::from_secs_f64(t),
            max_line_bytes: self.max_line_bytes,
            max_output_bytes: self.max_output_bytes,
            ..ExternalSettings::default()
        };
        settings.validate()?;
        Ok(settings)
    }
}

/// Runs `play`.
pub fn run(args: &PlayArgs) -> Result<u8, Error> {
    let (class, default_adversary) = match args.family {
        Family::Feasibility => (Class::Feasibility(args.class.to_class()?), "halving"),
        Family::FirstOrder => (
            Class::FirstOrder(args.first_order.to_class(&args.class)?),
            "orthant",
        ),
        Family::Lattice => {
            let class = args.lattice.to_class(&args.class)?;
            let adversary = if class.cont_dim == 0 {
                "corner"
            } else {
                "mixed-corner"
            };
            (Class::Lattice(class), adversary)
        }
    };
    let spec = GameSpec {
        class,
        adversary: args
            .adversary
            .clone()
            .unwrap_or_else(|| default_adversary.to_string()),
        method: args.method.clone(),
        seed: args.seed,
        budget: args.budget,
        transcript: args.transcript.clone(),
    };
    if !args.exec.exec && !args.exec.command.is_empty() {
        return Err(Error::InvalidSetting {
            name: "command line",
            reason: "a program after `--` needs --exec".into(),
        });
    }
    // Read the expectations before playing, so a bad file costs no game.
    if let Some(path) = &args.expect {
        crate::expect::Expectations::from_file(path)?;
    }
    let report = if args.exec.exec {
        let settings = args.exec.to_settings()?;
        runner::run_external(&spec, &args.exec.command, &settings)?
    } else {
        runner::run(&spec)?
    };
    print!("{}", summary(&spec, &report));
    if let Ending::MethodFailed { reason } = &report.record.ending {
        eprintln!("naysayer: method failed: {reason}");
    }
    let code = match (&report.verdict, &report.record.ending) {
        (Err(_), _) => EXIT_REJECTED,
        (Ok(_), Ending::MethodFailed { .. }) => EXIT_METHOD_FAILED,
        _ => EXIT_OK,
    };
    match &args.expect {
        Some(path) => {
            let result = crate::expect::GameResult::from_report(&spec, &report);
            crate::cli::gate(path, &[result], true, code)
        }
        None => Ok(code),
    }
}

/// The outcome in words.
pub fn describe_outcome(outcome: &Outcome, ending: &Ending) -> String {
    let output = match ending {
        Ending::Output { output } => match output {
            crate::oracle::Output::Empty => "declared K empty",
            crate::oracle::Output::Point { .. } => "output a point",
        },
        _ => "",
    };
    match outcome {
        Outcome::OutputRefuted { witness } => {
            format!("method {output}; refuted by witness #{}", witness + 1)
        }
        Outcome::EmptyRefuted { witness } => {
            format!(
                "method {output}; refuted by witness #{} (a rho-ball K)",
                witness + 1
            )
        }
        Outcome::EmptyBreaksPromise => {
            format!("method {output}, but the class promises K is nonempty: wrong")
        }
        Outcome::OutputStands => format!("method {output}; output stands"),
        Outcome::BudgetExhausted => "budget exhausted (queries used is censored)".into(),
        Outcome::MethodFailed { reason } => format!("method failed: {reason}"),
    }
}

/// "N" or "> N (censored)".
pub fn queries_used_text(queries_used: u64, censored: bool) -> String {
    if censored {
        format!("> {queries_used} (censored by the budget)")
    } else {
        queries_used.to_string()
    }
}

fn summary(spec: &GameSpec, report: &Report) -> String {
    let mut out = String::new();
    out.push_str(&format!(
        "class                  {}\n",
        describe_class(&spec.class)
    ));
    out.push_str(&format!(
        "method                 {}\n",
        report.header.method
    ));
    out.push_str(&format!("adversary              {}\n", spec.adversary));
    let censored = matches!(report.record.ending, Ending::BudgetExhausted);
    out.push_str(&format!(
        "queries used           {}\n",
        queries_used_text(report.record.queries_used, censored)
    ));
    match &report.verdict {
        Ok(verdict) => {
            out.push_str(&format!(
                "certified lower bound  {}\n",
                lower_bound_text(verdict)
            ));
            out.push_str(&format!(
                "outcome                {}\n",
                describe_outcome(&verdict.outcome, &report.record.ending)
            ));
            if let Some(eps_cert) = verdict.certified_uncertainty {
                out.push_str(&format!(
                    "certified uncertainty  {eps_cert:e} (no method can guarantee a smaller \
                     error from the certified answers; a lower estimate, docs/theory.md §2.2)\n"
                ));
            }
        }
        Err(_) => {
            out.push_str("certified lower bound  none (certificate rejected)\n");
        }
    }
    if let Class::Feasibility(class) = &spec.class {
        out.push_str(&format!(
            "theory                 every method needs at least {} queries on this class \
             (theorem: box halving, docs/theory.md §1.1)\n",
            halving_lower_bound(class)
        ));
    }
    match &report.verdict {
        Ok(_) => out.push_str("verifier               certificate valid (exact rational check)\n"),
        Err(e) => out.push_str(&format!("verifier               REJECTED: {e}\n")),
    }
    if let Some(path) = &spec.transcript {
        out.push_str(&format!("transcript             {}\n", path.display()));
    }
    out
}

/// "T* + 1 (witnesses agree with the first T* answers)" or "none".
pub fn lower_bound_text(verdict: &Verdict) -> String {
    match (verdict.certified_prefix, verdict.witness_prefix) {
        (Some(t), _) => format!("{} (witnesses agree with the first {t} answers)", t + 1),
        // A refutation only (docs/theory.md §7): one wrong output, no bound.
        (None, Some(t)) => format!(
            "none (the witnesses agree with the first {t} answers and refute the output, but \
             their solution sets are not pairwise disjoint)"
        ),
        (None, None) => "none (no certifiable prefix)".into(),
    }
}
