//! Exact nearest neighbours with ties: the kd-tree and its scan fallback find exactly the tied rows
//! a brute-force search finds, and the keyed tie-break is uniform over them (Pearson's chi-square
//! against the uniform distribution, Pearson 1900, with critical values from SciPy).

use super::check::{Comparison, Measured};
use super::scipy::chi_square_critical;
use super::{Case, Group};
use crate::measure::neighbors::{brute_force_tied_rows, Neighbourhood, MAX_TREE_DIMENSION};
use crate::rng::{uniform_below, Key};

/// The neighbour cases.
pub fn cases() -> Vec<Case> {
    let brute = "brute-force search over every pair of rows (the definition of the nearest \
                 neighbour in Azadkia and Chatterjee 2021, Section 2)";
    let pearson = "Pearson (1900) chi-square test against the uniform distribution at the 0.1 % \
                   level; critical value scipy.stats.chi2.ppf from tests/reference/chi2_scipy.json \
                   (tests/reference/make_fixtures.py)";
    vec![
        Case::new(
            "neighbours.tree-ties",
            Group::Neighbours,
            "the kd-tree's set of tied nearest rows equals brute force for every row of 600 rows \
             of small integers in 3 dimensions (heavy ties and duplicates)",
            brute,
            || vec![tied_sets_against_brute_force(3, 600, 4)],
        ),
        Case::new(
            "neighbours.scan-fallback",
            Group::Neighbours,
            &format!(
                "above the tree's {MAX_TREE_DIMENSION} dimensions the scan fallback's tied sets \
                 equal brute force ({} dimensions, 150 rows of values in 0..3)",
                MAX_TREE_DIMENSION + 2
            ),
            brute,
            || {
                vec![tied_sets_against_brute_force(
                    MAX_TREE_DIMENSION + 2,
                    150,
                    3,
                )]
            },
        ),
        Case::new(
            "neighbours.tie-break-equidistant",
            Group::Neighbours,
            "among five rows at the same distance (one doubled) the keyed tie-break chooses \
             uniformly: chi-square over 5000 keys below the 0.1 % critical value, 4 degrees of \
             freedom",
            pearson,
            || {
                let x = vec![0.0, 1.0, -1.0, 0.0, 0.0, 0.0, 3.0, 5.0];
                let y = vec![0.0, 0.0, 0.0, 1.0, -1.0, -1.0, 3.0, 5.0];
                vec![tie_break_uniformity(&[x, y], 5000)]
            },
        ),
        Case::new(
            "neighbours.tie-break-duplicates",
            Group::Neighbours,
            "among three exact copies of a row the keyed tie-break chooses uniformly, never the \
             row at distance 1: chi-square over 3000 keys below the 0.1 % critical value, 2 \
             degrees of freedom",
            pearson,
            || {
                vec![tie_break_uniformity(
                    &[vec![2.0, 2.0, 2.0, 2.0, 3.0, 7.0]],
                    3000,
                )]
            },
        ),
    ]
}

/// Keyed columns of `n` integers in 0..`levels`.
fn integer_columns(dim: usize, n: usize, levels: u64) -> Vec<Vec<f64>> {
    let key = Key::new("qualify-neighbours", dim as u64).finish();
    (0..dim)
        .map(|d| {
            let mut rng = key.stream(d as u64);
            (0..n)
                .map(|_| uniform_below(&mut rng, levels) as f64)
                .collect()
        })
        .collect()
}

/// The number of rows whose tied set differs from brute force's (expected 0).
fn tied_sets_against_brute_force(dim: usize, n: usize, levels: u64) -> Measured {
    let cols = integer_columns(dim, n, levels);
    let refs: Vec<&[f64]> = cols.iter().map(Vec::as_slice).collect();
    let hood = Neighbourhood::new(&refs);
    let differing = (0..n)
        .filter(|&row| hood.tied_rows(row) != brute_force_tied_rows(&refs, row))
        .count();
    Measured::new(
        "rows whose tied set differs from brute force",
        Comparison::Exact {
            expected: "0".into(),
            observed: differing.to_string(),
        },
    )
}

/// Pearson's chi-square of the rows chosen for row 0 over `draws` keys, against uniform over its
/// tied rows, compared with the 0.1 % critical value; a choice outside the tied set is infinite.
fn tie_break_uniformity(cols: &[Vec<f64>], draws: u64) -> Measured {
    let refs: Vec<&[f64]> = cols.iter().map(Vec::as_slice).collect();
    let hood = Neighbourhood::new(&refs);
    let tied = hood.tied_rows(0);
    let mut counts = vec![0u64; tied.len()];
    let mut outside = false;
    for seed in 0..draws {
        let chosen = hood.choose(&Key::new("uniformity", seed).finish())[0];
        match tied.iter().position(|&t| t == chosen) {
            Some(at) => counts[at] += 1,
            None => outside = true,
        }
    }
    let expected = draws as f64 / tied.len().max(1) as f64;
    let statistic: f64 = counts
        .iter()
        .map(|&c| (c as f64 - expected).powi(2) / expected)
        .sum();
    let df = tied.len().saturating_sub(1);
    Measured::new(
        format!("chi-square, {df} degrees of freedom"),
        Comparison::Below {
            bound: chi_square_critical(df, 0.001).unwrap_or(f64::NAN),
            observed: if outside { f64::INFINITY } else { statistic },
        },
    )
}
