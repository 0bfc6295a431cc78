//! The catalogue of reference cases, a selection of it, and running one case.

use super::check::{Comparison, Measured};
use super::record::CaseResult;
use super::Case;
use crate::error::{Error, Result};
use std::panic::{catch_unwind, AssertUnwindSafe};
use std::time::Instant;

/// Every reference case, in the order of the record.
pub fn catalogue() -> Vec<Case> {
    let mut cases = super::closed_forms::cases();
    cases.extend(super::scipy::cases());
    cases.extend(super::neighbours::cases());
    cases.extend(super::structures::cases());
    cases.extend(super::determinism::cases());
    cases
}

/// The cases named by `ids` in catalogue order, or every case when `ids` is empty; an unknown id
/// is refused (exit code 2) with the ids that resemble it.
pub fn select(ids: &[String]) -> Result<Vec<Case>> {
    let all = catalogue();
    if ids.is_empty() {
        return Ok(all);
    }
    let known: Vec<String> = all.iter().map(|c| c.id.clone()).collect();
    let unknown: Vec<&String> = ids.iter().filter(|id| !known.contains(id)).collect();
    if let Some(first) = unknown.first() {
        let near = crate::data::load::closest_names(first, &known);
        let hint = if near.is_empty() {
            "'forebear qualify --list' prints every case id".to_string()
        } else {
            format!("did you mean {}?", near.join(", "))
        };
        return Err(Error::input(format!(
            "--case '{first}' is not a reference case; {hint}"
        )));
    }
    Ok(all.into_iter().filter(|c| ids.contains(&c.id)).collect())
}

/// Runs one case. A case that stops with a panic (a bug) is recorded as failed with the reason,
/// so one broken case cannot hide the others' results.
pub fn run_case(case: &Case) -> CaseResult {
    let started = Instant::now();
    let measured = catch_unwind(AssertUnwindSafe(|| case.measure())).unwrap_or_else(|payload| {
        let reason = payload
            .downcast_ref::<&str>()
            .map(|s| s.to_string())
            .or_else(|| payload.downcast_ref::<String>().cloned())
            .unwrap_or_else(|| "unknown reason".into());
        vec![Measured::new(
            "the case ran to its end",
            Comparison::Exact {
                expected: "yes".into(),
                observed: format!("no: it stopped ({reason})"),
            },
        )]
    });
    CaseResult::new(case, measured, started.elapsed().as_secs_f64())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::qualify::Group;

    #[test]
    fn a_case_that_stops_is_recorded_as_failed_with_the_reason() {
        let case = Case::new("stops", Group::SciPy, "a check", "a source", || {
            panic!("fixture missing")
        });
        let result = run_case(&case);
        assert!(!result.passed);
        assert!(
            result.measured[0]
                .comparison
                .observed_text()
                .contains("fixture missing"),
            "{result:?}"
        );
    }

    #[test]
    fn ids_are_unique_and_a_selection_keeps_catalogue_order() {
        let ids: Vec<String> = catalogue().into_iter().map(|c| c.id).collect();
        let mut unique = ids.clone();
        unique.sort();
        unique.dedup();
        assert_eq!(unique.len(), ids.len(), "{ids:?}");
        let chosen = select(&[ids[3].clone(), ids[1].clone()]).unwrap();
        let chosen: Vec<&str> = chosen.iter().map(|c| c.id.as_str()).collect();
        assert_eq!(chosen, [ids[1].as_str(), ids[3].as_str()]);
        let error = select(&["no-such-case".into()]).err().unwrap();
        assert_eq!(error.exit_code(), 2);
    }
}
