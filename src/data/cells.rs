//! One cell's text → a number, a missing value, or a reason why it is neither; and what a column's
//! unreadable cells have in common, so that one message can name every such column at once.

use std::collections::BTreeSet;

/// Why a cell is not a usable number.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CellProblem {
    /// Text that is no number in any notation the reader knows.
    NotANumber,
    /// `inf`, `nan` or a number too large for a 64-bit float.
    NotFinite,
    /// A number other than zero too close to zero for a 64-bit float (`1e-400`), which would
    /// read as 0: refused like a number too large, rather than changed silently.
    Underflow,
    /// `3,14` read without `--decimal-comma`.
    DecimalComma,
    /// `3.14` (or `1.234,5`) read with `--decimal-comma`.
    PointWithDecimalComma,
}

impl CellProblem {
    /// The problem as the end of "the value '…' is …".
    pub fn describe(self) -> &'static str {
        match self {
            CellProblem::NotANumber => "not a number",
            CellProblem::NotFinite => "not a finite number",
            CellProblem::Underflow => {
                "a number too close to zero for a 64-bit float (it would read as 0; the smallest is about \
                 4.9e-324)"
            }
            CellProblem::DecimalComma => "a number with a decimal comma",
            CellProblem::PointWithDecimalComma => {
                "a number with a point although --decimal-comma is set (points as thousands \
                 separators are not read)"
            }
        }
    }
}

/// How cells are read: the missing-value tokens and the decimal separator.
pub struct CellReader<'a> {
    missing: &'a [String],
    decimal_comma: bool,
}

impl<'a> CellReader<'a> {
    /// A reader for these tokens (compared after trimming spaces) and decimal separator.
    pub fn new(missing: &'a [String], decimal_comma: bool) -> Self {
        CellReader {
            missing,
            decimal_comma,
        }
    }

    /// A cell is missing (`Ok(None)`), a finite number, or a problem.
    pub fn parse(&self, cell: &str) -> Result<Option<f64>, CellProblem> {
        let text = cell.trim();
        // A token may itself look like a number (-999), so tokens are checked first.
        if self.missing.iter().any(|t| t == text) {
            return Ok(None);
        }
        if self.decimal_comma {
            if text.contains('.') && is_number_text(&text.replace(',', "")) {
                return Err(CellProblem::PointWithDecimalComma);
            }
            if text.bytes().filter(|&b| b == b',').count() <= 1 {
                let swapped = text.replace(',', ".");
                if is_number_text(&swapped) {
                    return finite(&swapped);
                }
            }
        } else if is_number_text(text) {
            return finite(text);
        } else if text.bytes().filter(|&b| b == b',').count() == 1
            && is_number_text(&text.replace(',', "."))
        {
            return Err(CellProblem::DecimalComma);
        }
        match text.to_ascii_lowercase().trim_start_matches(['+', '-']) {
            "inf" | "infinity" | "nan" => Err(CellProblem::NotFinite),
            _ => Err(CellProblem::NotANumber),
        }
    }
}

fn finite(text: &str) -> Result<Option<f64>, CellProblem> {
    match text.parse::<f64>() {
        Ok(value) if value == 0.0 && !is_zero_literal(text) => Err(CellProblem::Underflow),
        Ok(value) if value.is_finite() => Ok(Some(value)),
        Ok(_) => Err(CellProblem::NotFinite),
        Err(_) => Err(CellProblem::NotANumber),
    }
}

/// Whether a number's digits before its exponent are all zeros (`0`, `-0.000`, `0e5`).
fn is_zero_literal(text: &str) -> bool {
    let mantissa = text.split(['e', 'E']).next().unwrap_or(text);
    !mantissa.bytes().any(|b| (b'1'..=b'9').contains(&b))
}

/// Plain decimal notation: digits, sign, point and exponent only (no `inf`, `nan`, hex, commas).
pub fn is_number_text(text: &str) -> bool {
    !text.is_empty()
        && text
            .bytes()
            .all(|b| b.is_ascii_digit() || matches!(b, b'.' | b'-' | b'+' | b'e' | b'E'))
        && text.parse::<f64>().is_ok()
}

/// Distinct texts kept per column, enough to tell categories from stray cells.
const TEXTS_KEPT: usize = 12;
/// Longest text kept, in characters.
const TEXT_CHARS: usize = 60;

/// The unreadable cells of one column: the first one, how many, and a few distinct texts.
#[derive(Clone, Debug, PartialEq)]
pub struct ColumnIssues {
    /// File line of the first unreadable cell.
    pub first_line: u64,
    /// Its text, trimmed and shortened.
    pub first_value: String,
    /// Why it is unreadable.
    pub first_problem: CellProblem,
    /// How many cells of the column are unreadable.
    pub cells: usize,
    /// Up to `TEXTS_KEPT` distinct texts among them (`more_texts` says whether there are others).
    pub texts: BTreeSet<String>,
    /// True when more distinct texts were seen than are kept.
    pub more_texts: bool,
    /// True when every unreadable cell is plain text (`NotANumber`), as in a column of categories.
    pub all_text: bool,
}

impl ColumnIssues {
    /// Starts the record with the first unreadable cell.
    pub fn first(line: u64, text: &str, problem: CellProblem) -> Self {
        let mut issues = ColumnIssues {
            first_line: line,
            first_value: shorten(text.trim()),
            first_problem: problem,
            cells: 0,
            texts: BTreeSet::new(),
            more_texts: false,
            all_text: true,
        };
        issues.add(text, problem);
        issues
    }

    /// Counts one more unreadable cell.
    pub fn add(&mut self, text: &str, problem: CellProblem) {
        self.cells += 1;
        self.all_text &= problem == CellProblem::NotANumber;
        let text = shorten(text.trim());
        if self.texts.len() < TEXTS_KEPT {
            self.texts.insert(text);
        } else if !self.texts.contains(&text) {
            self.more_texts = true;
        }
    }
}

fn shorten(text: &str) -> String {
    text.chars().take(TEXT_CHARS).collect()
}

/// A text in quotes for a message, on one line, of bounded length, with hidden characters
/// escaped ([`crate::text::quoted`]).
pub fn quoted(text: &str) -> String {
    crate::text::quoted(text)
}

/// Joins the lines of a library's message so that the error stays one line.
pub fn one_line(text: &str) -> String {
    text.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// `a`, `a or b`, `a, b or c`.
pub fn or_list(items: &[String]) -> String {
    match items.split_last() {
        None => "none".to_string(),
        Some((last, [])) => last.clone(),
        Some((last, rest)) => format!("{} or {last}", rest.join(", ")),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tokens() -> Vec<String> {
        ["", "NA"].iter().map(|s| s.to_string()).collect()
    }

    #[test]
    fn cells_parse_numbers_and_missing_tokens() {
        let missing = tokens();
        let cells = CellReader::new(&missing, false);
        assert_eq!(cells.parse(" 1.5e3 "), Ok(Some(1500.0)));
        assert_eq!(cells.parse("-2"), Ok(Some(-2.0)));
        assert_eq!(cells.parse("+.5"), Ok(Some(0.5)));
        assert_eq!(cells.parse("+7"), Ok(Some(7.0)));
        assert_eq!(cells.parse("7."), Ok(Some(7.0)));
        assert_eq!(cells.parse("2E-2"), Ok(Some(0.02)));
        assert_eq!(cells.parse("NA"), Ok(None));
        assert_eq!(cells.parse(""), Ok(None));
        assert_eq!(cells.parse("inf"), Err(CellProblem::NotFinite));
        assert_eq!(cells.parse("-Infinity"), Err(CellProblem::NotFinite));
        assert_eq!(cells.parse("NaN"), Err(CellProblem::NotFinite));
        assert_eq!(cells.parse("1e400"), Err(CellProblem::NotFinite));
        assert_eq!(cells.parse("1e-400"), Err(CellProblem::Underflow));
        assert_eq!(cells.parse("-2.5e-330"), Err(CellProblem::Underflow));
        assert_eq!(cells.parse("5e-324"), Ok(Some(5e-324)));
        assert_eq!(cells.parse("-0.000e-400"), Ok(Some(-0.0)));
        assert_eq!(cells.parse("0e999"), Ok(Some(0.0)));
        assert_eq!(cells.parse("abc"), Err(CellProblem::NotANumber));
        assert_eq!(cells.parse("1,5"), Err(CellProblem::DecimalComma));
        assert_eq!(cells.parse("1,234,5"), Err(CellProblem::NotANumber));
        assert_eq!(cells.parse("0x10"), Err(CellProblem::NotANumber));
        assert_eq!(cells.parse("1e"), Err(CellProblem::NotANumber));
        assert_eq!(cells.parse("+"), Err(CellProblem::NotANumber));
    }

    #[test]
    fn decimal_comma_reads_commas_and_refuses_points() {
        let missing = tokens();
        let cells = CellReader::new(&missing, true);
        assert_eq!(cells.parse("3,25"), Ok(Some(3.25)));
        assert_eq!(cells.parse("-0,5e2"), Ok(Some(-50.0)));
        assert_eq!(cells.parse("12"), Ok(Some(12.0)));
        assert_eq!(cells.parse("3.25"), Err(CellProblem::PointWithDecimalComma));
        assert_eq!(
            cells.parse("1.234,5"),
            Err(CellProblem::PointWithDecimalComma)
        );
        assert_eq!(cells.parse("1,2,3"), Err(CellProblem::NotANumber));
        assert_eq!(cells.parse("NA"), Ok(None));
    }

    #[test]
    fn column_issues_tell_categories_from_other_problems() {
        let mut issues = ColumnIssues::first(2, " north ", CellProblem::NotANumber);
        issues.add("south", CellProblem::NotANumber);
        issues.add("north", CellProblem::NotANumber);
        assert_eq!(issues.cells, 3);
        assert_eq!(issues.first_value, "north");
        assert_eq!(issues.texts.len(), 2);
        assert!(issues.all_text && !issues.more_texts);
        issues.add("inf", CellProblem::NotFinite);
        assert!(!issues.all_text);
        for k in 0..20 {
            issues.add(&format!("t{k}"), CellProblem::NotANumber);
        }
        assert_eq!(issues.texts.len(), TEXTS_KEPT);
        assert!(issues.more_texts);
    }

    #[test]
    fn quoted_values_stay_on_one_line_and_short() {
        assert_eq!(quoted("a\nb"), "'a\\nb'");
        assert_eq!(
            quoted(&"x".repeat(250)),
            format!("'{}… (250 bytes)'", "x".repeat(200))
        );
    }

    #[test]
    fn or_lists_read_as_prose() {
        let items = |v: &[&str]| v.iter().map(|s| s.to_string()).collect::<Vec<_>>();
        assert_eq!(or_list(&items(&[])), "none");
        assert_eq!(or_list(&items(&["a"])), "a");
        assert_eq!(or_list(&items(&["a", "b", "c"])), "a, b or c");
    }
}
