//! CSV → raw cells → validated [`Table`]. Every problem becomes one sentence naming the file, the
//! line, the column and the value at fault, and saying what to do about it.

use super::table::{DataReport, Table};
use crate::error::{Error, Result};
use std::collections::{BTreeMap, HashSet};
use std::path::Path;

/// The missing-value tokens used when none are given.
pub const DEFAULT_MISSING_TOKENS: [&str; 4] = ["", "NA", "NaN", "null"];

/// Settings of the reader (recorded in the manifest's settings; see [`LoadOptions::from_report`]).
#[derive(Clone, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct LoadOptions {
    /// Cell texts (after trimming spaces) that mean "missing".
    pub missing_tokens: Vec<String>,
}

impl Default for LoadOptions {
    fn default() -> Self {
        LoadOptions {
            missing_tokens: DEFAULT_MISSING_TOKENS
                .iter()
                .map(|s| s.to_string())
                .collect(),
        }
    }
}

impl LoadOptions {
    /// Options from a comma-separated token list as typed after `--missing-tokens`. An empty entry
    /// (as in `,NA`) stands for empty cells; the list replaces the defaults.
    pub fn from_token_list(list: &str) -> Self {
        let mut missing_tokens: Vec<String> = Vec::new();
        for token in list.split(',').map(|t| t.trim().to_string()) {
            if !missing_tokens.contains(&token) {
                missing_tokens.push(token);
            }
        }
        LoadOptions { missing_tokens }
    }

    /// The reader options a recorded analysis used, so that a re-run reads the file the same way.
    pub fn from_report(report: &DataReport) -> Self {
        LoadOptions {
            missing_tokens: report.missing_tokens.clone(),
        }
    }

    /// The tokens for a message: `an empty cell, NA, NaN or null`.
    fn describe_tokens(&self) -> String {
        let shown: Vec<String> = self
            .missing_tokens
            .iter()
            .map(|t| {
                if t.is_empty() {
                    "an empty cell".to_string()
                } else {
                    t.clone()
                }
            })
            .collect();
        match shown.split_last() {
            None => "none".to_string(),
            Some((last, [])) => last.clone(),
            Some((last, rest)) => format!("{} or {last}", rest.join(", ")),
        }
    }
}

/// The file's cells as numbers or missing, before any row or column is dropped.
#[derive(Clone, Debug)]
pub struct RawTable {
    /// File name as given on the command line.
    pub file: String,
    /// Column names in file order.
    pub names: Vec<String>,
    /// Cells by column; `None` is a missing value.
    pub columns: Vec<Vec<Option<f64>>>,
    /// The file line on which each data row starts (1-based).
    pub lines: Vec<u64>,
    /// The file line of the header (1 unless blank lines come first).
    pub header_line: u64,
}

/// Reads a CSV file with a header row into raw numeric cells. A UTF-8 byte-order mark and CRLF
/// line endings are accepted; blank lines are skipped.
pub fn read_csv(path: &Path, options: &LoadOptions) -> Result<RawTable> {
    let file = path.display().to_string();
    if !path.exists() {
        return Err(Error::input(format!(
            "data file '{file}' does not exist; check the path"
        )));
    }
    if path.is_dir() {
        return Err(Error::input(format!(
            "data file '{file}' is a folder, not a CSV file"
        )));
    }
    // Headers are read as an ordinary record so that every line, the first included, goes through
    // the same byte-level checks. Records end at '\n' only: with the reader's default CRLF
    // terminator, every record after the first of a CRLF file reports the line before its own.
    // The '\r' left at the end of the last field is removed with the other surrounding spaces.
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .terminator(csv::Terminator::Any(b'\n'))
        .from_path(path)
        .map_err(|e| {
            Error::input(format!(
                "cannot open data file '{file}': {}",
                one_line(&e.to_string())
            ))
        })?;
    let mut record = csv::ByteRecord::new();
    if !next_record(&mut reader, &mut record, &file)? {
        return Err(Error::input(format!(
            "data file '{file}' is empty; it needs a header row of column names followed by rows of numbers"
        )));
    }
    let header_line = record.position().map_or(1, |p| p.line());
    let names = read_header(&record, header_line, &file)?;
    if let Some(separator) = foreign_separator(&names) {
        return Err(Error::input(format!(
            "{file}, line {header_line}: the header is the single name {} and seems to use {separator} \
             between names; save the file with commas between values",
            quoted(&names[0])
        )));
    }
    let missing: HashSet<&str> = options.missing_tokens.iter().map(String::as_str).collect();
    let mut columns: Vec<Vec<Option<f64>>> = vec![Vec::new(); names.len()];
    let mut lines = Vec::new();
    while next_record(&mut reader, &mut record, &file)? {
        let line = record.position().map_or(0, |p| p.line());
        check_width(&record, &names, &file, line)?;
        for (j, bytes) in record.iter().enumerate() {
            let at = || format!("{file}, line {line}, column {}", quoted(&names[j]));
            let cell = std::str::from_utf8(bytes).map_err(|_| {
                Error::input(format!(
                    "{}: the value {} is not valid UTF-8 text; save the file as UTF-8",
                    at(),
                    quoted(String::from_utf8_lossy(bytes).trim())
                ))
            })?;
            let value = parse_cell(cell, &missing).map_err(|problem| {
                Error::input(format!(
                    "{}: the value {} is {}; write a number there or one of the missing-value tokens \
                     ({}), or list the text with --missing-tokens",
                    at(),
                    quoted(cell.trim()),
                    problem.describe(),
                    options.describe_tokens()
                ))
            })?;
            columns[j].push(value);
        }
        lines.push(line);
    }
    if lines.is_empty() {
        return Err(Error::input(format!(
            "{file}: the header on line {header_line} is followed by no data rows; add rows of numbers below it"
        )));
    }
    Ok(RawTable {
        file,
        names,
        columns,
        lines,
        header_line,
    })
}

/// Reads the next record that is not a blank line; `false` at the end of the file.
fn next_record(
    reader: &mut csv::Reader<std::fs::File>,
    record: &mut csv::ByteRecord,
    file: &str,
) -> Result<bool> {
    loop {
        let more = read_record(reader, record, file)?;
        let blank = record.len() == 1 && record[0].trim_ascii().is_empty();
        if !more || !blank {
            return Ok(more);
        }
    }
}

fn read_record(
    reader: &mut csv::Reader<std::fs::File>,
    record: &mut csv::ByteRecord,
    file: &str,
) -> Result<bool> {
    reader.read_byte_record(record).map_err(|error| {
        let what = match error.kind() {
            csv::ErrorKind::Io(e) => format!("cannot be read: {}", one_line(&e.to_string())),
            _ => one_line(&error.to_string()),
        };
        match error.position() {
            Some(p) => Error::input(format!("{file}, line {}: {what}", p.line())),
            None => Error::input(format!("data file '{file}' {what}")),
        }
    })
}

fn read_header(record: &csv::ByteRecord, line: u64, file: &str) -> Result<Vec<String>> {
    let mut names = Vec::with_capacity(record.len());
    for (j, bytes) in record.iter().enumerate() {
        let name = std::str::from_utf8(bytes).map_err(|_| {
            let hint = if bytes.starts_with(b"\xff\xfe") || bytes.starts_with(b"\xfe\xff") {
                "the file looks like UTF-16; save it as UTF-8"
            } else {
                "save the file as UTF-8"
            };
            Error::input(format!(
                "{file}, line {line}, column {}: the column name {} is not valid UTF-8 text; {hint}",
                j + 1,
                quoted(&String::from_utf8_lossy(bytes))
            ))
        })?;
        names.push(name.trim().to_string());
    }
    let filled: Vec<&String> = names.iter().filter(|n| !n.is_empty()).collect();
    if !filled.is_empty() && filled.iter().all(|n| is_number_text(n)) {
        let j = names.iter().position(|n| !n.is_empty()).unwrap_or(0);
        return Err(Error::input(format!(
            "{file}, line {line}, column {}: the first row holds the number {} where a column name \
             is expected; add a header row of column names",
            j + 1,
            quoted(&names[j])
        )));
    }
    if let Some(j) = names.iter().position(String::is_empty) {
        let hint = if j + 1 == names.len() && names.len() > 1 {
            " (is there a comma at the end of the header?)"
        } else {
            ""
        };
        return Err(Error::input(format!(
            "{file}, line {line}, column {}: the column name is empty; give every column a name{hint}",
            j + 1
        )));
    }
    let mut seen = BTreeMap::new();
    for (j, name) in names.iter().enumerate() {
        if let Some(first) = seen.insert(name.as_str(), j) {
            return Err(Error::input(format!(
                "{file}, line {line}: the column name {} appears twice (columns {} and {}); give every \
                 column its own name",
                quoted(name),
                first + 1,
                j + 1
            )));
        }
    }
    Ok(names)
}

/// `';'`, tabs or `'|'` when the whole header is one name holding them: not a comma-separated file.
fn foreign_separator(names: &[String]) -> Option<&'static str> {
    let [only] = names else { return None };
    [(';', "';'"), ('\t', "tabs"), ('|', "'|'")]
        .into_iter()
        .find(|(c, _)| only.contains(*c))
        .map(|(_, s)| s)
}

/// A row must have exactly one field per column.
fn check_width(record: &csv::ByteRecord, names: &[String], file: &str, line: u64) -> Result<()> {
    let (fields, width) = (record.len(), names.len());
    if fields < width {
        return Err(Error::input(format!(
            "{file}, line {line}: the row has {fields} field(s) but the header has {width} columns, so \
             column {} has no value; give every row one value per column (an empty cell marks a \
             missing value)",
            quoted(&names[fields])
        )));
    }
    if fields > width {
        let extra = String::from_utf8_lossy(&record[width]);
        return Err(Error::input(format!(
            "{file}, line {line}: the row has {fields} fields but the header has {width} columns, so the \
             value {} after the last column {} has no column; check for an unquoted comma inside a value",
            quoted(extra.trim()),
            quoted(&names[width - 1])
        )));
    }
    Ok(())
}

/// Why a cell is not a usable number.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum CellProblem {
    NotANumber,
    NotFinite,
}

impl CellProblem {
    fn describe(self) -> &'static str {
        match self {
            CellProblem::NotANumber => "not a number",
            CellProblem::NotFinite => "not a finite number",
        }
    }
}

/// Plain decimal notation: digits, sign, point and exponent only (no `inf`, `nan`, hex, commas).
fn is_number_text(text: &str) -> bool {
    text.bytes()
        .all(|b| b.is_ascii_digit() || matches!(b, b'.' | b'-' | b'+' | b'e' | b'E'))
        && text.parse::<f64>().is_ok()
}

/// A cell is missing, a finite number, or a problem.
fn parse_cell(
    cell: &str,
    missing: &HashSet<&str>,
) -> std::result::Result<Option<f64>, CellProblem> {
    let text = cell.trim();
    if missing.contains(text) {
        return Ok(None);
    }
    if is_number_text(text) {
        let value: f64 = text.parse().map_err(|_| CellProblem::NotANumber)?;
        return if value.is_finite() {
            Ok(Some(value))
        } else {
            Err(CellProblem::NotFinite)
        };
    }
    match text.to_ascii_lowercase().trim_start_matches(['+', '-']) {
        "inf" | "infinity" | "nan" => Err(CellProblem::NotFinite),
        _ => Err(CellProblem::NotANumber),
    }
}

/// A text in quotes for a message, on one line and of bounded length.
fn quoted(text: &str) -> String {
    const LIMIT: usize = 40;
    let shown: String = text
        .chars()
        .take(LIMIT)
        .flat_map(char::escape_debug)
        .collect();
    let ellipsis = if text.chars().count() > LIMIT {
        "…"
    } else {
        ""
    };
    format!("'{shown}{ellipsis}'")
}

/// Joins the lines of a library's message so that the error stays one line.
fn one_line(text: &str) -> String {
    text.split_whitespace().collect::<Vec<_>>().join(" ")
}

impl RawTable {
    /// Position of a column, or an error that suggests the closest names.
    pub fn require_column(&self, name: &str, role: &str) -> Result<usize> {
        if let Some(j) = self.names.iter().position(|n| n == name) {
            return Ok(j);
        }
        let close = closest_names(name, &self.names);
        let hint = if !close.is_empty() {
            let close: Vec<String> = close.iter().map(|n| quoted(n)).collect();
            format!("did you mean {}?", close.join(" or "))
        } else {
            const SHOWN: usize = 12;
            let listed: Vec<String> = self.names.iter().take(SHOWN).map(|n| quoted(n)).collect();
            let more = if self.names.len() > SHOWN {
                format!(" and {} more", self.names.len() - SHOWN)
            } else {
                String::new()
            };
            format!("the columns are {}{more}", listed.join(", "))
        };
        Err(Error::input(format!(
            "{}, line {}: the {role} column {} is not in the header; {hint}",
            self.file,
            self.header_line,
            quoted(name)
        )))
    }

    /// Keeps the used columns, drops rows missing any of them, then drops constant columns.
    ///
    /// `used` lists column positions; `target` (one of them) must not be constant.
    pub fn prepare(
        &self,
        used: &[usize],
        target: usize,
        excluded: Vec<String>,
        size_bytes: u64,
        sha256: String,
        options: &LoadOptions,
    ) -> Result<(Table, DataReport)> {
        let rows_read = self.lines.len();
        let mut missing_by_column = BTreeMap::new();
        let mut keep = vec![true; rows_read];
        for &j in used {
            let mut count = 0;
            for (r, cell) in self.columns[j].iter().enumerate() {
                if cell.is_none() {
                    count += 1;
                    keep[r] = false;
                }
            }
            missing_by_column.insert(self.names[j].clone(), count);
        }
        let rows: Vec<usize> = (0..rows_read).filter(|&r| keep[r]).collect();
        if rows.len() < 3 {
            return Err(self.too_few_rows(rows.len(), &missing_by_column));
        }
        let mut names = Vec::new();
        let mut columns = Vec::new();
        let mut constant_columns = Vec::new();
        for &j in used {
            let values: Vec<f64> = rows
                .iter()
                .map(|&r| self.columns[j][r].unwrap_or(0.0))
                .collect();
            let constant = values.iter().all(|&v| v == values[0]);
            if constant && j == target {
                return Err(Error::input(format!(
                    "{}, column {}: the target takes the single value {} on every row used, so nothing \
                     can be said about what drives it; choose a target that varies",
                    self.file,
                    quoted(&self.names[j]),
                    values[0]
                )));
            }
            if constant {
                constant_columns.push(self.names[j].clone());
            } else {
                names.push(self.names[j].clone());
                columns.push(values);
            }
        }
        let report = DataReport {
            file: self.file.clone(),
            size_bytes,
            sha256,
            content_sha256: String::new(),
            rows_read,
            rows_used: rows.len(),
            rows_dropped: rows_read - rows.len(),
            missing_by_column,
            constant_columns,
            excluded_columns: excluded,
            missing_tokens: options.missing_tokens.clone(),
        };
        Ok((Table::from_columns(names, columns), report))
    }

    fn too_few_rows(&self, remaining: usize, missing_by_column: &BTreeMap<String, usize>) -> Error {
        let worst = missing_by_column
            .iter()
            .filter(|(_, &n)| n > 0)
            .max_by_key(|(_, &n)| n);
        let advice = match worst {
            Some((name, n)) => format!(
                "column {} is missing on {n} of {} rows, so fill it in or leave it out",
                quoted(name),
                self.lines.len()
            ),
            None => "add more rows".to_string(),
        };
        Error::input(format!(
            "{}: only {remaining} row(s) remain after dropping rows with a missing value in a used \
             column, but at least 3 are needed; {advice}",
            self.file
        ))
    }
}

/// Up to three names within a small edit distance of `wanted` (case ignored), closest first.
pub fn closest_names(wanted: &str, names: &[String]) -> Vec<String> {
    let wanted_lower = wanted.to_lowercase();
    let limit = (wanted.chars().count() / 3).max(2);
    let mut scored: Vec<(usize, &String)> = names
        .iter()
        .map(|n| (edit_distance(&wanted_lower, &n.to_lowercase()), n))
        .filter(|(d, n)| {
            *d <= limit || (!wanted_lower.is_empty() && n.to_lowercase().contains(&wanted_lower))
        })
        .collect();
    scored.sort();
    scored.into_iter().take(3).map(|(_, n)| n.clone()).collect()
}

/// Levenshtein distance (Levenshtein, Soviet Physics Doklady 1966) by the two-row dynamic programme.
fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut previous: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut current = vec![i + 1; b.len() + 1];
        for (j, &cb) in b.iter().enumerate() {
            let substitution = previous[j] + usize::from(ca != cb);
            current[j + 1] = substitution.min(previous[j + 1] + 1).min(current[j] + 1);
        }
        previous = current;
    }
    previous[b.len()]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn edit_distance_matches_textbook_examples() {
        // Classic worked example (common practice): kitten → sitting needs 3 edits.
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("", "abc"), 3);
        assert_eq!(edit_distance("same", "same"), 0);
    }

    #[test]
    fn closest_names_suggests_near_misses_only() {
        let names: Vec<String> = ["strength", "kiln_temp", "binder"]
            .iter()
            .map(|s| s.to_string())
            .collect();
        assert_eq!(
            closest_names("strenght", &names),
            vec!["strength".to_string()]
        );
        assert!(closest_names("zzzzzz", &names).is_empty());
    }

    #[test]
    fn cells_parse_numbers_and_missing_tokens() {
        let missing: HashSet<&str> = ["", "NA"].into_iter().collect();
        assert_eq!(parse_cell(" 1.5e3 ", &missing), Ok(Some(1500.0)));
        assert_eq!(parse_cell("-2", &missing), Ok(Some(-2.0)));
        assert_eq!(parse_cell("+.5", &missing), Ok(Some(0.5)));
        assert_eq!(parse_cell("7.", &missing), Ok(Some(7.0)));
        assert_eq!(parse_cell("2E-2", &missing), Ok(Some(0.02)));
        assert_eq!(parse_cell("NA", &missing), Ok(None));
        assert_eq!(parse_cell("", &missing), Ok(None));
        assert_eq!(parse_cell("inf", &missing), Err(CellProblem::NotFinite));
        assert_eq!(
            parse_cell("-Infinity", &missing),
            Err(CellProblem::NotFinite)
        );
        assert_eq!(parse_cell("NaN", &missing), Err(CellProblem::NotFinite));
        assert_eq!(parse_cell("1e400", &missing), Err(CellProblem::NotFinite));
        assert_eq!(parse_cell("abc", &missing), Err(CellProblem::NotANumber));
        assert_eq!(parse_cell("1,5", &missing), Err(CellProblem::NotANumber));
        assert_eq!(parse_cell("0x10", &missing), Err(CellProblem::NotANumber));
        assert_eq!(parse_cell("1e", &missing), Err(CellProblem::NotANumber));
    }

    #[test]
    fn token_lists_keep_the_empty_entry_and_drop_repeats() {
        let options = LoadOptions::from_token_list(",NA, NA ,-999");
        assert_eq!(options.missing_tokens, vec!["", "NA", "-999"]);
        assert_eq!(options.describe_tokens(), "an empty cell, NA or -999");
        assert_eq!(
            LoadOptions::default().describe_tokens(),
            "an empty cell, NA, NaN or null"
        );
    }

    #[test]
    fn quoted_values_stay_on_one_line_and_short() {
        assert_eq!(quoted("a\nb"), "'a\\nb'");
        assert_eq!(quoted(&"x".repeat(50)), format!("'{}…'", "x".repeat(40)));
    }
}
