//! The transcript file: JSON Lines, one record a line, each `{"type": T, "data": D}`.
//!
//! Format version 1:
//! 1. `{"type":"header","data":{"format":1,"tool":"naysayer 0.1.0","class":{...},
//!    "adversary":"halving","method":"midpoint","seed":0,"budget":1000000}}`; the class
//!    is `{"kind":"feasibility","dim":d,"half_width":R,"rho":rho,"promise":"may-be-empty"}`
//!    (or `"nonempty"`).
//! 2. One `query` record per query, in order:
//!    `{"type":"query","data":{"index":i,"point":[x_1,...],"answer":A}}` with `i` counting
//!    from 1 and `A` either `{"kind":"inside"}` or
//!    `{"kind":"cut","normal":N,"offset":B}`: the strict cut `{y : N.y < B}`. `N` is a
//!    dense array of numbers or `{"axis":i,"sign":s}` (s = +1 or -1; axis from 0).
//! 3. One `final` record: `{"type":"final","data":{"queries_used":T,"ending":E,
//!    "certificate":C}}` with `E` one of `{"kind":"output","output":{"kind":"empty"}}`,
//!    `{"kind":"output","output":{"kind":"point","point":[...]}}`,
//!    `{"kind":"budget-exhausted"}`, `{"kind":"method-failed","reason":"..."}`, and `C`
//!    either `null` or `{"schema":S,"prefix":T*,"instances":[W,...]}`: witnesses that
//!    agree with the first `T*` answers, in certificate schema `S`
//!    ([`CERTIFICATE_SCHEMA`]; absent in files written before the key existed, read as
//!    schema 1; an unknown schema is refused). A witness is `{"kind":"empty"}` or
//!    `{"kind":"ball","center":[c_1,...],"radius":rho}`.
//!
//! Lattice classes (THEORY.md 4): the class is `{"kind":"lattice","lower":[l_1,...],
//! "upper":[u_1,...],"cont_dim":d,"half_width":R,"rho":rho}` (integer box
//! prod {l_i..u_i}, continuous box [-R, R]^d; d = 0 is pure integer feasibility). Query
//! points have n + d coordinates, integer part first; answers are `inside` or cuts as
//! above (lifted cuts are dense normals of exact `f64` powers of two with an exact
//! offset). A lattice witness is `{"kind":"empty"}` or `{"kind":"lattice-hull",
//! "points":[[...],...],"fibre":F}`: K = conv(points cup fibre), with `F` either `null`
//! or `{"integer":[v_1,...],"center":[c_1,...],"radius":rho}` (the fibre ball
//! {v} x B(c, rho); `center` is empty when d = 0). Its claim: its mixed-integer points
//! are exactly the fibre ball (none when `F` is `null`).
//!
//! Numbers: every JSON number is the exact value of the `f64` it parses to (writers use
//! shortest round-trip formatting). Adversary-computed numbers that no `f64` holds
//! (offsets, centres) are `{"exact":"p/q","approx":f}` with `approx` the nearest `f64`
//! (see [`crate::exact::Exact`]). Non-finite numbers are never written: a non-finite
//! coordinate is rejected before it reaches the file.
//!
//! Durability (DESIGN.md): in-process games buffer and flush at least once a second
//! and at the end; [`Flush::EveryRecord`] flushes after every record (for external
//! methods, which may not be replayable).

use std::fs::File;
use std::io::{BufRead, BufReader, BufWriter, Write};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use serde::{Deserialize, Serialize};

use crate::adversary::Adversary;
use crate::error::Error;
use crate::game::{FinalRecord, Header, Observer};
use crate::oracle::{Answer, Normal};

/// The transcript format version this build writes and reads.
pub const FORMAT_VERSION: u32 = 1;

/// The certificate schema version this build writes: the `schema` key of the final
/// record's `certificate`, versioned separately from [`FORMAT_VERSION`] so that the
/// witness kinds can change while the record layout stays (changelog in the README).
pub const CERTIFICATE_SCHEMA: u32 = 1;

/// Every certificate schema version this build reads (old certificates stay checkable;
/// a certificate without `schema` is schema 1).
pub const CERTIFICATE_SCHEMAS_READ: &[u32] = &[1];

/// One query record.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct QueryRecord {
    /// 1-based query number.
    pub index: u64,
    /// The query point.
    pub point: Vec<f64>,
    /// The oracle's answer.
    pub answer: Answer,
}

#[derive(Serialize)]
struct QueryRecordRef<'a> {
    index: u64,
    point: &'a [f64],
    answer: &'a Answer,
}

/// One line of a transcript.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "type", content = "data", rename_all = "kebab-case")]
pub enum Record {
    /// First line.
    Header(Header),
    /// One exchange.
    Query(QueryRecord),
    /// Last line.
    Final(FinalRecord),
}

#[derive(Serialize)]
#[serde(tag = "type", content = "data", rename_all = "kebab-case")]
enum RecordRef<'a> {
    Header(&'a Header),
    Query(QueryRecordRef<'a>),
    Final(&'a FinalRecord),
}

/// When the writer flushes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Flush {
    /// At least once a second, and at the end.
    Periodic,
    /// After every record.
    EveryRecord,
}

/// Writes a transcript as the game goes (an [`Observer`]).
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

    /// Gives back the writer.
    pub fn into_inner(self) -> W {
        self.out
    }
}

impl<W: Write> Observer for TranscriptWriter<W> {
    fn on_start(&mut self, header: &Header) -> Result<(), Error> {
        self.write_record(&RecordRef::Header(header))?;
        self.flush_now()
    }

    fn on_query(
        &mut self,
        index: u64,
        query: &[f64],
        answer: &Answer,
        _adversary: &dyn Adversary,
    ) -> Result<(), Error> {
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
            point: query,
            answer,
        }))
    }

    fn on_finish(&mut self, record: &FinalRecord) -> Result<(), Error> {
        self.write_record(&RecordRef::Final(record))?;
        self.flush_now()
    }
}

/// Keeps the whole transcript in memory (an [`Observer`]).
#[derive(Clone, Debug, Default)]
pub struct MemoryTranscript {
    /// The records, header first.
    pub records: Vec<Record>,
}

impl Observer for MemoryTranscript {
    fn on_start(&mut self, header: &Header) -> Result<(), Error> {
        self.records.push(Record::Header(header.clone()));
        Ok(())
    }

    fn on_query(
        &mut self,
        index: u64,
        query: &[f64],
        answer: &Answer,
        _adversary: &dyn Adversary,
    ) -> Result<(), Error> {
        self.records.push(Record::Query(QueryRecord {
            index,
            point: query.to_vec(),
            answer: answer.clone(),
        }));
        Ok(())
    }

    fn on_finish(&mut self, record: &FinalRecord) -> Result<(), Error> {
        self.records.push(Record::Final(record.clone()));
        Ok(())
    }
}

/// Parses one transcript line; `line` (1-based) goes into the error.
pub fn parse_line(text: &str, line: u64) -> Result<Record, Error> {
    serde_json::from_str(text).map_err(|e| Error::Transcript {
        line,
        reason: format!("not a valid record: {e}"),
    })
}

/// Reads a transcript file line by line, yielding `(line number, record)`.
pub struct TranscriptReader {
    lines: std::io::Lines<BufReader<File>>,
    line: u64,
    path: PathBuf,
}

impl TranscriptReader {
    /// Opens `path`.
    pub fn open(path: &Path) -> Result<TranscriptReader, Error> {
        let file = File::open(path).map_err(|source| Error::Io {
            action: "cannot read transcript",
            path: path.to_path_buf(),
            source,
        })?;
        Ok(TranscriptReader {
            lines: BufReader::with_capacity(1 << 16, file).lines(),
            line: 0,
            path: path.to_path_buf(),
        })
    }
}

impl Iterator for TranscriptReader {
    type Item = Result<(u64, Record), Error>;

    fn next(&mut self) -> Option<Self::Item> {
        let text = self.lines.next()?;
        self.line += 1;
        let line = self.line;
        Some(match text {
            Err(e) if e.kind() == std::io::ErrorKind::InvalidData => Err(Error::Transcript {
                line,
                reason: "not valid UTF-8".into(),
            }),
            Err(source) => Err(Error::Io {
                action: "cannot read transcript",
                path: self.path.clone(),
                source,
            }),
            Ok(text) => parse_line(&text, line).map(|r| (line, r)),
        })
    }
}
