//! How a received data file differs from the analysed one, told from the analysed file's content
//! index (see [`super::fingerprint`]) and the received file itself: columns added, removed, renamed
//! or reordered; rows added or removed; the first differing row and column.

use super::fingerprint::ContentIndex;
use super::load::RawTable;

/// Rows looked ahead when deciding whether a row was inserted or removed.
const LOOKAHEAD: usize = 3;

/// Sentences describing how `received` (with its parsed table) differs from `analysed`. Empty
/// when the content hashes agree.
pub fn describe_difference(
    analysed: &ContentIndex,
    received: &ContentIndex,
    table: &RawTable,
) -> Vec<String> {
    if analysed.sha256 == received.sha256 {
        return Vec::new();
    }
    let mut lines = column_differences(analysed, received);
    if analysed.rows != received.rows {
        lines.push(format!(
            "rows: the analysed file has {} data rows, the received file {}",
            analysed.rows, received.rows
        ));
    }
    if analysed.columns.len() == received.columns.len() {
        lines.extend(first_row_difference(analysed, received, table));
    } else {
        lines.push(
            "with a different number of columns, rows cannot be compared cell by cell".into(),
        );
    }
    if lines.is_empty() {
        lines.push(
            "the content differs, but no row or column could be singled out (the locating tags \
             agree although the content hashes do not)"
                .into(),
        );
    }
    lines
}

fn column_differences(analysed: &ContentIndex, received: &ContentIndex) -> Vec<String> {
    let (a, b) = (&analysed.columns, &received.columns);
    if a == b {
        return Vec::new();
    }
    let mut lines = Vec::new();
    let mut a_sorted = a.clone();
    let mut b_sorted = b.clone();
    a_sorted.sort();
    b_sorted.sort();
    if a_sorted == b_sorted {
        lines.push(format!(
            "columns: the same names in another order (analysed: {}; received: {})",
            list(a),
            list(b)
        ));
        return lines;
    }
    let removed: Vec<String> = a.iter().filter(|n| !b.contains(n)).cloned().collect();
    let added: Vec<String> = b.iter().filter(|n| !a.contains(n)).cloned().collect();
    if a.len() == b.len() {
        for (j, (old, new)) in a.iter().zip(b).enumerate() {
            if old != new && removed.contains(old) && added.contains(new) {
                let same_values = analysed.block_tags.get(j) == received.block_tags.get(j);
                lines.push(format!(
                    "column {} '{old}' is named '{new}' in the received file{}",
                    j + 1,
                    if same_values {
                        " (its values are unchanged)"
                    } else {
                        " and its values differ too"
                    }
                ));
            }
        }
        return lines;
    }
    if !removed.is_empty() {
        lines.push(format!(
            "columns missing from the received file: {}",
            list(&removed)
        ));
    }
    if !added.is_empty() {
        lines.push(format!(
            "columns the analysed file did not have: {}",
            list(&added)
        ));
    }
    lines
}

fn list(names: &[String]) -> String {
    names
        .iter()
        .map(|n| format!("'{n}'"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// The first place where the rows part, aligned by their tags.
fn first_row_difference(
    analysed: &ContentIndex,
    received: &ContentIndex,
    table: &RawTable,
) -> Option<String> {
    let same = |i: usize, k: usize| {
        analysed.row_tag(i).is_some() && analysed.row_tag(i) == received.row_tag(k)
    };
    let runs_together = |i: usize, k: usize| {
        (0..LOOKAHEAD).all(|d| {
            let (i, k) = (i + d, k + d);
            (i >= analysed.rows && k >= received.rows) || same(i, k)
        })
    };
    let start = (0..analysed.rows.min(received.rows))
        .find(|&r| !same(r, r))
        .unwrap_or(analysed.rows.min(received.rows));
    let line_of = |k: usize| table.lines.get(k).copied();
    if start == analysed.rows && start == received.rows {
        return None;
    }
    if start == received.rows {
        return Some(format!(
            "the received file ends after data row {start}; the analysed file continues to row {}",
            analysed.rows
        ));
    }
    if start == analysed.rows {
        return Some(format!(
            "the received file has {} more data row(s), from line {}",
            received.rows - start,
            line_of(start).unwrap_or(0)
        ));
    }
    if runs_together(start + 1, start) {
        return Some(format!(
            "data row {} of the analysed file is missing from the received file (it would come \
             before line {})",
            start + 1,
            line_of(start).unwrap_or(0)
        ));
    }
    if runs_together(start, start + 1) {
        return Some(format!(
            "the received file has an extra data row at line {}",
            line_of(start).unwrap_or(0)
        ));
    }
    let differing = (start..analysed.rows.min(received.rows))
        .filter(|&r| !same(r, r))
        .count();
    let block = start / analysed.block_rows.max(1);
    let columns: Vec<usize> = (0..analysed.columns.len())
        .filter(|&j| analysed.block_tag(j, block) != received.block_tag(j, block))
        .collect();
    let line = line_of(start).unwrap_or(0);
    let place = match columns.as_slice() {
        [j] => {
            let value = table
                .cell(*j, start)
                .map_or_else(|| "missing".to_string(), |v| format!("{v}"));
            format!(
                "first at data row {} (line {line}), column '{}', where the received file holds {value}",
                start + 1,
                received.columns[*j]
            )
        }
        [] => format!("first at data row {} (line {line})", start + 1),
        many => format!(
            "first at data row {} (line {line}), in one of the columns {}",
            start + 1,
            list(
                &many
                    .iter()
                    .map(|&j| received.columns[j].clone())
                    .collect::<Vec<_>>()
            )
        ),
    };
    Some(format!(
        "values: {differing} data row(s) differ from the analysed file, {place}"
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::fingerprint::content_index;

    fn table(names: &[&str], rows: &[Vec<f64>]) -> RawTable {
        RawTable::from_cells(
            "t.csv",
            names.iter().map(|s| s.to_string()).collect(),
            (0..names.len())
                .map(|j| rows.iter().map(|r| Some(r[j])).collect())
                .collect(),
        )
    }

    fn rows(n: usize) -> Vec<Vec<f64>> {
        (0..n)
            .map(|r| vec![r as f64, (r * r % 17) as f64])
            .collect()
    }

    fn describe(a: &RawTable, b: &RawTable) -> Vec<String> {
        describe_difference(&content_index(a), &content_index(b), b)
    }

    #[test]
    fn a_changed_cell_is_located_by_row_line_and_column() {
        let a = table(&["x", "y"], &rows(40));
        let mut changed = rows(40);
        changed[9][1] = 123.0;
        let lines = describe(&a, &table(&["x", "y"], &changed));
        assert_eq!(
            lines,
            vec![
                "values: 1 data row(s) differ from the analysed file, first at data row 10 \
                  (line 11), column 'y', where the received file holds 123"
            ]
        );
    }

    #[test]
    fn a_removed_row_is_named_as_missing() {
        let a = table(&["x", "y"], &rows(40));
        let mut fewer = rows(40);
        fewer.remove(20);
        let lines = describe(&a, &table(&["x", "y"], &fewer));
        assert_eq!(
            lines[0],
            "rows: the analysed file has 40 data rows, the received file 39"
        );
        assert!(
            lines[1].starts_with("data row 21 of the analysed file is missing"),
            "{lines:?}"
        );
    }

    #[test]
    fn a_renamed_column_with_unchanged_values_is_a_rename() {
        let a = table(&["x", "y"], &rows(10));
        let lines = describe(&a, &table(&["x", "why"], &rows(10)));
        assert_eq!(
            lines,
            vec!["column 2 'y' is named 'why' in the received file (its values are unchanged)"]
        );
    }

    #[test]
    fn identical_content_has_no_difference() {
        let a = table(&["x", "y"], &rows(10));
        assert!(describe(&a, &a.clone()).is_empty());
    }
}
