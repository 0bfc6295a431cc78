//! Data input and the command-line contract (DESIGN.md), proven by running the real binary on real
//! files. Every bad input must give exit code 2, one sentence on stderr that names the file, line,
//! column and value at fault, and leave no output folder (nor staging folder) behind.
//!
//! The CSV texts here are tiny invented tables, written for error handling only.

use crate::common;
use crate::common::analyze_with_config;
use crate::common::{
    analyze, assert_input_error, assert_success, delimited, result_json, run, sha256_hex,
    stderr_of, table, Scratch,
};
use std::ffi::OsStr;
use std::path::Path;
use std::process::Output;

/// `rows` as a comma-separated file with its header, four decimals a value.
fn csv_text(rows: &[[f64; 4]]) -> String {
    delimited(rows, ",", ".")
}

/// A valid 60-row file as lines (header first), for tests that spoil one line.
fn good_lines() -> Vec<String> {
    csv_text(&table(60)).lines().map(str::to_string).collect()
}

fn join(lines: &[String]) -> String {
    lines.iter().map(|l| format!("{l}\n")).collect()
}

// ---- the file itself ----------------------------------------------------------------------------

#[test]
fn missing_file_is_named() {
    let s = Scratch::new("missing");
    let output = analyze(&s, &s.path("no_such.csv"), "y", &[]);
    assert_input_error(&output, &s, &[], &["no_such.csv", "does not exist"]);
}

#[test]
fn empty_file_asks_for_a_header() {
    let s = Scratch::new("empty");
    let data = s.write("empty.csv", "");
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["empty.csv"],
        &["empty.csv", "empty", "header"],
    );
}

#[test]
fn header_only_file_asks_for_data_rows() {
    let s = Scratch::new("header-only");
    let data = s.write("header_only.csv", "x1,x2,y\n");
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["header_only.csv"],
        &["header_only.csv", "line 1", "no data rows"],
    );
}

#[test]
fn header_followed_by_blank_lines_is_an_error_not_a_panic() {
    let s = Scratch::new("header-blank");
    let data = s.write("blank_rows.csv", "x1,x2,y\n\n\r\n   \n\n");
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["blank_rows.csv"],
        &["blank_rows.csv", "no data rows"],
    );
}

#[test]
fn numeric_first_row_is_reported_as_a_missing_header() {
    let s = Scratch::new("no-header");
    let data = s.write("no_header.csv", "1.5,2,3\n4,5,6\n7,8,9\n");
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["no_header.csv"],
        &["no_header.csv", "line 1", "'1.5'", "header row"],
    );
}

#[test]
fn duplicate_column_names_are_refused() {
    let s = Scratch::new("duplicate");
    let data = s.write("dup.csv", "x1,y,x1\n1,2,3\n2,3,1\n3,1,2\n");
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["dup.csv"],
        &["dup.csv", "line 1", "'x1'", "twice", "columns 1 and 3"],
    );
}

#[test]
fn empty_column_name_is_refused() {
    let s = Scratch::new("empty-name");
    let data = s.write("unnamed.csv", "x1,,y\n1,2,3\n2,3,1\n3,1,2\n");
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["unnamed.csv"],
        &["unnamed.csv", "line 1", "column 2", "empty"],
    );
}

#[test]
fn semicolon_separated_file_is_recognised() {
    let s = Scratch::new("semicolon");
    let data = s.write("semi.csv", "x1;x2;y\n1;2;3\n2;3;1\n");
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["semi.csv"],
        &["semi.csv", "line 1", "'x1;x2;y'", "';'", "commas"],
    );
}

// ---- cells and rows -----------------------------------------------------------------------------

#[test]
fn non_numeric_cell_deep_in_the_file_names_line_column_and_value() {
    let s = Scratch::new("non-numeric");
    let mut lines = good_lines();
    lines[47] = "0.5,n/a,0.7,0.1".to_string(); // file line 48
    let data = s.write("deep.csv", join(&lines));
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["deep.csv"],
        &[
            "deep.csv",
            "line 48",
            "column 'x2'",
            "'n/a'",
            "--missing-tokens",
        ],
    );
}

#[test]
fn row_with_too_few_fields_names_the_column_without_a_value() {
    let s = Scratch::new("too-few");
    let mut lines = good_lines();
    lines[9] = "0.5,0.25".to_string(); // file line 10
    let data = s.write("short_row.csv", join(&lines));
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["short_row.csv"],
        &[
            "short_row.csv",
            "line 10",
            "2 field",
            "4 columns",
            "column 'y'",
        ],
    );
}

#[test]
fn row_with_too_many_fields_names_the_extra_value() {
    let s = Scratch::new("too-many");
    let mut lines = good_lines();
    lines[20] = "0.5,0.25,0.75,0.1,99".to_string(); // file line 21
    let data = s.write("long_row.csv", join(&lines));
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["long_row.csv"],
        &[
            "long_row.csv",
            "line 21",
            "5 fields",
            "4 columns",
            "'99'",
            "'z'",
        ],
    );
}

#[test]
fn infinite_cell_is_refused() {
    let s = Scratch::new("inf");
    let mut lines = good_lines();
    lines[5] = "0.5,inf,0.7,0.1".to_string();
    let data = s.write("inf.csv", join(&lines));
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["inf.csv"],
        &["inf.csv", "line 6", "column 'x2'", "'inf'", "finite"],
    );
}

#[test]
fn lower_case_nan_cell_is_refused_because_it_is_not_a_default_token() {
    let s = Scratch::new("nan");
    let mut lines = good_lines();
    lines[7] = "0.5,0.2,nan,0.1".to_string();
    let data = s.write("nan.csv", join(&lines));
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["nan.csv"],
        &[
            "nan.csv",
            "line 8",
            "column 'y'",
            "'nan'",
            "--missing-tokens",
        ],
    );
}

#[test]
fn overflowing_number_is_refused() {
    let s = Scratch::new("overflow");
    let mut lines = good_lines();
    lines[3] = "1e400,0.2,0.3,0.1".to_string();
    let data = s.write("huge.csv", join(&lines));
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["huge.csv"],
        &["huge.csv", "line 4", "column 'x1'", "'1e400'", "finite"],
    );
}

#[test]
fn non_utf8_cell_names_line_and_column() {
    let s = Scratch::new("latin1-cell");
    let mut bytes = join(&good_lines()[..12]).into_bytes();
    bytes.extend_from_slice(b"0.5,0.2,0.3,caf\xe9\n"); // file line 13, Latin-1 é
    let data = s.write("latin1.csv", bytes);
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["latin1.csv"],
        &["latin1.csv", "line 13", "column 'z'", "UTF-8"],
    );
}

#[test]
fn non_utf8_header_names_the_column() {
    let s = Scratch::new("latin1-header");
    let data = s.write(
        "latin1_header.csv",
        b"x1,temp\xe9rature,y\n1,2,3\n2,3,1\n3,1,2\n",
    );
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["latin1_header.csv"],
        &["latin1_header.csv", "line 1", "column 2", "UTF-8"],
    );
}

#[test]
fn utf16_file_is_recognised() {
    let s = Scratch::new("utf16");
    let text: Vec<u8> = "x1,y\n1,2\n"
        .encode_utf16()
        .flat_map(u16::to_le_bytes)
        .collect();
    let data = s.write("utf16.csv", [&[0xff, 0xfe][..], &text].concat());
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["utf16.csv"],
        &["utf16.csv", "line 1", "UTF-16"],
    );
}

#[test]
fn odd_inputs_never_panic() {
    let cases: [&[u8]; 9] = [
        b"\xef\xbb\xbf",
        b"\n\n\n",
        b",,,\n",
        b"x1\n1\n2\n3\n",
        b"x1,y\n\"unterminated,1\n",
        b"x1,y\n1,2\n\0,\0\n",
        b"\"\"\n",
        b"x1,y,\n1,2,\n",
        b"y,x1\n1,1\n1,2\n1,3\n",
    ];
    for (i, bytes) in cases.iter().enumerate() {
        let s = Scratch::new("odd");
        let data = s.write("odd.csv", bytes);
        let output = analyze(&s, &data, "y", &[]);
        let stderr = stderr_of(&output);
        assert_eq!(output.status.code(), Some(2), "case {i}: {stderr}");
        assert_eq!(stderr.lines().count(), 1, "case {i}: {stderr}");
        assert!(
            stderr.starts_with("forebear: error: ") && stderr.contains("odd.csv"),
            "case {i}: {stderr}"
        );
        assert_eq!(s.entries(), vec!["odd.csv"], "case {i}");
    }
}

// ---- columns and settings -----------------------------------------------------------------------

#[test]
fn unknown_target_suggests_the_closest_name() {
    let s = Scratch::new("target");
    let data = s.write(
        "kiln.csv",
        "strength,kiln_temp,binder\n1,2,3\n2,3,1\n3,1,2\n4,4,5\n",
    );
    let output = analyze(&s, &data, "strenght", &[]);
    assert_input_error(
        &output,
        &s,
        &["kiln.csv"],
        &[
            "kiln.csv",
            "line 1",
            "'strenght'",
            "did you mean 'strength'",
        ],
    );
}

#[test]
fn unknown_target_without_a_close_name_lists_the_columns() {
    let s = Scratch::new("target-far");
    let data = s.write(
        "kiln.csv",
        "strength,kiln_temp,binder\n1,2,3\n2,3,1\n3,1,2\n",
    );
    let output = analyze(&s, &data, "porosity", &[]);
    assert_input_error(
        &output,
        &s,
        &["kiln.csv"],
        &[
            "kiln.csv",
            "'porosity'",
            "'strength', 'kiln_temp', 'binder'",
        ],
    );
}

#[test]
fn unknown_excluded_column_is_refused() {
    let s = Scratch::new("exclude");
    let data = s.write("data.csv", csv_text(&table(30)));
    let output = analyze(&s, &data, "y", &["--exclude", "x1,zz"]);
    assert_input_error(
        &output,
        &s,
        &["data.csv"],
        &["data.csv", "excluded column 'zz'", "did you mean 'z'"],
    );
}

#[test]
fn constant_target_is_refused() {
    let s = Scratch::new("constant-target");
    let data = s.write("flat.csv", "x1,x2,y\n1,2,7\n2,3,7\n3,1,7\n4,5,7\n");
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["flat.csv"],
        &["flat.csv", "column 'y'", "single value 7"],
    );
}

#[test]
fn too_few_complete_rows_name_the_column_to_blame() {
    let s = Scratch::new("few-rows");
    let data = s.write("gappy.csv", "x1,x2,y\n1,NA,3\n2,,1\n3,null,2\n4,5,6\n");
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["gappy.csv"],
        &["gappy.csv", "1 row(s) remain", "column 'x2'", "3 of 4"],
    );
}

#[test]
fn alpha_outside_the_unit_interval_is_refused() {
    for alpha in ["1.5", "0", "-0.1", "NaN"] {
        let s = Scratch::new("alpha");
        let data = s.write("data.csv", csv_text(&table(30)));
        let output = analyze(&s, &data, "y", &["--alpha", alpha]);
        assert_input_error(
            &output,
            &s,
            &["data.csv"],
            &["--alpha", alpha, "between 0 and 1"],
        );
    }
}

/// RFC 8785 writes numbers as IEEE 754 doubles: a seed above 2^53 - 1 could not be recorded exactly.
#[test]
fn seed_above_two_to_the_53_minus_one_is_refused_and_the_largest_is_accepted() {
    let s = Scratch::new("seed");
    let data = s.write("data.csv", csv_text(&table(30)));
    let output = analyze(&s, &data, "y", &["--seed", "9007199254740992"]);
    assert_input_error(
        &output,
        &s,
        &["data.csv"],
        &["--seed", "9007199254740992", "9007199254740991", "RFC 8785"],
    );
    let output = analyze(
        &s,
        &data,
        "y",
        &["--seed", "9007199254740991", "--replicates", "0"],
    );
    crate::common::assert_success(&output);
}

#[test]
fn unknown_scaling_is_refused() {
    let s = Scratch::new("scaling");
    let data = s.write("data.csv", csv_text(&table(30)));
    let output = analyze(&s, &data, "y", &["--scaling", "logarithmic"]);
    assert_input_error(
        &output,
        &s,
        &["data.csv"],
        &["--scaling", "'logarithmic'", "rank, standardize, none"],
    );
}

#[test]
fn zero_threads_are_refused() {
    let s = Scratch::new("threads");
    let data = s.write("data.csv", csv_text(&table(30)));
    let output = analyze(&s, &data, "y", &["--threads", "0"]);
    assert_input_error(&output, &s, &["data.csv"], &["--threads", "at least 1"]);
}

#[test]
fn clap_usage_errors_exit_2() {
    let s = Scratch::new("usage");
    let data = s.write("data.csv", csv_text(&table(30)));
    // Without --target (and without a study file naming targets): one line, naming the flag.
    let no_target = run([OsStr::new("analyze"), data.as_os_str()]);
    assert_input_error(
        &no_target,
        &s,
        &["data.csv"],
        &["no target column is named; name the outcome with --target"],
    );
    let cases: [Vec<&OsStr>; 4] = [
        vec![
            OsStr::new("analyze"),
            data.as_os_str(),
            OsStr::new("--target"),
            OsStr::new("y"),
            OsStr::new("--bogus"),
        ],
        vec![
            OsStr::new("analyze"),
            data.as_os_str(),
            OsStr::new("--target"),
            OsStr::new("y"),
            OsStr::new("--seed"),
            OsStr::new("abc"),
        ],
        vec![OsStr::new("frobnicate")],
        vec![],
    ];
    for args in cases {
        let output = run(&args);
        assert_eq!(
            output.status.code(),
            Some(2),
            "{args:?}: {}",
            stderr_of(&output)
        );
        let stderr = stderr_of(&output);
        assert!(!stderr.contains("panicked"));
        if !args.is_empty() {
            // The contract's one line, pointing at the help of the command that was typed.
            assert_eq!(stderr.trim_end().lines().count(), 1, "{args:?}: {stderr}");
            assert!(stderr.starts_with("forebear: error: "), "{stderr}");
            let help = if args[0] == "analyze" {
                "'forebear analyze --help'"
            } else {
                "'forebear --help'"
            };
            assert!(stderr.contains(help), "{args:?}: {stderr}");
        }
    }
    assert_eq!(s.entries(), vec!["data.csv"]);
    assert_success(&run(["--help"]));
    assert_success(&run(["--version"]));
}

// ---- what is read and how it is reported --------------------------------------------------------

#[test]
fn numbers_in_every_common_notation_are_read() {
    let s = Scratch::new("notation");
    let mut text = String::from("x1,x2,y\n");
    let cells = [
        "7", "-3", "+2", "0.5", ".25", "5.", "1e3", "2.5E-2", "-1.5e+1", " 4 ", "\"6.5\"", "0012",
    ];
    // Twice over: the search needs 20 rows.
    for (i, cell) in cells.iter().chain(&cells).enumerate() {
        text.push_str(&format!("{cell},{},{}\n", i * i % 7, i as f64 * 0.5));
    }
    let data = s.write("notation.csv", text);
    let output = analyze(&s, &data, "y", &[]);
    assert_success(&output);
    let result = result_json(&s.path("out"));
    assert_eq!(result["data"]["rows_read"], 2 * cells.len());
    assert_eq!(result["data"]["rows_used"], 2 * cells.len());
    assert_eq!(result["data"]["rows_dropped"], 0);
}

#[test]
fn missing_tokens_drop_rows_and_are_counted_per_column() {
    let s = Scratch::new("missing-tokens");
    let mut lines = good_lines();
    lines[2] = "NA,0.2,0.3,0.4".to_string();
    lines[3] = "0.1,,0.3,NaN".to_string();
    lines[4] = "0.1,0.2,null,0.4".to_string();
    lines[5] = ",0.2,0.3,0.4".to_string();
    let data = s.write("gaps.csv", join(&lines));
    let output = analyze(&s, &data, "y", &[]);
    assert_success(&output);
    let data = &result_json(&s.path("out"))["data"];
    assert_eq!(data["rows_read"], 60);
    assert_eq!(data["rows_dropped"], 4);
    assert_eq!(data["rows_used"], 56);
    assert_eq!(
        data["missing_by_column"],
        serde_json::json!({"x1": 2, "x2": 1, "y": 1, "z": 1})
    );
}

#[test]
fn missing_values_in_excluded_columns_drop_no_rows() {
    let s = Scratch::new("missing-excluded");
    let mut lines = good_lines();
    lines[2] = "0.1,0.2,0.3,NA".to_string();
    lines[3] = "0.1,0.2,0.3,".to_string();
    let data = s.write("gaps.csv", join(&lines));
    let output = analyze(&s, &data, "y", &["--exclude", "z"]);
    assert_success(&output);
    let result = result_json(&s.path("out"));
    assert_eq!(result["data"]["rows_dropped"], 0);
    assert_eq!(result["data"]["excluded_columns"], serde_json::json!(["z"]));
    assert!(result["data"]["missing_by_column"].get("z").is_none());
}

#[test]
fn custom_missing_tokens_are_used() {
    let s = Scratch::new("custom-tokens");
    let mut lines = good_lines();
    lines[10] = "-999,0.2,0.3,0.4".to_string();
    lines[11] = "0.1,0.2,-999,0.4".to_string();
    lines[12] = "0.1,0.2,0.3, -999 ".to_string();
    let data = s.write("sentinel.csv", join(&lines));
    let output = analyze(&s, &data, "y", &["--missing-tokens", "-999"]);
    assert_success(&output);
    let data = &result_json(&s.path("out"))["data"];
    assert_eq!(data["rows_dropped"], 3);
    assert_eq!(data["missing_tokens"], serde_json::json!(["-999"]));
    assert_eq!(
        data["missing_by_column"],
        serde_json::json!({"x1": 1, "x2": 0, "y": 1, "z": 1})
    );
}

#[test]
fn custom_missing_tokens_replace_the_defaults() {
    let s = Scratch::new("custom-replace");
    let mut lines = good_lines();
    lines[30] = "0.1,NA,0.3,0.4".to_string(); // file line 31
    let data = s.write("sentinel.csv", join(&lines));
    let output = analyze(&s, &data, "y", &["--missing-tokens", "-999"]);
    assert_input_error(
        &output,
        &s,
        &["sentinel.csv"],
        &["sentinel.csv", "line 31", "column 'x2'", "'NA'", "-999"],
    );
}

#[test]
fn constant_column_is_excluded_and_listed() {
    let s = Scratch::new("constant");
    let mut text = String::from("x1,k,x2,y,z\n");
    for r in table(40) {
        text.push_str(&format!(
            "{:.4},5,{:.4},{:.4},{:.4}\n",
            r[0], r[1], r[2], r[3]
        ));
    }
    let data = s.write("with_constant.csv", text);
    let output = analyze(&s, &data, "y", &[]);
    assert_success(&output);
    assert!(
        stderr_of(&output).contains("'k' is constant"),
        "a note on stderr: {}",
        stderr_of(&output)
    );
    let result = result_json(&s.path("out"));
    assert_eq!(result["data"]["constant_columns"], serde_json::json!(["k"]));
    assert_eq!(
        result["settings"]["candidates"],
        serde_json::json!(["x1", "x2", "z"])
    );
}

#[test]
fn byte_order_mark_is_ignored() {
    let s = Scratch::new("bom");
    let data = s.write("bom.csv", format!("\u{feff}{}", csv_text(&table(30))));
    let output = analyze(&s, &data, "x1", &[]);
    assert_success(&output);
    let result = result_json(&s.path("out"));
    assert_eq!(result["target"], "x1");
    assert_eq!(result["data"]["rows_used"], 30);
}

#[test]
fn crlf_line_endings_are_read() {
    let s = Scratch::new("crlf");
    let data = s.write("windows.csv", csv_text(&table(30)).replace('\n', "\r\n"));
    let output = analyze(&s, &data, "z", &[]);
    assert_success(&output);
    let result = result_json(&s.path("out"));
    assert_eq!(result["data"]["rows_used"], 30);
    assert_eq!(
        result["settings"]["candidates"],
        serde_json::json!(["x1", "x2", "y"])
    );
}

#[test]
fn crlf_file_reports_the_right_line() {
    let s = Scratch::new("crlf-line");
    let mut lines = good_lines();
    lines[24] = "0.1,0.2,oops,0.4".to_string(); // file line 25
    let data = s.write("windows.csv", join(&lines).replace('\n', "\r\n"));
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["windows.csv"],
        &["windows.csv", "line 25", "column 'y'", "'oops'"],
    );
}

#[test]
fn result_json_has_every_key_the_contract_lists() {
    let s = Scratch::new("keys");
    let text = csv_text(&table(80));
    let data = s.write("keys.csv", &text);
    let output = analyze(&s, &data, "y", &["--replicates", "0"]);
    assert_success(&output);
    let result = result_json(&s.path("out"));
    for pointer in [
        "/schema",
        "/tool/version",
        "/data/sha256",
        "/data/rows_used",
        "/target",
        "/markov_boundary",
        "/trace",
        "/boundaries",
        "/components",
        "/outcome",
        "/parent_sets",
        "/diagnostics",
        "/stability",
        "/digest",
    ] {
        assert!(
            result.pointer(pointer).is_some(),
            "result.json lacks {pointer}"
        );
    }
    assert!(result["schema"]
        .as_str()
        .unwrap()
        .starts_with("forebear.result/"));
    assert_eq!(result["tool"]["version"], env!("CARGO_PKG_VERSION"));
    assert_eq!(result["data"]["sha256"], sha256_hex(text.as_bytes()));
    assert_eq!(result["data"]["rows_used"], 80);
    assert_eq!(result["target"], "y");
    assert!(result["markov_boundary"].is_array() && result["trace"].is_array());
    assert!(result["boundaries"].is_object() && result["components"].is_array());
    let outcome = result["outcome"].as_str().unwrap();
    assert!(
        [
            "identified",
            "not_identifiable",
            "conflict",
            "empty_boundary"
        ]
        .contains(&outcome),
        "{outcome}"
    );
    assert!(result["parent_sets"]
        .as_array()
        .unwrap()
        .iter()
        .all(|set| set.is_array()));
    assert!(result["diagnostics"].is_object());
    assert!(result["stability"].is_null(), "null without resampling");
    let digest = result["digest"].as_str().unwrap();
    assert!(
        digest.len() == 64 && digest.bytes().all(|b| b.is_ascii_hexdigit()),
        "{digest}"
    );
}

// ---- the output folder --------------------------------------------------------------------------

#[test]
fn output_folder_holding_a_previous_result_is_replaced_only_with_force() {
    let s = Scratch::new("replace");
    let data = s.write("data.csv", csv_text(&table(40)));
    assert_success(&analyze(&s, &data, "y", &["--seed", "1"]));
    assert_eq!(result_json(&s.path("out"))["settings"]["seed"], 1);
    let refused = analyze(&s, &data, "y", &["--seed", "2"]);
    let stderr = stderr_of(&refused);
    assert_eq!(refused.status.code(), Some(2), "{stderr}");
    assert!(stderr.contains("--force"), "{stderr}");
    assert_eq!(
        result_json(&s.path("out"))["settings"]["seed"],
        1,
        "left untouched"
    );
    assert_success(&analyze(&s, &data, "y", &["--seed", "2", "--force"]));
    assert_eq!(result_json(&s.path("out"))["settings"]["seed"], 2);
    let entries = s.entries();
    assert_eq!(entries.len(), 4, "{entries:?}");
    assert!(
        entries[3].starts_with("out.replaced-"),
        "the former dossier is kept"
    );
    assert_eq!(
        entries[..3],
        ["data.csv", "forebear-trail.jsonl", "out"],
        "no staging or old folder left behind"
    );
}

#[test]
fn output_folder_holding_foreign_files_is_refused_and_left_untouched() {
    let s = Scratch::new("foreign");
    let data = s.write("data.csv", csv_text(&table(40)));
    std::fs::create_dir(s.path("out")).unwrap();
    std::fs::write(s.path("out").join("notes.txt"), "my notes").unwrap();
    let output = analyze(&s, &data, "y", &[]);
    let stderr = stderr_of(&output);
    assert_eq!(output.status.code(), Some(2), "{stderr}");
    assert_eq!(
        stderr.lines().count(),
        1,
        "refused before any work: {stderr}"
    );
    assert!(
        stderr.starts_with("forebear: error: ") && stderr.contains("notes.txt"),
        "{stderr}"
    );
    assert_eq!(s.entries(), vec!["data.csv", "out"]);
    let inside: Vec<_> = std::fs::read_dir(s.path("out"))
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(inside, vec!["notes.txt"]);
    assert_eq!(
        std::fs::read_to_string(s.path("out").join("notes.txt")).unwrap(),
        "my notes"
    );
}

#[test]
fn output_folder_holding_a_result_and_foreign_files_is_refused() {
    let s = Scratch::new("foreign-mixed");
    let data = s.write("data.csv", csv_text(&table(40)));
    assert_success(&analyze(&s, &data, "y", &[]));
    std::fs::write(s.path("out").join("notes.txt"), "my notes").unwrap();
    let output = analyze(&s, &data, "y", &[]);
    assert_eq!(output.status.code(), Some(2), "{}", stderr_of(&output));
    assert_eq!(
        std::fs::read_to_string(s.path("out").join("notes.txt")).unwrap(),
        "my notes"
    );
    assert!(s.path("out").join("result.json").exists());
}

#[test]
fn output_folder_holding_someone_elses_result_json_is_refused() {
    let s = Scratch::new("foreign-result");
    let data = s.write("data.csv", csv_text(&table(40)));
    std::fs::create_dir(s.path("out")).unwrap();
    std::fs::write(s.path("out").join("result.json"), "{\"accuracy\": 0.9}").unwrap();
    let output = analyze(&s, &data, "y", &[]);
    assert_eq!(output.status.code(), Some(2), "{}", stderr_of(&output));
    assert_eq!(
        std::fs::read_to_string(s.path("out").join("result.json")).unwrap(),
        "{\"accuracy\": 0.9}"
    );
}

#[test]
fn output_path_that_is_a_file_is_refused() {
    let s = Scratch::new("out-file");
    let data = s.write("data.csv", csv_text(&table(40)));
    s.write("out", "not a folder");
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(&output, &s, &["data.csv", "out"], &["not a folder"]);
    assert_eq!(
        std::fs::read_to_string(s.path("out")).unwrap(),
        "not a folder"
    );
}

// ---- the other subcommands ----------------------------------------------------------------------

fn dependence(data: &Path, extra: &[&str]) -> Output {
    let mut args: Vec<&OsStr> = vec![OsStr::new("dependence"), data.as_os_str()];
    args.extend(extra.iter().map(OsStr::new));
    run(args)
}

#[test]
fn dependence_prints_t_n() {
    let s = Scratch::new("dependence");
    let data = s.write("data.csv", csv_text(&table(50)));
    let output = dependence(&data, &["--response", "y", "--on", "x1", "--given", "x2"]);
    assert_success(&output);
    let stdout = String::from_utf8(output.stdout).unwrap();
    assert!(stdout.starts_with("T_n(y, x1 | x2) = "), "{stdout}");
    assert!(stdout.contains("n = 50"), "{stdout}");
}

#[test]
fn dependence_json_has_t_n_numerator_and_denominator() {
    let s = Scratch::new("dependence-json");
    let data = s.write("data.csv", csv_text(&table(50)));
    let output = dependence(&data, &["--response", "y", "--on", "x1,x2", "--json"]);
    assert_success(&output);
    let value: serde_json::Value = serde_json::from_slice(&output.stdout).expect("stdout is JSON");
    let (numerator, denominator) = (
        value["numerator"].as_i64().unwrap(),
        value["denominator"].as_i64().unwrap(),
    );
    assert!(denominator > 0);
    let t_n = value["t_n"].as_f64().unwrap();
    assert!(
        (t_n - numerator as f64 / denominator as f64).abs() < 1e-12,
        "{value}"
    );
    assert_eq!(value["rows_used"], 50);
}

#[test]
fn dependence_reads_missing_tokens_and_reports_bad_cells() {
    let s = Scratch::new("dependence-bad");
    let mut lines = good_lines();
    lines[40] = "0.1,0.2,0.3,?".to_string(); // file line 41
    let data = s.write("dep.csv", join(&lines));
    let output = dependence(&data, &["--response", "y", "--on", "z"]);
    assert_input_error(
        &output,
        &s,
        &["dep.csv"],
        &["dep.csv", "line 41", "column 'z'", "'?'"],
    );
    let output = dependence(
        &data,
        &[
            "--response",
            "y",
            "--on",
            "z",
            "--missing-tokens",
            "?",
            "--json",
        ],
    );
    assert_success(&output);
    let value: serde_json::Value = serde_json::from_slice(&output.stdout).unwrap();
    assert_eq!(value["rows_used"], 59);
}

#[test]
fn dependence_unknown_column_suggests_a_name() {
    let s = Scratch::new("dependence-name");
    let data = s.write("data.csv", csv_text(&table(20)));
    let output = dependence(&data, &["--response", "y", "--on", "x3"]);
    assert_input_error(
        &output,
        &s,
        &["data.csv"],
        &["data.csv", "'x3'", "did you mean"],
    );
}

#[test]
fn demo_writes_both_results_with_their_outcomes() {
    let s = Scratch::new("demo");
    let out = s.path("demo");
    let output = run([OsStr::new("demo"), OsStr::new("--out"), out.as_os_str()]);
    assert_success(&output);
    assert_eq!(
        result_json(&out.join("crush_strength"))["outcome"],
        "identified"
    );
    assert_eq!(
        result_json(&out.join("pore_density"))["outcome"],
        "not_identifiable"
    );
}

#[test]
fn closed_stdout_is_not_an_internal_error() {
    use std::io::Read;
    use std::process::Stdio;
    // The demo CSV (about 80 kB) is larger than a pipe's buffer, so the write meets a closed pipe.
    let mut child = common::bin()
        .args(["demo", "--regenerate"])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut first = [0u8; 16];
    child.stdout.take().unwrap().read_exact(&mut first).unwrap();
    let output = child.wait_with_output().unwrap();
    assert_eq!(&first[..8], b"kiln_pea");
    assert_eq!(output.status.code(), Some(0), "{}", stderr_of(&output));
    assert!(output.stderr.is_empty(), "{}", stderr_of(&output));
}

#[test]
fn full_stdout_is_an_input_error_naming_standard_output() {
    use std::process::Stdio;
    // /dev/full (Linux) fails every write with ENOSPC, as a full disk does.
    let Ok(full) = std::fs::OpenOptions::new().write(true).open("/dev/full") else {
        return; // not Linux: nothing to prove here
    };
    for args in [
        vec!["demo", "--regenerate"],
        vec!["fingerprint", "tests/data/asia_discrete_n5000_seed1.csv"],
    ] {
        let output = common::bin()
            .args(&args)
            .stdout(Stdio::from(full.try_clone().unwrap()))
            .stderr(Stdio::piped())
            .output()
            .unwrap();
        let stderr = stderr_of(&output);
        assert_eq!(output.status.code(), Some(2), "{args:?}: {stderr}");
        assert!(
            stderr.contains("cannot write to standard output") && !stderr.contains("internal"),
            "{args:?}: {stderr}"
        );
    }
}

#[test]
fn shard_and_replicate_range_values_are_checked_when_parsed() {
    let s = Scratch::new("typed-values");
    let data = s.write("data.csv", csv_text(&table(30)));
    let cases: [(&[&str], &str); 5] = [
        (&["batch", "plan.toml", "--shard", "3/3"], "out of range"),
        (&["batch", "plan.toml", "--shard", "one/3"], "not i/N"),
        (&["batch", "plan.toml", "--shard", "1/0"], "out of range"),
        (
            &["analyze", "DATA", "--target", "y", "--replicate-range", "5"],
            "not a range",
        ),
        (
            &[
                "analyze",
                "DATA",
                "--target",
                "y",
                "--replicate-range",
                "a..b",
            ],
            "not a range",
        ),
    ];
    for (args, expected) in cases {
        let args: Vec<&OsStr> = args
            .iter()
            .map(|a| match *a {
                "DATA" => data.as_os_str(),
                a => OsStr::new(a),
            })
            .collect();
        let output = run(&args);
        let stderr = stderr_of(&output);
        assert_eq!(output.status.code(), Some(2), "{args:?}: {stderr}");
        assert!(stderr.contains(expected), "{args:?}: {stderr}");
        assert_eq!(stderr.lines().count(), 1, "{args:?}: {stderr}");
    }
}

// ---- study files: `analyze --config` (issue 13) ------------------------------------------------

/// The example study file of the repository.
fn example_study() -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/study.toml")
}

#[test]
fn the_example_study_file_documents_every_setting_and_runs_with_flags_winning_over_it() {
    let text = std::fs::read_to_string(example_study()).unwrap();
    // Every key the settings take is shown (set or commented out) as `key =` at a line's start,
    // or as a table `[key]`; a key `table.field` as `field =` after the line `[table]`.
    for key in forebear::settings::Key::ALL {
        let (lines, name) = match key.name().split_once('.') {
            Some((table, field)) => {
                let header = format!("[{table}]");
                let from = text.lines().position(|l| l == header);
                assert!(from.is_some(), "examples/study.toml has no {header}");
                (
                    text.lines().skip(from.unwrap_or(0)).collect::<Vec<_>>(),
                    field,
                )
            }
            None => (text.lines().collect(), key.name()),
        };
        let shown = lines.iter().any(|l| {
            l.trim_start_matches("# ")
                .strip_prefix(name)
                .is_some_and(|rest| rest.trim_start().starts_with('='))
                || *l == format!("[{}]", key.name())
        });
        assert!(shown, "examples/study.toml does not show '{}'", key.name());
    }
    let s = Scratch::new("config-example");
    let data = s.write("discs.csv", forebear::demo::DEMO_CSV);
    let out = s.path("out");
    let ran = analyze_with_config(&data, &example_study(), &["--replicates", "0"], &out);
    assert_success(&ran);
    let result = result_json(&out);
    let settings = &result["settings"];
    assert_eq!(settings["target"], "crush_strength", "from the file");
    assert_eq!(settings["seed"], 20261202, "from the file");
    assert_eq!(settings["excluded"], serde_json::json!(["conveyor_speed"]));
    assert_eq!(
        settings["resampling"]["count"], 0,
        "the flag wins over the file"
    );
    assert!(
        settings["resampling"].get("seed").is_none(),
        "the seed is stored once"
    );
    // The example's tiers agree with the data's v-structure: both parents rest on the data alone.
    let with_knowledge = &result["with_knowledge"];
    assert_eq!(with_knowledge["outcome"], "identified", "{with_knowledge}");
    assert_eq!(
        with_knowledge["claims"],
        serde_json::json!({"kiln_peak_temp": "data", "pore_density": "data"})
    );
    let manifest: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("manifest.json")).unwrap()).unwrap();
    assert_eq!(
        manifest["settings"]["knowledge_sha256"]
            .as_str()
            .map(str::len),
        Some(64)
    );
    assert_eq!(
        manifest["settings"]["study_file"]["sha256"],
        sha256_hex(text.as_bytes()),
        "the study file's hash is in the manifest"
    );
    assert_success(&common::verify(&out, &data, &[]));
}

#[test]
fn every_problem_of_a_study_file_and_the_flags_is_reported_at_once_where_it_was_written() {
    let s = Scratch::new("config-problems");
    let data = s.write("discs.csv", forebear::demo::DEMO_CSV);
    let config = s.write(
        "study.toml",
        "targets = [\"crush_strength\"]\nalpha = 1.5\nscaling = \"ranked\"\nseeds = 3\n\
         replicates = 7\nexclude = [\"crush_strength\"]\n",
    );
    let out = s.path("out");
    let ran = analyze_with_config(&data, &config, &["--stability-threshold", "0.4"], &out);
    let err = common::assert_refused(&ran, &[]);
    let file = config.display().to_string();
    let lines: Vec<&str> = err.lines().collect();
    assert_eq!(
        lines,
        [
            format!("forebear: error: {file}:2:1: alpha 1.5 is not a level: it must lie strictly between 0 and 1"),
            format!("forebear: error: {file}:3:11: scaling: unknown variant `ranked`, expected one of `rank`, `standardize`, `none`"),
            format!("forebear: error: {file}:4:1: unknown key 'seeds'; did you mean 'seed'? the keys are: targets, exclude, candidates, seed, scaling, alpha, replicates, resample, fraction, stability_threshold, stopping_rule, selection_alpha, permutations, neighbourhood_orientation, delimiter, decimal_comma, missing_tokens, missing, knowledge, document.title, document.id, document.purpose, document.version, document.prepared_by"),
            format!("forebear: error: {file}:5:1: replicates 7: complementary pairs come in twos (two halves per split), so the number of replicates must be even; use 6 or 8"),
            format!("forebear: error: {file}:6:1: the target 'crush_strength' cannot also be excluded; remove it from exclude"),
            "forebear: error: --stability-threshold 0.4 is outside (0.5, 1]: the error bound of Meinshausen and Bühlmann (2010) needs a threshold above one half".to_string(),
            format!("forebear: error: {file}: 6 problem(s) with the settings, listed above; nothing was run"),
        ]
    );
    assert!(!out.exists(), "nothing is written");
}

#[test]
fn a_column_named_in_a_study_file_but_absent_from_the_header_is_placed_at_its_key() {
    let s = Scratch::new("config-columns");
    let data = s.write("discs.csv", forebear::demo::DEMO_CSV);
    let config = s.write(
        "study.toml",
        "# roles\ntargets = [\"crush_strength\"]\nexclude = [\"kiln_peak_tmp\"]\n",
    );
    let out = s.path("out");
    let ran = analyze_with_config(
        &data,
        &config,
        &["--candidates", "zz,binder_fraction"],
        &out,
    );
    let err = common::assert_refused(
        &ran,
        &[
            &format!(
                "{}:3:1: {}, line 1: the excluded column 'kiln_peak_tmp' is not in the header; \
                 did you mean 'kiln_peak_temp'?",
                config.display(),
                data.display()
            ),
            "the candidate column 'zz' is not in the header",
            "2 problem(s) with the settings",
        ],
    );
    assert!(!err.contains("--candidates:"), "{err}");
    assert!(!out.exists());
}

#[test]
fn settings_given_as_flags_are_named_as_flags_all_at_once() {
    let s = Scratch::new("flag-problems");
    let data = s.write("discs.csv", forebear::demo::DEMO_CSV);
    let ran = analyze(
        &s,
        &data,
        "crush_strength",
        &["--alpha", "2", "--replicates", "3", "--fraction", "0.3"],
    );
    assert_input_error(
        &ran,
        &s,
        &["discs.csv"],
        &[
            "--alpha 2 is not a level",
            "--replicates 3: complementary pairs come in twos",
            "--fraction 0.3 applies to --resample subsample only",
        ],
    );
}
