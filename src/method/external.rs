//! External methods: any program that speaks naysayer's line protocol is a [`Method`].
//!
//! naysayer starts the program from an argv list (no shell), in its own process group,
//! with pipes on its stdin, stdout and stderr. Every message is one JSON object on one
//! line (UTF-8, ended by `\n`), tagged by its `"msg"` field. Protocol version 1:
//!
//! **naysayer to the program** (its stdin):
//! 1. once, first: the game header
//!    `{"msg":"game","protocol":1,"class":C,"oracle":O,"query_dim":D,"integer_dim":N,
//!    "box":{"lower":[...],"upper":[...]},"accuracy":A,"budget":B,"seed":S}`.
//!    `C` is the class exactly as the transcript header writes it (its `kind` is
//!    `feasibility`, `first-order` or `lattice`, with every parameter; see
//!    [`crate::transcript`]); `O` is `"separation"` or `"first-order"`; `D` is the
//!    length of every point; the first `N` coordinates are integer ones (lattice
//!    classes; an output must have them exactly integral; 0 otherwise); `box` is the
//!    box X coordinate by coordinate; `A` is `{"name":"rho","value":r}` (separation
//!    classes, and lattice classes with continuous coordinates),
//!    `{"name":"eps","value":e}` (first-order) or `null` (pure integer classes); `B` is
//!    the query budget (asking for query B + 1 ends the game as censored) and `S` the
//!    seed of the game.
//! 2. after each query: `{"msg":"answer","index":i,"answer":A}`, `i` counting queries
//!    from 1 and `A` exactly the transcript's answer: `{"kind":"inside"}`,
//!    `{"kind":"cut","normal":N,"offset":b}` (the strict cut {y : N.y < b}; `N` a dense
//!    array or `{"axis":i,"sign":s}` meaning s e_i, axis from 0), or
//!    `{"kind":"first-order","value":v,"subgradient":[...]}`.
//!    Numbers the adversary computed are exact rationals (docs/theory.md §0): a plain
//!    JSON number is exactly the `f64` it parses to; a value no `f64` holds is
//!    `{"exact":"p/q","approx":f}` with `approx` its nearest `f64`. A method may use
//!    either; the verifier always uses the exact value.
//!
//! **The program to naysayer** (its stdout):
//! 1. once, first, after reading the header: `{"msg":"ready","protocol":1}`, naming the
//!    protocol version it speaks (a program that does not read the header cannot know
//!    it, so ignoring the header is caught at once).
//! 2. then, repeatedly, one of
//!    - `{"msg":"query","point":[x_1,...,x_D]}`: ask about a point; naysayer answers;
//!    - `{"msg":"output","point":[x_1,...,x_D]}`: stop and claim this point;
//!    - `{"msg":"empty"}`: stop and claim that K is empty (holds no rho-ball);
//!    - `{"msg":"fail","reason":"..."}`: give up; the game ends as "method failed".
//!
//! After an output naysayer closes the program's stdin; the program should exit with
//! status 0 (a non-zero status then turns the game into "method failed"). Unknown
//! fields in the program's messages are errors; unknown fields in naysayer's messages
//! must be ignored by programs (later versions may add some).
//!
//! Robustness ([`ExternalSettings`]): each reply must arrive within the per-answer
//! time limit (default 30 s); lines are capped (default 1 MiB) and so is everything the
//! program writes on stdout and stderr together (default 1 GiB). Stderr is drained by
//! a thread and passed through to naysayer's stderr (the first 1 MiB by default). Any
//! violation (garbage, a non-finite number, a point of the wrong length, invalid UTF-8,
//! a partial last line, an early or non-zero exit, a timeout, a flood) ends the game as
//! "method failed" with a message naming the program's protocol line (1-based, counting
//! the lines it wrote) and what was wrong; the program's whole process group is killed
//! and reaped. With a transcript file, every record is flushed as it is written, so the
//! transcript up to the failure is on disk and verifies with `naysayer check`.
//!
//! An example exchange (d = 1, R = 1, rho = 0.25; `>` naysayer to the program, `<` the
//! program to naysayer):
//! ```text
//! > {"msg":"game","protocol":1,"class":{"kind":"feasibility","dim":1,"half_width":1.0,"rho":0.25,"promise":"may-be-empty"},"oracle":"separation","query_dim":1,"integer_dim":0,"box":{"lower":[-1.0],"upper":[1.0]},"accuracy":{"name":"rho","value":0.25},"budget":100,"seed":0}
//! < {"msg":"ready","protocol":1}
//! < {"msg":"query","point":[0.0]}
//! > {"msg":"answer","index":1,"answer":{"kind":"cut","normal":{"axis":0,"sign":1},"offset":0.0}}
//! < {"msg":"query","point":[-0.5]}
//! > {"msg":"answer","index":2,"answer":{"kind":"cut","normal":{"axis":0,"sign":1},"offset":-0.5}}
//! < {"msg":"empty"}
//! ```
//!
//! A first-order answer whose value no `f64` holds (from a game against `orthant`):
//! ```text
//! > {"msg":"answer","index":37,"answer":{"kind":"first-order","value":{"exact":"-24229210626892415/144115188075855872","approx":-0.16812392191542802},"subgradient":[-0.25,0.0]}}
//! ```
//!
//! [`serve`] speaks the program's side for a Rust [`Method`]; the Python client
//! `examples/python/naysayer_method.py` does the same for a Python ask/tell object.

use std::io::{BufRead, Read, Write};
use std::process::{Child, ChildStderr, ChildStdin, ChildStdout, Command, Stdio};
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

use serde::{Deserialize, Serialize};

use crate::class::Class;
use crate::error::Error;
use crate::method::Method;
use crate::oracle::{Answer, Output, Step};

/// The protocol version this build speaks.
pub const PROTOCOL_VERSION: u32 = 1;

/// Limits on an external program, validated once by [`ExternalSettings::validate`].
#[derive(Clone, Debug, PartialEq)]
pub struct ExternalSettings {
    /// Longest wait for each line the program owes (its `ready` reply, each query or
    /// output), counted from the moment naysayer has written what it answers to; the
    /// program is killed when it runs out. Default: 30 s.
    pub answer_timeout: Duration,
    /// Longest line the program may write, in bytes without the newline. Default: 1 MiB.
    pub max_line_bytes: usize,
    /// Most bytes the program may write on stdout and stderr together. Default: 1 GiB.
    pub max_output_bytes: u64,
    /// How much of the program's stderr is passed through to naysayer's stderr; the
    /// rest is drained and counted but not shown. Default: 1 MiB.
    pub stderr_pass_bytes: u64,
    /// How long the program may take to exit after its output. Default: 5 s.
    pub exit_grace: Duration,
}

impl Default for ExternalSettings {
    fn default() -> Self {
        ExternalSettings {
            answer_timeout: Duration::from_secs(30),
            max_line_bytes: 1 << 20,
            max_output_bytes: 1 << 30,
            stderr_pass_bytes: 1 << 20,
            exit_grace: Duration::from_secs(5),
        }
    }
}

impl ExternalSettings {
    /// Checks that every limit is usable (positive, and a line fits the output cap).
    pub fn validate(&self) -> Result<(), Error> {
        let bad = |reason: String| {
            Err(Error::InvalidSetting {
                name: "external method limits",
                reason,
            })
        };
        if self.answer_timeout.is_zero() {
            return bad("the per-answer time limit must be positive".into());
        }
        if self.max_line_bytes == 0 || self.max_output_bytes == 0 {
            return bad("the line and output caps must be positive".into());
        }
        Ok(())
    }
}

/// What naysayer sends first: the game header.
#[derive(Serialize)]
struct GameMessage<'a> {
    msg: &'static str,
    protocol: u32,
    class: &'a Class,
    oracle: &'static str,
    query_dim: usize,
    integer_dim: usize,
    #[serde(rename = "box")]
    bounds: Option<BoxMessage>,
    accuracy: Option<AccuracyMessage>,
    budget: u64,
    seed: u64,
}

/// The box X, coordinate by coordinate.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct BoxMessage {
    /// Lower bounds.
    pub lower: Vec<f64>,
    /// Upper bounds.
    pub upper: Vec<f64>,
}

/// The accuracy of the class: `rho` or `eps`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct AccuracyMessage {
    /// "rho" or "eps".
    pub name: String,
    /// Its value.
    pub value: f64,
}

/// The header as a program reads it (see the module docs); unknown fields are ignored.
#[derive(Clone, Debug, PartialEq, Deserialize)]
pub struct GameHeader {
    /// Protocol version.
    pub protocol: u32,
    /// The class.
    pub class: Class,
    /// The query budget.
    pub budget: u64,
    /// The game's seed.
    pub seed: u64,
}

#[derive(Serialize)]
struct AnswerMessage<'a> {
    msg: &'static str,
    index: u64,
    answer: &'a Answer,
}

#[derive(Deserialize)]
struct AnswerMessageOwned {
    msg: String,
    index: u64,
    answer: Answer,
}

/// A message from the program.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "msg", rename_all = "kebab-case", deny_unknown_fields)]
pub enum MethodMessage {
    /// The reply to the header.
    Ready {
        /// The protocol version the program speaks.
        protocol: u32,
    },
    /// Ask about a point.
    Query {
        /// The point.
        point: Vec<f64>,
    },
    /// Stop and claim a point.
    Output {
        /// The point.
        point: Vec<f64>,
    },
    /// Stop and claim that K is empty.
    Empty,
    /// Give up.
    Fail {
        /// Why.
        reason: String,
    },
}

/// The oracle kind, box and accuracy of a class, as the header states them.
fn class_facts(
    class: &Class,
) -> (
    &'static str,
    usize,
    Option<BoxMessage>,
    Option<AccuracyMessage>,
) {
    let accuracy = |name: &str, value: f64| {
        Some(AccuracyMessage {
            name: name.into(),
            value,
        })
    };
    match class {
        Class::Feasibility(c) => (
            "separation",
            0,
            Some(BoxMessage {
                lower: vec![-c.half_width; c.dim],
                upper: vec![c.half_width; c.dim],
            }),
            accuracy("rho", c.rho),
        ),
        Class::FirstOrder(c) => (
            "first-order",
            0,
            Some(BoxMessage {
                lower: vec![-c.half_width; c.dim],
                upper: vec![c.half_width; c.dim],
            }),
            accuracy("eps", c.eps),
        ),
        // No box: x_0 = 0 and ||x_0 - x*|| <= R; the class names R and the horizon T.
        Class::LargeScale(_) => ("first-order", 0, None, None),
        Class::Lattice(c) => {
            let mut lower: Vec<f64> = c.lower.iter().map(|l| *l as f64).collect();
            let mut upper: Vec<f64> = c.upper.iter().map(|u| *u as f64).collect();
            lower.extend(std::iter::repeat_n(-c.half_width, c.cont_dim));
            upper.extend(std::iter::repeat_n(c.half_width, c.cont_dim));
            let acc = if c.cont_dim > 0 {
                accuracy("rho", c.rho)
            } else {
                None
            };
            (
                "separation",
                c.int_dim(),
                Some(BoxMessage { lower, upper }),
                acc,
            )
        }
    }
}

/// The header line naysayer sends for a game (without the newline).
pub fn header_line(class: &Class, budget: u64, seed: u64) -> String {
    let (oracle, integer_dim, bounds, accuracy) = class_facts(class);
    let message = GameMessage {
        msg: "game",
        protocol: PROTOCOL_VERSION,
        class,
        oracle,
        query_dim: class.query_dim(),
        integer_dim,
        bounds,
        accuracy,
        budget,
        seed,
    };
    serde_json::to_string(&message).expect("the header serializes")
}

/// Where the game with the program stands.
enum State {
    /// Not started yet (started by the first [`Method::next`]).
    Idle,
    /// Running; the program owes its next line.
    Running(Box<Running>),
    /// Finished or failed; the program is gone.
    Done,
}

/// A running program: its pipes, its line reader, its stderr drain.
struct Running {
    child: Child,
    /// Guards killing the group against reaping the leader: `true` while the leader is
    /// not yet reaped, so its pid (the group id) cannot be reused.
    alive: Arc<Mutex<bool>>,
    stdin: Option<ChildStdin>,
    reader: LineReader,
    /// Bytes the program wrote (stdout and stderr).
    written: Arc<AtomicU64>,
    /// Set by the stderr drain when the output cap was crossed.
    flooded: Arc<AtomicBool>,
    drain: Option<std::sync::mpsc::Receiver<()>>,
    /// Reusable buffer for outgoing lines.
    out: Vec<u8>,
    /// Lines read from the program so far.
    lines: u64,
    /// Answers sent so far.
    answers: u64,
}

/// A program speaking the line protocol, played as a [`Method`] (see the module docs).
///
/// The program is started by the first call to [`Method::next`], so that a failure to
/// start it is recorded in the transcript like any other failure.
pub struct ExternalMethod {
    name: String,
    command: Vec<String>,
    header: String,
    dim: usize,
    integer_dim: usize,
    settings: ExternalSettings,
    state: State,
}

impl ExternalMethod {
    /// A method that runs `command` (program and arguments, no shell) on `class`; the
    /// header tells it `budget` and `seed`. Its name is `external: ` and the command.
    pub fn new(
        command: &[String],
        class: &Class,
        budget: u64,
        seed: u64,
        settings: ExternalSettings,
    ) -> Result<ExternalMethod, Error> {
        if command.is_empty() || command[0].is_empty() {
            return Err(Error::MethodFailed {
                method: "external".into(),
                reason: "the command is empty: give a program and its arguments".into(),
            });
        }
        settings.validate()?;
        let (_, integer_dim, _, _) = class_facts(class);
        Ok(ExternalMethod {
            name: external_name(command),
            command: command.to_vec(),
            header: header_line(class, budget, seed),
            dim: class.query_dim(),
            integer_dim,
            settings,
            state: State::Idle,
        })
    }

    fn fail(&self, reason: String) -> Error {
        Error::MethodFailed {
            method: self.name.clone(),
            reason,
        }
    }

    /// Starts the program, sends the header and reads its `ready` reply.
    fn start(&mut self) -> Result<(), Error> {
        let mut command = Command::new(&self.command[0]);
        command
            .args(&self.command[1..])
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .stderr(Stdio::piped());
        #[cfg(unix)]
        std::os::unix::process::CommandExt::process_group(&mut command, 0);
        let mut child = command.spawn().map_err(|e| {
            self.fail(format!(
                "cannot start the program {:?}: {e}",
                self.command[0]
            ))
        })?;
        let stdin = child.stdin.take().expect("piped stdin");
        let stdout = child.stdout.take().expect("piped stdout");
        let stderr = child.stderr.take().expect("piped stderr");
        sys::set_nonblocking(&stdin);
        let alive = Arc::new(Mutex::new(true));
        let written = Arc::new(AtomicU64::new(0));
        let flooded = Arc::new(AtomicBool::new(false));
        let (done_tx, done_rx) = std::sync::mpsc::channel();
        {
            let drain = StderrDrain {
                stderr,
                pid: child.id(),
                alive: Arc::clone(&alive),
                written: Arc::clone(&written),
                flooded: Arc::clone(&flooded),
                pass: self.settings.stderr_pass_bytes,
                cap: self.settings.max_output_bytes,
            };
            let spawned = std::thread::Builder::new()
                .name("naysayer-stderr".into())
                .spawn(move || {
                    drain.run();
                    let _ = done_tx.send(());
                });
            if let Err(e) = spawned {
                let _ = child.kill();
                let _ = child.wait();
                return Err(self.fail(format!("cannot start the stderr thread: {e}")));
            }
        }
        let pid = child.id();
        let running = Running {
            child,
            alive,
            stdin: Some(stdin),
            reader: LineReader::new(
                stdout,
                pid,
                self.settings.max_line_bytes,
                self.settings.max_output_bytes,
            ),
            written,
            flooded,
            drain: Some(done_rx),
            out: Vec::with_capacity(256),
            lines: 0,
            answers: 0,
        };
        self.state = State::Running(Box::new(running));
        let mut line = self.header.clone().into_bytes();
        line.push(b'\n');
        self.send(&line, "the header")?;
        match self.receive("a ready reply to the header")? {
            MethodMessage::Ready { protocol } if protocol == PROTOCOL_VERSION => Ok(()),
            MethodMessage::Ready { protocol } => Err(self.abort(format!(
                "protocol line 1: the program speaks protocol version {protocol}, naysayer \
                 speaks version {PROTOCOL_VERSION}"
            ))),
            other => Err(self.abort(format!(
                "protocol line 1: expected {{\"msg\":\"ready\",\"protocol\":{PROTOCOL_VERSION}}} \
                 in reply to the header, got a {} message (the program ignores the header)",
                message_kind(&other)
            ))),
        }
    }

    fn running(&mut self) -> &mut Running {
        match &mut self.state {
            State::Running(r) => r,
            _ => unreachable!("only called while running"),
        }
    }

    /// Writes `bytes` to the program within the time limit.
    fn send(&mut self, bytes: &[u8], what: &str) -> Result<(), Error> {
        let deadline = Instant::now() + self.settings.answer_timeout;
        let timeout = self.settings.answer_timeout;
        let running = self.running();
        let stdin = running.stdin.as_mut().expect("open until the output");
        match sys::write_all(stdin, bytes, deadline) {
            Ok(()) => Ok(()),
            Err(WriteError::Timeout) => Err(self.abort(format!(
                "the program did not read {what} within {} (it does not read its input)",
                seconds(timeout)
            ))),
            Err(WriteError::Closed) => {
                // Usually the program has exited: wait for it to report its status.
                let status = self.stop(false);
                Err(self.fail(format!(
                    "the program closed its input before naysayer could send {what} ({})",
                    describe_exit(status)
                )))
            }
            Err(WriteError::Io(e)) => Err(self.abort(format!("cannot send {what}: {e}"))),
        }
    }

    /// Reads and parses the program's next line within the time limit.
    fn receive(&mut self, expected: &str) -> Result<MethodMessage, Error> {
        let deadline = Instant::now() + self.settings.answer_timeout;
        let timeout = self.settings.answer_timeout;
        let max_output = self.settings.max_output_bytes;
        let running = self.running();
        let line_no = running.lines + 1;
        let after = match running.answers {
            0 => "after the header".to_string(),
            n => format!("after answer {n}"),
        };
        let result = running
            .reader
            .read_line(deadline, &running.written)
            .map(parse_message);
        let flooded = running.flooded.load(Ordering::SeqCst);
        match result {
            _ if flooded => Err(self.abort(format!(
                "the program wrote more than {max_output} bytes on stdout and stderr together \
                 (waiting for protocol line {line_no}, {expected})"
            ))),
            Ok(parsed) => {
                self.running().lines = line_no;
                match parsed {
                    Ok(message) => Ok(message),
                    Err(what) => Err(self.abort(format!("protocol line {line_no}: {what}"))),
                }
            }
            Err(ReadError::Timeout) => Err(self.abort(format!(
                "no reply within {} {after} (waiting for protocol line {line_no}, {expected}); \
                 the program was killed",
                seconds(timeout)
            ))),
            Err(ReadError::TooLong(limit)) => Err(self.abort(format!(
                "protocol line {line_no}: longer than {limit} bytes"
            ))),
            Err(ReadError::OutputCap(limit)) => Err(self.abort(format!(
                "the program wrote more than {limit} bytes on stdout and stderr together \
                 (waiting for protocol line {line_no}, {expected})"
            ))),
            Err(ReadError::Partial(n)) => {
                let status = self.stop(false);
                Err(self.fail(format!(
                    "protocol line {line_no}: incomplete ({n} bytes without a newline) when the \
                     program closed its output ({})",
                    describe_exit(status)
                )))
            }
            Err(ReadError::Eof) => {
                let status = self.stop(false);
                Err(self.fail(format!(
                    "the program closed its output {after}, before protocol line {line_no} \
                     ({expected}) ({})",
                    describe_exit(status)
                )))
            }
            Err(ReadError::Io(e)) => {
                Err(self.abort(format!("cannot read protocol line {line_no}: {e}")))
            }
        }
    }

    /// Kills the program and returns the error for `reason`.
    fn abort(&mut self, reason: String) -> Error {
        self.stop(true);
        self.fail(reason)
    }

    /// Ends the program: kills its whole process group (at once when `kill_now`, else
    /// after it exits or the exit grace runs out), reaps it, waits briefly for the
    /// stderr drain, and returns its exit status when it exited by itself.
    fn stop(&mut self, kill_now: bool) -> Option<std::process::ExitStatus> {
        let grace = self.settings.exit_grace;
        let State::Running(mut running) = std::mem::replace(&mut self.state, State::Done) else {
            return None;
        };
        drop(running.stdin.take());
        let exited = if kill_now {
            false
        } else {
            sys::wait_for_exit(&running.child, grace)
        };
        {
            let mut alive = running.alive.lock().unwrap_or_else(|e| e.into_inner());
            sys::kill_group(running.child.id());
            *alive = false;
        }
        let status = running.child.wait().ok();
        if let Some(done) = running.drain.take() {
            let _ = done.recv_timeout(Duration::from_secs(1));
        }
        if exited {
            status
        } else {
            None
        }
    }

    fn check_point(&mut self, point: &[f64], what: &str) -> Result<(), Error> {
        let line_no = self.running().lines;
        if point.len() != self.dim {
            return Err(self.abort(format!(
                "protocol line {line_no}: the {what} point has {} coordinates, expected {}",
                point.len(),
                self.dim
            )));
        }
        Ok(())
    }
}

impl Drop for ExternalMethod {
    fn drop(&mut self) {
        self.stop(true);
    }
}

impl Method for ExternalMethod {
    fn name(&self) -> &str {
        &self.name
    }

    fn next(&mut self, query: &mut [f64]) -> Result<Step, Error> {
        match self.state {
            State::Idle => self.start()?,
            State::Running(_) => {}
            State::Done => return Err(self.fail("the program has already stopped".into())),
        }
        let message = self.receive("a query or an output")?;
        let line_no = self.running().lines;
        match message {
            MethodMessage::Query { point } => {
                self.check_point(&point, "query")?;
                query.copy_from_slice(&point);
                Ok(Step::Query)
            }
            MethodMessage::Output { point } => {
                self.check_point(&point, "output")?;
                if let Some(i) = (0..self.integer_dim).find(|&i| point[i].fract() != 0.0) {
                    return Err(self.abort(format!(
                        "protocol line {line_no}: output coordinate {i} = {} must be an integer",
                        point[i]
                    )));
                }
                self.finish_after_output(line_no)?;
                Ok(Step::Output(Output::Point { point }))
            }
            MethodMessage::Empty => {
                self.finish_after_output(line_no)?;
                Ok(Step::Output(Output::Empty))
            }
            MethodMessage::Fail { reason } => {
                self.stop(true);
                Err(self.fail(format!(
                    "protocol line {line_no}: the program gave up: {reason}"
                )))
            }
            MethodMessage::Ready { .. } => Err(self.abort(format!(
                "protocol line {line_no}: a second ready message (expected a query or an output)"
            ))),
        }
    }

    fn observe(&mut self, _query: &[f64], answer: &Answer) -> Result<(), Error> {
        let running = self.running();
        running.answers += 1;
        let index = running.answers;
        let mut out = std::mem::take(&mut running.out);
        out.clear();
        serde_json::to_writer(
            &mut out,
            &AnswerMessage {
                msg: "answer",
                index,
                answer,
            },
        )
        .map_err(|e| self.fail(format!("cannot encode answer {index}: {e}")))?;
        out.push(b'\n');
        let result = self.send(&out, &format!("answer {index}"));
        if let State::Running(running) = &mut self.state {
            running.out = out;
        }
        result
    }
}

impl ExternalMethod {
    /// After an output: close stdin, let the program exit, fail on a non-zero status.
    fn finish_after_output(&mut self, line_no: u64) -> Result<(), Error> {
        let grace = self.settings.exit_grace;
        match self.stop(false) {
            Some(status) if !status.success() => Err(self.fail(format!(
                "the program {} after its output on protocol line {line_no}",
                describe_exit(Some(status))
            ))),
            Some(_) => Ok(()),
            None => {
                // Still running after the grace period: killed; the output stands.
                eprintln!(
                    "naysayer: note: the program did not exit within {} after its output; \
                     killed",
                    seconds(grace)
                );
                Ok(())
            }
        }
    }
}

/// The name an external method carries in transcripts: `external: ` and its command.
pub fn external_name(command: &[String]) -> String {
    format!("external: {}", command.join(" "))
}

fn message_kind(message: &MethodMessage) -> &'static str {
    match message {
        MethodMessage::Ready { .. } => "ready",
        MethodMessage::Query { .. } => "query",
        MethodMessage::Output { .. } => "output",
        MethodMessage::Empty => "empty",
        MethodMessage::Fail { .. } => "fail",
    }
}

fn seconds(d: Duration) -> String {
    format!("{} s", d.as_secs_f64())
}

fn describe_exit(status: Option<std::process::ExitStatus>) -> String {
    match status {
        None => "killed by naysayer".into(),
        Some(s) => {
            if let Some(code) = s.code() {
                return format!("exited with status {code}");
            }
            #[cfg(unix)]
            {
                use std::os::unix::process::ExitStatusExt;
                if let Some(signal) = s.signal() {
                    return format!("killed by signal {signal}");
                }
            }
            format!("ended: {s}")
        }
    }
}

/// Parses one line from the program, saying what is wrong when it is not a message.
fn parse_message(bytes: &[u8]) -> Result<MethodMessage, String> {
    let text = match std::str::from_utf8(bytes) {
        Ok(t) => t,
        Err(e) => {
            return Err(format!(
                "not valid UTF-8 (bad byte at offset {})",
                e.valid_up_to()
            ))
        }
    };
    let text = text.strip_suffix('\r').unwrap_or(text);
    if text.trim().is_empty() {
        return Err("an empty line (expected a JSON message)".into());
    }
    serde_json::from_str::<MethodMessage>(text).map_err(|e| {
        let has_word = |w: &str| text.contains(w);
        if has_word("NaN") || has_word("Infinity") {
            format!(
                "a non-finite number (NaN or Infinity; JSON has none and points must be \
                 finite): {}",
                excerpt(text)
            )
        } else if e.to_string().contains("out of range") {
            format!("a number out of the f64 range: {}", excerpt(text))
        } else if serde_json::from_str::<serde_json::Value>(text).is_err() {
            format!("not valid JSON ({e}): {}", excerpt(text))
        } else {
            format!(
                "not a protocol message ({e}); expected {{\"msg\":\"query\"|\"output\"|\
                 \"empty\"|\"fail\"|\"ready\", ...}}: {}",
                excerpt(text)
            )
        }
    })
}

/// The start of a line, for messages.
fn excerpt(text: &str) -> String {
    const MAX: usize = 80;
    if text.len() <= MAX {
        format!("{text:?}")
    } else {
        let mut end = MAX;
        while !text.is_char_boundary(end) {
            end -= 1;
        }
        format!("{:?}...", &text[..end])
    }
}

/// How often a wait for a line checks whether the program has exited.
const EXIT_CHECK: Duration = Duration::from_millis(50);

enum ReadError {
    Timeout,
    TooLong(usize),
    OutputCap(u64),
    Partial(usize),
    Eof,
    Io(std::io::Error),
}

enum WriteError {
    Timeout,
    Closed,
    Io(std::io::Error),
}

/// Reads lines from the program's stdout with a deadline and caps.
struct LineReader {
    stdout: ChildStdout,
    /// The program's pid (checked for an exit while its stdout stays open).
    pid: u32,
    buffer: Vec<u8>,
    /// Start of the unread data in `buffer`.
    start: usize,
    /// How far `buffer[start..]` was already searched for a newline.
    scanned: usize,
    /// The line handed out last (kept to reuse its allocation).
    line: Vec<u8>,
    max_line: usize,
    max_output: u64,
}

impl LineReader {
    fn new(stdout: ChildStdout, pid: u32, max_line: usize, max_output: u64) -> LineReader {
        LineReader {
            stdout,
            pid,
            buffer: Vec::with_capacity(1 << 16),
            start: 0,
            scanned: 0,
            line: Vec::new(),
            max_line,
            max_output,
        }
    }

    /// The next line, without its newline.
    fn read_line(&mut self, deadline: Instant, written: &AtomicU64) -> Result<&[u8], ReadError> {
        loop {
            let unread = &self.buffer[self.start..];
            if let Some(pos) = unread[self.scanned..].iter().position(|b| *b == b'\n') {
                let end = self.scanned + pos;
                if end > self.max_line {
                    return Err(ReadError::TooLong(self.max_line));
                }
                self.line.clear();
                self.line.extend_from_slice(&unread[..end]);
                self.start += end + 1;
                self.scanned = 0;
                if self.start == self.buffer.len() {
                    self.buffer.clear();
                    self.start = 0;
                }
                return Ok(&self.line);
            }
            self.scanned = unread.len();
            if unread.len() > self.max_line {
                return Err(ReadError::TooLong(self.max_line));
            }
            if self.start > 0 {
                self.buffer.drain(..self.start);
                self.start = 0;
            }
            // Wait in slices, so that a program that exits while something it started
            // keeps its stdout open is noticed: once it has exited, everything it wrote
            // is already in the pipe.
            loop {
                let slice = deadline.min(Instant::now() + EXIT_CHECK);
                match sys::wait_readable(&self.stdout, slice) {
                    Ok(true) => break,
                    Ok(false) if Instant::now() >= deadline => return Err(ReadError::Timeout),
                    Ok(false) => {
                        if sys::has_exited(self.pid) {
                            let old = self.buffer.len();
                            return Err(if old > 0 {
                                ReadError::Partial(old)
                            } else {
                                ReadError::Eof
                            });
                        }
                    }
                    Err(e) => return Err(ReadError::Io(e)),
                }
            }
            let old = self.buffer.len();
            let want = (self.max_line + 2).saturating_sub(old).clamp(1, 1 << 16);
            self.buffer.resize(old + want, 0);
            let n = loop {
                match self.stdout.read(&mut self.buffer[old..]) {
                    Ok(n) => break n,
                    Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
                    Err(e) => {
                        self.buffer.truncate(old);
                        return Err(ReadError::Io(e));
                    }
                }
            };
            self.buffer.truncate(old + n);
            if n == 0 {
                return Err(if old > 0 {
                    ReadError::Partial(old)
                } else {
                    ReadError::Eof
                });
            }
            let total = written.fetch_add(n as u64, Ordering::SeqCst) + n as u64;
            if total > self.max_output {
                return Err(ReadError::OutputCap(self.max_output));
            }
        }
    }
}

/// Drains the program's stderr: passes the first bytes through, counts all of them,
/// and kills the program when the output cap is crossed.
struct StderrDrain {
    stderr: ChildStderr,
    pid: u32,
    alive: Arc<Mutex<bool>>,
    written: Arc<AtomicU64>,
    flooded: Arc<AtomicBool>,
    pass: u64,
    cap: u64,
}

impl StderrDrain {
    fn run(mut self) {
        let mut chunk = vec![0u8; 1 << 14];
        let mut passed: u64 = 0;
        let mut noted = false;
        loop {
            let n = match self.stderr.read(&mut chunk) {
                Ok(0) => return,
                Ok(n) => n,
                Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
                Err(_) => return,
            };
            let total = self.written.fetch_add(n as u64, Ordering::SeqCst) + n as u64;
            if total > self.cap && !self.flooded.swap(true, Ordering::SeqCst) {
                let alive = self.alive.lock().unwrap_or_else(|e| e.into_inner());
                if *alive {
                    sys::kill_group(self.pid);
                }
            }
            if passed < self.pass {
                let take = (self.pass - passed).min(n as u64) as usize;
                let _ = std::io::stderr().write_all(&chunk[..take]);
                passed += take as u64;
            } else if !noted {
                noted = true;
                let _ = writeln!(
                    std::io::stderr(),
                    "\nnaysayer: note: the method's further stderr output is not shown \
                     (more than {} bytes)",
                    self.pass
                );
            }
        }
    }
}

#[cfg(unix)]
mod sys {
    //! Unix pipes and process groups (poll, non-blocking writes, killpg, waitid).

    use std::io::Write;
    use std::os::fd::AsRawFd;
    use std::process::{Child, ChildStdin};
    use std::time::{Duration, Instant};

    use super::WriteError;

    fn poll_timeout(deadline: Instant) -> i32 {
        let left = deadline.saturating_duration_since(Instant::now());
        // Round up, so that a wait never ends before the deadline.
        let ms = left.as_micros().div_ceil(1000);
        ms.min(i32::MAX as u128) as i32
    }

    /// Waits until `fd` is ready for `events` or the deadline passes (`Ok(false)`).
    fn wait_fd(fd: i32, events: i16, deadline: Instant) -> std::io::Result<bool> {
        loop {
            let mut pfd = libc::pollfd {
                fd,
                events,
                revents: 0,
            };
            let timeout = poll_timeout(deadline);
            // SAFETY: one valid pollfd, count 1.
            let r = unsafe { libc::poll(&mut pfd, 1, timeout) };
            if r > 0 {
                return Ok(true);
            }
            if r == 0 {
                if Instant::now() >= deadline {
                    return Ok(false);
                }
                continue;
            }
            let e = std::io::Error::last_os_error();
            if e.kind() != std::io::ErrorKind::Interrupted {
                return Err(e);
            }
        }
    }

    /// True when the program's stdout has data (or is closed) before the deadline.
    pub fn wait_readable(stdout: &impl AsRawFd, deadline: Instant) -> std::io::Result<bool> {
        wait_fd(stdout.as_raw_fd(), libc::POLLIN, deadline)
    }

    /// Makes writes to the program's stdin non-blocking, so that a program that stops
    /// reading cannot block naysayer past the time limit.
    pub fn set_nonblocking(stdin: &ChildStdin) {
        let fd = stdin.as_raw_fd();
        // SAFETY: fcntl on a file descriptor we own.
        unsafe {
            let flags = libc::fcntl(fd, libc::F_GETFL);
            if flags >= 0 {
                libc::fcntl(fd, libc::F_SETFL, flags | libc::O_NONBLOCK);
            }
        }
    }

    /// Writes all of `bytes` before the deadline.
    pub fn write_all(
        stdin: &mut ChildStdin,
        mut bytes: &[u8],
        deadline: Instant,
    ) -> Result<(), WriteError> {
        while !bytes.is_empty() {
            match stdin.write(bytes) {
                Ok(0) => return Err(WriteError::Closed),
                Ok(n) => bytes = &bytes[n..],
                Err(e) => match e.kind() {
                    std::io::ErrorKind::Interrupted => {}
                    std::io::ErrorKind::WouldBlock => {
                        match wait_fd(stdin.as_raw_fd(), libc::POLLOUT, deadline) {
                            Ok(true) => {}
                            Ok(false) => return Err(WriteError::Timeout),
                            Err(e) => return Err(WriteError::Io(e)),
                        }
                    }
                    std::io::ErrorKind::BrokenPipe => return Err(WriteError::Closed),
                    _ => return Err(WriteError::Io(e)),
                },
            }
        }
        Ok(())
    }

    /// Sends SIGKILL to the process group `pid` (the program and everything it
    /// started). The caller guarantees the leader is not reaped yet.
    pub fn kill_group(pid: u32) {
        // SAFETY: killpg with a group id we created (process_group(0)).
        unsafe {
            libc::killpg(pid as libc::pid_t, libc::SIGKILL);
        }
    }

    /// True when the program `pid` (our child) has exited; it is not reaped, so its
    /// pid, the group id, stays reserved.
    #[cfg(any(target_os = "linux", target_os = "android"))]
    pub fn has_exited(pid: u32) -> bool {
        // SAFETY: waitid on our own child; WNOWAIT leaves it waitable.
        unsafe {
            let mut info: libc::siginfo_t = std::mem::zeroed();
            let r = libc::waitid(
                libc::P_PID,
                pid as libc::id_t,
                &mut info,
                libc::WEXITED | libc::WNOHANG | libc::WNOWAIT,
            );
            r == 0 && info.si_pid() != 0
        }
    }

    /// Without `waitid`, an exit is noticed only when stdout closes.
    #[cfg(not(any(target_os = "linux", target_os = "android")))]
    pub fn has_exited(_pid: u32) -> bool {
        false
    }

    /// Waits up to `grace` for the program to exit, without reaping it.
    #[cfg(any(target_os = "linux", target_os = "android"))]
    pub fn wait_for_exit(child: &Child, grace: Duration) -> bool {
        let deadline = Instant::now() + grace;
        let mut pause = Duration::from_micros(50);
        loop {
            if has_exited(child.id()) {
                return true;
            }
            if Instant::now() >= deadline {
                return false;
            }
            std::thread::sleep(pause);
            pause = (pause * 2).min(Duration::from_millis(20));
        }
    }

    /// Without `waitid`: wait out the grace period, then the caller kills the group.
    #[cfg(not(any(target_os = "linux", target_os = "android")))]
    pub fn wait_for_exit(_child: &Child, grace: Duration) -> bool {
        std::thread::sleep(grace.min(Duration::from_millis(100)));
        false
    }
}

#[cfg(not(unix))]
mod sys {
    //! Fallbacks without poll or process groups: blocking pipes, no time limit on
    //! reads (documented: external methods are fully supported on Unix only).

    use std::io::Write;
    use std::process::{Child, ChildStdin};
    use std::time::{Duration, Instant};

    use super::WriteError;

    pub fn wait_readable<T>(_stdout: &T, _deadline: Instant) -> std::io::Result<bool> {
        Ok(true)
    }

    pub fn set_nonblocking(_stdin: &ChildStdin) {}

    pub fn write_all(
        stdin: &mut ChildStdin,
        bytes: &[u8],
        _deadline: Instant,
    ) -> Result<(), WriteError> {
        stdin.write_all(bytes).map_err(|e| match e.kind() {
            std::io::ErrorKind::BrokenPipe => WriteError::Closed,
            _ => WriteError::Io(e),
        })
    }

    pub fn kill_group(_pid: u32) {}

    pub fn has_exited(_pid: u32) -> bool {
        false
    }

    pub fn wait_for_exit(_child: &Child, grace: Duration) -> bool {
        std::thread::sleep(grace.min(Duration::from_millis(100)));
        false
    }
}

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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::class::{FeasibilityClass, Promise};

    #[test]
    fn messages_parse_strictly() {
        assert_eq!(
            parse_message(br#"{"msg":"query","point":[0.5,-1]}"#).unwrap(),
            MethodMessage::Query {
                point: vec![0.5, -1.0]
            }
        );
        assert_eq!(
            parse_message(br#"{"msg":"empty"}"#).unwrap(),
            MethodMessage::Empty
        );
        let err = parse_message(br#"{"msg":"query","point":[1],"extra":2}"#).unwrap_err();
        assert!(err.contains("not a protocol message"), "{err}");
        let err = parse_message(br#"{"msg":"query","point":[NaN]}"#).unwrap_err();
        assert!(err.contains("non-finite"), "{err}");
        let err = parse_message(b"{\"msg\":\"query\",\"point\":[1e999]}").unwrap_err();
        assert!(err.contains("range"), "{err}");
        let err = parse_message(b"\xff\xfe").unwrap_err();
        assert!(err.contains("UTF-8"), "{err}");
        let err = parse_message(b"hello").unwrap_err();
        assert!(err.contains("not valid JSON"), "{err}");
    }

    #[test]
    fn header_names_every_field() {
        let class =
            Class::Feasibility(FeasibilityClass::new(2, 1.0, 0.25, Promise::MayBeEmpty).unwrap());
        let line = header_line(&class, 10, 3);
        let value: serde_json::Value = serde_json::from_str(&line).unwrap();
        assert_eq!(value["msg"], "game");
        assert_eq!(value["protocol"], 1);
        assert_eq!(value["query_dim"], 2);
        assert_eq!(value["box"]["lower"][1], -1.0);
        assert_eq!(value["accuracy"]["name"], "rho");
        assert_eq!(value["budget"], 10);
        assert_eq!(value["seed"], 3);
        let header: GameHeader = serde_json::from_str(&line).unwrap();
        assert_eq!(header.class, class);
    }
}
