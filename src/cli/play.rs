//! `naysayer play`: one method against one adversary, verified.

use std::time::Duration;

use clap::Args;

use crate::bounds::{halving_lower_bound, slab_funnel_lower_bound};
use crate::certificate::{Outcome, Verdict};
use crate::class::Class;
use crate::cli::{
    describe_class, ClassSelection, PathArg, EXIT_INTERRUPTED, EXIT_METHOD_FAILED, EXIT_OK,
    EXIT_REFUTED, EXIT_REJECTED,
};
use crate::error::Error;
use crate::family::{self, GameReport};
use crate::method::external::{ExternalMethod, ExternalSettings};
use crate::method::Method;
use crate::runner::{DemoReport, GameSpec, Report};
use crate::transcript::{Ending, Flush};

/// Arguments of `naysayer play`.
#[derive(Debug, Args)]
pub struct PlayArgs {
    /// Built-in method (see `naysayer list`).
    #[arg(short, long, default_value = "midpoint")]
    pub method: String,
    /// Adversary (see `naysayer list`; default: the family's, for example halving for
    /// feasibility, rotation or rotation-chain for large-scale).
    #[arg(short, long)]
    pub adversary: Option<String>,
    /// The class: family and parameters.
    #[command(flatten)]
    pub class: ClassSelection,
    /// Most queries the method may ask (default 10^6; a large-scale game lasts its
    /// horizon).
    #[arg(long, allow_negative_numbers = true)]
    pub budget: Option<u64>,
    /// Seed of randomized methods.
    #[arg(long, default_value_t = 0, allow_negative_numbers = true)]
    pub seed: u64,
    /// Write the transcript here (JSON Lines); otherwise it is kept in memory.
    #[arg(short, long)]
    pub transcript: Option<PathArg>,
    /// Expectation file (TOML, see `naysayer::expect`): exit 5 when a number drifts.
    #[arg(long)]
    pub expect: Option<PathArg>,
    /// Print exactly one JSON object on standard output instead of the text summary
    /// (for programs: fields in [`json_summary`]); the exit code is the same.
    #[arg(long, conflicts_with = "expect")]
    pub json: bool,
    /// Exit with code 7 when the verifier refutes the method's output (a witness agrees
    /// with every answer and makes the output wrong): for CI jobs that must fail on a
    /// wrong answer. Without it such a game exits 0 (the certificate holds).
    #[arg(long)]
    pub fail_on_refuted: bool,
    /// An external method (`--exec -- PROGRAM ARGS...`).
    #[command(flatten)]
    pub exec: ExecArgs,
    /// Progress and the memory cap.
    #[command(flatten)]
    pub work: crate::cli::progress::WorkArgs,
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
    /// Seconds an external program may take for each reply (its ready reply, each query
    /// or output) before it is killed.
    #[arg(long, default_value_t = 30.0, allow_hyphen_values = true)]
    pub answer_timeout: f64,
    /// Seconds an external program may take to exit once its game is over (after its
    /// output, the `over` message, or when it closed its output mid-game) before its
    /// process group is killed.
    #[arg(long, default_value_t = 5.0, allow_hyphen_values = true)]
    pub exit_grace: f64,
    /// Longest protocol line an external program may write, in bytes.
    #[arg(long, default_value_t = 1 << 20, allow_negative_numbers = true)]
    pub max_line_bytes: usize,
    /// Most bytes an external program may write on stdout and stderr together.
    #[arg(long, default_value_t = 1 << 30, allow_negative_numbers = true)]
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
        let g = self.exit_grace;
        if !(g.is_finite() && (0.0..=1e6).contains(&g)) {
            return Err(Error::InvalidSetting {
                name: "--exit-grace",
                reason: format!("{g} must be a number of seconds between 0 and 1e6"),
            });
        }
        let settings = ExternalSettings {
            answer_timeout: Duration::from_secs_f64(t),
            exit_grace: Duration::from_secs_f64(g),
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
    if args.budget == Some(0) {
        return Err(Error::InvalidSetting {
            name: "--budget",
            reason: "0: a game needs a budget of at least 1 query".into(),
        });
    }
    let class = args.class.to_class()?;
    let family = family::of(&class);
    let budget = match (&class, args.budget) {
        (Class::LargeScale(c), None) => c.horizon,
        (_, Some(b)) => b,
        (_, None) => 1_000_000,
    };
    let spec = GameSpec {
        adversary: args
            .adversary
            .clone()
            .unwrap_or_else(|| family.default_adversary(&class).to_string()),
        class,
        method: args.method.clone(),
        seed: args.seed,
        budget,
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
    let builtin = (!args.exec.exec).then_some(spec.method.as_str());
    crate::resources::check_game(
        "play",
        &spec.class,
        builtin,
        &spec.adversary,
        spec.budget,
        &args.work.cap(),
    )?;
    let (mut method, flush): (Box<dyn Method + Send>, Flush) = if args.exec.exec {
        let settings = args.exec.to_settings()?;
        (
            Box::new(ExternalMethod::new(
                &args.exec.command,
                &spec.class,
                spec.budget,
                spec.seed,
                settings,
            )?),
            Flush::EveryRecord,
        )
    } else {
        (
            crate::method::build(&spec.method, &spec.class, spec.seed)?,
            Flush::Periodic,
        )
    };
    if let Some(estimate) = builtin
        .and_then(|m| crate::resources::time::game(&spec.class, m, &spec.adversary, spec.budget))
    {
        crate::cli::progress::announce("play", &estimate);
    }
    let progress = crate::cli::progress::Report::start(
        "play",
        "queries",
        &crate::progress::QUERIES,
        args.work.quiet,
    );
    let report = family::play(&spec, method.as_mut(), flush);
    progress.finish();
    let report = report?;
    if args.json {
        crate::say!("{}", json_summary(&spec, &report));
    }
    let (ending, accepted) = match &report {
        GameReport::Certificate(r) => {
            if !args.json {
                crate::say_text!("{}", summary(&spec, r));
            }
            (&r.record.ending, r.verdict.is_ok())
        }
        GameReport::Demonstration(r) => {
            if !args.json {
                crate::say_text!("{}", demonstration_summary(&spec, r));
            }
            (&r.record.ending, report.accepted())
        }
    };
    if let Ending::MethodFailed { reason } = ending {
        crate::note!("naysayer: method failed: {reason}");
    }
    let refuted = match &report {
        GameReport::Certificate(r) => r
            .verdict
            .as_ref()
            .is_ok_and(|v| v.outcome.refuting_witness().is_some()),
        GameReport::Demonstration(_) => false,
    };
    let code = match (accepted, ending) {
        (false, _) => EXIT_REJECTED,
        (true, Ending::MethodFailed { .. }) => EXIT_METHOD_FAILED,
        (true, Ending::Interrupted { .. }) => {
            crate::note!(
                "naysayer: interrupted by {}; the transcript ends with an `interrupted` \
                 final record certifying what was answered",
                crate::interrupt::signal_name().unwrap_or("a signal")
            );
            EXIT_INTERRUPTED
        }
        (true, _) if refuted && args.fail_on_refuted => {
            crate::note!("naysayer: the method's output is refuted (--fail-on-refuted)");
            EXIT_REFUTED
        }
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
        Outcome::Interrupted => "interrupted by a signal before the method stopped".into(),
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

fn demonstration_summary(spec: &GameSpec, report: &DemoReport) -> String {
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
    match &report.judgement {
        Ok(v) => {
            let gap = v
                .gap
                .map_or("undefined (no output)".to_string(), |g| format!("{g:e}"));
            out.push_str(&format!("gap                    {gap}\n"));
            out.push_str(&format!(
                "lower curve            {:e} at T = {} ({}; docs/theory.md §3)\n",
                v.lower_bound,
                spec.budget,
                if v.claimed {
                    "claimed for this game"
                } else {
                    "not claimed: a published instance binds span methods only"
                }
            ));
            if let Some(u) = v.upper_bound {
                out.push_str(&format!("method's upper curve   {u:e}\n"));
            }
            let holds = match v.holds {
                Some(true) => "the gap is at least the lower curve",
                Some(false) => "the gap is BELOW the lower curve",
                None => "no gap to compare",
            };
            out.push_str(&format!(
                "demonstration          {holds} (relative tolerance {:e}; {} answers replayed; \
                 a demonstration, not a certificate)\n",
                report
                    .record
                    .demonstration
                    .as_ref()
                    .map_or(0.0, |d| d.tolerance),
                v.replayed
            ));
        }
        Err(e) => out.push_str(&format!("demonstration          REFUSED: {e}\n")),
    }
    if let Some(path) = &spec.transcript {
        out.push_str(&format!("transcript             {}\n", path.display()));
    }
    out
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
            if let Some(witness) = verdict.outcome.refuting_witness() {
                if let Some(instance) = report
                    .record
                    .certificate
                    .as_ref()
                    .and_then(|c| c.instances.get(witness))
                {
                    out.push_str(&format!(
                        "refuting witness       #{} of the final record: {}\n",
                        witness + 1,
                        instance.describe()
                    ));
                }
            }
            if let Some(value) = verdict.certified_uncertainty {
                out.push_str(&certified_uncertainty_line(value));
                out.push('\n');
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
    if let Class::FirstOrder(class) = &spec.class {
        out.push_str(&format!(
            "theory                 every deterministic method needs at least {} queries on \
             this class (theorem: slab funnel, docs/theory.md §2.4); the order \
             Theta(d log(LR/eps)) (Nemirovski & Yudin 1983) is a guide only\n",
            slab_funnel_lower_bound(class)
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

/// The certified uncertainty line of `play` and `check`: the value the exact verifier
/// computes from the transcript's witness pair (docs/theory.md §2.2).
pub fn certified_uncertainty_line(value: f64) -> String {
    format!(
        "certified uncertainty  {value:e} (from the certificate's witnesses: no method can \
         guarantee a smaller error from the certified answers; a lower estimate, \
         docs/theory.md §2.2)"
    )
}

/// The summary of one game as a JSON object (`play --json`), for programs such as the
/// Python package under `python/`. Fields, all always present:
///
/// - `kind`: `"certificate"` (exactly verified classes) or `"demonstration"` (large-scale);
/// - `class` (as in the transcript header), `family`, `method`, `adversary`, `seed`,
///   `budget`;
/// - `queries_used`, `censored` (the budget ended the game), `method_failure` (the
///   reason, or `null`), `transcript` (the path as given, or `null`);
/// - `verified`: the exact verifier accepted the certificate (certificates), or the
///   demonstration judge accepted the game (demonstrations); `rejection`: why not, or
///   `null`;
/// - `outcome`: for certificates the outcome as the `outcome` column of `games.csv`
///   names it (`output-stands`, `output-refuted`, `empty-refuted`,
///   `empty-breaks-promise`, `budget-exhausted`, `interrupted`, `method-failed`), or
///   `rejected` when the verifier rejected the certificate; for demonstrations the
///   ending's `kind` as in the transcript's final record (`output`, `budget-exhausted`,
///   `interrupted`, `method-failed`);
///   `refuting_witness`: the 1-based witness of a refutation, or `null`;
/// - `certified_lower_bound`: T* + 1 only from witnesses with pairwise disjoint solution
///   sets (docs/theory.md §7), else `null`; `certified_uncertainty`: eps_cert of
///   first-order classes (docs/theory.md §2.2), else `null`;
/// - demonstrations only (else `null`): `gap`, `lower_bound` (the published curve at the
///   horizon, docs/theory.md §3), `upper_bound` (the method's own curve, or `null`),
///   `claimed` (the lower curve is claimed for this game), `holds` (the gap is at least
///   the lower curve, to the stated tolerance; `null` when the gap is undefined).
pub fn json_summary(spec: &GameSpec, report: &GameReport) -> serde_json::Value {
    use crate::family::boxes::outcome_name;
    use serde_json::{json, Value};
    let (method, record) = match report {
        GameReport::Certificate(r) => (&r.header.method, &r.record),
        GameReport::Demonstration(r) => (&r.header.method, &r.record),
    };
    let failure = match &record.ending {
        Ending::MethodFailed { reason } => Some(reason.as_str()),
        _ => None,
    };
    let mut out = json!({
        "kind": if matches!(report, GameReport::Certificate(_)) { "certificate" } else { "demonstration" },
        "class": spec.class,
        "family": spec.class.family_name(),
        "method": method,
        "adversary": spec.adversary,
        "seed": spec.seed,
        "budget": spec.budget,
        "queries_used": record.queries_used,
        "censored": matches!(record.ending, Ending::BudgetExhausted),
        "method_failure": failure,
        "transcript": spec.transcript.as_ref().map(|p| p.display().to_string()),
        "verified": report.accepted(),
        "rejection": Value::Null,
        "outcome": Value::Null,
        "refuting_witness": Value::Null,
        "certified_lower_bound": Value::Null,
        "certified_uncertainty": Value::Null,
        "gap": Value::Null,
        "lower_bound": Value::Null,
        "upper_bound": Value::Null,
        "claimed": Value::Null,
        "holds": Value::Null,
    });
    let mut set = |key: &str, value: Value| {
        out[key] = value;
    };
    match report {
        GameReport::Certificate(r) => match &r.verdict {
            Ok(v) => {
                set("outcome", json!(outcome_name(&v.outcome)));
                set(
                    "refuting_witness",
                    json!(v.outcome.refuting_witness().map(|w| w + 1)),
                );
                set("certified_lower_bound", json!(v.certified_lower_bound()));
                set("certified_uncertainty", json!(v.certified_uncertainty));
            }
            Err(e) => {
                set("outcome", json!("rejected"));
                set("rejection", json!(e.chain()));
            }
        },
        GameReport::Demonstration(r) => {
            // The ending's own tag, as in the transcript's final record.
            let ending = serde_json::to_value(&record.ending).unwrap_or(Value::Null);
            set(
                "outcome",
                ending.get("kind").cloned().unwrap_or(Value::Null),
            );
            match &r.judgement {
                Ok(v) => {
                    set("gap", json!(v.gap));
                    set("lower_bound", json!(v.lower_bound));
                    set("upper_bound", json!(v.upper_bound));
                    set("claimed", json!(v.claimed));
                    set("holds", json!(v.holds));
                    if !v.consistent() {
                        set(
                            "rejection",
                            json!("the gap is below the lower curve claimed for this game"),
                        );
                    }
                }
                Err(e) => set("rejection", json!(e.chain())),
            }
        }
    }
    out
}
