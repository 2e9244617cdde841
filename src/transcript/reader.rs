//! Reading transcripts line by line, within the limits of [`crate::transcript::limits`].

use std::fs::File;
use std::io::{BufRead, BufReader, Read, Seek, SeekFrom};
use std::path::{Path, PathBuf};

use crate::error::Error;
use crate::transcript::limits::{check_line_shape, MAX_LINE_BYTES};
use crate::transcript::records::Record;

/// Parses one transcript line; `line` (1-based) goes into the error. The line's shape
/// (nesting, number lengths, repeated keys) is checked first.
pub fn parse_line(text: &str, line: u64) -> Result<Record, Error> {
    check_line_shape(text.as_bytes()).map_err(|reason| Error::Transcript { line, reason })?;
    serde_json::from_str(text).map_err(|e| Error::Transcript {
        line,
        reason: format!("not a valid record: {e}"),
    })
}

/// The error for a line longer than [`MAX_LINE_BYTES`].
pub fn line_too_long(line: u64) -> Error {
    Error::Transcript {
        line,
        reason: format!(
            "the line is longer than {MAX_LINE_BYTES} bytes (the limit of a transcript \
             line); refused without reading the rest of it"
        ),
    }
}

/// Reads the next line of `reader` into `buffer` (line break removed, and a `\r`
/// before it), reading at most [`MAX_LINE_BYTES`] + 1 bytes of it. `Ok(false)` at the end
/// of the input; `Err(true)` when the line is too long, `Err(false)` with the I/O error
/// kept in `io` otherwise.
fn read_bounded_line<R: BufRead>(
    reader: &mut R,
    buffer: &mut Vec<u8>,
    io: &mut Option<std::io::Error>,
) -> Result<bool, bool> {
    buffer.clear();
    let mut any = false;
    loop {
        let available = match reader.fill_buf() {
            Ok(bytes) => bytes,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
            Err(e) => {
                *io = Some(e);
                return Err(false);
            }
        };
        if available.is_empty() {
            break;
        }
        any = true;
        let (take, done) = match available.iter().position(|b| *b == b'\n') {
            Some(at) => (at, true),
            None => (available.len(), false),
        };
        if buffer.len() + take > MAX_LINE_BYTES + 1 {
            return Err(true);
        }
        buffer.extend_from_slice(&available[..take]);
        reader.consume(if done { take + 1 } else { take });
        if done {
            break;
        }
    }
    if buffer.last() == Some(&b'\r') {
        buffer.pop();
    }
    if buffer.len() > MAX_LINE_BYTES {
        return Err(true);
    }
    Ok(any)
}

/// Reads a transcript file line by line, yielding `(line number, record)`; a line
/// longer than [`MAX_LINE_BYTES`] is an error (and ends the reading).
pub struct TranscriptReader {
    reader: BufReader<File>,
    buffer: Vec<u8>,
    line: u64,
    path: PathBuf,
    done: bool,
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
            reader: BufReader::with_capacity(1 << 16, file),
            buffer: Vec::new(),
            line: 0,
            path: path.to_path_buf(),
            done: false,
        })
    }
}

impl Iterator for TranscriptReader {
    type Item = Result<(u64, Record), Error>;

    fn next(&mut self) -> Option<Self::Item> {
        if self.done {
            return None;
        }
        let mut io = None;
        let read = read_bounded_line(&mut self.reader, &mut self.buffer, &mut io);
        if matches!(read, Ok(false)) {
            self.done = true;
            return None;
        }
        self.line += 1;
        let line = self.line;
        Some(match read {
            Ok(_) => match std::str::from_utf8(&self.buffer) {
                Ok(text) => parse_line(text, line).map(|r| (line, r)),
                Err(_) => Err(Error::Transcript {
                    line,
                    reason: "not valid UTF-8".into(),
                }),
            },
            Err(too_long) => {
                self.done = true;
                if too_long {
                    Err(line_too_long(line))
                } else {
                    Err(Error::Io {
                        action: "cannot read transcript",
                        path: self.path.clone(),
                        source: io.unwrap_or_else(|| std::io::Error::other("read failed")),
                    })
                }
            }
        })
    }
}

/// The last line of a file, found in one streaming pass that keeps no line in memory:
/// `(number of that line, its text)`. A final line break ends the last line (it does
/// not start an empty one). A line longer than [`MAX_LINE_BYTES`] is refused as soon as
/// the limit is passed, naming its number; `Ok(None)` for an empty file.
pub fn last_line(path: &Path) -> Result<Option<(u64, Vec<u8>)>, Error> {
    let io_error = |source| Error::Io {
        action: "cannot read transcript",
        path: path.to_path_buf(),
        source,
    };
    let mut file = File::open(path).map_err(io_error)?;
    let mut chunk = vec![0u8; 1 << 16];
    // Lines completed so far, and the start and length of the line being read.
    let mut completed = 0u64;
    let (mut start, mut length) = (0u64, 0usize);
    let (mut last_start, mut last_length) = (0u64, 0usize);
    let mut offset = 0u64;
    loop {
        let n = match file.read(&mut chunk) {
            Ok(0) => break,
            Ok(n) => n,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
            Err(e) => return Err(io_error(e)),
        };
        let mut from = 0;
        while let Some(at) = chunk[from..n].iter().position(|b| *b == b'\n') {
            length += at;
            if length > MAX_LINE_BYTES + 1 {
                return Err(line_too_long(completed + 1));
            }
            completed += 1;
            (last_start, last_length) = (start, length);
            from += at + 1;
            start = offset + from as u64;
            length = 0;
        }
        length += n - from;
        if length > MAX_LINE_BYTES + 1 {
            return Err(line_too_long(completed + 1));
        }
        offset += n as u64;
    }
    let (number, at, size) = if length > 0 {
        (completed + 1, start, length)
    } else if completed > 0 {
        (completed, last_start, last_length)
    } else {
        return Ok(None);
    };
    file.seek(SeekFrom::Start(at)).map_err(io_error)?;
    let mut text = vec![0u8; size];
    file.read_exact(&mut text).map_err(io_error)?;
    if text.last() == Some(&b'\r') {
        text.pop();
    }
    if text.len() > MAX_LINE_BYTES {
        return Err(line_too_long(number));
    }
    Ok(Some((number, text)))
}
