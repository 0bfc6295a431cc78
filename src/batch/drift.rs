//! Drift: what changed between a previous batch summary and this one, pair by pair.
//!
//! Rules (each change is one [`Change`]):
//! - `appeared` / `vanished`: a (study, target) pair is in one summary only;
//! - `status`: a pair failed in one run and was analysed in the other;
//! - `data`: the content fingerprint of the data changed (a re-saved file with the same content,
//!   other line endings or quoting, is not drift);
//! - `outcome`: the outcome changed; `parent_sets`: the outcome is the same, the parent sets not;
//! - `stability`: the headline frequency, or a column's frequency in the Markov boundary or in
//!   the parent set, moved by more than the threshold (a column absent from one side counts as 0);
//!   resampling switched on or off is one `stability` change too.

use super::{Entry, Status, Summary};
use serde::{Deserialize, Serialize};
use std::collections::{BTreeMap, BTreeSet};

/// Two frequencies closer than this are equal (they are ratios of small counts, so real moves are
/// far larger); it keeps "moved by more than 0.2" from firing on 0.8 − 0.6 in binary floating point.
const FREQUENCY_TOLERANCE: f64 = 1e-9;

/// The comparison with a previous run.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
pub struct Drift {
    /// SHA-256 of the previous `summary.json`.
    pub previous_summary_sha256: String,
    /// A stability frequency counts as drift when it moves by more than this.
    pub threshold: f64,
    /// Every change, by study, target, kind.
    pub changes: Vec<Change>,
}

/// One change of one pair.
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq, Eq, PartialOrd, Ord)]
pub struct Change {
    /// The study.
    pub study: String,
    /// The target.
    pub target: String,
    /// `appeared`, `vanished`, `status`, `data`, `outcome`, `parent_sets` or `stability`.
    pub kind: String,
    /// What changed, from what to what.
    pub detail: String,
}

/// Compares `current` with `previous`.
pub fn compare(
    previous: &Summary,
    previous_sha256: &str,
    current: &Summary,
    threshold: f64,
) -> Drift {
    let before: BTreeMap<(&str, &str), &Entry> =
        previous.entries().map(|(s, t, e)| ((s, t), e)).collect();
    let now: BTreeMap<(&str, &str), &Entry> =
        current.entries().map(|(s, t, e)| ((s, t), e)).collect();
    let keys: BTreeSet<(&str, &str)> = before.keys().chain(now.keys()).copied().collect();
    let mut changes = Vec::new();
    for (study, target) in keys {
        let mut add = |kind: &str, detail: String| {
            changes.push(Change {
                study: study.into(),
                target: target.into(),
                kind: kind.into(),
                detail,
            })
        };
        match (before.get(&(study, target)), now.get(&(study, target))) {
            (None, Some(_)) => add("appeared", "not in the previous run".into()),
            (Some(_), None) => add("vanished", "in the previous run, not in this one".into()),
            (Some(old), Some(new)) => compare_entries(old, new, threshold, &mut add),
            (None, None) => unreachable!("keys come from the two maps"),
        }
    }
    Drift {
        previous_summary_sha256: previous_sha256.into(),
        threshold,
        changes,
    }
}

fn compare_entries(old: &Entry, new: &Entry, threshold: f64, add: &mut dyn FnMut(&str, String)) {
    match (old.status, new.status) {
        (Status::Done, Status::Failed) => {
            return add("status", "analysed before, failed now".into());
        }
        (Status::Failed, Status::Done) => {
            return add("status", "failed before, analysed now".into());
        }
        (Status::Failed, Status::Failed) => return,
        (Status::Done, Status::Done) => {}
    }
    if let (Some(a), Some(b)) = (&old.data, &new.data) {
        if a.content_sha256 != b.content_sha256 {
            add(
                "data",
                format!(
                    "content fingerprint {} → {} (rows {} → {})",
                    short(&a.content_sha256),
                    short(&b.content_sha256),
                    a.rows_read,
                    b.rows_read
                ),
            );
        }
    }
    let outcome = |e: &Entry| e.outcome.clone().unwrap_or_default();
    if old.outcome != new.outcome {
        add(
            "outcome",
            format!(
                "{} {} → {} {}",
                outcome(old),
                sets(&old.parent_sets),
                outcome(new),
                sets(&new.parent_sets)
            ),
        );
    } else if old.parent_sets != new.parent_sets {
        add(
            "parent_sets",
            format!("{} → {}", sets(&old.parent_sets), sets(&new.parent_sets)),
        );
    }
    match (&old.stability, &new.stability) {
        (Some(a), Some(b)) => {
            if moved(a.headline, b.headline, threshold) {
                add(
                    "stability",
                    format!(
                        "headline (full-data outcome) frequency {:.2} → {:.2}",
                        a.headline, b.headline
                    ),
                );
            }
            for (what, x, y) in [
                (
                    "in the Markov boundary",
                    &a.markov_boundary,
                    &b.markov_boundary,
                ),
                ("in the parent set", &a.parents, &b.parents),
            ] {
                let columns: BTreeSet<&String> = x.keys().chain(y.keys()).collect();
                for column in columns {
                    let (p, q) = (
                        x.get(column).copied().unwrap_or(0.0),
                        y.get(column).copied().unwrap_or(0.0),
                    );
                    if moved(p, q, threshold) {
                        add("stability", format!("{column} {what}: {p:.2} → {q:.2}"));
                    }
                }
            }
        }
        (Some(_), None) => add("stability", "resampled before, not now".into()),
        (None, Some(_)) => add("stability", "resampled now, not before".into()),
        (None, None) => {}
    }
}

fn moved(a: f64, b: f64, threshold: f64) -> bool {
    (a - b).abs() > threshold + FREQUENCY_TOLERANCE
}

fn short(hash: &str) -> &str {
    &hash[..hash.len().min(12)]
}

/// Parent sets as `{a, b} or {c}`; `none` when empty.
pub fn sets(parent_sets: &[Vec<String>]) -> String {
    if parent_sets.is_empty() {
        return "none".into();
    }
    parent_sets
        .iter()
        .map(|s| format!("{{{}}}", s.join(", ")))
        .collect::<Vec<_>>()
        .join(" or ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_move_of_exactly_the_threshold_is_not_drift() {
        assert!(!moved(0.8, 0.6, 0.2));
        assert!(moved(0.8, 0.55, 0.2));
        assert!(!moved(0.5, 0.5, 0.0));
    }

    #[test]
    fn parent_sets_print_as_alternatives() {
        let s = vec![vec!["a".to_string(), "b".into()], vec!["c".into()]];
        assert_eq!(sets(&s), "{a, b} or {c}");
        assert_eq!(sets(&[]), "none");
    }
}
