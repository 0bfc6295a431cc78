//! Determinism (DESIGN.md, "Determinism"): the demo analyses give the digests pinned for this
//! method version, on one thread and on two, and from replicates computed in two parts and merged.

use super::check::{Comparison, Measured};
use super::pinned::{pinned_digest, PinnedAnalysis, PINNED_ANALYSES};
use super::{Case, Group};
use crate::analysis::PARTIAL_SCHEMA;
use crate::analysis::{attach_stability, merge_parts, prepare_read, Partial, Prepared, Silent};
use crate::data::source::Source;
use crate::data::DataReader;
use crate::demo::{DEMO_CSV, DEMO_FILE};
use crate::error::{Error, Result};
use crate::finding::METHOD_VERSION;
use std::path::Path;

const SOURCE: &str = "digests pinned for this method version in src/qualify/pinned.rs (regression \
                      values of this project, also checked by tests/method_version.rs)";

/// The determinism cases.
pub fn cases() -> Vec<Case> {
    let [first, second, third] = &PINNED_ANALYSES;
    vec![
        pinned_case("determinism.demo.1-thread", first, 1),
        pinned_case("determinism.demo.2-threads", first, 2),
        Case::new(
            "determinism.demo.split-merge",
            Group::Determinism,
            &format!(
                "{}: replicates 0..5 and 5..10 computed as two parts and merged give the pinned \
                 digest of the single run",
                first.what
            ),
            SOURCE,
            || vec![against_pinned(&PINNED_ANALYSES[0], split_and_merge)],
        ),
        pinned_case("determinism.demo.bootstrap", second, 2),
        pinned_case("determinism.demo.natural-rule", third, 2),
    ]
}

fn pinned_case(id: &str, analysis: &'static PinnedAnalysis, threads: usize) -> Case {
    Case::new(
        id,
        Group::Determinism,
        &format!(
            "{} on {threads} thread{} gives the digest pinned for {METHOD_VERSION}",
            analysis.what,
            if threads == 1 { "" } else { "s" }
        ),
        SOURCE,
        move || vec![against_pinned(analysis, |a| digest_on(a, threads))],
    )
}

/// The computed digest against the pinned one; an analysis that fails or a version without a
/// pinned digest fails the case with the reason as the observed value.
fn against_pinned(
    analysis: &PinnedAnalysis,
    compute: impl Fn(&PinnedAnalysis) -> Result<String>,
) -> Measured {
    let expected = pinned_digest(METHOD_VERSION, analysis).map_or_else(
        || format!("(no digest is pinned for {METHOD_VERSION})"),
        str::to_string,
    );
    let observed = compute(analysis).unwrap_or_else(|e| format!("the analysis failed: {e}"));
    Measured::new("result digest", Comparison::Exact { expected, observed })
}

/// The demo data read from the embedded copy, validated for the analysis's settings.
fn prepared(analysis: &PinnedAnalysis) -> Result<Prepared> {
    let settings = (analysis.settings)().check().map_err(Error::Settings)?;
    let target = settings.single_target()?;
    let source = Source::from_reader(Box::new(DEMO_CSV.as_bytes()));
    let read = DataReader::start(source, DEMO_FILE.into(), settings.reader())?.read_rows()?;
    prepare_read(Path::new(DEMO_FILE), read, &settings, &target, &Silent)
}

/// The digest of the whole analysis in a pool of `threads` worker threads.
fn digest_on(analysis: &PinnedAnalysis, threads: usize) -> Result<String> {
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .map_err(|e| Error::internal(format!("cannot start {threads} threads: {e}")))?;
    pool.install(|| {
        let prepared = prepared(analysis)?;
        let full = prepared.full_search(&Silent);
        let count = prepared.study.resampling.count;
        let records = prepared.replicates(0..count, &full, &Silent);
        let finding = prepared.finding(full, Vec::new());
        Ok(attach_stability(finding, &records).digest)
    })
}

/// The digest of the analysis merged from two parts, as `analyze --replicate-range` and `merge`
/// make it.
fn split_and_merge(analysis: &PinnedAnalysis) -> Result<String> {
    let prepared = prepared(analysis)?;
    let full = prepared.full_search(&Silent);
    let count = prepared.study.resampling.count;
    let middle = count / 2;
    let part = |start: u32, end: u32| Partial {
        schema: PARTIAL_SCHEMA.into(),
        finding: prepared.finding(full.clone(), Vec::new()),
        content: prepared.content.clone(),
        range: [start, end],
        records: prepared.replicates(start..end, &full, &Silent),
    };
    let parts = vec![
        (format!("part 0..{middle}"), part(0, middle)),
        (format!("part {middle}..{count}"), part(middle, count)),
    ];
    Ok(merge_parts(parts, Vec::new())?.finding.digest)
}
