//! T_n against values the project did not write: closed forms and theorems from the literature.
//! The cases are defined once, in `src/qualify/closed_forms.rs`, where each names its source;
//! `forebear qualify` runs the same cases and records them. Each test here runs one of them.

use crate::common::assert_reference_cases_pass;

#[test]
fn bivariate_normal_estimate_is_within_four_standard_errors_of_the_closed_form() {
    // check-values.md: T = (3/π)·arcsin((1 + ρ²)/2) − 1/2 for ρ = 0.3, 0.5, 0.8, 0.95.
    assert_eq!(assert_reference_cases_pass("t-n.bivariate-normal."), 4);
}

#[test]
fn noiseless_function_gives_t_n_near_one() {
    assert_reference_cases_pass("t-n.noiseless-function");
}

#[test]
fn independent_columns_give_t_n_near_zero() {
    assert_reference_cases_pass("t-n.independent");
}

#[test]
fn conditional_independence_gives_t_n_near_zero() {
    assert_reference_cases_pass("t-n.conditional-independence");
}

#[test]
fn modular_sum_is_invisible_to_each_part_yet_determined_by_all() {
    assert_reference_cases_pass("t-n.modular-sum");
}

#[test]
fn t_n_is_invariant_under_monotone_transforms_of_y() {
    assert_reference_cases_pass("t-n.monotone-invariance");
}
