//! The checks that need no re-run: the manifest's seal, the settings, the data against both
//! fingerprints, and the method version (the dossier's files: `files.rs`).

use super::report::{check, Check, Status};
use super::rerun::SHOWN_DIFFERENCES;
use super::Request;
use crate::data::checks::FileFacts;
use crate::data::compare::describe_difference;
use crate::data::fingerprint::{content_index, sha256_text};
use crate::data::source::Source;
use crate::data::{DataReader, LoadOptions, RawTable};
use crate::error::{Error, Result};
use crate::finding::{Finding, METHOD_VERSION};
use crate::manifest::{differences, Manifest, MANIFEST_FILE};
use crate::study::Study;
use std::path::Path;

pub(super) fn read_manifest(dir: &Path) -> Result<Manifest> {
    if !dir.is_dir() {
        return Err(Error::input(format!(
            "the dossier folder '{}' does not exist or is not a folder",
            dir.display()
        )));
    }
    let path = dir.join(MANIFEST_FILE);
    let text = std::fs::read_to_string(&path).map_err(|e| {
        Error::input(format!(
            "'{}' cannot be read ({e}); verify needs the dossier folder that `forebear analyze` \
             wrote, with its {MANIFEST_FILE}",
            path.display()
        ))
    })?;
    let manifest: Manifest = serde_json::from_str(&text).map_err(|e| {
        Error::Mismatch(format!(
            "{}, line {}, column {}: not a forebear manifest ({e}); it was damaged or edited, so \
             the dossier cannot be verified",
            path.display(),
            e.line(),
            e.column()
        ))
    })?;
    Ok(manifest)
}

pub(super) fn check_seal(manifest: &Manifest) -> Check {
    let computed = manifest.computed_seal();
    if computed == manifest.seal {
        check(
            "manifest",
            Status::Pass,
            vec![format!(
                "manifest.json is intact (seal {})",
                short(&manifest.seal)
            )],
        )
    } else {
        check(
            "manifest",
            Status::Fail,
            vec![format!(
                "manifest.json was edited after generation: its seal is {} but its content hashes \
                 to {}",
                short(&manifest.seal),
                short(&computed)
            )],
        )
    }
}

pub(super) fn check_settings(manifest: &Manifest, recorded: Option<&Finding>) -> Check {
    let mut problems = Vec::new();
    let computed = sha256_text(&crate::digest::canonical_json(&manifest.settings.canonical));
    if computed != manifest.settings.sha256 {
        problems.push(format!(
            "the settings in manifest.json were changed: they hash to {}, but {} is recorded",
            short(&computed),
            short(&manifest.settings.sha256)
        ));
    }
    if let Some(finding) = recorded {
        let from_result = crate::finding::settings_value(finding);
        for d in differences(
            &from_result,
            &manifest.settings.canonical,
            &[],
            &[],
            SHOWN_DIFFERENCES,
        ) {
            problems.push(format!(
                "settings differ between result.json and manifest.json at {}: {} in result.json, {} \
                 in manifest.json",
                d.pointer, d.recorded, d.recomputed
            ));
        }
        if finding.digest != manifest.results.digest {
            problems.push(format!(
                "result.json's digest {} is not the manifest's {}",
                short(&finding.digest),
                short(&manifest.results.digest)
            ));
        }
    }
    if problems.is_empty() {
        check(
            "settings",
            Status::Pass,
            vec![format!(
                "settings hash {} matches; seed {}",
                short(&manifest.settings.sha256),
                manifest
                    .settings
                    .canonical
                    .pointer("/study/seed")
                    .map_or_else(|| "?".into(), |s| s.to_string())
            )],
        )
    } else {
        check("settings", Status::Fail, problems)
    }
}

/// The reader options recorded in the manifest.
pub(super) fn recorded_reader(manifest: &Manifest) -> std::result::Result<LoadOptions, String> {
    let reader = manifest
        .settings
        .canonical
        .get("reader")
        .cloned()
        .unwrap_or_default();
    serde_json::from_value(reader)
        .map_err(|e| format!("the recorded reader options do not read: {e}"))
}

pub(super) fn recorded_study(manifest: &Manifest) -> std::result::Result<Study, String> {
    let study = manifest
        .settings
        .canonical
        .get("study")
        .cloned()
        .unwrap_or_default();
    serde_json::from_value(study)
        .map_err(|e| format!("the recorded study settings do not read: {e}"))
}

/// The received data as read once with the recorded reader options: the raw cells and the
/// fingerprint of the bytes they were parsed from, or why they could not be read that way.
pub(super) type Received = std::result::Result<(RawTable, FileFacts), String>;

/// Reads the received data file once. A file that cannot be opened (absent, a folder, permission
/// denied) is bad usage (exit code 2); one that cannot be read with the recorded reader options is
/// a failed data check.
pub(super) fn read_received(request: &Request, manifest: &Manifest) -> Result<Received> {
    let file = crate::data::source::display_name(&request.data);
    let source = Source::open(&request.data, &file)?;
    let options = match recorded_reader(manifest) {
        Ok(options) => options,
        Err(why) => return Ok(Err(why)),
    };
    let read = DataReader::start(source, file, &options).and_then(DataReader::read_rows);
    Ok(read.map_err(|e| {
        format!("the received file cannot be read the way the analysed file was: {e}")
    }))
}

pub(super) fn check_data(manifest: &Manifest, received: &Received) -> Check {
    let (table, facts) = match received {
        Ok(read) => read,
        Err(why) => return check("data", Status::Fail, vec![why.clone()]),
    };
    let bytes_sha256 = facts.sha256.as_str();
    let recorded = &manifest.data;
    let shape = format!(
        "{} data rows × {} columns",
        recorded.content.rows,
        recorded.content.columns.len()
    );
    if bytes_sha256 == recorded.sha256 {
        return check(
            "data",
            Status::Pass,
            vec![format!(
                "bytes identical to the analysed file '{}' (SHA-256 {}; {shape})",
                recorded.file,
                short(bytes_sha256)
            )],
        );
    }
    let bytes_differ = format!(
        "the bytes differ from the analysed file '{}' (SHA-256 recorded {}, received {})",
        recorded.file,
        short(&recorded.sha256),
        short(bytes_sha256)
    );
    let received = content_index(table);
    if received.sha256 == recorded.content.sha256 {
        return check(
            "data",
            Status::Note,
            vec![
                bytes_differ,
                format!(
                    "same content, different bytes: the parsed column names and values are \
                     identical (content SHA-256 {}; {shape}), so the file was re-saved (line endings, \
                     quoting or number formatting) without changing the data",
                    short(&received.sha256)
                ),
            ],
        );
    }
    let mut details = vec![
        bytes_differ,
        format!(
            "different data: the content SHA-256 is {}, the analysed file's {}",
            short(&received.sha256),
            short(&recorded.content.sha256)
        ),
    ];
    details.extend(describe_difference(&recorded.content, &received, table));
    check("data", Status::Fail, details)
}

pub(super) fn check_tool(manifest: &Manifest, allow_other_version: bool) -> Check {
    let this = crate::finding::ToolInfo::current();
    let theirs = &manifest.tool;
    if theirs.method == METHOD_VERSION {
        let same_build = theirs.version == this.version && theirs.build == this.build;
        let details = vec![if same_build {
            format!("same method version {METHOD_VERSION}, and the same build")
        } else {
            format!(
                "same method version {METHOD_VERSION}; another build (dossier: {}; this: {})",
                theirs.describe(),
                this.describe()
            )
        }];
        return check("tool", Status::Pass, details);
    }
    let mut details = vec![format!(
        "the dossier was produced by {} with method version '{}', but this is {} with method \
         version {METHOD_VERSION}",
        theirs.describe(),
        theirs.method,
        this.describe()
    )];
    if allow_other_version {
        details.push(
            "--allow-other-version: re-running anyway; every difference is listed below".into(),
        );
    } else {
        details.push(format!(
            "install forebear {} to verify this dossier, or pass --allow-other-version to see \
             every difference this version finds",
            theirs.version
        ));
    }
    check("tool", Status::Fail, details)
}

pub(super) fn short(hash: &str) -> String {
    hash.chars().take(16).collect()
}
