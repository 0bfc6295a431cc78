//! Validated study settings. A [`Study`] is built only by [`Study::new`], which checks every value
//! against the data's header; search code takes it as given and never re-validates.

use crate::data::load::RawTable;
use crate::error::{Error, Result};
use crate::measure::Scaling;
use crate::resample::{PlanKind, ResamplePlan};
use serde::{Deserialize, Serialize};

/// Settings as the user gave them (flags now, a TOML file later).
#[derive(Clone, Debug)]
pub struct StudyInput {
    /// Target column name.
    pub target: String,
    /// Columns never to consider (neither as candidates nor in members' boundaries).
    pub exclude: Vec<String>,
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
}

impl StudyInput {
    /// The command line's defaults for one target: seed 1, rank scaling, α = 0.05, 100
    /// complementary-pairs replicates, π_thr = 0.6.
    pub fn for_target(target: &str) -> StudyInput {
        StudyInput {
            target: target.to_string(),
            exclude: Vec::new(),
            seed: 1,
            scaling: Scaling::Rank,
            alpha: 0.05,
            replicates: 100,
            resample: PlanKind::ComplementaryPairs,
            fraction: None,
            stability_threshold: 0.6,
        }
    }
}

impl StudyInput {
    /// The input that rebuilds `study` from the same file: re-running with it gives an equal
    /// [`Study`] when the data are the same.
    pub fn replaying(study: &Study) -> StudyInput {
        let plan = &study.resampling;
        StudyInput {
            target: study.target.clone(),
            exclude: study.excluded.clone(),
            seed: study.seed,
            scaling: study.scaling,
            alpha: study.alpha,
            replicates: plan.count,
            resample: plan.kind,
            fraction: (plan.kind == PlanKind::Subsample).then_some(plan.fraction),
            stability_threshold: study.stability_threshold,
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
        let resampling =
            ResamplePlan::new(input.resample, input.replicates, input.fraction, input.seed)?;
        let used: Vec<usize> = (0..raw.names.len())
            .filter(|j| !excluded_positions.contains(j))
            .collect();
        if used.len() < 2 {
            return Err(Error::input(format!(
                "{}: no candidate columns remain besides the target '{}'",
                raw.file, input.target
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
            seed: input.seed,
            scaling: input.scaling,
            alpha: input.alpha,
            resampling,
            stability_threshold: input.stability_threshold,
        };
        Ok((study, used, target))
    }

    /// Drops candidates that the data step excluded as constant.
    pub fn without_constant(mut self, constant: &[String]) -> Study {
        self.candidates.retain(|c| !constant.contains(c));
        self
    }
}
