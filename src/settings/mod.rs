//! Analysis settings, one source of truth for the three ways they arrive: flags of `analyze`, a
//! study file (`--config`) or the tables of a batch plan, and the record that `verify` replays.
//!
//! [`SettingsInput`] holds what was given (every key optional; the same serde type reads a study
//! file, a plan's `[defaults]` and each `[[study]]`). [`SettingsInput::check`] applies every rule
//! once, collects every problem, fills the defaults (constants below, also what clap shows) and
//! returns [`Settings`], which cannot hold a bad value (the linfa parameter-guard pattern). A
//! problem carries the [`Key`] at fault; each front end names it its own way: the command line as a
//! flag, a TOML file as the key at its line and column ([`toml_table`]).

mod check;
pub mod document;
mod input;
pub mod key;
pub mod study_file;
pub mod toml_table;

pub use check::Settings;
pub use document::DocumentControl;
pub use input::SettingsInput;
pub use key::{render_flags, Key, Naming, SettingProblem};
pub use study_file::{Sources, StudyFile, StudyFileRecord};

pub use crate::data::load::DEFAULT_MISSING_TOKENS;
pub use crate::resample::plan::{DEFAULT_SUBSAMPLE_FRACTION, MAX_REPLICATES};
pub use crate::search::rule::{DEFAULT_PERMUTATIONS, DEFAULT_SELECTION_ALPHA, MAX_PERMUTATIONS};

/// Default study seed (any fixed number would do; 1 is the command line's since the first version).
pub const DEFAULT_SEED: u64 = 1;

/// Largest seed: 2^53 - 1, the largest integer every JSON reader holds exactly (RFC 8785 writes
/// numbers as IEEE 754 doubles; RFC 7493, section 2.2).
pub const MAX_SEED: u64 = (1 << 53) - 1;

/// Default level of the pairwise independence tests of the parent step (common practice).
pub const DEFAULT_ALPHA: f64 = 0.05;

/// Default number of resampling replicates: 50 complementary pairs (Shah and Samworth 2013 use
/// B = 50; from memory).
pub const DEFAULT_REPLICATES: u32 = 100;

/// Default π_thr, the frequency at which a finding counts as stable (within the range 0.6–0.9 that
/// Meinshausen and Bühlmann 2010 recommend, at its lower end; from memory).
pub const DEFAULT_STABILITY_THRESHOLD: f64 = 0.6;
