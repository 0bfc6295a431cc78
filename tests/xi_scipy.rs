//! ξ_n and its p-value against SciPy's `scipy.stats.chatterjeexi` (y_continuous=False, the
//! tie-corrected variance of Chatterjee 2021, Theorem 2.2), on fixtures made by the committed
//! script `tests/reference/make_fixtures.py` (SciPy version recorded in the fixture's `meta`). The
//! fixture is compiled into the library (`forebear::qualify::scipy`), which holds the comparison.

use crate::common::assert_reference_cases_pass;
use forebear::measure::xi::xi_test;
use forebear::qualify::scipy::xi_fixture;
use forebear::rng::Key;

#[test]
fn statistic_and_p_value_match_scipy_chatterjeexi() {
    // The comparison is defined once, in src/qualify/scipy.rs, and `forebear qualify` records it.
    assert!(assert_reference_cases_pass("xi.scipy.") >= 20);
}

#[test]
fn fixture_exercises_ties_in_y_and_both_dependence_regimes() {
    let cases = xi_fixture().expect("the embedded fixture reads").cases;
    let tied = cases.iter().filter(|c| {
        let mut y = c.y.clone();
        y.sort_by(f64::total_cmp);
        y.windows(2).any(|w| w[0] == w[1])
    });
    assert!(tied.count() >= 8, "cases with ties in y");
    assert!(cases.iter().any(|c| c.pvalue < 1e-6));
    assert!(cases.iter().any(|c| c.pvalue > 0.1));
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
