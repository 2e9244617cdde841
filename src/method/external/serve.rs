//! The program's side of the protocol for a Rust [`Method`].

use std::io::{BufRead, Write};

use crate::class::Class;
use crate::error::Error;
use crate::method::Method;
use crate::oracle::{Output, Step};

use super::messages::{AnswerMessageOwned, GameHeader, MethodMessage};
use super::PROTOCOL_VERSION;

/// Speaks the program's side of the protocol for a Rust [`Method`]: reads the header
/// from `input`, builds the method with `build(class, seed)`, and plays until it stops.
/// This is what a compiled external method looks like (see
/// `examples/protocol_midpoint.rs`); a protocol error is returned, not panicked.
pub fn serve<B, R, W>(build: B, mut input: R, mut output: W) -> Result<(), Error>
where
    B: FnOnce(&Class, u64) -> Result<Box<dyn Method + Send>, Error>,
    R: BufRead,
    W: Write,
{
    let bad = |line: u64, reason: String| Error::Transcript { line, reason };
    let io = |e: std::io::Error| Error::Io {
        action: "cannot write to",
        path: "stdout".into(),
        source: e,
    };
    let mut text = String::new();
    let mut line_no = 0u64;
    let mut read = |text: &mut String| -> Result<u64, Error> {
        text.clear();
        let n = input.read_line(text).map_err(|e| Error::Io {
            action: "cannot read from",
            path: "stdin".into(),
            source: e,
        })?;
        line_no += 1;
        if n == 0 {
            return Err(bad(line_no, "naysayer closed the input".into()));
        }
        Ok(line_no)
    };
    let at = read(&mut text)?;
    let header: GameHeader = serde_json::from_str(text.trim_end())
        .map_err(|e| bad(at, format!("not a game header: {e}")))?;
    if header.protocol != PROTOCOL_VERSION {
        return Err(bad(
            at,
            format!(
                "protocol version {} is not {PROTOCOL_VERSION}",
                header.protocol
            ),
        ));
    }
    let mut out = Vec::with_capacity(256);
    let mut send = |out: &mut Vec<u8>, message: &MethodMessage| -> Result<(), Error> {
        out.clear();
        serde_json::to_writer(&mut *out, message).map_err(|e| io(std::io::Error::other(e)))?;
        out.push(b'\n');
        output.write_all(out).map_err(io)?;
        output.flush().map_err(io)
    };
    send(
        &mut out,
        &MethodMessage::Ready {
            protocol: PROTOCOL_VERSION,
        },
    )?;
    let mut method = match build(&header.class, header.seed) {
        Ok(m) => m,
        Err(e) => {
            return send(
                &mut out,
                &MethodMessage::Fail {
                    reason: e.to_string(),
                },
            )
        }
    };
    let mut query = vec![0.0; header.class.query_dim()];
    let mut message = MethodMessage::Query { point: Vec::new() };
    loop {
        let step = match method.next(&mut query) {
            Ok(step) => step,
            Err(e) => {
                return send(
                    &mut out,
                    &MethodMessage::Fail {
                        reason: e.to_string(),
                    },
                )
            }
        };
        match step {
            Step::Output(Output::Empty) => return send(&mut out, &MethodMessage::Empty),
            Step::Output(Output::Point { point }) => {
                return send(&mut out, &MethodMessage::Output { point })
            }
            Step::Query => {
                if let MethodMessage::Query { point } = &mut message {
                    point.clear();
                    point.extend_from_slice(&query);
                }
                send(&mut out, &message)?;
            }
        }
        let at = read(&mut text)?;
        let reply: AnswerMessageOwned = serde_json::from_str(text.trim_end())
            .map_err(|e| bad(at, format!("not an answer: {e}")))?;
        if reply.msg != "answer" {
            return Err(bad(at, format!("expected an answer, got {:?}", reply.msg)));
        }
        let _ = reply.index;
        if let Err(e) = method.observe(&query, &reply.answer) {
            return send(
                &mut out,
                &MethodMessage::Fail {
                    reason: e.to_string(),
                },
            );
        }
    }
}
