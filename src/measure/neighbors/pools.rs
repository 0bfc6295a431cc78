//! Pools of the local permutation scheme (Runge 2018, AISTATS, "Conditional independence testing
//! based on a nearest-neighbor estimator of conditional mutual information", Algorithm 1): under
//! Y ⊥ Z | X, a row may take the response of a row whose X is among its nearest, which keeps the
//! dependence of Y on X and breaks any dependence on Z given X.
//!
//! Pools are built on the distinct points of the space X: a point with at least `k` rows pools only
//! its own rows (for discrete X this makes the scheme an exact permutation within the strata of X);
//! any other point pools its own rows with those of its `k − 1` nearest other points and every
//! point tied with the last of them. Every row of a point shares its pool.

use super::{check_space, Distinct, KNearest, Lists};
use crate::rng::uniform_below;
use rand_core::Rng;

/// The pools of one space, and the distinct points they are made of.
pub struct Pools {
    distinct: Distinct,
    /// The points of the pool of each point, the point itself first.
    pools: Lists<u32>,
}

/// Reusable working memory of [`Pools::draw`].
#[derive(Default)]
pub struct DrawBuffers {
    order: Vec<u32>,
    /// Rows grouped by point (a copy of the grouping); the still unused rows of point u are the
    /// first `live[u]` of its group.
    rows: Vec<u32>,
    live: Vec<u32>,
    /// The last visit (breadth-first search) in which each point was seen.
    seen: Vec<u32>,
}

impl Pools {
    /// Builds the pools of the space spanned by `columns` with `k` rows at least per pool.
    pub fn new(columns: &[&[f64]], k: usize) -> Pools {
        check_space(columns);
        assert!(k >= 1, "a pool holds at least the row itself");
        let distinct = Distinct::new(columns);
        let search = nearest_points_search(&distinct);
        let pools = Lists::build(distinct.len(), |u, pool| {
            pool.push(u as u32);
            if distinct.group_len(u) >= k || distinct.len() == 1 {
                return;
            }
            let mut found = Vec::new();
            search(&distinct, u, (k - 1).min(distinct.len() - 1), &mut found);
            found.sort_unstable_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
            pool.extend(found.iter().map(|&(_, v)| v));
        });
        Pools { distinct, pools }
    }

    /// Number of rows.
    pub fn n_rows(&self) -> usize {
        self.distinct.point_of_row.len()
    }

    /// The rows of the pool of `row`, ascending (for tests and diagnostics).
    pub fn pool_rows(&self, row: usize) -> Vec<u32> {
        let u = self.distinct.point_of_row[row] as usize;
        let mut rows: Vec<u32> = self
            .pools
            .of(u)
            .iter()
            .flat_map(|&v| self.distinct.rows(v as usize).iter().copied())
            .collect();
        rows.sort_unstable();
        rows
    }

    /// One local permutation: `source[i]` is the row whose response row i takes, and every row
    /// is taken exactly once. Rows are visited in a uniformly random order; each takes a row drawn
    /// uniformly from the still unused rows of its pool (Runge 2018, Algorithm 1). Where every row
    /// of the pool is taken, Runge's algorithm repeats one; a repeated response would sit at
    /// distance zero from its copy and fake dependence in a nearest-neighbour statistic, so here
    /// the row takes an unused row of the nearest pools instead: those of its pool's points, then
    /// theirs, and so on (and, if that region is used up, any unused row).
    pub fn draw(&self, rng: &mut impl Rng, buffers: &mut DrawBuffers, source: &mut Vec<u32>) {
        let n = self.n_rows();
        let m = self.distinct.len();
        random_order(n, rng, &mut buffers.order);
        buffers.rows.clear();
        buffers.rows.extend_from_slice(&self.distinct.sorted_rows);
        buffers.live.clear();
        buffers
            .live
            .extend((0..m).map(|u| self.distinct.group_len(u) as u32));
        buffers.seen.clear();
        buffers.seen.resize(m, 0);
        let mut visit = 0u32;
        source.clear();
        source.resize(n, 0);
        let order = std::mem::take(&mut buffers.order);
        for &row in &order {
            let own = self.distinct.point_of_row[row as usize] as usize;
            let pool = self.pools.of(own);
            let taken = match self.take_from(pool, rng, buffers) {
                Some(taken) => taken,
                None => {
                    visit += 1;
                    self.take_near(pool, rng, buffers, visit)
                }
            };
            source[row as usize] = taken;
        }
        buffers.order = order;
    }

    /// Takes a uniformly drawn unused row of the points `points`, if any is left.
    fn take_from(
        &self,
        points: &[u32],
        rng: &mut impl Rng,
        buffers: &mut DrawBuffers,
    ) -> Option<u32> {
        let unused: u64 = points
            .iter()
            .map(|&v| u64::from(buffers.live[v as usize]))
            .sum();
        if unused == 0 {
            return None;
        }
        let mut pick = uniform_below(rng, unused) as u32;
        for &v in points {
            let live = buffers.live[v as usize];
            if pick < live {
                let group = self.distinct.group_start[v as usize] as usize;
                let last = group + live as usize - 1;
                buffers.rows.swap(group + pick as usize, last);
                buffers.live[v as usize] -= 1;
                return Some(buffers.rows[last]);
            }
            pick -= live;
        }
        unreachable!("pick is below the number of unused rows")
    }

    /// Takes an unused row from the nearest ring of pools around `pool` that has one (breadth
    /// first over the pools' points), or from any point when the rings run out.
    fn take_near(
        &self,
        pool: &[u32],
        rng: &mut impl Rng,
        buffers: &mut DrawBuffers,
        visit: u32,
    ) -> u32 {
        let mut ring: Vec<u32> = pool.to_vec();
        for &v in &ring {
            buffers.seen[v as usize] = visit;
        }
        loop {
            let mut next = Vec::new();
            for &v in &ring {
                for &w in self.pools.of(v as usize) {
                    if buffers.seen[w as usize] != visit {
                        buffers.seen[w as usize] = visit;
                        next.push(w);
                    }
                }
            }
            if next.is_empty() {
                break;
            }
            if let Some(taken) = self.take_from(&next, rng, buffers) {
                return taken;
            }
            ring = next;
        }
        let everything: Vec<u32> = (0..self.distinct.len() as u32).collect();
        self.take_from(&everything, rng, buffers)
            .expect("as many rows are taken as there are")
    }
}

/// A uniformly random order of `0..n` (Fisher–Yates; Knuth, TAOCP vol. 2, Algorithm P).
pub fn random_order(n: usize, rng: &mut impl Rng, order: &mut Vec<u32>) {
    order.clear();
    order.extend(0..n as u32);
    for i in (1..n).rev() {
        let j = uniform_below(rng, i as u64 + 1) as usize;
        order.swap(i, j);
    }
}

/// A search for the `k` nearest other points of a point, with every point tied with the k-th,
/// and their distances, in any order.
type NearestPoints = Box<dyn Fn(&Distinct, usize, usize, &mut Vec<(f64, u32)>) + Sync>;

fn nearest_points_search(distinct: &Distinct) -> NearestPoints {
    match distinct.dim {
        1 => Box::new(line_nearest),
        _ => match super::ball_search(distinct) {
            Some(tree) => Box::new(move |d, u, k, found| tree.ball(d, u, k, found)),
            None => Box::new(scan_nearest),
        },
    }
}

/// One dimension: points are sorted, so the nearest lie on either side, nearer first.
fn line_nearest(distinct: &Distinct, u: usize, k: usize, found: &mut Vec<(f64, u32)>) {
    let m = distinct.len();
    let (mut left, mut right) = (u, u + 1);
    let next = |left: usize, right: usize| {
        let l = (left > 0).then(|| distinct.distance(u, left - 1));
        let r = (right < m).then(|| distinct.distance(u, right));
        (l, r)
    };
    let mut bound = f64::INFINITY;
    loop {
        let (l, r) = next(left, right);
        let take_left = match (l, r) {
            (Some(l), Some(r)) => l <= r,
            (Some(_), None) => true,
            (None, Some(_)) => false,
            (None, None) => break,
        };
        let d = if take_left { l } else { r }.expect("a side was chosen");
        if found.len() >= k && d > bound {
            break;
        }
        if take_left {
            left -= 1;
            found.push((d, left as u32));
        } else {
            found.push((d, right as u32));
            right += 1;
        }
        if found.len() == k {
            bound = d;
        }
    }
}

/// Above the tree's dimensions: every point is scanned.
fn scan_nearest(distinct: &Distinct, u: usize, k: usize, found: &mut Vec<(f64, u32)>) {
    let mut nearest = KNearest {
        k,
        bound: f64::INFINITY,
        found,
        limit: 4 * k,
    };
    for v in 0..distinct.len() {
        if v != u {
            let d = distinct.distance(u, v);
            if d <= nearest.bound {
                super::Collector::offer(&mut nearest, d, v as u32);
            }
        }
    }
    nearest.compact();
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::Key;

    /// The rows within the distance of the (k−1)-th nearest other point, by brute force.
    fn brute_pool(columns: &[&[f64]], row: usize, k: usize) -> Vec<u32> {
        let n = columns[0].len();
        let dist = |a: usize, b: usize| -> f64 {
            columns.iter().map(|c| (c[a] - c[b]) * (c[a] - c[b])).sum()
        };
        let same: Vec<u32> = (0..n)
            .filter(|&j| dist(row, j) == 0.0)
            .map(|j| j as u32)
            .collect();
        if same.len() >= k {
            return same;
        }
        // distances of the other distinct points, ascending
        let mut others: Vec<f64> = (0..n).map(|j| dist(row, j)).filter(|&d| d > 0.0).collect();
        others.sort_by(f64::total_cmp);
        others.dedup();
        // count distinct points by distance: take points until k − 1 of them
        let mut points: Vec<(f64, Vec<f64>)> = Vec::new();
        for j in 0..n {
            let d = dist(row, j);
            if d > 0.0 {
                let coords: Vec<f64> = columns.iter().map(|c| c[j]).collect();
                if !points.iter().any(|(_, p)| *p == coords) {
                    points.push((d, coords));
                }
            }
        }
        points.sort_by(|a, b| a.0.total_cmp(&b.0));
        let cutoff = points
            .get((k - 1).min(points.len()) - 1)
            .map_or(0.0, |p| p.0);
        (0..n)
            .filter(|&j| dist(row, j) <= cutoff)
            .map(|j| j as u32)
            .collect()
    }

    #[test]
    fn pools_are_the_nearest_points_with_ties_in_every_dimension_kind() {
        let key = Key::new("pools-test", 1).finish();
        for dim in [1usize, 2, 3, 14] {
            let columns: Vec<Vec<f64>> = (0..dim)
                .map(|c| {
                    let mut rng = key.stream(c as u64);
                    // few distinct values: many duplicates and ties
                    (0..120)
                        .map(|_| uniform_below(&mut rng, 4) as f64)
                        .collect()
                })
                .collect();
            let refs: Vec<&[f64]> = columns.iter().map(Vec::as_slice).collect();
            for k in [1usize, 3, 5] {
                let pools = Pools::new(&refs, k);
                for row in 0..120 {
                    assert_eq!(
                        pools.pool_rows(row),
                        brute_pool(&refs, row, k),
                        "dim {dim}, k {k}, row {row}"
                    );
                }
            }
        }
    }

    #[test]
    fn a_point_with_k_rows_pools_only_its_own_rows() {
        let x = [0.0, 0.0, 0.0, 1.0, 2.0, 2.0];
        let pools = Pools::new(&[&x], 3);
        assert_eq!(pools.pool_rows(0), vec![0, 1, 2]);
        assert_eq!(pools.pool_rows(3), vec![0, 1, 2, 3, 4, 5]);
    }

    #[test]
    fn within_strata_the_draw_is_a_uniform_permutation() {
        // Two strata of 3 rows each (k = 3): every draw is a permutation within each stratum, and
        // each of the 6 orders of a stratum is equally likely (chi-square below 20.5, the 0.1 %
        // critical value with 5 degrees of freedom, scipy.stats.chi2.ppf(0.999, 5)).
        let x = [0.0, 5.0, 0.0, 5.0, 0.0, 5.0];
        let pools = Pools::new(&[&x], 3);
        let key = Key::new("strata", 2).finish();
        let mut counts = std::collections::BTreeMap::new();
        let (mut buffers, mut source) = (DrawBuffers::default(), Vec::new());
        let draws = 6000;
        for b in 0..draws {
            pools.draw(&mut key.stream(b), &mut buffers, &mut source);
            let mut sorted = source.clone();
            sorted.sort_unstable();
            assert_eq!(sorted, vec![0, 1, 2, 3, 4, 5], "a permutation");
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

    #[test]
    fn draws_are_permutations_that_mostly_stay_in_the_pool() {
        let key = Key::new("draw", 3).finish();
        let columns: Vec<Vec<f64>> = (0..2)
            .map(|c| {
                let mut rng = key.stream(100 + c);
                (0..300)
                    .map(|_| crate::rng::standard_normal(&mut rng))
                    .collect()
            })
            .collect();
        let refs: Vec<&[f64]> = columns.iter().map(Vec::as_slice).collect();
        let pools = Pools::new(&refs, 5);
        let (mut buffers, mut source) = (DrawBuffers::default(), Vec::new());
        let mut outside = 0;
        for b in 0..20 {
            pools.draw(&mut key.stream(b), &mut buffers, &mut source);
            let mut sorted = source.clone();
            sorted.sort_unstable();
            assert_eq!(
                sorted,
                (0..300).collect::<Vec<u32>>(),
                "every row taken once"
            );
            outside += (0..300)
                .filter(|&i| !pools.pool_rows(i).contains(&source[i]))
                .count();
        }
        // Only rows whose pool is used up go farther, to the next ring of pools: about one row in
        // eight here (measured 794 of 6000; the bound is ours).
        assert!(
            outside < 20 * 300 / 5,
            "{outside} rows taken outside their pool"
        );
    }
}
