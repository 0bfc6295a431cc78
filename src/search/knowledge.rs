//! Background knowledge (study file table `[knowledge]`) and how it acts on the local parent
//! search, by the background-knowledge rules of Meek (1995, "Causal inference and causal
//! explanation with background knowledge", UAI): knowledge orients an edge the data found but could
//! not direct; an orientation then propagates by Meek's first rule (a → y — b with a, b not
//! adjacent gives y → b); an orientation the data made (a v-structure, or the first rule applied to
//! one) that the knowledge forbids is a conflict, reported and never resolved.
//!
//! What the data say about the edges at the target comes from the parent step
//! (`search::parents`), under its own assumptions (a tree-shaped neighbourhood, no unmeasured
//! common cause): the members of an identified set are parents (v-structure); a member that forms
//! a component of its own is adjacent to the target with its direction undecided (or, beside an
//! identified set, a child by the first rule); members of other components may be spouses (parents
//! of a common child), whose adjacency the data leave open, so knowledge about them is applied only
//! when it states an edge outright (`required`).
//!
//! Under the calibrated rule a lone member that the knowledge would make a cause is claimed only
//! if it passes the screening check (`search::screening`) that every claim of the data alone
//! passes ([`read`]). Measured on the shared reference data with tiers from the published order
//! (docs/recovery.md): the data's lone link is sometimes a stand-in for a missed parent (its own
//! parent), which correct tiers then direct into a wrong claim; the check withdraws such claims.

use super::parents::{quoted, Outcome, ParentSearch};
use super::rule::SelectionRule;
use super::screening::{screening_check, ScreeningTest};
use super::SearchData;
use serde::{Deserialize, Serialize};
use std::collections::{BTreeMap, BTreeSet};

/// What the analyst knows, as given: ordered tiers of columns (earliest first: a column cannot
/// cause a column of an earlier tier; within a tier nothing is assumed) and directed edges
/// `[from, to]` that are forbidden or required.
#[derive(Clone, Debug, Default, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct Knowledge {
    /// Tiers of columns, earliest first.
    #[serde(default)]
    pub tiers: Vec<Vec<String>>,
    /// Edges that do not exist, `[from, to]`.
    #[serde(default)]
    pub forbidden: Vec<[String; 2]>,
    /// Edges that exist, `[from, to]`.
    #[serde(default)]
    pub required: Vec<[String; 2]>,
}

impl Knowledge {
    /// Whether nothing is stated.
    pub fn is_empty(&self) -> bool {
        self.tiers.iter().all(Vec::is_empty)
            && self.forbidden.is_empty()
            && self.required.is_empty()
    }

    /// Every column the knowledge names, each once, in the order first named.
    pub fn columns(&self) -> Vec<&str> {
        let mut seen = BTreeSet::new();
        self.tiers
            .iter()
            .flatten()
            .chain(self.forbidden.iter().flatten())
            .chain(self.required.iter().flatten())
            .map(String::as_str)
            .filter(|c| seen.insert(*c))
            .collect()
    }

    /// The 0-based tier of `column`, if it is in one.
    pub fn tier(&self, column: &str) -> Option<usize> {
        self.tiers
            .iter()
            .position(|t| t.iter().any(|c| c == column))
    }

    /// Why `from → to` cannot be an edge, if the knowledge says so.
    pub fn forbids(&self, from: &str, to: &str) -> Option<String> {
        if let (Some(a), Some(b)) = (self.tier(from), self.tier(to)) {
            if a > b {
                return Some(format!(
                    "'{from}' is in tier {} and '{to}' in the earlier tier {}",
                    a + 1,
                    b + 1
                ));
            }
        }
        if self.forbidden.iter().any(|[f, t]| f == from && t == to) {
            return Some(format!("the edge '{from}' → '{to}' is forbidden"));
        }
        if self.required.iter().any(|[f, t]| f == to && t == from) {
            return Some(format!("the edge '{to}' → '{from}' is required"));
        }
        None
    }

    /// Whether `from → to` is stated as an edge.
    pub fn requires(&self, from: &str, to: &str) -> bool {
        self.required.iter().any(|[f, t]| f == from && t == to)
    }

    /// What is wrong with the knowledge on its own (no header needed): a column in two tiers, an
    /// edge from a column to itself, an edge both forbidden and required, a required edge the tiers
    /// forbid, required edges that form a cycle. Every problem, in the order found.
    pub fn problems(&self) -> Vec<String> {
        let mut problems = Vec::new();
        let mut tier_of: BTreeMap<&str, usize> = BTreeMap::new();
        for (i, tier) in self.tiers.iter().enumerate() {
            if tier.is_empty() {
                problems.push(format!("tier {} is empty", i + 1));
            }
            for c in tier {
                if let Some(&first) = tier_of.get(c.as_str()) {
                    problems.push(match first == i {
                        true => format!("'{c}' is listed twice in tier {}", i + 1),
                        false => format!("'{c}' is in tier {} and in tier {}", first + 1, i + 1),
                    });
                } else {
                    tier_of.insert(c, i);
                }
            }
        }
        for (list, edges) in [("forbidden", &self.forbidden), ("required", &self.required)] {
            for [from, to] in edges {
                if from == to {
                    problems.push(format!(
                        "{list} edge ['{from}', '{to}'] joins a column to itself"
                    ));
                }
            }
        }
        for [from, to] in &self.required {
            if self.forbidden.iter().any(|[f, t]| f == from && t == to) {
                problems.push(format!(
                    "the edge ['{from}', '{to}'] is both required and forbidden"
                ));
            }
            if let (Some(a), Some(b)) = (tier_of.get(from.as_str()), tier_of.get(to.as_str())) {
                if a > b {
                    problems.push(format!(
                        "the required edge ['{from}', '{to}'] runs from tier {} to the earlier tier \
                         {}, which the tiers forbid",
                        a + 1,
                        b + 1
                    ));
                }
            }
        }
        if let Some(cycle) = self.required_cycle() {
            problems.push(format!(
                "the required edges form a cycle: {}",
                cycle
                    .iter()
                    .map(|c| format!("'{c}'"))
                    .collect::<Vec<_>>()
                    .join(" → ")
            ));
        }
        problems
    }

    /// A directed cycle of required edges, first column repeated at the end, if there is one.
    fn required_cycle(&self) -> Option<Vec<String>> {
        let mut out: BTreeMap<&str, Vec<&str>> = BTreeMap::new();
        for [f, t] in &self.required {
            if f != t {
                out.entry(f).or_default().push(t);
            }
        }
        // Depth-first search with colours: 1 on the path, 2 done.
        fn visit<'a>(
            v: &'a str,
            out: &BTreeMap<&'a str, Vec<&'a str>>,
            colour: &mut BTreeMap<&'a str, u8>,
            path: &mut Vec<&'a str>,
        ) -> Option<Vec<String>> {
            colour.insert(v, 1);
            path.push(v);
            for &w in out.get(v).map(Vec::as_slice).unwrap_or(&[]) {
                match colour.get(w).copied().unwrap_or(0) {
                    1 => {
                        let start = path.iter().position(|&p| p == w).expect("on the path");
                        let mut cycle: Vec<String> =
                            path[start..].iter().map(|s| s.to_string()).collect();
                        cycle.push(w.to_string());
                        return Some(cycle);
                    }
                    0 => {
                        if let Some(c) = visit(w, out, colour, path) {
                            return Some(c);
                        }
                    }
                    _ => {}
                }
            }
            path.pop();
            colour.insert(v, 2);
            None
        }
        let mut colour = BTreeMap::new();
        let starts: Vec<&str> = out.keys().copied().collect();
        for v in starts {
            if colour.get(v).copied().unwrap_or(0) == 0 {
                if let Some(c) = visit(v, &out, &mut colour, &mut Vec::new()) {
                    return Some(c);
                }
            }
        }
        None
    }

    /// The knowledge restricted to the columns of `keep` (the columns an analysis uses): tiers
    /// keep their order, edges with a column outside `keep` are dropped.
    pub fn restricted_to(&self, keep: &[String]) -> Knowledge {
        let kept = |c: &String| keep.contains(c);
        Knowledge {
            tiers: self
                .tiers
                .iter()
                .map(|t| t.iter().filter(|c| kept(c)).cloned().collect::<Vec<_>>())
                .filter(|t| !t.is_empty())
                .collect(),
            forbidden: self
                .forbidden
                .iter()
                .filter(|e| e.iter().all(kept))
                .cloned()
                .collect(),
            required: self
                .required
                .iter()
                .filter(|e| e.iter().all(kept))
                .cloned()
                .collect(),
        }
    }
}

/// Which way an edge at the target points.
#[derive(Clone, Copy, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum Direction {
    /// member → target: a parent.
    IntoTarget,
    /// target → member: a child.
    OutOfTarget,
    /// Adjacent, direction not decided.
    Undecided,
}

/// What a statement rests on.
#[derive(Clone, Copy, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum Basis {
    /// The data alone, under the method's assumptions.
    Data,
    /// The data (the link) plus stated knowledge (its direction).
    DataAndKnowledge,
    /// The data alone, the direction through the parent searches of the target's neighbours
    /// (`search::orient`).
    DataNeighbourhood,
}

impl Basis {
    /// Plain words for the dossier.
    pub fn words(self) -> &'static str {
        match self {
            Basis::Data => "data alone",
            Basis::DataAndKnowledge => "data + stated knowledge",
            Basis::DataNeighbourhood => "data alone, through the neighbours' searches",
        }
    }
}

/// One edge at the target: the member, its direction, what that rests on and why.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct TargetEdge {
    /// The member of MB(target).
    pub member: String,
    /// Its direction relative to the target.
    pub direction: Direction,
    /// What the direction rests on (absent while undecided).
    pub basis: Option<Basis>,
    /// Why, in plain words.
    pub reason: String,
}

/// A disagreement between the data and the stated knowledge.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct KnowledgeConflict {
    /// The column involved besides the target.
    pub column: String,
    /// What the data show and what the knowledge states.
    pub description: String,
}

/// The parent search read together with the stated knowledge.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct WithKnowledge {
    /// The conclusion with the knowledge: `conflict` when data and knowledge disagree.
    pub outcome: Outcome,
    /// Identified: the one parent set; not identifiable: the undecided singletons.
    pub parent_sets: Vec<Vec<String>>,
    /// Every member of MB(target) with what is known of its edge to the target, in MB order.
    pub edges: Vec<TargetEdge>,
    /// The parents claimed and what each rests on (identified only).
    pub claims: BTreeMap<String, Basis>,
    /// Disagreements between the data and the knowledge (nothing is claimed while there are any).
    pub conflicts: Vec<KnowledgeConflict>,
    /// The conclusion in plain words.
    pub explanation: String,
    /// Calibrated rule: the screening check of each lone member the knowledge would make a cause
    /// (`search::screening`), as every claim of the data alone passes it.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub screening: Vec<ScreeningTest>,
}

/// Reads the local parent search `search` with `knowledge` on the data it was made from: under
/// the calibrated rule, a lone member that the knowledge would make a cause must first pass the
/// screening check that every claim of the data alone passes (it stays linked with the target
/// given the rest of the boundary and any one column of its own boundary outside it); a member
/// screened off may stand in for a cause the search missed, such as that cause's own cause, and is
/// not claimed.
pub fn read(
    data: &SearchData,
    search: &ParentSearch,
    knowledge: &Knowledge,
    rule: &SelectionRule,
) -> WithKnowledge {
    let first = apply(search, knowledge);
    if !rule.is_calibrated() {
        return first;
    }
    let position = |name: &str| {
        data.names()
            .iter()
            .position(|n| n == name)
            .expect("the search's columns are the data's")
    };
    let target = position(&search.target);
    let boundary: Vec<usize> = search
        .markov_boundary
        .selected
        .iter()
        .map(|m| position(m))
        .collect();
    let lone: BTreeSet<&str> = search
        .components
        .iter()
        .filter(|c| c.members.len() == 1)
        .map(|c| c.members[0].as_str())
        .collect();
    let mut screening = Vec::new();
    let mut screened = BTreeMap::new();
    for e in &first.edges {
        if e.direction != Direction::IntoTarget
            || e.basis != Some(Basis::DataAndKnowledge)
            || !lone.contains(e.member.as_str())
        {
            continue;
        }
        let tests = screening_check(
            data,
            target,
            &boundary,
            &[position(&e.member)],
            |m| {
                search.boundaries[data.name(m)]
                    .selected
                    .iter()
                    .map(|c| position(c))
                    .collect()
            },
            rule,
        );
        if let Some(off) = tests.iter().find(|t| t.screened_off) {
            screened.insert(e.member.clone(), off.by.clone());
        }
        screening.extend(tests);
    }
    let mut read = match screened.is_empty() {
        true => first,
        false => apply_screened(search, knowledge, &screened),
    };
    read.screening = screening;
    read
}

/// Applies `knowledge` to the local parent search `search` (no screening check).
pub fn apply(search: &ParentSearch, knowledge: &Knowledge) -> WithKnowledge {
    apply_screened(search, knowledge, &BTreeMap::new())
}

/// As [`apply`]; a lone member in `screened` (with the column that screened it off) is not
/// directed into the target.
fn apply_screened(
    search: &ParentSearch,
    knowledge: &Knowledge,
    screened: &BTreeMap<String, String>,
) -> WithKnowledge {
    let y = search.target.as_str();
    let identified: Vec<&String> = match search.outcome {
        Outcome::Identified => search.parent_sets[0].iter().collect(),
        _ => Vec::new(),
    };
    let singletons: BTreeSet<&str> = search
        .components
        .iter()
        .filter(|c| c.members.len() == 1)
        .map(|c| c.members[0].as_str())
        .collect();
    let mut conflicts = Vec::new();
    let mut edges = Vec::new();
    for m in &search.markov_boundary.selected {
        let into_forbidden = knowledge.forbids(m, y);
        let out_forbidden = knowledge.forbids(y, m);
        let edge = |direction, basis, reason: String| TargetEdge {
            member: m.clone(),
            direction,
            basis,
            reason,
        };
        if identified.contains(&m) {
            if let Some(why) = into_forbidden {
                conflicts.push(KnowledgeConflict {
                    column: m.clone(),
                    description: format!(
                        "the data identify '{m}' as a cause of '{y}' (a v-structure), but {why}"
                    ),
                });
            }
            edges.push(edge(
                Direction::IntoTarget,
                Some(Basis::Data),
                "a v-structure at the target: parents that are independent of each other".into(),
            ));
        } else if singletons.contains(m.as_str()) && search.outcome == Outcome::Identified {
            // Meek's first rule on the data's own v-structure: p → y — m with p, m not adjacent.
            if let Some(why) = out_forbidden {
                conflicts.push(KnowledgeConflict {
                    column: m.clone(),
                    description: format!(
                        "the data make '{m}' an effect of '{y}' (it is linked to '{y}' but not to \
                         the identified parents, Meek's first rule), but {why}"
                    ),
                });
            }
            edges.push(edge(
                Direction::OutOfTarget,
                Some(Basis::Data),
                "linked to the target but not to its identified parents (Meek's first rule)".into(),
            ));
        } else if singletons.contains(m.as_str()) {
            match (into_forbidden, out_forbidden) {
                (Some(a), Some(b)) => {
                    conflicts.push(KnowledgeConflict {
                        column: m.clone(),
                        description: format!(
                            "the data link '{m}' directly with '{y}', but the knowledge forbids \
                             both directions: {a}; {b}"
                        ),
                    });
                    edges.push(edge(Direction::Undecided, None, "in conflict".into()));
                }
                (Some(why), None) => edges.push(edge(
                    Direction::OutOfTarget,
                    Some(Basis::DataAndKnowledge),
                    format!("linked to the target by the data; not its cause, since {why}"),
                )),
                (None, Some(why)) => match screened.get(m) {
                    Some(by) => edges.push(edge(
                        Direction::Undecided,
                        None,
                        format!(
                            "linked to the target by the data, and not its effect, since {why}; \
                             but '{by}' screens it off from the target (the screening check), so \
                             it may stand in for a cause the search did not select, such as that \
                             cause's own cause: not claimed"
                        ),
                    )),
                    None => edges.push(edge(
                        Direction::IntoTarget,
                        Some(Basis::DataAndKnowledge),
                        format!("linked to the target by the data; not its effect, since {why}"),
                    )),
                },
                (None, None) => edges.push(edge(
                    Direction::Undecided,
                    None,
                    "linked to the target; neither the data nor the knowledge give the direction"
                        .into(),
                )),
            }
        } else if knowledge.requires(m, y) {
            edges.push(edge(
                Direction::IntoTarget,
                Some(Basis::DataAndKnowledge),
                format!("in the Markov boundary, and the edge '{m}' → '{y}' is required"),
            ));
        } else if knowledge.requires(y, m) {
            edges.push(edge(
                Direction::OutOfTarget,
                Some(Basis::DataAndKnowledge),
                format!("in the Markov boundary, and the edge '{y}' → '{m}' is required"),
            ));
        } else {
            let open = "in the Markov boundary with other members (a child with its other causes, \
                        or linked causes): the data do not say whether it is linked to the target \
                        directly";
            let reason = match (into_forbidden, out_forbidden) {
                (Some(why), _) => format!("{open}; it is not a cause of the target, since {why}"),
                (None, Some(why)) => {
                    format!("{open}; if it is, it is a cause, since {why}, but that is not claimed")
                }
                (None, None) => open.to_string(),
            };
            edges.push(edge(Direction::Undecided, None, reason));
        }
    }
    // Meek's first rule on orientations the knowledge made: k → y — m, k and m not adjacent (they
    // are separate components of the membership graph, so not in each other's boundary).
    let by_knowledge: Vec<String> = edges
        .iter()
        .filter(|e| e.direction == Direction::IntoTarget && singletons.contains(e.member.as_str()))
        .map(|e| e.member.clone())
        .collect();
    if by_knowledge.len() > 1 {
        conflicts.push(KnowledgeConflict {
            column: by_knowledge.join("', '"),
            description: format!(
                "the knowledge makes '{}' all causes of '{y}', but the data show no such \
                 v-structure: these columns are not linked with each other given '{y}', which \
                 independent causes of '{y}' would be",
                by_knowledge.join("', '")
            ),
        });
    } else if let Some(k) = by_knowledge.first() {
        for e in edges.iter_mut() {
            // A member screened off stays open: the knowledge forbids it being an effect, so it
            // is not adjacent at all (a stand-in), or a cause whose link the check could not see.
            if e.direction == Direction::Undecided
                && singletons.contains(e.member.as_str())
                && !screened.contains_key(&e.member)
                && !conflicts.iter().any(|c| c.column == e.member)
            {
                e.direction = Direction::OutOfTarget;
                e.basis = Some(Basis::DataAndKnowledge);
                e.reason = format!(
                    "linked to the target but not to '{k}', which the knowledge makes a cause: \
                     an effect by Meek's first rule"
                );
            }
        }
    }
    // A required edge at the target whose other end the data do not link with it.
    for [from, to] in &knowledge.required {
        let other = match (from == y, to == y) {
            (true, false) => to,
            (false, true) => from,
            _ => continue,
        };
        if !search.markov_boundary.selected.contains(other) {
            conflicts.push(KnowledgeConflict {
                column: other.clone(),
                description: format!(
                    "the edge '{from}' → '{to}' is required, but the data do not select '{other}' \
                     into the Markov boundary of '{y}' (no link beyond chance)"
                ),
            });
        }
    }
    let parents: Vec<String> = edges
        .iter()
        .filter(|e| e.direction == Direction::IntoTarget)
        .map(|e| e.member.clone())
        .collect();
    let undecided: Vec<Vec<String>> = edges
        .iter()
        .filter(|e| e.direction == Direction::Undecided && singletons.contains(e.member.as_str()))
        .map(|e| vec![e.member.clone()])
        .collect();
    let (outcome, parent_sets) = if !conflicts.is_empty() || search.outcome == Outcome::Conflict {
        (Outcome::Conflict, Vec::new())
    } else if search.outcome == Outcome::EmptyBoundary {
        (Outcome::EmptyBoundary, Vec::new())
    } else if !parents.is_empty() {
        (Outcome::Identified, vec![parents.clone()])
    } else {
        (Outcome::NotIdentifiable, undecided)
    };
    let claims: BTreeMap<String, Basis> = match outcome {
        Outcome::Identified => edges
            .iter()
            .filter(|e| e.direction == Direction::IntoTarget)
            .map(|e| (e.member.clone(), e.basis.unwrap_or(Basis::Data)))
            .collect(),
        _ => BTreeMap::new(),
    };
    // Undecided members the knowledge does not rule out as causes.
    let open: Vec<String> = edges
        .iter()
        .filter(|e| e.direction == Direction::Undecided)
        .filter(|e| knowledge.forbids(&e.member, y).is_none())
        .map(|e| e.member.clone())
        .collect();
    let explanation = explain(
        y,
        search,
        (outcome, &parent_sets, &claims),
        &conflicts,
        (&edges, &open),
    );
    WithKnowledge {
        outcome,
        parent_sets,
        edges,
        claims,
        conflicts,
        explanation,
        screening: Vec::new(),
    }
}

fn explain(
    y: &str,
    search: &ParentSearch,
    (outcome, parent_sets, claims): (Outcome, &[Vec<String>], &BTreeMap<String, Basis>),
    conflicts: &[KnowledgeConflict],
    (edges, open): (&[TargetEdge], &[String]),
) -> String {
    match outcome {
        Outcome::Conflict if !conflicts.is_empty() => format!(
            "The data and the stated knowledge disagree about '{y}' ({} conflict{}, listed \
             below); the disagreement is not resolved either way, and no parent is claimed with \
             the knowledge. Check the knowledge (a tier or edge may be wrong) and the data (a link \
             may be a chance finding or come from an unmeasured common cause).",
            conflicts.len(),
            if conflicts.len() == 1 { "" } else { "s" }
        ),
        Outcome::Conflict => {
            "The data alone are in conflict (see above); the knowledge does not change that, and \
             nothing is claimed."
                .to_string()
        }
        Outcome::EmptyBoundary => format!(
            "No column is linked with '{y}' beyond chance, so the knowledge has no edge to orient."
        ),
        Outcome::Identified => {
            let data: Vec<String> = claims
                .iter()
                .filter(|(_, b)| **b == Basis::Data)
                .map(|(c, _)| c.clone())
                .collect();
            let known: Vec<String> = claims
                .iter()
                .filter(|(_, b)| **b == Basis::DataAndKnowledge)
                .map(|(c, _)| c.clone())
                .collect();
            let mut text = format!(
                "With the stated knowledge, the parents of '{y}' are {}.",
                quoted(&parent_sets[0])
            );
            if !data.is_empty() {
                text.push_str(&format!(
                    " {} rest{} on the data alone (a v-structure).",
                    quoted(&data),
                    if data.len() == 1 { "s" } else { "" }
                ));
            }
            if !known.is_empty() {
                text.push_str(&format!(
                    " {} rest{} on the data plus the stated knowledge: the data link {} with \
                     '{y}', and the knowledge gives the direction; if the knowledge is wrong, so \
                     is this claim.",
                    quoted(&known),
                    if known.len() == 1 { "s" } else { "" },
                    if known.len() == 1 { "it" } else { "each" }
                ));
            }
            if !open.is_empty() {
                text.push_str(&format!(
                    " Whether {} {} directly linked with '{y}' is left open by the data; if {} \
                     a direct cause too, this set is incomplete.",
                    quoted(open),
                    if open.len() == 1 { "is" } else { "are" },
                    if open.len() == 1 { "it is" } else { "any is" }
                ));
            }
            text
        }
        Outcome::NotIdentifiable => {
            let effects: Vec<String> = edges
                .iter()
                .filter(|e| e.direction == Direction::OutOfTarget)
                .map(|e| e.member.clone())
                .collect();
            let mut text = if search.outcome == Outcome::NotIdentifiable && effects.is_empty() {
                format!(
                    "The stated knowledge does not orient any edge at '{y}': the parents are still \
                     not identifiable."
                )
            } else {
                format!("With the stated knowledge, no parent of '{y}' is identified.")
            };
            if !effects.is_empty() {
                text.push_str(&format!(
                    " {} {} effects of '{y}', not causes.",
                    quoted(&effects),
                    if effects.len() == 1 { "is" } else { "are" }
                ));
            }
            if !parent_sets.is_empty() {
                let singles: Vec<String> = parent_sets.iter().map(|s| s[0].clone()).collect();
                text.push_str(&format!(
                    " The direction of the link with {} is still open.",
                    quoted(&singles)
                ));
            }
            text
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn knowledge(text: &str) -> Knowledge {
        toml::from_str(text).unwrap()
    }

    #[test]
    fn tiers_forbid_edges_into_earlier_tiers_only() {
        let k = knowledge("tiers = [['a'], ['b', 'c'], ['y']]");
        assert!(k.forbids("y", "b").is_some());
        assert!(k.forbids("b", "a").is_some());
        assert!(k.forbids("b", "y").is_none());
        assert!(k.forbids("b", "c").is_none() && k.forbids("c", "b").is_none());
        assert!(k.forbids("z", "y").is_none(), "a column in no tier is free");
    }

    #[test]
    fn required_edges_forbid_their_reverse() {
        let k = knowledge("required = [['a', 'y']]\nforbidden = [['y', 'b']]");
        assert!(k.forbids("y", "a").is_some());
        assert!(k.forbids("a", "y").is_none());
        assert!(k.forbids("y", "b").is_some());
        assert!(k.requires("a", "y") && !k.requires("y", "a"));
    }

    #[test]
    fn every_inconsistency_of_the_knowledge_is_reported() {
        let k = knowledge(
            "tiers = [['a', 'a'], ['b'], ['a'], []]\n\
             forbidden = [['c', 'c'], ['b', 'd']]\n\
             required = [['b', 'd'], ['b', 'a'], ['d', 'e'], ['e', 'b']]",
        );
        let problems = k.problems();
        let expected = [
            "listed twice in tier 1",
            "'a' is in tier 1 and in tier 3",
            "tier 4 is empty",
            "forbidden edge ['c', 'c'] joins a column to itself",
            "['b', 'd'] is both required and forbidden",
            "required edge ['b', 'a'] runs from tier 2 to the earlier tier 1",
            "cycle: 'b' → 'd' → 'e' → 'b'",
        ];
        for e in expected {
            assert!(problems.iter().any(|p| p.contains(e)), "{e}: {problems:#?}");
        }
        assert_eq!(problems.len(), expected.len(), "{problems:#?}");
        assert!(knowledge("tiers = [['a'], ['b']]").problems().is_empty());
    }

    /// A chain a → b → y (invented, 600 rows) with two unrelated columns: y's boundary is the
    /// lone member b, whose direction the data cannot give.
    fn chain_search() -> (crate::data::Table, ParentSearch) {
        use crate::rng::{standard_normal, Key};
        let mut rng = Key::new("knowledge-chain", 3).finish().stream(0);
        let n = 600;
        let mut columns = vec![Vec::new(); 5];
        for _ in 0..n {
            let a = standard_normal(&mut rng);
            let b = (1.5 * a).sin() + 0.3 * standard_normal(&mut rng);
            let y = b + 0.5 * b * b + 0.3 * standard_normal(&mut rng);
            let (c, d) = (standard_normal(&mut rng), standard_normal(&mut rng));
            for (column, v) in columns.iter_mut().zip([a, b, y, c, d]) {
                column.push(v);
            }
        }
        let names = ["a", "b", "y", "c", "d"].map(String::from).to_vec();
        let table = crate::data::Table::from_columns(names, columns);
        let data = SearchData::new(&table, crate::measure::Scaling::Rank, 1, 0);
        let search = super::super::local_parents(&data, 2, &[0, 1, 3, 4], 0.05, &rule());
        (table, search)
    }

    fn rule() -> SelectionRule {
        SelectionRule {
            stopping_rule: crate::search::StoppingRule::Calibrated,
            alpha: 0.05,
            permutations: 199,
        }
    }

    #[test]
    fn tiers_direct_a_lone_link_that_passes_the_screening_check_and_not_one_screened_off() {
        let (table, search) = chain_search();
        assert_eq!(search.outcome, Outcome::NotIdentifiable);
        assert_eq!(search.parent_sets, [["b"]]);
        let tiers = knowledge("tiers = [['a'], ['b'], ['y']]");
        let data = SearchData::new(&table, crate::measure::Scaling::Rank, 1, 0);
        let read = read(&data, &search, &tiers, &rule());
        assert_eq!(read.outcome, Outcome::Identified);
        assert_eq!(read.claims["b"], Basis::DataAndKnowledge);
        // b's own boundary holds a, outside MB(y): the check asks T_n(y, b | a), which a direct
        // cause passes.
        assert_eq!(read.screening.len(), 1, "{:?}", read.screening);
        assert_eq!(read.screening[0].by, "a");
        assert!(!read.screening[0].screened_off);
        // Had a screened b off, b would stand for a missed cause and not be claimed.
        let screened = BTreeMap::from([("b".to_string(), "a".to_string())]);
        let withdrawn = apply_screened(&search, &tiers, &screened);
        assert_eq!(withdrawn.outcome, Outcome::NotIdentifiable);
        assert!(withdrawn.claims.is_empty());
        assert_eq!(withdrawn.edges[0].direction, Direction::Undecided);
        assert!(withdrawn.edges[0].reason.contains("'a' screens it off"));
    }

    #[test]
    fn unknown_keys_in_the_knowledge_table_are_refused() {
        assert!(toml::from_str::<Knowledge>("tier = [['a']]").is_err());
    }
}
