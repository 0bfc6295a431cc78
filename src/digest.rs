//! Canonical JSON and the result digest: a leaf module (no other module of the crate is used here),
//! so that every part of the crate can digest what it holds without depending on the manifest.
//!
//! Canonical JSON is the JSON Canonicalization Scheme of RFC 8785 (serialised by the `serde_jcs`
//! crate): object members sorted by the UTF-16 code units of their names, no insignificant
//! whitespace, strings escaped as RFC 8785 section 3.2.2.2 says, and every number written as
//! ECMAScript writes an IEEE 754 double (section 3.2.2.3: `1` not `1.0`, `0` for `-0`, `1e-7`).
//! Anyone can therefore recompute a digest with any RFC 8785 implementation (docs/digest.md shows
//! how); integers are kept within 2^53 - 1 so that the double is the integer.
//!
//! The result digest covers everything in `result.json` except run metadata: the `run` object, the
//! `digest` itself; the data file's name, byte hash and size (`data.file`, `data.sha256`,
//! `data.size_bytes`), and its format and sheet when it is not CSV (`data.format`, `data.sheet`),
//! so that a Parquet, SAS transport or workbook file gives the digest of its CSV twin, and so that the same content analysed under another name or path, or re-saved
//! with other line endings or quoting, gives the same digest (the content hash
//! `data.content_sha256` is part of it, and the manifest binds the exact bytes); and the crate version and build commit
//! (`tool.version`, `tool.build`), so that every build of one method version gives one digest; the
//! method version (`tool.method`) is part of it.

use serde::Serialize;
use sha2::{Digest, Sha256};

/// JSON pointers excluded from the result digest.
pub const DIGEST_EXCLUSIONS: [&str; 9] = [
    "/run",
    "/digest",
    "/data/file",
    "/data/sha256",
    "/data/size_bytes",
    "/data/format",
    "/data/sheet",
    "/tool/version",
    "/tool/build",
];

/// Largest integer written exactly as an IEEE 754 double (2^53 - 1; RFC 7493, section 2.2).
pub const MAX_EXACT_INTEGER: u64 = (1 << 53) - 1;

/// The canonical JSON text (RFC 8785) of a value.
pub fn canonical_json<T: Serialize>(value: &T) -> String {
    let tree = serde_json::to_value(value).expect("findings are plain data");
    canonical_text(&tree)
}

/// The canonical JSON text (RFC 8785) of a JSON tree.
pub fn canonical_text(tree: &serde_json::Value) -> String {
    // Every integer forebear writes is a count, an index or a seed checked against 2^53 - 1; one
    // beyond it would be rounded to a double and two values could share a text.
    if let Some(n) = inexact_integer(tree) {
        panic!("internal error: the integer {n} cannot be written exactly in canonical JSON");
    }
    serde_jcs::to_string(tree).expect("a JSON tree without non-finite numbers always serialises")
}

/// SHA-256 (hex) of the canonical JSON of a finding, run metadata excluded.
pub fn digest<T: Serialize>(finding: &T) -> String {
    let mut tree = serde_json::to_value(finding).expect("findings are plain data");
    for pointer in DIGEST_EXCLUSIONS {
        remove_pointer(&mut tree, pointer);
    }
    hex(&Sha256::digest(canonical_text(&tree).as_bytes()))
}

/// The first integer of a tree that no IEEE 754 double holds exactly, if any.
fn inexact_integer(tree: &serde_json::Value) -> Option<serde_json::Number> {
    use serde_json::Value;
    match tree {
        Value::Number(n) => {
            let exact = match (n.as_u64(), n.as_i64()) {
                (Some(u), _) => u <= MAX_EXACT_INTEGER,
                (None, Some(i)) => i.unsigned_abs() <= MAX_EXACT_INTEGER,
                (None, None) => true,
            };
            (!exact).then(|| n.clone())
        }
        Value::Array(items) => items.iter().find_map(inexact_integer),
        Value::Object(map) => map.values().find_map(inexact_integer),
        _ => None,
    }
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

    /// RFC 8785, section 3.2.2.3 and appendix B: numbers as ECMAScript writes doubles.
    #[test]
    // RFC 8785's own sample is written with more digits than a double holds.
    #[allow(clippy::excessive_precision)]
    fn canonical_json_writes_numbers_as_rfc_8785_section_3_2_2_3_says() {
        let value = json!([
            1.0,
            -0.0,
            1e-7,
            0.000001,
            1e21,
            1e20,
            333333333.33333329,
            4.5,
            2e-3
        ]);
        assert_eq!(
            canonical_json(&value),
            "[1,0,1e-7,0.000001,1e+21,100000000000000000000,333333333.3333333,4.5,0.002]"
        );
    }

    /// RFC 8785, section 3.2.3: members sorted by UTF-16 code units, so a name outside the Basic
    /// Multilingual Plane (a surrogate pair, 0xD8xx) sorts before U+FB33 (its UTF-8 sorts after).
    #[test]
    fn canonical_json_sorts_names_by_utf16_code_units() {
        let value = json!({"\u{FB33}": 1, "\u{1F600}": 2, "a": 3});
        assert_eq!(
            canonical_json(&value),
            "{\"a\":3,\"\u{1F600}\":2,\"\u{FB33}\":1}"
        );
    }

    #[test]
    #[should_panic(expected = "cannot be written exactly")]
    fn canonical_json_refuses_an_integer_beyond_two_to_the_53() {
        canonical_json(&json!({"seed": MAX_EXACT_INTEGER + 2}));
    }

    #[test]
    fn canonical_json_keeps_integers_up_to_two_to_the_53_exactly() {
        assert_eq!(
            canonical_json(&json!([MAX_EXACT_INTEGER, -(MAX_EXACT_INTEGER as i64)])),
            "[9007199254740991,-9007199254740991]"
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
