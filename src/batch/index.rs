//! `index.md` and `index.html` of a batch output, rendered from the [`Summary`] alone (so that
//! collected shards give the same bytes as one run). The Markdown goes through minijinja with every
//! value escaped for Markdown; the HTML through minijinja with HTML auto-escaping, in a
//! self-contained page under the dossier's Content-Security-Policy (no script, no network).

use super::drift::{sets, Change};
use super::{Entry, Status, Summary};
use crate::error::{Error, Result};
use crate::report::html::CONTENT_SECURITY_POLICY;
use minijinja::value::Serde;
use minijinja::{context, Environment, Value};
use serde::Serialize;

const MARKDOWN_TEMPLATE: &str = include_str!("../../templates/batch-index.md");
const HTML_TEMPLATE: &str = include_str!("../../templates/batch-index.html");
pub(crate) const CSS: &str = concat!(
    include_str!("../../templates/palette.css"),
    include_str!("../../templates/batch-index.css")
);

/// One row of the index: a (study, target) pair.
#[derive(Serialize, schemars::JsonSchema)]
pub(crate) struct Row {
    study: String,
    target: String,
    failed: bool,
    error: Option<String>,
    outcome: String,
    parent_sets: String,
    stability: Option<String>,
    stable: bool,
    /// More than half of the replicates reached another result.
    contradicted: bool,
    /// The most frequent other replicate result, as "0.96: identified {a, b}".
    other: Option<String>,
    replicates: Option<u32>,
    fingerprint: Option<String>,
    rows_used: Option<usize>,
    compared: bool,
    changes: Vec<Change>,
    /// Outcome changes between two unstable headlines (not drift).
    unstable: Vec<Change>,
    /// Percent-encoded folder path relative to the index (`study/target`).
    href: Option<String>,
    /// MB(target) in selection order, as "{a, b}".
    markov_boundary: String,
    /// The first 12 hex digits of the result digest.
    digest: Option<String>,
    /// The result with the stated knowledge, as "identified {b} (b on knowledge)".
    with_knowledge: Option<String>,
}

fn rows(summary: &Summary) -> Vec<Row> {
    let (changes, unstable): (&[Change], &[Change]) = match &summary.drift {
        Some(d) => (&d.changes, &d.unstable_outcomes),
        None => (&[], &[]),
    };
    summary
        .entries()
        .map(|(study, target, entry)| {
            row(
                study,
                target,
                entry,
                [changes, unstable],
                summary.drift.is_some(),
            )
        })
        .collect()
}

pub(crate) fn row(
    study: &str,
    target: &str,
    e: &Entry,
    lists: [&[Change]; 2],
    compared: bool,
) -> Row {
    let failed = e.status == Status::Failed;
    let of_pair = |list: &[Change]| -> Vec<Change> {
        list.iter()
            .filter(|c| c.study == study && c.target == target)
            .cloned()
            .collect()
    };
    Row {
        study: study.into(),
        target: target.into(),
        failed,
        error: e.error.clone(),
        outcome: if failed {
            "failed".into()
        } else {
            e.outcome.clone().unwrap_or_default()
        },
        parent_sets: if failed {
            String::new()
        } else {
            parents_or_candidates(e.outcome.as_deref(), &e.parent_sets)
        },
        stability: e.stability.as_ref().map(|s| format!("{:.2}", s.headline)),
        stable: e.stability.as_ref().is_some_and(|s| s.headline_stable),
        contradicted: e
            .stability
            .as_ref()
            .is_some_and(|s| s.headline_contradicted),
        other: e
            .stability
            .as_ref()
            .and_then(|s| s.most_frequent_other.as_ref())
            .map(|o| {
                format!(
                    "{:.2}: {} {}",
                    o.frequency,
                    o.outcome.name(),
                    sets(&o.parent_sets)
                )
            }),
        replicates: e.stability.as_ref().map(|s| s.replicates),
        fingerprint: e
            .data
            .as_ref()
            .map(|d| d.content_sha256.chars().take(12).collect()),
        rows_used: e.data.as_ref().map(|d| d.rows_used),
        compared,
        changes: of_pair(lists[0]),
        unstable: of_pair(lists[1]),
        href: e
            .dossier
            .as_ref()
            .map(|d| d.split('/').map(url_segment).collect::<Vec<_>>().join("/")),
        markov_boundary: format!("{{{}}}", e.markov_boundary.join(", ")),
        digest: e.digest.as_ref().map(|d| d.chars().take(12).collect()),
        with_knowledge: e.with_knowledge.as_ref().map(|k| {
            let resting = match k.resting_on_knowledge.is_empty() {
                true => String::new(),
                false => format!(" ({} on knowledge)", k.resting_on_knowledge.join(", ")),
            };
            format!("{} {}{resting}", k.outcome, sets(&k.parent_sets))
        }),
    }
}

/// The "parents or candidates" cell: the parent set when identified; the candidates when not
/// identifiable (the data cannot orient them, so they are not shown as parents); the groups in
/// conflict; else none.
pub(crate) fn parents_or_candidates(outcome: Option<&str>, parent_sets: &[Vec<String>]) -> String {
    match outcome {
        Some("identified") => sets(parent_sets),
        Some("not_identifiable") if !parent_sets.is_empty() => {
            let names: Vec<String> = parent_sets
                .iter()
                .flatten()
                .map(|n| crate::text::list_item(n))
                .collect();
            format!("candidates (cause or effect): {}", names.join(", "))
        }
        Some("conflict") => format!("none claimed; groups in conflict: {}", sets(parent_sets)),
        _ => "none".into(),
    }
}

/// When a page was made, as its first lines say. Only the pages carry it: `summary.json` holds
/// no time (its SHA-256 identifies a run for drift, and collected shards reproduce it byte for
/// byte), so the date never enters what is compared.
#[derive(Clone, Debug, PartialEq)]
pub struct Dated {
    /// What the time is: "Run started (UTC)", "Shards collected (UTC)".
    pub label: String,
    /// The time, UTC, RFC 3339.
    pub utc: String,
}

impl Dated {
    /// A run that started at `utc`.
    pub fn run(utc: &str) -> Dated {
        Dated {
            label: "Run started (UTC)".into(),
            utc: utc.into(),
        }
    }

    /// Shard outputs collected at `utc`.
    pub fn collection(utc: &str) -> Dated {
        Dated {
            label: "Shards collected (UTC)".into(),
            utc: utc.into(),
        }
    }
}

/// A path segment percent-encoded (RFC 3986): everything but unreserved characters.
fn url_segment(segment: &str) -> String {
    let mut out = String::new();
    for byte in segment.bytes() {
        if byte.is_ascii_alphanumeric() || matches!(byte, b'-' | b'.' | b'_' | b'~') {
            out.push(byte as char);
        } else {
            out.push_str(&format!("%{byte:02X}"));
        }
    }
    out
}

fn page_context(summary: &Summary, dated: &Dated) -> Value {
    let drift = summary.drift.as_ref();
    let pairs_changed = drift.map_or(0, |d| {
        d.changes
            .iter()
            .map(|c| (&c.study, &c.target))
            .collect::<std::collections::BTreeSet<_>>()
            .len()
    });
    let vanished: Vec<&Change> = drift
        .map(|d| d.changes.iter().filter(|c| c.kind == "vanished").collect())
        .unwrap_or_default();
    context! {
        plan => Value::from(Serde(&summary.plan)),
        plan_sha => summary.plan.sha256.chars().take(12).collect::<String>(),
        tool => summary.tool.describe(),
        shard => Value::from(Serde(summary.shard)),
        totals => Value::from(Serde(&summary.totals)),
        drift => Value::from(Serde(drift)),
        previous_sha => drift.map(|d| d.previous_summary_sha256.chars().take(12).collect::<String>()),
        pairs_changed => pairs_changed,
        vanished => Value::from(Serde(&vanished)),
        rows => Value::from(Serde(rows(summary))),
        dated_label => dated.label.clone(),
        dated_utc => dated.utc.clone(),
    }
}

/// `index.md`.
pub fn render_markdown(summary: &Summary, dated: &Dated) -> Result<String> {
    let mut env = Environment::new();
    crate::report::markdown::markdown_environment(&mut env);
    let text = render(env, "batch-index.md", MARKDOWN_TEMPLATE, summary, dated)?;
    Ok(format!("{}\n", text.trim_end()))
}

/// `index.html`.
pub fn render_html(summary: &Summary, dated: &Dated) -> Result<String> {
    let mut env = Environment::new();
    crate::report::markdown::template_syntax(&mut env);
    env.add_global("css", Value::from_safe_string(CSS.to_string()));
    env.add_global("csp", CONTENT_SECURITY_POLICY);
    render(env, "batch-index.html", HTML_TEMPLATE, summary, dated)
}

fn render(
    env: Environment<'static>,
    name: &'static str,
    template: &'static str,
    summary: &Summary,
    dated: &Dated,
) -> Result<String> {
    render_page(env, name, template, page_context(summary, dated))
}

pub(crate) fn render_page(
    mut env: Environment<'static>,
    name: &'static str,
    template: &'static str,
    context: Value,
) -> Result<String> {
    env.add_template(name, template)
        .map_err(|e| Error::internal(format!("{name} template: {e}")))?;
    env.get_template(name)
        .and_then(|t| t.render(context))
        .map_err(|e| Error::internal(format!("cannot render {name}: {e:#}")))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn candidates_are_not_shown_as_parents() {
        let two = vec![vec!["a".to_string()], vec!["b".to_string()]];
        assert_eq!(
            parents_or_candidates(Some("not_identifiable"), &two),
            "candidates (cause or effect): a, b"
        );
        assert_eq!(
            parents_or_candidates(Some("identified"), &[vec!["a".into(), "b".into()]]),
            "{a, b}"
        );
        assert_eq!(
            parents_or_candidates(Some("conflict"), &two),
            "none claimed; groups in conflict: {a} or {b}"
        );
        assert_eq!(parents_or_candidates(Some("not_identifiable"), &[]), "none");
        assert_eq!(parents_or_candidates(Some("empty_boundary"), &[]), "none");
    }

    #[test]
    fn link_segments_are_percent_encoded() {
        assert_eq!(url_segment("crush strength#1"), "crush%20strength%231");
        assert_eq!(url_segment("a-b_c.d~"), "a-b_c.d~");
        assert_eq!(url_segment("é"), "%C3%A9");
    }
}
