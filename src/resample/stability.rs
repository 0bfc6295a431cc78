//! Stability over replicates: each replicate runs the full local parent search; the records are
//! aggregated into frequencies, outcome frequencies, the spread of the full-data trace and the
//! Meinshausen–Bühlmann error bound.

use super::plan::ResamplePlan;
use crate::data::Table;
use crate::measure::{Ratio, TargetRanks};
use crate::search::{
    local_parents_shared, Boundaries, Outcome, ParentSearch, SearchData, Step, TargetRequest,
};
use crate::study::Study;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// What one replicate found: enough to aggregate, compare and locate a mismatch.
#[derive(Clone, Debug, PartialEq, Serialize, schemars::JsonSchema, Deserialize)]
pub struct ReplicateRecord {
    /// 0-based replicate index within the plan.
    pub replicate: u32,
    /// Rows the replicate used.
    pub rows: usize,
    /// MB(target) in selection order.
    pub markov_boundary: Vec<String>,
    /// The replicate's outcome.
    pub outcome: Outcome,
    /// The replicate's parent sets (each sorted by name).
    pub parent_sets: Vec<Vec<String>>,
    /// T_n on this replicate of the variable chosen at each step of the full-data trace, given that
    /// step's conditioning set (`None` where undefined).
    pub trace_values: Vec<Option<f64>>,
    /// The replicate's result read with the stated knowledge (absent without knowledge).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub with_knowledge: Option<KnowledgeRecord>,
    /// The replicate's result read through its neighbours' searches (setting
    /// `neighbourhood_orientation`; absent when off).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub with_neighbourhood: Option<KnowledgeRecord>,
    /// SHA-256 of the canonical JSON of the fields above.
    pub digest: String,
}

/// A replicate's result read with the stated knowledge.
#[derive(Clone, Debug, PartialEq, Serialize, schemars::JsonSchema, Deserialize)]
pub struct KnowledgeRecord {
    /// The outcome with the knowledge.
    pub outcome: Outcome,
    /// Its parent sets (each sorted by name).
    pub parent_sets: Vec<Vec<String>>,
}

/// Stability of one reading of the search (its own, with the stated knowledge, or through the
/// neighbourhood) over the replicates.
#[derive(Clone, Debug, PartialEq, Serialize, schemars::JsonSchema, Deserialize)]
pub struct ResultStability {
    /// Frequency of each column in a parent set identified by this reading.
    pub parents: BTreeMap<String, f64>,
    /// Outcome frequencies, most frequent first.
    pub outcomes: Vec<OutcomeFrequency>,
    /// The full-data result of this reading against the replicates'.
    pub headline: Headline,
}

/// How often one outcome occurred, with its parent sets.
#[derive(Clone, Debug, PartialEq, Serialize, schemars::JsonSchema, Deserialize)]
pub struct OutcomeFrequency {
    /// The outcome.
    pub outcome: Outcome,
    /// Its parent sets (identified: one set; not identifiable: the singleton candidates).
    pub parent_sets: Vec<Vec<String>>,
    /// Share of replicates.
    pub frequency: f64,
    /// Number of replicates.
    pub count: u32,
}

/// Spread across replicates of the T_n of one full-data step's chosen variable.
#[derive(Clone, Debug, PartialEq, Serialize, schemars::JsonSchema, Deserialize)]
pub struct StepSpread {
    /// Full-data step number.
    pub step: usize,
    /// The variable chosen at that step on the full data.
    pub chosen: String,
    /// Minimum over replicates where T_n is defined.
    pub min: f64,
    /// Median.
    pub median: f64,
    /// Maximum.
    pub max: f64,
    /// Replicates where T_n was defined.
    pub defined_in: u32,
}

/// The Meinshausen–Bühlmann bound on falsely selected boundary members.
#[derive(Clone, Debug, PartialEq, Serialize, schemars::JsonSchema, Deserialize)]
pub struct ErrorBound {
    /// Average number of boundary members per replicate.
    pub q: f64,
    /// Number of candidate columns.
    pub p: usize,
    /// The threshold π_thr.
    pub threshold: f64,
    /// E\[V\] ≤ q² / ((2π_thr − 1)·p); `None` when p = 0.
    pub expected_false_members: Option<f64>,
    /// The conditions under which the bound holds.
    pub assumptions: Vec<String>,
}

/// Stability of everything the full-data search claimed.
#[derive(Clone, Debug, PartialEq, Serialize, schemars::JsonSchema, Deserialize)]
pub struct Stability {
    /// The resampling plan.
    pub plan: ResamplePlan,
    /// Number of replicates aggregated.
    pub replicates: u32,
    /// π_thr: a finding is `stable` when its frequency is at least this.
    pub threshold: f64,
    /// Frequency of each candidate in MB(target).
    pub markov_boundary: BTreeMap<String, f64>,
    /// Frequency of each candidate in an identified parent set.
    pub parents: BTreeMap<String, f64>,
    /// Mean 1-based selection step of each column among the replicates that selected it.
    pub mean_selection_step: BTreeMap<String, f64>,
    /// Outcome frequencies, most frequent first.
    pub outcomes: Vec<OutcomeFrequency>,
    /// Spread of each full-data step's chosen T_n.
    pub trace_spread: Vec<StepSpread>,
    /// The error bound.
    pub error_bound: ErrorBound,
    /// Columns whose boundary frequency is at least π_thr.
    pub stable_boundary: Vec<String>,
    /// Columns whose parent frequency is at least π_thr.
    pub stable_parents: Vec<String>,
    /// Frequency of the full-data outcome with the same parent sets.
    pub full_data_outcome_frequency: f64,
    /// Whether that frequency is at least π_thr.
    pub full_data_outcome_stable: bool,
    /// How the replicates bear on the headline: the most frequent other result, and whether most
    /// replicates reach something other than the full data.
    #[serde(default)]
    pub headline: Headline,
    /// The result read with the stated knowledge, across replicates (absent without knowledge).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub with_knowledge: Option<ResultStability>,
    /// The result read through the neighbours' searches, across replicates (absent when the
    /// setting is off).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub with_neighbourhood: Option<ResultStability>,
    /// Digest of every replicate record, by replicate index.
    pub replicate_digests: Vec<String>,
    /// Every replicate record, by replicate index, so that a re-run can name the first field of a
    /// replicate that differs.
    #[serde(default)]
    pub records: Vec<ReplicateRecord>,
}

/// The headline (the full-data outcome with its parent sets) against the replicates.
#[derive(Clone, Debug, Default, PartialEq, Serialize, schemars::JsonSchema, Deserialize)]
pub struct Headline {
    /// Share of replicates that reach the full-data outcome with the same parent sets.
    pub frequency: f64,
    /// That share is at least π_thr.
    pub stable: bool,
    /// More than half of the replicates reach another outcome or other parent sets.
    pub contradicted: bool,
    /// The most frequent replicate result other than the headline (ties: the first in the order
    /// of `outcomes`), if any replicate reached one.
    pub most_frequent_other: Option<OutcomeFrequency>,
}

/// Runs replicate `k` of `plan` on `table` and condenses it into a record.
pub fn run_replicate(table: &Table, study: &Study, k: u32, full_trace: &[Step]) -> ReplicateRecord {
    run_replicate_shared(table, &[(study, full_trace)], k)
        .pop()
        .expect("one record per study")
}

/// Runs replicate `k` for several studies of one table (the same rows, settings and seed; each
/// its own target and full-data trace), sharing every boundary between them: one record per
/// study, each equal to [`run_replicate`] of that study alone. The replicate's rows depend on the
/// seed, the replicate and the table's row count only, so they are drawn once.
pub fn run_replicate_shared(
    table: &Table,
    studies: &[(&Study, &[Step])],
    k: u32,
) -> Vec<ReplicateRecord> {
    let Some((first, _)) = studies.first() else {
        return Vec::new();
    };
    let plan = &first.resampling;
    let drawn = plan.rows(first.seed, k, table.n_rows());
    let sub = table.select_rows(&drawn.rows);
    let mut data = SearchData::new(&sub, first.scaling, first.seed, u64::from(k) + 1);
    if drawn.with_replacement {
        data = data.with_origins(drawn.rows.iter().map(|&r| r as u32).collect());
    }
    let requests: Vec<TargetRequest> = studies
        .iter()
        .map(|(study, _)| study.request(&data))
        .collect();
    let boundaries = Boundaries::new(&data, &first.selection);
    // A replicate records sets and outcomes only, never the detectable-effect diagnostic, so its
    // tests stop as soon as their decision is known (the same decisions and sets).
    let searches = local_parents_shared(
        &data,
        &requests,
        first.alpha,
        &first.selection,
        &boundaries,
        false,
    );
    studies
        .iter()
        .zip(&requests)
        .zip(&searches)
        .map(|(((study, full_trace), request), search)| {
            let trace_values = trace_values_on(&data, request.target, full_trace);
            let with_knowledge = study.used_knowledge().map(|knowledge| {
                let read =
                    crate::search::knowledge::read(&data, search, &knowledge, &study.selection);
                KnowledgeRecord {
                    outcome: read.outcome,
                    parent_sets: sorted_sets(&read.parent_sets),
                }
            });
            let with_neighbourhood = study.neighbourhood_orientation.then(|| {
                let read = crate::search::orient::through_neighbourhood(
                    &data,
                    search,
                    study.alpha,
                    &study.selection,
                );
                KnowledgeRecord {
                    outcome: read.outcome,
                    parent_sets: sorted_sets(&read.parent_sets),
                }
            });
            record(
                k,
                drawn.rows.len(),
                search,
                trace_values,
                [with_knowledge, with_neighbourhood],
            )
        })
        .collect()
}

fn trace_values_on(data: &SearchData, target: usize, full_trace: &[Step]) -> Vec<Option<f64>> {
    let index = |name: &str| {
        data.names()
            .iter()
            .position(|n| n == name)
            .expect("same columns")
    };
    let ranks = TargetRanks::new(data.raw(target));
    full_trace
        .iter()
        .filter_map(|step| step.chosen.as_ref().map(|c| (step, c)))
        .map(|(step, chosen)| {
            let x: Vec<usize> = step.conditioning.iter().map(|c| index(c)).collect();
            let mut xz = x.clone();
            xz.push(index(chosen));
            // X's structure, built once, gives its neighbours and, extended by the chosen column,
            // those of (X, chosen) without sorting the rows again.
            let of_x = (!x.is_empty()).then(|| data.neighbourhood(&x));
            let conditioning = of_x
                .as_ref()
                .map(|hood| hood.choose(&data.neighbour_key(target, &x)));
            let joint = match &of_x {
                Some(hood) => hood.extended(data.space(&[index(chosen)])[0]),
                None => data.neighbourhood(&xz),
            }
            .choose(&data.neighbour_key(target, &xz));
            Ratio {
                numerator: ranks.numerator(conditioning.as_deref(), &joint),
                denominator: ranks.denominator(conditioning.as_deref()),
            }
            .value()
        })
        .collect()
}

/// Parent sets with each set sorted by name.
fn sorted_sets(sets: &[Vec<String>]) -> Vec<Vec<String>> {
    sets.iter()
        .map(|s| {
            let mut s = s.clone();
            s.sort();
            s
        })
        .collect()
}

fn record(
    k: u32,
    rows: usize,
    search: &ParentSearch,
    trace_values: Vec<Option<f64>>,
    [with_knowledge, with_neighbourhood]: [Option<KnowledgeRecord>; 2],
) -> ReplicateRecord {
    let mut rec = ReplicateRecord {
        replicate: k,
        rows,
        markov_boundary: search.markov_boundary.selected.clone(),
        outcome: search.outcome,
        parent_sets: sorted_sets(&search.parent_sets),
        trace_values,
        with_knowledge,
        with_neighbourhood,
        digest: String::new(),
    };
    rec.digest = crate::digest::digest(&rec);
    rec
}

/// An outcome with its parent sets, as the full data gave it.
pub type FullResult<'a> = (Outcome, &'a [Vec<String>]);

/// The full-data results that replicates are compared with: the search's own, and its readings
/// with the stated knowledge and through the neighbours' searches (each absent when not made).
pub struct FullResults<'a> {
    /// The search's own outcome and parent sets.
    pub search: FullResult<'a>,
    /// With the stated knowledge.
    pub with_knowledge: Option<FullResult<'a>>,
    /// Through the neighbours' searches.
    pub with_neighbourhood: Option<FullResult<'a>>,
}

/// Aggregates replicate records (any order; sorted here by index) into stability statistics for
/// the full-data trace, outcome and parent sets.
pub fn aggregate(
    plan: &ResamplePlan,
    threshold: f64,
    candidates: &[String],
    full_trace: &[Step],
    full: FullResults,
    records: &[ReplicateRecord],
) -> Stability {
    let mut records: Vec<&ReplicateRecord> = records.iter().collect();
    records.sort_by_key(|r| r.replicate);
    let n = records.len() as u32;
    let share = |count: u32| {
        if n == 0 {
            0.0
        } else {
            f64::from(count) / f64::from(n)
        }
    };
    let mut boundary_count: BTreeMap<String, u32> =
        candidates.iter().map(|c| (c.clone(), 0)).collect();
    let mut step_sum: BTreeMap<String, (usize, u32)> = BTreeMap::new();
    for r in &records {
        for (step, c) in r.markov_boundary.iter().enumerate() {
            *boundary_count.entry(c.clone()).or_default() += 1;
            let e = step_sum.entry(c.clone()).or_default();
            e.0 += step + 1;
            e.1 += 1;
        }
    }
    let markov_boundary: BTreeMap<String, f64> = boundary_count
        .iter()
        .map(|(c, &k)| (c.clone(), share(k)))
        .collect();
    // The search's own results, and its readings with knowledge and through the neighbourhood,
    // are counted alike.
    let stability_of = |full: FullResult, read: fn(&ReplicateRecord) -> Option<FullResult>| {
        let results: Vec<FullResult> = records.iter().filter_map(|r| read(r)).collect();
        result_stability(&results, n, threshold, full)
    };
    let own = stability_of(full.search, |r| Some((r.outcome, &r.parent_sets)));
    // Every candidate is listed, at 0 when no replicate identified it as a parent.
    let mut parents: BTreeMap<String, f64> = candidates.iter().map(|c| (c.clone(), 0.0)).collect();
    parents.extend(own.parents);
    let (headline, outcomes) = (own.headline, own.outcomes);
    let (full_frequency, full_stable) = (headline.frequency, headline.stable);
    let q = if n == 0 {
        0.0
    } else {
        records
            .iter()
            .map(|r| r.markov_boundary.len())
            .sum::<usize>() as f64
            / f64::from(n)
    };
    let with_knowledge = full.with_knowledge.map(|f| {
        stability_of(f, |r| {
            r.with_knowledge
                .as_ref()
                .map(|k| (k.outcome, k.parent_sets.as_slice()))
        })
    });
    let with_neighbourhood = full.with_neighbourhood.map(|f| {
        stability_of(f, |r| {
            r.with_neighbourhood
                .as_ref()
                .map(|k| (k.outcome, k.parent_sets.as_slice()))
        })
    });
    Stability {
        headline,
        with_knowledge,
        with_neighbourhood,
        plan: plan.clone(),
        replicates: n,
        threshold,
        stable_boundary: markov_boundary
            .iter()
            .filter(|(_, &f)| f >= threshold)
            .map(|(c, _)| c.clone())
            .collect(),
        stable_parents: parents
            .iter()
            .filter(|(_, &f)| f >= threshold)
            .map(|(c, _)| c.clone())
            .collect(),
        markov_boundary,
        parents,
        mean_selection_step: step_sum
            .into_iter()
            .map(|(c, (sum, count))| (c, sum as f64 / f64::from(count)))
            .collect(),
        outcomes,
        trace_spread: spread(full_trace, &records),
        error_bound: error_bound(q, candidates.len(), threshold),
        full_data_outcome_frequency: full_frequency,
        full_data_outcome_stable: full_stable,
        replicate_digests: records.iter().map(|r| r.digest.clone()).collect(),
        records: records.iter().map(|&r| r.clone()).collect(),
    }
}

/// Outcome counts are keyed by (outcome name, parent sets) so that the order is fixed.
type OutcomeKey = (String, Vec<Vec<String>>);

/// Frequencies of the replicates' results (outcomes with parent sets, each set sorted), against
/// the full data's: of each column in an identified set, of each result, and of the full data's.
fn result_stability(
    results: &[FullResult],
    n: u32,
    threshold: f64,
    (full_outcome, full_sets): FullResult,
) -> ResultStability {
    let share = |count: u32| match n {
        0 => 0.0,
        _ => f64::from(count) / f64::from(n),
    };
    let full_sets = sorted_sets(full_sets);
    let mut parents: BTreeMap<String, u32> = BTreeMap::new();
    let mut counts: BTreeMap<OutcomeKey, (Outcome, u32)> = BTreeMap::new();
    for &(outcome, sets) in results {
        if outcome == Outcome::Identified {
            for c in sets.iter().flatten() {
                *parents.entry(c.clone()).or_default() += 1;
            }
        }
        counts
            .entry((outcome.name().to_string(), sets.to_vec()))
            .or_insert((outcome, 0))
            .1 += 1;
    }
    let mut outcomes: Vec<OutcomeFrequency> = counts
        .into_iter()
        .map(|((_, parent_sets), (outcome, count))| OutcomeFrequency {
            outcome,
            parent_sets,
            frequency: share(count),
            count,
        })
        .collect();
    outcomes.sort_by_key(|o| std::cmp::Reverse(o.count));
    let is_full = |o: Outcome, sets: &[Vec<String>]| o == full_outcome && sets == full_sets;
    let full_count = results.iter().filter(|(o, s)| is_full(*o, s)).count() as u32;
    ResultStability {
        parents: parents.into_iter().map(|(c, k)| (c, share(k))).collect(),
        headline: Headline {
            frequency: share(full_count),
            stable: share(full_count) >= threshold,
            contradicted: n > 0 && 2 * full_count < n,
            most_frequent_other: outcomes
                .iter()
                .find(|o| !is_full(o.outcome, &o.parent_sets))
                .cloned(),
        },
        outcomes,
    }
}

fn spread(full_trace: &[Step], records: &[&ReplicateRecord]) -> Vec<StepSpread> {
    full_trace
        .iter()
        .filter_map(|s| s.chosen.as_ref().map(|c| (s.step, c.clone())))
        .enumerate()
        .map(|(i, (step, chosen))| {
            let mut values: Vec<f64> = records
                .iter()
                .filter_map(|r| r.trace_values.get(i).copied().flatten())
                .collect();
            values.sort_by(f64::total_cmp);
            let m = values.len();
            let median = match m {
                0 => 0.0,
                _ if m % 2 == 1 => values[m / 2],
                _ => (values[m / 2 - 1] + values[m / 2]) / 2.0,
            };
            StepSpread {
                step,
                chosen,
                min: values.first().copied().unwrap_or(0.0),
                median,
                max: values.last().copied().unwrap_or(0.0),
                defined_in: m as u32,
            }
        })
        .collect()
}

/// Meinshausen and Bühlmann (JRSS-B 2010), Theorem 1: E\[V\] ≤ q² / ((2π_thr − 1)·p) for
/// π_thr ∈ (1/2, 1], with q the expected number of selected variables per replicate.
pub fn error_bound(q: f64, p: usize, threshold: f64) -> ErrorBound {
    ErrorBound {
        q,
        p,
        threshold,
        expected_false_members: (p > 0).then(|| q * q / ((2.0 * threshold - 1.0) * p as f64)),
        assumptions: vec![
            "the selection of each column that is not a boundary member is exchangeable with that of \
             every other such column"
                .into(),
            "the selection procedure is no worse than random guessing".into(),
            "q is estimated by the average boundary size over the replicates; the theorem takes it as \
             known"
                .into(),
            "the bound concerns boundary membership, not the parent claim".into(),
        ],
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn error_bound_matches_the_worked_values() {
        // check-values.md (Meinshausen and Bühlmann 2010, Theorem 1): q = 5, p = 100, π = 0.6 → 1.25;
        // q = 4, p = 20, π = 0.9 → 1.0.
        let a = error_bound(5.0, 100, 0.6).expected_false_members.unwrap();
        let b = error_bound(4.0, 20, 0.9).expected_false_members.unwrap();
        assert!((a - 1.25).abs() < 1e-12, "{a}");
        assert!((b - 1.0).abs() < 1e-12, "{b}");
    }
}
