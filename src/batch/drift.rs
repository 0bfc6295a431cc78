//! Drift: what changed between a previous batch summary and this one, pair by pair.
//!
//! Rules (each change is one [`Change`]):
//! - `appeared` / `vanished`: a (study, target) pair is in one summary only;
//! - `status`: a pair failed in one run and was analysed in the other;
//! - `data`: the content fingerprint of the data changed (a re-saved file with the same content,
//!   other line endings or quoting, is not drift);
//! - `outcome`: the outcome changed; `parent_sets`: the outcome is the same, the parent sets not;
//! - `unstable_outcome`: the outcome or the parent sets changed, but both runs resampled and
//!   neither headline was stable: the replicates of each run already reach other results often,
//!   so the change is within what resampling shows. It is listed apart (`unstable_outcomes`), with
//!   both headlines' frequencies, and is not drift;
//! - `stability`: the headline frequency (when the headline is the same in both runs), or a
//!   column's frequency in the Markov boundary or in the parent set, moved by more than the
//!   threshold *and* by more than twice the sampling error of the difference (a column absent
//!   from one side counts as 0); resampling switched on or off is one `stability` change too.
//!
//! The sampling error of two frequencies p1 and p2 estimated from R1 and R2 replicates is
//! sqrt(p1(1 − p1)/R1 + p2(1 − p2)/R2), the normal approximation for the difference of two
//! proportions; twice it is common practice for a two-sided band of about 95 %. Replicates of one
//! run are not independent (complementary pairs share rows), so the band is a guide, not a test.

use super::{Entry, Status, Summary};
use serde::{Deserialize, Serialize};
use std::collections::{BTreeMap, BTreeSet};

/// Two frequencies closer than this are equal (they are ratios of small counts, so real moves are
/// far larger); it keeps "moved by more than 0.2" from firing on 0.8 − 0.6 in binary floating point.
const FREQUENCY_TOLERANCE: f64 = 1e-9;

/// How many sampling errors a frequency must move, besides the threshold, to count as drift
/// (common practice: about a 95 % two-sided band under the normal approximation).
pub const SAMPLING_ERRORS: f64 = 2.0;

/// The comparison with a previous run.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct Drift {
    /// SHA-256 of the previous `summary.json`.
    pub previous_summary_sha256: String,
    /// A stability frequency counts as drift when it moves by more than this (and by more than
    /// [`SAMPLING_ERRORS`] times its sampling error).
    pub threshold: f64,
    /// Every change that is drift, by study, target, kind.
    pub changes: Vec<Change>,
    /// Changes of outcome or parent sets between two runs whose headlines were both unstable
    /// (kind `unstable_outcome`): listed, not drift.
    #[serde(default)]
    pub unstable_outcomes: Vec<Change>,
}

/// One change of one pair.
#[derive(
    Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq, Eq, PartialOrd, Ord,
)]
pub struct Change {
    /// The study.
    pub study: String,
    /// The target.
    pub target: String,
    /// `appeared`, `vanished`, `status`, `data`, `outcome`, `parent_sets`, `stability` or
    /// `unstable_outcome`.
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
    let mut unstable_outcomes = Vec::new();
    for (study, target) in keys {
        let found = match (before.get(&(study, target)), now.get(&(study, target))) {
            (None, Some(_)) => vec![("appeared", "not in the previous run".into())],
            (Some(_), None) => vec![("vanished", "in the previous run, not in this one".into())],
            (Some(old), Some(new)) => compare_entries(old, new, threshold),
            (None, None) => unreachable!("keys come from the two maps"),
        };
        for (kind, detail) in found {
            let change = Change {
                study: study.into(),
                target: target.into(),
                kind: kind.into(),
                detail,
            };
            match kind {
                UNSTABLE_OUTCOME => unstable_outcomes.push(change),
                _ => changes.push(change),
            }
        }
    }
    Drift {
        previous_summary_sha256: previous_sha256.into(),
        threshold,
        changes,
        unstable_outcomes,
    }
}

/// The kind of an outcome change between two unstable headlines.
pub const UNSTABLE_OUTCOME: &str = "unstable_outcome";

/// Every change of one pair, as (kind, detail).
fn compare_entries(old: &Entry, new: &Entry, threshold: f64) -> Vec<(&'static str, String)> {
    let mut found = Vec::new();
    match (old.status, new.status) {
        (Status::Done, Status::Failed) => {
            return vec![("status", "analysed before, failed now".into())];
        }
        (Status::Failed, Status::Done) => {
            return vec![("status", "failed before, analysed now".into())];
        }
        (Status::Failed, Status::Failed) => return found,
        (Status::Done, Status::Done) => {}
    }
    if let (Some(a), Some(b)) = (&old.data, &new.data) {
        if a.content_sha256 != b.content_sha256 {
            found.push((
                "data",
                format!(
                    "content fingerprint {} → {} (rows {} → {})",
                    short(&a.content_sha256),
                    short(&b.content_sha256),
                    a.rows_read,
                    b.rows_read
                ),
            ));
        }
    }
    if let Some(change) = outcome_change(old, new) {
        found.push(change);
    }
    if let Some(change) = knowledge_change(old, new) {
        found.push(change);
    }
    match (&old.stability, &new.stability) {
        (Some(a), Some(b)) => {
            let moved = |p: f64, q: f64| drifted(p, a.replicates, q, b.replicates, threshold);
            let band =
                |p: f64, q: f64| SAMPLING_ERRORS * sampling_error(p, a.replicates, q, b.replicates);
            // The headline frequency of another headline measures something else: the change of
            // headline is reported above (as drift or as an unstable outcome).
            let same_headline = old.outcome == new.outcome && old.parent_sets == new.parent_sets;
            if same_headline && moved(a.headline, b.headline) {
                found.push((
                    "stability",
                    format!(
                        "headline (full-data outcome) frequency {:.2} of {} → {:.2} of {} (twice \
                         the sampling error: {:.2})",
                        a.headline,
                        a.replicates,
                        b.headline,
                        b.replicates,
                        band(a.headline, b.headline)
                    ),
                ));
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
                    if moved(p, q) {
                        found.push((
                            "stability",
                            format!(
                                "{column} {what}: {p:.2} → {q:.2} (twice the sampling error: \
                                 {:.2})",
                                band(p, q)
                            ),
                        ));
                    }
                }
            }
        }
        (Some(_), None) => found.push(("stability", "resampled before, not now".into())),
        (None, Some(_)) => found.push(("stability", "resampled now, not before".into())),
        (None, None) => {}
    }
    found
}

/// A change of the result read with the stated knowledge: drift, unless neither result was
/// stable over resampling (then `unstable_outcome`); stating knowledge in one run only is drift.
fn knowledge_change(old: &Entry, new: &Entry) -> Option<(&'static str, String)> {
    match (&old.with_knowledge, &new.with_knowledge) {
        (None, None) => None,
        (Some(_), None) => Some(("knowledge", "knowledge stated before, not now".into())),
        (None, Some(_)) => Some(("knowledge", "knowledge stated now, not before".into())),
        (Some(a), Some(b)) if a.outcome == b.outcome && a.parent_sets == b.parent_sets => None,
        (Some(a), Some(b)) => {
            let detail = format!(
                "with the stated knowledge: {} {} → {} {}",
                a.outcome,
                sets(&a.parent_sets),
                b.outcome,
                sets(&b.parent_sets)
            );
            match (a.stable, b.stable) {
                (Some(false), Some(false)) => Some((
                    UNSTABLE_OUTCOME,
                    format!("{detail}; neither result is stable over resampling"),
                )),
                _ => Some(("knowledge", detail)),
            }
        }
    }
}

/// A change of outcome or parent sets: drift, unless both runs resampled and neither headline was
/// stable (then `unstable_outcome`, with both headlines' frequencies).
fn outcome_change(old: &Entry, new: &Entry) -> Option<(&'static str, String)> {
    let outcome = |e: &Entry| e.outcome.clone().unwrap_or_default();
    if old.outcome == new.outcome && old.parent_sets == new.parent_sets {
        return None;
    }
    if let (Some(a), Some(b)) = (&old.stability, &new.stability) {
        if !a.headline_stable && !b.headline_stable {
            return Some((
                UNSTABLE_OUTCOME,
                format!(
                    "{} {} (recurred in {:.2} of {} replicates) → {} {} (recurred in {:.2} of {}); \
                     neither headline is stable, so the change is within what resampling shows",
                    outcome(old),
                    sets(&old.parent_sets),
                    a.headline,
                    a.replicates,
                    outcome(new),
                    sets(&new.parent_sets),
                    b.headline,
                    b.replicates
                ),
            ));
        }
    }
    Some(if old.outcome != new.outcome {
        (
            "outcome",
            format!(
                "{} {} → {} {}",
                outcome(old),
                sets(&old.parent_sets),
                outcome(new),
                sets(&new.parent_sets)
            ),
        )
    } else {
        (
            "parent_sets",
            format!("{} → {}", sets(&old.parent_sets), sets(&new.parent_sets)),
        )
    })
}

/// The sampling error of the difference of two frequencies from `ra` and `rb` replicates (the
/// two-proportion normal approximation; a side without replicates adds nothing).
pub fn sampling_error(a: f64, ra: u32, b: f64, rb: u32) -> f64 {
    let variance = |p: f64, r: u32| match r {
        0 => 0.0,
        _ => p * (1.0 - p) / f64::from(r),
    };
    (variance(a, ra) + variance(b, rb)).sqrt()
}

/// Whether a frequency moved from `a` (of `ra` replicates) to `b` (of `rb`) by more than the
/// threshold and by more than [`SAMPLING_ERRORS`] sampling errors.
pub fn drifted(a: f64, ra: u32, b: f64, rb: u32, threshold: f64) -> bool {
    let change = (a - b).abs();
    change > threshold + FREQUENCY_TOLERANCE
        && change > SAMPLING_ERRORS * sampling_error(a, ra, b, rb) + FREQUENCY_TOLERANCE
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
        .map(|s| {
            let shown: Vec<String> = s.iter().map(|n| crate::text::list_item(n)).collect();
            format!("{{{}}}", shown.join(", "))
        })
        .collect::<Vec<_>>()
        .join(" or ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_move_of_exactly_the_threshold_is_not_drift() {
        // With many replicates the sampling error is small and the threshold decides.
        assert!(!drifted(0.8, 10_000, 0.6, 10_000, 0.2));
        assert!(drifted(0.8, 10_000, 0.55, 10_000, 0.2));
        assert!(!drifted(0.5, 10_000, 0.5, 10_000, 0.0));
    }

    #[test]
    fn a_move_within_twice_the_sampling_error_is_not_drift() {
        // 0.5 → 0.25 with 20 replicates each: the error is sqrt(0.25/20 + 0.1875/20) ≈ 0.148, so
        // twice it (0.296) exceeds the move of 0.25, which passes the threshold of 0.2.
        let error = sampling_error(0.5, 20, 0.25, 20);
        assert!((error - (0.4375f64 / 20.0).sqrt()).abs() < 1e-12, "{error}");
        assert!(!drifted(0.5, 20, 0.25, 20, 0.2));
        // The same move over 200 replicates each is far outside the band.
        assert!(drifted(0.5, 200, 0.25, 200, 0.2));
        // Frequencies of 0 or 1 have no sampling error: the threshold alone decides.
        assert!(drifted(1.0, 4, 0.0, 4, 0.2));
    }

    #[test]
    fn parent_sets_print_as_alternatives() {
        let s = vec![vec!["a".to_string(), "b".into()], vec!["c".into()]];
        assert_eq!(sets(&s), "{a, b} or {c}");
        assert_eq!(sets(&[]), "none");
    }
}
