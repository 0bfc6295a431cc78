//! Validated study settings. A [`Study`] is built only by [`Study::new`], which checks every value
//! against the data's header; search code takes it as given and never re-validates.

use crate::data::checks::{require_rows, MIN_ROWS_PER_SAMPLE};
use crate::data::load::RawTable;
use crate::data::DataReport;
use crate::error::{Error, Result};
use crate::measure::Scaling;
use crate::resample::{PlanKind, ResamplePlan};
use crate::search::SelectionRule;
use serde::{Deserialize, Serialize};

/// Settings as the user gave them (flags now, a TOML file later).
#[derive(Clone, Debug)]
pub struct StudyInput {
    /// Target column name.
    pub target: String,
    /// Columns never to consider (neither as candidates nor in members' boundaries).
    pub exclude: Vec<String>,
    /// When given, the only columns considered besides the target; every other column is left
    /// out as if excluded.
    pub candidates: Option<Vec<String>>,
    /// Study seed for every keyed random draw.
    pub seed: u64,
    /// Predictor scaling.
    pub scaling: Scaling,
    /// Level of the pairwise independence tests.
    pub alpha: f64,
    /// Number of resampling replicates (0: none).
    pub replicates: u32,
    /// How replicates draw their rows.
    pub resample: PlanKind,
    /// Share of rows per replicate (`subsample` only).
    pub fraction: Option<f64>,
    /// π_thr: the frequency at which a finding counts as stable.
    pub stability_threshold: f64,
    /// How forward selections decide (stopping rule, selection level, permutations).
    pub selection: SelectionRule,
}

impl StudyInput {
    /// The command line's defaults for one target: seed 1, rank scaling, α = 0.05, 100
    /// complementary-pairs replicates, π_thr = 0.6.
    pub fn for_target(target: &str) -> StudyInput {
        StudyInput {
            target: target.to_string(),
            exclude: Vec::new(),
            candidates: None,
            seed: 1,
            scaling: Scaling::Rank,
            alpha: 0.05,
            replicates: 100,
            resample: PlanKind::ComplementaryPairs,
            fraction: None,
            stability_threshold: 0.6,
            selection: SelectionRule::calibrated(),
        }
    }

    /// The input that gives `study` again: with the same data, `Study::new` and
    /// [`Study::on_data`] on it return a study equal to `study`.
    pub fn replaying(study: &Study) -> StudyInput {
        let plan = &study.resampling;
        StudyInput {
            target: study.target.clone(),
            exclude: study.excluded.clone(),
            candidates: study.candidates_named.clone(),
            seed: study.seed,
            scaling: study.scaling,
            alpha: study.alpha,
            replicates: plan.count,
            resample: plan.kind,
            fraction: (plan.kind == PlanKind::Subsample).then_some(plan.fraction),
            stability_threshold: study.stability_threshold,
            selection: study.selection,
        }
    }
}

/// The validated settings, in the canonical form that is hashed and recorded.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
pub struct Study {
    /// Target column.
    pub target: String,
    /// Candidate columns for MB(target), in file order.
    pub candidates: Vec<String>,
    /// Columns excluded by the user.
    pub excluded: Vec<String>,
    /// The columns named by `--candidates`, as given (absent: every column not excluded).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub candidates_named: Option<Vec<String>>,
    /// Study seed.
    pub seed: u64,
    /// Predictor scaling.
    pub scaling: Scaling,
    /// Level of the pairwise independence tests.
    pub alpha: f64,
    /// The resampling plan (count 0: no resampling).
    pub resampling: ResamplePlan,
    /// π_thr for the `stable` flags.
    pub stability_threshold: f64,
    /// How forward selections decide. Results of method versions before `forebear-method/3` used
    /// the natural stopping rule, which is what they read as.
    #[serde(default = "SelectionRule::natural")]
    pub selection: SelectionRule,
}

impl Study {
    /// Checks `input` against the header of `raw`. Returns the study and the positions (in `raw`)
    /// of the used columns and of the target.
    pub fn new(input: &StudyInput, raw: &RawTable) -> Result<(Study, Vec<usize>, usize)> {
        let target = raw.require_column(&input.target, "target")?;
        let mut excluded_positions = Vec::new();
        for name in &input.exclude {
            let j = raw.require_column(name, "excluded")?;
            if j == target {
                return Err(Error::input(format!(
                    "the target '{name}' cannot also be excluded; remove it from --exclude"
                )));
            }
            excluded_positions.push(j);
        }
        if !(input.alpha > 0.0 && input.alpha < 1.0) {
            return Err(Error::input(format!(
                "--alpha {} is not a level: it must lie strictly between 0 and 1",
                input.alpha
            )));
        }
        if !(input.stability_threshold > 0.5 && input.stability_threshold <= 1.0) {
            return Err(Error::input(format!(
                "--stability-threshold {} is outside (0.5, 1]: the error bound of Meinshausen and \
                 Bühlmann (2010) needs a threshold above one half",
                input.stability_threshold
            )));
        }
        if let Some(problem) = input.selection.problems().into_iter().next() {
            return Err(Error::input(problem));
        }
        let resampling =
            ResamplePlan::new(input.resample, input.replicates, input.fraction, input.seed)?;
        let named = match &input.candidates {
            None => None,
            Some(names) => Some(named_candidates(names, &input.exclude, target, raw)?),
        };
        let used: Vec<usize> = (0..raw.names.len())
            .filter(|j| !excluded_positions.contains(j))
            .filter(|&j| j == target || named.as_ref().is_none_or(|n| n.contains(&j)))
            .collect();
        if used.len() < 3 {
            let have: Vec<String> = used
                .iter()
                .filter(|&&j| j != target)
                .map(|&j| format!("'{}'", raw.names[j]))
                .collect();
            return Err(Error::input(format!(
                "{}: {} candidate column(s) remain besides the target '{}'{}, but the search needs \
                 at least 2 ({CANDIDATES_REASON}); {}",
                raw.file,
                have.len(),
                input.target,
                if have.is_empty() { String::new() } else { format!(" ({})", have.join(", ")) },
                if input.candidates.is_some() {
                    "name more columns with --candidates"
                } else {
                    "exclude fewer columns or add candidate columns to the file"
                }
            )));
        }
        let study = Study {
            target: input.target.clone(),
            candidates: used
                .iter()
                .filter(|&&j| j != target)
                .map(|&j| raw.names[j].clone())
                .collect(),
            excluded: excluded_positions
                .iter()
                .map(|&j| raw.names[j].clone())
                .collect(),
            candidates_named: input.candidates.clone(),
            seed: input.seed,
            scaling: input.scaling,
            alpha: input.alpha,
            resampling,
            stability_threshold: input.stability_threshold,
            selection: input.selection,
        };
        Ok((study, used, target))
    }

    /// Drops the candidates that the data step left out (constant, or repeating another column)
    /// and checks that enough candidates and rows remain for the search.
    pub fn on_data(mut self, report: &DataReport) -> Result<Study> {
        let dropped = |c: &String| {
            report.constant_columns.contains(c) || report.duplicate_columns.contains_key(c)
        };
        let left_out: Vec<String> = self
            .candidates
            .iter()
            .filter(|c| dropped(c))
            .map(|c| match report.duplicate_columns.get(c) {
                Some(original) => format!("'{c}' repeats '{original}'"),
                None => format!("'{c}' is constant"),
            })
            .collect();
        self.candidates.retain(|c| !dropped(c));
        if self.candidates.len() < 2 {
            return Err(Error::input(format!(
                "{}: only {} usable candidate column(s) remain besides the target '{}' ({}), but \
                 the search needs at least 2 ({CANDIDATES_REASON}); add candidate columns that vary",
                report.file,
                self.candidates.len(),
                self.target,
                left_out.join(", ")
            )));
        }
        let (needed, why) = self.rows_needed();
        require_rows(report, needed, &why)?;
        Ok(self)
    }

    /// The fewest rows the full data may have for every sample of this study to be searchable,
    /// and why.
    pub fn rows_needed(&self) -> (usize, String) {
        let m = SEARCH_MIN_ROWS.max(MIN_ROWS_PER_SAMPLE);
        let plan = &self.resampling;
        if plan.count == 0 {
            return (m, SEARCH_MIN_ROWS_REASON.to_string());
        }
        match plan.kind {
            PlanKind::ComplementaryPairs => (
                2 * m,
                format!(
                    "each complementary-pairs replicate uses half of the rows, and {SEARCH_MIN_ROWS_REASON}"
                ),
            ),
            PlanKind::Subsample => {
                let mut n = (m as f64 / plan.fraction).ceil() as usize;
                while ((plan.fraction * n as f64).floor() as usize) < m {
                    n += 1;
                }
                (
                    n,
                    format!(
                        "each subsample replicate uses ⌊{} × n⌋ rows, and {SEARCH_MIN_ROWS_REASON}",
                        plan.fraction
                    ),
                )
            }
            PlanKind::Bootstrap => (
                BOOTSTRAP_MIN_ROWS,
                format!(
                    "a bootstrap replicate draws n rows with replacement, and its rows' neighbours \
                     must be other original rows, which fewer than {BOOTSTRAP_MIN_ROWS} rows leave \
                     to chance"
                ),
            ),
        }
    }
}

/// Fewest rows per sample (the full data, and each resampling replicate) the search accepts. A
/// floor of our own, not from a source: with y = x exactly, the exact permutation p-value of T_n
/// is 0.5 with 4 rows, 0.2 with 5, 0.078 with 6 and 0.024 with 7 (enumerated in
/// `measure::permutation`'s tests), so below 7 rows a selection test cannot reject at 0.05 even
/// for a perfect link, and a few rows more leave it almost no power against any real one.
pub const SEARCH_MIN_ROWS: usize = 20;

/// Why a sample needs [`SEARCH_MIN_ROWS`] rows, for messages.
const SEARCH_MIN_ROWS_REASON: &str = "the search needs at least 20 rows per sample: each \
     selection step tests its best column against permutations of the rows, and with 6 rows or \
     fewer not even a perfect link can reach significance at level 0.05";

/// Why the search needs two candidates.
const CANDIDATES_REASON: &str = "parents are recognised as two or more members of the target's \
     Markov boundary that are independent of each other";

/// Rows a bootstrap study needs: with n rows, a replicate draws a single distinct row with
/// probability n^(1 − n), about 5·10⁻²⁵ at 20 rows.
const BOOTSTRAP_MIN_ROWS: usize = 20;

/// Positions of the columns named by `--candidates`, checked against the header, the target and
/// `--exclude`.
fn named_candidates(
    names: &[String],
    exclude: &[String],
    target: usize,
    raw: &RawTable,
) -> Result<Vec<usize>> {
    if names.is_empty() {
        return Err(Error::input(
            "--candidates names no column; give at least two, as in --candidates x1,x2",
        ));
    }
    let mut positions = Vec::new();
    for name in names {
        let j = raw.require_column(name, "candidate")?;
        if j == target {
            return Err(Error::input(format!(
                "the target '{name}' cannot also be a candidate; remove it from --candidates"
            )));
        }
        if exclude.contains(name) {
            return Err(Error::input(format!(
                "column '{name}' is named by both --candidates and --exclude; name it in one of them"
            )));
        }
        positions.push(j);
    }
    Ok(positions)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::checks::FileFacts;
    use crate::data::{LoadOptions, MissingPolicy};

    /// Six columns over 40 rows: y, three varying candidates, a constant one and a copy of x1.
    fn raw() -> RawTable {
        let names = ["x1", "k", "x2", "y", "x1_copy", "z"];
        let x1: Vec<f64> = (0..40).map(|r| f64::from(r * 7 % 40)).collect();
        let x2: Vec<f64> = (0..40).map(|r| f64::from(r * 11 % 40)).collect();
        let y: Vec<f64> = (0..40).map(|r| x1[r] + x2[r]).collect();
        let z: Vec<f64> = (0..40).map(|r| f64::from(r * 13 % 17)).collect();
        let columns = [x1.clone(), vec![5.0; 40], x2, y, x1, z];
        RawTable::from_cells(
            "study.csv",
            names.iter().map(|s| s.to_string()).collect(),
            columns
                .iter()
                .map(|c| c.iter().map(|&v| Some(v)).collect())
                .collect(),
        )
    }

    fn run(input: &StudyInput, options: &LoadOptions) -> (Study, DataReport) {
        let raw = raw();
        let (study, used, target) = Study::new(input, &raw).unwrap();
        let left_out = (0..raw.names.len())
            .filter(|j| !used.contains(j))
            .map(|j| raw.names[j].clone())
            .collect();
        let (_, report) = raw
            .prepare(&used, target, left_out, FileFacts::default(), options)
            .unwrap();
        (study.on_data(&report).unwrap(), report)
    }

    #[test]
    fn replaying_a_study_and_its_reader_options_gives_the_same_study_and_report() {
        let mut input = StudyInput::for_target("y");
        input.candidates = Some(vec!["z".into(), "x1".into(), "k".into(), "x1_copy".into()]);
        input.exclude = vec!["x2".into()];
        input.seed = 9;
        input.scaling = Scaling::Standardize;
        input.resample = PlanKind::Subsample;
        input.fraction = Some(0.7);
        input.replicates = 12;
        let options = LoadOptions {
            delimiter: b';',
            decimal_comma: true,
            missing_policy: MissingPolicy::Error,
            ..LoadOptions::from_token_list("-1,NA")
        };
        let (study, report) = run(&input, &options);
        assert_eq!(study.candidates, ["x1", "z"], "file order, usable only");
        assert_eq!(report.constant_columns, ["k"]);
        assert_eq!(report.duplicate_columns["x1_copy"], "x1");
        assert_eq!(report.excluded_columns, ["x2"]);

        let replayed_options = LoadOptions::from_report(&report);
        assert_eq!(replayed_options, options);
        let (again, again_report) = run(&StudyInput::replaying(&study), &replayed_options);
        assert_eq!(again, study);
        assert_eq!(again_report, report);

        // Through the JSON of result.json too.
        let study_json: Study =
            serde_json::from_str(&serde_json::to_string(&study).unwrap()).unwrap();
        let report_json: DataReport =
            serde_json::from_str(&serde_json::to_string(&report).unwrap()).unwrap();
        assert_eq!(
            run(
                &StudyInput::replaying(&study_json),
                &LoadOptions::from_report(&report_json)
            ),
            (study, report)
        );
    }

    #[test]
    fn replaying_a_default_study_keeps_the_defaults() {
        let (study, report) = run(&StudyInput::for_target("y"), &LoadOptions::default());
        assert_eq!(study.candidates_named, None);
        assert!(!serde_json::to_string(&study)
            .unwrap()
            .contains("candidates_named"));
        let input = StudyInput::replaying(&study);
        assert_eq!(input.fraction, None);
        assert_eq!(run(&input, &LoadOptions::from_report(&report)).0, study);
        assert_eq!(LoadOptions::from_report(&report), LoadOptions::default());
    }

    #[test]
    fn reports_of_older_results_read_with_default_reader_options() {
        let old = r#"{"file":"a.csv","size_bytes":1,"sha256":"00","rows_read":3,"rows_used":3,
            "rows_dropped":0,"missing_by_column":{},"constant_columns":[],"excluded_columns":[],
            "missing_tokens":["","NA","NaN","null"]}"#;
        let report: DataReport = serde_json::from_str(old).unwrap();
        let options = LoadOptions::from_report(&report);
        assert_eq!(options.delimiter, b',');
        assert!(!options.decimal_comma);
        assert_eq!(options.missing_policy, MissingPolicy::DropRows);
        assert_eq!(options.missing_tokens, ["", "NA", "NaN", "null"]);
    }

    #[test]
    fn rows_needed_follow_the_resampling_plan() {
        let (mut study, _) = run(&StudyInput::for_target("y"), &LoadOptions::default());
        assert_eq!(study.rows_needed().0, 40);
        study.resampling = ResamplePlan::new(PlanKind::Subsample, 10, Some(0.3), 1).unwrap();
        assert_eq!(study.rows_needed().0, 67);
        study.resampling = ResamplePlan::new(PlanKind::ComplementaryPairs, 0, None, 1).unwrap();
        assert_eq!(study.rows_needed().0, 20);
    }
}
