//! Permutation tests of conditional independence for T_n, with the multiplicity over candidates
//! handled by the maximum statistic and Monte Carlo p-values that stop early.
//!
//! - **Null draws.** With an empty conditioning set X the response is permuted (exact under
//!   Y ⊥ Z); with a non-empty X it is permuted locally, within blocks of rows that lie close
//!   together in X (`neighbors::blocks`; Runge 2018, AISTATS; Kim, Neykov, Balakrishnan and
//!   Wasserman 2022, Ann. Statist.). Permuting the response rather than the candidates keeps every
//!   neighbour structure of the step (the neighbours in X and in X plus each candidate depend on
//!   the predictors only), so one draw costs a recount of ranks and one pass per candidate, and one
//!   draw serves every candidate at once.
//! - **Multiplicity.** The statistic of a step is the largest T_n over the remaining candidates,
//!   compared with the largest over the same candidates in each draw: the single-step maximum-T
//!   method of Westfall and Young (1993, "Resampling-Based Multiple Testing"), which keeps the
//!   dependence between candidates.
//! - **Sequential p-values** (Besag and Clifford 1991, Biometrika 78(2), "Sequential Monte Carlo
//!   p-values"): draws stop as soon as `h = ⌊α·B⌋ + 1` of them reach the observed value, with
//!   p = h / L after L draws; otherwise all B are drawn and p = (G + 1) / (B + 1) with G draws at
//!   or above it. Stopping early never changes the decision at level α: h / L > α for L ≤ B.
//!
//! Draw b of a test is keyed by what the test is for and by b (`rng::Key`), never by the order in
//! which draws are computed, so the p-value does not depend on the thread count. Its shuffles read
//! the ChaCha20 stream 32 bits at a time through Lemire's multiply-and-reject method
//! (`rng::uniform_below_u32`; since forebear-method/6, before which each index took 64 bits and
//! two divisions): a draw costs about half the stream and no division.

use super::coefficient::{min_rank_sum, rank_sum, TargetRanks};
use super::neighbors::blocks::{random_order, Blocks};
use crate::rng::Key;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};

/// Fewest rows per block of the local permutation (blocks hold 5 to 9 rows, or one stratum of a
/// discrete X): Runge (2018) permutes among 5 to 10 nearest neighbours in his experiments (from
/// memory); docs/calibration.md measured the level with this value.
pub const LOCAL_PERMUTATION_ROWS: usize = 5;

/// How the null draws of a test were made.
#[derive(Clone, Copy, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum NullScheme {
    /// The response permuted over all rows (empty conditioning set).
    Permutation,
    /// The response permuted within blocks of nearby rows of the conditioning set.
    LocalPermutation,
}

/// The result of one permutation test.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct PermutationTest {
    /// The Monte Carlo p-value (Besag and Clifford 1991).
    pub p_value: f64,
    /// Null draws made.
    pub permutations: u32,
    /// Draws whose statistic reached the observed one.
    pub exceedances: u32,
    /// How the draws were made.
    pub scheme: NullScheme,
    /// The value the statistic had to exceed to be significant at the level of the test, when
    /// every draw was made (the ⌊α(B + 1)⌋-th largest of the B draws).
    pub critical_t_n: Option<f64>,
}

/// How many draws a test may make, at which level, and whether it must make them all.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TestPlan {
    /// Most null draws B.
    pub max_permutations: u32,
    /// Level α of the decision.
    pub alpha: f64,
    /// Make all B draws even when the decision is already known (for the critical value).
    pub exhaustive: bool,
}

impl TestPlan {
    /// Exceedances after which the decision "not significant" is certain: ⌊α·B⌋ + 1.
    pub fn stop_after(&self) -> u32 {
        (self.alpha * f64::from(self.max_permutations)).floor() as u32 + 1
    }

    /// Fewest draws with which a p-value can reach α: (G + 1)/(B + 1) ≤ α needs B ≥ 1/α − 1.
    pub fn fewest_permutations(alpha: f64) -> u32 {
        ((1.0 / alpha).ceil() as u32).saturating_sub(1).max(1)
    }
}

/// The observed statistic of a step and the neighbour structures it was computed from.
pub struct Observed<'a> {
    /// Ranks of the observed response.
    pub ranks: &'a TargetRanks,
    /// Neighbours in the conditioning set X (`None`: X is empty).
    pub conditioning: Option<&'a [u32]>,
    /// Neighbours in X plus each candidate.
    pub joints: Vec<&'a [u32]>,
    /// Numerator of the largest observed T_n.
    pub numerator: i128,
    /// Its denominator (positive).
    pub denominator: i128,
}

/// Draws made in parallel before the stopping rule looks at them (in draw order).
const BATCH: u32 = 16;

/// Tests the largest T_n of `observed` against draws of the response: permuted when `blocks` is
/// `None`, else permuted within the blocks (which must be those of the conditioning set).
pub fn max_statistic_test(
    observed: &Observed,
    blocks: Option<&Blocks>,
    key: &Key,
    plan: &TestPlan,
) -> PermutationTest {
    max_statistic_tests(observed, blocks, key, plan).0
}

/// As [`max_statistic_test`], and with an exhaustive plan also the test that the same plan without
/// `exhaustive` reports. Draw b is the same draw either way (keyed by b), so the test that stops
/// early is the prefix of the exhaustive draws up to the ⌊α·B⌋ + 1-th exceedance; when there is no
/// such draw, both make every draw and are equal. The decision is the same too (module docs: a
/// stopped test has h/L > α, and its exhaustive twin has G ≥ h, so (G + 1)/(B + 1) > α).
pub fn max_statistic_tests(
    observed: &Observed,
    blocks: Option<&Blocks>,
    key: &Key,
    plan: &TestPlan,
) -> (PermutationTest, Option<PermutationTest>) {
    assert!(observed.denominator > 0, "a defined statistic");
    assert!(plan.max_permutations >= 1);
    let stop_after = plan.stop_after();
    let mut exceedances = 0u32;
    let mut draws: Vec<(i128, i128)> = Vec::new();
    let mut made = 0u32;
    let mut stopped = false;
    // With an exhaustive plan: the draw count at which a plan that stops early would have stopped.
    let mut would_stop_at: Option<u32> = None;
    while made < plan.max_permutations && !stopped {
        let batch: Vec<(i128, i128)> = (made..(made + BATCH).min(plan.max_permutations))
            .into_par_iter()
            .map(|b| null_statistic(observed, blocks, key, b))
            .collect();
        for draw in batch {
            made += 1;
            if reaches(observed, draw) {
                exceedances += 1;
            }
            draws.push(draw);
            if exceedances == stop_after {
                if !plan.exhaustive {
                    stopped = true;
                    break;
                }
                would_stop_at.get_or_insert(made);
            }
        }
    }
    let scheme = match blocks {
        None => NullScheme::Permutation,
        Some(_) => NullScheme::LocalPermutation,
    };
    let p_value = if stopped {
        f64::from(exceedances) / f64::from(made)
    } else {
        f64::from(exceedances + 1) / f64::from(made + 1)
    };
    let critical_t_n = (!stopped && made == plan.max_permutations)
        .then(|| critical_value(observed, &mut draws, plan))
        .flatten();
    let test = PermutationTest {
        p_value,
        permutations: made,
        exceedances,
        scheme,
        critical_t_n,
    };
    let early = plan.exhaustive.then(|| match would_stop_at {
        Some(at) => PermutationTest {
            p_value: f64::from(stop_after) / f64::from(at),
            permutations: at,
            exceedances: stop_after,
            scheme,
            critical_t_n: None,
        },
        None => test.clone(),
    });
    (test, early)
}

/// The largest numerator over the candidates in draw b, and the draw's denominator.
fn null_statistic(observed: &Observed, blocks: Option<&Blocks>, key: &Key, b: u32) -> (i128, i128) {
    let n = observed.ranks.n();
    let mut rng = key.stream(u64::from(b));
    let mut source = Vec::with_capacity(n);
    match blocks {
        None => random_order(n, &mut rng, &mut source),
        Some(blocks) => blocks.draw(&mut rng, &mut source),
    }
    // The numerators as `TargetRanks::numerator` computes them, with the part every candidate
    // shares computed once (`tests::shared_parts_give_the_numerators_of_target_ranks`).
    match observed.conditioning {
        None => {
            let ranks = observed.ranks.permuted(&source, &mut Vec::new());
            let n = ranks.n() as i128;
            (
                n * best_joint_sum(observed, ranks.at_most()) - ranks.at_least_square_sum(),
                ranks.denominator(None),
            )
        }
        Some(conditioning) => {
            // Given X only R enters: Σ min(R_i, R_M(i)) − Σ min(R_i, R_N(i)) over Σ R_i − the same.
            let mut at_most = Vec::with_capacity(n);
            observed
                .ranks
                .permuted_at_most(&source, &mut Vec::new(), &mut at_most);
            let shared = min_rank_sum(&at_most, conditioning);
            (
                best_joint_sum(observed, &at_most) - shared,
                rank_sum(&at_most) - shared,
            )
        }
    }
}

/// The largest Σ min(R_i, R_M(i)) over the candidates' neighbours M, for ranks R.
fn best_joint_sum(observed: &Observed, at_most: &[u32]) -> i128 {
    // Four candidates per pass over the rows: each R_i is read once for the four sums.
    let mut groups = observed.joints.chunks_exact(4);
    let mut best = None;
    for group in groups.by_ref() {
        let sums = min_rank_sums_of_four(at_most, [group[0], group[1], group[2], group[3]]);
        best = sums.into_iter().chain(best).max();
    }
    groups
        .remainder()
        .iter()
        .map(|joint| min_rank_sum(at_most, joint))
        .chain(best)
        .max()
        .expect("at least one candidate")
}

/// [`min_rank_sum`] of four neighbour lists in one pass over the rows.
fn min_rank_sums_of_four(at_most: &[u32], joints: [&[u32]; 4]) -> [i128; 4] {
    let n = at_most.len();
    let [a, b, c, d] = joints.map(|joint| &joint[..n]);
    let mut sums = [0u64; 4];
    for (i, &ri) in at_most.iter().enumerate() {
        sums[0] += u64::from(ri.min(at_most[a[i] as usize]));
        sums[1] += u64::from(ri.min(at_most[b[i] as usize]));
        sums[2] += u64::from(ri.min(at_most[c[i] as usize]));
        sums[3] += u64::from(ri.min(at_most[d[i] as usize]));
    }
    sums.map(i128::from)
}

/// Whether a draw's statistic is at least the observed one, compared exactly. A draw whose
/// denominator is zero (its response a function of X) has no value; it counts as reaching the
/// observed one, which can only raise the p-value.
fn reaches(observed: &Observed, (numerator, denominator): (i128, i128)) -> bool {
    if denominator == 0 {
        return true;
    }
    match observed.conditioning {
        // A permutation keeps Σ L(n − L): the denominators are equal.
        None => numerator >= observed.numerator,
        Some(_) => numerator * observed.denominator >= observed.numerator * denominator,
    }
}

/// The ⌊α(B + 1)⌋-th largest draw: an observed value above it gives G ≤ ⌊α(B + 1)⌋ − 1, so
/// (G + 1)/(B + 1) ≤ α.
fn critical_value(observed: &Observed, draws: &mut [(i128, i128)], plan: &TestPlan) -> Option<f64> {
    let rank = (plan.alpha * f64::from(plan.max_permutations + 1)).floor() as usize;
    if rank == 0 || rank > draws.len() {
        return None;
    }
    let unconditional = observed.conditioning.is_none();
    draws.sort_by(|a, b| {
        let (a_inf, b_inf) = (a.1 == 0, b.1 == 0);
        match (a_inf, b_inf) {
            (true, true) => std::cmp::Ordering::Equal,
            (true, false) => std::cmp::Ordering::Less,
            (false, true) => std::cmp::Ordering::Greater,
            // descending by value
            _ if unconditional => b.0.cmp(&a.0),
            _ => (b.0 * a.1).cmp(&(a.0 * b.1)),
        }
    });
    let (numerator, denominator) = draws[rank - 1];
    (denominator != 0).then(|| numerator as f64 / denominator as f64)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sums_of_four_candidates_equal_the_sums_one_by_one() {
        let mut rng = Key::new("sums-of-four", 1).finish().stream(0);
        let n = 257;
        let at_most: Vec<u32> = (0..n)
            .map(|_| crate::rng::uniform_below(&mut rng, n as u64) as u32 + 1)
            .collect();
        let joints: Vec<Vec<u32>> = (0..4)
            .map(|_| {
                (0..n)
                    .map(|_| crate::rng::uniform_below(&mut rng, n as u64) as u32)
                    .collect()
            })
            .collect();
        let four =
            min_rank_sums_of_four(&at_most, [&joints[0], &joints[1], &joints[2], &joints[3]]);
        for (k, joint) in joints.iter().enumerate() {
            assert_eq!(four[k], min_rank_sum(&at_most, joint));
        }
    }

    #[test]
    fn early_stops_never_reject_and_full_runs_reject_as_the_plain_p_value() {
        // h / L > α for every L ≤ B, so a stopped test is never significant (Besag and Clifford
        // 1991: the sequential p-value h/L).
        for (alpha, b) in [
            (0.05, 199u32),
            (0.05, 210),
            (0.01, 999),
            (0.1, 19),
            (0.05, 99),
        ] {
            let plan = TestPlan {
                max_permutations: b,
                alpha,
                exhaustive: false,
            };
            let h = plan.stop_after();
            assert!(f64::from(h) / f64::from(b) > alpha, "α {alpha}, B {b}");
            // Without the stop, G ≤ h − 1 exceedances; the largest such G may or may not reject,
            // but G = h could never: (h + 1)/(B + 1) > α.
            assert!(f64::from(h + 1) / f64::from(b + 1) > alpha);
        }
        assert_eq!(TestPlan::fewest_permutations(0.05), 19);
        assert_eq!(TestPlan::fewest_permutations(0.01), 99);
    }

    #[test]
    fn shared_parts_give_the_numerators_of_target_ranks() {
        let key = Key::new("shared-parts", 4).finish();
        let mut rng = key.stream(0);
        let y: Vec<f64> = (0..300)
            .map(|_| crate::rng::uniform_below(&mut rng, 40) as f64)
            .collect();
        let ranks = TargetRanks::new(&y);
        let x: Vec<f64> = (0..300).map(|i| ((i * 7) % 23) as f64).collect();
        let z: Vec<f64> = (0..300).map(|i| ((i * 11) % 31) as f64).collect();
        let conditioning = crate::measure::neighbors::nearest_neighbours(&[&x], &key);
        let joint = crate::measure::neighbors::nearest_neighbours(&[&x, &z], &key);
        let shared = ranks.conditioning_sum(&conditioning);
        assert_eq!(
            ranks.joint_sum(&joint) - shared,
            ranks.numerator(Some(&conditioning), &joint)
        );
        assert_eq!(
            ranks.rank_sum() - shared,
            ranks.denominator(Some(&conditioning))
        );
        let n = 300i128;
        assert_eq!(
            n * ranks.joint_sum(&joint) - ranks.at_least_square_sum(),
            ranks.numerator(None, &joint)
        );
    }

    /// The exact permutation p-value of T_n(y, x) for y = x (the strongest dependence n rows can
    /// show), over all n! orders of y.
    fn exact_p_of_a_perfect_pair(n: usize) -> f64 {
        use crate::measure::neighbors::nearest_neighbours;
        let x: Vec<f64> = (0..n).map(|v| v as f64).collect();
        let joint = nearest_neighbours(&[&x], &Key::new("exact", 1).finish());
        let observed = TargetRanks::new(&x).numerator(None, &joint);
        let mut order: Vec<usize> = (0..n).collect();
        let (mut at_least, mut total) = (0u64, 0u64);
        // Heap's algorithm (Heap 1963, The Computer Journal 6(3)) visits every order once.
        let mut c = vec![0usize; n];
        let mut visit = |order: &[usize]| {
            let y: Vec<f64> = order.iter().map(|&i| x[i]).collect();
            total += 1;
            if TargetRanks::new(&y).numerator(None, &joint) >= observed {
                at_least += 1;
            }
        };
        visit(&order);
        let mut i = 0;
        while i < n {
            if c[i] < i {
                if i % 2 == 0 {
                    order.swap(0, i);
                } else {
                    order.swap(c[i], i);
                }
                visit(&order);
                c[i] += 1;
                i = 0;
            } else {
                c[i] = 0;
                i += 1;
            }
        }
        at_least as f64 / total as f64
    }

    #[test]
    fn four_rows_can_never_be_significant_at_five_percent() {
        // Exact enumeration (closed form by counting, no sampling): with 4 rows even y = x has a
        // permutation p-value above 0.05, so no selection test on 4 rows can reject; the search's
        // floor of 20 rows per sample lies well above the smallest size where it can.
        let p: Vec<f64> = (4..=7).map(exact_p_of_a_perfect_pair).collect();
        eprintln!("exact p-values of y = x, n = 4..7: {p:?}");
        assert!(p[0] > 0.05, "n = 4: p = {}", p[0]);
        assert!(p[3] <= 0.05, "n = 7: p = {}", p[3]);
        assert!(p.windows(2).all(|w| w[1] <= w[0]), "{p:?}");
    }
}
