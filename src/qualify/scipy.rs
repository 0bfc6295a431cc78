//! ξ_n and its p-value against SciPy's `scipy.stats.chatterjeexi` (y_continuous=False, the
//! tie-corrected variance of Chatterjee 2021, "A new coefficient of correlation", JASA,
//! Theorem 2.2), on the committed fixture made by `tests/reference/make_fixtures.py` (SciPy and
//! NumPy versions recorded in its `meta`). The fixture is compiled into the binary
//! ([`super::embedded`]).

use super::check::{Comparison, Measured};
use super::embedded::{CHI2_SCIPY, XI_SCIPY};
use super::{Case, Group};
use crate::measure::xi::xi_test;
use crate::rng::Key;
use serde::Deserialize;

/// Tolerance of ξ_n: the statistic is a ratio of integers, so only rounding differs.
pub const STATISTIC_TOLERANCE: f64 = 1e-12;

/// The versions that made a fixture.
#[derive(Clone, Debug, Deserialize)]
pub struct Meta {
    /// SciPy's version.
    pub scipy: String,
    /// NumPy's version.
    pub numpy: String,
}

/// One case of the ξ_n fixture.
#[derive(Clone, Debug, Deserialize)]
pub struct XiCase {
    /// e.g. `quadratic_n1000`.
    pub name: String,
    /// Predictor values (no ties).
    pub x: Vec<f64>,
    /// Response values (ties in some cases).
    pub y: Vec<f64>,
    /// SciPy's ξ_n.
    pub statistic: f64,
    /// SciPy's p-value.
    pub pvalue: f64,
}

/// The ξ_n fixture.
#[derive(Clone, Debug, Deserialize)]
pub struct XiFixture {
    /// Versions.
    pub meta: Meta,
    /// The cases.
    pub cases: Vec<XiCase>,
}

/// The embedded ξ_n fixture, parsed.
pub fn xi_fixture() -> Result<XiFixture, String> {
    let text = XI_SCIPY.text()?;
    serde_json::from_str(&text).map_err(|e| format!("{}: {e}", XI_SCIPY.path))
}

/// One upper quantile of the chi-square distribution.
#[derive(Clone, Debug, Deserialize)]
struct Quantile {
    df: usize,
    upper: f64,
    critical: f64,
}

#[derive(Clone, Debug, Deserialize)]
struct Chi2Fixture {
    quantiles: Vec<Quantile>,
}

/// `scipy.stats.chi2.ppf(1 − upper, df)` from the embedded fixture.
pub fn chi_square_critical(df: usize, upper: f64) -> Option<f64> {
    let fixture: Chi2Fixture = serde_json::from_str(&CHI2_SCIPY.text().ok()?).ok()?;
    fixture
        .quantiles
        .iter()
        .find(|q| q.df == df && q.upper == upper)
        .map(|q| q.critical)
}

/// The tolerance of a p-value: relative 1e-9 (the normal tail is computed by another library),
/// plus 1e-14 absolute for p-values that underflow to 0 in one of the two.
pub fn p_value_tolerance(p_value: f64) -> f64 {
    1e-9 * p_value.max(1e-300) + 1e-14
}

/// One case per fixture entry: ξ_n and the p-value.
pub fn cases() -> Vec<Case> {
    let fixture = match xi_fixture() {
        Ok(fixture) => fixture,
        Err(reason) => return vec![unreadable_fixture(reason)],
    };
    let source = format!(
        "SciPy {} (NumPy {}) scipy.stats.chatterjeexi(x, y, y_continuous=False), fixture \
         tests/reference/xi_scipy.json made by tests/reference/make_fixtures.py",
        fixture.meta.scipy, fixture.meta.numpy
    );
    fixture
        .cases
        .into_iter()
        .map(|case| {
            Case::new(
                &format!("xi.scipy.{}", case.name),
                Group::SciPy,
                &format!(
                    "ξ_n and its tie-corrected asymptotic p-value (Chatterjee 2021, Theorem 2.2) \
                     on the fixture's {} ({} rows) equal SciPy's",
                    case.name,
                    case.x.len()
                ),
                &source,
                move || xi_against_scipy(&case),
            )
        })
        .collect()
}

/// The one case left when the embedded fixture cannot be read: it fails, naming why.
fn unreadable_fixture(reason: String) -> Case {
    Case::new(
        "xi.scipy.fixture",
        Group::SciPy,
        "the embedded SciPy fixture can be read",
        XI_SCIPY.path,
        move || {
            vec![Measured::new(
                "fixture",
                Comparison::Exact {
                    expected: "readable".into(),
                    observed: reason.clone(),
                },
            )]
        },
    )
}

/// ξ_n and its p-value on one fixture case, compared with SciPy's.
pub fn xi_against_scipy(case: &XiCase) -> Vec<Measured> {
    let got = xi_test(&case.x, &case.y, &Key::new("xi", 1).finish());
    let (statistic, p_value) = got.map_or((f64::NAN, f64::NAN), |t| (t.statistic, t.p_value));
    vec![
        Measured::new(
            "ξ_n",
            Comparison::Within {
                expected: case.statistic,
                observed: statistic,
                tolerance: STATISTIC_TOLERANCE,
            },
        ),
        Measured::new(
            "p-value",
            Comparison::Within {
                expected: case.pvalue,
                observed: p_value,
                tolerance: p_value_tolerance(case.pvalue),
            },
        ),
    ]
}
