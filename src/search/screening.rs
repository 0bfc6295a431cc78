//! The screening check of the calibrated rule: before a group of members is claimed as the
//! parents of Y, each member c must stay dependent on Y given the rest of MB(Y) together with any
//! one column w of its own boundary that is outside MB(Y): T_n(Y, c | MB(Y) \ {c} ∪ {w}) must be
//! significant at the selection level for every such w.
//!
//! Why: a direct cause c of Y stays dependent on Y given any set of other columns (faithfulness),
//! so a column that some w screens off from Y is not a direct cause. The case it guards against:
//! a true parent p missed by the selection (too weak to pass its test) acts like an unmeasured
//! variable, and a relative of p that did enter the boundary stands in for it, p's own parent or
//! another child of p; such a stand-in forms the same pattern with the other parents as p would,
//! and would be claimed. Measured on fresh random graphs before this check: two such stand-ins
//! (a parent's parent, and a parent's other child) among 87 identified targets
//! (docs/recovery.md). A true parent fails the check only when its link is too weak to be seen
//! given the extra column, so the check can only withdraw claims.

use super::forward::evaluate_step;
use super::rule::SelectionRule;
use super::SearchData;
use crate::measure::permutation::PermutationTest;
use crate::measure::TargetRanks;
use serde::{Deserialize, Serialize};

/// One test of the screening check.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct ScreeningTest {
    /// The member tested (a column of a group that would be claimed).
    pub member: String,
    /// The column of the member's boundary, outside MB(Y), added to the conditioning set.
    pub by: String,
    /// T_n(Y, member | MB(Y) \ {member} ∪ {by}); `None` when Y is a function of that set.
    pub t_n: Option<f64>,
    /// The permutation test; absent when T_n is not positive.
    pub test: Option<PermutationTest>,
    /// Not significant: `by` screens the member off from Y, and the group is not claimed.
    pub screened_off: bool,
}

/// Runs the check for the members of one group (positions, in selection order) and stops at the
/// first member screened off. `boundary` gives each member's own boundary (positions, in its
/// selection order); `markov_boundary` is MB(Y).
pub fn screening_check(
    data: &SearchData,
    target: usize,
    markov_boundary: &[usize],
    group: &[usize],
    boundary: impl Fn(usize) -> Vec<usize>,
    rule: &SelectionRule,
) -> Vec<ScreeningTest> {
    let ranks = TargetRanks::new(data.raw(target));
    let mut tests = Vec::new();
    for &member in group {
        for w in boundary(member) {
            if w == target || markov_boundary.contains(&w) {
                continue;
            }
            let mut conditioning: Vec<usize> = markov_boundary
                .iter()
                .copied()
                .filter(|&j| j != member)
                .collect();
            conditioning.push(w);
            let step = evaluate_step(
                data,
                "screening",
                target,
                &ranks,
                &conditioning,
                &[member],
                rule,
                false,
            );
            let test = match step {
                None => ScreeningTest {
                    member: data.name(member).to_string(),
                    by: data.name(w).to_string(),
                    t_n: None,
                    test: None,
                    screened_off: true,
                },
                Some(step) => {
                    let numerator = step.scored[0].1;
                    let significant = numerator > 0
                        && step.test.as_ref().is_some_and(|t| t.p_value <= rule.alpha);
                    ScreeningTest {
                        member: data.name(member).to_string(),
                        by: data.name(w).to_string(),
                        t_n: Some(numerator as f64 / step.denominator as f64),
                        test: step.test,
                        screened_off: !significant,
                    }
                }
            };
            let stop = test.screened_off;
            tests.push(test);
            if stop {
                return tests;
            }
        }
    }
    tests
}
