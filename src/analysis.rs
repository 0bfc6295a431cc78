//! The analyze pipeline as a library call: read, validate, search, assemble the finding.
//! The command-line layer only parses arguments and writes what this returns.

use crate::data::fingerprint::sha256_file;
use crate::data::{read_csv, LoadOptions};
use crate::error::Result;
use crate::finding::{Finding, RunInfo};
use crate::search::{local_parents, SearchData};
use crate::study::{Study, StudyInput};
use std::path::Path;
use std::time::Instant;

/// Where progress messages go.
pub trait Progress: Sync {
    /// One line of progress.
    fn say(&self, message: &str);
}

/// Progress that is not shown.
pub struct Silent;

impl Progress for Silent {
    fn say(&self, _message: &str) {}
}

/// Runs the local parent search on a CSV file. Nothing is written.
pub fn analyze_file(
    path: &Path,
    input: &StudyInput,
    options: &LoadOptions,
    command_line: Vec<String>,
    progress: &dyn Progress,
) -> Result<Finding> {
    let started = Instant::now();
    let started_utc = crate::timefmt::now_rfc3339();
    let raw = read_csv(path, options)?;
    let (study, used, target) = Study::new(input, &raw)?;
    let (sha256, size_bytes) = sha256_file(path)?;
    let (table, report) = raw.prepare(
        &used,
        target,
        study.excluded.clone(),
        size_bytes,
        sha256,
        options,
    )?;
    let study = study.without_constant(&report.constant_columns);
    progress.say(&format!(
        "read {} rows ({} used) and {} columns from {}",
        report.rows_read,
        report.rows_used,
        table.n_cols(),
        report.file
    ));
    for column in &report.constant_columns {
        progress.say(&format!(
            "column '{column}' is constant on the rows used and is left out"
        ));
    }
    let data = SearchData::new(&table, study.scaling, study.seed, 0);
    let target_index = table
        .index_of(&study.target)
        .expect("target survives preparation");
    let candidates: Vec<usize> = study
        .candidates
        .iter()
        .filter_map(|c| table.index_of(c))
        .collect();
    progress.say(&format!(
        "searching the Markov boundary of '{}' over {} candidates, then each member's",
        study.target,
        candidates.len()
    ));
    let search = local_parents(&data, target_index, &candidates, study.alpha);
    progress.say(&format!(
        "'{}': {} (Markov boundary: {})",
        search.target,
        search.outcome.name(),
        if search.markov_boundary.selected.is_empty() {
            "empty".to_string()
        } else {
            search.markov_boundary.selected.join(", ")
        }
    ));
    let run = RunInfo {
        started_utc,
        duration_seconds: (started.elapsed().as_secs_f64() * 1000.0).round() / 1000.0,
        threads: rayon::current_num_threads(),
        data_path: path.display().to_string(),
        command_line,
    };
    let report = crate::data::DataReport {
        file: path
            .file_name()
            .map_or_else(|| report.file.clone(), |f| f.to_string_lossy().into_owned()),
        ..report
    };
    Ok(Finding::new(report, study, search, run))
}
