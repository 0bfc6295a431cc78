//! `forebear batch`: every (study, target) pair of a plan into one output folder, an index, a
//! machine-readable summary and drift against a previous run.
//!
//! - [`plan`] reads and validates the TOML plan (with the rules of `rules.rs`), and assigns pairs
//!   to shards; [`list`] lists the pairs and their shards (`--list`);
//! - [`execute`] runs one whole batch into its output folder, and [`outcome`] turns the finished
//!   summary into the closing line and the command's result;
//! - [`run`] analyses pairs into dossiers and builds the [`Summary`];
//! - [`drift`] compares a summary with a previous one;
//! - [`index`] renders `index.md` and `index.html` from the summary;
//! - [`output`] reads former summaries, writes the index and summary, and collects shard outputs
//!   (the folder itself is claimed, staged and replaced by [`crate::output`]).
//!
//! `summary.json` and the index files hold no timestamps, durations, paths of the machine or
//! command lines, so that shard outputs collected give the same bytes as one run.

mod check;
pub mod drift;
pub mod execute;
pub mod index;
pub mod list;
pub mod outcome;
pub mod output;
pub mod plan;
pub mod rules;
pub mod run;

use crate::finding::ToolInfo;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// Version of the `summary.json` layout.
pub const BATCH_SCHEMA: &str = "forebear.batch/1";

/// File name of the summary in a batch output folder.
pub const SUMMARY_FILE: &str = "summary.json";

/// Default for `--drift-threshold`.
pub const DEFAULT_DRIFT_THRESHOLD: f64 = 0.2;

/// `summary.json`: the whole batch output for machines.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct Summary {
    /// Layout version, [`BATCH_SCHEMA`].
    pub schema: String,
    /// The build that ran the batch.
    pub tool: ToolInfo,
    /// The plan file.
    pub plan: PlanRef,
    /// The share this output holds; `null` for a whole run (or collected shards).
    pub shard: Option<plan::Shard>,
    /// Every study run, by name.
    pub studies: BTreeMap<String, StudySummary>,
    /// Changes since a previous run; `null` when no previous run was given.
    pub drift: Option<drift::Drift>,
    /// Counts.
    pub totals: Totals,
}

/// The plan file, by name and content.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct PlanRef {
    /// File name (without folders).
    pub file: String,
    /// SHA-256 of its text.
    pub sha256: String,
}

/// One study of the batch.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct StudySummary {
    /// The data path as written in the plan.
    pub data: String,
    /// Every target of the study run here, by name.
    pub targets: BTreeMap<String, Entry>,
}

/// Whether a pair was analysed.
#[derive(Clone, Copy, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum Status {
    /// The dossier was written.
    Done,
    /// The pair failed; `error` says why.
    Failed,
}

/// Why a pair failed: something the user can fix, or a bug.
#[derive(Clone, Copy, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum Failure {
    /// Bad input or settings, or an I/O failure (exit code 2).
    Input,
    /// A bug: an internal error or a panic (exit code 3).
    Internal,
}

/// One (study, target) pair's result.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct Entry {
    /// Done or failed.
    pub status: Status,
    /// Why it failed (failed pairs only).
    pub error: Option<String>,
    /// What kind of failure it was (failed pairs only; absent in summaries written before it was
    /// recorded). The exit code of `batch` is chosen from it, never from the message's text.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub failure: Option<Failure>,
    /// Position in the plan's pair order (the shard assignment uses it).
    pub pair: usize,
    /// The outcome name (done pairs only).
    pub outcome: Option<String>,
    /// Candidate parent sets.
    pub parent_sets: Vec<Vec<String>>,
    /// MB(target) in selection order.
    pub markov_boundary: Vec<String>,
    /// Resampling stability; `null` without resampling or for failed pairs.
    pub stability: Option<EntryStability>,
    /// The analysed data's fingerprints.
    pub data: Option<EntryData>,
    /// The result digest of the dossier.
    pub digest: Option<String>,
    /// The dossier folder, relative to the output folder (`study/target`).
    pub dossier: Option<String>,
    /// The result read with the stated knowledge (absent without knowledge).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub with_knowledge: Option<EntryKnowledge>,
}

/// A pair's result read with the stated knowledge.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct EntryKnowledge {
    /// The outcome name with the knowledge.
    pub outcome: String,
    /// Its parent sets.
    pub parent_sets: Vec<Vec<String>>,
    /// The claimed parents that rest on the knowledge (not on the data alone).
    pub resting_on_knowledge: Vec<String>,
    /// Whether this result recurred in at least π_thr of the replicates (absent without
    /// resampling).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub stable: Option<bool>,
}

/// The stability of a pair's findings.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct EntryStability {
    /// Replicates aggregated.
    pub replicates: u32,
    /// π_thr.
    pub threshold: f64,
    /// The headline: frequency of the full-data outcome with the same parent sets.
    pub headline: f64,
    /// Whether the headline is at least π_thr.
    pub headline_stable: bool,
    /// More than half of the replicates reached another outcome or other parent sets (false in
    /// summaries written before it was recorded).
    #[serde(default)]
    pub headline_contradicted: bool,
    /// The most frequent replicate result other than the headline, if any replicate reached one
    /// (absent in summaries written before it was recorded).
    #[serde(default)]
    pub most_frequent_other: Option<crate::resample::stability::OutcomeFrequency>,
    /// Frequency of each candidate in MB(target).
    pub markov_boundary: BTreeMap<String, f64>,
    /// Frequency of each candidate in an identified parent set.
    pub parents: BTreeMap<String, f64>,
}

/// Fingerprints of the analysed data.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct EntryData {
    /// SHA-256 of the file's bytes.
    pub sha256: String,
    /// SHA-256 of its parsed content (what drift compares).
    pub content_sha256: String,
    /// Rows read.
    pub rows_read: usize,
    /// Rows used.
    pub rows_used: usize,
}

/// Counts over the batch.
#[derive(Clone, Debug, Default, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct Totals {
    /// Pairs in this output.
    pub pairs: usize,
    /// Pairs with a dossier.
    pub done: usize,
    /// Pairs that failed.
    pub failed: usize,
    /// Changes listed under `drift` (drift only).
    pub changes: usize,
    /// Outcome changes between two unstable headlines, listed under `drift` but not drift.
    #[serde(default)]
    pub unstable_outcomes: usize,
}

impl Summary {
    /// Every entry with its study and target, in name order.
    pub fn entries(&self) -> impl Iterator<Item = (&str, &str, &Entry)> {
        self.studies.iter().flat_map(|(s, study)| {
            study
                .targets
                .iter()
                .map(move |(t, e)| (s.as_str(), t.as_str(), e))
        })
    }

    /// The text of `summary.json`.
    pub fn to_text(&self) -> String {
        serde_json::to_string_pretty(self).expect("a summary is plain data") + "\n"
    }
}
