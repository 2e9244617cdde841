//! Certificates and the independent verifier.
//!
//! A certificate is a transcript plus witnesses plus a claim. The verifier reads only
//! the transcript's records (header, queries with their answers, final record with the
//! witnesses); it never sees adversary state. Every comparison is exact, in rational
//! arithmetic over the exact numbers stored in the transcript, with no tolerance
//! (docs/theory.md §0). Square roots are decided by squaring with signs checked: a
//! ball B(c, r) lies strictly inside the cut `{a.y < b}` iff `s = b - a.c > 0` and
//! `r^2 ||a||^2 < s^2`.
//!
//! What a valid certificate with prefix T* proves (docs/theory.md §7): every witness
//! agrees with the first T* answers and belongs to the class, and
//! - when there are at least two witnesses and their solution sets (their correct
//!   outputs) are pairwise disjoint, no output is correct for all of them, so no method
//!   that saw only these T* answers could have stopped: the **certified lower bound** is
//!   T* + 1 queries ([`Verdict::certified_lower_bound`]);
//! - when T* covers the whole game and the method's output is wrong for one witness, the
//!   output is **refuted** by that witness ([`Outcome::OutputRefuted`],
//!   [`Outcome::EmptyRefuted`]). A refutation is an outcome only: it shows that this one
//!   output was wrong, not that no method could have stopped, so it never gives or
//!   raises a lower bound. A certificate whose witnesses are not pairwise disjoint is
//!   valid only when it refutes the output, and then certifies no lower bound.
//!
//! Limits (with [`crate::transcript::limits`] and [`crate::exact`], they keep the work
//! roughly linear in the size of the input; `tools/check_certificate.py` applies the same
//! ones): at most [`MAX_WITNESSES`] witnesses per certificate, and at most
//! [`MAX_CHECK_WORK`] term evaluations for the witness parts that cannot be checked in
//! time independent of their size (dense function pieces, lattice generating points).

mod driver;
pub mod feasibility;
pub mod filter;
pub mod first_order;
pub mod lattice;
pub mod pieces;
pub mod stream;
pub mod universal;

pub use stream::StreamingVerifier;

/// Most witnesses one certificate may hold (the adversaries write two; pairwise
/// disjointness is checked over all pairs).
pub const MAX_WITNESSES: usize = 16;

/// Most term evaluations the checks of a certified prefix may need for dense function
/// pieces and lattice generating points: T* times the sum, over witnesses, of the
/// nonzero slope entries of the function pieces with two or more of them, and of the
/// number of generating points times the query dimension. Beyond it the certificate is
/// refused, with a message saying so.
pub const MAX_CHECK_WORK: u64 = 50_000_000;

use serde::{Deserialize, Serialize};

use crate::certificate::driver::{out_of_order, Checker};
use crate::error::Error;
use crate::oracle::Answer;
use crate::transcript::reader::last_line;
use crate::transcript::{parse_line, QueryRecord, Record, TranscriptReader};
use crate::transcript::{Ending, FinalRecord, Header};

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
    /// A signal ended the game before the method stopped.
    Interrupted,
}

impl Outcome {
    /// The (0-based) witness that refutes the method's output, if one does.
    pub fn refuting_witness(&self) -> Option<usize> {
        match *self {
            Outcome::OutputRefuted { witness } | Outcome::EmptyRefuted { witness } => Some(witness),
            _ => None,
        }
    }
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
    /// The prefix T* of a verified certificate whose witnesses have pairwise disjoint
    /// solution sets, so that no method could have stopped after T* answers; `None`
    /// when there is none (no certificate, or one that only refutes the output).
    pub certified_prefix: Option<u64>,
    /// The prefix the certificate's witnesses were verified to agree with, whether or
    /// not they certify a lower bound (`None` without a certificate).
    pub witness_prefix: Option<u64>,
    /// How the game ended, judged by the verified witnesses.
    pub outcome: Outcome,
    /// First-order classes: the certified uncertainty eps_cert of docs/theory.md §2.2, a lower
    /// estimate of the error no method can rule out from the certified prefix of answers.
    pub certified_uncertainty: Option<f64>,
}

impl Verdict {
    /// Certified lower bound = T* + 1 (docs/theory.md §0), only from witnesses with
    /// pairwise disjoint solution sets; never from a refuted output.
    pub fn certified_lower_bound(&self) -> Option<u64> {
        self.certified_prefix.map(|t| t + 1)
    }
}

/// Verifies the transcript file at `path` (two streaming passes: the first finds the
/// final record, the second checks every record against its witnesses).
pub fn verify_file(path: &std::path::Path) -> Result<Verdict, Error> {
    // Pass 1: the last line, to learn the witnesses before checking the answers (a
    // streaming pass that keeps no line in memory and refuses an overlong line early).
    let (last_line, last_bytes) = last_line(path)?.ok_or(Error::Transcript {
        line: 1,
        reason: "the file is empty".into(),
    })?;
    let last_text = std::str::from_utf8(&last_bytes).map_err(|_| Error::Transcript {
        line: last_line,
        reason: "not valid UTF-8".into(),
    })?;
    let final_record = match parse_line(last_text, last_line) {
        Ok(Record::Final(f)) => Some(f),
        Ok(_) => None,
        Err(e) => {
            // A complete JSON line that is not a valid record (for example an unknown
            // certificate schema) is reported as it is, not as a truncation.
            let complete = serde_json::from_str::<serde_json::Value>(last_text).is_ok();
            if last_line > 1 && !complete {
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
            Some(c) => c.record(line, &record)?,
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
        checker.record(i as u64 + 1, record)?;
    }
    checker.finish(n)
}

/// The class-specific half of the verifier: built from the validated class, given the
/// final record ([`ClassVerifier::attach`]: witnesses and claim), fed every query in
/// order, then asked for the outcome.
///
/// The driver checks everything that does not depend on the class: the header, the
/// order of records, query indices, the budget, and the final record's counts. Each
/// answer has checks that need no witness ([`ClassVerifier::answer`]) and, in the
/// certified prefix, checks that every witness agrees with it
/// ([`ClassVerifier::agree`]); a streaming run ([`StreamingVerifier`]) makes the first
/// as the game goes and the second once the witnesses are known.
pub trait ClassVerifier {
    /// Takes the final record: checks the witnesses' membership in the class and the
    /// certificate's claim (pairwise disjoint solution sets, or a refutation of the
    /// output at full length).
    fn attach(&mut self, final_record: &FinalRecord, final_line: u64) -> Result<(), Error>;
    /// Checks one answer without the witnesses (its index and length are checked).
    fn answer(
        &mut self,
        line: u64,
        index: u64,
        point: &[f64],
        answer: &Answer,
    ) -> Result<(), Error>;
    /// Checks that every witness agrees with one answer of the certified prefix.
    fn agree(&mut self, line: u64, index: u64, point: &[f64], answer: &Answer)
        -> Result<(), Error>;
    /// Whether [`ClassVerifier::agree`] reads the query point for this answer (a
    /// streaming run keeps the point only then).
    fn agree_reads_point(&self, answer: &Answer) -> bool {
        let _ = answer;
        true
    }
    /// Checks one query record: [`ClassVerifier::answer`], then, when `in_prefix`,
    /// [`ClassVerifier::agree`].
    fn query(&mut self, line: u64, record: &QueryRecord, in_prefix: bool) -> Result<(), Error> {
        self.answer(line, record.index, &record.point, &record.answer)?;
        if in_prefix {
            self.agree(line, record.index, &record.point, &record.answer)?;
        }
        Ok(())
    }
    /// Judges the ending (after [`ClassVerifier::attach`] and every query).
    fn finish(&mut self, final_line: u64) -> Result<Outcome, Error>;
    /// For accuracy classes: the largest accuracy the verified witnesses certify as
    /// unreachable from these answers (docs/theory.md §2.2); `None` elsewhere.
    fn certified_uncertainty(&self) -> Option<f64> {
        None
    }
    /// True when the certificate holds at least two witnesses whose solution sets are
    /// pairwise disjoint, so that it certifies the lower bound T* + 1 (a certificate that
    /// only refutes the method's output does not).
    fn bound_certified(&self) -> bool;
}
