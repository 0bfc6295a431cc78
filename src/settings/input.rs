//! Settings as given: every key optional. The one serde type behind a study file, a plan's
//! `[defaults]` and each `[[study]]` (so they take exactly the same keys), and what the command
//! line's explicit flags fill in.

use super::document::DocumentControl;
use super::key::Key;
use crate::data::{Delimiter, MissingPolicy};
use crate::measure::Scaling;
use crate::resample::PlanKind;
use crate::search::knowledge::Knowledge;
use crate::search::StoppingRule;
use serde::Deserialize;

/// Settings as given, before any check. Unset keys take their defaults in
/// [`SettingsInput::check`](super::SettingsInput::check).
#[derive(Clone, Debug, Default, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct SettingsInput {
    /// Target columns (`analyze` takes one).
    pub targets: Option<Vec<String>>,
    /// Columns never to consider (neither as candidates nor in members' boundaries).
    pub exclude: Option<Vec<String>>,
    /// When given, the only columns considered besides the target.
    pub candidates: Option<Vec<String>>,
    /// Study seed for every keyed random draw.
    pub seed: Option<u64>,
    /// Predictor scaling.
    pub scaling: Option<Scaling>,
    /// Level of the parent step's pairwise independence tests.
    pub alpha: Option<f64>,
    /// Resampling replicates (0: none).
    pub replicates: Option<u32>,
    /// How replicates draw their rows.
    pub resample: Option<PlanKind>,
    /// Share of rows per replicate (`subsample` only).
    pub fraction: Option<f64>,
    /// π_thr: the frequency at which a finding counts as stable.
    pub stability_threshold: Option<f64>,
    /// Calibrated or natural forward selection.
    pub stopping_rule: Option<StoppingRule>,
    /// Level of the calibrated rule's selection tests.
    pub selection_alpha: Option<f64>,
    /// Most null draws per selection test.
    pub permutations: Option<u32>,
    /// Orient edges at the target through the parent searches of its neighbours
    /// (`search::orient`; off by default).
    pub neighbourhood_orientation: Option<bool>,
    /// The character between values.
    pub delimiter: Option<Delimiter>,
    /// Read decimal commas.
    pub decimal_comma: Option<bool>,
    /// Cell texts that mean "missing" (replace the default list; "" stands for empty cells).
    pub missing_tokens: Option<Vec<String>>,
    /// What to do with rows that miss a used value.
    pub missing: Option<MissingPolicy>,
    /// The sheet of a workbook to read (the first when absent).
    pub sheet: Option<String>,
    /// What the analyst knows: tiers, forbidden and required edges (table `[knowledge]`).
    pub knowledge: Option<Knowledge>,
    /// Document control (table `[document]`): metadata printed on the dossier, not a setting of
    /// the analysis (kept out of the settings' hash and the result digest).
    pub document: Option<DocumentControl>,
}

impl SettingsInput {
    /// Settings for one target, everything else at its default.
    pub fn for_target(target: &str) -> SettingsInput {
        SettingsInput {
            targets: Some(vec![target.to_string()]),
            ..SettingsInput::default()
        }
    }

    /// `self` where set, else `base` (flags over a study file, a study over `[defaults]`).
    pub fn over(self, base: &SettingsInput) -> SettingsInput {
        let b = base.clone();
        SettingsInput {
            targets: self.targets.or(b.targets),
            exclude: self.exclude.or(b.exclude),
            candidates: self.candidates.or(b.candidates),
            seed: self.seed.or(b.seed),
            scaling: self.scaling.or(b.scaling),
            alpha: self.alpha.or(b.alpha),
            replicates: self.replicates.or(b.replicates),
            resample: self.resample.or(b.resample),
            fraction: self.fraction.or(b.fraction),
            stability_threshold: self.stability_threshold.or(b.stability_threshold),
            stopping_rule: self.stopping_rule.or(b.stopping_rule),
            selection_alpha: self.selection_alpha.or(b.selection_alpha),
            permutations: self.permutations.or(b.permutations),
            neighbourhood_orientation: self
                .neighbourhood_orientation
                .or(b.neighbourhood_orientation),
            delimiter: self.delimiter.or(b.delimiter),
            decimal_comma: self.decimal_comma.or(b.decimal_comma),
            missing_tokens: self.missing_tokens.or(b.missing_tokens),
            missing: self.missing.or(b.missing),
            sheet: self.sheet.or(b.sheet),
            knowledge: self.knowledge.or(b.knowledge),
            document: match (self.document, b.document) {
                (Some(given), Some(base)) => Some(given.over(&base)),
                (given, base) => given.or(base),
            },
        }
    }

    /// `self` with `key` unset.
    pub fn without(mut self, key: Key) -> SettingsInput {
        match key {
            Key::Targets => self.targets = None,
            Key::Exclude => self.exclude = None,
            Key::Candidates => self.candidates = None,
            Key::Seed => self.seed = None,
            Key::Scaling => self.scaling = None,
            Key::Alpha => self.alpha = None,
            Key::Replicates => self.replicates = None,
            Key::Resample => self.resample = None,
            Key::Fraction => self.fraction = None,
            Key::StabilityThreshold => self.stability_threshold = None,
            Key::StoppingRule => self.stopping_rule = None,
            Key::SelectionAlpha => self.selection_alpha = None,
            Key::Permutations => self.permutations = None,
            Key::NeighbourhoodOrientation => self.neighbourhood_orientation = None,
            Key::Delimiter => self.delimiter = None,
            Key::DecimalComma => self.decimal_comma = None,
            Key::MissingTokens => self.missing_tokens = None,
            Key::Missing => self.missing = None,
            Key::Knowledge => self.knowledge = None,
            Key::Title
            | Key::DocumentId
            | Key::Purpose
            | Key::DocumentVersion
            | Key::PreparedBy => {
                if let Some(slot) = self.document.as_mut().and_then(|d| d.slot(key)) {
                    *slot = None;
                }
            }
        }
        self
    }

    /// Whether `key` is set.
    pub fn has(&self, key: Key) -> bool {
        match key {
            Key::Targets => self.targets.is_some(),
            Key::Exclude => self.exclude.is_some(),
            Key::Candidates => self.candidates.is_some(),
            Key::Seed => self.seed.is_some(),
            Key::Scaling => self.scaling.is_some(),
            Key::Alpha => self.alpha.is_some(),
            Key::Replicates => self.replicates.is_some(),
            Key::Resample => self.resample.is_some(),
            Key::Fraction => self.fraction.is_some(),
            Key::StabilityThreshold => self.stability_threshold.is_some(),
            Key::StoppingRule => self.stopping_rule.is_some(),
            Key::SelectionAlpha => self.selection_alpha.is_some(),
            Key::Permutations => self.permutations.is_some(),
            Key::NeighbourhoodOrientation => self.neighbourhood_orientation.is_some(),
            Key::Delimiter => self.delimiter.is_some(),
            Key::DecimalComma => self.decimal_comma.is_some(),
            Key::MissingTokens => self.missing_tokens.is_some(),
            Key::Missing => self.missing.is_some(),
            Key::Knowledge => self.knowledge.is_some(),
            Key::Title
            | Key::DocumentId
            | Key::Purpose
            | Key::DocumentVersion
            | Key::PreparedBy => self
                .document
                .as_ref()
                .is_some_and(|d| d.field(key).is_some()),
        }
    }
}
