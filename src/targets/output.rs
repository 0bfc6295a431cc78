//! The output of several targets: `DIR/<target>/`, each a complete dossier, and a study summary
//! (`summary.json`, `summary.md`, `summary.html`, rendered with the batch index's rows), all
//! written at once after every target has succeeded (`output::Staging`).

use super::{analyze_targets, TargetChoice};
use crate::analysis::{Progress, Silent};
use crate::batch::index::Dated;
use crate::batch::run::entry_of;
use crate::batch::{Entry, Totals, SUMMARY_FILE};
use crate::error::{Error, Result};
use crate::finding::{Finding, ToolInfo};
use crate::output::{fs_error, write_synced, Claim, Kind, Staging};
use crate::report::html::CONTENT_SECURITY_POLICY;
use crate::settings::{Settings, StudyFileRecord};
use crate::text::quoted;
use minijinja::value::Serde;
use minijinja::{context, Environment, Value};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::path::Path;

/// Layout version of the study summary of several targets.
pub const TARGETS_SCHEMA: &str = "forebear.targets/1";

/// The study summary: one entry per target (the batch index's entries), a function of the
/// findings only (no times, paths or command lines), like a batch's `summary.json`.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct TargetsSummary {
    /// Layout version, [`TARGETS_SCHEMA`].
    pub schema: String,
    /// The build that ran.
    pub tool: ToolInfo,
    /// The data file's name.
    pub data: String,
    /// Every target by name; `pair` is its position in the run, `dossier` its folder.
    pub targets: BTreeMap<String, Entry>,
    /// Counts (`pairs`: targets).
    pub totals: Totals,
}

/// Why a target's name cannot be its dossier's folder name, if it cannot.
pub fn folder_problem(target: &str) -> Option<String> {
    if let Some(why) = crate::batch::rules::unsafe_name(target, false) {
        return Some(why);
    }
    ["summary.json", "summary.md", "summary.html"]
        .iter()
        .any(|f| f.eq_ignore_ascii_case(target))
        .then(|| "is the name of a file of the study summary".to_string())
}

/// Refuses a target whose name cannot be its dossier's folder inside the output folder.
pub fn check_folders(targets: &[String]) -> Result<()> {
    for target in targets {
        if let Some(why) = folder_problem(target) {
            return Err(Error::input(format!(
                "the target {} cannot name its dossier's folder inside --out: it {why}; analyse \
                 it alone (one --target writes its dossier into --out itself)",
                quoted(target)
            )));
        }
    }
    Ok(())
}

/// Several targets to analyse into one output folder.
pub struct TargetsRequest<'a> {
    /// The data file.
    pub data: &'a Path,
    /// Checked settings (their targets are ignored: `choice` says which).
    pub settings: &'a Settings,
    /// The targets.
    pub choice: TargetChoice,
    /// The study file the settings came from, if any (recorded in each manifest).
    pub study_file: Option<StudyFileRecord>,
    /// The output folder.
    pub out: &'a Path,
    /// Replace a former output there (kept under a dated name).
    pub force: bool,
    /// Who runs the analysis (recorded in each dossier and the audit trail).
    pub operator: &'a str,
}

/// Analyses every target into `DIR/<target>/` and writes the study summary; nothing appears in
/// the output folder unless every target succeeded. Returns the findings in target order.
pub fn write_targets(
    request: &TargetsRequest<'_>,
    command_line: Vec<String>,
    progress: &dyn Progress,
) -> Result<(Vec<Finding>, TargetsSummary)> {
    if let TargetChoice::Named(targets) = &request.choice {
        check_folders(targets)?;
    }
    let check: &super::NamesCheck = &check_folders;
    let claim = Claim::take(request.out, Kind::Targets, request.force, progress)?;
    let analysed = analyze_targets(
        request.data,
        request.settings,
        &request.choice,
        check,
        command_line,
        progress,
    )?;
    let staging = Staging::new(claim)?;
    let mut entries = BTreeMap::new();
    let mut findings = Vec::with_capacity(analysed.len());
    for (i, mut one) in analysed.into_iter().enumerate() {
        one.finding.run.study_file = request.study_file.clone();
        one.finding.run.operator = request.operator.to_string();
        let target = one.finding.target.clone();
        let folder = staging.path().join(&target);
        let claim = Claim::take(&folder, Kind::Dossier, false, &Silent)?;
        crate::report::write_dossier(&one, claim)?;
        entries.insert(target.clone(), entry_of(&one.finding, i, target));
        findings.push(one.finding);
    }
    let summary = summarise(request.data, entries);
    let started = findings
        .first()
        .map_or_else(crate::timefmt::now_rfc3339, |f| f.run.started_utc.clone());
    write_summary(
        staging.path(),
        &summary,
        &crate::batch::index::Dated::run(&started),
    )?;
    let kept = staging.finish()?;
    progress.say(&format!(
        "wrote {}/ ({} dossiers, one folder per target, and summary.md, summary.html, summary.json)",
        request.out.display(),
        findings.len()
    ));
    crate::dossier::say_kept(kept.as_deref(), progress);
    let mut facts = BTreeMap::new();
    for finding in &findings {
        facts.insert(format!("digest:{}", finding.target), finding.digest.clone());
        facts.insert(
            format!("outcome:{}", finding.target),
            finding.outcome.name().to_string(),
        );
    }
    if let Ok(bytes) = std::fs::read(request.out.join("summary.json")) {
        facts.insert(
            "summary_sha256".into(),
            crate::digest::hex(&<sha2::Sha256 as sha2::Digest>::digest(&bytes)),
        );
    }
    if let Some(kept) = kept {
        facts.insert(
            "replaced_output_kept_as".into(),
            crate::trail::kept_name(&kept),
        );
    }
    let record = crate::trail::Record {
        action: "analyze",
        output: request.out.to_path_buf(),
        facts,
    };
    crate::trail::append(&record, request.operator)?;
    Ok((findings, summary))
}

fn summarise(data: &Path, targets: BTreeMap<String, Entry>) -> TargetsSummary {
    let totals = Totals {
        pairs: targets.len(),
        done: targets.len(),
        ..Totals::default()
    };
    TargetsSummary {
        schema: TARGETS_SCHEMA.into(),
        tool: ToolInfo::current(),
        data: data.file_name().map_or_else(
            || data.display().to_string(),
            |f| f.to_string_lossy().into_owned(),
        ),
        targets,
        totals,
    }
}

/// Writes `summary.json` (undated), `summary.md` and `summary.html` (dated) into `dir`.
pub fn write_summary(dir: &Path, summary: &TargetsSummary, dated: &Dated) -> Result<()> {
    let json = serde_json::to_string_pretty(summary)
        .map_err(|e| Error::internal(format!("study summary: {e}")))?;
    let files = [
        (SUMMARY_FILE, json + "\n"),
        ("summary.md", render_markdown(summary, dated)?),
        ("summary.html", render_html(summary, dated)?),
    ];
    for (name, text) in files {
        let path = dir.join(name);
        write_synced(&path, text.as_bytes()).map_err(|e| fs_error("write", &path, &e))?;
    }
    Ok(())
}

/// The study summary in `dir`, if forebear wrote one there, with the SHA-256 of its text.
pub fn read_summary(dir: &Path) -> Option<(TargetsSummary, String)> {
    let text = std::fs::read_to_string(dir.join(SUMMARY_FILE)).ok()?;
    let summary: TargetsSummary = serde_json::from_str(&text).ok()?;
    (summary.schema == TARGETS_SCHEMA)
        .then(|| (summary, crate::data::fingerprint::sha256_text(&text)))
}

const TARGETS_MARKDOWN_TEMPLATE: &str = include_str!("../../templates/targets-summary.md");
const TARGETS_HTML_TEMPLATE: &str = include_str!("../../templates/targets-summary.html");

/// The page of a study summary of several targets: the batch index's rows, one per target.
fn targets_context(summary: &TargetsSummary, dated: &Dated) -> Value {
    let rows: Vec<crate::batch::index::Row> = summary
        .targets
        .iter()
        .map(|(target, entry)| crate::batch::index::row("", target, entry, [&[], &[]], false))
        .collect();
    context! {
        data => summary.data.clone(),
        tool => summary.tool.describe(),
        totals => Value::from(Serde(&summary.totals)),
        rows => Value::from(Serde(rows)),
        dated_label => dated.label.clone(),
        dated_utc => dated.utc.clone(),
    }
}

/// `summary.md` of several targets analysed in one run.
pub fn render_markdown(summary: &TargetsSummary, dated: &Dated) -> Result<String> {
    let mut env = Environment::new();
    crate::report::markdown::markdown_environment(&mut env);
    let text = crate::batch::index::render_page(
        env,
        "targets-summary.md",
        TARGETS_MARKDOWN_TEMPLATE,
        targets_context(summary, dated),
    )?;
    Ok(format!("{}\n", text.trim_end()))
}

/// `summary.html` of several targets analysed in one run.
pub fn render_html(summary: &TargetsSummary, dated: &Dated) -> Result<String> {
    let mut env = Environment::new();
    crate::report::markdown::template_syntax(&mut env);
    env.add_global(
        "css",
        Value::from_safe_string(crate::batch::index::CSS.to_string()),
    );
    env.add_global("csp", CONTENT_SECURITY_POLICY);
    crate::batch::index::render_page(
        env,
        "targets-summary.html",
        TARGETS_HTML_TEMPLATE,
        targets_context(summary, dated),
    )
}
