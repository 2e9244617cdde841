//! Reading transcripts line by line.

use std::fs::File;
use std::io::{BufRead, BufReader};
use std::path::{Path, PathBuf};

use crate::error::Error;
use crate::transcript::records::Record;

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
