//! `forebear sign`: a signer's statement about a dossier and its detached signature, in the open
//! OpenSSH signature format (SSHSIG, namespace `forebear-dossier`) by an Ed25519 key, so that
//! `ssh-keygen -Y verify` checks it as well as `forebear verify`. The cryptography is RustCrypto's
//! `ssh-key` crate; nothing here computes a signature itself.
//!
//! 21 CFR 11.50 (signature manifestations: printed name, date and time, meaning) and 11.70
//! (signature/record linking) are the context: the statement carries the first three, and the
//! SHA-256 of `manifest.json` binds it to one dossier. Whether a signature so made is a legally
//! binding electronic signature is for the user's own procedures to decide.

pub mod allowed;
mod key;
mod place;
pub mod statement;

pub use statement::{Meaning, Statement, STATEMENT_SCHEMA};

use crate::data::fingerprint::hex;
use crate::error::{Error, Result};
use crate::manifest::{Manifest, MANIFEST_FILE};
use crate::output::OutputLock;
use sha2::Digest;
use ssh_key::public::KeyData;
use ssh_key::{HashAlg, LineEnding, PublicKey, SshSig};
use statement::{SignedDossier, SigningKeyInfo};
use std::path::{Path, PathBuf};

/// The SSHSIG namespace of every forebear signature (`ssh-keygen -Y verify -n forebear-dossier`).
pub const NAMESPACE: &str = "forebear-dossier";

/// The folder of a dossier that holds its signatures.
pub const SIGNATURES_FOLDER: &str = "signatures";

/// One signature to make.
#[derive(Clone, Debug)]
pub struct SignRequest {
    /// The dossier folder.
    pub dir: PathBuf,
    /// The OpenSSH Ed25519 private key.
    pub key: PathBuf,
    /// A file whose first line is the key's passphrase.
    pub passphrase_file: Option<PathBuf>,
    /// What the signature means.
    pub meaning: Meaning,
    /// The signer's printed name (default: the key's comment).
    pub signer: Option<String>,
}

/// A signature made.
#[derive(Clone, Debug)]
pub struct Signed {
    /// The statement's path.
    pub statement_path: PathBuf,
    /// The detached signature's path.
    pub signature_path: PathBuf,
    /// What was signed.
    pub statement: Statement,
}

/// Signs the dossier `request.dir`: refuses (exit code 2) a folder that is no intact forebear
/// dossier, a key that cannot sign, and a signer without a name; writes the statement and its
/// signature together into `signatures/` under the next free number.
pub fn sign(request: &SignRequest) -> Result<Signed> {
    let key = key::read_signing_key(&request.key, request.passphrase_file.as_deref())?;
    let signer = match &request.signer {
        Some(name) => {
            key::check_signer_name(name, "given with --signer")?;
            name.clone()
        }
        None if key.comment().trim().is_empty() => {
            return Err(Error::input(format!(
                "the key '{}' has no comment to take the signer's name from; give the printed \
                 name with --signer, for example --signer 'Dana Analyst'",
                request.key.display()
            )))
        }
        None => {
            key::check_signer_name(key.comment(), "the key's comment")?;
            key.comment().to_string()
        }
    };
    let dir = dossier_folder(&request.dir)?;
    let _lock = OutputLock::acquire(&dir, &request.dir)?;
    let (manifest_bytes, manifest) = read_intact_dossier(&dir, &request.dir)?;
    let existing = signature_folder_names(&dir)?;
    if let Some(stray) = existing
        .iter()
        .find(|n| statement::parse_entry_name(n).is_none())
    {
        return Err(Error::input(format!(
            "'{}' holds {}, which is no signature; move it away before signing",
            dir.join(SIGNATURES_FOLDER).display(),
            crate::text::quoted(stray)
        )));
    }
    let number = statement::next_number(existing.iter().map(String::as_str))
        .ok_or_else(|| Error::input("the signatures folder has no free number left"))?;
    let public = key.public_key();
    let statement = Statement {
        schema: STATEMENT_SCHEMA.into(),
        signer,
        meaning: request.meaning,
        declaration: statement::declaration_line(request.meaning),
        signed_utc: crate::timefmt::now_rfc3339(),
        dossier: SignedDossier {
            manifest_sha256: hex(&sha2::Sha256::digest(&manifest_bytes)),
            result_digest: manifest.results.digest.clone(),
            target: manifest
                .settings
                .canonical
                .pointer("/study/target")
                .and_then(|t| t.as_str())
                .unwrap_or_default()
                .to_string(),
            data_file: manifest.data.file.clone(),
        },
        key: SigningKeyInfo {
            algorithm: public.algorithm().to_string(),
            fingerprint: fingerprint(public.key_data()),
        },
        tool: crate::finding::ToolInfo::current().describe(),
    };
    let text = serde_json::to_string_pretty(&statement)
        .map_err(|e| Error::internal(format!("signature statement: {e}")))?
        + "\n";
    let signature = key
        .sign(NAMESPACE, HashAlg::Sha512, text.as_bytes())
        .and_then(|s| s.to_pem(LineEnding::LF))
        .map_err(|e| Error::internal(format!("signing failed: {e}")))?;
    // What is written must verify: a check of our own signature before it is placed.
    verify_detached(text.as_bytes(), &signature)
        .map_err(|why| Error::internal(format!("the signature just made {why}")))?;
    let statement_name = statement::statement_name(number, request.meaning);
    let signature_name = statement::signature_name(&statement_name);
    place::add_files(
        &dir,
        &existing,
        &[
            (statement_name.clone(), text),
            (signature_name.clone(), signature),
        ],
    )?;
    let folder = request.dir.join(SIGNATURES_FOLDER);
    Ok(Signed {
        statement_path: folder.join(statement_name),
        signature_path: folder.join(signature_name),
        statement,
    })
}

/// The dossier folder, a symbolic link resolved (the lock and the new folder go beside the folder
/// itself).
fn dossier_folder(dir: &Path) -> Result<PathBuf> {
    let not_dossier = |why: String| {
        Error::input(format!(
            "'{}' is not a forebear dossier: {why}; give `forebear sign` the folder that \
             `forebear analyze` wrote",
            dir.display()
        ))
    };
    match std::fs::canonicalize(dir) {
        Ok(resolved) if resolved.is_dir() => Ok(resolved),
        Ok(_) => Err(not_dossier("it is not a folder".into())),
        Err(e) => Err(not_dossier(format!("it cannot be opened ({e})"))),
    }
}

/// The bytes and content of `dir/manifest.json`, refused (exit code 2) unless the manifest reads,
/// its seal holds and every file it lists has its recorded SHA-256: a signature vouches for an
/// intact dossier only. `shown` is the folder as the user named it.
pub fn read_intact_dossier(dir: &Path, shown: &Path) -> Result<(Vec<u8>, Manifest)> {
    let refuse = |why: String| {
        Error::input(format!(
            "'{}' cannot be signed: {why}; sign only a dossier that `forebear verify` finds \
             intact",
            shown.display()
        ))
    };
    let path = dir.join(MANIFEST_FILE);
    let bytes = std::fs::read(&path)
        .map_err(|e| refuse(format!("its {MANIFEST_FILE} cannot be read ({e})")))?;
    let manifest: Manifest = serde_json::from_slice(&bytes).map_err(|e| {
        refuse(format!(
            "{MANIFEST_FILE}, line {}, column {}: not a forebear manifest ({e})",
            e.line(),
            e.column()
        ))
    })?;
    if manifest.computed_seal() != manifest.seal {
        return Err(refuse(format!(
            "{MANIFEST_FILE} was edited after generation (its seal does not hold)"
        )));
    }
    for (name, recorded) in &manifest.files {
        let file = std::fs::read(dir.join(name)).map_err(|e| {
            refuse(format!(
                "{name}, listed in {MANIFEST_FILE}, cannot be read ({e})"
            ))
        })?;
        if &hex(&sha2::Sha256::digest(&file)) != recorded {
            return Err(refuse(format!(
                "{name} was edited after generation (its SHA-256 is not the one {MANIFEST_FILE} \
                 records)"
            )));
        }
    }
    Ok((bytes, manifest))
}

/// The names in `dir/signatures/`, sorted; none when there is no such folder.
pub fn signature_folder_names(dir: &Path) -> Result<Vec<String>> {
    let folder = dir.join(SIGNATURES_FOLDER);
    let entries = match std::fs::read_dir(&folder) {
        Ok(entries) => entries,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(Vec::new()),
        Err(e) => return Err(crate::output::fs_error("read the folder", &folder, &e)),
    };
    let mut names = entries
        .map(|e| e.map(|e| e.file_name().to_string_lossy().into_owned()))
        .collect::<std::io::Result<Vec<_>>>()
        .map_err(|e| crate::output::fs_error("read the folder", &folder, &e))?;
    names.sort();
    Ok(names)
}

/// Checks a detached SSHSIG signature (PEM) of `message` in the forebear namespace with the key it
/// carries; returns that key, or why the signature does not hold.
pub fn verify_detached(message: &[u8], pem: &str) -> std::result::Result<KeyData, String> {
    let signature = SshSig::from_pem(pem.trim())
        .map_err(|e| format!("is not a signature in the SSH signature format ({e})"))?;
    if signature.namespace() != NAMESPACE {
        return Err(format!(
            "was made for the namespace {}, not {NAMESPACE}",
            crate::text::quoted(signature.namespace())
        ));
    }
    let key = signature.public_key().clone();
    let algorithm = key.algorithm();
    PublicKey::new(key.clone(), "")
        .verify(NAMESPACE, message, &signature)
        .map_err(|e| {
            format!(
                "does not hold: the {algorithm} key {} did not sign these bytes ({e})",
                fingerprint(&key)
            )
        })?;
    Ok(key)
}

/// `SHA256:…` of a public key, as `ssh-keygen -l` prints it.
pub fn fingerprint(key: &KeyData) -> String {
    key.fingerprint(HashAlg::Sha256).to_string()
}
