//! Forward stepwise selection (Azadkia and Chatterjee 2021, FOCI): from S = ∅, add the candidate
//! maximising T_n(Y, X_j | S). The natural stopping rule stops as soon as the best value is ≤ 0;
//! the calibrated rule also stops when the permutation test of the step does not reject at the
//! selection level (`measure::permutation`), then runs the shrink phase (`search::shrink`).
//! Within a step every candidate's T_n shares one denominator, so the choice is decided on exact
//! integer numerators.

use super::rule::SelectionRule;
use super::shrink::{shrink, ShrinkTest};
use super::SearchData;
use crate::measure::neighbors::{Column, ConditioningSpace, Neighbourhood};
use crate::measure::permutation::{max_statistic_tests, Observed, PermutationTest};
use crate::measure::TargetRanks;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};

/// One candidate's value at one step.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct Score {
    /// Candidate column.
    pub column: String,
    /// T_n(Y, candidate | conditioning set).
    pub t_n: f64,
    /// Exact numerator of T_n (the step's denominator is shared).
    pub numerator: i128,
}

/// One step of the selection, with every remaining candidate's value.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct Step {
    /// 1-based step number.
    pub step: usize,
    /// The conditioning set S in selection order.
    pub conditioning: Vec<String>,
    /// Exact denominator of T_n at this step.
    pub denominator: i128,
    /// Every remaining candidate, best first (ties in candidate order).
    pub candidates: Vec<Score>,
    /// The candidate added, or `None` at the step that stopped.
    pub chosen: Option<String>,
    /// Best value minus runner-up value (absent with a single candidate).
    pub margin: Option<f64>,
    /// The permutation test of the step's largest T_n (calibrated rule; absent under the natural
    /// rule, and when the best value is not positive and no critical value was asked for).
    #[serde(default)]
    pub test: Option<PermutationTest>,
}

/// Why a selection ended.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum StopReason {
    /// The best T_n at the last step was ≤ 0 (the natural stopping rule; the calibrated rule
    /// stops there too).
    NoPositiveGain {
        /// The best value at the last step.
        best_t_n: f64,
    },
    /// Calibrated rule: the best T_n at the last step was positive, but its permutation test did
    /// not reject conditional independence at the selection level.
    NotSignificant {
        /// The best value at the last step.
        best_t_n: f64,
        /// Its p-value.
        p_value: f64,
    },
    /// The response is empirically a function of the selected set: the denominator of T_n is zero,
    /// so no candidate can add information.
    ResponseIsFunctionOfSelected,
    /// Every candidate was selected.
    CandidatesExhausted,
    /// There were no candidates at all.
    NoCandidates,
}

/// The outcome of one forward selection.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct Selection {
    /// The response column.
    pub response: String,
    /// Selected columns in selection order, without those the shrink phase removed: the estimated
    /// Markov boundary.
    pub selected: Vec<String>,
    /// Every step, including the one that stopped.
    pub steps: Vec<Step>,
    /// Why the forward phase ended.
    pub stop: StopReason,
    /// The shrink phase (calibrated rule): every test of a member given the other members.
    #[serde(default)]
    pub shrink: Vec<ShrinkTest>,
    /// Members the shrink phase removed, in the order removed.
    #[serde(default)]
    pub removed: Vec<String>,
}

/// One step of a selection, evaluated: every candidate's numerator (best first) over the shared
/// denominator, and the permutation test of the best.
pub struct StepEvaluation {
    /// The shared denominator (positive).
    pub denominator: i128,
    /// Candidates with their numerators, best first; equal numerators in candidate order.
    pub scored: Vec<(usize, i128)>,
    /// The test of the largest T_n: under the calibrated rule when it is positive, or always with
    /// `exhaustive`.
    pub test: Option<PermutationTest>,
    /// With `exhaustive`: the test as the same step without `exhaustive` reports it (absent where
    /// that step makes no test). Without `exhaustive`: `test` again.
    pub early_test: Option<PermutationTest>,
}

/// Evaluates the candidates `remaining` given `selected` for `response`; `None` when the
/// response is a function of `selected` (the denominator of T_n is zero). `purpose` keys the
/// null draws ("selection" for a step of a forward selection).
#[allow(clippy::too_many_arguments)] // one step's coordinates; a struct would only rename them
pub fn evaluate_step(
    data: &SearchData,
    purpose: &str,
    response: usize,
    ranks: &TargetRanks,
    selected: &[usize],
    remaining: &[usize],
    rule: &SelectionRule,
    exhaustive: bool,
) -> Option<StepEvaluation> {
    // The selected columns, prepared once, give the conditioning set's neighbours and, extended by
    // one column, every candidate's: the same as `data.neighbours` on each space (the keys are
    // those `data.neighbours` uses). Where preparing does not pay, the selected columns' plain
    // structure is built once and extended by each candidate instead (no second sort of the
    // rows); only the first step, with nothing selected, searches each candidate's space afresh.
    let of_selected = Selected::of(data, selected);
    let conditioning = of_selected.as_ref().map(|s| {
        s.neighbourhood()
            .choose(&data.neighbour_key(response, selected))
    });
    let denominator = ranks.denominator(conditioning.as_deref());
    if denominator == 0 {
        return None;
    }
    let mut scored: Vec<(usize, i128, Vec<u32>)> = remaining
        .par_iter()
        .map(|&j| {
            let mut space = selected.to_vec();
            space.push(j);
            let extra = data.space(&[j])[0];
            let joint = match &of_selected {
                Some(s) => s.extended(extra),
                None => data.neighbourhood(&space),
            }
            .choose(&data.neighbour_key(response, &space));
            let numerator = ranks.numerator(conditioning.as_deref(), &joint);
            (j, numerator, joint)
        })
        .collect();
    // Best first; equal numerators keep candidate order (stable sort).
    scored.sort_by_key(|&(_, numerator, _)| std::cmp::Reverse(numerator));
    let best_num = scored[0].1;
    // The test needs S's points only (for its blocks): the lists and the tree of a prepared S go
    // before its draws are made.
    let points = of_selected.map(Selected::into_neighbourhood);
    let tests = (rule.is_calibrated() && (best_num > 0 || exhaustive)).then(|| {
        let observed = Observed {
            ranks,
            conditioning: conditioning.as_deref(),
            joints: scored
                .iter()
                .map(|(_, _, joint)| joint.as_slice())
                .collect(),
            numerator: best_num,
            denominator,
        };
        let blocks = points.map(|hood| data.permutation_blocks_of(hood));
        max_statistic_tests(
            &observed,
            blocks.as_ref(),
            &data.permutation_key(purpose, response, selected, None),
            &rule.test_plan(exhaustive),
        )
    });
    let (test, early_test) = match tests {
        None => (None, None),
        Some((test, None)) => (Some(test.clone()), Some(test)),
        Some((test, Some(early))) => (Some(test), (best_num > 0).then_some(early)),
    };
    Some(StepEvaluation {
        denominator,
        scored: scored.into_iter().map(|(j, num, _)| (j, num)).collect(),
        test,
        early_test,
    })
}

/// The structure of the selected columns S that a step builds once and extends by each candidate.
enum Selected {
    /// Prepared: lists of nearby points and a tree (`ConditioningSpace`).
    Prepared(ConditioningSpace),
    /// Plain, where preparing does not pay (one or two columns, duplicate rows, many columns).
    Plain(Neighbourhood),
}

impl Selected {
    /// The structure of `selected`; `None` when nothing is selected.
    fn of(data: &SearchData, selected: &[usize]) -> Option<Selected> {
        if selected.is_empty() {
            return None;
        }
        Some(match ConditioningSpace::prepare(&data.space(selected)) {
            Some(prepared) => Selected::Prepared(prepared),
            None => Selected::Plain(data.neighbourhood(selected)),
        })
    }

    /// The neighbourhood of S itself.
    fn neighbourhood(&self) -> &Neighbourhood {
        match self {
            Selected::Prepared(prepared) => prepared.neighbourhood(),
            Selected::Plain(hood) => hood,
        }
    }

    /// The neighbourhood of S with `extra` as its last column.
    fn extended(&self, extra: Column) -> Neighbourhood {
        match self {
            Selected::Prepared(prepared) => prepared.extended(extra),
            Selected::Plain(hood) => hood.extended(extra),
        }
    }

    /// S's points and rows alone (a prepared S's lists and tree are dropped).
    fn into_neighbourhood(self) -> Neighbourhood {
        match self {
            Selected::Prepared(prepared) => prepared.into_neighbourhood(),
            Selected::Plain(hood) => hood,
        }
    }
}

/// Runs forward selection for `response` over `candidates` (column positions) under `rule`. With
/// `exhaustive`, every permutation test makes all its draws, so that the step that stops reports
/// the value a candidate would have had to exceed (used for the target's own selection).
pub fn forward_select(
    data: &SearchData,
    response: usize,
    candidates: &[usize],
    rule: &SelectionRule,
    exhaustive: bool,
) -> Selection {
    forward_select_both(data, response, candidates, rule, exhaustive).0
}

/// As [`forward_select`], and with `exhaustive` also the selection that the same call without
/// `exhaustive` returns, from the same work: the flag changes only how many draws the recorded
/// tests make, never a decision (`measure::permutation::max_statistic_tests`), so the two
/// selections take the same steps and differ only in the recorded tests of the forward phase.
/// Without `exhaustive` the second is a copy of the first.
pub fn forward_select_both(
    data: &SearchData,
    response: usize,
    candidates: &[usize],
    rule: &SelectionRule,
    exhaustive: bool,
) -> (Selection, Selection) {
    let ranks = TargetRanks::new(data.raw(response));
    let mut selected: Vec<usize> = Vec::new();
    let mut remaining: Vec<usize> = candidates
        .iter()
        .copied()
        .filter(|&j| j != response)
        .collect();
    let mut steps = Vec::new();
    let mut early_steps = Vec::new();
    let name = |j: usize| data.name(j).to_string();
    let (stop, early_stop) = loop {
        if remaining.is_empty() {
            let stop = if selected.is_empty() {
                StopReason::NoCandidates
            } else {
                StopReason::CandidatesExhausted
            };
            break (stop.clone(), stop);
        }
        let Some(evaluation) = evaluate_step(
            data,
            "selection",
            response,
            &ranks,
            &selected,
            &remaining,
            rule,
            exhaustive,
        ) else {
            let stop = StopReason::ResponseIsFunctionOfSelected;
            break (stop.clone(), stop);
        };
        let StepEvaluation {
            denominator,
            scored,
            test,
            early_test,
        } = evaluation;
        let value = |num: i128| num as f64 / denominator as f64;
        let (best, best_num) = scored[0];
        let margin = scored
            .get(1)
            .map(|&(_, second)| value(best_num) - value(second));
        let positive = best_num > 0;
        let significant = test.as_ref().is_none_or(|t| t.p_value <= rule.alpha);
        let admitted = positive && significant;
        let step = Step {
            step: steps.len() + 1,
            conditioning: selected.iter().map(|&j| name(j)).collect(),
            denominator,
            candidates: scored
                .iter()
                .map(|&(j, num)| Score {
                    column: name(j),
                    t_n: value(num),
                    numerator: num,
                })
                .collect(),
            chosen: admitted.then(|| name(best)),
            margin,
            test: test.clone(),
        };
        early_steps.push(Step {
            test: early_test.clone(),
            ..step.clone()
        });
        steps.push(step);
        if !positive {
            let stop = StopReason::NoPositiveGain {
                best_t_n: value(best_num),
            };
            break (stop.clone(), stop);
        }
        if !significant {
            let stop = |test: Option<PermutationTest>| StopReason::NotSignificant {
                best_t_n: value(best_num),
                p_value: test.map_or(1.0, |t| t.p_value),
            };
            break (stop(test), stop(early_test));
        }
        selected.push(best);
        remaining.retain(|&j| j != best);
    };
    let (shrink, removed) = match rule.is_calibrated() {
        true => shrink(data, response, &ranks, &mut selected, rule),
        false => (Vec::new(), Vec::new()),
    };
    let selection = Selection {
        response: name(response),
        selected: selected.iter().map(|&j| name(j)).collect(),
        steps,
        stop,
        shrink,
        removed,
    };
    let early = Selection {
        steps: early_steps,
        stop: early_stop,
        ..selection.clone()
    };
    (selection, early)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::Table;
    use crate::measure::Scaling;
    use crate::rng::{standard_normal, Key};

    #[test]
    fn prepared_spaces_give_the_neighbours_of_search_data() {
        // The fast path of `forward_select` must choose exactly what `SearchData::neighbours`
        // chooses, key included.
        let key = Key::new("forward-prepared", 1).finish();
        let columns: Vec<Vec<f64>> = (0..6)
            .map(|c| {
                let mut rng = key.stream(c);
                (0..300).map(|_| standard_normal(&mut rng)).collect()
            })
            .collect();
        let names = (0..6).map(|c| format!("c{c}")).collect();
        let table = Table::from_columns(names, columns);
        let data = SearchData::new(&table, Scaling::Rank, 7, 0);
        let selected = [3, 1, 4];
        let prepared = ConditioningSpace::prepare(&data.space(&selected)).expect("worth preparing");
        let own = prepared
            .neighbourhood()
            .choose(&data.neighbour_key(0, &selected));
        assert_eq!(own, data.neighbours(0, &selected));
        for j in [2, 5] {
            let space = [3, 1, 4, j];
            let joint = prepared
                .extended(data.space(&[j])[0])
                .choose(&data.neighbour_key(0, &space));
            assert_eq!(joint, data.neighbours(0, &space));
        }
    }
}
