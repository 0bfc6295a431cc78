//! The result model: one serde structure of everything found, read by every renderer.

use crate::data::DataReport;
use crate::resample::Stability;
use crate::search::collider::ColliderTest;
use crate::search::knowledge::WithKnowledge;
use crate::search::orient::NeighbourhoodOrientation;
use crate::search::parents::Diagnostics;
use crate::search::shrink::ShrinkTest;
use crate::search::{Component, Outcome, ParentSearch, Selection, Step, StopReason};
use crate::study::Study;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// Version of the `result.json` layout.
pub const SCHEMA: &str = "forebear.result/1";

/// Version of the method: every computation that affects results. It changes whenever any such
/// computation changes (`tests/method_version.rs` holds the digests that pin it), so that `verify`
/// can tell "another build of the same method" from "another method".
pub const METHOD_VERSION: &str = "forebear-method/6";

/// Tool identity.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct ToolInfo {
    /// Program name.
    pub name: String,
    /// Crate version (excluded from the digest: builds of one method give one digest).
    pub version: String,
    /// The git commit this build was made from, `-modified` when the tree differed; empty when
    /// built outside a checkout (excluded from the digest).
    #[serde(default)]
    pub build: String,
    /// [`METHOD_VERSION`] of the build that produced the result (part of the digest).
    #[serde(default)]
    pub method: String,
}

impl ToolInfo {
    /// This build.
    pub fn current() -> Self {
        ToolInfo {
            name: "forebear".into(),
            version: env!("CARGO_PKG_VERSION").into(),
            build: env!("FOREBEAR_GIT_COMMIT").into(),
            method: METHOD_VERSION.into(),
        }
    }

    /// `forebear 0.1.0 (commit 1a2b3c4d5e6f, forebear-method/1)`.
    pub fn describe(&self) -> String {
        let build = if self.build.is_empty() {
            "not built from a checkout".to_string()
        } else {
            format!("commit {}", short_commit(&self.build))
        };
        format!("{} {} ({build}, {})", self.name, self.version, self.method)
    }
}

fn short_commit(build: &str) -> String {
    match build.split_once('-') {
        Some((commit, rest)) => format!("{}-{rest}", &commit[..commit.len().min(12)]),
        None => build.chars().take(12).collect(),
    }
}

/// A finished analysis: the finding and the content index of the data it was made from (which
/// goes into the manifest, not into `result.json`).
#[derive(Clone, Debug, PartialEq)]
pub struct Analysed {
    /// Everything found.
    pub finding: Finding,
    /// The analysed file's content fingerprint and locating index.
    pub content: crate::data::fingerprint::ContentIndex,
}

/// Facts about the run that do not belong to the findings and are excluded from the digest.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct RunInfo {
    /// Start time, UTC, RFC 3339.
    pub started_utc: String,
    /// Wall-clock seconds.
    pub duration_seconds: f64,
    /// Worker threads.
    pub threads: usize,
    /// The data path as given.
    pub data_path: String,
    /// The command line that produced this result.
    pub command_line: Vec<String>,
    /// The study file the settings came from (`analyze --config`), with its SHA-256.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub study_file: Option<crate::settings::StudyFileRecord>,
    /// Who ran the analysis (`--operator`, else the login name); empty in results written before
    /// the operator was recorded.
    #[serde(default)]
    pub operator: String,
    /// Document control (title, identifier, purpose, version, prepared by), absent when none was
    /// given: metadata of the document, outside the digest like every run fact.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub document: Option<crate::settings::DocumentControl>,
}

/// What the used rows of one column look like (for the dossier's data section).
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct ColumnProfile {
    /// The column.
    pub name: String,
    /// `integer` when every used value is a whole number, else `real`.
    pub kind: String,
    /// Distinct values among the used rows.
    pub distinct: usize,
    /// Share of used rows whose value occurs in another used row too.
    pub tied_share: f64,
}

impl ColumnProfile {
    /// Profiles every column of the table of used rows.
    pub fn of_table(table: &crate::data::Table) -> Vec<ColumnProfile> {
        (0..table.n_cols())
            .map(|j| {
                let mut values = table.column(j).to_vec();
                values.sort_by(f64::total_cmp);
                let mut distinct = 0;
                let mut tied = 0;
                for run in values.chunk_by(|a, b| a == b) {
                    distinct += 1;
                    if run.len() > 1 {
                        tied += run.len();
                    }
                }
                ColumnProfile {
                    name: table.names()[j].clone(),
                    kind: if values.iter().all(|v| v.fract() == 0.0) {
                        "integer".into()
                    } else {
                        "real".into()
                    },
                    distinct,
                    tied_share: tied as f64 / values.len().max(1) as f64,
                }
            })
            .collect()
    }
}

/// Everything found for one target.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct Finding {
    /// Layout version.
    pub schema: String,
    /// Tool identity.
    pub tool: ToolInfo,
    /// Data provenance and what was dropped.
    pub data: DataReport,
    /// Profiles of the used columns (older results have none).
    #[serde(default)]
    pub columns: Vec<ColumnProfile>,
    /// Validated settings.
    pub settings: Study,
    /// The target column.
    pub target: String,
    /// MB(target) in selection order.
    pub markov_boundary: Vec<String>,
    /// Every step of the target's selection.
    pub trace: Vec<Step>,
    /// Why the target's forward selection stopped.
    pub stop: StopReason,
    /// The shrink phase of the target's selection (calibrated rule).
    #[serde(default)]
    pub shrink: Vec<ShrinkTest>,
    /// Members the shrink phase removed from the target's boundary, in the order removed.
    #[serde(default)]
    pub removed: Vec<String>,
    /// The selection of every member's own boundary.
    pub boundaries: BTreeMap<String, Selection>,
    /// Edges between members: mutual memberships, then pairs joined by the collider test.
    pub edges: Vec<[String; 2]>,
    /// Collider tests of confirmed members not in each other's boundary (calibrated rule).
    #[serde(default)]
    pub collider_tests: Vec<ColliderTest>,
    /// Components with their tests.
    pub components: Vec<Component>,
    /// The conclusion.
    pub outcome: Outcome,
    /// Candidate parent sets (see `outcome`).
    pub parent_sets: Vec<Vec<String>>,
    /// The conclusion in plain words.
    pub explanation: String,
    /// What the data show against the assumptions.
    pub diagnostics: Diagnostics,
    /// The search read with the stated knowledge (absent without knowledge).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub with_knowledge: Option<WithKnowledge>,
    /// The search read with the parent searches of its neighbours (setting
    /// `neighbourhood_orientation`; absent when off).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub with_neighbourhood: Option<NeighbourhoodOrientation>,
    /// Resampling stability; `null` without resampling.
    pub stability: Option<Stability>,
    /// Run metadata (excluded from the digest).
    pub run: RunInfo,
    /// SHA-256 of the canonical JSON of the findings (see `digest::digest`).
    pub digest: String,
}

impl Finding {
    /// Assembles a finding and computes its digest.
    pub fn new(data: DataReport, settings: Study, search: ParentSearch, run: RunInfo) -> Finding {
        let mut finding = Finding {
            schema: SCHEMA.into(),
            tool: ToolInfo::current(),
            data,
            columns: Vec::new(),
            settings,
            target: search.target,
            markov_boundary: search.markov_boundary.selected,
            trace: search.markov_boundary.steps,
            stop: search.markov_boundary.stop,
            shrink: search.markov_boundary.shrink,
            removed: search.markov_boundary.removed,
            boundaries: search.boundaries,
            edges: search.edges,
            collider_tests: search.collider_tests,
            components: search.components,
            outcome: search.outcome,
            parent_sets: search.parent_sets,
            explanation: search.explanation,
            diagnostics: search.diagnostics,
            with_knowledge: None,
            with_neighbourhood: None,
            stability: None,
            run,
            digest: String::new(),
        };
        finding.digest = crate::digest::digest(&finding);
        finding
    }

    /// The finding with the profiles of the used columns (recomputing the digest).
    pub fn with_columns(mut self, table: &crate::data::Table) -> Finding {
        self.columns = ColumnProfile::of_table(table);
        self.digest = crate::digest::digest(&self);
        self
    }
}

/// The settings of a finding as hashed: the reader options and the validated study.
pub fn settings_value(finding: &Finding) -> serde_json::Value {
    serde_json::json!({
        "reader": crate::data::LoadOptions::from_report(&finding.data),
        "study": finding.settings,
    })
}

/// SHA-256 of the canonical JSON of [`settings_value`].
pub fn settings_sha256(finding: &Finding) -> String {
    crate::data::fingerprint::sha256_text(&crate::digest::canonical_json(&settings_value(finding)))
}
