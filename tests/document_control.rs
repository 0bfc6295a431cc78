//! Document control (title, identifier, purpose, version, prepared by): from the flags and from a
//! study file's `[document]`, printed in dossier.md and dossier.html, recorded in result.json
//! (`run.document`) and the manifest, outside the result digest, and verified.

use crate::common::{
    self, analyze, analyze_with_config, assert_refused, assert_success, result_json, Scratch,
};
use std::path::Path;

const FLAGS: [&str; 10] = [
    "--title",
    "Kiln study of the filter discs",
    "--document-id",
    "PR-0042",
    "--purpose",
    "Find which process variables directly drive crush strength",
    "--document-version",
    "2.1",
    "--prepared-by",
    "A. Analyst",
];

fn read(dir: &Path, name: &str) -> String {
    std::fs::read_to_string(dir.join(name)).unwrap()
}

fn manifest(dir: &Path) -> serde_json::Value {
    serde_json::from_str(&read(dir, "manifest.json")).unwrap()
}

#[test]
fn the_flags_reach_both_dossier_pages_the_record_and_the_manifest_and_verify_passes() {
    let s = Scratch::new("document-flags");
    let data = s.write("discs.csv", forebear::demo::DEMO_CSV);
    assert_success(&analyze(&s, &data, "crush_strength", &FLAGS));
    let out = s.path("out");
    let markdown = read(&out, "dossier.md");
    assert!(
        markdown.starts_with("# Kiln study of the filter discs\n"),
        "{markdown}"
    );
    for row in [
        "| document identifier | PR-0042 |",
        "| version | 2.1 |",
        "| purpose | Find which process variables directly drive crush strength |",
        "| prepared by | A. Analyst |",
    ] {
        assert!(markdown.contains(row), "{row}");
    }
    let html = read(&out, "dossier.html");
    assert!(html.contains("<title>Kiln study of the filter discs</title>"));
    assert!(html.contains("<td>PR-0042</td>"), "the first page");
    // The running header of the printed pages, as a CSS string (every character escaped).
    assert!(
        html.contains(
            "@top-left { content: \"PR\\00002d 0042 version 2\\00002e 1 \\0000b7  Kiln study"
        ),
        "running header"
    );
    assert!(
        html.contains("counter(page) \" of \" counter(pages)"),
        "page numbers"
    );
    let expected = serde_json::json!({
        "title": "Kiln study of the filter discs",
        "id": "PR-0042",
        "purpose": "Find which process variables directly drive crush strength",
        "version": "2.1",
        "prepared_by": "A. Analyst",
    });
    assert_eq!(result_json(&out)["run"]["document"], expected);
    assert_eq!(manifest(&out)["document"], expected);
    // The reproduce command carries it, so a re-run writes the same pages.
    assert!(
        markdown.contains("--title 'Kiln study of the filter discs'"),
        "{markdown}"
    );
    assert_success(&common::verify(&out, &data, &[]));
}

#[test]
fn document_control_does_not_change_the_result_digest_or_the_settings_hash() {
    let s = Scratch::new("document-digest");
    let data = s.write("discs.csv", forebear::demo::DEMO_CSV);
    assert_success(&analyze(
        &s,
        &data,
        "crush_strength",
        &["--title", "One title"],
    ));
    let with = result_json(&s.path("out"));
    let with_manifest = manifest(&s.path("out"));
    std::fs::rename(s.path("out"), s.path("with")).unwrap();
    assert_success(&analyze(&s, &data, "crush_strength", &[]));
    let without = result_json(&s.path("out"));
    assert!(
        without["run"].get("document").is_none(),
        "absent when not given"
    );
    assert!(manifest(&s.path("out")).get("document").is_none());
    assert_eq!(with["digest"], without["digest"]);
    assert_eq!(
        with_manifest["settings"]["sha256"],
        manifest(&s.path("out"))["settings"]["sha256"]
    );
    assert!(!read(&s.path("out"), "dossier.md").contains("One title"));
}

#[test]
fn the_study_files_document_table_is_read_and_a_flag_overrides_one_field() {
    let s = Scratch::new("document-file");
    let data = s.write("discs.csv", forebear::demo::DEMO_CSV);
    let config = s.write(
        "study.toml",
        "targets = [\"crush_strength\"]\nreplicates = 0\n\n[document]\ntitle = \"From the file\"\n\
         id = \"SOP-7\"\nprepared_by = \"  B. Reviewer  \"\n",
    );
    let out = s.path("out");
    assert_success(&analyze_with_config(
        &data,
        &config,
        &["--title", "From a flag"],
        &out,
    ));
    let document = &result_json(&out)["run"]["document"];
    assert_eq!(document["title"], "From a flag");
    assert_eq!(document["id"], "SOP-7");
    assert_eq!(document["prepared_by"], "B. Reviewer", "trimmed");
    assert!(document.get("purpose").is_none());
    let markdown = read(&out, "dossier.md");
    assert!(markdown.starts_with("# From a flag\n"), "{markdown}");
    assert!(markdown.contains("| document identifier | SOP-7 |"));
    assert_success(&common::verify(&out, &data, &[]));
}

#[test]
fn bad_document_control_in_a_study_file_is_refused_at_its_line_and_column() {
    let s = Scratch::new("document-bad-file");
    let data = s.write("discs.csv", forebear::demo::DEMO_CSV);
    let config = s.write(
        "study.toml",
        "targets = [\"crush_strength\"]\n[document]\ntitle = \"\"\nid = \"PR\\u0007-1\"\nauthor = \"x\"\n",
    );
    let out = s.path("out");
    let err = assert_refused(&analyze_with_config(&data, &config, &[], &out), &[]);
    let file = config.display().to_string();
    let lines: Vec<&str> = err.lines().collect();
    assert_eq!(lines.len(), 4, "{err}");
    assert_eq!(
        lines[0],
        format!(
            "forebear: error: {file}:3:9: document.title is empty; give the text, or leave the key out"
        )
    );
    assert!(
        lines[1].starts_with(&format!(
            "forebear: error: {file}:4:6: document.id 'PR\\u{{7}}-1' holds a control character at character 3"
        )),
        "{}",
        lines[1]
    );
    assert!(
        lines[2].starts_with(&format!(
            "forebear: error: {file}:5:1: unknown key 'document.author'"
        )),
        "{}",
        lines[2]
    );
    assert!(!out.exists(), "nothing is written");
}

#[test]
fn a_bad_document_flag_is_refused_by_its_flag_name() {
    let s = Scratch::new("document-bad-flag");
    let data = s.write("discs.csv", forebear::demo::DEMO_CSV);
    let err = assert_refused(
        &analyze(&s, &data, "crush_strength", &["--prepared-by", "  "]),
        &["--prepared-by is empty"],
    );
    assert_eq!(err.lines().count(), 1, "{err}");
    let long = "x".repeat(161);
    assert_refused(
        &analyze(&s, &data, "crush_strength", &["--title", &long]),
        &["--title is 161 characters long, above the limit of 160"],
    );
    assert!(!s.path("out").exists());
}

#[test]
fn a_batch_plan_gives_document_control_to_its_dossiers() {
    let s = Scratch::new("document-batch");
    let data = s.write("discs.csv", forebear::demo::DEMO_CSV);
    let plan = s.write(
        "plan.toml",
        format!(
            "[defaults]\nreplicates = 0\n[defaults.document]\nprepared_by = \"Night job\"\n\n\
             [[study]]\nname = \"line-a\"\ndata = \"{}\"\ntargets = [\"crush_strength\"]\n\
             [study.document]\nid = \"LINE-A\"\n",
            data.display()
        ),
    );
    let ran = common::run([
        std::ffi::OsStr::new("--quiet"),
        std::ffi::OsStr::new("batch"),
        plan.as_os_str(),
        std::ffi::OsStr::new("--out"),
        s.path("night").as_os_str(),
    ]);
    assert_success(&ran);
    let dossier = s.path("night/line-a/crush_strength");
    let document = &result_json(&dossier)["run"]["document"];
    assert_eq!(document["prepared_by"], "Night job");
    assert_eq!(document["id"], "LINE-A");
    assert_success(&common::verify(&dossier, &data, &[]));
}
