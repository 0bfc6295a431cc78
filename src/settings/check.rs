//! Every rule a setting must follow, written once, and the checked [`Settings`] they guard.

use super::document::DocumentControl;
use super::input::SettingsInput;
use super::key::{Key, SettingProblem};
use super::{
    DEFAULT_ALPHA, DEFAULT_MISSING_TOKENS, DEFAULT_PERMUTATIONS, DEFAULT_REPLICATES, DEFAULT_SEED,
    DEFAULT_SELECTION_ALPHA, DEFAULT_STABILITY_THRESHOLD, MAX_PERMUTATIONS, MAX_REPLICATES,
    MAX_SEED,
};
use crate::data::LoadOptions;
use crate::measure::permutation::TestPlan;
use crate::measure::Scaling;
use crate::resample::{PlanKind, ResamplePlan};
use crate::search::knowledge::Knowledge;
use crate::search::{SelectionRule, StoppingRule};
use crate::text::quoted;

/// Checked settings: built only by [`SettingsInput::check`], so every value is one the search can
/// use. Columns are checked against a file's header later, by [`crate::study::Study::new`].
#[derive(Clone, Debug, PartialEq)]
pub struct Settings {
    targets: Vec<String>,
    exclude: Vec<String>,
    candidates: Option<Vec<String>>,
    seed: u64,
    scaling: Scaling,
    alpha: f64,
    resampling: ResamplePlan,
    stability_threshold: f64,
    selection: SelectionRule,
    neighbourhood_orientation: bool,
    reader: LoadOptions,
    knowledge: Option<Knowledge>,
    document: DocumentControl,
}

impl Settings {
    /// The target columns, in the order given (at least one).
    pub fn targets(&self) -> &[String] {
        &self.targets
    }

    /// Columns left out.
    pub fn exclude(&self) -> &[String] {
        &self.exclude
    }

    /// The only columns considered besides the target, when named.
    pub fn candidates(&self) -> Option<&[String]> {
        self.candidates.as_deref()
    }

    /// Study seed.
    pub fn seed(&self) -> u64 {
        self.seed
    }

    /// Predictor scaling.
    pub fn scaling(&self) -> Scaling {
        self.scaling
    }

    /// Level of the parent step's independence tests.
    pub fn alpha(&self) -> f64 {
        self.alpha
    }

    /// The resampling plan (count 0: none).
    pub fn resampling(&self) -> &ResamplePlan {
        &self.resampling
    }

    /// π_thr.
    pub fn stability_threshold(&self) -> f64 {
        self.stability_threshold
    }

    /// How forward selections decide.
    pub fn selection(&self) -> SelectionRule {
        self.selection
    }

    /// Whether edges at the target are oriented through the neighbours' parent searches.
    pub fn neighbourhood_orientation(&self) -> bool {
        self.neighbourhood_orientation
    }

    /// How the data file is read.
    pub fn reader(&self) -> &LoadOptions {
        &self.reader
    }

    /// What the analyst stated (absent when nothing is stated).
    pub fn knowledge(&self) -> Option<&Knowledge> {
        self.knowledge.as_ref()
    }

    /// Document control (every field checked; all absent when none was given). Not a setting of
    /// the analysis: the run records it, outside the settings' hash and the result digest.
    pub fn document(&self) -> &DocumentControl {
        &self.document
    }

    /// The one target of a single-target command.
    pub fn single_target(&self) -> Result<String, crate::error::Error> {
        match self.targets.as_slice() {
            [one] => Ok(one.clone()),
            more => Err(crate::error::Error::Settings(vec![SettingProblem::about(
                Key::Targets,
            )
            .text(format!(
                "{} targets are named, but one analysis has one target; name one with ",
                more.len()
            ))
            .name(Key::Targets)
            .text(", or list several in a batch plan")])),
        }
    }
}

impl SettingsInput {
    /// Applies every rule, fills defaults, and returns the checked settings or every problem.
    pub fn check(&self) -> Result<Settings, Vec<SettingProblem>> {
        self.check_with(true)
    }

    /// As [`SettingsInput::check`]; without `targets_required` no target need be named (the
    /// targets of `--all-targets` come from the data).
    pub fn check_with(&self, targets_required: bool) -> Result<Settings, Vec<SettingProblem>> {
        let mut problems = Vec::new();
        let targets = self.targets.clone().unwrap_or_default();
        let exclude = self.exclude.clone().unwrap_or_default();
        if targets.is_empty() && targets_required {
            problems.push(
                SettingProblem::about(Key::Targets)
                    .text("no target column is named; name the outcome with ")
                    .name(Key::Targets),
            );
        }
        roles(
            &targets,
            &exclude,
            self.candidates.as_deref(),
            &mut problems,
        );
        if let Some(seed) = self.seed.filter(|&s| s > MAX_SEED) {
            problems.push(SettingProblem::of(Key::Seed).text(format!(
                " {seed} is above {MAX_SEED} (2^53 - 1): every JSON reader must hold the seed \
                 exactly, and the canonical form of the results writes numbers as IEEE 754 doubles \
                 (RFC 8785, section 3.2.2.3)"
            )));
        }
        let alpha = self.alpha.unwrap_or(DEFAULT_ALPHA);
        if !is_level(alpha) {
            problems.push(not_a_level(Key::Alpha, alpha));
        }
        let stability_threshold = self
            .stability_threshold
            .unwrap_or(DEFAULT_STABILITY_THRESHOLD);
        if !(stability_threshold > 0.5 && stability_threshold <= 1.0) {
            problems.push(SettingProblem::of(Key::StabilityThreshold).text(format!(
                " {stability_threshold} is outside (0.5, 1]: the error bound of Meinshausen and \
                 Bühlmann (2010) needs a threshold above one half"
            )));
        }
        let selection = SelectionRule {
            stopping_rule: self.stopping_rule.unwrap_or(StoppingRule::Calibrated),
            alpha: self.selection_alpha.unwrap_or(DEFAULT_SELECTION_ALPHA),
            permutations: self.permutations.unwrap_or(DEFAULT_PERMUTATIONS),
        };
        selection_rules(&selection, &mut problems);
        let kind = self.resample.unwrap_or(PlanKind::ComplementaryPairs);
        let count = self.replicates.unwrap_or(DEFAULT_REPLICATES);
        resampling_rules(kind, count, self.fraction, &mut problems);
        let reader = self.reader_options(&mut problems);
        let knowledge = self.knowledge.clone().filter(|k| !k.is_empty());
        for problem in knowledge.iter().flat_map(Knowledge::problems) {
            problems.push(SettingProblem::of(Key::Knowledge).text(format!(": {problem}")));
        }
        let document = self
            .document
            .as_ref()
            .map(|d| d.checked(&mut problems))
            .unwrap_or_default();
        if !problems.is_empty() {
            return Err(problems);
        }
        Ok(Settings {
            targets,
            exclude,
            candidates: self.candidates.clone(),
            seed: self.seed.unwrap_or(DEFAULT_SEED),
            scaling: self.scaling.unwrap_or_default(),
            alpha,
            resampling: ResamplePlan::new(kind, count, self.fraction),
            stability_threshold,
            selection,
            neighbourhood_orientation: self.neighbourhood_orientation.unwrap_or(false),
            reader,
            knowledge,
            document,
        })
    }

    /// The reader options alone, checked (for commands that read a file without a study).
    pub fn check_reader(&self) -> Result<LoadOptions, Vec<SettingProblem>> {
        let mut problems = Vec::new();
        let options = self.reader_options(&mut problems);
        if problems.is_empty() {
            Ok(options)
        } else {
            Err(problems)
        }
    }

    fn reader_options(&self, problems: &mut Vec<SettingProblem>) -> LoadOptions {
        let tokens: Vec<String> = match &self.missing_tokens {
            None => DEFAULT_MISSING_TOKENS
                .iter()
                .map(|t| t.to_string())
                .collect(),
            Some(given) => {
                let mut tokens: Vec<String> = Vec::new();
                for token in given {
                    if token.contains(',') {
                        problems.push(SettingProblem::about(Key::MissingTokens).text(format!(
                            "the {} entry {} contains a comma; list each token separately",
                            Key::MissingTokens.name(),
                            quoted(token)
                        )));
                    }
                    let token = token.trim().to_string();
                    if !tokens.contains(&token) {
                        tokens.push(token);
                    }
                }
                tokens
            }
        };
        LoadOptions {
            delimiter: self.delimiter.unwrap_or_default(),
            decimal_comma: self.decimal_comma.unwrap_or(false),
            missing_tokens: tokens,
            missing_policy: self.missing.unwrap_or_default(),
            sheet: self.sheet.clone(),
        }
    }
}

fn is_level(value: f64) -> bool {
    value > 0.0 && value < 1.0
}

fn not_a_level(key: Key, value: f64) -> SettingProblem {
    SettingProblem::of(key).text(format!(
        " {value} is not a level: it must lie strictly between 0 and 1"
    ))
}

/// The column roles that can be checked without the file: at least one target, none excluded or
/// named as a candidate too, no column both a candidate and excluded.
fn roles(
    targets: &[String],
    exclude: &[String],
    candidates: Option<&[String]>,
    problems: &mut Vec<SettingProblem>,
) {
    for target in targets {
        if exclude.contains(target) {
            problems.push(
                SettingProblem::about(Key::Exclude)
                    .text(format!(
                        "the target {} cannot also be excluded; remove it from ",
                        quoted(target)
                    ))
                    .name(Key::Exclude),
            );
        }
        if candidates.is_some_and(|c| c.contains(target)) {
            problems.push(
                SettingProblem::about(Key::Candidates)
                    .text(format!(
                        "the target {} cannot also be a candidate; remove it from ",
                        quoted(target)
                    ))
                    .name(Key::Candidates),
            );
        }
    }
    let Some(candidates) = candidates else { return };
    if candidates.is_empty() {
        problems.push(
            SettingProblem::of(Key::Candidates)
                .text(" names no column; give at least two, as in ")
                .name(Key::Candidates)
                .text(" x1,x2"),
        );
    }
    for name in candidates.iter().filter(|c| exclude.contains(c)) {
        problems.push(
            SettingProblem::about(Key::Candidates)
                .text(format!("column {} is named by both ", quoted(name)))
                .name(Key::Candidates)
                .text(" and ")
                .name(Key::Exclude)
                .text("; name it in one of them"),
        );
    }
}

fn selection_rules(selection: &SelectionRule, problems: &mut Vec<SettingProblem>) {
    if !is_level(selection.alpha) {
        problems.push(not_a_level(Key::SelectionAlpha, selection.alpha));
    } else if selection.is_calibrated() {
        let fewest = TestPlan::fewest_permutations(selection.alpha);
        if selection.permutations < fewest {
            problems.push(
                SettingProblem::of(Key::Permutations)
                    .text(format!(
                        " {} cannot give a p-value of ",
                        selection.permutations
                    ))
                    .name(Key::SelectionAlpha)
                    .text(format!(
                        " {} or less: the smallest Monte Carlo p-value is 1/(permutations + 1), \
                         so at least {fewest} are needed",
                        selection.alpha
                    )),
            );
        }
    }
    if selection.permutations > MAX_PERMUTATIONS {
        problems.push(SettingProblem::of(Key::Permutations).text(format!(
            " {} is above the limit of {MAX_PERMUTATIONS} draws per test",
            selection.permutations
        )));
    }
}

fn resampling_rules(
    kind: PlanKind,
    count: u32,
    fraction: Option<f64>,
    problems: &mut Vec<SettingProblem>,
) {
    if count > MAX_REPLICATES {
        problems.push(SettingProblem::of(Key::Replicates).text(format!(
            " {count} is above the limit of {MAX_REPLICATES}: each replicate repeats the whole \
             search, and 100 to 1000 replicates resolve a stability frequency well beyond what it \
             can tell"
        )));
    } else if kind == PlanKind::ComplementaryPairs && !count.is_multiple_of(2) {
        problems.push(SettingProblem::of(Key::Replicates).text(format!(
            " {count}: complementary pairs come in twos (two halves per split), so the number of \
             replicates must be even; use {} or {}",
            count - 1,
            count + 1
        )));
    }
    match (kind, fraction) {
        (PlanKind::Subsample, Some(f)) if !is_level(f) => {
            problems.push(SettingProblem::of(Key::Fraction).text(format!(
                " {f} is not a share of the rows: it must lie strictly between 0 and 1"
            )));
        }
        (PlanKind::ComplementaryPairs | PlanKind::Bootstrap, Some(f)) => problems.push(
            SettingProblem::of(Key::Fraction)
                .text(format!(" {f} applies to "))
                .name(Key::Resample)
                .text(format!(
                    " subsample only; {} fixes its own share",
                    kind.name()
                )),
        ),
        _ => {}
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::settings::Naming;

    fn problems_of(input: SettingsInput) -> Vec<String> {
        input
            .check()
            .err()
            .unwrap_or_default()
            .iter()
            .map(|p| p.render(Naming::Keys))
            .collect()
    }

    #[test]
    fn defaults_fill_every_unset_key() {
        let s = SettingsInput::for_target("y").check().unwrap();
        assert_eq!(s.targets(), ["y"]);
        assert_eq!(s.seed(), DEFAULT_SEED);
        assert_eq!(s.alpha(), DEFAULT_ALPHA);
        assert_eq!(s.resampling().count, DEFAULT_REPLICATES);
        assert_eq!(s.resampling().kind, PlanKind::ComplementaryPairs);
        assert_eq!(s.resampling().fraction, 0.5);
        assert_eq!(s.stability_threshold(), DEFAULT_STABILITY_THRESHOLD);
        assert_eq!(s.selection().stopping_rule, StoppingRule::Calibrated);
        assert_eq!(s.reader(), &LoadOptions::default());
    }

    #[test]
    fn every_problem_is_collected_not_only_the_first() {
        let problems = problems_of(SettingsInput {
            targets: Some(vec!["y".into()]),
            exclude: Some(vec!["y".into()]),
            alpha: Some(1.5),
            stability_threshold: Some(0.5),
            selection_alpha: Some(0.0),
            permutations: Some(200_000),
            replicates: Some(7),
            fraction: Some(0.3),
            missing_tokens: Some(vec!["NA,-".into()]),
            ..SettingsInput::default()
        });
        assert_eq!(problems.len(), 8, "{problems:#?}");
        for expected in [
            "the target 'y' cannot also be excluded; remove it from exclude",
            "alpha 1.5 is not a level",
            "stability_threshold 0.5 is outside (0.5, 1]",
            "selection_alpha 0 is not a level",
            "permutations 200000 is above the limit",
            "replicates 7: complementary pairs come in twos",
            "fraction 0.3 applies to resample subsample only",
            "the missing_tokens entry 'NA,-' contains a comma",
        ] {
            assert!(
                problems.iter().any(|p| p.starts_with(expected)),
                "{expected}: {problems:#?}"
            );
        }
    }

    #[test]
    fn plans_that_cannot_be_drawn_are_refused() {
        let plan = |resample, replicates, fraction| SettingsInput {
            resample: Some(resample),
            replicates: Some(replicates),
            fraction,
            ..SettingsInput::for_target("y")
        };
        assert!(plan(PlanKind::ComplementaryPairs, 7, None).check().is_err());
        assert!(plan(PlanKind::Subsample, 10, Some(1.0)).check().is_err());
        assert!(plan(PlanKind::Subsample, 10, Some(0.0)).check().is_err());
        assert!(plan(PlanKind::Bootstrap, 10, Some(0.5)).check().is_err());
        assert!(plan(PlanKind::ComplementaryPairs, 0, None).check().is_ok());
        let s = plan(PlanKind::Subsample, 10, Some(0.3)).check().unwrap();
        assert_eq!(s.resampling().fraction, 0.3);
    }

    #[test]
    fn calibrated_selection_needs_enough_permutations_for_its_level() {
        // 1/(B + 1) ≤ α needs B ≥ 19 at α = 0.05: the smallest Monte Carlo p-value (Besag and
        // Clifford 1991).
        let with = |permutations, rule| SettingsInput {
            permutations: Some(permutations),
            stopping_rule: Some(rule),
            ..SettingsInput::for_target("y")
        };
        assert!(with(18, StoppingRule::Calibrated).check().is_err());
        assert!(with(19, StoppingRule::Calibrated).check().is_ok());
        assert!(with(18, StoppingRule::Natural).check().is_ok());
    }

    #[test]
    fn missing_tokens_are_trimmed_and_kept_once() {
        let s = SettingsInput {
            missing_tokens: Some(vec!["".into(), " NA ".into(), "NA".into()]),
            ..SettingsInput::for_target("y")
        };
        assert_eq!(s.check().unwrap().reader().missing_tokens, ["", "NA"]);
    }
}
