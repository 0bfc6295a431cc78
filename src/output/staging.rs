//! The staging folder beside an output folder, and the renames that put it in place.
//!
//! Order of [`Staging::finish`], each step durable before the next (files were synced as written):
//! sync the staging folders; examine the output folder again, under the registry's guard so that
//! a signal waits; if it is absent, rename the staging folder to it, refusing if anything appeared
//! at that moment; if it held the former output, rename that aside to `.NAME.old-PID`, check that
//! what was moved is still exactly that output, rename the staging folder into place and sync the
//! parent; only then remove the former output. A crash between the renames leaves no output
//! folder, `.NAME.old-PID` and `.NAME.partial-PID`: the next run puts the former output back.

use super::cleanup::{self, registry, unregister_staging};
use super::fsio::{fs_error, hold_for_tests, rename_noreplace, sync_dir, sync_dirs};
use super::rules::{examine, Former, Found};
use super::{own_sibling, parent_of, Claim};
use crate::error::{Error, Result};
use std::io::ErrorKind;
use std::path::{Path, PathBuf};

/// A staging folder beside an output folder: removed on a termination signal or when dropped,
/// renamed into place by [`Staging::finish`].
pub struct Staging {
    path: PathBuf,
    /// The claim on the output folder; dropped after the staging folder is removed.
    claim: Option<Claim>,
}

impl Staging {
    /// Creates the (empty) staging folder for a claimed output folder.
    pub fn new(claim: Claim) -> Result<Staging> {
        let path = own_sibling(&claim.dir, "partial");
        // Leftovers of this id were recovered when the claim was taken; one left by an earlier
        // life of the id (a restarted container) is removed here.
        let _ = std::fs::remove_dir_all(&path);
        cleanup::register_staging(&path);
        let staging = Staging {
            path,
            claim: Some(claim),
        };
        std::fs::create_dir(&staging.path)
            .map_err(|e| fs_error("create the staging folder", &staging.path, &e))?;
        Ok(staging)
    }

    /// The staging folder, to write into.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Moves the staging folder into place, replacing the output folder only if it still holds
    /// what it held when the run started; refuses (exit code 2, the folder left as it is) if it
    /// changed.
    /// Returns where the former output it replaced is kept, if it replaced one.
    pub fn finish(mut self) -> Result<Option<PathBuf>> {
        let claim = self.claim.as_ref().expect("a staging folder has its claim");
        let kind = claim.kind.name();
        sync_dirs(&self.path).map_err(|e| fs_error("write", &self.path, &e))?;
        let parent = parent_of(&claim.dir).to_path_buf();
        sync_dir(&parent).map_err(|e| fs_error("write in", &parent, &e))?;
        hold_for_tests(kind, "before-swap");
        let mut guard = registry();
        let replaced = self.swap(claim);
        if replaced.is_ok() {
            // Renamed into place: no longer this process's to remove.
            guard.staging.retain(|p| p != &self.path);
        }
        drop(guard);
        // On failure the staging folder is removed when `self` drops, before the claim.
        let replaced = replaced?;
        let claim = self.claim.take().expect("a staging folder has its claim");
        sync_dir(&parent).map_err(|e| fs_error("write in", &parent, &e))?;
        let mut kept = None;
        if let Some((old, _former)) = replaced {
            hold_for_tests(kind, "after-renames");
            kept = keep_former_output(&old, &claim.dir);
            let _ = sync_dir(&parent);
        }
        claim.succeeded();
        Ok(kept)
    }

    /// The renames. Returns the moved-aside former output, if there was one.
    fn swap(&self, claim: &Claim) -> Result<Option<(PathBuf, Former)>> {
        let dir = &claim.dir;
        let now = examine(dir, claim.kind).map_err(|e| fs_error("read", dir, &e))?;
        let move_in = |from: &Path| {
            rename_noreplace(from, dir).map_err(|e| match e.kind() {
                ErrorKind::AlreadyExists | ErrorKind::DirectoryNotEmpty => {
                    changed(claim, "a folder appeared at it at the last moment")
                }
                _ => fs_error("move the output into", dir, &e),
            })
        };
        match (&claim.before, now) {
            (_, Found::Absent) => move_in(&self.path).map(|()| None),
            // An empty folder that was there when the run started may be replaced: nothing is
            // lost. The rename fails if a file arrived in it meanwhile.
            (Found::Empty, Found::Empty) => std::fs::rename(&self.path, dir)
                .map(|()| None)
                .map_err(|e| match e.kind() {
                    ErrorKind::DirectoryNotEmpty | ErrorKind::AlreadyExists => {
                        changed(claim, "files appeared in it at the last moment")
                    }
                    _ => fs_error("move the output into", dir, &e),
                }),
            (Found::Former(before), Found::Former(now)) if before.identity == now.identity => {
                let old = own_sibling(dir, "old");
                std::fs::rename(dir, &old)
                    .map_err(|e| fs_error("move the former output aside from", dir, &e))?;
                // What was moved must still be exactly the output examined: anything that arrived
                // since would otherwise be removed with it.
                let moved = examine(&old, claim.kind);
                let former = match moved {
                    Ok(Found::Former(moved)) if moved == now => moved,
                    other => {
                        let _ = std::fs::rename(&old, dir);
                        let what = other.map_or_else(|e| e.to_string(), |f| f.as_change());
                        return Err(changed(claim, &what));
                    }
                };
                hold_for_tests(claim.kind.name(), "between-renames");
                if let Err(e) = move_in(&self.path) {
                    // Put the former output back rather than leave neither.
                    let _ = std::fs::rename(&old, dir);
                    return Err(e);
                }
                Ok(Some((old, former)))
            }
            (_, now) => Err(changed(claim, &now.as_change())),
        }
    }
}

impl Drop for Staging {
    fn drop(&mut self) {
        // Still holding its claim: not renamed into place (a failure, or a panic while writing).
        if self.claim.is_some() {
            let _ = std::fs::remove_dir_all(&self.path);
            unregister_staging(&self.path);
        }
    }
}

/// Keeps the former output under its dated name once the new one is in place. If that fails
/// (the disk refused), it stays as `.NAME.old-PID`, which the next run keeps the same way; the run
/// itself has succeeded.
fn keep_former_output(old: &Path, dir: &Path) -> Option<PathBuf> {
    match super::keep::keep_former(old, dir) {
        Ok(kept) => Some(kept),
        Err(e) => {
            eprintln!(
                "forebear: warning: {}",
                crate::text::for_terminal(&format!(
                    "the former output moved aside to '{}' could not be renamed to its dated name \
                     ({e}); the new output is in place; the next run on it will try again",
                    old.display()
                ))
            );
            None
        }
    }
}

fn changed(claim: &Claim, what: &str) -> Error {
    Error::input(format!(
        "the output folder '{}' changed while forebear ran ({what}); it was left as it is and \
         nothing was written; move it away or choose another --out, and run again",
        claim.shown.display()
    ))
}
