//! Process control for external methods: reading lines with a time limit and a cap,
//! draining stderr, and the process-group operations (Unix; elsewhere a fallback
//! without time limits).

use std::io::{Read, Write};
use std::process::{ChildStderr, ChildStdout};
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

/// How often a wait for a line checks whether the program has exited.
pub(super) const EXIT_CHECK: Duration = Duration::from_millis(50);

pub(super) enum ReadError {
    Timeout,
    TooLong(usize),
    OutputCap(u64),
    Partial(usize),
    /// The pipe closed: every writer of the program's stdout is gone.
    Eof,
    /// The program exited but its stdout is still open in another process (something it
    /// started keeps it): nothing more will come from the program itself.
    ExitedOutputOpen,
    /// A signal asked naysayer to stop ([`crate::interrupt`]).
    Interrupted,
    Io(std::io::Error),
}

pub(super) enum WriteError {
    Timeout,
    Closed,
    Io(std::io::Error),
}

/// Reads lines from the program's stdout with a deadline and caps.
pub(super) struct LineReader {
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
    pub(super) fn new(
        stdout: ChildStdout,
        pid: u32,
        max_line: usize,
        max_output: u64,
    ) -> LineReader {
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
    pub(super) fn read_line(
        &mut self,
        deadline: Instant,
        written: &AtomicU64,
    ) -> Result<&[u8], ReadError> {
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
                    Ok(false) if crate::interrupt::requested() => {
                        return Err(ReadError::Interrupted)
                    }
                    Ok(false) if Instant::now() >= deadline => return Err(ReadError::Timeout),
                    Ok(false) => {
                        if sys::has_exited(self.pid) {
                            let old = self.buffer.len();
                            return Err(if old > 0 {
                                ReadError::Partial(old)
                            } else {
                                ReadError::ExitedOutputOpen
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
pub(super) struct StderrDrain {
    /// The program's stderr.
    pub(super) stderr: ChildStderr,
    /// Its process (group) id.
    pub(super) pid: u32,
    /// `true` while the leader is not yet reaped (see `Running::alive`).
    pub(super) alive: Arc<Mutex<bool>>,
    /// Bytes the program wrote on stdout and stderr together.
    pub(super) written: Arc<AtomicU64>,
    /// Set when the output cap was crossed.
    pub(super) flooded: Arc<AtomicBool>,
    /// Bytes passed through to naysayer's stderr.
    pub(super) pass: u64,
    /// The output cap.
    pub(super) cap: u64,
}

impl StderrDrain {
    pub(super) fn run(mut self) {
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
pub(super) mod sys {
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
pub(super) mod sys {
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
