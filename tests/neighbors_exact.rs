//! Exact nearest neighbours: the kd-tree path and the scan fallback agree with a brute-force search
//! on data with many ties, and the tie-break is uniform over tied rows.

use crate::common::assert_reference_cases_pass;
use forebear::measure::neighbors::{brute_force_tied_rows, Neighbourhood, MAX_TREE_DIMENSION};
use forebear::rng::Key;
use proptest::prelude::*;

fn as_refs(cols: &[Vec<f64>]) -> Vec<&[f64]> {
    cols.iter().map(Vec::as_slice).collect()
}

/// Columns of small integers (heavy ties and duplicates) or of halves (ties at other distances).
fn tied_columns(max_dim: usize) -> impl Strategy<Value = Vec<Vec<f64>>> {
    (1..=max_dim, 2usize..80, 1i32..5, prop::bool::ANY).prop_flat_map(|(dim, n, range, halves)| {
        prop::collection::vec(prop::collection::vec(-range..=range, n), dim).prop_map(move |cols| {
            cols.into_iter()
                .map(|c| {
                    c.into_iter()
                        .map(|v| if halves { v as f64 * 0.5 } else { v as f64 })
                        .collect()
                })
                .collect()
        })
    })
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 300, .. ProptestConfig::default() })]

    #[test]
    fn tree_tie_sets_equal_brute_force(cols in tied_columns(MAX_TREE_DIMENSION)) {
        let refs = as_refs(&cols);
        let hood = Neighbourhood::new(&refs);
        for row in 0..cols[0].len() {
            prop_assert_eq!(hood.tied_rows(row), brute_force_tied_rows(&refs, row), "row {}", row);
        }
    }

    #[test]
    fn chosen_neighbour_is_tied_and_never_the_row_itself(cols in tied_columns(4), seed in 0u64..1000) {
        let refs = as_refs(&cols);
        let hood = Neighbourhood::new(&refs);
        let chosen = hood.choose(&Key::new("prop", seed).finish());
        for (row, &j) in chosen.iter().enumerate() {
            prop_assert_ne!(j as usize, row);
            prop_assert!(brute_force_tied_rows(&refs, row).contains(&j));
        }
    }

    #[test]
    fn continuous_data_match_brute_force(n in 2usize..200, dim in 1usize..6, seed in 0u64..10_000) {
        let key = Key::new("cont", seed).finish();
        let cols: Vec<Vec<f64>> = (0..dim)
            .map(|d| {
                let mut rng = key.stream(d as u64);
                (0..n).map(|_| forebear::rng::standard_normal(&mut rng)).collect()
            })
            .collect();
        let refs = as_refs(&cols);
        let hood = Neighbourhood::new(&refs);
        for row in 0..n {
            prop_assert_eq!(hood.tied_rows(row), brute_force_tied_rows(&refs, row));
        }
    }
}

#[test]
fn scan_fallback_above_the_tree_dimensions_matches_brute_force() {
    // Defined once in src/qualify/neighbours.rs (`forebear qualify` records it), with the tree's
    // own check on heavily tied data.
    assert_reference_cases_pass("neighbours.scan-fallback");
    assert_reference_cases_pass("neighbours.tree-ties");
}

#[test]
fn tie_break_among_equidistant_points_is_uniform() {
    // Row 0 at the origin of a plane; five tied rows at distance 1 (one doubled); Pearson
    // chi-square against uniform at the 0.1 % level (critical value from SciPy).
    assert_reference_cases_pass("neighbours.tie-break-equidistant");
}

#[test]
fn tie_break_among_exact_duplicates_is_uniform() {
    // Three exact copies of row 0 equally likely; the row at distance 1 never chosen.
    assert_reference_cases_pass("neighbours.tie-break-duplicates");
}

#[test]
fn choices_do_not_depend_on_thread_count() {
    let key = Key::new("threads", 5).finish();
    let cols: Vec<Vec<f64>> = (0..3)
        .map(|d| {
            let mut rng = key.stream(d);
            (0..3000)
                .map(|_| forebear::rng::uniform_below(&mut rng, 4) as f64)
                .collect()
        })
        .collect();
    let refs = as_refs(&cols);
    let run = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| Neighbourhood::new(&refs).choose(&key))
    };
    let one = run(1);
    assert_eq!(one, run(2));
    assert_eq!(one, run(7));
}
