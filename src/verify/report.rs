//! The verification report: one check per step, the verdict, and its text for a reviewer.

use crate::error::{Error, Result};
use serde::Serialize;

/// Version of the verification report layout (`verify --json`).
pub const REPORT_SCHEMA: &str = "forebear.verification/1";

/// The result of one check.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, schemars::JsonSchema)]
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
#[derive(Clone, Debug, Serialize, schemars::JsonSchema)]
pub struct Check {
    /// What was checked.
    pub name: String,
    /// The finding.
    pub status: Status,
    /// Sentences for the reviewer.
    pub details: Vec<String>,
}

/// What the signatures check found of one signature.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, schemars::JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum SignatureStatus {
    /// The signature holds, the statement is about this manifest.json, and (with `--signers`)
    /// the key is allowed for the signer.
    Valid,
    /// The signature does not hold, or the statement does not read or contradicts itself.
    Invalid,
    /// A valid signature of a statement about another manifest.json.
    OtherDossier,
    /// A valid signature whose key the allowed-signers file does not list for the signer.
    NotAllowed,
}

impl SignatureStatus {
    /// The status as the text report prints it.
    pub fn word(self) -> &'static str {
        match self {
            SignatureStatus::Valid => "valid",
            SignatureStatus::Invalid => "INVALID",
            SignatureStatus::OtherDossier => "ANOTHER DOSSIER",
            SignatureStatus::NotAllowed => "NOT ALLOWED",
        }
    }
}

/// One signature of the dossier, as the report lists it.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema)]
pub struct SignatureRecord {
    /// The statement, relative to the dossier folder (`signatures/1-prepared.json`).
    pub file: String,
    /// The signer's name the statement gives (absent when it does not read).
    pub signer: Option<String>,
    /// The meaning the statement gives.
    pub meaning: Option<String>,
    /// When the statement says it was signed (UTC).
    pub signed_utc: Option<String>,
    /// `SHA256:…` of the key that made the signature (absent when the signature does not read).
    pub fingerprint: Option<String>,
    /// The finding.
    pub status: SignatureStatus,
    /// Why it is not valid.
    pub problems: Vec<String>,
}

/// Which replicates a spot check re-ran.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema)]
pub struct SpotCheck {
    /// The replicates re-run, ascending.
    pub replicates: Vec<u32>,
    /// The number of replicates in the plan.
    pub of: u32,
    /// The seed that chose them.
    pub sample_seed: u64,
}

/// The verification report.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema)]
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
    /// Every signature of the dossier, in file order (also in the signatures check's details).
    pub signatures: Vec<SignatureRecord>,
    /// Set when only some replicates were re-run.
    pub spot_check: Option<SpotCheck>,
    /// The fields the comparisons took from the record rather than recomputed (run facts no re-run
    /// can re-derive), as `file#pointer` (RFC 6901, section 6).
    pub taken_from_record: Vec<String>,
    /// `VERIFIED` or `MISMATCH`.
    pub verdict: String,
}

impl Report {
    /// Whether every check passed.
    pub fn verified(&self) -> bool {
        self.verdict == "VERIFIED"
    }

    /// `Ok` when every check passed, else a mismatch (exit code 1) naming the failed checks.
    pub fn result(&self) -> Result<()> {
        if self.verified() {
            return Ok(());
        }
        let failed: Vec<&str> = self
            .checks
            .iter()
            .filter(|c| c.status == Status::Fail)
            .map(|c| c.name.as_str())
            .collect();
        Err(Error::Mismatch(format!(
            "verification found differences ({})",
            failed.join(", ")
        )))
    }
}

pub(super) fn check(name: &str, status: Status, details: Vec<String>) -> Check {
    Check {
        name: name.into(),
        status,
        details,
    }
}

/// `text` with control characters and characters that print as nothing or reorder text written
/// as `\u{…}` escapes, everything else as it is ([`crate::text::escaped`]), cut at
/// [`crate::text::ECHO_CHARS`] characters: what a reviewer reads of a name or a line is what is
/// there.
pub(super) fn visible(text: &str) -> String {
    crate::text::capped(&crate::text::escaped(text), crate::text::ECHO_CHARS)
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
            "\nSPOT CHECK ONLY: {} of {} replicates re-run (sample seed {}). Checked: the \
             full-data search, the sampled replicates against their records, the stability \
             figures aggregated again from all recorded replicate records, and every file \
             rendered again; not checked: whether the other {} replicate records are what a \
             re-run gives. A full verification re-runs all.\n",
            s.replicates.len(),
            s.of,
            s.sample_seed,
            s.of as usize - s.replicates.len()
        ));
    }
    out.push_str(&format!("\n{}\n", report.verdict));
    // The paths and details hold the user's names: no control sequence reaches the terminal.
    out.lines()
        .map(|line| crate::text::for_terminal(line) + "\n")
        .collect()
}
