//! Local parent recovery (Azadkia, Taeb and Bühlmann, "A fast non-parametric approach for local
//! causal structure learning", arXiv:2111.14969): estimate MB(Y); estimate MB(X_i) for every member
//! over all other columns (Y included); join i—j when each is in the other's boundary; a connected
//! component of two or more pairwise marginally independent members is the parent set (a
//! v-structure at Y). None passing: the parents are not identifiable. More than one: the assumptions
//! fail and nothing is claimed.

use super::cache::Boundaries;
use super::collider::{collider_test, ColliderTest};
use super::forward::{Selection, StopReason};
use super::independence::test_component;
use super::rule::SelectionRule;
use super::screening::{screening_check, ScreeningTest};
use super::SearchData;
use crate::measure::xi::XiTest;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use std::collections::{BTreeMap, BTreeSet};

/// A selection margin below this is reported as a near-tie (our convention, not from a source).
pub const NEAR_TIE_MARGIN: f64 = 0.01;

/// Pairwise marginal independence of two members, tested with ξ_n in both directions.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct PairTest {
    /// First member.
    pub a: String,
    /// Second member.
    pub b: String,
    /// ξ_n(a, b): how far b is a function of a. `None` when b is constant.
    pub a_to_b: Option<XiTest>,
    /// ξ_n(b, a).
    pub b_to_a: Option<XiTest>,
    /// Holm-adjusted p-value of `a_to_b` within the component.
    pub a_to_b_holm: f64,
    /// Holm-adjusted p-value of `b_to_a` within the component.
    pub b_to_a_holm: f64,
    /// Calibrated rule: ξ_n(a, |b − median b|), dependence of b's spread on a.
    #[serde(default)]
    pub a_to_b_scale: Option<XiTest>,
    /// Calibrated rule: ξ_n(b, |a − median a|).
    #[serde(default)]
    pub b_to_a_scale: Option<XiTest>,
    /// Holm-adjusted p-value of `a_to_b_scale` (absent under the natural rule).
    #[serde(default)]
    pub a_to_b_scale_holm: Option<f64>,
    /// Holm-adjusted p-value of `b_to_a_scale`.
    #[serde(default)]
    pub b_to_a_scale_holm: Option<f64>,
    /// No direction rejects independence at level α: after Holm's adjustment under the natural
    /// rule, on the unadjusted p-values under the calibrated rule.
    pub independent: bool,
}

/// One connected component of the mutual-membership graph.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct Component {
    /// Members in their order of selection into MB(target).
    pub members: Vec<String>,
    /// Whether every pair of members is joined.
    pub is_clique: bool,
    /// Pairwise tests (members in selection order).
    pub tests: Vec<PairTest>,
    /// All pairs independent at level α.
    pub pairwise_independent: bool,
    /// Calibrated rule, for a group that would pass: the screening check of each member
    /// (`search::screening`), up to the first member screened off.
    #[serde(default)]
    pub screening: Vec<ScreeningTest>,
    /// Two or more members, pairwise independent (and, under the calibrated rule, none screened
    /// off from the target): a candidate parent set.
    pub passes: bool,
}

/// What the search concludes about the target's parents.
#[derive(Clone, Copy, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum Outcome {
    /// Exactly one component passed: its members are the parents.
    Identified,
    /// No component passed: the parents cannot be told apart from children.
    NotIdentifiable,
    /// More than one component passed: the assumptions are violated; nothing is claimed.
    Conflict,
    /// The target's Markov boundary is empty.
    EmptyBoundary,
}

impl Outcome {
    /// The name used in `result.json`.
    pub fn name(self) -> &'static str {
        match self {
            Outcome::Identified => "identified",
            Outcome::NotIdentifiable => "not_identifiable",
            Outcome::Conflict => "conflict",
            Outcome::EmptyBoundary => "empty_boundary",
        }
    }
}

/// A membership that holds in one direction only.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct OneWayMembership {
    /// The column whose boundary contains `member`.
    pub boundary_of: String,
    /// The column in that boundary.
    pub member: String,
}

/// A selection step whose winner beat the runner-up by less than `NEAR_TIE_MARGIN`.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct NearTie {
    /// The response of the selection.
    pub response: String,
    /// Step number.
    pub step: usize,
    /// The chosen column.
    pub chosen: String,
    /// The runner-up.
    pub runner_up: String,
    /// The margin.
    pub margin: f64,
}

/// What the data show against the assumptions.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct Diagnostics {
    /// Members of MB(target) whose own boundary lacks the target (should not happen under the
    /// assumptions); they take no part in the mutual-membership graph.
    pub target_missing_from_member_boundary: Vec<String>,
    /// Memberships between members that hold in one direction only.
    pub one_way_memberships: Vec<OneWayMembership>,
    /// Components (by index) that are not cliques.
    pub non_clique_components: Vec<usize>,
    /// Near-ties in any selection of this search.
    pub near_ties: Vec<NearTie>,
    /// The best T_n at the step where the target's selection stopped.
    pub last_step_best_t_n: Option<f64>,
    /// Calibrated rule: the value T_n had to exceed at that step to be significant (its
    /// permutation test's critical value, and at least 0): a link weaker than this cannot be told
    /// from chance in these data, so its absence from the boundary is no evidence that it is absent.
    #[serde(default)]
    pub detectable_t_n: Option<f64>,
    /// Responses that turned out to be functions of their selected sets.
    pub functional_responses: Vec<String>,
    /// The near-tie margin in force.
    pub near_tie_margin: f64,
}

/// Everything the local parent search found for one target.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct ParentSearch {
    /// The target column.
    pub target: String,
    /// The selection for the target: MB(target) and its trace.
    pub markov_boundary: Selection,
    /// The selection of every member of MB(target).
    pub boundaries: BTreeMap<String, Selection>,
    /// Edges between members: mutual memberships (each pair once, in selection order), then pairs
    /// joined by the collider test.
    pub edges: Vec<[String; 2]>,
    /// Collider tests of the pairs of confirmed members that are not in each other's boundary
    /// (calibrated rule only).
    pub collider_tests: Vec<ColliderTest>,
    /// Connected components of the mutual-membership graph.
    pub components: Vec<Component>,
    /// The conclusion.
    pub outcome: Outcome,
    /// Identified: the one parent set. Not identifiable: the singleton candidates.
    pub parent_sets: Vec<Vec<String>>,
    /// One paragraph in plain words.
    pub explanation: String,
    /// Diagnostics.
    pub diagnostics: Diagnostics,
}

/// Runs the local parent search for `target` over `candidates` (column positions); every member's
/// own boundary is searched over all columns of `data` except itself.
pub fn local_parents(
    data: &SearchData,
    target: usize,
    candidates: &[usize],
    alpha: f64,
    rule: &SelectionRule,
) -> ParentSearch {
    local_parents_with(
        data,
        target,
        candidates,
        alpha,
        rule,
        &Boundaries::new(data, rule),
        true,
    )
}

/// As [`local_parents`], taking every forward selection from `boundaries` (computed there on first
/// request): several targets searched on the same data share their boundaries, with the same
/// result as searching each alone. With `exhaustive_own` the target's own selection makes every
/// draw of its permutation tests, for the critical value of its last step (the detectable-effect
/// diagnostic); without it the tests stop early and that diagnostic is absent, every decision and
/// set being the same (`forward::forward_select_both`). Replicates, which record no diagnostics,
/// pass `false`.
pub fn local_parents_with(
    data: &SearchData,
    target: usize,
    candidates: &[usize],
    alpha: f64,
    rule: &SelectionRule,
    boundaries: &Boundaries,
    exhaustive_own: bool,
) -> ParentSearch {
    let mb =
        Selection::clone(&boundaries.selection(data, target, candidates, rule, exhaustive_own));
    let members: Vec<usize> = mb.selected.iter().map(|n| position(data, n)).collect();
    let everything: Vec<usize> = (0..data.names().len()).collect();
    let member_selections: Vec<Selection> = members
        .par_iter()
        .map(|&m| Selection::clone(&boundaries.selection(data, m, &everything, rule, false)))
        .collect();
    let boundary_sets: Vec<BTreeSet<&str>> = member_selections
        .iter()
        .map(|s| s.selected.iter().map(String::as_str).collect())
        .collect();

    // Natural rule: a member counts only if membership is mutual with the target as well: under
    // the assumptions Y ∈ MB(X) iff X ∈ MB(Y), so a member whose own boundary lacks Y is treated
    // as a chance selection (reported in the diagnostics) and takes no part in the graph. This can
    // only remove claims, never add one. Exception: a member that is a function of its own selected
    // set (its search stopped on a zero denominator) has a truncated boundary, so the absence of Y
    // there is no evidence against it.
    // Calibrated rule: every member entered MB(Y) through a level-α test, which is what the
    // mutual check stood in for; asking again for Y in the member's boundary (given columns that
    // may be near copies of Y, such as Y's other children) only loses true members, so every member
    // counts. One-way memberships are still reported.
    let target_name = data.name(target).to_string();
    let confirmed: Vec<usize> = (0..members.len())
        .filter(|&a| {
            rule.is_calibrated()
                || boundary_sets[a].contains(target_name.as_str())
                || member_selections[a].stop == StopReason::ResponseIsFunctionOfSelected
        })
        .collect();
    let unconfirmed: Vec<String> = (0..members.len())
        .filter(|a| !confirmed.contains(a))
        .map(|a| data.name(members[a]).to_string())
        .collect();
    let mut one_way = Vec::new();
    for a in 0..members.len() {
        for b in (a + 1)..members.len() {
            let a_has_b = boundary_sets[a].contains(data.name(members[b]));
            let b_has_a = boundary_sets[b].contains(data.name(members[a]));
            if a_has_b != b_has_a {
                let (owner, member) = if a_has_b { (a, b) } else { (b, a) };
                one_way.push(OneWayMembership {
                    boundary_of: data.name(members[owner]).to_string(),
                    member: data.name(members[member]).to_string(),
                });
            }
        }
    }
    let k = confirmed.len();
    let mut adjacent = vec![vec![false; k]; k];
    let mut edges = Vec::new();
    let mut not_mutual = Vec::new();
    for a in 0..k {
        for b in (a + 1)..k {
            let (ma, mb_) = (confirmed[a], confirmed[b]);
            if boundary_sets[ma].contains(data.name(members[mb_]))
                && boundary_sets[mb_].contains(data.name(members[ma]))
            {
                adjacent[a][b] = true;
                adjacent[b][a] = true;
                edges.push([
                    data.name(members[ma]).to_string(),
                    data.name(members[mb_]).to_string(),
                ]);
            } else {
                not_mutual.push((a, b));
            }
        }
    }
    // The calibrated rule also joins a pair that depends on each other given the target.
    let collider_tests: Vec<ColliderTest> = match rule.is_calibrated() {
        false => Vec::new(),
        true => not_mutual
            .par_iter()
            .map(|&(a, b)| {
                collider_test(
                    data,
                    target,
                    members[confirmed[a]],
                    members[confirmed[b]],
                    rule,
                )
            })
            .collect(),
    };
    for (&(a, b), test) in not_mutual.iter().zip(&collider_tests) {
        if test.joined {
            adjacent[a][b] = true;
            adjacent[b][a] = true;
            edges.push([test.a.clone(), test.b.clone()]);
        }
    }
    let components: Vec<Component> = connected_components(&adjacent)
        .into_iter()
        .map(|group| {
            let columns: Vec<usize> = group.iter().map(|&g| members[confirmed[g]]).collect();
            let is_clique = group
                .iter()
                .all(|&a| group.iter().all(|&b| a == b || adjacent[a][b]));
            let mut component =
                test_component(data, &columns, is_clique, alpha, rule.is_calibrated());
            if component.passes && rule.is_calibrated() {
                component.screening = screening_check(
                    data,
                    target,
                    &members,
                    &columns,
                    |m| {
                        let a = members.iter().position(|&x| x == m).expect("a member");
                        member_selections[a]
                            .selected
                            .iter()
                            .map(|n| position(data, n))
                            .collect()
                    },
                    rule,
                );
                component.passes = !component.screening.iter().any(|t| t.screened_off);
            }
            component
        })
        .collect();

    let passing: Vec<&Component> = components.iter().filter(|c| c.passes).collect();
    let outcome = if members.is_empty() {
        Outcome::EmptyBoundary
    } else {
        match passing.len() {
            0 => Outcome::NotIdentifiable,
            1 => Outcome::Identified,
            _ => Outcome::Conflict,
        }
    };
    let parent_sets: Vec<Vec<String>> = match outcome {
        Outcome::Identified => vec![passing[0].members.clone()],
        Outcome::NotIdentifiable => components
            .iter()
            .filter(|c| c.members.len() == 1)
            .map(|c| c.members.clone())
            .collect(),
        _ => Vec::new(),
    };
    let diagnostics = diagnose(&target_name, &mb, &member_selections, one_way, &components);
    let explanation = explain(
        &target_name,
        outcome,
        &parent_sets,
        &components,
        &unconfirmed,
    );
    ParentSearch {
        target: target_name,
        collider_tests,
        boundaries: member_selections
            .into_iter()
            .map(|s| (s.response.clone(), s))
            .collect(),
        markov_boundary: mb,
        edges,
        components,
        outcome,
        parent_sets,
        explanation,
        diagnostics,
    }
}

fn position(data: &SearchData, name: &str) -> usize {
    data.names()
        .iter()
        .position(|n| n == name)
        .expect("selected names come from the data")
}

/// Components of an undirected graph, each listed in ascending vertex order; components ordered by
/// their smallest vertex (vertices are in selection order, so this is deterministic and readable).
fn connected_components(adjacent: &[Vec<bool>]) -> Vec<Vec<usize>> {
    let k = adjacent.len();
    let mut seen = vec![false; k];
    let mut out = Vec::new();
    for start in 0..k {
        if seen[start] {
            continue;
        }
        let mut group = vec![start];
        seen[start] = true;
        let mut frontier = vec![start];
        while let Some(v) = frontier.pop() {
            for w in 0..k {
                if adjacent[v][w] && !seen[w] {
                    seen[w] = true;
                    group.push(w);
                    frontier.push(w);
                }
            }
        }
        group.sort_unstable();
        out.push(group);
    }
    out
}

/// Names in single quotes, comma-separated, for the explanations.
pub(super) fn quoted(names: &[String]) -> String {
    names
        .iter()
        .map(|n| format!("'{n}'"))
        .collect::<Vec<_>>()
        .join(", ")
}

fn explain(
    target: &str,
    outcome: Outcome,
    parent_sets: &[Vec<String>],
    components: &[Component],
    unconfirmed: &[String],
) -> String {
    let mut text = explain_outcome(target, outcome, parent_sets, components, unconfirmed);
    for c in components {
        if let Some(t) = c.screening.iter().find(|t| t.screened_off) {
            text.push_str(&format!(
                " The group {} formed the pattern of independent causes, but '{}' is screened off \
                 from '{target}' by '{}' (the screening check): a direct cause would stay linked \
                 with '{target}' whatever else is known, so the group is not claimed; '{}' may \
                 stand in for a cause that the search did not select.",
                quoted(&c.members),
                t.member,
                t.by,
                t.member
            ));
        }
    }
    text
}

fn explain_outcome(
    target: &str,
    outcome: Outcome,
    parent_sets: &[Vec<String>],
    components: &[Component],
    unconfirmed: &[String],
) -> String {
    match outcome {
        Outcome::Identified => {
            let mut text = format!(
                "The parents of '{target}' are identified as {}: each carries information about \
                 '{target}' that no other measured column explains, they are independent of each \
                 other, and together they form a pattern (a v-structure) that only direct causes of \
                 '{target}' produce under the stated assumptions. The same pattern would appear if \
                 an unmeasured variable drove both one of these columns and '{target}': the claim \
                 rests on the assumption that no such common cause exists, which these data cannot \
                 check.",
                quoted(&parent_sets[0])
            );
            if !unconfirmed.is_empty() {
                text.push_str(&format!(
                    " Further columns ({}) were selected into the Markov boundary but not confirmed \
                     by their own searches and were left out; if any of them is a direct cause too, \
                     this set is incomplete.",
                    quoted(unconfirmed)
                ));
            }
            text
        }
        Outcome::NotIdentifiable => {
            let singles: Vec<String> = parent_sets.iter().map(|s| s[0].clone()).collect();
            if components.is_empty() {
                format!(
                    "No parent of '{target}' is claimed: the columns selected into its Markov \
                     boundary ({}) do not select '{target}' back into their own boundaries, which \
                     points to chance selections rather than direct links.",
                    quoted(unconfirmed)
                )
            } else if singles.is_empty() {
                format!(
                    "The parents of '{target}' are not identifiable from these data: no group of \
                     its Markov-boundary members is pairwise independent, so causes cannot be told \
                     apart from effects; no single column stands alone either."
                )
            } else {
                let (which, verb, verdict) = if singles.len() == 1 {
                    ("The candidate", "carries", "It may be a direct cause or a direct effect")
                } else {
                    (
                        "The candidates",
                        "each carry",
                        "The data cannot tell which of them, if any, are direct causes and which are \
                         effects",
                    )
                };
                format!(
                    "The parents of '{target}' are not identifiable from these data. {which} {} \
                     {verb} information about '{target}' that no other measured column explains, \
                     but the direction of such a link cannot be read from observational data alone: \
                     a lone direct cause leaves the same pattern as a direct effect (Markov \
                     equivalence). {verdict}; an experiment or knowledge of the time order would \
                     settle it.",
                    quoted(&singles)
                )
            }
        }
        Outcome::Conflict => format!(
            "The assumptions are in conflict: {} separate groups of columns each look like a parent \
             set of '{target}', which cannot happen under a tree-shaped neighbourhood with no \
             unmeasured common causes. Nothing is claimed about the parents of '{target}'.",
            components.iter().filter(|c| c.passes).count()
        ),
        Outcome::EmptyBoundary => format!(
            "No column carries information about '{target}' beyond chance: its estimated Markov \
             boundary is empty, so no parent is claimed."
        ),
    }
}

fn diagnose(
    target: &str,
    mb: &Selection,
    member_selections: &[Selection],
    one_way_memberships: Vec<OneWayMembership>,
    components: &[Component],
) -> Diagnostics {
    let target_missing_from_member_boundary = member_selections
        .iter()
        .filter(|s| !s.selected.iter().any(|n| n == target))
        .map(|s| s.response.clone())
        .collect();
    let mut near_ties = Vec::new();
    let mut functional_responses = Vec::new();
    for selection in std::iter::once(mb).chain(member_selections) {
        for step in &selection.steps {
            if let (Some(chosen), Some(margin)) = (&step.chosen, step.margin) {
                if margin < NEAR_TIE_MARGIN {
                    near_ties.push(NearTie {
                        response: selection.response.clone(),
                        step: step.step,
                        chosen: chosen.clone(),
                        runner_up: step.candidates[1].column.clone(),
                        margin,
                    });
                }
            }
        }
        if selection.stop == StopReason::ResponseIsFunctionOfSelected {
            functional_responses.push(selection.response.clone());
        }
    }
    let last_step_best_t_n = match &mb.stop {
        StopReason::NoPositiveGain { best_t_n } => Some(*best_t_n),
        StopReason::NotSignificant { best_t_n, .. } => Some(*best_t_n),
        _ => None,
    };
    let stop_step = mb.steps.last().filter(|s| s.chosen.is_none());
    let detectable_t_n = stop_step
        .and_then(|s| s.test.as_ref())
        .and_then(|t| t.critical_t_n)
        .map(|c| c.max(0.0));
    Diagnostics {
        target_missing_from_member_boundary,
        one_way_memberships,
        non_clique_components: components
            .iter()
            .enumerate()
            .filter(|(_, c)| !c.is_clique)
            .map(|(i, _)| i)
            .collect(),
        near_ties,
        last_step_best_t_n,
        detectable_t_n,
        functional_responses,
        near_tie_margin: NEAR_TIE_MARGIN,
    }
}
