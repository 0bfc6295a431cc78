//! The batch output folder: reading a former output's summary, writing the index and summary, and
//! collecting shard outputs into one folder. Who may replace the folder is decided in
//! [`crate::output`] (a former batch output is recognised by its summary).

use super::plan::{Plan, Shard};
use super::{Status, StudySummary, Summary, BATCH_SCHEMA, SUMMARY_FILE};
use crate::data::fingerprint::sha256_text;
use crate::error::{Error, Result};
use crate::finding::ToolInfo;
use crate::output::{fs_error, write_synced};
use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

/// Reads `dir/summary.json` of a former batch output, with the SHA-256 of its text. `flag` names
/// the option the folder came from, for the message.
pub fn read_summary(dir: &Path, flag: &str) -> Result<(Summary, String)> {
    let file = dir.join(SUMMARY_FILE);
    let text = std::fs::read_to_string(&file).map_err(|e| {
        Error::input(format!(
            "{flag} '{}': cannot read {SUMMARY_FILE} ({e}); give the folder of a former \
             `forebear batch` output",
            dir.display()
        ))
    })?;
    let value: serde_json::Value = serde_json::from_str(&text).map_err(|e| {
        Error::input(format!(
            "{}, line {}, column {}: not JSON ({e})",
            file.display(),
            e.line(),
            e.column()
        ))
    })?;
    let schema = value.get("schema").and_then(|s| s.as_str()).unwrap_or("");
    if schema != BATCH_SCHEMA {
        return Err(Error::input(format!(
            "{}: not a forebear batch summary (schema '{schema}', expected '{BATCH_SCHEMA}')",
            file.display()
        )));
    }
    let summary: Summary = serde_json::from_value(value).map_err(|e| {
        Error::input(format!(
            "{}: a batch summary this build cannot read ({e})",
            file.display()
        ))
    })?;
    Ok((summary, sha256_text(&text)))
}

/// Writes `index.md`, `index.html` (dated) and, last, `summary.json` (undated) into `dir`.
pub fn write_index(dir: &Path, summary: &Summary, dated: &super::index::Dated) -> Result<()> {
    let files = [
        ("index.md", super::index::render_markdown(summary, dated)?),
        ("index.html", super::index::render_html(summary, dated)?),
        (SUMMARY_FILE, summary.to_text()),
    ];
    for (name, text) in files {
        let path = dir.join(name);
        write_synced(&path, text.as_bytes()).map_err(|e| fs_error("write", &path, &e))?;
    }
    Ok(())
}

/// Reads the shard outputs `dirs` of `plan`, checks that they are the shards 0..N of this plan
/// exactly once, each holding exactly its pairs, and copies their dossiers into `into`. Returns
/// the build that made them and every study with its entries.
pub fn collect(
    plan: &Plan,
    dirs: &[PathBuf],
    into: &Path,
) -> Result<(ToolInfo, BTreeMap<String, StudySummary>)> {
    let mut shards: BTreeMap<u32, (PathBuf, Summary)> = BTreeMap::new();
    let mut count = None;
    let mut tool: Option<ToolInfo> = None;
    for dir in dirs {
        let (summary, _) = read_summary(dir, "--collect")?;
        let name = dir.display();
        if summary.plan.sha256 != plan.sha256 {
            return Err(Error::input(format!(
                "--collect '{name}' was made from another plan (sha256 {}) than {} (sha256 {}); \
                 collect the shards of one plan",
                short(&summary.plan.sha256),
                plan.path.display(),
                short(&plan.sha256)
            )));
        }
        let Some(shard) = summary.shard else {
            return Err(Error::input(format!(
                "--collect '{name}' is a whole batch output, not a shard (made without --shard)"
            )));
        };
        if *count.get_or_insert(shard.count) != shard.count {
            return Err(Error::input(format!(
                "--collect '{name}' is shard {}/{}, but other shards were split {} ways",
                shard.index,
                shard.count,
                count.unwrap_or(0)
            )));
        }
        match &tool {
            None => tool = Some(summary.tool.clone()),
            Some(t) if *t != summary.tool => {
                return Err(Error::input(format!(
                    "--collect '{name}' was made by {}, other shards by {}; run every shard with \
                     one build",
                    summary.tool.describe(),
                    t.describe()
                )))
            }
            Some(_) => {}
        }
        if let Some((other, _)) = shards.get(&shard.index) {
            return Err(Error::input(format!(
                "--collect '{name}' and '{}' are both shard {}/{}; give each shard once",
                other.display(),
                shard.index,
                shard.count
            )));
        }
        check_share(plan, shard, &summary, dir)?;
        shards.insert(shard.index, (dir.clone(), summary));
    }
    let count = count.ok_or_else(|| Error::input("--collect needs at least one shard folder"))?;
    if let Some(missing) = (0..count).find(|i| !shards.contains_key(i)) {
        return Err(Error::input(format!(
            "shard {missing}/{count} is missing from --collect; give the output of every shard"
        )));
    }
    let mut studies: BTreeMap<String, StudySummary> = BTreeMap::new();
    for (dir, summary) in shards.into_values() {
        for (study, part) in summary.studies {
            for (target, entry) in &part.targets {
                if entry.status == Status::Done {
                    copy_dossier(&dir, into, &study, target, entry.digest.as_deref())?;
                }
            }
            let merged = studies.entry(study).or_insert_with(|| StudySummary {
                data: part.data.clone(),
                targets: BTreeMap::new(),
            });
            merged.targets.extend(part.targets);
        }
    }
    Ok((tool.expect("at least one shard was read"), studies))
}

/// Checks that a shard's summary holds exactly the pairs the plan gives that shard.
fn check_share(plan: &Plan, shard: Shard, summary: &Summary, dir: &Path) -> Result<()> {
    let expected: BTreeSet<(String, String, usize)> = plan
        .pairs()
        .into_iter()
        .filter(|p| shard.holds(p.index))
        .map(|p| (p.study.name.clone(), p.target.to_string(), p.index))
        .collect();
    let found: BTreeSet<(String, String, usize)> = summary
        .entries()
        .map(|(s, t, e)| (s.to_string(), t.to_string(), e.pair))
        .collect();
    if let Some((s, t, _)) = expected.symmetric_difference(&found).next() {
        return Err(Error::input(format!(
            "--collect '{}' (shard {}/{}) does not hold the pairs the plan gives it (first \
             difference: {s}/{t}); was the plan edited after the shards ran?",
            dir.display(),
            shard.index,
            shard.count
        )));
    }
    Ok(())
}

/// Copies `from/study/target/` to `into/study/target/`, checking its result digest first.
fn copy_dossier(
    from: &Path,
    into: &Path,
    study: &str,
    target: &str,
    digest: Option<&str>,
) -> Result<()> {
    let source = from.join(study).join(target);
    let result = std::fs::read_to_string(source.join("result.json"))
        .ok()
        .and_then(|t| serde_json::from_str::<serde_json::Value>(&t).ok());
    let found = result
        .as_ref()
        .and_then(|v| v.get("digest"))
        .and_then(|d| d.as_str());
    if found.is_none() || found != digest {
        return Err(Error::input(format!(
            "--collect: the dossier '{}' is missing or is not the one its summary lists (result \
             digest differs)",
            source.display()
        )));
    }
    copy_tree(&source, &into.join(study).join(target))
}

/// Copies a dossier folder; each file is synced as it is written.
fn copy_tree(from: &Path, to: &Path) -> Result<()> {
    std::fs::create_dir_all(to).map_err(|e| fs_error("create the folder", to, &e))?;
    let entries = std::fs::read_dir(from).map_err(|e| fs_error("read", from, &e))?;
    for entry in entries {
        let entry = entry.map_err(|e| fs_error("read", from, &e))?;
        let (source, target) = (entry.path(), to.join(entry.file_name()));
        if entry
            .file_type()
            .map_err(|e| fs_error("read", &source, &e))?
            .is_dir()
        {
            copy_tree(&source, &target)?;
        } else {
            let bytes = std::fs::read(&source).map_err(|e| fs_error("read", &source, &e))?;
            write_synced(&target, &bytes).map_err(|e| fs_error("write", &target, &e))?;
        }
    }
    Ok(())
}

fn short(hash: &str) -> &str {
    &hash[..hash.len().min(12)]
}
