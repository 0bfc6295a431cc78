//! `dossier.md`: the finding in words, from the template `templates/summary.md`.

use super::Renderer;
use crate::error::{Error, Result};
use crate::finding::Finding;
use minijinja::{context, Environment};

const TEMPLATE: &str = include_str!("../../templates/summary.md");

/// The Markdown summary.
pub struct Markdown;

impl Renderer for Markdown {
    fn file_name(&self) -> &'static str {
        "dossier.md"
    }

    fn render(&self, finding: &Finding) -> Result<String> {
        let mut env = Environment::new();
        env.set_syntax(
            minijinja::syntax::SyntaxConfig::builder()
                .trim_blocks(true)
                .lstrip_blocks(true)
                .keep_trailing_newline(true)
                .build()
                .expect("static syntax settings"),
        );
        env.add_filter("fixed", fixed);
        env.add_template("summary.md", TEMPLATE)
            .map_err(|e| Error::internal(format!("summary template: {e}")))?;
        let template = env.get_template("summary.md").expect("just added");
        template
            .render(context! { f => minijinja::Value::from(minijinja::value::Serde(finding)), reproduce => reproduce_command(finding) })
            .map_err(|e| Error::internal(format!("cannot render the summary: {e:#}")))
    }
}

/// A number with a fixed count of decimals (`{{ x | fixed(3) }}`).
fn fixed(value: f64, digits: Option<usize>) -> String {
    format!("{value:.*}", digits.unwrap_or(3))
}

/// The shell command that re-runs this analysis.
pub fn reproduce_command(finding: &Finding) -> String {
    let s = &finding.settings;
    let mut parts = vec![
        "forebear analyze".to_string(),
        shell_quote(&finding.run.data_path),
        format!("--target {}", shell_quote(&s.target)),
        format!("--seed {}", s.seed),
        format!("--scaling {}", s.scaling.name()),
        format!("--alpha {}", s.alpha),
        format!("--replicates {}", s.resampling.count),
        format!("--resample {}", s.resampling.kind.name()),
        format!("--stability-threshold {}", s.stability_threshold),
    ];
    if s.resampling.kind == crate::resample::PlanKind::Subsample {
        parts.push(format!("--fraction {}", s.resampling.fraction));
    }
    if !s.excluded.is_empty() {
        parts.push(format!("--exclude {}", shell_quote(&s.excluded.join(","))));
    }
    parts.join(" ")
}

fn shell_quote(text: &str) -> String {
    if text
        .chars()
        .all(|c| c.is_ascii_alphanumeric() || "-_./,=".contains(c))
    {
        text.to_string()
    } else {
        format!("'{}'", text.replace('\'', r"'\''"))
    }
}
