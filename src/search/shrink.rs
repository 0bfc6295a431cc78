//! The shrink phase of the calibrated rule (Margaritis and Thrun 2000, "Bayesian network induction
//! via local neighborhoods", grow–shrink; Tsamardinos, Aliferis and Statnikov 2003, IAMB): after
//! the forward phase, each member is tested given all the other members, T_n(Y, m | S \ {m}), by
//! the local permutation test at the selection level. While some member is not significant, the
//! weakest (largest p-value, then smallest T_n, then the latest selected) leaves and the rest are
//! tested again. A single member is not tested: the forward step that admitted it tested it
//! against a stricter null (the maximum over all candidates).

use super::rule::SelectionRule;
use super::SearchData;
use crate::measure::permutation::{max_statistic_test, Observed, PermutationTest};
use crate::measure::TargetRanks;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};

/// One test of the shrink phase.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct ShrinkTest {
    /// 1-based round; each round tests every member still in the set.
    pub round: usize,
    /// The member tested.
    pub member: String,
    /// The other members, in selection order.
    pub conditioning: Vec<String>,
    /// T_n(Y, member | the others); `None` when the response is a function of the others (then
    /// the member adds nothing that can be measured).
    pub t_n: Option<f64>,
    /// Its exact numerator.
    pub numerator: i128,
    /// Its exact denominator.
    pub denominator: i128,
    /// The permutation test; absent when T_n is not positive (not significant without a test).
    pub test: Option<PermutationTest>,
    /// Whether the member left the set after this test.
    pub removed: bool,
}

impl ShrinkTest {
    /// Significant at level `alpha`: a positive T_n whose test rejects.
    fn kept(&self, alpha: f64) -> bool {
        self.t_n.is_some_and(|t| t > 0.0) && self.test.as_ref().is_some_and(|t| t.p_value <= alpha)
    }

    /// The p-value, 1 without a test.
    fn p_value(&self) -> f64 {
        self.test.as_ref().map_or(1.0, |t| t.p_value)
    }
}

/// Runs the shrink phase on `selected` (column positions in selection order), removing members in
/// place; returns every test and the removed members' names in the order removed.
pub fn shrink(
    data: &SearchData,
    response: usize,
    ranks: &TargetRanks,
    selected: &mut Vec<usize>,
    rule: &SelectionRule,
) -> (Vec<ShrinkTest>, Vec<String>) {
    let mut tests = Vec::new();
    let mut removed = Vec::new();
    let mut round = 0;
    while selected.len() >= 2 {
        round += 1;
        let joint = data.neighbours(response, selected);
        let results: Vec<ShrinkTest> = selected
            .par_iter()
            .map(|&member| {
                test_member(data, response, ranks, selected, member, &joint, rule, round)
            })
            .collect();
        let weakest = results
            .iter()
            .enumerate()
            .filter(|(_, t)| !t.kept(rule.alpha))
            .max_by(|(a_pos, a), (b_pos, b)| {
                let value = |t: &ShrinkTest| t.t_n.unwrap_or(f64::NEG_INFINITY);
                a.p_value()
                    .total_cmp(&b.p_value())
                    .then(value(b).total_cmp(&value(a)))
                    .then(a_pos.cmp(b_pos))
            })
            .map(|(pos, _)| pos);
        let mut results = results;
        if let Some(pos) = weakest {
            results[pos].removed = true;
            removed.push(results[pos].member.clone());
        }
        tests.extend(results);
        match weakest {
            Some(pos) => {
                selected.remove(pos);
            }
            None => break,
        }
    }
    (tests, removed)
}

#[allow(clippy::too_many_arguments)] // one test's coordinates; a struct would only rename them
fn test_member(
    data: &SearchData,
    response: usize,
    ranks: &TargetRanks,
    selected: &[usize],
    member: usize,
    joint: &[u32],
    rule: &SelectionRule,
    round: usize,
) -> ShrinkTest {
    let others: Vec<usize> = selected.iter().copied().filter(|&j| j != member).collect();
    let hood = data.neighbourhood(&others);
    let conditioning = hood.choose(&data.neighbour_key(response, &others));
    let denominator = ranks.denominator(Some(&conditioning));
    let numerator = match denominator {
        0 => 0,
        _ => ranks.numerator(Some(&conditioning), joint),
    };
    let t_n = (denominator != 0).then(|| numerator as f64 / denominator as f64);
    let test = (numerator > 0 && denominator != 0).then(|| {
        let observed = Observed {
            ranks,
            conditioning: Some(&conditioning),
            joints: vec![joint],
            numerator,
            denominator,
        };
        max_statistic_test(
            &observed,
            Some(&data.permutation_blocks_of(hood)),
            &data.permutation_key("shrink", response, &others, Some(member)),
            &rule.test_plan(false),
        )
    });
    ShrinkTest {
        round,
        member: data.name(member).to_string(),
        conditioning: others.iter().map(|&j| data.name(j).to_string()).collect(),
        t_n,
        numerator,
        denominator,
        test,
        removed: false,
    }
}
