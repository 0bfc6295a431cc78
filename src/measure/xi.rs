//! Chatterjee's correlation coefficient ξ_n (JASA 2021, "A new coefficient of correlation") and its
//! asymptotic test of independence with the tie-corrected variance.
//!
//! Sort the pairs by x (ties in x broken uniformly at random), let r_i = #{j : Y_j ≤ Y_(i)} and
//! l_i = #{j : Y_j ≥ Y_(i)}; then ξ_n = 1 − n·Σ|r_{i+1} − r_i| / (2·Σ l_i(n − l_i)) (Eq. 1.2).
//! Under independence √n·ξ_n → N(0, τ²) with τ² estimated as in Theorem 2.2:
//! τ̂² = (a_n − 2b_n + c_n²) / d_n² from the sorted ranks u_i and their partial sums v_i.

use super::coefficient::TargetRanks;
use super::neighbors::{equal_key_runs, keyed_order};
use crate::rng::Key;
use rand_core::Rng;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};

/// One direction of the test: how far y is a function of x.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, schemars::JsonSchema, Deserialize)]
pub struct XiTest {
    /// ξ_n(x, y).
    pub statistic: f64,
    /// One-sided asymptotic p-value P(N(0, 1) ≥ √n·ξ_n / τ̂) against "y depends on x".
    pub p_value: f64,
}

/// ξ_n(x, y) and its asymptotic p-value; ties in `x` are broken by the keyed streams of `key`.
/// Returns `None` when y is constant (the statistic is undefined).
pub fn xi_test(x: &[f64], y: &[f64], key: &Key) -> Option<XiTest> {
    let n = x.len();
    let order = tie_broken_order(x, key);
    let ranks = TargetRanks::new(y);
    let (r_all, l_all) = (ranks.at_most(), ranks.at_least());
    let r: Vec<u32> = order.iter().map(|&i| r_all[i as usize]).collect();
    let jumps: i128 = r
        .windows(2)
        .map(|w| (w[1] as i128 - w[0] as i128).abs())
        .sum();
    let n_i = n as i128;
    let spread: i128 = l_all.iter().map(|&l| l as i128 * (n_i - l as i128)).sum();
    if spread == 0 {
        return None;
    }
    let statistic = 1.0 - (n_i * jumps) as f64 / (2 * spread) as f64;
    let std = null_std(r_all, l_all)?;
    let p_value = normal_upper_tail(statistic / std);
    Some(XiTest { statistic, p_value })
}

/// Rows in increasing order of `x` (IEEE total order); rows with equal `x` in increasing order of
/// the first draw of their keyed stream, then by row. One parallel sort of (value, row) pairs, then
/// draws only for the rows that tie: the order of sorting every row by (x, draw, row).
fn tie_broken_order(x: &[f64], key: &Key) -> Vec<u32> {
    let mut keyed = keyed_order(x);
    let mut drawn: Vec<(u64, u32)> = Vec::new();
    let runs: Vec<std::ops::Range<usize>> =
        equal_key_runs(&keyed).filter(|run| run.len() > 1).collect();
    for run in runs {
        drawn.clear();
        drawn.extend(
            keyed[run.clone()]
                .iter()
                .map(|&(_, i)| (key.short_stream(u64::from(i)).next_u64(), i)),
        );
        drawn.sort_unstable();
        for (slot, &(_, i)) in keyed[run].iter_mut().zip(&drawn) {
            slot.1 = i;
        }
    }
    keyed.into_iter().map(|(_, i)| i).collect()
}

/// Standard deviation of ξ_n under independence: √(τ̂²/n), Chatterjee (2021) Theorem 2.2.
fn null_std(r: &[u32], l: &[u32]) -> Option<f64> {
    let n = r.len() as f64;
    // Sorted as integers: the same order as the doubles they convert to exactly.
    let mut sorted = r.to_vec();
    sorted.par_sort_unstable();
    let (mut a, mut b, mut c, mut partial) = (0.0, 0.0, 0.0, 0.0);
    for (k, &rank) in sorted.iter().enumerate() {
        let ui = f64::from(rank);
        let i = (k + 1) as f64;
        partial += ui;
        let weight = 2.0 * n - 2.0 * i + 1.0;
        a += weight * ui * ui;
        b += (partial + (n - i) * ui).powi(2);
        c += weight * ui;
    }
    let a = a / n.powi(4);
    let b = b / n.powi(5);
    let c = c / n.powi(3);
    let d = l.iter().map(|&li| li as f64 * (n - li as f64)).sum::<f64>() / n.powi(3);
    let tau2 = (a - 2.0 * b + c * c) / (d * d);
    (tau2 > 0.0 && tau2.is_finite()).then(|| (tau2 / n).sqrt())
}

/// P(N(0, 1) ≥ z), from the complementary error function of the pure-Rust `libm` (the same bits
/// on every platform).
pub fn normal_upper_tail(z: f64) -> f64 {
    0.5 * libm::erfc(z / std::f64::consts::SQRT_2)
}

/// Holm's step-down adjustment (Holm, Scand. J. Statist. 1979): p_(k) ↦ max_{j≤k} min(1, (m−j+1)·p_(j)).
/// Returns adjusted p-values in the input order.
pub fn holm_adjust(p_values: &[f64]) -> Vec<f64> {
    let m = p_values.len();
    let mut order: Vec<usize> = (0..m).collect();
    order.sort_by(|&a, &b| p_values[a].total_cmp(&p_values[b]).then(a.cmp(&b)));
    let mut adjusted = vec![0.0; m];
    let mut running: f64 = 0.0;
    for (rank, &i) in order.iter().enumerate() {
        let scaled = ((m - rank) as f64 * p_values[i]).min(1.0);
        running = running.max(scaled);
        adjusted[i] = running;
    }
    adjusted
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn untied_statistic_equals_the_rank_formula_of_eq_1_1() {
        // Chatterjee (2021) Eq. 1.1 for untied data: ξ_n = 1 − 3Σ|r_{i+1} − r_i| / (n² − 1).
        let x = [0.1, 0.4, 0.2, 0.9, 0.5, 0.3];
        let y = [3.0, 1.0, 6.0, 2.0, 5.0, 4.0];
        // sorted by x: rows 0,2,5,1,4,3 → y = 3,6,4,1,5,2 → r = 3,6,4,1,5,2
        let jumps = 3 + 2 + 3 + 4 + 3;
        let expected = 1.0 - 3.0 * jumps as f64 / 35.0;
        let got = xi_test(&x, &y, &Key::new("xi", 0).finish())
            .unwrap()
            .statistic;
        assert!((got - expected).abs() < 1e-12, "{got} vs {expected}");
    }

    /// The order of sorting every row by (x, first keyed draw, row), as the tie-break was first
    /// written (a full stream per row): `tie_broken_order` must give exactly this.
    fn order_by_full_sort(x: &[f64], key: &Key) -> Vec<u32> {
        let draws: Vec<u64> = (0..x.len())
            .map(|i| key.stream(i as u64).next_u64())
            .collect();
        let mut order: Vec<u32> = (0..x.len() as u32).collect();
        order.sort_by(|&a, &b| {
            let (a, b) = (a as usize, b as usize);
            x[a].total_cmp(&x[b])
                .then(draws[a].cmp(&draws[b]))
                .then(a.cmp(&b))
        });
        order
    }

    #[test]
    fn tie_broken_order_equals_sorting_every_row_by_value_draw_and_row() {
        let key = Key::new("xi-order", 3).finish();
        let mut rng = Key::new("xi-order-data", 1).finish().stream(0);
        for levels in [1u64, 2, 3, 10, 1000, u64::MAX] {
            for n in [2usize, 5, 64, 3000] {
                let x: Vec<f64> = (0..n)
                    .map(|_| match levels {
                        u64::MAX => crate::rng::standard_normal(&mut rng),
                        l => crate::rng::uniform_below(&mut rng, l) as f64 - 0.5 * l as f64,
                    })
                    .collect();
                assert_eq!(tie_broken_order(&x, &key), order_by_full_sort(&x, &key));
            }
        }
        // signed zeros are different values under total order
        let x = [0.0, -0.0, 0.0, -0.0, 1.0, 0.0];
        assert_eq!(tie_broken_order(&x, &key), order_by_full_sort(&x, &key));
    }

    #[test]
    fn holm_matches_the_worked_step_down() {
        // Holm (1979) procedure by hand: p = (0.01, 0.04, 0.03) with m = 3 →
        // sorted 0.01·3 = 0.03, 0.03·2 = 0.06, max(0.06, 0.04·1) = 0.06.
        let adjusted = holm_adjust(&[0.01, 0.04, 0.03]);
        let expected = [0.03, 0.06, 0.06];
        for (a, e) in adjusted.iter().zip(expected) {
            assert!((a - e).abs() < 1e-15);
        }
    }

    #[test]
    fn normal_tail_matches_tabulated_values() {
        // Standard normal table (Abramowitz and Stegun 1964, Table 26.1; from memory):
        // P(Z ≥ 1.96) = 0.0249979, P(Z ≥ 0) = 0.5.
        assert!((normal_upper_tail(1.96) - 0.0249979).abs() < 1e-6);
        assert_eq!(normal_upper_tail(0.0), 0.5);
    }
}
