//! The conditional dependence coefficient T_n of Azadkia and Chatterjee (Ann. Statist. 2021,
//! "A simple measure of conditional dependence"), computed exactly in integers.
//!
//! With R_i = #{j : Y_j ≤ Y_i}, L_i = #{j : Y_j ≥ Y_i}, N(i) the nearest neighbour of X_i and M(i)
//! the nearest neighbour of (X_i, Z_i):
//! - X non-empty: T_n = Σ(min(R_i, R_M(i)) − min(R_i, R_N(i))) / Σ(R_i − min(R_i, R_N(i)));
//! - X empty:     T_n = Σ(n·min(R_i, R_M(i)) − L_i²) / Σ L_i(n − L_i).

use super::neighbors::{keyed_order, nearest_neighbours};
use crate::rng::Key;
use serde::Serialize;

/// The ranks of the response that every T_n of one search shares.
#[derive(Clone, Debug)]
pub struct TargetRanks {
    at_most: Vec<u32>,
    at_least: Vec<u32>,
}

impl TargetRanks {
    /// R and L of a response column: the values of `ranks::at_most_counts` and
    /// `ranks::at_least_counts`, from one parallel sort.
    pub fn new(y: &[f64]) -> Self {
        let n = y.len();
        let order = keyed_order(y);
        let mut at_most = vec![0u32; n];
        let mut at_least = vec![0u32; n];
        let mut start = 0;
        while start < n {
            let value = y[order[start].1 as usize];
            let run = order[start..]
                .iter()
                .take_while(|&&(_, i)| y[i as usize] == value)
                .count();
            for &(_, i) in &order[start..start + run] {
                at_most[i as usize] = (start + run) as u32;
                at_least[i as usize] = (n - start) as u32;
            }
            start += run;
        }
        TargetRanks { at_most, at_least }
    }

    /// The ranks of the response that row i takes from row `source[i]` (a permuted response,
    /// possibly with repeats): R and L recounted over the drawn values, in O(n) from the ranks of
    /// the original response (R_i identifies the value of row i among the values present).
    pub fn permuted(&self, source: &[u32], counts: &mut Vec<u32>) -> TargetRanks {
        let n = self.n();
        let mut at_most = Vec::with_capacity(n);
        self.permuted_at_most(source, counts, &mut at_most);
        let at_least = source
            .iter()
            .map(|&s| {
                // values ≥ this one: all drawn values minus those whose code is below this code
                let code = self.at_most[s as usize] as usize;
                n as u32 - counts[code - 1]
            })
            .collect();
        TargetRanks { at_most, at_least }
    }

    /// R of the permuted response of [`TargetRanks::permuted`] into `at_most`, without L (a test
    /// given a non-empty X needs R only); `counts[v]` is left holding the number of drawn values
    /// whose rank code is at most v.
    pub fn permuted_at_most(&self, source: &[u32], counts: &mut Vec<u32>, at_most: &mut Vec<u32>) {
        let n = self.n();
        counts.clear();
        counts.resize(n + 1, 0);
        for &s in source {
            counts[self.at_most[s as usize] as usize] += 1;
        }
        // counts[v] becomes the number of drawn values whose rank code is at most v.
        let mut running = 0;
        for c in counts.iter_mut() {
            running += *c;
            *c = running;
        }
        at_most.clear();
        at_most.extend(
            source
                .iter()
                .map(|&s| counts[self.at_most[s as usize] as usize]),
        );
    }

    /// Σ min(R_i, R_M(i)) over the rows, for neighbours `joint`: the part of T_n's numerator that
    /// depends on the candidate. The numerator is this sum minus [`TargetRanks::conditioning_sum`]
    /// with X non-empty, and n times it minus Σ L_i² with X empty.
    pub fn joint_sum(&self, joint: &[u32]) -> i128 {
        min_rank_sum(&self.at_most, joint)
    }

    /// Σ min(R_i, R_N(i)) for the neighbours N in X: shared by every candidate of a step.
    pub fn conditioning_sum(&self, conditioning: &[u32]) -> i128 {
        self.joint_sum(conditioning)
    }

    /// Σ R_i.
    pub fn rank_sum(&self) -> i128 {
        rank_sum(&self.at_most)
    }

    /// Σ L_i².
    pub fn at_least_square_sum(&self) -> i128 {
        self.at_least
            .iter()
            .map(|&l| i128::from(l) * i128::from(l))
            .sum()
    }

    /// R_i = #{j : Y_j ≤ Y_i} of every row.
    pub fn at_most(&self) -> &[u32] {
        &self.at_most
    }

    /// L_i = #{j : Y_j ≥ Y_i} of every row.
    pub fn at_least(&self) -> &[u32] {
        &self.at_least
    }

    /// Number of rows.
    pub fn n(&self) -> usize {
        self.at_most.len()
    }

    /// The denominator of T_n: Σ L_i(n − L_i) with X empty, Σ(R_i − min(R_i, R_N(i))) otherwise.
    /// It depends on the conditioning set only, so one value serves every candidate of a step.
    pub fn denominator(&self, conditioning: Option<&[u32]>) -> i128 {
        let n = self.n() as i128;
        match conditioning {
            None => self
                .at_least
                .iter()
                .map(|&l| l as i128 * (n - l as i128))
                .sum(),
            Some(nn) => self
                .at_most
                .iter()
                .zip(nn)
                .map(|(&r, &j)| (r - r.min(self.at_most[j as usize])) as i128)
                .sum(),
        }
    }

    /// The numerator of T_n given the joint neighbours M and, for non-empty X, the neighbours N.
    pub fn numerator(&self, conditioning: Option<&[u32]>, joint: &[u32]) -> i128 {
        let r = &self.at_most;
        let n = self.n() as i128;
        match conditioning {
            None => r
                .iter()
                .zip(&self.at_least)
                .zip(joint)
                .map(|((&ri, &li), &m)| {
                    n * ri.min(r[m as usize]) as i128 - (li as i128) * (li as i128)
                })
                .sum(),
            Some(nn) => r
                .iter()
                .zip(joint)
                .zip(nn)
                .map(|((&ri, &m), &j)| {
                    ri.min(r[m as usize]) as i128 - ri.min(r[j as usize]) as i128
                })
                .sum(),
        }
    }
}

/// T_n as an exact ratio of integer sums.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, schemars::JsonSchema)]
pub struct Ratio {
    /// Σ of the numerator terms.
    pub numerator: i128,
    /// Σ of the denominator terms; zero when the response is a function of the conditioning set.
    pub denominator: i128,
}

impl Ratio {
    /// The value, or `None` when the denominator is zero: the response is (empirically) a function
    /// of the conditioning set and T_n is undefined.
    pub fn value(&self) -> Option<f64> {
        (self.denominator != 0).then(|| self.numerator as f64 / self.denominator as f64)
    }
}

/// Σ R_i for ranks R (`at_most`).
pub fn rank_sum(at_most: &[u32]) -> i128 {
    i128::from(at_most.iter().map(|&r| u64::from(r)).sum::<u64>())
}

/// Σ min(R_i, R_M(i)) over the rows for ranks R (`at_most`) and neighbours M (`joint`).
pub fn min_rank_sum(at_most: &[u32], joint: &[u32]) -> i128 {
    let r = at_most;
    // Each term is at most n < 2^32, so a u64 holds the sum of up to 2^32 terms.
    let sum: u64 = r
        .iter()
        .zip(joint)
        .map(|(&ri, &m)| u64::from(ri.min(r[m as usize])))
        .sum();
    i128::from(sum)
}

/// T_n(Y, Z | X) for response `y`, columns `z` and conditioning columns `x` (possibly none).
/// `key_x` and `key_xz` key the tie-breaks of the neighbour searches in X and in (X, Z).
pub fn conditional_dependence(
    y: &[f64],
    z: &[&[f64]],
    x: &[&[f64]],
    key_x: &Key,
    key_xz: &Key,
) -> Ratio {
    // Three independent parts, run side by side so that the serial stretches of each (grouping
    // rows into points, building a tree) overlap the others' work.
    let joint_columns: Vec<&[f64]> = x.iter().chain(z).copied().collect();
    let (ranks, (conditioning, joint)) = rayon::join(
        || TargetRanks::new(y),
        || {
            rayon::join(
                || (!x.is_empty()).then(|| nearest_neighbours(x, key_x)),
                || nearest_neighbours(&joint_columns, key_xz),
            )
        },
    );
    Ratio {
        numerator: ranks.numerator(conditioning.as_deref(), &joint),
        denominator: ranks.denominator(conditioning.as_deref()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_equal_those_of_the_ranks_module() {
        use crate::measure::ranks::{at_least_counts, at_most_counts};
        let mut rng = Key::new("target-ranks", 2).finish().stream(0);
        let mut y: Vec<f64> = (0..500)
            .map(|_| crate::rng::uniform_below(&mut rng, 23) as f64 - 11.0)
            .collect();
        y.extend([0.0, -0.0, -0.0, 1e-300, -1e-300, f64::MAX, f64::MIN]);
        let ranks = TargetRanks::new(&y);
        assert_eq!(ranks.at_most, at_most_counts(&y));
        assert_eq!(ranks.at_least, at_least_counts(&y));
    }

    #[test]
    fn unconditional_denominator_is_the_sum_of_l_times_n_minus_l() {
        // For untied y of length n, Σ_{k=1}^{n} k(n−k) = n(n²−1)/6 (elementary sum, common practice).
        let y: Vec<f64> = (0..10).map(|v| v as f64).collect();
        let ranks = TargetRanks::new(&y);
        assert_eq!(ranks.denominator(None), 10 * 99 / 6);
    }

    #[test]
    fn perfectly_monotone_pair_gives_t_close_to_one() {
        // Y = Z exactly: each row's neighbour in Z is adjacent in rank, so T_n = 1 − O(1/n)
        // (Azadkia and Chatterjee 2021, Theorem 2.1: T = 1 when Y is a function of Z).
        let z: Vec<f64> = (0..200).map(|v| v as f64).collect();
        let key = Key::new("t", 0).finish();
        let t = conditional_dependence(&z, &[&z], &[], &key, &key)
            .value()
            .unwrap();
        assert!(t > 0.97, "T_n = {t}");
    }

    #[test]
    fn response_that_is_a_function_of_x_has_zero_denominator() {
        let x: Vec<f64> = (0..50).map(|v| v as f64).collect();
        let y: Vec<f64> = x.iter().map(|v| (v / 10.0).floor()).collect();
        let z: Vec<f64> = x.iter().map(|v| (v * 7.0) % 13.0).collect();
        let key = Key::new("t", 0).finish();
        // With duplicated x rows, N(i) shares the y value of i, so every term R_i − min(R_i, R_N(i))
        // is zero and T_n is undefined.
        let x_dup: Vec<f64> = x.iter().map(|v| (v / 2.0).floor()).collect();
        let ratio = conditional_dependence(&y, &[&z], &[&x_dup], &key, &key);
        assert_eq!(ratio.denominator, 0);
        assert_eq!(ratio.value(), None);
    }
}
