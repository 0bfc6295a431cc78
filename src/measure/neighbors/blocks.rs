//! Blocks of the local permutation: the response is permuted within blocks of rows that lie close
//! together in the conditioning space X, which keeps the dependence of Y on X and breaks any
//! dependence on a candidate given X (local permutation tests: Runge 2018, AISTATS; Kim,
//! Neykov, Balakrishnan and Wasserman 2022, Ann. Statist. 50(6), "Local permutation tests for
//! conditional independence", which permute within bins of X).
//!
//! Blocks are built on the distinct points of X. A point with at least `k` rows is a block of its
//! own, so for a discrete X every draw is an exact permutation within the strata of X. The other
//! points are split like a kd-tree (Friedman, Bentley and Finkel 1977): a cell holding `2k` rows or
//! more is cut across its widest coordinate, as near to half of its rows as leaves `k` rows or more
//! on each side, so every block of these points holds at least `k` rows (fewer only when there are
//! fewer in all), mostly fewer than `2k`, and is a compact cell of X.
//!
//! Why blocks rather than Runge's Algorithm 1 (each row draws from its own nearest rows, repeating
//! a response when its pool is used up): a repeated response sits at distance zero from its copy,
//! and T_n, a nearest-neighbour statistic, reads that as dependence; with repeats the test rejected
//! a true null in 17–25 % of data sets at n = 4000 (docs/calibration.md). Avoiding repeats by
//! searching ever wider for an unused row made each draw cost up to O(n²). A permutation within
//! fixed blocks never repeats and costs O(n).

use super::{as_columns, check_space, Column, Distinct};
use crate::rng::uniform_below_u32;
use rand_core::Rng;

/// A partition of the rows into blocks of nearby rows.
pub struct Blocks {
    /// Rows of block b: `rows[start[b]..start[b + 1]]`, ascending within each block.
    rows: Vec<u32>,
    start: Vec<u32>,
}

impl Blocks {
    /// Builds the blocks of the space spanned by `columns`, of at least `k` rows each where the
    /// data allow.
    pub fn new<'c, C: Into<Column<'c>> + Copy>(columns: &[C], k: usize) -> Blocks {
        let columns = as_columns(columns);
        check_space(&columns);
        Self::of_points(&Distinct::new(&columns), k)
    }

    /// As [`Blocks::new`] on the columns whose distinct points are `distinct`.
    pub(super) fn of_points(distinct: &Distinct, k: usize) -> Blocks {
        assert!(k >= 1, "a block holds at least one row");
        let mut blocks = Blocks {
            rows: Vec::with_capacity(distinct.point_of_row.len()),
            start: vec![0],
        };
        let mut sparse: Vec<u32> = Vec::new();
        for u in 0..distinct.len() {
            if distinct.group_len(u) >= k {
                blocks.push(distinct, &[u as u32]);
            } else {
                sparse.push(u as u32);
            }
        }
        blocks.split(distinct, &mut sparse, k);
        blocks
    }

    /// Adds one block of the rows of `points`.
    fn push(&mut self, distinct: &Distinct, points: &[u32]) {
        let first = self.rows.len();
        for &u in points {
            self.rows.extend_from_slice(distinct.rows(u as usize));
        }
        self.rows[first..].sort_unstable();
        self.start.push(self.rows.len() as u32);
    }

    /// Cuts the cell of `points` until each part holds fewer than `2k` rows or cannot be cut into
    /// two parts of `k` rows or more.
    fn split(&mut self, distinct: &Distinct, points: &mut [u32], k: usize) {
        let rows: usize = points.iter().map(|&u| distinct.group_len(u as usize)).sum();
        if rows == 0 {
            return;
        }
        if rows < 2 * k || points.len() == 1 {
            self.push(distinct, points);
            return;
        }
        let axis = widest_axis(distinct, points);
        let coordinate = |u: u32| distinct.point(u as usize)[axis];
        points.sort_unstable_by(|&a, &b| coordinate(a).total_cmp(&coordinate(b)).then(a.cmp(&b)));
        // Cut at the point boundary nearest to half of the rows that leaves at least k rows on
        // each side; a cell that no boundary cuts so (a few points of several rows each) stays
        // whole.
        let mut before = 0;
        let mut cut = None;
        for (i, &u) in points[..points.len() - 1].iter().enumerate() {
            before += distinct.group_len(u as usize);
            if before >= k && rows - before >= k {
                let off = (2 * before).abs_diff(rows);
                if cut.is_none_or(|(_, best)| off < best) {
                    cut = Some((i + 1, off));
                }
            }
        }
        let Some((cut, _)) = cut else {
            self.push(distinct, points);
            return;
        };
        let (left, right) = points.split_at_mut(cut);
        self.split(distinct, left, k);
        self.split(distinct, right, k);
    }

    /// Number of blocks.
    pub fn len(&self) -> usize {
        self.start.len() - 1
    }

    /// Whether there are no blocks (never, for a space of two or more rows).
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The rows of block `b`, ascending.
    pub fn block(&self, b: usize) -> &[u32] {
        &self.rows[self.start[b] as usize..self.start[b + 1] as usize]
    }

    /// Number of rows.
    pub fn n_rows(&self) -> usize {
        self.rows.len()
    }

    /// One draw: `source[i]` is the row whose response row i takes; within every block the rows
    /// are permuted uniformly (Fisher–Yates; Knuth, TAOCP vol. 2, Algorithm P), blocks in order.
    pub fn draw(&self, rng: &mut impl Rng, source: &mut Vec<u32>) {
        source.clear();
        source.resize(self.n_rows(), 0);
        let mut shuffled: Vec<u32> = Vec::new();
        for b in 0..self.len() {
            let block = self.block(b);
            shuffled.clear();
            shuffled.extend_from_slice(block);
            for i in (1..shuffled.len()).rev() {
                let j = uniform_below_u32(rng, i as u32 + 1) as usize;
                shuffled.swap(i, j);
            }
            for (&row, &from) in block.iter().zip(&shuffled) {
                source[row as usize] = from;
            }
        }
    }
}

/// A uniformly random order of `0..n` (Fisher–Yates; Knuth, TAOCP vol. 2, Algorithm P).
pub fn random_order(n: usize, rng: &mut impl Rng, order: &mut Vec<u32>) {
    order.clear();
    order.extend(0..n as u32);
    for i in (1..n).rev() {
        let j = uniform_below_u32(rng, i as u32 + 1) as usize;
        order.swap(i, j);
    }
}

/// The axis along which the points spread widest (ties: the first).
fn widest_axis(distinct: &Distinct, points: &[u32]) -> usize {
    let dim = distinct.dim;
    let first = distinct.point(points[0] as usize);
    let mut low = first.to_vec();
    let mut high = first.to_vec();
    for &u in points {
        for (a, &x) in distinct.point(u as usize).iter().enumerate() {
            if x < low[a] {
                low[a] = x;
            }
            if x > high[a] {
                high[a] = x;
            }
        }
    }
    (0..dim)
        .max_by(|&a, &b| {
            (high[a] - low[a])
                .total_cmp(&(high[b] - low[b]))
                .then(b.cmp(&a))
        })
        .unwrap_or(0)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::Key;

    fn columns(dim: usize, n: usize, levels: u64, seed: u64) -> Vec<Vec<f64>> {
        let key = Key::new("blocks-test", seed).finish();
        (0..dim)
            .map(|c| {
                let mut rng = key.stream(c as u64);
                (0..n)
                    .map(|_| match levels {
                        0 => crate::rng::standard_normal(&mut rng),
                        _ => crate::rng::uniform_below(&mut rng, levels) as f64,
                    })
                    .collect()
            })
            .collect()
    }

    #[test]
    fn blocks_partition_the_rows_with_at_least_k_rows_or_one_stratum_each() {
        for (dim, levels) in [(1, 0), (2, 0), (3, 0), (1, 6), (2, 3), (14, 0), (2, 40)] {
            let cols = columns(dim, 500, levels, dim as u64 + levels);
            let refs: Vec<&[f64]> = cols.iter().map(Vec::as_slice).collect();
            let blocks = Blocks::new(&refs, 5);
            let mut all: Vec<u32> = (0..blocks.len())
                .flat_map(|b| blocks.block(b).to_vec())
                .collect();
            all.sort_unstable();
            assert_eq!(
                all,
                (0..500).collect::<Vec<u32>>(),
                "a partition (dim {dim})"
            );
            for b in 0..blocks.len() {
                let block = blocks.block(b);
                let point =
                    |r: u32| -> Vec<u64> { refs.iter().map(|c| c[r as usize].to_bits()).collect() };
                let one_point = block.iter().all(|&r| point(r) == point(block[0]));
                // Below 2k unless no cut leaves k rows on both sides (then below 3k: each point
                // of a cell of several points has fewer than k rows).
                assert!(
                    one_point || (5..15).contains(&block.len()),
                    "dim {dim}, levels {levels}: block of {} rows over several points",
                    block.len()
                );
            }
        }
    }

    #[test]
    fn blocks_from_a_neighbourhood_or_a_prepared_space_equal_blocks_from_the_columns() {
        // A search hands its conditioning neighbourhood to the test instead of the columns; the
        // blocks must be those of the columns (continuous, discrete with duplicate rows, bootstrap
        // origins, and a prepared space).
        use crate::measure::neighbors::{ConditioningSpace, Neighbourhood};
        let as_lists =
            |b: &Blocks| -> Vec<Vec<u32>> { (0..b.len()).map(|i| b.block(i).to_vec()).collect() };
        let mut prepared_spaces = 0;
        for (dim, levels) in [(1, 0), (2, 3), (3, 0), (4, 5), (6, 0)] {
            let cols = columns(dim, 400, levels, 7 + dim as u64);
            let refs: Vec<&[f64]> = cols.iter().map(Vec::as_slice).collect();
            let expected = as_lists(&Blocks::new(&refs, 5));
            assert_eq!(
                as_lists(&Neighbourhood::new(&refs).into_blocks(5)),
                expected,
                "dim {dim}, levels {levels}"
            );
            let origins: Vec<u32> = (0..400).map(|r| r / 2).collect();
            assert_eq!(
                as_lists(&Neighbourhood::with_origins(&refs, origins).into_blocks(5)),
                expected,
                "dim {dim}, levels {levels}, with origins"
            );
            if let Some(prepared) = ConditioningSpace::prepare(&refs) {
                assert_eq!(
                    as_lists(&prepared.into_neighbourhood().into_blocks(5)),
                    expected,
                    "dim {dim}, prepared"
                );
                prepared_spaces += 1;
            }
        }
        assert_eq!(
            prepared_spaces, 2,
            "the continuous spaces of 3 and 6 columns are prepared"
        );
    }

    #[test]
    fn one_dimensional_blocks_are_runs_of_neighbouring_values() {
        let x: Vec<f64> = (0..100).map(|v| ((v * 37) % 100) as f64).collect();
        let blocks = Blocks::new(&[&x], 5);
        for b in 0..blocks.len() {
            let mut values: Vec<f64> = blocks.block(b).iter().map(|&r| x[r as usize]).collect();
            values.sort_by(f64::total_cmp);
            assert_eq!(
                values.last().unwrap() - values[0],
                (values.len() - 1) as f64,
                "consecutive values"
            );
        }
    }

    #[test]
    fn within_a_block_the_draw_is_a_uniform_permutation() {
        // Two strata of 3 rows each (k = 3): each of the 6 orders of a stratum is equally likely
        // (chi-square below 20.5, the 0.1 % critical value with 5 degrees of freedom,
        // scipy.stats.chi2.ppf(0.999, 5)).
        let x = [0.0, 5.0, 0.0, 5.0, 0.0, 5.0];
        let blocks = Blocks::new(&[&x], 3);
        assert_eq!(blocks.len(), 2);
        let key = Key::new("strata", 2).finish();
        let mut counts = std::collections::BTreeMap::new();
        let mut source = Vec::new();
        let draws = 6000;
        for b in 0..draws {
            blocks.draw(&mut key.stream(b), &mut source);
            for (i, &s) in source.iter().enumerate() {
                assert_eq!(x[i], x[s as usize], "within the stratum");
            }
            *counts
                .entry([source[0], source[2], source[4]])
                .or_insert(0u32) += 1;
        }
        assert_eq!(counts.len(), 6);
        let expected = draws as f64 / 6.0;
        let chi2: f64 = counts
            .values()
            .map(|&c| (f64::from(c) - expected).powi(2) / expected)
            .sum();
        assert!(chi2 < 20.5, "chi-square {chi2}");
    }
}
