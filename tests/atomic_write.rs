//! The output folder appears whole or not at all: a run stopped while writing leaves no partial
//! dossier (issue 5). The test hook `FOREBEAR_WRITE_PAUSE_MS` holds the process between the files
//! it stages, so the test can stop it in the middle of writing for certain.

use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("forebear-atomic-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn start_slow_writer(data: &Path, out: &Path) -> Child {
    Command::new(env!("CARGO_BIN_EXE_forebear"))
        .args(["--quiet", "analyze"])
        .arg(data)
        .args(["--target", "crush_strength", "--replicates", "0", "--out"])
        .arg(out)
        .env("FOREBEAR_WRITE_PAUSE_MS", "400")
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap()
}

/// Folders beside `out` whose names start with `.<out name>.`: the staging folders.
fn staging_folders(out: &Path) -> Vec<PathBuf> {
    let prefix = format!(".{}.", out.file_name().unwrap().to_string_lossy());
    std::fs::read_dir(out.parent().unwrap())
        .unwrap()
        .flatten()
        .filter(|e| e.file_name().to_string_lossy().starts_with(&prefix))
        .map(|e| e.path())
        .collect()
}

/// Waits until a staging folder holds at least two files: the process is in the middle of writing.
fn wait_until_half_written(out: &Path, child: &mut Child) {
    let start = Instant::now();
    loop {
        let half = staging_folders(out).iter().any(|s| {
            std::fs::read_dir(s)
                .map(|d| d.count() >= 2)
                .unwrap_or(false)
        });
        if half {
            return;
        }
        assert!(
            child.try_wait().unwrap().is_none(),
            "the writer finished before it was stopped"
        );
        assert!(
            start.elapsed() < Duration::from_secs(120),
            "the writer never started writing"
        );
        std::thread::sleep(Duration::from_millis(20));
    }
}

fn demo(dir: &Path) -> PathBuf {
    let data = dir.join("filter_discs.csv");
    std::fs::write(&data, forebear::demo::DEMO_CSV).unwrap();
    data
}

#[test]
fn killed_in_the_middle_of_writing_leaves_no_dossier_and_the_next_run_cleans_up() {
    let dir = scratch("kill");
    let data = demo(&dir);
    let out = dir.join("dossier");
    let mut child = start_slow_writer(&data, &out);
    wait_until_half_written(&out, &mut child);
    child.kill().unwrap(); // SIGKILL: nothing can run in the process after it
    child.wait().unwrap();
    assert!(!out.exists(), "a partial dossier folder was left");
    assert_eq!(
        staging_folders(&out).len(),
        1,
        "the killed run's staging folder"
    );
    let status = Command::new(env!("CARGO_BIN_EXE_forebear"))
        .args(["--quiet", "analyze"])
        .arg(&data)
        .args(["--target", "crush_strength", "--replicates", "0", "--out"])
        .arg(&out)
        .stdout(Stdio::null())
        .status()
        .unwrap();
    assert!(status.success());
    assert!(out.join("manifest.json").exists() && out.join("result.json").exists());
    assert!(
        staging_folders(&out).is_empty(),
        "the stale staging folder was not removed"
    );
}

#[cfg(unix)]
#[test]
fn terminated_in_the_middle_of_writing_leaves_no_dossier_and_no_staging_folder() {
    let dir = scratch("term");
    let data = demo(&dir);
    let out = dir.join("dossier");
    let mut child = start_slow_writer(&data, &out);
    wait_until_half_written(&out, &mut child);
    let status = Command::new("kill")
        .args(["-TERM", &child.id().to_string()])
        .status()
        .unwrap();
    assert!(status.success());
    let exit = child.wait().unwrap();
    assert_eq!(exit.code(), Some(128 + 15), "exit code after SIGTERM");
    assert!(!out.exists(), "a partial dossier folder was left");
    assert!(
        staging_folders(&out).is_empty(),
        "the staging folder was left"
    );
}
