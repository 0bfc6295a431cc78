//! Exact nearest neighbours: the kd-tree path and the scan fallback agree with a brute-force search
//! on data with many ties, and the tie-break is uniform over tied rows.

use forebear::measure::neighbors::{brute_force_tied_rows, Neighbourhood, MAX_TREE_DIMENSION};
use forebear::rng::Key;
use proptest::prelude::*;
use serde_json::Value;

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
    let dim = MAX_TREE_DIMENSION + 2;
    let key = Key::new("wide", 3).finish();
    let cols: Vec<Vec<f64>> = (0..dim)
        .map(|d| {
            let mut rng = key.stream(d as u64);
            (0..150)
                .map(|_| forebear::rng::uniform_below(&mut rng, 3) as f64)
                .collect()
        })
        .collect();
    let refs = as_refs(&cols);
    let hood = Neighbourhood::new(&refs);
    for row in 0..150 {
        assert_eq!(
            hood.tied_rows(row),
            brute_force_tied_rows(&refs, row),
            "row {row}"
        );
    }
}

fn chi_square_critical(df: usize, upper: f64) -> f64 {
    // scipy.stats.chi2.ppf(1 − upper, df), from tests/reference/chi2_scipy.json (make_fixtures.py).
    let fixture: Value = serde_json::from_str(include_str!("reference/chi2_scipy.json")).unwrap();
    fixture["quantiles"]
        .as_array()
        .unwrap()
        .iter()
        .find(|q| q["df"].as_u64() == Some(df as u64) && q["upper"].as_f64() == Some(upper))
        .and_then(|q| q["critical"].as_f64())
        .expect("quantile in fixture")
}

/// Counts how often each tied row is chosen for `row` over many keys, and returns Pearson's
/// chi-square statistic against the uniform distribution (Pearson 1900).
fn chi_square_of_choices(cols: &[Vec<f64>], row: usize, draws: u64) -> (f64, usize) {
    let refs = as_refs(cols);
    let hood = Neighbourhood::new(&refs);
    let tied = hood.tied_rows(row);
    let mut counts = vec![0u64; tied.len()];
    for seed in 0..draws {
        let chosen = hood.choose(&Key::new("uniformity", seed).finish())[row];
        counts[tied
            .iter()
            .position(|&t| t == chosen)
            .expect("chosen is tied")] += 1;
    }
    let expected = draws as f64 / tied.len() as f64;
    let statistic = counts
        .iter()
        .map(|&c| (c as f64 - expected).powi(2) / expected)
        .sum();
    (statistic, tied.len() - 1)
}

#[test]
fn tie_break_among_equidistant_points_is_uniform() {
    // Row 0 at the origin of a plane; four rows at distance 1, one of them doubled (so five tied
    // rows); farther rows never chosen. Pearson chi-square against uniform over the five rows at the
    // 0.1 % level (critical value from SciPy).
    let x = vec![0.0, 1.0, -1.0, 0.0, 0.0, 0.0, 3.0, 5.0];
    let y = vec![0.0, 0.0, 0.0, 1.0, -1.0, -1.0, 3.0, 5.0];
    let (statistic, df) = chi_square_of_choices(&[x, y], 0, 5000);
    assert_eq!(df, 4);
    assert!(
        statistic < chi_square_critical(df, 0.001),
        "chi-square {statistic}"
    );
}

#[test]
fn tie_break_among_exact_duplicates_is_uniform() {
    // Row 0 has three exact copies (rows 1–3) and a neighbour at distance 1 (row 4) that must never
    // be chosen; the three copies are equally likely.
    let x = vec![2.0, 2.0, 2.0, 2.0, 3.0, 7.0];
    let (statistic, df) = chi_square_of_choices(&[x], 0, 3000);
    assert_eq!(df, 2);
    assert!(
        statistic < chi_square_critical(df, 0.001),
        "chi-square {statistic}"
    );
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
