//! Renderers: each turns one [`Finding`] into one file. Nothing here recomputes statistics.

pub mod json;
pub mod markdown;

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
    vec![Box::new(json::Json), Box::new(markdown::Markdown)]
}

/// Writes every rendered file into `dir` as one step: the files are rendered first, written into a
/// staging directory beside `dir`, and the staging directory is renamed into place. A failure at
/// any point leaves no partial output. An existing `dir` is replaced only if it holds a previous
/// forebear result (a `result.json`) or is empty.
pub fn write_dossier(finding: &Finding, dir: &Path) -> Result<()> {
    let rendered: Vec<(&'static str, String)> = renderers()
        .iter()
        .map(|r| r.render(finding).map(|text| (r.file_name(), text)))
        .collect::<Result<_>>()?;
    write_files_atomically(dir, &rendered)
}

/// Writes `files` (name, contents) into `dir` as one step, as described at [`write_dossier`].
pub fn write_files_atomically(dir: &Path, files: &[(&str, String)]) -> Result<()> {
    check_replaceable(dir)?;
    let parent = dir.parent().filter(|p| !p.as_os_str().is_empty()).unwrap_or(Path::new("."));
    std::fs::create_dir_all(parent)
        .map_err(|e| Error::input(format!("cannot create output folder '{}': {e}", parent.display())))?;
    let staging = sibling(dir, "partial");
    let result = (|| {
        std::fs::create_dir(&staging).map_err(|e| {
            Error::input(format!("cannot write into '{}': {e}", parent.display()))
        })?;
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

fn check_replaceable(dir: &Path) -> Result<()> {
    if !dir.exists() {
        return Ok(());
    }
    if !dir.is_dir() {
        return Err(Error::input(format!(
            "the output path '{}' exists and is not a folder; choose another --out",
            dir.display()
        )));
    }
    let empty = std::fs::read_dir(dir).map(|mut d| d.next().is_none()).unwrap_or(false);
    if empty || dir.join("result.json").exists() {
        Ok(())
    } else {
        Err(Error::input(format!(
            "the output folder '{}' already holds files that forebear did not write; choose another \
             --out or empty it",
            dir.display()
        )))
    }
}

fn sibling(dir: &Path, tag: &str) -> PathBuf {
    let name = dir.file_name().map_or_else(|| "out".into(), |n| n.to_string_lossy().into_owned());
    dir.with_file_name(format!(".{name}.{tag}-{}", std::process::id()))
}

fn swap_into_place(staging: &Path, dir: &Path) -> Result<()> {
    let io = |e: std::io::Error| Error::internal(format!("cannot move output into '{}': {e}", dir.display()));
    if dir.exists() {
        let old = sibling(dir, "old");
        std::fs::rename(dir, &old).map_err(io)?;
        std::fs::rename(staging, dir).map_err(io)?;
        let _ = std::fs::remove_dir_all(&old);
    } else {
        std::fs::rename(staging, dir).map_err(io)?;
    }
    Ok(())
}
