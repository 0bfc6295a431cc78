//! The re-run: the analysis repeated with the recorded reader options, settings and seed, compared
//! with the complete recorded result and the manifest's digests, naming the first differing field
//! and replicate.

use super::checks::{recorded_reader, recorded_study, short};
use super::report::{check, Check, SpotCheck, Status};
use super::rerender::{recorded_fact_pointers, taken_from_record, with_recorded};
use super::Request;
use crate::analysis::{attach_stability, prepare_read, Prepared, Progress};
use crate::data::checks::FileFacts;
use crate::data::RawTable;
use crate::finding::Analysed;
use crate::finding::Finding;
use crate::manifest::{differences, Difference, Manifest};
use crate::resample::ReplicateRecord;
use crate::settings::Naming;

/// Differences listed per check before the rest is summarised (all of them with another version).
pub(super) const SHOWN_DIFFERENCES: usize = 5;
const ALL_DIFFERENCES: usize = 200;

/// The top-level fields of a finding in the layout's order, so that "first difference" follows
/// the dossier's reading order rather than the alphabet.
const FINDING_ORDER: [&str; 22] = [
    "schema",
    "tool",
    "data",
    "columns",
    "settings",
    "target",
    "markov_boundary",
    "trace",
    "stop",
    "shrink",
    "removed",
    "boundaries",
    "edges",
    "collider_tests",
    "components",
    "outcome",
    "parent_sets",
    "explanation",
    "diagnostics",
    "stability",
    "run",
    "digest",
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

/// What the re-run found, and what the dossier's files are rendered again from.
pub(super) struct Rerun {
    /// The `re-run` check.
    pub check: Check,
    /// Set when only some replicates were re-run.
    pub spot: Option<SpotCheck>,
    /// The re-run's complete finding with the recorded run facts, and the data's content index:
    /// what the files are rendered again from. `None` when the re-run stopped or `result.json`
    /// does not read (then the run facts the files print cannot be taken from it).
    pub analysed: Option<Analysed>,
    /// The fields taken from the record rather than recomputed, as `file#pointer`.
    pub taken_from_record: Vec<String>,
}

impl Rerun {
    fn failed(details: Vec<String>) -> Rerun {
        Rerun {
            check: check("re-run", Status::Fail, details),
            spot: None,
            analysed: None,
            taken_from_record: Vec::new(),
        }
    }
}

/// Re-runs the analysis and compares it with the record: the complete `result.json` (stability
/// included, the run facts of [`recorded_fact_pointers`] taken from it) and the manifest's
/// digests. `resaved` when the received data are a re-saved copy of the analysed file.
///
/// A spot check re-runs the full-data search and the sampled replicates, which must equal their
/// records; the stability figures are then aggregated again from all the recorded replicate
/// records (which must be complete, intact and bound to the manifest), so that a forged figure
/// is caught even though most replicates are not re-run.
pub(super) fn rerun(
    request: &Request,
    manifest: &Manifest,
    recorded: Option<&Finding>,
    resaved: bool,
    data: (RawTable, FileFacts),
    progress: &dyn Progress,
) -> Rerun {
    let prepared = match prepare_rerun(request, manifest, data, progress) {
        Ok(prepared) => prepared,
        Err(details) => return Rerun::failed(details),
    };
    let count = prepared.study.resampling.count;
    let sample_seed = request.sample_seed.unwrap_or_else(|| seal_seed(manifest));
    // Without resampling there is nothing to sample: the verification is complete.
    let spot = request
        .replicates_sample
        .filter(|_| count > 0)
        .map(|k| SpotCheck {
            replicates: sample_replicates(count, k, sample_seed),
            of: count,
            sample_seed,
        });
    let full = prepared.full_search(progress);
    let rerun_records: Vec<ReplicateRecord> = match &spot {
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
    let recorded_records = recorded
        .and_then(|r| r.stability.as_ref())
        .map(|s| s.records.as_slice())
        .unwrap_or(&[]);
    let mut problems = Vec::new();
    let aggregated: &[ReplicateRecord] = if spot.is_some() {
        problems.extend(recorded_record_problems(recorded_records, count, manifest));
        recorded_records
    } else {
        &rerun_records
    };
    let complete = attach_stability(finding, aggregated);
    let pointers = recorded_fact_pointers(resaved);
    let (complete, taken) = match recorded {
        None => (complete, Vec::new()),
        Some(r) => match with_recorded(&complete, r, &pointers) {
            // Only the facts the record holds are listed (an optional one, such as the study
            // file, may be absent).
            Ok((c, copied)) => (c, taken_from_record(&copied)),
            Err(e) => {
                return Rerun::failed(vec![format!(
                    "the recorded run facts cannot be copied into the re-run's result ({e})"
                )])
            }
        },
    };
    let limit = if request.allow_other_version {
        ALL_DIFFERENCES
    } else {
        SHOWN_DIFFERENCES
    };
    problems.extend(result_problems(
        &complete,
        recorded,
        manifest,
        spot.is_some(),
        limit,
    ));
    problems.extend(replicate_problems(
        &rerun_records,
        recorded_records,
        manifest,
        count,
    ));
    let ok = problems.is_empty();
    let mut details = summary(spot.as_ref(), count, ok, manifest);
    details.extend(problems);
    if !taken.is_empty() {
        details.push(format!(
            "taken from the record, not recomputed (run facts, which the digest leaves out too): {}",
            grouped_by_file(&taken)
        ));
    }
    let analysed = recorded.map(|_| Analysed {
        finding: complete,
        content: prepared.content.clone(),
    });
    Rerun {
        check: check(
            "re-run",
            if ok { Status::Pass } else { Status::Fail },
            details,
        ),
        spot,
        analysed,
        taken_from_record: taken,
    }
}

/// Reads the received data with the recorded reader options and settings; the sentences of a
/// failed check when that stops or validates other settings.
fn prepare_rerun(
    request: &Request,
    manifest: &Manifest,
    data: (RawTable, FileFacts),
    progress: &dyn Progress,
) -> Result<Prepared, Vec<String>> {
    let (options, study) = match (recorded_reader(manifest), recorded_study(manifest)) {
        (Ok(o), Ok(s)) => (o, s),
        (Err(why), _) | (_, Err(why)) => return Err(vec![why]),
    };
    let settings = study.replaying(&options).check().map_err(|problems| {
        problems
            .iter()
            .map(|p| {
                format!(
                    "the recorded settings break a rule: {}",
                    p.render(Naming::Keys)
                )
            })
            .collect::<Vec<_>>()
    })?;
    let prepared = prepare_read(&request.data, data, &settings, &study.target, progress)
        .map_err(|e| vec![format!("the re-run stopped: {e}")])?;
    if prepared.study != study {
        let found = differences(
            &serde_json::to_value(&study).unwrap_or_default(),
            &serde_json::to_value(&prepared.study).unwrap_or_default(),
            &[],
            &[],
            SHOWN_DIFFERENCES,
        );
        return Err(std::iter::once(
            "the settings validated on the received data differ from the recorded ones".to_string(),
        )
        .chain(found.iter().map(Difference::to_string))
        .collect());
    }
    Ok(prepared)
}

/// The complete re-run result against the manifest's digest and, field by field, `result.json`.
fn result_problems(
    complete: &Finding,
    recorded: Option<&Finding>,
    manifest: &Manifest,
    spot: bool,
    limit: usize,
) -> Vec<String> {
    let mut problems = Vec::new();
    let digest_reproduced = complete.digest == manifest.results.digest;
    if !digest_reproduced {
        let what = if spot {
            "the digest of the re-run full-data search with the recorded replicate records,"
        } else {
            "the re-run digest"
        };
        problems.push(format!(
            "{what} {} differs from the recorded {}",
            short(&complete.digest),
            short(&manifest.results.digest)
        ));
    }
    let Some(recorded) = recorded else {
        problems.push(
            "result.json is missing or does not read, so the re-run cannot be compared with it \
             field by field"
                .into(),
        );
        return problems;
    };
    let found = differences(
        &serde_json::to_value(recorded).unwrap_or_default(),
        &serde_json::to_value(complete).unwrap_or_default(),
        &FINDING_ORDER,
        &[],
        limit,
    );
    if let Some(first) = found.first() {
        if digest_reproduced {
            problems.push(format!(
                "the re-run reproduces the manifest's digest {}, but result.json no longer \
                 matches it",
                short(&manifest.results.digest)
            ));
        }
        problems.push(format!("first difference from result.json at {first}"));
        problems.extend(found[1..].iter().map(|d| format!("also {d}")));
    }
    problems
}

/// The re-run check's first sentence: what was reproduced, or that a spot check found differences.
fn summary(spot: Option<&SpotCheck>, count: u32, ok: bool, manifest: &Manifest) -> Vec<String> {
    let digest = short(&manifest.results.digest);
    match (spot, ok) {
        (None, true) if count == 0 => vec![format!(
            "the full-data search reproduces the recorded digest {digest}, and result.json field \
             for field (no resampling)"
        )],
        (None, true) => vec![format!(
            "the full-data search and all {count} replicates reproduce the recorded digest \
             {digest}, and result.json field for field, stability included"
        )],
        (Some(s), true) => vec![format!(
            "spot check: the full-data search and the {} sampled replicates ({}) reproduce their \
             records; the stability figures, aggregated again from all {count} recorded replicate \
             records, equal result.json's, and the recorded digest {digest} is reproduced; the \
             other {} replicates were not re-run",
            s.replicates.len(),
            list_numbers(&s.replicates),
            count as usize - s.replicates.len()
        )],
        (Some(s), false) => vec![format!(
            "spot check (replicates {} re-run): differences found",
            list_numbers(&s.replicates)
        )],
        (None, false) => Vec::new(),
    }
}

/// The re-run replicates against their records in `result.json` and their digests in the
/// manifest.
fn replicate_problems(
    rerun: &[ReplicateRecord],
    recorded: &[ReplicateRecord],
    manifest: &Manifest,
    count: u32,
) -> Vec<String> {
    let mut problems = Vec::new();
    let listed = manifest.results.replicates.len();
    if listed != count as usize {
        problems.push(format!(
            "manifest.json records {listed} replicate digests, but the plan has {count} replicates"
        ));
    }
    let differing: Vec<(u32, String)> = rerun
        .iter()
        .filter_map(|r| {
            let field = match recorded.iter().find(|x| x.replicate == r.replicate) {
                None => Some("result.json holds no record of it".to_string()),
                Some(x) => differences(
                    &serde_json::to_value(x).unwrap_or_default(),
                    &serde_json::to_value(r).unwrap_or_default(),
                    &[],
                    &["/digest"],
                    1,
                )
                .first()
                .map(|d| format!("first field {d}")),
            };
            let unbound = manifest.results.replicates.get(r.replicate as usize) != Some(&r.digest);
            field
                .or_else(|| {
                    unbound
                        .then(|| format!("its digest {} is not the manifest's", short(&r.digest)))
                })
                .map(|why| (r.replicate, why))
        })
        .collect();
    if let Some((k, why)) = differing.first() {
        problems.push(format!(
            "replicates: {} of {} re-run differ from their records; the first is replicate {k} \
             ({why})",
            differing.len(),
            rerun.len()
        ));
    }
    problems
}

/// A spot check aggregates the stability figures from `result.json`'s replicate records: there
/// must be one for each replicate of the plan, in order, each hashing to its own digest, which
/// the manifest records.
fn recorded_record_problems(
    records: &[ReplicateRecord],
    count: u32,
    manifest: &Manifest,
) -> Vec<String> {
    let mut problems = Vec::new();
    if !records.iter().map(|r| r.replicate).eq(0..count) {
        problems.push(format!(
            "result.json holds {} replicate records, not one for each replicate 0..{count} in order",
            records.len()
        ));
    }
    let edited: Vec<u32> = records
        .iter()
        .filter(|r| crate::digest::digest(r) != r.digest)
        .map(|r| r.replicate)
        .collect();
    if let Some(first) = edited.first() {
        problems.push(format!(
            "{} replicate record(s) in result.json do not hash to their own digest (edited after \
             generation); the first is replicate {first}",
            edited.len()
        ));
    }
    let unbound: Vec<u32> = records
        .iter()
        .filter(|r| manifest.results.replicates.get(r.replicate as usize) != Some(&r.digest))
        .map(|r| r.replicate)
        .collect();
    if let Some(first) = unbound.first() {
        problems.push(format!(
            "{} replicate record(s) in result.json carry a digest that manifest.json does not \
             record; the first is replicate {first}",
            unbound.len()
        ));
    }
    problems
}

/// `file#pointer` entries as `file pointer, pointer; file pointer`, files in first-seen order.
fn grouped_by_file(entries: &[String]) -> String {
    let mut groups: Vec<(&str, Vec<&str>)> = Vec::new();
    for entry in entries {
        let (file, pointer) = entry.split_once('#').unwrap_or((entry, ""));
        match groups.iter_mut().find(|(f, _)| *f == file) {
            Some((_, pointers)) => pointers.push(pointer),
            None => groups.push((file, vec![pointer])),
        }
    }
    groups
        .iter()
        .map(|(file, pointers)| format!("{file} {}", pointers.join(", ")))
        .collect::<Vec<_>>()
        .join("; ")
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
