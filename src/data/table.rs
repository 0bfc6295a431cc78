//! The validated table: named, finite, non-constant numeric columns with no missing values.

use super::load::MissingPolicy;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// Named numeric columns, each one contiguous vector (moved, not copied, from the reader).
#[derive(Clone, Debug, PartialEq)]
pub struct Table {
    names: Vec<String>,
    columns: Vec<Vec<f64>>,
}

impl Table {
    /// Builds a table from columns of equal length. Callers guarantee finiteness.
    pub fn from_columns(names: Vec<String>, columns: Vec<Vec<f64>>) -> Self {
        let rows = columns.first().map_or(0, Vec::len);
        assert!(
            columns.iter().all(|c| c.len() == rows),
            "columns of equal length"
        );
        assert_eq!(names.len(), columns.len(), "one name per column");
        Table { names, columns }
    }

    /// Column names in file order.
    pub fn names(&self) -> &[String] {
        &self.names
    }

    /// Number of rows.
    pub fn n_rows(&self) -> usize {
        self.columns.first().map_or(0, Vec::len)
    }

    /// Number of columns.
    pub fn n_cols(&self) -> usize {
        self.columns.len()
    }

    /// Position of a column by exact name.
    pub fn index_of(&self, name: &str) -> Option<usize> {
        self.names.iter().position(|n| n == name)
    }

    /// One column as a contiguous slice.
    pub fn column(&self, index: usize) -> &[f64] {
        &self.columns[index]
    }

    /// A new table holding the given rows, in the given order (repeats allowed).
    pub fn select_rows(&self, rows: &[usize]) -> Table {
        let columns = (0..self.n_cols())
            .map(|j| {
                let col = self.column(j);
                rows.iter().map(|&r| col[r]).collect()
            })
            .collect();
        Table::from_columns(self.names.clone(), columns)
    }
}

/// What happened between the file and the validated table, for the dossier.
#[derive(Clone, Debug, Serialize, schemars::JsonSchema, Deserialize, PartialEq)]
pub struct DataReport {
    /// File name as given.
    pub file: String,
    /// File size in bytes.
    pub size_bytes: u64,
    /// SHA-256 of the file's bytes, lower-case hex.
    pub sha256: String,
    /// SHA-256 of the parsed content in canonical form (see `data::fingerprint`): equal for a file
    /// re-saved with other line endings, quoting or number formatting.
    #[serde(default)]
    pub content_sha256: String,
    /// The file's format when it is not CSV: `parquet`, `xpt` (SAS transport, version 5) or
    /// `workbook`. Absent for CSV.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub format: Option<String>,
    /// The sheet read, for a workbook.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sheet: Option<String>,
    /// Data rows read (header excluded).
    pub rows_read: usize,
    /// Rows used by the analysis.
    pub rows_used: usize,
    /// Rows dropped because a used column held a missing value.
    pub rows_dropped: usize,
    /// Missing values per used column, among the rows read.
    pub missing_by_column: BTreeMap<String, usize>,
    /// Columns excluded because they are constant over the rows used.
    pub constant_columns: Vec<String>,
    /// Constant columns whose cells are distinct decimal numbers as text but equal as 64-bit
    /// floats (constant only after rounding): two such texts of each. Absent when there are none.
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub constant_by_rounding: BTreeMap<String, [String; 2]>,
    /// Columns left out by the settings (`--exclude`, or not named by `--candidates`), in file
    /// order.
    pub excluded_columns: Vec<String>,
    /// The missing-value tokens in force.
    pub missing_tokens: Vec<String>,
    /// The delimiter the file was read with (the character itself).
    #[serde(default)]
    pub delimiter: super::delimiter::Delimiter,
    /// Whether numbers were read with a decimal comma.
    #[serde(default)]
    pub decimal_comma: bool,
    /// What was done with rows missing a used value.
    #[serde(default)]
    pub missing_policy: MissingPolicy,
    /// Columns excluded because they repeat an earlier column (or the target) exactly on the rows
    /// used: each dropped column with the column it repeats.
    #[serde(default)]
    pub duplicate_columns: BTreeMap<String, String>,
}
