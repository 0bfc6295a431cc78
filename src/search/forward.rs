//! Forward stepwise selection with the natural stopping rule (Azadkia and Chatterjee 2021, FOCI):
//! from S = ∅, add the candidate maximising T_n(Y, X_j | S); stop as soon as the best value is ≤ 0.
//! Within a step every candidate's T_n shares one denominator, so the choice and the stop are
//! decided on exact integer numerators.

use super::SearchData;
use crate::measure::neighbors::ConditioningSpace;
use crate::measure::TargetRanks;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};

/// One candidate's value at one step.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
pub struct Score {
    /// Candidate column.
    pub column: String,
    /// T_n(Y, candidate | conditioning set).
    pub t_n: f64,
    /// Exact numerator of T_n (the step's denominator is shared).
    pub numerator: i128,
}

/// One step of the selection, with every remaining candidate's value.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
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
}

/// Why a selection ended.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum StopReason {
    /// The natural stopping rule: the best T_n at the last step was ≤ 0.
    NoPositiveGain {
        /// The best value at the last step.
        best_t_n: f64,
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
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
pub struct Selection {
    /// The response column.
    pub response: String,
    /// Selected columns in selection order: the estimated Markov boundary.
    pub selected: Vec<String>,
    /// Every step, including the one that stopped.
    pub steps: Vec<Step>,
    /// Why the selection ended.
    pub stop: StopReason,
}

/// Runs forward selection for `response` over `candidates` (column positions).
pub fn forward_select(data: &SearchData, response: usize, candidates: &[usize]) -> Selection {
    let ranks = TargetRanks::new(data.raw(response));
    let mut selected: Vec<usize> = Vec::new();
    let mut remaining: Vec<usize> = candidates
        .iter()
        .copied()
        .filter(|&j| j != response)
        .collect();
    let mut steps = Vec::new();
    let name = |j: usize| data.name(j).to_string();
    let stop = loop {
        if remaining.is_empty() {
            break if selected.is_empty() {
                StopReason::NoCandidates
            } else {
                StopReason::CandidatesExhausted
            };
        }
        // The selected columns, prepared once, give the conditioning set's neighbours and, extended
        // by one column, every candidate's: the same as `data.neighbours` on each space (the keys
        // are those `data.neighbours` uses). Spaces it does not pay to prepare are searched afresh.
        let prepared = match selected.is_empty() {
            true => None,
            false => ConditioningSpace::prepare(&data.space(&selected)),
        };
        let conditioning = (!selected.is_empty()).then(|| match &prepared {
            Some(prepared) => prepared
                .neighbourhood()
                .choose(&data.neighbour_key(response, &selected)),
            None => data.neighbours(response, &selected),
        });
        let denominator = ranks.denominator(conditioning.as_deref());
        if denominator == 0 {
            break StopReason::ResponseIsFunctionOfSelected;
        }
        let mut scored: Vec<(usize, i128)> = remaining
            .par_iter()
            .map(|&j| {
                let mut space = selected.clone();
                space.push(j);
                let joint = match &prepared {
                    Some(prepared) => prepared
                        .extended(data.space(&[j])[0])
                        .choose(&data.neighbour_key(response, &space)),
                    None => data.neighbours(response, &space),
                };
                (j, ranks.numerator(conditioning.as_deref(), &joint))
            })
            .collect();
        // Best first; equal numerators keep candidate order (stable sort).
        scored.sort_by_key(|&(_, numerator)| std::cmp::Reverse(numerator));
        let value = |num: i128| num as f64 / denominator as f64;
        let (best, best_num) = scored[0];
        let margin = scored
            .get(1)
            .map(|&(_, second)| value(best_num) - value(second));
        let gains = best_num > 0;
        steps.push(Step {
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
            chosen: gains.then(|| name(best)),
            margin,
        });
        if !gains {
            break StopReason::NoPositiveGain {
                best_t_n: value(best_num),
            };
        }
        selected.push(best);
        remaining.retain(|&j| j != best);
    };
    Selection {
        response: name(response),
        selected: selected.iter().map(|&j| name(j)).collect(),
        steps,
        stop,
    }
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
