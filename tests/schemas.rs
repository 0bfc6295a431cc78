//! The published JSON Schemas (`docs/schemas/`): they are the ones the writing types derive (so a
//! schema cannot drift from the files), and real outputs of the binary validate against them with
//! an independent validator (the `jsonschema` crate, JSON Schema draft 2020-12).

use crate::common::{analyze_with_config, assert_success, bin, fresh_dir, verify, write_demo_csv};
use forebear::schemas::{all, Published};
use serde_json::Value;
use std::path::{Path, PathBuf};

fn published_path(schema: &Published) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("docs/schemas")
        .join(schema.file)
}

fn read_json(path: &Path) -> Value {
    let text = std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// The published schema of a layout.
fn schema_of(layout: &str) -> Value {
    let schema = all().into_iter().find(|s| s.layout == layout).unwrap();
    read_json(&published_path(&schema))
}

/// Every validation error of a file against the published schema of its own `schema` member.
fn errors(document: &Value) -> Vec<String> {
    let layout = document["schema"].as_str().expect("a `schema` member");
    let validator = jsonschema::draft202012::new(&schema_of(layout)).expect("a valid schema");
    validator
        .iter_errors(document)
        .map(|e| format!("{} at {}", e, e.instance_path()))
        .collect()
}

fn assert_valid(path: &Path) -> Value {
    let document = read_json(path);
    let errors = errors(&document);
    assert!(errors.is_empty(), "{}: {errors:#?}", path.display());
    document
}

#[test]
fn published_schemas_are_the_ones_the_types_derive() {
    let bless = std::env::var_os("FOREBEAR_BLESS").is_some();
    for schema in all() {
        let path = published_path(&schema);
        let text = serde_json::to_string_pretty(&schema.schema).unwrap() + "\n";
        if bless {
            std::fs::create_dir_all(path.parent().unwrap()).unwrap();
            std::fs::write(&path, &text).unwrap();
        }
        let published = std::fs::read_to_string(&path).unwrap_or_default();
        assert!(
            published == text,
            "{} is not the schema the types derive; run FOREBEAR_BLESS=1 cargo test --release \
             --test integration schemas:: and read the diff",
            path.display()
        );
    }
}

#[test]
fn every_output_of_an_analysis_with_knowledge_validates_and_a_broken_one_does_not() {
    let dir = fresh_dir("schemas-analysis");
    let data = write_demo_csv(&dir);
    let config = dir.join("study.toml");
    std::fs::write(
        &config,
        "targets = [\"crush_strength\", \"pore_density\"]\nreplicates = 4\n\n[knowledge]\ntiers = \
         [[\"kiln_peak_temp\", \"binder_fraction\", \"slurry_moisture\"], [\"pore_density\"], \
         [\"crush_strength\"]]\n",
    )
    .unwrap();
    let out = dir.join("out");
    assert_success(&analyze_with_config(&data, &config, &[], &out));
    let summary = assert_valid(&out.join("summary.json"));
    assert_eq!(summary["schema"], "forebear.targets/1");
    let dossier = out.join("crush_strength");
    let mut result = assert_valid(&dossier.join("result.json"));
    assert!(
        result["with_knowledge"].is_object(),
        "the optional parts are exercised"
    );
    assert_valid(&dossier.join("manifest.json"));
    let output = verify(&dossier, &data, &["--json"]);
    assert_success(&output);
    let report: Value = serde_json::from_slice(&output.stdout).unwrap();
    assert!(errors(&report).is_empty(), "{:#?}", errors(&report));

    // The check can fail: a result without its digest, or with a count of the wrong type.
    result.as_object_mut().unwrap().remove("digest");
    assert!(errors(&result).iter().any(|e| e.contains("digest")));
    let mut result = read_json(&dossier.join("result.json"));
    result["data"]["rows_used"] = Value::from("many");
    assert!(!errors(&result).is_empty());
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn a_batch_summary_validates() {
    let dir = crate::common::one_study_plan("schemas-batch", 2);
    let output = bin()
        .current_dir(&dir)
        .args(["--quiet", "batch", "plan.toml", "--out", "runs"])
        .output()
        .unwrap();
    assert_success(&output);
    let summary = assert_valid(&dir.join("runs/summary.json"));
    assert_eq!(summary["schema"], "forebear.batch/1");
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn a_signature_statement_and_a_report_listing_it_validate() {
    use ssh_key::private::{Ed25519Keypair, KeypairData};
    let scratch = crate::common::Scratch::new("schemas-signature");
    let data = write_demo_csv(&scratch);
    assert_success(&crate::common::analyze(
        &scratch,
        &data,
        "crush_strength",
        &["--quiet"],
    ));
    let out = scratch.path("out");
    let key = ssh_key::PrivateKey::new(
        KeypairData::Ed25519(Ed25519Keypair::from_seed(&[9; 32])),
        "Sam Signer",
    )
    .unwrap();
    let key_path = scratch.path("key");
    key.write_openssh_file(&key_path, ssh_key::LineEnding::LF)
        .unwrap();
    let signed = bin()
        .arg("sign")
        .arg(&out)
        .arg("--key")
        .arg(&key_path)
        .args(["--meaning", "approved"])
        .output()
        .unwrap();
    assert_success(&signed);
    let statement = assert_valid(&out.join("signatures/1-approved.json"));
    assert_eq!(statement["schema"], "forebear.signature/1");
    let output = verify(&out, &data, &["--json"]);
    assert_success(&output);
    let report: Value = serde_json::from_slice(&output.stdout).unwrap();
    assert_eq!(report["signatures"][0]["signer"], "Sam Signer");
    assert!(errors(&report).is_empty(), "{:#?}", errors(&report));
    // A statement with an unknown meaning does not validate.
    let mut broken = statement.clone();
    broken["meaning"] = Value::from("witnessed");
    assert!(!errors(&broken).is_empty());
}

#[test]
fn a_partial_qualification_record_validates() {
    let scratch = crate::common::Scratch::new("schemas-qualification");
    let first = forebear::qualify::catalogue().remove(0).id;
    let out = scratch.path("record");
    let output = bin()
        .args(["--quiet", "qualify", "--case", &first, "--out"])
        .arg(&out)
        .output()
        .unwrap();
    assert_success(&output);
    let record = assert_valid(&out.join("qualification.json"));
    assert_eq!(record["cases"].as_array().unwrap().len(), 1);
    let mut broken = record.clone();
    broken["summary"]["passed"] = Value::from(-1);
    assert!(!errors(&broken).is_empty());
}
