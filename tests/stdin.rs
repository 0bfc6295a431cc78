//! Data from standard input (`-`) and from FIFOs (issue 16, item 2): read once through the same
//! hashing reader as a file, so the byte fingerprint is of exactly the bytes sent and the digest
//! is that of the same file; the dossier says where the data came from and that its commands need
//! the data saved as a file; a non-regular file is never read a second time.

use crate::common::*;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

/// Runs forebear with `bytes` piped into its standard input.
fn piped(dir: &Path, args: &[&str], bytes: &[u8]) -> Output {
    let mut child = bin()
        .current_dir(dir)
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut stdin = child.stdin.take().unwrap();
    let bytes = bytes.to_vec();
    // A reader that stops early closes the pipe; the writer then sees an error, which is fine.
    let writer = std::thread::spawn(move || {
        let _ = stdin.write_all(&bytes);
    });
    let output = child.wait_with_output().unwrap();
    writer.join().unwrap();
    output
}

/// A FIFO at `path` that a thread fills with `bytes` once a reader opens it. The thread is not
/// joined: if no reader ever opens the FIFO, it waits until the test process ends.
fn fifo_with(path: &Path, bytes: &[u8]) {
    let status = Command::new("mkfifo").arg(path).status().unwrap();
    assert!(status.success());
    let (path, bytes) = (path.to_path_buf(), bytes.to_vec());
    std::thread::spawn(move || {
        if let Ok(mut fifo) = std::fs::OpenOptions::new().write(true).open(&path) {
            let _ = fifo.write_all(&bytes);
        }
    });
}

fn analyze_args<'a>(data: &'a str, out: &'a str) -> Vec<&'a str> {
    vec![
        "--quiet",
        "analyze",
        data,
        "--target",
        "crush_strength",
        "--replicates",
        "4",
        "--out",
        out,
    ]
}

fn digests(dossier: &Path) -> (String, String, String) {
    let result = result_json(dossier);
    let text = |v: &serde_json::Value| v.as_str().unwrap().to_string();
    (
        text(&result["digest"]),
        text(&result["data"]["sha256"]),
        text(&result["data"]["content_sha256"]),
    )
}

#[test]
fn fingerprint_of_standard_input_is_the_sha256_of_exactly_the_bytes_sent() {
    let scratch = Scratch::new("stdin-fingerprint");
    let bytes = forebear::demo::DEMO_CSV.as_bytes();
    let output = piped(&scratch.dir, &["fingerprint", "-", "--json"], bytes);
    assert_success(&output);
    let value: serde_json::Value = serde_json::from_slice(&output.stdout).unwrap();
    assert_eq!(value["sha256"], sha256_hex(bytes));
    assert_eq!(value["size_bytes"], bytes.len());
    let text = piped(&scratch.dir, &["fingerprint", "-"], bytes);
    assert_success(&text);
    let stdout = lossy_stdout(&text);
    assert!(stdout.contains("standard input"), "{stdout}");
    assert!(stdout.contains(&sha256_hex(bytes)), "{stdout}");
}

#[test]
fn standard_input_and_a_fifo_give_the_digest_and_fingerprints_of_the_file() {
    let scratch = Scratch::new("stdin-same");
    let file = write_demo_csv(&scratch.dir);
    let bytes = std::fs::read(&file).unwrap();
    let out = |name: &str| scratch.path(name).display().to_string();
    assert_success(&run(analyze_args(
        file.to_str().unwrap(),
        &out("from-file"),
    )));
    assert_success(&piped(
        &scratch.dir,
        &analyze_args("-", &out("from-stdin")),
        &bytes,
    ));
    let fifo = scratch.path("data.fifo");
    fifo_with(&fifo, &bytes);
    assert_success(&run(analyze_args(
        fifo.to_str().unwrap(),
        &out("from-fifo"),
    )));
    let expected = digests(&scratch.path("from-file"));
    assert_eq!(expected.1, sha256_hex(&bytes));
    assert_eq!(digests(&scratch.path("from-stdin")), expected);
    assert_eq!(digests(&scratch.path("from-fifo")), expected);
    // `dependence` reads standard input the same way: the same report as from the file.
    let dependence = |data: &str| {
        vec![
            "dependence".to_string(),
            data.to_string(),
            "--response".into(),
            "crush_strength".into(),
            "--on".into(),
            "pore_density".into(),
        ]
    };
    let from_file = run(dependence(file.to_str().unwrap()));
    let args = dependence("-");
    let args: Vec<&str> = args.iter().map(String::as_str).collect();
    let from_stdin = piped(&scratch.dir, &args, &bytes);
    assert_success(&from_file);
    assert_success(&from_stdin);
    assert_eq!(from_stdin.stdout, from_file.stdout);
}

#[test]
fn a_dossier_from_standard_input_says_so_and_its_commands_ask_for_the_data_file() {
    let scratch = Scratch::new("stdin-dossier");
    let file = write_demo_csv(&scratch.dir);
    let bytes = std::fs::read(&file).unwrap();
    let dossier: PathBuf = scratch.path("dossier");
    let output = piped(
        &scratch.dir,
        &analyze_args("-", dossier.to_str().unwrap()),
        &bytes,
    );
    assert_success(&output);
    let markdown = std::fs::read_to_string(dossier.join("dossier.md")).unwrap();
    assert!(markdown.contains("| file | standard input |"), "data table");
    assert!(markdown.contains("The data were read from standard input"));
    assert!(markdown.contains("forebear verify DOSSIER_FOLDER --data DATA_FILE"));
    assert!(markdown.contains("forebear analyze DATA_FILE --target"));
    assert!(!markdown.contains("--data -"));
    let manifest = std::fs::read_to_string(dossier.join("manifest.json")).unwrap();
    assert!(manifest.contains("forebear analyze DATA_FILE --target"));
    // The saved file verifies, and so does the same file sent again on standard input.
    assert_success(&verify(&dossier, &file, &[]));
    let verify_piped = |bytes: &[u8]| {
        piped(
            &scratch.dir,
            &[
                "--quiet",
                "verify",
                dossier.to_str().unwrap(),
                "--data",
                "-",
            ],
            bytes,
        )
    };
    assert_success(&verify_piped(&bytes));
    let other = forebear::demo::generate_demo_csv_seeded(5);
    let mismatch = verify_piped(other.as_bytes());
    assert_eq!(exit_code(&mismatch), 1);
}

#[test]
fn empty_standard_input_is_an_input_error_naming_standard_input() {
    let scratch = Scratch::new("stdin-empty");
    let output = piped(&scratch.dir, &["fingerprint", "-"], b"");
    assert_eq!(exit_code(&output), 2);
    let stderr = lossy_stderr(&output);
    assert!(stderr.contains("'standard input' is empty"), "{stderr}");
}

#[test]
fn a_fifo_named_by_two_studies_of_a_plan_is_read_once_and_the_second_refused() {
    let scratch = Scratch::new("fifo-twice");
    let bytes = forebear::demo::DEMO_CSV.as_bytes();
    fifo_with(&scratch.path("data.fifo"), bytes);
    scratch.write(
        "plan.toml",
        "[defaults]\nreplicates = 0\n\n\
         [[study]]\nname = \"first\"\ndata = \"data.fifo\"\ntargets = [\"crush_strength\"]\n\n\
         [[study]]\nname = \"second\"\ndata = \"data.fifo\"\ntargets = [\"crush_strength\"]\n",
    );
    let mut child = bin()
        .current_dir(&scratch.dir)
        .args(["batch", "plan.toml", "--out", "out"])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let _ = child.stdin.take();
    let output = finish_within(child, std::time::Duration::from_secs(120));
    assert_eq!(exit_code(&output), 2, "{}", lossy_stderr(&output));
    // The index names the failed study; the reason (which may quote the file) is on stderr.
    let stderr = lossy_stderr(&output);
    assert!(
        stderr.contains("was already read by this command and is not a regular file"),
        "{stderr}"
    );
    let analysed = ["first", "second"]
        .iter()
        .filter(|s| {
            scratch
                .path(&format!("out/{s}/crush_strength/dossier.md"))
                .exists()
        })
        .count();
    assert_eq!(analysed, 1, "exactly one study read the FIFO");
}
