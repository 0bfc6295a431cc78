//! Verification of a dossier against the data a reviewer received: the dossier's files against
//! its manifest, the data against both fingerprints, the method version, and a re-run of the
//! analysis whose digests are compared with the recorded ones. Every check says what it found; the
//! verdict is `VERIFIED` only when every check passed (notes allowed).

use crate::analysis::{attach_stability, prepare, Progress};
use crate::data::compare::describe_difference;
use crate::data::fingerprint::{content_index, sha256_file, sha256_text};
use crate::data::{read_csv, LoadOptions};
use crate::error::{Error, Result};
use crate::finding::{Finding, METHOD_VERSION};
use crate::manifest::{differences, Difference, Manifest, DIGEST_EXCLUSIONS, MANIFEST_FILE};
use crate::resample::ReplicateRecord;
use crate::study::{Study, StudyInput};
use serde::Serialize;
use std::path::{Path, PathBuf};

/// Version of the verification report layout (`verify --json`).
pub const REPORT_SCHEMA: &str = "forebear.verification/1";

/// Differences listed per check before the rest is summarised (all of them with another version).
const SHOWN_DIFFERENCES: usize = 5;
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

/// What to verify and how.
#[derive(Clone, Debug)]
pub struct Request {
    /// The dossier folder.
    pub dir: PathBuf,
    /// The data file the reviewer received.
    pub data: PathBuf,
    /// Re-run only this many replicates (a spot check) besides the full-data search.
    pub replicates_sample: Option<u32>,
    /// Seed of the spot check's choice of replicates (default: derived from the manifest's seal).
    pub sample_seed: Option<u64>,
    /// Re-run even when the dossier was made by another method version, and list every difference.
    pub allow_other_version: bool,
    /// The verify command line, for nothing but the record.
    pub command_line: Vec<String>,
}

/// The result of one check.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Status {
    /// Matches.
    Pass,
    /// Matches, with something the reviewer should know.
    Note,
    /// Does not match.
    Fail,
    /// Not run because an earlier check failed.
    Skipped,
}

/// One check and what it found.
#[derive(Clone, Debug, Serialize)]
pub struct Check {
    /// What was checked.
    pub name: String,
    /// The finding.
    pub status: Status,
    /// Sentences for the reviewer.
    pub details: Vec<String>,
}

/// Which replicates a spot check re-ran.
#[derive(Clone, Debug, Serialize)]
pub struct SpotCheck {
    /// The replicates re-run, ascending.
    pub replicates: Vec<u32>,
    /// The number of replicates in the plan.
    pub of: u32,
    /// The seed that chose them.
    pub sample_seed: u64,
}

/// The verification report.
#[derive(Clone, Debug, Serialize)]
pub struct Report {
    /// Layout version.
    pub schema: String,
    /// The dossier folder as given.
    pub dossier: String,
    /// The data file as given.
    pub data: String,
    /// The build that verified.
    pub verified_by: String,
    /// The build that produced the dossier.
    pub produced_by: String,
    /// Every check in order.
    pub checks: Vec<Check>,
    /// Set when only some replicates were re-run.
    pub spot_check: Option<SpotCheck>,
    /// `VERIFIED` or `MISMATCH`.
    pub verdict: String,
}

impl Report {
    /// Whether every check passed.
    pub fn verified(&self) -> bool {
        self.verdict == "VERIFIED"
    }
}

fn check(name: &str, status: Status, details: Vec<String>) -> Check {
    Check {
        name: name.into(),
        status,
        details,
    }
}

/// Runs every check. Errors are bad usage or unreadable input (exit code 2); a mismatch is a
/// report whose verdict is `MISMATCH`.
pub fn verify(request: &Request, progress: &dyn Progress) -> Result<Report> {
    let manifest = read_manifest(&request.dir)?;
    let data_bytes = sha256_file(&request.data)?;
    let mut checks = Vec::new();
    checks.push(check_seal(&manifest));
    let (files, recorded) = check_files(&request.dir, &manifest);
    checks.push(files);
    checks.push(check_settings(&manifest, recorded.as_ref()));
    let data = check_data(request, &manifest, &data_bytes.0)?;
    let data_ok = data.status != Status::Fail;
    checks.push(data);
    let tool = check_tool(&manifest, request.allow_other_version);
    let tool_ok = tool.status != Status::Fail;
    checks.push(tool);
    let mut spot_check = None;
    if data_ok && (tool_ok || request.allow_other_version) {
        let (rerun, spot) = rerun(request, &manifest, recorded.as_ref(), progress);
        spot_check = spot;
        checks.push(rerun);
    } else {
        let why = if data_ok {
            "the dossier was made by another method version"
        } else {
            "the data differ from the analysed data"
        };
        checks.push(check(
            "re-run",
            Status::Skipped,
            vec![format!("not run: {why}")],
        ));
    }
    let verified = checks
        .iter()
        .all(|c| matches!(c.status, Status::Pass | Status::Note));
    Ok(Report {
        schema: REPORT_SCHEMA.into(),
        dossier: request.dir.display().to_string(),
        data: request.data.display().to_string(),
        verified_by: crate::finding::ToolInfo::current().describe(),
        produced_by: manifest.tool.describe(),
        checks,
        spot_check,
        verdict: if verified { "VERIFIED" } else { "MISMATCH" }.into(),
    })
}

fn read_manifest(dir: &Path) -> Result<Manifest> {
    if !dir.is_dir() {
        return Err(Error::input(format!(
            "the dossier folder '{}' does not exist or is not a folder",
            dir.display()
        )));
    }
    let path = dir.join(MANIFEST_FILE);
    let text = std::fs::read_to_string(&path).map_err(|e| {
        Error::input(format!(
            "'{}' cannot be read ({e}); verify needs the dossier folder that `forebear analyze` \
             wrote, with its {MANIFEST_FILE}",
            path.display()
        ))
    })?;
    let manifest: Manifest = serde_json::from_str(&text).map_err(|e| {
        Error::Mismatch(format!(
            "{}, line {}, column {}: not a forebear manifest ({e}); it was damaged or edited, so \
             the dossier cannot be verified",
            path.display(),
            e.line(),
            e.column()
        ))
    })?;
    Ok(manifest)
}

fn check_seal(manifest: &Manifest) -> Check {
    let computed = manifest.computed_seal();
    if computed == manifest.seal {
        check(
            "manifest",
            Status::Pass,
            vec![format!(
                "manifest.json is intact (seal {})",
                short(&manifest.seal)
            )],
        )
    } else {
        check(
            "manifest",
            Status::Fail,
            vec![format!(
                "manifest.json was edited after generation: its seal is {} but its content hashes \
                 to {}",
                short(&manifest.seal),
                short(&computed)
            )],
        )
    }
}

/// Checks every file the manifest lists; returns the recorded finding when `result.json` reads.
fn check_files(dir: &Path, manifest: &Manifest) -> (Check, Option<Finding>) {
    let mut problems = Vec::new();
    for (name, recorded) in &manifest.files {
        match std::fs::read(dir.join(name)) {
            Err(e) => problems.push(format!("{name} is missing or unreadable ({e})")),
            Ok(bytes) => {
                let actual = sha256_bytes(&bytes);
                if &actual != recorded {
                    problems.push(format!(
                        "{name} was edited after generation (SHA-256 recorded {}, now {})",
                        short(recorded),
                        short(&actual)
                    ));
                }
            }
        }
    }
    let recorded = std::fs::read_to_string(dir.join("result.json"))
        .ok()
        .and_then(|text| serde_json::from_str::<Finding>(&text).ok());
    if recorded.is_none() && manifest.files.contains_key("result.json") {
        problems.push("result.json does not read as a forebear result".into());
    }
    let names: Vec<&str> = manifest.files.keys().map(String::as_str).collect();
    let status = if problems.is_empty() {
        Status::Pass
    } else {
        Status::Fail
    };
    let details = if problems.is_empty() {
        vec![format!(
            "{} files match the manifest: {}",
            names.len(),
            names.join(", ")
        )]
    } else {
        problems
    };
    (check("dossier files", status, details), recorded)
}

fn sha256_bytes(bytes: &[u8]) -> String {
    use sha2::Digest;
    crate::data::fingerprint::hex(&sha2::Sha256::digest(bytes))
}

fn check_settings(manifest: &Manifest, recorded: Option<&Finding>) -> Check {
    let mut problems = Vec::new();
    let computed = sha256_text(&crate::manifest::canonical_json(
        &manifest.settings.canonical,
    ));
    if computed != manifest.settings.sha256 {
        problems.push(format!(
            "the settings in manifest.json were changed: they hash to {}, but {} is recorded",
            short(&computed),
            short(&manifest.settings.sha256)
        ));
    }
    if let Some(finding) = recorded {
        let from_result = crate::manifest::settings_value(finding);
        for d in differences(
            &from_result,
            &manifest.settings.canonical,
            &[],
            &[],
            SHOWN_DIFFERENCES,
        ) {
            problems.push(format!(
                "settings differ between result.json and manifest.json at {}: {} in result.json, {} \
                 in manifest.json",
                d.pointer, d.recorded, d.recomputed
            ));
        }
        if finding.digest != manifest.results.digest {
            problems.push(format!(
                "result.json's digest {} is not the manifest's {}",
                short(&finding.digest),
                short(&manifest.results.digest)
            ));
        }
    }
    if problems.is_empty() {
        check(
            "settings",
            Status::Pass,
            vec![format!(
                "settings hash {} matches; seed {}",
                short(&manifest.settings.sha256),
                manifest
                    .settings
                    .canonical
                    .pointer("/study/seed")
                    .map_or_else(|| "?".into(), |s| s.to_string())
            )],
        )
    } else {
        check("settings", Status::Fail, problems)
    }
}

/// The reader options recorded in the manifest.
fn recorded_reader(manifest: &Manifest) -> std::result::Result<LoadOptions, String> {
    let reader = manifest
        .settings
        .canonical
        .get("reader")
        .cloned()
        .unwrap_or_default();
    serde_json::from_value(reader)
        .map_err(|e| format!("the recorded reader options do not read: {e}"))
}

fn recorded_study(manifest: &Manifest) -> std::result::Result<Study, String> {
    let study = manifest
        .settings
        .canonical
        .get("study")
        .cloned()
        .unwrap_or_default();
    serde_json::from_value(study)
        .map_err(|e| format!("the recorded study settings do not read: {e}"))
}

fn check_data(request: &Request, manifest: &Manifest, bytes_sha256: &str) -> Result<Check> {
    let recorded = &manifest.data;
    let shape = format!(
        "{} data rows × {} columns",
        recorded.content.rows,
        recorded.content.columns.len()
    );
    if bytes_sha256 == recorded.sha256 {
        return Ok(check(
            "data",
            Status::Pass,
            vec![format!(
                "bytes identical to the analysed file '{}' (SHA-256 {}; {shape})",
                recorded.file,
                short(bytes_sha256)
            )],
        ));
    }
    let options = match recorded_reader(manifest) {
        Ok(options) => options,
        Err(why) => return Ok(check("data", Status::Fail, vec![why])),
    };
    let bytes_differ = format!(
        "the bytes differ from the analysed file '{}' (SHA-256 recorded {}, received {})",
        recorded.file,
        short(&recorded.sha256),
        short(bytes_sha256)
    );
    let table = match read_csv(&request.data, &options) {
        Ok(table) => table,
        Err(e) => {
            return Ok(check(
                "data",
                Status::Fail,
                vec![
                    bytes_differ,
                    format!("the received file cannot be read the way the analysed file was: {e}"),
                ],
            ))
        }
    };
    let received = content_index(&table);
    if received.sha256 == recorded.content.sha256 {
        return Ok(check(
            "data",
            Status::Note,
            vec![
                bytes_differ,
                format!(
                    "same content, different bytes: the parsed column names and values are \
                     identical (content SHA-256 {}; {shape}), so the file was re-saved (line endings, \
                     quoting or number formatting) without changing the data",
                    short(&received.sha256)
                ),
            ],
        ));
    }
    let mut details = vec![
        bytes_differ,
        format!(
            "different data: the content SHA-256 is {}, the analysed file's {}",
            short(&received.sha256),
            short(&recorded.content.sha256)
        ),
    ];
    details.extend(describe_difference(&recorded.content, &received, &table));
    Ok(check("data", Status::Fail, details))
}

fn check_tool(manifest: &Manifest, allow_other_version: bool) -> Check {
    let this = crate::finding::ToolInfo::current();
    let theirs = &manifest.tool;
    if theirs.method == METHOD_VERSION {
        let same_build = theirs.version == this.version && theirs.build == this.build;
        let details = vec![if same_build {
            format!("same method version {METHOD_VERSION}, and the same build")
        } else {
            format!(
                "same method version {METHOD_VERSION}; another build (dossier: {}; this: {})",
                theirs.describe(),
                this.describe()
            )
        }];
        return check("tool", Status::Pass, details);
    }
    let mut details = vec![format!(
        "the dossier was produced by {} with method version '{}', but this is {} with method \
         version {METHOD_VERSION}",
        theirs.describe(),
        theirs.method,
        this.describe()
    )];
    if allow_other_version {
        details.push(
            "--allow-other-version: re-running anyway; every difference is listed below".into(),
        );
    } else {
        details.push(format!(
            "install forebear {} to verify this dossier, or pass --allow-other-version to see \
             every difference this version finds",
            theirs.version
        ));
    }
    check("tool", Status::Fail, details)
}

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

fn rerun(
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
            let full_ok = full_differences.is_empty()
                && recorded.is_some_and(|r| {
                    let mut r = r.clone();
                    r.stability = None;
                    crate::manifest::digest(&r) == finding.digest
                });
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

fn short(hash: &str) -> String {
    hash.chars().take(16).collect()
}

/// The report as text for a reviewer to paste: one block per check, the verdict on the last line.
pub fn render_text(report: &Report) -> String {
    let mut out = format!(
        "forebear verification of '{}' against '{}'\nproduced by {}\nverified by {}\n\n",
        report.dossier, report.data, report.produced_by, report.verified_by
    );
    for c in &report.checks {
        let label = match c.status {
            Status::Pass => "ok",
            Status::Note => "ok (note)",
            Status::Fail => "MISMATCH",
            Status::Skipped => "skipped",
        };
        out.push_str(&format!("{:<14} {label}\n", c.name));
        for d in &c.details {
            out.push_str(&format!("    {}\n", d.replace('\n', " ")));
        }
    }
    if let Some(s) = &report.spot_check {
        out.push_str(&format!(
            "\nSPOT CHECK ONLY: {} of {} replicates re-run (sample seed {}); a full verification re-runs all.\n",
            s.replicates.len(),
            s.of,
            s.sample_seed
        ));
    }
    out.push_str(&format!("\n{}\n", report.verdict));
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spot_check_samples_distinct_replicates_reproducibly() {
        let a = sample_replicates(100, 7, 42);
        assert_eq!(a, sample_replicates(100, 7, 42));
        assert_eq!(a.len(), 7);
        assert!(a.windows(2).all(|w| w[0] < w[1]) && a.iter().all(|&k| k < 100));
        assert_ne!(a, sample_replicates(100, 7, 43));
        assert_eq!(sample_replicates(5, 9, 1), vec![0, 1, 2, 3, 4]);
    }
}
