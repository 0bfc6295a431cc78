//! The signing key: an Ed25519 private key in the OpenSSH format (`ssh-keygen -t ed25519`),
//! opened with a passphrase read from a file when it is protected. The passphrase is never asked
//! for on a terminal and never printed.

use crate::error::{Error, Result};
use ssh_key::{Algorithm, PrivateKey};
use std::path::Path;

/// Reads the private key at `path`; refuses (exit code 2) a file that cannot be read, anything
/// but an OpenSSH private key, a key of another type, and a protected key without a passphrase
/// file or with a passphrase that does not open it.
pub fn read_signing_key(path: &Path, passphrase_file: Option<&Path>) -> Result<PrivateKey> {
    let shown = path.display();
    let text = std::fs::read_to_string(path).map_err(|e| {
        Error::input(format!(
            "the key file '{shown}' cannot be read ({e}); give --key the private key file that \
             `ssh-keygen -t ed25519` wrote"
        ))
    })?;
    let key = PrivateKey::from_openssh(text.trim()).map_err(|e| {
        let hint = if text.starts_with("ssh-") {
            "it holds a public key; give the private key file (the one without .pub)".to_string()
        } else {
            format!("it is not a private key in the OpenSSH format ({e})")
        };
        Error::input(format!(
            "'{shown}' cannot be used as a signing key: {hint}; make one with `ssh-keygen -t \
             ed25519`"
        ))
    })?;
    if key.algorithm() != Algorithm::Ed25519 {
        return Err(Error::input(format!(
            "the key '{shown}' is a {} key; forebear signs only with Ed25519 keys: make one with \
             `ssh-keygen -t ed25519`",
            key.algorithm()
        )));
    }
    if !key.is_encrypted() {
        return Ok(key);
    }
    let Some(passphrase_file) = passphrase_file else {
        return Err(Error::input(format!(
            "the key '{shown}' is protected by a passphrase; write the passphrase into a file \
             only you can read and give it with --passphrase-file FILE (forebear does not ask \
             for it on the terminal)"
        )));
    };
    let passphrase = read_passphrase(passphrase_file)?;
    key.decrypt(passphrase.as_bytes()).map_err(|_| {
        Error::input(format!(
            "the passphrase in '{}' does not open the key '{shown}'",
            passphrase_file.display()
        ))
    })
}

/// The passphrase: the file's first line, without its line ending.
fn read_passphrase(path: &Path) -> Result<zeroize::Zeroizing<String>> {
    let text = zeroize::Zeroizing::new(std::fs::read_to_string(path).map_err(|e| {
        Error::input(format!(
            "the passphrase file '{}' cannot be read ({e})",
            path.display()
        ))
    })?);
    let first = text.lines().next().unwrap_or_default();
    Ok(zeroize::Zeroizing::new(first.to_string()))
}

/// Checks a signer's name, which is also the principal of an allowed-signers line: not empty, no
/// space at either end, no character that hides or reorders text, no `"` (a quoted principal
/// cannot hold one) and no `,` (it separates principals).
pub fn check_signer_name(name: &str, from: &str) -> Result<()> {
    let refuse = |why: &str| {
        Err(Error::input(format!(
            "the signer name {} ({from}) {why}; give a printed name with --signer, for example \
             --signer 'Dana Analyst'",
            crate::text::quoted(name)
        )))
    };
    if name.trim().is_empty() {
        return refuse("is empty");
    }
    if name.trim() != name {
        return refuse("begins or ends with a space");
    }
    if name.chars().count() > 200 {
        return refuse("is longer than 200 characters");
    }
    if name
        .chars()
        .any(|c| crate::text::hidden_character(c).is_some())
    {
        return refuse("holds a control or invisible character");
    }
    if name.contains(['"', ',']) {
        return refuse(
            "holds a double quote or a comma, which an allowed-signers file cannot list",
        );
    }
    Ok(())
}
