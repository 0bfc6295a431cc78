//! Index plans: which rows of the data each replicate uses. Replicate k's rows come from a key
//! derived from (study seed, k) — for complementary pairs from (study seed, pair ⌊k/2⌋) — never from
//! a sequence drawn in order, so replicate k is the same whether it runs first, last, alone or on
//! another machine.

use crate::rng::{uniform_below, Key};
use serde::{Deserialize, Serialize};

/// How replicates draw their rows.
#[derive(
    Clone, Copy, Debug, PartialEq, Serialize, schemars::JsonSchema, Deserialize, clap::ValueEnum,
)]
#[serde(rename_all = "kebab-case")]
pub enum PlanKind {
    /// B random splits into two disjoint halves of ⌊n/2⌋ rows: 2B replicates (Shah and Samworth,
    /// JRSS-B 2013).
    ComplementaryPairs,
    /// A fraction of the rows without replacement.
    Subsample,
    /// n rows with replacement; copies of one row are never each other's neighbour.
    Bootstrap,
}

impl PlanKind {
    /// Parses a command-line name.
    pub fn parse(name: &str) -> Option<PlanKind> {
        match name {
            "complementary-pairs" => Some(PlanKind::ComplementaryPairs),
            "subsample" => Some(PlanKind::Subsample),
            "bootstrap" => Some(PlanKind::Bootstrap),
            _ => None,
        }
    }

    /// The command-line name.
    pub fn name(self) -> &'static str {
        match self {
            PlanKind::ComplementaryPairs => "complementary-pairs",
            PlanKind::Subsample => "subsample",
            PlanKind::Bootstrap => "bootstrap",
        }
    }
}

/// A validated resampling plan.
#[derive(Clone, Debug, PartialEq, Serialize, schemars::JsonSchema, Deserialize)]
pub struct ResamplePlan {
    /// The kind of plan.
    pub kind: PlanKind,
    /// Number of replicates (2B for complementary pairs).
    pub count: u32,
    /// Share of rows per replicate: 0.5 (⌊n/2⌋ rows) for complementary pairs, the chosen fraction
    /// for subsamples, 1 for the bootstrap.
    pub fraction: f64,
}

/// Rows drawn for one replicate, and for the bootstrap the original row behind each drawn row.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ReplicateRows {
    /// Row positions in the full table, in replicate order.
    pub rows: Vec<usize>,
    /// True when rows may repeat (bootstrap): neighbour searches must then exclude copies.
    pub with_replacement: bool,
}

/// Share of rows per subsample when none is given (common practice: half the rows, as
/// complementary pairs use).
pub const DEFAULT_SUBSAMPLE_FRACTION: f64 = 0.5;

/// Most replicates a plan may ask for: each replicate repeats the whole search, and stability
/// frequencies are already resolved to 0.1 % at this count (a bound of our own).
pub const MAX_REPLICATES: u32 = 10_000;

impl ResamplePlan {
    /// A plan of `count` replicates; `fraction` is the share of rows of a subsample (0.5 when not
    /// given) and is fixed by the other kinds. The settings check (`settings::check`) has already
    /// refused counts and fractions that make no plan.
    pub fn new(kind: PlanKind, count: u32, fraction: Option<f64>) -> ResamplePlan {
        let fraction = match kind {
            PlanKind::Subsample => fraction.unwrap_or(DEFAULT_SUBSAMPLE_FRACTION),
            PlanKind::ComplementaryPairs => 0.5,
            PlanKind::Bootstrap => 1.0,
        };
        ResamplePlan {
            kind,
            count,
            fraction,
        }
    }

    /// The rows of replicate `k` (0-based) of a table with `n` rows, drawn with keys of the study
    /// seed.
    pub fn rows(&self, seed: u64, k: u32, n: usize) -> ReplicateRows {
        match self.kind {
            PlanKind::ComplementaryPairs => {
                let key = Key::new("complementary-pairs", seed)
                    .number(u64::from(k / 2))
                    .finish();
                let permutation = shuffled(n, n, &key);
                let half = n / 2;
                let mut rows = if k.is_multiple_of(2) {
                    permutation[..half].to_vec()
                } else {
                    permutation[half..2 * half].to_vec()
                };
                rows.sort_unstable();
                ReplicateRows {
                    rows,
                    with_replacement: false,
                }
            }
            PlanKind::Subsample => {
                let key = Key::new("subsample", seed).number(u64::from(k)).finish();
                let m = ((self.fraction * n as f64).floor() as usize).clamp(2, n);
                let mut rows = shuffled(n, m, &key);
                rows.sort_unstable();
                ReplicateRows {
                    rows,
                    with_replacement: false,
                }
            }
            PlanKind::Bootstrap => {
                let key = Key::new("bootstrap", seed).number(u64::from(k)).finish();
                let mut rng = key.stream(0);
                let mut rows: Vec<usize> = (0..n)
                    .map(|_| uniform_below(&mut rng, n as u64) as usize)
                    .collect();
                rows.sort_unstable();
                ReplicateRows {
                    rows,
                    with_replacement: true,
                }
            }
        }
    }
}

/// The first `m` entries of a uniformly random permutation of 0..n (Fisher–Yates; Durstenfeld,
/// CACM 1964), drawn from stream 0 of `key`.
fn shuffled(n: usize, m: usize, key: &Key) -> Vec<usize> {
    let mut rng = key.stream(0);
    let mut items: Vec<usize> = (0..n).collect();
    for i in 0..m.min(n.saturating_sub(1)) {
        let j = i + uniform_below(&mut rng, (n - i) as u64) as usize;
        items.swap(i, j);
    }
    items.truncate(m);
    items
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn complementary_halves_are_disjoint_and_of_half_size() {
        let plan = ResamplePlan::new(PlanKind::ComplementaryPairs, 10, None);
        for b in 0..5 {
            let a = plan.rows(3, 2 * b, 101).rows;
            let c = plan.rows(3, 2 * b + 1, 101).rows;
            assert_eq!(a.len(), 50);
            assert_eq!(c.len(), 50);
            assert!(a.iter().all(|r| !c.contains(r)));
        }
        assert_ne!(plan.rows(3, 0, 101), plan.rows(3, 2, 101));
    }

    #[test]
    fn replicate_rows_do_not_depend_on_which_replicates_ran_before() {
        let plan = ResamplePlan::new(PlanKind::Subsample, 20, Some(0.3));
        let later = plan.rows(9, 17, 500);
        let _ = plan.rows(9, 3, 500);
        assert_eq!(plan.rows(9, 17, 500), later);
        assert_eq!(later.rows.len(), 150);
        let mut dedup = later.rows.clone();
        dedup.dedup();
        assert_eq!(dedup.len(), 150, "without replacement");
    }

    #[test]
    fn bootstrap_draws_n_rows_with_replacement() {
        let plan = ResamplePlan::new(PlanKind::Bootstrap, 4, None);
        let rows = plan.rows(1, 0, 1000);
        assert!(rows.with_replacement);
        assert_eq!(rows.rows.len(), 1000);
        let mut distinct = rows.rows.clone();
        distinct.dedup();
        // Expected share of distinct rows is 1 − (1 − 1/n)^n ≈ 1 − 1/e ≈ 0.632 (classical result).
        let share = distinct.len() as f64 / 1000.0;
        assert!((share - 0.632).abs() < 0.05, "share {share}");
    }

    #[test]
    fn shuffle_is_uniform_over_first_positions() {
        // Each item lands first with probability 1/n under Fisher–Yates (Durstenfeld 1964).
        let mut counts = [0u32; 5];
        for s in 0..5000u64 {
            let key = Key::new("shuffle-test", s).finish();
            counts[shuffled(5, 5, &key)[0]] += 1;
        }
        assert!(
            counts.iter().all(|&c| (c as f64 - 1000.0).abs() < 130.0),
            "{counts:?}"
        );
    }
}
