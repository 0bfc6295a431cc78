//! One analysis written into one output folder: the folder is claimed before the work (an unusable
//! folder is refused at once, not after minutes of computing), the analysis runs, and the dossier
//! or the partial result is written there. `analyze` and `demo` call this; the command line only
//! prints what it returns.

use crate::analysis::{analyze_file, analyze_part, Progress};
use crate::error::{Error, Result};
use crate::finding::Finding;
use crate::output::{Claim, Kind};
use crate::settings::{Settings, StudyFileRecord};
use std::ops::Range;
use std::path::Path;

/// One analysis to write into one output folder.
pub struct DossierRequest<'a> {
    /// The data file.
    pub data: &'a Path,
    /// Checked settings.
    pub settings: &'a Settings,
    /// The target column.
    pub target: &'a str,
    /// The study file the settings came from, if any (recorded in the manifest).
    pub study_file: Option<StudyFileRecord>,
    /// The output folder.
    pub out: &'a Path,
    /// Replace a former dossier there (kept under a dated name).
    pub force: bool,
    /// Who runs the analysis (recorded in the dossier and the audit trail).
    pub operator: &'a str,
}

/// Analyses the request's data into a dossier in its output folder; returns the finding.
pub fn write_dossier(
    request: &DossierRequest<'_>,
    command_line: Vec<String>,
    progress: &dyn Progress,
) -> Result<Finding> {
    let claim = Claim::take(request.out, Kind::Dossier, request.force, progress)?;
    let mut analysed = analyze_file(
        request.data,
        request.settings,
        request.target,
        command_line,
        progress,
    )?;
    analysed.finding.run.study_file = request.study_file.clone();
    analysed.finding.run.operator = request.operator.to_string();
    let kept = crate::report::write_dossier(&analysed, claim)?;
    progress.say(&format!(
        "wrote {}/ (result.json, dossier.md, dossier.html, stability.csv, trace.csv, manifest.json)",
        request.out.display()
    ));
    say_kept(kept.as_deref(), progress);
    crate::trail::append(
        &crate::trail::Record::dossier("analyze", &analysed.finding, request.out, kept.as_deref()),
        request.operator,
    )?;
    Ok(analysed.finding)
}

/// Tells where a replaced former output is kept.
pub fn say_kept(kept: Option<&Path>, progress: &dyn Progress) {
    if let Some(kept) = kept {
        progress.say(&format!(
            "kept the former output as {}/ (--force replaces, never deletes)",
            kept.display()
        ));
    }
}

/// Computes replicates `range` of the request's analysis into `partial.json` in its output folder
/// (for `merge`); returns the path written.
pub fn write_part(
    request: &DossierRequest<'_>,
    range: Range<u32>,
    command_line: Vec<String>,
    progress: &dyn Progress,
) -> Result<std::path::PathBuf> {
    let claim = Claim::take(request.out, Kind::Dossier, request.force, progress)?;
    let mut part = analyze_part(
        request.data,
        request.settings,
        request.target,
        range,
        command_line,
        progress,
    )?;
    part.finding.run.study_file = request.study_file.clone();
    let text = serde_json::to_string(&part)
        .map_err(|e| Error::internal(format!("partial result: {e}")))?;
    claim.write_files(&[("partial.json", text + "\n")])?;
    Ok(request.out.join("partial.json"))
}
