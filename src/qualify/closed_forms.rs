//! T_n against closed forms and theorems of the literature (Azadkia and Chatterjee 2021, "A simple
//! measure of conditional dependence", Annals of Statistics; the check values of the project's
//! shared reference data, `check-values.md`). The data are drawn from keyed streams, so every
//! installation computes the same numbers.

use super::check::{Comparison, Measured};
use super::{Case, Group};
use crate::measure::{conditional_dependence, Scaling};
use crate::rng::{standard_normal, unit_interval, Key};
use rand_chacha::ChaCha20Rng;

const PAPER: &str = "Azadkia and Chatterjee (2021), A simple measure of conditional dependence, \
     Annals of Statistics, Theorem 2.1";

/// check-values.md: for a standard bivariate normal pair with correlation ρ,
/// T(Y, Z) = (3/π)·arcsin((1 + ρ²)/2) − 1/2 (quoted there "from memory", confirmed by numerical
/// integration of the definition); its table, checked against the formula by a unit test.
pub const BIVARIATE_NORMAL_TABLE: [(f64, f64); 5] = [
    (0.0, 0.0),
    (0.3, 0.050411),
    (0.5, 0.144703),
    (0.8, 0.418080),
    (0.95, 0.700598),
];

/// T(Y, Z) of a standard bivariate normal pair with correlation ρ (check-values.md).
pub fn bivariate_normal_t(rho: f64) -> f64 {
    3.0 / std::f64::consts::PI * ((1.0 + rho * rho) / 2.0).asin() - 0.5
}

/// The closed-form cases.
pub fn cases() -> Vec<Case> {
    let mut cases: Vec<Case> = BIVARIATE_NORMAL_TABLE
        .into_iter()
        .skip(1)
        .map(|(rho, truth)| {
            Case::new(
                &format!("t-n.bivariate-normal.rho-{rho}"),
                Group::ClosedForm,
                &format!(
                    "T_n of a bivariate normal pair with ρ = {rho}, n = 20 000, is within 4 \
                     standard errors (0.04) of the closed form T = (3/π)·arcsin((1 + ρ²)/2) − 1/2"
                ),
                "check-values.md (closed form, confirmed by numerical integration of the \
                 definition of T in Azadkia and Chatterjee 2021)",
                move || vec![bivariate_normal(rho, truth)],
            )
        })
        .collect();
    cases.extend([
        Case::new(
            "t-n.noiseless-function",
            Group::ClosedForm,
            "T = 1 iff Y is a measurable function of Z: Y = sin(3Z) + Z², n = 10 000, gives T_n ≥ 0.9",
            PAPER,
            noiseless_function,
        ),
        Case::new(
            "t-n.independent",
            Group::ClosedForm,
            "T = 0 iff Y ⊥ Z: two independent uniform columns, n = 10 000, give |T_n| < 0.06 (4 \
             standard errors)",
            PAPER,
            independent,
        ),
        Case::new(
            "t-n.conditional-independence",
            Group::ClosedForm,
            "T(Y, Z | X) = 0 when Y and Z depend on X only (n = 10 000): |T_n| < 0.06, while the \
             pair is dependent marginally (T_n ≥ 0.05)",
            PAPER,
            conditional_independence,
        ),
        Case::new(
            "t-n.modular-sum",
            Group::ClosedForm,
            "Y = (X1 + X2 + X3) mod 1, X_i i.i.d. uniform, n = 20 000: T(Y, X1) = 0 and \
             T(Y, X1 | X2) = 0 (|T_n| < 0.04), T(Y, X3 | X1, X2) = 1 (T_n ≥ 0.8)",
            "check-values.md (the modular-sum example; Azadkia and Chatterjee 2021, Theorem 2.1)",
            modular_sum,
        ),
        Case::new(
            "t-n.monotone-invariance",
            Group::ClosedForm,
            "T_n depends on Y only through its ranks: T_n(exp Y, Z) equals T_n(Y, Z) exactly \
             (n = 2 000)",
            "Azadkia and Chatterjee (2021), Section 2 (the estimator uses ranks of Y only)",
            monotone_invariance,
        ),
    ]);
    cases
}

/// T_n(Y, Z | X) with rank-scaled predictors, as the search computes it; NaN when undefined.
fn t_n(y: &[f64], z: &[&[f64]], x: &[&[f64]]) -> f64 {
    let scale = |cols: &[&[f64]]| -> Vec<Vec<f64>> {
        cols.iter().map(|c| Scaling::Rank.apply(c)).collect()
    };
    let (zs, xs) = (scale(z), scale(x));
    let zr: Vec<&[f64]> = zs.iter().map(Vec::as_slice).collect();
    let xr: Vec<&[f64]> = xs.iter().map(Vec::as_slice).collect();
    let key = |label: &str| Key::new(label, 1).finish();
    conditional_dependence(y, &zr, &xr, &key("x"), &key("xz"))
        .value()
        .unwrap_or(f64::NAN)
}

/// `k` columns of `n` draws: column `c` of row `i` comes from stream i of the label's key.
fn columns(label: &str, n: usize, k: usize, draw: fn(&mut ChaCha20Rng) -> f64) -> Vec<Vec<f64>> {
    let key = Key::new(label, 7).finish();
    let mut cols = vec![Vec::with_capacity(n); k];
    for i in 0..n {
        let mut rng = key.stream(i as u64);
        for col in cols.iter_mut() {
            col.push(draw(&mut rng));
        }
    }
    cols
}

fn normal(rng: &mut ChaCha20Rng) -> f64 {
    standard_normal(rng)
}

fn uniform(rng: &mut ChaCha20Rng) -> f64 {
    unit_interval(rng)
}

fn bivariate_normal(rho: f64, truth: f64) -> Measured {
    let base = columns(&format!("bvn-{rho}"), 20_000, 2, normal);
    let z: Vec<f64> = base[0]
        .iter()
        .zip(&base[1])
        .map(|(a, b)| rho * a + (1.0 - rho * rho).sqrt() * b)
        .collect();
    Measured::new(
        "T_n(Y, Z)",
        Comparison::Within {
            expected: truth,
            observed: t_n(&base[0], &[&z], &[]),
            tolerance: 0.04,
        },
    )
}

fn noiseless_function() -> Vec<Measured> {
    let cols = columns("noiseless", 10_000, 1, normal);
    let z = &cols[0];
    let y: Vec<f64> = z.iter().map(|v| (3.0 * v).sin() + v * v).collect();
    vec![Measured::new(
        "T_n(Y, Z)",
        Comparison::AtLeast {
            bound: 0.9,
            observed: t_n(&y, &[z], &[]),
        },
    )]
}

fn near_zero(quantity: &str, observed: f64, bound: f64) -> Measured {
    Measured::new(
        format!("|{quantity}|"),
        Comparison::Below {
            bound,
            observed: observed.abs(),
        },
    )
}

fn independent() -> Vec<Measured> {
    let cols = columns("independent", 10_000, 2, uniform);
    vec![near_zero(
        "T_n(Y, Z)",
        t_n(&cols[0], &[&cols[1]], &[]),
        0.06,
    )]
}

fn conditional_independence() -> Vec<Measured> {
    let cols = columns("ci", 10_000, 3, normal);
    let x = &cols[0];
    let y: Vec<f64> = x
        .iter()
        .zip(&cols[1])
        .map(|(a, e)| a.sin() + 0.3 * e)
        .collect();
    let z: Vec<f64> = x
        .iter()
        .zip(&cols[2])
        .map(|(a, e)| a * a + 0.3 * e)
        .collect();
    vec![
        near_zero("T_n(Y, Z | X)", t_n(&y, &[&z], &[x]), 0.06),
        Measured::new(
            "T_n(Y, Z) (marginal, must be dependent)",
            Comparison::AtLeast {
                bound: 0.05,
                observed: t_n(&y, &[&z], &[]),
            },
        ),
    ]
}

fn modular_sum() -> Vec<Measured> {
    let cols = columns("modular", 20_000, 3, uniform);
    let y: Vec<f64> = (0..20_000)
        .map(|i| (cols[0][i] + cols[1][i] + cols[2][i]).fract())
        .collect();
    vec![
        near_zero("T_n(Y, X1)", t_n(&y, &[&cols[0]], &[]), 0.04),
        near_zero("T_n(Y, X1 | X2)", t_n(&y, &[&cols[0]], &[&cols[1]]), 0.04),
        Measured::new(
            "T_n(Y, X3 | X1, X2)",
            Comparison::AtLeast {
                bound: 0.8,
                observed: t_n(&y, &[&cols[2]], &[&cols[0], &cols[1]]),
            },
        ),
    ]
}

fn monotone_invariance() -> Vec<Measured> {
    let cols = columns("monotone", 2_000, 2, normal);
    let y: Vec<f64> = cols[0]
        .iter()
        .zip(&cols[1])
        .map(|(a, b)| a + 0.5 * b)
        .collect();
    let y_exp: Vec<f64> = y.iter().map(|v| v.exp()).collect();
    let shown = |v: f64| format!("{v:?}");
    vec![Measured::new(
        "T_n(exp Y, Z) against T_n(Y, Z)",
        Comparison::Exact {
            expected: shown(t_n(&y, &[&cols[0]], &[])),
            observed: shown(t_n(&y_exp, &[&cols[0]], &[])),
        },
    )]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn check_value_table_agrees_with_its_closed_form() {
        for (rho, t) in BIVARIATE_NORMAL_TABLE {
            assert!((bivariate_normal_t(rho) - t).abs() < 1e-6, "ρ = {rho}");
        }
    }
}
