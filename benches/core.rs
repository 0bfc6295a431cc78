//! Speed benchmarks of the measured core (issue 2), with a plain `std::time` harness.
//!
//! Run with `cargo bench --bench core`. Every case reports the median of several runs:
//! - (a) T_n(Y, Z) with one-dimensional Z and empty X at n = 10^6;
//! - (b) T_n(Y, Z | X) with |X| = 3 at n = 10^5;
//! - (c) the floor for (b): kiddo kd-trees over X (3-D) and (X, Z) (4-D) and a query for the
//!   nearest other point of every row, nothing else (queries spread over the same rayon pool);
//! - (b1), (c1), (b6), (c6): the same with |X| = 1 and |X| = 6;
//! - (peer) T_n and ξ_n on a two-column file that `benches/peers/xi_scipy.py` also gives to SciPy;
//! - (d) a full `analyze` without resampling on 10^4 rows × 20 columns (continuous data on the
//!   CHILD network structure, created by `benches/make_bench_data.sh`; another file can be given
//!   in `FOREBEAR_BENCH_DATA`, another target in `FOREBEAR_BENCH_TARGET`).
//!
//! Inputs of (a)–(c) come from the crate's seeded generator, so every run measures the same data.
//! `FOREBEAR_BENCH_RUNS` overrides the number of runs per case. Targets on the reference machine
//! (docs/benchmarks.md): (d) under 2 s; (b) within 1.5× of (c).

use forebear::analysis::{analyze_file, Silent};
use forebear::measure::xi::xi_test;
use forebear::measure::{conditional_dependence, Scaling};
use forebear::rng::{standard_normal, unit_interval, Key};
use forebear::settings::SettingsInput;
use kiddo::{ImmutableKdTree, SquaredEuclidean};
use rayon::prelude::*;
use std::hint::black_box;
use std::num::NonZeroUsize;
use std::path::PathBuf;
use std::time::{Duration, Instant};

/// Target of the full analysis unless `FOREBEAR_BENCH_TARGET` names another: a collider in the
/// CHILD structure (parents HypDistrib and HypoxiaInO2).
const DEFAULT_TARGET: &str = "LowerBodyO2";

fn main() {
    // `cargo bench` passes `--bench`; any other argument filters cases by name (a, b, c, d, ...).
    let filters: Vec<String> = std::env::args()
        .skip(1)
        .filter(|a| !a.starts_with('-'))
        .collect();
    let wanted = |name: &str| filters.is_empty() || filters.iter().any(|f| f == name);
    let runs = std::env::var("FOREBEAR_BENCH_RUNS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(5usize);
    println!(
        "forebear core benchmarks: median of {runs} runs, {} rayon threads",
        rayon::current_num_threads()
    );

    if wanted("a") {
        let n = 1_000_000;
        let (y, zc) = dependent_pair(n, 1);
        let key = Key::new("bench-a", 0).finish();
        report(
            "a",
            "T_n(Y, Z), |Z| = 1, X empty, n = 10^6, raw normals",
            runs,
            || {
                black_box(conditional_dependence(&y, &[&zc], &[], &key, &key));
            },
        );
        let yr = Scaling::Rank.apply(&y);
        let zr = Scaling::Rank.apply(&zc);
        report(
            "a-rank",
            "same, rank-scaled (every row has two tied neighbours)",
            runs,
            || {
                black_box(conditional_dependence(&yr, &[&zr], &[], &key, &key));
            },
        );
    }

    let n = 100_000;
    let (y, z, x) = conditional_case(n, 2, 3);
    let key_x = Key::new("bench-b-x", 0).finish();
    let key_xz = Key::new("bench-b-xz", 0).finish();
    for (dim, b_name, c_name) in [(1, "b1", "c1"), (3, "b", "c"), (6, "b6", "c6")] {
        if !(wanted(b_name) || wanted(c_name)) {
            continue;
        }
        let (y, z, x) = if dim == 3 {
            (y.clone(), z.clone(), x.clone())
        } else {
            conditional_case(n, 2, dim)
        };
        let xs: Vec<&[f64]> = x.iter().map(Vec::as_slice).collect();
        let mut b = None;
        let mut c = None;
        if wanted(b_name) {
            b = Some(report(
                b_name,
                &format!("T_n(Y, Z | X), |X| = {dim}, |Z| = 1, n = 10^5, raw normals"),
                runs,
                || {
                    black_box(conditional_dependence(&y, &[&z], &xs, &key_x, &key_xz));
                },
            ));
        }
        if wanted(c_name) {
            c = Some(report(
                c_name,
                &format!(
                    "floor of ({b_name}): kiddo trees in {dim}-D and {}-D, nearest other point per row",
                    dim + 1
                ),
                runs,
                || {
                    let xz: Vec<&[f64]> = xs.iter().copied().chain([z.as_slice()]).collect();
                    match dim {
                        1 => {
                            black_box(tree_floor::<1>(&xs));
                            black_box(tree_floor::<2>(&xz));
                        }
                        3 => {
                            black_box(tree_floor::<3>(&xs));
                            black_box(tree_floor::<4>(&xz));
                        }
                        _ => {
                            black_box(tree_floor::<6>(&xs));
                            black_box(tree_floor::<7>(&xz));
                        }
                    }
                },
            ));
        }
        if let (Some(b), Some(c)) = (b, c) {
            let ratio = b.as_secs_f64() / c.as_secs_f64();
            println!(
                "    ({b_name})/({c_name}) = {ratio:.2} (target ≤ 1.0: {})",
                if ratio <= 1.0 { "met" } else { "NOT met" }
            );
        }
    }
    if wanted("b-rank") {
        let yr = Scaling::Rank.apply(&y);
        let zr = Scaling::Rank.apply(&z);
        let xr: Vec<Vec<f64>> = x.iter().map(|c| Scaling::Rank.apply(c)).collect();
        let xrs: Vec<&[f64]> = xr.iter().map(Vec::as_slice).collect();
        report("b-rank", "same as (b), rank-scaled", runs, || {
            black_box(conditional_dependence(&yr, &[&zr], &xrs, &key_x, &key_xz));
        });
    }

    if wanted("peer") {
        peer_cases(runs);
    }

    if wanted("d") {
        let path = std::env::var_os("FOREBEAR_BENCH_DATA")
            .map(PathBuf::from)
            .unwrap_or_else(|| {
                PathBuf::from(env!("CARGO_MANIFEST_DIR"))
                    .join("target/bench-data/child-10000-seed1.csv")
            });
        if !path.exists() {
            println!(
                "d: skipped, {} is missing: run benches/make_bench_data.sh first",
                path.display()
            );
            return;
        }
        let target =
            std::env::var("FOREBEAR_BENCH_TARGET").unwrap_or_else(|_| DEFAULT_TARGET.to_string());
        let settings = SettingsInput {
            replicates: Some(0),
            ..SettingsInput::for_target(&target)
        }
        .check()
        .expect("bench settings are valid");
        let d = report(
            "d",
            &format!(
                "analyze {} --target {target} --replicates 0",
                path.display()
            ),
            runs,
            || {
                black_box(
                    analyze_file(&path, &settings, &target, Vec::new(), &Silent)
                        .expect("analysis runs"),
                );
            },
        );
        println!(
            "    target (d) < 2 s: {}",
            if d.as_secs_f64() < 2.0 {
                "met"
            } else {
                "NOT met"
            }
        );
    }
}

/// Runs `work` `runs` times (after one warm-up run) and prints and returns the median.
fn report(name: &str, what: &str, runs: usize, mut work: impl FnMut()) -> Duration {
    work();
    let mut times: Vec<Duration> = (0..runs.max(1))
        .map(|_| {
            let started = Instant::now();
            work();
            started.elapsed()
        })
        .collect();
    times.sort();
    let median = times[times.len() / 2];
    println!(
        "{name:>7}: median {:>9.3} ms  (min {:.3}, max {:.3})  {what}",
        ms(median),
        ms(times[0]),
        ms(times[times.len() - 1])
    );
    median
}

fn ms(d: Duration) -> f64 {
    d.as_secs_f64() * 1e3
}

fn normals(n: usize, key: &Key, stream: u64) -> Vec<f64> {
    let mut rng = key.stream(stream);
    (0..n).map(|_| standard_normal(&mut rng)).collect()
}

/// Y = sin(2Z) + noise with uniform Z on (−2, 2): a dependent pair without ties.
fn dependent_pair(n: usize, seed: u64) -> (Vec<f64>, Vec<f64>) {
    let key = Key::new("bench-data", seed).finish();
    let mut rng = key.stream(0);
    let z: Vec<f64> = (0..n)
        .map(|_| 4.0 * unit_interval(&mut rng) - 2.0)
        .collect();
    let noise = normals(n, &key, 1);
    let y = z
        .iter()
        .zip(&noise)
        .map(|(z, e)| (2.0 * z).sin() + 0.5 * e)
        .collect();
    (y, z)
}

/// Y depends on `dim` X columns and on Z, which is itself related to X.
fn conditional_case(n: usize, seed: u64, dim: usize) -> (Vec<f64>, Vec<f64>, Vec<Vec<f64>>) {
    let key = Key::new("bench-data", seed).finish();
    let x: Vec<Vec<f64>> = (0..dim as u64).map(|d| normals(n, &key, d)).collect();
    let e1 = normals(n, &key, 10);
    let e2 = normals(n, &key, 11);
    let z: Vec<f64> = (0..n).map(|i| x[0][i].tanh() + 0.5 * e1[i]).collect();
    let y = (0..n)
        .map(|i| {
            let interaction = if dim >= 3 { x[1][i] * x[2][i] } else { 0.0 };
            let rest: f64 = x.iter().skip(3).map(|c| 0.3 * c[i]).sum();
            interaction + rest + z[i].sin() + 0.3 * e2[i]
        })
        .collect();
    (y, z, x)
}

/// The cases that `benches/peers/xi_scipy.py` runs beside SciPy's `chatterjeexi` on the same file:
/// `FOREBEAR_BENCH_PAIR` names a CSV file with a header and two numeric columns (y, z).
fn peer_cases(runs: usize) {
    let Some(path) = std::env::var_os("FOREBEAR_BENCH_PAIR") else {
        println!(
            "peer: skipped, FOREBEAR_BENCH_PAIR names no file (run benches/peers/xi_scipy.py)"
        );
        return;
    };
    let text = std::fs::read_to_string(&path).expect("the pair file is readable");
    let (mut y, mut z) = (Vec::new(), Vec::new());
    for line in text.lines().skip(1) {
        let (a, b) = line.split_once(',').expect("two columns");
        y.push(a.trim().parse::<f64>().expect("a number"));
        z.push(b.trim().parse::<f64>().expect("a number"));
    }
    let key = Key::new("bench-peer", 0).finish();
    report(
        "peer-tn",
        "T_n(y, z), X empty, raw values of the file",
        runs,
        || {
            black_box(conditional_dependence(&y, &[&z], &[], &key, &key));
        },
    );
    let yr = Scaling::Rank.apply(&y);
    let zr = Scaling::Rank.apply(&z);
    report(
        "peer-tn-rank",
        "T_n(y, z), X empty, rank-scaled (the default; every row has two tied neighbours)",
        runs,
        || {
            black_box(conditional_dependence(&yr, &[&zr], &[], &key, &key));
        },
    );
    report(
        "peer-xi",
        "xi_n(z, y) and its asymptotic p-value, raw values of the file",
        runs,
        || {
            black_box(xi_test(&z, &y, &key));
        },
    );
}

/// Builds a kd-tree over the rows of `columns` and finds the nearest other point of every row.
fn tree_floor<const K: usize>(columns: &[&[f64]]) -> Vec<u32> {
    let n = columns[0].len();
    let points: Vec<[f64; K]> = (0..n)
        .map(|i| std::array::from_fn(|d| columns[d][i]))
        .collect();
    let tree: ImmutableKdTree<f64, K> = ImmutableKdTree::new_from_slice(&points).expect("tree");
    let two = NonZeroUsize::new(2).expect("two");
    (0..n)
        .into_par_iter()
        .map(|i| {
            let found = tree
                .query(&points[i])
                .nearest_n::<SquaredEuclidean<f64>>(two)
                .execute();
            found
                .iter()
                .map(|hit| hit.item)
                .find(|&j| j as usize != i)
                .unwrap_or(u32::MAX)
        })
        .collect()
}
