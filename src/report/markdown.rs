//! `dossier.md`: the finding in words, from the template `templates/dossier.md`, the single source of
//! the dossier's text (the HTML is this Markdown, converted).
//!
//! Safety: every value the template prints goes through [`escape_markdown`] unless a filter marks
//! it safe, so a column or file name can never become Markdown or HTML markup. Numbers are formatted
//! by filters here: T_n with 3 decimals, p-values in scientific notation below 0.001.

use super::Renderer;
use crate::error::{Error, Result};
use crate::finding::Finding;
use minijinja::value::Value;
use minijinja::{context, Environment};

const TEMPLATE: &str = include_str!("../../templates/dossier.md");

/// The Markdown dossier.
pub struct Markdown;

impl Renderer for Markdown {
    fn file_name(&self) -> &'static str {
        "dossier.md"
    }

    fn render(&self, finding: &Finding) -> Result<String> {
        render_markdown(finding)
    }
}

/// The dossier's Markdown text.
pub fn render_markdown(finding: &Finding) -> Result<String> {
    render_text(finding, false)
}

/// The dossier's Markdown text as `dossier.html` converts it: with the markers of the status box,
/// the sign-off page and the page breaks, and without the captions' pointers to the HTML.
pub fn render_markdown_for_html(finding: &Finding) -> Result<String> {
    render_text(finding, true)
}

fn render_text(finding: &Finding, html: bool) -> Result<String> {
    let env = environment()?;
    let template = env.get_template("dossier.md").expect("just added");
    let reproduce = crate::reproduce::reproduce_command(finding);
    let verify = crate::reproduce::verify_command(finding);
    template
        .render(context! {
            f => Value::from(minijinja::value::Serde(finding)),
            html => html,
            doc => Value::from(minijinja::value::Serde(&finding.run.document)),
            date => run_date(finding),
            // Inside a fenced code block nothing is Markdown, so the commands are printed as they
            // are; the fence outgrows any backtick run and the commands have no line breaks.
            reproduce_fence => Value::from_safe_string(fence_for(&format!("{reproduce}{verify}"))),
            reproduce => Value::from_safe_string(reproduce),
            data_file => crate::reproduce::data_shown(finding),
            from_stdin => crate::reproduce::data_from_stdin(finding),
            verify => Value::from_safe_string(verify),
            settings_sha256 => settings_sha256(finding),
            knowledge_claims => knowledge_claims(finding),
            knowledge_sha256 => finding.settings.knowledge.as_ref().map(crate::manifest::knowledge_sha256),
            other_members => other_members(finding),
            candidate_names => finding.parent_sets.iter().flatten().cloned().collect::<Vec<_>>(),
            calibrated => finding.settings.selection.is_calibrated(),
            stop_step => Value::from(minijinja::value::Serde(stop_step(finding))),
            stop_column => stop_step(finding).and_then(|s| s.candidates.first()).map(|c| c.column.clone()),
            mutual_edges => super::mutual_edges(finding).to_vec(),
            collider_edges => super::collider_edges(finding).to_vec(),
            block_rows => crate::measure::permutation::LOCAL_PERMUTATION_ROWS,
            column_rows => Value::from(minijinja::value::Serde(column_rows(finding))),
        })
        .map_err(|e| Error::internal(format!("cannot render the dossier: {e:#}")))
}

/// The parents claimed with the knowledge whose claim rests on it (not on the data alone).
fn knowledge_claims(finding: &Finding) -> Vec<String> {
    finding.with_knowledge.as_ref().map_or_else(Vec::new, |k| {
        k.claims
            .iter()
            .filter(|(_, b)| **b == crate::search::knowledge::Basis::DataAndKnowledge)
            .map(|(c, _)| c.clone())
            .collect()
    })
}

fn environment() -> Result<Environment<'static>> {
    let mut env = Environment::new();
    markdown_environment(&mut env);
    env.add_filter("fixed", fixed);
    env.add_filter("tn", |v: f64| fixed(v, Some(3)));
    env.add_filter("pval", p_value);
    env.add_filter("pct", percent);
    env.add_filter("names", names);
    env.add_filter("braced", |list: Vec<String>| {
        let shown: Vec<String> = list.iter().map(|n| crate::text::list_item(n)).collect();
        format!("{{{}}}", shown.join(", "))
    });
    env.add_template("dossier.md", TEMPLATE)
        .map_err(|e| Error::internal(format!("dossier template: {e}")))?;
    Ok(env)
}

/// Escapes text for Markdown (CommonMark with tables): punctuation that could start markup is
/// backslash-escaped, line breaks and other hidden characters are shown as escapes
/// ([`crate::text::hidden_character`]), so the text renders literally, `<` and `&` included, and
/// cannot end a table cell or reorder the text around it.
pub fn escape_markdown(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '\\' | '`' | '*' | '_' | '[' | ']' | '<' | '>' | '|' | '~' | '&' | '#' | '!' | '{'
            | '}' | '$' => {
                out.push('\\');
                out.push(c);
            }
            // Shown as escapes (`\n`, `\u{202e}`, with the backslash itself escaped for
            // Markdown), so that no line break, control or invisible character of a file name
            // reaches the text and no bidirectional control reorders it.
            c if crate::text::hidden_character(c).is_some() => {
                for e in crate::text::escaped(c.encode_utf8(&mut [0; 4])).chars() {
                    if matches!(e, '\\' | '{' | '}') {
                        out.push('\\');
                    }
                    out.push(e);
                }
            }
            c => out.push(c),
        }
    }
    out
}

/// A number with a fixed count of decimals (`{{ x | fixed(3) }}`).
fn fixed(value: f64, digits: Option<usize>) -> String {
    let text = format!("{value:.*}", digits.unwrap_or(3));
    // "-0.000" says nothing a reader needs; print zero.
    if text
        .trim_start_matches('-')
        .chars()
        .all(|c| c == '0' || c == '.')
    {
        text.trim_start_matches('-').to_string()
    } else {
        text
    }
}

/// A p-value: 3 decimals from 0.001 up, scientific notation below.
pub fn p_value(p: f64) -> String {
    if p >= 0.001 {
        format!("{p:.3}")
    } else if p < 1e-300 {
        "< 1e-300".to_string()
    } else {
        format!("{p:.1e}")
    }
}

/// A frequency in [0, 1] as a whole percentage.
fn percent(frequency: f64) -> String {
    format!("{:.0} %", frequency * 100.0)
}

/// A list of names joined by commas, or "none".
fn names(list: Vec<String>) -> String {
    if list.is_empty() {
        "none".to_string()
    } else {
        let shown: Vec<String> = list.iter().map(|n| crate::text::list_item(n)).collect();
        shown.join(", ")
    }
}

/// The template syntax of every output: block tags leave no blank lines behind.
pub fn template_syntax(env: &mut Environment<'_>) {
    env.set_syntax(
        minijinja::syntax::SyntaxConfig::builder()
            .trim_blocks(true)
            .lstrip_blocks(true)
            .keep_trailing_newline(true)
            .build()
            .expect("static syntax settings"),
    );
    // A name the result does not hold (a field renamed or removed) is an error, never a blank: a
    // stale template must not print a dash where a value belongs. `if` may still test a field
    // that is optional.
    env.set_undefined_behavior(minijinja::UndefinedBehavior::SemiStrict);
}

/// The template settings every Markdown output shares: [`template_syntax`], and every printed
/// value Markdown-escaped unless marked safe (none prints as a dash, undefined is an error).
pub fn markdown_environment(env: &mut Environment<'_>) {
    template_syntax(env);
    env.set_formatter(|out, _state, value| {
        if value.is_undefined() {
            return Err(minijinja::Error::new(
                minijinja::ErrorKind::UndefinedError,
                "the template prints a value the result does not hold",
            ));
        }
        let text = if value.is_safe() {
            value.to_string()
        } else if value.is_none() {
            "—".to_string()
        } else {
            escape_markdown(&value.to_string())
        };
        out.write_str(&text)
            .map_err(|e| minijinja::Error::new(minijinja::ErrorKind::WriteFailure, e.to_string()))
    });
}

/// The UTC day of the analysis (the only run fact in the dossier's text).
fn run_date(finding: &Finding) -> String {
    finding.run.started_utc.chars().take(10).collect()
}

/// SHA-256 of the canonical JSON of the settings (reader options and validated study), as the
/// manifest records it.
pub fn settings_sha256(finding: &Finding) -> String {
    crate::finding::settings_sha256(finding)
}

/// One row of the data section's column table.
#[derive(serde::Serialize, schemars::JsonSchema)]
struct ColumnRow<'a> {
    name: &'a str,
    /// `target`, `excluded`, `constant`, `duplicate` or `candidate`.
    role: &'static str,
    /// The column a duplicate repeats.
    original: Option<&'a str>,
    missing: usize,
    profile: Option<&'a crate::finding::ColumnProfile>,
}

/// The column table in name order, each row's facts looked up once (sets and maps, not scans of
/// lists, so that the dossier's length and time grow linearly with the number of columns).
fn column_rows(finding: &Finding) -> Vec<ColumnRow<'_>> {
    use std::collections::{BTreeMap, BTreeSet};
    let data = &finding.data;
    let excluded: BTreeSet<&str> = data.excluded_columns.iter().map(String::as_str).collect();
    let constant: BTreeSet<&str> = data.constant_columns.iter().map(String::as_str).collect();
    let profiles: BTreeMap<&str, &crate::finding::ColumnProfile> = finding
        .columns
        .iter()
        .map(|c| (c.name.as_str(), c))
        .collect();
    data.missing_by_column
        .iter()
        .map(|(name, &missing)| {
            let original = data.duplicate_columns.get(name).map(String::as_str);
            let role = if *name == finding.target {
                "target"
            } else if excluded.contains(name.as_str()) {
                "excluded"
            } else if constant.contains(name.as_str()) {
                "constant"
            } else if original.is_some() {
                "duplicate"
            } else {
                "candidate"
            };
            ColumnRow {
                name,
                role,
                original,
                missing,
                profile: profiles.get(name.as_str()).copied(),
            }
        })
        .collect()
}

/// Members of the target's boundary that are in no candidate parent set.
fn other_members(finding: &Finding) -> Vec<String> {
    finding
        .markov_boundary
        .iter()
        .filter(|m| !finding.parent_sets.iter().flatten().any(|p| p == *m))
        .cloned()
        .collect()
}

/// The step at which the target's forward selection stopped (its last step, when that admitted
/// nothing).
fn stop_step(finding: &Finding) -> Option<&crate::search::Step> {
    finding.trace.last().filter(|s| s.chosen.is_none())
}

/// A code fence longer than any run of backticks in `text`.
fn fence_for(text: &str) -> String {
    let longest = text.split(|c| c != '`').map(str::len).max().unwrap_or(0);
    "`".repeat((longest + 1).max(3))
}

#[cfg(test)]
mod tests {

    #[test]
    fn a_template_that_prints_a_field_the_result_lacks_fails_instead_of_printing_a_dash() {
        let mut env = Environment::new();
        markdown_environment(&mut env);
        env.add_template("t", "{{ r.seed }}|{{ r.gone }}").unwrap();
        let context = minijinja::context! { r => minijinja::context! { seed => 1 } };
        let error = env.get_template("t").unwrap().render(&context).unwrap_err();
        assert_eq!(error.kind(), minijinja::ErrorKind::UndefinedError);
        env.add_template("u", "{% if r.gone %}x{% endif %}{{ r.none }}")
            .unwrap();
        let context = minijinja::context! { r => minijinja::context! { none => () } };
        assert_eq!(
            env.get_template("u").unwrap().render(&context).unwrap(),
            "—"
        );
    }

    use super::*;

    #[test]
    fn hostile_text_is_escaped() {
        assert_eq!(
            escape_markdown("<img src=x onerror=alert(1)>"),
            r"\<img src=x onerror=alert(1)\>"
        );
        assert_eq!(escape_markdown("a|b*c\nd"), r"a\|b\*c\\nd");
        assert_eq!(escape_markdown("x2\u{202e}evil"), r"x2\\u\{202e\}evil");
    }

    #[test]
    fn numbers_have_the_stated_precision() {
        assert_eq!(fixed(0.12345, Some(3)), "0.123");
        assert_eq!(fixed(-0.0001, Some(3)), "0.000");
        assert_eq!(fixed(-0.0987, Some(3)), "-0.099");
        assert_eq!(p_value(0.0123), "0.012");
        assert_eq!(p_value(0.001), "0.001");
        assert_eq!(p_value(0.000123), "1.2e-4");
        assert_eq!(p_value(0.0), "< 1e-300");
    }

    #[test]
    fn fences_outgrow_backticks() {
        assert_eq!(fence_for("plain"), "```");
        assert_eq!(fence_for("a````b"), "`````");
    }
}
