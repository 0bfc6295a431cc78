//! `forebear dependence` prints the p-value of the permutation test of the calibrated selection
//! (issue 11) beside T_n: every draw is made, so a dependence no draw reaches has p = 1/(N + 1); the
//! draws are keyed by the seed, so the same seed gives the same p-value.

use crate::common;
use crate::common::{assert_success, run, Scratch};
use std::path::Path;

/// An invented table of `rows` rows: x and w independent uniforms, m = x + noise, y = m² + noise
/// (so y depends on x only through m), and z unrelated to everything. Deterministic.
fn chain_csv(rows: usize) -> String {
    let mut next = common::uniform_stream(0x9e37_79b9_7f4a_7c15);
    let mut text = String::from("x,m,y,z\n");
    for _ in 0..rows {
        let x = next();
        let m = x + 0.3 * next();
        let y = m * m + 0.3 * next();
        let z = next();
        text.push_str(&format!("{x:.6},{m:.6},{y:.6},{z:.6}\n"));
    }
    text
}

/// The JSON of `forebear dependence DATA --json ARGS`.
fn dependence_json(data: &Path, args: &[&str]) -> serde_json::Value {
    let mut all = vec!["dependence", data.to_str().unwrap(), "--json"];
    all.extend(args);
    let output = run(all);
    assert_success(&output);
    serde_json::from_slice(&output.stdout).expect("stdout is JSON")
}

fn p_value(value: &serde_json::Value) -> f64 {
    value["p_value"].as_f64().expect("a p-value")
}

#[test]
fn a_clearly_dependent_pair_gets_the_smallest_p_value_one_over_n_plus_one() {
    let s = Scratch::new("dependence-p-dependent");
    let data = s.write("chain.csv", chain_csv(300));
    let value = dependence_json(
        &data,
        &["--response", "y", "--on", "m", "--permutations", "99"],
    );
    assert_eq!(value["permutations"], 99, "{value}");
    assert_eq!(value["exceedances"], 0, "{value}");
    assert_eq!(value["scheme"], "permutation", "{value}");
    assert!((p_value(&value) - 1.0 / 100.0).abs() < 1e-12, "{value}");
}

#[test]
fn an_independent_pair_is_not_rejected_at_five_percent() {
    let s = Scratch::new("dependence-p-independent");
    let data = s.write("chain.csv", chain_csv(300));
    let value = dependence_json(&data, &["--response", "y", "--on", "z"]);
    assert_eq!(value["permutations"], 199, "every draw is made: {value}");
    let p = p_value(&value);
    let exceedances = value["exceedances"].as_f64().unwrap();
    assert!((p - (exceedances + 1.0) / 200.0).abs() < 1e-12, "{value}");
    assert!(p > 0.05, "{value}");
}

#[test]
fn conditional_independence_given_a_third_column_is_not_rejected() {
    let s = Scratch::new("dependence-p-conditional");
    let data = s.write("chain.csv", chain_csv(300));
    // Unconditionally y depends on x strongly ...
    let marginal = dependence_json(&data, &["--response", "y", "--on", "x"]);
    assert!(
        (p_value(&marginal) - 1.0 / 200.0).abs() < 1e-12,
        "{marginal}"
    );
    // ... but not given m, which carries all of x's information about y: the local permutation
    // within pools of nearby rows of m keeps y's link with m and finds nothing more.
    let given = dependence_json(&data, &["--response", "y", "--on", "x", "--given", "m"]);
    assert_eq!(given["scheme"], "local_permutation", "{given}");
    assert!(p_value(&given) > 0.05, "{given}");
}

#[test]
fn the_same_seed_gives_the_same_p_value_and_the_text_prints_it_beside_t_n() {
    let s = Scratch::new("dependence-p-seed");
    let data = s.write("chain.csv", chain_csv(300));
    let args = [
        "--response",
        "y",
        "--on",
        "z",
        "--given",
        "m",
        "--seed",
        "7",
    ];
    let first = dependence_json(&data, &args);
    let second = dependence_json(&data, &args);
    assert_eq!(first, second);
    let mut text_args = vec!["dependence", data.to_str().unwrap()];
    text_args.extend(args);
    let output = run(text_args);
    assert_success(&output);
    let stdout = String::from_utf8(output.stdout).unwrap();
    let lines: Vec<&str> = stdout.lines().collect();
    assert!(lines[0].starts_with("T_n(y, z | m) = "), "{stdout}");
    let printed = forebear::report::markdown::p_value(p_value(&first));
    assert!(
        lines[1].starts_with(&format!("p = {printed}")),
        "the p-value of the JSON, in the text: {stdout}"
    );
    assert!(lines[1].contains("of 199 permutations"), "{stdout}");
}

#[test]
fn permutations_outside_one_to_the_limit_are_refused() {
    let s = Scratch::new("dependence-p-refused");
    let data = s.write("chain.csv", chain_csv(50));
    let data_path = data.to_str().unwrap();
    let output = run([
        "dependence",
        data_path,
        "--response",
        "y",
        "--on",
        "z",
        "--permutations",
        "0",
    ]);
    assert_eq!(output.status.code(), Some(2));
    assert!(common::stderr_of(&output).contains("--permutations 0"));
}
