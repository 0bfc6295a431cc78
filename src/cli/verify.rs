//! `forebear verify DIR --data DATA [--replicates-sample K] [--signers FILE] [--json]`

use crate::analysis::Progress;
use crate::error::{Error, Result};
use crate::verify::{render_text, verify, Request};
use clap::Args;
use std::path::PathBuf;

/// Arguments of `verify`.
#[derive(Debug, Args)]
pub struct VerifyArgs {
    /// The dossier folder (the one holding manifest.json).
    pub dir: PathBuf,
    /// The data file received with the dossier.
    #[arg(long)]
    pub data: PathBuf,
    /// Re-run only K replicates, chosen by a seed, besides the full-data search: a quick spot
    /// check, labelled as such.
    #[arg(long, value_name = "K")]
    pub replicates_sample: Option<u32>,
    /// Seed that chooses the spot check's replicates (default: derived from the manifest).
    #[arg(long, value_name = "N", requires = "replicates_sample")]
    pub sample_seed: Option<u64>,
    /// Re-run a dossier made by another method version and list every difference.
    #[arg(long)]
    pub allow_other_version: bool,
    /// An allowed-signers file in the OpenSSH format (`"Dana Analyst" ssh-ed25519 AAAA…`, as
    /// `ssh-keygen -Y verify -f` reads): every signature must be by a key it lists for the
    /// statement's signer, and an unsigned dossier is a mismatch.
    #[arg(long, value_name = "FILE")]
    pub signers: Option<PathBuf>,
    /// Print the report as JSON instead of text.
    #[arg(long)]
    pub json: bool,
    /// Append the verdict to the audit trail (forebear-trail.jsonl) in the folder that holds the
    /// dossier.
    #[arg(long)]
    pub record: bool,
}

/// Runs `verify`: prints the report (verdict on the last line); a mismatch is exit code 1.
pub fn run(
    args: VerifyArgs,
    argv: Vec<String>,
    operator: &str,
    progress: &dyn Progress,
) -> Result<()> {
    let record = args.record;
    let request = Request {
        dir: args.dir,
        data: args.data,
        replicates_sample: args.replicates_sample,
        sample_seed: args.sample_seed,
        allow_other_version: args.allow_other_version,
        signers: args.signers,
        command_line: argv,
    };
    let report = match verify(&request, progress) {
        Ok(report) => report,
        Err(e @ Error::Mismatch(_)) => {
            if record {
                let facts = [
                    ("verdict", "MISMATCH".to_string()),
                    ("reason", e.to_string()),
                ];
                append_verdict(&request, &facts, operator)?;
            }
            super::out::line("MISMATCH")?;
            return Err(e);
        }
        Err(e) => return Err(e),
    };
    if record {
        let failed: Vec<&str> = report
            .checks
            .iter()
            .filter(|c| c.status == crate::verify::Status::Fail)
            .map(|c| c.name.as_str())
            .collect();
        let mut facts = vec![("verdict", report.verdict.clone())];
        if !failed.is_empty() {
            facts.push(("failed_checks", failed.join(", ")));
        }
        if let Some(spot) = &report.spot_check {
            facts.push(("spot_check_replicates", spot.replicates.len().to_string()));
        }
        append_verdict(&request, &facts, operator)?;
    }
    if args.json {
        let text = serde_json::to_string_pretty(&report)
            .map_err(|e| Error::internal(format!("verification report: {e}")))?;
        super::out::json(&text)?;
    } else {
        super::out::print(&render_text(&report))?;
    }
    report.result()
}

/// Appends a verification's verdict to the audit trail beside the dossier, with the data file
/// checked and the SHA-256 of the manifest it was checked against.
fn append_verdict(request: &Request, facts: &[(&str, String)], operator: &str) -> Result<()> {
    let mut facts: std::collections::BTreeMap<String, String> = facts
        .iter()
        .map(|(k, v)| (k.to_string(), v.clone()))
        .collect();
    facts.insert("data".into(), request.data.display().to_string());
    if let Ok(bytes) = std::fs::read(request.dir.join(crate::manifest::MANIFEST_FILE)) {
        facts.insert(
            "manifest_sha256".into(),
            crate::digest::hex(&<sha2::Sha256 as sha2::Digest>::digest(&bytes)),
        );
    }
    let record = crate::trail::Record {
        action: "verify",
        output: request.dir.clone(),
        facts,
    };
    crate::trail::append(&record, operator).map(|_| ())
}
