//! Exact nearest neighbours with ties broken uniformly at random.
//!
//! For every row i the neighbour is a row j ≠ i at the smallest Euclidean distance. Rows whose
//! coordinates coincide (exact duplicates, common in discrete data) are grouped first: a row with
//! duplicates has them as its tied neighbours at distance zero. Otherwise the nearest other distinct
//! point(s) are found, and every row at that exact distance is tied. The choice among tied rows is
//! uniform, drawn from the keyed stream of the row (see `rng.rs`), so it does not depend on the
//! order in which rows or candidates are processed.
//!
//! Distances are compared exactly as `distance` computes them, summed in the order of the columns.
//! Under `rank` scaling coordinates are integers and these distances are exact. How the nearest
//! points are found never changes which they are:
//! - in one dimension the points are sorted, so the nearest lie next to each other;
//! - up to `MAX_TREE_DIMENSION`, a kd-tree (Friedman, Bentley and Finkel, ACM TOMS 1977) skips a
//!   cell only when a lower bound of every distance in it, kept incrementally (Arya and Mount,
//!   SODA 1993) and widened by a slack far above its rounding error, exceeds the bound sought;
//! - above it, every point is scanned;
//! - a forward selection asks for the space S of the selected columns plus each candidate in turn.
//!   A [`ConditioningSpace`] keeps, for every point of S, every other point within the distance of
//!   its `BALL_SIZE`-th nearest (ties included). Summed in column order, a distance in S plus one
//!   column is the distance in S plus one more non-negative term, never less, so the nearest points
//!   in the larger space are found by walking that list until the distance in S alone exceeds the
//!   best found; where the list runs out first, the tree of S is searched on.

use crate::rng::{uniform_below, Key};
use rayon::prelude::*;
use std::sync::Arc;

pub mod blocks;

/// Highest dimension searched with a kd-tree; above it the exact brute-force search is used.
pub const MAX_TREE_DIMENSION: usize = 12;

/// Relative slack by which a cell's lower bound must exceed the best distance before the cell is
/// skipped: many orders of magnitude above the rounding error of the bound (a few dozen roundings
/// of 2^-53 along a root-to-leaf path), so a tied point can never be skipped.
const PRUNE_SLACK: f64 = 1e-9;

/// Most points in a kd-tree leaf.
const LEAF_SIZE: usize = 8;

/// Distinct points searched per parallel task.
const CHUNK: usize = 1024;

/// How many nearest points (plus ties) a [`ConditioningSpace`] keeps per point.
const BALL_SIZE: usize = 16;

/// Smallest conditioning dimension for which the lists pay: in fewer dimensions the nearest point
/// of the larger space is often farther than the `BALL_SIZE`-th nearest in the smaller one.
const MIN_BALL_DIMENSION: usize = 3;

/// Memory allowed for the lists of one conditioning space: 2^25 bytes, 2^19 points of `BALL_SIZE`
/// entries, the same cut-off in points as before the lists dropped their distances. A speed
/// setting, not a statistical one: without the lists every space is searched afresh, with the
/// same result.
const MAX_BALL_BYTES: usize = 1 << 25;

thread_local! {
    /// A search's (distance, point) pairs before only the points are kept.
    static BALL: std::cell::RefCell<Vec<(f64, u32)>> = const { std::cell::RefCell::new(Vec::new()) };
}

/// The sort key of a value under IEEE total order (`f64::total_cmp`), as an unsigned integer.
pub(crate) fn total_order_key(v: f64) -> u64 {
    let bits = v.to_bits() as i64;
    ((bits ^ (((bits >> 63) as u64) >> 1) as i64) as u64) ^ (1 << 63)
}

/// One column of a space as the search reads it: values, or whole numbers held in 32 bits (rank
/// scaling's doubled mid-ranks, half the memory) and read as the same `f64` values, exactly (every
/// `u32` is an `f64`). Which of the two holds a column never changes a result.
#[derive(Clone, Copy, Debug)]
pub enum Column<'a> {
    /// Values as they are.
    Values(&'a [f64]),
    /// Whole numbers, read as `f64`.
    Whole(&'a [u32]),
}

impl Column<'_> {
    /// The value of `row`.
    #[inline(always)]
    pub fn at(self, row: usize) -> f64 {
        match self {
            Column::Values(values) => values[row],
            Column::Whole(whole) => f64::from(whole[row]),
        }
    }

    /// Number of rows.
    pub fn len(self) -> usize {
        match self {
            Column::Values(values) => values.len(),
            Column::Whole(whole) => whole.len(),
        }
    }

    /// Whether there are no rows.
    pub fn is_empty(self) -> bool {
        self.len() == 0
    }
}

impl<'a> From<&'a [f64]> for Column<'a> {
    fn from(values: &'a [f64]) -> Self {
        Column::Values(values)
    }
}

impl<'a> From<&'a Vec<f64>> for Column<'a> {
    fn from(values: &'a Vec<f64>) -> Self {
        Column::Values(values)
    }
}

impl<'a, const N: usize> From<&'a [f64; N]> for Column<'a> {
    fn from(values: &'a [f64; N]) -> Self {
        Column::Values(values)
    }
}

/// The columns of a space, each read through [`Column`].
fn as_columns<'c, C: Into<Column<'c>> + Copy>(columns: &[C]) -> Vec<Column<'c>> {
    columns.iter().map(|&c| c.into()).collect()
}

/// The squared Euclidean distance, summed in coordinate order: the one definition every exact
/// comparison uses.
#[inline(always)]
fn distance(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| (x - y) * (x - y)).sum()
}

/// -0.0 and 0.0 are the same coordinate (rows at them are still different points, as the raw
/// values are grouped under total order).
fn normalise_zero(v: f64) -> f64 {
    if v == 0.0 {
        0.0
    } else {
        v
    }
}

/// Distinct points of a space, with the rows that share each point.
#[derive(Clone)]
struct Distinct {
    dim: usize,
    /// Coordinates of distinct point u at `coords[u*dim..(u+1)*dim]`, in sorted order of points
    /// (lexicographic under IEEE total order of the raw values).
    coords: Vec<f64>,
    /// Rows grouped by point, ascending within each point.
    sorted_rows: Vec<u32>,
    /// The rows of point u are `sorted_rows[group_start[u]..group_start[u + 1]]`.
    group_start: Vec<u32>,
    /// Distinct point of each row.
    point_of_row: Vec<u32>,
}

impl Distinct {
    fn new(columns: &[Column]) -> Self {
        let n = columns[0].len();
        assert!(n < u32::MAX as usize, "fewer than u32::MAX rows");
        let (sorted_rows, same_as_previous) = sort_rows(columns);
        Self::assemble(
            columns.len(),
            sorted_rows,
            &same_as_previous,
            |row, coords| {
                coords.extend(columns.iter().map(|c| normalise_zero(c.at(row))));
            },
        )
    }

    /// The distinct points of this space with `extra` as one more, last column: the same as
    /// `Distinct::new` on all the columns, without sorting again (only the rows sharing a point
    /// here need ordering by the new column).
    fn extended(&self, extra: Column) -> Distinct {
        let n = self.point_of_row.len();
        let mut sorted_rows = Vec::with_capacity(n);
        let mut same_as_previous = Vec::with_capacity(n);
        let mut keyed = Vec::new();
        for u in 0..self.len() {
            match self.rows(u) {
                [row] => {
                    sorted_rows.push(*row);
                    same_as_previous.push(false);
                }
                rows => {
                    keyed.clear();
                    keyed.extend(
                        rows.iter()
                            .map(|&row| (total_order_key(extra.at(row as usize)), row)),
                    );
                    keyed.sort_unstable();
                    for (k, &(key, row)) in keyed.iter().enumerate() {
                        sorted_rows.push(row);
                        same_as_previous.push(k > 0 && keyed[k - 1].0 == key);
                    }
                }
            }
        }
        Self::assemble(
            self.dim + 1,
            sorted_rows,
            &same_as_previous,
            |row, coords| {
                coords.extend_from_slice(self.point(self.point_of_row[row] as usize));
                coords.push(normalise_zero(extra.at(row)));
            },
        )
    }

    /// Groups rows in sorted order into points; `push_coords(row, coords)` appends a row's
    /// coordinates.
    fn assemble(
        dim: usize,
        sorted_rows: Vec<u32>,
        same_as_previous: &[bool],
        push_coords: impl Fn(usize, &mut Vec<f64>),
    ) -> Distinct {
        let n = sorted_rows.len();
        // At most one point per row; the unused part is given back below.
        let mut coords = Vec::with_capacity(n * dim);
        let mut group_start = Vec::with_capacity(n + 1);
        let mut point_of_row = vec![0u32; n];
        for (k, &row) in sorted_rows.iter().enumerate() {
            if !same_as_previous[k] {
                push_coords(row as usize, &mut coords);
                group_start.push(k as u32);
            }
            point_of_row[row as usize] = (group_start.len() - 1) as u32;
        }
        group_start.push(n as u32);
        coords.shrink_to_fit();
        group_start.shrink_to_fit();
        Distinct {
            dim,
            coords,
            sorted_rows,
            group_start,
            point_of_row,
        }
    }

    fn len(&self) -> usize {
        self.group_start.len() - 1
    }

    fn rows(&self, u: usize) -> &[u32] {
        &self.sorted_rows[self.group_start[u] as usize..self.group_start[u + 1] as usize]
    }

    fn group_len(&self, u: usize) -> usize {
        (self.group_start[u + 1] - self.group_start[u]) as usize
    }

    fn point(&self, u: usize) -> &[f64] {
        &self.coords[u * self.dim..(u + 1) * self.dim]
    }

    fn distance(&self, u: usize, v: usize) -> f64 {
        distance(self.point(u), self.point(v))
    }
}

/// Rows in lexicographic order of their coordinates under IEEE total order (ties by row), and
/// whether each sorted row equals its predecessor. Sorted by the first column, then runs that agree
/// on it by the others.
fn sort_rows(columns: &[Column]) -> (Vec<u32>, Vec<bool>) {
    let n = columns[0].len();
    let keyed = keyed_order_of(columns[0]);
    let rest = &columns[1..];
    let compare_rest = |a: u32, b: u32| {
        rest.iter()
            .map(|c| c.at(a as usize).total_cmp(&c.at(b as usize)))
            .find(|o| o.is_ne())
            .unwrap_or(std::cmp::Ordering::Equal)
    };
    let mut rows: Vec<u32> = keyed.iter().map(|&(_, row)| row).collect();
    let mut same = vec![false; n];
    for run in equal_key_runs(&keyed).filter(|run| run.len() > 1) {
        if !rest.is_empty() {
            rows[run.clone()].sort_unstable_by(|&a, &b| compare_rest(a, b).then(a.cmp(&b)));
        }
        for k in run.start + 1..run.end {
            same[k] = compare_rest(rows[k - 1], rows[k]).is_eq();
        }
    }
    (rows, same)
}

/// (total-order key, row) of every value of `column`, sorted (one parallel sort).
pub(crate) fn keyed_order(column: &[f64]) -> Vec<(u64, u32)> {
    keyed_order_of(Column::Values(column))
}

/// [`keyed_order`] of a column read through [`Column`].
fn keyed_order_of(column: Column) -> Vec<(u64, u32)> {
    assert!(column.len() < u32::MAX as usize, "fewer than u32::MAX rows");
    let mut keyed: Vec<(u64, u32)> = (0..column.len())
        .map(|row| (total_order_key(column.at(row)), row as u32))
        .collect();
    keyed.par_sort_unstable();
    keyed
}

/// The runs of equal keys in sorted `keyed`, as ranges of positions.
pub(crate) fn equal_key_runs(
    keyed: &[(u64, u32)],
) -> impl Iterator<Item = std::ops::Range<usize>> + '_ {
    let mut start = 0;
    std::iter::from_fn(move || {
        (start < keyed.len()).then(|| {
            let end = start
                + keyed[start..]
                    .iter()
                    .take_while(|k| k.0 == keyed[start].0)
                    .count();
            let run = start..end;
            start = end;
            run
        })
    })
}

/// Per-point lists in one flat vector: those of point u are `items[start[u]..start[u + 1]]`
/// (fewer than 2^32 items in all: positions in 4 bytes).
struct Lists<T> {
    start: Vec<u32>,
    items: Vec<T>,
}

impl<T: Copy + Send> Lists<T> {
    fn of(&self, u: usize) -> &[T] {
        &self.items[self.start[u] as usize..self.start[u + 1] as usize]
    }

    /// As [`Lists::build`], filling the lists in the order of `order` (a permutation of `0..m`)
    /// and joining them in point order: with the leaf order of a kd-tree, consecutive searches
    /// start from nearby points and walk the same paths of the tree, so they find its nodes in
    /// cache. Each list is the same whatever the order it is filled in. The lists are gathered
    /// straight into their final vector, so at most two copies are ever held.
    fn build_in_order(
        m: usize,
        order: Option<&[u32]>,
        fill: impl Fn(usize, &mut Vec<T>) + Sync,
    ) -> Self
    where
        T: Sync + Default,
    {
        let Some(order) = order else {
            return Self::build(m, fill);
        };
        debug_assert_eq!(order.len(), m);
        let filled = Self::build(m, |k, list| fill(order[k] as usize, list));
        let mut position = vec![0u32; m];
        for (k, &u) in order.iter().enumerate() {
            position[u as usize] = k as u32;
        }
        let mut start = Vec::with_capacity(m + 1);
        start.push(0);
        for u in 0..m {
            let k = position[u] as usize;
            start.push(start[u] + filled.start[k + 1] - filled.start[k]);
        }
        let mut items = vec![T::default(); filled.items.len()];
        let mut pieces = Vec::with_capacity(m.div_ceil(CHUNK));
        let mut rest = items.as_mut_slice();
        for c in 0..m.div_ceil(CHUNK) {
            let points = c * CHUNK..((c + 1) * CHUNK).min(m);
            let (piece, tail) =
                rest.split_at_mut((start[points.end] - start[points.start]) as usize);
            pieces.push((points, piece));
            rest = tail;
        }
        pieces.into_par_iter().for_each(|(points, piece)| {
            let mut at = 0;
            for u in points {
                let list = filled.of(position[u] as usize);
                piece[at..at + list.len()].copy_from_slice(list);
                at += list.len();
            }
        });
        Lists { start, items }
    }

    /// The lists of points `0..m`, each filled by `fill(u, list)` (empty on entry), computed in
    /// parallel chunks and joined in point order.
    fn build(m: usize, fill: impl Fn(usize, &mut Vec<T>) + Sync) -> Self {
        let chunks: Vec<(Vec<u32>, Vec<T>)> = (0..m.div_ceil(CHUNK))
            .into_par_iter()
            .map(|c| {
                let points = c * CHUNK..((c + 1) * CHUNK).min(m);
                let mut lengths = Vec::with_capacity(points.len());
                let mut items = Vec::with_capacity(points.len());
                let mut list = Vec::new();
                for u in points {
                    list.clear();
                    fill(u, &mut list);
                    items.extend_from_slice(&list);
                    lengths.push(list.len() as u32);
                }
                (lengths, items)
            })
            .collect();
        let total: usize = chunks.iter().map(|c| c.1.len()).sum();
        assert!(total < u32::MAX as usize, "fewer than 2^32 list entries");
        let mut start = Vec::with_capacity(m + 1);
        let mut items = Vec::with_capacity(total);
        start.push(0u32);
        for (lengths, chunk_items) in chunks {
            for length in lengths {
                start.push(start[start.len() - 1] + length);
            }
            items.extend_from_slice(&chunk_items);
        }
        Lists { start, items }
    }
}

/// What a search keeps of the points it is offered.
trait Collector {
    /// Points farther than this are of no interest.
    fn bound(&self) -> f64;
    /// Offers point `v` at distance `d` ≤ `bound()`.
    fn offer(&mut self, d: f64, v: u32);
}

/// Every point at the smallest distance.
struct Nearest<'a> {
    best: f64,
    tied: &'a mut Vec<u32>,
}

impl Collector for Nearest<'_> {
    #[inline(always)]
    fn bound(&self) -> f64 {
        self.best
    }

    #[inline(always)]
    fn offer(&mut self, d: f64, v: u32) {
        if d < self.best {
            self.best = d;
            self.tied.clear();
        }
        self.tied.push(v);
    }
}

/// Every point within the distance of the k-th nearest.
struct KNearest<'a> {
    k: usize,
    bound: f64,
    found: &'a mut Vec<(f64, u32)>,
    /// Size at which `found` is next compacted.
    limit: usize,
}

impl KNearest<'_> {
    /// Keeps the k nearest and their ties, and tightens the bound to the k-th distance.
    fn compact(&mut self) {
        if self.found.len() >= self.k {
            let kth = self
                .found
                .select_nth_unstable_by(self.k - 1, |a, b| a.0.total_cmp(&b.0))
                .1
                 .0;
            self.bound = kth;
            self.found.retain(|&(d, _)| d <= kth);
        }
        // Many points tied at the bound stay: compact again only once as many more have come.
        self.limit = (4 * self.k).max(2 * self.found.len());
    }
}

impl Collector for KNearest<'_> {
    #[inline(always)]
    fn bound(&self) -> f64 {
        self.bound
    }

    #[inline(always)]
    fn offer(&mut self, d: f64, v: u32) {
        self.found.push((d, v));
        if self.found.len() >= self.limit {
            self.compact();
        }
    }
}

/// Finds the nearest other distinct point(s) of one distinct point.
trait PointSearch: Send + Sync {
    /// Appends to `tied` (empty on entry) every other point at the smallest distance from `u`, in
    /// any order.
    fn nearest_points(&self, distinct: &Distinct, u: usize, tied: &mut Vec<u32>);

    /// The order in which to search the points, if another than point order pays.
    fn search_order(&self) -> Option<Vec<u32>> {
        None
    }
}

/// One dimension: the points are sorted, so the nearest lie next to `u`, and distances grow away
/// from it on either side (rounding is monotone), so the tied points are the runs at the best
/// distance adjacent to `u`.
struct Line;

impl PointSearch for Line {
    fn nearest_points(&self, distinct: &Distinct, u: usize, tied: &mut Vec<u32>) {
        let m = distinct.len();
        let left = (u > 0).then(|| distinct.distance(u, u - 1));
        let right = (u + 1 < m).then(|| distinct.distance(u, u + 1));
        let best = match (left, right) {
            (Some(l), Some(r)) => l.min(r),
            (Some(l), None) => l,
            (None, Some(r)) => r,
            (None, None) => return,
        };
        let mut v = u;
        while v > 0 && distinct.distance(u, v - 1) == best {
            v -= 1;
            tied.push(v as u32);
        }
        let mut v = u + 1;
        while v < m && distinct.distance(u, v) == best {
            tied.push(v as u32);
            v += 1;
        }
    }
}

/// Exact search by scanning every distinct point: the fallback above `MAX_TREE_DIMENSION`.
struct Scan;

impl PointSearch for Scan {
    fn nearest_points(&self, distinct: &Distinct, u: usize, tied: &mut Vec<u32>) {
        let mut nearest = Nearest {
            best: f64::INFINITY,
            tied,
        };
        for v in 0..distinct.len() {
            let d = distinct.distance(u, v);
            if v != u && d <= nearest.best {
                nearest.offer(d, v as u32);
            }
        }
    }
}

/// A node of the kd-tree. Inner nodes: the left child follows the node, points of the left child
/// have coordinate ≤ `split` on `axis`, those of the right child ≥ `split`. Leaves (`axis` is
/// `LEAF`): the points of block `right`.
#[derive(Clone, Copy)]
struct Node {
    split: f64,
    axis: u32,
    right: u32,
}

const LEAF: u32 = u32::MAX;

/// The points of one leaf, by coordinate then slot, so that the distances of all slots are summed
/// side by side (each in its own coordinate order, as `distance` sums). Unused slots hold NaN,
/// which is never below or equal to any distance.
#[derive(Clone, Copy)]
struct Block<const K: usize> {
    coords: [[f64; LEAF_SIZE]; K],
    ids: [u32; LEAF_SIZE],
}

/// kd-tree over the distinct points of a space of compile-time dimension K.
struct Tree<const K: usize> {
    nodes: Vec<Node>,
    blocks: Vec<Block<K>>,
}

impl<const K: usize> Tree<K> {
    fn new(distinct: &Distinct) -> Self {
        let m = distinct.len();
        let mut order: Vec<u32> = (0..m as u32).collect();
        // Every leaf but the last is full (see `build`): ⌈m / LEAF_SIZE⌉ leaves, one node fewer
        // inner nodes.
        let leaves = m.div_ceil(LEAF_SIZE).max(1);
        let mut tree = Tree {
            nodes: Vec::with_capacity(2 * leaves - 1),
            blocks: Vec::with_capacity(leaves),
        };
        tree.build(distinct, &mut order);
        tree
    }

    /// The points leaf by leaf, in the order the tree lays its leaves out.
    fn leaf_order(&self) -> Vec<u32> {
        self.blocks
            .iter()
            .flat_map(|block| block.ids.iter().copied().filter(|&u| u != u32::MAX))
            .collect()
    }

    fn query(distinct: &Distinct, u: usize) -> [f64; K] {
        distinct
            .point(u)
            .try_into()
            .expect("dimension checked by dispatch")
    }

    /// Builds the subtree over the points in `order` and returns the number of its root node.
    fn build(&mut self, distinct: &Distinct, order: &mut [u32]) -> usize {
        let me = self.nodes.len();
        if order.len() <= LEAF_SIZE {
            let mut block = Block {
                coords: [[f64::NAN; LEAF_SIZE]; K],
                ids: [u32::MAX; LEAF_SIZE],
            };
            for (slot, &u) in order.iter().enumerate() {
                for (a, &x) in distinct.point(u as usize).iter().enumerate() {
                    block.coords[a][slot] = x;
                }
                block.ids[slot] = u;
            }
            self.nodes.push(Node {
                split: 0.0,
                axis: LEAF,
                right: self.blocks.len() as u32,
            });
            self.blocks.push(block);
            return me;
        }
        let axis = widest_axis(distinct, order);
        let coordinate = |u: u32| distinct.coords[u as usize * K + axis];
        // Near the median, at a whole number of leaves: the left part fills its leaves, so every
        // leaf of the tree but the last holds `LEAF_SIZE` points (a median cut left leaves of 4 to
        // 8, each block half empty on average).
        let mid = order.len().div_ceil(LEAF_SIZE) / 2 * LEAF_SIZE;
        order.select_nth_unstable_by(mid, |&a, &b| coordinate(a).total_cmp(&coordinate(b)));
        let split = coordinate(order[mid]);
        self.nodes.push(Node {
            split,
            axis: axis as u32,
            right: 0,
        });
        let (left, right) = order.split_at_mut(mid);
        self.build(distinct, left);
        let right_root = self.build(distinct, right);
        self.nodes[me].right = right_root as u32;
        me
    }

    /// Offers every point other than `me` within `collect.bound()` of `query`.
    fn search(&self, query: &[f64; K], me: u32, collect: &mut impl Collector) {
        self.visit(0, query, me, 0.0, &mut [0.0; K], collect);
    }

    /// Visits the subtree at `node`: `reach` is a lower bound of the distance from `query` to every
    /// point of the subtree, made of the per-axis gaps in `gaps`.
    fn visit(
        &self,
        node: usize,
        query: &[f64; K],
        me: u32,
        reach: f64,
        gaps: &mut [f64; K],
        collect: &mut impl Collector,
    ) {
        let here = self.nodes[node];
        if here.axis == LEAF {
            self.scan_leaf(&self.blocks[here.right as usize], query, me, collect);
            return;
        }
        let axis = here.axis as usize;
        let gap = query[axis] - here.split;
        let (near, far) = if gap < 0.0 {
            (node + 1, here.right as usize)
        } else {
            (here.right as usize, node + 1)
        };
        self.visit(near, query, me, reach, gaps, collect);
        let old = gaps[axis];
        let far_reach = reach - old * old + gap * gap;
        // A NaN bound (overflowing coordinates) is not beyond: the cell is visited.
        let beyond = far_reach * (1.0 - PRUNE_SLACK) > collect.bound() + f64::MIN_POSITIVE;
        if !beyond {
            gaps[axis] = gap;
            self.visit(far, query, me, far_reach, gaps, collect);
            gaps[axis] = old;
        }
    }

    #[inline(always)]
    fn scan_leaf(&self, block: &Block<K>, query: &[f64; K], me: u32, collect: &mut impl Collector) {
        // The same operations in the same order as `distance`, for every slot at once.
        let mut sums = [0.0f64; LEAF_SIZE];
        for (q, coords) in query.iter().zip(&block.coords) {
            for (sum, x) in sums.iter_mut().zip(coords) {
                let t = q - x;
                *sum += t * t;
            }
        }
        for (&d, &v) in sums.iter().zip(&block.ids) {
            if d <= collect.bound() && v != me {
                collect.offer(d, v);
            }
        }
    }
}

/// The axis of widest spread of the points in `order`, judged on at most 64 evenly spaced ones (the
/// choice only affects speed).
fn widest_axis(distinct: &Distinct, order: &[u32]) -> usize {
    let dim = distinct.dim;
    let step = order.len().div_ceil(64);
    let mut low = distinct.point(order[0] as usize).to_vec();
    let mut high = low.clone();
    for &u in order.iter().step_by(step) {
        for (a, &x) in distinct.point(u as usize).iter().enumerate() {
            low[a] = if x < low[a] { x } else { low[a] };
            high[a] = if x > high[a] { x } else { high[a] };
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

impl<const K: usize> PointSearch for Tree<K> {
    fn nearest_points(&self, distinct: &Distinct, u: usize, tied: &mut Vec<u32>) {
        let mut nearest = Nearest {
            best: f64::INFINITY,
            tied,
        };
        self.search(&Self::query(distinct, u), u as u32, &mut nearest);
    }

    fn search_order(&self) -> Option<Vec<u32>> {
        Some(self.leaf_order())
    }
}

/// Searches of a conditioning space S.
trait BallSearch: Send + Sync {
    /// Fills `found` (empty on entry) with the `k` nearest other points of point `u` and every
    /// point tied with the k-th, with their distances, in any order.
    fn ball(&self, distinct: &Distinct, u: usize, k: usize, found: &mut Vec<(f64, u32)>);

    /// Offers to `joint` every point of S other than `u` whose distance from `u` in S is within
    /// the joint bound.
    fn continue_joint(&self, distinct: &Distinct, u: usize, joint: &mut Joint);

    /// The order in which to search the points (see [`PointSearch::search_order`]).
    fn search_order(&self) -> Option<Vec<u32>>;
}

impl<const K: usize> BallSearch for Tree<K> {
    fn ball(&self, distinct: &Distinct, u: usize, k: usize, found: &mut Vec<(f64, u32)>) {
        let mut nearest = KNearest {
            k,
            bound: f64::INFINITY,
            found,
            limit: 4 * k,
        };
        self.search(&Self::query(distinct, u), u as u32, &mut nearest);
        nearest.compact();
    }

    fn continue_joint(&self, distinct: &Distinct, u: usize, joint: &mut Joint) {
        self.search(&Self::query(distinct, u), u as u32, joint);
    }

    fn search_order(&self) -> Option<Vec<u32>> {
        Some(self.leaf_order())
    }
}

/// The nearest points of one point of S extended by one column, offered points of S with their
/// distance in S. S has no duplicate rows, so S and the extended space have the same points in the
/// same order (one row each), and an offered point's distance in the extended space is its
/// distance in S plus its last term, summed in the same order as `distance`. A point of S farther
/// than the best joint distance in S alone cannot be nearer.
struct Joint<'a, 'b> {
    /// The extra coordinate of every point of S.
    extra: &'a [f64],
    /// The point searched from.
    me: u32,
    /// Its extra coordinate.
    z: f64,
    nearest: Nearest<'b>,
}

impl Collector for Joint<'_, '_> {
    #[inline(always)]
    fn bound(&self) -> f64 {
        self.nearest.best
    }

    #[inline(always)]
    fn offer(&mut self, in_s: f64, v: u32) {
        if v != self.me {
            let t = self.z - self.extra[v as usize];
            let d = in_s + t * t;
            if d <= self.nearest.best {
                self.nearest.offer(d, v);
            }
        }
    }
}

/// The search for the nearest points of a space.
fn point_search(distinct: &Distinct) -> Box<dyn PointSearch> {
    macro_rules! dispatch {
        ($($k:literal),*) => {
            match distinct.dim {
                1 => Box::new(Line),
                $($k => Box::new(Tree::<$k>::new(distinct)),)*
                _ => Box::new(Scan),
            }
        };
    }
    dispatch!(2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12)
}

/// The search for the balls of a space, where a tree covers its dimension.
fn ball_search(distinct: &Distinct) -> Option<Box<dyn BallSearch>> {
    macro_rules! dispatch {
        ($($k:literal),*) => {
            match distinct.dim {
                $($k => Some(Box::new(Tree::<$k>::new(distinct))),)*
                _ => None,
            }
        };
    }
    dispatch!(2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12)
}

/// The neighbour structure of one space: for every row, the set of rows tied for nearest.
pub struct Neighbourhood {
    /// The points and their rows (shared by a prepared space and its extensions, whose points are
    /// the same).
    distinct: Arc<Distinct>,
    /// The nearest other points of each point that needs a search, ascending (empty for the
    /// others: their neighbours are rows of other origins at the same point).
    nearest: Lists<u32>,
    /// The original row behind each row (bootstrap replicates); rows of one origin are never each
    /// other's neighbour. `None`: every row is its own origin.
    origins: Option<Vec<u32>>,
}

/// The rows tied for nearest neighbour of one row.
enum Tied<'a> {
    /// The rows at the same point (distance zero) whose origin differs from `origin`.
    Duplicates { rows: &'a [u32], origin: u32 },
    /// All rows of these distinct points (ascending point order), at the same positive distance.
    Points(&'a [u32]),
}

impl Neighbourhood {
    /// Builds the structure for the space spanned by `columns` (equal lengths, at least 2 rows).
    pub fn new<'c, C: Into<Column<'c>> + Copy>(columns: &[C]) -> Self {
        let columns = as_columns(columns);
        check_space(&columns);
        Self::search(Distinct::new(&columns), None)
    }

    /// As [`Neighbourhood::new`], but rows sharing an entry of `origins` (copies of one original
    /// row in a bootstrap replicate) are never each other's neighbour: a copy at distance zero would
    /// fake perfect dependence. At least two distinct origins are needed.
    pub fn with_origins<'c, C: Into<Column<'c>> + Copy>(columns: &[C], origins: Vec<u32>) -> Self {
        let columns = as_columns(columns);
        check_space(&columns);
        assert_eq!(origins.len(), columns[0].len(), "one origin per row");
        Self::search(Distinct::new(&columns), Some(origins))
    }

    /// The neighbourhood of this space with `extra` as one more, last column, rows of one origin
    /// kept apart as here: the same as [`Neighbourhood::new`] (or [`Neighbourhood::with_origins`])
    /// on all the columns, without sorting the rows again (`Distinct::extended`).
    pub fn extended<'c>(&self, extra: impl Into<Column<'c>>) -> Self {
        let extra = extra.into();
        assert_eq!(
            extra.len(),
            self.distinct.point_of_row.len(),
            "one value per row"
        );
        Self::search(self.distinct.extended(extra), self.origins.clone())
    }

    fn search(distinct: Distinct, origins: Option<Vec<u32>>) -> Self {
        let search = (distinct.len() >= 2).then(|| point_search(&distinct));
        let origin = |r: u32| origins.as_ref().map_or(r, |o| o[r as usize]);
        let order = search.as_ref().and_then(|search| search.search_order());
        let nearest = Lists::build_in_order(distinct.len(), order.as_deref(), |u, tied| {
            // A point needs a search when none of its rows has a neighbour of another origin there.
            let rows = distinct.rows(u);
            if let Some(search) = &search {
                if rows.iter().all(|&r| origin(r) == origin(rows[0])) {
                    search.nearest_points(&distinct, u, tied);
                    tied.sort_unstable();
                }
            }
        });
        Neighbourhood {
            distinct: Arc::new(distinct),
            nearest,
            origins,
        }
    }

    /// The blocks of the local permutation in this space (`blocks::Blocks::new` on its columns,
    /// from the points already sorted here); the neighbour lists are dropped first.
    pub fn into_blocks(self, k: usize) -> blocks::Blocks {
        let Neighbourhood { distinct, .. } = self;
        blocks::Blocks::of_points(&distinct, k)
    }

    fn origin(&self, row: u32) -> u32 {
        self.origins.as_ref().map_or(row, |o| o[row as usize])
    }

    fn tied(&self, row: usize) -> Tied<'_> {
        self.tied_at(self.distinct.point_of_row[row] as usize, row)
    }

    /// As [`Neighbourhood::tied`] for a row of point `u`.
    #[inline]
    fn tied_at(&self, u: usize, row: usize) -> Tied<'_> {
        let rows = self.distinct.rows(u);
        let origin = self.origin(row as u32);
        let duplicates = match &self.origins {
            None => rows.len() > 1,
            Some(_) => rows.iter().any(|&r| self.origin(r) != origin),
        };
        if duplicates {
            Tied::Duplicates { rows, origin }
        } else {
            Tied::Points(self.nearest.of(u))
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
                .flat_map(|&v| self.distinct.rows(v as usize).iter().copied())
                .collect(),
        };
        out.sort_unstable();
        out
    }

    /// One nearest neighbour per row, ties broken uniformly at random by the keyed stream of the
    /// row under `key`.
    pub fn choose(&self, key: &Key) -> Vec<u32> {
        // Chosen in point order, where the lists a point's rows read lie next to each other and
        // the tied points are near in sorted order; only the last write goes by row. The choice of
        // a row depends on the row and the key alone, so the order of work cannot change it.
        let m = self.distinct.len();
        let in_point_order: Vec<u32> = (0..m.div_ceil(CHUNK))
            .into_par_iter()
            .flat_map_iter(|c| {
                (c * CHUNK..((c + 1) * CHUNK).min(m)).flat_map(move |u| {
                    self.distinct
                        .rows(u)
                        .iter()
                        .map(move |&row| self.choose_one(u, row as usize, key))
                })
            })
            .collect();
        let mut chosen = vec![0u32; self.distinct.point_of_row.len()];
        for (&row, &choice) in self.distinct.sorted_rows.iter().zip(&in_point_order) {
            chosen[row as usize] = choice;
        }
        chosen
    }

    fn choose_one(&self, u: usize, row: usize, key: &Key) -> u32 {
        match self.tied_at(u, row) {
            Tied::Duplicates { rows, origin } => {
                let me = row as u32;
                if self.origins.is_none() && rows.len() == 2 {
                    return if rows[0] == me { rows[1] } else { rows[0] };
                }
                let others = rows.iter().filter(|&&r| self.origin(r) != origin).count();
                let mut rng = key.short_stream(row as u64);
                let pick = uniform_below(&mut rng, others as u64) as usize;
                *rows
                    .iter()
                    .filter(|&&r| self.origin(r) != origin)
                    .nth(pick)
                    .expect("pick is below the count")
            }
            Tied::Points(points) => {
                if let [only] = points {
                    let group = self.distinct.rows(*only as usize);
                    if group.len() == 1 {
                        return group[0];
                    }
                }
                let total: usize = points
                    .iter()
                    .map(|&v| self.distinct.group_len(v as usize))
                    .sum();
                let mut rng = key.short_stream(row as u64);
                let mut pick = uniform_below(&mut rng, total as u64) as usize;
                for &v in points {
                    let group = self.distinct.rows(v as usize);
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

fn check_space(columns: &[Column]) {
    assert!(
        !columns.is_empty(),
        "a neighbour search needs at least one column"
    );
    assert!(
        columns[0].len() >= 2,
        "a neighbour search needs at least two rows"
    );
}

/// A conditioning space S of a forward selection, prepared so that the neighbourhoods of S and of
/// S plus any one more column follow quickly. Every result equals that of [`Neighbourhood::new`]
/// on the same columns. Only a space without duplicate rows is prepared: rows that are copies of
/// one original (bootstrap) coincide in every space, so here there are none, and the results are
/// also those of [`Neighbourhood::with_origins`] for any origins.
pub struct ConditioningSpace {
    own: Neighbourhood,
    /// For every point u of S: the other points within the distance of the `BALL_SIZE`-th
    /// nearest, ascending by (distance, point); the list holds every point within the distance of
    /// its last entry. Distances are not kept: `Distinct::distance` gives them again, bit for bit,
    /// from the coordinates (4 bytes per entry instead of 16).
    lists: Lists<u32>,
    /// The search tree of S, for the points whose list does not reach far enough.
    search: Box<dyn BallSearch>,
}

impl ConditioningSpace {
    /// Prepares the space spanned by `columns` (equal lengths, at least 2 rows), or `None` when
    /// that does not pay (fewer than `MIN_BALL_DIMENSION` or more than `MAX_TREE_DIMENSION`
    /// columns, few rows, duplicate rows, or lists too large): then search each space afresh.
    pub fn prepare<'c, C: Into<Column<'c>> + Copy>(columns: &[C]) -> Option<Self> {
        let columns = as_columns(columns);
        check_space(&columns);
        if !(MIN_BALL_DIMENSION..=MAX_TREE_DIMENSION).contains(&columns.len())
            || columns[0].len() <= BALL_SIZE
            || columns[0].len() * BALL_SIZE * std::mem::size_of::<u32>() > MAX_BALL_BYTES
        {
            return None;
        }
        let distinct = Distinct::new(&columns);
        if distinct.len() < columns[0].len() {
            return None;
        }
        let search = ball_search(&distinct)?;
        let order = search.search_order();
        let lists = Lists::build_in_order(distinct.len(), order.as_deref(), |u, list| {
            BALL.with_borrow_mut(|found| {
                found.clear();
                search.ball(&distinct, u, BALL_SIZE, found);
                found.sort_unstable_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
                list.extend(found.iter().map(|&(_, v)| v));
            });
        });
        // The nearest points of S are the head of each list, tied at the first distance.
        let nearest = Lists::build(distinct.len(), |u, tied| {
            let list = lists.of(u);
            if let Some(&first) = list.first() {
                let best = distinct.distance(u, first as usize);
                tied.extend(
                    list.iter()
                        .take_while(|&&v| distinct.distance(u, v as usize) == best),
                );
            }
        });
        let own = Neighbourhood {
            distinct: Arc::new(distinct),
            nearest,
            origins: None,
        };
        Some(ConditioningSpace { own, lists, search })
    }

    /// The neighbourhood of S itself.
    pub fn neighbourhood(&self) -> &Neighbourhood {
        &self.own
    }

    /// The neighbourhood of S itself, without the lists and the tree (which only extensions use).
    pub fn into_neighbourhood(self) -> Neighbourhood {
        self.own
    }

    /// The neighbourhood of S with `extra` as its last column. Its points are those of S, so it
    /// shares S's points and rows and keeps only its own nearest points.
    pub fn extended<'c>(&self, extra: impl Into<Column<'c>>) -> Neighbourhood {
        let extra = extra.into();
        let within = &self.own.distinct;
        debug_assert_eq!(within.len(), within.point_of_row.len(), "one row a point");
        // One row a point, so `sorted_rows[u]` is the row of point u.
        let extra_at: Vec<f64> = within
            .sorted_rows
            .iter()
            .map(|&row| normalise_zero(extra.at(row as usize)))
            .collect();
        let nearest = Lists::build(within.len(), |u, tied| {
            self.nearest_points(within, &extra_at, u, tied);
            tied.sort_unstable();
            tied.dedup();
        });
        Neighbourhood {
            distinct: Arc::clone(within),
            nearest,
            origins: None,
        }
    }

    /// Appends to `tied` the nearest other points (possibly repeated) of point u of S (`within`)
    /// extended by one column (`extra_at`, by point): from the list of u in S, then, if that list
    /// does not reach far enough, by searching the tree of S.
    fn nearest_points(&self, within: &Distinct, extra_at: &[f64], u: usize, tied: &mut Vec<u32>) {
        let mut collect = Joint {
            extra: extra_at,
            me: u as u32,
            z: extra_at[u],
            nearest: Nearest {
                best: f64::INFINITY,
                tied,
            },
        };
        let here = within.point(u);
        // The list holds every point within the distance of its last entry (none: no other point).
        let mut radius = f64::INFINITY;
        for &v in self.lists.of(u) {
            let in_s = distance(here, within.point(v as usize));
            if in_s > collect.bound() {
                return; // every later point is at least this far in S alone
            }
            collect.offer(in_s, v);
            radius = in_s;
        }
        if collect.bound() > radius {
            // Points beyond the list may still be near enough: search S (the listed ones come
            // again, at the same distance, and are removed as repeats).
            self.search.continue_joint(within, u, &mut collect);
        }
    }
}

/// Nearest neighbours of every row in the space spanned by `columns`, ties broken under `key`.
pub fn nearest_neighbours(columns: &[&[f64]], key: &Key) -> Vec<u32> {
    Neighbourhood::new(columns).choose(key)
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

/// Whether an indexed search (sorted order in one dimension, a kd-tree above) rather than the scan
/// covers this dimension (for benchmarks and docs).
pub fn uses_tree(dimension: usize) -> bool {
    (1..=MAX_TREE_DIMENSION).contains(&dimension)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn total_order_key_sorts_like_total_cmp() {
        let values = [
            f64::NEG_INFINITY,
            -1e300,
            -1.5,
            -f64::MIN_POSITIVE,
            -5e-324,
            -0.0,
            0.0,
            5e-324,
            f64::MIN_POSITIVE,
            1.0,
            1.5,
            1e300,
            f64::INFINITY,
        ];
        for a in values {
            for b in values {
                assert_eq!(
                    total_order_key(a).cmp(&total_order_key(b)),
                    a.total_cmp(&b),
                    "{a} vs {b}"
                );
            }
        }
    }

    #[test]
    fn whole_number_columns_give_what_the_same_values_give() {
        // Rank scaling keeps doubled mid-ranks as u32 (`Column::Whole`); every structure built
        // from them must equal the one built from the same numbers as f64: plain spaces with
        // duplicate rows (with and without origins), a prepared space and its extensions, blocks.
        use crate::measure::ranks::{doubled_mid_ranks, doubled_mid_ranks_whole};
        let n = 500;
        let key = Key::new("whole-columns", 3).finish();
        let raw: Vec<Vec<f64>> = (0..4)
            .map(|c| {
                let mut rng = key.stream(c);
                (0..n)
                    .map(|_| match c {
                        0 => crate::rng::uniform_below(&mut rng, 9) as f64,
                        _ => crate::rng::standard_normal(&mut rng),
                    })
                    .collect()
            })
            .collect();
        let values: Vec<Vec<f64>> = raw.iter().map(|c| doubled_mid_ranks(c)).collect();
        let whole: Vec<Vec<u32>> = raw.iter().map(|c| doubled_mid_ranks_whole(c)).collect();
        let as_values: Vec<Column> = values.iter().map(|c| Column::Values(c)).collect();
        let as_whole: Vec<Column> = whole.iter().map(|c| Column::Whole(c)).collect();
        let choose = |hood: &Neighbourhood| hood.choose(&key);
        // Column 0 has 9 levels: duplicate rows in the spaces that hold it.
        for columns in [&[0][..], &[0, 1], &[1, 2, 3], &[0, 2]] {
            let v: Vec<Column> = columns.iter().map(|&j| as_values[j]).collect();
            let w: Vec<Column> = columns.iter().map(|&j| as_whole[j]).collect();
            assert_eq!(
                choose(&Neighbourhood::new(&w)),
                choose(&Neighbourhood::new(&v)),
                "{columns:?}"
            );
            let origins: Vec<u32> = (0..n as u32).map(|r| r / 3).collect();
            assert_eq!(
                choose(&Neighbourhood::with_origins(&w, origins.clone())),
                choose(&Neighbourhood::with_origins(&v, origins)),
                "{columns:?}, with origins"
            );
            let extra = if columns.contains(&3) { 0 } else { 3 };
            assert_eq!(
                choose(&Neighbourhood::new(&w).extended(as_whole[extra])),
                choose(&Neighbourhood::new(&v).extended(as_values[extra])),
                "{columns:?} extended"
            );
            let blocks = |b: &blocks::Blocks| -> Vec<Vec<u32>> {
                (0..b.len()).map(|i| b.block(i).to_vec()).collect()
            };
            assert_eq!(
                blocks(&blocks::Blocks::new(&w, 5)),
                blocks(&blocks::Blocks::new(&v, 5))
            );
        }
        let prepared_w = ConditioningSpace::prepare(&as_whole[1..]).expect("worth preparing");
        let prepared_v = ConditioningSpace::prepare(&as_values[1..]).expect("worth preparing");
        assert_eq!(
            choose(prepared_w.neighbourhood()),
            choose(prepared_v.neighbourhood())
        );
        assert_eq!(
            choose(&prepared_w.extended(as_whole[0])),
            choose(&prepared_v.extended(as_values[0]))
        );
    }

    #[test]
    fn prepared_space_and_its_extensions_tie_exactly_as_brute_force() {
        // A 3-D integer grid (every row its own point, so the space is prepared) and extra columns
        // with many ties: on a small scale the lists of S suffice, on a large one the search must
        // go on in the tree of S. Checked against the definition by brute force.
        let n = 400;
        let c0: Vec<f64> = (0..n).map(|i| (i % 7) as f64).collect();
        let c1: Vec<f64> = (0..n).map(|i| ((i / 7) % 8) as f64).collect();
        let c2: Vec<f64> = (0..n).map(|i| (i / 56) as f64).collect();
        let space = ConditioningSpace::prepare(&[&c0, &c1, &c2]).expect("worth preparing");
        for row in 0..n {
            assert_eq!(
                space.neighbourhood().tied_rows(row),
                brute_force_tied_rows(&[&c0, &c1, &c2], row)
            );
        }
        for scale in [1.0, 10.0, 1000.0] {
            let extra: Vec<f64> = (0..n).map(|i| ((i * 37) % 11) as f64 * scale).collect();
            let joint = space.extended(&extra);
            for row in 0..n {
                assert_eq!(
                    joint.tied_rows(row),
                    brute_force_tied_rows(&[&c0, &c1, &c2, &extra], row),
                    "scale {scale}, row {row}"
                );
            }
        }
    }

    #[test]
    fn an_extended_neighbourhood_equals_one_built_on_all_its_columns() {
        // Duplicate rows, signed zeros and ties in both columns; with and without origins.
        let x: Vec<f64> = (0..300).map(|i| ((i * 7) % 13) as f64 - 6.0).collect();
        let mut z: Vec<f64> = (0..300).map(|i| ((i * 11) % 5) as f64).collect();
        z[3] = -0.0;
        z[4] = 0.0;
        let origins: Vec<u32> = (0..300).map(|i| i / 2).collect();
        for hood_origins in [None, Some(origins)] {
            let (small, whole) = match &hood_origins {
                None => (Neighbourhood::new(&[&x]), Neighbourhood::new(&[&x, &z])),
                Some(o) => (
                    Neighbourhood::with_origins(&[&x], o.clone()),
                    Neighbourhood::with_origins(&[&x, &z], o.clone()),
                ),
            };
            let extended = small.extended(&z);
            for row in 0..300 {
                assert_eq!(extended.tied_rows(row), whole.tied_rows(row), "row {row}");
            }
            let key = Key::new("extended", 1).finish();
            assert_eq!(extended.choose(&key), whole.choose(&key));
        }
    }

    #[test]
    fn negative_and_positive_zero_are_distinct_points_at_distance_zero() {
        // Grouping follows the total order of the raw values (as it always has), coordinates do not.
        let x = [0.0, -0.0, 1.0];
        let hood = Neighbourhood::new(&[&x]);
        assert_eq!(hood.distinct.len(), 3);
        assert_eq!(hood.tied_rows(0), vec![1]);
        assert_eq!(hood.tied_rows(1), vec![0]);
        assert_eq!(hood.tied_rows(2), brute_force_tied_rows(&[&x], 2));
    }
}
