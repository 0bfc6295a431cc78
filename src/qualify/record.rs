//! The qualification record of one run: which build on which platform, when and by whom, every
//! case's result, a summary and a seal. The record is built from case results, whatever computed
//! them, so that its verdict and its wording can be tested with a result that fails.

use super::check::Measured;
use super::{Case, Group};
use crate::finding::ToolInfo;
use serde::Serialize;

/// Version of the `qualification.json` layout.
pub const QUALIFICATION_SCHEMA: &str = "forebear.qualification/1";

/// The result of one case.
#[derive(Clone, Debug, PartialEq, Serialize, schemars::JsonSchema)]
pub struct CaseResult {
    /// The case's id.
    pub id: String,
    /// The kind of source.
    pub group: Group,
    /// What it checks.
    pub checks: String,
    /// The source of the expected values.
    pub source: String,
    /// Every quantity compared.
    pub measured: Vec<Measured>,
    /// Whether every quantity met its reference (a case that measured nothing fails).
    pub passed: bool,
    /// Wall time of the case in seconds (a fact of this run).
    pub seconds: f64,
}

impl CaseResult {
    /// The result of `case` with these measurements; its verdict comes from them.
    pub fn new(case: &Case, measured: Vec<Measured>, seconds: f64) -> CaseResult {
        let passed = !measured.is_empty() && measured.iter().all(|m| m.passed);
        CaseResult {
            id: case.id.clone(),
            group: case.group,
            checks: case.checks.clone(),
            source: case.source.clone(),
            measured,
            passed,
            seconds: (seconds * 1000.0).round() / 1000.0,
        }
    }
}

/// The machine the cases ran on.
#[derive(Clone, Debug, PartialEq, Serialize, schemars::JsonSchema)]
pub struct Platform {
    /// Operating system (`linux`, `macos`, `windows`, …).
    pub os: String,
    /// Processor architecture (`x86_64`, `aarch64`, …).
    pub arch: String,
    /// Logical CPUs the process may use.
    pub logical_cpus: usize,
    /// Worker threads of the run (cases that test thread counts start their own).
    pub threads: usize,
}

impl Platform {
    /// This machine.
    pub fn current() -> Platform {
        Platform {
            os: std::env::consts::OS.into(),
            arch: std::env::consts::ARCH.into(),
            logical_cpus: std::thread::available_parallelism().map_or(1, |n| n.get()),
            threads: rayon::current_num_threads(),
        }
    }
}

/// Who ran the qualification.
#[derive(Clone, Debug, PartialEq, Serialize, schemars::JsonSchema)]
pub struct Operator {
    /// The name, if known.
    pub name: Option<String>,
    /// Where it came from: `--operator`, the environment variable's name, or `unknown`.
    pub from: String,
}

/// How many cases passed and failed.
#[derive(Clone, Debug, PartialEq, Serialize, schemars::JsonSchema)]
pub struct Summary {
    /// Cases run.
    pub cases: usize,
    /// Cases passed.
    pub passed: usize,
    /// Cases failed.
    pub failed: usize,
    /// Cases in the catalogue (more than `cases` when `--case` chose some).
    pub catalogue: usize,
    /// `PASSED` when every case run passed, else `FAILED`.
    pub verdict: String,
}

/// The facts of the run that are not case results (members of the record itself).
#[derive(Clone, Debug, PartialEq, Serialize, schemars::JsonSchema)]
pub struct RunFacts {
    /// The build that ran the cases, with its method version.
    pub tool: ToolInfo,
    /// The machine.
    pub platform: Platform,
    /// When the run started (UTC, RFC 3339).
    pub started_utc: String,
    /// Wall time of the whole run in seconds.
    pub duration_seconds: f64,
    /// Who ran it.
    pub operator: Operator,
    /// The command line as typed.
    pub command_line: Vec<String>,
    /// Cases in the catalogue (recorded in the summary).
    #[serde(skip)]
    pub catalogue: usize,
}

/// The qualification record (`qualification.json`).
#[derive(Clone, Debug, PartialEq, Serialize, schemars::JsonSchema)]
pub struct Record {
    /// Layout version.
    pub schema: String,
    /// The summary, verdict included.
    pub summary: Summary,
    /// The build (with its method version), the machine, the time, the operator and the command.
    #[serde(flatten)]
    pub run: RunFacts,
    /// Every case run, in catalogue order.
    pub cases: Vec<CaseResult>,
    /// SHA-256 of the canonical JSON of this record without the seal, as `manifest.json`'s seal.
    pub seal: String,
}

impl Record {
    /// The record of `results`, sealed.
    pub fn new(results: Vec<CaseResult>, facts: RunFacts) -> Record {
        let passed = results.iter().filter(|r| r.passed).count();
        let failed = results.len() - passed;
        let mut record = Record {
            schema: QUALIFICATION_SCHEMA.into(),
            summary: Summary {
                cases: results.len(),
                passed,
                failed,
                catalogue: facts.catalogue,
                verdict: if failed == 0 && !results.is_empty() {
                    "PASSED"
                } else {
                    "FAILED"
                }
                .into(),
            },
            run: RunFacts {
                duration_seconds: (facts.duration_seconds * 1000.0).round() / 1000.0,
                ..facts
            },
            cases: results,
            seal: String::new(),
        };
        record.seal = record.computed_seal();
        record
    }

    /// Whether every case run passed.
    pub fn passed(&self) -> bool {
        self.summary.verdict == "PASSED"
    }

    /// Whether every case of the catalogue was run (not a `--case` selection).
    pub fn complete(&self) -> bool {
        self.summary.cases == self.summary.catalogue
    }

    /// The seal this record should carry.
    pub fn computed_seal(&self) -> String {
        let mut tree = serde_json::to_value(self).expect("a record is plain data");
        crate::digest::remove_pointer(&mut tree, "/seal");
        crate::data::fingerprint::sha256_text(&crate::digest::canonical_json(&tree))
    }

    /// `qualification.json` as written.
    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("a record is plain data") + "\n"
    }
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::qualify::check::Comparison;
    use crate::qualify::Case;

    pub(crate) fn facts(catalogue: usize) -> RunFacts {
        RunFacts {
            tool: ToolInfo::current(),
            platform: Platform::current(),
            started_utc: "2026-12-03T00:00:00Z".into(),
            duration_seconds: 1.0,
            operator: Operator {
                name: Some("qa".into()),
                from: "--operator".into(),
            },
            command_line: vec!["forebear".into(), "qualify".into()],
            catalogue,
        }
    }

    /// A result of a case whose observed value is `observed` against 0.5 ± 1e-9.
    pub(crate) fn result(id: &str, observed: f64) -> CaseResult {
        let case = Case::new(id, Group::SciPy, "a check", "a source", Vec::new);
        let measured = Measured::new(
            "ξ_n",
            Comparison::Within {
                expected: 0.5,
                observed,
                tolerance: 1e-9,
            },
        );
        CaseResult::new(&case, vec![measured], 0.0)
    }

    #[test]
    fn a_case_off_by_more_than_its_tolerance_makes_the_record_failed() {
        let record = Record::new(vec![result("a", 0.5), result("b", 0.5 + 2e-9)], facts(2));
        assert!(!record.cases[1].passed);
        assert_eq!(record.summary.passed, 1);
        assert_eq!(record.summary.failed, 1);
        assert_eq!(record.summary.verdict, "FAILED");
        assert!(!record.passed());
        let good = Record::new(vec![result("a", 0.5), result("b", 0.5)], facts(2));
        assert!(good.passed() && good.complete());
    }

    #[test]
    fn a_case_that_measured_nothing_fails_and_so_does_an_empty_run() {
        let case = Case::new("empty", Group::SciPy, "nothing", "none", Vec::new);
        assert!(!CaseResult::new(&case, Vec::new(), 0.0).passed);
        assert!(!Record::new(Vec::new(), facts(0)).passed());
    }

    #[test]
    fn the_seal_covers_every_field_but_itself() {
        let record = Record::new(vec![result("a", 0.5)], facts(5));
        assert_eq!(record.seal, record.computed_seal());
        assert!(!record.complete());
        let mut edited = record.clone();
        edited.cases[0].measured[0].passed = false;
        assert_ne!(edited.computed_seal(), record.seal);
        let mut resealed = record.clone();
        resealed.seal = "x".into();
        assert_eq!(resealed.computed_seal(), record.seal);
    }
}
