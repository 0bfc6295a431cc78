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
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
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
    /// Keys and values that did not read (reported with the settings' own problems).
    unread: Vec<Placed>,
}

impl StudyFile {
    /// Reads and parses `path`. A file that is not TOML is an error; unknown keys and values of the
    /// wrong type are kept and reported by [`Sources::check`] with every other problem.
    pub fn read(path: &Path) -> Result<StudyFile> {
        let file = path.display().to_string();
        let bytes = std::fs::read(path)
            .map_err(|e| Error::input(format!("cannot read the study file '{file}': {e}")))?;
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
        let mut unread = Vec::new();
        let table = SettingsTable::read(root.get_ref(), &[], "", &mut unread);
        Ok(StudyFile {
            path: path.to_path_buf(),
            text,
            table,
            unread,
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
        self.check_targets(true)
    }

    /// As [`Sources::check`] for `--all-targets`: the targets come from the data, so any named in
    /// the study file are set aside and none is required.
    pub fn check_for_all_targets(&self) -> Result<Settings> {
        self.check_targets(false)
    }

    fn check_targets(&self, named: bool) -> Result<Settings> {
        let mut input = match &self.file {
            Some(file) => self.flags.clone().over(&file.table.input),
            None => self.flags.clone(),
        };
        if !named {
            input.targets = None;
        }
        let checked = input.check_with(named);
        let unread = self.file.as_ref().map_or(&[][..], |f| &f.unread[..]);
        match (checked, unread.is_empty()) {
            (Ok(settings), true) => Ok(settings),
            (Ok(_), false) => Err(self.explain_with(Vec::new())),
            (Err(problems), _) => Err(self.explain_with(problems)),
        }
    }

    /// A settings error with each problem at the flag or at the study file's key that gave the
    /// value; other errors unchanged.
    pub fn explain(&self, error: Error) -> Error {
        match error {
            Error::Settings(problems) if self.file.is_some() => self.explain_with(problems),
            other => other,
        }
    }

    /// The problems of the file that did not read and `problems`, each at its flag or key.
    fn explain_with(&self, problems: Vec<SettingProblem>) -> Error {
        let Some(file) = &self.file else {
            return Error::Settings(problems);
        };
        let from_file =
            |p: &SettingProblem| !self.flags.has(p.key) && file.table.spans.contains_key(&p.key);
        if file.unread.is_empty() && !problems.iter().any(from_file) {
            return Error::Settings(problems);
        }
        let name = file.path.display().to_string();
        let placed: Vec<Placed> = file
            .unread
            .iter()
            .cloned()
            .chain(
                problems
                    .iter()
                    .filter(|p| from_file(p))
                    .map(|p| file.table.place(p, None, "")),
            )
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
