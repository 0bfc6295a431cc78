//! CSV → raw cells → validated [`Table`]. Every problem becomes one sentence naming the file, the
//! line, the column and the value at fault.

use super::table::{DataReport, Table};
use crate::error::{Error, Result};
use std::collections::{BTreeMap, HashSet};
use std::path::Path;

/// Settings of the reader.
#[derive(Clone, Debug)]
pub struct LoadOptions {
    /// Cell texts (after trimming spaces) that mean "missing".
    pub missing_tokens: Vec<String>,
}

impl Default for LoadOptions {
    fn default() -> Self {
        LoadOptions {
            missing_tokens: ["", "NA", "NaN", "null"].iter().map(|s| s.to_string()).collect(),
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
}

/// Reads a CSV file with a header row into raw numeric cells.
pub fn read_csv(path: &Path, options: &LoadOptions) -> Result<RawTable> {
    let file = path.display().to_string();
    if !path.exists() {
        return Err(Error::input(format!("data file '{file}' does not exist")));
    }
    if path.is_dir() {
        return Err(Error::input(format!("data file '{file}' is a directory, not a CSV file")));
    }
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(true)
        .flexible(true)
        .from_path(path)
        .map_err(|e| Error::input(format!("cannot open data file '{file}': {e}")))?;
    let names = read_header(&mut reader, &file)?;
    let missing: HashSet<&str> = options.missing_tokens.iter().map(String::as_str).collect();
    let mut columns: Vec<Vec<Option<f64>>> = vec![Vec::new(); names.len()];
    let mut lines = Vec::new();
    let mut record = csv::StringRecord::new();
    loop {
        match reader.read_record(&mut record) {
            Ok(false) => break,
            Ok(true) => {}
            Err(e) => return Err(csv_error(&file, e)),
        }
        let line = record.position().map_or(0, |p| p.line());
        if record.len() == 1 && record.get(0) == Some("") && names.len() > 1 {
            continue; // a blank line
        }
        if record.len() != names.len() {
            return Err(Error::input(format!(
                "{file}, line {line}: this row has {} fields but the header has {} columns",
                record.len(),
                names.len()
            )));
        }
        for (j, cell) in record.iter().enumerate() {
            columns[j].push(parse_cell(cell, &missing).map_err(|()| {
                Error::input(format!(
                    "{file}, line {line}, column '{}': the value '{cell}' is not a number \
                     (and not one of the missing-value tokens)",
                    names[j]
                ))
            })?);
        }
        lines.push(line);
    }
    if lines.is_empty() {
        return Err(Error::input(format!("data file '{file}' has a header but no data rows")));
    }
    Ok(RawTable { file, names, columns, lines })
}

fn read_header(reader: &mut csv::Reader<std::fs::File>, file: &str) -> Result<Vec<String>> {
    let header = reader.headers().map_err(|e| csv_error(file, e))?.clone();
    if header.is_empty() || (header.len() == 1 && header[0].trim().is_empty()) {
        return Err(Error::input(format!("data file '{file}' is empty: a header row is needed")));
    }
    let names: Vec<String> = header.iter().map(|n| n.trim().to_string()).collect();
    if let Some(j) = names.iter().position(String::is_empty) {
        return Err(Error::input(format!(
            "{file}, line 1, column {}: the column name is empty; every column needs a name",
            j + 1
        )));
    }
    if let Some(j) = names.iter().position(|n| n.parse::<f64>().is_ok()) {
        return Err(Error::input(format!(
            "{file}, line 1, column {}: the first row holds the number '{}' where a column name \
             is expected; the file needs a header row",
            j + 1,
            names[j]
        )));
    }
    let mut seen = BTreeMap::new();
    for (j, name) in names.iter().enumerate() {
        if let Some(first) = seen.insert(name.as_str(), j) {
            return Err(Error::input(format!(
                "{file}, line 1: the column name '{name}' appears twice (columns {} and {})",
                first + 1,
                j + 1
            )));
        }
    }
    Ok(names)
}

fn csv_error(file: &str, error: csv::Error) -> Error {
    let line = error.position().map(|p| p.line());
    let what = match error.kind() {
        csv::ErrorKind::Utf8 { err, .. } => format!(
            "a field is not valid UTF-8 text (field {}); save the file as UTF-8",
            err.field() + 1
        ),
        csv::ErrorKind::Io(e) => format!("cannot be read: {e}"),
        _ => error.to_string(),
    };
    match line {
        Some(line) => Error::input(format!("{file}, line {line}: {what}")),
        None => Error::input(format!("data file '{file}': {what}")),
    }
}

/// A cell is missing, a finite number, or an error.
fn parse_cell(cell: &str, missing: &HashSet<&str>) -> std::result::Result<Option<f64>, ()> {
    let text = cell.trim();
    if missing.contains(text) {
        return Ok(None);
    }
    let looks_numeric = text
        .bytes()
        .all(|b| b.is_ascii_digit() || matches!(b, b'.' | b'-' | b'+' | b'e' | b'E'));
    match text.parse::<f64>() {
        Ok(v) if looks_numeric && v.is_finite() => Ok(Some(v)),
        _ => Err(()),
    }
}

impl RawTable {
    /// Position of a column, or an error that suggests the closest names.
    pub fn require_column(&self, name: &str, role: &str) -> Result<usize> {
        if let Some(j) = self.names.iter().position(|n| n == name) {
            return Ok(j);
        }
        let close = closest_names(name, &self.names);
        let hint = if close.is_empty() {
            format!("the columns are: {}", self.names.join(", "))
        } else {
            format!("did you mean {}?", close.iter().map(|n| format!("'{n}'")).collect::<Vec<_>>().join(" or "))
        };
        Err(Error::input(format!(
            "{}, line 1: the {role} column '{name}' is not in the header; {hint}",
            self.file
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
            return Err(Error::input(format!(
                "{}: only {} row(s) remain after dropping rows with missing values in the used \
                 columns; at least 3 are needed",
                self.file,
                rows.len()
            )));
        }
        let mut names = Vec::new();
        let mut columns = Vec::new();
        let mut constant_columns = Vec::new();
        for &j in used {
            let values: Vec<f64> = rows.iter().map(|&r| self.columns[j][r].unwrap_or(0.0)).collect();
            let constant = values.iter().all(|&v| v == values[0]);
            if constant && j == target {
                return Err(Error::input(format!(
                    "{}, column '{}': the target takes the single value {} on every row used, so \
                     nothing can be said about what drives it",
                    self.file, self.names[j], values[0]
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
}

/// Up to three names within a small edit distance of `wanted` (case ignored), closest first.
pub fn closest_names(wanted: &str, names: &[String]) -> Vec<String> {
    let wanted_lower = wanted.to_lowercase();
    let limit = (wanted.chars().count() / 3).max(2);
    let mut scored: Vec<(usize, &String)> = names
        .iter()
        .map(|n| (edit_distance(&wanted_lower, &n.to_lowercase()), n))
        .filter(|(d, n)| *d <= limit || n.to_lowercase().contains(&wanted_lower))
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
        let names: Vec<String> = ["strength", "kiln_temp", "binder"].iter().map(|s| s.to_string()).collect();
        assert_eq!(closest_names("strenght", &names), vec!["strength".to_string()]);
        assert!(closest_names("zzzzzz", &names).is_empty());
    }

    #[test]
    fn cells_parse_numbers_and_missing_tokens() {
        let missing: HashSet<&str> = ["", "NA"].into_iter().collect();
        assert_eq!(parse_cell(" 1.5e3 ", &missing), Ok(Some(1500.0)));
        assert_eq!(parse_cell("-2", &missing), Ok(Some(-2.0)));
        assert_eq!(parse_cell("NA", &missing), Ok(None));
        assert_eq!(parse_cell("", &missing), Ok(None));
        assert!(parse_cell("inf", &missing).is_err());
        assert!(parse_cell("NaN", &missing).is_err());
        assert!(parse_cell("abc", &missing).is_err());
        assert!(parse_cell("1,5", &missing).is_err());
    }
}
