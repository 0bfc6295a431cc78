//! Validated study settings. A [`Study`] is built only by [`Study::new`], which checks every value
//! against the data's header; search code takes it as given and never re-validates.

use crate::data::load::RawTable;
use crate::error::{Error, Result};
use crate::measure::Scaling;
use serde::Serialize;

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
}

/// The validated settings, in the canonical form that is hashed and recorded.
#[derive(Clone, Debug, Serialize, PartialEq)]
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
    /// Resampling replicates.
    pub replicates: u32,
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
        if input.replicates > 0 {
            return Err(Error::input(format!(
                "--replicates {}: resampling is not available in this version yet; use --replicates 0",
                input.replicates
            )));
        }
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
            replicates: input.replicates,
        };
        Ok((study, used, target))
    }

    /// Drops candidates that the data step excluded as constant.
    pub fn without_constant(mut self, constant: &[String]) -> Study {
        self.candidates.retain(|c| !constant.contains(c));
        self
    }
}
