//! The class-independent half of the verifier: the header, the order of records, query
//! indices and lengths, the budget, the final record's counts and the witness limit,
//! around a [`ClassVerifier`] for the header's class.

use crate::certificate::{
    feasibility, first_order, lattice, ClassVerifier, Verdict, MAX_WITNESSES,
};
use crate::class::Class;
use crate::error::Error;
use crate::oracle::{Answer, Output};
use crate::transcript::{Ending, FinalRecord, Header, Record, FORMAT_VERSION};

/// The error for a record in the wrong place.
pub(crate) fn out_of_order(line: u64, reason: &str) -> Error {
    Error::Transcript {
        line,
        reason: format!("record out of order: {reason}"),
    }
}

/// Builds the verifier for the header's class (no witnesses yet).
fn class_verifier(header: &Header) -> Result<Box<dyn ClassVerifier>, Error> {
    let header_error = |reason: String| Error::Transcript { line: 1, reason };
    Ok(match &header.class {
        Class::Feasibility(c) => {
            let class = crate::class::FeasibilityClass::new(c.dim, c.half_width, c.rho, c.promise)
                .map_err(|e| header_error(e.to_string()))?;
            Box::new(feasibility::FeasibilityVerifier::for_class(class))
        }
        Class::FirstOrder(c) => {
            let class =
                crate::class::FirstOrderClass::new(c.dim, c.half_width, c.eps, c.lipschitz, c.norm)
                    .map_err(|e| header_error(e.to_string()))?;
            Box::new(first_order::FirstOrderVerifier::for_class(class))
        }
        Class::Lattice(c) => {
            let class = crate::class::LatticeClass::new(
                c.lower.clone(),
                c.upper.clone(),
                c.cont_dim,
                c.half_width,
                c.rho,
            )
            .map_err(|e| header_error(e.to_string()))?;
            Box::new(lattice::LatticeVerifier::for_class(class))
        }
        Class::LargeScale(_) => {
            return Err(header_error(
                "a large-scale transcript is a demonstration, not a certificate \
                 (docs/theory.md §3): its numbers are checked to a stated tolerance, never \
                 exactly, so `check` refuses it"
                    .into(),
            ))
        }
    })
}

/// The final record with the line it stands on.
struct Attached {
    record: FinalRecord,
    line: u64,
    prefix: u64,
}

/// Streaming driver: started from the header, given the final record (before the
/// queries when reading a file, after them in a streaming run), fed the records in order.
pub(crate) struct Checker {
    header: Header,
    dim: usize,
    inner: Box<dyn ClassVerifier>,
    attached: Option<Attached>,
    next_index: u64,
    finished: bool,
}

impl Checker {
    /// Checks the header and builds the class verifier.
    pub(crate) fn start(header: Header) -> Result<Checker, Error> {
        if header.format != FORMAT_VERSION {
            return Err(Error::Transcript {
                line: 1,
                reason: format!(
                    "transcript format {} is not supported (this build reads format \
                     {FORMAT_VERSION})",
                    header.format
                ),
            });
        }
        let inner = class_verifier(&header)?;
        Ok(Checker {
            dim: header.class.query_dim(),
            header,
            inner,
            attached: None,
            next_index: 1,
            finished: false,
        })
    }

    /// [`Checker::start`], then [`Checker::attach`].
    pub(crate) fn new(
        header: Header,
        final_record: FinalRecord,
        final_line: u64,
    ) -> Result<Checker, Error> {
        let mut checker = Checker::start(header)?;
        checker.attach(final_record, final_line)?;
        Ok(checker)
    }

    /// Checks the final record's own claims and hands its witnesses to the class
    /// verifier.
    pub(crate) fn attach(
        &mut self,
        final_record: FinalRecord,
        final_line: u64,
    ) -> Result<(), Error> {
        let final_error = |reason: String| Error::Transcript {
            line: final_line,
            reason,
        };
        if matches!(final_record.ending, Ending::BudgetExhausted)
            && final_record.queries_used != self.header.budget
        {
            return Err(final_error(format!(
                "the budget ended the game after {} queries, but the budget is {}",
                final_record.queries_used, self.header.budget
            )));
        }
        if let Ending::Output {
            output: Output::Point { point },
        } = &final_record.ending
        {
            if point.len() != self.dim {
                return Err(final_error(format!(
                    "output point has {} coordinates, expected {}",
                    point.len(),
                    self.dim
                )));
            }
        }
        if let Some(certificate) = &final_record.certificate {
            if certificate.instances.len() > MAX_WITNESSES {
                return Err(final_error(format!(
                    "the certificate holds {} witnesses, more than the limit of \
                     {MAX_WITNESSES}",
                    certificate.instances.len()
                )));
            }
        }
        let prefix = final_record.certificate.as_ref().map_or(0, |w| w.prefix);
        if prefix > final_record.queries_used {
            return Err(final_error(format!(
                "the certificate claims prefix {prefix}, longer than the {} queries used",
                final_record.queries_used
            )));
        }
        self.inner.attach(&final_record, final_line)?;
        self.attached = Some(Attached {
            record: final_record,
            line: final_line,
            prefix,
        });
        Ok(())
    }

    /// The certified prefix T* claimed by the attached final record (0 before).
    pub(crate) fn prefix(&self) -> u64 {
        self.attached.as_ref().map_or(0, |a| a.prefix)
    }

    /// The class verifier.
    pub(crate) fn inner(&mut self) -> &mut dyn ClassVerifier {
        self.inner.as_mut()
    }

    /// Checks the index and length of the next query (in order from 1).
    pub(crate) fn next_query(
        &mut self,
        line: u64,
        index: u64,
        point_len: usize,
    ) -> Result<(), Error> {
        if index != self.next_index {
            return Err(out_of_order(
                line,
                &format!("expected query {}, found query {index}", self.next_index),
            ));
        }
        self.next_index += 1;
        if point_len != self.dim {
            return Err(Error::Transcript {
                line,
                reason: format!(
                    "query {index} has {point_len} coordinates, expected {}",
                    self.dim
                ),
            });
        }
        Ok(())
    }

    /// Checks one answer without the witnesses (streaming runs).
    pub(crate) fn answer(
        &mut self,
        line: u64,
        index: u64,
        point: &[f64],
        answer: &Answer,
    ) -> Result<(), Error> {
        self.next_query(line, index, point.len())?;
        self.inner.answer(line, index, point, answer)
    }

    /// Checks one record read after the final record was attached.
    pub(crate) fn record(&mut self, line: u64, record: &Record) -> Result<(), Error> {
        if self.finished {
            return Err(out_of_order(line, "a record follows the final record"));
        }
        let Some(attached) = &self.attached else {
            return Err(out_of_order(
                line,
                "a record before the final record is known",
            ));
        };
        match record {
            Record::Header(_) => Err(out_of_order(line, "a second header")),
            Record::Final(_) => {
                if line != attached.line {
                    return Err(out_of_order(line, "a final record before the end"));
                }
                self.end(line)
            }
            Record::Query(query) => {
                let in_prefix = query.index <= attached.prefix;
                self.next_query(line, query.index, query.point.len())?;
                self.inner.query(line, query, in_prefix)
            }
        }
    }

    /// The final record is reached: the number of queries must match.
    pub(crate) fn end(&mut self, line: u64) -> Result<(), Error> {
        let used = self.attached.as_ref().map_or(0, |a| a.record.queries_used);
        if self.next_index != used + 1 {
            return Err(Error::Transcript {
                line,
                reason: format!(
                    "the final record says {used} queries were used, but the transcript holds {}",
                    self.next_index - 1
                ),
            });
        }
        self.finished = true;
        Ok(())
    }

    /// The verdict, once every record is checked.
    pub(crate) fn finish(mut self, last_line: u64) -> Result<Verdict, Error> {
        let (true, Some(attached)) = (self.finished, self.attached.take()) else {
            return Err(Error::Transcript {
                line: last_line,
                reason: "the transcript ends without a final record (truncated?)".into(),
            });
        };
        let outcome = self.inner.finish(attached.line)?;
        let record = attached.record;
        let witness_prefix = record.certificate.as_ref().map(|w| w.prefix);
        Ok(Verdict {
            censored: matches!(record.ending, Ending::BudgetExhausted),
            queries_used: record.queries_used,
            certified_prefix: witness_prefix.filter(|_| self.inner.bound_certified()),
            witness_prefix,
            ending: record.ending,
            outcome,
            certified_uncertainty: self.inner.certified_uncertainty(),
            header: self.header,
        })
    }
}
