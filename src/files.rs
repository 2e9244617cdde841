//! Reading the small text files of the tool (scenarios, expectations, a scenario's copy
//! in a results folder, witness files) with a size cap, so that a wrong path such as
//! `/dev/zero` or a huge file is refused with a sentence instead of read until memory
//! runs out.

use std::io::Read;
use std::path::Path;

use crate::error::Error;

/// The most bytes a scenario or expectation file may hold (1 MiB).
pub const MAX_SMALL_FILE: u64 = 1 << 20;

/// Reads `path` as UTF-8 text of at most `cap` bytes; `what` names the file in errors
/// ("scenario", "expectation file", ...).
pub fn read_capped(path: &Path, cap: u64, what: &str) -> Result<String, Error> {
    let file = std::fs::File::open(path).map_err(|source| Error::Io {
        action: "cannot read",
        path: path.to_path_buf(),
        source,
    })?;
    let mut bytes = Vec::new();
    file.take(cap + 1)
        .read_to_end(&mut bytes)
        .map_err(|source| Error::Io {
            action: "cannot read",
            path: path.to_path_buf(),
            source,
        })?;
    if bytes.len() as u64 > cap {
        return Err(Error::InvalidSetting {
            name: "input file",
            reason: format!(
                "{}: this {what} is larger than {cap} bytes (is it the right file?)",
                path.display()
            ),
        });
    }
    String::from_utf8(bytes).map_err(|e| Error::InvalidSetting {
        name: "input file",
        reason: format!(
            "{}: this {what} is not UTF-8 text (bad byte at offset {})",
            path.display(),
            e.utf8_error().valid_up_to()
        ),
    })
}
