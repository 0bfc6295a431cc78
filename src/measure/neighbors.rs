//! Exact nearest neighbours with ties broken uniformly at random.
//!
//! For every row i the neighbour is a row j ≠ i at the smallest Euclidean distance. Rows whose
//! coordinates coincide (exact duplicates, common in discrete data) are grouped first: a row with
//! duplicates has them as its tied neighbours at distance zero. Otherwise a kd-tree (kiddo) over the
//! distinct points finds the nearest other point(s); every row at that exact distance is tied. The
//! choice among tied rows is uniform, drawn from the keyed stream of the row (see `rng.rs`), so it
//! does not depend on the order in which rows or candidates are processed.
//!
//! Distances are compared exactly as computed here in a fixed order of coordinates. Under `rank`
//! scaling coordinates are integers and these distances are exact.

use crate::rng::{uniform_below, Key};
use kiddo::{ImmutableKdTree, SquaredEuclidean};
use rayon::prelude::*;
use std::num::NonZeroUsize;

/// Highest dimension searched with a kd-tree; above it the exact brute-force search is used.
pub const MAX_TREE_DIMENSION: usize = 12;

/// Relative slack with which tree distances are widened before the exact re-check, so that a
/// different summation order inside the tree can never hide a tied point.
const SLACK: f64 = 1e-9;

/// Distinct points of a space, with the rows that share each point.
struct Distinct {
    dim: usize,
    /// Coordinates of distinct point u at `coords[u*dim..(u+1)*dim]`, in sorted order of points.
    coords: Vec<f64>,
    /// Rows at each distinct point, ascending.
    rows: Vec<Vec<u32>>,
    /// Distinct point of each row.
    point_of_row: Vec<u32>,
}

impl Distinct {
    fn new(columns: &[&[f64]]) -> Self {
        let dim = columns.len();
        let n = columns[0].len();
        let mut order: Vec<u32> = (0..n as u32).collect();
        let compare = |a: u32, b: u32| {
            for col in columns {
                let o = col[a as usize].total_cmp(&col[b as usize]);
                if o != std::cmp::Ordering::Equal {
                    return o;
                }
            }
            std::cmp::Ordering::Equal
        };
        order.par_sort_by(|&a, &b| compare(a, b).then(a.cmp(&b)));
        let mut coords = Vec::new();
        let mut rows: Vec<Vec<u32>> = Vec::new();
        let mut point_of_row = vec![0u32; n];
        for (k, &row) in order.iter().enumerate() {
            if k == 0 || compare(order[k - 1], row) != std::cmp::Ordering::Equal {
                coords.extend(columns.iter().map(|c| normalise_zero(c[row as usize])));
                rows.push(Vec::new());
            }
            let u = rows.len() - 1;
            rows[u].push(row);
            point_of_row[row as usize] = u as u32;
        }
        Distinct {
            dim,
            coords,
            rows,
            point_of_row,
        }
    }

    fn len(&self) -> usize {
        self.rows.len()
    }

    fn point(&self, u: usize) -> &[f64] {
        &self.coords[u * self.dim..(u + 1) * self.dim]
    }

    fn distance(&self, u: usize, v: usize) -> f64 {
        self.point(u)
            .iter()
            .zip(self.point(v))
            .map(|(a, b)| (a - b) * (a - b))
            .sum()
    }
}

/// -0.0 and 0.0 are the same point.
fn normalise_zero(v: f64) -> f64 {
    if v == 0.0 {
        0.0
    } else {
        v
    }
}

/// The rows tied for nearest neighbour of one row.
enum Tied<'a> {
    /// The rows at the same point (distance zero) whose origin differs from `origin`.
    Duplicates { rows: &'a [u32], origin: u32 },
    /// All rows of these distinct points (ascending point order), at the same positive distance.
    Points(Vec<u32>),
}

/// Finds the nearest other distinct point(s) of each distinct point.
trait PointSearch: Sync {
    fn nearest_points(&self, distinct: &Distinct, u: usize) -> Vec<u32>;
}

/// Exact search by scanning every distinct point: the fallback above `MAX_TREE_DIMENSION`.
struct Scan;

impl PointSearch for Scan {
    fn nearest_points(&self, distinct: &Distinct, u: usize) -> Vec<u32> {
        let mut best = f64::INFINITY;
        let mut tied = Vec::new();
        for v in 0..distinct.len() {
            if v == u {
                continue;
            }
            let d = distinct.distance(u, v);
            if d < best {
                best = d;
                tied.clear();
            }
            if d == best {
                tied.push(v as u32);
            }
        }
        tied
    }
}

/// kd-tree search over the distinct points of a space of compile-time dimension K.
struct Tree<const K: usize> {
    tree: ImmutableKdTree<f64, K>,
}

impl<const K: usize> Tree<K> {
    fn new(distinct: &Distinct) -> Self {
        let points: Vec<[f64; K]> = (0..distinct.len())
            .map(|u| {
                distinct
                    .point(u)
                    .try_into()
                    .expect("dimension checked by dispatch")
            })
            .collect();
        let tree = ImmutableKdTree::new_from_slice(&points).expect("at most u32::MAX points");
        Tree { tree }
    }
}

impl<const K: usize> PointSearch for Tree<K> {
    fn nearest_points(&self, distinct: &Distinct, u: usize) -> Vec<u32> {
        let query: [f64; K] = distinct.point(u).try_into().expect("dimension checked");
        let want = NonZeroUsize::new(3.min(distinct.len())).expect("at least two points");
        let found = self
            .tree
            .query(&query)
            .nearest_n::<SquaredEuclidean<f64>>(want)
            .execute();
        let mut others: Vec<(f64, u32)> = found
            .iter()
            .filter(|hit| hit.item as usize != u)
            .map(|hit| (distinct.distance(u, hit.item as usize), hit.item))
            .collect();
        others.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        let clear_winner = match others.as_slice() {
            [only] => Some(only.1),
            [first, second, ..] if first.0 * (1.0 + 4.0 * SLACK) < second.0 => Some(first.1),
            _ => None,
        };
        if let Some(v) = clear_winner {
            return vec![v];
        }
        // A tie, or too close to call: collect everything in a slightly widened ball and re-check
        // the exact distances.
        let radius = others[others.len() - 1].0 * (1.0 + SLACK) + f64::MIN_POSITIVE;
        let ball = self
            .tree
            .query(&query)
            .within::<SquaredEuclidean<f64>>(radius)
            .execute();
        let mut best = f64::INFINITY;
        let mut tied = Vec::new();
        for hit in ball {
            let v = hit.item as usize;
            if v == u {
                continue;
            }
            let d = distinct.distance(u, v);
            if d < best {
                best = d;
                tied.clear();
            }
            if d == best {
                tied.push(hit.item);
            }
        }
        tied.sort_unstable();
        tied
    }
}

/// The neighbour structure of one space: for every row, the set of rows tied for nearest.
pub struct Neighbourhood {
    distinct: Distinct,
    nearest_points: Vec<Vec<u32>>,
    /// The original row behind each row (bootstrap replicates); rows of one origin are never each
    /// other's neighbour. `None`: every row is its own origin.
    origins: Option<Vec<u32>>,
}

impl Neighbourhood {
    /// Builds the structure for the space spanned by `columns` (equal lengths, at least 2 rows).
    pub fn new(columns: &[&[f64]]) -> Self {
        Self::build(columns, None)
    }

    /// As [`Neighbourhood::new`], but rows sharing an entry of `origins` (copies of one original
    /// row in a bootstrap replicate) are never each other's neighbour: a copy at distance zero would
    /// fake perfect dependence. At least two distinct origins are needed.
    pub fn with_origins(columns: &[&[f64]], origins: Vec<u32>) -> Self {
        assert_eq!(origins.len(), columns[0].len(), "one origin per row");
        Self::build(columns, Some(origins))
    }

    fn build(columns: &[&[f64]], origins: Option<Vec<u32>>) -> Self {
        assert!(
            !columns.is_empty(),
            "a neighbour search needs at least one column"
        );
        assert!(
            columns[0].len() >= 2,
            "a neighbour search needs at least two rows"
        );
        let distinct = Distinct::new(columns);
        let origin = |r: u32| origins.as_ref().map_or(r, |o| o[r as usize]);
        // A point needs a search when none of its rows has a neighbour of another origin there.
        let needs_search: Vec<bool> = distinct
            .rows
            .iter()
            .map(|rows| rows.iter().all(|&r| origin(r) == origin(rows[0])))
            .collect();
        let nearest_points = if distinct.len() < 2 {
            Vec::new()
        } else {
            search_points(&distinct, &needs_search)
        };
        Neighbourhood {
            distinct,
            nearest_points,
            origins,
        }
    }

    fn origin(&self, row: u32) -> u32 {
        self.origins.as_ref().map_or(row, |o| o[row as usize])
    }

    fn tied(&self, row: usize) -> Tied<'_> {
        let u = self.distinct.point_of_row[row] as usize;
        let rows = &self.distinct.rows[u];
        let origin = self.origin(row as u32);
        if rows.iter().any(|&r| self.origin(r) != origin) {
            Tied::Duplicates { rows, origin }
        } else {
            Tied::Points(self.nearest_points[u].clone())
        }
    }

    /// Every row tied for nearest neighbour of `row`, ascending. For tests and diagnostics.
    pub fn tied_rows(&self, row: usize) -> Vec<u32> {
        let mut out: Vec<u32> = match self.tied(row) {
            Tied::Duplicates { rows, origin } => rows
                .iter()
                .copied()
                .filter(|&r| self.origin(r) != origin)
                .collect(),
            Tied::Points(points) => points
                .iter()
                .flat_map(|&v| self.distinct.rows[v as usize].iter().copied())
                .collect(),
        };
        out.sort_unstable();
        out
    }

    /// One nearest neighbour per row, ties broken uniformly at random by the keyed stream of the
    /// row under `key`.
    pub fn choose(&self, key: &Key) -> Vec<u32> {
        let n = self.distinct.point_of_row.len();
        (0..n)
            .into_par_iter()
            .map(|row| self.choose_one(row, key))
            .collect()
    }

    fn choose_one(&self, row: usize, key: &Key) -> u32 {
        match self.tied(row) {
            Tied::Duplicates { rows, origin } => {
                let me = row as u32;
                if self.origins.is_none() && rows.len() == 2 {
                    return if rows[0] == me { rows[1] } else { rows[0] };
                }
                let others = rows.iter().filter(|&&r| self.origin(r) != origin).count();
                let mut rng = key.stream(row as u64);
                let pick = uniform_below(&mut rng, others as u64) as usize;
                *rows
                    .iter()
                    .filter(|&&r| self.origin(r) != origin)
                    .nth(pick)
                    .expect("pick is below the count")
            }
            Tied::Points(points) => {
                if points.len() == 1 && self.distinct.rows[points[0] as usize].len() == 1 {
                    return self.distinct.rows[points[0] as usize][0];
                }
                let total: usize = points
                    .iter()
                    .map(|&v| self.distinct.rows[v as usize].len())
                    .sum();
                let mut rng = key.stream(row as u64);
                let mut pick = uniform_below(&mut rng, total as u64) as usize;
                for &v in &points {
                    let group = &self.distinct.rows[v as usize];
                    if pick < group.len() {
                        return group[pick];
                    }
                    pick -= group.len();
                }
                unreachable!("pick is below the total weight")
            }
        }
    }
}

/// Nearest neighbours of every row in the space spanned by `columns`, ties broken under `key`.
pub fn nearest_neighbours(columns: &[&[f64]], key: &Key) -> Vec<u32> {
    Neighbourhood::new(columns).choose(key)
}

fn search_points(distinct: &Distinct, needs_search: &[bool]) -> Vec<Vec<u32>> {
    macro_rules! dispatch {
        ($($k:literal),*) => {
            match distinct.dim {
                $($k => run(distinct, needs_search, &Tree::<$k>::new(distinct)),)*
                _ => run(distinct, needs_search, &Scan),
            }
        };
    }
    dispatch!(1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12)
}

fn run(distinct: &Distinct, needs_search: &[bool], search: &impl PointSearch) -> Vec<Vec<u32>> {
    (0..distinct.len())
        .into_par_iter()
        .map(|u| {
            if needs_search[u] {
                search.nearest_points(distinct, u)
            } else {
                Vec::new() // duplicates of other origins are the neighbours; no search needed
            }
        })
        .collect()
}

/// Exact tied sets by brute force over rows, for tests: every j ≠ i at the minimal distance.
pub fn brute_force_tied_rows(columns: &[&[f64]], row: usize) -> Vec<u32> {
    let n = columns[0].len();
    let dist = |j: usize| -> f64 {
        columns
            .iter()
            .map(|c| {
                let d = normalise_zero(c[row]) - normalise_zero(c[j]);
                d * d
            })
            .sum()
    };
    let best = (0..n)
        .filter(|&j| j != row)
        .map(dist)
        .fold(f64::INFINITY, f64::min);
    (0..n)
        .filter(|&j| j != row && dist(j) == best)
        .map(|j| j as u32)
        .collect()
}

/// Whether the kd-tree path covers this dimension (for benchmarks and docs).
pub fn uses_tree(dimension: usize) -> bool {
    (1..=MAX_TREE_DIMENSION).contains(&dimension)
}
