//! The dossier's files: the full set the analysis writes must be there, each matching the hash the
//! manifest records, and nothing else may be in the folder.
//!
//! The set is not taken from the manifest (a forger can remove a file from its list and re-seal
//! it) but from the renderers the analysis uses, plus `manifest.json`. Every other entry of the
//! folder is named and fails the check, except the folder `signatures/` that `forebear sign`
//! writes: its content is the signatures check's (`signatures.rs`).

use super::checks::short;
use super::report::{check, visible, Check, Status};
use crate::finding::Finding;
use crate::manifest::{Manifest, MANIFEST_FILE};
use crate::sign::SIGNATURES_FOLDER;
use std::path::Path;

/// The files every dossier holds besides `manifest.json`, in writing order.
pub(super) fn dossier_files() -> Vec<&'static str> {
    crate::report::renderers()
        .iter()
        .map(|r| r.file_name())
        .collect()
}

/// Checks the folder's entries against the full set and every file against its manifest hash;
/// returns the recorded finding when `result.json` reads.
pub(super) fn check_files(dir: &Path, manifest: &Manifest) -> (Check, Option<Finding>) {
    let expected = dossier_files();
    let mut problems = Vec::new();
    for name in &expected {
        problems.extend(check_one(dir, manifest, name));
    }
    for name in manifest.files.keys() {
        if !expected.contains(&name.as_str()) {
            problems.push(format!(
                "manifest.json lists '{}', which is no file of a dossier",
                visible(name)
            ));
        }
    }
    problems.extend(folder_entries(dir, &expected));
    let recorded = std::fs::read_to_string(dir.join("result.json"))
        .ok()
        .and_then(|text| serde_json::from_str::<Finding>(&text).ok());
    if recorded.is_none() && dir.join("result.json").is_file() {
        problems.push("result.json does not read as a forebear result".into());
    }
    let status = if problems.is_empty() {
        Status::Pass
    } else {
        Status::Fail
    };
    let details = if problems.is_empty() {
        vec![format!(
            "the {} files of a dossier are present and match the manifest: {}, and {MANIFEST_FILE}; \
             the folder holds nothing else",
            expected.len() + 1,
            expected.join(", ")
        )]
    } else {
        problems
    };
    (check("dossier files", status, details), recorded)
}

/// The problems of one file of the full set: missing, not listed, or not its recorded hash.
fn check_one(dir: &Path, manifest: &Manifest, name: &str) -> Option<String> {
    let listed = manifest.files.get(name);
    let bytes = match std::fs::read(dir.join(name)) {
        Ok(bytes) => bytes,
        Err(e) => {
            let listing = if listed.is_some() {
                "the manifest lists it"
            } else {
                "the manifest does not list it either"
            };
            return Some(format!(
                "{name} is missing or unreadable ({e}); every dossier holds it, and {listing}"
            ));
        }
    };
    let Some(recorded) = listed else {
        return Some(format!(
            "{name} is not listed in manifest.json, whose list must name every file of a dossier"
        ));
    };
    let actual = sha256_bytes(&bytes);
    (&actual != recorded).then(|| {
        format!(
            "{name} was edited after generation (SHA-256 recorded {}, now {})",
            short(recorded),
            short(&actual)
        )
    })
}

fn sha256_bytes(bytes: &[u8]) -> String {
    use sha2::Digest;
    crate::data::fingerprint::hex(&sha2::Sha256::digest(bytes))
}

/// Every entry of the folder that is no file of a dossier (the signatures folder aside), as a
/// problem. Names are shown with control and invisible characters escaped.
fn folder_entries(dir: &Path, expected: &[&str]) -> Vec<String> {
    let mut extras = Vec::new();
    let entries = match sorted_entries(dir) {
        Ok(entries) => entries,
        Err(e) => {
            extras.push(format!("the dossier folder cannot be listed ({e})"));
            return extras;
        }
    };
    for (name, is_dir) in entries {
        let known = name == MANIFEST_FILE || expected.contains(&name.as_str());
        if (known && !is_dir) || (name == SIGNATURES_FOLDER && is_dir) {
            continue;
        }
        extras.push(if is_dir {
            format!(
                "the folder '{}/' is in the dossier folder but is no part of a dossier",
                visible(&name)
            )
        } else {
            format!(
                "'{}' is in the dossier folder but is no file of a dossier",
                visible(&name)
            )
        });
    }
    extras
}

/// The folder's entries (name, whether a folder), sorted by name. A symbolic link counts as what
/// it points to.
fn sorted_entries(dir: &Path) -> std::io::Result<Vec<(String, bool)>> {
    let mut entries = std::fs::read_dir(dir)?
        .map(|entry| {
            let entry = entry?;
            let name = entry.file_name().to_string_lossy().into_owned();
            Ok((name, entry.path().is_dir()))
        })
        .collect::<std::io::Result<Vec<_>>>()?;
    entries.sort();
    Ok(entries)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_full_set_is_what_the_renderers_write() {
        assert_eq!(
            dossier_files(),
            [
                "result.json",
                "dossier.md",
                "dossier.html",
                "stability.csv",
                "trace.csv"
            ]
        );
    }
}
