//! Allowed-signers files in the OpenSSH format (ssh-keygen(1), section ALLOWED SIGNERS), so that
//! one file serves `forebear verify --signers` and `ssh-keygen -Y verify -f`:
//!
//! ```text
//! # comment
//! principals [options] key-type base64-key [comment]
//! ```
//!
//! `principals` is a comma-separated pattern list (`*`, `?`, a leading `!` negates; ssh_config(5),
//! PATTERNS), matched case-sensitively against a statement's signer name: the signer name *is* the
//! principal. A name with spaces is written in double quotes (`"Dana Analyst" ssh-ed25519 …`), as
//! ssh-keygen reads the field. Options: `namespaces="…"` (a pattern list that must match
//! `forebear-dossier`) and `cert-authority` (the line then vouches for certificates only, so for
//! no plain key a forebear signature carries). `valid-after` and `valid-before` are refused: their
//! local-time stamps need a time-zone database forebear does not carry; check such files with
//! `ssh-keygen -Y verify`.

use crate::error::{Error, Result};
use ssh_key::public::KeyData;
use ssh_key::PublicKey;
use std::path::Path;

/// One line of an allowed-signers file.
#[derive(Clone, Debug)]
pub struct AllowedSigner {
    /// The 1-based line number.
    pub line: usize,
    /// The principal patterns.
    pub principals: Vec<String>,
    /// The namespace patterns, if the line limits them.
    pub namespaces: Option<Vec<String>>,
    /// The key vouches for certificates it signed, not for itself.
    pub cert_authority: bool,
    /// The key.
    pub key: KeyData,
}

/// What an allowed-signers file says of a signer and a key.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Authorization {
    /// A line lists the key for the signer (in the `forebear-dossier` namespace).
    Allowed,
    /// Lines list the key, but not for this signer (or not for this namespace): the principal
    /// fields of those lines.
    OtherPrincipal(Vec<String>),
    /// No line lists the key.
    NotListed,
}

/// The lines of an allowed-signers file.
#[derive(Clone, Debug)]
pub struct AllowedSigners {
    /// The lines that name a key.
    pub entries: Vec<AllowedSigner>,
}

impl AllowedSigners {
    /// Reads the file at `path`; a problem is an input error (exit code 2) naming file and line.
    pub fn read(path: &Path) -> Result<AllowedSigners> {
        let text = std::fs::read_to_string(path).map_err(|e| {
            Error::input(format!(
                "the allowed-signers file '{}' cannot be read ({e}); give --signers a file of \
                 lines 'principal key-type base64-key', as ssh-keygen -Y verify reads",
                path.display()
            ))
        })?;
        AllowedSigners::parse(&text).map_err(|(line, why)| {
            Error::input(format!(
                "{}, line {line}: {why}; each line is 'principals [options] key-type base64-key \
                 [comment]' (ssh-keygen(1), ALLOWED SIGNERS)",
                path.display()
            ))
        })
    }

    /// Parses the text of a file; an error is (line number, what is wrong).
    pub fn parse(text: &str) -> std::result::Result<AllowedSigners, (usize, String)> {
        let mut entries = Vec::new();
        for (index, raw) in text.lines().enumerate() {
            let line = raw.trim_start_matches([' ', '\t']);
            if line.trim().is_empty() || line.starts_with('#') {
                continue;
            }
            entries.push(parse_line(index + 1, line).map_err(|why| (index + 1, why))?);
        }
        Ok(AllowedSigners { entries })
    }

    /// Whether the file allows `key` to sign for `signer` in `namespace`.
    pub fn authorizes(&self, signer: &str, key: &KeyData, namespace: &str) -> Authorization {
        let mut others = Vec::new();
        for entry in self.entries.iter().filter(|e| &e.key == key) {
            let in_namespace = entry
                .namespaces
                .as_ref()
                .is_none_or(|patterns| pattern_list_matches(namespace, patterns));
            if !entry.cert_authority
                && in_namespace
                && pattern_list_matches(signer, &entry.principals)
            {
                return Authorization::Allowed;
            }
            let mut described = entry.principals.join(",");
            if entry.cert_authority {
                described.push_str(" (cert-authority)");
            } else if !in_namespace {
                described.push_str(" (other namespaces)");
            }
            others.push(format!("line {}: {described}", entry.line));
        }
        if others.is_empty() {
            Authorization::NotListed
        } else {
            Authorization::OtherPrincipal(others)
        }
    }
}

fn parse_line(number: usize, line: &str) -> std::result::Result<AllowedSigner, String> {
    let (principals, rest) = first_field(line, false)?;
    let principals: Vec<String> = principals.split(',').map(str::to_string).collect();
    if principals.iter().any(String::is_empty) {
        return Err("an empty principal in the principals field".into());
    }
    let rest = rest.trim_start_matches([' ', '\t']);
    if rest.is_empty() {
        return Err("a principal without a key".into());
    }
    // The options field is present when the field after the principals is no key type.
    let (field, after) = first_field(rest, true)?;
    let (options, key_text) = if is_key_type(&field) {
        (Options::default(), rest)
    } else {
        (
            parse_options(&field)?,
            after.trim_start_matches([' ', '\t']),
        )
    };
    let key = PublicKey::from_openssh(key_text).map_err(|e| {
        format!(
            "no public key after the principals and options: '{}' is not 'key-type base64-key' \
             ({e})",
            crate::text::capped(&crate::text::escaped(key_text), 60)
        )
    })?;
    Ok(AllowedSigner {
        line: number,
        principals,
        namespaces: options.namespaces,
        cert_authority: options.cert_authority,
        key: key.key_data().clone(),
    })
}

/// Whether `field` names a key type (`ssh-ed25519`, `ecdsa-sha2-nistp256`, `sk-ssh-…`).
fn is_key_type(field: &str) -> bool {
    ["ssh-", "ecdsa-", "sk-"]
        .iter()
        .any(|prefix| field.starts_with(prefix))
}

#[derive(Default)]
struct Options {
    namespaces: Option<Vec<String>>,
    cert_authority: bool,
}

/// The options field: comma-separated, a value in double quotes may hold commas and spaces.
fn parse_options(field: &str) -> std::result::Result<Options, String> {
    let mut options = Options::default();
    for option in split_outside_quotes(field, ',') {
        let (name, value) = match option.split_once('=') {
            Some((name, value)) => (name, Some(value)),
            None => (option.as_str(), None),
        };
        let name = name.to_ascii_lowercase();
        match (name.as_str(), value) {
            ("cert-authority", None) => options.cert_authority = true,
            ("namespaces", Some(value)) => {
                let value = unquote(value)
                    .ok_or_else(|| format!("namespaces={value} is not in double quotes"))?;
                options.namespaces = Some(value.split(',').map(str::to_string).collect());
            }
            ("valid-after" | "valid-before", _) => {
                return Err(format!(
                    "forebear does not read the option {name} (its local-time stamp needs a \
                     time-zone database); remove it, or check this file with ssh-keygen -Y verify"
                ))
            }
            _ => {
                return Err(format!(
                    "unknown option '{}' (known: cert-authority, namespaces=\"…\")",
                    crate::text::capped(&crate::text::escaped(&option), 60)
                ))
            }
        }
    }
    Ok(options)
}

/// The first field of `text`, up to a space or tab outside double quotes, and the rest. The
/// principals field loses its quotes (`"Dana Analyst"` is the principal `Dana Analyst`); the
/// options field keeps them for the values' reader.
fn first_field(text: &str, keep_quotes: bool) -> std::result::Result<(String, &str), String> {
    let mut field = String::new();
    let mut quoted = false;
    for (at, c) in text.char_indices() {
        if c == '"' {
            quoted = !quoted;
            if keep_quotes {
                field.push(c);
            }
        } else if (c == ' ' || c == '\t') && !quoted {
            return Ok((field, &text[at..]));
        } else {
            field.push(c);
        }
    }
    if quoted {
        return Err("a double quote that is not closed".into());
    }
    Ok((field, ""))
}

fn split_outside_quotes(text: &str, separator: char) -> Vec<String> {
    let mut parts = vec![String::new()];
    let mut quoted = false;
    for c in text.chars() {
        if c == '"' {
            quoted = !quoted;
        }
        if c == separator && !quoted {
            parts.push(String::new());
        } else if let Some(last) = parts.last_mut() {
            last.push(c);
        }
    }
    parts
}

fn unquote(value: &str) -> Option<&str> {
    value.strip_prefix('"')?.strip_suffix('"')
}

/// ssh's `match_pattern_list`: a name matches when some pattern matches it and no negated
/// (`!`) pattern does.
pub fn pattern_list_matches(name: &str, patterns: &[String]) -> bool {
    let mut matched = false;
    for pattern in patterns {
        match pattern.strip_prefix('!') {
            Some(negated) if wildcard_matches(negated, name) => return false,
            Some(_) => {}
            None => matched |= wildcard_matches(pattern, name),
        }
    }
    matched
}

/// `*` matches any run of characters, `?` any one character, everything else itself.
fn wildcard_matches(pattern: &str, name: &str) -> bool {
    let pattern: Vec<char> = pattern.chars().collect();
    let name: Vec<char> = name.chars().collect();
    // reachable[j]: the pattern read so far matches name[..j].
    let mut reachable = vec![false; name.len() + 1];
    reachable[0] = true;
    for &p in &pattern {
        let mut next = vec![false; name.len() + 1];
        for j in 0..=name.len() {
            if !reachable[j] {
                continue;
            }
            match p {
                '*' => next[j..].iter_mut().for_each(|r| *r = true),
                '?' if j < name.len() => next[j + 1] = true,
                c if j < name.len() && name[j] == c => next[j + 1] = true,
                _ => {}
            }
        }
        reachable = next;
    }
    reachable[name.len()]
}

#[cfg(test)]
mod tests {
    use super::*;
    use ssh_key::private::{Ed25519Keypair, KeypairData};
    use ssh_key::PrivateKey;

    const NS: &str = "forebear-dossier";

    /// The public key `ssh-ed25519 AAAA…` of a key made from a fixed seed.
    fn key(seed: u8) -> (String, KeyData) {
        let pair = Ed25519Keypair::from_seed(&[seed; 32]);
        let private = PrivateKey::new(KeypairData::Ed25519(pair), "").unwrap();
        let public = private.public_key().clone();
        (public.to_openssh().unwrap(), public.key_data().clone())
    }

    #[test]
    fn lines_with_quoted_principals_options_comments_and_blank_lines_are_read() {
        let (a, a_data) = key(1);
        let (b, b_data) = key(2);
        let text = format!(
            "# reviewers\n\n  \"Dana Analyst\",lab-*,!lab-guest {a} dana's laptop\n\
             \tqa@example.org namespaces=\"forebear-dossier,file\" {b}\n"
        );
        let signers = AllowedSigners::parse(&text).unwrap();
        assert_eq!(signers.entries.len(), 2);
        assert_eq!(signers.entries[0].line, 3);
        assert_eq!(
            signers.entries[0].principals,
            ["Dana Analyst", "lab-*", "!lab-guest"]
        );
        assert_eq!(signers.entries[1].line, 4);
        assert_eq!(
            signers.entries[1].namespaces.as_deref(),
            Some(&["forebear-dossier".to_string(), "file".to_string()][..])
        );
        let allowed = |name: &str, key: &KeyData| signers.authorizes(name, key, NS);
        assert_eq!(allowed("Dana Analyst", &a_data), Authorization::Allowed);
        assert_eq!(allowed("lab-7", &a_data), Authorization::Allowed);
        assert!(matches!(
            allowed("lab-guest", &a_data),
            Authorization::OtherPrincipal(_)
        ));
        assert!(matches!(
            allowed("dana analyst", &a_data),
            Authorization::OtherPrincipal(_)
        ));
        assert_eq!(allowed("qa@example.org", &b_data), Authorization::Allowed);
        assert_eq!(
            allowed("qa@example.org", &key(3).1),
            Authorization::NotListed
        );
        // A namespace limit that leaves ours out does not allow the key.
        let other_ns = AllowedSigners::parse(&format!("qa namespaces=\"git\" {b}\n")).unwrap();
        assert_eq!(
            other_ns.authorizes("qa", &b_data, NS),
            Authorization::OtherPrincipal(vec!["line 1: qa (other namespaces)".into()])
        );
        let authority = AllowedSigners::parse(&format!("qa cert-authority {b}\n")).unwrap();
        assert!(matches!(
            authority.authorizes("qa", &b_data, NS),
            Authorization::OtherPrincipal(_)
        ));
    }

    #[test]
    fn bad_lines_are_refused_with_their_number() {
        let (a, _) = key(1);
        for (text, line, needle) in [
            ("# ok\nqa\n".to_string(), 2, "a principal without a key"),
            (format!("\"qa {a}\n"), 1, "not closed"),
            (format!("qa,,qb {a}\n"), 1, "empty principal"),
            (
                "\n\nqa ssh-ed25519 AAAAnotbase64\n".to_string(),
                3,
                "no public key",
            ),
            (
                format!("qa valid-before=\"20300101\" {a}\n"),
                1,
                "valid-before",
            ),
            (format!("qa no-touch-required {a}\n"), 1, "unknown option"),
            (format!("qa namespaces=git {a}\n"), 1, "double quotes"),
        ] {
            let (at, why) = AllowedSigners::parse(&text).unwrap_err();
            assert_eq!(at, line, "{text}: {why}");
            assert!(why.contains(needle), "{text}: {why}");
        }
    }

    #[test]
    fn patterns_follow_ssh_wildcards_and_negation() {
        let list = |p: &[&str]| p.iter().map(|s| s.to_string()).collect::<Vec<_>>();
        assert!(pattern_list_matches("abc", &list(&["a*"])));
        assert!(pattern_list_matches("abc", &list(&["a?c"])));
        assert!(!pattern_list_matches("abbc", &list(&["a?c"])));
        assert!(pattern_list_matches("", &list(&["*"])));
        assert!(!pattern_list_matches("abc", &list(&["*", "!a*"])));
        assert!(!pattern_list_matches("abc", &list(&["!x"])));
        assert!(pattern_list_matches("a*c", &list(&["a\\*c", "a*c"])));
    }
}
