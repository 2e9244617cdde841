//! Writing transcripts: to a file as the game goes ([`TranscriptWriter`]), or to memory
//! ([`MemoryTranscript`]). The game loop attaches either as an observer
//! ([`crate::game::Observer`]); these types only know records.

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use crate::error::Error;
use crate::oracle::{Answer, Normal};
use crate::transcript::records::{
    FinalRecord, Header, QueryRecord, QueryRecordRef, Record, RecordRef,
};

/// When the writer flushes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Flush {
    /// At least once a second, and at the end.
    Periodic,
    /// After every record.
    EveryRecord,
}

/// Writes a transcript record by record, flushing as its [`Flush`] policy says.
pub struct TranscriptWriter<W: Write> {
    out: W,
    path: PathBuf,
    flush: Flush,
    last_flush: Instant,
    since_check: u32,
}

impl TranscriptWriter<BufWriter<File>> {
    /// Creates (truncates) the file at `path`.
    pub fn create(path: &Path, flush: Flush) -> Result<Self, Error> {
        let file = File::create(path).map_err(|source| Error::Io {
            action: "cannot create transcript",
            path: path.to_path_buf(),
            source,
        })?;
        Ok(Self::new(
            BufWriter::with_capacity(1 << 16, file),
            path,
            flush,
        ))
    }
}

impl<W: Write> TranscriptWriter<W> {
    /// Wraps any writer; `path` is used in error messages.
    pub fn new(out: W, path: &Path, flush: Flush) -> Self {
        TranscriptWriter {
            out,
            path: path.to_path_buf(),
            flush,
            last_flush: Instant::now(),
            since_check: 0,
        }
    }

    fn io_error(&self, source: std::io::Error) -> Error {
        Error::Io {
            action: "cannot write transcript",
            path: self.path.clone(),
            source,
        }
    }

    fn write_record(&mut self, record: &RecordRef<'_>) -> Result<(), Error> {
        serde_json::to_writer(&mut self.out, record)
            .map_err(|e| self.io_error(std::io::Error::other(e)))?;
        self.out.write_all(b"\n").map_err(|e| self.io_error(e))?;
        match self.flush {
            Flush::EveryRecord => self.flush_now(),
            Flush::Periodic => {
                self.since_check += 1;
                if self.since_check >= 256 {
                    self.since_check = 0;
                    if self.last_flush.elapsed() >= Duration::from_millis(500) {
                        self.flush_now()?;
                    }
                }
                Ok(())
            }
        }
    }

    fn flush_now(&mut self) -> Result<(), Error> {
        self.out.flush().map_err(|e| self.io_error(e))?;
        self.last_flush = Instant::now();
        Ok(())
    }

    /// Writes the header record and flushes.
    pub fn write_header(&mut self, header: &Header) -> Result<(), Error> {
        self.write_record(&RecordRef::Header(header))?;
        self.flush_now()
    }

    /// Writes one query record (`index` counts from 1). A dense cut normal with a
    /// non-finite coordinate is refused: non-finite numbers never reach the file.
    pub fn write_query(&mut self, index: u64, point: &[f64], answer: &Answer) -> Result<(), Error> {
        if let Answer::Cut(cut) = answer {
            if let Normal::Dense(a) = &cut.normal {
                if a.iter().any(|x| !x.is_finite()) {
                    return Err(self.io_error(std::io::Error::other(format!(
                        "answer {index} has a non-finite normal coordinate"
                    ))));
                }
            }
        }
        self.write_record(&RecordRef::Query(QueryRecordRef {
            index,
            point,
            answer,
        }))
    }

    /// Writes the final record and flushes.
    pub fn write_final(&mut self, record: &FinalRecord) -> Result<(), Error> {
        self.write_record(&RecordRef::Final(record))?;
        self.flush_now()
    }

    /// Gives back the writer.
    pub fn into_inner(self) -> W {
        self.out
    }
}

/// Keeps the whole transcript in memory.
#[derive(Clone, Debug, Default)]
pub struct MemoryTranscript {
    /// The records, header first.
    pub records: Vec<Record>,
}

impl MemoryTranscript {
    /// Appends the header.
    pub fn push_header(&mut self, header: &Header) {
        self.records.push(Record::Header(header.clone()));
    }

    /// Appends one query record.
    pub fn push_query(&mut self, index: u64, point: &[f64], answer: &Answer) {
        self.records.push(Record::Query(QueryRecord {
            index,
            point: point.to_vec(),
            answer: answer.clone(),
        }));
    }

    /// Appends the final record.
    pub fn push_final(&mut self, record: &FinalRecord) {
        self.records.push(Record::Final(record.clone()));
    }
}
