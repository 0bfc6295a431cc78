//! Pins `METHOD_VERSION` to what the method computes. `verify` trusts that two builds with the same
//! method version give the same digest for the same data, settings and seed; this test makes that
//! true. The analyses and their pinned digests are in `src/qualify/pinned.rs` (one table, which
//! `forebear qualify` checks too); this test runs each analysis through `forebear analyze` on a
//! file. If it fails after a change that alters results (any number, set, order or text in
//! `result.json` other than run facts), bump `METHOD_VERSION` in `src/finding.rs` and record the
//! new digests there under the new version — never edit the digests of a released version.

use forebear::qualify::pinned::{pinned_digest, PINNED_ANALYSES};
use std::path::Path;
use std::process::Stdio;

fn digest(data: &Path, out: &Path, args: &[&str]) -> String {
    let status = crate::common::bin()
        .args(["--quiet", "analyze"])
        .arg(data)
        .arg("--out")
        .arg(out)
        .args(args)
        .stdout(Stdio::null())
        .status()
        .unwrap();
    assert!(status.success());
    let result: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("result.json")).unwrap()).unwrap();
    result["digest"].as_str().unwrap().to_string()
}

#[test]
fn method_version_names_exactly_these_results() {
    let dir = crate::common::fresh_dir("method-version");
    let data = dir.join("filter_discs.csv");
    std::fs::write(&data, forebear::demo::DEMO_CSV).unwrap();
    let current = forebear::finding::METHOD_VERSION;
    for (k, analysis) in PINNED_ANALYSES.iter().enumerate() {
        let got = digest(&data, &dir.join(format!("run-{k}")), analysis.args);
        let expected = pinned_digest(current, analysis).unwrap_or_else(|| {
            panic!(
                "no digest is pinned for method version {current} and '{}'; record this: {got}",
                analysis.what
            )
        });
        assert_eq!(
            got, expected,
            "{}: the results changed under method version {current}; if the change is meant, \
             bump METHOD_VERSION and pin the new digests",
            analysis.what
        );
    }
    std::fs::remove_dir_all(&dir).unwrap();
}
