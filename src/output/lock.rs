//! The output folder's lock: a build holds it exclusively while it writes,
//! `verify` holds it shared while it reads, so neither sees a set of files
//! half replaced by a concurrent build. The lock file lives in sheaf's own
//! folder and is never removed (removing a lock file races with its users).

use crate::diag::Diagnostic;
use crate::world::no_follow;
use std::fs::{File, OpenOptions};
use std::path::Path;
use std::time::{Duration, Instant};

/// The lock file's name inside the cache folder.
pub const LOCK_FILE: &str = "lock";

/// How long a build waits for another build into the same folder to finish
/// writing before it gives up (writing takes seconds even for large reports).
pub const LOCK_WAIT: Duration = Duration::from_secs(60);

const POLL: Duration = Duration::from_millis(25);

/// A held lock; released when dropped (closing the file releases it).
pub struct FolderLock {
    _file: File,
}

/// Polls `try_lock` until it succeeds, fails, or `LOCK_WAIT` has passed.
/// Returns whether the lock is held.
fn wait_for(file: &File, shared: bool) -> std::io::Result<bool> {
    let start = Instant::now();
    loop {
        let attempt = if shared {
            fs4::FileExt::try_lock_shared(file)
        } else {
            fs4::FileExt::try_lock(file)
        };
        match attempt {
            Ok(()) => return Ok(true),
            Err(fs4::TryLockError::WouldBlock) if start.elapsed() < LOCK_WAIT => {
                std::thread::sleep(POLL)
            }
            Err(fs4::TryLockError::WouldBlock) => return Ok(false),
            Err(fs4::TryLockError::Error(e)) => return Err(e),
        }
    }
}

impl FolderLock {
    /// Takes the writer's lock in the cache folder `own` (created before).
    pub fn exclusive(own: &Path, out: &Path) -> Result<FolderLock, Diagnostic> {
        let path = own.join(LOCK_FILE);
        let cannot = |e: std::io::Error| {
            Diagnostic::new(format!("cannot lock {}: {e}", path.display())).hint(
                "sheaf's lock file must be a regular file; delete it when no build is running",
            )
        };
        let file = no_follow(OpenOptions::new().read(true).write(true).create(true))
            .open(&path)
            .map_err(cannot)?;
        if !file.metadata().map_err(cannot)?.is_file() {
            return Err(cannot(std::io::Error::other("it is not a regular file")));
        }
        if wait_for(&file, false).map_err(cannot)? {
            Ok(FolderLock { _file: file })
        } else {
            Err(Diagnostic::new(format!(
                "another sheaf build has been writing to {} for {} s",
                out.display(),
                LOCK_WAIT.as_secs()
            ))
            .hint("wait for it to finish, or stop it; nothing was written"))
        }
    }

    /// Takes the reader's lock when the folder has one; `None` when it has
    /// none (no build of this version wrote there) or it cannot be had.
    pub fn shared(own: &Path) -> Option<FolderLock> {
        let file = crate::world::open_own(&own.join(LOCK_FILE)).ok()?;
        wait_for(&file, true)
            .ok()?
            .then_some(FolderLock { _file: file })
    }
}
