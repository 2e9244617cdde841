//! Verification as a game is played, without keeping the transcript: `naysayer play`
//! without `-t` uses it instead of holding every record in memory.
//!
//! The witnesses are only known at the end of a game, so each answer is checked in two
//! parts: what needs no witness (the cut excludes its query, the subgradient is within
//! L, ...) at once, and the agreement with every witness at the end. For the second part
//! only what it reads is kept: the answer, and the query point only when the class
//! needs it ([`ClassVerifier::agree_reads_point`]; an axis cut needs none). Once that
//! exceeds [`SPOOL_BYTES`], it goes to a temporary file (JSON Lines, removed afterwards)
//! and is read back at the end, so memory stays flat however long the game.
//!
//! The verdict is the one [`crate::certificate::verify_file`] gives on the same
//! transcript; when both parts fail somewhere, the first failure of the first part is
//! the one reported.

use std::path::PathBuf;

use crate::certificate::driver::Checker;
use crate::certificate::{ClassVerifier, Verdict};
use crate::error::Error;
use crate::oracle::Answer;
use crate::transcript::{FinalRecord, Flush, Header, Record, TranscriptReader, TranscriptWriter};

/// Estimated bytes of kept answers beyond which they go to a temporary file.
pub const SPOOL_BYTES: usize = 8 << 20;

/// One kept answer: its index, the point (empty when not needed) and the answer.
type Kept = (u64, Vec<f64>, Answer);

/// A temporary transcript file, removed when dropped.
struct Spool {
    path: PathBuf,
    writer: Option<TranscriptWriter>,
}

impl Drop for Spool {
    fn drop(&mut self) {
        self.writer = None;
        let _ = std::fs::remove_file(&self.path);
    }
}

impl Spool {
    fn create() -> Result<Spool, Error> {
        use std::sync::atomic::{AtomicU64, Ordering};
        static COUNTER: AtomicU64 = AtomicU64::new(0);
        let nanos = std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .map_or(0, |d| d.subsec_nanos());
        let name = format!(
            "naysayer-verify-{}-{nanos}-{}.jsonl",
            std::process::id(),
            COUNTER.fetch_add(1, Ordering::Relaxed)
        );
        let path = std::env::temp_dir().join(name);
        let file = std::fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&path)
            .map_err(|source| Error::Io {
                action: "cannot create a temporary file for verification",
                path: path.clone(),
                source,
            })?;
        Ok(Spool {
            writer: Some(TranscriptWriter::from_file(file, &path, Flush::Periodic)?),
            path,
        })
    }

    fn write(&mut self, (index, point, answer): &Kept) -> Result<(), Error> {
        match &mut self.writer {
            Some(writer) => writer.write_query(*index, point, answer),
            None => Ok(()),
        }
    }

    /// Flushes and closes the file for reading.
    fn close(&mut self) -> Result<(), Error> {
        if let Some(mut writer) = self.writer.take() {
            writer.flush()?;
        }
        Ok(())
    }
}

/// Verifies a game as it is played (see the module docs): [`StreamingVerifier::start`]
/// with the header, [`StreamingVerifier::query`] for every answer, then
/// [`StreamingVerifier::finish`] with the final record, and [`StreamingVerifier::verdict`].
/// A failed check is kept and reported by the verdict; it never stops the game.
#[derive(Default)]
pub struct StreamingVerifier {
    checker: Option<Checker>,
    failure: Option<Error>,
    kept: Vec<Kept>,
    kept_bytes: usize,
    spool: Option<Spool>,
    verdict: Option<Result<Verdict, Error>>,
}

/// A rough size of a kept answer, heap included.
fn size_of_kept(point: &[f64], answer: &Answer) -> usize {
    let exact = |x: &crate::exact::Exact| match x {
        crate::exact::Exact::Float(_) => 0,
        crate::exact::Exact::Ratio(r) => 32 + (r.numer().bits() + r.denom().bits()) as usize / 8,
    };
    let answer_heap = match answer {
        Answer::Inside => 0,
        Answer::Cut(cut) => cut.normal.dense_len().unwrap_or(0) * 8 + exact(&cut.offset),
        Answer::FirstOrder(fo) => {
            fo.subgradient.len() * std::mem::size_of::<crate::exact::Exact>()
                + fo.subgradient.iter().map(exact).sum::<usize>()
                + exact(&fo.value)
        }
    };
    std::mem::size_of::<Kept>() + point.len() * 8 + answer_heap
}

impl StreamingVerifier {
    /// A verifier waiting for the header.
    pub fn new() -> StreamingVerifier {
        StreamingVerifier::default()
    }

    fn fail(&mut self, error: Error) {
        if self.failure.is_none() {
            self.failure = Some(error);
        }
        self.kept = Vec::new();
        self.spool = None;
    }

    /// Checks the header.
    pub fn start(&mut self, header: &Header) {
        match Checker::start(header.clone()) {
            Ok(checker) => self.checker = Some(checker),
            Err(e) => self.fail(e),
        }
    }

    /// Checks one answer without the witnesses and keeps what the witness checks need.
    pub fn query(&mut self, index: u64, point: &[f64], answer: &Answer) {
        if self.failure.is_some() {
            return;
        }
        let Some(checker) = self.checker.as_mut() else {
            return;
        };
        let line = index + 1;
        if let Err(e) = checker.answer(line, index, point, answer) {
            return self.fail(e);
        }
        let point = if checker.inner().agree_reads_point(answer) {
            point.to_vec()
        } else {
            Vec::new()
        };
        self.kept_bytes += size_of_kept(&point, answer);
        self.kept.push((index, point, answer.clone()));
        if self.kept_bytes > SPOOL_BYTES {
            if let Err(e) = self.spill() {
                self.fail(e);
            }
        }
    }

    /// Moves the kept answers to the temporary file.
    fn spill(&mut self) -> Result<(), Error> {
        if self.spool.is_none() {
            self.spool = Some(Spool::create()?);
        }
        let spool = self.spool.as_mut().expect("created");
        for kept in self.kept.drain(..) {
            spool.write(&kept)?;
        }
        self.kept_bytes = 0;
        Ok(())
    }

    /// Takes the final record: checks it, then every kept answer of the certified prefix
    /// against the witnesses, and forms the verdict.
    pub fn finish(&mut self, record: &FinalRecord) {
        self.verdict = Some(self.judge(record));
        self.kept = Vec::new();
        self.spool = None;
    }

    fn judge(&mut self, record: &FinalRecord) -> Result<Verdict, Error> {
        if let Some(e) = self.failure.take() {
            return Err(e);
        }
        let mut checker = self.checker.take().ok_or(Error::Transcript {
            line: 1,
            reason: "no header".into(),
        })?;
        let final_line = record.queries_used + 2;
        checker.attach(record.clone(), final_line)?;
        let prefix = checker.prefix();
        if let Some(spool) = &mut self.spool {
            spool.close()?;
            for item in TranscriptReader::open(&spool.path)? {
                let (_, record) = item?;
                let Record::Query(q) = record else { continue };
                if q.index > prefix {
                    break;
                }
                agree(checker.inner(), q.index, &q.point, &q.answer)?;
            }
        }
        for (index, point, answer) in &self.kept {
            if *index > prefix {
                break;
            }
            agree(checker.inner(), *index, point, answer)?;
        }
        checker.end(final_line)?;
        checker.finish(final_line)
    }

    /// The verdict (an error names the transcript line the check would blame in a file
    /// written from the same game).
    pub fn verdict(self) -> Result<Verdict, Error> {
        self.verdict.unwrap_or(Err(Error::Transcript {
            line: 1,
            reason: "the game did not finish".into(),
        }))
    }
}

fn agree(
    inner: &mut dyn ClassVerifier,
    index: u64,
    point: &[f64],
    answer: &Answer,
) -> Result<(), Error> {
    inner.agree(index + 1, index, point, answer)
}
