//! Running the pairs of a plan: each (study, target) is analysed and its dossier written into
//! `DIR/<study>/<target>/`; a failing pair is recorded with its error and the others go on.
//!
//! Pairs run one after another, each with all cores (the replicates and the neighbour searches
//! inside one analysis are parallel already); see DEVELOPERS.md for the measurement behind this.
//! The targets of one study are analysed together first (one reading of the data, boundaries
//! shared: `targets`), which gives each the finding of its own run; their dossiers are then
//! written pair by pair as before.

use super::drift::{sets, Drift};
use super::plan::{unusable_data, Pair, Plan, PlannedStudy, Shard};
use super::{
    Entry, EntryData, EntryStability, Failure, PlanRef, Status, StudySummary, Summary, Totals,
    BATCH_SCHEMA,
};
use crate::analysis::{analyze_file, Progress, Silent};
use crate::finding::{Analysed, Finding, ToolInfo};
use crate::output::{Claim, Kind};
use crate::targets::{analyze_targets, any_names, TargetChoice};
use std::collections::BTreeMap;
use std::path::Path;
use std::time::Instant;

/// Runs the pairs of `plan` that `shard` holds (all without a shard) into the folder `dir`.
/// Returns the studies with their entries; every failure is inside, never an early return.
pub fn run_pairs(
    plan: &Plan,
    shard: Option<Shard>,
    dir: &Path,
    command_line: &[String],
    operator: &str,
    progress: &dyn Progress,
) -> BTreeMap<String, StudySummary> {
    let pairs: Vec<Pair> = plan
        .pairs()
        .into_iter()
        .filter(|p| shard.is_none_or(|s| s.holds(p.index)))
        .collect();
    let mut studies: BTreeMap<String, StudySummary> = BTreeMap::new();
    let mut ready: BTreeMap<usize, Analysed> = BTreeMap::new();
    for (n, pair) in pairs.iter().enumerate() {
        if n == 0 || pairs[n - 1].study.name != pair.study.name {
            ready = analyse_together(&pairs, pair.study, command_line, progress);
        }
        let started = Instant::now();
        let (entry, full_error) =
            run_pair(pair, dir, command_line, operator, ready.remove(&pair.index));
        let said = match &full_error {
            // The log gets the whole message; the index only its place (see `public_error`).
            Some(message) => format!("FAILED: {message}"),
            None => describe(&entry),
        };
        progress.say(&format!(
            "[{}/{}] {}/{}: {said} ({:.1} s)",
            n + 1,
            pairs.len(),
            pair.study.name,
            pair.target,
            started.elapsed().as_secs_f64()
        ));
        studies
            .entry(pair.study.name.clone())
            .or_insert_with(|| StudySummary {
                data: pair.study.data.clone(),
                targets: BTreeMap::new(),
            })
            .targets
            .insert(pair.target.to_string(), entry);
    }
    studies
}

/// The targets of one study (those of this shard) analysed in one run that reads the data once and
/// shares boundaries between them (`targets`), each finding equal to its own run's; by pair index.
/// Nothing when the study has one target here, or when the shared run fails: then each pair runs
/// alone and reports its own error, as before.
fn analyse_together(
    pairs: &[Pair],
    study: &PlannedStudy,
    command_line: &[String],
    progress: &dyn Progress,
) -> BTreeMap<usize, Analysed> {
    let own: Vec<&Pair> = pairs
        .iter()
        .filter(|p| p.study.name == study.name)
        .collect();
    if own.len() < 2 {
        return BTreeMap::new();
    }
    let started = Instant::now();
    let targets = own.iter().map(|p| p.target.to_string()).collect();
    let work = || {
        analyze_targets(
            &study.data_path,
            &study.settings,
            &TargetChoice::Named(targets),
            &any_names,
            command_line.to_vec(),
            &Silent,
        )
    };
    match std::panic::catch_unwind(std::panic::AssertUnwindSafe(work)) {
        Ok(Ok(analysed)) => {
            progress.say(&format!(
                "{}: {} targets analysed together, boundaries shared ({:.1} s)",
                study.name,
                own.len(),
                started.elapsed().as_secs_f64()
            ));
            own.iter().map(|p| p.index).zip(analysed).collect()
        }
        _ => BTreeMap::new(),
    }
}

/// One line about an entry, for progress.
fn describe(entry: &Entry) -> String {
    match entry.status {
        Status::Failed => format!(
            "FAILED: {}",
            entry.error.as_deref().unwrap_or("unknown error")
        ),
        Status::Done => {
            let stability = entry
                .stability
                .as_ref()
                .map(|s| {
                    let verdict = match (s.headline_contradicted, s.headline_stable) {
                        (true, _) => "contradicted by resamples",
                        (false, true) => "stable",
                        (false, false) => "not stable",
                    };
                    format!(", stability {:.2} ({verdict})", s.headline)
                })
                .unwrap_or_default();
            format!(
                "{} {}{stability}",
                entry.outcome.as_deref().unwrap_or(""),
                sets(&entry.parent_sets)
            )
        }
    }
}

/// Analyses one pair into `dir/<study>/<target>/`. A panic inside is a bug; it fails this pair
/// only (the panic hook has printed it) and is recorded as an internal error. A failed analysis
/// also returns its whole message, for stderr only.
fn run_pair(
    pair: &Pair,
    dir: &Path,
    command_line: &[String],
    operator: &str,
    ready: Option<Analysed>,
) -> (Entry, Option<String>) {
    let relative = format!("{}/{}", pair.study.name, pair.target);
    let folder = dir.join(&pair.study.name).join(pair.target);
    let work = || -> std::result::Result<Finding, (crate::error::Error, bool)> {
        let mut analysed = match ready {
            Some(analysed) => analysed,
            None => analyze_file(
                &pair.study.data_path,
                &pair.study.settings,
                pair.target,
                command_line.to_vec(),
                &Silent,
            )
            .map_err(|e| (plan_named(e), true))?,
        };
        analysed.finding.run.operator = operator.to_string();
        let claim = Claim::take(&folder, Kind::Dossier, false, &Silent).map_err(|e| (e, false))?;
        crate::report::write_dossier(&analysed, claim).map_err(|e| (e, false))?;
        Ok(analysed.finding)
    };
    match std::panic::catch_unwind(std::panic::AssertUnwindSafe(work)) {
        Ok(Ok(finding)) => (entry_of(&finding, pair.index, relative), None),
        // A file that cannot be opened (missing, a folder, a link loop, no permission): the
        // message describes the path, not the file's content, and the index may say it.
        Ok(Err((e @ crate::error::Error::Input(_), true)))
            if unusable_data(&pair.study.data_path).is_some() =>
        {
            (failed(pair.index, e.to_string(), Failure::Input), None)
        }
        Ok(Err((e @ crate::error::Error::Input(_), true))) => {
            let message = e.to_string();
            let shown = pair.study.data_path.display().to_string();
            let public = public_error(&message, &shown, &pair.study.data);
            (failed(pair.index, public, Failure::Input), Some(message))
        }
        Ok(Err((e, _))) => (failed_with(pair.index, &e), None),
        Err(_) => (
            failed_with(
                pair.index,
                &crate::error::Error::internal(
                    "the analysis stopped on a bug (see the message above)",
                ),
            ),
            None,
        ),
    }
}

/// A settings error as the plan names settings (keys, not flags).
fn plan_named(error: crate::error::Error) -> crate::error::Error {
    match error {
        crate::error::Error::Settings(problems) => crate::error::Error::input(
            problems
                .iter()
                .map(|p| p.render(crate::settings::Naming::Keys))
                .collect::<Vec<_>>()
                .join("; "),
        ),
        other => other,
    }
}

/// What the index and the summary say of data the reader refused: the file as the plan names it
/// and the place (line, column), never the message itself. The reader's messages quote the file
/// (a header, a value), and a file that is no data at all (a system file named by mistake, a
/// binary) would have its first line copied into the index, which is read more widely than the
/// data; the whole message is on stderr.
fn public_error(message: &str, shown: &str, data: &str) -> String {
    let rest = message.strip_prefix(shown).unwrap_or("");
    let number_after = |label: &str| -> Option<u64> {
        let text = rest.strip_prefix(label)?;
        let digits: String = text.chars().take_while(char::is_ascii_digit).collect();
        digits.parse().ok()
    };
    let line = number_after(", line ");
    let column = line.and_then(|l| number_after(&format!(", line {l}, column ")));
    let place = match (line, column) {
        (Some(l), Some(c)) => format!(" at line {l}, column {c}"),
        (Some(l), None) => format!(" at line {l}"),
        _ => String::new(),
    };
    format!(
        "the data file {} could not be analysed{place} (bad input); the reason is in the \
         batch's messages on stderr, since it may quote the file, which the index does not",
        crate::text::quoted(data)
    )
}

/// The entry of a pair that failed with `error`; its kind is taken from the error's variant.
pub fn failed_with(pair: usize, error: &crate::error::Error) -> Entry {
    let failure = match error {
        crate::error::Error::Internal(_) => Failure::Internal,
        _ => Failure::Input,
    };
    failed(pair, error.to_string(), failure)
}

/// The entry of a failed pair: what the index says, and the kind of failure.
pub fn failed(pair: usize, error: String, failure: Failure) -> Entry {
    Entry {
        status: Status::Failed,
        error: Some(one_line(&error)),
        failure: Some(failure),
        pair,
        outcome: None,
        parent_sets: Vec::new(),
        markov_boundary: Vec::new(),
        stability: None,
        data: None,
        digest: None,
        dossier: None,
        with_knowledge: None,
    }
}

/// `text` on one line: control characters (line breaks included) become spaces.
fn one_line(text: &str) -> String {
    text.split(char::is_control)
        .map(str::trim)
        .filter(|p| !p.is_empty())
        .collect::<Vec<_>>()
        .join(" ")
}

/// The entry of a finished analysis.
pub fn entry_of(finding: &Finding, pair: usize, dossier: String) -> Entry {
    Entry {
        status: Status::Done,
        failure: None,
        error: None,
        pair,
        outcome: Some(finding.outcome.name().to_string()),
        parent_sets: finding.parent_sets.clone(),
        markov_boundary: finding.markov_boundary.clone(),
        stability: finding.stability.as_ref().map(|s| EntryStability {
            replicates: s.replicates,
            threshold: s.threshold,
            headline: s.full_data_outcome_frequency,
            headline_stable: s.full_data_outcome_stable,
            headline_contradicted: s.headline.contradicted,
            most_frequent_other: s.headline.most_frequent_other.clone(),
            markov_boundary: s.markov_boundary.clone(),
            parents: s.parents.clone(),
        }),
        data: Some(EntryData {
            sha256: finding.data.sha256.clone(),
            content_sha256: finding.data.content_sha256.clone(),
            rows_read: finding.data.rows_read,
            rows_used: finding.data.rows_used,
        }),
        digest: Some(finding.digest.clone()),
        dossier: Some(dossier),
        with_knowledge: finding
            .with_knowledge
            .as_ref()
            .map(|k| super::EntryKnowledge {
                outcome: k.outcome.name().to_string(),
                parent_sets: k.parent_sets.clone(),
                resting_on_knowledge: k
                    .claims
                    .iter()
                    .filter(|(_, b)| **b != crate::search::knowledge::Basis::Data)
                    .map(|(c, _)| c.clone())
                    .collect(),
                stable: finding
                    .stability
                    .as_ref()
                    .and_then(|s| s.with_knowledge.as_ref())
                    .map(|s| s.headline.stable),
            }),
    }
}

/// Assembles the summary of a run or of collected shards.
pub fn summary(
    plan: &Plan,
    shard: Option<Shard>,
    tool: ToolInfo,
    studies: BTreeMap<String, StudySummary>,
    drift: Option<Drift>,
) -> Summary {
    let mut totals = Totals::default();
    for entry in studies.values().flat_map(|s| s.targets.values()) {
        totals.pairs += 1;
        match entry.status {
            Status::Done => totals.done += 1,
            Status::Failed => totals.failed += 1,
        }
    }
    totals.changes = drift.as_ref().map_or(0, |d| d.changes.len());
    totals.unstable_outcomes = drift.as_ref().map_or(0, |d| d.unstable_outcomes.len());
    Summary {
        schema: BATCH_SCHEMA.into(),
        tool,
        plan: PlanRef {
            file: plan.file_name.clone(),
            sha256: plan.sha256.clone(),
        },
        shard,
        studies,
        drift,
        totals,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::error::Error;

    #[test]
    fn failure_kind_comes_from_the_error_not_its_text() {
        // A user's message that happens to read "internal error" is still an input failure.
        let input = failed_with(3, &Error::input("internal error: a column named so"));
        assert_eq!(input.failure, Some(Failure::Input));
        let bug = failed_with(4, &Error::internal("an unexpected state"));
        assert_eq!(bug.failure, Some(Failure::Internal));
        assert_eq!(bug.status, Status::Failed);
        // Older summaries have no kind; they read as None, which batch treats as an input failure.
        let mut json = serde_json::to_value(&input).unwrap();
        json.as_object_mut().unwrap().remove("failure");
        let old: Entry = serde_json::from_value(json).unwrap();
        assert_eq!(old.failure, None);
    }
}
