//! `forebear trail [PATH] [--json]`: shows an audit trail and checks its hash chain.

use crate::error::{Error, Result};
use crate::trail::{read_entries, Entry, TRAIL_FILE};
use clap::Args;
use std::path::PathBuf;

/// Arguments of `trail`.
#[derive(Debug, Args)]
#[command(
    after_help = "Examples:\n  forebear trail\n  forebear trail results/forebear-trail.jsonl\n  forebear trail nightly --json"
)]
pub struct TrailArgs {
    /// The trail file, or the folder that holds it (the parent of the dossiers' folders).
    #[arg(default_value = ".")]
    pub path: PathBuf,
    /// Print the entries as a JSON array instead of one line each.
    #[arg(long)]
    pub json: bool,
}

/// Runs `trail`: the entries, then whether the chain holds; a broken chain is exit code 1.
pub fn run(args: TrailArgs) -> Result<()> {
    let path = if args.path.is_dir() {
        args.path.join(TRAIL_FILE)
    } else {
        args.path.clone()
    };
    let text = std::fs::read_to_string(&path).map_err(|e| {
        Error::input(format!(
            "cannot read the audit trail '{}': {e}; analyses write it beside their output folder \
             as {TRAIL_FILE}",
            path.display()
        ))
    })?;
    let (entries, broken) = match read_entries(&text) {
        Ok(entries) => (entries, None),
        Err(at) => {
            // Show what precedes the break, which is still a valid chain.
            let good: String = text
                .lines()
                .take(at.line - 1)
                .map(|l| format!("{l}\n"))
                .collect();
            (read_entries(&good).unwrap_or_default(), Some(at))
        }
    };
    if args.json {
        let text = serde_json::to_string_pretty(&entries)
            .map_err(|e| Error::internal(format!("trail: {e}")))?;
        super::out::json(&text)?;
    } else {
        for entry in &entries {
            super::out::line(&describe(entry))?;
        }
    }
    match broken {
        None => {
            let last = entries.last().map_or("none", |e| e.hash.as_str());
            eprintln!(
                "forebear: {}: chain intact, {} entries; last hash {last}",
                path.display(),
                entries.len()
            );
            Ok(())
        }
        Some(at) => Err(Error::Mismatch(format!(
            "{}:{}: the chain is broken: {}",
            path.display(),
            at.line,
            at.problem
        ))),
    }
}

/// One line for a reader: sequence, time, operator, action, output, facts.
fn describe(entry: &Entry) -> String {
    let facts: Vec<String> = entry
        .facts
        .iter()
        .map(|(k, v)| format!("{k}={}", crate::text::for_terminal(v)))
        .collect();
    format!(
        "{:>4}  {}  {}  {} {}  {}",
        entry.sequence,
        entry.time_utc,
        crate::text::for_terminal(&entry.operator),
        entry.action,
        crate::text::for_terminal(&entry.output),
        facts.join("  ")
    )
}
