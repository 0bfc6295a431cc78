//! The output folder appears whole or not at all, and nothing a user has is ever deleted (issues 5
//! and 12), on the real binary: a run stopped while writing leaves no partial dossier; SIGTERM and
//! SIGHUP remove the staging folder; a kill between the two renames of `--force` is recovered by
//! the next run; a folder that appears at `--out` during the run is left as it is; a second run on
//! the same `--out` fails; symbolic links, a read-only parent.
//!
//! The moments are exact, never guessed: `FOREBEAR_WRITE_PAUSE_MS` holds the process between the
//! files it stages, and the hold hook (`common::Hold`) stops it at a named point until the test
//! lets it go.

use crate::common;
use crate::common::{assert_input_error, beside, send_signal, spawn_in, stderr_of, Hold, Scratch};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Output, Stdio};
use std::time::{Duration, Instant};

fn demo(scratch: &Scratch) -> PathBuf {
    scratch.write("filter_discs.csv", forebear::demo::DEMO_CSV)
}

/// `forebear analyze DATA --target crush_strength --replicates 0 --out OUT EXTRA...`.
fn analyze_args<'a>(data: &'a Path, out: &'a Path, extra: &[&'a str]) -> Vec<&'a std::ffi::OsStr> {
    let mut args: Vec<&std::ffi::OsStr> = vec!["analyze".as_ref(), data.as_os_str()];
    for a in ["--target", "crush_strength", "--replicates", "0", "--out"] {
        args.push(a.as_ref());
    }
    args.push(out.as_os_str());
    args.extend(extra.iter().map(|a| std::ffi::OsStr::new(*a)));
    args
}

fn analyze(scratch: &Scratch, data: &Path, out: &Path, extra: &[&str]) -> Output {
    common::run_in(&scratch.dir, analyze_args(data, out, extra))
}

fn start_slow_writer(data: &Path, out: &Path) -> Child {
    common::bin()
        .arg("--quiet")
        .args(analyze_args(data, out, &[]))
        .env("FOREBEAR_WRITE_PAUSE_MS", "400")
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap()
}

/// Folders beside `out` whose names start with `.<out name>.`: the staging folders.
fn staging_folders(out: &Path) -> Vec<PathBuf> {
    beside(out)
        .into_iter()
        .map(|n| out.with_file_name(n))
        .filter(|p| p.is_dir())
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

fn result_text(out: &Path) -> String {
    std::fs::read_to_string(out.join("result.json")).expect("result.json")
}

#[test]
fn killed_in_the_middle_of_writing_leaves_no_dossier_and_the_next_run_cleans_up() {
    let s = Scratch::new("atomic-kill");
    let data = demo(&s);
    let out = s.path("dossier");
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
    let next = analyze(&s, &data, &out, &[]);
    common::assert_success(&next);
    assert!(
        stderr_of(&next).contains("removed the unfinished '.dossier.partial-"),
        "{}",
        stderr_of(&next)
    );
    assert!(out.join("manifest.json").exists() && out.join("result.json").exists());
    assert_eq!(
        beside(&out),
        Vec::<String>::new(),
        "neither the stale staging folder nor a lock file is left"
    );
}

#[cfg(unix)]
#[test]
fn terminated_in_the_middle_of_writing_leaves_no_dossier_and_no_staging_folder() {
    let s = Scratch::new("atomic-term");
    let data = demo(&s);
    let out = s.path("dossier");
    let mut child = start_slow_writer(&data, &out);
    wait_until_half_written(&out, &mut child);
    send_signal(&child, "TERM");
    let exit = child.wait().unwrap();
    assert_eq!(exit.code(), Some(128 + 15), "exit code after SIGTERM");
    assert!(!out.exists(), "a partial dossier folder was left");
    assert_eq!(beside(&out), Vec::<String>::new(), "staging folder or lock");
}

/// A closed terminal or a dropped remote session sends SIGHUP: handled like SIGTERM.
#[cfg(unix)]
#[test]
fn a_hangup_just_before_the_rename_leaves_no_dossier_and_no_staging_folder() {
    #[cfg(target_os = "linux")]
    if std::fs::read_to_string("/proc/self/status")
        .unwrap()
        .lines()
        .find_map(|l| l.strip_prefix("SigIgn:"))
        .is_some_and(|mask| u64::from_str_radix(mask.trim(), 16).unwrap() & 1 == 1)
    {
        eprintln!("skipped: the tests run with SIGHUP ignored (nohup), which the binary keeps");
        return;
    }
    let s = Scratch::new("atomic-hup");
    let data = demo(&s);
    let out = s.path("dossier");
    let hold = Hold::new(&s.dir, "hold");
    let args = analyze_args(&data, &out, &[]);
    let mut child = spawn_in(&s.dir, args, Some((&hold, "dossier:before-swap")));
    hold.wait(&mut child);
    assert_eq!(staging_folders(&out).len(), 1, "staged, not yet renamed");
    #[cfg(target_os = "linux")]
    assert!(signal_mask(&child, "SigCgt") & 1 == 1, "SIGHUP is caught");
    send_signal(&child, "HUP");
    let exit = child.wait().unwrap();
    hold.release();
    assert_eq!(exit.code(), Some(128 + 1), "exit code after SIGHUP");
    assert!(!out.exists(), "no dossier folder");
    assert_eq!(beside(&out), Vec::<String>::new(), "staging folder or lock");
}

/// Under `nohup` SIGHUP is ignored, and stays ignored: the run goes on.
#[cfg(target_os = "linux")]
#[test]
fn a_hangup_ignored_when_the_run_started_stays_ignored() {
    let s = Scratch::new("atomic-nohup");
    let data = demo(&s);
    let out = s.path("dossier");
    let hold = Hold::new(&s.dir, "hold");
    let mut command = Command::new("sh");
    command
        .args(["-c", "trap '' HUP; exec \"$0\" \"$@\""])
        .arg(env!("CARGO_BIN_EXE_forebear"))
        .args(analyze_args(&data, &out, &[]))
        .current_dir(&s.dir)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped());
    hold.apply(&mut command, "dossier:before-swap");
    let mut child = command.spawn().unwrap();
    hold.wait(&mut child);
    assert!(signal_mask(&child, "SigIgn") & 1 == 1, "SIGHUP is ignored");
    assert!(
        signal_mask(&child, "SigCgt") & 1 == 0,
        "SIGHUP is not caught"
    );
    send_signal(&child, "HUP");
    hold.release();
    common::assert_success(&child.wait_with_output().unwrap());
    assert!(out.join("manifest.json").is_file());
}

/// A signal mask (`SigIgn`, `SigCgt`) of a running process from /proc: bit n − 1 is signal n.
#[cfg(target_os = "linux")]
fn signal_mask(child: &Child, field: &str) -> u64 {
    let status = std::fs::read_to_string(format!("/proc/{}/status", child.id())).unwrap();
    let line = status
        .lines()
        .find_map(|l| l.strip_prefix(&format!("{field}:")))
        .unwrap();
    u64::from_str_radix(line.trim(), 16).unwrap()
}

/// Runs `analyze --force --seed 2` on an existing dossier, kills it with SIGKILL at `point`, and
/// returns the former result text and the killed process's id.
fn kill_a_forced_run_at(s: &Scratch, data: &Path, out: &Path, point: &str) -> (String, u32) {
    common::assert_success(&analyze(s, data, out, &[]));
    let former = result_text(out);
    let hold = Hold::new(&s.dir, "hold");
    let args = analyze_args(data, out, &["--force", "--seed", "2"]);
    let mut child = spawn_in(&s.dir, args, Some((&hold, point)));
    (former, hold.kill_there(&mut child))
}

#[test]
fn killed_between_the_two_renames_the_next_run_puts_the_former_output_back() {
    let s = Scratch::new("atomic-between");
    let data = demo(&s);
    let out = s.path("dossier");
    let (former, pid) = kill_a_forced_run_at(&s, &data, &out, "dossier:between-renames");
    assert!(!out.exists(), "moved aside, the new one not yet in place");
    assert_eq!(
        beside(&out),
        vec![
            ".dossier.lock".to_string(),
            format!(".dossier.old-{pid}"),
            format!(".dossier.partial-{pid}"),
        ]
    );
    // The next run (without --force) recovers, then refuses to replace the restored result.
    let next = analyze(&s, &data, &out, &[]);
    common::assert_refused(
        &next,
        &[
            &format!("put back the former output from '.dossier.old-{pid}'"),
            &format!("removed the unfinished '.dossier.partial-{pid}'"),
            "pass --force",
        ],
    );
    assert_eq!(result_text(&out), former, "the former output, unchanged");
    assert_eq!(beside(&out), Vec::<String>::new());
    common::assert_success(&analyze(&s, &data, &out, &["--force", "--seed", "2"]));
    assert_ne!(result_text(&out), former);
    assert_eq!(beside(&out), Vec::<String>::new());
}

#[test]
fn killed_after_the_renames_the_next_run_keeps_the_replaced_output_under_a_dated_name() {
    let s = Scratch::new("atomic-after");
    let data = demo(&s);
    let out = s.path("dossier");
    let (former, pid) = kill_a_forced_run_at(&s, &data, &out, "dossier:after-renames");
    let new = result_text(&out);
    assert_ne!(new, former, "the new output is in place");
    assert!(beside(&out).contains(&format!(".dossier.old-{pid}")));
    let next = analyze(&s, &data, &out, &[]);
    let kept = format!(
        "kept '.dossier.old-{pid}', a former output already replaced, as 'dossier.replaced-"
    );
    common::assert_refused(&next, &[&kept]);
    assert_eq!(result_text(&out), new, "the new output stays");
    assert_eq!(beside(&out), Vec::<String>::new());
    let dated: Vec<String> = s
        .entries()
        .into_iter()
        .filter(|n| n.starts_with("dossier.replaced-"))
        .collect();
    assert_eq!(dated.len(), 1);
    assert_eq!(
        result_text(&s.path(&dated[0])),
        former,
        "the former output, kept"
    );
}

#[test]
fn leftovers_of_a_running_process_are_left_alone() {
    let s = Scratch::new("atomic-live");
    let data = demo(&s);
    let out = s.path("dossier");
    // This test's own process is alive; a leftover with its id is not anyone's to remove.
    let live = out.with_file_name(format!(".dossier.old-{}", std::process::id()));
    common::place_user_file(&live.join("notes.txt"));
    let run = analyze(&s, &data, &out, &[]);
    common::assert_success(&run);
    assert!(
        stderr_of(&run).contains("still runs"),
        "{}",
        stderr_of(&run)
    );
    common::assert_user_file(&live.join("notes.txt"));
}

#[test]
fn a_folder_that_appears_at_out_during_the_run_is_left_as_it_is() {
    let s = Scratch::new("atomic-appears");
    let data = demo(&s);
    let out = s.path("dossier");
    let hold = Hold::new(&s.dir, "hold");
    let args = analyze_args(&data, &out, &["--force"]);
    let mut child = spawn_in(&s.dir, args, Some((&hold, "dossier:before-swap")));
    hold.wait(&mut child);
    common::place_user_file(&out.join("notes.txt"));
    hold.release();
    let output = child.wait_with_output().unwrap();
    common::assert_refused(&output, &["changed while forebear ran", "'notes.txt'"]);
    common::assert_user_file(&out.join("notes.txt"));
    assert_eq!(s.entries(), ["dossier", "filter_discs.csv"]);
}

#[test]
fn a_second_run_on_the_same_out_fails_while_the_first_writes_it() {
    let s = Scratch::new("atomic-second");
    let data = demo(&s);
    let out = s.path("dossier");
    let hold = Hold::new(&s.dir, "hold");
    let args = analyze_args(&data, &out, &[]);
    let mut first = spawn_in(&s.dir, args, Some((&hold, "dossier:before-swap")));
    hold.wait(&mut first);
    let second = analyze(&s, &data, &out, &["--force"]);
    let busy = format!(
        "another forebear run (process {}) is writing the output folder",
        first.id()
    );
    common::assert_refused(&second, &[&busy]);
    hold.release();
    common::assert_success(&first.wait_with_output().unwrap());
    assert!(out.join("manifest.json").is_file());
    assert_eq!(beside(&out), Vec::<String>::new());
}

/// A symbolic link at `--out` is followed: the dossier goes into the folder it points to, and the
/// link stays a link.
#[cfg(unix)]
#[test]
fn a_symlinked_out_is_written_through_and_stays_a_link() {
    let s = Scratch::new("atomic-link");
    let data = demo(&s);
    std::fs::create_dir(s.path("real")).unwrap();
    let link = s.path("link");
    std::os::unix::fs::symlink("real", &link).unwrap();
    common::assert_success(&analyze(&s, &data, &link, &[]));
    assert!(s.path("real/result.json").is_file());
    let again = analyze(&s, &data, &link, &[]);
    assert_eq!(again.status.code(), Some(2), "a dossier behind the link");
    common::assert_success(&analyze(&s, &data, &link, &["--force", "--seed", "2"]));
    assert!(std::fs::symlink_metadata(&link)
        .unwrap()
        .file_type()
        .is_symlink());
    assert!(s.path("real/manifest.json").is_file());
    let entries = s.entries();
    assert_eq!(
        entries[..4],
        ["filter_discs.csv", "forebear-trail.jsonl", "link", "real"]
    );
    assert!(entries[4].starts_with("real.replaced-"), "{entries:?}");
    assert_eq!(entries.len(), 5);
}

#[cfg(unix)]
#[test]
fn a_dangling_symlink_out_is_refused_with_exit_code_2() {
    let s = Scratch::new("atomic-dangling");
    let data = demo(&s);
    let link = s.path("link");
    std::os::unix::fs::symlink("nowhere", &link).unwrap();
    let output = analyze(&s, &data, &link, &[]);
    assert_input_error(
        &output,
        &s,
        &["filter_discs.csv", "link"],
        &["symbolic link to 'nowhere'", "does not exist"],
    );
}

#[cfg(unix)]
#[test]
fn a_read_only_parent_folder_is_refused_with_exit_code_2() {
    use std::os::unix::fs::PermissionsExt;
    let s = Scratch::new("atomic-read-only");
    let data = demo(&s);
    let parent = s.path("locked");
    std::fs::create_dir(&parent).unwrap();
    std::fs::set_permissions(&parent, std::fs::Permissions::from_mode(0o555)).unwrap();
    if std::fs::write(parent.join("probe"), "").is_ok() {
        // Running as root (or with the capability to override permissions): the folder is not
        // read-only to this process, so there is nothing to check.
        eprintln!("skipped: this process may write into a read-only folder (root)");
        std::fs::set_permissions(&parent, std::fs::Permissions::from_mode(0o755)).unwrap();
        return;
    }
    let output = analyze(&s, &data, &parent.join("out"), &[]);
    std::fs::set_permissions(&parent, std::fs::Permissions::from_mode(0o755)).unwrap();
    assert_input_error(
        &output,
        &s,
        &["filter_discs.csv", "locked"],
        &["locked", "permission denied"],
    );
}

#[test]
fn a_refused_run_removes_the_parent_folders_it_created() {
    let s = Scratch::new("atomic-parents");
    let data = demo(&s);
    let out = s.path("a/b/out");
    let args = ["analyze".as_ref(), data.as_os_str(), "--target".as_ref()];
    let rest = ["no_such".as_ref(), "--out".as_ref(), out.as_os_str()];
    let output = common::run(args.into_iter().chain(rest));
    common::assert_refused(&output, &["no_such"]);
    assert_eq!(s.entries(), ["filter_discs.csv"]);
}

/// A full disk is the machine's state, not a bug: exit code 2 naming the file. Needs a small
/// file system of its own, so it runs only where this process may mount one (root in a container
/// that allows it) and says when it is skipped.
#[cfg(target_os = "linux")]
#[test]
fn a_full_disk_is_refused_with_exit_code_2_and_leaves_nothing() {
    struct Unmount(PathBuf);
    impl Drop for Unmount {
        fn drop(&mut self) {
            let _ = Command::new("umount").arg(&self.0).status();
        }
    }
    let s = Scratch::new("atomic-full");
    let data = demo(&s);
    let disk = s.path("disk");
    std::fs::create_dir(&disk).unwrap();
    let mounted = Command::new("mount")
        .args(["-t", "tmpfs", "-o", "size=64k", "tmpfs"])
        .arg(&disk)
        .stderr(Stdio::null())
        .status()
        .is_ok_and(|status| status.success());
    if !mounted {
        eprintln!("skipped: this process may not mount a small file system to fill");
        return;
    }
    let _unmount = Unmount(disk.clone());
    let output = analyze(&s, &data, &disk.join("out"), &["--quiet"]);
    let stderr = common::assert_refused(&output, &["the disk is full"]);
    assert!(
        stderr.starts_with("forebear: error: cannot write '") && stderr.lines().count() == 1,
        "{stderr}"
    );
    assert_eq!(std::fs::read_dir(&disk).unwrap().count(), 0, "nothing left");
}

#[test]
fn demo_never_overwrites_a_different_file_where_its_data_goes() {
    let s = Scratch::new("atomic-demo");
    std::fs::create_dir_all(s.path("demo/demo-data")).unwrap();
    let mine = s.write("demo/demo-data/filter_discs.csv", "a,b\n1,2\n");
    let args = ["demo".as_ref(), "--force".as_ref(), "--out".as_ref()];
    let output = common::run(args.into_iter().chain([s.path("demo").as_os_str()]));
    common::assert_refused(&output, &["is not the demo data"]);
    assert_eq!(std::fs::read_to_string(&mine).unwrap(), "a,b\n1,2\n");
    assert_eq!(
        std::fs::read_dir(s.path("demo/demo-data")).unwrap().count(),
        1,
        "no staged file left"
    );
}
