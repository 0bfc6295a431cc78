//! Canonical JSON and the result digest: a leaf module (no other module of the crate is used here),
//! so that every part of the crate can digest what it holds without depending on the manifest.
//!
//! Canonical JSON: keys sorted (serde_json's map is ordered), no insignificant whitespace, numbers
//! as serde_json prints them (shortest round-trip form of each f64, which is a function of its bits).
//! The result digest covers everything in `result.json` except run metadata: the `run` object, the
//! `digest` itself; the data file's name, byte hash and size (`data.file`, `data.sha256`,
//! `data.size_bytes`), so that the same content analysed under another name or path, or re-saved
//! with other line endings or quoting, gives the same digest (the content hash
//! `data.content_sha256` is part of it, and the manifest binds the exact bytes); and the crate version and build commit
//! (`tool.version`, `tool.build`), so that every build of one method version gives one digest; the
//! method version (`tool.method`) is part of it.

use serde::Serialize;
use sha2::{Digest, Sha256};

/// JSON pointers excluded from the result digest.
pub const DIGEST_EXCLUSIONS: [&str; 7] = [
    "/run",
    "/digest",
    "/data/file",
    "/data/sha256",
    "/data/size_bytes",
    "/tool/version",
    "/tool/build",
];

/// The canonical JSON text of a value.
pub fn canonical_json<T: Serialize>(value: &T) -> String {
    let tree = serde_json::to_value(value).expect("findings are plain data");
    serde_json::to_string(&tree).expect("a JSON value always serialises")
}

/// SHA-256 (hex) of the canonical JSON of a finding, run metadata excluded.
pub fn digest<T: Serialize>(finding: &T) -> String {
    let mut tree = serde_json::to_value(finding).expect("findings are plain data");
    for pointer in DIGEST_EXCLUSIONS {
        remove_pointer(&mut tree, pointer);
    }
    let text = serde_json::to_string(&tree).expect("a JSON value always serialises");
    hex(&Sha256::digest(text.as_bytes()))
}

/// Removes the member at a JSON pointer (RFC 6901; keys here hold no `~` or `/`), if present.
pub fn remove_pointer(tree: &mut serde_json::Value, pointer: &str) {
    let (parent, key) = pointer.rsplit_once('/').expect("pointers start with '/'");
    let holder = if parent.is_empty() {
        Some(tree)
    } else {
        tree.pointer_mut(parent)
    };
    if let Some(serde_json::Value::Object(map)) = holder {
        map.remove(key);
    }
}

/// Lower-case hexadecimal of bytes.
pub fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn canonical_json_sorts_keys_at_every_depth() {
        let value = json!({"b": 1, "a": {"d": [1, 2], "c": null}});
        assert_eq!(
            canonical_json(&value),
            r#"{"a":{"c":null,"d":[1,2]},"b":1}"#
        );
    }

    #[test]
    fn digest_ignores_run_metadata_and_file_name_only() {
        let a = json!({"x": 1, "run": {"t": 1}, "digest": "a", "data": {"file": "p.csv", "sha256": "s"}});
        let b = json!({"x": 1, "run": {"t": 2}, "digest": "b", "data": {"file": "q.csv", "sha256": "s"}});
        let c = json!({"x": 2, "run": {"t": 1}, "digest": "a", "data": {"file": "p.csv", "sha256": "s"}});
        assert_eq!(digest(&a), digest(&b));
        assert_ne!(digest(&a), digest(&c));
    }
}
