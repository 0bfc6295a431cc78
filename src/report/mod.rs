//! Renderers: each turns one [`Finding`] into one file. Nothing here recomputes statistics.

pub mod figures;
pub mod html;
pub mod json;
pub mod markdown;
pub mod tables;

use crate::analysis::Analysed;
use crate::error::{Error, Result};
use crate::finding::Finding;
use crate::manifest::{Manifest, MANIFEST_FILE};
use std::path::{Path, PathBuf};
use std::sync::Mutex;

/// One output format.
pub trait Renderer {
    /// File name inside the output directory.
    fn file_name(&self) -> &'static str;
    /// The file's text.
    fn render(&self, finding: &Finding) -> Result<String>;
}

/// Every renderer of the dossier, in writing order.
pub fn renderers() -> Vec<Box<dyn Renderer>> {
    vec![
        Box::new(json::Json),
        Box::new(markdown::Markdown),
        Box::new(html::Html),
        Box::new(tables::StabilityCsv),
        Box::new(tables::TraceCsv),
    ]
}

/// The edges of the member graph that come from mutual membership: `edges` lists them first,
/// then the pairs the collider test joined.
pub fn mutual_edges(finding: &Finding) -> &[[String; 2]] {
    let joined = finding.collider_tests.iter().filter(|t| t.joined).count();
    &finding.edges[..finding.edges.len().saturating_sub(joined)]
}

/// The edges of the member graph that the collider test added (calibrated rule).
pub fn collider_edges(finding: &Finding) -> &[[String; 2]] {
    &finding.edges[mutual_edges(finding).len()..]
}

/// Names a forebear output folder may hold besides the files being written now: what this and
/// earlier layouts of the dossier write (DESIGN.md), so that re-running replaces them all.
const DOSSIER_NAMES: [&str; 8] = [
    "result.json",
    "stability.csv",
    "trace.csv",
    "partial.json",
    "dossier.md",
    "dossier.html",
    "manifest.json",
    "figures",
];

/// The files whose `schema` proves that forebear wrote a folder.
const SIGNED_FILES: [&str; 2] = ["result.json", "partial.json"];

/// Writes every rendered file into `dir` as one step: the files are rendered first, written into a
/// staging directory beside `dir`, and the staging directory is renamed into place. A failure at
/// any point leaves no partial output. An existing `dir` is replaced only if it is empty, or if it
/// holds a previous forebear result and nothing else and `force` is set (see
/// [`check_output_folder`]).
///
/// The manifest (`manifest.json`) is written with them and holds the SHA-256 of every other file.
pub fn write_dossier(analysed: &Analysed, dir: &Path, force: bool) -> Result<()> {
    let mut files = render_all(&analysed.finding)?;
    let manifest = Manifest::new(analysed, &files);
    files.push((MANIFEST_FILE, manifest.to_text()));
    write_files_atomically(dir, &files, force)
}

/// Every file of the dossier except the manifest, rendered, in writing order.
pub fn render_all(finding: &Finding) -> Result<Vec<(&'static str, String)>> {
    renderers()
        .iter()
        .map(|r| r.render(finding).map(|text| (r.file_name(), text)))
        .collect()
}

/// Staging folders of this process that a termination signal must remove; the lock is also held
/// while a finished staging folder is moved into place, so a signal never interrupts the swap.
static STAGING: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

/// On SIGINT or SIGTERM, removes this process's staging folders before exiting (128 + signal), so
/// an interrupted run leaves neither a partial dossier nor a stray staging folder. SIGKILL cannot
/// be caught: its leftovers are removed by the next run into the same folder.
#[cfg(unix)]
fn remove_staging_on_signal() {
    use signal_hook::consts::{SIGINT, SIGTERM};
    static INSTALL: std::sync::Once = std::sync::Once::new();
    INSTALL.call_once(|| {
        let Ok(mut signals) = signal_hook::iterator::Signals::new([SIGINT, SIGTERM]) else {
            return;
        };
        std::thread::spawn(move || {
            if let Some(signal) = signals.forever().next() {
                let staging = STAGING.lock().unwrap_or_else(|e| e.into_inner());
                for path in staging.iter() {
                    let _ = std::fs::remove_dir_all(path);
                }
                std::process::exit(128 + signal);
            }
        });
    });
}

#[cfg(not(unix))]
fn remove_staging_on_signal() {}

/// Test hook: `FOREBEAR_WRITE_PAUSE_MS` pauses after each staged file, so that a test can stop the
/// process in the middle of writing. Unset in normal use.
fn pause_for_tests() {
    if let Some(ms) = std::env::var("FOREBEAR_WRITE_PAUSE_MS")
        .ok()
        .and_then(|v| v.parse::<u64>().ok())
    {
        std::thread::sleep(std::time::Duration::from_millis(ms));
    }
}

/// Removes staging folders of `dir` left by runs that were killed (their process is gone).
fn remove_stale_staging(dir: &Path) {
    let Some(name) = dir.file_name().map(|n| n.to_string_lossy().into_owned()) else {
        return;
    };
    let prefix = format!(".{name}.partial-");
    let Ok(entries) = std::fs::read_dir(parent_of(dir)) else {
        return;
    };
    for entry in entries.flatten() {
        let file_name = entry.file_name().to_string_lossy().into_owned();
        let Some(pid) = file_name
            .strip_prefix(&prefix)
            .and_then(|p| p.parse::<u32>().ok())
        else {
            continue;
        };
        if pid != std::process::id() && !process_is_running(pid) {
            let _ = std::fs::remove_dir_all(entry.path());
        }
    }
}

/// Whether a process id is alive; where that cannot be told, assume it is (keep its folder).
fn process_is_running(pid: u32) -> bool {
    if cfg!(target_os = "linux") {
        Path::new(&format!("/proc/{pid}")).exists()
    } else {
        true
    }
}

/// Writes `files` (name, contents) into `dir` as one step, as described at [`write_dossier`].
pub fn write_files_atomically(dir: &Path, files: &[(&str, String)], force: bool) -> Result<()> {
    let extra: Vec<&str> = files.iter().map(|(name, _)| *name).collect();
    check_replaceable(dir, &extra, force)?;
    let staging = Staging::new(dir)?;
    for (name, text) in files {
        std::fs::write(staging.path().join(name), text)
            .map_err(|e| Error::internal(format!("cannot write '{name}': {e}")))?;
        pause_for_tests();
    }
    staging.finish()
}

/// A staging folder beside an output folder: removed on SIGINT/SIGTERM or when dropped, renamed
/// into place by [`Staging::finish`]. The caller checks beforehand that the output folder may be
/// replaced.
pub struct Staging {
    path: PathBuf,
    dir: PathBuf,
    finished: bool,
}

impl Staging {
    /// Creates the (empty) staging folder for `dir`, removing leftovers of killed runs.
    pub fn new(dir: &Path) -> Result<Staging> {
        let parent = parent_of(dir);
        std::fs::create_dir_all(parent).map_err(|e| {
            Error::input(format!(
                "cannot create output folder '{}': {e}",
                parent.display()
            ))
        })?;
        remove_stale_staging(dir);
        let path = sibling(dir, "partial");
        // A staging folder of this name can only be left over from a killed run with the same id.
        let _ = std::fs::remove_dir_all(&path);
        remove_staging_on_signal();
        STAGING
            .lock()
            .unwrap_or_else(|e| e.into_inner())
            .push(path.clone());
        let staging = Staging {
            path,
            dir: dir.to_path_buf(),
            finished: false,
        };
        std::fs::create_dir(&staging.path)
            .map_err(|e| Error::input(format!("cannot write into '{}': {e}", parent.display())))?;
        Ok(staging)
    }

    /// The staging folder, to write into.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Moves the staging folder into place, replacing the output folder.
    pub fn finish(mut self) -> Result<()> {
        let mut registered = STAGING.lock().unwrap_or_else(|e| e.into_inner());
        let swapped = swap_into_place(&self.path, &self.dir);
        registered.retain(|p| p != &self.path);
        drop(registered);
        self.finished = swapped.is_ok();
        swapped
    }
}

impl Drop for Staging {
    fn drop(&mut self) {
        if !self.finished {
            let _ = std::fs::remove_dir_all(&self.path);
            STAGING
                .lock()
                .unwrap_or_else(|e| e.into_inner())
                .retain(|p| p != &self.path);
        }
    }
}

/// Checks, before any work is done, that `dir` can receive a dossier: it does not exist, or it is
/// an empty folder, or (with `force`) a folder holding only a previous forebear result. A previous
/// dossier is never replaced without `force`; anything that forebear did not write is refused even
/// with it, since the replacement would delete it.
pub fn check_output_folder(dir: &Path, force: bool) -> Result<()> {
    let ours: Vec<&str> = renderers().iter().map(|r| r.file_name()).collect();
    check_replaceable(dir, &ours, force)
}

fn check_replaceable(dir: &Path, also_ours: &[&str], force: bool) -> Result<()> {
    let Some(entries) = existing_entries(dir, "results")? else {
        return Ok(());
    };
    let foreign = entries.iter().find(|name| {
        !DOSSIER_NAMES.contains(&name.as_str()) && !also_ours.contains(&name.as_str())
    });
    let refuse = |why: String| {
        Err(Error::input(format!(
            "the output folder '{}' {why}, which replacing the folder would delete; choose another --out \
             or empty it",
            dir.display()
        )))
    };
    if let Some(name) = foreign {
        return refuse(format!("holds '{name}', a file forebear did not write"));
    }
    if !SIGNED_FILES
        .iter()
        .any(|name| written_by_forebear(&dir.join(name)))
    {
        return refuse("holds files but no result.json written by forebear".to_string());
    }
    if !force {
        return Err(Error::input(format!(
            "the output folder '{}' already holds a forebear result; pass --force to replace it, \
             or choose another --out",
            dir.display()
        )));
    }
    Ok(())
}

/// The entries of an output folder that may be replaced, or `None` when there is nothing to replace
/// (the folder does not exist or is empty). Refuses a path without a name of its own (`example`
/// is the folder name suggested instead) and a path that is not a folder.
pub(crate) fn existing_entries(dir: &Path, example: &str) -> Result<Option<Vec<String>>> {
    if dir.file_name().is_none() {
        return Err(Error::input(format!(
            "the output folder '{}' has no name of its own; give --out a new folder such as '{example}'",
            dir.display()
        )));
    }
    if !dir.exists() {
        return Ok(None);
    }
    if !dir.is_dir() {
        return Err(Error::input(format!(
            "the output path '{}' exists and is not a folder; choose another --out",
            dir.display()
        )));
    }
    let entries: Vec<String> = std::fs::read_dir(dir)
        .and_then(|d| {
            d.map(|e| e.map(|e| e.file_name().to_string_lossy().into_owned()))
                .collect()
        })
        .map_err(|e| {
            Error::input(format!(
                "cannot read the output folder '{}': {e}",
                dir.display()
            ))
        })?;
    Ok((!entries.is_empty()).then_some(entries))
}

/// Whether `path` is a JSON file that forebear wrote (its `schema` names a forebear layout).
pub(crate) fn written_by_forebear(path: &Path) -> bool {
    let Ok(text) = std::fs::read_to_string(path) else {
        return false;
    };
    serde_json::from_str::<serde_json::Value>(&text)
        .ok()
        .and_then(|v| {
            v.get("schema")
                .and_then(|s| s.as_str())
                .map(|s| s.starts_with("forebear."))
        })
        .unwrap_or(false)
}

fn parent_of(dir: &Path) -> &Path {
    dir.parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."))
}

fn sibling(dir: &Path, tag: &str) -> PathBuf {
    let name = dir
        .file_name()
        .map_or_else(|| "out".into(), |n| n.to_string_lossy().into_owned());
    dir.with_file_name(format!(".{name}.{tag}-{}", std::process::id()))
}

fn swap_into_place(staging: &Path, dir: &Path) -> Result<()> {
    let io = |e: std::io::Error| {
        Error::internal(format!("cannot move output into '{}': {e}", dir.display()))
    };
    if !dir.exists() {
        return std::fs::rename(staging, dir).map_err(io);
    }
    let old = sibling(dir, "old");
    std::fs::rename(dir, &old).map_err(io)?;
    if let Err(e) = std::fs::rename(staging, dir) {
        // Put the previous result back rather than leave neither.
        let _ = std::fs::rename(&old, dir);
        return Err(io(e));
    }
    let _ = std::fs::remove_dir_all(&old);
    Ok(())
}
