//! Adding a statement and its signature to `DIR/signatures/` so that both appear together or not
//! at all, and no signature there is ever replaced.
//!
//! The caller holds the dossier's lock (the one `analyze` takes), so no other forebear run writes
//! the dossier meanwhile. A new `signatures/` folder is built beside the dossier as
//! `.NAME.signing-PID`: a copy of every signature already there plus the new pair, each file
//! synced. It is renamed into place when there was no folder; otherwise the two folders are
//! swapped in one step (Linux `RENAME_EXCHANGE`) and the old one removed. Where the system cannot
//! swap, the old folder is moved aside first and put back if the new one cannot be moved in. A
//! crash leaves at most a `.NAME.signing-…` folder beside the dossier, which the next `sign` of
//! that dossier removes (or, for former signatures moved aside, puts back).

use super::SIGNATURES_FOLDER;
use crate::error::{Error, Result};
use crate::output::{
    exchange, fs_error, parent_of, rename_noreplace, sync_dir, sync_dirs, write_synced,
};
use std::path::{Path, PathBuf};

/// Writes `new` (name, contents) into `dir/signatures/` beside the `existing` files (their names,
/// as listed when the number was chosen), as one step.
pub fn add_files(dir: &Path, existing: &[String], new: &[(String, String)]) -> Result<()> {
    let folder = dir.join(SIGNATURES_FOLDER);
    remove_stale_staging(dir);
    let staging = StagingFolder::create(sibling(dir, &format!("signing-{}", std::process::id())))?;
    for name in existing {
        let from = folder.join(name);
        let bytes = std::fs::read(&from).map_err(|e| fs_error("read", &from, &e))?;
        let to = staging.path.join(name);
        write_synced(&to, &bytes).map_err(|e| fs_error("write", &to, &e))?;
    }
    for (name, text) in new {
        let to = staging.path.join(name);
        write_synced(&to, text.as_bytes()).map_err(|e| fs_error("write", &to, &e))?;
    }
    sync_dirs(&staging.path).map_err(|e| fs_error("write", &staging.path, &e))?;
    if super::signature_folder_names(dir)? != existing {
        return Err(Error::input(format!(
            "'{}' changed while forebear signed; nothing was written; run `forebear sign` again",
            folder.display()
        )));
    }
    if existing.is_empty() && !folder.exists() {
        rename_noreplace(&staging.path, &folder)
            .map_err(|e| fs_error("move the signatures into", &folder, &e))?;
    } else {
        swap_in(&staging.path, &folder, dir)?;
    }
    staging.placed();
    sync_dir(dir).map_err(|e| fs_error("write in", dir, &e))
}

/// Puts the folder `new` at `folder`, where a folder is already; the old one is removed.
fn swap_in(new: &Path, folder: &Path, dir: &Path) -> Result<()> {
    match exchange(new, folder) {
        Some(Ok(())) => {
            // `new` now names the former folder.
            let _ = std::fs::remove_dir_all(new);
            Ok(())
        }
        Some(Err(e)) => Err(fs_error("move the signatures into", folder, &e)),
        None => {
            let aside = sibling(dir, &format!("signing-old-{}", std::process::id()));
            std::fs::rename(folder, &aside)
                .map_err(|e| fs_error("move the former signatures aside from", folder, &e))?;
            if let Err(e) = rename_noreplace(new, folder) {
                let _ = std::fs::rename(&aside, folder);
                return Err(fs_error("move the signatures into", folder, &e));
            }
            let _ = std::fs::remove_dir_all(&aside);
            Ok(())
        }
    }
}

/// `.NAME.TAG` beside the dossier folder `dir`.
fn sibling(dir: &Path, tag: &str) -> PathBuf {
    let name = dir
        .file_name()
        .map_or_else(|| "dossier".into(), |n| n.to_string_lossy().into_owned());
    parent_of(dir).join(format!(".{name}.{tag}"))
}

/// Tidies what an interrupted `sign` left beside the dossier (the caller holds the lock, so no run
/// is using it): a staging folder `.NAME.signing-PID` is removed; former signatures moved aside as
/// `.NAME.signing-old-PID` are put back when `signatures/` is missing, and kept otherwise.
fn remove_stale_staging(dir: &Path) {
    let Some(name) = dir.file_name().map(|n| n.to_string_lossy().into_owned()) else {
        return;
    };
    let prefix = format!(".{name}.signing-");
    let Ok(entries) = std::fs::read_dir(parent_of(dir)) else {
        return;
    };
    let folder = dir.join(SIGNATURES_FOLDER);
    for entry in entries.flatten() {
        let file_name = entry.file_name().to_string_lossy().into_owned();
        let Some(tag) = file_name.strip_prefix(&prefix) else {
            continue;
        };
        if tag.bytes().all(|b| b.is_ascii_digit()) {
            let _ = std::fs::remove_dir_all(entry.path());
        } else if tag.starts_with("old-") && !folder.exists() {
            let _ = std::fs::rename(entry.path(), &folder);
        }
    }
}

/// The staging folder, removed when dropped unless it was moved into place.
struct StagingFolder {
    path: PathBuf,
    placed: bool,
}

impl StagingFolder {
    fn create(path: PathBuf) -> Result<StagingFolder> {
        std::fs::create_dir(&path).map_err(|e| fs_error("create the folder", &path, &e))?;
        Ok(StagingFolder {
            path,
            placed: false,
        })
    }

    fn placed(mut self) {
        self.placed = true;
    }
}

impl Drop for StagingFolder {
    fn drop(&mut self) {
        if !self.placed {
            let _ = std::fs::remove_dir_all(&self.path);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn scratch(name: &str) -> PathBuf {
        let dir =
            std::env::temp_dir().join(format!("forebear-place-{}-{name}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(dir.join("d")).unwrap();
        dir
    }

    #[test]
    fn leftovers_of_an_interrupted_sign_are_removed_or_put_back() {
        let dir = scratch("leftovers");
        let dossier = dir.join("d");
        std::fs::create_dir(dir.join(".d.signing-123")).unwrap();
        std::fs::create_dir(dir.join(".d.signing-old-77")).unwrap();
        std::fs::write(dir.join(".d.signing-old-77/1-prepared.json"), "{}").unwrap();
        std::fs::create_dir(dir.join(".other.signing-5")).unwrap();
        remove_stale_staging(&dossier);
        assert!(!dir.join(".d.signing-123").exists());
        assert!(!dir.join(".d.signing-old-77").exists());
        assert!(dossier.join("signatures/1-prepared.json").is_file());
        assert!(dir.join(".other.signing-5").exists());
        let _ = std::fs::remove_dir_all(&dir);
    }

    #[test]
    fn a_pair_is_added_beside_the_signatures_there_and_replaces_none() {
        let dir = scratch("add");
        let dossier = dir.join("d");
        let pair = |n: u32| {
            [
                (format!("{n}-prepared.json"), format!("statement {n}")),
                (format!("{n}-prepared.json.sig"), format!("signature {n}")),
            ]
        };
        add_files(&dossier, &[], &pair(1)).unwrap();
        let existing = crate::sign::signature_folder_names(&dossier).unwrap();
        add_files(&dossier, &existing, &pair(2)).unwrap();
        let read = |name: &str| std::fs::read_to_string(dossier.join("signatures").join(name));
        assert_eq!(read("1-prepared.json").unwrap(), "statement 1");
        assert_eq!(read("2-prepared.json.sig").unwrap(), "signature 2");
        assert_eq!(
            crate::sign::signature_folder_names(&dossier).unwrap().len(),
            4
        );
        // A folder that changed since its names were listed is left as it is.
        let refused = add_files(&dossier, &existing, &pair(3)).unwrap_err();
        assert_eq!(refused.exit_code(), 2);
        assert!(read("3-prepared.json").is_err());
        let mut beside: Vec<String> = std::fs::read_dir(&dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        beside.sort();
        assert_eq!(beside, ["d"]);
        let _ = std::fs::remove_dir_all(&dir);
    }
}
