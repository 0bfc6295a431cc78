//! The bad-input corpus (`tests/bad-input/`, see its README): the real binary on every file must
//! exit with the expected code (2), print one error line holding every expected fragment, print no
//! panic, and create no output folder.

use crate::common::*;
use std::path::{Path, PathBuf};

/// One corpus case: the data file's name and what its `.expect` file says.
struct Case {
    name: String,
    args: String,
    exit: i32,
    setup: Option<String>,
    messages: Vec<String>,
    /// False for errors about a flag rather than the file (`file: not named`).
    names_file: bool,
}

fn corpus() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/bad-input")
}

fn cases() -> Vec<Case> {
    let mut cases: Vec<Case> = std::fs::read_dir(corpus())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter_map(|f| f.strip_suffix(".expect").map(str::to_string))
        .map(|name| {
            let text = std::fs::read_to_string(corpus().join(format!("{name}.expect"))).unwrap();
            let mut case = Case {
                name,
                args: "analyze {data} --target y --out {out} --replicates 0".to_string(),
                exit: -1,
                setup: None,
                messages: Vec::new(),
                names_file: true,
            };
            for line in text.lines().filter(|l| !l.trim().is_empty()) {
                let (key, value) = line.split_once(": ").expect("key: value");
                match key {
                    "args" => case.args = value.to_string(),
                    "exit" => case.exit = value.parse().expect("an exit code"),
                    "setup" => case.setup = Some(value.to_string()),
                    "message" => case.messages.push(value.to_string()),
                    "file" => case.names_file = value != "not named",
                    other => panic!("{}: unknown key {other}", case.name),
                }
            }
            assert!(
                !case.messages.is_empty(),
                "{}: no message fragment",
                case.name
            );
            case
        })
        .collect();
    cases.sort_by(|a, b| a.name.cmp(&b.name));
    cases
}

/// Places the case's input in `scratch`; `None` when the case cannot be set up here (a file
/// without read permission is readable to root).
fn set_up(case: &Case, scratch: &Scratch) -> Option<Vec<String>> {
    let data = scratch.path(&case.name);
    match case.setup.as_deref() {
        Some("absent") => return Some(vec![]),
        Some("folder") => std::fs::create_dir(&data).unwrap(),
        Some("symlink-loop") => std::os::unix::fs::symlink(&data, &data).unwrap(),
        None | Some("unreadable") => {
            std::fs::copy(corpus().join(&case.name), &data).unwrap();
        }
        Some(other) => panic!("{}: unknown setup {other}", case.name),
    }
    if case.setup.as_deref() == Some("unreadable") {
        use std::os::unix::fs::PermissionsExt;
        std::fs::set_permissions(&data, std::fs::Permissions::from_mode(0o000)).unwrap();
        if std::fs::File::open(&data).is_ok() {
            return None;
        }
    }
    Some(vec![case.name.clone()])
}

#[test]
fn every_bad_input_gets_exit_2_one_clear_sentence_and_no_output_folder() {
    let cases = cases();
    assert!(cases.len() >= 30, "the corpus holds {} cases", cases.len());
    let mut skipped = Vec::new();
    let mut failures = Vec::new();
    for case in &cases {
        let scratch = Scratch::new("bad-input");
        let Some(inputs) = set_up(case, &scratch) else {
            skipped.push(case.name.clone());
            continue;
        };
        let data = scratch.path(&case.name);
        let out = scratch.path("out");
        let args: Vec<String> = case
            .args
            .split_whitespace()
            .map(|a| {
                a.replace("{data}", data.to_str().unwrap())
                    .replace("{out}", out.to_str().unwrap())
            })
            .collect();
        let output = run(&args);
        let checked = std::panic::catch_unwind(|| check(case, &output, &scratch, &inputs));
        if let Err(payload) = checked {
            let why = payload
                .downcast_ref::<String>()
                .cloned()
                .unwrap_or_else(|| "a failed check".to_string());
            failures.push(format!("{}: {why}", case.name));
        }
    }
    if !skipped.is_empty() {
        eprintln!("skipped (running as root, who can read any file): {skipped:?}");
    }
    assert!(
        failures.is_empty(),
        "{} case(s) failed:\n{}",
        failures.len(),
        failures.join("\n")
    );
}

fn check(case: &Case, output: &std::process::Output, scratch: &Scratch, inputs: &[String]) {
    let stderr = stderr_of(output);
    assert_eq!(
        output.status.code(),
        Some(case.exit),
        "{}: {stderr}",
        case.name
    );
    assert!(
        !stderr.contains("panicked") && !stderr.contains("internal error"),
        "{}: {stderr}",
        case.name
    );
    let needles: Vec<&str> = case.messages.iter().map(String::as_str).collect();
    let inputs: Vec<&str> = inputs.iter().map(String::as_str).collect();
    let line = assert_input_error(output, scratch, &inputs, &needles);
    // Errors about the file name it; errors about a flag name the flag instead.
    let about_a_flag = case.messages.iter().any(|m| m.starts_with("--"));
    assert!(
        about_a_flag || line.contains(&case.name),
        "the message names the file: {line}"
    );
}
