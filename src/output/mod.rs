//! The output folder of a run, written so that nothing a user has is ever deleted and a crash at
//! any moment leaves either the former output, the new one, or leftovers that the next run
//! recovers.
//!
//! A run first takes a [`Claim`] on the folder, before any work: it resolves a symbolic link at the
//! path, takes the folder's lock (`lock.rs`; a second run on the same folder fails at once),
//! recovers what interrupted runs left beside it (`leftovers.rs`), and examines what the folder
//! holds (`rules.rs`): nothing, an empty folder, a former forebear output (replaced only with
//! `--force`; the former output is then kept beside it under a dated name, `keep.rs`), or
//! anything else (refused). The run then writes into a [`Staging`] folder beside the
//! output and renames it into place after examining the folder again: if it changed during the run
//! the run refuses and leaves it as it is.

pub mod cleanup;
mod fsio;
mod keep;
mod leftovers;
mod lock;
mod rules;
mod staging;

pub use fsio::{
    exchange, fs_error, rename_file_noreplace, rename_noreplace, sync_dir, sync_dirs, write_synced,
};
pub use lock::OutputLock;
pub use rules::{Kind, QUALIFICATION_FILES};
pub use staging::Staging;

use crate::analysis::Progress;
use crate::error::{Error, Result};
use rules::Found;
use std::path::{Path, PathBuf};

/// The right to write one output folder, from the start of a run until its output is in place.
/// Dropped without finishing, it releases the lock and removes the parent folders it created.
pub struct Claim {
    /// The folder as the user named it, for messages.
    shown: PathBuf,
    /// The folder written: `shown`, or the folder that a symbolic link at `shown` points to.
    dir: PathBuf,
    kind: Kind,
    /// What the folder held when the run started.
    before: Found,
    /// Declared before `created` so that the lock file goes first when dropped.
    lock: lock::OutputLock,
    created: CreatedFolders,
}

impl Claim {
    /// Claims `dir` for an output of `kind`: refuses, before any work, a folder that cannot be
    /// written, that another run is writing, that holds anything forebear did not write, or that
    /// holds a former output when `force` is not set.
    pub fn take(dir: &Path, kind: Kind, force: bool, progress: &dyn Progress) -> Result<Claim> {
        let shown = dir.to_path_buf();
        let dir = resolve(dir, kind)?;
        let created = CreatedFolders::create(parent_of(&dir))?;
        let lock = lock::OutputLock::acquire(&dir, &shown)?;
        leftovers::recover(&dir, &shown, progress);
        let before =
            rules::examine(&dir, kind).map_err(|e| fs_error("read the output folder", &dir, &e))?;
        before.check(&shown, kind, force)?;
        Ok(Claim {
            shown,
            dir,
            kind,
            before,
            lock,
            created,
        })
    }

    /// Writes `files` (name, contents) into the folder as one step: staged, synced, then renamed
    /// into place. Returns where a former output it replaced is kept (`NAME.replaced-…`).
    pub fn write_files(self, files: &[(&str, String)]) -> Result<Option<PathBuf>> {
        let staging = Staging::new(self)?;
        for (name, text) in files {
            let path = staging.path().join(name);
            write_synced(&path, text.as_bytes()).map_err(|e| fs_error("write", &path, &e))?;
            fsio::pause_for_tests();
        }
        staging.finish()
    }

    /// The run's output is in place: keep the parent folders (the lock goes when dropped).
    fn succeeded(self) {
        let Claim { lock, created, .. } = self;
        drop(lock);
        created.keep();
    }
}

/// Resolves a symbolic link at the output path to the folder it points to, which is then written
/// (the link stays as it is); refuses a link that leads nowhere or to a file, and a path without a
/// name of its own.
fn resolve(dir: &Path, kind: Kind) -> Result<PathBuf> {
    let example = match kind {
        Kind::Dossier => "results",
        Kind::Batch => "nightly",
        Kind::Targets => "study",
        Kind::Qualification => "qualification",
    };
    let no_name = |path: &Path| {
        Error::input(format!(
            "the output folder '{}' has no name of its own; give --out a new folder such as \
             '{example}'",
            path.display()
        ))
    };
    if dir.file_name().is_none() {
        return Err(no_name(dir));
    }
    match std::fs::symlink_metadata(dir) {
        Ok(meta) if meta.file_type().is_symlink() => {}
        Ok(_) => return Ok(dir.to_path_buf()),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(dir.to_path_buf()),
        Err(e) => return Err(fs_error("look at the output path", dir, &e)),
    }
    let link = std::fs::read_link(dir).unwrap_or_default();
    match std::fs::canonicalize(dir) {
        Ok(target) if target.file_name().is_none() => Err(no_name(&target)),
        Ok(target) if target.is_dir() => Ok(target),
        Ok(target) => Err(Error::input(format!(
            "the output path '{}' is a symbolic link to '{}', which is not a folder; choose \
             another --out",
            dir.display(),
            target.display()
        ))),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Err(Error::input(format!(
            "the output path '{}' is a symbolic link to '{}', which does not exist; create that \
             folder, remove the link, or choose another --out",
            dir.display(),
            link.display()
        ))),
        Err(e) => Err(fs_error("follow the symbolic link", dir, &e)),
    }
}

/// Parent folders of the output that a claim created; removed again (if still empty) unless the
/// run succeeded, so that a refused run leaves nothing behind.
struct CreatedFolders {
    folders: Vec<PathBuf>,
}

impl CreatedFolders {
    fn create(parent: &Path) -> Result<CreatedFolders> {
        let mut missing = Vec::new();
        let mut folder = parent;
        while !folder.as_os_str().is_empty() && !folder.exists() {
            missing.push(folder.to_path_buf());
            match folder.parent() {
                Some(up) => folder = up,
                None => break,
            }
        }
        let mut created = CreatedFolders {
            folders: Vec::new(),
        };
        for folder in missing.into_iter().rev() {
            match std::fs::create_dir(&folder) {
                Ok(()) => created.folders.push(folder),
                Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists && folder.is_dir() => {}
                Err(e) => return Err(fs_error("create the folder", &folder, &e)),
            }
        }
        Ok(created)
    }

    fn keep(mut self) {
        self.folders.clear();
    }
}

impl Drop for CreatedFolders {
    fn drop(&mut self) {
        for folder in self.folders.iter().rev() {
            let _ = std::fs::remove_dir(folder);
        }
    }
}

/// The folder that holds `dir` (`.` for a bare name).
pub fn parent_of(dir: &Path) -> &Path {
    dir.parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."))
}

/// `.NAME.TAG` beside `dir`.
fn sibling_path(dir: &Path, tag: &str) -> PathBuf {
    let name = dir
        .file_name()
        .map_or_else(|| "out".into(), |n| n.to_string_lossy().into_owned());
    parent_of(dir).join(format!(".{name}.{tag}"))
}

/// `.NAME.TAG-PID` beside `dir`: this process's staging folder or moved-aside former output.
fn own_sibling(dir: &Path, tag: &str) -> PathBuf {
    sibling_path(dir, &format!("{tag}-{}", std::process::id()))
}
