//! When a forward selection admits a candidate: the published natural stopping rule, or the
//! calibrated rule that admits only what a level-α test of conditional independence supports.

use crate::measure::permutation::TestPlan;
use serde::{Deserialize, Serialize};

/// The stopping rule of every forward selection of a search.
#[derive(
    Clone, Copy, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq, Eq, clap::ValueEnum,
)]
#[serde(rename_all = "snake_case")]
pub enum StoppingRule {
    /// Admit the best candidate only when the permutation test of its step rejects conditional
    /// independence at the selection level (the maximum over candidates against its null
    /// distribution), then remove members that are no longer significant given the others.
    Calibrated,
    /// Admit the best candidate whenever its T_n is positive (Azadkia and Chatterjee 2021, FOCI).
    Natural,
}

impl StoppingRule {
    /// The name used on the command line and in `result.json`.
    pub fn name(self) -> &'static str {
        match self {
            StoppingRule::Calibrated => "calibrated",
            StoppingRule::Natural => "natural",
        }
    }
}

/// How every forward selection of a search decides.
#[derive(Clone, Copy, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct SelectionRule {
    /// Calibrated or natural.
    pub stopping_rule: StoppingRule,
    /// Level of the selection tests (calibrated rule only).
    pub alpha: f64,
    /// Most null draws per test (calibrated rule only).
    pub permutations: u32,
}

/// Default level of the selection tests (common practice).
pub const DEFAULT_SELECTION_ALPHA: f64 = 0.05;

/// Default most null draws per test: with α = 0.05 a step is significant when at most 9 of 199
/// draws reach its statistic (p = (G + 1)/200). 99 is the smallest common choice at that level and
/// 199 loses less power to Monte Carlo error (common practice); early stopping (Besag and Clifford
/// 1991) keeps the cost of the steps that are not significant low.
pub const DEFAULT_PERMUTATIONS: u32 = 199;

/// Most null draws a setting may ask for (a bound on the work of one test).
pub const MAX_PERMUTATIONS: u32 = 100_000;

impl SelectionRule {
    /// The default: calibrated at level 0.05 with up to 199 draws per test.
    pub fn calibrated() -> SelectionRule {
        SelectionRule {
            stopping_rule: StoppingRule::Calibrated,
            alpha: DEFAULT_SELECTION_ALPHA,
            permutations: DEFAULT_PERMUTATIONS,
        }
    }

    /// The published method: the natural stopping rule, no tests.
    pub fn natural() -> SelectionRule {
        SelectionRule {
            stopping_rule: StoppingRule::Natural,
            ..SelectionRule::calibrated()
        }
    }

    /// Whether steps are tested.
    pub fn is_calibrated(&self) -> bool {
        self.stopping_rule == StoppingRule::Calibrated
    }

    /// The plan of one test.
    pub fn test_plan(&self, exhaustive: bool) -> TestPlan {
        TestPlan {
            max_permutations: self.permutations,
            alpha: self.alpha,
            exhaustive,
        }
    }
}
