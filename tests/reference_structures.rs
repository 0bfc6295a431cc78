//! The local parent search on data drawn from published Bayesian-network structures, read from the
//! committed copies in `tests/data/` (origin, generator commands and trimming: `tests/data/PROVENANCE.md`).
//! Each check names its source: the parent lists are those of the published networks
//! (ALARM: Beinlich, Suermondt, Chavez and Cooper 1989; ASIA: Lauritzen and Spiegelhalter 1988).
//! The guarantee being exercised is that of Azadkia, Taeb and Bühlmann (arXiv:2111.14969): exact
//! recovery of a v-structure at a target whose neighbourhood contains no undirected cycle, and no
//! false parent claim otherwise. The nodes were picked because the method works for them at n = 5000
//! (see docs/recovery.md for the full runs over every node, including the ones where it does not).
//!
//! The ALARM files keep 13 of its 37 columns: HR and its Markov blanket, HRBP, and the ancestral set
//! {HISTORY, LVFAILURE, HYPOVOLEMIA, LVEDVOLUME, STROKEVOLUME}. The dropped columns are either
//! non-ancestors of the kept ones or ancestors whose only path into the kept set runs through
//! CATECHOL, so the kept columns follow the published graph restricted to them, with CATECHOL as
//! one more root.

use crate::common::assert_reference_cases_pass;
use forebear::data::{read_csv, LoadOptions, Table};
use forebear::measure::Scaling;
use forebear::search::{local_parents, Outcome, ParentSearch, SearchData, SelectionRule};
use std::collections::BTreeSet;
use std::path::Path;

/// Reads a committed copy with the crate's CSV reader (every cell is present in these files).
fn table(file: &str) -> Table {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data")
        .join(file);
    let raw = read_csv(&path, &LoadOptions::default()).unwrap_or_else(|e| panic!("{file}: {e}"));
    let columns = (0..raw.names.len())
        .map(|j| {
            raw.column_cells(j)
                .map(|v| v.expect("no missing cells"))
                .collect()
        })
        .collect();
    Table::from_columns(raw.names.clone(), columns)
}

/// The local parent search with the defaults of `forebear analyze` (rank scaling, seed 1,
/// α = 0.05), every other column a candidate.
fn analyze(file: &str, target: &str) -> ParentSearch {
    analyze_with(file, target, &SelectionRule::calibrated())
}

fn analyze_with(file: &str, target: &str, rule: &SelectionRule) -> ParentSearch {
    let table = table(file);
    let data = SearchData::new(&table, Scaling::Rank, 1, 0);
    let t = table.index_of(target).expect("target column");
    let candidates: Vec<usize> = (0..table.n_cols()).filter(|&j| j != t).collect();
    local_parents(&data, t, &candidates, 0.05, rule)
}

fn set(names: &[&str]) -> BTreeSet<String> {
    names.iter().map(|s| s.to_string()).collect()
}

fn claimed(finding: &ParentSearch) -> BTreeSet<String> {
    assert_eq!(finding.parent_sets.len(), 1, "one identified set");
    finding.parent_sets[0].iter().cloned().collect()
}

fn candidates(finding: &ParentSearch) -> BTreeSet<String> {
    finding.parent_sets.iter().flatten().cloned().collect()
}

#[test]
fn alarm_hrbp_two_parents_tree_neighbourhood_is_identified_exactly() {
    // ALARM (Beinlich et al. 1989): HRBP ← ERRLOWOUTPUT, HRBP ← HR; HRBP has no children and
    // ERRLOWOUTPUT no other neighbour, so no undirected cycle passes through HRBP: the tree case
    // with a v-structure at the target, the one case where the parents are identifiable. Chosen as
    // the only ALARM node with a tree neighbourhood and two or more parents. Discrete samples: on
    // the full 37 columns it is identified exactly too (docs/recovery.md); on the nonlinear samples
    // at n = 5000 it is not (HR's own boundary misses HRBP), so the discrete copy is used. Defined
    // once in src/qualify/structures.rs, which `forebear qualify` runs.
    assert_reference_cases_pass("structure.alarm.hrbp");
}

#[test]
fn alarm_history_single_parent_is_not_identifiable_with_lvfailure_a_candidate() {
    // ALARM (Beinlich et al. 1989): HISTORY ← LVFAILURE, and HISTORY has no children. With one
    // parent there is no v-structure at the target, so an edge into HISTORY looks the same as one
    // out of it (Markov equivalence): the correct answer is "not identifiable", with the parent
    // among the singleton candidates. Tree neighbourhood (HISTORY is a leaf).
    let found = analyze("alarm_nonlinear_hr_lv.csv", "HISTORY");
    assert_eq!(
        found.outcome,
        Outcome::NotIdentifiable,
        "{}",
        found.explanation
    );
    assert!(
        candidates(&found).contains("LVFAILURE"),
        "LVFAILURE missing from the candidates {:?}",
        found.parent_sets
    );
}

#[test]
fn alarm_hrekg_and_hrsat_off_the_tree_claim_no_non_parent() {
    // ALARM (Beinlich et al. 1989): HREKG ← ERRCAUTER, HR and HRSAT ← ERRCAUTER, HR. The skeleton
    // holds the cycle HREKG — HR — HRSAT — ERRCAUTER — HREKG, so neither has a tree neighbourhood
    // and only the conservative guarantee applies: a claimed set contains no non-parent. Under the
    // natural rule both are identified exactly at n = 5000 on the nonlinear samples (full 37
    // columns too, docs/recovery.md), so the check is not vacuous; they were chosen for that
    // reason. Under the calibrated rule each direction of the pairwise independence tests is
    // judged at α on its own (no multiplicity correction, which would make a claim easier), and
    // ERRCAUTER and HR, independent in the published graph, show p = 0.028 and 0.015 in two of the
    // four directions on this sample: nothing is claimed, which is allowed; a wrong claim is not.
    let parents = set(&["ERRCAUTER", "HR"]);
    for target in ["HREKG", "HRSAT"] {
        for rule in [SelectionRule::natural(), SelectionRule::calibrated()] {
            let found = analyze_with("alarm_nonlinear_hr_lv.csv", target, &rule);
            let name = rule.stopping_rule.name();
            if rule.is_calibrated() {
                assert_ne!(found.outcome, Outcome::Conflict, "{target}, {name}");
                if found.outcome != Outcome::Identified {
                    continue;
                }
            } else {
                assert_eq!(
                    found.outcome,
                    Outcome::Identified,
                    "{target}, {name}: {}",
                    found.explanation
                );
            }
            let claim = claimed(&found);
            let non_parents: Vec<&String> = claim.difference(&parents).collect();
            assert!(
                non_parents.is_empty(),
                "{target}, {name}: claimed non-parents {non_parents:?}"
            );
            if !rule.is_calibrated() {
                assert_eq!(claim, parents, "{target}, {name}");
            }
        }
    }
}

#[test]
fn asia_either_is_identified_from_heavily_tied_binary_data() {
    // ASIA (Lauritzen and Spiegelhalter 1988): "either" (tuberculosis or lung cancer) ← tub, lung,
    // a logical OR of its two parents. Every column is binary, so nearly every row has hundreds of
    // exact duplicates and the nearest-neighbour choices are decided by the keyed tie-breaks. The
    // cycle either — lung — smoke — bronc — dysp — either means no tree neighbourhood; the
    // v-structure tub → either ← lung is still recovered exactly on the full file, and "either"
    // is the only ASIA node with two parents that is. Defined once in src/qualify/structures.rs.
    assert_reference_cases_pass("structure.asia.either");
}
