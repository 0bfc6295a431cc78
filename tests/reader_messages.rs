//! A column whose cells are distinct decimal numbers as text but one 64-bit float is constant
//! only after rounding: the note that leaves it out says so, in the progress line, in
//! `result.json` and in the dossier, and `dependence` says so when it refuses the column (issue 12,
//! item 8). The other reader messages of item 8 are files in `tests/bad-input/`.

use crate::common::*;

/// The invented table with a fifth column `k` that alternates between two texts of one float.
fn with_rounded_column(rows: usize, texts: [&str; 2]) -> String {
    let text = delimited(&table(rows), ",", ".");
    text.lines()
        .enumerate()
        .map(|(i, line)| match i {
            0 => format!("{line},k\n"),
            _ => format!("{line},{}\n", texts[i % 2]),
        })
        .collect()
}

#[test]
fn a_column_constant_only_as_floats_is_left_out_with_a_note_that_says_why() {
    let scratch = Scratch::new("rounding-note");
    let data = scratch.write(
        "rounded.csv",
        with_rounded_column(60, ["0.1", "0.1000000000000000000001"]),
    );
    let output = analyze(&scratch, &data, "y", &[]);
    assert_success(&output);
    let stderr = stderr_of(&output);
    let note = stderr
        .lines()
        .find(|l| l.contains("column 'k' is constant"))
        .unwrap_or_else(|| panic!("no note on k: {stderr}"));
    for needle in [
        "differ as text",
        "'0.1'",
        "'0.1000000000000000000001'",
        "64-bit floats",
    ] {
        assert!(note.contains(needle), "{needle}: {note}");
    }
    let result = result_json(&scratch.path("out"));
    assert_eq!(result["data"]["constant_columns"], serde_json::json!(["k"]));
    assert_eq!(
        result["data"]["constant_by_rounding"]["k"],
        serde_json::json!(["0.1000000000000000000001", "0.1"])
    );
    let dossier = std::fs::read_to_string(scratch.path("out/dossier.md")).unwrap();
    assert!(
        dossier.contains("constant only as 64-bit floats")
            && dossier.contains("k (0.1000000000000000000001 and 0.1)"),
        "{dossier}"
    );

    let refused = run([
        "dependence",
        data.to_str().unwrap(),
        "--response",
        "y",
        "--on",
        "k",
    ]);
    assert_refused(
        &refused,
        &["column 'k'", "constant", "equal as 64-bit floats"],
    );
}

#[test]
fn one_number_written_several_ways_is_constant_without_a_rounding_note() {
    let scratch = Scratch::new("rounding-none");
    let data = scratch.write("same.csv", with_rounded_column(60, ["1", "1.0"]));
    let output = analyze(&scratch, &data, "y", &[]);
    assert_success(&output);
    let stderr = stderr_of(&output);
    assert!(stderr.contains("column 'k' is constant"), "{stderr}");
    assert!(!stderr.contains("differ as text"), "{stderr}");
    let result = result_json(&scratch.path("out"));
    assert!(result["data"].get("constant_by_rounding").is_none());
}
