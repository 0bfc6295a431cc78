//! The one message that names every used column holding text instead of numbers, with what to do
//! about each kind: text categories, free text, or stray cells among numbers.

use super::cells::{or_list, quoted, CellProblem, ColumnIssues};
use super::load::{LoadOptions, RawTable};
use crate::error::{Error, Result};

/// How many unreadable columns are described one by one in a message.
const DESCRIBED: usize = 12;
/// How many column names an `--exclude` suggestion lists.
const SUGGESTED: usize = 100;

impl RawTable {
    /// Refuses the used columns that hold text, all in one message.
    pub(super) fn check_numeric(
        &self,
        used: &[usize],
        target: usize,
        options: &LoadOptions,
    ) -> Result<()> {
        let bad: Vec<usize> = used
            .iter()
            .copied()
            .filter(|&j| self.issues[j].is_some())
            .collect();
        let Some(&first) = bad.first() else {
            return Ok(());
        };
        let kind = |j: usize| {
            let issues = self.issues[j].as_ref().expect("filtered on issues");
            let numbers = self.columns[j].iter().filter(|v| !v.is_nan()).count();
            (issues, TextKind::of(issues, numbers))
        };
        let leave_out: Vec<&str> = bad
            .iter()
            .filter(|&&j| j != target)
            .map(|&j| self.names[j].as_str())
            .collect();
        let exclude_hint = exclude_suggestion(&leave_out);
        let target_hint = if bad.contains(&target) {
            format!(
                "; the target {} must hold numbers",
                quoted(&self.names[target])
            )
        } else {
            String::new()
        };
        if bad.len() == 1 {
            let (issues, kind) = kind(first);
            let place = format!(
                "{}, line {}, column {}",
                self.file,
                issues.first_line,
                quoted(&self.names[first])
            );
            let exclude = if first == target {
                "choose a numeric target".to_string()
            } else {
                format!("leave it out with {exclude_hint}")
            };
            return Err(Error::input(match kind {
                TextKind::Categories => format!(
                    "{place}: the column holds text categories ({}), not numbers; encode it as \
                     indicator (0/1) columns, one per category, or {exclude}",
                    texts(issues)
                ),
                TextKind::Text => format!(
                    "{place}: the column holds text ({}), not numbers; {exclude}",
                    texts(issues)
                ),
                TextKind::Cells => {
                    let more = match issues.cells - 1 {
                        0 => String::new(),
                        1 => " (1 more cell of the column is unreadable too)".to_string(),
                        n => format!(" ({n} more cells of the column are unreadable too)"),
                    };
                    format!(
                        "{place}: the value {} is {}; {}{more}",
                        quoted(&issues.first_value),
                        issues.first_problem.describe(),
                        advice(issues.first_problem, options)
                    )
                }
            }));
        }
        let described: Vec<String> = bad
            .iter()
            .take(DESCRIBED)
            .map(|&j| {
                let (issues, kind) = kind(j);
                let name = quoted(&self.names[j]);
                match kind {
                    TextKind::Categories => format!(
                        "{name} holds text categories ({}) from line {}",
                        texts(issues),
                        issues.first_line
                    ),
                    TextKind::Text => format!(
                        "{name} holds text ({}) from line {}",
                        texts(issues),
                        issues.first_line
                    ),
                    TextKind::Cells => format!(
                        "{name} has the value {} on line {} ({}{})",
                        quoted(&issues.first_value),
                        issues.first_line,
                        issues.first_problem.describe(),
                        match issues.cells {
                            1 => String::new(),
                            n => format!("; {n} unreadable cells"),
                        }
                    ),
                }
            })
            .collect();
        let others = match bad.len().saturating_sub(DESCRIBED) {
            0 => String::new(),
            n => format!("; and {n} more"),
        };
        let mut fixes: Vec<String> = Vec::new();
        let kinds: Vec<(TextKind, CellProblem)> = bad
            .iter()
            .map(|&j| {
                let (issues, kind) = kind(j);
                (kind, issues.first_problem)
            })
            .collect();
        if kinds.iter().any(|(k, _)| *k != TextKind::Cells) {
            fixes.push("encode text categories as indicator (0/1) columns".to_string());
        }
        for problem in [
            CellProblem::NotANumber,
            CellProblem::DecimalComma,
            CellProblem::PointWithDecimalComma,
            CellProblem::Underflow,
        ] {
            let matches = |p: CellProblem| match problem {
                CellProblem::NotANumber => {
                    matches!(p, CellProblem::NotANumber | CellProblem::NotFinite)
                }
                other => p == other,
            };
            if kinds
                .iter()
                .any(|&(k, p)| k == TextKind::Cells && matches(p))
            {
                fixes.push(match problem {
                    CellProblem::NotANumber => format!(
                        "write numbers or missing-value tokens ({}) in place of stray text",
                        options.describe_tokens()
                    ),
                    other => advice(other, options),
                });
            }
        }
        if !leave_out.is_empty() {
            fixes.push(format!("leave the columns out with {exclude_hint}"));
        }
        Err(Error::input(format!(
            "{}: {} used columns are not numeric: {}{others}; {}{target_hint}",
            self.file,
            bad.len(),
            described.join("; "),
            or_list(&fixes)
        )))
    }
}

/// What a column's unreadable cells look like.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum TextKind {
    /// No numbers, a few distinct texts: a categorical variable.
    Categories,
    /// No numbers, many distinct texts: identifiers or free text.
    Text,
    /// Numbers with some unreadable cells among them.
    Cells,
}

impl TextKind {
    fn of(issues: &ColumnIssues, numbers: usize) -> TextKind {
        match (numbers, issues.all_text, issues.more_texts) {
            (0, true, false) => TextKind::Categories,
            (0, true, true) => TextKind::Text,
            _ => TextKind::Cells,
        }
    }
}

fn texts(issues: &ColumnIssues) -> String {
    const SHOWN: usize = 4;
    let mut shown: Vec<String> = issues.texts.iter().take(SHOWN).map(|t| quoted(t)).collect();
    let more = issues.texts.len() > SHOWN || issues.more_texts;
    if more {
        shown.push("…".to_string());
    }
    shown.join(", ")
}

fn advice(problem: CellProblem, options: &LoadOptions) -> String {
    match problem {
        CellProblem::NotANumber | CellProblem::NotFinite => format!(
            "write a number there or one of the missing-value tokens ({}), or list the text with \
             --missing-tokens",
            options.describe_tokens()
        ),
        CellProblem::DecimalComma => "if the file writes decimals with commas, read it with \
             --decimal-comma (and --delimiter ';' unless the values are quoted); otherwise remove \
             the thousands separators"
            .to_string(),
        CellProblem::PointWithDecimalComma => "write every decimal with a comma, or read the file \
             without --decimal-comma"
            .to_string(),
        CellProblem::Underflow => "write 0 there if zero is meant, or express the column in \
             another unit so that its values fit a 64-bit float"
            .to_string(),
    }
}

/// `--exclude a,b,c`, or for very many columns a count and the first names.
fn exclude_suggestion(names: &[&str]) -> String {
    if names.len() <= SUGGESTED {
        return format!("--exclude {}", shell_word(&names.join(",")));
    }
    format!(
        "--exclude (all {} of them; the first {SUGGESTED}: {}), or name the columns to use with \
         --candidates",
        names.len(),
        shell_word(&names[..SUGGESTED].join(","))
    )
}

/// The text as one word for a POSIX shell: as it is when it is plain, else in single quotes.
fn shell_word(text: &str) -> String {
    let plain = |c: char| c.is_ascii_alphanumeric() || "_.,-+/:@%".contains(c);
    if !text.is_empty() && text.chars().all(plain) {
        text.to_string()
    } else {
        format!("'{}'", text.replace('\'', "'\\''"))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn many_names_are_suggested_in_part() {
        let names: Vec<String> = (0..150).map(|k| format!("c{k}")).collect();
        let refs: Vec<&str> = names.iter().map(String::as_str).collect();
        let hint = exclude_suggestion(&refs);
        assert!(
            hint.contains("all 150") && hint.contains("--candidates"),
            "{hint}"
        );
        assert!(hint.contains("c99") && !hint.contains("c100"), "{hint}");
        assert_eq!(exclude_suggestion(&["a", "b"]), "--exclude a,b");
        assert_eq!(
            exclude_suggestion(&["<b>", "it's"]),
            "--exclude '<b>,it'\\''s'"
        );
    }
}
