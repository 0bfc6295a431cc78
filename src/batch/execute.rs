//! One batch, start to end: the previous summary read, the output folder claimed and staged, the
//! pairs run (or the shard outputs collected), drift against the previous summary, the index
//! written and the folder put in place. [`super::outcome`] turns the finished summary into the
//! closing line and the command's result.

use super::drift::compare;
use super::index::Dated;
use super::output::{collect, read_summary, write_index};
use super::plan::{Plan, Shard};
use super::run::{run_pairs, summary};
use super::Summary;
use crate::analysis::Progress;
use crate::error::{Error, Result};
use crate::finding::ToolInfo;
use crate::output::{Claim, Kind, Staging};
use std::path::PathBuf;

/// What one batch is asked to do.
#[derive(Clone, Debug)]
pub struct BatchRequest {
    /// The plan, loaded and validated.
    pub plan: Plan,
    /// The plan file as the user named it (for messages).
    pub plan_file: PathBuf,
    /// The output folder.
    pub out: PathBuf,
    /// A former batch output to compare with (drift).
    pub previous: Option<PathBuf>,
    /// A stability frequency that moves by more than this is drift.
    pub drift_threshold: f64,
    /// Whether drift makes the batch fail (with [`Error::Mismatch`]).
    pub fail_on_drift: bool,
    /// The share of the pairs to run; `None` runs them all.
    pub shard: Option<Shard>,
    /// Shard outputs to combine instead of running pairs; empty to run them.
    pub collect: Vec<PathBuf>,
    /// Replace an existing output folder that holds a former batch output.
    pub force: bool,
    /// Who runs the batch (recorded in every dossier and the audit trail).
    pub operator: String,
}

/// Refuses a drift threshold outside [0, 1]. [`execute`] checks it first; a caller may check it
/// earlier, before the plan is only validated (`--check`), which does not run [`execute`].
pub fn check_drift_threshold(threshold: f64) -> Result<()> {
    if (0.0..=1.0).contains(&threshold) {
        Ok(())
    } else {
        Err(Error::input(format!(
            "--drift-threshold {threshold} is not a frequency difference: it must lie in [0, 1]"
        )))
    }
}

/// Runs the batch `request` describes into its output folder and returns the summary written
/// there. Failed pairs are inside the summary (see [`super::outcome::result`]); an error here
/// means no output was put in place.
pub fn execute(
    request: &BatchRequest,
    command_line: &[String],
    progress: &dyn Progress,
) -> Result<Summary> {
    check_drift_threshold(request.drift_threshold)?;
    let (plan, shard) = (&request.plan, request.shard);
    let previous = match &request.previous {
        Some(dir) => {
            let (summary, sha) = read_summary(dir, "--previous")?;
            if summary.shard.is_some() {
                return Err(Error::input(format!(
                    "--previous '{}' holds one shard only; compare with a whole or collected output",
                    dir.display()
                )));
            }
            Some((summary, sha))
        }
        None => None,
    };
    let claim = Claim::take(&request.out, Kind::Batch, request.force, progress)?;
    let staging = Staging::new(claim)?;
    let started = crate::timefmt::now_rfc3339();
    let dated = match request.collect.is_empty() {
        true => Dated::run(&started),
        false => Dated::collection(&started),
    };
    let (tool, studies) = if request.collect.is_empty() {
        let pairs = plan
            .pairs()
            .iter()
            .filter(|p| shard.is_none_or(|s| s.holds(p.index)))
            .count();
        progress.say(&format!(
            "batch {}: {pairs} study–target pairs{}, one after another with all cores each",
            request.plan_file.display(),
            shard.map_or(String::new(), |s| format!(
                " (shard {}/{})",
                s.index, s.count
            ))
        ));
        let studies = run_pairs(
            plan,
            shard,
            staging.path(),
            command_line,
            &request.operator,
            progress,
        );
        (ToolInfo::current(), studies)
    } else {
        progress.say(&format!(
            "collecting {} shard outputs",
            request.collect.len()
        ));
        collect(plan, &request.collect, staging.path())?
    };
    let draft = summary(plan, shard, tool.clone(), studies, None);
    let drift = previous
        .as_ref()
        .map(|(p, sha)| compare(p, sha, &draft, request.drift_threshold));
    let result = summary(plan, shard, tool, draft.studies, drift);
    write_index(staging.path(), &result, &dated)?;
    let kept = staging.finish()?;
    crate::dossier::say_kept(kept.as_deref(), progress);
    crate::trail::append(&trail_record(request, &result, kept), &request.operator)?;
    Ok(result)
}

/// The audit trail's record of a batch run: the plan, the pairs done and failed, the drift found,
/// the SHA-256 of `summary.json` (which lists every dossier's digest), a replaced output kept.
fn trail_record(
    request: &BatchRequest,
    result: &Summary,
    kept: Option<PathBuf>,
) -> crate::trail::Record {
    let totals = &result.totals;
    let mut facts = std::collections::BTreeMap::from([
        ("plan".to_string(), request.plan_file.display().to_string()),
        ("pairs".to_string(), totals.pairs.to_string()),
        ("done".to_string(), totals.done.to_string()),
        ("failed".to_string(), totals.failed.to_string()),
        (
            "summary_sha256".to_string(),
            crate::data::fingerprint::sha256_text(&result.to_text()),
        ),
    ]);
    if request.previous.is_some() {
        facts.insert("drift_changes".into(), totals.changes.to_string());
    }
    if let Some(shard) = request.shard {
        facts.insert("shard".into(), format!("{}/{}", shard.index, shard.count));
    }
    if let Some(kept) = kept {
        facts.insert(
            "replaced_output_kept_as".into(),
            crate::trail::kept_name(&kept),
        );
    }
    crate::trail::Record {
        action: "batch",
        output: request.out.clone(),
        facts,
    }
}
