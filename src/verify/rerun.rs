//! The re-run: the analysis repeated with the recorded reader options, settings and seed, its
//! digests compared with the recorded ones, and the first differing field and replicate named.

use super::checks::{recorded_reader, recorded_study, short};
use super::report::{check, Check, SpotCheck, Status};
use super::Request;
use crate::analysis::{attach_stability, prepare, Progress};
use crate::finding::Finding;
use crate::manifest::{differences, Difference, Manifest, DIGEST_EXCLUSIONS};
use crate::resample::ReplicateRecord;
use crate::study::StudyInput;

/// Differences listed per check before the rest is summarised (all of them with another version).
pub(super) const SHOWN_DIFFERENCES: usize = 5;
const ALL_DIFFERENCES: usize = 200;

/// The top-level fields of a finding in the layout's order, so that "first difference" follows
/// the dossier's reading order rather than the alphabet.
const FINDING_ORDER: [&str; 17] = [
    "schema",
    "tool",
    "data",
    "columns",
    "settings",
    "target",
    "markov_boundary",
    "trace",
    "stop",
    "boundaries",
    "edges",
    "components",
    "outcome",
    "parent_sets",
    "explanation",
    "diagnostics",
    "stability",
];

/// The replicates a spot check re-runs: `k` distinct indices of `0..count`, drawn by a keyed
/// partial Fisher–Yates shuffle (Knuth, TAOCP vol. 2, Algorithm 3.4.2 P), ascending.
pub fn sample_replicates(count: u32, k: u32, seed: u64) -> Vec<u32> {
    let mut pool: Vec<u32> = (0..count).collect();
    let key = crate::rng::Key::new("verify-spot-check", seed).finish();
    let mut rng = key.stream(0);
    let take = k.min(count) as usize;
    for i in 0..take {
        let j = i + crate::rng::uniform_below(&mut rng, (pool.len() - i) as u64) as usize;
        pool.swap(i, j);
    }
    let mut chosen = pool[..take].to_vec();
    chosen.sort_unstable();
    chosen
}

pub(super) fn rerun(
    request: &Request,
    manifest: &Manifest,
    recorded: Option<&Finding>,
    progress: &dyn Progress,
) -> (Check, Option<SpotCheck>) {
    let fail = |details: Vec<String>| (check("re-run", Status::Fail, details), None);
    let (options, study) = match (recorded_reader(manifest), recorded_study(manifest)) {
        (Ok(o), Ok(s)) => (o, s),
        (Err(why), _) | (_, Err(why)) => return fail(vec![why]),
    };
    let prepared = match prepare(
        &request.data,
        &StudyInput::replaying(&study),
        &options,
        progress,
    ) {
        Ok(p) => p,
        Err(e) => return fail(vec![format!("the re-run stopped: {e}")]),
    };
    if prepared.study != study {
        let found = differences(
            &serde_json::to_value(&study).unwrap_or_default(),
            &serde_json::to_value(&prepared.study).unwrap_or_default(),
            &[],
            &[],
            SHOWN_DIFFERENCES,
        );
        return fail(
            std::iter::once(
                "the settings validated on the received data differ from the recorded ones"
                    .to_string(),
            )
            .chain(found.iter().map(Difference::to_string))
            .collect(),
        );
    }
    let limit = if request.allow_other_version {
        ALL_DIFFERENCES
    } else {
        SHOWN_DIFFERENCES
    };
    let count = study.resampling.count;
    let sample_seed = request.sample_seed.unwrap_or_else(|| seal_seed(manifest));
    let spot = request.replicates_sample.map(|k| SpotCheck {
        replicates: sample_replicates(count, k, sample_seed),
        of: count,
        sample_seed,
    });
    let full = prepared.full_search(progress);
    let records: Vec<ReplicateRecord> = match &spot {
        None => prepared.replicates(0..count, &full, progress),
        Some(s) => {
            progress.say(&format!(
                "spot check: re-running {} of {count} replicates",
                s.replicates.len()
            ));
            prepared.replicates_at(&s.replicates, &full, progress)
        }
    };
    let finding = prepared.finding(full, request.command_line.clone());
    let mut details = Vec::new();
    let mut ok = true;
    // The full-data search: everything but stability.
    let full_differences = match recorded {
        Some(r) => {
            let mut ignore: Vec<&str> = DIGEST_EXCLUSIONS.to_vec();
            ignore.push("/stability");
            differences(
                &serde_json::to_value(r).unwrap_or_default(),
                &serde_json::to_value(&finding).unwrap_or_default(),
                &FINDING_ORDER,
                &ignore,
                limit,
            )
        }
        None => Vec::new(),
    };
    // Replicates, against the manifest's digests (and result.json's records for the field).
    let recorded_records = recorded
        .and_then(|r| r.stability.as_ref())
        .map(|s| s.records.as_slice())
        .unwrap_or(&[]);
    let mut differing_replicates = Vec::new();
    for record in &records {
        let k = record.replicate as usize;
        if manifest.results.replicates.get(k) != Some(&record.digest) {
            differing_replicates.push(record);
        }
    }
    match &spot {
        None => {
            let complete = attach_stability(finding, &records);
            if complete.digest != manifest.results.digest {
                ok = false;
                details.push(format!(
                    "the re-run digest {} differs from the recorded {}",
                    short(&complete.digest),
                    short(&manifest.results.digest)
                ));
            } else if full_differences.is_empty() {
                details.push(format!(
                    "the full-data search and all {count} replicates reproduce the recorded digest {}",
                    short(&manifest.results.digest)
                ));
            } else {
                details.push(format!(
                    "the re-run reproduces the manifest's digest {}, but result.json no longer \
                     matches it",
                    short(&manifest.results.digest)
                ));
            }
        }
        Some(s) => {
            // The full-data part is compared field by field with result.json (whose bytes the
            // files check binds to the manifest); without a readable result.json it cannot pass.
            let full_ok = recorded.is_some() && full_differences.is_empty();
            if full_ok && differing_replicates.is_empty() {
                details.push(format!(
                    "spot check: the full-data search and the {} sampled replicates ({}) reproduce \
                     their recorded digests; the other {} replicates were not re-run",
                    s.replicates.len(),
                    list_numbers(&s.replicates),
                    s.of as usize - s.replicates.len()
                ));
            } else {
                details.push(format!(
                    "spot check of replicates {}: differences found",
                    list_numbers(&s.replicates)
                ));
            }
        }
    }
    if !full_differences.is_empty() {
        ok = false;
        details.push(format!(
            "full-data search: first difference from result.json at {}",
            full_differences[0]
        ));
        details.extend(full_differences[1..].iter().map(|d| format!("also {d}")));
    }
    if let Some(first) = differing_replicates.first() {
        ok = false;
        let field = recorded_records
            .iter()
            .find(|r| r.replicate == first.replicate)
            .and_then(|r| {
                differences(
                    &serde_json::to_value(r).unwrap_or_default(),
                    &serde_json::to_value(first).unwrap_or_default(),
                    &[],
                    &["/digest"],
                    1,
                )
                .into_iter()
                .next()
            })
            .map_or_else(
                || "result.json holds no record to compare fields with".to_string(),
                |d| format!("first field {d}"),
            );
        details.push(format!(
            "replicates: {} of {} re-run differ from their recorded digests; the first is replicate {} ({field})",
            differing_replicates.len(),
            records.len(),
            first.replicate
        ));
    }
    let status = if ok { Status::Pass } else { Status::Fail };
    (check("re-run", status, details), spot)
}

/// The default spot-check seed: the first 16 hex digits of the manifest's seal.
fn seal_seed(manifest: &Manifest) -> u64 {
    u64::from_str_radix(manifest.seal.get(..16).unwrap_or("0"), 16).unwrap_or(0)
}

fn list_numbers(values: &[u32]) -> String {
    values
        .iter()
        .map(u32::to_string)
        .collect::<Vec<_>>()
        .join(", ")
}
