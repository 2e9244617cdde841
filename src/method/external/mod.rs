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
//! [`serve`] speaks the program's side for a Rust [`Method`]; the Python package
//! `naysayer_client` (`python/` in the repository) does the same for a Python ask/tell
//! object.
//!
//! The code: this file holds the settings and [`ExternalMethod`]; `messages.rs` the
//! protocol's messages and their parsing, `process.rs` the process control (pipes, time
//! limits, caps, process groups), `serve.rs` the program's side for a Rust method.

mod messages;
mod process;
mod serve;

pub use messages::{header_line, AccuracyMessage, BoxMessage, GameHeader, MethodMessage};
pub use serve::serve;

use std::io::Write;
use std::process::{Child, ChildStdin, Command, Stdio};
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

use crate::class::Class;
use crate::error::Error;
use crate::method::Method;
use crate::oracle::{Answer, Output, Step};
use crate::transcript::Ending;

use messages::{class_facts, message_kind, parse_message, AnswerMessage};
use process::{sys, LineReader, ReadError, StderrDrain, WriteError};

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
    /// How long the program may take to exit once its game is over (after its output,
    /// the `over` message, or after it closed its output mid-game) before its process
    /// group is killed. Default: 5 s.
    pub exit_grace: Duration,
    /// The folder the program runs in; `None`: naysayer's own.
    pub working_dir: Option<std::path::PathBuf>,
}

impl Default for ExternalSettings {
    fn default() -> Self {
        ExternalSettings {
            answer_timeout: Duration::from_secs(30),
            max_line_bytes: 1 << 20,
            max_output_bytes: 1 << 30,
            stderr_pass_bytes: 1 << 20,
            exit_grace: Duration::from_secs(5),
            working_dir: None,
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
        if let Some(dir) = &self.settings.working_dir {
            command.current_dir(dir);
        }
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
        crate::interrupt::set_child_group(pid);
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
            MethodMessage::Fail { reason } => Err(self.abort(format!(
                "protocol line 1: the program refused the game in reply to the header: {reason}"
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
            Err(ReadError::ExitedOutputOpen) => {
                let status = self.stop(false);
                Err(self.fail(format!(
                    "the program {} {after}, before protocol line {line_no} ({expected}); \
                     its output is still open in another process (something it started keeps \
                     it), which was killed with its process group",
                    describe_exit(status)
                )))
            }
            Err(ReadError::Interrupted) => Err(self.fail(format!(
                "interrupted by {} while waiting for protocol line {line_no}",
                crate::interrupt::signal_name().unwrap_or("a signal")
            ))),
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
        crate::interrupt::set_child_group(0);
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

    fn end(&mut self, ending: &Ending) {
        let reason = match ending {
            Ending::BudgetExhausted => "budget",
            Ending::Interrupted { .. } => "interrupted",
            // After an output the program has been told already; after a failure it is
            // gone (or broke the protocol).
            Ending::Output { .. } | Ending::MethodFailed { .. } => {
                self.stop(true);
                return;
            }
        };
        if matches!(self.state, State::Running(_)) {
            self.say_over(reason);
            self.stop(false);
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
        self.say_over("output-received");
        match self.stop(false) {
            Some(status) if !status.success() => Err(self.fail(format!(
                "the program {} after its output on protocol line {line_no}",
                describe_exit(Some(status))
            ))),
            Some(_) => Ok(()),
            None => {
                // Still running after the grace period: killed; the output stands.
                let _ = writeln!(
                    std::io::stderr(),
                    "naysayer: note: the program did not exit within {} after its output; \
                     killed",
                    seconds(grace)
                );
                Ok(())
            }
        }
    }
}

impl ExternalMethod {
    /// Sends the final `{"msg":"over","reason":...}` message, best effort: the program may
    /// already have closed its input, and the game has ended whatever happens here.
    fn say_over(&mut self, reason: &str) {
        let State::Running(running) = &mut self.state else {
            return;
        };
        if let Some(stdin) = running.stdin.as_mut() {
            let line = format!("{{\"msg\":\"over\",\"reason\":\"{reason}\"}}\n");
            let deadline = Instant::now() + Duration::from_millis(200);
            let _ = sys::write_all(stdin, line.as_bytes(), deadline);
        }
    }
}

/// The name an external method carries in transcripts: `external: ` and its command.
pub fn external_name(command: &[String]) -> String {
    format!("external: {}", command.join(" "))
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
