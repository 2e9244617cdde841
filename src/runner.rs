//! One game from a specification to a verified report: builds the adversary and the
//! method, plays, and runs the independent verifier: over the transcript file when one
//! is written, else as the game is played ([`StreamingVerifier`]) ([`run`] and its
//! variants); for the large-scale demonstrations, the demonstration judge
//! ([`demonstrate`]).

use std::path::PathBuf;
use std::time::{Duration, Instant};

use crate::adversary;
use crate::certificate::{self, StreamingVerifier, Verdict};
use crate::class::Class;
use crate::demonstration::{self, DemoVerdict};
use crate::error::Error;
use crate::game::{self, GameSettings, Observer};
use crate::method::external::{ExternalMethod, ExternalSettings};
use crate::method::{self, Method};
use crate::transcript::{FinalRecord, Header};
use crate::transcript::{Flush, TranscriptWriter, FORMAT_VERSION};

/// Everything that defines one game.
#[derive(Clone, Debug, PartialEq)]
pub struct GameSpec {
    /// The class.
    pub class: Class,
    /// Adversary name.
    pub adversary: String,
    /// Built-in method name.
    pub method: String,
    /// The method's seed.
    pub seed: u64,
    /// Query budget.
    pub budget: u64,
    /// Where to write the transcript; `None` keeps it in memory.
    pub transcript: Option<PathBuf>,
}

/// The result of one verified game.
#[derive(Debug)]
pub struct Report {
    /// The header written.
    pub header: Header,
    /// The final record written.
    pub record: FinalRecord,
    /// The verifier's verdict (an `Err` is a rejected certificate: an adversary bug).
    pub verdict: Result<Verdict, Error>,
    /// Wall time of play plus verification.
    pub wall_time: Duration,
}

/// The header for a specification.
pub fn header_for(spec: &GameSpec, method_name: &str) -> Header {
    Header {
        format: FORMAT_VERSION,
        tool: format!("naysayer {}", env!("CARGO_PKG_VERSION")),
        class: spec.class.clone(),
        adversary: spec.adversary.clone(),
        method: method_name.to_string(),
        seed: spec.seed,
        budget: spec.budget,
    }
}

/// Builds, plays and verifies one game with a built-in method.
pub fn run(spec: &GameSpec) -> Result<Report, Error> {
    let mut method = method::build(&spec.method, &spec.class, spec.seed)?;
    run_with(spec, method.as_mut(), &mut [])
}

/// Plays and verifies one game with a given method, with extra observers.
pub fn run_with(
    spec: &GameSpec,
    method: &mut dyn Method,
    extra: &mut [&mut dyn Observer],
) -> Result<Report, Error> {
    run_with_flush(spec, method, extra, Flush::Periodic)
}

/// Builds, plays and verifies one game with an external program speaking the line
/// protocol ([`crate::method::external`]); `spec.method` is not used. The transcript
/// file, if any, is flushed after every record (the other side may not be
/// replayable), so that it survives a failure of the program.
pub fn run_external(
    spec: &GameSpec,
    command: &[String],
    settings: &ExternalSettings,
) -> Result<Report, Error> {
    let mut method = ExternalMethod::new(
        command,
        &spec.class,
        spec.budget,
        spec.seed,
        settings.clone(),
    )?;
    run_with_flush(spec, &mut method, &mut [], Flush::EveryRecord)
}

/// [`run_with`], with the transcript file flushed as `flush` says.
pub fn run_with_flush(
    spec: &GameSpec,
    method: &mut dyn Method,
    extra: &mut [&mut dyn Observer],
    flush: Flush,
) -> Result<Report, Error> {
    let start = Instant::now();
    let mut adversary = adversary::build(&spec.adversary, &spec.class)?;
    let header = header_for(spec, method.name());
    let settings = GameSettings {
        budget: spec.budget,
    };
    let (record, verdict) = match &spec.transcript {
        Some(path) => {
            let mut writer = TranscriptWriter::create(path, flush)?;
            let record = {
                let mut observers: Vec<&mut dyn Observer> = vec![&mut writer];
                observers.extend(extra.iter_mut().map(|o| &mut **o as &mut dyn Observer));
                game::play(
                    &header,
                    method,
                    adversary.as_mut(),
                    &settings,
                    &mut observers,
                )?
            };
            drop(writer);
            (record, certificate::verify_file(path))
        }
        None => {
            // Verified as it is played; memory stays flat (certificate::stream).
            let mut verifier = StreamingVerifier::new();
            let record = {
                let mut observers: Vec<&mut dyn Observer> = vec![&mut verifier];
                observers.extend(extra.iter_mut().map(|o| &mut **o as &mut dyn Observer));
                game::play(
                    &header,
                    method,
                    adversary.as_mut(),
                    &settings,
                    &mut observers,
                )?
            };
            (record, verifier.verdict())
        }
    };
    Ok(Report {
        header,
        record,
        verdict,
        wall_time: start.elapsed(),
    })
}

/// The result of one demonstration game (a large-scale class, docs/theory.md §3).
#[derive(Debug)]
pub struct DemoReport {
    /// The header written.
    pub header: Header,
    /// The final record written.
    pub record: FinalRecord,
    /// The judge's verdict (an `Err`: the function does not reproduce the answers or the
    /// recorded gap, an adversary bug).
    pub judgement: Result<DemoVerdict, Error>,
    /// Wall time of play plus judging.
    pub wall_time: Duration,
}

/// Builds, plays and judges one demonstration game with a built-in method.
pub fn demonstrate(spec: &GameSpec) -> Result<DemoReport, Error> {
    let mut method = method::build(&spec.method, &spec.class, spec.seed)?;
    demonstrate_with_flush(spec, method.as_mut(), Flush::Periodic)
}

/// Plays one demonstration game with a given method; the transcript file, if any, is
/// replayed by the judge ([`crate::demonstration::judge_file`]); without one, only the
/// final record is judged (nothing of the game is kept in memory: a large-scale game's
/// points and gradients can take gigabytes).
pub fn demonstrate_with_flush(
    spec: &GameSpec,
    method: &mut dyn Method,
    flush: Flush,
) -> Result<DemoReport, Error> {
    if !matches!(spec.class, Class::LargeScale(_)) {
        return Err(Error::Unsupported {
            what: format!("the {} family", spec.class.family_name()),
            reason: "its games are certificates: play them with runner::run".into(),
        });
    }
    let start = Instant::now();
    let mut adversary = adversary::build(&spec.adversary, &spec.class)?;
    let header = header_for(spec, method.name());
    let settings = GameSettings {
        budget: spec.budget,
    };
    let (record, judgement) = match &spec.transcript {
        Some(path) => {
            let mut writer = TranscriptWriter::create(path, flush)?;
            let record = game::play(
                &header,
                method,
                adversary.as_mut(),
                &settings,
                &mut [&mut writer],
            )?;
            drop(writer);
            (record, demonstration::judge_file(path))
        }
        None => {
            let record = game::play(&header, method, adversary.as_mut(), &settings, &mut [])?;
            let judgement = demonstration::judge_record(&header, &record);
            (record, judgement)
        }
    };
    Ok(DemoReport {
        header,
        record,
        judgement,
        wall_time: start.elapsed(),
    })
}
