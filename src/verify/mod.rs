//! Verification of a dossier against the data a reviewer received: the dossier's full file set
//! against its manifest, the data against both fingerprints, the method version, a re-run of the
//! analysis compared with the complete recorded result and the manifest's digests, and every file
//! of the dossier rendered again from the re-run and compared byte for byte; the signatures of
//! `forebear sign`, each checked and bound to this manifest. Every check says what
//! it found; the verdict is `VERIFIED` only when every check passed (notes allowed).

mod checks;
mod files;
mod report;
mod rerender;
mod rerun;
mod signatures;

pub use report::{
    render_text, Check, Report, SignatureRecord, SignatureStatus, SpotCheck, Status, REPORT_SCHEMA,
};
pub use rerun::sample_replicates;

use crate::analysis::Progress;
use crate::error::{Error, Result};
use checks::{check_data, check_seal, check_settings, check_tool, read_manifest, read_received};
use files::check_files;
use report::check;
use std::path::PathBuf;

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
    /// An allowed-signers file (OpenSSH format): every signature must be by a key it lists for
    /// its signer, and an unsigned dossier is a mismatch.
    pub signers: Option<PathBuf>,
    /// The verify command line, for nothing but the record.
    pub command_line: Vec<String>,
}

/// Runs every check. Errors are bad usage or unreadable input (exit code 2); a mismatch is a
/// report whose verdict is `MISMATCH`.
pub fn verify(request: &Request, progress: &dyn Progress) -> Result<Report> {
    if request.replicates_sample == Some(0) {
        return Err(Error::input(
            "--replicates-sample 0 re-runs no replicate; give at least 1, or leave the flag out to \
             re-run them all",
        ));
    }
    let signers = request
        .signers
        .as_deref()
        .map(crate::sign::allowed::AllowedSigners::read)
        .transpose()?;
    let manifest = read_manifest(&request.dir)?;
    // The data file is read once (it may be a pipe): both fingerprints and the re-run come from
    // the same bytes.
    let received = read_received(request, &manifest)?;
    let mut checks = Vec::new();
    checks.push(check_seal(&manifest));
    let (files, recorded) = check_files(&request.dir, &manifest);
    checks.push(files);
    let (signed, signatures) = signatures::check_signatures(&request.dir, signers.as_ref());
    checks.push(signed);
    checks.push(check_settings(&manifest, recorded.as_ref()));
    let data = check_data(&manifest, &received);
    let data_ok = data.status != Status::Fail;
    checks.push(data);
    let tool = check_tool(&manifest, request.allow_other_version);
    let tool_ok = tool.status != Status::Fail;
    checks.push(tool);
    let mut spot_check = None;
    let mut taken_from_record = Vec::new();
    let received = received.ok().filter(|_| data_ok);
    if let Some(received) = received.filter(|_| tool_ok || request.allow_other_version) {
        // The data check passed: the received bytes are the analysed ones, or a re-saved copy.
        let resaved = received.1.sha256 != manifest.data.sha256;
        let rerun = rerun::rerun(
            request,
            &manifest,
            recorded.as_ref(),
            resaved,
            received,
            progress,
        );
        spot_check = rerun.spot;
        taken_from_record = rerun.taken_from_record;
        checks.push(rerun.check);
        checks.push(rerender::check_rendered_dossier(
            &request.dir,
            &manifest,
            rerun.analysed.as_ref(),
            progress,
        ));
    } else {
        let why = if data_ok {
            "the dossier was made by another method version"
        } else {
            "the data differ from the analysed data"
        };
        for name in ["re-run", "rendered files"] {
            checks.push(check(
                name,
                Status::Skipped,
                vec![format!("not run: {why}")],
            ));
        }
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
        signatures,
        spot_check,
        taken_from_record,
        verdict: if verified { "VERIFIED" } else { "MISMATCH" }.into(),
    })
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
