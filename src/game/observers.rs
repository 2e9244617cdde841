//! The observers the crate ships: the transcript writers and a trace of the undecided
//! measure.

use crate::adversary::Adversary;
use crate::certificate::StreamingVerifier;
use crate::error::Error;
use crate::game::Observer;
use crate::oracle::Answer;
use crate::transcript::{FinalRecord, Header, MemoryTranscript, TranscriptWriter};

impl Observer for TranscriptWriter {
    fn on_start(&mut self, header: &Header) -> Result<(), Error> {
        self.write_header(header)
    }

    fn on_query(
        &mut self,
        index: u64,
        query: &[f64],
        answer: &Answer,
        _adversary: &dyn Adversary,
    ) -> Result<(), Error> {
        self.write_query(index, query, answer)
    }

    fn on_finish(&mut self, record: &FinalRecord) -> Result<(), Error> {
        self.write_final(record)
    }
}

impl Observer for MemoryTranscript {
    fn on_start(&mut self, header: &Header) -> Result<(), Error> {
        self.push_header(header);
        Ok(())
    }

    fn on_query(
        &mut self,
        index: u64,
        query: &[f64],
        answer: &Answer,
        _adversary: &dyn Adversary,
    ) -> Result<(), Error> {
        self.push_query(index, query, answer);
        Ok(())
    }

    fn on_finish(&mut self, record: &FinalRecord) -> Result<(), Error> {
        self.push_final(record);
        Ok(())
    }
}

/// Verification as the game goes: a failed check is kept for the verdict and never
/// stops the game.
impl Observer for StreamingVerifier {
    fn on_start(&mut self, header: &Header) -> Result<(), Error> {
        self.start(header);
        Ok(())
    }

    fn on_query(
        &mut self,
        index: u64,
        query: &[f64],
        answer: &Answer,
        _adversary: &dyn Adversary,
    ) -> Result<(), Error> {
        self.query(index, query, answer);
        Ok(())
    }

    fn on_finish(&mut self, record: &FinalRecord) -> Result<(), Error> {
        self.finish(record);
        Ok(())
    }
}

/// Records the undecided measure after every answer (for charts of progress).
#[derive(Clone, Debug, Default)]
pub struct UndecidedTrace {
    /// `(query index, undecided measure after that answer)`, from index 1.
    pub points: Vec<(u64, f64)>,
}

impl Observer for UndecidedTrace {
    fn on_query(
        &mut self,
        index: u64,
        _query: &[f64],
        _answer: &Answer,
        adversary: &dyn Adversary,
    ) -> Result<(), Error> {
        self.points.push((index, adversary.undecided().value()));
        Ok(())
    }
}
