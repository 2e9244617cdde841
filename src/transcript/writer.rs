//! Writing transcripts: to a file as the game goes ([`TranscriptWriter`]), or to memory
//! ([`MemoryTranscript`]). The game loop attaches either as an observer
//! ([`crate::game::Observer`]); these types only know records.
//!
//! Durability: under [`Flush::Periodic`] a background thread flushes the file within
//! [`FLUSH_INTERVAL`] of any record, however slowly the game goes (a method that thinks
//! for a minute between queries still has every answered query on disk within half a
//! second), and the header and final records are flushed at once; under
//! [`Flush::EveryRecord`] (external methods, which may not be replayable) every record is
//! flushed as it is written.

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};
use std::sync::{mpsc, Arc, Mutex};
use std::thread::JoinHandle;
use std::time::Duration;

use crate::error::Error;
use crate::oracle::{Answer, Normal};
use crate::transcript::records::{
    FinalRecord, Header, QueryRecord, QueryRecordRef, Record, RecordRef,
};

/// When the writer flushes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Flush {
    /// Buffered, and flushed by a background thread within [`FLUSH_INTERVAL`] of any
    /// record written (whatever the game's pace), and at the end.
    Periodic,
    /// After every record.
    EveryRecord,
}

/// The most time a written record waits in the buffer under [`Flush::Periodic`]
/// (documented as "at least once a second"; the flusher wakes twice as often).
pub const FLUSH_INTERVAL: Duration = Duration::from_millis(500);

/// What the writer and its flusher thread share.
struct Shared {
    out: BufWriter<File>,
    /// Records written since the last flush.
    dirty: bool,
    /// A failed background flush, reported by the next write.
    failed: Option<std::io::Error>,
}

/// Writes a transcript file record by record, flushing as its [`Flush`] policy says.
pub struct TranscriptWriter {
    shared: Arc<Mutex<Shared>>,
    path: PathBuf,
    flush: Flush,
    /// Stops the flusher thread (dropping the sender wakes it).
    stop: Option<mpsc::Sender<()>>,
    flusher: Option<JoinHandle<()>>,
    line: Vec<u8>,
}

impl TranscriptWriter {
    /// Creates (truncates) the file at `path`.
    pub fn create(path: &Path, flush: Flush) -> Result<Self, Error> {
        let file = File::create(path).map_err(|source| Error::Io {
            action: "cannot create transcript",
            path: path.to_path_buf(),
            source,
        })?;
        Self::from_file(file, path, flush)
    }

    /// Writes to an open file (`path` names it in messages).
    pub fn from_file(file: File, path: &Path, flush: Flush) -> Result<Self, Error> {
        let shared = Arc::new(Mutex::new(Shared {
            out: BufWriter::with_capacity(1 << 16, file),
            dirty: false,
            failed: None,
        }));
        let (stop, flusher) = match flush {
            Flush::EveryRecord => (None, None),
            Flush::Periodic => {
                let (sender, receiver) = mpsc::channel::<()>();
                let shared = Arc::clone(&shared);
                let handle = std::thread::Builder::new()
                    .name("transcript flusher".into())
                    .spawn(move || {
                        // Wakes every half interval until the writer is dropped (which
                        // disconnects the channel), flushing what was written meanwhile.
                        while let Err(mpsc::RecvTimeoutError::Timeout) =
                            receiver.recv_timeout(FLUSH_INTERVAL / 2)
                        {
                            let mut guard = shared.lock().unwrap_or_else(|e| e.into_inner());
                            if guard.dirty && guard.failed.is_none() {
                                match guard.out.flush() {
                                    Ok(()) => guard.dirty = false,
                                    Err(e) => guard.failed = Some(e),
                                }
                            }
                        }
                    })
                    .map_err(|source| Error::Io {
                        action: "cannot start the flusher thread for transcript",
                        path: path.to_path_buf(),
                        source,
                    })?;
                (Some(sender), Some(handle))
            }
        };
        Ok(TranscriptWriter {
            shared,
            path: path.to_path_buf(),
            flush,
            stop,
            flusher,
            line: Vec::with_capacity(1 << 10),
        })
    }

    fn io_error(&self, source: std::io::Error) -> Error {
        Error::Io {
            action: "cannot write transcript",
            path: self.path.clone(),
            source,
        }
    }

    fn write_record(&mut self, record: &RecordRef<'_>, flush_now: bool) -> Result<(), Error> {
        self.line.clear();
        serde_json::to_writer(&mut self.line, record)
            .map_err(|e| self.io_error(std::io::Error::other(e)))?;
        self.line.push(b'\n');
        let mut guard = self.shared.lock().unwrap_or_else(|e| e.into_inner());
        if let Some(e) = guard.failed.take() {
            drop(guard);
            return Err(self.io_error(e));
        }
        let result = guard.out.write_all(&self.line).and_then(|_| {
            if flush_now || self.flush == Flush::EveryRecord {
                guard.dirty = false;
                guard.out.flush()
            } else {
                guard.dirty = true;
                Ok(())
            }
        });
        drop(guard);
        result.map_err(|e| self.io_error(e))
    }

    /// Writes the header record and flushes.
    pub fn write_header(&mut self, header: &Header) -> Result<(), Error> {
        self.write_record(&RecordRef::Header(header), true)
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
        self.write_record(
            &RecordRef::Query(QueryRecordRef {
                index,
                point,
                answer,
            }),
            false,
        )
    }

    /// Writes the final record and flushes.
    pub fn write_final(&mut self, record: &FinalRecord) -> Result<(), Error> {
        self.write_record(&RecordRef::Final(record), true)
    }

    /// Flushes what is buffered.
    pub fn flush(&mut self) -> Result<(), Error> {
        let mut guard = self.shared.lock().unwrap_or_else(|e| e.into_inner());
        let result = match guard.failed.take() {
            Some(e) => Err(e),
            None => guard.out.flush(),
        };
        guard.dirty = false;
        drop(guard);
        result.map_err(|e| self.io_error(e))
    }
}

impl Drop for TranscriptWriter {
    fn drop(&mut self) {
        drop(self.stop.take());
        if let Some(handle) = self.flusher.take() {
            let _ = handle.join();
        }
        let mut guard = self.shared.lock().unwrap_or_else(|e| e.into_inner());
        let _ = guard.out.flush();
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
