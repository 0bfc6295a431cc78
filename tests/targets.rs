//! Several targets in one run (`analyze --target a --target b`, `--all-targets`): each target's
//! dossier equals its single-target run (digest, and the whole result.json but the run facts), the
//! study summary lists every target, and the usage errors exit 2 before anything is written.

use crate::common::*;
use std::path::{Path, PathBuf};

fn demo(scratch: &Scratch) -> PathBuf {
    write_demo_csv(&scratch.dir)
}

/// The first 400 data rows of the committed ASIA sample (binary columns: heavy ties everywhere).
fn asia_slice(scratch: &Scratch) -> PathBuf {
    let text = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/asia_discrete_n5000_seed1.csv"),
    )
    .unwrap();
    let lines: Vec<&str> = text.lines().take(401).collect();
    scratch.write("asia400.csv", lines.join("\n") + "\n")
}

fn analyze_into(data: &Path, out: &Path, targets: &[&str], extra: &[&str]) -> std::process::Output {
    let mut args: Vec<String> = vec!["analyze".into(), data.display().to_string()];
    for t in targets {
        args.extend(["--target".into(), t.to_string()]);
    }
    args.extend(["--out".into(), out.display().to_string()]);
    args.extend(extra.iter().map(|s| s.to_string()));
    run(args)
}

/// result.json without the run facts (times, command line, paths), which differ by invocation.
fn without_run(dir: &Path) -> serde_json::Value {
    let mut value = result_json(dir);
    value.as_object_mut().unwrap().remove("run");
    value
}

/// Every target's dossier of one shared run equals its own run, digest for digest.
fn assert_same_as_separate_runs(data: &Path, targets: &[&str], extra: &[&str], scratch: &Scratch) {
    let shared = scratch.path("shared");
    assert_success(&analyze_into(data, &shared, targets, extra));
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(shared.join("summary.json")).unwrap())
            .unwrap();
    for target in targets {
        let alone = scratch.path(&format!("alone-{target}"));
        assert_success(&analyze_into(data, &alone, &[target], extra));
        let (a, b) = (without_run(&shared.join(target)), without_run(&alone));
        assert_eq!(a["digest"], b["digest"], "digest of '{target}'");
        assert_eq!(a["stability"], b["stability"], "stability of '{target}'");
        assert_eq!(a, b, "result.json of '{target}' but the run facts");
        assert_eq!(summary["targets"][target]["digest"], b["digest"]);
    }
}

#[test]
fn two_demo_targets_equal_their_single_target_runs() {
    let scratch = Scratch::new("targets-demo");
    let data = demo(&scratch);
    assert_same_as_separate_runs(
        &data,
        &["pore_density", "crush_strength"],
        &["--replicates", "4"],
        &scratch,
    );
}

#[test]
fn discrete_targets_with_heavy_ties_equal_their_single_target_runs() {
    let scratch = Scratch::new("targets-ties");
    let data = asia_slice(&scratch);
    assert_same_as_separate_runs(
        &data,
        &["smoke", "lung", "bronc", "dysp", "xray"],
        &["--replicates", "4"],
        &scratch,
    );
}

#[test]
fn all_targets_writes_a_folder_per_column_and_a_summary_naming_each_digest() {
    let scratch = Scratch::new("targets-all");
    let data = demo(&scratch);
    let out = scratch.path("all");
    let output = run([
        "analyze",
        data.to_str().unwrap(),
        "--all-targets",
        "--replicates",
        "0",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_success(&output);
    let header = std::fs::read_to_string(&data).unwrap();
    let columns: Vec<&str> = header.lines().next().unwrap().split(',').collect();
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    assert_eq!(summary["schema"], "forebear.targets/1");
    assert_eq!(summary["targets"].as_object().unwrap().len(), columns.len());
    let markdown = std::fs::read_to_string(out.join("summary.md")).unwrap();
    let html = std::fs::read_to_string(out.join("summary.html")).unwrap();
    for column in &columns {
        let result = result_json(&out.join(column));
        assert_eq!(summary["targets"][column]["digest"], result["digest"]);
        assert_eq!(summary["targets"][column]["dossier"], *column);
        let short: String = result["digest"]
            .as_str()
            .unwrap()
            .chars()
            .take(12)
            .collect();
        assert!(markdown.contains(&short), "summary.md lists '{column}'");
        assert!(html.contains(&format!("{column}/dossier.html")));
    }
    // A second run needs --force, and then replaces the former output.
    let again = run([
        "analyze",
        data.to_str().unwrap(),
        "--all-targets",
        "--replicates",
        "0",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_refused(&again, &["--force"]);
    let forced = run([
        "analyze",
        data.to_str().unwrap(),
        "--all-targets",
        "--replicates",
        "0",
        "--force",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_success(&forced);
}

#[test]
fn target_and_all_targets_together_are_refused() {
    let scratch = Scratch::new("targets-conflict");
    let data = demo(&scratch);
    let out = scratch.path("out");
    let output = run([
        "analyze",
        data.to_str().unwrap(),
        "--target",
        "pore_density",
        "--all-targets",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(exit_code(&output), 2);
    let message = lossy_stderr(&output);
    assert!(
        message.contains("--all-targets") && message.contains("--target"),
        "{message}"
    );
    assert!(!out.exists());
}

#[test]
fn an_unknown_target_among_several_is_named_with_a_suggestion_and_nothing_is_written() {
    let scratch = Scratch::new("targets-unknown");
    let data = demo(&scratch);
    let out = scratch.path("out");
    let output = analyze_into(&data, &out, &["pore_density", "crush_strenght"], &[]);
    assert_eq!(exit_code(&output), 2, "{}", lossy_stderr(&output));
    let message = lossy_stderr(&output);
    assert!(message.contains("'crush_strenght'"), "{message}");
    assert!(
        message.contains("did you mean 'crush_strength'"),
        "{message}"
    );
    assert!(!out.exists());
    assert_eq!(scratch.entries(), vec!["filter_discs.csv"]);
}

#[test]
fn a_replicate_range_with_several_targets_is_refused() {
    let scratch = Scratch::new("targets-range");
    let data = demo(&scratch);
    let out = scratch.path("out");
    let output = analyze_into(
        &data,
        &out,
        &["pore_density", "crush_strength"],
        &["--replicate-range", "0..2"],
    );
    assert_eq!(exit_code(&output), 2);
    assert!(lossy_stderr(&output).contains("--replicate-range"));
    assert!(!out.exists());
}

#[test]
fn verify_passes_on_a_dossier_of_a_shared_run() {
    let scratch = Scratch::new("targets-verify");
    let data = demo(&scratch);
    let out = scratch.path("out");
    assert_success(&analyze_into(
        &data,
        &out,
        &["pore_density", "crush_strength"],
        &["--replicates", "4"],
    ));
    for target in ["pore_density", "crush_strength"] {
        let folder = out.join(target);
        let output = run([
            "verify",
            folder.to_str().unwrap(),
            "--data",
            data.to_str().unwrap(),
        ]);
        assert_success(&output);
    }
}

#[test]
fn a_batch_study_of_several_targets_gives_each_the_digest_of_its_own_run() {
    let scratch = Scratch::new("targets-batch");
    let data = demo(&scratch);
    let plan = scratch.write(
        "plan.toml",
        "[defaults]\nreplicates = 4\n\n[[study]]\nname = \"discs\"\ndata = \"filter_discs.csv\"\n\
         targets = [\"pore_density\", \"crush_strength\", \"kiln_peak_temp\"]\n",
    );
    let out = scratch.path("nightly");
    let output = run([
        "batch",
        plan.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_success(&output);
    assert!(lossy_stderr(&output).contains("3 targets analysed together"));
    for target in ["pore_density", "crush_strength", "kiln_peak_temp"] {
        let alone = scratch.path(&format!("alone-{target}"));
        assert_success(&analyze_into(
            &data,
            &alone,
            &[target],
            &["--replicates", "4"],
        ));
        assert_eq!(
            without_run(&out.join("discs").join(target)),
            without_run(&alone),
            "'{target}'"
        );
    }
}

#[test]
fn targets_with_candidates_each_keep_their_own_table_and_equal_their_own_runs() {
    // With --candidates each target's table holds the target itself, so no two targets share a
    // table; the run must still give each the finding of its own run.
    let scratch = Scratch::new("targets-candidates");
    let data = demo(&scratch);
    assert_same_as_separate_runs(
        &data,
        &["pore_density", "crush_strength"],
        &[
            "--replicates",
            "2",
            "--candidates",
            "kiln_peak_temp,binder_fraction,slurry_moisture,probe_gap",
        ],
        &scratch,
    );
}

#[test]
fn a_target_that_cannot_name_a_folder_is_refused_before_anything_is_written() {
    let scratch = Scratch::new("targets-folder-name");
    let text = std::fs::read_to_string(demo(&scratch)).unwrap();
    let renamed = text.replacen("probe_gap", "summary.md", 1);
    let data = scratch.write("renamed.csv", renamed);
    let out = scratch.path("out");
    let output = analyze_into(&data, &out, &["pore_density", "summary.md"], &[]);
    assert_refused(&output, &["'summary.md'", "study summary"]);
    assert!(!out.exists());
    // --all-targets finds the same name in the file and refuses it the same way.
    let all = run([
        "analyze",
        data.to_str().unwrap(),
        "--all-targets",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_refused(&all, &["'summary.md'"]);
    assert!(!out.exists());
}

#[test]
fn several_targets_read_with_knowledge_equal_their_single_target_runs() {
    // The knowledge (a study file) and the screening check it brings run per target on shared
    // boundaries, on the full data and every replicate.
    let scratch = Scratch::new("targets-knowledge");
    let data = demo(&scratch);
    let config = scratch.write(
        "tiers.toml",
        "[knowledge]\ntiers = [[\"binder_fraction\", \"kiln_peak_temp\", \"probe_gap\"], \
         [\"pore_density\"], [\"crush_strength\"], [\"echo_amplitude\"]]\n",
    );
    let config = config.display().to_string();
    assert_same_as_separate_runs(
        &data,
        &["pore_density", "crush_strength", "echo_amplitude"],
        &["--replicates", "4", "--config", &config],
        &scratch,
    );
    let pores = result_json(&scratch.path("shared").join("pore_density"));
    assert_eq!(pores["with_knowledge"]["outcome"], "identified");
}
