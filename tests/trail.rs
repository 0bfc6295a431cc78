//! The audit trail (issue 15): the operator in every dossier, `--force` keeping the replaced
//! dossier under a dated name, the hash-chained `forebear-trail.jsonl` beside the outputs that
//! analyses, batch runs and `verify --record` extend, and `forebear trail` checking the chain.

use crate::common::{
    analyze, assert_refused, assert_success, bin, exit_code, lossy_stderr, lossy_stdout,
    result_json, verify, write_demo_csv, Scratch,
};
use serde_json::Value;
use std::path::Path;

fn entries(dir: &Path) -> Vec<Value> {
    std::fs::read_to_string(dir.join("forebear-trail.jsonl"))
        .unwrap()
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect()
}

fn show_trail(path: &Path) -> std::process::Output {
    bin().arg("trail").arg(path).output().unwrap()
}

#[test]
fn force_keeps_the_replaced_dossier_under_a_dated_name_and_both_verify() {
    let s = Scratch::new("trail-force");
    let data = write_demo_csv(&s.dir);
    assert_success(&analyze(&s, &data, "crush_strength", &[]));
    let first = result_json(&s.path("out"));
    assert_success(&analyze(
        &s,
        &data,
        "crush_strength",
        &["--force", "--seed", "5"],
    ));
    let kept: Vec<String> = s
        .entries()
        .into_iter()
        .filter(|n| n.starts_with("out.replaced-"))
        .collect();
    assert_eq!(kept.len(), 1, "{:?}", s.entries());
    let name = &kept[0];
    // out.replaced-YYYYMMDDTHHMMSSZ
    assert_eq!(name.len(), "out.replaced-".len() + 16, "{name}");
    assert!(name.ends_with('Z'));
    assert_eq!(
        result_json(&s.path(name)),
        first,
        "the former dossier, unchanged"
    );
    assert_success(&verify(&s.path(name), &data, &[]));
    assert_success(&verify(&s.path("out"), &data, &[]));
    let trail = entries(&s.dir);
    assert_eq!(trail.len(), 2);
    assert_eq!(trail[1]["facts"]["replaced_output_kept_as"], name.as_str());
}

#[test]
fn analyses_and_recorded_verifications_chain_in_the_trail_and_an_edit_breaks_it() {
    let s = Scratch::new("trail-chain");
    let data = write_demo_csv(&s.dir);
    let out = s.path("out");
    assert_success(&analyze(
        &s,
        &data,
        "crush_strength",
        &["--operator", "Q. Analyst"],
    ));
    let result = result_json(&out);
    assert_eq!(result["run"]["operator"], "Q. Analyst");
    let manifest: Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("manifest.json")).unwrap()).unwrap();
    assert_eq!(manifest["operator"], "Q. Analyst");

    // A verification without --record leaves no entry; with it, its verdict.
    assert_success(&verify(&out, &data, &[]));
    assert_eq!(entries(&s.dir).len(), 1);
    assert_success(&verify(
        &out,
        &data,
        &["--record", "--operator", "R. Reviewer"],
    ));
    let trail = entries(&s.dir);
    assert_eq!(trail.len(), 2);
    assert_eq!(trail[0]["action"], "analyze");
    assert_eq!(trail[0]["operator"], "Q. Analyst");
    assert_eq!(trail[0]["output"], "out");
    assert_eq!(trail[0]["facts"]["digest"], result["digest"]);
    assert_eq!(trail[1]["action"], "verify");
    assert_eq!(trail[1]["operator"], "R. Reviewer");
    assert_eq!(trail[1]["facts"]["verdict"], "VERIFIED");
    assert_eq!(trail[1]["previous"], trail[0]["hash"]);
    assert_eq!(
        trail[1]["facts"]["manifest_sha256"],
        crate::common::sha256_hex(&std::fs::read(out.join("manifest.json")).unwrap()).as_str()
    );

    let shown = show_trail(&s.dir);
    assert_success(&shown);
    assert!(lossy_stdout(&shown).contains("R. Reviewer  verify out"));
    assert!(lossy_stderr(&shown).contains("chain intact, 2 entries"));

    // A tampered dossier: the recorded verdict is MISMATCH, exit 1.
    crate::common::forge_text(&out, "dossier.md", "crush_strength", "crush_strengtх");
    let output = verify(&out, &data, &["--record"]);
    assert_eq!(exit_code(&output), 1);
    assert_eq!(entries(&s.dir)[2]["facts"]["verdict"], "MISMATCH");

    // Editing an entry after the fact breaks the chain at that line.
    let path = s.path("forebear-trail.jsonl");
    let text = std::fs::read_to_string(&path).unwrap();
    std::fs::write(&path, text.replacen("R. Reviewer", "Z. Other", 1)).unwrap();
    let shown = show_trail(&path);
    assert_eq!(exit_code(&shown), 1);
    assert!(
        lossy_stderr(&shown).contains("forebear-trail.jsonl:2: the chain is broken"),
        "{}",
        lossy_stderr(&shown)
    );
    // And nothing is appended to a broken trail.
    let output = verify(&out, &data, &["--record"]);
    assert_eq!(exit_code(&output), 2, "{}", lossy_stderr(&output));
    assert!(lossy_stderr(&output).contains("line 2"));
}

#[test]
fn the_operator_is_outside_the_result_digest_and_a_bad_name_is_refused() {
    let s = Scratch::new("trail-operator");
    let data = write_demo_csv(&s.dir);
    assert_success(&analyze(&s, &data, "crush_strength", &["--operator", "A"]));
    let a = result_json(&s.path("out"))["digest"].clone();
    assert_success(&analyze(
        &s,
        &data,
        "crush_strength",
        &["--operator", "B", "--force"],
    ));
    assert_eq!(result_json(&s.path("out"))["digest"], a);
    let output = analyze(&s, &data, "crush_strength", &["--operator", "bad\u{7}name"]);
    assert_refused(&output, &["--operator", "control character"]);
}

#[test]
fn a_batch_run_appends_one_entry_beside_its_output() {
    let dir = crate::common::one_study_plan("trail-batch", 0);
    let output = bin()
        .current_dir(&dir)
        .args([
            "--quiet",
            "--operator",
            "N. Scheduler",
            "batch",
            "plan.toml",
        ])
        .args(["--out", "runs/nightly"])
        .output()
        .unwrap();
    assert_success(&output);
    let trail = entries(&dir.join("runs"));
    assert_eq!(trail.len(), 1);
    assert_eq!(trail[0]["action"], "batch");
    assert_eq!(trail[0]["output"], "nightly");
    assert_eq!(trail[0]["facts"]["done"], "1");
    let summary = std::fs::read_to_string(dir.join("runs/nightly/summary.json")).unwrap();
    assert_eq!(
        trail[0]["facts"]["summary_sha256"],
        crate::common::sha256_hex(summary.as_bytes()).as_str()
    );
    let dossier = result_json(&dir.join("runs/nightly/line-a/crush_strength"));
    assert_eq!(dossier["run"]["operator"], "N. Scheduler");
    std::fs::remove_dir_all(&dir).unwrap();
}
