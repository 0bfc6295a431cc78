//! The audit trail: a hash-chained JSON-lines file, `forebear-trail.jsonl`, in the folder that
//! holds the outputs (the parent of `--out`). Every analysis, batch run, merge, signature and
//! recorded verification appends one entry: who (the operator), when (UTC), what, on which output,
//! with which digests or verdict. Each entry holds the hash of the one before it and its own hash
//! (SHA-256 of its canonical JSON, RFC 8785, without the `hash` member), so a changed, removed or
//! reordered entry breaks the chain at that line; `forebear trail FILE` shows the entries and
//! checks the chain. This is the kind of secure, time-stamped audit trail 21 CFR 11.10(e) asks of
//! electronic records (cited as context; the user's procedures decide what it must hold).
//!
//! Appends are serialised by an exclusive lock on the file itself, so runs in parallel (a batch
//! beside an analysis) never fork the chain.

use crate::digest::canonical_json;
use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::io::{Read, Seek, SeekFrom, Write};
use std::path::{Path, PathBuf};

/// File name of the trail, in the folder that holds the outputs.
pub const TRAIL_FILE: &str = "forebear-trail.jsonl";

/// Version of the entry layout.
pub const TRAIL_SCHEMA: &str = "forebear.trail/1";

/// The `previous` of the first entry.
pub const GENESIS: &str = "0000000000000000000000000000000000000000000000000000000000000000";

/// One entry of the trail.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq, schemars::JsonSchema)]
pub struct Entry {
    /// Layout version, [`TRAIL_SCHEMA`].
    pub schema: String,
    /// 1 for the first entry of the file, then one more each entry.
    pub sequence: u64,
    /// When the entry was written (UTC, RFC 3339).
    pub time_utc: String,
    /// Who ran the command (`--operator`, else the login name).
    pub operator: String,
    /// What was done: `analyze`, `batch`, `merge`, `sign`, `verify`.
    pub action: String,
    /// The output concerned, as a path relative to the trail's folder where it lies inside it.
    pub output: String,
    /// The facts of the action (digests, target, verdict, a replaced output kept under a dated
    /// name), by name.
    pub facts: BTreeMap<String, String>,
    /// The build that wrote the entry.
    pub tool: String,
    /// The `hash` of the entry before this one ([`GENESIS`] for the first).
    pub previous: String,
    /// SHA-256 of the canonical JSON (RFC 8785) of this entry without `hash`.
    pub hash: String,
}

impl Entry {
    /// The hash this entry should carry.
    pub fn computed_hash(&self) -> String {
        let mut tree = serde_json::to_value(self).expect("an entry is plain data");
        crate::digest::remove_pointer(&mut tree, "/hash");
        crate::data::fingerprint::sha256_text(&canonical_json(&tree))
    }
}

/// What a command records: the action, the output it concerns, and its facts.
#[derive(Clone, Debug)]
pub struct Record {
    /// What was done.
    pub action: &'static str,
    /// The output folder concerned (the trail goes in its parent).
    pub output: PathBuf,
    /// The facts, by name.
    pub facts: BTreeMap<String, String>,
}

impl Record {
    /// The record of a dossier written to `out`: target, outcome, result digest, the SHA-256 of
    /// its `manifest.json` (which seals every other file), and where a replaced dossier is kept.
    pub fn dossier(
        action: &'static str,
        finding: &crate::finding::Finding,
        out: &Path,
        kept: Option<&Path>,
    ) -> Record {
        let mut facts = BTreeMap::from([
            ("target".to_string(), finding.target.clone()),
            ("outcome".to_string(), finding.outcome.name().to_string()),
            ("digest".to_string(), finding.digest.clone()),
        ]);
        if let Ok(bytes) = std::fs::read(out.join(crate::manifest::MANIFEST_FILE)) {
            facts.insert(
                "manifest_sha256".into(),
                crate::digest::hex(&<sha2::Sha256 as sha2::Digest>::digest(&bytes)),
            );
        }
        if let Some(kept) = kept {
            facts.insert("replaced_output_kept_as".into(), kept_name(kept));
        }
        Record {
            action,
            output: out.to_path_buf(),
            facts,
        }
    }
}

/// The name of a kept former output (it lies beside the output, in the trail's folder).
pub fn kept_name(kept: &Path) -> String {
    kept.file_name().map_or_else(
        || kept.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    )
}

/// The operator: `--operator` when given, else the login name from the environment (`LOGNAME`,
/// `USER`, `USERNAME`), else the account name of the user id in `/etc/passwd`, else the id.
pub fn operator(given: Option<&str>) -> String {
    if let Some(name) = given.map(str::trim).filter(|n| !n.is_empty()) {
        return name.to_string();
    }
    for key in ["LOGNAME", "USER", "USERNAME"] {
        if let Some(name) = std::env::var(key).ok().filter(|n| !n.trim().is_empty()) {
            return name.trim().to_string();
        }
    }
    #[cfg(unix)]
    {
        let uid = rustix::process::getuid().as_raw();
        let passwd = std::fs::read_to_string("/etc/passwd").unwrap_or_default();
        passwd
            .lines()
            .map(|l| l.split(':').collect::<Vec<_>>())
            .find(|f| f.len() > 2 && f[2] == uid.to_string() && !f[0].is_empty())
            .map_or_else(|| format!("uid {uid}"), |f| f[0].to_string())
    }
    #[cfg(not(unix))]
    {
        "unknown (no login name in the environment)".to_string()
    }
}

/// Checks an `--operator` value: printable text of at most 200 characters.
pub fn check_operator(name: &str) -> std::result::Result<String, String> {
    let name = name.trim();
    if name.is_empty() {
        return Err("the operator name is empty".into());
    }
    if name.chars().any(char::is_control) {
        return Err("the operator name contains a control character".into());
    }
    if name.chars().count() > 200 {
        return Err("the operator name is longer than 200 characters".into());
    }
    Ok(name.to_string())
}

/// The trail file for outputs written to `output`: in its parent folder.
pub fn trail_path(output: &Path) -> PathBuf {
    let parent = output
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    parent.join(TRAIL_FILE)
}

/// Appends the entry of `record` to the trail beside its output; returns the entry written.
pub fn append(record: &Record, operator: &str) -> Result<Entry> {
    let path = trail_path(&record.output);
    let failed = |what: &str, e: &dyn std::fmt::Display| {
        Error::input(format!(
            "the audit trail '{}' could not be {what} ({e}); the {} output '{}' is in place, but \
             its entry is missing from the trail",
            path.display(),
            record.action,
            record.output.display()
        ))
    };
    let mut file = std::fs::OpenOptions::new()
        .read(true)
        .append(true)
        .create(true)
        .open(&path)
        .map_err(|e| failed("opened", &e))?;
    file.lock().map_err(|e| failed("locked", &e))?;
    let mut text = String::new();
    file.seek(SeekFrom::Start(0))
        .and_then(|_| file.read_to_string(&mut text))
        .map_err(|e| failed("read", &e))?;
    let (sequence, previous) = match read_entries(&text)
        .map_err(|e| failed("extended", &e))?
        .last()
    {
        Some(last) => (last.sequence + 1, last.hash.clone()),
        None => (1, GENESIS.to_string()),
    };
    let output = record
        .output
        .strip_prefix(path.parent().unwrap_or(Path::new(".")))
        .unwrap_or(&record.output);
    let mut entry = Entry {
        schema: TRAIL_SCHEMA.into(),
        sequence,
        time_utc: crate::timefmt::now_rfc3339(),
        operator: operator.to_string(),
        action: record.action.to_string(),
        output: output.display().to_string(),
        facts: record.facts.clone(),
        tool: crate::finding::ToolInfo::current().describe(),
        previous,
        hash: String::new(),
    };
    entry.hash = entry.computed_hash();
    let mut line = serde_json::to_string(&entry).expect("an entry is plain data");
    line.push('\n');
    // A trail whose last line lacks its newline (a crash mid-write) gets one first, so the new
    // entry is a line of its own; the broken line then fails the chain check where it is.
    if !text.is_empty() && !text.ends_with('\n') {
        line.insert(0, '\n');
    }
    file.write_all(line.as_bytes())
        .and_then(|()| file.sync_all())
        .map_err(|e| failed("written", &e))?;
    Ok(entry)
}

/// A break in the chain: the line and what is wrong there.
#[derive(Clone, Debug, PartialEq)]
pub struct Break {
    /// 1-based line number.
    pub line: usize,
    /// What is wrong.
    pub problem: String,
}

impl std::fmt::Display for Break {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "line {}: {}", self.line, self.problem)
    }
}

/// The entries of a trail's text, each checked against the one before it; the first break found.
pub fn read_entries(text: &str) -> std::result::Result<Vec<Entry>, Break> {
    let mut entries: Vec<Entry> = Vec::new();
    for (i, line) in text.lines().enumerate() {
        let at = |problem: String| Break {
            line: i + 1,
            problem,
        };
        let entry: Entry = serde_json::from_str(line)
            .map_err(|e| at(format!("not an entry of the trail ({e})")))?;
        if entry.schema != TRAIL_SCHEMA {
            return Err(at(format!("layout {:?}, not {TRAIL_SCHEMA}", entry.schema)));
        }
        if entry.hash != entry.computed_hash() {
            return Err(at(
                "the entry does not hash to its recorded hash: it was changed after it was written"
                    .into(),
            ));
        }
        let (sequence, previous) = entries
            .last()
            .map_or((1, GENESIS), |last| (last.sequence + 1, last.hash.as_str()));
        if entry.previous != previous {
            return Err(at(
                "the entry does not name the hash of the line before it: an entry before it was \
                 removed, changed or reordered"
                    .into(),
            ));
        }
        if entry.sequence != sequence {
            return Err(at(format!(
                "sequence {} where {sequence} was due",
                entry.sequence
            )));
        }
        entries.push(entry);
    }
    Ok(entries)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn scratch(name: &str) -> PathBuf {
        let dir =
            std::env::temp_dir().join(format!("forebear-trail-{}-{name}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        dir
    }

    fn record(dir: &Path, action: &'static str, digest: &str) -> Record {
        Record {
            action,
            output: dir.join("results"),
            facts: BTreeMap::from([("digest".to_string(), digest.to_string())]),
        }
    }

    #[test]
    fn entries_chain_by_hash_and_any_edit_removal_or_reordering_breaks_the_chain() {
        let dir = scratch("chain");
        for (i, action) in ["analyze", "verify", "analyze"].into_iter().enumerate() {
            append(&record(&dir, action, &format!("d{i}")), "Q. Analyst").unwrap();
        }
        let text = std::fs::read_to_string(dir.join(TRAIL_FILE)).unwrap();
        let entries = read_entries(&text).unwrap();
        assert_eq!(entries.len(), 3);
        assert_eq!(entries[0].previous, GENESIS);
        assert_eq!(entries[1].previous, entries[0].hash);
        assert_eq!(entries[2].sequence, 3);
        assert_eq!(entries[0].output, "results");
        let lines: Vec<&str> = text.lines().collect();

        let edited = text.replacen("\"digest\":\"d1\"", "\"digest\":\"dX\"", 1);
        assert_eq!(read_entries(&edited).unwrap_err().line, 2);
        let removed = format!("{}\n{}\n", lines[0], lines[2]);
        assert_eq!(read_entries(&removed).unwrap_err().line, 2);
        let reordered = format!("{}\n{}\n{}\n", lines[1], lines[0], lines[2]);
        assert_eq!(read_entries(&reordered).unwrap_err().line, 1);
        // The truncated trail is a valid shorter chain: the last entry's hash is what a
        // reviewer writes down (or a signature binds) to see truncation.
        assert!(read_entries(&format!("{}\n", lines[0])).is_ok());
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn an_entry_hashes_to_sha256_of_its_rfc_8785_form_without_the_hash() {
        let dir = scratch("hash");
        let entry = append(&record(&dir, "analyze", "d"), "Q. Analyst").unwrap();
        let mut tree = serde_json::to_value(&entry).unwrap();
        tree.as_object_mut().unwrap().remove("hash");
        let text = crate::digest::canonical_text(&tree);
        assert_eq!(entry.hash, crate::data::fingerprint::sha256_text(&text));
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn a_damaged_trail_is_not_extended() {
        let dir = scratch("damaged");
        append(&record(&dir, "analyze", "d"), "Q. Analyst").unwrap();
        let path = dir.join(TRAIL_FILE);
        let text = std::fs::read_to_string(&path).unwrap();
        std::fs::write(&path, text.replace("Q. Analyst", "Z. Other")).unwrap();
        let error = append(&record(&dir, "analyze", "e"), "Q. Analyst").unwrap_err();
        assert!(error.to_string().contains("line 1"), "{error}");
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn operator_names_are_checked() {
        assert_eq!(check_operator("  Q. Analyst "), Ok("Q. Analyst".into()));
        assert!(check_operator("").is_err());
        assert!(check_operator("a\u{7}b").is_err());
        assert!(check_operator(&"x".repeat(201)).is_err());
        assert_eq!(operator(Some("Q. Analyst")), "Q. Analyst");
    }
}
