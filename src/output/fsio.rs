//! File-system steps of writing an output: I/O failures as the user's sentence, durable writes
//! (fsync of files and folders), a rename that never replaces, and the test hooks.

use crate::error::Error;
use std::fs::File;
use std::io::{self, ErrorKind, Write};
use std::path::Path;
use std::time::{Duration, Instant};

/// An I/O failure while writing output as one sentence for the user (exit code 2): what could not
/// be done to which path, why (from the error's kind, never from its text) and what to do. A full
/// disk, a read-only folder or a missing path is the machine's state, not a bug in forebear.
pub fn fs_error(action: &str, path: &Path, error: &io::Error) -> Error {
    let (why, what_to_do) = match error.kind() {
        ErrorKind::StorageFull | ErrorKind::QuotaExceeded => (
            "the disk is full or the disk quota is used up".to_string(),
            "free some space, or choose an --out on another disk",
        ),
        ErrorKind::FileTooLarge => (
            "the file is larger than this system allows".to_string(),
            "choose an --out on another disk",
        ),
        ErrorKind::PermissionDenied => (
            "permission denied".to_string(),
            "choose an --out in a folder you may write to, or change its permissions",
        ),
        ErrorKind::ReadOnlyFilesystem => (
            "the file system is read-only".to_string(),
            "choose an --out on a writable disk",
        ),
        ErrorKind::NotFound => (
            "it does not exist".to_string(),
            "check the path, or choose another --out",
        ),
        ErrorKind::NotADirectory => (
            "a part of the path is not a folder".to_string(),
            "check the path, or choose another --out",
        ),
        _ => (
            format!("{error}"),
            "check the path and the disk, or choose another --out",
        ),
    };
    Error::input(format!(
        "cannot {action} '{}': {why}; {what_to_do}",
        path.display()
    ))
}

/// Writes `bytes` to a new file at `path` (replacing a file of that name) and forces it to the
/// disk before returning, through the handle that wrote it.
pub fn write_synced(path: &Path, bytes: &[u8]) -> io::Result<()> {
    let mut file = File::create(path)?;
    file.write_all(bytes)?;
    file.sync_all()
}

/// Forces a folder's entries (names created, renamed or removed in it) to the disk. File systems
/// that cannot sync a folder say so with `InvalidInput` or `Unsupported`; there is nothing more to
/// do on them.
pub fn sync_dir(dir: &Path) -> io::Result<()> {
    if cfg!(not(unix)) {
        return Ok(());
    }
    match File::open(dir).and_then(|f| f.sync_all()) {
        Err(e) if matches!(e.kind(), ErrorKind::InvalidInput | ErrorKind::Unsupported) => Ok(()),
        other => other,
    }
}

/// Syncs `dir` and every folder below it (the files were synced when they were written).
pub fn sync_dirs(dir: &Path) -> io::Result<()> {
    for entry in std::fs::read_dir(dir)? {
        let entry = entry?;
        if entry.file_type()?.is_dir() {
            sync_dirs(&entry.path())?;
        }
    }
    sync_dir(dir)
}

/// Renames the folder `from` to `to` only if nothing exists at `to` (`AlreadyExists` otherwise),
/// in one step where the system offers it, so that a folder that appears at `to` at the last
/// moment is never replaced.
pub fn rename_noreplace(from: &Path, to: &Path) -> io::Result<()> {
    renameat2_noreplace(from, to).unwrap_or_else(|| rename_into_new_folder(from, to))
}

/// [`rename_noreplace`] for a file.
pub fn rename_file_noreplace(from: &Path, to: &Path) -> io::Result<()> {
    renameat2_noreplace(from, to).unwrap_or_else(|| {
        // A hard link fails if anything exists at `to`; then the staged name goes.
        std::fs::hard_link(from, to)?;
        std::fs::remove_file(from)
    })
}

/// Swaps two folders in one step (Linux `renameat2` with `RENAME_EXCHANGE`): each name then
/// leads to what the other led to, and at no moment does either name lead nowhere. `None` where
/// the system or the file system does not offer it.
pub fn exchange(a: &Path, b: &Path) -> Option<io::Result<()>> {
    #[cfg(any(target_os = "linux", target_os = "android"))]
    {
        use rustix::fs::{renameat_with, RenameFlags, CWD};
        match renameat_with(CWD, a, CWD, b, RenameFlags::EXCHANGE) {
            Ok(()) => Some(Ok(())),
            Err(e) if e == rustix::io::Errno::INVAL || e == rustix::io::Errno::NOSYS => None,
            Err(e) => Some(Err(e.into())),
        }
    }
    #[cfg(not(any(target_os = "linux", target_os = "android")))]
    {
        let _ = (a, b);
        None
    }
}

/// Linux `renameat2` (macOS `renameatx_np`) with "no replace"; `None` where the system or the
/// file system does not offer it.
fn renameat2_noreplace(from: &Path, to: &Path) -> Option<io::Result<()>> {
    #[cfg(any(target_os = "linux", target_os = "android", target_vendor = "apple"))]
    {
        use rustix::fs::{renameat_with, RenameFlags, CWD};
        match renameat_with(CWD, from, CWD, to, RenameFlags::NOREPLACE) {
            Ok(()) => Some(Ok(())),
            Err(e) if e == rustix::io::Errno::INVAL || e == rustix::io::Errno::NOSYS => None,
            Err(e) => Some(Err(e.into())),
        }
    }
    #[cfg(not(any(target_os = "linux", target_os = "android", target_vendor = "apple")))]
    {
        let _ = (from, to);
        None
    }
}

/// The portable fallback for folders: create `to` as an empty folder (which fails if anything is
/// there), then rename over it, which POSIX allows only while it is still empty.
fn rename_into_new_folder(from: &Path, to: &Path) -> io::Result<()> {
    std::fs::create_dir(to)?;
    std::fs::rename(from, to).inspect_err(|_| {
        let _ = std::fs::remove_dir(to);
    })
}

/// Test hook: `FOREBEAR_WRITE_PAUSE_MS` pauses after each staged file, so that a test can stop the
/// process in the middle of writing. Unset in normal use.
pub fn pause_for_tests() {
    if let Some(ms) = std::env::var("FOREBEAR_WRITE_PAUSE_MS")
        .ok()
        .and_then(|v| v.parse::<u64>().ok())
    {
        std::thread::sleep(Duration::from_millis(ms));
    }
}

/// Test hook: with `FOREBEAR_TEST_HOLD=<kind>:<point>` (for example `batch:before-swap`) and
/// `FOREBEAR_TEST_HOLD_FILE=<path>`, the process creates the file when it reaches that point and
/// waits until the test removes it (at most ten minutes). A test thus acts at an exact moment
/// (changes the output folder, sends a signal, kills the process) without guessing a delay.
/// Points: `before-swap` (staging complete, nothing renamed), `between-renames` (the old output
/// moved aside, the new one not yet in place), `after-renames` (the new output in place, the old
/// one not yet removed). Unset in normal use.
pub fn hold_for_tests(kind: &str, point: &str) {
    let Ok(spec) = std::env::var("FOREBEAR_TEST_HOLD") else {
        return;
    };
    let Some(file) = std::env::var_os("FOREBEAR_TEST_HOLD_FILE") else {
        return;
    };
    if spec != format!("{kind}:{point}") {
        return;
    }
    let file = Path::new(&file);
    if std::fs::write(file, format!("{}\n", std::process::id())).is_err() {
        return;
    }
    let start = Instant::now();
    while file.exists() && start.elapsed() < Duration::from_secs(600) {
        std::thread::sleep(Duration::from_millis(10));
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn io_failures_are_input_errors_named_by_their_kind() {
        let path = Path::new("results/nightly");
        let full = fs_error("write", path, &io::Error::from(ErrorKind::StorageFull));
        assert_eq!(full.exit_code(), 2);
        assert_eq!(
            full.to_string(),
            "cannot write 'results/nightly': the disk is full or the disk quota is used up; free \
             some space, or choose an --out on another disk"
        );
        let denied = fs_error(
            "create",
            path,
            &io::Error::new(ErrorKind::PermissionDenied, "words that are not read"),
        );
        assert_eq!(denied.exit_code(), 2);
        assert!(denied.to_string().contains("permission denied"));
        let read_only = fs_error(
            "write",
            path,
            &io::Error::from(ErrorKind::ReadOnlyFilesystem),
        );
        assert!(read_only.to_string().contains("read-only"));
        let other = fs_error("write", path, &io::Error::other("device gone"));
        assert_eq!(other.exit_code(), 2);
        assert!(other.to_string().contains("device gone"));
    }

    #[test]
    fn rename_noreplace_refuses_an_existing_target_and_moves_otherwise() {
        let dir = std::env::temp_dir().join(format!("forebear-noreplace-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(dir.join("from")).unwrap();
        std::fs::create_dir_all(dir.join("taken")).unwrap();
        let refused = rename_noreplace(&dir.join("from"), &dir.join("taken")).unwrap_err();
        assert_eq!(refused.kind(), ErrorKind::AlreadyExists);
        assert!(dir.join("from").is_dir());
        rename_noreplace(&dir.join("from"), &dir.join("free")).unwrap();
        assert!(dir.join("free").is_dir() && !dir.join("from").exists());
        rename_into_new_folder(&dir.join("free"), &dir.join("again")).unwrap();
        assert!(dir.join("again").is_dir() && !dir.join("free").exists());
        let _ = std::fs::remove_dir_all(&dir);
    }
}
