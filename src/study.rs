//! Validated study settings. A [`Study`] is built only by [`Study::new`], which checks every value
//! against the data's header; search code takes it as given and never re-validates.

use crate::data::checks::{require_rows, MIN_ROWS_PER_SAMPLE};
use crate::data::load::RawTable;
use crate::data::DataReport;
use crate::data::LoadOptions;
use crate::error::{Error, Result};
use crate::measure::Scaling;
use crate::resample::{PlanKind, ResamplePlan};
use crate::search::knowledge::Knowledge;
use crate::search::{SearchData, SelectionRule, TargetRequest};
use crate::settings::{Key, SettingProblem, Settings, SettingsInput};
use serde::{Deserialize, Serialize};

/// The validated settings, in the canonical form that is hashed and recorded.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
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
    /// What the analyst stated (`[knowledge]` of a study file), as given; absent when nothing is
    /// stated, so results without knowledge keep their digests.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub knowledge: Option<Knowledge>,
    /// Edges at the target oriented through the parent searches of its neighbours
    /// (`search::orient`); off by default, and then absent, so results keep their digests.
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub neighbourhood_orientation: bool,
}

impl Study {
    /// Checks the column roles of `settings` for `target` against the header of `raw` (every
    /// problem, not only the first). Returns the study and the positions (in `raw`) of the used
    /// columns and of the target.
    pub fn new(
        settings: &Settings,
        target: &str,
        raw: &RawTable,
    ) -> Result<(Study, Vec<usize>, usize)> {
        let mut problems = Vec::new();
        let mut column = |name: &str, key: Key, role: &str| match raw.require_column(name, role) {
            Ok(j) => Some(j),
            Err(e) => {
                problems.push(SettingProblem::about(key).text(e.to_string()));
                None
            }
        };
        let target_position = column(target, Key::Targets, "target");
        let excluded_positions: Vec<usize> = settings
            .exclude()
            .iter()
            .filter_map(|name| column(name, Key::Exclude, "excluded"))
            .collect();
        let named: Option<Vec<usize>> = settings.candidates().map(|names| {
            names
                .iter()
                .filter_map(|name| column(name, Key::Candidates, "candidate"))
                .collect()
        });
        // Every column the knowledge names must be in the file (an excluded column may be named:
        // knowledge describes the process, not this analysis; it acts only on used columns).
        for name in settings.knowledge().iter().flat_map(|k| k.columns()) {
            if let Err(e) = raw.require_column(name, "knowledge") {
                problems.push(
                    SettingProblem::about(Key::Knowledge)
                        .text(e.to_string())
                        .at_value(name),
                );
            }
        }
        let Some(target_position) = target_position.filter(|_| problems.is_empty()) else {
            return Err(Error::Settings(problems));
        };
        let used: Vec<usize> = (0..raw.names.len())
            .filter(|j| !excluded_positions.contains(j))
            .filter(|&j| j == target_position || named.as_ref().is_none_or(|n| n.contains(&j)))
            .collect();
        if used.len() < 3 {
            let have: Vec<String> = used
                .iter()
                .filter(|&&j| j != target_position)
                .map(|&j| format!("'{}'", raw.names[j]))
                .collect();
            let (key, advice) = match settings.candidates() {
                Some(_) => (Key::Candidates, "name more columns with "),
                None => (Key::Exclude, "exclude fewer columns with "),
            };
            return Err(Error::Settings(vec![SettingProblem::about(key)
                .text(format!(
                    "{}: {} candidate column(s) remain besides the target '{}'{}, but the search \
                     needs at least 2 ({CANDIDATES_REASON}); {advice}",
                    raw.file,
                    have.len(),
                    target,
                    if have.is_empty() {
                        String::new()
                    } else {
                        format!(" ({})", have.join(", "))
                    },
                ))
                .name(key)
                .text(" or add candidate columns to the file")]));
        }
        let study = Study {
            target: target.to_string(),
            candidates: used
                .iter()
                .filter(|&&j| j != target_position)
                .map(|&j| raw.names[j].clone())
                .collect(),
            excluded: excluded_positions
                .iter()
                .map(|&j| raw.names[j].clone())
                .collect(),
            candidates_named: settings.candidates().map(<[String]>::to_vec),
            seed: settings.seed(),
            scaling: settings.scaling(),
            alpha: settings.alpha(),
            resampling: settings.resampling().clone(),
            stability_threshold: settings.stability_threshold(),
            selection: settings.selection(),
            knowledge: settings.knowledge().cloned(),
            neighbourhood_orientation: settings.neighbourhood_orientation(),
        };
        Ok((study, used, target_position))
    }

    /// The settings input that gives this study and its reader options again: with the same data,
    /// checking it and building the study returns a study equal to `self`.
    pub fn replaying(&self, reader: &LoadOptions) -> SettingsInput {
        let plan = &self.resampling;
        SettingsInput {
            targets: Some(vec![self.target.clone()]),
            exclude: Some(self.excluded.clone()),
            candidates: self.candidates_named.clone(),
            seed: Some(self.seed),
            scaling: Some(self.scaling),
            alpha: Some(self.alpha),
            replicates: Some(plan.count),
            resample: Some(plan.kind),
            fraction: (plan.kind == PlanKind::Subsample).then_some(plan.fraction),
            stability_threshold: Some(self.stability_threshold),
            stopping_rule: Some(self.selection.stopping_rule),
            selection_alpha: Some(self.selection.alpha),
            permutations: Some(self.selection.permutations),
            neighbourhood_orientation: Some(self.neighbourhood_orientation),
            delimiter: Some(reader.delimiter),
            decimal_comma: Some(reader.decimal_comma),
            missing_tokens: Some(reader.missing_tokens.clone()),
            missing: Some(reader.missing_policy),
            sheet: reader.sheet.clone(),
            knowledge: self.knowledge.clone(),
            // Document control is a run fact, recorded outside the study (`run.document`).
            document: None,
        }
    }

    /// What a search of `data` is asked for this study: its target and its candidates, by
    /// column position in `data` (candidates left out of the data are dropped).
    pub fn request(&self, data: &SearchData) -> TargetRequest {
        let index = |name: &str| data.names().iter().position(|n| n == name);
        TargetRequest {
            target: index(&self.target).expect("target survives preparation"),
            candidates: self.candidates.iter().filter_map(|c| index(c)).collect(),
        }
    }

    /// The stated knowledge, restricted to the columns this study uses (target and candidates).
    pub fn used_knowledge(&self) -> Option<Knowledge> {
        let used: Vec<String> = std::iter::once(self.target.clone())
            .chain(self.candidates.iter().cloned())
            .collect();
        self.knowledge.as_ref().map(|k| k.restricted_to(&used))
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::checks::FileFacts;
    use crate::data::{Delimiter, MissingPolicy};

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

    fn run(input: &SettingsInput) -> (Study, DataReport) {
        let raw = raw();
        let settings = input.check().unwrap();
        let options = settings.reader();
        let (study, used, target) = Study::new(&settings, &settings.targets()[0], &raw).unwrap();
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
        let input = SettingsInput {
            candidates: Some(vec!["z".into(), "x1".into(), "k".into(), "x1_copy".into()]),
            exclude: Some(vec!["x2".into()]),
            seed: Some(9),
            scaling: Some(Scaling::Standardize),
            resample: Some(PlanKind::Subsample),
            fraction: Some(0.7),
            replicates: Some(12),
            delimiter: Some(Delimiter::Semicolon),
            decimal_comma: Some(true),
            missing: Some(MissingPolicy::Error),
            missing_tokens: Some(vec!["-1".into(), "NA".into()]),
            ..SettingsInput::for_target("y")
        };
        let options = input.check().unwrap().reader().clone();
        let (study, report) = run(&input);
        assert_eq!(study.candidates, ["x1", "z"], "file order, usable only");
        assert_eq!(report.constant_columns, ["k"]);
        assert_eq!(report.duplicate_columns["x1_copy"], "x1");
        assert_eq!(report.excluded_columns, ["x2"]);

        let replayed_options = LoadOptions::from_report(&report);
        assert_eq!(replayed_options, options);
        let (again, again_report) = run(&study.replaying(&replayed_options));
        assert_eq!(again, study);
        assert_eq!(again_report, report);

        // Through the JSON of result.json too.
        let study_json: Study =
            serde_json::from_str(&serde_json::to_string(&study).unwrap()).unwrap();
        let report_json: DataReport =
            serde_json::from_str(&serde_json::to_string(&report).unwrap()).unwrap();
        assert_eq!(
            run(&study_json.replaying(&LoadOptions::from_report(&report_json))),
            (study, report)
        );
    }

    #[test]
    fn replaying_a_default_study_keeps_the_defaults() {
        let (study, report) = run(&SettingsInput::for_target("y"));
        assert_eq!(study.candidates_named, None);
        assert!(!serde_json::to_string(&study)
            .unwrap()
            .contains("candidates_named"));
        let input = study.replaying(&LoadOptions::from_report(&report));
        assert_eq!(input.fraction, None);
        assert_eq!(run(&input).0, study);
        assert_eq!(LoadOptions::from_report(&report), LoadOptions::default());
    }

    #[test]
    fn reports_of_older_results_read_with_default_reader_options() {
        let old = r#"{"file":"a.csv","size_bytes":1,"sha256":"00","rows_read":3,"rows_used":3,
            "rows_dropped":0,"missing_by_column":{},"constant_columns":[],"excluded_columns":[],
            "missing_tokens":["","NA","NaN","null"]}"#;
        let report: DataReport = serde_json::from_str(old).unwrap();
        let options = LoadOptions::from_report(&report);
        assert_eq!(options.delimiter, Delimiter::Comma);
        assert!(!options.decimal_comma);
        assert_eq!(options.missing_policy, MissingPolicy::DropRows);
        assert_eq!(options.missing_tokens, ["", "NA", "NaN", "null"]);
    }

    #[test]
    fn rows_needed_follow_the_resampling_plan() {
        let (mut study, _) = run(&SettingsInput::for_target("y"));
        assert_eq!(study.rows_needed().0, 40);
        study.resampling = ResamplePlan::new(PlanKind::Subsample, 10, Some(0.3));
        assert_eq!(study.rows_needed().0, 67);
        study.resampling = ResamplePlan::new(PlanKind::ComplementaryPairs, 0, None);
        assert_eq!(study.rows_needed().0, 20);
    }

    #[test]
    fn every_unknown_column_is_reported_at_once_with_its_key() {
        let input = SettingsInput {
            exclude: Some(vec!["x9".into()]),
            candidates: Some(vec!["zz".into(), "x1".into()]),
            ..SettingsInput::for_target("yy")
        };
        let settings = input.check().unwrap();
        let Err(Error::Settings(problems)) = Study::new(&settings, "yy", &raw()) else {
            panic!("unknown columns accepted");
        };
        let keys: Vec<Key> = problems.iter().map(|p| p.key).collect();
        assert_eq!(keys, [Key::Targets, Key::Exclude, Key::Candidates]);
        assert!(problems[0]
            .render(crate::settings::Naming::Flags)
            .contains("the target column 'yy' is not in the header; did you mean 'y'?"));
    }
}
