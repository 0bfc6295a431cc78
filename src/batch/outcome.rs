//! What a finished batch says and how it ends: the closing line, and the result whose error kind
//! sets the exit code (3 when a pair failed on an internal error, else 2 when a pair failed, else
//! 1 when there is drift and drift was asked to fail the batch, else 0). The kind is taken from
//! each entry's recorded [`Failure`], never from a message's text.

use super::execute::BatchRequest;
use super::{Failure, Summary};
use crate::error::{Error, Result};
use std::path::PathBuf;
use std::time::Duration;

/// The index a person opens first: `index.html` in the output folder.
pub fn index_path(request: &BatchRequest) -> PathBuf {
    request.out.join("index.html")
}

/// The batch's last progress line: how long it took, the counts, drift and the index.
pub fn closing_line(request: &BatchRequest, summary: &Summary, elapsed: Duration) -> String {
    let totals = &summary.totals;
    format!(
        "batch finished in {:.1} s: {} pairs, {} analysed, {} failed; {}; index: {}",
        elapsed.as_secs_f64(),
        totals.pairs,
        totals.done,
        totals.failed,
        drift_text(summary),
        index_path(request).display()
    )
}

/// The result of the batch: an error when a pair failed (internal when any failed on a bug), or
/// when there is drift and `request.fail_on_drift` is set; `Ok` otherwise.
pub fn result(request: &BatchRequest, summary: &Summary) -> Result<()> {
    let totals = &summary.totals;
    let index = index_path(request);
    if totals.failed > 0 {
        let message = format!(
            "{} of {} pairs failed (the others are complete); see {}",
            totals.failed,
            totals.pairs,
            index.display()
        );
        let internal = summary
            .entries()
            .any(|(_, _, e)| e.failure == Some(Failure::Internal));
        return Err(if internal {
            Error::internal(message)
        } else {
            Error::input(message)
        });
    }
    if request.fail_on_drift && totals.changes > 0 {
        return Err(Error::Mismatch(format!(
            "{} since '{}'; see {}",
            drift_text(summary),
            request
                .previous
                .as_ref()
                .map_or(String::new(), |p| p.display().to_string()),
            index.display()
        )));
    }
    Ok(())
}

/// Drift in a few words: not checked, none, or how many changes (and how many outcome changes
/// between unstable headlines, which are listed but are not drift).
fn drift_text(summary: &Summary) -> String {
    let drift = match &summary.drift {
        None => "drift not checked".to_string(),
        Some(d) if d.changes.is_empty() => "no drift".to_string(),
        Some(d) => format!("drift: {} change(s)", d.changes.len()),
    };
    match summary
        .drift
        .as_ref()
        .map_or(0, |d| d.unstable_outcomes.len())
    {
        0 => drift,
        n => format!("{drift}, {n} outcome change(s) between unstable headlines (not drift)"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::batch::drift::{Change, Drift};
    use crate::batch::plan::Plan;
    use crate::batch::run::{failed, summary};
    use crate::batch::StudySummary;
    use crate::finding::ToolInfo;
    use std::collections::BTreeMap;

    fn request(fail_on_drift: bool) -> BatchRequest {
        BatchRequest {
            plan: Plan {
                path: "plan.toml".into(),
                file_name: "plan.toml".into(),
                sha256: String::new(),
                studies: Vec::new(),
            },
            plan_file: "plan.toml".into(),
            out: "out".into(),
            previous: Some("before".into()),
            drift_threshold: 0.2,
            fail_on_drift,
            shard: None,
            collect: Vec::new(),
            force: false,
            operator: String::new(),
        }
    }

    /// A summary of one study whose pairs failed with these kinds, and `changes` drift changes.
    fn finished(failures: &[Failure], changes: usize) -> Summary {
        let targets = failures
            .iter()
            .enumerate()
            .map(|(i, &kind)| (format!("t{i}"), failed(i, "internal error: x".into(), kind)))
            .collect();
        let studies = BTreeMap::from([(
            "s".to_string(),
            StudySummary {
                data: "d.csv".into(),
                targets,
            },
        )]);
        let change = Change {
            study: "s".into(),
            target: "t".into(),
            kind: "outcome".into(),
            detail: String::new(),
        };
        let drift = Drift {
            previous_summary_sha256: String::new(),
            threshold: 0.2,
            changes: vec![change; changes],
            unstable_outcomes: Vec::new(),
        };
        summary(
            &request(false).plan,
            None,
            ToolInfo::current(),
            studies,
            Some(drift),
        )
    }

    #[test]
    fn the_error_kind_comes_from_the_recorded_failures_not_their_text() {
        // Every message reads "internal error"; only the recorded kind decides.
        let input = result(&request(false), &finished(&[Failure::Input], 0));
        assert!(matches!(input, Err(Error::Input(_))), "{input:?}");
        let mixed = [Failure::Input, Failure::Internal];
        let internal = result(&request(false), &finished(&mixed, 0));
        assert!(matches!(internal, Err(Error::Internal(_))), "{internal:?}");
    }

    #[test]
    fn drift_fails_the_batch_only_when_asked_and_after_failures() {
        assert!(result(&request(false), &finished(&[], 2)).is_ok());
        let drift = result(&request(true), &finished(&[], 2));
        let Err(Error::Mismatch(message)) = drift else {
            panic!("{drift:?}")
        };
        assert!(
            message.starts_with("drift: 2 change(s) since 'before'"),
            "{message}"
        );
        assert!(result(&request(true), &finished(&[], 0)).is_ok());
        // A failed pair outranks drift.
        let both = result(&request(true), &finished(&[Failure::Input], 2));
        assert!(matches!(both, Err(Error::Input(_))), "{both:?}");
    }
}
