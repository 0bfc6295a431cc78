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
}

/// Runs `verify`: prints the report (verdict on the last line); a mismatch is exit code 1.
pub fn run(args: VerifyArgs, argv: Vec<String>, progress: &dyn Progress) -> Result<()> {
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
            super::out::line("MISMATCH")?;
            return Err(e);
        }
        Err(e) => return Err(e),
    };
    if args.json {
        let text = serde_json::to_string_pretty(&report)
            .map_err(|e| Error::internal(format!("verification report: {e}")))?;
        super::out::json(&text)?;
    } else {
        super::out::print(&render_text(&report))?;
    }
    report.result()
}
