//! Boundaries computed once and shared: the forward selection of one response over one candidate
//! set is the same whichever target's search asks for it, because every draw inside it is keyed by
//! (seed, replicate, response, column set, purpose) and never by the target (DESIGN.md,
//! "Determinism"). Several targets analysed on one table therefore share every selection: a
//! column's own boundary as a target and its boundary as a member of another target's boundary.
//!
//! A cache belongs to one [`SearchData`] (one table, one replicate, one seed and scaling) and one
//! selection rule; it checks the replicate, seed and rule of every request. Compute-once: the
//! first request of a key computes it, concurrent requests of the same key wait for that result
//! rather than computing it again (`OnceLock`). A computation must not request its own key (it
//! never does: a selection asks for no other selection). The orchestration of several targets
//! (`analysis`) requests distinct keys in each parallel phase, so no rayon worker waits on another.

use super::forward::{forward_select_both, Selection};
use super::parents::{local_parents_with, ParentSearch};
use super::rule::SelectionRule;
use super::SearchData;
use std::collections::BTreeMap;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::{Arc, Mutex, OnceLock};

/// What identifies one selection within one search table.
#[derive(Clone, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub struct BoundaryKey {
    /// The response's column name.
    pub response: String,
    /// The candidate names without the response, sorted (a set: the order of the candidates
    /// given does not change a selection, whose steps are decided by value, ties by column order
    /// of the table).
    pub candidates: Vec<String>,
    /// Whether the selection's tests make every draw (the target's own selection).
    pub exhaustive: bool,
}

impl BoundaryKey {
    /// The key of the selection of `response` over `candidates` (column positions of `data`).
    pub fn new(data: &SearchData, response: usize, candidates: &[usize], exhaustive: bool) -> Self {
        let mut names: Vec<String> = candidates
            .iter()
            .filter(|&&j| j != response)
            .map(|&j| data.name(j).to_string())
            .collect();
        names.sort();
        names.dedup();
        BoundaryKey {
            response: data.name(response).to_string(),
            candidates: names,
            exhaustive,
        }
    }
}

type Slot = Arc<OnceLock<Arc<Selection>>>;

/// Forward selections of one search table, each computed once.
pub struct Boundaries {
    seed: u64,
    replicate: u64,
    rule: SelectionRule,
    slots: Mutex<BTreeMap<BoundaryKey, Slot>>,
    computed: AtomicUsize,
}

impl Boundaries {
    /// An empty cache for the selections of `data` under `rule`.
    pub fn new(data: &SearchData, rule: &SelectionRule) -> Self {
        Boundaries {
            seed: data.seed,
            replicate: data.replicate,
            rule: *rule,
            slots: Mutex::new(BTreeMap::new()),
            computed: AtomicUsize::new(0),
        }
    }

    /// The forward selection of `response` over `candidates` (as `forward_select` returns it),
    /// computed on the first request only. An exhaustive selection also stores the
    /// non-exhaustive selection of the same response and candidates, which it gives for free
    /// (`forward_select_both`).
    pub fn selection(
        &self,
        data: &SearchData,
        response: usize,
        candidates: &[usize],
        rule: &SelectionRule,
        exhaustive: bool,
    ) -> Arc<Selection> {
        assert!(
            data.seed == self.seed && data.replicate == self.replicate && *rule == self.rule,
            "a boundary cache serves one table, replicate and rule"
        );
        let key = BoundaryKey::new(data, response, candidates, exhaustive);
        let slot = self.slot(&key);
        let selection = slot.get_or_init(|| {
            self.computed.fetch_add(1, Ordering::Relaxed);
            let (selection, early) =
                forward_select_both(data, response, candidates, rule, exhaustive);
            if exhaustive {
                let other = self.slot(&BoundaryKey {
                    exhaustive: false,
                    ..key.clone()
                });
                // Already there (computed by a member's request) it is equal; either way one value.
                let _ = other.set(Arc::new(early));
            }
            Arc::new(selection)
        });
        Arc::clone(selection)
    }

    /// Whether the selection of this key is already stored.
    pub fn has(
        &self,
        data: &SearchData,
        response: usize,
        candidates: &[usize],
        exhaustive: bool,
    ) -> bool {
        let key = BoundaryKey::new(data, response, candidates, exhaustive);
        let slots = self.slots.lock().expect("the cache lock is never poisoned");
        slots.get(&key).is_some_and(|slot| slot.get().is_some())
    }

    /// How many selections this cache has computed (for tests and progress).
    pub fn computed(&self) -> usize {
        self.computed.load(Ordering::Relaxed)
    }

    fn slot(&self, key: &BoundaryKey) -> Slot {
        let mut slots = self.slots.lock().expect("the cache lock is never poisoned");
        Arc::clone(slots.entry(key.clone()).or_default())
    }
}

/// One target of a shared search: its column and its candidates (positions in the search table).
pub struct TargetRequest {
    /// The target column.
    pub target: usize,
    /// Its candidates.
    pub candidates: Vec<usize>,
}

/// The local parent search of every target in `requests` on one table, each selection computed
/// once: first every target's own boundary (distinct keys, in parallel), then every member boundary
/// that they need and that is not stored yet (distinct keys, in parallel), then each target's
/// parent step, which finds every selection stored. Results in the order of `requests`, each equal
/// to `local_parents` of that target alone.
pub fn local_parents_shared(
    data: &SearchData,
    requests: &[TargetRequest],
    alpha: f64,
    rule: &SelectionRule,
    boundaries: &Boundaries,
    exhaustive_own: bool,
) -> Vec<ParentSearch> {
    use rayon::prelude::*;
    let own: Vec<Arc<Selection>> = requests
        .par_iter()
        .map(|r| boundaries.selection(data, r.target, &r.candidates, rule, exhaustive_own))
        .collect();
    let everything: Vec<usize> = (0..data.names().len()).collect();
    let mut members: Vec<usize> = own
        .iter()
        .flat_map(|s| s.selected.iter())
        .map(|name| {
            data.names()
                .iter()
                .position(|n| n == name)
                .expect("a column")
        })
        .filter(|&m| !boundaries.has(data, m, &everything, false))
        .collect();
    members.sort_unstable();
    members.dedup();
    members.par_iter().for_each(|&m| {
        boundaries.selection(data, m, &everything, rule, false);
    });
    requests
        .par_iter()
        .map(|r| {
            local_parents_with(
                data,
                r.target,
                &r.candidates,
                alpha,
                rule,
                boundaries,
                exhaustive_own,
            )
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::Table;
    use crate::measure::Scaling;
    use crate::rng::{standard_normal, Key};
    use crate::search::forward::forward_select;

    fn chain_table() -> Table {
        // x0 → x1 → x2, x3 noise: every selection has something to find.
        let key = Key::new("boundary-cache", 3).finish();
        let n = 300;
        let noise = |c: u64| -> Vec<f64> {
            let mut rng = key.stream(c);
            (0..n).map(|_| standard_normal(&mut rng)).collect()
        };
        let x0 = noise(0);
        let e1 = noise(1);
        let e2 = noise(2);
        let x3 = noise(3);
        let x1: Vec<f64> = x0.iter().zip(&e1).map(|(a, e)| a.sin() + 0.3 * e).collect();
        let x2: Vec<f64> = x1.iter().zip(&e2).map(|(a, e)| a * a + 0.3 * e).collect();
        let names = ["x0", "x1", "x2", "x3"].map(String::from).to_vec();
        Table::from_columns(names, vec![x0, x1, x2, x3])
    }

    #[test]
    fn one_key_is_computed_once_under_concurrent_requests_and_reused() {
        let table = chain_table();
        let data = SearchData::new(&table, Scaling::Rank, 11, 0);
        let rule = SelectionRule::calibrated();
        let cache = Boundaries::new(&data, &rule);
        let all = [0, 1, 2, 3];
        let results: Vec<Arc<Selection>> = std::thread::scope(|scope| {
            let handles: Vec<_> = (0..4)
                .map(|_| scope.spawn(|| cache.selection(&data, 1, &all, &rule, false)))
                .collect();
            handles.into_iter().map(|h| h.join().unwrap()).collect()
        });
        assert_eq!(
            cache.computed(),
            1,
            "four concurrent requests, one computation"
        );
        assert!(results.iter().all(|r| Arc::ptr_eq(r, &results[0])));
        // A second target asking for the same member boundary (candidates in another order and
        // with the response among them) reuses it.
        let again = cache.selection(&data, 1, &[3, 2, 1, 0], &rule, false);
        assert_eq!(cache.computed(), 1);
        assert!(Arc::ptr_eq(&again, &results[0]));
        assert_eq!(*again, forward_select(&data, 1, &all, &rule, false));
    }

    #[test]
    fn shared_searches_equal_searches_alone_and_compute_each_selection_once() {
        let table = chain_table();
        let data = SearchData::new(&table, Scaling::Rank, 9, 0);
        let rule = SelectionRule::calibrated();
        let requests: Vec<TargetRequest> = (0..4)
            .map(|t| TargetRequest {
                target: t,
                candidates: (0..4).filter(|&c| c != t).collect(),
            })
            .collect();
        let cache = Boundaries::new(&data, &rule);
        let shared = local_parents_shared(&data, &requests, 0.05, &rule, &cache, true);
        let alone: Vec<ParentSearch> = requests
            .iter()
            .map(|r| crate::search::local_parents(&data, r.target, &r.candidates, 0.05, &rule))
            .collect();
        assert_eq!(shared, alone);
        // Four own selections (each giving its column's member selection too), nothing more.
        assert_eq!(cache.computed(), 4);
    }

    #[test]
    fn an_exhaustive_selection_also_gives_the_other_as_computed_alone() {
        let table = chain_table();
        let data = SearchData::new(&table, Scaling::Rank, 5, 2);
        for rule in [SelectionRule::calibrated(), SelectionRule::natural()] {
            for response in 0..4 {
                let cache = Boundaries::new(&data, &rule);
                let all = [0, 1, 2, 3];
                let exhaustive = cache.selection(&data, response, &all, &rule, true);
                assert!(cache.has(&data, response, &all, false));
                let derived = cache.selection(&data, response, &all, &rule, false);
                assert_eq!(cache.computed(), 1, "the second came with the first");
                assert_eq!(
                    *exhaustive,
                    forward_select(&data, response, &all, &rule, true)
                );
                assert_eq!(
                    *derived,
                    forward_select(&data, response, &all, &rule, false)
                );
            }
        }
    }
}
