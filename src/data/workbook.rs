//! Spreadsheet workbooks (Office Open XML `.xlsx`, ECMA-376; the legacy binary `.xls`; and the
//! other workbook formats `calamine` reads), one sheet: the first row holds the column names, the
//! rows below it the numbers. The stored values are read, not the displayed ones: a number is its
//! 64-bit float, an empty cell is missing, a boolean is 0 or 1, a text cell is read as a CSV cell
//! would be (a number written as text, a missing-value token, or refused naming the cell), a date
//! is refused.

use super::cells::{quoted, CellReader};
use super::load::LoadOptions;
use crate::error::{Error, Result};
use calamine::{open_workbook_auto_from_rs, Data, Reader};
use std::io::Cursor;

/// The names, the cells by column (`None`: missing), the sheet read and the sheet row of each
/// data row (1-based), of one sheet of a workbook.
pub type Workbook = (Vec<String>, Vec<Vec<Option<f64>>>, String, Vec<u64>);

/// Reads the sheet `options.sheet` (or the first) of the workbook in `bytes`; rows whose cells are
/// all empty are skipped, as blank lines of a CSV file are.
pub fn read(bytes: Vec<u8>, file: &str, options: &LoadOptions) -> Result<Workbook> {
    let mut workbook = open_workbook_auto_from_rs(Cursor::new(bytes)).map_err(|_| {
        Error::input(format!(
            "{file}: the file looks like a ZIP archive or an office document, but it is no \
             spreadsheet workbook forebear can read; extract the data file, or export the sheet \
             as CSV (UTF-8)"
        ))
    })?;
    let sheets = workbook.sheet_names();
    let sheet = match &options.sheet {
        Some(wanted) => sheets
            .iter()
            .find(|s| *s == wanted)
            .cloned()
            .ok_or_else(|| {
                let listed: Vec<String> = sheets.iter().map(|s| quoted(s)).collect();
                Error::input(format!(
                    "{file}: the workbook has no sheet {}; its sheets are {}",
                    quoted(wanted),
                    listed.join(", ")
                ))
            })?,
        None => sheets
            .first()
            .cloned()
            .ok_or_else(|| Error::input(format!("{file}: the workbook has no sheets")))?,
    };
    let range = workbook.worksheet_range(&sheet).map_err(|e| {
        Error::input(format!(
            "{file}: the sheet {} cannot be read ({}); export it as CSV (UTF-8)",
            quoted(&sheet),
            super::cells::one_line(&e.to_string())
        ))
    })?;
    let place = format!("{file}, sheet {}", quoted(&sheet));
    let Some((top, left)) = range.start() else {
        return Err(Error::input(format!(
            "{place} is empty; it needs a first row of column names followed by rows of numbers"
        )));
    };
    let mut rows = range.rows();
    let header = rows.next().unwrap_or(&[]);
    let mut names = Vec::with_capacity(header.len());
    for (j, cell) in header.iter().enumerate() {
        let at = reference(top, left + j as u32);
        names.push(match cell {
            Data::String(s) => s.trim().to_string(),
            Data::Empty => String::new(),
            Data::Int(i) => i.to_string(),
            Data::Float(x) => x.to_string(),
            other => {
                return Err(Error::input(format!(
                    "{place}, cell {at}: the column name {} is not text; write the column names \
                     as text in the first row",
                    quoted(&other.to_string())
                )))
            }
        });
    }
    let cells = CellReader::new(&options.missing_tokens, false);
    let mut columns: Vec<Vec<Option<f64>>> = vec![Vec::new(); names.len()];
    let mut lines = Vec::new();
    for (i, row) in rows.enumerate() {
        let r = top + 1 + i as u32;
        if row.iter().all(|cell| matches!(cell, Data::Empty)) {
            continue;
        }
        lines.push(u64::from(r) + 1);
        for (j, column) in columns.iter_mut().enumerate() {
            let cell = row.get(j).unwrap_or(&Data::Empty);
            let at = || reference(r, left + j as u32);
            let value = match cell {
                Data::Empty => None,
                Data::Float(x) => Some(*x),
                Data::Int(v) => Some(*v as f64),
                Data::Bool(b) => Some(f64::from(u8::from(*b))),
                Data::String(text) => cells.parse(text).map_err(|problem| {
                    Error::input(format!(
                        "{place}, cell {}, column {}: the value {} is {}; write a number, or leave \
                         the cell empty for a missing value",
                        at(),
                        quoted(&names[j]),
                        quoted(text),
                        problem.describe()
                    ))
                })?,
                Data::DateTime(_) | Data::DateTimeIso(_) | Data::DurationIso(_) => {
                    return Err(Error::input(format!(
                        "{place}, cell {}, column {}: the cell holds a date or time ({cell}); \
                         forebear reads numbers only, so drop the column or convert it to numbers",
                        at(),
                        quoted(&names[j])
                    )))
                }
                Data::Error(e) => {
                    return Err(Error::input(format!(
                        "{place}, cell {}, column {}: the cell holds the formula error {e}; fix \
                         the formula or clear the cell",
                        at(),
                        quoted(&names[j])
                    )))
                }
            };
            column.push(value);
        }
    }
    Ok((names, columns, sheet, lines))
}

/// The A1-style reference of the cell at 0-based `row` and `column`: `C17`.
pub fn reference(row: u32, column: u32) -> String {
    let mut letters = Vec::new();
    let mut n = column + 1;
    while n > 0 {
        let digit = (n - 1) % 26;
        letters.push(b'A' + digit as u8);
        n = (n - 1) / 26;
    }
    letters.reverse();
    format!("{}{}", String::from_utf8_lossy(&letters), row + 1)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn references_count_columns_in_letters() {
        assert_eq!(reference(0, 0), "A1");
        assert_eq!(reference(16, 2), "C17");
        assert_eq!(reference(0, 25), "Z1");
        assert_eq!(reference(0, 26), "AA1");
        assert_eq!(reference(9, 27), "AB10");
        assert_eq!(reference(0, 701), "ZZ1");
        assert_eq!(reference(0, 702), "AAA1");
    }
}
