//! One writer per results folder: an advisory lock file.
//!
//! A sweep (or a merge, or the demo) takes `<folder>/.naysayer-lock` before it touches
//! the folder, by creating the file exclusively (`O_EXCL`) with its owner written inside:
//! `pid <pid>`, `host <host>`, `started <seconds since the epoch>`. A second writer finds
//! the file and refuses with a message naming the owner. A lock left by a process that
//! no longer runs on this host (a `kill -9`, a crash) is stale: it is taken over, and the
//! takeover is said on standard error. A lock from another host is never taken over (the
//! process cannot be checked from here); the message says how to remove it. The lock is
//! removed when the writer ends (dropped), even on an error.
//!
//! Advisory: it keeps naysayer processes apart, nothing else. Shards write separate
//! folders and take separate locks.

use std::fs::OpenOptions;
use std::io::Write;
use std::path::{Path, PathBuf};

use crate::error::Error;

/// The lock file's name inside a results folder.
pub const LOCK_FILE: &str = ".naysayer-lock";

/// A held lock on a results folder; released when dropped.
#[derive(Debug)]
pub struct FolderLock {
    path: PathBuf,
}

/// Who holds a lock, as written in the file.
#[derive(Clone, Debug, PartialEq, Eq)]
struct Owner {
    pid: u32,
    host: String,
    started: u64,
}

impl Owner {
    fn me() -> Owner {
        Owner {
            pid: std::process::id(),
            host: host_name(),
            started: std::time::SystemTime::now()
                .duration_since(std::time::UNIX_EPOCH)
                .map_or(0, |d| d.as_secs()),
        }
    }

    fn text(&self) -> String {
        format!(
            "pid {}\nhost {}\nstarted {}\n",
            self.pid, self.host, self.started
        )
    }

    fn parse(text: &str) -> Option<Owner> {
        let mut pid = None;
        let mut host = None;
        let mut started = None;
        for line in text.lines() {
            let (key, value) = line.split_once(' ')?;
            match key {
                "pid" => pid = value.trim().parse().ok(),
                "host" => host = Some(value.trim().to_string()),
                "started" => started = value.trim().parse().ok(),
                _ => {}
            }
        }
        Some(Owner {
            pid: pid?,
            host: host?,
            started: started.unwrap_or(0),
        })
    }
}

impl FolderLock {
    /// Takes the lock of `folder` (which must exist), taking over a stale one.
    pub fn acquire(folder: &Path) -> Result<FolderLock, Error> {
        let path = folder.join(LOCK_FILE);
        let me = Owner::me();
        for _ in 0..3 {
            match OpenOptions::new().write(true).create_new(true).open(&path) {
                Ok(mut file) => {
                    file.write_all(me.text().as_bytes())
                        .and_then(|_| file.sync_all())
                        .map_err(|source| Error::Io {
                            action: "cannot write the lock file",
                            path: path.clone(),
                            source,
                        })?;
                    return Ok(FolderLock { path });
                }
                Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
                    let text = std::fs::read_to_string(&path).unwrap_or_default();
                    match Owner::parse(&text) {
                        Some(owner) if owner.host == me.host && !process_alive(owner.pid) => {
                            crate::note!(
                                "naysayer: note: taking over the stale lock of {} (pid {} on \
                                 this host is no longer running)",
                                folder.display(),
                                owner.pid
                            );
                            let _ = std::fs::remove_file(&path);
                        }
                        Some(owner) => {
                            return Err(Error::Results {
                                path: folder.to_path_buf(),
                                reason: format!(
                                    "another naysayer (pid {} on host {}, started at {} s \
                                     since the epoch) is writing this results folder; wait \
                                     for it to end, or write elsewhere with --out (if that \
                                     process is gone, remove {})",
                                    owner.pid,
                                    owner.host,
                                    owner.started,
                                    path.display()
                                ),
                            })
                        }
                        None if text.is_empty() => {
                            // Created by a writer that has not written its name yet, or left
                            // empty by a crash at that instant: give it a moment.
                            std::thread::sleep(std::time::Duration::from_millis(200));
                            let again = std::fs::read_to_string(&path).unwrap_or_default();
                            if again.is_empty() {
                                let _ = std::fs::remove_file(&path);
                            }
                        }
                        None => {
                            return Err(Error::Results {
                                path: folder.to_path_buf(),
                                reason: format!(
                                    "the lock file {} is not naysayer's; remove it if no \
                                     naysayer is writing this folder",
                                    path.display()
                                ),
                            })
                        }
                    }
                }
                Err(source) => {
                    return Err(Error::Io {
                        action: "cannot create the lock file",
                        path,
                        source,
                    })
                }
            }
        }
        Err(Error::Results {
            path: folder.to_path_buf(),
            reason: "could not take the folder's lock (another writer keeps taking it)".into(),
        })
    }
}

impl Drop for FolderLock {
    fn drop(&mut self) {
        let _ = std::fs::remove_file(&self.path);
    }
}

/// This machine's host name (empty when it cannot be read).
fn host_name() -> String {
    #[cfg(unix)]
    {
        let mut buffer = [0u8; 256];
        // SAFETY: the buffer is valid for its length; gethostname writes at most that many
        // bytes and a terminating zero when it fits.
        let r = unsafe { libc::gethostname(buffer.as_mut_ptr().cast(), buffer.len()) };
        if r == 0 {
            let end = buffer.iter().position(|b| *b == 0).unwrap_or(buffer.len());
            return String::from_utf8_lossy(&buffer[..end]).into_owned();
        }
    }
    std::env::var("HOSTNAME").unwrap_or_default()
}

/// Whether process `pid` runs on this host.
fn process_alive(pid: u32) -> bool {
    #[cfg(unix)]
    {
        let Ok(pid) = libc::pid_t::try_from(pid) else {
            return false;
        };
        // SAFETY: signal 0 checks for existence and permission; it sends nothing.
        let r = unsafe { libc::kill(pid, 0) };
        if r == 0 {
            return true;
        }
        std::io::Error::last_os_error().raw_os_error() == Some(libc::EPERM)
    }
    #[cfg(not(unix))]
    {
        let _ = pid;
        true
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn owners_round_trip() {
        let me = Owner::me();
        assert_eq!(Owner::parse(&me.text()), Some(me));
        assert_eq!(Owner::parse("garbage"), None);
    }

    #[test]
    fn a_second_lock_is_refused_and_a_stale_one_taken_over() {
        let dir = tempfile::tempdir().unwrap();
        let first = FolderLock::acquire(dir.path()).unwrap();
        let e = FolderLock::acquire(dir.path()).unwrap_err().to_string();
        assert!(e.contains("another naysayer") && e.contains("pid"), "{e}");
        drop(first);
        // A lock of a process that cannot exist (pid beyond the kernel's maximum).
        let stale = Owner {
            pid: 0x3fff_fff0,
            host: host_name(),
            started: 1,
        };
        std::fs::write(dir.path().join(LOCK_FILE), stale.text()).unwrap();
        let taken = FolderLock::acquire(dir.path()).unwrap();
        drop(taken);
        assert!(!dir.path().join(LOCK_FILE).exists(), "released on drop");
    }
}
