//! `forebear verify` on real dossiers: the round trip, every tamper case of issue 5 with the
//! explanation the reviewer reads, another thread count, a spot check, and `fingerprint`. Runs the
//! real binary on files written by `forebear analyze`.

use forebear::manifest::{canonical_json, Manifest};
use sha2::{Digest, Sha256};
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_forebear"))
}

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("forebear-verify-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn hex_sha256(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// The demo data and its dossier (10 replicates) in a fresh folder.
fn analysed(name: &str) -> (PathBuf, PathBuf, PathBuf) {
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

fn verify(out: &Path, data: &Path, extra: &[&str]) -> Output {
    bin()
        .args(["--quiet", "verify"])
        .arg(out)
        .arg("--data")
        .arg(data)
        .args(extra)
        .output()
        .unwrap()
}

fn text(output: &Output) -> String {
    String::from_utf8_lossy(&output.stdout).into_owned()
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

/// Writes a manifest with its settings hash and seal recomputed, as a careful forger would.
fn write_resealed(out: &Path, mut manifest: Manifest) {
    manifest.settings.sha256 = hex_sha256(canonical_json(&manifest.settings.canonical).as_bytes());
    manifest.seal = manifest.computed_seal();
    std::fs::write(out.join("manifest.json"), manifest.to_text()).unwrap();
}

#[test]
fn demo_round_trip_verifies_with_exit_0_and_every_check_ok() {
    let (_dir, data, out) = analysed("round-trip");
    let stdout = assert_verdict(&verify(&out, &data, &[]), 0, "VERIFIED");
    for check in [
        "manifest",
        "dossier files",
        "settings",
        "data",
        "tool",
        "re-run",
    ] {
        assert!(
            stdout
                .lines()
                .any(|l| l.starts_with(check) && l.ends_with(" ok")),
            "{check}: {stdout}"
        );
    }
    assert!(stdout.contains("bytes identical"), "{stdout}");
    assert!(
        stdout.contains("all 10 replicates reproduce the recorded digest"),
        "{stdout}"
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
    let stdout = assert_verdict(&verify(&out, &changed, &[]), 1, "MISMATCH");
    assert!(stdout.contains("different data"), "{stdout}");
    assert!(
        stdout.contains(&format!(
            "1 data row(s) differ from the analysed file, first at data row 49 (line 50), column '{column}'"
        )),
        "{stdout}"
    );
    assert!(stdout.contains("not run: the data differ"), "{stdout}");
}

#[test]
fn a_removed_row_is_named_with_both_row_counts() {
    let (_dir, data, out) = analysed("row");
    let fewer = edited_data(&data, "fewer.csv", |lines| {
        lines.remove(101);
    });
    let stdout = assert_verdict(&verify(&out, &fewer, &[]), 1, "MISMATCH");
    let rows = forebear::demo::DEMO_CSV.lines().count() - 1;
    assert!(
        stdout.contains(&format!(
            "rows: the analysed file has {rows} data rows, the received file {}",
            rows - 1
        )),
        "{stdout}"
    );
    assert!(
        stdout.contains("data row 101 of the analysed file is missing from the received file"),
        "{stdout}"
    );
}

#[test]
fn a_renamed_column_is_named_and_its_values_reported_unchanged() {
    let (_dir, data, out) = analysed("rename");
    let renamed = edited_data(&data, "renamed.csv", |lines| {
        lines[0] = lines[0].replace("probe_gap", "probe_gap_mm");
    });
    let stdout = assert_verdict(&verify(&out, &renamed, &[]), 1, "MISMATCH");
    assert!(
        stdout.contains(
            "'probe_gap' is named 'probe_gap_mm' in the received file (its values are unchanged)"
        ),
        "{stdout}"
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
    let stdout = assert_verdict(&verify(&out, &resaved, &[]), 0, "VERIFIED");
    assert!(stdout.contains("data           ok (note)"), "{stdout}");
    assert!(stdout.contains("same content, different bytes"), "{stdout}");
    assert!(stdout.contains("reproduce the recorded digest"), "{stdout}");
}

#[test]
fn an_edited_html_dossier_is_detected_and_named() {
    let (_dir, data, out) = analysed("html");
    let path = out.join("dossier.html");
    let html = std::fs::read_to_string(&path).unwrap();
    std::fs::write(&path, html.replacen("identified", "confirmed", 1)).unwrap();
    let stdout = assert_verdict(&verify(&out, &data, &[]), 1, "MISMATCH");
    assert!(stdout.contains("dossier files  MISMATCH"), "{stdout}");
    assert!(
        stdout.contains("dossier.html was edited after generation"),
        "{stdout}"
    );
    // The analysis itself still reproduces: the reviewer learns that only the page was touched.
    assert!(stdout.contains("reproduce the recorded digest"), "{stdout}");
}

#[test]
fn an_edited_result_json_is_detected_and_the_edited_field_named() {
    let (_dir, data, out) = analysed("result");
    let path = out.join("result.json");
    let mut result: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
    result["parent_sets"] = serde_json::json!([["ambient_humidity"]]);
    std::fs::write(&path, serde_json::to_string_pretty(&result).unwrap()).unwrap();
    let stdout = assert_verdict(&verify(&out, &data, &[]), 1, "MISMATCH");
    assert!(
        stdout.contains("result.json was edited after generation"),
        "{stdout}"
    );
    assert!(
        stdout.contains("result.json no longer matches it"),
        "{stdout}"
    );
    assert!(
        stdout.contains("first difference from result.json at /parent_sets"),
        "{stdout}"
    );
}

#[test]
fn settings_changed_in_the_manifest_are_detected_without_and_with_a_new_seal() {
    let (_dir, data, out) = analysed("settings");
    let original = std::fs::read_to_string(out.join("manifest.json")).unwrap();
    let mut manifest = read_manifest(&out);
    manifest.settings.canonical["study"]["alpha"] = serde_json::json!(0.01);
    std::fs::write(out.join("manifest.json"), manifest.to_text()).unwrap();
    let stdout = assert_verdict(&verify(&out, &data, &[]), 1, "MISMATCH");
    assert!(
        stdout.contains("manifest.json was edited after generation"),
        "{stdout}"
    );
    assert!(
        stdout.contains("the settings in manifest.json were changed"),
        "{stdout}"
    );
    assert!(
        stdout.contains("at /study/alpha: 0.05 in result.json, 0.01 in manifest.json"),
        "{stdout}"
    );
    // Resealed with the settings hash recomputed: the disagreement with result.json remains.
    std::fs::write(out.join("manifest.json"), &original).unwrap();
    let mut manifest = read_manifest(&out);
    manifest.settings.canonical["study"]["alpha"] = serde_json::json!(0.01);
    write_resealed(&out, manifest);
    let stdout = assert_verdict(&verify(&out, &data, &[]), 1, "MISMATCH");
    assert!(stdout.contains("manifest       ok"), "{stdout}");
    assert!(stdout.contains("at /study/alpha"), "{stdout}");
    assert!(
        stdout.contains("first difference from result.json at /settings/alpha"),
        "{stdout}"
    );
}

#[test]
fn a_different_seed_recorded_consistently_everywhere_fails_the_rerun() {
    // A forger changes the seed in result.json and the manifest and recomputes every hash: only
    // re-running the analysis can tell.
    let (_dir, data, out) = analysed("seed");
    let path = out.join("result.json");
    let mut result: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
    result["settings"]["seed"] = 2.into();
    result["settings"]["resampling"]["seed"] = 2.into();
    let text = serde_json::to_string_pretty(&result).unwrap() + "\n";
    std::fs::write(&path, &text).unwrap();
    let mut manifest = read_manifest(&out);
    manifest.settings.canonical["study"] = result["settings"].clone();
    manifest
        .files
        .insert("result.json".into(), hex_sha256(text.as_bytes()));
    write_resealed(&out, manifest);
    let stdout = assert_verdict(&verify(&out, &data, &[]), 1, "MISMATCH");
    for check in ["manifest", "dossier files", "settings", "data", "tool"] {
        assert!(
            stdout
                .lines()
                .any(|l| l.starts_with(check) && l.ends_with(" ok")),
            "{check} should pass: {stdout}"
        );
    }
    assert!(stdout.contains("re-run         MISMATCH"), "{stdout}");
    assert!(stdout.contains("seed 2"), "{stdout}");
    assert!(
        stdout.contains("full-data search: first difference from result.json at /trace/"),
        "{stdout}"
    );
    assert!(
        stdout.contains("re-run differ from their recorded digests; the first is replicate 0"),
        "{stdout}"
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
    assert!(
        stdout.contains(&format!("the 3 sampled replicates ({})", listed.join(", "))),
        "{stdout}"
    );
    assert!(
        stdout.contains("SPOT CHECK ONLY: 3 of 10 replicates re-run (sample seed 7)"),
        "{stdout}"
    );
}

#[test]
fn a_spot_check_finds_a_changed_replicate_record() {
    // Replicate digests edited in a resealed manifest: the sampled replicate must disagree.
    let (_dir, data, out) = analysed("spot-mismatch");
    let chosen = forebear::verify::sample_replicates(10, 2, 5);
    let mut manifest = read_manifest(&out);
    manifest.results.replicates[chosen[1] as usize] = "0".repeat(64);
    write_resealed(&out, manifest);
    let stdout = assert_verdict(
        &verify(
            &out,
            &data,
            &["--replicates-sample", "2", "--sample-seed", "5"],
        ),
        1,
        "MISMATCH",
    );
    assert!(
        stdout.contains(&format!("the first is replicate {}", chosen[1])),
        "{stdout}"
    );
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
    let mut manifest = read_manifest(&out);
    manifest.tool.method = "forebear-method/0".into();
    manifest
        .files
        .insert("result.json".into(), hex_sha256(text.as_bytes()));
    write_resealed(&out, manifest);
    let stdout = assert_verdict(&verify(&out, &data, &[]), 1, "MISMATCH");
    assert!(
        stdout.contains("with method version 'forebear-method/0'"),
        "{stdout}"
    );
    assert!(stdout.contains("--allow-other-version"), "{stdout}");
    assert!(stdout.contains("re-run         skipped"), "{stdout}");
    let allowed = verify(&out, &data, &["--allow-other-version"]);
    let stdout = assert_verdict(&allowed, 1, "MISMATCH");
    assert!(stdout.contains("re-running anyway"), "{stdout}");
    assert!(stdout.contains("re-run         MISMATCH"), "{stdout}");
    let expected = format!(
        "first difference from result.json at /tool/method: recorded \"forebear-method/0\", re-run \"{}\"",
        forebear::finding::METHOD_VERSION
    );
    assert!(stdout.contains(&expected), "{stdout}");
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
            "settings",
            "data",
            "tool",
            "re-run"
        ]
    );
    assert!(report["checks"]
        .as_array()
        .unwrap()
        .iter()
        .all(|c| c["status"] == "pass"));
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
    assert!(stdout.contains(fa["sha256"].as_str().unwrap()), "{stdout}");
    assert!(stdout.contains("2 data rows × 2 columns"), "{stdout}");
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
    assert_verdict(&verify(&merged, &data, &[]), 0, "VERIFIED");
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
