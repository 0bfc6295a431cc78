//! Orientation through the neighbourhood (issue 14, part 3): the setting
//! `neighbourhood_orientation` runs the parent search of each lone neighbour of the target and
//! orients the edge by Meek's (1995) first rule on a v-structure found there. The expected claim
//! follows from the generating graph written beside the data (invented data), not from forebear's
//! output.

use crate::common::{analyze, assert_success, result_json, run, uniform_stream, Scratch};
use std::ffi::OsStr;
use std::path::PathBuf;

/// p1 → m ← p2 (independent causes: a v-structure at m), m → y → c, and an unrelated column u;
/// nonlinear, 1500 rows. y's Markov boundary is {m, c}, two lone links whose directions the data
/// at y cannot give; the search for m identifies {p1, p2}, and y, linked with m but with neither
/// of them, is then an effect of m: m → y, and y → c by the same rule.
fn collider_above_csv(s: &Scratch) -> PathBuf {
    let mut u = uniform_stream(0x9e37_79b9_7f4a_7c15);
    let mut text = String::from("p1,p2,m,y,c,u\n");
    for _ in 0..1500 {
        let p1 = 4.0 * u() - 2.0;
        let p2 = 4.0 * u() - 2.0;
        let m = p1 + p2.sin() * 2.0 + 0.8 * (u() - 0.5);
        let y = m.tanh() + 0.8 * (u() - 0.5);
        let c = y + 0.8 * (u() - 0.5);
        text.push_str(&format!(
            "{p1:.5},{p2:.5},{m:.5},{y:.5},{c:.5},{:.5}\n",
            u()
        ));
    }
    s.write("collider-above.csv", text)
}

#[test]
fn a_v_structure_at_a_neighbour_orients_the_edge_only_with_the_setting() {
    let s = Scratch::new("neighbourhood-collider");
    let data = collider_above_csv(&s);
    assert_success(&analyze(&s, &data, "y", &[]));
    let alone = result_json(&s.path("out"));
    assert_eq!(alone["outcome"], "not_identifiable", "data at y alone");
    assert!(alone.get("with_neighbourhood").is_none(), "off: no field");
    assert!(alone["settings"].get("neighbourhood_orientation").is_none());

    let config = s.write(
        "study.toml",
        "targets = [\"y\"]\nreplicates = 4\nneighbourhood_orientation = true\n",
    );
    let out = s.path("on");
    let output = run([
        OsStr::new("analyze"),
        data.as_os_str(),
        OsStr::new("--config"),
        config.as_os_str(),
        OsStr::new("--out"),
        out.as_os_str(),
    ]);
    assert_success(&output);
    let r = result_json(&out);
    assert_eq!(
        r["outcome"], "not_identifiable",
        "the data's own claim is unchanged"
    );
    assert_eq!(r["settings"]["neighbourhood_orientation"], true);
    let n = &r["with_neighbourhood"];
    assert_eq!(n["outcome"], "identified", "{n}");
    assert_eq!(n["parent_sets"], serde_json::json!([["m"]]));
    assert_eq!(n["claims"], serde_json::json!({"m": "data_neighbourhood"}));
    let mut m_parents: Vec<String> = n["member_searches"]["m"]["parents"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_str().unwrap().to_string())
        .collect();
    m_parents.sort();
    assert_eq!(m_parents, ["p1", "p2"]);
    let edge = |member: &str| {
        n["edges"]
            .as_array()
            .unwrap()
            .iter()
            .find(|e| e["member"] == member)
            .unwrap_or_else(|| panic!("no edge for {member}: {n}"))
            .clone()
    };
    let m = edge("m");
    assert_eq!(m["direction"], "into_target");
    let reason = m["reason"].as_str().unwrap();
    assert!(
        reason.contains("Meek's first rule")
            && (reason.contains("'p1'") || reason.contains("'p2'")),
        "the reason names the member's parents and the rule: {reason}"
    );
    let c = edge("c");
    assert_eq!(c["direction"], "out_of_target", "{c}");
    assert_eq!(c["basis"], "data_neighbourhood");
    // Replicates are read through their neighbourhoods too.
    let stability = &r["stability"]["with_neighbourhood"];
    assert!(
        stability["outcomes"]
            .as_array()
            .is_some_and(|o| !o.is_empty()),
        "{stability}"
    );
    // The dossier prints the reading and its reasons.
    let dossier = std::fs::read_to_string(out.join("dossier.md")).unwrap();
    assert!(dossier.contains("### Through the neighbours' searches"));
    assert!(dossier.contains("Gao and Ji (2015)"));
    // The re-run of verify computes the same reading.
    assert_success(&crate::common::verify(&out, &data, &[]));
}
