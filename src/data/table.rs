//! The validated table: named, finite, non-constant numeric columns with no missing values.

use ndarray::{Array2, ShapeBuilder};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// Named numeric columns, stored column-major so that each column is one contiguous slice.
#[derive(Clone, Debug)]
pub struct Table {
    names: Vec<String>,
    values: Array2<f64>,
}

impl Table {
    /// Builds a table from columns of equal length. Callers guarantee finiteness.
    pub fn from_columns(names: Vec<String>, columns: Vec<Vec<f64>>) -> Self {
        let rows = columns.first().map_or(0, Vec::len);
        debug_assert!(columns.iter().all(|c| c.len() == rows));
        debug_assert_eq!(names.len(), columns.len());
        let flat: Vec<f64> = columns.into_iter().flatten().collect();
        let values = Array2::from_shape_vec((rows, names.len()).f(), flat)
            .expect("column lengths were checked");
        Table { names, values }
    }

    /// Column names in file order.
    pub fn names(&self) -> &[String] {
        &self.names
    }

    /// Number of rows.
    pub fn n_rows(&self) -> usize {
        self.values.nrows()
    }

    /// Number of columns.
    pub fn n_cols(&self) -> usize {
        self.values.ncols()
    }

    /// Position of a column by exact name.
    pub fn index_of(&self, name: &str) -> Option<usize> {
        self.names.iter().position(|n| n == name)
    }

    /// One column as a contiguous slice.
    pub fn column(&self, index: usize) -> &[f64] {
        self.values
            .column(index)
            .to_slice()
            .expect("column-major storage keeps columns contiguous")
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
#[derive(Clone, Debug, Serialize, Deserialize, PartialEq)]
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
    /// Columns excluded by the settings.
    pub excluded_columns: Vec<String>,
    /// The missing-value tokens in force.
    pub missing_tokens: Vec<String>,
}
