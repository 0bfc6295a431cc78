//! One run at a time per output folder: an exclusive lock on the file `.NAME.lock` beside the
//! folder, held from the start of the run until its output is in place. The system releases the
//! lock when the process ends in any way (SIGKILL included), so a lock is never stale; the file
//! holds the process id for the message of a run that finds it taken.

use super::fsio::fs_error;
use super::{cleanup, sibling_path};
use crate::error::{Error, Result};
use std::fs::{File, OpenOptions, TryLockError};
use std::io::Write;
use std::path::{Path, PathBuf};

/// The lock of one output folder, released (and its file removed) when dropped.
pub struct OutputLock {
    path: PathBuf,
    /// Kept open: closing it releases the lock.
    _file: File,
}

impl OutputLock {
    /// Takes the lock of the output folder `dir` (`shown` is the folder as the user named it), or
    /// refuses when another run holds it.
    pub fn acquire(dir: &Path, shown: &Path) -> Result<OutputLock> {
        let path = sibling_path(dir, "lock");
        // The file is removed on release while locked; a run that opened it just before must then
        // find that the name no longer leads to the file it locked, and start again.
        for _ in 0..100 {
            let mut file = OpenOptions::new()
                .read(true)
                .write(true)
                .create(true)
                .truncate(false)
                .open(&path)
                .map_err(|e| fs_error("create files in", super::parent_of(dir), &e))?;
            match file.try_lock() {
                Ok(()) => {}
                Err(TryLockError::WouldBlock) => return Err(busy(&path, shown)),
                // A file system without locks: run unlocked; the checks before the final rename
                // still refuse to replace anything that appeared meanwhile.
                Err(TryLockError::Error(e)) if e.kind() == std::io::ErrorKind::Unsupported => {}
                Err(TryLockError::Error(e)) => return Err(fs_error("lock", &path, &e)),
            }
            if !same_file(&file, &path) {
                continue;
            }
            let id = format!("{}\n", std::process::id());
            file.set_len(0)
                .and_then(|()| file.write_all(id.as_bytes()))
                .map_err(|e| fs_error("write the lock file", &path, &e))?;
            cleanup::register_lock(&path);
            return Ok(OutputLock { path, _file: file });
        }
        Err(busy(&path, shown))
    }
}

impl Drop for OutputLock {
    fn drop(&mut self) {
        // Removed while still locked (the file closes after this), so no other run can hold it.
        let _ = std::fs::remove_file(&self.path);
        cleanup::unregister_lock(&self.path);
    }
}

fn busy(path: &Path, shown: &Path) -> Error {
    let holder = std::fs::read_to_string(path)
        .ok()
        .and_then(|t| t.trim().parse::<u32>().ok())
        .map_or_else(String::new, |pid| format!(" (process {pid})"));
    Error::input(format!(
        "another forebear run{holder} is writing the output folder '{}'; wait until it has \
         finished, or choose another --out",
        shown.display()
    ))
}

/// Whether `path` still names the open `file`.
fn same_file(file: &File, path: &Path) -> bool {
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        match (file.metadata(), std::fs::metadata(path)) {
            (Ok(open), Ok(named)) => open.dev() == named.dev() && open.ino() == named.ino(),
            _ => false,
        }
    }
    #[cfg(not(unix))]
    {
        let _ = (file, path);
        true
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_second_lock_on_one_folder_is_refused_until_the_first_is_released() {
        let dir = std::env::temp_dir().join(format!("forebear-lock-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        let out = dir.join("out");
        let first = OutputLock::acquire(&out, &out).unwrap();
        let refused = OutputLock::acquire(&out, &out).err().expect("refused");
        assert_eq!(refused.exit_code(), 2);
        let text = refused.to_string();
        assert!(
            text.contains(&format!("process {}", std::process::id())),
            "{text}"
        );
        drop(first);
        assert!(!dir.join(".out.lock").exists(), "the lock file is removed");
        let again = OutputLock::acquire(&out, &out).unwrap();
        drop(again);
        let _ = std::fs::remove_dir_all(&dir);
    }
}
