//! `forebear [--operator NAME] qualify --out DIR [--force] [--case ID ...] [--list]`

use crate::analysis::Progress;
use crate::error::{Error, Result};
use clap::Args;
use std::path::PathBuf;

/// Arguments of `qualify`.
#[derive(Debug, Args)]
pub struct QualifyArgs {
    /// Folder for the record (qualification.json, qualification.md, qualification.html).
    #[arg(long, required_unless_present = "list")]
    pub out: Option<PathBuf>,
    /// Replace a former qualification record in the same folder.
    #[arg(long)]
    pub force: bool,
    /// Run only this case (repeatable); the record then says it is a partial run.
    #[arg(long = "case", value_name = "ID")]
    pub cases: Vec<String>,
    /// Print the id and what each case checks, and exit.
    #[arg(long, conflicts_with_all = ["out", "force", "cases"])]
    pub list: bool,
}

/// Runs `qualify`: the record is written whatever the verdict; a failed case is exit code 1.
pub fn run(
    args: QualifyArgs,
    argv: Vec<String>,
    operator: crate::qualify::record::Operator,
    progress: &dyn Progress,
) -> Result<()> {
    if args.list {
        for case in crate::qualify::catalogue() {
            super::out::line(&format!("{}  {}", case.id, case.checks))?;
        }
        return Ok(());
    }
    let out = args
        .out
        .ok_or_else(|| Error::input("qualify needs --out DIR"))?;
    let request = crate::qualify::run::Request {
        out: &out,
        force: args.force,
        operator,
        cases: &args.cases,
        command_line: argv,
    };
    let record = crate::qualify::run::qualify(&request, progress)?;
    verdict(&record, &out)
}

/// Prints the verdict line; a record with a failed case is exit code 1 (it is written already).
fn verdict(record: &crate::qualify::Record, out: &std::path::Path) -> Result<()> {
    let summary = &record.summary;
    super::out::line(&format!(
        "qualification {}: {} of {} cases passed, {} failed; record in {}/ (open qualification.html)",
        summary.verdict,
        summary.passed,
        summary.cases,
        summary.failed,
        out.display()
    ))?;
    if record.passed() {
        return Ok(());
    }
    let failed: Vec<&str> = record
        .cases
        .iter()
        .filter(|c| !c.passed)
        .map(|c| c.id.as_str())
        .collect();
    Err(Error::Mismatch(format!(
        "qualification FAILED: {} of {} cases failed ({}); the record in {} says which and why",
        summary.failed,
        summary.cases,
        failed.join(", "),
        out.display()
    )))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::qualify::record::tests::{facts, result};
    use crate::qualify::Record;

    #[test]
    fn a_failed_case_is_exit_code_one_naming_it_and_a_passed_record_is_success() {
        let out = std::path::Path::new("qualification");
        let failed = Record::new(vec![result("good", 0.5), result("bad", 0.7)], facts(2));
        let error = verdict(&failed, out).unwrap_err();
        assert_eq!(error.exit_code(), 1);
        assert!(error.to_string().contains("FAILED"), "{error}");
        assert!(error.to_string().contains("(bad)"), "{error}");
        let passed = Record::new(vec![result("good", 0.5)], facts(1));
        assert!(verdict(&passed, out).is_ok());
    }
}
