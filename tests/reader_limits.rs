//! The reader's bounds (issue 12, item 5; README "Limits"): a file without line breaks stops at
//! the line limit quickly and with bounded memory, and an over-long value, too many columns or an
//! over-long line are refused with exit code 2 and a sentence naming the file, the line and the
//! limit. The inputs too large to commit to `tests/bad-input/` are generated here. Every run is
//! bounded in time, so that a regression fails instead of hanging.

use crate::common::*;
use std::io::Write;
use std::process::{Child, Output, Stdio};
use std::time::Duration;

/// How long one refusal may take: reading 16 MiB takes well under a second.
const LIMIT: Duration = Duration::from_secs(60);

fn spawn(args: &[&str], stdin: Stdio) -> Child {
    bin()
        .args(args)
        .stdin(stdin)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap()
}

/// Waits for `child` at most [`LIMIT`], killing it and failing after that.
fn finish(child: Child) -> Output {
    finish_within(child, LIMIT)
}

fn analyze_file(scratch: &Scratch, data: &str) -> Output {
    let out = scratch.path("out");
    let args = [
        "analyze",
        data,
        "--target",
        "y",
        "--out",
        out.to_str().unwrap(),
        "--replicates",
        "0",
    ];
    finish(spawn(&args, Stdio::null()))
}

#[test]
fn dev_zero_stops_at_the_line_limit_quickly() {
    let scratch = Scratch::new("limits-zero");
    let output = analyze_file(&scratch, "/dev/zero");
    assert_input_error(
        &output,
        &scratch,
        &[],
        &["/dev/zero", "line 1", "longer than 16 MiB", "one line"],
    );
}

#[test]
fn an_endless_line_on_a_pipe_stops_at_the_line_limit() {
    let scratch = Scratch::new("limits-endless");
    let out = scratch.path("out");
    let mut child = spawn(
        &[
            "analyze",
            "/dev/stdin",
            "--target",
            "y",
            "--out",
            out.to_str().unwrap(),
        ],
        Stdio::piped(),
    );
    let mut stdin = child.stdin.take().unwrap();
    // Digits and commas without a line break, until forebear stops reading and the pipe breaks.
    let writer = std::thread::spawn(move || {
        let block = "1234567,".repeat(8192);
        while stdin.write_all(block.as_bytes()).is_ok() {}
    });
    let output = finish(child);
    writer.join().unwrap();
    assert_input_error(
        &output,
        &scratch,
        &[],
        &["/dev/stdin", "line 1", "longer than 16 MiB"],
    );
}

#[test]
fn a_value_longer_than_64_kib_is_refused_with_its_line_and_column() {
    let scratch = Scratch::new("limits-field");
    let mut text = delimited(&table(30), ",", ".");
    text.push_str(&format!("0.5,\"{}\",0.5,0.5\n", "7".repeat(64 * 1024 + 1)));
    let data = scratch.write("long-value.csv", &text);
    let output = analyze_file(&scratch, data.to_str().unwrap());
    assert_input_error(
        &output,
        &scratch,
        &["long-value.csv"],
        &["long-value.csv", "line 32, column 2", "longer than 64 KiB"],
    );
}

#[test]
fn more_than_100000_columns_are_refused_from_the_header() {
    let scratch = Scratch::new("limits-columns");
    let names: Vec<String> = (0..100_001).map(|k| format!("c{k}")).collect();
    let data = scratch.write("wide.csv", names.join(",") + "\n");
    let output = analyze_file(&scratch, data.to_str().unwrap());
    assert_input_error(
        &output,
        &scratch,
        &["wide.csv"],
        &["wide.csv", "line 1", "100001 columns", "more than 100000"],
    );
}

#[test]
fn a_row_longer_than_16_mib_is_refused_with_its_line() {
    let scratch = Scratch::new("limits-line");
    let mut text = delimited(&table(30), ",", ".");
    // Values within the value limit, but 300 of them of 60 000 bytes make an 18 MB row.
    let value = "3".repeat(60_000);
    text.push_str(&vec![value.as_str(); 300].join(","));
    text.push('\n');
    let data = scratch.write("long-row.csv", &text);
    let output = analyze_file(&scratch, data.to_str().unwrap());
    assert_input_error(
        &output,
        &scratch,
        &["long-row.csv"],
        &["long-row.csv", "line 32", "longer than 16 MiB"],
    );
}

#[test]
fn a_header_name_of_a_megabyte_is_refused_by_the_name_limit() {
    let scratch = Scratch::new("limits-name");
    let text = format!("{},y\n1,2\n", "n".repeat(1 << 20));
    let data = scratch.write("long-name.csv", text);
    let output = analyze_file(&scratch, data.to_str().unwrap());
    assert_input_error(
        &output,
        &scratch,
        &["long-name.csv"],
        &[
            "long-name.csv",
            "line 1, column 1",
            "the column name is 1048576 bytes long",
            "more than 1024 bytes",
        ],
    );
}
