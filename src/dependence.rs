//! The conditional dependence coefficient T_n(response, on | given) of one data file and the
//! p-value of the permutation test the calibrated selection uses (`measure::permutation`): the
//! response permuted over all rows without conditioning columns, locally within blocks of nearby
//! rows of them otherwise; every draw is made, so p = (G + 1)/(N + 1) with G of N draws at or above
//! T_n. `forebear dependence` prints the [`DependenceReport`] this returns.

use crate::data::checks::rounding_note;
use crate::data::{DataReader, LoadOptions};
use crate::error::{Error, Result};
use crate::measure::permutation::{
    max_statistic_test, NullScheme, Observed, PermutationTest, TestPlan,
};
use crate::measure::{Ratio, Scaling, TargetRanks};
use crate::search::rule::{DEFAULT_SELECTION_ALPHA, MAX_PERMUTATIONS};
use crate::search::SearchData;
use serde::Serialize;
use std::path::PathBuf;

/// What to measure, and on which file.
#[derive(Clone, Debug)]
pub struct DependenceRequest {
    /// The data file.
    pub data: PathBuf,
    /// How the file is read.
    pub options: LoadOptions,
    /// The response column Y.
    pub response: String,
    /// The columns Z whose information about Y is measured.
    pub on: Vec<String>,
    /// The conditioning columns X (none for the unconditional coefficient).
    pub given: Vec<String>,
    /// Seed of the nearest-neighbour tie-breaks and of the permutations.
    pub seed: u64,
    /// Permutations of the response for the p-value (all are made).
    pub permutations: u32,
    /// Predictor scaling.
    pub scaling: Scaling,
}

/// T_n, its parts and its permutation test. The fields are declared in the alphabetical order in
/// which the JSON output of `forebear dependence` has always listed them, so the bytes stay the
/// same.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, PartialEq)]
pub struct DependenceReport {
    /// Σ of the denominator terms of T_n; zero when the response is a function of `given`.
    pub denominator: i128,
    /// Draws whose statistic reached T_n (`None` when T_n is undefined).
    pub exceedances: Option<u32>,
    /// The conditioning columns X.
    pub given: Vec<String>,
    /// Σ of the numerator terms of T_n.
    pub numerator: i128,
    /// The columns Z.
    pub on: Vec<String>,
    /// The Monte Carlo p-value (`None` when T_n is undefined).
    pub p_value: Option<f64>,
    /// Null draws made (`None` when T_n is undefined).
    pub permutations: Option<u32>,
    /// The response column Y.
    pub response: String,
    /// Whether the response is (empirically) a function of `given`, so T_n is undefined.
    pub response_is_function_of_given: bool,
    /// Rows used after missing values were handled.
    pub rows_used: usize,
    /// Predictor scaling, by name.
    pub scaling: &'static str,
    /// How the null draws were made (`None` when T_n is undefined).
    pub scheme: Option<NullScheme>,
    /// Seed of the tie-breaks and the permutations.
    pub seed: u64,
    /// T_n = numerator / denominator (`None` when the denominator is zero).
    pub t_n: Option<f64>,
}

impl DependenceReport {
    /// The permutation test's result, when T_n is defined.
    pub fn test(&self) -> Option<(f64, u32, u32, NullScheme)> {
        Some((
            self.p_value?,
            self.exceedances?,
            self.permutations?,
            self.scheme?,
        ))
    }
}

/// Refuses a number of permutations outside 1 to [`MAX_PERMUTATIONS`]. [`measure_dependence`]
/// checks it first; a caller may check it earlier, before other settings are read, so that this
/// is the error reported when several settings are wrong.
pub fn check_permutations(permutations: u32) -> Result<()> {
    if (1..=MAX_PERMUTATIONS).contains(&permutations) {
        Ok(())
    } else {
        Err(Error::input(format!(
            "--permutations {permutations} is not a number of draws: give one from 1 to \
             {MAX_PERMUTATIONS}"
        )))
    }
}

/// Reads the file once, checks the named columns against its header before the rows are read, and
/// measures T_n(response, on | given) with its permutation test.
pub fn measure_dependence(request: &DependenceRequest) -> Result<DependenceReport> {
    check_permutations(request.permutations)?;
    let options = &request.options;
    let reader = DataReader::open(&request.data, options)?;
    let header = reader.header();
    let response = header.require_column(&request.response, "response")?;
    let (on, given) = (&request.on, &request.given);
    if on.is_empty() {
        return Err(Error::input(
            "--on names no column; give at least one, as in --on x1,x2",
        ));
    }
    let mut used = vec![response];
    for (names, role) in [(on, "--on"), (given, "--given")] {
        for name in names {
            let j = header.require_column(name, role)?;
            if used.contains(&j) {
                return Err(Error::input(format!(
                    "column '{name}' is named twice among --response, --on and --given; each column may \
                     appear once"
                )));
            }
            used.push(j);
        }
    }
    let (raw, facts) = reader.read_rows()?;
    let (table, report) = raw.prepare(&used, response, Vec::new(), facts, options)?;
    if let Some((c, original)) = report.duplicate_columns.iter().next() {
        return Err(Error::input(format!(
            "{}, column '{c}': the column repeats '{original}' exactly on the rows used; name only \
             one of them",
            report.file
        )));
    }
    if let Some(c) = report.constant_columns.first() {
        let rounding = report
            .constant_by_rounding
            .get(c)
            .map_or(String::new(), |texts| {
                format!(" ({})", rounding_note(texts))
            });
        return Err(Error::input(format!(
            "{}, column '{c}': the column is constant on the rows used{rounding}, so it carries no \
             information; leave it out",
            report.file
        )));
    }
    let data = SearchData::new(&table, request.scaling, request.seed, 0);
    let idx = |name: &String| {
        table
            .index_of(name)
            .expect("prepared table keeps every used column")
    };
    let y = idx(&request.response);
    let z: Vec<usize> = on.iter().map(idx).collect();
    let x: Vec<usize> = given.iter().map(idx).collect();
    let (ratio, test) = statistic_and_test(&data, y, &z, &x, request.permutations);
    Ok(DependenceReport {
        denominator: ratio.denominator,
        exceedances: test.as_ref().map(|t| t.exceedances),
        given: given.clone(),
        numerator: ratio.numerator,
        on: on.clone(),
        p_value: test.as_ref().map(|t| t.p_value),
        permutations: test.as_ref().map(|t| t.permutations),
        response: request.response.clone(),
        response_is_function_of_given: ratio.denominator == 0,
        rows_used: report.rows_used,
        scaling: request.scaling.name(),
        scheme: test.as_ref().map(|t| t.scheme),
        seed: request.seed,
        t_n: ratio.value(),
    })
}

/// T_n(y, z | x) and, when it is defined, its permutation test with `permutations` draws.
fn statistic_and_test(
    data: &SearchData,
    y: usize,
    z: &[usize],
    x: &[usize],
    permutations: u32,
) -> (Ratio, Option<PermutationTest>) {
    let xz: Vec<usize> = x.iter().chain(z).copied().collect();
    // The neighbours and keys of `conditional_dependence`, kept for the permutation test.
    let ranks = TargetRanks::new(data.raw(y));
    let of_x = (!x.is_empty()).then(|| data.neighbourhood(x));
    let conditioning = of_x
        .as_ref()
        .map(|hood| hood.choose(&data.neighbour_key(y, x)));
    let joint = data.neighbours(y, &xz);
    let ratio = Ratio {
        numerator: ranks.numerator(conditioning.as_deref(), &joint),
        denominator: ranks.denominator(conditioning.as_deref()),
    };
    // One "candidate", the joint space of X and Z; every draw is made (exhaustive), so the level
    // only sets the critical value, which is not reported.
    let test = (ratio.denominator != 0).then(|| {
        let observed = Observed {
            ranks: &ranks,
            conditioning: conditioning.as_deref(),
            joints: vec![&joint],
            numerator: ratio.numerator,
            denominator: ratio.denominator,
        };
        let blocks = of_x.map(|hood| data.permutation_blocks_of(hood));
        let plan = TestPlan {
            max_permutations: permutations,
            alpha: DEFAULT_SELECTION_ALPHA,
            exhaustive: true,
        };
        max_statistic_test(
            &observed,
            blocks.as_ref(),
            &data.permutation_key("dependence", y, x, None),
            &plan,
        )
    });
    (ratio, test)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_json_lists_the_fields_in_alphabetical_order_as_it_always_has() {
        let report = DependenceReport {
            denominator: 4,
            exceedances: Some(1),
            given: vec!["x".into()],
            numerator: 1,
            on: vec!["z".into()],
            p_value: Some(0.5),
            permutations: Some(3),
            response: "y".into(),
            response_is_function_of_given: false,
            rows_used: 10,
            scaling: Scaling::Rank.name(),
            scheme: Some(NullScheme::LocalPermutation),
            seed: 1,
            t_n: Some(0.25),
        };
        let text = serde_json::to_string(&report).unwrap();
        // Through a `serde_json::Value` (whose maps are sorted) the text must not change.
        let sorted = serde_json::to_string(&serde_json::to_value(&report).unwrap()).unwrap();
        assert_eq!(text, sorted);
        assert_eq!(
            report.test(),
            Some((0.5, 1, 3, NullScheme::LocalPermutation))
        );
    }
}
