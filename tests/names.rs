//! Names and paths a reader can trust (issue 12, items 6 and 8), on the real binary: no control
//! sequence or bidirectional control of a user's name, value or path reaches the terminal or a
//! report as it is; outputs never write two names alike; echoes are bounded; folder names are
//! portable; the batch index quotes no refused file; the reproduce command names exactly the file.
//! The refused column names themselves are in the bad-input corpus (`tests/bad-input/name-*`).

use crate::common::*;
use std::ffi::OsStr;
use std::path::Path;

/// Bytes that would act on a terminal or reorder a line: ESC, BEL, CSI, the bidi overrides.
fn assert_inert(what: &str, text: &str) {
    for c in [
        '\u{1b}', '\u{7}', '\u{9b}', '\u{202e}', '\u{202d}', '\u{2066}',
    ] {
        assert!(
            !text.contains(c),
            "{what} holds U+{:04X}: {text:?}",
            c as u32
        );
    }
}

fn data_with_header(header: &str, rows: usize) -> String {
    let mut text = format!("{header}\n");
    for r in table(rows) {
        let cells: Vec<String> = r.iter().map(|v| format!("{v:.4}")).collect();
        text.push_str(&cells.join(","));
        text.push('\n');
    }
    text
}

#[test]
fn an_escape_sequence_in_a_target_flag_is_shown_escaped_not_sent_to_the_terminal() {
    let s = Scratch::new("names-flag");
    let data = s.write("d.csv", data_with_header("x1,x2,y,z", 30));
    let output = analyze(&s, &data, "\u{1b}]0;owned\u{7}\u{202e}y", &[]);
    let line = assert_input_error(
        &output,
        &s,
        &["d.csv"],
        &["'\\u{1b}]0;owned\\u{7}\\u{202e}y'", "is not in the header"],
    );
    assert_inert("stderr", &line);
}

#[test]
fn a_path_with_an_escape_sequence_is_shown_escaped_in_an_error() {
    let s = Scratch::new("names-path");
    let data = s.write("\u{1b}[31mred\u{202e}.csv", "only,a,header\n");
    let output = analyze(&s, &data, "y", &[]);
    let stderr = assert_refused(&output, &["\\u{1b}[31mred\\u{202e}.csv"]);
    assert_inert("stderr", &stderr);
}

#[test]
fn a_column_named_like_a_guarded_formula_is_written_apart_from_the_formula() {
    let s = Scratch::new("names-guard");
    let data = s.write("d.csv", data_with_header("=a,'=a,y,z", 60));
    let output = analyze(&s, &data, "y", &[]);
    assert_success(&output);
    let trace = std::fs::read_to_string(s.path("out/trace.csv")).unwrap();
    let cells: std::collections::BTreeSet<&str> =
        trace.lines().skip(1).flat_map(|l| l.split(',')).collect();
    assert!(cells.contains("'=a"), "{trace}");
    assert!(cells.contains("''=a"), "{trace}");
}

#[test]
fn a_data_file_name_with_a_bidi_override_shows_as_an_escape_in_every_report() {
    let s = Scratch::new("names-bidi-file");
    let data = s.write("x\u{202e}vsc.csv", data_with_header("x1,x2,y,z", 60));
    let output = analyze(&s, &data, "y", &[]);
    assert_success(&output);
    assert_inert("stdout", &String::from_utf8_lossy(&output.stdout));
    assert_inert("stderr", &stderr_of(&output));
    // The JSON records (result.json, manifest.json) keep the name exactly, as data; the texts a
    // person reads show it escaped.
    for file in ["dossier.md", "dossier.html"] {
        let text = std::fs::read_to_string(s.path("out").join(file)).unwrap();
        assert_inert(file, &text);
    }
    let html = std::fs::read_to_string(s.path("out/dossier.html")).unwrap();
    assert!(
        html.contains("x\\u{202e}vsc.csv"),
        "the HTML shows the escape"
    );
}

/// The word that bash reads as the second argument of `forebear analyze …` in `command`.
fn second_word_as_bash_reads_it(command: &str) -> Vec<u8> {
    let rest = command
        .strip_prefix("forebear ")
        .expect("the command starts with forebear");
    let script = format!("second() {{ printf '%s' \"$2\"; }}; second {rest}");
    let output = std::process::Command::new("bash")
        .args(["-c", &script])
        .output()
        .expect("bash runs");
    assert!(output.status.success(), "{output:?}");
    output.stdout
}

#[test]
fn the_reproduce_command_names_a_file_with_a_line_break_and_quotes_exactly() {
    let s = Scratch::new("names-reproduce");
    let name = "da\nta 'x' \u{202e}$HOME.csv";
    let data = s.write(name, data_with_header("x1,x2,y,z", 60));
    let output = analyze(&s, &data, "y", &[]);
    assert_success(&output);
    let manifest: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(s.path("out/manifest.json")).unwrap())
            .unwrap();
    let reproduce = manifest["command"]["reproduce"].as_str().unwrap();
    assert!(!reproduce.contains('\n'), "one line: {reproduce:?}");
    assert_inert("the reproduce command", reproduce);
    let word = second_word_as_bash_reads_it(reproduce);
    assert_eq!(word, data.as_os_str().as_encoded_bytes(), "{reproduce}");
    let dossier = std::fs::read_to_string(s.path("out/dossier.md")).unwrap();
    assert!(
        dossier.contains(reproduce),
        "the dossier shows the same command"
    );
}

#[test]
fn a_data_file_name_that_is_not_utf8_is_refused() {
    use std::os::unix::ffi::OsStrExt;
    let s = Scratch::new("names-latin1");
    let path = s.dir.join(OsStr::from_bytes(b"caf\xe9.csv"));
    std::fs::write(&path, data_with_header("x1,x2,y,z", 30)).unwrap();
    let output = run([
        OsStr::new("analyze"),
        path.as_os_str(),
        OsStr::new("--target"),
        OsStr::new("y"),
        OsStr::new("--out"),
        s.path("out").as_os_str(),
    ]);
    let stderr = assert_refused(&output, &["not valid UTF-8", "0xE9", "rename"]);
    assert_eq!(stderr.lines().count(), 1, "{stderr}");
    assert!(!s.path("out").exists());
}

/// A scratch folder with `plan.toml` and a data file `data/d.csv` of valid data.
fn plan_scratch(test: &str, plan: &str) -> Scratch {
    let s = Scratch::new(test);
    std::fs::create_dir(s.path("data")).unwrap();
    s.write("data/d.csv", data_with_header("x1,x2,y,z", 60));
    s.write("plan.toml", plan);
    s
}

fn batch(s: &Scratch, args: &[&str]) -> std::process::Output {
    let plan = s.path("plan.toml");
    let mut all: Vec<&OsStr> = vec![OsStr::new("batch"), plan.as_os_str()];
    all.extend(args.iter().map(OsStr::new));
    run_in(&s.dir, all)
}

#[test]
fn a_huge_plan_string_is_echoed_capped_with_its_size() {
    let long = "q".repeat(5 << 20);
    let plan = format!(
        "[[study]]\nname = \"{long}\"\ndata = \"data/d.csv\"\ntargets = [\"y\", \"{long}\"]\n\
         scaling = \"{long}\"\n"
    );
    let s = plan_scratch("names-huge", &plan);
    let output = batch(&s, &["--out", "out"]);
    let stderr = assert_refused(&output, &["… (5242880 bytes)'"]);
    assert!(
        stderr.len() < 6000,
        "stderr is bounded: {} bytes",
        stderr.len()
    );
    assert!(!s.path("out").exists());
}

#[test]
fn windows_device_names_are_refused_as_study_and_target_folder_names() {
    let plan = "[[study]]\nname = \"Con\"\ndata = \"data/d.csv\"\ntargets = [\"y\"]\n\n\
                [[study]]\nname = \"com1.archive\"\ndata = \"data/d.csv\"\ntargets = [\"y\"]\n\n\
                [[study]]\nname = \"fine\"\ndata = \"data/d.csv\"\ntargets = [\"aux\", \"nul.txt\"]\n";
    let s = plan_scratch("names-devices", plan);
    let output = batch(&s, &["--out", "out"]);
    let stderr = assert_refused(
        &output,
        &[
            "'Con'",
            "'com1.archive'",
            "'aux'",
            "'nul.txt'",
            "reserved device name",
        ],
    );
    assert!(stderr.contains("4 problem(s)"), "{stderr}");
    assert!(!s.path("out").exists());
}

#[test]
fn the_batch_index_does_not_quote_a_refused_data_file() {
    let plan = "[[study]]\nname = \"secrets\"\ndata = \"data/shadow\"\ntargets = [\"y\"]\n\n\
                [[study]]\nname = \"good\"\ndata = \"data/d.csv\"\ntargets = [\"y\"]\n";
    let s = plan_scratch("names-shadow", plan);
    s.write(
        "data/shadow",
        "root:$6$SECRETSALT$SECRETHASH:19000:0:99999:7:::\ndaemon:*:19000:0:99999:7:::\n",
    );
    let output = batch(&s, &["--out", "out"]);
    let stderr = assert_refused(&output, &["SECRETHASH"]);
    assert_inert("stderr", &stderr);
    for file in ["index.html", "index.md", "summary.json"] {
        let text = std::fs::read_to_string(s.path("out").join(file)).unwrap();
        assert!(!text.contains("SECRET"), "{file} quotes the file: {text}");
        assert!(text.contains("shadow"), "{file} names the file");
    }
    let summary = std::fs::read_to_string(s.path("out/summary.json")).unwrap();
    assert!(summary.contains("line 1"), "the place is kept: {summary}");
    assert!(Path::new(&s.path("out/good/y/dossier.html")).is_file());
}
