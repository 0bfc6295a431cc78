//! A study file (`analyze --config FILE`): the settings of one analysis in TOML, with the same keys
//! as a batch plan's `[defaults]` and `[[study]]` tables. Flags given on the command line win over
//! it; problems are reported at the flag or at the file's line and column, whichever gave the value.

use super::check::Settings;
use super::input::SettingsInput;
use super::key::{Naming, SettingProblem};
use super::toml_table::{bounded, located, Placed, SettingsTable};
use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};
use std::path::{Path, PathBuf};
use toml::de::DeTable;

/// Where settings came from, as the manifest records it.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
pub struct StudyFileRecord {
    /// The study file as given.
    pub path: String,
    /// SHA-256 of its bytes.
    pub sha256: String,
}

/// A read study file.
#[derive(Clone, Debug)]
pub struct StudyFile {
    path: PathBuf,
    text: String,
    table: SettingsTable,
}

impl StudyFile {
    /// Reads and parses `path`; every problem of the file at once (unknown keys, values of the
    /// wrong type), each at its line and column.
    pub fn read(path: &Path) -> Result<StudyFile> {
        let file = path.display().to_string();
        let bytes = std::fs::read(path).map_err(|e| {
            Error::input(format!("cannot read the study file '{file}': {e}"))
        })?;
        let text = String::from_utf8(bytes).map_err(|_| {
            Error::input(format!(
                "the study file '{file}' is not UTF-8 text; save it as UTF-8 (TOML files are)"
            ))
        })?;
        let root = DeTable::parse(&text).map_err(|e| {
            let placed = Placed {
                span: e.span(),
                message: format!("not a TOML file: {}", bounded(e.message())),
            };
            problems_error(&file, located(&file, &text, vec![placed]))
        })?;
        let mut problems = Vec::new();
        let table = SettingsTable::read(root.get_ref(), &[], "the study file", &mut problems);
        if !problems.is_empty() {
            return Err(problems_error(&file, located(&file, &text, problems)));
        }
        Ok(StudyFile {
            path: path.to_path_buf(),
            text,
            table,
        })
    }

    /// The record of this file for the manifest.
    pub fn record(&self) -> StudyFileRecord {
        StudyFileRecord {
            path: self.path.display().to_string(),
            sha256: crate::data::fingerprint::sha256_text(&self.text),
        }
    }
}

/// The settings of one `analyze`: explicit flags over an optional study file.
#[derive(Clone, Debug)]
pub struct Sources {
    flags: SettingsInput,
    file: Option<StudyFile>,
}

impl Sources {
    /// Flags given on the command line (only those given), over a study file.
    pub fn new(flags: SettingsInput, file: Option<StudyFile>) -> Sources {
        Sources { flags, file }
    }

    /// The study file's record, when there is one.
    pub fn study_file(&self) -> Option<StudyFileRecord> {
        self.file.as_ref().map(StudyFile::record)
    }

    /// The checked settings, or every problem, each named where its value came from.
    pub fn check(&self) -> Result<Settings> {
        let input = match &self.file {
            Some(file) => self.flags.clone().over(&file.table.input),
            None => self.flags.clone(),
        };
        input.check().map_err(|problems| self.explain(Error::Settings(problems)))
    }

    /// A settings error with each problem at the flag or at the study file's key that gave the
    /// value; other errors unchanged.
    pub fn explain(&self, error: Error) -> Error {
        let (Error::Settings(problems), Some(file)) = (&error, &self.file) else {
            return error;
        };
        let from_file = |p: &SettingProblem| {
            !self.flags.has(p.key) && file.table.spans.contains_key(&p.key)
        };
        if !problems.iter().any(from_file) {
            return error;
        }
        let name = file.path.display().to_string();
        let placed: Vec<Placed> = problems
            .iter()
            .filter(|p| from_file(p))
            .map(|p| file.table.place(p, None, "the study file"))
            .collect();
        let mut lines = located(&name, &file.text, placed);
        lines.extend(
            problems
                .iter()
                .filter(|p| !from_file(p))
                .map(|p| p.render(Naming::Flags)),
        );
        problems_error(&name, lines)
    }
}

fn problems_error(file: &str, lines: Vec<String>) -> Error {
    Error::Problems {
        summary: format!(
            "{file}: {} problem(s) with the settings, listed above; nothing was run",
            lines.len()
        ),
        problems: lines,
    }
}
