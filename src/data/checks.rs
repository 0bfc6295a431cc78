//! Raw cells → the validated [`Table`]: every used column numeric (`unreadable.rs`), missing values dropped by row or refused, enough rows, constant and duplicate columns
//! left out and reported.

use super::cells::quoted;
use super::load::{LoadOptions, MissingPolicy, RawTable};
use super::table::{DataReport, Table};
use crate::error::{Error, Result};
use std::collections::{BTreeMap, HashMap};
use std::hash::{Hash, Hasher};

/// Says that two texts of a column are distinct numbers that read as one 64-bit float.
pub fn rounding_note(texts: &[String; 2]) -> String {
    format!(
        "its values differ as text ({} and {}) but are equal as 64-bit floats, which hold about 16 \
         significant digits",
        quoted(&texts[0]),
        quoted(&texts[1])
    )
}

/// The fewest rows any sample that T_n or ξ_n is computed on may have.
pub const MIN_ROWS_PER_SAMPLE: usize = 3;

/// Why a sample needs [`MIN_ROWS_PER_SAMPLE`] rows, for messages.
pub const MIN_ROWS_REASON: &str =
    "T_n and ξ_n pair every row with its nearest neighbour among the \
     other rows, so every sample they are computed on needs at least 3 rows";

/// The file facts recorded next to the data: size and SHA-256 of its bytes.
#[derive(Clone, Debug, Default)]
pub struct FileFacts {
    /// Size in bytes.
    pub size_bytes: u64,
    /// SHA-256, lower-case hex.
    pub sha256: String,
    /// The format, when it is not CSV (`parquet`, `xpt`, `workbook`).
    pub format: Option<String>,
    /// The sheet read, for a workbook.
    pub sheet: Option<String>,
}

impl RawTable {
    /// Keeps the used columns, drops (or, under `--missing error`, refuses) rows missing any of
    /// them, then leaves out constant columns and columns that repeat another exactly.
    ///
    /// `used` lists column positions in file order; `target` (one of them) must vary and is never
    /// the one left out of a duplicate pair. `excluded` names the columns the settings left out.
    /// Consumes the raw table: its columns move into the [`Table`] without a copy.
    pub fn prepare(
        self,
        used: &[usize],
        target: usize,
        excluded: Vec<String>,
        facts: FileFacts,
        options: &LoadOptions,
    ) -> Result<(Table, DataReport)> {
        self.check_numeric(used, target, options)?;
        let rows_read = self.n_rows();
        let mut missing_by_column = BTreeMap::new();
        let mut keep = vec![true; rows_read];
        for &j in used {
            let mut count = 0;
            for (r, value) in self.columns[j].iter().enumerate() {
                if value.is_nan() {
                    count += 1;
                    keep[r] = false;
                }
            }
            missing_by_column.insert(self.names[j].clone(), count);
        }
        if options.missing_policy == MissingPolicy::Error {
            self.refuse_missing(used, &keep, &missing_by_column, options)?;
        }
        let rows_used = keep.iter().filter(|&&k| k).count();
        let mut report = DataReport {
            file: self.file.clone(),
            size_bytes: facts.size_bytes,
            sha256: facts.sha256,
            format: facts.format,
            sheet: facts.sheet,
            content_sha256: String::new(),
            rows_read,
            rows_used,
            rows_dropped: rows_read - rows_used,
            missing_by_column,
            constant_columns: Vec::new(),
            constant_by_rounding: BTreeMap::new(),
            excluded_columns: excluded,
            missing_tokens: options.missing_tokens.clone(),
            delimiter: options.delimiter,
            decimal_comma: options.decimal_comma,
            missing_policy: options.missing_policy,
            duplicate_columns: BTreeMap::new(),
        };
        require_rows(&report, MIN_ROWS_PER_SAMPLE, MIN_ROWS_REASON)?;

        let RawTable {
            file,
            names,
            mut columns,
            spellings,
            ..
        } = self;
        let mut kept: Vec<(usize, Vec<f64>)> = Vec::with_capacity(used.len());
        for &j in used {
            let mut values = std::mem::take(&mut columns[j]);
            if rows_used < rows_read {
                retain_rows(&mut values, &keep);
            }
            let constant = values.iter().all(|&v| v == values[0]);
            let by_rounding = || {
                spellings[j]
                    .as_ref()
                    .and_then(|s| s.distinct_texts(values[0], |r| keep[r]))
            };
            if constant && j == target {
                let rounding = by_rounding().map_or(String::new(), |texts| {
                    format!(" ({})", rounding_note(&texts))
                });
                return Err(Error::input(format!(
                    "{file}, column {}: the target takes the single value {} on every row used{rounding}, \
                     so nothing can be said about what drives it; choose a target that varies",
                    quoted(&names[j]),
                    values[0]
                )));
            }
            if constant {
                if let Some(texts) = by_rounding() {
                    report.constant_by_rounding.insert(names[j].clone(), texts);
                }
                report.constant_columns.push(names[j].clone());
            } else {
                kept.push((j, values));
            }
        }
        drop(columns);
        let copies = duplicates(&kept, target);
        let mut table_names = Vec::with_capacity(kept.len());
        let mut table_columns = Vec::with_capacity(kept.len());
        for (j, values) in kept {
            match copies.get(&j) {
                Some(&original) => {
                    report
                        .duplicate_columns
                        .insert(names[j].clone(), names[original].clone());
                }
                None => {
                    table_names.push(names[j].clone());
                    table_columns.push(values);
                }
            }
        }
        Ok((Table::from_columns(table_names, table_columns), report))
    }

    /// Under `--missing error`: names the first missing cell of a used column.
    fn refuse_missing(
        &self,
        used: &[usize],
        keep: &[bool],
        missing_by_column: &BTreeMap<String, usize>,
        options: &LoadOptions,
    ) -> Result<()> {
        let Some(r) = keep.iter().position(|&k| !k) else {
            return Ok(());
        };
        let j = *used
            .iter()
            .find(|&&j| self.columns[j][r].is_nan())
            .expect("a used column is missing on this row");
        let total: usize = missing_by_column.values().sum();
        Err(Error::input(format!(
            "{}, line {}, column {}: the value is missing ({}) and --missing error is set; fill in \
             every used cell, leave the column out, or use --missing drop-rows ({})",
            self.file,
            self.lines[r],
            quoted(&self.names[j]),
            options.describe_tokens(),
            match total {
                1 => "it is the only missing used cell".to_string(),
                n => format!("{n} used cells are missing in all"),
            }
        )))
    }
}

/// Refuses a table with fewer than `needed` rows used, saying why they are needed and, when rows
/// were dropped for missing values, which column cost the most.
pub fn require_rows(report: &DataReport, needed: usize, why: &str) -> Result<()> {
    let remaining = report.rows_used;
    if remaining >= needed {
        return Ok(());
    }
    if report.rows_dropped == 0 {
        return Err(Error::input(format!(
            "{}: the file has {remaining} data row(s), but at least {needed} are needed ({why}); \
             add more rows",
            report.file
        )));
    }
    let worst = report
        .missing_by_column
        .iter()
        .filter(|(_, &n)| n > 0)
        .max_by_key(|(_, &n)| n);
    let advice = match worst {
        Some((name, n)) => format!(
            "column {} is missing on {n} of {} rows, so fill it in or leave it out",
            quoted(name),
            report.rows_read
        ),
        None => "add more rows".to_string(),
    };
    Err(Error::input(format!(
        "{}: only {remaining} row(s) remain after dropping rows with a missing value in a used \
         column, but at least {needed} are needed ({why}); {advice}",
        report.file
    )))
}

/// Keeps the entries whose `keep` flag is set, in place.
fn retain_rows(values: &mut Vec<f64>, keep: &[bool]) {
    let mut write = 0;
    for read in 0..values.len() {
        if keep[read] {
            values[write] = values[read];
            write += 1;
        }
    }
    values.truncate(write);
    values.shrink_to_fit();
}

/// For every column that repeats another exactly (same value on every row), the position of the
/// column it repeats: the target if it is one of them, else the first in file order.
fn duplicates(columns: &[(usize, Vec<f64>)], target: usize) -> HashMap<usize, usize> {
    let mut order: Vec<&(usize, Vec<f64>)> = columns.iter().collect();
    // The target goes first, so that it is the one kept.
    order.sort_by_key(|(j, _)| (*j != target, *j));
    let mut by_hash: HashMap<u64, Vec<usize>> = HashMap::new();
    let mut copies = HashMap::new();
    for (position, (j, values)) in order.iter().enumerate() {
        let bucket = by_hash.entry(column_hash(values)).or_default();
        match bucket.iter().find(|&&p| order[p].1 == *values) {
            Some(&p) => {
                copies.insert(*j, order[p].0);
            }
            None => bucket.push(position),
        }
    }
    copies
}

fn column_hash(values: &[f64]) -> u64 {
    let mut hasher = std::collections::hash_map::DefaultHasher::new();
    for &v in values {
        // -0.0 == 0.0, so both must hash alike.
        (if v == 0.0 { 0.0f64 } else { v })
            .to_bits()
            .hash(&mut hasher);
    }
    hasher.finish()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn raw(names: &[&str], cells: Vec<Vec<Option<f64>>>) -> RawTable {
        RawTable::from_cells(
            "t.csv",
            names.iter().map(|s| s.to_string()).collect(),
            cells,
        )
    }

    fn some(values: &[f64]) -> Vec<Option<f64>> {
        values.iter().map(|&v| Some(v)).collect()
    }

    #[test]
    fn duplicate_columns_are_left_out_and_the_target_is_kept() {
        let table = raw(
            &["a", "y", "b", "c", "y2"],
            vec![
                some(&[1.0, 2.0, 3.0, 4.0]),
                some(&[0.0, 5.0, 1.0, 2.0]),
                some(&[1.0, 2.0, 3.0, 4.0]),
                some(&[4.0, 3.0, 2.0, 1.0]),
                some(&[-0.0, 5.0, 1.0, 2.0]),
            ],
        );
        let (table, report) = table
            .prepare(
                &[0, 1, 2, 3, 4],
                1,
                vec![],
                FileFacts::default(),
                &LoadOptions::default(),
            )
            .unwrap();
        assert_eq!(table.names(), ["a", "y", "c"]);
        let expected: BTreeMap<String, String> = [("b", "a"), ("y2", "y")]
            .iter()
            .map(|(k, v)| (k.to_string(), v.to_string()))
            .collect();
        assert_eq!(report.duplicate_columns, expected);
    }

    #[test]
    fn rows_missing_a_used_value_are_dropped_in_place() {
        let table = raw(
            &["a", "y", "z"],
            vec![
                vec![Some(1.0), None, Some(3.0), Some(4.0), Some(5.0)],
                some(&[1.0, 2.0, 3.0, 5.0, 4.0]),
                vec![None, None, None, None, Some(1.0)],
            ],
        );
        let (table, report) = table
            .prepare(
                &[0, 1],
                1,
                vec!["z".into()],
                FileFacts::default(),
                &LoadOptions::default(),
            )
            .unwrap();
        assert_eq!(table.column(0), [1.0, 3.0, 4.0, 5.0]);
        assert_eq!(table.column(1), [1.0, 3.0, 5.0, 4.0]);
        assert_eq!(
            (report.rows_read, report.rows_used, report.rows_dropped),
            (5, 4, 1)
        );
        assert_eq!(report.excluded_columns, ["z"]);
    }

    #[test]
    fn missing_error_policy_names_the_first_missing_cell() {
        let table = raw(
            &["a", "y"],
            vec![
                vec![Some(1.0), Some(2.0), Some(3.0), None],
                vec![Some(1.0), Some(2.0), None, Some(4.0)],
            ],
        );
        let options = LoadOptions {
            missing_policy: MissingPolicy::Error,
            ..LoadOptions::default()
        };
        let error = table
            .prepare(&[0, 1], 1, vec![], FileFacts::default(), &options)
            .unwrap_err()
            .to_string();
        assert!(error.contains("line 4, column 'y'"), "{error}");
        assert!(error.contains("--missing error"), "{error}");
    }

    #[test]
    fn too_few_rows_say_how_many_are_needed_and_why() {
        let table = raw(&["a", "y"], vec![some(&[1.0, 2.0]), some(&[2.0, 1.0])]);
        let error = table
            .prepare(
                &[0, 1],
                1,
                vec![],
                FileFacts::default(),
                &LoadOptions::default(),
            )
            .unwrap_err()
            .to_string();
        assert!(error.contains("2 data row(s)"), "{error}");
        assert!(error.contains("at least 3"), "{error}");
        assert!(error.contains("nearest neighbour"), "{error}");
    }
}
