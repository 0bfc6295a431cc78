//! `forebear verify` on real dossiers: the round trip, every tamper case of issues 5 and 12 with
//! the explanation the reviewer reads (forgeries done as a careful forger would: every hash in the
//! manifest recomputed and the manifest re-sealed), another thread count, spot checks, dossiers
//! made with other settings, and `fingerprint`. Runs the real binary on files written by
//! `forebear analyze`.

use crate::common;
use crate::common::verify;
use crate::common::{
    bin, forge_text, forge_texts, lossy_stdout as text, reseal, sha256_hex as hex_sha256, Scratch,
};
use forebear::manifest::Manifest;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// A fresh folder for one test, removed when the test ends.
fn scratch(name: &str) -> Scratch {
    Scratch::new(&format!("verify-{name}"))
}

/// The demo data and its dossier (10 replicates) in a fresh folder.
fn analysed(name: &str) -> (Scratch, PathBuf, PathBuf) {
    let dir = scratch(name);
    let data = dir.join("filter_discs.csv");
    std::fs::write(&data, forebear::demo::DEMO_CSV).unwrap();
    let out = dir.join("dossier");
    let status = bin()
        .args(["--quiet", "analyze"])
        .arg(&data)
        .args(["--target", "crush_strength", "--replicates", "10", "--out"])
        .arg(&out)
        .stdout(std::process::Stdio::null())
        .status()
        .unwrap();
    assert!(status.success());
    (dir, data, out)
}

/// Asserts the exit code, the verdict on the last line and that no panic text appeared.
fn assert_verdict(output: &Output, code: i32, verdict: &str) -> String {
    let stdout = text(output);
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(code), "{stdout}\n{stderr}");
    assert_eq!(stdout.lines().last(), Some(verdict), "{stdout}");
    assert!(
        !stderr.contains("panicked") && !stderr.contains("internal error"),
        "{stderr}"
    );
    stdout
}

/// Runs `verify` and asserts exit 0 and `VERIFIED`; returns the report.
fn verified(out: &Path, data: &Path, extra: &[&str]) -> String {
    assert_verdict(&verify(out, data, extra), 0, "VERIFIED")
}

/// Runs `verify` and asserts exit 1 and `MISMATCH`; returns the report.
fn mismatched(out: &Path, data: &Path, extra: &[&str]) -> String {
    assert_verdict(&verify(out, data, extra), 1, "MISMATCH")
}

/// The data file's lines, changed by `edit`, written to `name` beside it.
fn edited_data(data: &Path, name: &str, edit: impl FnOnce(&mut Vec<String>)) -> PathBuf {
    let mut lines: Vec<String> = std::fs::read_to_string(data)
        .unwrap()
        .lines()
        .map(String::from)
        .collect();
    edit(&mut lines);
    let path = data.with_file_name(name);
    std::fs::write(&path, lines.join("\n") + "\n").unwrap();
    path
}

fn read_manifest(out: &Path) -> Manifest {
    serde_json::from_str(&std::fs::read_to_string(out.join("manifest.json")).unwrap()).unwrap()
}

/// Every check of a verification, in order.
const CHECKS: [&str; 7] = [
    "manifest",
    "dossier files",
    "settings",
    "data",
    "tool",
    "re-run",
    "rendered files",
];

/// The status label a check printed ("ok", "ok (note)", "MISMATCH", "skipped").
fn status<'a>(stdout: &'a str, check: &str) -> &'a str {
    stdout
        .lines()
        .find_map(|l| {
            l.strip_prefix(check)
                .filter(|rest| rest.starts_with(' '))
                .map(str::trim)
        })
        .unwrap_or_else(|| panic!("no check {check}: {stdout}"))
}

/// Asserts that the report says `needle`.
fn assert_says(stdout: &str, needle: &str) {
    assert!(stdout.contains(needle), "{needle:?} expected in: {stdout}");
}

/// Asserts that each of `checks` printed `label`.
fn assert_statuses(stdout: &str, checks: &[&str], label: &str) {
    for check in checks {
        assert_eq!(status(stdout, check), label, "{check}: {stdout}");
    }
}

/// The run facts verify takes from the record, as the text report lists them.
const TAKEN_FROM_RECORD: &str = "taken from the record, not recomputed (run facts, which the \
     digest leaves out too): result.json /run/started_utc, /run/duration_seconds, /run/threads, \
     /run/data_path, /run/command_line, /run/operator, /tool/version, /tool/build, /data/file";

/// A copy of a dossier folder (its files) beside it, to forge without analysing again.
fn copy_dossier(out: &Path, name: &str) -> PathBuf {
    let copy = out.with_file_name(name);
    std::fs::create_dir_all(&copy).unwrap();
    for entry in std::fs::read_dir(out).unwrap() {
        let entry = entry.unwrap();
        std::fs::copy(entry.path(), copy.join(entry.file_name())).unwrap();
    }
    copy
}

/// The 1-based number of the first line of `name` in `dossier` that contains `needle`.
fn line_number(dossier: &Path, name: &str, needle: &str) -> usize {
    std::fs::read_to_string(dossier.join(name))
        .unwrap()
        .lines()
        .position(|l| l.contains(needle))
        .unwrap_or_else(|| panic!("{name} holds no {needle:?}"))
        + 1
}

#[test]
fn demo_round_trip_verifies_with_exit_0_and_every_check_ok() {
    let (_dir, data, out) = analysed("round-trip");
    let stdout = verified(&out, &data, &[]);
    assert_statuses(&stdout, &CHECKS, "ok");
    assert_says(&stdout, "bytes identical");
    assert_says(&stdout, "all 10 replicates reproduce the recorded digest");
    assert_says(
        &stdout,
        "and result.json field for field, stability included",
    );
    assert_says(
        &stdout,
        &format!("{TAKEN_FROM_RECORD}; manifest.json /generated_utc\n"),
    );
    assert_says(
        &stdout,
        "the 6 files rendered again from the re-run equal the files on disk byte for byte: \
             result.json, dossier.md, dossier.html, stability.csv, trace.csv, manifest.json",
    );
    assert_says(
        &stdout,
        "the 6 files of a dossier are present and match the manifest",
    );
}

#[test]
fn manifest_records_build_method_fingerprints_settings_digests_files_and_command() {
    let (_dir, data, out) = analysed("manifest");
    let manifest = read_manifest(&out);
    let result: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("result.json")).unwrap()).unwrap();
    let bytes = std::fs::read(&data).unwrap();
    assert_eq!(manifest.schema, "forebear.manifest/1");
    assert_eq!(manifest.tool.version, env!("CARGO_PKG_VERSION"));
    assert_eq!(manifest.tool.method, forebear::finding::METHOD_VERSION);
    assert_eq!(manifest.data.sha256, hex_sha256(&bytes));
    assert_eq!(manifest.data.size_bytes, bytes.len() as u64);
    assert_eq!(
        manifest.data.content.sha256,
        result["data"]["content_sha256"]
    );
    assert_eq!(
        manifest.data.content.rows,
        forebear::demo::DEMO_CSV.lines().count() - 1
    );
    assert_eq!(manifest.results.digest, result["digest"]);
    assert_eq!(manifest.results.replicates.len(), 10);
    assert_eq!(
        serde_json::to_value(&manifest.results.replicates).unwrap(),
        result["stability"]["replicate_digests"]
    );
    for name in [
        "result.json",
        "dossier.md",
        "dossier.html",
        "stability.csv",
        "trace.csv",
    ] {
        let on_disk = std::fs::read(out.join(name)).unwrap();
        assert_eq!(manifest.files[name], hex_sha256(&on_disk), "{name}");
    }
    assert!(manifest.command.reproduce.starts_with("forebear analyze "));
    assert!(manifest.command.reproduce.contains("--seed 1"));
    assert!(manifest
        .command
        .original
        .iter()
        .any(|a| a == "crush_strength"));
    assert_eq!(manifest.seal, manifest.computed_seal());
}

#[test]
fn one_changed_byte_of_data_is_located_by_row_line_and_column() {
    let (_dir, data, out) = analysed("byte");
    // Line 50 is data row 49; change the first digit after its first decimal point.
    let changed = edited_data(&data, "byte.csv", |lines| {
        let line = &mut lines[49];
        let at = line.find('.').unwrap() + 1;
        let digit = line.as_bytes()[at];
        let new = if digit == b'7' { "8" } else { "7" };
        line.replace_range(at..at + 1, new);
    });
    let column = forebear::demo::DEMO_CSV
        .lines()
        .next()
        .unwrap()
        .split(',')
        .next()
        .unwrap();
    let stdout = mismatched(&out, &changed, &[]);
    assert_says(&stdout, "different data");
    assert_says(&stdout, &format!(
            "1 data row(s) differ from the analysed file, first at data row 49 (line 50), column '{column}'"
        ));
    assert_says(&stdout, "not run: the data differ");
}

#[test]
fn a_removed_row_is_named_with_both_row_counts() {
    let (_dir, data, out) = analysed("row");
    let fewer = edited_data(&data, "fewer.csv", |lines| {
        lines.remove(101);
    });
    let stdout = mismatched(&out, &fewer, &[]);
    let rows = forebear::demo::DEMO_CSV.lines().count() - 1;
    assert_says(
        &stdout,
        &format!(
            "rows: the analysed file has {rows} data rows, the received file {}",
            rows - 1
        ),
    );
    assert_says(
        &stdout,
        "data row 101 of the analysed file is missing from the received file",
    );
}

#[test]
fn a_renamed_column_is_named_and_its_values_reported_unchanged() {
    let (_dir, data, out) = analysed("rename");
    let renamed = edited_data(&data, "renamed.csv", |lines| {
        lines[0] = lines[0].replace("probe_gap", "probe_gap_mm");
    });
    let stdout = mismatched(&out, &renamed, &[]);
    assert_says(
        &stdout,
        "'probe_gap' is named 'probe_gap_mm' in the received file (its values are unchanged)",
    );
}

#[test]
fn resaved_with_crlf_and_quotes_verifies_with_a_same_content_note() {
    let (_dir, data, out) = analysed("crlf");
    let quoted: Vec<String> = forebear::demo::DEMO_CSV
        .lines()
        .map(|l| {
            l.split(',')
                .map(|c| format!("\"{c}\""))
                .collect::<Vec<_>>()
                .join(",")
        })
        .collect();
    let resaved = data.with_file_name("resaved.csv");
    std::fs::write(&resaved, quoted.join("\r\n") + "\r\n").unwrap();
    let stdout = verified(&out, &resaved, &[]);
    assert_says(&stdout, "data           ok (note)");
    assert_says(&stdout, "same content, different bytes");
    assert_says(&stdout, "reproduce the recorded digest");
    // The dossier records the analysed file's name, bytes hash and size, not the copy's.
    assert_says(
        &stdout,
        &format!(
            "{TAKEN_FROM_RECORD}, /data/sha256, /data/size_bytes; manifest.json /generated_utc"
        ),
    );
    assert_eq!(status(&stdout, "rendered files"), "ok", "{stdout}");
}

#[test]
fn an_edited_html_dossier_is_detected_and_named() {
    let (_dir, data, out) = analysed("html");
    let path = out.join("dossier.html");
    let html = std::fs::read_to_string(&path).unwrap();
    std::fs::write(&path, html.replacen("identified", "confirmed", 1)).unwrap();
    let stdout = mismatched(&out, &data, &[]);
    assert_says(&stdout, "dossier files  MISMATCH");
    assert_says(&stdout, "dossier.html was edited after generation");
    // The analysis itself still reproduces: the reviewer learns that only the page was touched.
    assert_says(&stdout, "reproduce the recorded digest");
    assert_says(
        &stdout,
        "dossier.html differs from its re-rendering: first difference at line",
    );
}

#[test]
fn an_edited_result_json_is_detected_and_the_edited_field_named() {
    let (_dir, data, out) = analysed("result");
    let path = out.join("result.json");
    let mut result: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
    result["parent_sets"] = serde_json::json!([["ambient_humidity"]]);
    std::fs::write(&path, serde_json::to_string_pretty(&result).unwrap()).unwrap();
    let stdout = mismatched(&out, &data, &[]);
    assert_says(&stdout, "result.json was edited after generation");
    assert_says(&stdout, "result.json no longer matches it");
    assert_says(&stdout, "first difference from result.json at /parent_sets");
}

#[test]
fn settings_changed_in_the_manifest_are_detected_without_and_with_a_new_seal() {
    let (_dir, data, out) = analysed("settings");
    let original = std::fs::read_to_string(out.join("manifest.json")).unwrap();
    let mut manifest = read_manifest(&out);
    manifest.settings.canonical["study"]["alpha"] = serde_json::json!(0.01);
    std::fs::write(out.join("manifest.json"), manifest.to_text()).unwrap();
    let stdout = mismatched(&out, &data, &[]);
    assert_says(&stdout, "manifest.json was edited after generation");
    assert_says(&stdout, "the settings in manifest.json were changed");
    assert_says(
        &stdout,
        "at /study/alpha: 0.05 in result.json, 0.01 in manifest.json",
    );
    // Resealed with the settings hash recomputed: the disagreement with result.json remains.
    std::fs::write(out.join("manifest.json"), &original).unwrap();
    reseal(&out, |m| {
        m.settings.canonical["study"]["alpha"] = serde_json::json!(0.01);
    });
    let stdout = mismatched(&out, &data, &[]);
    assert_says(&stdout, "manifest       ok");
    assert_says(&stdout, "at /study/alpha");
    assert_says(
        &stdout,
        "first difference from result.json at /settings/alpha",
    );
}

#[test]
fn a_different_seed_recorded_consistently_everywhere_fails_the_rerun() {
    // A forger changes the seed (recorded once) in result.json and the manifest and recomputes every hash: only
    // re-running the analysis can tell.
    let (_dir, data, out) = analysed("seed");
    let path = out.join("result.json");
    let mut result: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
    result["settings"]["seed"] = 2.into();
    let text = serde_json::to_string_pretty(&result).unwrap() + "\n";
    std::fs::write(&path, &text).unwrap();
    reseal(&out, |m| {
        m.settings.canonical["study"] = result["settings"].clone();
    });
    let stdout = mismatched(&out, &data, &[]);
    for check in ["manifest", "dossier files", "settings", "data", "tool"] {
        assert!(
            stdout
                .lines()
                .any(|l| l.starts_with(check) && l.ends_with(" ok")),
            "{check} should pass: {stdout}"
        );
    }
    assert_says(&stdout, "re-run         MISMATCH");
    assert_says(&stdout, "seed 2");
    assert_says(&stdout, "first difference from result.json at /trace/");
    assert_says(
        &stdout,
        "re-run differ from their records; the first is replicate 0",
    );
}

#[test]
fn verification_on_one_thread_and_as_a_spot_check_both_verify() {
    let (_dir, data, out) = analysed("threads");
    let one = bin()
        .args(["--quiet", "--threads", "1", "verify"])
        .arg(&out)
        .arg("--data")
        .arg(&data)
        .output()
        .unwrap();
    assert_verdict(&one, 0, "VERIFIED");
    let spot = verify(
        &out,
        &data,
        &["--replicates-sample", "3", "--sample-seed", "7"],
    );
    let stdout = assert_verdict(&spot, 0, "VERIFIED");
    let chosen = forebear::verify::sample_replicates(10, 3, 7);
    let listed: Vec<String> = chosen.iter().map(u32::to_string).collect();
    assert_says(
        &stdout,
        &format!("the 3 sampled replicates ({})", listed.join(", ")),
    );
    assert_says(
        &stdout,
        "SPOT CHECK ONLY: 3 of 10 replicates re-run (sample seed 7)",
    );
    assert!(
        stdout
            .contains("not checked: whether the other 7 replicate records are what a re-run gives"),
        "{stdout}"
    );
    assert_statuses(&stdout, &CHECKS, "ok");
}

#[test]
fn a_spot_check_finds_a_changed_replicate_record() {
    // Replicate digests edited in a resealed manifest: the sampled replicate must disagree.
    let (_dir, data, out) = analysed("spot-mismatch");
    let chosen = forebear::verify::sample_replicates(10, 2, 5);
    reseal(&out, |m| {
        m.results.replicates[chosen[1] as usize] = "0".repeat(64);
    });
    let stdout = mismatched(
        &out,
        &data,
        &["--replicates-sample", "2", "--sample-seed", "5"],
    );
    assert_says(&stdout, &format!("the first is replicate {}", chosen[1]));
}

#[test]
fn another_method_version_is_refused_unless_allowed_and_then_every_difference_listed() {
    // As if an older method had produced the dossier: its result and manifest name that method.
    let (_dir, data, out) = analysed("method");
    let path = out.join("result.json");
    let mut result: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
    result["tool"]["method"] = "forebear-method/0".into();
    let text = serde_json::to_string_pretty(&result).unwrap() + "\n";
    std::fs::write(&path, &text).unwrap();
    reseal(&out, |m| {
        m.tool.method = "forebear-method/0".into();
    });
    let stdout = mismatched(&out, &data, &[]);
    assert_says(&stdout, "with method version 'forebear-method/0'");
    assert_says(&stdout, "--allow-other-version");
    assert_says(&stdout, "re-run         skipped");
    let allowed = verify(&out, &data, &["--allow-other-version"]);
    let stdout = assert_verdict(&allowed, 1, "MISMATCH");
    assert_says(&stdout, "re-running anyway");
    assert_says(&stdout, "re-run         MISMATCH");
    let expected = format!(
        "first difference from result.json at /tool/method: recorded \"forebear-method/0\", re-run \"{}\"",
        forebear::finding::METHOD_VERSION
    );
    assert_says(&stdout, &expected);
}

#[test]
fn json_report_carries_every_check_and_the_verdict() {
    let (_dir, data, out) = analysed("json");
    let output = verify(&out, &data, &["--json"]);
    assert_eq!(output.status.code(), Some(0));
    let report: serde_json::Value = serde_json::from_slice(&output.stdout).unwrap();
    assert_eq!(report["schema"], "forebear.verification/1");
    assert_eq!(report["verdict"], "VERIFIED");
    let names: Vec<&str> = report["checks"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c["name"].as_str().unwrap())
        .collect();
    assert_eq!(
        names,
        [
            "manifest",
            "dossier files",
            "signatures",
            "settings",
            "data",
            "tool",
            "re-run",
            "rendered files"
        ]
    );
    // Every check passes; an unsigned dossier is a note (tests/signing.rs checks signatures).
    for c in report["checks"].as_array().unwrap() {
        let expected = if c["name"] == "signatures" {
            "note"
        } else {
            "pass"
        };
        assert_eq!(c["status"], expected, "{c}");
    }
    assert_eq!(report["signatures"], serde_json::json!([]));
    assert_eq!(
        report["taken_from_record"],
        serde_json::json!([
            "result.json#/run/started_utc",
            "result.json#/run/duration_seconds",
            "result.json#/run/threads",
            "result.json#/run/data_path",
            "result.json#/run/command_line",
            "result.json#/run/operator",
            "result.json#/tool/version",
            "result.json#/tool/build",
            "result.json#/data/file",
            "manifest.json#/generated_utc"
        ])
    );
}

#[test]
fn bad_usage_and_unreadable_input_exit_2() {
    let (dir, data, out) = analysed("usage");
    let no_data = verify(&out, &dir.join("absent.csv"), &[]);
    assert_eq!(no_data.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&no_data.stderr).contains("absent.csv"));
    let no_dossier = verify(&dir.join("nowhere"), &data, &[]);
    assert_eq!(no_dossier.status.code(), Some(2));
    std::fs::remove_file(out.join("manifest.json")).unwrap();
    let no_manifest = verify(&out, &data, &[]);
    assert_eq!(no_manifest.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&no_manifest.stderr).contains("manifest.json"));
    let zero = verify(&out, &data, &["--replicates-sample", "0"]);
    assert_eq!(zero.status.code(), Some(2));
}

#[test]
fn fingerprint_prints_both_hashes_and_tells_a_resave_from_a_change() {
    let dir = scratch("fingerprint");
    let a = dir.join("a.csv");
    let b = dir.join("b.csv");
    let c = dir.join("c.csv");
    std::fs::write(&a, "x,y\n1,2.50\n3,NA\n").unwrap();
    std::fs::write(&b, "\"x\",\"y\"\r\n1.0,2.5\r\n3,\r\n").unwrap();
    std::fs::write(&c, "x,y\n1,2.5\n3,4\n").unwrap();
    let print = |path: &Path| {
        let output = bin()
            .args(["fingerprint", "--json"])
            .arg(path)
            .output()
            .unwrap();
        assert!(output.status.success());
        serde_json::from_slice::<serde_json::Value>(&output.stdout).unwrap()
    };
    let (fa, fb, fc) = (print(&a), print(&b), print(&c));
    assert_eq!(fa["sha256"], hex_sha256(&std::fs::read(&a).unwrap()));
    assert_ne!(fa["sha256"], fb["sha256"]);
    assert_eq!(
        fa["content_sha256"], fb["content_sha256"],
        "same values, re-saved"
    );
    assert_ne!(
        fa["content_sha256"], fc["content_sha256"],
        "a missing value became 4"
    );
    assert_eq!(
        (fa["rows"].as_u64(), fa["columns"].as_u64()),
        (Some(2), Some(2))
    );
    let plain = bin().arg("fingerprint").arg(&a).output().unwrap();
    let stdout = text(&plain);
    assert_says(&stdout, fa["sha256"].as_str().unwrap());
    assert_says(&stdout, "2 data rows × 2 columns");
}

#[test]
fn a_dossier_merged_from_replicate_shards_verifies_with_the_single_run_digest() {
    let (dir, data, single) = analysed("merged");
    for (range, part) in [("0..4", "p1"), ("4..10", "p2")] {
        let status = bin()
            .args(["--quiet", "analyze"])
            .arg(&data)
            .args(["--target", "crush_strength", "--replicates", "10"])
            .args(["--replicate-range", range, "--out"])
            .arg(dir.join(part))
            .stdout(std::process::Stdio::null())
            .status()
            .unwrap();
        assert!(status.success());
    }
    let merged = dir.join("merged");
    let status = bin()
        .args(["--quiet", "merge"])
        .arg(dir.join("p1/partial.json"))
        .arg(dir.join("p2/partial.json"))
        .arg("--out")
        .arg(&merged)
        .stdout(std::process::Stdio::null())
        .status()
        .unwrap();
    assert!(status.success());
    assert_eq!(
        read_manifest(&merged).results,
        read_manifest(&single).results
    );
    verified(&merged, &data, &[]);
}

#[test]
fn the_manifest_reproduce_command_gives_the_same_digest_with_every_reader_option() {
    let dir = scratch("reproduce");
    let european: String = forebear::demo::DEMO_CSV.replace(',', ";").replace('.', ",");
    std::fs::write(dir.join("eu data.csv"), european).unwrap();
    let status = bin()
        .current_dir(&dir)
        .args([
            "--quiet",
            "analyze",
            "eu data.csv",
            "--target",
            "crush_strength",
        ])
        .args(["--delimiter", ";", "--decimal-comma", "--missing", "error"])
        .args(["--candidates", "kiln_peak_temp,pore_density,probe_gap"])
        .args([
            "--missing-tokens",
            ",NA,-999",
            "--replicates",
            "4",
            "--out",
            "first",
        ])
        .stdout(std::process::Stdio::null())
        .status()
        .unwrap();
    assert!(status.success());
    let manifest = read_manifest(&dir.join("first"));
    let command = manifest
        .command
        .reproduce
        .strip_prefix("forebear ")
        .unwrap()
        .to_string();
    for flag in [
        "--delimiter ';'",
        "--decimal-comma",
        "--missing error",
        "--candidates",
    ] {
        assert!(command.contains(flag), "{command}");
    }
    // Run as a reviewer would paste it into a POSIX shell.
    let status = Command::new("sh")
        .current_dir(&dir)
        .arg("-c")
        .arg(format!("\"$FOREBEAR\" --quiet {command}"))
        .env("FOREBEAR", env!("CARGO_BIN_EXE_forebear"))
        .stdout(std::process::Stdio::null())
        .status()
        .unwrap();
    assert!(status.success());
    assert_eq!(read_manifest(&dir.join("rerun")).results, manifest.results);
}

/// The forgery of issue 12: the full-data outcome's stability turned into "not stable" in
/// result.json and in the dossier's words.
const NOT_STABLE: [(&str, &str, &str); 4] = [
    (
        "result.json",
        "\"full_data_outcome_stable\": true",
        "\"full_data_outcome_stable\": false",
    ),
    ("result.json", "\"stable\": true,", "\"stable\": false,"),
    (
        "dossier.md",
        "**Stability:** stable:",
        "**Stability:** not stable:",
    ),
    (
        "dossier.html",
        "<strong>Stability:</strong> stable:",
        "<strong>Stability:</strong> not stable:",
    ),
];

#[test]
fn forged_stability_in_result_and_dossier_with_every_hash_recomputed_is_a_mismatch() {
    let (_dir, data, out) = analysed("forged-stability");
    let line = line_number(&out, "dossier.md", "**Stability:** stable:");
    forge_texts(&out, &NOT_STABLE);
    let stdout = mismatched(&out, &data, &[]);
    assert_statuses(
        &stdout,
        &["manifest", "dossier files", "settings", "data", "tool"],
        "ok",
    );
    assert_statuses(&stdout, &["re-run", "rendered files"], "MISMATCH");
    assert_says(
        &stdout,
        "first difference from result.json at /stability/full_data_outcome_stable: recorded \
             false, re-run true",
    );
    assert_says(
        &stdout,
        "also /stability/headline/stable: recorded false, re-run true",
    );
    assert_says(
        &stdout,
        &format!(
            "dossier.md differs from its re-rendering: first difference at line {line}: on disk"
        ),
    );
    assert_says(&stdout, "**Stability:** not stable:");
    for name in ["result.json", "dossier.html"] {
        assert_says(&stdout, &format!("{name} differs from its re-rendering"));
    }
}

#[test]
fn forged_stability_with_the_digest_recomputed_too_is_a_mismatch() {
    let (_dir, data, out) = analysed("forged-digest");
    forge_texts(&out, &NOT_STABLE);
    // The forger also recomputes the result digest and writes it wherever the old one appears.
    let result = common::result_json(&out);
    let old = result["digest"].as_str().unwrap().to_string();
    let new = forebear::digest::digest(&result);
    for name in ["result.json", "dossier.md", "dossier.html"] {
        let path = out.join(name);
        let text = std::fs::read_to_string(&path).unwrap();
        std::fs::write(
            &path,
            text.replace(&old, &new).replace(&old[..16], &new[..16]),
        )
        .unwrap();
    }
    reseal(&out, |m| m.results.digest = new.clone());
    let stdout = mismatched(&out, &data, &[]);
    assert_statuses(&stdout, &["manifest", "dossier files", "settings"], "ok");
    assert_says(
        &stdout,
        &format!(
            "the re-run digest {} differs from the recorded {}",
            &old[..16],
            &new[..16]
        ),
    );
    assert_says(
        &stdout,
        "first difference from result.json at /stability/full_data_outcome_stable",
    );
    assert_eq!(status(&stdout, "rendered files"), "MISMATCH", "{stdout}");
}

#[test]
fn a_spot_check_recomputes_the_stability_figures_and_catches_a_forged_frequency() {
    let (_dir, data, out) = analysed("spot-forged");
    let recorded = common::result_json(&out)["stability"]["full_data_outcome_frequency"]
        .as_f64()
        .expect("a frequency");
    assert_ne!(
        recorded, 0.4,
        "the forged value must differ from the recorded one"
    );
    let field = |value: f64| format!("\"full_data_outcome_frequency\": {value}");
    forge_texts(
        &out,
        &[
            ("result.json", &field(recorded), &field(0.4)),
            NOT_STABLE[0],
        ],
    );
    let stdout = mismatched(&out, &data, &["--replicates-sample", "2"]);
    assert_says(
        &stdout,
        &format!(
            "first difference from result.json at /stability/full_data_outcome_frequency: \
             recorded 0.4, re-run {recorded}"
        ),
    );
    assert_says(&stdout, "SPOT CHECK ONLY: 2 of 10");
}

#[test]
fn a_spot_check_catches_an_edited_replicate_record_it_did_not_rerun() {
    // A record's outcome changed in result.json (hashes recomputed, the record's own digest
    // left): the aggregate is recomputed from every record, and every record must hash to the
    // digest the manifest binds.
    let (_dir, data, out) = analysed("spot-record");
    let chosen = forebear::verify::sample_replicates(10, 1, 3);
    let other = (0..10u32).find(|k| !chosen.contains(k)).unwrap();
    let result = common::result_json(&out);
    let record = &result["stability"]["records"][other as usize];
    let rows = format!(
        "\"replicate\": {other},\n        \"rows\": {}",
        record["rows"]
    );
    forge_text(
        &out,
        "result.json",
        &rows,
        &rows.replace("\"rows\": ", "\"rows\": 1"),
    );
    let stdout = mismatched(
        &out,
        &data,
        &["--replicates-sample", "1", "--sample-seed", "3"],
    );
    assert_says(
        &stdout,
        &format!(
            "1 replicate record(s) in result.json do not hash to their own digest (edited after \
             generation); the first is replicate {other}"
        ),
    );
}

#[test]
fn each_rendered_file_edited_with_its_hash_recomputed_is_named_with_its_first_differing_line() {
    let (_dir, data, out) = analysed("rendered");
    // (file, a text that finds the line, the edit within that line)
    let cases = [
        (
            "dossier.md",
            "**Stability:** stable:",
            ("stable", "not stable"),
        ),
        (
            "dossier.html",
            "<strong>Stability:</strong> stable:",
            ("stable", "not stable"),
        ),
        ("trace.csv", ",true,", (",true,", ",false,")),
        ("stability.csv", "kiln_peak_temp,", (",0.8,", ",0.9,")),
    ];
    for (name, needle, (from, to)) in cases {
        let copy = copy_dossier(&out, &format!("forged-{name}"));
        let line = line_number(&copy, name, needle);
        let original = std::fs::read_to_string(copy.join(name)).unwrap();
        let text = original.lines().nth(line - 1).unwrap();
        assert!(text.contains(from), "{name}: {text}");
        forge_text(&copy, name, text, &text.replacen(from, to, 1));
        let stdout = mismatched(&copy, &data, &[]);
        assert_statuses(&stdout, &CHECKS[..6], "ok");
        assert_eq!(status(&stdout, "rendered files"), "MISMATCH", "{stdout}");
        assert_says(
            &stdout,
            &format!(
                "{name} differs from its re-rendering: first difference at line {line}: on disk"
            ),
        );
        // The manifest on disk lists the forged hash, the re-rendered one the true hash.
        assert_says(&stdout, "manifest.json differs from its re-rendering");
    }
}

#[test]
fn a_file_deleted_and_dropped_from_the_manifest_is_named_missing() {
    let (_dir, data, out) = analysed("deleted");
    for name in ["result.json", "dossier.html", "trace.csv"] {
        let copy = copy_dossier(&out, &format!("without-{name}"));
        std::fs::remove_file(copy.join(name)).unwrap();
        reseal(&copy, |m| {
            m.files.remove(name);
        });
        let stdout = mismatched(&copy, &data, &[]);
        assert_eq!(status(&stdout, "manifest"), "ok", "{stdout}");
        assert_eq!(status(&stdout, "dossier files"), "MISMATCH", "{stdout}");
        assert_says(&stdout, &format!("{name} is missing or unreadable ("));
        assert_says(
            &stdout,
            "every dossier holds it, and the manifest does not list it either",
        );
        if name == "result.json" {
            assert_says(
                &stdout,
                "result.json is missing or does not read, so the re-run cannot",
            );
            assert_eq!(status(&stdout, "rendered files"), "skipped", "{stdout}");
        } else {
            assert_says(
                &stdout,
                &format!("{name} cannot be compared with its re-rendering: it is missing"),
            );
        }
    }
}

#[test]
fn extra_files_and_folders_in_the_dossier_are_each_named() {
    let (_dir, data, out) = analysed("extra");
    std::fs::write(out.join("notes.txt"), "approved\n").unwrap();
    std::fs::write(out.join(".hidden"), "").unwrap();
    std::fs::create_dir(out.join("figures")).unwrap();
    std::fs::write(out.join("evil\u{202e}txt.md"), "").unwrap();
    let stdout = mismatched(&out, &data, &[]);
    assert_eq!(status(&stdout, "dossier files"), "MISMATCH", "{stdout}");
    for named in [
        "'.hidden' is in the dossier folder but is no file of a dossier",
        "'notes.txt' is in the dossier folder but is no file of a dossier",
        "the folder 'figures/' is in the dossier folder but is no part of a dossier",
        // A right-to-left override in a name is shown escaped, never applied.
        "'evil\\u{202e}txt.md' is in the dossier folder",
    ] {
        assert_says(&stdout, named);
    }
    // Nothing else is wrong: the analysis and every file of the dossier reproduce.
    assert_statuses(&stdout, &["re-run", "rendered files"], "ok");
    // Listed in a re-sealed manifest, an extra file is named twice over.
    reseal(&out, |m| {
        m.files.insert("notes.txt".into(), String::new());
    });
    let stdout = mismatched(&out, &data, &[]);
    assert_says(
        &stdout,
        "manifest.json lists 'notes.txt', which is no file of a dossier",
    );
}

#[test]
fn dossiers_with_other_settings_verify_in_full_and_as_a_spot_check() {
    let dir = scratch("other-settings");
    let data = dir.join("filter_discs.csv");
    std::fs::write(&data, forebear::demo::DEMO_CSV).unwrap();
    let settings: [&[&str]; 2] = [
        &[
            "--stopping-rule",
            "natural",
            "--scaling",
            "standardize",
            "--resample",
            "subsample",
            "--fraction",
            "0.6",
            "--replicates",
            "6",
            "--seed",
            "3",
            "--threads",
            "1",
        ],
        &["--replicates", "0", "--scaling", "none", "--alpha", "0.1"],
    ];
    for (i, extra) in settings.iter().enumerate() {
        let out = dir.join(format!("dossier-{i}"));
        let status_code = bin()
            .args(["--quiet", "analyze"])
            .arg(&data)
            .args(["--target", "crush_strength"])
            .args(*extra)
            .arg("--out")
            .arg(&out)
            .stdout(std::process::Stdio::null())
            .status()
            .unwrap();
        assert!(status_code.success(), "{extra:?}");
        let stdout = verified(&out, &data, &[]);
        assert_statuses(&stdout, &CHECKS, "ok");
        let stdout = verified(&out, &data, &["--replicates-sample", "2"]);
        assert_statuses(&stdout, &CHECKS, "ok");
        // Without resampling a spot check has nothing to leave out: it is a full verification.
        assert_eq!(stdout.contains("SPOT CHECK ONLY"), i == 0, "{stdout}");
    }
}

#[test]
fn a_dossier_recording_another_build_verifies_and_an_edit_still_fails_with_a_hint() {
    // The build is a run fact taken from the record: a dossier that records another build of the
    // same method verifies. An edited file still fails; the report adds that another build's
    // renderers could explain a difference, and how to tell.
    let (_dir, data, out) = analysed("other-build");
    let build = read_manifest(&out).tool.build;
    if build.len() < 40 {
        eprintln!("built outside a checkout: no commit to replace");
        return;
    }
    // Another commit, with the same "-modified" mark (if any) as this build.
    let other = format!("0123456789abcdef0123456789abcdef01234567{}", &build[40..]);
    let other = other.as_str();
    for name in ["result.json", "dossier.md", "dossier.html"] {
        let path = out.join(name);
        let text = std::fs::read_to_string(&path).unwrap();
        std::fs::write(
            &path,
            text.replace(&build, other)
                .replace(&build[..12], &other[..12]),
        )
        .unwrap();
    }
    reseal(&out, |m| m.tool.build = other.into());
    let stdout = verified(&out, &data, &[]);
    assert_says(&stdout, "another build (dossier: forebear");
    assert_says(&stdout, "commit 0123456789ab");
    forge_text(
        &out,
        "dossier.md",
        "**Stability:** stable:",
        "**Stability:** not stable:",
    );
    let stdout = mismatched(&out, &data, &[]);
    assert_says(&stdout, "dossier.md differs from its re-rendering");
    assert_says(
        &stdout,
        "the dossier records that another build wrote it (forebear",
    );
}
