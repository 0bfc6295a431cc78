//! `forebear qualify` on the real binary: every built-in reference case runs and passes, the three
//! files of the record agree, the seal recomputes without forebear's code, and the output folder
//! follows the rules of every forebear output. The case list is the library's
//! (`forebear::qualify::catalogue`), the same the other test modules run case by case.

use crate::common::{run, sha256_hex, stderr_of, Scratch};
use serde_json::Value;
use std::path::Path;

/// `forebear qualify --out OUT EXTRA...`.
fn qualify(out: &Path, extra: &[&str]) -> std::process::Output {
    let mut args = vec!["qualify", "--out", out.to_str().unwrap()];
    args.extend_from_slice(extra);
    run(args)
}

/// `forebear qualify --out OUT EXTRA...`, which must succeed.
fn qualify_ok(out: &Path, extra: &[&str]) -> std::process::Output {
    let output = qualify(out, extra);
    assert_eq!(output.status.code(), Some(0), "{}", stderr_of(&output));
    output
}

fn record(dir: &Path) -> Value {
    serde_json::from_str(&std::fs::read_to_string(dir.join("qualification.json")).unwrap())
        .expect("qualification.json is JSON")
}

/// The seal recomputed as a reviewer would: the JSON without `seal` in RFC 8785 canonical form
/// (the serde_jcs crate here; tests/canonical_json.rs checks our form against a second, Python
/// implementation), SHA-256.
fn recomputed_seal(record: &Value) -> String {
    let mut tree = record.clone();
    tree.as_object_mut().unwrap().remove("seal");
    sha256_hex(serde_jcs::to_string(&tree).unwrap().as_bytes())
}

#[test]
fn every_reference_case_passes_and_the_three_files_agree_with_a_seal_that_recomputes() {
    let s = Scratch::new("qualify-all");
    let out = s.path("record");
    let output = qualify_ok(&out, &["--operator", "QA runner"]);
    let mut files: Vec<String> = std::fs::read_dir(&out)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    files.sort();
    assert_eq!(
        files,
        [
            "qualification.html",
            "qualification.json",
            "qualification.md"
        ]
    );
    let json = record(&out);
    assert_eq!(json["schema"], "forebear.qualification/1");
    let ids: Vec<String> = forebear::qualify::catalogue()
        .into_iter()
        .map(|c| c.id)
        .collect();
    let recorded: Vec<&str> = json["cases"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c["id"].as_str().unwrap())
        .collect();
    assert_eq!(
        recorded, ids,
        "the record runs exactly the library's case list"
    );
    for case in json["cases"].as_array().unwrap() {
        assert_eq!(case["passed"], true, "{case}");
        assert!(!case["measured"].as_array().unwrap().is_empty(), "{case}");
    }
    assert_eq!(json["summary"]["verdict"], "PASSED");
    assert_eq!(json["summary"]["cases"], ids.len());
    assert_eq!(json["summary"]["passed"], ids.len());
    assert_eq!(json["summary"]["failed"], 0);
    assert_eq!(json["operator"]["name"], "QA runner");
    assert_eq!(json["tool"]["method"], forebear::finding::METHOD_VERSION);
    assert_eq!(
        json["tool"]["build"],
        forebear::finding::ToolInfo::current().build
    );
    assert_eq!(json["seal"].as_str().unwrap(), recomputed_seal(&json));
    let seal = json["seal"].as_str().unwrap();
    // The run is in the audit trail beside the record, with its verdict and seal.
    let trail = std::fs::read_to_string(s.path("forebear-trail.jsonl")).unwrap();
    let entry: Value = serde_json::from_str(trail.lines().last().unwrap()).unwrap();
    assert_eq!(entry["action"], "qualify");
    assert_eq!(entry["operator"], "QA runner");
    assert_eq!(entry["facts"]["verdict"], "PASSED");
    assert_eq!(entry["facts"]["seal"], seal);
    let md = std::fs::read_to_string(out.join("qualification.md")).unwrap();
    let html = std::fs::read_to_string(out.join("qualification.html")).unwrap();
    for (name, text) in [("md", &md), ("html", &html)] {
        assert!(text.contains(seal), "{name} shows the seal");
        assert!(
            text.contains("PASSED") && !text.contains("FAILED"),
            "{name}"
        );
        assert!(text.contains("QA runner"), "{name} names the operator");
        assert!(
            text.contains(&format!("{} of {} cases passed", ids.len(), ids.len())),
            "{name}"
        );
        for id in &ids {
            // Markdown escapes `_` in ids.
            assert!(
                text.contains(id.as_str()) || text.contains(&id.replace('_', "\\_")),
                "{name} lists {id}"
            );
        }
    }
    assert!(
        html.contains("Content-Security-Policy\" content=\"default-src &#x27;none&#x27;"),
        "self-contained under a strict policy"
    );
    assert!(!html.contains("<script"), "no script");
    let stdout = String::from_utf8(output.stdout).unwrap();
    assert!(stdout.contains("qualification PASSED"), "{stdout}");
}

#[test]
fn an_edit_of_the_record_no_longer_matches_its_seal() {
    let s = Scratch::new("qualify-edit");
    let out = s.path("record");
    qualify_ok(&out, &["--case", "neighbours.tie-break-duplicates"]);
    let mut json = record(&out);
    assert_eq!(json["seal"].as_str().unwrap(), recomputed_seal(&json));
    json["cases"][0]["passed"] = Value::Bool(false);
    assert_ne!(json["seal"].as_str().unwrap(), recomputed_seal(&json));
}

#[test]
fn a_chosen_case_gives_a_record_that_says_it_is_partial() {
    let s = Scratch::new("qualify-partial");
    let out = s.path("record");
    qualify_ok(
        &out,
        &[
            "--case",
            "t-n.monotone-invariance",
            "--case",
            "xi.scipy.binary_y_n20",
        ],
    );
    let json = record(&out);
    assert_eq!(json["summary"]["cases"], 2);
    assert_eq!(
        json["summary"]["catalogue"],
        forebear::qualify::catalogue().len()
    );
    let md = std::fs::read_to_string(out.join("qualification.md")).unwrap();
    assert!(md.contains("**Partial run:** only 2 of the"), "{md}");
    let html = std::fs::read_to_string(out.join("qualification.html")).unwrap();
    assert!(html.contains("Partial run"));
}

#[test]
fn an_unknown_case_is_refused_before_anything_is_written() {
    let s = Scratch::new("qualify-unknown");
    let out = s.path("record");
    let output = qualify(&out, &["--case", "t-n.modular-sums"]);
    assert_eq!(output.status.code(), Some(2));
    let stderr = stderr_of(&output);
    assert!(
        stderr.contains("--case 't-n.modular-sums' is not a reference case"),
        "{stderr}"
    );
    assert!(stderr.contains("t-n.modular-sum"), "a suggestion: {stderr}");
    assert!(!out.exists());
}

#[test]
fn a_former_record_is_replaced_only_with_force_and_a_foreign_folder_never() {
    let s = Scratch::new("qualify-force");
    let out = s.path("record");
    let case = ["--case", "neighbours.scan-fallback"];
    let forced = ["--case", "neighbours.scan-fallback", "--force"];
    qualify_ok(&out, &case);
    let refused = qualify(&out, &case);
    assert_eq!(refused.status.code(), Some(2));
    assert!(
        stderr_of(&refused).contains("already holds a forebear qualification record"),
        "{}",
        stderr_of(&refused)
    );
    qualify_ok(&out, &forced);
    // The replaced record is kept beside the new one under a dated name, and the trail says so.
    let kept: Vec<String> = s
        .entries()
        .into_iter()
        .filter(|n| n.starts_with("record.replaced-"))
        .collect();
    assert_eq!(kept.len(), 1, "{:?}", s.entries());
    assert!(s.path(&kept[0]).join("qualification.json").exists());
    let trail = std::fs::read_to_string(s.path("forebear-trail.jsonl")).unwrap();
    let last: Value = serde_json::from_str(trail.lines().last().unwrap()).unwrap();
    assert_eq!(last["facts"]["replaced_output_kept_as"], kept[0].as_str());
    std::fs::write(out.join("notes.txt"), "mine").unwrap();
    let foreign = qualify(&out, &forced);
    assert_eq!(foreign.status.code(), Some(2));
    assert!(
        stderr_of(&foreign).contains("'notes.txt'"),
        "{}",
        stderr_of(&foreign)
    );
    assert_eq!(
        std::fs::read_to_string(out.join("notes.txt")).unwrap(),
        "mine"
    );
}

#[test]
fn list_prints_every_case_id_and_out_is_required_otherwise() {
    let output = run(["qualify", "--list"]);
    assert_eq!(output.status.code(), Some(0));
    let stdout = String::from_utf8(output.stdout).unwrap();
    for case in forebear::qualify::catalogue() {
        assert!(stdout.contains(&case.id), "{}", case.id);
    }
    let missing = run(["qualify"]);
    assert_eq!(missing.status.code(), Some(2));
    assert!(
        stderr_of(&missing).contains("--out"),
        "{}",
        stderr_of(&missing)
    );
}
