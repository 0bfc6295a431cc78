//! The pinned result digests of the demo analyses, one set per method version: `verify` trusts
//! that two builds with the same method version give the same digest for the same data, settings
//! and seed, and these values make that checkable. `tests/method_version.rs` runs each analysis
//! through the command line and compares with this table; `forebear qualify` runs them in the
//! library on 1 and 2 threads and from merged parts. If the results change on purpose, bump
//! `METHOD_VERSION` in `src/finding.rs` and pin the new digests here under the new version — never
//! edit the digests of a released version.
//!
//! The pinned digests are regression values of this project (no outside source); the computations
//! behind them are checked against outside references by the other cases.

use crate::measure::Scaling;
use crate::resample::PlanKind;
use crate::search::StoppingRule;
use crate::settings::SettingsInput;

/// One pinned analysis of the demo data (`demo-data/filter_discs.csv`).
pub struct PinnedAnalysis {
    /// What it is, as the table below names it.
    pub what: &'static str,
    /// Its flags after `forebear analyze DATA` (a unit test checks they give [`Self::settings`]).
    pub args: &'static [&'static str],
    /// The same settings, typed.
    pub settings: fn() -> SettingsInput,
}

/// The pinned analyses, in the order versions from 3 on pin them (versions 1 and 2 pinned the
/// first two only).
pub const PINNED_ANALYSES: [PinnedAnalysis; 3] = [
    PinnedAnalysis {
        what: "demo crush_strength, complementary pairs ×10, rank scaling",
        args: &["--target", "crush_strength", "--replicates", "10"],
        settings: || SettingsInput {
            replicates: Some(10),
            ..SettingsInput::for_target("crush_strength")
        },
    },
    PinnedAnalysis {
        what: "demo pore_density, bootstrap ×4, standardize scaling, seed 7",
        args: &[
            "--target",
            "pore_density",
            "--resample",
            "bootstrap",
            "--replicates",
            "4",
            "--scaling",
            "standardize",
            "--seed",
            "7",
        ],
        settings: || SettingsInput {
            resample: Some(PlanKind::Bootstrap),
            replicates: Some(4),
            scaling: Some(Scaling::Standardize),
            seed: Some(7),
            ..SettingsInput::for_target("pore_density")
        },
    },
    PinnedAnalysis {
        what: "demo crush_strength, natural stopping rule, no resampling",
        args: &[
            "--target",
            "crush_strength",
            "--replicates",
            "0",
            "--stopping-rule",
            "natural",
        ],
        settings: || SettingsInput {
            replicates: Some(0),
            stopping_rule: Some(StoppingRule::Natural),
            ..SettingsInput::for_target("crush_strength")
        },
    },
];

/// (method version, analysis, digest of its result).
pub const PINNED: [(&str, &str, &str); 16] = [
    (
        "forebear-method/1",
        "demo crush_strength, complementary pairs ×10, rank scaling",
        "84c41b3b92a04946d0fa0d33ae4dd4b2f22509b11cc76ba6d4dccacec09408cd",
    ),
    (
        "forebear-method/1",
        "demo pore_density, bootstrap ×4, standardize scaling, seed 7",
        "f3b74179fb435032befb43bf2696bdca344028d9d13b783809aca202ae215e3b",
    ),
    // Version 2: the data record gained the reader settings (delimiter, decimal comma, missing
    // policy) and the duplicate columns, and "#N/A" joined the default missing tokens; every
    // statistic of these two results is as under version 1.
    (
        "forebear-method/2",
        "demo crush_strength, complementary pairs ×10, rank scaling",
        "973531c11f749dd9bc5486472a3d72941883b8cd833a9924d9d295364c68add6",
    ),
    (
        "forebear-method/2",
        "demo pore_density, bootstrap ×4, standardize scaling, seed 7",
        "7ce897daa45222109517a2046f8bbf336ab930b65875dcb353dc28d18f08bbdc",
    ),
    // Version 3: the calibrated stopping rule is the default (permutation tests of every forward
    // step, the shrink phase, the collider test, the spread-aware independence test judged per
    // direction, the screening check, every member in the parent step), the settings record the
    // selection rule, steps record their tests; the natural rule stays selectable, and its
    // statistics are unchanged (its digest moves with the new fields of the record).
    (
        "forebear-method/3",
        "demo crush_strength, complementary pairs ×10, rank scaling",
        "2786fb16bfd38688a0e6e61ea2a2877d7336b357ad7db6ab48caf97ebc386bfc",
    ),
    (
        "forebear-method/3",
        "demo pore_density, bootstrap ×4, standardize scaling, seed 7",
        "4b1963cf14d87cad6e2495ae2ecd053abae3f0f86d405e841e2c4b991edcc906",
    ),
    (
        "forebear-method/3",
        "demo crush_strength, natural stopping rule, no resampling",
        "15d0ecdb5759a9f9e6c332079a9bdb62d6b5476c9c75846cde72b5bdd49932e5",
    ),
    // Version 4: the seed is recorded once (`settings.seed`); the resampling plan no longer repeats
    // it (`settings.resampling.seed`, `stability.plan.seed`). Every other field, statistic and
    // digest input is as under version 3 (compared field by field on both demo results).
    (
        "forebear-method/4",
        "demo crush_strength, complementary pairs ×10, rank scaling",
        "fc5d2789340efc1b7a54dd0430db8c02b2f728d406b10d8302ac8e4a4e3ea2b9",
    ),
    (
        "forebear-method/4",
        "demo pore_density, bootstrap ×4, standardize scaling, seed 7",
        "49fe1af8863ccacca46bb3fa23a0b7f151c6137be2b3ac292bcbdd79528edb2e",
    ),
    (
        "forebear-method/4",
        "demo crush_strength, natural stopping rule, no resampling",
        "4878314b59e7db543715043c9996a510fddee2c11ece3ca9f6ed350a5c329c4c",
    ),
    // Version 5: canonical JSON is RFC 8785 (JSON Canonicalization Scheme): numbers as ECMAScript
    // writes doubles (`1` not `1.0`, `1e-7`), member names sorted by UTF-16 code units. Every field
    // of both demo results other than `tool.method` and `digest` is as under version 4 (compared
    // field by field); only the text that is hashed changed.
    (
        "forebear-method/5",
        "demo crush_strength, complementary pairs ×10, rank scaling",
        "08a86ad6624b5f9c2257e995af55597aae6c521fdbbd1676da60952ad5f43358",
    ),
    (
        "forebear-method/5",
        "demo pore_density, bootstrap ×4, standardize scaling, seed 7",
        "3092aced0e39170f4c8e4f519f4dba0db781d1dbda472a7c65924019cf25e24c",
    ),
    (
        "forebear-method/5",
        "demo crush_strength, natural stopping rule, no resampling",
        "daeb60464577f541f5db189dac233e567a5bc78fd6aa7d8be8e865d02fd7775e",
    ),
    // Version 6: the shuffles of permutation tests read their ChaCha20 stream 32 bits at a time
    // through Lemire's multiply-and-reject method (was 64 bits and two divisions per index), so
    // every permutation draw is another draw: p-values, permutation counts and critical values
    // change, and with them borderline decisions in replicates (the demo's 10-replicate run: 2 of
    // 10 records, outcome frequency 0.8 → 0.7). The natural-rule result, which makes no
    // permutation test, differs from version 5 in `tool.method` alone (compared field by field).
    (
        "forebear-method/6",
        "demo crush_strength, complementary pairs ×10, rank scaling",
        "09e9e27376ee8a58420e65767826a4a46b2053598b8fe12067172711800d13c0",
    ),
    (
        "forebear-method/6",
        "demo pore_density, bootstrap ×4, standardize scaling, seed 7",
        "f46c6798e533ed3ca8214452f5f673c40e180e27a9d4468069cae0c8bedc9cf6",
    ),
    (
        "forebear-method/6",
        "demo crush_strength, natural stopping rule, no resampling",
        "92eb594fda1e50dd1cae29b8a7965ac58f2b09fa15d13b7378e1a3b7121e4988",
    ),
];

/// The digest pinned for `analysis` under `method`, if any.
pub fn pinned_digest(method: &str, analysis: &PinnedAnalysis) -> Option<&'static str> {
    PINNED
        .iter()
        .find(|(m, what, _)| *m == method && *what == analysis.what)
        .map(|(_, _, digest)| *digest)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn each_analysis_flags_give_its_typed_settings() {
        for analysis in &PINNED_ANALYSES {
            let mut argv = vec!["forebear", "analyze", "filter_discs.csv"];
            argv.extend(analysis.args);
            let (cli, explicit) = crate::cli::parse(argv).expect("the flags parse");
            let crate::cli::Command::Analyze(args) = cli.command else {
                panic!("an analyze command line")
            };
            assert_eq!(
                args.given(&explicit),
                (analysis.settings)(),
                "{}",
                analysis.what
            );
        }
    }

    #[test]
    fn every_pinned_row_names_a_pinned_analysis() {
        for (method, what, _) in PINNED {
            assert!(
                PINNED_ANALYSES.iter().any(|a| a.what == what),
                "{method}: {what}"
            );
        }
    }
}
