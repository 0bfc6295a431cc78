//! ξ_n and its p-value against SciPy's `scipy.stats.chatterjeexi` (y_continuous=False, the
//! tie-corrected variance of Chatterjee 2021, Theorem 2.2), on fixtures made by the committed
//! script `tests/reference/make_fixtures.py` (SciPy version recorded in the fixture's `meta`).

use forebear::measure::xi::xi_test;
use forebear::rng::Key;
use serde_json::Value;

fn fixture() -> Value {
    let text = include_str!("reference/xi_scipy.json");
    serde_json::from_str(text).expect("fixture is JSON")
}

fn numbers(v: &Value) -> Vec<f64> {
    v.as_array()
        .expect("array")
        .iter()
        .map(|x| x.as_f64().expect("number"))
        .collect()
}

#[test]
fn statistic_and_p_value_match_scipy_chatterjeexi() {
    let fixture = fixture();
    let scipy = fixture["meta"]["scipy"].as_str().unwrap();
    let cases = fixture["cases"].as_array().unwrap();
    assert!(cases.len() >= 20, "fixture holds {} cases", cases.len());
    for case in cases {
        let name = case["name"].as_str().unwrap();
        let x = numbers(&case["x"]);
        let y = numbers(&case["y"]);
        let got = xi_test(&x, &y, &Key::new("xi", 1).finish()).expect("y is not constant");
        let statistic = case["statistic"].as_f64().unwrap();
        let p_value = case["pvalue"].as_f64().unwrap();
        assert!(
            (got.statistic - statistic).abs() < 1e-12,
            "{name}: ξ_n = {} vs SciPy {scipy} {statistic}",
            got.statistic
        );
        let tolerance = 1e-9 * p_value.max(1e-300) + 1e-14;
        assert!(
            (got.p_value - p_value).abs() <= tolerance,
            "{name}: p = {} vs SciPy {scipy} {p_value}",
            got.p_value
        );
    }
}

#[test]
fn fixture_exercises_ties_in_y_and_both_dependence_regimes() {
    let fixture = fixture();
    let cases = fixture["cases"].as_array().unwrap();
    let tied = cases.iter().filter(|c| {
        let mut y = numbers(&c["y"]);
        y.sort_by(f64::total_cmp);
        y.windows(2).any(|w| w[0] == w[1])
    });
    assert!(tied.count() >= 8, "cases with ties in y");
    assert!(cases.iter().any(|c| c["pvalue"].as_f64().unwrap() < 1e-6));
    assert!(cases.iter().any(|c| c["pvalue"].as_f64().unwrap() > 0.1));
}

#[test]
fn ties_in_x_are_broken_reproducibly_by_the_key() {
    // Chatterjee (2021), Section 1: ties among the X_i are broken uniformly at random. Here the draw
    // comes from the key, so the same key gives the same ξ_n and another key a nearby one.
    let x: Vec<f64> = (0..400).map(|i| (i % 7) as f64).collect();
    let y: Vec<f64> = (0..400)
        .map(|i| ((i * 37) % 101) as f64 / 20.0 + (i % 7) as f64 * 10.0)
        .collect();
    let a = xi_test(&x, &y, &Key::new("xi", 1).finish()).unwrap();
    let b = xi_test(&x, &y, &Key::new("xi", 1).finish()).unwrap();
    let c = xi_test(&x, &y, &Key::new("xi", 2).finish()).unwrap();
    assert_eq!(a, b);
    assert!(
        a.statistic > 0.3,
        "y depends strongly on x: {}",
        a.statistic
    );
    assert!(
        (a.statistic - c.statistic).abs() < 0.1,
        "other tie-breaks change ξ_n only a little"
    );
}
