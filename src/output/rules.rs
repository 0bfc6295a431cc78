//! What an output folder holds, and so whether forebear may replace it: nothing, an empty folder,
//! a former forebear output (a dossier, or a batch output whose summary lists everything in it),
//! or something else, which is never replaced or deleted.

use crate::batch::SUMMARY_FILE;
use crate::data::fingerprint::sha256_text;
use crate::error::{Error, Result};
use std::io;
use std::path::Path;

/// The two kinds of output folder.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Kind {
    /// One dossier (`analyze`, `merge`, each target of `demo`, each pair inside a batch).
    Dossier,
    /// A batch output: `summary.json`, the index, and a folder per study.
    Batch,
    /// Several targets of one `analyze`: the study summary and a dossier folder per target.
    Targets,
    /// A qualification record (`forebear qualify`): `qualification.json`, `.md` and `.html`.
    Qualification,
}

impl Kind {
    /// The name of the kind in the test hooks.
    pub fn name(self) -> &'static str {
        match self {
            Kind::Dossier => "dossier",
            Kind::Batch => "batch",
            Kind::Targets => "targets",
            Kind::Qualification => "qualification",
        }
    }
}

/// Names a dossier folder may hold: what this and earlier layouts of the dossier write
/// (DESIGN.md), so that re-running replaces them all. The signatures of `forebear sign` go with
/// the dossier they sign.
const DOSSIER_NAMES: [&str; 9] = [
    "result.json",
    "stability.csv",
    "trace.csv",
    "partial.json",
    "dossier.md",
    "dossier.html",
    "manifest.json",
    "figures",
    crate::sign::SIGNATURES_FOLDER,
];

/// The files whose `schema` proves that forebear wrote a dossier folder.
const DOSSIER_PROOFS: [&str; 2] = ["result.json", "partial.json"];

/// The files of a batch output besides the study folders its summary lists.
const BATCH_INDEX: [&str; 2] = ["index.md", "index.html"];

/// What a path holds.
#[derive(Debug)]
pub enum Found {
    /// Nothing.
    Absent,
    /// An empty folder.
    Empty,
    /// A former forebear output of the kind asked for.
    Former(Former),
    /// Something forebear did not write; the text says what (for example "holds 'notes.txt', a
    /// file forebear did not write").
    Foreign(String),
    /// A file, not a folder.
    NotFolder,
}

/// A former forebear output: what removing it removes.
#[derive(Debug, PartialEq, Eq)]
pub struct Former {
    /// SHA-256 of the proof files' text: the same value later means the same output.
    pub identity: String,
    /// Entries besides the proof files, removed first.
    pub entries: Vec<String>,
    /// The files that prove forebear wrote the folder, removed last, so that a removal cut short
    /// still leaves a folder that the next run recognises.
    pub proofs: Vec<String>,
}

/// Examines `dir` as an output folder of `kind`, without following a symbolic link at `dir`.
pub fn examine(dir: &Path, kind: Kind) -> io::Result<Found> {
    match std::fs::symlink_metadata(dir) {
        Err(e) if e.kind() == io::ErrorKind::NotFound => return Ok(Found::Absent),
        Err(e) => return Err(e),
        Ok(meta) if meta.file_type().is_symlink() => {
            return Ok(Found::Foreign("is a symbolic link".into()))
        }
        Ok(meta) if !meta.is_dir() => return Ok(Found::NotFolder),
        Ok(_) => {}
    }
    let entries = names_in(dir)?;
    if entries.is_empty() {
        return Ok(Found::Empty);
    }
    Ok(match kind {
        Kind::Dossier => examine_dossier(dir, entries),
        Kind::Batch => examine_batch(dir, entries)?,
        Kind::Targets => examine_targets(dir, entries)?,
        Kind::Qualification => examine_qualification(dir, entries),
    })
}

/// Examines `dir` as an output of either kind: a leftover of an interrupted run is recovered
/// whichever command left it.
pub fn examine_any(dir: &Path) -> io::Result<Found> {
    match examine(dir, Kind::Dossier)? {
        Found::Foreign(why) => match examine(dir, Kind::Batch)? {
            Found::Former(former) => Ok(Found::Former(former)),
            _ => match examine(dir, Kind::Targets)? {
                Found::Former(former) => Ok(Found::Former(former)),
                _ => match examine(dir, Kind::Qualification)? {
                    Found::Former(former) => Ok(Found::Former(former)),
                    _ => Ok(Found::Foreign(why)),
                },
            },
        },
        found => Ok(found),
    }
}

fn names_in(dir: &Path) -> io::Result<Vec<String>> {
    let mut names = std::fs::read_dir(dir)?
        .map(|e| e.map(|e| e.file_name().to_string_lossy().into_owned()))
        .collect::<io::Result<Vec<String>>>()?;
    names.sort();
    Ok(names)
}

fn examine_dossier(dir: &Path, entries: Vec<String>) -> Found {
    let ours: Vec<&str> = crate::report::renderers()
        .iter()
        .map(|r| r.file_name())
        .chain(DOSSIER_NAMES)
        .chain([crate::manifest::MANIFEST_FILE])
        .collect();
    if let Some(name) = entries.iter().find(|n| !ours.contains(&n.as_str())) {
        return Found::Foreign(format!("holds '{name}', a file forebear did not write"));
    }
    if let Some(name) = foreign_in_signatures(dir) {
        return Found::Foreign(format!(
            "holds '{}/{name}', a file forebear did not write",
            crate::sign::SIGNATURES_FOLDER
        ));
    }
    let mut proof_text = String::new();
    let mut proofs = Vec::new();
    for name in DOSSIER_PROOFS {
        if let Some(text) = forebear_json(&dir.join(name)) {
            proof_text.push_str(&text);
            proofs.push(name.to_string());
        }
    }
    if proofs.is_empty() {
        return Found::Foreign("holds files but no result.json written by forebear".into());
    }
    Found::Former(Former {
        identity: sha256_text(&proof_text),
        entries: entries
            .into_iter()
            .filter(|n| !proofs.contains(n))
            .collect(),
        proofs,
    })
}

/// The first entry of the dossier's `signatures/` folder that `forebear sign` did not write (a
/// folder or another name), if any.
fn foreign_in_signatures(dir: &Path) -> Option<String> {
    let folder = dir.join(crate::sign::SIGNATURES_FOLDER);
    if !folder.is_dir() {
        return None;
    }
    let Ok(names) = names_in(&folder) else {
        return Some(String::new());
    };
    names.into_iter().find(|name| {
        crate::sign::statement::parse_entry_name(name).is_none() || !folder.join(name).is_file()
    })
}

/// A batch output is recognised by its `summary.json`; every other entry must be an index file or
/// a study folder the summary lists, holding only folders of targets it lists, each a dossier.
fn examine_batch(dir: &Path, entries: Vec<String>) -> io::Result<Found> {
    let Ok((summary, identity)) = crate::batch::output::read_summary(dir, "--out") else {
        return Ok(Found::Foreign(
            "holds files but no summary.json written by forebear batch".into(),
        ));
    };
    for name in entries.iter().filter(|n| n.as_str() != SUMMARY_FILE) {
        if BATCH_INDEX.contains(&name.as_str()) {
            continue;
        }
        let Some(study) = summary.studies.get(name) else {
            return Ok(Found::Foreign(format!(
                "holds '{name}', which the former batch output does not list"
            )));
        };
        let folder = dir.join(name);
        if !std::fs::symlink_metadata(&folder)?.is_dir() {
            return Ok(Found::Foreign(format!(
                "holds '{name}', a file where the former batch output has a study folder"
            )));
        }
        for target in names_in(&folder)? {
            let foreign = !study.targets.contains_key(&target)
                || matches!(
                    examine(&folder.join(&target), Kind::Dossier)?,
                    Found::Foreign(_) | Found::NotFolder
                );
            if foreign {
                return Ok(Found::Foreign(format!(
                    "holds '{name}/{target}', which is not a dossier the former batch output lists"
                )));
            }
        }
    }
    Ok(Found::Former(Former {
        identity,
        entries: entries.into_iter().filter(|n| n != SUMMARY_FILE).collect(),
        proofs: vec![SUMMARY_FILE.to_string()],
    }))
}

/// The files of a study summary of several targets besides `summary.json`.
const TARGETS_SUMMARY: [&str; 2] = ["summary.md", "summary.html"];

/// An output of several targets is recognised by its `summary.json` (schema
/// `forebear.targets/…`); every other entry must be a summary page or the dossier folder of a
/// target it lists.
fn examine_targets(dir: &Path, entries: Vec<String>) -> io::Result<Found> {
    let Some((summary, identity)) = crate::targets::output::read_summary(dir) else {
        return Ok(Found::Foreign(
            "holds files but no summary.json of several targets written by forebear".into(),
        ));
    };
    for name in entries.iter().filter(|n| n.as_str() != SUMMARY_FILE) {
        if TARGETS_SUMMARY.contains(&name.as_str()) {
            continue;
        }
        let listed = summary
            .targets
            .values()
            .any(|e| e.dossier.as_deref() == Some(name.as_str()));
        let foreign = !listed
            || matches!(
                examine(&dir.join(name), Kind::Dossier)?,
                Found::Foreign(_) | Found::NotFolder
            );
        if foreign {
            return Ok(Found::Foreign(format!(
                "holds '{name}', which is not a dossier the former summary lists"
            )));
        }
    }
    Ok(Found::Former(Former {
        identity,
        entries: entries.into_iter().filter(|n| n != SUMMARY_FILE).collect(),
        proofs: vec![SUMMARY_FILE.to_string()],
    }))
}

/// The files of a qualification record; `qualification.json` proves that forebear wrote it.
pub const QUALIFICATION_FILES: [&str; 3] = [
    "qualification.json",
    "qualification.md",
    "qualification.html",
];

/// A qualification record is recognised by its `qualification.json`; it may hold only the
/// record's files.
fn examine_qualification(dir: &Path, entries: Vec<String>) -> Found {
    let proof = QUALIFICATION_FILES[0];
    if let Some(name) = entries
        .iter()
        .find(|n| !QUALIFICATION_FILES.contains(&n.as_str()))
    {
        return Found::Foreign(format!("holds '{name}', a file forebear did not write"));
    }
    let Some(text) = forebear_json(&dir.join(proof)) else {
        return Found::Foreign(format!("holds files but no {proof} written by forebear"));
    };
    Found::Former(Former {
        identity: sha256_text(&text),
        entries: entries.into_iter().filter(|n| n != proof).collect(),
        proofs: vec![proof.to_string()],
    })
}

/// The text of `path` if it is a JSON file that forebear wrote (its `schema` names a forebear
/// layout).
fn forebear_json(path: &Path) -> Option<String> {
    let text = std::fs::read_to_string(path).ok()?;
    let value: serde_json::Value = serde_json::from_str(&text).ok()?;
    let schema = value.get("schema")?.as_str()?;
    schema.starts_with("forebear.").then_some(text)
}

impl Found {
    /// Whether a run may write its output where this was found, as the run starts: refuses a
    /// file, anything forebear did not write, and a former output without `force`.
    pub fn check(&self, shown: &Path, kind: Kind, force: bool) -> Result<()> {
        let dir = shown.display();
        match self {
            Found::Absent | Found::Empty => Ok(()),
            Found::NotFolder => Err(Error::input(format!(
                "the output path '{dir}' exists and is not a folder; choose another --out"
            ))),
            Found::Foreign(why) => Err(Error::input(format!(
                "the output folder '{dir}' {why}, which replacing the folder would delete; choose \
                 another --out or empty it"
            ))),
            Found::Former(_) if force => Ok(()),
            Found::Former(_) => {
                let what = match kind {
                    Kind::Dossier => "a forebear result",
                    Kind::Batch => "a forebear batch output",
                    Kind::Targets => "a forebear output of several targets",
                    Kind::Qualification => "a forebear qualification record",
                };
                Err(Error::input(format!(
                    "the output folder '{dir}' already holds {what}; pass --force to replace it, \
                     or choose another --out"
                )))
            }
        }
    }

    /// What a folder that changed during a run now is, for the refusal.
    pub fn as_change(&self) -> String {
        match self {
            Found::Absent => "it was removed".into(),
            Found::Empty => "an empty folder appeared at it".into(),
            Found::Former(_) => "another forebear output is there now".into(),
            Found::Foreign(why) => format!("it now {why}"),
            Found::NotFolder => "a file is there now".into(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn scratch(name: &str) -> std::path::PathBuf {
        let dir =
            std::env::temp_dir().join(format!("forebear-rules-{}-{name}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        dir
    }

    /// Writes a `result.json` of forebear's into `dir` and examines it as a former dossier.
    fn former_dossier(dir: &Path) -> Former {
        std::fs::write(
            dir.join("result.json"),
            r#"{"schema": "forebear.result/1"}"#,
        )
        .unwrap();
        match examine(dir, Kind::Dossier).unwrap() {
            Found::Former(former) => former,
            other => panic!("a former dossier, not {other:?}"),
        }
    }

    #[test]
    fn a_dossier_folder_is_recognised_by_its_result_and_anything_else_is_foreign() {
        let dir = scratch("dossier");
        assert!(matches!(
            examine(&dir.join("none"), Kind::Dossier).unwrap(),
            Found::Absent
        ));
        assert!(matches!(
            examine(&dir, Kind::Dossier).unwrap(),
            Found::Empty
        ));
        std::fs::write(dir.join("dossier.md"), "# text").unwrap();
        assert!(matches!(
            examine(&dir, Kind::Dossier).unwrap(),
            Found::Foreign(why) if why.contains("no result.json")
        ));
        let former = former_dossier(&dir);
        assert_eq!(former.entries, vec!["dossier.md"]);
        assert_eq!(former.proofs, vec!["result.json"]);
        std::fs::write(dir.join("notes.txt"), "mine").unwrap();
        assert!(matches!(
            examine(&dir, Kind::Dossier).unwrap(),
            Found::Foreign(why) if why.contains("'notes.txt'")
        ));
        let refusal = examine(&dir, Kind::Dossier)
            .unwrap()
            .check(&dir, Kind::Dossier, true)
            .unwrap_err();
        assert_eq!(refusal.exit_code(), 2);
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn a_qualification_record_is_recognised_by_its_json_and_holds_only_its_files() {
        let dir = scratch("qualification");
        std::fs::write(dir.join("qualification.md"), "# record").unwrap();
        assert!(matches!(
            examine(&dir, Kind::Qualification).unwrap(),
            Found::Foreign(why) if why.contains("no qualification.json")
        ));
        std::fs::write(
            dir.join("qualification.json"),
            r#"{"schema": "forebear.qualification/1"}"#,
        )
        .unwrap();
        let Found::Former(former) = examine(&dir, Kind::Qualification).unwrap() else {
            panic!("a former record")
        };
        assert_eq!(former.entries, vec!["qualification.md"]);
        assert_eq!(former.proofs, vec!["qualification.json"]);
        assert!(matches!(examine_any(&dir).unwrap(), Found::Former(_)));
        std::fs::write(dir.join("result.json"), "{}").unwrap();
        assert!(matches!(
            examine(&dir, Kind::Qualification).unwrap(),
            Found::Foreign(why) if why.contains("'result.json'")
        ));
        let _ = std::fs::remove_dir_all(&dir);
    }
}
