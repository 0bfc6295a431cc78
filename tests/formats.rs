//! Data files besides CSV, told by their first bytes: Parquet, SAS transport (XPT version 5) and
//! workbooks (xlsx). Each table gives the content fingerprint and the result digest of the same
//! table in CSV, `verify` re-reads it, and what is not numeric is refused naming the column or
//! the cell.

use crate::common::*;
use parquet::basic::Compression;
use parquet::data_type::{BoolType, ByteArray, ByteArrayType, DoubleType, FloatType, Int32Type};
use parquet::file::properties::WriterProperties;
use parquet::file::writer::SerializedFileWriter;
use parquet::schema::parser::parse_message_type;
use std::path::{Path, PathBuf};
use std::sync::Arc;

/// The demo table's names and its values as the CSV reader reads them (the nearest doubles;
/// `NA` is missing).
fn demo_table() -> (Vec<String>, Vec<Vec<Option<f64>>>) {
    let mut lines = forebear::demo::DEMO_CSV.lines();
    let names: Vec<String> = lines
        .next()
        .unwrap()
        .split(',')
        .map(str::to_string)
        .collect();
    let mut columns = vec![Vec::new(); names.len()];
    for line in lines.filter(|l| !l.is_empty()) {
        for (column, text) in columns.iter_mut().zip(line.split(',')) {
            column.push((text != "NA").then(|| text.parse::<f64>().unwrap()));
        }
    }
    (names, columns)
}

/// One column of a Parquet file written by [`write_parquet`].
enum Column {
    Double(Vec<Option<f64>>),
    Float(Vec<Option<f32>>),
    Int32(Vec<Option<i32>>),
    Bool(Vec<Option<bool>>),
    Text(Vec<Option<&'static str>>),
}

/// Writes a Parquet file (Snappy-compressed) of `schema` (every column OPTIONAL) with row groups
/// of `group` rows.
fn write_parquet(path: &Path, schema: &str, columns: &[Column], group: usize) {
    let schema = Arc::new(parse_message_type(schema).unwrap());
    let properties = Arc::new(
        WriterProperties::builder()
            .set_compression(Compression::SNAPPY)
            .build(),
    );
    let file = std::fs::File::create(path).unwrap();
    let mut writer = SerializedFileWriter::new(file, schema, properties).unwrap();
    let rows = match &columns[0] {
        Column::Double(v) => v.len(),
        Column::Float(v) => v.len(),
        Column::Int32(v) => v.len(),
        Column::Bool(v) => v.len(),
        Column::Text(v) => v.len(),
    };
    let mut start = 0;
    while start < rows {
        let end = (start + group).min(rows);
        let mut row_group = writer.next_row_group().unwrap();
        for column in columns {
            let mut out = row_group.next_column().unwrap().unwrap();
            fn split<T: Clone>(cells: &[Option<T>]) -> (Vec<T>, Vec<i16>) {
                let levels = cells.iter().map(|c| i16::from(c.is_some())).collect();
                (cells.iter().flatten().cloned().collect(), levels)
            }
            match column {
                Column::Double(v) => {
                    let (values, levels) = split(&v[start..end]);
                    out.typed::<DoubleType>()
                        .write_batch(&values, Some(&levels), None)
                        .unwrap();
                }
                Column::Float(v) => {
                    let (values, levels) = split(&v[start..end]);
                    out.typed::<FloatType>()
                        .write_batch(&values, Some(&levels), None)
                        .unwrap();
                }
                Column::Int32(v) => {
                    let (values, levels) = split(&v[start..end]);
                    out.typed::<Int32Type>()
                        .write_batch(&values, Some(&levels), None)
                        .unwrap();
                }
                Column::Bool(v) => {
                    let (values, levels) = split(&v[start..end]);
                    out.typed::<BoolType>()
                        .write_batch(&values, Some(&levels), None)
                        .unwrap();
                }
                Column::Text(v) => {
                    let (values, levels) = split(&v[start..end]);
                    let values: Vec<ByteArray> =
                        values.iter().map(|s| ByteArray::from(*s)).collect();
                    out.typed::<ByteArrayType>()
                        .write_batch(&values, Some(&levels), None)
                        .unwrap();
                }
            }
            out.close().unwrap();
        }
        row_group.close().unwrap();
        start = end;
    }
    writer.close().unwrap();
}

/// `forebear fingerprint FILE --json EXTRA...` as JSON.
fn fingerprint(file: &Path, extra: &[&str]) -> serde_json::Value {
    let output = bin()
        .arg("fingerprint")
        .arg(file)
        .arg("--json")
        .args(extra)
        .output()
        .unwrap();
    assert_success(&output);
    serde_json::from_slice(&output.stdout).unwrap()
}

/// The result digest of `analyze FILE --target TARGET --replicates 0 EXTRA...` into a fresh
/// scratch folder, and the result's data record.
fn digest_of(test: &str, file: &Path, target: &str, extra: &[&str]) -> (String, serde_json::Value) {
    let scratch = Scratch::new(test);
    let output = analyze(&scratch, file, target, extra);
    assert_success(&output);
    let result = result_json(&scratch.path("out"));
    (
        result["digest"].as_str().unwrap().to_string(),
        result["data"].clone(),
    )
}

/// Asserts that `file` gives the content fingerprint and the result digest of `twin` (a CSV
/// file), that its data record names `format`, and that `verify` passes against it.
fn assert_same_as_csv(test: &str, file: &Path, twin: &Path, target: &str, format: &str) {
    let (of_file, of_twin) = (fingerprint(file, &[]), fingerprint(twin, &[]));
    assert_eq!(of_file["format"], format);
    assert_eq!(of_twin["format"], "csv");
    assert_eq!(of_file["content_sha256"], of_twin["content_sha256"]);
    assert_eq!(of_file["rows"], of_twin["rows"]);
    let (digest, data) = digest_of(&format!("{test}-file"), file, target, &[]);
    let (twin_digest, twin_data) = digest_of(&format!("{test}-twin"), twin, target, &[]);
    assert_eq!(digest, twin_digest, "the result digest of the CSV twin");
    assert_eq!(data["format"], format);
    assert!(twin_data.get("format").is_none(), "no format for CSV");
    assert_eq!(data["content_sha256"], twin_data["content_sha256"]);
    assert_eq!(data["size_bytes"], std::fs::metadata(file).unwrap().len());
    assert_eq!(
        data["sha256"].as_str().unwrap(),
        sha256_hex(&std::fs::read(file).unwrap())
    );
    let scratch = Scratch::new(&format!("{test}-verify"));
    assert_success(&analyze(&scratch, file, target, &[]));
    assert_success(&verify(&scratch.path("out"), file, &[]));
}

#[test]
fn parquet_of_the_demo_gives_the_csv_fingerprint_and_digest_and_verifies() {
    let scratch = Scratch::new("formats-parquet-demo");
    let twin = write_demo_csv(&scratch);
    let (names, columns) = demo_table();
    let schema = format!(
        "message demo {{ {} }}",
        names
            .iter()
            .map(|n| format!("OPTIONAL DOUBLE {n};"))
            .collect::<String>()
    );
    let columns: Vec<Column> = columns.into_iter().map(Column::Double).collect();
    // Three row groups: read in order, they make the rows of the CSV file.
    let file = scratch.path("discs.data");
    write_parquet(&file, &schema, &columns, 600);
    assert_same_as_csv(
        "formats-parquet-demo",
        &file,
        &twin,
        "crush_strength",
        "parquet",
    );
}

#[test]
fn parquet_integers_floats_booleans_and_nulls_read_as_the_csv_twin() {
    let scratch = Scratch::new("formats-parquet-types");
    let rows = 40;
    let count: Vec<Option<i32>> = (0..rows).map(|i| Some(i * 7 % 13 - 6)).collect();
    let small: Vec<Option<i32>> = (0..rows).map(|i| Some(i % 5)).collect();
    let flag: Vec<Option<bool>> = (0..rows).map(|i| Some(i % 3 == 0)).collect();
    let ratio: Vec<Option<f32>> = (0..rows).map(|i| Some(i as f32 * 0.1)).collect();
    let level: Vec<Option<f64>> = (0..rows)
        .map(|i| (i % 9 != 4).then_some(f64::from(i) * 1.25 + 0.3))
        .collect();
    let file = scratch.path("types.parquet");
    write_parquet(
        &file,
        "message t { OPTIONAL INT32 count; OPTIONAL INT32 small (INTEGER(8,false)); \
         OPTIONAL BOOLEAN flag; OPTIONAL FLOAT ratio; OPTIONAL DOUBLE level; }",
        &[
            Column::Int32(count.clone()),
            Column::Int32(small.clone()),
            Column::Bool(flag.clone()),
            Column::Float(ratio.clone()),
            Column::Double(level.clone()),
        ],
        15,
    );
    // The twin: each value written as the shortest text of its double (f32 widened exactly).
    let mut csv = String::from("count,small,flag,ratio,level\n");
    for i in 0..rows as usize {
        let level = level[i].map_or(String::new(), |v| v.to_string());
        csv += &format!(
            "{},{},{},{},{level}\n",
            count[i].unwrap(),
            small[i].unwrap(),
            u8::from(flag[i].unwrap()),
            f64::from(ratio[i].unwrap()),
        );
    }
    let twin = scratch.write("types.csv", csv);
    let (of_file, of_twin) = (fingerprint(&file, &[]), fingerprint(&twin, &[]));
    assert_eq!(of_file["content_sha256"], of_twin["content_sha256"]);
    assert_eq!(of_file["rows"], 40);
    assert_eq!(of_file["columns"], 5);
}

#[test]
fn a_parquet_text_column_is_refused_naming_it_and_its_type() {
    let scratch = Scratch::new("formats-parquet-text");
    let file = scratch.write("placeholder", "");
    write_parquet(
        &file,
        "message t { OPTIONAL DOUBLE x; OPTIONAL BYTE_ARRAY batch (UTF8); }",
        &[
            Column::Double(vec![Some(1.0), Some(2.0), Some(3.0)]),
            Column::Text(vec![Some("b1"), None, Some("b2")]),
        ],
        10,
    );
    let output = analyze(&scratch, &file, "x", &[]);
    assert_input_error(
        &output,
        &scratch,
        &["placeholder"],
        &["'batch'", "UTF8", "drop the column"],
    );
}

#[test]
fn a_delimiter_given_with_a_parquet_file_is_refused() {
    let scratch = Scratch::new("formats-parquet-delimiter");
    let file = scratch.write("placeholder", "");
    write_parquet(
        &file,
        "message t { OPTIONAL DOUBLE x; OPTIONAL DOUBLE y; }",
        &[
            Column::Double(vec![Some(1.0), Some(2.0), Some(3.0)]),
            Column::Double(vec![Some(3.0), Some(1.0), Some(2.0)]),
        ],
        10,
    );
    let output = analyze(&scratch, &file, "x", &["--delimiter", ";"]);
    assert_input_error(
        &output,
        &scratch,
        &["placeholder"],
        &["parquet", "delimiter"],
    );
}

/// An IBM System/360 long hexadecimal float of `x` (sign, excess-64 exponent of 16, 56-bit
/// fraction): exact for every double in its range, as 53 bits fit in 56 at any hex alignment.
fn ibm(x: f64) -> [u8; 8] {
    if x == 0.0 {
        return [0; 8];
    }
    let bits = x.to_bits();
    let sign = bits >> 63;
    let biased = ((bits >> 52) & 0x7ff) as i32;
    let mantissa = (bits & ((1 << 52) - 1)) | (1 << 52);
    // x = mantissa × 2^power, with a 53-bit mantissa: x lies in [2^(length-1), 2^length).
    let power = biased - 1075;
    let length = 53 + power;
    let hex_exponent = (length + 3).div_euclid(4);
    let shift = power + 56 - 4 * hex_exponent;
    assert!((0..=3).contains(&shift), "a normal double in range");
    let fraction = mantissa << shift;
    let word = (sign << 63) | (((hex_exponent + 64) as u64) << 56) | fraction;
    word.to_be_bytes()
}

/// An 80-byte record: `text` padded with blanks.
fn record(text: &[u8]) -> Vec<u8> {
    assert!(text.len() <= 80);
    let mut r = text.to_vec();
    r.resize(80, b' ');
    r
}

/// A SAS transport (version 5) file of one member: numeric variables `names` (each 8 bytes,
/// `None` a `.` missing value), or a character variable where `character` names it.
fn write_xpt(path: &Path, names: &[&str], rows: &[Vec<Option<f64>>], character: Option<&str>) {
    const STAMP: &[u8] = b"01JAN26:00:00:00";
    let mut out = Vec::new();
    out.extend(record(
        b"HEADER RECORD*******LIBRARY HEADER RECORD!!!!!!!000000000000000000000000000000",
    ));
    let mut first = b"SAS     SAS     SASLIB  9.4     Linux   ".to_vec();
    first.extend([b' '; 24]);
    first.extend(STAMP);
    out.extend(record(&first));
    out.extend(record(STAMP));
    out.extend(record(
        b"HEADER RECORD*******MEMBER  HEADER RECORD!!!!!!!000000000000000001600000000140",
    ));
    out.extend(record(
        b"HEADER RECORD*******DSCRPTR HEADER RECORD!!!!!!!000000000000000000000000000000",
    ));
    let mut descriptor = b"SAS     DISCS   SASDATA 9.4     Linux   ".to_vec();
    descriptor.extend([b' '; 24]);
    descriptor.extend(STAMP);
    out.extend(record(&descriptor));
    out.extend(record(STAMP));
    let count = names.len() + usize::from(character.is_some());
    out.extend(record(
        format!(
            "HEADER RECORD*******NAMESTR HEADER RECORD!!!!!!!000000{count:04}00000000000000000000"
        )
        .as_bytes(),
    ));
    let mut namestrs = Vec::new();
    let all: Vec<(&str, u16)> = names
        .iter()
        .map(|n| (*n, 1))
        .chain(character.map(|c| (c, 2)))
        .collect();
    for (j, (name, kind)) in all.iter().enumerate() {
        let mut n = vec![0u8; 140];
        n[0..2].copy_from_slice(&kind.to_be_bytes());
        n[4..6].copy_from_slice(&8u16.to_be_bytes());
        n[6..8].copy_from_slice(&(j as u16 + 1).to_be_bytes());
        let mut padded = name.as_bytes().to_vec();
        padded.resize(8, b' ');
        n[8..16].copy_from_slice(&padded);
        n[16..56].fill(b' ');
        n[84..88].copy_from_slice(&(8 * j as u32).to_be_bytes());
        namestrs.extend(n);
    }
    namestrs.resize(namestrs.len().div_ceil(80) * 80, b' ');
    out.extend(namestrs);
    out.extend(record(
        b"HEADER RECORD*******OBS     HEADER RECORD!!!!!!!000000000000000000000000000000",
    ));
    let mut data = Vec::new();
    for row in rows {
        for value in row {
            match value {
                Some(x) => data.extend(ibm(*x)),
                None => data.extend(b".\0\0\0\0\0\0\0"),
            }
        }
        if character.is_some() {
            data.extend(b"LOT 7   ");
        }
    }
    data.resize(data.len().div_ceil(80) * 80, b' ');
    out.extend(data);
    std::fs::write(path, out).unwrap();
}

#[test]
fn the_ibm_writer_of_these_tests_round_trips_every_demo_value() {
    // The reader's decoding is unit-tested on known patterns (src/data/xpt.rs); here the writer's
    // encoding: 1.0 and -118.625 give the published patterns.
    assert_eq!(u64::from_be_bytes(ibm(1.0)), 0x4110_0000_0000_0000);
    assert_eq!(u64::from_be_bytes(ibm(-118.625)), 0xC276_A000_0000_0000);
    assert_eq!(u64::from_be_bytes(ibm(0.1)), 0x4019_9999_9999_999A);
}

#[test]
fn xpt_of_the_demo_gives_the_csv_fingerprint_and_digest_and_verifies() {
    let scratch = Scratch::new("formats-xpt-demo");
    let (names, columns) = demo_table();
    // Names of at most 8 characters, as version 5 holds; the CSV twin takes the same names.
    let short: Vec<String> = names.iter().map(|n| n.chars().take(8).collect()).collect();
    let short_refs: Vec<&str> = short.iter().map(String::as_str).collect();
    let rows: Vec<Vec<Option<f64>>> = (0..columns[0].len())
        .map(|i| columns.iter().map(|c| c[i]).collect())
        .collect();
    let file = scratch.path("discs.xpt");
    write_xpt(&file, &short_refs, &rows, None);
    let body = forebear::demo::DEMO_CSV.split_once('\n').unwrap().1;
    let twin = scratch.write("discs.csv", format!("{}\n{body}", short.join(",")));
    assert_same_as_csv("formats-xpt-demo", &file, &twin, "crush_st", "xpt");
}

#[test]
fn xpt_missing_values_read_as_empty_csv_cells() {
    let scratch = Scratch::new("formats-xpt-missing");
    let rows: Vec<Vec<Option<f64>>> = (0..12)
        .map(|i| {
            let x = f64::from(i) * 0.1;
            vec![Some(x), (i % 4 != 1).then_some(x * x - 3.5)]
        })
        .collect();
    let file = scratch.path("m.xpt");
    write_xpt(&file, &["DOSE", "RESP"], &rows, None);
    let mut csv = String::from("DOSE,RESP\n");
    for row in &rows {
        let cell = |v: Option<f64>| v.map_or(String::new(), |x| x.to_string());
        csv += &format!("{},{}\n", cell(row[0]), cell(row[1]));
    }
    let twin = scratch.write("m.csv", csv);
    let (of_file, of_twin) = (fingerprint(&file, &[]), fingerprint(&twin, &[]));
    assert_eq!(of_file["content_sha256"], of_twin["content_sha256"]);
    assert_eq!(of_file["rows"], 12);
}

#[test]
fn an_xpt_character_variable_is_refused_naming_it() {
    let scratch = Scratch::new("formats-xpt-character");
    let file = scratch.path("c.xpt");
    let rows = vec![vec![Some(1.0), Some(2.0)]; 5];
    write_xpt(&file, &["DOSE", "RESP"], &rows, Some("LOTID"));
    let output = analyze(&scratch, &file, "RESP", &[]);
    assert_input_error(&output, &scratch, &["c.xpt"], &["'LOTID'", "characters"]);
}

/// Writes a workbook: the demo on sheet `discs` (first), and a small table on sheet `trial`
/// whose cell `at` (if any) holds the text `text`.
fn write_workbook(path: &Path, text_at: Option<(u32, u16, &str)>) -> PathBuf {
    let (names, columns) = demo_table();
    let mut workbook = rust_xlsxwriter::Workbook::new();
    let sheet = workbook.add_worksheet().set_name("discs").unwrap();
    for (j, name) in names.iter().enumerate() {
        sheet.write_string(0, j as u16, name).unwrap();
        for (i, value) in columns[j].iter().enumerate() {
            if let Some(value) = value {
                sheet.write_number(i as u32 + 1, j as u16, *value).unwrap();
            }
        }
    }
    let trial = workbook.add_worksheet().set_name("trial").unwrap();
    for (j, name) in ["dose", "response", "batch"].iter().enumerate() {
        trial.write_string(0, j as u16, *name).unwrap();
    }
    for i in 1..=20u32 {
        trial.write_number(i, 0, f64::from(i) * 0.5).unwrap();
        trial.write_number(i, 1, f64::from(i * i % 7)).unwrap();
        trial.write_boolean(i, 2, i % 2 == 0).unwrap();
    }
    if let Some((row, column, text)) = text_at {
        trial.write_string(row, column, text).unwrap();
    }
    workbook.save(path).unwrap();
    path.to_path_buf()
}

#[test]
fn a_workbook_of_the_demo_gives_the_csv_fingerprint_and_digest_and_verifies() {
    let scratch = Scratch::new("formats-xlsx-demo");
    let twin = write_demo_csv(&scratch);
    let file = write_workbook(&scratch.path("discs.xlsx"), None);
    assert_same_as_csv(
        "formats-xlsx-demo",
        &file,
        &twin,
        "crush_strength",
        "workbook",
    );
    let (_, data) = digest_of("formats-xlsx-demo-sheet", &file, "crush_strength", &[]);
    assert_eq!(data["sheet"], "discs", "the first sheet, named");
}

#[test]
fn sheet_picks_the_sheet_and_booleans_read_as_0_and_1() {
    let scratch = Scratch::new("formats-xlsx-sheet");
    let file = write_workbook(&scratch.path("book.xlsx"), None);
    let mut csv = String::from("dose,response,batch\n");
    for i in 1..=20u32 {
        csv += &format!(
            "{},{},{}\n",
            f64::from(i) * 0.5,
            i * i % 7,
            u8::from(i % 2 == 0)
        );
    }
    let twin = scratch.write("trial.csv", csv);
    let of_file = fingerprint(&file, &["--sheet", "trial"]);
    assert_eq!(of_file["sheet"], "trial");
    assert_eq!(
        of_file["content_sha256"],
        fingerprint(&twin, &[])["content_sha256"]
    );
    let output = analyze(&scratch, &file, "dose", &["--sheet", "nope"]);
    assert_refused(&output, &["no sheet 'nope'", "'discs', 'trial'"]);
}

#[test]
fn a_text_cell_in_a_workbook_is_refused_naming_the_cell() {
    let scratch = Scratch::new("formats-xlsx-text");
    // Row 16 (0-based), column 1: cell B17.
    let file = write_workbook(&scratch.path("book.xlsx"), Some((16, 1, "see notes")));
    let output = analyze(&scratch, &file, "dose", &["--sheet", "trial"]);
    assert_input_error(
        &output,
        &scratch,
        &["book.xlsx"],
        &[
            "sheet 'trial'",
            "cell B17",
            "'response'",
            "'see notes'",
            "not a number",
        ],
    );
    // A number written as text, and a missing-value token, read as a CSV cell would.
    let file = write_workbook(&scratch.path("book2.xlsx"), Some((16, 1, "NA")));
    let of_file = fingerprint(&file, &["--sheet", "trial"]);
    assert_eq!(of_file["rows"], 20);
}

#[test]
fn a_zip_archive_that_is_no_workbook_is_refused_as_such() {
    let scratch = Scratch::new("formats-zip");
    // A ZIP file of one stored member (the local header, the central directory and its end).
    let file = scratch.write(
        "data.zip",
        b"PK\x03\x04\x14\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0\x01\0\0\0a\
          PK\x01\x02\x14\0\x14\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0\x01\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0\0a\
          PK\x05\x06\0\0\0\0\x01\0\x01\0\x2f\0\0\0\x1f\0\0\0\0\0",
    );
    let output = analyze(&scratch, &file, "x", &[]);
    assert_input_error(&output, &scratch, &["data.zip"], &["ZIP archive", "export"]);
}
