//! The reader's options and checks (issue 6), proven by running the real binary on small invented
//! files: delimiters, decimal commas, quoting, encodings, missing-value policies, column roles,
//! and the sanity checks on what remains.

use crate::common::*;

/// The parts of result.json that depend on the numbers read, not on how they were written.
fn numbers_part(out: &std::path::Path) -> serde_json::Value {
    let r = result_json(out);
    serde_json::json!([
        r["trace"],
        r["markov_boundary"],
        r["data"]["rows_used"],
        r["outcome"]
    ])
}

fn analysed(s: &Scratch, name: &str, text: &str, extra: &[&str]) -> serde_json::Value {
    let data = s.write(name, text);
    let output = analyze(s, &data, "y", &[&["--force"], extra].concat());
    assert_success(&output);
    numbers_part(&s.path("out"))
}

#[test]
fn every_delimiter_reads_the_same_numbers_as_commas() {
    let s = Scratch::new("delimiters");
    let rows = table(60);
    let commas = analysed(&s, "c.csv", &delimited(&rows, ",", "."), &[]);
    for (flag, text) in [(";", ";"), ("tab", "\t"), ("|", "|")] {
        let got = analysed(
            &s,
            "d.csv",
            &delimited(&rows, text, "."),
            &["--delimiter", flag],
        );
        assert_eq!(got, commas, "--delimiter {flag}");
    }
    let result = result_json(&s.path("out"));
    assert_eq!(result["data"]["delimiter"], "|");
}

#[test]
fn decimal_commas_read_the_same_numbers_as_points() {
    let s = Scratch::new("decimal-comma");
    let rows = table(60);
    let points = analysed(&s, "p.csv", &delimited(&rows, ",", "."), &[]);
    let flags = ["--delimiter", ";", "--decimal-comma"];
    let commas = analysed(&s, "c.csv", &delimited(&rows, ";", ","), &flags);
    assert_eq!(commas, points);
    let data = &result_json(&s.path("out"))["data"];
    assert_eq!(data["decimal_comma"], true);
    assert_eq!(data["delimiter"], ";");
    assert_eq!(data["missing_policy"], "drop-rows");
}

#[test]
fn decimal_comma_cell_without_the_flag_suggests_it() {
    let s = Scratch::new("comma-cell");
    let mut lines: Vec<String> = delimited(&table(30), ";", ".")
        .lines()
        .map(String::from)
        .collect();
    lines[7] = "0,5;0.25;0.75;0.1".to_string(); // file line 8
    let data = s.write("semi.csv", lines.join("\n"));
    let output = analyze(&s, &data, "y", &["--delimiter", ";"]);
    assert_input_error(
        &output,
        &s,
        &["semi.csv"],
        &[
            "line 8",
            "column 'x1'",
            "'0,5'",
            "decimal comma",
            "--decimal-comma",
        ],
    );
}

#[test]
fn point_in_a_decimal_comma_file_is_refused() {
    let s = Scratch::new("point-cell");
    let mut lines: Vec<String> = delimited(&table(30), ";", ",")
        .lines()
        .map(String::from)
        .collect();
    lines[4] = "1.250;0,25;0,75;0,1".to_string(); // file line 5
    let data = s.write("semi.csv", lines.join("\n"));
    let output = analyze(&s, &data, "y", &["--delimiter", ";", "--decimal-comma"]);
    assert_input_error(
        &output,
        &s,
        &["semi.csv"],
        &["line 5", "column 'x1'", "'1.250'", "thousands separators"],
    );
}

#[test]
fn tab_separated_header_read_with_commas_suggests_delimiter_tab() {
    let s = Scratch::new("tab-hint");
    let data = s.write("tabs.csv", delimited(&table(10), "\t", "."));
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["tabs.csv"],
        &["line 1", "tabs", "--delimiter tab"],
    );
}

#[test]
fn comma_separated_header_read_with_semicolons_suggests_commas() {
    let s = Scratch::new("comma-hint");
    let data = s.write("commas.csv", delimited(&table(10), ",", "."));
    let output = analyze(&s, &data, "y", &["--delimiter", ";"]);
    assert_input_error(
        &output,
        &s,
        &["commas.csv"],
        &["line 1", "','", "--delimiter ','"],
    );
}

#[test]
fn quoted_fields_with_delimiters_and_line_breaks_are_read_and_lines_stay_right() {
    let s = Scratch::new("quoted");
    let mut text = String::from("note,x1,x2,y,z\n");
    for (i, r) in table(40).iter().enumerate() {
        let note = match i % 3 {
            0 => "\"plain, with a comma\"".to_string(),
            1 => "\"two\nlines, and \"\"quotes\"\"\"".to_string(),
            _ => "none".to_string(),
        };
        text.push_str(&format!(
            "{note},\"{:.4}\",{:.4},{:.4},{:.4}\n",
            r[0], r[1], r[2], r[3]
        ));
    }
    let data = s.write("quoted.csv", &text);
    let output = analyze(&s, &data, "y", &["--exclude", "note"]);
    assert_success(&output);
    assert_eq!(result_json(&s.path("out"))["data"]["rows_used"], 40);

    // Row 14 (i = 13) starts on file line 2 + 13 + (rows before it with two lines: i = 1, 4, 7, 10).
    let spoiled = text.replacen(&format!("{:.4}\n", table(40)[13][3]), "oops\n", 1);
    let data = s.write("quoted.csv", &spoiled);
    std::fs::remove_dir_all(s.path("out")).unwrap();
    std::fs::remove_file(s.path("forebear-trail.jsonl")).unwrap();
    let output = analyze(&s, &data, "y", &["--exclude", "note"]);
    assert_input_error(
        &output,
        &s,
        &["quoted.csv"],
        &["line 19", "column 'z'", "'oops'"],
    );
}

#[test]
fn unclosed_quote_says_where_the_quoted_value_starts() {
    let s = Scratch::new("open-quote");
    let mut lines: Vec<String> = delimited(&table(20), ",", ".")
        .lines()
        .map(String::from)
        .collect();
    lines[5] = "0.5,\"0.25,0.75,0.1".to_string(); // file line 6
    let data = s.write("open.csv", lines.join("\n") + "\n");
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["open.csv"],
        &["line 6", "from line 6 to line 21", "not closed"],
    );
}

#[test]
fn latin1_byte_is_named_by_its_offset_in_the_file() {
    let s = Scratch::new("offset");
    let head = "x1,x2,y,z\n1,2,3,4\n5,6,7,8\n";
    let mut bytes = head.as_bytes().to_vec();
    bytes.extend_from_slice(b"9,10,\"caf\xe9\",12\n");
    let offset = head.len() + "9,10,\"caf".len();
    let data = s.write("latin1.csv", bytes);
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["latin1.csv"],
        &[
            "line 4",
            "column 'y'",
            &format!("byte offset {offset}"),
            "0xE9",
            "UTF-8",
        ],
    );
}

#[test]
fn every_column_that_is_not_numeric_is_listed_in_one_error() {
    let s = Scratch::new("all-text");
    let mut text = String::from("site,x1,shift,x2,y,z\n");
    for (i, r) in table(30).iter().enumerate() {
        let site = ["north", "south", "east"][i % 3];
        let z = if i == 17 {
            "n/a".to_string()
        } else {
            format!("{:.4}", r[3])
        };
        text.push_str(&format!(
            "{site},{:.4},{},{:.4},{:.4},{z}\n",
            r[0],
            i % 2 + 1,
            r[1],
            r[2]
        ));
    }
    let text = text.replace(",1,", ",early,").replace(",2,", ",late,");
    let data = s.write("mixed.csv", text);
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["mixed.csv"],
        &[
            "3 used columns are not numeric",
            "'site' holds text categories ('east', 'north', 'south')",
            "'shift' holds text categories ('early', 'late')",
            "'z' has the value 'n/a' on line 19",
            "indicator (0/1) columns",
            "--exclude site,shift,z",
        ],
    );
}

#[test]
fn one_text_category_column_suggests_indicator_columns_or_excluding_it() {
    let s = Scratch::new("categories");
    let mut text = String::from("x1,x2,y,grade\n");
    for (i, r) in table(30).iter().enumerate() {
        text.push_str(&format!(
            "{:.4},{:.4},{:.4},{}\n",
            r[0],
            r[1],
            r[2],
            ["A", "B"][i % 2]
        ));
    }
    let data = s.write("grades.csv", &text);
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["grades.csv"],
        &[
            "line 2",
            "column 'grade'",
            "text categories ('A', 'B')",
            "indicator",
            "--exclude grade",
        ],
    );
    let output = analyze(&s, &data, "y", &["--exclude", "grade"]);
    assert_success(&output);
}

#[test]
fn hash_na_and_listed_non_finite_tokens_are_missing_values() {
    let s = Scratch::new("tokens");
    let mut lines: Vec<String> = delimited(&table(40), ",", ".")
        .lines()
        .map(String::from)
        .collect();
    lines[3] = "#N/A,0.2,0.3,0.4".to_string();
    let data = s.write("na.csv", lines.join("\n"));
    assert_success(&analyze(&s, &data, "y", &[]));
    assert_eq!(result_json(&s.path("out"))["data"]["rows_dropped"], 1);

    lines[5] = "0.1,inf,0.3,0.4".to_string();
    lines[6] = "0.1,0.2,nan,0.4".to_string();
    let data = s.write("na.csv", lines.join("\n"));
    let tokens = ",#N/A,inf,nan";
    assert_success(&analyze(
        &s,
        &data,
        "y",
        &["--force", "--missing-tokens", tokens],
    ));
    let data = &result_json(&s.path("out"))["data"];
    assert_eq!(data["rows_dropped"], 3);
    assert_eq!(
        data["missing_tokens"],
        serde_json::json!(["", "#N/A", "inf", "nan"])
    );
}

#[test]
fn missing_error_policy_refuses_the_first_missing_cell() {
    let s = Scratch::new("missing-error");
    let mut lines: Vec<String> = delimited(&table(40), ",", ".")
        .lines()
        .map(String::from)
        .collect();
    lines[12] = "0.1,0.2,NA,0.4".to_string(); // file line 13
    lines[20] = ",0.2,0.3,0.4".to_string();
    let data = s.write("gaps.csv", lines.join("\n"));
    let output = analyze(&s, &data, "y", &["--missing", "error"]);
    assert_input_error(
        &output,
        &s,
        &["gaps.csv"],
        &[
            "line 13",
            "column 'y'",
            "--missing error",
            "--missing drop-rows",
            "2 used cells are missing",
        ],
    );
    let output = analyze(&s, &data, "y", &["--missing", "error", "--exclude", "x1,y"]);
    assert_input_error(
        &output,
        &s,
        &["gaps.csv"],
        &["target 'y' cannot also be excluded"],
    );
}

#[test]
fn candidates_restrict_the_search_and_are_recorded() {
    let s = Scratch::new("candidates");
    let mut text = String::from("id,x1,x2,y,z\n");
    for (i, r) in table(60).iter().enumerate() {
        text.push_str(&format!(
            "lot-{i},{:.4},{:.4},{:.4},{:.4}\n",
            r[0], r[1], r[2], r[3]
        ));
    }
    let data = s.write("lots.csv", text);
    let output = analyze(&s, &data, "y", &["--candidates", "x2,x1"]);
    assert_success(&output);
    let result = result_json(&s.path("out"));
    assert_eq!(
        result["settings"]["candidates"],
        serde_json::json!(["x1", "x2"])
    );
    assert_eq!(
        result["settings"]["candidates_named"],
        serde_json::json!(["x2", "x1"])
    );
    assert_eq!(
        result["data"]["excluded_columns"],
        serde_json::json!(["id", "z"])
    );
}

#[test]
fn candidate_settings_that_contradict_are_refused() {
    let s = Scratch::new("candidates-bad");
    let data = s.write("data.csv", delimited(&table(30), ",", "."));
    let cases: [(&[&str], &[&str]); 4] = [
        (
            &["--candidates", "x1,x3"],
            &["candidate column 'x3'", "did you mean 'x1'"],
        ),
        (
            &["--candidates", "x1,y"],
            &["target 'y' cannot also be a candidate"],
        ),
        (
            &["--candidates", "x1,z", "--exclude", "z"],
            &["'z' is named by both"],
        ),
        (
            &["--candidates", "x1"],
            &["1 candidate column(s)", "at least 2", "--candidates"],
        ),
    ];
    for (extra, needles) in cases {
        let output = analyze(&s, &data, "y", extra);
        assert_input_error(&output, &s, &["data.csv"], needles);
    }
}

#[test]
fn duplicate_column_is_reported_and_left_out() {
    let s = Scratch::new("duplicate-column");
    let mut text = String::from("x1,x2,y,x1_again,z\n");
    for r in table(50) {
        text.push_str(&format!(
            "{:.4},{:.4},{:.4},{:.4},{:.4}\n",
            r[0], r[1], r[2], r[0], r[3]
        ));
    }
    let data = s.write("twice.csv", text);
    let output = analyze(&s, &data, "y", &[]);
    assert_success(&output);
    assert!(
        stderr_of(&output).contains("'x1_again' repeats 'x1'"),
        "{}",
        stderr_of(&output)
    );
    let result = result_json(&s.path("out"));
    assert_eq!(
        result["data"]["duplicate_columns"],
        serde_json::json!({"x1_again": "x1"})
    );
    assert_eq!(
        result["settings"]["candidates"],
        serde_json::json!(["x1", "x2", "z"])
    );
}

#[test]
fn too_few_usable_candidates_after_constant_and_duplicate_columns_are_refused() {
    let s = Scratch::new("few-candidates");
    let mut text = String::from("x1,k,y,x1b\n");
    for r in table(30) {
        text.push_str(&format!("{:.4},3,{:.4},{:.4}\n", r[0], r[2], r[0]));
    }
    let data = s.write("thin.csv", text);
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(
        &output,
        &s,
        &["thin.csv"],
        &[
            "only 1 usable candidate",
            "'k' is constant",
            "'x1b' repeats 'x1'",
            "at least 2",
        ],
    );
}

#[test]
fn fewer_rows_than_the_resampling_plan_needs_say_how_many_and_why() {
    let s = Scratch::new("few-rows-plan");
    let data = s.write("five.csv", delimited(&table(5), ",", "."));
    let output = analyze(&s, &data, "y", &["--replicates", "10"]);
    assert_input_error(
        &output,
        &s,
        &["five.csv"],
        &[
            "5 data row(s)",
            "at least 40",
            "half of the rows",
            "at least 20 rows per sample",
        ],
    );
    let output = analyze(
        &s,
        &data,
        "y",
        &["--replicates", "10", "--resample", "bootstrap"],
    );
    assert_input_error(&output, &s, &["five.csv"], &["at least 20", "bootstrap"]);
}

#[test]
fn dependence_takes_the_reader_options_too() {
    let s = Scratch::new("dependence-reader");
    let data = s.write("semi.csv", delimited(&table(50), ";", ","));
    let args = [
        "dependence",
        data.to_str().unwrap(),
        "--response",
        "y",
        "--on",
        "x1",
    ];
    let output = run([&args[..], &["--delimiter", ";", "--decimal-comma"]].concat());
    assert_success(&output);
    assert!(String::from_utf8_lossy(&output.stdout).contains("T_n(y, x1)"));
    let output = run([&args[..], &["--delimiter", ":"]].concat());
    assert_input_error(&output, &s, &["semi.csv"], &["':' for '--delimiter", "tab"]);
    let output = run([&args[..], &["--delimiter", ";", "--missing", "sometimes"]].concat());
    assert_input_error(
        &output,
        &s,
        &["semi.csv"],
        &["'sometimes' for '--missing", "drop-rows"],
    );
}

#[test]
fn settings_are_checked_against_the_header_before_the_rows_are_read() {
    let s = Scratch::new("header-first");
    let mut lines: Vec<String> = delimited(&table(40), ",", ".")
        .lines()
        .map(String::from)
        .collect();
    lines[30] = "0.1,0.2".to_string(); // a ragged row that a full read would stop at
    let data = s.write("late.csv", lines.join("\n"));
    let output = analyze(&s, &data, "yy", &[]);
    assert_input_error(
        &output,
        &s,
        &["late.csv"],
        &["target column 'yy'", "did you mean 'y'"],
    );
    let output = analyze(&s, &data, "y", &[]);
    assert_input_error(&output, &s, &["late.csv"], &["line 31", "2 field(s)"]);
}

#[test]
fn a_dossier_read_with_every_reader_option_verifies_from_its_record() {
    let s = Scratch::new("verify-reader");
    let mut text = String::from("id;x1;x2;y;x1_again;z\n");
    for (i, r) in table(60).iter().enumerate() {
        let y = if i == 9 {
            "NA".to_string()
        } else {
            format!("{:.4}", r[2])
        };
        let cells = [
            format!("{:.4}", r[0]),
            format!("{:.4}", r[1]),
            y,
            format!("{:.4}", r[0]),
        ];
        let cells: Vec<String> = cells.iter().map(|c| c.replace('.', ",")).collect();
        text.push_str(&format!("lot-{i};{};{:.4}\n", cells.join(";"), r[3]).replace(".", ","));
    }
    let data = s.write("lots.csv", text);
    let flags = [
        "--delimiter",
        ";",
        "--decimal-comma",
        "--candidates",
        "x1,x2,x1_again,z",
    ];
    let output = analyze(
        &s,
        &data,
        "y",
        &[&flags[..], &["--replicates", "2"]].concat(),
    );
    assert_success(&output);
    let result = result_json(&s.path("out"));
    assert_eq!(result["data"]["rows_dropped"], 1);
    assert_eq!(
        result["data"]["duplicate_columns"],
        serde_json::json!({"x1_again": "x1"})
    );
    let out = s.path("out");
    let output = run([
        "verify",
        out.to_str().unwrap(),
        "--data",
        data.to_str().unwrap(),
    ]);
    assert_success(&output);
    let stdout = String::from_utf8_lossy(&output.stdout);
    assert_eq!(stdout.lines().last(), Some("VERIFIED"), "{stdout}");
}
