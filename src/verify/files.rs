//! The dossier's files: the full set the analysis writes must be there, each matching the hash the
//! manifest records, and nothing else may be in the folder.
//!
//! The set is not taken from the manifest (a forger can remove a file from its list and re-seal
//! it) but from the renderers the analysis uses, plus `manifest.json`. Every other entry of the
//! folder is named and fails the check, with one reservation: DESIGN.md plans `forebear sign`,
//! which writes `signatures/<n>-<meaning>.json` and its detached signature `….json.sig`. A folder
//! named `signatures` holding only such files is therefore allowed; this build does not check
//! signatures, so it lists them in a note and vouches for none. Anything else inside it (another
//! name, a folder) is an extra entry like any other.

use super::checks::short;
use super::report::{check, visible, Check, Status};
use crate::finding::Finding;
use crate::manifest::{Manifest, MANIFEST_FILE};
use std::path::Path;

/// The folder reserved for signatures (DESIGN.md, `forebear sign`).
pub(super) const SIGNATURES_FOLDER: &str = "signatures";

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
    let (extras, signatures) = folder_entries(dir, &expected);
    problems.extend(extras);
    let recorded = std::fs::read_to_string(dir.join("result.json"))
        .ok()
        .and_then(|text| serde_json::from_str::<Finding>(&text).ok());
    if recorded.is_none() && dir.join("result.json").is_file() {
        problems.push("result.json does not read as a forebear result".into());
    }
    let status = match (problems.is_empty(), signatures.is_empty()) {
        (false, _) => Status::Fail,
        (true, true) => Status::Pass,
        (true, false) => Status::Note,
    };
    let mut details = if problems.is_empty() {
        vec![format!(
            "the {} files of a dossier are present and match the manifest: {}, and {MANIFEST_FILE}; \
             the folder holds nothing else",
            expected.len() + 1,
            expected.join(", ")
        )]
    } else {
        problems
    };
    details.extend(signatures);
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

/// Every entry of the folder that is no file of a dossier, as a problem, and the signature files
/// as notes. Names are shown with control and invisible characters escaped.
fn folder_entries(dir: &Path, expected: &[&str]) -> (Vec<String>, Vec<String>) {
    let mut extras = Vec::new();
    let mut notes = Vec::new();
    let entries = match sorted_entries(dir) {
        Ok(entries) => entries,
        Err(e) => {
            extras.push(format!("the dossier folder cannot be listed ({e})"));
            return (extras, notes);
        }
    };
    for (name, is_dir) in entries {
        let known = name == MANIFEST_FILE || expected.contains(&name.as_str());
        if known && !is_dir {
            continue;
        }
        if name == SIGNATURES_FOLDER && is_dir {
            let (bad, signed) = signature_entries(&dir.join(&name));
            extras.extend(bad);
            if !signed.is_empty() {
                notes.push(format!(
                    "{SIGNATURES_FOLDER}/ holds {} signature file(s) ({}); this build does not check \
                     signatures, so they are listed here and vouched for by nothing in this report",
                    signed.len(),
                    signed.join(", ")
                ));
            }
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
    (extras, notes)
}

/// The entries of `signatures/` that do not belong there (problems), and the names of those that do.
fn signature_entries(folder: &Path) -> (Vec<String>, Vec<String>) {
    let mut bad = Vec::new();
    let mut signed = Vec::new();
    match sorted_entries(folder) {
        Err(e) => bad.push(format!("{SIGNATURES_FOLDER}/ cannot be listed ({e})")),
        Ok(entries) => {
            for (name, is_dir) in entries {
                if !is_dir && is_signature_name(&name) {
                    signed.push(name);
                } else {
                    bad.push(format!(
                        "'{SIGNATURES_FOLDER}/{}' is in the dossier folder but is no signature \
                         (only <n>-<meaning>.json and its .json.sig belong there)",
                        visible(&name)
                    ));
                }
            }
        }
    }
    (bad, signed)
}

/// `<n>-<meaning>.json` or `<n>-<meaning>.json.sig`, with a plain meaning (letters, digits, `-`,
/// `_`), as DESIGN.md lays out `forebear sign`'s files.
fn is_signature_name(name: &str) -> bool {
    let stem = name
        .strip_suffix(".json.sig")
        .or_else(|| name.strip_suffix(".json"));
    let Some((number, meaning)) = stem.and_then(|s| s.split_once('-')) else {
        return false;
    };
    !number.is_empty()
        && number.bytes().all(|b| b.is_ascii_digit())
        && !meaning.is_empty()
        && meaning
            .bytes()
            .all(|b| b.is_ascii_alphanumeric() || b == b'-' || b == b'_')
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
    fn signature_names_follow_the_planned_layout_only() {
        for good in ["1-approved.json", "12-reviewed_by.json.sig", "2-qa-2.json"] {
            assert!(is_signature_name(good), "{good}");
        }
        for bad in [
            "approved.json",
            "-approved.json",
            "1-.json",
            "1-ok.txt",
            "x-ok.json",
            "1-a b.json",
            "1-ok.json.sig.bak",
        ] {
            assert!(!is_signature_name(bad), "{bad}");
        }
    }

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
