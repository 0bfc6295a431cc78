//! `forebear sign DIR --key KEY --meaning prepared|reviewed|approved [--signer NAME]
//! [--passphrase-file FILE]`

use crate::error::Result;
use crate::sign::{sign, Meaning, SignRequest, NAMESPACE};
use clap::Args;
use std::path::PathBuf;

/// Arguments of `sign`.
#[derive(Debug, Args)]
pub struct SignArgs {
    /// The dossier folder (the one holding manifest.json).
    pub dir: PathBuf,
    /// The signer's Ed25519 private key in the OpenSSH format (`ssh-keygen -t ed25519`).
    #[arg(long, value_name = "KEY")]
    pub key: PathBuf,
    /// What the signature means: prepared ("I prepared this dossier"), reviewed ("I reviewed this
    /// dossier") or approved ("I approve this dossier").
    #[arg(long, value_enum)]
    pub meaning: Meaning,
    /// The signer's printed name, also the principal of an allowed-signers file (default: the
    /// key's comment).
    #[arg(long, value_name = "NAME")]
    pub signer: Option<String>,
    /// A file whose first line is the key's passphrase, for a protected key.
    #[arg(long, value_name = "FILE")]
    pub passphrase_file: Option<PathBuf>,
}

/// Runs `sign`: writes the statement and its signature, records the signing in the audit trail
/// beside the dossier, and says what was signed.
pub fn run(args: SignArgs, operator: &str) -> Result<()> {
    let request = SignRequest {
        dir: args.dir,
        key: args.key,
        passphrase_file: args.passphrase_file,
        meaning: args.meaning,
        signer: args.signer,
    };
    let signed = sign(&request)?;
    let s = &signed.statement;
    let facts = [
        ("signer", s.signer.clone()),
        ("meaning", s.meaning.word().to_string()),
        ("key_fingerprint", s.key.fingerprint.clone()),
        ("manifest_sha256", s.dossier.manifest_sha256.clone()),
        ("digest", s.dossier.result_digest.clone()),
        ("target", s.dossier.target.clone()),
        (
            "statement",
            signed
                .statement_path
                .strip_prefix(&request.dir)
                .unwrap_or(&signed.statement_path)
                .display()
                .to_string(),
        ),
    ];
    crate::trail::append(
        &crate::trail::Record {
            action: "sign",
            output: request.dir.clone(),
            facts: facts.into_iter().map(|(k, v)| (k.to_string(), v)).collect(),
        },
        operator,
    )?;
    let lines = [
        format!("signed by {}: {}", s.signer, s.declaration),
        format!("at {} with the key {}", s.signed_utc, s.key.fingerprint),
        format!(
            "dossier: target {}, result digest {}, manifest.json SHA-256 {}",
            s.dossier.target, s.dossier.result_digest, s.dossier.manifest_sha256
        ),
        format!("statement: {}", signed.statement_path.display()),
        format!(
            "signature: {} (SSH signature, namespace {NAMESPACE})",
            signed.signature_path.display()
        ),
    ];
    super::out::print(
        &lines
            .iter()
            .map(|l| crate::text::for_terminal(l) + "\n")
            .collect::<String>(),
    )
}
