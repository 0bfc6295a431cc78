//! What the analyst knows (issue 14): tiers, forbidden and required edges in a study file or plan,
//! checked against the header, applied by Meek's (1995) background-knowledge rules, printed,
//! hashed and replayed by `verify`. The expected orientations follow from the generating graphs
//! written beside each data set (invented data) and Meek's rules, not from forebear's output.

use crate::common::{
    self, analyze_with_config, assert_success, result_json, run, uniform_stream, verify, Scratch,
};
use std::ffi::OsStr;
use std::path::{Path, PathBuf};

/// A chain a → b → y (nonlinear, 800 rows) with two unrelated columns c and d. Under the method's
/// assumptions y's Markov boundary is {b}, a single link whose direction the data cannot give.
fn chain_csv(s: &Scratch) -> PathBuf {
    let mut u = uniform_stream(0x9e37_79b9_7f4a_7c15);
    let mut text = String::from("a,b,y,c,d\n");
    for _ in 0..800 {
        let a = 4.0 * u() - 2.0;
        let b = (1.5 * a).sin() + 0.4 * (u() - 0.5);
        let y = b + 0.5 * b * b + 0.4 * (u() - 0.5);
        text.push_str(&format!("{a:.5},{b:.5},{y:.5},{:.5},{:.5}\n", u(), u()));
    }
    s.write("chain.csv", text)
}

#[test]
fn a_chain_with_tiers_identifies_the_parent_only_with_the_knowledge() {
    let s = Scratch::new("knowledge-chain");
    let data = chain_csv(&s);
    let plain = s.write("plain.toml", "targets = [\"y\"]\nreplicates = 0\n");
    let tiers = s.write(
        "tiers.toml",
        "targets = [\"y\"]\nreplicates = 4\n[knowledge]\ntiers = [[\"a\"], [\"b\"], [\"y\"]]\n",
    );
    let out = s.path("plain");
    assert_success(&analyze_with_config(&data, &plain, &[], &out));
    let alone = result_json(&out);
    assert_eq!(alone["outcome"], "not_identifiable", "data alone");
    assert_eq!(alone["parent_sets"], serde_json::json!([["b"]]));
    assert!(
        alone.get("with_knowledge").is_none(),
        "no knowledge, no field"
    );

    let out = s.path("tiers");
    assert_success(&analyze_with_config(&data, &tiers, &[], &out));
    let known = result_json(&out);
    assert_eq!(
        known["outcome"], "not_identifiable",
        "the data's own claim is unchanged"
    );
    let k = &known["with_knowledge"];
    assert_eq!(k["outcome"], "identified", "{k}");
    assert_eq!(k["parent_sets"], serde_json::json!([["b"]]));
    assert_eq!(k["claims"], serde_json::json!({"b": "data_and_knowledge"}));
    assert!(k["conflicts"].as_array().unwrap().is_empty());
    // Replicates are read with the knowledge too.
    let stability = &known["stability"]["with_knowledge"];
    assert!(
        stability["headline"]["frequency"].as_f64().unwrap() > 0.5,
        "{stability}"
    );
    // The dossier says which claim rests on what, and prints the knowledge in full.
    let md = std::fs::read_to_string(out.join("dossier.md")).unwrap();
    assert!(md.contains("**With the stated knowledge:** parents b (b: data + stated knowledge)"));
    assert!(
        md.contains("| knowledge: tiers, earliest first | 1. a; 2. b; 3. y |"),
        "{md}"
    );
    assert!(md.contains("| b | b → y (cause) | data + stated knowledge |"));
    // Hashed in the manifest, and replayed by verify.
    let manifest: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("manifest.json")).unwrap()).unwrap();
    assert_eq!(
        manifest["settings"]["canonical"]["study"]["knowledge"]["tiers"],
        serde_json::json!([["a"], ["b"], ["y"]])
    );
    assert_success(&verify(&out, &data, &[]));
}

#[test]
fn verify_replays_the_knowledge_so_edited_knowledge_does_not_verify() {
    let s = Scratch::new("knowledge-forged");
    let data = chain_csv(&s);
    let tiers = s.write(
        "tiers.toml",
        "targets = [\"y\"]\nreplicates = 0\n[knowledge]\ntiers = [[\"a\"], [\"b\"], [\"y\"]]\n",
    );
    let out = s.path("out");
    assert_success(&analyze_with_config(&data, &tiers, &[], &out));
    // Reverse the tiers of b and y in the recorded settings, as a forger would, and reseal: the
    // re-run under the edited knowledge makes b an effect of y, so the claim cannot verify.
    let text = std::fs::read_to_string(out.join("result.json")).unwrap();
    let edited = text.replacen(
        "\"b\"\n        ],\n        [\n          \"y\"",
        "\"y\"\n        ],\n        [\n          \"b\"",
        1,
    );
    assert_ne!(edited, text, "the tiers are in result.json: {text}");
    std::fs::write(out.join("result.json"), edited).unwrap();
    common::reseal(&out, |m| {
        m.settings.canonical["study"]["knowledge"]["tiers"] =
            serde_json::json!([["a"], ["y"], ["b"]]);
    });
    let checked = verify(&out, &data, &[]);
    assert_eq!(
        common::exit_code(&checked),
        1,
        "{}",
        common::lossy_stdout(&checked)
    );
}

#[test]
fn tiers_make_the_lone_candidate_of_the_demo_a_cause_and_forbidden_edges_prune_it() {
    // Demo graph (demo-data/README.md): binder_fraction → pore_density → crush_strength ← kiln.
    // pore_density's boundary: binder_fraction (a lone link) and its child crush_strength with
    // that child's other cause kiln_peak_temp.
    let s = Scratch::new("knowledge-demo");
    let data = common::write_demo_csv(&s);
    let tiers = s.write(
        "tiers.toml",
        "targets = [\"pore_density\"]\nreplicates = 0\n[knowledge]\n\
         tiers = [[\"binder_fraction\", \"kiln_peak_temp\"], [\"pore_density\"], [\"crush_strength\"]]\n",
    );
    let out = s.path("tiers");
    assert_success(&analyze_with_config(&data, &tiers, &[], &out));
    let r = result_json(&out);
    assert_eq!(r["outcome"], "not_identifiable");
    let k = &r["with_knowledge"];
    assert_eq!(k["outcome"], "identified", "{k}");
    assert_eq!(
        k["claims"],
        serde_json::json!({"binder_fraction": "data_and_knowledge"})
    );

    // Forbidding binder_fraction → pore_density makes the lone link an effect: no parent.
    let forbidden = s.write(
        "forbidden.toml",
        "targets = [\"pore_density\"]\nreplicates = 0\n[knowledge]\n\
         forbidden = [[\"binder_fraction\", \"pore_density\"]]\n",
    );
    let out = s.path("forbidden");
    assert_success(&analyze_with_config(&data, &forbidden, &[], &out));
    let k = &result_json(&out)["with_knowledge"];
    assert_eq!(k["outcome"], "not_identifiable", "{k}");
    assert_eq!(k["parent_sets"], serde_json::json!([]));
    let binder = k["edges"]
        .as_array()
        .unwrap()
        .iter()
        .find(|e| e["member"] == "binder_fraction")
        .unwrap();
    assert_eq!(binder["direction"], "out_of_target");
    assert_eq!(binder["basis"], "data_and_knowledge");
}

#[test]
fn a_v_structure_the_tiers_forbid_is_reported_as_a_conflict_and_nothing_is_claimed() {
    // The data identify kiln_peak_temp and pore_density as causes of crush_strength; tiers that
    // put kiln_peak_temp after crush_strength contradict that v-structure.
    let s = Scratch::new("knowledge-conflict");
    let data = common::write_demo_csv(&s);
    let config = s.write(
        "wrong.toml",
        "targets = [\"crush_strength\"]\nreplicates = 0\n[knowledge]\n\
         tiers = [[\"pore_density\"], [\"crush_strength\"], [\"kiln_peak_temp\"]]\n",
    );
    let out = s.path("out");
    assert_success(&analyze_with_config(&data, &config, &[], &out));
    let r = result_json(&out);
    assert_eq!(
        r["outcome"], "identified",
        "the data's claim stands as the data's"
    );
    let k = &r["with_knowledge"];
    assert_eq!(k["outcome"], "conflict", "{k}");
    assert_eq!(k["claims"], serde_json::json!({}));
    let conflicts = k["conflicts"].as_array().unwrap();
    assert_eq!(conflicts.len(), 1, "{conflicts:?}");
    assert_eq!(conflicts[0]["column"], "kiln_peak_temp");
    let md = std::fs::read_to_string(out.join("dossier.md")).unwrap();
    assert!(md
        .contains("**data and knowledge in conflict** (1): nothing is claimed with the knowledge"));
    assert!(md.contains("**Conflicts between the data and the knowledge**"));
}

#[test]
fn a_required_edge_the_data_do_not_show_is_a_conflict() {
    let s = Scratch::new("knowledge-required");
    let data = common::write_demo_csv(&s);
    let config = s.write(
        "required.toml",
        "targets = [\"crush_strength\"]\nreplicates = 0\n[knowledge]\n\
         required = [[\"conveyor_speed\", \"crush_strength\"]]\n",
    );
    let out = s.path("out");
    assert_success(&analyze_with_config(&data, &config, &[], &out));
    let k = &result_json(&out)["with_knowledge"];
    assert_eq!(k["outcome"], "conflict", "{k}");
    assert_eq!(k["conflicts"][0]["column"], "conveyor_speed");
}

#[test]
fn knowledge_naming_an_unknown_column_or_contradicting_itself_is_refused_with_every_problem() {
    let s = Scratch::new("knowledge-bad");
    let data = common::write_demo_csv(&s);
    let config = s.write(
        "bad.toml",
        "targets = [\"crush_strength\"]\n[knowledge]\n\
         tiers = [[\"kiln_peak_tmp\"], [\"crush_strength\"]]\n",
    );
    let out = s.path("out");
    let ran = analyze_with_config(&data, &config, &[], &out);
    common::assert_refused(
        &ran,
        &[
            &format!("{}:3:11:", config.display()),
            "the knowledge column 'kiln_peak_tmp' is not in the header; did you mean 'kiln_peak_temp'?",
        ],
    );
    assert!(!out.exists());

    let config = s.write(
        "cycle.toml",
        "targets = [\"crush_strength\"]\n[knowledge]\ntiers = [[\"a\"], [\"b\"], [\"a\"]]\n\
         required = [[\"b\", \"c\"], [\"c\", \"b\"]]\nforbid = []\n",
    );
    let ran = analyze_with_config(&data, &config, &[], &out);
    let err = common::assert_refused(&ran, &[]);
    assert!(err.contains("unknown field `forbid`"), "{err}");
    let config = s.write(
        "cycle.toml",
        "targets = [\"crush_strength\"]\n[knowledge]\ntiers = [[\"a\"], [\"b\"], [\"a\"]]\n\
         required = [[\"b\", \"c\"], [\"c\", \"b\"]]\n",
    );
    let ran = analyze_with_config(&data, &config, &[], &out);
    common::assert_refused(
        &ran,
        &[
            "knowledge: 'a' is in tier 1 and in tier 3",
            "knowledge: the required edges form a cycle: 'b' → 'c' → 'b'",
            "2 problem(s)",
        ],
    );
    assert!(!out.exists());
}

#[test]
fn a_batch_plan_takes_the_same_knowledge_table_per_study() {
    let s = Scratch::new("knowledge-batch");
    common::write_demo_csv(&s);
    let plan = s.write(
        "plan.toml",
        "[defaults]\nreplicates = 0\n\n[[study]]\nname = \"pores\"\ndata = \"filter_discs.csv\"\n\
         targets = [\"pore_density\"]\n[study.knowledge]\n\
         tiers = [[\"binder_fraction\"], [\"pore_density\"]]\n",
    );
    let out = s.path("out");
    let ran = run([
        OsStr::new("batch"),
        plan.as_os_str(),
        OsStr::new("--out"),
        out.as_os_str(),
    ]);
    assert_success(&ran);
    let found: Vec<PathBuf> = walk(&out)
        .into_iter()
        .filter(|p| p.file_name() == Some(OsStr::new("result.json")))
        .collect();
    assert_eq!(found.len(), 1, "{found:?}");
    let r: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&found[0]).unwrap()).unwrap();
    assert_eq!(
        r["with_knowledge"]["claims"],
        serde_json::json!({"binder_fraction": "data_and_knowledge"})
    );
    let index = std::fs::read_to_string(out.join("index.md")).unwrap();
    assert!(
        index.contains(concat!(
            r"not\_identifiable; with knowledge: ",
            r"identified \{binder\_fraction\} (binder\_fraction on knowledge)"
        )),
        "{index}"
    );

    // A misspelt column in a study's knowledge is found by `batch --check`.
    let plan = s.write(
        "bad-plan.toml",
        "[[study]]\nname = \"pores\"\ndata = \"filter_discs.csv\"\ntargets = [\"pore_density\"]\n\
         [study.knowledge]\ntiers = [[\"binder_fractoin\"], [\"pore_density\"]]\n",
    );
    let ran = run([OsStr::new("batch"), plan.as_os_str(), OsStr::new("--check")]);
    common::assert_refused(
        &ran,
        &["'binder_fractoin' is not in the header; did you mean 'binder_fraction'?"],
    );
}

fn walk(dir: &Path) -> Vec<PathBuf> {
    let mut out = Vec::new();
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        if path.is_dir() {
            out.extend(walk(&path));
        } else {
            out.push(path);
        }
    }
    out
}
