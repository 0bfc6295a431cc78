//! The data file is opened and read once, its bytes hashed while they are parsed (issue 12,
//! item 4): a FIFO, a pipe given as `/dev/stdin` (as a process substitution is) and a file that
//! grows while it is read give a byte fingerprint of exactly the bytes the content fingerprint
//! was computed from. Every wait is bounded, so that a regression (a second open of a FIFO hangs)
//! fails instead of hanging.

use crate::common::*;
use std::fs::{File, OpenOptions};
use std::io::Write;
use std::os::unix::fs::OpenOptionsExt;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Output, Stdio};
use std::time::{Duration, Instant};

/// How long any one forebear run here may take before the test fails.
const LIMIT: Duration = Duration::from_secs(120);

fn forebear(args: &[&str]) -> Command {
    let mut command = bin();
    command
        .args(args)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped());
    command
}

/// Waits for `child` at most [`LIMIT`], killing it and failing after that.
fn finish(child: Child) -> Output {
    finish_within(child, LIMIT)
}

fn make_fifo(path: &Path) {
    let status = Command::new("mkfifo").arg(path).status().unwrap();
    assert!(status.success(), "mkfifo {}", path.display());
}

/// Opens the FIFO for writing once `child` has opened it for reading; fails (instead of blocking
/// forever) if the child ends first or does not open it within [`LIMIT`].
fn fifo_writer(path: &Path, child: &mut Child) -> File {
    let deadline = Instant::now() + LIMIT;
    loop {
        // Without a reader, a non-blocking open for writing fails with ENXIO.
        match OpenOptions::new()
            .write(true)
            .custom_flags(libc::O_NONBLOCK)
            .open(path)
        {
            // A reader is there: open again, blocking, so that writes wait for it.
            Ok(_probe) => return OpenOptions::new().write(true).open(path).unwrap(),
            Err(e) if e.raw_os_error() == Some(libc::ENXIO) => {}
            Err(e) => panic!("{}: {e}", path.display()),
        }
        if let Some(status) = child.try_wait().unwrap() {
            panic!("forebear ended ({status}) without opening the FIFO");
        }
        assert!(Instant::now() < deadline, "forebear never opened the FIFO");
        std::thread::sleep(Duration::from_millis(10));
    }
}

/// `analyze` started on a new FIFO `data.csv` of `scratch` for `target` into `scratch/out`, with
/// `extra` flags: the running child, the FIFO's write end (open once forebear reads) and `out`.
fn analyze_fifo(scratch: &Scratch, target: &str, extra: &[&str]) -> (Child, File, PathBuf) {
    let fifo = scratch.path("data.csv");
    make_fifo(&fifo);
    let out = scratch.path("out");
    let mut args = vec![
        "analyze",
        fifo.to_str().unwrap(),
        "--target",
        target,
        "--out",
        out.to_str().unwrap(),
    ];
    args.extend(extra);
    let mut child = forebear(&args).spawn().unwrap();
    let writer = fifo_writer(&fifo, &mut child);
    (child, writer, out)
}

fn manifest(dir: &Path) -> serde_json::Value {
    let text = std::fs::read_to_string(dir.join("manifest.json")).unwrap();
    serde_json::from_str(&text).unwrap()
}

/// The content fingerprint `forebear fingerprint --json` gives for a regular file.
fn content_sha256(path: &Path) -> String {
    let output = run(["fingerprint", path.to_str().unwrap(), "--json"]);
    assert_success(&output);
    let value: serde_json::Value = serde_json::from_slice(&output.stdout).unwrap();
    value["content_sha256"].as_str().unwrap().to_string()
}

#[test]
fn a_fifo_is_analysed_and_its_byte_hash_is_that_of_the_bytes_written() {
    let scratch = Scratch::new("read-once-fifo");
    let bytes = delimited(&table(300), ",", ".");
    let (child, mut writer, out) = analyze_fifo(&scratch, "y", &["--replicates", "0"]);
    writer.write_all(bytes.as_bytes()).unwrap();
    drop(writer);
    let output = finish(child);
    assert_success(&output);
    let data = &manifest(&out)["data"];
    assert_eq!(data["sha256"], sha256_hex(bytes.as_bytes()));
    assert_eq!(data["size_bytes"], bytes.len());
    let copy = scratch.write("copy.csv", &bytes);
    assert_eq!(data["content"]["sha256"], content_sha256(&copy));
    assert_eq!(data["content"]["rows"], 300);
}

#[test]
fn a_pipe_given_as_dev_stdin_is_read_once_by_every_command() {
    let scratch = Scratch::new("read-once-stdin");
    let bytes = delimited(&table(200), ",", ".");
    let copy = scratch.write("copy.csv", &bytes);
    let out = scratch.path("out");
    let with_stdin = |args: &[&str]| {
        let mut child = forebear(args).stdin(Stdio::piped()).spawn().unwrap();
        let mut stdin = child.stdin.take().unwrap();
        let text = bytes.clone();
        // A reader that stops early closes the pipe: the writer then sees an error, not a hang.
        let writer = std::thread::spawn(move || stdin.write_all(text.as_bytes()).is_ok());
        let output = finish(child);
        writer.join().unwrap();
        output
    };
    let analyzed = with_stdin(&[
        "analyze",
        "/dev/stdin",
        "--target",
        "y",
        "--out",
        out.to_str().unwrap(),
        "--replicates",
        "0",
    ]);
    assert_success(&analyzed);
    assert_eq!(
        manifest(&out)["data"]["sha256"],
        sha256_hex(bytes.as_bytes())
    );

    let printed = with_stdin(&["fingerprint", "/dev/stdin", "--json"]);
    assert_success(&printed);
    let value: serde_json::Value = serde_json::from_slice(&printed.stdout).unwrap();
    assert_eq!(value["sha256"], sha256_hex(bytes.as_bytes()));
    assert_eq!(value["size_bytes"], bytes.len());
    assert_eq!(
        value["content_sha256"].as_str(),
        Some(&*content_sha256(&copy))
    );

    let measured = with_stdin(&[
        "dependence",
        "/dev/stdin",
        "--response",
        "y",
        "--on",
        "x1",
        "--permutations",
        "19",
    ]);
    assert_success(&measured);
    assert!(String::from_utf8_lossy(&measured.stdout).contains("T_n(y, x1)"));

    let verified = with_stdin(&["verify", out.to_str().unwrap(), "--data", "/dev/stdin"]);
    let report = String::from_utf8_lossy(&verified.stdout);
    assert_success(&verified);
    assert!(report.contains("bytes identical"), "{report}");
    assert!(report.trim_end().ends_with("VERIFIED"), "{report}");
}

#[test]
fn a_misspelt_target_in_a_fifo_fails_after_the_header_without_waiting_for_the_rows() {
    let scratch = Scratch::new("read-once-header");
    let (child, mut writer, _) = analyze_fifo(&scratch, "yy", &[]);
    writer.write_all(b"x1,x2,y,z\n").unwrap();
    // The rows never come while forebear runs: it must answer from the header alone.
    let output = finish(child);
    drop(writer);
    let stderr = assert_refused(&output, &["line 1", "'yy'", "did you mean 'y'"]);
    assert_eq!(stderr.lines().count(), 1, "{stderr}");
}

/// The file grows while forebear reads it: the first part fills the pipe several times over, so
/// that writing it returns only once forebear is reading; the rest is written after that. Both
/// fingerprints must describe all the bytes, and verify against the final file must agree.
#[test]
fn a_file_that_grows_while_read_gets_fingerprints_of_the_same_bytes() {
    let scratch = Scratch::new("read-once-growing");
    let rows = table(8000);
    let whole = delimited(&rows, ",", ".");
    // The header and 7000 rows (about 180 KB, more than twice a pipe's 64 KiB), then 1000 rows
    // more.
    let split = whole.match_indices('\n').nth(7000).unwrap().0 + 1;
    let (first, growth) = whole.split_at(split);
    assert!(first.len() > 2 * 65536);
    let (child, mut writer, out) = analyze_fifo(&scratch, "y", &["--replicates", "0"]);
    writer.write_all(first.as_bytes()).unwrap();
    writer.flush().unwrap();
    writer.write_all(growth.as_bytes()).unwrap();
    drop(writer);
    let output = finish(child);
    assert_success(&output);

    let data = &manifest(&out)["data"];
    assert_eq!(data["sha256"], sha256_hex(whole.as_bytes()));
    assert_eq!(data["size_bytes"], whole.len());
    assert_eq!(data["content"]["rows"], 8000);
    let final_file = scratch.write("final.csv", &whole);
    assert_eq!(data["content"]["sha256"], content_sha256(&final_file));

    let verified = finish(
        forebear(&[
            "verify",
            out.to_str().unwrap(),
            "--data",
            final_file.to_str().unwrap(),
        ])
        .spawn()
        .unwrap(),
    );
    let report = String::from_utf8_lossy(&verified.stdout);
    assert_success(&verified);
    assert!(report.contains("bytes identical"), "{report}");
    assert!(report.trim_end().ends_with("VERIFIED"), "{report}");
}
