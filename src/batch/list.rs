//! `forebear batch PLAN --list [--shards N] [--json]`: the plan's (study, target) pairs and the
//! shard each belongs to, for workflow engines that fan out over the pairs themselves. Nothing is
//! read but the plan; nothing runs.
//!
//! The JSON layout (`forebear.batch-list/1`), one object:
//!
//! ```json
//! {"schema": "forebear.batch-list/1", "plan": "nightly.toml", "plan_sha256": "…",
//!  "shards": 3,
//!  "pairs": [{"index": 0, "study": "line_a", "target": "crush_strength", "shard": 0}, …]}
//! ```
//!
//! `pairs` is in plan order (studies by name, targets as written); `index` is the pair's position,
//! and `shard` is `index` modulo `shards`, the shard `--shard SHARD/SHARDS` runs it in.

use super::plan::{Plan, Shard};
use serde::Serialize;

/// Version of the list layout.
pub const LIST_SCHEMA: &str = "forebear.batch-list/1";

/// The pairs of a plan with their shards.
#[derive(Debug, Serialize, PartialEq)]
pub struct PairList {
    /// Layout version.
    pub schema: &'static str,
    /// The plan file's name.
    pub plan: String,
    /// SHA-256 of the plan file's text (a shard run checks its plan against the collect step's).
    pub plan_sha256: String,
    /// Number of shards the pairs are assigned to.
    pub shards: u32,
    /// Every pair, in plan order.
    pub pairs: Vec<ListedPair>,
}

/// One (study, target) pair and its shard.
#[derive(Debug, Serialize, PartialEq)]
pub struct ListedPair {
    /// Position in the plan (0-based).
    pub index: usize,
    /// The study's name.
    pub study: String,
    /// The target column.
    pub target: String,
    /// The shard (0-based, below `shards`) that runs this pair.
    pub shard: u32,
}

/// The pairs of `plan` assigned to `shards` shards (at least 1).
pub fn list(plan: &Plan, shards: u32) -> PairList {
    let pairs = plan
        .pairs()
        .iter()
        .map(|pair| ListedPair {
            index: pair.index,
            study: pair.study.name.clone(),
            target: pair.target.to_string(),
            shard: (0..shards)
                .find(|&index| {
                    Shard {
                        index,
                        count: shards,
                    }
                    .holds(pair.index)
                })
                .unwrap_or(0),
        })
        .collect();
    PairList {
        schema: LIST_SCHEMA,
        plan: plan.file_name.clone(),
        plan_sha256: plan.sha256.clone(),
        shards,
        pairs,
    }
}

/// The list as text: one line per pair, `SHARD/SHARDS  STUDY  TARGET`.
pub fn to_text(list: &PairList) -> String {
    list.pairs
        .iter()
        .map(|p| format!("{}/{}\t{}\t{}\n", p.shard, list.shards, p.study, p.target))
        .collect()
}
