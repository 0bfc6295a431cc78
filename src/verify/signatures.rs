//! The signatures of a dossier (`forebear sign`): each statement in `signatures/` with its
//! detached SSH signature checked cryptographically (namespace `forebear-dossier`, the key the
//! signature carries), bound to this `manifest.json` by its SHA-256, and, with `--signers`, made
//! by a key an allowed-signers file lists for the statement's signer. A signature that does not
//! hold, a statement about another manifest, or any other file in the folder fails the check.

use super::report::{check, visible, Check, SignatureRecord, SignatureStatus, Status};
use crate::data::fingerprint::hex;
use crate::manifest::MANIFEST_FILE;
use crate::sign::allowed::{AllowedSigners, Authorization};
use crate::sign::statement::{parse_entry_name, signature_name, EntryName};
use crate::sign::{
    fingerprint, signature_folder_names, verify_detached, Statement, NAMESPACE, SIGNATURES_FOLDER,
    STATEMENT_SCHEMA,
};
use sha2::Digest;
use std::path::Path;

/// Checks every signature of the dossier `dir`; `signers` is the allowed-signers file, if given.
pub(super) fn check_signatures(
    dir: &Path,
    signers: Option<&AllowedSigners>,
) -> (Check, Vec<SignatureRecord>) {
    let fail = |why: String| (check("signatures", Status::Fail, vec![why]), Vec::new());
    let folder = dir.join(SIGNATURES_FOLDER);
    if folder.exists() && !folder.is_dir() {
        return fail(format!(
            "'{SIGNATURES_FOLDER}' is a file, not the signatures folder"
        ));
    }
    let names = match signature_folder_names(dir) {
        Ok(names) => names,
        Err(e) => return fail(e.to_string()),
    };
    let manifest_sha256 = match std::fs::read(dir.join(MANIFEST_FILE)) {
        Ok(bytes) => hex(&sha2::Sha256::digest(&bytes)),
        Err(e) => return fail(format!("{MANIFEST_FILE} cannot be read ({e})")),
    };
    let mut problems = Vec::new();
    let mut statements = Vec::new();
    for name in &names {
        let is_file = folder.join(name).is_file();
        match parse_entry_name(name) {
            Some(EntryName::Statement(..)) if is_file => statements.push(name.clone()),
            Some(EntryName::Signature(..))
                if is_file && names.contains(&name.trim_end_matches(".sig").to_string()) => {}
            Some(EntryName::Signature(..)) if is_file => problems.push(format!(
                "'{SIGNATURES_FOLDER}/{}' is a signature without its statement",
                visible(name)
            )),
            _ => problems.push(format!(
                "'{SIGNATURES_FOLDER}/{}' is in the signatures folder but is no signature (only \
                 <n>-<meaning>.json and its .json.sig belong there)",
                visible(name)
            )),
        }
    }
    let records: Vec<SignatureRecord> = statements
        .iter()
        .map(|name| check_one(&folder, name, &manifest_sha256, signers))
        .collect();
    let mut details: Vec<String> = records
        .iter()
        .map(|r| describe(r, signers.is_some()))
        .collect();
    details.extend(problems.iter().cloned());
    let failed = !problems.is_empty() || records.iter().any(|r| r.status != SignatureStatus::Valid);
    let status = if failed {
        Status::Fail
    } else if records.is_empty() {
        if signers.is_some() {
            details.push(
                "not signed, but --signers asks for signatures by the signers it lists".into(),
            );
            Status::Fail
        } else {
            details.push("not signed (no signatures/ statements)".into());
            Status::Note
        }
    } else {
        Status::Pass
    };
    (check("signatures", status, details), records)
}

/// One statement and its signature.
fn check_one(
    folder: &Path,
    name: &str,
    manifest_sha256: &str,
    signers: Option<&AllowedSigners>,
) -> SignatureRecord {
    let mut record = SignatureRecord {
        file: format!("{SIGNATURES_FOLDER}/{name}"),
        signer: None,
        meaning: None,
        signed_utc: None,
        fingerprint: None,
        status: SignatureStatus::Valid,
        problems: Vec::new(),
    };
    let bytes = match std::fs::read(folder.join(name)) {
        Ok(bytes) => bytes,
        Err(e) => return record.failed(SignatureStatus::Invalid, format!("cannot be read ({e})")),
    };
    let statement = serde_json::from_slice::<Statement>(&bytes).ok();
    if let Some(s) = &statement {
        record.signer = Some(s.signer.clone());
        record.meaning = Some(s.meaning.word().to_string());
        record.signed_utc = Some(s.signed_utc.clone());
    }
    let signature_file = signature_name(name);
    let key = match std::fs::read_to_string(folder.join(&signature_file)) {
        Err(e) => {
            return record.failed(
                SignatureStatus::Invalid,
                format!("its signature {signature_file} cannot be read ({e})"),
            )
        }
        Ok(pem) => match verify_detached(&bytes, &pem) {
            Ok(key) => key,
            Err(why) => {
                return record.failed(
                    SignatureStatus::Invalid,
                    format!("its signature {signature_file} {why}"),
                )
            }
        },
    };
    let signed_by = fingerprint(&key);
    record.fingerprint = Some(signed_by.clone());
    let Some(statement) = statement else {
        return record.failed(
            SignatureStatus::Invalid,
            "is signed but does not read as a forebear signature statement".into(),
        );
    };
    if statement.schema != STATEMENT_SCHEMA {
        record.add(
            SignatureStatus::Invalid,
            format!(
                "has the layout {}, not {STATEMENT_SCHEMA}",
                crate::text::quoted(&statement.schema)
            ),
        );
    }
    if parse_entry_name(name) != Some(EntryName::Statement(number_of(name), statement.meaning)) {
        record.add(
            SignatureStatus::Invalid,
            format!(
                "says the meaning {} but its file name another",
                statement.meaning.word()
            ),
        );
    }
    if statement.key.fingerprint != signed_by {
        record.add(
            SignatureStatus::Invalid,
            format!(
                "names the key {} but was signed by {signed_by}",
                visible(&statement.key.fingerprint)
            ),
        );
    }
    if statement.dossier.manifest_sha256 != manifest_sha256 {
        record.add(
            SignatureStatus::OtherDossier,
            format!(
                "is about another dossier: it signs a manifest.json with SHA-256 {}, this one's is \
                 {}",
                visible(&statement.dossier.manifest_sha256),
                manifest_sha256
            ),
        );
    }
    if let Some(signers) = signers {
        match signers.authorizes(&statement.signer, &key, NAMESPACE) {
            Authorization::Allowed => {}
            Authorization::NotListed => record.add(
                SignatureStatus::NotAllowed,
                format!("its key {signed_by} is not in the allowed-signers file"),
            ),
            Authorization::OtherPrincipal(lines) => record.add(
                SignatureStatus::NotAllowed,
                format!(
                    "the allowed-signers file lists its key {signed_by} for other principals than \
                     {} ({})",
                    crate::text::quoted(&statement.signer),
                    lines.join("; ")
                ),
            ),
        }
    }
    record
}

fn number_of(name: &str) -> u32 {
    parse_entry_name(name).map_or(0, |e| e.number())
}

impl SignatureRecord {
    fn add(&mut self, status: SignatureStatus, problem: String) {
        if self.status == SignatureStatus::Valid {
            self.status = status;
        }
        self.problems.push(problem);
    }

    fn failed(mut self, status: SignatureStatus, problem: String) -> SignatureRecord {
        self.add(status, problem);
        self
    }
}

/// One line of the text report.
fn describe(record: &SignatureRecord, with_signers: bool) -> String {
    let unknown = || "?".to_string();
    let who = format!(
        "{}: {} by {} at {}, key {}",
        record.file,
        record.meaning.clone().unwrap_or_else(unknown),
        record
            .signer
            .as_deref()
            .map_or_else(unknown, crate::text::quoted),
        record.signed_utc.as_deref().map_or_else(unknown, visible),
        record.fingerprint.clone().unwrap_or_else(unknown),
    );
    if record.problems.is_empty() {
        let listed = if with_signers {
            ", by a key the allowed-signers file lists for this signer"
        } else {
            ""
        };
        format!(
            "{who}: {} (the signature holds and signs this {MANIFEST_FILE}{listed})",
            record.status.word()
        )
    } else {
        format!(
            "{who}: {}: {}",
            record.status.word(),
            record.problems.join("; ")
        )
    }
}
