//! Judging a demonstration game of the large-scale classes (docs/theory.md §3): the
//! published-theorem counterpart of the exact verifier ([`crate::certificate`]).
//!
//! A demonstration's final record names the function the method faced (the rotated
//! function an adaptive-rotation adversary completed, or a published instance named by
//! the adversary, rebuilt from the class and the horizon of the header) and claims the
//! gap the method left and the published lower curve at the horizon. The judge
//!
//! - replays every recorded answer against that function (when the transcript was
//!   written), to the relative tolerance of the record;
//! - recomputes the gap from the function (the best answered value and the output for
//!   the nonsmooth class, the output for the smooth ones) and compares it with the
//!   recorded gap to the same tolerance;
//! - says whether the lower curve is claimed for this game (an adaptive adversary binds
//!   every deterministic method; a published instance binds span methods only) and, if
//!   so, whether the gap is at least the curve, again to the tolerance.
//!
//! Nothing here is exact and nothing here is a certificate: the constants of these bounds
//! are irrational and the rotations are orthonormal only to rounding. `naysayer check`
//! refuses these transcripts.

use std::io::{BufRead, BufReader};
use std::path::Path;

use crate::adversary::fixed_function::build_instance;
use crate::adversary::{self, Scope};
use crate::bounds::large_scale::gap_bounds;
use crate::bounds::Side;
use crate::class::{Class, LargeScale, LargeScaleClass};
use crate::error::Error;
use crate::geometry::basis::norm;
use crate::instance::large_scale::{Function as _, KnownFunction, RotatedWitness};
use crate::oracle::{Answer, Output};
use crate::transcript::{parse_line, Demonstration, Ending, FinalRecord, Header, Record};

/// What the judge found.
#[derive(Clone, Debug, PartialEq)]
pub struct DemoVerdict {
    /// The header.
    pub header: Header,
    /// Queries answered.
    pub queries_used: u64,
    /// True when the budget (the horizon) ended the game.
    pub censored: bool,
    /// How the game ended.
    pub ending: Ending,
    /// The gap in the class's accuracy measure, recomputed from the function.
    pub gap: Option<f64>,
    /// The published lower curve at the horizon.
    pub lower_bound: f64,
    /// The method's own upper curve at the horizon, when it has one.
    pub upper_bound: Option<f64>,
    /// Whether the lower curve is claimed for this game (adaptive adversary, or a
    /// published instance against a span method).
    pub claimed: bool,
    /// Whether the gap is at least the lower curve, to the tolerance (`None` when the gap
    /// is undefined).
    pub holds: Option<bool>,
    /// Answers replayed against the function (0 when the transcript was not written).
    pub replayed: u64,
    /// The largest relative error of a replayed value or (sub)gradient.
    pub replay_error: f64,
}

/// Judges a demonstration transcript file (streaming: the final record first, then every
/// query record replayed against the function).
pub fn judge_file(path: &Path) -> Result<DemoVerdict, Error> {
    let read_error = |source: std::io::Error| Error::Io {
        action: "cannot read transcript",
        path: path.to_path_buf(),
        source,
    };
    let open = || std::fs::File::open(path).map_err(read_error);
    // Pass 1: the header (first line) and the final record (last line).
    let mut header: Option<Header> = None;
    let mut last: Option<(u64, String)> = None;
    {
        let mut reader = BufReader::with_capacity(1 << 16, open()?);
        let mut line = String::new();
        let mut number = 0u64;
        loop {
            line.clear();
            if reader.read_line(&mut line).map_err(read_error)? == 0 {
                break;
            }
            number += 1;
            if number == 1 {
                match parse_line(line.trim_end(), 1)? {
                    Record::Header(h) => header = Some(h),
                    _ => return Err(transcript(1, "the first record must be the header")),
                }
            }
            last = Some((number, std::mem::take(&mut line)));
        }
    }
    let header = header.ok_or_else(|| transcript(1, "the file is empty"))?;
    let (final_line, final_text) = last.ok_or_else(|| transcript(1, "the file is empty"))?;
    let Record::Final(record) = parse_line(final_text.trim_end(), final_line)? else {
        return Err(transcript(
            final_line,
            "the transcript ends without a final record (truncated?)",
        ));
    };
    let mut judge = Judge::new(&header, &record, final_line)?;
    // Pass 2: every query record in order.
    let mut reader = BufReader::with_capacity(1 << 16, open()?);
    let mut line = String::new();
    let mut number = 0u64;
    loop {
        line.clear();
        if reader.read_line(&mut line).map_err(read_error)? == 0 {
            break;
        }
        number += 1;
        if number == 1 || number == final_line {
            continue;
        }
        match parse_line(line.trim_end(), number)? {
            Record::Query(q) => judge.answer(number, q.index, &q.point, &q.answer)?,
            _ => {
                return Err(transcript(
                    number,
                    "only query records may stand between the header and the final record",
                ))
            }
        }
    }
    judge.finish(header, record, final_line)
}

/// Judges a game from its header and final record alone (no replay: the transcript was
/// kept nowhere). The recorded gap is taken as the adversary computed it.
pub fn judge_record(header: &Header, record: &FinalRecord) -> Result<DemoVerdict, Error> {
    let judge = Judge::new(header, record, 0)?;
    judge.finish(header.clone(), record.clone(), 0)
}

impl DemoVerdict {
    /// False when the lower curve is claimed for this game and the gap falls below it
    /// (which would contradict a published theorem: an adversary or method bug).
    pub fn consistent(&self) -> bool {
        !(self.claimed && self.holds == Some(false))
    }
}

fn transcript(line: u64, reason: &str) -> Error {
    Error::Transcript {
        line,
        reason: reason.into(),
    }
}

/// The function a demonstration names.
enum Named {
    Rotated(RotatedWitness),
    Instance(Box<dyn crate::adversary::fixed_function::Instance>),
}

impl Named {
    fn known(&self) -> &dyn KnownFunction {
        match self {
            Named::Rotated(w) => w,
            Named::Instance(i) => i.as_ref(),
        }
    }
}

struct Judge {
    game: LargeScale,
    demonstration: Demonstration,
    function: Named,
    gradient: Vec<f64>,
    best_value: Option<f64>,
    next_index: u64,
    replayed: u64,
    replay_error: f64,
}

impl Judge {
    fn new(header: &Header, record: &FinalRecord, final_line: u64) -> Result<Judge, Error> {
        let Class::LargeScale(game) = header.class else {
            return Err(transcript(
                1,
                "not a demonstration: the class is not a large-scale class (use `naysayer \
                 check` for certificates)",
            ));
        };
        let Some(demonstration) = record.demonstration.clone() else {
            return Err(transcript(
                final_line,
                "the final record of a large-scale game has no demonstration",
            ));
        };
        let tolerance = demonstration.tolerance;
        if !(tolerance.is_finite() && tolerance > 0.0 && tolerance < 1e-3) {
            return Err(transcript(
                final_line,
                "the demonstration's tolerance must be a positive number below 1e-3",
            ));
        }
        let function = match &demonstration.witness {
            Some(w) => {
                if w.dim() != game.function.dim() {
                    return Err(transcript(
                        final_line,
                        "the witness's dimension is not the class's",
                    ));
                }
                Named::Rotated(w.clone())
            }
            None => Named::Instance(build_instance(&header.adversary, &game).map_err(|e| {
                transcript(final_line, &format!("the function cannot be rebuilt: {e}"))
            })?),
        };
        Ok(Judge {
            game,
            gradient: vec![0.0; game.function.dim()],
            demonstration,
            function,
            best_value: None,
            next_index: 1,
            replayed: 0,
            replay_error: 0.0,
        })
    }

    /// Replays one recorded answer.
    fn answer(&mut self, line: u64, index: u64, x: &[f64], answer: &Answer) -> Result<(), Error> {
        if index != self.next_index {
            return Err(transcript(
                line,
                &format!("expected query {}, found query {index}", self.next_index),
            ));
        }
        self.next_index += 1;
        let d = self.game.function.dim();
        let Answer::FirstOrder(fo) = answer else {
            return Err(transcript(
                line,
                "a large-scale answer is a value and a gradient",
            ));
        };
        if x.len() != d || fo.subgradient.len() != d {
            return Err(transcript(
                line,
                &format!("point or gradient length is not d = {d}"),
            ));
        }
        let value = fo.value.to_f64();
        let gradient: Vec<f64> = fo.subgradient.iter().map(|g| g.to_f64()).collect();
        let (value_error, gradient_error) = match &self.function {
            Named::Rotated(w) => w.check_answer(x, value, &gradient),
            Named::Instance(f) => {
                let expected = f.evaluate(x, &mut self.gradient);
                let scale = expected.abs() + f.optimal_value().abs() + f64::MIN_POSITIVE;
                let diff: Vec<f64> = gradient
                    .iter()
                    .zip(&self.gradient)
                    .map(|(a, b)| a - b)
                    .collect();
                (
                    (expected - value).abs() / scale,
                    norm(&diff) / (norm(&self.gradient) + f64::MIN_POSITIVE),
                )
            }
        };
        let tolerance = self.demonstration.tolerance;
        if !(value_error <= tolerance && gradient_error <= tolerance) {
            return Err(transcript(
                line,
                &format!(
                    "the function does not reproduce answer {index}: relative value error \
                     {value_error:e}, gradient error {gradient_error:e} (tolerance \
                     {tolerance:e})"
                ),
            ));
        }
        self.best_value = Some(self.best_value.map_or(value, |b| b.min(value)));
        self.replayed += 1;
        self.replay_error = self.replay_error.max(value_error).max(gradient_error);
        Ok(())
    }

    fn finish(
        self,
        header: Header,
        record: FinalRecord,
        final_line: u64,
    ) -> Result<DemoVerdict, Error> {
        let replayed_all = self.replayed > 0 || record.queries_used == 0;
        if self.replayed > 0 && self.replayed != record.queries_used {
            return Err(transcript(
                final_line,
                &format!(
                    "the final record says {} queries were used, but the transcript holds {}",
                    record.queries_used, self.replayed
                ),
            ));
        }
        let known = self.function.known();
        let tolerance = self.demonstration.tolerance;
        let output = match &record.ending {
            Ending::Output {
                output: Output::Point { point },
            } => Some(point.as_slice()),
            _ => None,
        };
        if let Some(x) = output {
            if x.len() != self.game.function.dim() {
                return Err(transcript(
                    final_line,
                    "the output point has the wrong length",
                ));
            }
        }
        let at_output = output.map(|x| known.gap(x));
        let gap = if replayed_all {
            let queried = self.best_value.map(|v| v - known.optimal_value());
            match self.game.function {
                LargeScaleClass::Nonsmooth { .. } => match (queried, at_output) {
                    (Some(a), Some(b)) => Some(a.min(b)),
                    (a, b) => a.or(b),
                },
                _ => at_output,
            }
        } else {
            self.demonstration.gap
        };
        let agrees = match (gap, self.demonstration.gap) {
            (Some(a), Some(b)) => (a - b).abs() <= tolerance * a.abs().max(b.abs()),
            (None, None) => true,
            _ => false,
        };
        if !agrees {
            return Err(transcript(
                final_line,
                &format!(
                    "the recorded gap {:?} is not the function's gap {gap:?}",
                    self.demonstration.gap
                ),
            ));
        }
        let curves = gap_bounds(&self.game.function, self.game.horizon);
        // The published bound this function demonstrates: a published instance states
        // its own; a rotated max with p directions forces M R / sqrt(p) (Drori & Teboulle
        // with N = p - 1); a rotated chain forces the class's chain curve at T.
        let lower_bound = match &self.function {
            Named::Instance(i) => i.bound(),
            Named::Rotated(RotatedWitness::RotatedMax {
                lipschitz,
                radius,
                directions,
                ..
            }) => lipschitz * radius / (directions.len() as f64).sqrt(),
            Named::Rotated(RotatedWitness::RotatedChain { .. }) => {
                curves[0].gap.unwrap_or(f64::NAN)
            }
        };
        if (lower_bound - self.demonstration.lower_bound).abs() > tolerance * lower_bound.abs() {
            return Err(transcript(
                final_line,
                &format!(
                    "the recorded lower curve {} is not the published value {lower_bound} at \
                     T = {}",
                    self.demonstration.lower_bound, self.game.horizon
                ),
            ));
        }
        let upper_bound = curves
            .iter()
            .find(|b| b.side == Side::Upper && b.method == Some(header.method.as_str()))
            .and_then(|b| b.gap);
        let claimed = match adversary::info(&header.adversary).map(|a| a.scope) {
            Some(Scope::EveryMethod) => true,
            Some(Scope::SpanMethods) => crate::method::info(&header.method).is_some_and(|m| m.span),
            None => false,
        };
        let holds = gap.map(|g| g >= lower_bound * (1.0 - tolerance));
        Ok(DemoVerdict {
            censored: matches!(record.ending, Ending::BudgetExhausted),
            queries_used: record.queries_used,
            ending: record.ending,
            gap,
            lower_bound,
            upper_bound,
            claimed,
            holds,
            replayed: self.replayed,
            replay_error: self.replay_error,
            header,
        })
    }
}
