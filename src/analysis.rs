//! The analyze pipeline as library calls: read, validate, search the full data, run replicates,
//! aggregate, assemble the finding. The command-line layer only parses arguments and writes files.

use crate::data::checks::{rounding_note, FileFacts};
use crate::data::fingerprint::{content_index, ContentIndex};
use crate::data::{DataReader, DataReport, RawTable, Table};
use crate::error::{Error, Result};
use crate::finding::{Analysed, Finding, RunInfo};
use crate::resample::stability::{aggregate, run_replicate, FullResults};
use crate::resample::{ReplicateRecord, Stability};
use crate::search::orient::through_neighbourhood;
use crate::search::{local_parents, ParentSearch, SearchData};
use crate::settings::Settings;
use crate::study::Study;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use std::ops::Range;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU32, Ordering};
use std::sync::Arc;
use std::time::Instant;

/// Where progress messages go.
pub trait Progress: Sync {
    /// One line of progress.
    fn say(&self, message: &str);

    /// `done` of `total` units of counted work (`replicates`, `targets`, `pairs`) are finished;
    /// called once per unit, from any thread. By default a line at every tenth and at the end.
    fn advance(&self, what: &str, done: u64, total: u64) {
        if is_progress_step(done, total) {
            self.say(&format!("{what} done: {done}/{total}"));
        }
    }
}

/// Whether `done` of `total` is one of the steps a line of progress is written at: every tenth
/// of the work (every unit when there are fewer than ten) and the last.
pub fn is_progress_step(done: u64, total: u64) -> bool {
    let step = (total / 10).max(1);
    done.is_multiple_of(step) || done == total
}

/// Progress that is not shown.
pub struct Silent;

impl Progress for Silent {
    fn say(&self, _message: &str) {}
}

/// A validated study on its validated table, ready to search.
pub struct Prepared {
    /// The table of used columns and rows (shared by the targets of one run whose tables are equal).
    pub table: Arc<Table>,
    /// What happened between the file and the table.
    pub report: DataReport,
    /// Validated settings.
    pub study: Study,
    /// The data path as given.
    pub data_path: String,
    /// The content fingerprint of the whole file and its locating index.
    pub content: ContentIndex,
    /// Document control of the dossier (a run fact, outside the digest).
    pub document: Option<crate::settings::DocumentControl>,
    started: Instant,
    started_utc: String,
}

/// Reads and validates the data and settings. Nothing is written. The file is opened once: the
/// settings are checked against its header before the rows are read (a misspelt target in a large
/// file is reported at once), and its bytes are hashed as they are parsed.
pub fn prepare(
    path: &Path,
    settings: &Settings,
    target: &str,
    progress: &dyn Progress,
) -> Result<Prepared> {
    crate::data::names::check_data_path(path)?;
    let started = Instant::now();
    let started_utc = crate::timefmt::now_rfc3339();
    let options = settings.reader();
    let reader = DataReader::open(path, options)?;
    let checked = Study::new(settings, target, reader.header())?;
    let (raw, facts) = reader.read_rows()?;
    let prepared = assemble(
        path,
        raw,
        facts,
        checked,
        options,
        progress,
        (started, started_utc),
    )?;
    Ok(prepared.with_document(settings))
}

/// As [`prepare`], on data already read (with [`crate::data::read_data`]).
pub fn prepare_read(
    path: &Path,
    (raw, facts): (RawTable, FileFacts),
    settings: &Settings,
    target: &str,
    progress: &dyn Progress,
) -> Result<Prepared> {
    let started = (Instant::now(), crate::timefmt::now_rfc3339());
    let checked = Study::new(settings, target, &raw)?;
    let options = settings.reader();
    let prepared = assemble(path, raw, facts, checked, options, progress, started)?;
    Ok(prepared.with_document(settings))
}

/// As [`prepare_read`], for one of several targets of one read file whose content index is
/// already computed (`targets`); `checked` is what [`Study::new`] returned for the target.
pub fn prepare_indexed(
    path: &Path,
    raw: RawTable,
    facts: FileFacts,
    content: ContentIndex,
    checked: (Study, Vec<usize>, usize),
    options: &crate::data::LoadOptions,
    progress: &dyn Progress,
) -> Result<Prepared> {
    let started = (Instant::now(), crate::timefmt::now_rfc3339());
    assemble_indexed(
        path, raw, facts, content, checked, options, progress, started,
    )
}

/// The validated table and settings of a read file.
fn assemble(
    path: &Path,
    raw: RawTable,
    facts: FileFacts,
    (study, used, target): (Study, Vec<usize>, usize),
    options: &crate::data::LoadOptions,
    progress: &dyn Progress,
    (started, started_utc): (Instant, String),
) -> Result<Prepared> {
    let content = content_index(&raw);
    assemble_indexed(
        path,
        raw,
        facts,
        content,
        (study, used, target),
        options,
        progress,
        (started, started_utc),
    )
}

/// As [`assemble`], with the content index of `raw` already computed.
#[allow(clippy::too_many_arguments)] // the parts of one read file; a struct would only rename them
fn assemble_indexed(
    path: &Path,
    raw: RawTable,
    facts: FileFacts,
    content: ContentIndex,
    (study, used, target): (Study, Vec<usize>, usize),
    options: &crate::data::LoadOptions,
    progress: &dyn Progress,
    (started, started_utc): (Instant, String),
) -> Result<Prepared> {
    let left_out = (0..raw.names.len())
        .filter(|j| !used.contains(j))
        .map(|j| raw.names[j].clone())
        .collect();
    let (table, report) = raw.prepare(&used, target, left_out, facts, options)?;
    let study = study.on_data(&report)?;
    progress.say(&format!(
        "read {} rows ({} used) and {} columns from {}",
        report.rows_read,
        report.rows_used,
        table.n_cols(),
        report.file
    ));
    for column in &report.constant_columns {
        let rounding = report
            .constant_by_rounding
            .get(column)
            .map_or(String::new(), |texts| format!(": {}", rounding_note(texts)));
        progress.say(&format!(
            "column '{column}' is constant on the rows used and is left out{rounding}"
        ));
    }
    for (column, original) in &report.duplicate_columns {
        progress.say(&format!(
            "column '{column}' repeats '{original}' exactly on the rows used and is left out"
        ));
    }
    let report = DataReport {
        file: path
            .file_name()
            .map_or_else(|| report.file.clone(), |f| f.to_string_lossy().into_owned()),
        content_sha256: content.sha256.clone(),
        ..report
    };
    Ok(Prepared {
        table: Arc::new(table),
        report,
        study,
        data_path: path.display().to_string(),
        content,
        document: None,
        started,
        started_utc,
    })
}

impl Prepared {
    /// The same, with the document control of `settings` (absent when none was given).
    pub fn with_document(mut self, settings: &Settings) -> Prepared {
        let document = settings.document();
        self.document = (!document.is_empty()).then(|| document.clone());
        self
    }

    /// The local parent search on the full data (replicate 0 of the keyed draws).
    pub fn full_search(&self, progress: &dyn Progress) -> ParentSearch {
        let data = SearchData::new(&self.table, self.study.scaling, self.study.seed, 0);
        let request = self.study.request(&data);
        progress.say(&format!(
            "searching the Markov boundary of '{}' over {} candidates, then each member's",
            self.study.target,
            request.candidates.len()
        ));
        let search = local_parents(
            &data,
            request.target,
            &request.candidates,
            self.study.alpha,
            &self.study.selection,
        );
        progress.say(&full_data_line(&search));
        search
    }

    /// Runs replicates `range` of the plan in parallel; records come back in index order.
    pub fn replicates(
        &self,
        range: Range<u32>,
        full: &ParentSearch,
        progress: &dyn Progress,
    ) -> Vec<ReplicateRecord> {
        if range.is_empty() {
            return Vec::new();
        }
        progress.say(&format!(
            "running replicates {}..{} of {} ({})",
            range.start,
            range.end,
            self.study.resampling.count,
            self.study.resampling.kind.name()
        ));
        self.replicates_at(&range.collect::<Vec<u32>>(), full, progress)
    }

    /// Runs the listed replicates in parallel; records come back in the order listed.
    pub fn replicates_at(
        &self,
        indices: &[u32],
        full: &ParentSearch,
        progress: &dyn Progress,
    ) -> Vec<ReplicateRecord> {
        let done = AtomicU32::new(0);
        let total = indices.len() as u64;
        indices
            .par_iter()
            .map(|&k| {
                let record =
                    run_replicate(&self.table, &self.study, k, &full.markov_boundary.steps);
                let finished = done.fetch_add(1, Ordering::Relaxed) + 1;
                progress.advance("replicates", u64::from(finished), total);
                record
            })
            .collect()
    }

    /// The full-data finding (no stability yet) with this invocation's run metadata.
    pub fn finding(&self, full: ParentSearch, command_line: Vec<String>) -> Finding {
        let knowledge = self.study.used_knowledge();
        // The readings need the scaled columns; a search without them does not scale again.
        let data = (knowledge.is_some() || self.study.neighbourhood_orientation)
            .then(|| SearchData::new(&self.table, self.study.scaling, self.study.seed, 0));
        let (alpha, rule) = (self.study.alpha, &self.study.selection);
        let readings = data.as_ref().map(|data| {
            (
                knowledge.map(|k| crate::search::knowledge::read(data, &full, &k, rule)),
                self.study
                    .neighbourhood_orientation
                    .then(|| through_neighbourhood(data, &full, alpha, rule)),
            )
        });
        let mut finding = Finding::new(
            self.report.clone(),
            self.study.clone(),
            full,
            self.run_info(command_line),
        );
        (finding.with_knowledge, finding.with_neighbourhood) = readings.unwrap_or_default();
        // Recomputes the digest over everything set above.
        finding.with_columns(&self.table)
    }

    /// The run metadata of this invocation.
    pub fn run_info(&self, command_line: Vec<String>) -> RunInfo {
        RunInfo {
            started_utc: self.started_utc.clone(),
            duration_seconds: (self.started.elapsed().as_secs_f64() * 1000.0).round() / 1000.0,
            threads: rayon::current_num_threads(),
            data_path: self.data_path.clone(),
            command_line,
            study_file: None,
            operator: String::new(),
            document: self.document.clone(),
        }
    }
}

/// The progress line of a full-data search: the target, its outcome and its Markov boundary.
pub fn full_data_line(search: &ParentSearch) -> String {
    format!(
        "'{}' on the full data: {} (Markov boundary: {})",
        search.target,
        search.outcome.name(),
        if search.markov_boundary.selected.is_empty() {
            "empty".to_string()
        } else {
            search.markov_boundary.selected.join(", ")
        }
    )
}

/// Aggregates replicate records for a full-data finding and attaches them (recomputing the digest).
pub fn attach_stability(mut finding: Finding, records: &[ReplicateRecord]) -> Finding {
    let plan = &finding.settings.resampling;
    finding.stability = (plan.count > 0).then(|| -> Stability {
        aggregate(
            plan,
            finding.settings.stability_threshold,
            &finding.settings.candidates,
            &finding.trace,
            FullResults {
                search: (finding.outcome, &finding.parent_sets),
                with_knowledge: finding
                    .with_knowledge
                    .as_ref()
                    .map(|k| (k.outcome, k.parent_sets.as_slice())),
                with_neighbourhood: finding
                    .with_neighbourhood
                    .as_ref()
                    .map(|k| (k.outcome, k.parent_sets.as_slice())),
            },
            records,
        )
    });
    finding.digest = crate::digest::digest(&finding);
    finding
}

/// Runs the whole analysis of a CSV file: full-data search, every replicate, stability.
pub fn analyze_file(
    path: &Path,
    settings: &Settings,
    target: &str,
    command_line: Vec<String>,
    progress: &dyn Progress,
) -> Result<Analysed> {
    let prepared = prepare(path, settings, target, progress)?;
    let full = prepared.full_search(progress);
    let records = prepared.replicates(0..prepared.study.resampling.count, &full, progress);
    let content = prepared.content.clone();
    let finding = prepared.finding(full, command_line);
    Ok(Analysed {
        finding: attach_stability(finding, &records),
        content,
    })
}

/// Version of the partial-result layout.
pub const PARTIAL_SCHEMA: &str = "forebear.partial/1";

/// Some replicates of a study, computed by one shard, with the full-data finding they belong to.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct Partial {
    /// Layout version.
    pub schema: String,
    /// The full-data finding, without stability.
    pub finding: Finding,
    /// The content index of the data (for the manifest of the merged dossier).
    pub content: ContentIndex,
    /// The half-open replicate range [start, end) this part holds.
    pub range: [u32; 2],
    /// The replicate records, in index order.
    pub records: Vec<ReplicateRecord>,
}

/// Computes replicates `range` of a study into a partial result.
pub fn analyze_part(
    path: &Path,
    settings: &Settings,
    target: &str,
    range: Range<u32>,
    command_line: Vec<String>,
    progress: &dyn Progress,
) -> Result<Partial> {
    let prepared = prepare(path, settings, target, progress)?;
    let count = prepared.study.resampling.count;
    check_range(&range, count)?;
    let full = prepared.full_search(progress);
    let records = prepared.replicates(range.clone(), &full, progress);
    let content = prepared.content.clone();
    let finding = prepared.finding(full, command_line);
    Ok(Partial {
        schema: PARTIAL_SCHEMA.into(),
        finding,
        content,
        range: [range.start, range.end],
        records,
    })
}

/// Checks a `--replicate-range` against the plan of `count` replicates: a half-open range within
/// 0..count whose start is not past its end. An empty range (`A..A`, as a scheduler's spare
/// shard computes when there are more shards than replicates) is allowed: its part holds no
/// replicates, and [`merge_parts`] accepts it.
pub fn check_range(range: &Range<u32>, count: u32) -> Result<()> {
    if range.start > range.end || range.end > count {
        return Err(Error::input(format!(
            "--replicate-range {}..{} is outside the plan: replicates are numbered 0..{count} \
             (a half-open range A..B with A ≤ B ≤ {count}; A..A is an empty shard)",
            range.start, range.end
        )));
    }
    Ok(())
}

/// Reads the partial results at `paths` (each a `partial.json` file or the folder that holds one),
/// each with the file name it was read from, for [`merge_parts`].
pub fn read_parts(paths: &[PathBuf]) -> Result<Vec<(String, Partial)>> {
    let mut parts = Vec::new();
    for path in paths {
        let file = if path.is_dir() {
            path.join("partial.json")
        } else {
            path.clone()
        };
        let text = std::fs::read_to_string(&file).map_err(|e| {
            Error::input(format!(
                "cannot read partial result '{}': {e}",
                file.display()
            ))
        })?;
        let part: Partial = serde_json::from_str(&text).map_err(|e| {
            Error::input(format!(
                "{}, line {}, column {}: not a forebear partial result ({e})",
                file.display(),
                e.line(),
                e.column()
            ))
        })?;
        parts.push((file.display().to_string(), part));
    }
    Ok(parts)
}

/// Combines partial results of one study into the finding a single run would have produced.
/// Parts must share the full-data finding (same data, settings, seed, tool) and cover the plan's
/// replicates exactly once.
pub fn merge_parts(parts: Vec<(String, Partial)>, command_line: Vec<String>) -> Result<Analysed> {
    let (first_name, first) = parts
        .first()
        .ok_or_else(|| Error::input("merge needs at least one part"))?;
    for (name, part) in &parts {
        if part.schema != PARTIAL_SCHEMA {
            return Err(Error::input(format!(
                "{name}: not a forebear partial result (schema '{}', expected '{PARTIAL_SCHEMA}')",
                part.schema
            )));
        }
        if part.finding.digest != first.finding.digest || part.content != first.content {
            return Err(Error::input(format!(
                "{name} belongs to another study than {first_name}: {}; parts must come from the same \
                 data, settings and seed",
                describe_difference(&first.finding, &part.finding)
            )));
        }
    }
    let count = first.finding.settings.resampling.count;
    let mut covered = vec![None::<&str>; count as usize];
    let mut records = Vec::new();
    for (name, part) in &parts {
        for r in &part.records {
            let slot = covered.get_mut(r.replicate as usize).ok_or_else(|| {
                Error::input(format!(
                    "{name}: replicate {} is outside the plan of {count}",
                    r.replicate
                ))
            })?;
            if let Some(other) = slot {
                return Err(Error::input(format!(
                    "replicate {} appears in both {other} and {name}; each replicate must be merged once",
                    r.replicate
                )));
            }
            *slot = Some(name);
            records.push(r.clone());
        }
    }
    if let Some(missing) = covered.iter().position(Option::is_none) {
        return Err(Error::input(format!(
            "the parts do not cover replicate {missing} of 0..{count}; add the part that holds it"
        )));
    }
    let mut finding = first.finding.clone();
    finding.run = RunInfo {
        started_utc: crate::timefmt::now_rfc3339(),
        duration_seconds: 0.0,
        threads: rayon::current_num_threads(),
        data_path: first.finding.run.data_path.clone(),
        command_line,
        study_file: first.finding.run.study_file.clone(),
        operator: String::new(),
        document: first.finding.run.document.clone(),
    };
    Ok(Analysed {
        finding: attach_stability(finding, &records),
        content: first.content.clone(),
    })
}

fn describe_difference(a: &Finding, b: &Finding) -> String {
    if a.data.sha256 != b.data.sha256 {
        "the data files differ".into()
    } else if a.settings.seed != b.settings.seed {
        format!(
            "the seeds differ ({} and {})",
            a.settings.seed, b.settings.seed
        )
    } else if a.settings != b.settings {
        "the settings differ".into()
    } else if a.tool != b.tool {
        format!(
            "they were made by different tool versions ({} and {})",
            a.tool.version, b.tool.version
        )
    } else {
        "their full-data results differ".into()
    }
}
