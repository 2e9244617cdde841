//! The limits every transcript line must respect, checked before a line is parsed, so
//! that any input is judged or refused in time roughly linear in its size. The same
//! limits, with the same meaning, are checked by `tools/check_certificate.py`.
//!
//! - a line holds at most [`MAX_LINE_BYTES`] bytes (without its line break); a longer
//!   line is refused as soon as the limit is passed, without reading the rest of it;
//! - arrays and objects nest at most [`MAX_DEPTH`] deep (a transcript needs 9);
//! - a plain JSON number is at most [`MAX_NUMBER_CHARS`] characters long (the shortest
//!   round-trip form of an `f64` has at most 24);
//! - no object repeats a key (keys compared after decoding their escapes);
//! - an exact number's `exact` text has at most
//!   [`MAX_EXACT_DIGITS`](crate::exact::MAX_EXACT_DIGITS) digits in its numerator and in
//!   its denominator (checked when the number is read, [`crate::exact`]).

use std::borrow::Cow;
use std::collections::HashSet;

/// Most bytes in one transcript line (64 MiB), line break excluded.
pub const MAX_LINE_BYTES: usize = 64 << 20;

/// Deepest nesting of arrays and objects in one line (the record envelope counts 1).
pub const MAX_DEPTH: usize = 32;

/// Most characters in one plain JSON number token.
pub const MAX_NUMBER_CHARS: usize = 100;

/// Beyond this many keys an object's keys are tracked in a hash set.
const LINEAR_KEYS: usize = 16;

/// One open array or object.
struct Frame<'a> {
    object: bool,
    expect_key: bool,
    keys: Vec<Cow<'a, [u8]>>,
    set: Option<HashSet<Cow<'a, [u8]>>>,
}

impl<'a> Frame<'a> {
    /// Records a key; `false` when the object already has it.
    fn insert(&mut self, key: Cow<'a, [u8]>) -> bool {
        if let Some(set) = &mut self.set {
            return set.insert(key);
        }
        if self.keys.contains(&key) {
            return false;
        }
        self.keys.push(key);
        if self.keys.len() > LINEAR_KEYS {
            self.set = Some(self.keys.drain(..).collect());
        }
        true
    }
}

/// Checks the nesting depth, the length of every number token and that no object
/// repeats a key, in one pass over the bytes of a line. Lines that are not JSON at all
/// pass or fail here as it happens; the JSON parser then reports what is wrong.
pub fn check_line_shape(line: &[u8]) -> Result<(), String> {
    let mut stack: Vec<Frame<'_>> = Vec::new();
    let mut i = 0;
    while i < line.len() {
        match line[i] {
            b'"' => {
                let start = i + 1;
                let mut j = start;
                let mut escaped = false;
                while j < line.len() && line[j] != b'"' {
                    if line[j] == b'\\' {
                        escaped = true;
                        j += 1;
                    }
                    j += 1;
                }
                let end = j.min(line.len());
                if let Some(frame) = stack.last_mut() {
                    if frame.object && frame.expect_key {
                        frame.expect_key = false;
                        let raw = &line[start..end];
                        let key = if escaped {
                            match serde_json::from_slice::<String>(
                                &line[i..(end + 1).min(line.len())],
                            ) {
                                Ok(text) => Cow::Owned(text.into_bytes()),
                                // Not a valid string: the parser reports it.
                                Err(_) => return Ok(()),
                            }
                        } else {
                            Cow::Borrowed(raw)
                        };
                        if !frame.insert(key.clone()) {
                            return Err(format!(
                                "an object repeats the key {:?}",
                                String::from_utf8_lossy(&key)
                            ));
                        }
                    }
                }
                i = end + 1;
            }
            open @ (b'{' | b'[') => {
                if stack.len() == MAX_DEPTH {
                    return Err(format!(
                        "arrays and objects nest deeper than {MAX_DEPTH} levels"
                    ));
                }
                stack.push(Frame {
                    object: open == b'{',
                    expect_key: open == b'{',
                    keys: Vec::new(),
                    set: None,
                });
                i += 1;
            }
            b'}' | b']' => {
                stack.pop();
                i += 1;
            }
            b',' => {
                if let Some(frame) = stack.last_mut() {
                    frame.expect_key = frame.object;
                }
                i += 1;
            }
            b'-' | b'0'..=b'9' => {
                let start = i;
                while i < line.len()
                    && matches!(line[i], b'0'..=b'9' | b'-' | b'+' | b'.' | b'e' | b'E')
                {
                    i += 1;
                }
                if i - start > MAX_NUMBER_CHARS {
                    return Err(format!(
                        "a number is written with {} characters, more than the limit of \
                         {MAX_NUMBER_CHARS}",
                        i - start
                    ));
                }
            }
            _ => i += 1,
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ordinary_lines_pass() {
        let line = br#"{"type":"query","data":{"index":1,"point":[0.5,-1e-3],"answer":{"kind":"cut","normal":{"axis":0,"sign":-1},"offset":{"exact":"1/3","approx":0.3333333333333333}}}}"#;
        assert_eq!(check_line_shape(line), Ok(()));
        // The same key in different objects is fine; `true`, `false`, `null` are not
        // numbers.
        let line = br#"{"a":{"a":1},"b":[{"a":true},{"a":false}],"c":null}"#;
        assert_eq!(check_line_shape(line), Ok(()));
    }

    #[test]
    fn repeated_keys_are_found_also_when_escaped_or_many() {
        assert!(check_line_shape(br#"{"a":1,"b":2,"a":3}"#).is_err());
        assert!(check_line_shape(br#"{"x":{"ab":1,"a\u0062":2}}"#).is_err());
        // A key equal to a value elsewhere is not a repeat.
        assert_eq!(check_line_shape(br#"{"k":"a","a":"k"}"#), Ok(()));
        let many: Vec<String> = (0..100).map(|k| format!("\"k{k}\":{k}")).collect();
        let line = format!("{{{},\"k57\":0}}", many.join(","));
        assert!(check_line_shape(line.as_bytes()).is_err());
        let line = format!("{{{}}}", many.join(","));
        assert_eq!(check_line_shape(line.as_bytes()), Ok(()));
    }

    #[test]
    fn depth_and_number_length_are_limited() {
        let deep = format!("{}{}", "[".repeat(MAX_DEPTH), "]".repeat(MAX_DEPTH));
        assert_eq!(check_line_shape(deep.as_bytes()), Ok(()));
        let deeper = format!("{}{}", "[".repeat(MAX_DEPTH + 1), "]".repeat(MAX_DEPTH + 1));
        assert!(check_line_shape(deeper.as_bytes()).is_err());
        let long = format!("[1e{}]", "0".repeat(MAX_NUMBER_CHARS));
        assert!(check_line_shape(long.as_bytes()).is_err());
        let fits = format!("[{}]", "1".repeat(MAX_NUMBER_CHARS));
        assert_eq!(check_line_shape(fits.as_bytes()), Ok(()));
        // Digits inside strings are not numbers.
        let text = format!("[\"{}\"]", "1".repeat(10 * MAX_NUMBER_CHARS));
        assert_eq!(check_line_shape(text.as_bytes()), Ok(()));
    }
}
