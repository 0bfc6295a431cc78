//! Pairwise marginal independence of the members of one component: Chatterjee's ξ_n (JASA 2021)
//! with its asymptotic test, in both directions, and under the calibrated rule also of each column
//! on the other's distance from its median (dependence in spread).

use super::parents::{Component, PairTest};
use super::SearchData;
use crate::measure::xi::{holm_adjust, xi_test, XiTest};

/// Tests every pair of `columns` and decides whether the component passes as a parent set (two or
/// more members, pairwise independent); `scale` (the calibrated rule) adds the spread directions
/// and judges each direction on its own p-value.
pub(super) fn test_component(
    data: &SearchData,
    columns: &[usize],
    is_clique: bool,
    alpha: f64,
    scale: bool,
) -> Component {
    struct Raw {
        a: usize,
        b: usize,
        directions: [Option<XiTest>; 4],
    }
    let mut raw_tests = Vec::new();
    for (i, &a) in columns.iter().enumerate() {
        for &b in &columns[i + 1..] {
            let ab = xi_test(data.raw(a), data.raw(b), &data.xi_key(a, b));
            let ba = xi_test(data.raw(b), data.raw(a), &data.xi_key(b, a));
            let (ab_scale, ba_scale) = match scale {
                false => (None, None),
                true => (
                    xi_test(data.raw(a), &spread(data.raw(b)), &data.xi_key(a, b)),
                    xi_test(data.raw(b), &spread(data.raw(a)), &data.xi_key(b, a)),
                ),
            };
            raw_tests.push(Raw {
                a,
                b,
                directions: [ab, ba, ab_scale, ba_scale],
            });
        }
    }
    // An undefined direction (constant column) gives no evidence of dependence: p = 1. Scale
    // directions are tested only under the calibrated rule.
    let per_pair = if scale { 4 } else { 2 };
    let p: Vec<f64> = raw_tests
        .iter()
        .flat_map(|t| {
            t.directions[..per_pair]
                .iter()
                .map(|d| d.map_or(1.0, |t| t.p_value))
        })
        .collect();
    let adjusted = holm_adjust(&p);
    // The natural rule decides on Holm-adjusted p-values, as published. Under the calibrated rule a
    // group is claimed only if every direction looks independent, so a correction for multiplicity
    // (which raises p-values) would make a claim easier, not harder: each direction is judged on
    // its own p-value at α, and more directions can only withdraw a claim.
    let decide_on = if scale { &p } else { &adjusted };
    let tests: Vec<PairTest> = raw_tests
        .into_iter()
        .enumerate()
        .map(|(t, raw)| {
            let holm = &adjusted[per_pair * t..per_pair * (t + 1)];
            let decided = &decide_on[per_pair * t..per_pair * (t + 1)];
            let [ab, ba, ab_scale, ba_scale] = raw.directions;
            PairTest {
                a: data.name(raw.a).to_string(),
                b: data.name(raw.b).to_string(),
                a_to_b: ab,
                b_to_a: ba,
                a_to_b_holm: holm[0],
                b_to_a_holm: holm[1],
                a_to_b_scale: ab_scale,
                b_to_a_scale: ba_scale,
                a_to_b_scale_holm: holm.get(2).copied(),
                b_to_a_scale_holm: holm.get(3).copied(),
                independent: decided.iter().all(|&q| q > alpha),
            }
        })
        .collect();
    let pairwise_independent = tests.iter().all(|t| t.independent);
    Component {
        members: columns.iter().map(|&j| data.name(j).to_string()).collect(),
        is_clique,
        passes: columns.len() >= 2 && pairwise_independent,
        pairwise_independent,
        screening: Vec::new(),
        tests,
    }
}

/// |v − median(v)|: how far each value lies from the middle. ξ_n of a column on this spread sees
/// dependence that changes only the scale of the other column, which ξ_n on the values themselves
/// detects with little power (the lower median for an even count; the choice does not matter for
/// the ranks that follow).
fn spread(values: &[f64]) -> Vec<f64> {
    let mut sorted = values.to_vec();
    sorted.sort_by(f64::total_cmp);
    let median = sorted[(sorted.len() - 1) / 2];
    values.iter().map(|v| (v - median).abs()).collect()
}
