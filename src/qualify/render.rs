//! `qualification.md` and `qualification.html`: the record rendered through minijinja templates
//! embedded at build time (`templates/qualification.*`). Both read the one [`Record`]; nothing is
//! computed while rendering. Markdown values are escaped for Markdown, HTML values for HTML.

use super::record::{CaseResult, Record};
use super::Group;
use crate::error::{Error, Result};
use crate::report::html::CONTENT_SECURITY_POLICY;
use minijinja::value::Serde;
use minijinja::{context, Environment, Value};
use serde::Serialize;

const MARKDOWN_TEMPLATE: &str = include_str!("../../templates/qualification.md");
const HTML_TEMPLATE: &str = include_str!("../../templates/qualification.html");
const CSS: &str = concat!(
    include_str!("../../templates/palette.css"),
    include_str!("../../templates/qualification.css")
);

/// One compared quantity as shown.
#[derive(Serialize)]
struct Row {
    quantity: String,
    expected: String,
    observed: String,
    tolerance: String,
    exact: bool,
    passed: bool,
}

/// One case as shown.
#[derive(Serialize)]
struct Shown<'a> {
    id: &'a str,
    checks: &'a str,
    source: &'a str,
    passed: bool,
    seconds: f64,
    rows: Vec<Row>,
}

/// The cases of one group.
#[derive(Serialize)]
struct GroupShown<'a> {
    title: &'static str,
    passed: usize,
    failed: usize,
    cases: Vec<Shown<'a>>,
}

fn shown(case: &CaseResult) -> Shown<'_> {
    Shown {
        id: &case.id,
        checks: &case.checks,
        source: &case.source,
        passed: case.passed,
        seconds: case.seconds,
        rows: case
            .measured
            .iter()
            .map(|m| Row {
                quantity: m.quantity.clone(),
                expected: m.comparison.expected_text(),
                observed: m.comparison.observed_text(),
                tolerance: m.comparison.tolerance_text(),
                exact: m.comparison.is_exact(),
                passed: m.passed,
            })
            .collect(),
    }
}

fn groups(record: &Record) -> Vec<GroupShown<'_>> {
    let mut groups: Vec<GroupShown<'_>> = Vec::new();
    for case in &record.cases {
        if groups.last().is_none_or(|g| g.title != case.group.title()) {
            groups.push(GroupShown {
                title: case.group.title(),
                passed: 0,
                failed: 0,
                cases: Vec::new(),
            });
        }
        let group = groups.last_mut().expect("pushed above");
        match case.passed {
            true => group.passed += 1,
            false => group.failed += 1,
        }
        group.cases.push(shown(case));
    }
    groups
}

fn record_context(record: &Record) -> Value {
    let failed: Vec<String> = record
        .cases
        .iter()
        .filter(|c| !c.passed)
        .map(|c| c.id.clone())
        .collect();
    context! {
        summary => Value::from(Serde(&record.summary)),
        passed => record.passed(),
        complete => record.complete(),
        failed_ids => failed,
        tool => record.run.tool.describe(),
        version => record.run.tool.version.clone(),
        build => if record.run.tool.build.is_empty() { "not built from a checkout".to_string() } else { record.run.tool.build.clone() },
        method => record.run.tool.method.clone(),
        platform => Value::from(Serde(&record.run.platform)),
        started_utc => record.run.started_utc.clone(),
        duration => format!("{:.1}", record.run.duration_seconds),
        operator => record.run.operator.name.clone(),
        operator_from => record.run.operator.from.clone(),
        command_line => record
            .run
            .command_line
            .iter()
            .map(|a| crate::reproduce::shell_quote(a))
            .collect::<Vec<_>>()
            .join(" "),
        groups => Value::from(Serde(groups(record))),
        seal => Value::from_safe_string(record.seal.clone()),
        structure_group => Group::Structure.title(),
    }
}

fn render(
    mut env: Environment<'static>,
    name: &'static str,
    template: &'static str,
    record: &Record,
) -> Result<String> {
    env.add_filter("seconds", |v: f64| format!("{v:.2}"));
    env.add_template(name, template)
        .map_err(|e| Error::internal(format!("{name} template: {e}")))?;
    env.get_template(name)
        .and_then(|t| t.render(record_context(record)))
        .map_err(|e| Error::internal(format!("cannot render {name}: {e:#}")))
}

/// `qualification.md`.
pub fn render_markdown(record: &Record) -> Result<String> {
    let mut env = Environment::new();
    crate::report::markdown::markdown_environment(&mut env);
    let text = render(env, "qualification.md", MARKDOWN_TEMPLATE, record)?;
    Ok(format!("{}\n", text.trim_end()))
}

/// `qualification.html`: self-contained (inline CSS, no script, no network), printable.
pub fn render_html(record: &Record) -> Result<String> {
    let mut env = Environment::new();
    crate::report::markdown::template_syntax(&mut env);
    env.add_global("css", Value::from_safe_string(CSS.to_string()));
    env.add_global("csp", CONTENT_SECURITY_POLICY);
    render(env, "qualification.html", HTML_TEMPLATE, record)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::qualify::record::tests::{facts, result};

    #[test]
    fn a_failed_record_says_failed_plainly_in_both_renderings() {
        let record = Record::new(
            vec![result("ok-case", 0.5), result("bad-case", 0.6)],
            facts(2),
        );
        let md = render_markdown(&record).unwrap();
        let html = render_html(&record).unwrap();
        for text in [&md, &html] {
            assert!(text.contains("FAILED"), "{text}");
            assert!(!text.contains("PASSED"), "{text}");
            assert!(text.contains("1 of 2"), "{text}");
        }
        assert!(md.contains("bad-case"));
        assert!(html.contains("class=\"verdict failed\""), "{html}");
    }

    #[test]
    fn a_passed_record_says_passed_and_a_selection_says_it_is_partial() {
        let record = Record::new(vec![result("ok-case", 0.5)], facts(1));
        let md = render_markdown(&record).unwrap();
        assert!(md.contains("PASSED") && !md.contains("FAILED"), "{md}");
        assert!(!md.contains("Partial run"), "{md}");
        let partial = Record::new(vec![result("ok-case", 0.5)], facts(40));
        let md = render_markdown(&partial).unwrap();
        assert!(md.contains("Partial run"), "{md}");
        assert!(render_html(&partial).unwrap().contains("Partial run"));
    }

    #[test]
    fn user_text_is_escaped_in_html() {
        let mut record = Record::new(vec![result("a", 0.5)], facts(1));
        record.run.operator.name = Some("<script>x</script>".into());
        let html = render_html(&record).unwrap();
        assert!(!html.contains("<script>x"), "{html}");
        assert!(html.contains("&lt;script&gt;"));
    }
}
