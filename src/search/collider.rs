//! The collider test of the calibrated rule: two members of MB(Y) that are not in each other's
//! boundary are still joined when they depend on each other given Y: T_n(a, b | Y) or
//! T_n(b, a | Y) significant by the local permutation test at half the selection level
//! (Bonferroni over the two directions, so that a pair independent given Y is joined with
//! probability at most α). T_n is not symmetric, and on tied data one direction can carry far
//! more signal than the other.
//!
//! Why: two independent causes a and b of Y become dependent given Y (the v-structure that makes
//! parents identifiable), and that is what mutual membership is meant to see. But a member's own
//! forward selection conditions on everything it admits before b, and a weak spouse signal is
//! easily lost there; testing the pair given Y alone asks the question directly. It only adds
//! edges; a spurious one (at most α per independent pair) can join a non-parent to a parent's
//! group, which must still pass the pairwise independence tests and the screening check before
//! anything is claimed.

use super::forward::evaluate_step;
use super::rule::SelectionRule;
use super::SearchData;
use crate::measure::permutation::PermutationTest;
use crate::measure::TargetRanks;
use serde::{Deserialize, Serialize};

/// T_n(response, other | target) and its test.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct DirectionTest {
    /// T_n; `None` when the response is a function of the target.
    pub t_n: Option<f64>,
    /// The permutation test; absent when T_n is not positive.
    pub test: Option<PermutationTest>,
    /// Positive and significant at half the selection level.
    pub significant: bool,
}

/// The collider test of one pair of members.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct ColliderTest {
    /// First member (selection order).
    pub a: String,
    /// Second member.
    pub b: String,
    /// T_n(a, b | target).
    pub a_given_target: DirectionTest,
    /// T_n(b, a | target).
    pub b_given_target: DirectionTest,
    /// Either direction significant: the pair is joined.
    pub joined: bool,
}

/// Tests the pair (a, b) given `target`.
pub fn collider_test(
    data: &SearchData,
    target: usize,
    a: usize,
    b: usize,
    rule: &SelectionRule,
) -> ColliderTest {
    let direction = |response: usize, other: usize| {
        let ranks = TargetRanks::new(data.raw(response));
        match evaluate_step(
            data,
            "collider",
            response,
            &ranks,
            &[target],
            &[other],
            rule,
            false,
        ) {
            None => DirectionTest {
                t_n: None,
                test: None,
                significant: false,
            },
            Some(step) => {
                let numerator = step.scored[0].1;
                DirectionTest {
                    t_n: Some(numerator as f64 / step.denominator as f64),
                    significant: numerator > 0
                        && step
                            .test
                            .as_ref()
                            .is_some_and(|t| t.p_value <= rule.alpha / 2.0),
                    test: step.test,
                }
            }
        }
    };
    let a_given_target = direction(a, b);
    let b_given_target = direction(b, a);
    ColliderTest {
        a: data.name(a).to_string(),
        b: data.name(b).to_string(),
        joined: a_given_target.significant || b_given_target.significant,
        a_given_target,
        b_given_target,
    }
}
