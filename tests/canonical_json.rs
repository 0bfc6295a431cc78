//! forebear's canonical JSON and result digest against an independent implementation of RFC 8785
//! (JSON Canonicalization Scheme): the `rfc8785` Python package, run by the committed script
//! `tests/reference/make_jcs_fixtures.py` over the committed inputs in `tests/reference/jcs/`
//! (hand-picked values, among them the number samples of RFC 8785 section 3.2.2, and the
//! `result.json` files of six small analyses). This test never runs Python.

use forebear::data::fingerprint::sha256_text;
use forebear::digest::{canonical_text, digest, DIGEST_EXCLUSIONS};
use serde_json::Value;
use std::path::Path;

fn fixtures() -> Value {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/reference/jcs_rfc8785.json");
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

fn input(entry: &Value) -> Value {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/reference")
        .join(entry["file"].as_str().unwrap());
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

#[test]
fn canonical_text_equals_an_independent_rfc_8785_implementation() {
    let fixtures = fixtures();
    let entries = fixtures["entries"].as_array().unwrap();
    assert_eq!(entries.len(), 7, "cases.json and six result files");
    for entry in entries {
        let text = canonical_text(&input(entry));
        if let Some(expected) = entry["canonical"].as_str() {
            assert_eq!(text, expected, "{}", entry["file"]);
        }
        assert_eq!(
            sha256_text(&text),
            entry["canonical_sha256"].as_str().unwrap(),
            "{}",
            entry["file"]
        );
    }
}

#[test]
fn result_digest_is_recomputed_by_an_independent_rfc_8785_implementation() {
    let fixtures = fixtures();
    let exclusions: Vec<&str> = fixtures["exclusions"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| p.as_str().unwrap())
        .collect();
    assert_eq!(
        exclusions, DIGEST_EXCLUSIONS,
        "the script excludes what forebear excludes"
    );
    let mut results = 0;
    for entry in fixtures["entries"].as_array().unwrap() {
        let Some(independent) = entry["digest"].as_str() else {
            continue;
        };
        let result = input(entry);
        let recorded = result["digest"].as_str().unwrap();
        assert_eq!(recorded, independent, "{}: recorded digest", entry["file"]);
        assert_eq!(
            digest(&result),
            independent,
            "{}: forebear's digest",
            entry["file"]
        );
        results += 1;
    }
    assert_eq!(results, 6);
}
