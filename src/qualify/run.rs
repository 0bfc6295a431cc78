//! One qualification run as a library call: claim the output folder (before any work, so an
//! unusable folder is refused at once), run the cases, build the record and write its three files
//! as one step through [`crate::output`].

use super::record::{Operator, Platform, Record, RunFacts};
use crate::analysis::Progress;
use crate::error::Result;
use crate::finding::ToolInfo;
use crate::output::{Claim, Kind};
use std::path::Path;
use std::time::Instant;

/// What to run and where to write it.
pub struct Request<'a> {
    /// The output folder.
    pub out: &'a Path,
    /// Replace a former record there.
    pub force: bool,
    /// Who runs it (`--operator`, else the login name) and where the name came from.
    pub operator: Operator,
    /// The cases chosen with `--case` (none: every case).
    pub cases: &'a [String],
    /// The command line as typed.
    pub command_line: Vec<String>,
}

/// Runs the cases and writes the record; returns it (the caller turns a failure into exit 1).
pub fn qualify(request: &Request<'_>, progress: &dyn Progress) -> Result<Record> {
    let cases = super::select(request.cases)?;
    let claim = Claim::take(request.out, Kind::Qualification, request.force, progress)?;
    let started = Instant::now();
    let started_utc = crate::timefmt::now_rfc3339();
    let total = cases.len();
    let results: Vec<_> = cases
        .iter()
        .enumerate()
        .map(|(i, case)| {
            let result = super::run_case(case);
            progress.say(&format!(
                "case {}/{total} {}: {} ({:.2} s)",
                i + 1,
                case.id,
                if result.passed { "pass" } else { "FAIL" },
                result.seconds
            ));
            result
        })
        .collect();
    let facts = RunFacts {
        tool: ToolInfo::current(),
        platform: Platform::current(),
        started_utc,
        duration_seconds: started.elapsed().as_secs_f64(),
        operator: request.operator.clone(),
        command_line: request.command_line.clone(),
        catalogue: super::catalogue().len(),
    };
    let record = Record::new(results, facts);
    let kept = write_record(&record, claim)?;
    let summary = &record.summary;
    let mut facts = std::collections::BTreeMap::from([
        ("verdict".to_string(), summary.verdict.clone()),
        ("cases_passed".to_string(), summary.passed.to_string()),
        ("cases_failed".to_string(), summary.failed.to_string()),
        ("seal".to_string(), record.seal.clone()),
    ]);
    if let Some(kept) = kept {
        facts.insert(
            "replaced_output_kept_as".into(),
            crate::trail::kept_name(&kept),
        );
    }
    let operator = record.run.operator.name.as_deref().unwrap_or("unknown");
    crate::trail::append(
        &crate::trail::Record {
            action: "qualify",
            output: request.out.to_path_buf(),
            facts,
        },
        operator,
    )?;
    Ok(record)
}

/// Writes `qualification.json`, `.md` and `.html` into the claimed folder as one step; returns
/// where a replaced former record is kept.
pub fn write_record(record: &Record, claim: Claim) -> Result<Option<std::path::PathBuf>> {
    let files = [
        ("qualification.json", record.to_json()),
        ("qualification.md", super::render::render_markdown(record)?),
        ("qualification.html", super::render::render_html(record)?),
    ];
    claim.write_files(&files)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::qualify::record::tests::{facts, result};

    #[test]
    fn a_failed_record_is_written_whole_and_says_failed() {
        let dir = std::env::temp_dir().join(format!("forebear-qualify-run-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        let out = dir.join("record");
        let record = Record::new(vec![result("good", 0.5), result("bad", 0.7)], facts(2));
        let claim =
            Claim::take(&out, Kind::Qualification, false, &crate::analysis::Silent).unwrap();
        write_record(&record, claim).unwrap();
        let json: serde_json::Value =
            serde_json::from_str(&std::fs::read_to_string(out.join("qualification.json")).unwrap())
                .unwrap();
        assert_eq!(json["summary"]["verdict"], "FAILED");
        assert_eq!(json["cases"][1]["passed"], false);
        let md = std::fs::read_to_string(out.join("qualification.md")).unwrap();
        assert!(md.contains("**Verdict: FAILED.**"), "{md}");
        let html = std::fs::read_to_string(out.join("qualification.html")).unwrap();
        assert!(html.contains("<strong>FAILED</strong>"), "{html}");
        // A second record replaces it only with --force.
        let refused = Claim::take(&out, Kind::Qualification, false, &crate::analysis::Silent);
        assert_eq!(refused.err().map(|e| e.exit_code()), Some(2));
        assert!(Claim::take(&out, Kind::Qualification, true, &crate::analysis::Silent).is_ok());
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
