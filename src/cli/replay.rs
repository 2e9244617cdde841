//! `naysayer replay`: plays a built-in method against one saved witness function with
//! its exact oracle ([`crate::adversary::instance_oracle`]), so that a hard instance
//! found by an adversary (or written by the audit of `naysayer check --witnesses`)
//! becomes a fixed regression test.
//!
//! The witness comes from the final record of a transcript (`--from FILE`,
//! `--witness K`, 1-based) or from a witness file written by the audit
//! (`--witnesses FILE`). The class is the transcript's (or the witness file's), with
//! `--eps` overriding its accuracy. The game is written like any other (`-t OUT`, the
//! adversary recorded as `instance`, no certificate: one fixed function proves no lower
//! bound), and the method's output is judged exactly on the witness: the optimality
//! gap f(x) - min f is computed in rational arithmetic.

use std::path::{Path, PathBuf};

use clap::Args;
use num_rational::BigRational;

use crate::adversary::instance_oracle::{InstanceOracle, INSTANCE_NAME};
use crate::class::{Class, FirstOrderClass};
use crate::cli::{describe_class, PathArg, EXIT_BAD_INPUT, EXIT_METHOD_FAILED, EXIT_OK};
use crate::error::Error;
use crate::exact::{f64_to_rational, rational_to_string};
use crate::game::{self, GameSettings, Observer};
use crate::instance::{FunctionWitness, Witness};
use crate::method;
use crate::oracle::Output;
use crate::transcript::{parse_line, Flush, MemoryTranscript, Record, TranscriptWriter};
use crate::transcript::{Ending, FinalRecord, Header};

/// Arguments of `naysayer replay`.
#[derive(Debug, Args)]
pub struct ReplayArgs {
    /// Read the witness from this transcript's final record (an input; `-t` names the
    /// transcript this replay writes).
    #[arg(
        long,
        value_name = "TRANSCRIPT",
        conflicts_with = "witnesses",
        required_unless_present = "witnesses",
        allow_negative_numbers = true
    )]
    pub from: Option<PathArg>,
    /// A witness file written by `naysayer check --witnesses`.
    #[arg(long)]
    pub witnesses: Option<PathArg>,
    /// Which witness (1-based).
    #[arg(long, default_value_t = 1, allow_negative_numbers = true)]
    pub witness: usize,
    /// Built-in method (see `naysayer list`).
    #[arg(short, long)]
    pub method: String,
    /// Accuracy eps the method aims for (default: the class's).
    #[arg(long, allow_hyphen_values = true)]
    pub eps: Option<f64>,
    /// Most queries the method may ask.
    #[arg(long, default_value_t = 1_000_000, allow_negative_numbers = true)]
    pub budget: u64,
    /// Seed of randomized methods.
    #[arg(long, default_value_t = 0, allow_negative_numbers = true)]
    pub seed: u64,
    /// Write this replay's transcript here (JSON Lines), as `play -t` does.
    #[arg(short, long)]
    pub transcript: Option<PathArg>,
    /// Progress and the memory cap.
    #[command(flatten)]
    pub work: crate::cli::progress::WorkArgs,
}

/// What a replay produced.
#[derive(Debug)]
pub struct ReplayReport {
    /// The class played.
    pub class: FirstOrderClass,
    /// The header written.
    pub header: Header,
    /// The final record written.
    pub record: FinalRecord,
    /// f(x) - min f for the method's output x, exact (`None` without an output point).
    pub gap: Option<BigRational>,
    /// The witness played against.
    pub witness: FunctionWitness,
}

impl ReplayReport {
    /// Whether the output is eps-accurate on the witness (exactly decided).
    pub fn accurate(&self) -> Option<bool> {
        self.gap
            .as_ref()
            .map(|g| *g <= f64_to_rational(self.class.eps))
    }
}

/// Loads witness `k` (1-based) and its class from a transcript's final record or from a
/// witness file.
pub fn load_witness(
    transcript: Option<&Path>,
    witnesses: Option<&Path>,
    k: usize,
) -> Result<(FirstOrderClass, FunctionWitness), Error> {
    let (class, instances) = match (transcript, witnesses) {
        (Some(path), _) => {
            let text = std::fs::read_to_string(path).map_err(|source| Error::Io {
                action: "cannot read transcript",
                path: path.to_path_buf(),
                source,
            })?;
            let lines: Vec<&str> = text.lines().collect();
            let first = lines.first().ok_or(Error::Transcript {
                line: 1,
                reason: "the file is empty".into(),
            })?;
            let Record::Header(header) = parse_line(first, 1)? else {
                return Err(Error::Transcript {
                    line: 1,
                    reason: "the first record must be the header".into(),
                });
            };
            let n = lines.len() as u64;
            let Record::Final(last) = parse_line(lines[lines.len() - 1], n)? else {
                return Err(Error::Transcript {
                    line: n,
                    reason: "the transcript ends without a final record (truncated?)".into(),
                });
            };
            let instances = last.certificate.map(|c| c.instances).unwrap_or_default();
            (header.class, instances)
        }
        (None, Some(path)) => {
            let file = crate::cli::audit::read_witnesses(path)?;
            (file.class, file.certificate.instances)
        }
        (None, None) => {
            return Err(Error::InvalidClass {
                reason: "give --transcript FILE or --witnesses FILE".into(),
            })
        }
    };
    let Class::FirstOrder(c) = class else {
        return Err(Error::Unsupported {
            what: "replay".into(),
            reason: "it replays first-order witnesses only".into(),
        });
    };
    let class = FirstOrderClass::new(c.dim, c.half_width, c.eps, c.lipschitz, c.norm)?;
    let count = instances.len();
    let Some(instance) = k.checked_sub(1).and_then(|i| instances.into_iter().nth(i)) else {
        return Err(Error::InvalidClass {
            reason: format!(
                "witness {k} does not exist (the file holds {count}; they count from 1)"
            ),
        });
    };
    let Witness::Function(w) = instance else {
        return Err(Error::Unsupported {
            what: "replay".into(),
            reason: format!("witness {k} is a {}, not a function", instance.label()),
        });
    };
    Ok((class, w))
}

/// Plays built-in `method` against `witness` on `class`, writing the transcript to
/// `out` (or keeping it in memory).
pub fn replay(
    class: &FirstOrderClass,
    witness: FunctionWitness,
    method_name: &str,
    seed: u64,
    budget: u64,
    out: Option<&Path>,
) -> Result<ReplayReport, Error> {
    let mut oracle = InstanceOracle::new(class, witness)?;
    let wrapped = Class::FirstOrder(class.clone());
    let mut method = method::build(method_name, &wrapped, seed)?;
    let header = Header {
        format: crate::transcript::FORMAT_VERSION,
        tool: format!("naysayer {}", env!("CARGO_PKG_VERSION")),
        class: wrapped,
        adversary: INSTANCE_NAME.into(),
        method: method.name().to_string(),
        seed,
        budget,
    };
    let settings = GameSettings { budget };
    let record = match out {
        Some(path) => {
            let mut writer = TranscriptWriter::create(path, Flush::Periodic)?;
            let mut observers: Vec<&mut dyn Observer> = vec![&mut writer];
            game::play(
                &header,
                method.as_mut(),
                &mut oracle,
                &settings,
                &mut observers,
            )?
        }
        None => {
            let mut memory = MemoryTranscript::default();
            let mut observers: Vec<&mut dyn Observer> = vec![&mut memory];
            game::play(
                &header,
                method.as_mut(),
                &mut oracle,
                &settings,
                &mut observers,
            )?
        }
    };
    let gap = match &record.ending {
        Ending::Output {
            output: Output::Point { point },
        } => Some(oracle.gap_at(point)),
        _ => None,
    };
    Ok(ReplayReport {
        class: class.clone(),
        header,
        record,
        gap,
        witness: oracle.witness().clone(),
    })
}

/// Runs `replay`: exit 0 when the game was played (whatever the gap), 3 when the method
/// failed, 2 on bad input.
pub fn run(args: &ReplayArgs) -> Result<u8, Error> {
    let (mut class, witness) = load_witness(
        args.from.as_deref(),
        args.witnesses.as_deref(),
        args.witness,
    )?;
    if let Some(eps) = args.eps {
        class = FirstOrderClass::new(
            class.dim,
            class.half_width,
            eps,
            class.lipschitz,
            class.norm,
        )?;
    }
    let wrapped = Class::FirstOrder(class.clone());
    crate::resources::check_replay(
        &wrapped,
        &args.method,
        witness.pieces.len(),
        args.budget,
        &args.work.cap(),
    )?;
    if let Some(estimate) = crate::resources::time::game(&wrapped, &args.method, "", args.budget) {
        crate::cli::progress::announce("replay", &estimate);
    }
    let progress = crate::cli::progress::Report::start(
        "replay",
        "queries",
        &crate::progress::QUERIES,
        args.work.quiet,
    );
    let report = replay(
        &class,
        witness,
        &args.method,
        args.seed,
        args.budget,
        args.transcript.as_deref(),
    );
    progress.finish();
    let report = match report {
        Ok(report) => report,
        Err(e @ Error::InvalidClass { .. }) => {
            crate::say!("cannot replay: {e}");
            return Ok(EXIT_BAD_INPUT);
        }
        Err(e) => return Err(e),
    };
    crate::say_text!("{}", summary(&report, args.transcript.as_ref()));
    Ok(match report.record.ending {
        Ending::MethodFailed { .. } => EXIT_METHOD_FAILED,
        _ => EXIT_OK,
    })
}

fn summary(report: &ReplayReport, out: Option<&PathBuf>) -> String {
    let mut text = String::new();
    text.push_str(&format!(
        "class                  {}\n",
        describe_class(&report.header.class)
    ));
    text.push_str(&format!(
        "method                 {}\n",
        report.header.method
    ));
    text.push_str(&format!(
        "oracle                 exact oracle of one saved witness ({} pieces, minimum {} at \
         its centre)\n",
        report.witness.pieces.len(),
        report.witness.floor
    ));
    let censored = matches!(report.record.ending, Ending::BudgetExhausted);
    text.push_str(&format!(
        "queries used           {}\n",
        crate::cli::play::queries_used_text(report.record.queries_used, censored)
    ));
    match (&report.gap, report.accurate()) {
        (Some(gap), Some(ok)) => text.push_str(&format!(
            "gap f(x) - min f       {} = {:e} ({} eps = {})\n",
            rational_to_string(gap),
            crate::exact::nearest_f64(gap),
            if ok { "within" } else { "NOT within" },
            report.class.eps
        )),
        _ => text.push_str(&format!(
            "gap f(x) - min f       none ({})\n",
            match &report.record.ending {
                Ending::BudgetExhausted => "budget exhausted".to_string(),
                Ending::Interrupted { .. } => "interrupted".to_string(),
                Ending::MethodFailed { reason } => format!("method failed: {reason}"),
                _ => "no output point".to_string(),
            }
        )),
    }
    if let Some(path) = out {
        text.push_str(&format!("transcript             {}\n", path.display()));
    }
    text
}
