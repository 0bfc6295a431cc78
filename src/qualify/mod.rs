//! `forebear qualify`: the built-in reference cases, run on this installation, and the record of
//! their results (Markdown, HTML, JSON) as installation and operational evidence.
//!
//! The cases live here, in the library, and the test suite runs the same list (through the binary,
//! and case by case where a test module checked the same reference before), so the record and the
//! tests cannot drift apart. Every fixture a case needs is compiled into the binary
//! (`embedded.rs`).
//!
//! - `check.rs`: one comparison (expected, observed, tolerance) and its verdict;
//! - `cases.rs`: the catalogue, in order; the cases themselves by kind of source:
//!   `closed_forms.rs`, `scipy.rs`, `neighbours.rs`, `structures.rs`, `determinism.rs` (with the
//!   pinned digests in `pinned.rs`);
//! - `record.rs`: the record of one run (build, platform, time, operator, results, summary, seal);
//! - `render.rs`: its Markdown and HTML;
//! - `run.rs`: one run: claim the folder, run the cases, write the record.

pub mod cases;
pub mod check;
pub mod closed_forms;
pub mod determinism;
pub mod embedded;
pub mod neighbours;
pub mod pinned;
pub mod record;
pub mod render;
pub mod run;
pub mod scipy;
pub mod structures;

pub use cases::{catalogue, run_case, select};
pub use check::{Comparison, Measured};
pub use record::{CaseResult, Record};

use serde::Serialize;

/// The kind of source a case is checked against.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Serialize, schemars::JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum Group {
    /// Closed forms and theorems of the published method.
    ClosedForm,
    /// Values computed by SciPy on committed fixtures.
    SciPy,
    /// Exact nearest neighbours and their tie-break.
    Neighbours,
    /// Parent sets of published reference networks.
    Structure,
    /// Digests pinned for this method version.
    Determinism,
}

impl Group {
    /// The heading of the group in the record.
    pub fn title(self) -> &'static str {
        match self {
            Group::ClosedForm => "Closed forms of the conditional dependence coefficient T_n",
            Group::SciPy => "Chatterjee's ξ_n against SciPy",
            Group::Neighbours => "Exact nearest neighbours and the keyed tie-break",
            Group::Structure => "Published reference structures",
            Group::Determinism => "Determinism and the pinned digests",
        }
    }
}

/// A reference case: what it checks, against which source, and how to compute it.
pub struct Case {
    /// Stable identifier (`--case ID`).
    pub id: String,
    /// The kind of source.
    pub group: Group,
    /// What it checks, in one sentence.
    pub checks: String,
    /// The source of the expected values, named as the tests name it.
    pub source: String,
    run: Box<dyn Fn() -> Vec<Measured> + Send + Sync>,
}

impl Case {
    /// A case that computes its measured quantities with `run`.
    pub fn new(
        id: &str,
        group: Group,
        checks: &str,
        source: &str,
        run: impl Fn() -> Vec<Measured> + Send + Sync + 'static,
    ) -> Case {
        Case {
            id: id.into(),
            group,
            checks: checks.into(),
            source: source.into(),
            run: Box::new(run),
        }
    }

    /// Computes the case's quantities.
    pub fn measure(&self) -> Vec<Measured> {
        (self.run)()
    }
}
