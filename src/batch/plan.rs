//! The batch plan: a TOML file of studies (a data file, one or more targets, settings), with
//! defaults for all studies and per-study overrides. `[defaults]` and every `[[study]]` take the
//! settings keys of a study file (one reader, `settings::toml_table`); a study adds `name` and
//! `data`. [`Plan::load`] validates the whole file before anything runs and returns every problem
//! it finds, each at the line and column of the key at fault; [`Plan::check`] adds a header-only
//! read of every data file.

use crate::data::fingerprint::sha256_text;
use crate::settings::toml_table::{bounded, line_and_column, Placed, SettingsTable};
use crate::settings::{Key, Settings, SettingsInput};
use serde::de::DeserializeOwned;
use serde::Deserialize;
use std::collections::BTreeMap;
use std::ops::Range;
use std::path::{Path, PathBuf};
use toml::de::{DeTable, DeValue, ValueDeserializer};
use toml::Spanned;

pub use super::rules::unsafe_name;
use super::rules::{check_duplicates, check_study};

/// File names of a batch output folder that a study name must not take.
pub const RESERVED_NAMES: [&str; 3] = ["index.html", "index.md", "summary.json"];

/// Keys of a study table besides the settings.
pub(super) const STUDY_KEYS: [&str; 2] = ["name", "data"];

/// One problem of a plan file.
#[derive(Clone, Debug, PartialEq)]
pub struct Problem {
    /// 1-based line and column (in characters) in the plan file, where known.
    pub place: Option<(usize, usize)>,
    /// What is wrong, and what to do.
    pub message: String,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct StudyHead {
    pub(super) name: Spanned<String>,
    pub(super) data: Spanned<String>,
}

/// Where a study's keys are written in the plan, to place the problems found later (a data
/// file's header).
#[derive(Clone, Debug, Default)]
pub(super) struct StudyPlaces {
    /// The study's own keys.
    pub(super) own: BTreeMap<Key, Range<usize>>,
    /// The keys of `[defaults]`.
    pub(super) defaults: BTreeMap<Key, Range<usize>>,
    /// The `data` value.
    pub(super) data: Range<usize>,
    /// The `name` value.
    pub(super) name: Range<usize>,
}

impl StudyPlaces {
    /// Where the value of `key` came from: the study, else `[defaults]`, else the study's name.
    pub(super) fn of(&self, key: Key) -> Range<usize> {
        self.own
            .get(&key)
            .or_else(|| self.defaults.get(&key))
            .cloned()
            .unwrap_or_else(|| self.name.clone())
    }
}

/// One validated study of the plan.
#[derive(Clone, Debug)]
pub struct PlannedStudy {
    /// The study's name (a safe folder name).
    pub name: String,
    /// The data path as written in the plan.
    pub data: String,
    /// The data path resolved against the plan's folder.
    pub data_path: PathBuf,
    /// Targets in the order written.
    pub targets: Vec<String>,
    /// Checked settings (reader options included) for every target.
    pub settings: Settings,
    /// Where its keys are written.
    pub(super) places: StudyPlaces,
}

/// A validated plan.
#[derive(Clone, Debug)]
pub struct Plan {
    /// The plan file as given.
    pub path: PathBuf,
    /// The plan file's name (without folders).
    pub file_name: String,
    /// SHA-256 of the plan file's text.
    pub sha256: String,
    /// The studies, sorted by name.
    pub studies: Vec<PlannedStudy>,
}

/// One (study, target) pair of a plan: the unit that is run, sharded and listed.
#[derive(Clone, Copy, Debug)]
pub struct Pair<'a> {
    /// Position in [`Plan::pairs`] (0-based).
    pub index: usize,
    /// The study.
    pub study: &'a PlannedStudy,
    /// The target.
    pub target: &'a str,
}

impl Plan {
    /// Reads and validates a plan file; on failure returns every problem found.
    pub fn load(path: &Path) -> Result<Plan, Vec<Problem>> {
        let text = read_plan(path)?;
        let dir = path.parent().unwrap_or(Path::new(""));
        let (studies, problems) = parse(&text, dir);
        if !problems.is_empty() {
            return Err(placed(&text, problems));
        }
        Ok(Plan {
            path: path.to_path_buf(),
            file_name: path.file_name().map_or_else(
                || path.display().to_string(),
                |n| n.to_string_lossy().into(),
            ),
            sha256: sha256_text(&text),
            studies,
        })
    }

    /// Every (study, target) pair: studies by name, targets in the order written.
    pub fn pairs(&self) -> Vec<Pair<'_>> {
        self.studies
            .iter()
            .flat_map(|s| s.targets.iter().map(move |t| (s, t.as_str())))
            .enumerate()
            .map(|(index, (study, target))| Pair {
                index,
                study,
                target,
            })
            .collect()
    }

    /// Data files that cannot be read now: (study name, resolved path, what is there instead:
    /// "does not exist", "is a folder, not a CSV file", …).
    pub fn missing_data(&self) -> Vec<(&str, &Path, &'static str)> {
        self.studies
            .iter()
            .filter_map(|s| {
                let why = unusable_data(&s.data_path)?;
                Some((s.name.as_str(), s.data_path.as_path(), why))
            })
            .collect()
    }
}

/// Why a data path cannot be read as a file, or `None` when it can be opened. A FIFO or another
/// special file is left to the reader.
pub(super) fn unusable_data(path: &Path) -> Option<&'static str> {
    match std::fs::metadata(path) {
        Ok(m) if m.is_dir() => Some("is a folder, not a CSV file"),
        Ok(_) => None,
        Err(e) => Some(match e.kind() {
            std::io::ErrorKind::NotFound => "does not exist",
            std::io::ErrorKind::PermissionDenied => "cannot be reached: permission denied",
            std::io::ErrorKind::NotADirectory => {
                "does not exist (a part of its path is not a folder)"
            }
            _ if std::fs::symlink_metadata(path).is_ok_and(|m| m.is_symlink()) => {
                "is a symbolic link that leads nowhere readable (a loop, or too many links)"
            }
            _ => "cannot be reached",
        }),
    }
}

/// A deterministic share of a plan's pairs: pair k belongs to shard k mod `count`.
#[derive(
    Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, schemars::JsonSchema, Deserialize,
)]
pub struct Shard {
    /// 0-based shard number, below `count`.
    pub index: u32,
    /// Number of shards.
    pub count: u32,
}

impl std::str::FromStr for Shard {
    type Err = String;
    fn from_str(text: &str) -> std::result::Result<Shard, String> {
        Shard::parse(text)
    }
}

impl Shard {
    /// Parses `i/N` (0 ≤ i < N), as schedulers number array tasks from 0.
    pub fn parse(text: &str) -> std::result::Result<Shard, String> {
        let bad = |why: &str| {
            format!(
                "{why}; write i/N with 0 ≤ i < N, e.g. 0/3, 1/3 and 2/3 for three shards \
                 (numbered from 0, as schedulers number the tasks of an array job)"
            )
        };
        let (i, n) = text.split_once('/').ok_or_else(|| bad("not i/N"))?;
        let index: u32 = i.trim().parse().map_err(|_| bad("not i/N"))?;
        let count: u32 = n.trim().parse().map_err(|_| bad("not i/N"))?;
        if count == 0 || index >= count {
            return Err(bad("out of range"));
        }
        Ok(Shard { index, count })
    }

    /// Whether pair `index` of the plan belongs to this shard.
    pub fn holds(&self, index: usize) -> bool {
        index % self.count as usize == self.index as usize
    }
}

/// The plan's text, or why it cannot be read.
pub(super) fn read_plan(path: &Path) -> Result<String, Vec<Problem>> {
    std::fs::read_to_string(path).map_err(|e| {
        vec![Problem {
            place: None,
            message: format!("cannot read the plan file: {e}"),
        }]
    })
}

/// Problems at byte spans as problems at lines and columns, in the order of the text.
pub(super) fn placed(text: &str, mut problems: Vec<Placed>) -> Vec<Problem> {
    problems.sort_by_key(|p| p.span.as_ref().map_or(0, |s| s.start));
    problems
        .into_iter()
        .map(|p| Problem {
            place: p.span.map(|s| line_and_column(text, s.start)),
            message: p.message,
        })
        .collect()
}

pub(super) struct Collector {
    pub(super) problems: Vec<Placed>,
}

impl Collector {
    pub(super) fn at(&mut self, span: Option<Range<usize>>, message: String) {
        self.problems.push(Placed { span, message });
    }

    /// Deserialises the keys `known` of `table` (others are the caller's).
    fn table<T: DeserializeOwned>(
        &mut self,
        table: &DeTable<'_>,
        span: Range<usize>,
        known: &[&str],
        place: &str,
    ) -> Option<T> {
        let mut inside = DeTable::new();
        for (k, v) in table.iter() {
            if known.contains(&k.get_ref().as_ref()) {
                inside.insert(k.clone(), v.clone());
            }
        }
        let value = Spanned::new(span.clone(), DeValue::Table(inside));
        match T::deserialize(ValueDeserializer::from(value)) {
            Ok(v) => Some(v),
            Err(e) => {
                // A library's message may hold the value itself: bounded like any echo.
                let message = format!("{place}: {}", bounded(e.message()));
                self.at(e.span().or(Some(span)), message);
                None
            }
        }
    }
}

/// The studies that passed every check, and every problem of the plan.
pub(super) fn parse(text: &str, dir: &Path) -> (Vec<PlannedStudy>, Vec<Placed>) {
    let root = match DeTable::parse(text) {
        Ok(root) => root,
        Err(e) => {
            let problem = Placed {
                span: e.span(),
                message: format!("not a TOML file: {}", bounded(e.message())),
            };
            return (Vec::new(), vec![problem]);
        }
    };
    let mut c = Collector {
        problems: Vec::new(),
    };
    let mut defaults = SettingsTable::default();
    let mut study_values = Vec::new();
    for (key, value) in root.get_ref().iter() {
        match (key.get_ref().as_ref(), value.get_ref()) {
            ("defaults", DeValue::Table(t)) => {
                defaults = SettingsTable::read(t, &[], "[defaults]", &mut c.problems);
            }
            ("study", DeValue::Array(items)) => study_values.extend(items.iter().cloned()),
            ("defaults", _) | ("study", _) => c.at(
                Some(key.span()),
                format!(
                    "{} must be a table: write [defaults] once and [[study]] for each study",
                    crate::text::quoted(key.get_ref())
                ),
            ),
            (other, _) => c.at(
                Some(key.span()),
                format!(
                    "unknown top-level key {}; a plan holds [defaults] and [[study]] tables",
                    crate::text::quoted(other)
                ),
            ),
        }
    }
    // [defaults] need not name targets; its other problems are reported there, once.
    let default_problems: Vec<String> = match defaults.input.check() {
        Ok(_) => Vec::new(),
        Err(problems) => problems
            .iter()
            .filter(|p| p.key != Key::Targets || defaults.input.targets.is_some())
            .map(|p| {
                let placed = defaults.place(p, None, "[defaults]");
                let message = placed.message.clone();
                c.problems.push(placed);
                message
            })
            .collect(),
    };
    if study_values.is_empty() {
        c.at(
            None,
            "the plan has no [[study]] table; add one per data file".into(),
        );
    }
    let mut studies: Vec<PlannedStudy> = Vec::new();
    let mut names: Vec<(String, Range<usize>)> = Vec::new();
    for (n, item) in study_values.into_iter().enumerate() {
        let span = item.span();
        let DeValue::Table(table) = item.into_inner() else {
            c.at(Some(span), format!("study {}: not a table", n + 1));
            continue;
        };
        let place = study_place(&table, n);
        let own = SettingsTable::read(&table, &STUDY_KEYS, &place, &mut c.problems);
        let head: Option<StudyHead> = c.table(&table, span.clone(), &STUDY_KEYS, &place);
        let Some(head) = head else { continue };
        names.push((head.name.get_ref().clone(), head.name.span()));
        let study = StudyTables {
            own,
            defaults: &defaults,
            default_problems: &default_problems,
        };
        if let Some(study) = check_study(&mut c, head, study, dir, &place) {
            studies.push(study);
        }
    }
    check_duplicates(&mut c, &names, text);
    studies.sort_by(|a, b| a.name.cmp(&b.name));
    (studies, c.problems)
}

/// A study's own settings and the defaults under them.
pub(super) struct StudyTables<'a> {
    pub(super) own: SettingsTable,
    pub(super) defaults: &'a SettingsTable,
    /// The messages already reported at `[defaults]`.
    pub(super) default_problems: &'a [String],
}

impl StudyTables<'_> {
    /// The study's settings: its own keys over the defaults.
    pub(super) fn merged(&self) -> SettingsInput {
        self.own.input.clone().over(&self.defaults.input)
    }
}

fn study_place(table: &DeTable<'_>, n: usize) -> String {
    match table.get("name").and_then(|v| v.get_ref().as_str()) {
        Some(name) => format!("[[study]] {}", crate::text::quoted(name)),
        None => format!("[[study]] number {}", n + 1),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn plan_in(text: &str) -> Result<Vec<PlannedStudy>, Vec<Problem>> {
        match parse(text, Path::new("")) {
            (studies, problems) if problems.is_empty() => Ok(studies),
            (_, problems) => Err(placed(text, problems)),
        }
    }

    #[test]
    fn shards_are_numbered_from_zero_and_hold_every_nth_pair() {
        let shard = Shard::parse("1/3").unwrap();
        assert_eq!(shard, Shard { index: 1, count: 3 });
        let held: Vec<usize> = (0..7).filter(|&k| shard.holds(k)).collect();
        assert_eq!(held, vec![1, 4]);
        for bad in ["3/3", "0/0", "1", "a/3", "-1/3"] {
            assert!(Shard::parse(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn studies_are_sorted_by_name_and_overrides_win_over_defaults() {
        let studies = plan_in(
            "[defaults]\nseed = 4\nreplicates = 6\n\n[[study]]\nname = \"b\"\ndata = \"b.csv\"\n\
             targets = [\"y\", \"x\"]\nseed = 9\n\n[[study]]\nname = \"a\"\ndata = \"a.csv\"\n\
             targets = [\"y\"]\n",
        )
        .unwrap();
        let names: Vec<&str> = studies.iter().map(|s| s.name.as_str()).collect();
        assert_eq!(names, ["a", "b"]);
        assert_eq!(studies[0].settings.seed(), 4);
        assert_eq!(studies[1].settings.seed(), 9);
        assert_eq!(studies[1].settings.resampling().count, 6);
        assert_eq!(studies[1].targets, ["y", "x"]);
    }

    #[test]
    fn study_names_that_are_not_plain_folder_names_are_unsafe() {
        for name in [
            "..",
            "a/b",
            "a\\b",
            ".hidden",
            "tab\there",
            "index.html",
            "a b",
            "",
        ] {
            assert!(unsafe_name(name, true).is_some(), "{name:?}");
        }
        for name in ["line-a", "Line_2.v1"] {
            assert_eq!(unsafe_name(name, true), None, "{name}");
        }
        // Targets are column names: spaces are fine there, separators are not.
        assert_eq!(unsafe_name("crush strength", false), None);
        assert!(unsafe_name("a/b", false).is_some());
    }

    #[test]
    fn windows_device_names_and_hidden_characters_are_not_folder_names() {
        for name in [
            "CON",
            "con",
            "Aux",
            "nul.txt",
            "PRN.tar.gz",
            "lpt9",
            "COM1",
            "com0",
            "com\u{b9}",
        ] {
            assert!(unsafe_name(name, false).is_some(), "{name}");
            assert!(
                unsafe_name(name, false)
                    .unwrap()
                    .contains("reserved device name"),
                "{name}"
            );
        }
        for name in ["console", "com10", "auxiliary", "nul_rate", "lpt"] {
            assert_eq!(unsafe_name(name, false), None, "{name}");
        }
        let why = unsafe_name("x2\u{202e}evil", false).unwrap();
        assert!(
            why.contains("U+202E") && why.contains("right-to-left override"),
            "{why}"
        );
        assert!(unsafe_name("a\u{200b}b", false).is_some());
    }
}
