//! `stability.csv` and `trace.csv`: the frequencies and the selection traces as plain tables for
//! other analysis tools.
//!
//! Spreadsheet formula injection: a text cell (a column name, a list of names) that begins with
//! `=`, `+`, `-`, `@`, a tab or a carriage return gets a leading apostrophe, which spreadsheets show
//! as text instead of evaluating. Numeric cells are written by forebear from numbers and are never
//! changed (so `-0.123` stays a number); a text cell that is itself a plain decimal number, such as a
//! column named `-1`, is left alone too, since it cannot hold a formula.
//!
//! A text that itself begins with an apostrophe gets one more, so that no two texts are written
//! alike: `=a` is written `'=a` and a column really named `'=a` is written `''=a`. Reading a cell
//! back is therefore exact: a leading apostrophe is always the guard's, and is removed once.

use super::Renderer;
use crate::error::{Error, Result};
use crate::finding::Finding;

/// `stability.csv`: one row per candidate column.
pub struct StabilityCsv;

/// `trace.csv`: one row per candidate at every step of every selection.
pub struct TraceCsv;

/// A cell of a table: text from input, or a number forebear computed.
enum Cell {
    Text(String),
    Number(String),
}

fn text(s: &str) -> Cell {
    Cell::Text(s.to_string())
}

fn number(x: impl ToString) -> Cell {
    Cell::Number(x.to_string())
}

/// Neutralises a text cell against formula evaluation (see the module comment).
pub fn neutralise(cell: &str) -> String {
    let risky = cell.starts_with(['=', '+', '-', '@', '\t', '\r']) && !is_plain_number(cell);
    if risky || cell.starts_with('\'') {
        format!("'{cell}")
    } else {
        cell.to_string()
    }
}

fn is_plain_number(cell: &str) -> bool {
    let digits = cell.strip_prefix(['-', '+']).unwrap_or(cell);
    !digits.is_empty()
        && digits.chars().any(|c| c.is_ascii_digit())
        && digits.chars().all(|c| c.is_ascii_digit() || c == '.')
        && digits.matches('.').count() <= 1
}

fn write_csv(header: &[&str], rows: Vec<Vec<Cell>>) -> Result<String> {
    let mut writer = csv::WriterBuilder::new()
        .terminator(csv::Terminator::Any(b'\n'))
        .from_writer(Vec::new());
    let fail = |e: csv::Error| Error::internal(format!("cannot write a CSV table: {e}"));
    writer.write_record(header).map_err(fail)?;
    for row in rows {
        let cells: Vec<String> = row
            .into_iter()
            .map(|c| match c {
                Cell::Text(s) => neutralise(&s),
                Cell::Number(s) => s,
            })
            .collect();
        writer.write_record(&cells).map_err(fail)?;
    }
    let bytes = writer
        .into_inner()
        .map_err(|e| Error::internal(format!("cannot write a CSV table: {e}")))?;
    String::from_utf8(bytes).map_err(|e| Error::internal(format!("CSV table: {e}")))
}

impl Renderer for StabilityCsv {
    fn file_name(&self) -> &'static str {
        "stability.csv"
    }

    fn render(&self, finding: &Finding) -> Result<String> {
        let header = [
            "column",
            "markov_boundary_frequency",
            "parent_frequency",
            "mean_selection_step",
            "stable_boundary_member",
            "stable_parent",
            "replicates",
            "threshold",
        ];
        let mut rows = Vec::new();
        if let Some(st) = &finding.stability {
            for (name, freq) in &st.markov_boundary {
                let parents = st.parents.get(name).copied().unwrap_or(0.0);
                rows.push(vec![
                    text(name),
                    number(freq),
                    number(parents),
                    st.mean_selection_step
                        .get(name)
                        .map_or(Cell::Number(String::new()), number),
                    number(*freq >= st.threshold),
                    number(parents >= st.threshold),
                    number(st.replicates),
                    number(st.threshold),
                ]);
            }
        }
        write_csv(&header, rows)
    }
}

impl Renderer for TraceCsv {
    fn file_name(&self) -> &'static str {
        "trace.csv"
    }

    /// Forward steps (every candidate; the step's test on the row of its best candidate, whose
    /// largest T_n it tests), then the shrink phase (phase `shrink`, `step` is the round).
    fn render(&self, finding: &Finding) -> Result<String> {
        let header = [
            "response",
            "step",
            "conditioning_set",
            "candidate",
            "t_n",
            "numerator",
            "denominator",
            "chosen",
            "p_value",
            "permutations",
            "phase",
            "removed",
        ];
        let mut rows = Vec::new();
        let selections = std::iter::once((&finding.target, &finding.trace, &finding.shrink)).chain(
            finding
                .markov_boundary
                .iter()
                .filter_map(|m| finding.boundaries.get(m).map(|b| (m, &b.steps, &b.shrink))),
        );
        for (response, steps, shrink) in selections {
            for step in steps {
                for (rank, candidate) in step.candidates.iter().enumerate() {
                    let test = step.test.as_ref().filter(|_| rank == 0);
                    rows.push(vec![
                        text(response),
                        number(step.step),
                        text(&name_list(&step.conditioning)),
                        text(&candidate.column),
                        number(candidate.t_n),
                        number(candidate.numerator),
                        number(step.denominator),
                        number(step.chosen.as_ref() == Some(&candidate.column)),
                        optional(test.map(|t| t.p_value)),
                        optional(test.map(|t| t.permutations)),
                        number("forward"),
                        Cell::Number(String::new()),
                    ]);
                }
            }
            for t in shrink {
                rows.push(vec![
                    text(response),
                    number(t.round),
                    text(&name_list(&t.conditioning)),
                    text(&t.member),
                    optional(t.t_n),
                    number(t.numerator),
                    number(t.denominator),
                    Cell::Number(String::new()),
                    optional(t.test.as_ref().map(|t| t.p_value)),
                    optional(t.test.as_ref().map(|t| t.permutations)),
                    number("shrink"),
                    number(t.removed),
                ]);
            }
        }
        write_csv(&header, rows)
    }
}

/// A set of column names in one cell, separated by `;`; a `;` or `\` inside a name is preceded by
/// `\`, so that the set {`a`, `b`} (`a;b`) and a column named `a;b` (`a\;b`) are written apart.
fn name_list(names: &[String]) -> String {
    let escaped: Vec<String> = names
        .iter()
        .map(|n| n.replace('\\', "\\\\").replace(';', "\\;"))
        .collect();
    escaped.join(";")
}

/// A number, or an empty cell when there is none.
fn optional(value: Option<impl ToString>) -> Cell {
    value.map_or(Cell::Number(String::new()), number)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formulas_are_neutralised_and_numbers_are_not() {
        assert_eq!(neutralise("=HYPERLINK(\"x\")"), "'=HYPERLINK(\"x\")");
        assert_eq!(neutralise("+cmd"), "'+cmd");
        assert_eq!(neutralise("-2+3"), "'-2+3");
        assert_eq!(neutralise("@SUM(A1)"), "'@SUM(A1)");
        assert_eq!(neutralise("-0.123"), "-0.123");
        assert_eq!(neutralise("plain"), "plain");
    }

    #[test]
    fn a_set_of_names_and_a_name_holding_the_separator_are_written_apart() {
        let names = |v: &[&str]| v.iter().map(|s| s.to_string()).collect::<Vec<_>>();
        assert_eq!(name_list(&names(&["a", "b"])), "a;b");
        assert_eq!(name_list(&names(&["a;b"])), "a\\;b");
        assert_eq!(name_list(&names(&["a\\", "b"])), "a\\\\;b");
        assert_ne!(
            name_list(&names(&["a\\;b"])),
            name_list(&names(&["a\\", "b"]))
        );
    }

    #[test]
    fn the_formula_guard_never_writes_two_texts_alike() {
        assert_eq!(neutralise("=a"), "'=a");
        assert_eq!(neutralise("'=a"), "''=a");
        assert_eq!(neutralise("'plain"), "''plain");
        let texts = ["=a", "'=a", "''=a", "a", "'a", "-1", "'-1", "+x", "'+x"];
        let written: std::collections::BTreeSet<String> =
            texts.iter().map(|t| neutralise(t)).collect();
        assert_eq!(written.len(), texts.len());
    }
}
