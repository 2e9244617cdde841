//! Certificates and the independent verifier.
//!
//! A certificate is a transcript plus witnesses plus a claim. The verifier reads only
//! the transcript's records (header, queries with their answers, final record with the
//! witnesses); it never sees adversary state. Every comparison is exact, in rational
//! arithmetic over the exact numbers stored in the transcript, with no tolerance
//! (THEORY.md section 0). Square roots are decided by squaring with signs checked: a
//! ball B(c, r) lies strictly inside the cut `{a.y < b}` iff `s = b - a.c > 0` and
//! `r^2 ||a||^2 < s^2`.
//!
//! What a valid certificate with prefix T* proves: every witness agrees with the first
//! T* answers, every witness belongs to the class, and either the witnesses' solution
//! sets are pairwise disjoint (so no output is correct for all of them: no method that
//! saw only these answers could stop), or T* covers the whole game and the method's
//! output is wrong for one witness. The certified lower bound is then T* + 1 queries.

use num_rational::BigRational;
use num_traits::{Signed, Zero};
use serde::{Deserialize, Serialize};

use crate::class::{Class, FeasibilityClass, Promise};
use crate::error::Error;
use crate::exact::{f64_to_rational, Exact};
use crate::game::{Ending, FinalRecord, Header};
use crate::instance::Witness;
use crate::oracle::{Answer, Cut, Normal, Output};
use crate::transcript::{parse_line, QueryRecord, Record, TranscriptReader, FORMAT_VERSION};

/// What the verifier concluded about a game whose certificate checks out.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum Outcome {
    /// The method output a point that is not in witness `witness` (0-based).
    OutputRefuted {
        /// Index of the refuting witness.
        witness: usize,
    },
    /// The method declared "empty" but witness `witness` (0-based) is nonempty.
    EmptyRefuted {
        /// Index of the refuting witness.
        witness: usize,
    },
    /// The method declared "empty" although the class promises K is nonempty.
    EmptyBreaksPromise,
    /// The method's output is not refuted by the witnesses (it stands).
    OutputStands,
    /// The budget ended the game (queries used is censored).
    BudgetExhausted,
    /// The method failed.
    MethodFailed {
        /// Its reason.
        reason: String,
    },
}

/// The verifier's verdict on a transcript.
#[derive(Clone, Debug, PartialEq)]
pub struct Verdict {
    /// The header.
    pub header: Header,
    /// Queries the method asked (censored when the budget ended the game).
    pub queries_used: u64,
    /// True when the budget ended the game.
    pub censored: bool,
    /// How the game ended, as recorded.
    pub ending: Ending,
    /// The longest prefix T* with a verified certificate; `None` when there is none.
    pub certified_prefix: Option<u64>,
    /// How the game ended, judged by the verified witnesses.
    pub outcome: Outcome,
}

impl Verdict {
    /// Certified lower bound = T* + 1 (THEORY.md section 0).
    pub fn certified_lower_bound(&self) -> Option<u64> {
        self.certified_prefix.map(|t| t + 1)
    }
}

/// Verifies the transcript file at `path` (two streaming passes: the first finds the
/// final record, the second checks every record against its witnesses).
pub fn verify_file(path: &std::path::Path) -> Result<Verdict, Error> {
    // Pass 1: the last line, to learn the witnesses before checking the answers.
    let mut last: Option<(u64, String)> = None;
    {
        use std::io::BufRead;
        let file = std::fs::File::open(path).map_err(|source| Error::Io {
            action: "cannot read transcript",
            path: path.to_path_buf(),
            source,
        })?;
        let mut reader = std::io::BufReader::with_capacity(1 << 16, file);
        let mut buffer = Vec::new();
        let mut line = 0u64;
        loop {
            buffer.clear();
            let n = reader
                .read_until(b'\n', &mut buffer)
                .map_err(|source| Error::Io {
                    action: "cannot read transcript",
                    path: path.to_path_buf(),
                    source,
                })?;
            if n == 0 {
                break;
            }
            line += 1;
            let text = String::from_utf8_lossy(&buffer).trim_end().to_string();
            last = Some((line, text));
        }
    }
    let (last_line, last_text) = last.ok_or(Error::Transcript {
        line: 1,
        reason: "the file is empty".into(),
    })?;
    let final_record = match parse_line(&last_text, last_line) {
        Ok(Record::Final(f)) => Some(f),
        Ok(_) => None,
        Err(e) => {
            if last_line > 1 {
                return Err(Error::Transcript {
                    line: last_line,
                    reason: format!("the last line is not a complete record (truncated?): {e}"),
                });
            }
            return Err(e);
        }
    };
    let mut checker: Option<Checker> = None;
    let mut pending_final = final_record;
    for item in TranscriptReader::open(path)? {
        let (line, record) = item?;
        match checker.as_mut() {
            None => {
                let Record::Header(header) = record else {
                    return Err(out_of_order(line, "the first record must be the header"));
                };
                let Some(final_record) = pending_final.take() else {
                    return Err(Error::Transcript {
                        line: last_line,
                        reason: "the transcript ends without a final record (truncated?)".into(),
                    });
                };
                checker = Some(Checker::new(header, final_record, last_line)?);
            }
            Some(c) => c.record(line, record)?,
        }
    }
    checker
        .ok_or(Error::Transcript {
            line: 1,
            reason: "no header".into(),
        })?
        .finish(last_line)
}

/// Verifies an in-memory transcript (header first, final record last).
pub fn verify_records(records: &[Record]) -> Result<Verdict, Error> {
    let n = records.len() as u64;
    let Some(Record::Header(header)) = records.first() else {
        return Err(out_of_order(1, "the first record must be the header"));
    };
    let Some(Record::Final(final_record)) = records.last() else {
        return Err(Error::Transcript {
            line: n.max(1),
            reason: "the transcript ends without a final record (truncated?)".into(),
        });
    };
    let mut checker = Checker::new(header.clone(), final_record.clone(), n)?;
    for (i, record) in records.iter().enumerate().skip(1) {
        checker.record(i as u64 + 1, record.clone())?;
    }
    checker.finish(n)
}

fn out_of_order(line: u64, reason: &str) -> Error {
    Error::Transcript {
        line,
        reason: format!("record out of order: {reason}"),
    }
}

/// A ball witness prepared for exact checks.
struct ExactBall {
    center: Vec<BigRational>,
    radius2: BigRational,
}

/// Streaming checker: built from the header and the final record, fed the query
/// records in order.
struct Checker {
    header: Header,
    class: FeasibilityClass,
    final_record: FinalRecord,
    final_line: u64,
    prefix: u64,
    witnesses: Vec<Witness>,
    balls: Vec<Option<ExactBall>>,
    next_index: u64,
    finished: bool,
}

impl Checker {
    fn new(header: Header, final_record: FinalRecord, final_line: u64) -> Result<Checker, Error> {
        let header_error = |reason: String| Error::Transcript { line: 1, reason };
        if header.format != FORMAT_VERSION {
            return Err(header_error(format!(
                "transcript format {} is not supported (this build reads format {FORMAT_VERSION})",
                header.format
            )));
        }
        let Class::Feasibility(c) = &header.class;
        let class = FeasibilityClass::new(c.dim, c.half_width, c.rho, c.promise)
            .map_err(|e| header_error(e.to_string()))?;
        let final_error = |reason: String| Error::Transcript {
            line: final_line,
            reason,
        };
        if matches!(final_record.ending, Ending::BudgetExhausted)
            && final_record.queries_used != header.budget
        {
            return Err(final_error(format!(
                "the budget ended the game after {} queries, but the budget is {}",
                final_record.queries_used, header.budget
            )));
        }
        if let Ending::Output {
            output: Output::Point { point },
        } = &final_record.ending
        {
            if point.len() != class.dim {
                return Err(final_error(format!(
                    "output point has {} coordinates, expected {}",
                    point.len(),
                    class.dim
                )));
            }
        }
        let (prefix, witnesses) = match &final_record.certificate {
            None => (0, Vec::new()),
            Some(w) => (w.prefix, w.instances.clone()),
        };
        if prefix > final_record.queries_used {
            return Err(final_error(format!(
                "the certificate claims prefix {prefix}, longer than the {} queries used",
                final_record.queries_used
            )));
        }
        let mut balls = Vec::with_capacity(witnesses.len());
        for (k, witness) in witnesses.iter().enumerate() {
            let label = format!("witness #{} ({})", k + 1, witness.label());
            balls.push(
                check_membership(&class, witness)
                    .map_err(|r| final_error(format!("{label}: {r}")))?,
            );
        }
        let checker = Checker {
            header,
            class,
            final_record,
            final_line,
            prefix,
            witnesses,
            balls,
            next_index: 1,
            finished: false,
        };
        if checker.final_record.certificate.is_some() {
            checker.check_claim()?;
        }
        Ok(checker)
    }

    /// The claim: pairwise disjoint solution sets, or the output refuted at full length.
    fn check_claim(&self) -> Result<(), Error> {
        let error = |reason: String| Error::Transcript {
            line: self.final_line,
            reason,
        };
        if self.disjoint_solution_sets() {
            return Ok(());
        }
        let full = self.prefix == self.final_record.queries_used;
        if let (true, Ending::Output { output }) = (full, &self.final_record.ending) {
            if self.refuting_witness(output).is_some() {
                return Ok(());
            }
            return Err(error(
                "no witness refutes the method's output and the witnesses' solution sets \
                 are not pairwise disjoint"
                    .into(),
            ));
        }
        Err(error(
            "the witnesses' solution sets are not pairwise disjoint, so they do not show that \
             the method could not have stopped"
                .into(),
        ))
    }

    fn disjoint_solution_sets(&self) -> bool {
        let n = self.witnesses.len();
        if n < 2 {
            return false;
        }
        for i in 0..n {
            for j in (i + 1)..n {
                let disjoint = match (&self.balls[i], &self.balls[j]) {
                    (Some(a), Some(b)) => {
                        // Closed balls of radii r are disjoint iff |ca - cb|^2 > (2r)^2.
                        let dist2: BigRational = a
                            .center
                            .iter()
                            .zip(&b.center)
                            .map(|(x, y)| {
                                let d = x - y;
                                &d * &d
                            })
                            .sum();
                        let four = BigRational::from_integer(4.into());
                        dist2 > &a.radius2 * four
                    }
                    // The empty set's only correct output is "empty"; a ball's are points.
                    (None, Some(_)) | (Some(_), None) => true,
                    (None, None) => false,
                };
                if !disjoint {
                    return false;
                }
            }
        }
        true
    }

    fn refuting_witness(&self, output: &Output) -> Option<usize> {
        match output {
            Output::Empty => self
                .witnesses
                .iter()
                .position(|w| !matches!(w, Witness::Empty)),
            Output::Point { point } => {
                let x: Vec<BigRational> = point.iter().map(|v| f64_to_rational(*v)).collect();
                (0..self.witnesses.len()).find(|&k| match &self.balls[k] {
                    None => true,
                    Some(ball) => !in_ball(ball, &x),
                })
            }
        }
    }

    fn record(&mut self, line: u64, record: Record) -> Result<(), Error> {
        if self.finished {
            return Err(out_of_order(line, "a record follows the final record"));
        }
        match record {
            Record::Header(_) => Err(out_of_order(line, "a second header")),
            Record::Final(_) => {
                if line != self.final_line {
                    return Err(out_of_order(line, "a final record before the end"));
                }
                if self.next_index != self.final_record.queries_used + 1 {
                    return Err(Error::Transcript {
                        line,
                        reason: format!(
                            "the final record says {} queries were used, but the transcript \
                             holds {}",
                            self.final_record.queries_used,
                            self.next_index - 1
                        ),
                    });
                }
                self.finished = true;
                Ok(())
            }
            Record::Query(query) => self.query(line, &query),
        }
    }

    fn query(&mut self, line: u64, query: &QueryRecord) -> Result<(), Error> {
        let error = |reason: String| Error::Transcript { line, reason };
        if query.index != self.next_index {
            return Err(out_of_order(
                line,
                &format!(
                    "expected query {}, found query {}",
                    self.next_index, query.index
                ),
            ));
        }
        self.next_index += 1;
        let d = self.class.dim;
        if query.point.len() != d {
            return Err(error(format!(
                "query {} has {} coordinates, expected {d}",
                query.index,
                query.point.len()
            )));
        }
        let x: Vec<BigRational> = query.point.iter().map(|v| f64_to_rational(*v)).collect();
        match &query.answer {
            Answer::Inside => {}
            Answer::Cut(cut) => {
                if !cut.normal.is_well_formed(d) {
                    return Err(error(format!(
                        "answer {}: the cut normal is malformed (wrong length, zero, or bad axis)",
                        query.index
                    )));
                }
                if !excludes(cut, &query.point, &x) {
                    return Err(error(format!(
                        "answer {}: the query lies on the kept side of its own cut \
                         (a.x < b), so the cut does not separate it",
                        query.index
                    )));
                }
            }
        }
        if query.index > self.prefix {
            return Ok(());
        }
        for (k, witness) in self.witnesses.iter().enumerate() {
            let consistent = match (&query.answer, &self.balls[k]) {
                (Answer::Inside, None) => false,
                (Answer::Inside, Some(ball)) => in_ball(ball, &x),
                (Answer::Cut(_), None) => true,
                (Answer::Cut(cut), Some(ball)) => ball_strictly_inside(ball, cut),
            };
            if !consistent {
                let what = match &query.answer {
                    Answer::Inside => "the answer `inside` but the query is not in it",
                    _ => "the cut but does not lie strictly inside it",
                };
                return Err(error(format!(
                    "answer {}: witness #{} ({}) contradicts {what}",
                    query.index,
                    k + 1,
                    witness.label()
                )));
            }
        }
        Ok(())
    }

    fn finish(self, last_line: u64) -> Result<Verdict, Error> {
        if !self.finished {
            return Err(Error::Transcript {
                line: last_line,
                reason: "the transcript ends without a final record (truncated?)".into(),
            });
        }
        let ending = &self.final_record.ending;
        let certified = self.final_record.certificate.is_some();
        let outcome = match ending {
            Ending::BudgetExhausted => Outcome::BudgetExhausted,
            Ending::MethodFailed { reason } => Outcome::MethodFailed {
                reason: reason.clone(),
            },
            Ending::Output {
                output: Output::Empty,
            } if self.class.promise == Promise::Nonempty => Outcome::EmptyBreaksPromise,
            Ending::Output { output } => {
                let full = certified && self.prefix == self.final_record.queries_used;
                match (full, self.refuting_witness(output)) {
                    (true, Some(k)) if matches!(output, Output::Empty) => {
                        Outcome::EmptyRefuted { witness: k }
                    }
                    (true, Some(k)) => Outcome::OutputRefuted { witness: k },
                    _ => Outcome::OutputStands,
                }
            }
        };
        Ok(Verdict {
            censored: matches!(ending, Ending::BudgetExhausted),
            queries_used: self.final_record.queries_used,
            certified_prefix: certified.then_some(self.prefix),
            ending: ending.clone(),
            outcome,
            header: self.header,
        })
    }
}

/// Checks that a witness belongs to the class; returns its exact ball form.
fn check_membership(
    class: &FeasibilityClass,
    witness: &Witness,
) -> Result<Option<ExactBall>, String> {
    match witness {
        Witness::Empty => {
            if class.promise == Promise::Nonempty {
                Err("the class promises a nonempty K, so the empty set is not an instance".into())
            } else {
                Ok(None)
            }
        }
        Witness::Ball { center, radius } => {
            if center.len() != class.dim {
                return Err(format!(
                    "centre has {} coordinates, expected {}",
                    center.len(),
                    class.dim
                ));
            }
            if *radius != class.rho {
                return Err(format!(
                    "radius {radius} differs from the class's rho {}",
                    class.rho
                ));
            }
            let r = f64_to_rational(*radius);
            let big_r = f64_to_rational(class.half_width);
            let center: Vec<BigRational> = center.iter().map(Exact::to_rational).collect();
            for (i, c) in center.iter().enumerate() {
                if c - &r < -big_r.clone() || c + &r > big_r {
                    return Err(format!(
                        "the ball leaves the box [-R, R]^d in coordinate {i}"
                    ));
                }
            }
            Ok(Some(ExactBall {
                center,
                radius2: &r * &r,
            }))
        }
    }
}

/// a.x >= b, exactly (`point` and `x` are the same point, as `f64` and as rationals).
fn excludes(cut: &Cut, point: &[f64], x: &[BigRational]) -> bool {
    if let (Normal::Axis { axis, sign }, Exact::Float(b)) = (&cut.normal, &cut.offset) {
        // Negation is exact in f64, so this comparison is exact.
        return f64::from(*sign) * point[*axis] >= *b;
    }
    cut.normal.dot_exact(x) >= cut.offset.to_rational()
}

/// B(c, r) strictly inside {a.y < b}: s = b - a.c > 0 and r^2 ||a||^2 < s^2.
fn ball_strictly_inside(ball: &ExactBall, cut: &Cut) -> bool {
    let s = cut.offset.to_rational() - cut.normal.dot_exact(&ball.center);
    if !s.is_positive() {
        return false;
    }
    &ball.radius2 * cut.normal.norm_squared_exact() < &s * &s
}

/// ||x - c||^2 <= r^2, exactly.
fn in_ball(ball: &ExactBall, x: &[BigRational]) -> bool {
    let mut dist2 = BigRational::zero();
    for (xi, ci) in x.iter().zip(&ball.center) {
        let d = xi - ci;
        dist2 += &d * &d;
        if dist2 > ball.radius2 {
            return false;
        }
    }
    true
}
