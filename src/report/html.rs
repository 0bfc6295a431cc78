//! `dossier.html`: the Markdown dossier turned into HTML with pulldown-cmark, in a self-contained
//! shell (inline CSS from `templates/palette.css` and `templates/dossier.css`, inline SVG figures, no script, no fonts, no
//! network). Raw HTML in the Markdown is printed as text, never as markup; the only markup not
//! produced by pulldown-cmark are the figures, put where the template wrote a figure marker (an
//! HTML comment, which escaped user text cannot form since `<` is always escaped).

use super::figures::{figure, xml_escape};
use super::markdown::render_markdown;
use super::Renderer;
use crate::error::Result;
use crate::finding::Finding;
use pulldown_cmark::{CowStr, Event, HeadingLevel, Options, Parser, Tag};

const CSS: &str = concat!(
    include_str!("../../templates/palette.css"),
    include_str!("../../templates/dossier.css")
);

/// Level-2 sections (counted from 1) that start a new printed page.
const PAGE_BREAK_BEFORE: [usize; 6] = [3, 6, 10, 11, 13, 15];

/// The Content-Security-Policy: nothing may load; only the inline style sheet applies.
pub const CONTENT_SECURITY_POLICY: &str = "default-src 'none'; style-src 'unsafe-inline'; \
     img-src data:; script-src 'none'; base-uri 'none'; form-action 'none'";

/// The HTML dossier.
pub struct Html;

impl Renderer for Html {
    fn file_name(&self) -> &'static str {
        "dossier.html"
    }

    fn render(&self, finding: &Finding) -> Result<String> {
        let markdown = render_markdown(finding)?;
        Ok(html_document(finding, &markdown))
    }
}

/// The whole HTML document for the dossier text `markdown` of `finding`.
pub fn html_document(finding: &Finding, markdown: &str) -> String {
    let body = markdown_to_html(markdown, |name| figure(name, finding));
    // The file name is the user's: hidden characters (a bidirectional override) are shown as
    // escapes, not obeyed. Column names cannot hold them (the reader refuses such names).
    let study = format!(
        "{} in {}",
        finding.target,
        crate::text::escaped(&finding.data.file)
    );
    let header = format!(
        "forebear dossier · {study} · digest {}",
        &finding.digest[..finding.digest.len().min(16)]
    );
    let running = format!(
        "@page {{ @top-left {{ content: \"{}\"; }} }}\n",
        css_string(&header)
    );
    format!(
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\" />\n\
         <meta http-equiv=\"Content-Security-Policy\" content=\"{CONTENT_SECURITY_POLICY}\" />\n\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\" />\n\
         <meta name=\"generator\" content=\"forebear {}\" />\n\
         <title>Dossier: {}</title>\n<style>\n{CSS}{running}</style>\n</head>\n<body>\n\
         <header class=\"running\">{}</header>\n<main>\n{body}</main>\n</body>\n</html>\n",
        xml_escape(&finding.tool.version),
        xml_escape(&study),
        xml_escape(&header),
    )
}

/// Converts Markdown to HTML; `figure(name)` supplies the SVG for a `<!-- figure:name -->` marker.
pub fn markdown_to_html(markdown: &str, figure: impl Fn(&str) -> Option<String>) -> String {
    let mut section = 0usize;
    let events = Parser::new_ext(markdown, Options::ENABLE_TABLES).map(|event| match event {
        Event::Html(text) => match figure_marker(&text) {
            Some(name) => Event::Html(CowStr::from(match figure(name) {
                Some(svg) => format!("<figure class=\"figure\">\n{svg}</figure>\n"),
                None => "<p class=\"no-figure\">(nothing to draw)</p>\n".to_string(),
            })),
            None => Event::Text(text),
        },
        Event::InlineHtml(text) => Event::Text(text),
        Event::Start(Tag::Heading {
            level: HeadingLevel::H2,
            attrs,
            ..
        }) => {
            section += 1;
            let classes = if PAGE_BREAK_BEFORE.contains(&section) {
                vec![CowStr::from("major")]
            } else {
                Vec::new()
            };
            Event::Start(Tag::Heading {
                level: HeadingLevel::H2,
                id: Some(CowStr::from(format!("section-{section}"))),
                classes,
                attrs,
            })
        }
        other => other,
    });
    let mut html = String::new();
    pulldown_cmark::html::push_html(&mut html, events);
    html
}

/// The figure name of a marker line `<!-- figure:name -->`.
fn figure_marker(text: &str) -> Option<&str> {
    let name = text
        .trim()
        .strip_prefix("<!-- figure:")?
        .strip_suffix("-->")?
        .trim();
    name.chars().all(|c| c.is_ascii_lowercase()).then_some(name)
}

/// `text` as the inside of a CSS string: everything but letters, digits and spaces as hex escapes,
/// so no quote, backslash or `<` can end the string or the style element.
fn css_string(text: &str) -> String {
    text.chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == ' ' {
                c.to_string()
            } else {
                format!("\\{:06x} ", c as u32)
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn raw_html_in_markdown_is_text() {
        let html = markdown_to_html(
            "<script>alert(1)</script>\n\ninline <img src=x onerror=alert(1)> here\n",
            |_| None,
        );
        assert!(!html.contains("<script"), "{html}");
        assert!(!html.contains("<img"), "{html}");
        assert!(html.contains("&lt;script&gt;"), "{html}");
    }

    #[test]
    fn only_template_markers_become_figures() {
        let html = markdown_to_html(
            "<!-- figure:trace -->\n\n\\<!-- figure:trace --\\>\n",
            |_| Some("<svg></svg>\n".into()),
        );
        assert_eq!(html.matches("<svg>").count(), 1, "{html}");
    }

    #[test]
    fn css_strings_cannot_escape() {
        assert_eq!(
            css_string("a\"b</style>"),
            "a\\000022 b\\00003c \\00002f style\\00003e "
        );
    }
}
