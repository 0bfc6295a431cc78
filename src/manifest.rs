//! The manifest that binds a dossier to its data, settings, results and rendered files. Canonical
//! JSON and the result digest are in [`crate::digest`].

use crate::data::fingerprint::{sha256_text, ContentIndex};
use crate::finding::Analysed;
use crate::finding::{settings_sha256, settings_value, ToolInfo};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// Version of the `manifest.json` layout.
pub const MANIFEST_SCHEMA: &str = "forebear.manifest/1";

/// File name of the manifest inside a dossier folder.
pub const MANIFEST_FILE: &str = "manifest.json";

/// Everything a reviewer needs to check a dossier: which build and method made it, from which
/// bytes and content, under which settings, with which results, and the hash of every file.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct Manifest {
    /// Layout version.
    pub schema: String,
    /// The build that wrote the dossier, with its method version.
    pub tool: ToolInfo,
    /// The analysed file.
    pub data: ManifestData,
    /// The validated settings.
    pub settings: ManifestSettings,
    /// The result digests.
    pub results: ManifestResults,
    /// SHA-256 of every other file of the dossier, by file name.
    pub files: BTreeMap<String, String>,
    /// The command lines.
    pub command: ManifestCommand,
    /// Document control (title, identifier, purpose, version, prepared by), absent when none was
    /// given; a copy of `result.json`'s `run.document`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub document: Option<crate::settings::DocumentControl>,
    /// When the dossier was generated (UTC, RFC 3339).
    pub generated_utc: String,
    /// Who generated it (`--operator`, else the login name); empty in manifests written before
    /// the operator was recorded.
    #[serde(default)]
    pub operator: String,
    /// SHA-256 of the canonical JSON of this manifest without the seal: an edit of the manifest
    /// that does not recompute it is detected.
    pub seal: String,
}

/// The analysed file.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct ManifestData {
    /// File name (without folders).
    pub file: String,
    /// Size in bytes.
    pub size_bytes: u64,
    /// SHA-256 of the bytes.
    pub sha256: String,
    /// The content fingerprint and the index that locates a difference.
    pub content: ContentIndex,
}

/// The settings as they are hashed.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct ManifestSettings {
    /// `{"reader": …, "study": …}`: the reader options and the validated study settings.
    pub canonical: serde_json::Value,
    /// SHA-256 of the canonical JSON text of `canonical`.
    pub sha256: String,
    /// The study file the settings were read from (`analyze --config`), with the SHA-256 of its
    /// bytes; flags typed beside it are in the command line.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub study_file: Option<crate::settings::StudyFileRecord>,
    /// SHA-256 of the canonical JSON of the stated knowledge (also inside `canonical`), absent
    /// when none was stated.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub knowledge_sha256: Option<String>,
}

/// The result digests.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct ManifestResults {
    /// The digest of `result.json`'s findings.
    pub digest: String,
    /// The digest of every replicate record, by replicate index.
    pub replicates: Vec<String>,
}

/// How the dossier was made and how to make it again.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct ManifestCommand {
    /// The command line as it was typed.
    pub original: Vec<String>,
    /// A command that reproduces the dossier into the folder `rerun`.
    pub reproduce: String,
}

/// SHA-256 of the canonical JSON of stated knowledge.
pub fn knowledge_sha256(knowledge: &crate::search::knowledge::Knowledge) -> String {
    sha256_text(&crate::digest::canonical_json(knowledge))
}

impl Manifest {
    /// The manifest of a dossier whose other files are `files` (name, contents).
    pub fn new(analysed: &Analysed, files: &[(&str, String)]) -> Manifest {
        let finding = &analysed.finding;
        let mut manifest = Manifest {
            schema: MANIFEST_SCHEMA.into(),
            tool: finding.tool.clone(),
            data: ManifestData {
                file: finding.data.file.clone(),
                size_bytes: finding.data.size_bytes,
                sha256: finding.data.sha256.clone(),
                content: analysed.content.clone(),
            },
            settings: ManifestSettings {
                canonical: settings_value(finding),
                sha256: settings_sha256(finding),
                study_file: finding.run.study_file.clone(),
                knowledge_sha256: finding.settings.knowledge.as_ref().map(knowledge_sha256),
            },
            results: ManifestResults {
                digest: finding.digest.clone(),
                replicates: finding
                    .stability
                    .as_ref()
                    .map(|s| s.replicate_digests.clone())
                    .unwrap_or_default(),
            },
            files: files
                .iter()
                .map(|(name, text)| (name.to_string(), sha256_text(text)))
                .collect(),
            command: ManifestCommand {
                original: finding.run.command_line.clone(),
                reproduce: crate::reproduce::reproduce_command(finding),
            },
            document: finding.run.document.clone(),
            generated_utc: crate::timefmt::now_rfc3339(),
            operator: finding.run.operator.clone(),
            seal: String::new(),
        };
        manifest.seal = manifest.computed_seal();
        manifest
    }

    /// The seal this manifest should carry.
    pub fn computed_seal(&self) -> String {
        let mut tree = serde_json::to_value(self).expect("a manifest is plain data");
        crate::digest::remove_pointer(&mut tree, "/seal");
        sha256_text(&serde_json::to_string(&tree).expect("a JSON value always serialises"))
    }

    /// The manifest's text as written.
    pub fn to_text(&self) -> String {
        serde_json::to_string_pretty(self).expect("a manifest is plain data") + "\n"
    }
}

/// One place where two JSON trees differ.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, PartialEq)]
pub struct Difference {
    /// JSON pointer (RFC 6901) of the differing value.
    pub pointer: String,
    /// The recorded value, compact JSON (shortened), or `absent`.
    pub recorded: String,
    /// The recomputed value, likewise.
    pub recomputed: String,
}

impl std::fmt::Display for Difference {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "{}: recorded {}, re-run {}",
            self.pointer, self.recorded, self.recomputed
        )
    }
}

/// The differences between a recorded and a recomputed tree, in document order, at most `limit`.
/// Object keys are visited in `order` first (the layout's own order, for the top level), then
/// alphabetically; pointers in `ignore` are skipped.
pub fn differences(
    recorded: &serde_json::Value,
    recomputed: &serde_json::Value,
    order: &[&str],
    ignore: &[&str],
    limit: usize,
) -> Vec<Difference> {
    let mut found = Vec::new();
    walk(recorded, recomputed, "", order, ignore, limit, &mut found);
    found
}

fn walk(
    a: &serde_json::Value,
    b: &serde_json::Value,
    pointer: &str,
    order: &[&str],
    ignore: &[&str],
    limit: usize,
    found: &mut Vec<Difference>,
) {
    use serde_json::Value;
    if found.len() >= limit || ignore.contains(&pointer) || a == b {
        return;
    }
    let child = |key: &str| format!("{pointer}/{}", key.replace('~', "~0").replace('/', "~1"));
    match (a, b) {
        (Value::Object(x), Value::Object(y)) => {
            let mut keys: Vec<&String> = x.keys().chain(y.keys()).collect();
            keys.sort_by_key(|k| (order.iter().position(|o| o == k).unwrap_or(order.len()), *k));
            keys.dedup();
            for key in keys {
                match (x.get(key), y.get(key)) {
                    (Some(p), Some(q)) => walk(p, q, &child(key), &[], ignore, limit, found),
                    (p, q) => push(found, child(key), p, q, ignore, limit),
                }
            }
        }
        (Value::Array(x), Value::Array(y)) if short_scalar_lists(x, y) => {
            push(found, pointer.to_string(), Some(a), Some(b), ignore, limit)
        }
        (Value::Array(x), Value::Array(y)) => {
            for (i, (p, q)) in x.iter().zip(y).enumerate() {
                walk(p, q, &child(&i.to_string()), &[], ignore, limit, found);
            }
            if x.len() != y.len() {
                push(
                    found,
                    format!("{pointer}/length"),
                    Some(&x.len().into()),
                    Some(&y.len().into()),
                    ignore,
                    limit,
                );
            }
        }
        _ => push(found, pointer.to_string(), Some(a), Some(b), ignore, limit),
    }
}

/// Lists of names or numbers short enough to show whole: "[a, b, c] versus [a, b]" says more
/// than "element 2 is absent".
fn short_scalar_lists(x: &[serde_json::Value], y: &[serde_json::Value]) -> bool {
    let scalar = |v: &serde_json::Value| !(v.is_array() || v.is_object());
    x.len().max(y.len()) <= 8 && x.iter().chain(y).all(scalar)
}

fn push(
    found: &mut Vec<Difference>,
    pointer: String,
    a: Option<&serde_json::Value>,
    b: Option<&serde_json::Value>,
    ignore: &[&str],
    limit: usize,
) {
    if found.len() < limit && !ignore.contains(&pointer.as_str()) {
        found.push(Difference {
            pointer,
            recorded: shown(a),
            recomputed: shown(b),
        });
    }
}

fn shown(value: Option<&serde_json::Value>) -> String {
    const LIMIT: usize = 80;
    let Some(value) = value else {
        return "absent".into();
    };
    let text = serde_json::to_string(value).expect("a JSON value always serialises");
    if text.chars().count() > LIMIT {
        format!("{}…", text.chars().take(LIMIT).collect::<String>())
    } else {
        text
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn differences_name_the_first_differing_pointer_in_layout_order() {
        let recorded = json!({"a": 1, "z": {"k": [[1], [2], [3]], "m": [1, 2]}, "run": 5});
        let recomputed = json!({"a": 2, "z": {"k": [[1], [9]], "m": [1]}, "run": 6});
        let found = differences(&recorded, &recomputed, &["z", "a"], &["/run"], 10);
        let pointers: Vec<&str> = found.iter().map(|d| d.pointer.as_str()).collect();
        assert_eq!(pointers, vec!["/z/k/1", "/z/k/length", "/z/m", "/a"]);
        assert_eq!(found[0].to_string(), "/z/k/1: recorded [2], re-run [9]");
        assert_eq!(found[2].to_string(), "/z/m: recorded [1,2], re-run [1]");
        assert_eq!(differences(&recorded, &recomputed, &[], &[], 1).len(), 1);
    }

    #[test]
    fn pointer_keys_are_escaped_as_rfc_6901_says() {
        // RFC 6901, section 3: '~' is written '~0' and '/' is written '~1'.
        let found = differences(&json!({"a/b~": 1}), &json!({"a/b~": 2}), &[], &[], 5);
        assert_eq!(found[0].pointer, "/a~1b~0");
    }
}
