//! Same data + same settings + same seed → the same digest, on any thread count (DESIGN.md,
//! "Determinism"). Runs the real binary.

use crate::common::{bin, fresh_dir, result_json as result, write_demo_csv as demo_csv};
use std::path::{Path, PathBuf};

fn scratch(name: &str) -> PathBuf {
    fresh_dir(&format!("determinism-{name}"))
}

fn analyze(data: &Path, target: &str, out: &Path, extra: &[&str]) -> serde_json::Value {
    let status = bin()
        .arg("--quiet")
        .arg("analyze")
        .arg(data)
        .args(["--target", target, "--out"])
        .arg(out)
        .args(extra)
        .stdout(std::process::Stdio::null())
        .status()
        .unwrap();
    assert!(status.success());
    result(out)
}

/// The demo data rounded to a few levels per column: discrete data with heavy ties and duplicates.
fn discrete_csv(dir: &Path) -> PathBuf {
    let mut lines = forebear::demo::DEMO_CSV.lines();
    let mut out = format!("{}\n", lines.next().unwrap());
    for line in lines {
        let cells: Vec<String> = line
            .split(',')
            .enumerate()
            .map(|(j, c)| match c.parse::<f64>() {
                Ok(v) => {
                    let step = [20.0, 1.0, 2.0, 8.0, 0.3, 3.0, 10.0, 1.0, 1.0][j];
                    format!("{}", (v / step).round())
                }
                Err(_) => c.to_string(),
            })
            .collect();
        out.push_str(&cells.join(","));
        out.push('\n');
    }
    let path = dir.join("discrete.csv");
    std::fs::write(&path, out).unwrap();
    path
}

fn assert_same_digest_on_threads(data: &Path, target: &str, dir: &Path) {
    let digests: Vec<String> = ["1", "2", "8", "2"]
        .iter()
        .enumerate()
        .map(|(k, threads)| {
            let out = dir.join(format!("out-{target}-{k}"));
            let value = analyze(
                data,
                target,
                &out,
                &["--threads", threads, "--replicates", "20"],
            );
            assert_eq!(
                value["run"]["threads"].as_u64().unwrap().to_string(),
                *threads
            );
            value["digest"].as_str().unwrap().to_string()
        })
        .collect();
    assert!(
        digests.windows(2).all(|w| w[0] == w[1]),
        "{target}: {digests:?}"
    );
}

#[test]
fn demo_digest_is_identical_on_1_2_and_8_threads_and_on_repeat() {
    let dir = scratch("demo");
    let data = demo_csv(&dir);
    assert_same_digest_on_threads(&data, "crush_strength", &dir);
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn heavily_tied_discrete_data_digest_is_identical_on_any_thread_count() {
    let dir = scratch("discrete");
    let data = discrete_csv(&dir);
    assert_same_digest_on_threads(&data, "crush_strength", &dir);
    assert_same_digest_on_threads(&data, "echo_amplitude", &dir);
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn another_seed_changes_tie_breaks_but_the_digest_records_it() {
    let dir = scratch("seed");
    let data = discrete_csv(&dir);
    let a = analyze(
        &data,
        "crush_strength",
        &dir.join("a"),
        &["--seed", "1", "--replicates", "0"],
    );
    let b = analyze(
        &data,
        "crush_strength",
        &dir.join("b"),
        &["--seed", "2", "--replicates", "0"],
    );
    assert_eq!(a["settings"]["seed"], 1);
    assert_eq!(b["settings"]["seed"], 2);
    assert_ne!(a["digest"], b["digest"]);
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn digest_does_not_depend_on_the_file_name_or_path() {
    let dir = scratch("rename");
    let data = demo_csv(&dir);
    let moved = dir.join("sub");
    std::fs::create_dir_all(&moved).unwrap();
    let renamed = moved.join("other-name.csv");
    std::fs::copy(&data, &renamed).unwrap();
    let a = analyze(
        &data,
        "pore_density",
        &dir.join("a"),
        &["--replicates", "4"],
    );
    let b = analyze(
        &renamed,
        "pore_density",
        &dir.join("b"),
        &["--replicates", "4"],
    );
    assert_eq!(a["digest"], b["digest"]);
    assert_eq!(b["data"]["file"], "other-name.csv");
    std::fs::remove_dir_all(&dir).unwrap();
}
