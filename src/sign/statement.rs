//! The signature statement: what a signer declares about one dossier, and the names of the files
//! that hold it in `signatures/`.
//!
//! 21 CFR 11.50 asks that a signed electronic record show the printed name of the signer, the date
//! and time of signing, and the meaning of the signature; 11.70 asks that the signature be linked
//! to its record so that it cannot be copied to another. The statement holds the first three; it
//! names the dossier by the SHA-256 of `manifest.json`, whose seal and file hashes bind every other
//! file, and the detached signature binds the statement to the key.

use serde::{Deserialize, Serialize};

/// Version of the statement layout.
pub const STATEMENT_SCHEMA: &str = "forebear.signature/1";

/// What a signature means. Our own wording; an organisation's procedures say which meanings
/// a document needs.
#[derive(
    Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, clap::ValueEnum, schemars::JsonSchema,
)]
#[serde(rename_all = "snake_case")]
pub enum Meaning {
    /// The signer made the dossier.
    Prepared,
    /// The signer checked the dossier.
    Reviewed,
    /// The signer approves the dossier for its purpose.
    Approved,
}

impl Meaning {
    /// Every meaning, in the order of a document's life.
    pub const ALL: [Meaning; 3] = [Meaning::Prepared, Meaning::Reviewed, Meaning::Approved];

    /// The word in file names and on the command line.
    pub fn word(self) -> &'static str {
        match self {
            Meaning::Prepared => "prepared",
            Meaning::Reviewed => "reviewed",
            Meaning::Approved => "approved",
        }
    }

    /// The meaning in plain language, as the signer declares it.
    pub fn declaration(self) -> &'static str {
        match self {
            Meaning::Prepared => "I prepared this dossier",
            Meaning::Reviewed => "I reviewed this dossier",
            Meaning::Approved => "I approve this dossier",
        }
    }

    /// The meaning whose word is `word`.
    pub fn from_word(word: &str) -> Option<Meaning> {
        Meaning::ALL.into_iter().find(|m| m.word() == word)
    }
}

/// One signer's statement about one dossier (`signatures/<n>-<meaning>.json`).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct Statement {
    /// Layout version ([`STATEMENT_SCHEMA`]).
    pub schema: String,
    /// The signer's printed name; also the principal an allowed-signers file must list.
    pub signer: String,
    /// What the signature means.
    pub meaning: Meaning,
    /// The meaning in plain language (`prepared: I prepared this dossier`).
    pub declaration: String,
    /// When it was signed (UTC, RFC 3339).
    pub signed_utc: String,
    /// The record signed.
    pub dossier: SignedDossier,
    /// The key that signed.
    pub key: SigningKeyInfo,
    /// The build that wrote the statement.
    pub tool: String,
}

/// The dossier a statement is about.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SignedDossier {
    /// SHA-256 of the bytes of `manifest.json`: the binding.
    pub manifest_sha256: String,
    /// The manifest's result digest, for a human reader.
    pub result_digest: String,
    /// The target column, for a human reader.
    pub target: String,
    /// The analysed file's name, for a human reader.
    pub data_file: String,
}

/// The public half of the signing key.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SigningKeyInfo {
    /// The key type (`ssh-ed25519`).
    pub algorithm: String,
    /// `SHA256:…`, as `ssh-keygen -l` prints it.
    pub fingerprint: String,
}

/// `meaning: declaration`, the line a signer and a reviewer read.
pub fn declaration_line(meaning: Meaning) -> String {
    format!("{}: {}", meaning.word(), meaning.declaration())
}

/// The file name of statement `number` with `meaning`.
pub fn statement_name(number: u32, meaning: Meaning) -> String {
    format!("{number}-{}.json", meaning.word())
}

/// The detached signature's file name beside a statement.
pub fn signature_name(statement: &str) -> String {
    format!("{statement}.sig")
}

/// What a name in `signatures/` is.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum EntryName {
    /// A statement `<n>-<meaning>.json`.
    Statement(u32, Meaning),
    /// A detached signature `<n>-<meaning>.json.sig`.
    Signature(u32, Meaning),
}

impl EntryName {
    /// The entry's number.
    pub fn number(&self) -> u32 {
        match self {
            EntryName::Statement(n, _) | EntryName::Signature(n, _) => *n,
        }
    }
}

/// Reads a name of `signatures/`; `None` for anything that does not belong there. The number is
/// written without leading zeros, so that one number has one name.
pub fn parse_entry_name(name: &str) -> Option<EntryName> {
    let (stem, signature) = match name.strip_suffix(".json.sig") {
        Some(stem) => (stem, true),
        None => (name.strip_suffix(".json")?, false),
    };
    let (number, meaning) = stem.split_once('-')?;
    let canonical = !number.is_empty()
        && number.bytes().all(|b| b.is_ascii_digit())
        && (number == "0" || !number.starts_with('0'));
    let number: u32 = number.parse().ok().filter(|_| canonical)?;
    let meaning = Meaning::from_word(meaning)?;
    Some(if signature {
        EntryName::Signature(number, meaning)
    } else {
        EntryName::Statement(number, meaning)
    })
}

/// The next free statement number: one above the highest number of any signature file present,
/// whatever its meaning (so numbers say in which order the signatures were made), 1 for none.
pub fn next_number<'a>(names: impl IntoIterator<Item = &'a str>) -> Option<u32> {
    let highest = names
        .into_iter()
        .filter_map(parse_entry_name)
        .map(|e| e.number())
        .max()
        .unwrap_or(0);
    highest.checked_add(1)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn signature_names_are_read_only_in_the_planned_layout() {
        assert_eq!(
            parse_entry_name("1-approved.json"),
            Some(EntryName::Statement(1, Meaning::Approved))
        );
        assert_eq!(
            parse_entry_name("12-reviewed.json.sig"),
            Some(EntryName::Signature(12, Meaning::Reviewed))
        );
        for bad in [
            "approved.json",
            "-approved.json",
            "1-.json",
            "1-approved.txt",
            "x-approved.json",
            "01-approved.json",
            "1-signed.json",
            "1-approved.json.sig.bak",
            "99999999999-approved.json",
        ] {
            assert_eq!(parse_entry_name(bad), None, "{bad}");
        }
    }

    #[test]
    fn the_next_number_follows_the_highest_of_any_meaning() {
        assert_eq!(next_number([]), Some(1));
        assert_eq!(next_number(["notes.txt"]), Some(1));
        assert_eq!(
            next_number(["1-prepared.json", "1-prepared.json.sig", "2-reviewed.json"]),
            Some(3)
        );
        // A gap is not filled: a removed signature's number is not given to another.
        assert_eq!(next_number(["3-approved.json.sig"]), Some(4));
        assert_eq!(next_number(["4294967295-approved.json"]), None);
    }

    #[test]
    fn a_statement_reads_back_and_refuses_unknown_fields() {
        let statement = Statement {
            schema: STATEMENT_SCHEMA.into(),
            signer: "Dana Analyst".into(),
            meaning: Meaning::Reviewed,
            declaration: declaration_line(Meaning::Reviewed),
            signed_utc: "2026-12-03T00:00:00Z".into(),
            dossier: SignedDossier {
                manifest_sha256: "a".repeat(64),
                result_digest: "b".repeat(64),
                target: "crush_strength".into(),
                data_file: "filter_discs.csv".into(),
            },
            key: SigningKeyInfo {
                algorithm: "ssh-ed25519".into(),
                fingerprint: "SHA256:x".into(),
            },
            tool: "forebear 0.1.0".into(),
        };
        let text = serde_json::to_string(&statement).unwrap();
        assert!(text.contains(r#""meaning":"reviewed""#), "{text}");
        assert_eq!(serde_json::from_str::<Statement>(&text).unwrap(), statement);
        let extra = text.replacen('{', r#"{"extra":1,"#, 1);
        assert!(serde_json::from_str::<Statement>(&extra).is_err());
        assert_eq!(statement.declaration, "reviewed: I reviewed this dossier");
    }
}
