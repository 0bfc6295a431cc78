//! Leftovers of runs that ended without cleaning up (SIGKILL, a power cut, a crash), found beside
//! the output folder when the next run takes its lock:
//!
//! - `.NAME.partial-PID`: a staging folder; removed (it never was an output);
//! - `.NAME.old-PID`: the former output, moved aside by a `--force` run to make room for the new
//!   one. If the new output never arrived (NAME is absent), the former output is put back; if it
//!   did (NAME holds a forebear output), the former one is kept under its dated name
//!   (`NAME.replaced-…`, `keep.rs`) as that run would have done.
//!
//! A leftover whose process still runs is left alone, and so is anything that does not hold what
//! its name promises. The run says what it did in one progress line.

use super::rules::{examine_any, Found};
use crate::analysis::Progress;
use std::path::{Path, PathBuf};

/// One leftover beside the output folder.
struct Leftover {
    path: PathBuf,
    name: String,
    staging: bool,
    pid: u32,
}

/// Recovers the leftovers beside `dir` (the caller holds its lock); `shown` is the folder as the
/// user named it.
pub fn recover(dir: &Path, shown: &Path, progress: &dyn Progress) {
    let leftovers = find(dir);
    if leftovers.is_empty() {
        return;
    }
    let mut done = Vec::new();
    for leftover in leftovers.iter().filter(|l| !l.staging) {
        done.push(recover_former(dir, leftover));
    }
    for leftover in leftovers.iter().filter(|l| l.staging) {
        done.push(recover_staging(leftover));
    }
    progress.say(&format!(
        "found what interrupted runs left beside '{}': {}",
        shown.display(),
        done.join("; ")
    ));
}

fn find(dir: &Path) -> Vec<Leftover> {
    let Some(name) = dir.file_name().map(|n| n.to_string_lossy().into_owned()) else {
        return Vec::new();
    };
    let prefix = format!(".{name}.");
    let Ok(entries) = std::fs::read_dir(super::parent_of(dir)) else {
        return Vec::new();
    };
    let mut found: Vec<Leftover> = entries
        .flatten()
        .filter_map(|entry| {
            let file_name = entry.file_name().to_string_lossy().into_owned();
            let (tag, pid) = file_name.strip_prefix(&prefix)?.split_once('-')?;
            let pid = pid.parse::<u32>().ok()?;
            let staging = match tag {
                "partial" => true,
                "old" => false,
                _ => return None,
            };
            Some(Leftover {
                path: entry.path(),
                name: file_name,
                staging,
                pid,
            })
        })
        .collect();
    found.sort_by_key(|l| l.pid);
    found
}

/// Whether the process that left something is still running. The lock of the output folder is
/// held by the caller, so a live process of a current build cannot be writing here; a live id
/// may be an older build without the lock, or the id reused, and either way its folder is kept.
/// This process's own id is not live in that sense: a leftover with it comes from an earlier life
/// of the id (a restarted container), since this run creates its folders only after recovering.
fn still_running(pid: u32) -> bool {
    pid != std::process::id() && process_is_running(pid)
}

/// Whether a process id is alive; where that cannot be told, assume it is (keep its folder).
fn process_is_running(pid: u32) -> bool {
    #[cfg(unix)]
    {
        let Some(pid) = i32::try_from(pid)
            .ok()
            .and_then(rustix::process::Pid::from_raw)
        else {
            return false;
        };
        // Signal 0 checks existence; "not permitted" means it exists under another user.
        !matches!(
            rustix::process::test_kill_process(pid),
            Err(rustix::io::Errno::SRCH)
        )
    }
    #[cfg(not(unix))]
    {
        let _ = pid;
        true
    }
}

fn recover_staging(leftover: &Leftover) -> String {
    let name = &leftover.name;
    if still_running(leftover.pid) {
        return format!(
            "left '{name}' alone (its process {} still runs)",
            leftover.pid
        );
    }
    match std::fs::remove_dir_all(&leftover.path) {
        Ok(()) => format!("removed the unfinished '{name}'"),
        Err(e) => format!("could not remove the unfinished '{name}' ({e}); remove it by hand"),
    }
}

fn recover_former(dir: &Path, leftover: &Leftover) -> String {
    let name = &leftover.name;
    if still_running(leftover.pid) {
        return format!(
            "left '{name}' alone (its process {} still runs)",
            leftover.pid
        );
    }
    let keep =
        |why: &str| format!("left '{name}' as it is ({why}); look at it and move it by hand");
    match examine_any(&leftover.path) {
        Ok(Found::Former(_)) => {}
        Ok(_) => return keep("it does not hold a forebear output"),
        Err(e) => return keep(&format!("it cannot be read: {e}")),
    };
    match examine_any(dir) {
        // The replacing run stopped before its output arrived: the former output is the result.
        Ok(Found::Absent) => match std::fs::rename(&leftover.path, dir) {
            Ok(()) => {
                let _ = super::fsio::sync_dir(super::parent_of(dir));
                format!("put back the former output from '{name}' (the run replacing it stopped before its output was in place)")
            }
            Err(e) => keep(&format!("it could not be moved back: {e}")),
        },
        // The replacing run's output arrived; the former output is what it was replacing.
        Ok(Found::Former(_)) => match super::keep::keep_former(&leftover.path, dir) {
            Ok(kept) => format!(
                "kept '{name}', a former output already replaced, as '{}'",
                kept.file_name().unwrap_or_default().to_string_lossy()
            ),
            Err(e) => keep(&format!("it could not be renamed to its dated name: {e}")),
        },
        Ok(_) => keep("the output folder now holds something other than a forebear output"),
        Err(e) => keep(&format!("the output folder cannot be read: {e}")),
    }
}
