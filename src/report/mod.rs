//! Renderers: each turns one [`Finding`] into one file. Nothing here recomputes statistics.

pub mod figures;
pub mod html;
pub mod json;
pub mod markdown;
pub mod tables;

use crate::error::{Error, Result};
use crate::finding::Finding;
use std::path::{Path, PathBuf};

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
pub fn write_dossier(finding: &Finding, dir: &Path, force: bool) -> Result<()> {
    let rendered: Vec<(&'static str, String)> = renderers()
        .iter()
        .map(|r| r.render(finding).map(|text| (r.file_name(), text)))
        .collect::<Result<_>>()?;
    write_files_atomically(dir, &rendered, force)
}

/// Writes `files` (name, contents) into `dir` as one step, as described at [`write_dossier`].
pub fn write_files_atomically(dir: &Path, files: &[(&str, String)], force: bool) -> Result<()> {
    let extra: Vec<&str> = files.iter().map(|(name, _)| *name).collect();
    check_replaceable(dir, &extra, force)?;
    let parent = parent_of(dir);
    std::fs::create_dir_all(parent).map_err(|e| {
        Error::input(format!(
            "cannot create output folder '{}': {e}",
            parent.display()
        ))
    })?;
    let staging = sibling(dir, "partial");
    // A staging folder of this name can only be left over from a killed run with the same id.
    let _ = std::fs::remove_dir_all(&staging);
    let result = (|| {
        std::fs::create_dir(&staging)
            .map_err(|e| Error::input(format!("cannot write into '{}': {e}", parent.display())))?;
        for (name, text) in files {
            std::fs::write(staging.join(name), text)
                .map_err(|e| Error::internal(format!("cannot write '{name}': {e}")))?;
        }
        swap_into_place(&staging, dir)
    })();
    if result.is_err() {
        let _ = std::fs::remove_dir_all(&staging);
    }
    result
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
    if dir.file_name().is_none() {
        return Err(Error::input(format!(
            "the output folder '{}' has no name of its own; give --out a new folder such as 'results'",
            dir.display()
        )));
    }
    if !dir.exists() {
        return Ok(());
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
    if entries.is_empty() {
        return Ok(());
    }
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

/// Whether `path` is a JSON file that forebear wrote (its `schema` names a forebear layout).
fn written_by_forebear(path: &Path) -> bool {
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
