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
            "`forebear qualify --list` prints every case id".to_string()
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
