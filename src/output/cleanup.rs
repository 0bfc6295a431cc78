//! What a termination signal must remove: this process's staging folders and lock files. The
//! forebear binary installs the handler ([`install_signal_handler`]) before it runs a command; a
//! program that embeds the library keeps its own signal handling (nothing here installs a handler
//! on its behalf, so its next interrupt is its own to handle), and a staging folder or lock left by
//! an interrupted embedded call is recovered by the next run into the same folder. On SIGINT,
//! SIGTERM or SIGHUP (a closed terminal or a dropped remote session) the binary removes them and
//! exits with 128 + the signal's number; a signal that was ignored when the process
//! started (`nohup`, a background job) stays ignored. SIGKILL cannot be caught: the next run into the
//! same folder recovers its leftovers (`leftovers.rs`).

use std::path::{Path, PathBuf};
use std::sync::{Mutex, MutexGuard};

/// Paths of this process that a signal must remove.
pub struct Registry {
    /// Staging folders being written.
    pub staging: Vec<PathBuf>,
    /// Lock files held.
    locks: Vec<PathBuf>,
}

/// The registry. Its guard is also held while a finished output is renamed into place, so a
/// signal waits for the renames instead of interrupting them.
static REGISTRY: Mutex<Registry> = Mutex::new(Registry {
    staging: Vec::new(),
    locks: Vec::new(),
});

/// The registry, locked (a panic elsewhere while holding it does not stop the clean-up).
pub fn registry() -> MutexGuard<'static, Registry> {
    REGISTRY.lock().unwrap_or_else(|e| e.into_inner())
}

/// Records a staging folder.
pub fn register_staging(path: &Path) {
    registry().staging.push(path.to_path_buf());
}

/// Forgets a staging folder (renamed into place or removed).
pub fn unregister_staging(path: &Path) {
    registry().staging.retain(|p| p != path);
}

/// Records a lock file.
pub fn register_lock(path: &Path) {
    registry().locks.push(path.to_path_buf());
}

/// Forgets a lock file (released).
pub fn unregister_lock(path: &Path) {
    registry().locks.retain(|p| p != path);
}

/// Installs the handler that removes the registered staging folders and locks on SIGINT, SIGTERM
/// or SIGHUP and exits with 128 + the signal's number. For the forebear binary only: a library
/// caller must not call it unless it wants its process to exit on those signals.
#[cfg(unix)]
pub fn install_signal_handler() {
    use signal_hook::consts::{SIGHUP, SIGINT, SIGTERM};
    static INSTALL: std::sync::Once = std::sync::Once::new();
    INSTALL.call_once(|| {
        // A signal ignored when the process started stays ignored: `nohup` ignores SIGHUP, and a
        // shell ignores SIGINT for a job it starts in the background.
        let handled: Vec<i32> = [SIGINT, SIGTERM, SIGHUP]
            .into_iter()
            .filter(|&s| !ignored(s))
            .collect();
        let Ok(mut signals) = signal_hook::iterator::Signals::new(handled) else {
            return;
        };
        std::thread::spawn(move || {
            if let Some(signal) = signals.forever().next() {
                let registry = registry();
                for path in &registry.staging {
                    let _ = std::fs::remove_dir_all(path);
                }
                // Removed while this process still holds the locks (they close at exit).
                for path in &registry.locks {
                    let _ = std::fs::remove_file(path);
                }
                std::process::exit(128 + signal);
            }
        });
    });
}

/// Whether `signal` is ignored (its disposition is SIG_IGN).
#[cfg(unix)]
fn ignored(signal: i32) -> bool {
    // SAFETY: with a null new action, sigaction only writes the current disposition into `current`,
    // a zeroed plain C struct that it fully owns for the call.
    unsafe {
        let mut current: libc::sigaction = std::mem::zeroed();
        libc::sigaction(signal, std::ptr::null(), &mut current) == 0
            && current.sa_sigaction == libc::SIG_IGN
    }
}

/// Nothing to install where there are no POSIX signals.
#[cfg(not(unix))]
pub fn install_signal_handler() {}
