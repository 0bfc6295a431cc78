//! Is the selection test of the calibrated rule a level-α test, and how much power does it keep?
//!
//! Draws data where the response Y depends on a conditioning set S and every candidate depends on
//! S too, but Y ⊥ candidates | S (the null of a forward step), and data where one candidate does
//! carry information about Y given S (the alternative). For each, one selection step is evaluated
//! with `forebear::search::forward::evaluate_step` (the code the search runs), every draw made,
//! and the step counts as significant when its best T_n is positive and its p-value is at most α.
//! Rejection rates with their binomial standard errors: docs/calibration.md.
//!
//! ```text
//! cargo run --release --example calibration -- [--reps R] [--block-rows 5,10] [--sizes 200,1000]
//!     [--alpha A] [--only NAME]
//! ```
//! Data are generated here (invented mechanisms, seeded through `forebear::rng`), not tuned on.

use forebear::data::Table;
use forebear::measure::{Scaling, TargetRanks};
use forebear::rng::{standard_normal, uniform_below, unit_interval, Key};
use forebear::search::forward::evaluate_step;
use forebear::search::{SearchData, SelectionRule};
use rand_chacha::ChaCha20Rng;

/// One draw of a scenario: Y, the columns of S, the candidate columns.
type Draw = (Vec<f64>, Vec<Vec<f64>>, Vec<Vec<f64>>);

/// A scenario draws (Y, S columns, candidate columns) for n rows from a stream.
struct Scenario {
    name: &'static str,
    /// Dimension of S.
    d: usize,
    /// Number of candidates.
    p: usize,
    /// Whether the first candidate carries information about Y given S.
    alternative: bool,
    draw: fn(&mut ChaCha20Rng, usize, usize) -> Draw,
}

fn normal(rng: &mut ChaCha20Rng, n: usize) -> Vec<f64> {
    (0..n).map(|_| standard_normal(rng)).collect()
}

/// A root column of one of five kinds: normal, uniform, exponential, heavy-tailed (Student t with
/// one degree of freedom, i.e. Cauchy, by the inverse CDF) or discrete with five levels.
fn root(rng: &mut ChaCha20Rng, n: usize, kind: u64) -> Vec<f64> {
    (0..n)
        .map(|_| match kind % 5 {
            0 => standard_normal(rng),
            1 => unit_interval(rng) * 4.0 - 2.0,
            2 => -(1.0 - unit_interval(rng)).ln(),
            3 => (std::f64::consts::PI * (unit_interval(rng) - 0.5)).tan(),
            _ => uniform_below(rng, 5) as f64,
        })
        .collect()
}

fn map2(a: &[f64], b: &[f64], f: impl Fn(f64, f64) -> f64) -> Vec<f64> {
    a.iter().zip(b).map(|(&x, &y)| f(x, y)).collect()
}

fn scenarios() -> Vec<Scenario> {
    vec![
        Scenario {
            name: "independent, mixed kinds",
            d: 0,
            p: 10,
            alternative: false,
            draw: |rng, n, p| {
                let kind = uniform_below(rng, 5);
                let y = root(rng, n, kind);
                let xs = (0..p).map(|j| root(rng, n, j as u64)).collect();
                (y, Vec::new(), xs)
            },
        },
        Scenario {
            name: "1-D S, smooth",
            d: 1,
            p: 5,
            alternative: false,
            draw: |rng, n, p| {
                let s = normal(rng, n);
                let e = normal(rng, n);
                let y = map2(&s, &e, |s, e| (2.0 * s).sin() + 0.5 * e);
                let xs = (0..p)
                    .map(|j| {
                        let e = normal(rng, n);
                        let a = 0.5 + j as f64 * 0.3;
                        map2(&s, &e, |s, e| (a * s).tanh() + 0.5 * e)
                    })
                    .collect();
                (y, vec![s], xs)
            },
        },
        Scenario {
            name: "1-D S, strong (noise 0.1)",
            d: 1,
            p: 5,
            alternative: false,
            draw: |rng, n, p| {
                let s = normal(rng, n);
                let e = normal(rng, n);
                let y = map2(&s, &e, |s, e| s + 0.1 * e);
                let xs = (0..p)
                    .map(|_| {
                        let e = normal(rng, n);
                        map2(&s, &e, |s, e| s + 0.1 * e)
                    })
                    .collect();
                (y, vec![s], xs)
            },
        },
        Scenario {
            name: "1-D S, scale only",
            d: 1,
            p: 5,
            alternative: false,
            draw: |rng, n, p| {
                let s = normal(rng, n);
                let e = normal(rng, n);
                let y = map2(&s, &e, |s, e| (1.0 + s.abs()) * e);
                let xs = (0..p)
                    .map(|_| {
                        let e = normal(rng, n);
                        map2(&s, &e, |s, e| (1.0 + s.abs()) * e)
                    })
                    .collect();
                (y, vec![s], xs)
            },
        },
        Scenario {
            name: "1-D S, discrete (3 levels)",
            d: 1,
            p: 5,
            alternative: false,
            draw: |rng, n, p| {
                let s: Vec<f64> = (0..n).map(|_| uniform_below(rng, 3) as f64).collect();
                let e = normal(rng, n);
                let y = map2(&s, &e, |s, e| s + e);
                let xs = (0..p)
                    .map(|_| {
                        let e = normal(rng, n);
                        map2(&s, &e, |s, e| s * s + e)
                    })
                    .collect();
                (y, vec![s], xs)
            },
        },
        Scenario {
            name: "2-D S, product",
            d: 2,
            p: 5,
            alternative: false,
            draw: |rng, n, p| {
                let s1 = normal(rng, n);
                let s2 = root(rng, n, 1);
                let e = normal(rng, n);
                let prod = map2(&s1, &s2, |a, b| a * b);
                let y = map2(&prod, &e, |m, e| m + 0.5 * e);
                let xs = (0..p)
                    .map(|_| {
                        let e = normal(rng, n);
                        let base = map2(&s1, &s2, |a, b| a + b * b);
                        map2(&base, &e, |m, e| m + e)
                    })
                    .collect();
                (y, vec![s1, s2], xs)
            },
        },
        Scenario {
            name: "3-D S, mixed",
            d: 3,
            p: 5,
            alternative: false,
            draw: |rng, n, p| {
                let s1 = normal(rng, n);
                let s2 = root(rng, n, 2);
                let s3 = root(rng, n, 1);
                let e = normal(rng, n);
                let y: Vec<f64> = (0..n)
                    .map(|i| (s1[i] + s2[i]).tanh() + s3[i] * s3[i] / 2.0 + 0.3 * e[i])
                    .collect();
                let xs = (0..p)
                    .map(|_| {
                        let e = normal(rng, n);
                        (0..n)
                            .map(|i| s1[i].sin() + s2[i] * s3[i] + 0.5 * e[i])
                            .collect()
                    })
                    .collect();
                (y, vec![s1, s2, s3], xs)
            },
        },
        Scenario {
            name: "2-D S, heavy tails",
            d: 2,
            p: 5,
            alternative: false,
            draw: |rng, n, p| {
                let s1 = root(rng, n, 3);
                let s2 = root(rng, n, 3);
                let e = root(rng, n, 3);
                let y: Vec<f64> = (0..n)
                    .map(|i| s1[i].tanh() + s2[i].tanh() + 0.3 * e[i])
                    .collect();
                let xs = (0..p)
                    .map(|_| {
                        let e = normal(rng, n);
                        (0..n).map(|i| s1[i].atan() * 2.0 + 0.5 * e[i]).collect()
                    })
                    .collect();
                (y, vec![s1, s2], xs)
            },
        },
        Scenario {
            name: "alternative: 1-D S, weak candidate",
            d: 1,
            p: 5,
            alternative: true,
            draw: |rng, n, p| {
                let s = normal(rng, n);
                let x1: Vec<f64> = normal(rng, n);
                let e = normal(rng, n);
                let y: Vec<f64> = (0..n)
                    .map(|i| (2.0 * s[i]).sin() + 0.4 * x1[i].tanh() + 0.5 * e[i])
                    .collect();
                let mut xs = vec![x1];
                for _ in 1..p {
                    let e = normal(rng, n);
                    xs.push(map2(&s, &e, |s, e| s.tanh() + 0.5 * e));
                }
                (y, vec![s], xs)
            },
        },
        Scenario {
            name: "alternative: 2-D S, child-like",
            d: 2,
            p: 5,
            alternative: true,
            draw: |rng, n, p| {
                // Y's child x1 also depends on another column (a spouse), as in a Markov blanket.
                let s1 = normal(rng, n);
                let s2 = root(rng, n, 1);
                let e = normal(rng, n);
                let y: Vec<f64> = (0..n)
                    .map(|i| s1[i].tanh() + 0.5 * s2[i] + 0.3 * e[i])
                    .collect();
                let spouse = root(rng, n, 1);
                let e1 = normal(rng, n);
                let x1: Vec<f64> = (0..n)
                    .map(|i| y[i] / (1.0 + spouse[i].abs()) + 0.3 * e1[i])
                    .collect();
                let mut xs = vec![x1, spouse];
                for _ in 2..p {
                    let e = normal(rng, n);
                    xs.push(map2(&s1, &e, |s, e| s + e));
                }
                (y, vec![s1, s2], xs)
            },
        },
    ]
}

struct Options {
    reps: u64,
    block_rows: Vec<usize>,
    sizes: Vec<usize>,
    alpha: f64,
    only: Option<String>,
}

fn list<T: std::str::FromStr>(text: &str) -> Vec<T> {
    text.split(',')
        .map(|v| {
            v.trim()
                .parse()
                .unwrap_or_else(|_| panic!("bad list '{text}'"))
        })
        .collect()
}

fn options() -> Options {
    let mut o = Options {
        reps: 200,
        block_rows: vec![5],
        sizes: vec![200, 1000, 4000],
        alpha: 0.05,
        only: None,
    };
    let args: Vec<String> = std::env::args().skip(1).collect();
    let mut i = 0;
    while i < args.len() {
        let value = args.get(i + 1).cloned().expect("a value after each flag");
        match args[i].as_str() {
            "--reps" => o.reps = value.parse().expect("--reps N"),
            "--block-rows" => o.block_rows = list(&value),
            "--sizes" => o.sizes = list(&value),
            "--alpha" => o.alpha = value.parse().expect("--alpha A"),
            "--only" => o.only = Some(value),
            other => panic!("unknown flag {other}"),
        }
        i += 2;
    }
    o
}

fn main() {
    let o = options();
    let rule = SelectionRule {
        alpha: o.alpha,
        ..SelectionRule::calibrated()
    };
    println!(
        "| scenario | d | candidates | n | block rows | replications | significant | ± SE | mean p |"
    );
    println!("|---|---|---|---|---|---|---|---|---|");
    for scenario in scenarios() {
        if o.only
            .as_ref()
            .is_some_and(|f| !scenario.name.contains(f.as_str()))
        {
            continue;
        }
        for &n in &o.sizes {
            for &k in &o.block_rows {
                if scenario.d == 0 && k != o.block_rows[0] {
                    continue; // no blocks without a conditioning set
                }
                let (mut significant, mut p_sum) = (0u64, 0.0);
                for rep in 0..o.reps {
                    let mut rng = Key::new("calibration-data", rep)
                        .text(scenario.name)
                        .number(n as u64)
                        .finish()
                        .stream(0);
                    let (y, s, xs) = (scenario.draw)(&mut rng, n, scenario.p);
                    let mut names = vec!["y".to_string()];
                    names.extend((0..s.len()).map(|i| format!("s{i}")));
                    names.extend((0..xs.len()).map(|i| format!("x{i}")));
                    let mut columns = vec![y];
                    columns.extend(s);
                    columns.extend(xs);
                    let table = Table::from_columns(names, columns);
                    let data = SearchData::new(&table, Scaling::Rank, rep, 0).with_block_rows(k);
                    let selected: Vec<usize> = (1..=scenario.d).collect();
                    let remaining: Vec<usize> =
                        (scenario.d + 1..=scenario.d + scenario.p).collect();
                    let ranks = TargetRanks::new(data.raw(0));
                    let Some(step) = evaluate_step(
                        &data,
                        "selection",
                        0,
                        &ranks,
                        &selected,
                        &remaining,
                        &rule,
                        true,
                    ) else {
                        continue;
                    };
                    let test = step.test.expect("exhaustive steps are tested");
                    p_sum += test.p_value;
                    if step.scored[0].1 > 0 && test.p_value <= o.alpha {
                        significant += 1;
                    }
                }
                let rate = significant as f64 / o.reps as f64;
                let se = (rate * (1.0 - rate) / o.reps as f64).sqrt();
                println!(
                    "| {}{} | {} | {} | {n} | {} | {} | {:.3} | {:.3} | {:.3} |",
                    scenario.name,
                    if scenario.alternative { "" } else { " (null)" },
                    scenario.d,
                    scenario.p,
                    if scenario.d == 0 {
                        "—".to_string()
                    } else {
                        k.to_string()
                    },
                    o.reps,
                    rate,
                    se,
                    p_sum / o.reps as f64
                );
            }
        }
    }
}
