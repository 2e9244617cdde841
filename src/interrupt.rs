//! Interruption by a signal (SIGINT, SIGTERM, SIGHUP): the commands that play games ask
//! for it ([`install`]) so that a game ends cleanly instead of the process dying at once.
//!
//! The handler only sets a flag ([`requested`]); the game loop looks at it between steps
//! and ends the game as interrupted (the transcript then ends with an `interrupted` final
//! record, with the certificate for what was answered), an external method's waits look
//! at it every few milliseconds and stop waiting, and a sweep stops handing out games
//! (finished rows are kept; the rerun resumes). The running external program's process
//! group is then killed and reaped as on any other end of its game.
//!
//! A second signal while the first is being handled ends the process at once (with the
//! exit code for an interruption), after killing the process group of the external
//! program that is running, if any ([`set_child_group`]): a user who presses Ctrl-C
//! twice is never kept waiting.

use std::sync::atomic::{AtomicBool, AtomicI32, Ordering};

static REQUESTED: AtomicBool = AtomicBool::new(false);
static SIGNAL: AtomicI32 = AtomicI32::new(0);
static CHILD_GROUP: AtomicI32 = AtomicI32::new(0);

/// The exit code of a command ended by a signal (documented in the README).
pub const EXIT_INTERRUPTED: u8 = 6;

/// True once SIGINT, SIGTERM or SIGHUP has arrived (after [`install`]).
pub fn requested() -> bool {
    REQUESTED.load(Ordering::Relaxed)
}

/// The name of the signal that arrived, if one did.
pub fn signal_name() -> Option<&'static str> {
    #[cfg(unix)]
    {
        match SIGNAL.load(Ordering::Relaxed) {
            libc::SIGINT => Some("SIGINT"),
            libc::SIGTERM => Some("SIGTERM"),
            libc::SIGHUP => Some("SIGHUP"),
            0 => None,
            _ => Some("a signal"),
        }
    }
    #[cfg(not(unix))]
    {
        requested().then_some("a signal")
    }
}

/// Names the process group of the external program now running (0: none), for the
/// second-signal path.
pub fn set_child_group(pid: u32) {
    CHILD_GROUP.store(i32::try_from(pid).unwrap_or(0), Ordering::Relaxed);
}

/// Sets the flag as a signal would (for tests and for embedding applications that
/// handle signals themselves).
pub fn request() {
    REQUESTED.store(true, Ordering::Relaxed);
}

/// Clears the flag (between tests).
pub fn clear() {
    REQUESTED.store(false, Ordering::Relaxed);
    SIGNAL.store(0, Ordering::Relaxed);
}

#[cfg(unix)]
extern "C" fn on_signal(signal: libc::c_int) {
    // Only async-signal-safe operations: atomics, kill, _exit.
    if REQUESTED.swap(true, Ordering::SeqCst) {
        let group = CHILD_GROUP.load(Ordering::SeqCst);
        // SAFETY: kill and _exit are async-signal-safe.
        unsafe {
            if group > 0 {
                libc::kill(-group, libc::SIGKILL);
            }
            libc::_exit(i32::from(EXIT_INTERRUPTED));
        }
    }
    SIGNAL.store(signal, Ordering::SeqCst);
}

/// Installs the handler for SIGINT, SIGTERM and SIGHUP (Unix; elsewhere nothing).
pub fn install() {
    #[cfg(unix)]
    {
        for signal in [libc::SIGINT, libc::SIGTERM, libc::SIGHUP] {
            // SAFETY: the sigaction struct is zeroed and filled before use; the handler
            // only touches atomics and async-signal-safe calls.
            unsafe {
                let mut action: libc::sigaction = std::mem::zeroed();
                action.sa_sigaction = on_signal as extern "C" fn(libc::c_int) as usize;
                libc::sigemptyset(&mut action.sa_mask);
                action.sa_flags = libc::SA_RESTART;
                libc::sigaction(signal, &action, std::ptr::null_mut());
            }
        }
    }
}
