//! The batch plan: a TOML file of studies (a data file, one or more targets, settings), with
//! defaults for all studies and per-study overrides. [`Plan::load`] validates the whole file
//! before anything runs and returns every problem it finds, each naming the plan file and, where
//! the TOML parser gives a position, the line.

use crate::data::fingerprint::sha256_text;
use crate::data::LoadOptions;
use crate::study::StudyInput;
use serde::de::DeserializeOwned;
use serde::Deserialize;
use std::ops::Range;
use std::path::{Path, PathBuf};
use toml::de::{DeTable, DeValue, ValueDeserializer};
use toml::Spanned;

pub use super::rules::unsafe_name;
use super::rules::{check_duplicates, check_settings, check_study};

/// File names of a batch output folder that a study name must not take.
pub const RESERVED_NAMES: [&str; 3] = ["index.html", "index.md", "summary.json"];

/// Keys of a study table besides the settings.
const STUDY_KEYS: [&str; 3] = ["name", "data", "targets"];
/// Keys of `[defaults]`, also allowed in every `[[study]]` as overrides.
const SETTING_KEYS: [&str; 16] = [
    "seed",
    "replicates",
    "resample",
    "fraction",
    "alpha",
    "stability_threshold",
    "stopping_rule",
    "selection_alpha",
    "permutations",
    "scaling",
    "exclude",
    "candidates",
    "missing_tokens",
    "missing",
    "delimiter",
    "decimal_comma",
];

/// One problem of a plan file.
#[derive(Clone, Debug, PartialEq)]
pub struct Problem {
    /// 1-based line in the plan file, where known.
    pub line: Option<usize>,
    /// What is wrong, and what to do.
    pub message: String,
}

/// Settings as written (all optional: a study's value, else the default's, else the built-in).
#[derive(Clone, Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct SettingsTable {
    pub(super) seed: Option<u64>,
    pub(super) replicates: Option<u32>,
    pub(super) resample: Option<String>,
    pub(super) fraction: Option<f64>,
    pub(super) alpha: Option<f64>,
    pub(super) stability_threshold: Option<f64>,
    pub(super) stopping_rule: Option<String>,
    pub(super) selection_alpha: Option<f64>,
    pub(super) permutations: Option<u32>,
    pub(super) scaling: Option<String>,
    pub(super) exclude: Option<Vec<String>>,
    pub(super) candidates: Option<Vec<String>>,
    pub(super) missing_tokens: Option<Vec<String>>,
    pub(super) missing: Option<String>,
    pub(super) delimiter: Option<String>,
    pub(super) decimal_comma: Option<bool>,
}

impl SettingsTable {
    /// `self` where set, else `defaults`.
    fn over(self, defaults: &SettingsTable) -> SettingsTable {
        let d = defaults.clone();
        SettingsTable {
            seed: self.seed.or(d.seed),
            replicates: self.replicates.or(d.replicates),
            resample: self.resample.or(d.resample),
            fraction: self.fraction.or(d.fraction),
            alpha: self.alpha.or(d.alpha),
            stability_threshold: self.stability_threshold.or(d.stability_threshold),
            stopping_rule: self.stopping_rule.or(d.stopping_rule),
            selection_alpha: self.selection_alpha.or(d.selection_alpha),
            permutations: self.permutations.or(d.permutations),
            scaling: self.scaling.or(d.scaling),
            exclude: self.exclude.or(d.exclude),
            candidates: self.candidates.or(d.candidates),
            missing_tokens: self.missing_tokens.or(d.missing_tokens),
            missing: self.missing.or(d.missing),
            delimiter: self.delimiter.or(d.delimiter),
            decimal_comma: self.decimal_comma.or(d.decimal_comma),
        }
    }
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct StudyHead {
    pub(super) name: Spanned<String>,
    pub(super) data: Spanned<String>,
    pub(super) targets: Spanned<Vec<String>>,
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
    /// Reader options.
    pub load: LoadOptions,
    /// Settings for every target (`target` is filled in per target by [`PlannedStudy::input`]).
    pub(super) settings: StudyInput,
}

impl PlannedStudy {
    /// The settings of this study for one target.
    pub fn input(&self, target: &str) -> StudyInput {
        StudyInput {
            target: target.to_string(),
            ..self.settings.clone()
        }
    }
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
        let text = std::fs::read_to_string(path).map_err(|e| {
            vec![Problem {
                line: None,
                message: format!("cannot read the plan file: {e}"),
            }]
        })?;
        let dir = path.parent().unwrap_or(Path::new(""));
        let studies = parse(&text, dir)?;
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
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, Deserialize)]
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

fn line_of(text: &str, offset: usize) -> usize {
    text[..offset.min(text.len())].matches('\n').count() + 1
}

pub(super) struct Collector<'t> {
    text: &'t str,
    pub(super) problems: Vec<Problem>,
}

impl Collector<'_> {
    pub(super) fn at(&mut self, span: Option<Range<usize>>, message: String) {
        let line = span.map(|s| line_of(self.text, s.start));
        self.problems.push(Problem { line, message });
    }

    /// Deserialises `table` after reporting (and removing) keys outside `known`.
    fn table<'i, T: DeserializeOwned>(
        &mut self,
        mut table: DeTable<'i>,
        span: Range<usize>,
        known: &[&str],
        place: &str,
    ) -> Option<T> {
        let unknown: Vec<(String, Range<usize>)> = table
            .keys()
            .filter(|k| !known.contains(&k.get_ref().as_ref()))
            .map(|k| (k.get_ref().to_string(), k.span()))
            .collect();
        for (key, key_span) in unknown {
            self.at(
                Some(key_span),
                format!(
                    "unknown key {} in {place}; the keys there are: {}",
                    crate::text::quoted(&key),
                    known.join(", ")
                ),
            );
            table.remove(key.as_str());
        }
        let value = Spanned::new(span.clone(), DeValue::Table(table));
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

fn split_table<'i>(table: &DeTable<'i>, keys: &[&str]) -> (DeTable<'i>, DeTable<'i>) {
    let mut inside = DeTable::new();
    let mut outside = DeTable::new();
    for (k, v) in table.iter() {
        if keys.contains(&k.get_ref().as_ref()) {
            inside.insert(k.clone(), v.clone());
        } else {
            outside.insert(k.clone(), v.clone());
        }
    }
    (inside, outside)
}

fn parse(text: &str, dir: &Path) -> Result<Vec<PlannedStudy>, Vec<Problem>> {
    let root = DeTable::parse(text).map_err(|e| {
        vec![Problem {
            line: e.span().map(|s| line_of(text, s.start)),
            message: format!("not a TOML file: {}", bounded(e.message())),
        }]
    })?;
    let mut c = Collector {
        text,
        problems: Vec::new(),
    };
    let mut defaults = SettingsTable::default();
    let mut defaults_span = None;
    let mut study_values = Vec::new();
    for (key, value) in root.get_ref().iter() {
        match (key.get_ref().as_ref(), value.get_ref()) {
            ("defaults", DeValue::Table(t)) => {
                defaults_span = Some(key.span());
                defaults = c
                    .table(t.clone(), value.span(), &SETTING_KEYS, "[defaults]")
                    .unwrap_or_default();
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
    let default_problems = check_settings(&defaults, None).err().unwrap_or_default();
    for m in &default_problems {
        c.at(defaults_span.clone(), format!("[defaults]: {m}"));
    }
    if study_values.is_empty() {
        c.at(
            None,
            "the plan has no [[study]] table; add one per data file".into(),
        );
    }
    let mut studies: Vec<PlannedStudy> = Vec::new();
    let mut names: Vec<(String, usize)> = Vec::new();
    for (n, item) in study_values.into_iter().enumerate() {
        let span = item.span();
        let DeValue::Table(table) = item.into_inner() else {
            c.at(Some(span), format!("study {}: not a table", n + 1));
            continue;
        };
        let place = study_place(&table, n);
        let (head, rest) = split_table(&table, &STUDY_KEYS);
        let (settings, _) = split_table(&rest, &SETTING_KEYS);
        let mut all_known: Vec<&str> = STUDY_KEYS.to_vec();
        all_known.extend(SETTING_KEYS);
        for (k, _) in rest.iter() {
            if !SETTING_KEYS.contains(&k.get_ref().as_ref()) {
                c.at(
                    Some(k.span()),
                    format!(
                        "unknown key {} in {place}; the keys there are: {}",
                        crate::text::quoted(k.get_ref()),
                        all_known.join(", ")
                    ),
                );
            }
        }
        let head: Option<StudyHead> = c.table(head, span.clone(), &STUDY_KEYS, &place);
        let own: SettingsTable = c
            .table(settings, span.clone(), &SETTING_KEYS, &place)
            .unwrap_or_default();
        let Some(head) = head else { continue };
        let line = line_of(text, head.name.span().start);
        names.push((head.name.get_ref().clone(), line));
        let merged = own.over(&defaults);
        if let Some(study) = check_study(&mut c, head, merged, &default_problems, dir, &place) {
            studies.push(study);
        }
    }
    check_duplicates(&mut c, &names);
    if !c.problems.is_empty() {
        c.problems.sort_by_key(|p| p.line.unwrap_or(0));
        return Err(c.problems);
    }
    studies.sort_by(|a, b| a.name.cmp(&b.name));
    Ok(studies)
}

/// A parser's message, on one line and of bounded length (it may quote the plan's text).
fn bounded(message: &str) -> String {
    let line = message.split_whitespace().collect::<Vec<_>>().join(" ");
    crate::text::capped(&crate::text::escaped(&line), 2 * crate::text::ECHO_CHARS)
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
        parse(text, Path::new(""))
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
        assert_eq!(studies[0].input("y").seed, 4);
        assert_eq!(studies[1].input("x").seed, 9);
        assert_eq!(studies[1].input("x").replicates, 6);
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
