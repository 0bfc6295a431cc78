//! CSV → raw cells ([`RawTable`]). Every problem becomes one sentence naming the file, the line,
//! the column and the value at fault, and saying what to do about it. The checks that turn raw
//! cells into the validated [`Table`](super::Table) are in `checks.rs`.

use super::cells::{quoted, CellReader, ColumnIssues};
use super::checks::FileFacts;
use super::csv_read::Records;
use super::delimiter::Delimiter;
use super::format;
use super::limits::{size_text, MAX_COLUMNS, MAX_NAME_BYTES};
use super::source::Source;
use super::spelling::Spellings;
use super::table::DataReport;
use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};
use std::path::Path;

/// The missing-value tokens used when none are given.
pub const DEFAULT_MISSING_TOKENS: [&str; 5] = ["", "NA", "NaN", "null", "#N/A"];

/// What to do with a row that misses a value in a used column.
#[derive(
    Clone,
    Copy,
    Debug,
    Default,
    PartialEq,
    Eq,
    Serialize,
    schemars::JsonSchema,
    Deserialize,
    clap::ValueEnum,
)]
#[serde(rename_all = "kebab-case")]
pub enum MissingPolicy {
    /// Drop the row, and count the missing values per column (the default).
    #[default]
    DropRows,
    /// Refuse the file, naming the first missing cell.
    Error,
}

impl MissingPolicy {
    /// The command-line name.
    pub fn name(self) -> &'static str {
        match self {
            MissingPolicy::DropRows => "drop-rows",
            MissingPolicy::Error => "error",
        }
    }
}

/// Settings of the reader. Each is recorded in the [`DataReport`] (and in the manifest's
/// settings), so that a run can be repeated from its result ([`LoadOptions::from_report`]).
#[derive(Clone, Debug, PartialEq, Serialize, schemars::JsonSchema, Deserialize)]
pub struct LoadOptions {
    /// The character between fields; written as the character.
    #[serde(default)]
    pub delimiter: Delimiter,
    /// Read `3,14` as 3.14 (and refuse `3.14`).
    #[serde(default)]
    pub decimal_comma: bool,
    /// Cell texts (after trimming spaces) that mean "missing".
    pub missing_tokens: Vec<String>,
    /// What to do with rows missing a used value.
    #[serde(default)]
    pub missing_policy: MissingPolicy,
    /// The sheet of a workbook to read (the first when absent).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sheet: Option<String>,
}

impl Default for LoadOptions {
    fn default() -> Self {
        LoadOptions {
            delimiter: Delimiter::Comma,
            decimal_comma: false,
            missing_tokens: DEFAULT_MISSING_TOKENS
                .iter()
                .map(|s| s.to_string())
                .collect(),
            missing_policy: MissingPolicy::DropRows,
            sheet: None,
        }
    }
}

impl LoadOptions {
    /// The options a recorded run was read with.
    pub fn from_report(report: &DataReport) -> LoadOptions {
        LoadOptions {
            delimiter: report.delimiter,
            decimal_comma: report.decimal_comma,
            missing_tokens: report.missing_tokens.clone(),
            missing_policy: report.missing_policy,
            sheet: report.sheet.clone(),
        }
    }

    /// The tokens for a message: `an empty cell, NA, NaN, null or #N/A`.
    pub fn describe_tokens(&self) -> String {
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
        super::cells::or_list(&shown)
    }
}

/// The file's cells as numbers or missing, before any row or column is dropped.
///
/// Cells are stored as `f64` with NaN for "missing" (a missing-value token) and for "unreadable"
/// (text that is no finite number; [`RawTable::column_issues`] says which columns hold such
/// cells): the reader refuses non-finite numbers, so NaN is free to mean "no value", and the
/// table takes 8 bytes per cell.
#[derive(Clone, Debug)]
pub struct RawTable {
    /// File name as given on the command line.
    pub file: String,
    /// Column names in file order.
    pub names: Vec<String>,
    /// Cells by column; NaN is a missing or unreadable value.
    pub(super) columns: Vec<Vec<f64>>,
    /// The unreadable cells of each column, if it has any.
    pub(super) issues: Vec<Option<ColumnIssues>>,
    /// Per column, whether distinct decimal texts read as one float (for the constant-column note).
    pub(super) spellings: Vec<Option<Spellings>>,
    /// The file line on which each data row starts (1-based).
    pub lines: Vec<u64>,
    /// The file line of the header (1 unless blank lines come first).
    pub header_line: u64,
}

/// A data file opened once, its header read and checked: settings can be checked against
/// [`DataReader::header`] before the rows are read ([`DataReader::read_rows`]), so that a misspelt
/// column in a large file is reported at once, without opening the file a second time.
pub struct DataReader {
    body: Body,
    header: RawTable,
    options: LoadOptions,
}

/// What is left to read after the header.
enum Body {
    /// The records of a CSV file after its header.
    Csv(Box<Records>),
    /// Nothing: a binary format is read whole at once; the header is the whole table.
    Read(FileFacts),
}

impl DataReader {
    /// Opens `path` and reads its header.
    pub fn open(path: &Path, options: &LoadOptions) -> Result<DataReader> {
        let file = super::source::display_name(path);
        DataReader::start(Source::open(path, &file)?, file, options)
    }

    /// Reads the header of `source`, shown as `file` in messages.
    pub fn start(mut source: Source, file: String, options: &LoadOptions) -> Result<DataReader> {
        let head = source
            .peek(format::SIGNATURE_BYTES, &file, format::undecided)?
            .to_vec();
        format::refuse_unread(&head, &file)?;
        if let Some(kind) = format::recognise(&head) {
            let (table, facts) = format::read(kind, source, file, options)?;
            return Ok(DataReader {
                body: Body::Read(facts),
                header: table,
                options: options.clone(),
            });
        }
        if let Some(sheet) = &options.sheet {
            return Err(Error::input(format!(
                "data file '{file}' is a CSV file, which has no sheets; leave out the sheet \
                 ({}) or give the workbook",
                super::cells::quoted(sheet)
            )));
        }
        let mut records = Records::new(source, &file, options.delimiter);
        if !records.advance()? {
            return Err(Error::input(format!(
                "data file '{file}' is empty; it needs a header row of column names followed by rows of numbers"
            )));
        }
        let header_line = records.line();
        check_header_size(records.record(), &file, header_line)?;
        let names = records.header(options.delimiter)?;
        let header = RawTable {
            file,
            columns: vec![Vec::new(); names.len()],
            issues: vec![None; names.len()],
            spellings: vec![None; names.len()],
            names,
            lines: Vec::new(),
            header_line,
        };
        Ok(DataReader {
            body: Body::Csv(Box::new(records)),
            header,
            options: options.clone(),
        })
    }

    /// The column names, as a raw table without rows.
    pub fn header(&self) -> &RawTable {
        &self.header
    }

    /// Reads the rows into raw numeric cells, one record at a time, and the file to its end: the
    /// table and the fingerprint of exactly the bytes it was read from. A UTF-8 byte-order mark and
    /// CRLF line endings are accepted; blank lines are skipped.
    pub fn read_rows(self) -> Result<(RawTable, FileFacts)> {
        let DataReader {
            body,
            header,
            options,
        } = self;
        let mut records = match body {
            Body::Csv(records) => *records,
            Body::Read(facts) => return Ok((header, facts)),
        };
        let RawTable {
            file,
            names,
            mut columns,
            mut issues,
            mut spellings,
            mut lines,
            header_line,
        } = header;
        let cells = CellReader::new(&options.missing_tokens, options.decimal_comma);
        let comma_clash = options.decimal_comma && options.delimiter == Delimiter::Comma;
        while records.advance()? {
            records.check_width(&names).map_err(|e| match comma_clash {
                true => Error::input(format!(
                    "{e}; with --decimal-comma and commas between values, a number's comma must be \
                     inside quotes, or the file needs another delimiter such as --delimiter ';'"
                )),
                false => e,
            })?;
            let line = records.line();
            for (j, column) in columns.iter_mut().enumerate() {
                let text = records.text(j, || {
                    format!("{file}, line {line}, column {}", quoted(&names[j]))
                })?;
                let value = match cells.parse(text) {
                    Ok(Some(value)) => {
                        Spellings::observe(&mut spellings[j], text, value, lines.len());
                        value
                    }
                    Ok(None) => f64::NAN,
                    Err(problem) => {
                        match &mut issues[j] {
                            Some(known) => known.add(text, problem),
                            None => issues[j] = Some(ColumnIssues::first(line, text, problem)),
                        }
                        f64::NAN
                    }
                };
                column.push(value);
            }
            lines.push(line);
        }
        if lines.is_empty() {
            return Err(Error::input(format!(
                "{file}: the header on line {header_line} is followed by no data rows; add rows of numbers below it"
            )));
        }
        let facts = records.finish()?;
        // Growth by doubling leaves up to half of each column unused; the table is held for the
        // whole run.
        columns.iter_mut().for_each(Vec::shrink_to_fit);
        lines.shrink_to_fit();
        let raw = RawTable {
            file,
            names,
            columns,
            issues,
            spellings,
            lines,
            header_line,
        };
        Ok((raw, facts))
    }
}

/// The header's number of columns and each name's length against the limits.
fn check_header_size(record: &csv::ByteRecord, file: &str, line: u64) -> Result<()> {
    if record.len() > MAX_COLUMNS {
        return Err(Error::input(format!(
            "{file}, line {line}: the header has {} columns, more than {MAX_COLUMNS}, the most \
             forebear reads; leave out the columns the study does not need",
            record.len()
        )));
    }
    if let Some(j) = record.iter().position(|name| name.len() > MAX_NAME_BYTES) {
        return Err(Error::input(format!(
            "{file}, line {line}, column {}: the column name is {} bytes long, more than {}, the \
             most a name may hold; give the column a shorter name",
            j + 1,
            record[j].len(),
            size_text(MAX_NAME_BYTES)
        )));
    }
    Ok(())
}

/// Reads a CSV file with a header row into raw numeric cells (see [`DataReader::read_rows`]).
pub fn read_csv(path: &Path, options: &LoadOptions) -> Result<RawTable> {
    Ok(read_data(path, options)?.0)
}

/// Reads a CSV file once: its raw cells and the fingerprint of its bytes.
pub fn read_data(path: &Path, options: &LoadOptions) -> Result<(RawTable, FileFacts)> {
    DataReader::open(path, options)?.read_rows()
}

impl RawTable {
    /// A raw table from cells by column (`None`: missing; non-finite values count as missing),
    /// as if read from a file whose header is line 1 and whose rows are lines 2, 3, ...
    pub fn from_cells(file: &str, names: Vec<String>, cells: Vec<Vec<Option<f64>>>) -> RawTable {
        let rows = cells.first().map_or(0, Vec::len);
        assert!(
            cells.iter().all(|c| c.len() == rows),
            "equal column lengths"
        );
        assert_eq!(names.len(), cells.len(), "one name per column");
        RawTable {
            file: file.to_string(),
            issues: vec![None; names.len()],
            spellings: vec![None; names.len()],
            names,
            columns: cells
                .into_iter()
                .map(|c| {
                    c.into_iter()
                        .map(|v| v.filter(|x| x.is_finite()).unwrap_or(f64::NAN))
                        .collect()
                })
                .collect(),
            lines: (2..2 + rows as u64).collect(),
            header_line: 1,
        }
    }

    /// Number of data rows read.
    pub fn n_rows(&self) -> usize {
        self.lines.len()
    }

    /// Cell `r` of column `j`: its number, or `None` when it is missing or unreadable.
    pub fn cell(&self, j: usize, r: usize) -> Option<f64> {
        let value = self.columns[j][r];
        (!value.is_nan()).then_some(value)
    }

    /// The cells of column `j` in row order (see [`RawTable::cell`]).
    pub fn column_cells(&self, j: usize) -> impl Iterator<Item = Option<f64>> + '_ {
        self.columns[j].iter().map(|&v| (!v.is_nan()).then_some(v))
    }

    /// The cells of column `j` that are text rather than numbers or missing-value tokens.
    pub fn column_issues(&self, j: usize) -> Option<&ColumnIssues> {
        self.issues[j].as_ref()
    }

    /// Position of a column, or an error that suggests the closest names.
    pub fn require_column(&self, name: &str, role: &str) -> Result<usize> {
        if let Some(j) = self.names.iter().position(|n| n == name) {
            return Ok(j);
        }
        let close = closest_names(name, &self.names);
        let hint = if !close.is_empty() {
            let close: Vec<String> = close.iter().map(|n| quoted(n)).collect();
            format!("did you mean {}?", super::cells::or_list(&close))
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
}

/// Up to three names within a small edit distance of `wanted` (case ignored), closest first.
pub fn closest_names(wanted: &str, names: &[String]) -> Vec<String> {
    let wanted_lower = wanted.to_lowercase();
    let length = wanted.chars().count();
    // Two edits turn any short name into any other: allow one for names of up to three letters.
    let limit = (length / 3).max(if length <= 3 { 1 } else { 2 });
    // Names that hold the wanted text come first, then the others by edit distance.
    let mut scored: Vec<(bool, usize, &String)> = names
        .iter()
        .map(|n| {
            let lower = n.to_lowercase();
            let holds = !wanted_lower.is_empty() && lower.contains(&wanted_lower);
            (!holds, edit_distance(&wanted_lower, &lower), n)
        })
        .filter(|&(far, d, _)| d <= limit || !far)
        .collect();
    scored.sort();
    scored
        .into_iter()
        .take(3)
        .map(|(_, _, n)| n.clone())
        .collect()
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
        let short: Vec<String> = ["x1", "x2", "yield", "z"]
            .iter()
            .map(|s| s.to_string())
            .collect();
        assert_eq!(closest_names("y", &short), ["yield", "z"]);
    }

    #[test]
    fn tokens_are_described_with_the_empty_entry_in_words() {
        let options = LoadOptions {
            missing_tokens: vec!["".into(), "NA".into(), "-999".into()],
            ..LoadOptions::default()
        };
        assert_eq!(options.describe_tokens(), "an empty cell, NA or -999");
        assert_eq!(
            LoadOptions::default().describe_tokens(),
            "an empty cell, NA, NaN, null or #N/A"
        );
    }

    #[test]
    fn raw_cells_keep_missing_apart_from_numbers() {
        let raw = RawTable::from_cells(
            "t.csv",
            vec!["a".into(), "b".into()],
            vec![vec![Some(1.5), None], vec![Some(f64::INFINITY), Some(-0.0)]],
        );
        assert_eq!(raw.n_rows(), 2);
        assert_eq!(raw.cell(0, 0), Some(1.5));
        assert_eq!(raw.cell(0, 1), None);
        assert_eq!(raw.cell(1, 0), None);
        assert_eq!(raw.column_cells(1).collect::<Vec<_>>(), [None, Some(-0.0)]);
        assert_eq!(raw.lines, vec![2, 3]);
    }
}
