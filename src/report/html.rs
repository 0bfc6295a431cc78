//! `dossier.html`: the Markdown dossier turned into HTML with pulldown-cmark, in a self-contained
//! shell (inline CSS from `templates/palette.css` and `templates/dossier.css`, inline SVG figures, no script, no fonts, no
//! network). Raw HTML in the Markdown is printed as text, never as markup; the only markup not
//! produced by pulldown-cmark are the figures, put where the template wrote a figure marker (an
//! HTML comment, which escaped user text cannot form since `<` is always escaped).

use super::figures::{figure, xml_escape};
use super::markdown::render_markdown_for_html;
use super::Renderer;
use crate::error::Result;
use crate::finding::Finding;
use pulldown_cmark::{CowStr, Event, HeadingLevel, Options, Parser, Tag};

const CSS: &str = concat!(
    include_str!("../../templates/palette.css"),
    include_str!("../../templates/dossier.css")
);

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
        let markdown = render_markdown_for_html(finding)?;
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
        crate::text::escaped(&crate::reproduce::data_shown(finding))
    );
    let header = running_header(finding, &study);
    let digest = format!("digest {}", &finding.digest[..finding.digest.len().min(16)]);
    let running = format!(
        "@page {{ @top-left {{ content: \"{}\"; }} @top-right {{ content: \"{}\"; }} }}\n",
        css_string(&header),
        css_string(&digest)
    );
    format!(
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\" />\n\
         <meta http-equiv=\"Content-Security-Policy\" content=\"{CONTENT_SECURITY_POLICY}\" />\n\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\" />\n\
         <meta name=\"generator\" content=\"forebear {}\" />\n\
         <title>{}</title>\n<style>\n{CSS}{running}</style>\n</head>\n<body>\n\
         <header class=\"running\">{} · {}</header>\n<main>\n{body}</main>\n</body>\n</html>\n",
        xml_escape(&finding.tool.version),
        xml_escape(
            &match finding.run.document.as_ref().and_then(|d| d.title.as_ref()) {
                Some(title) => title.clone(),
                None => format!("Dossier: {study}"),
            }
        ),
        xml_escape(&header),
        xml_escape(&digest),
    )
}

/// Converts Markdown to HTML; `figure(name)` supplies the SVG for a `<!-- figure:name -->` marker.
/// The other markers a template may write: `<!-- box:name -->` … `<!-- /box -->` (a boxed
/// section of class `name`: the status box, the sign-off page) and `<!-- page -->` (a printed page
/// starts here).
pub fn markdown_to_html(markdown: &str, figure: impl Fn(&str) -> Option<String>) -> String {
    let mut section = 0usize;
    let events = Parser::new_ext(markdown, Options::ENABLE_TABLES).map(|event| match event {
        Event::Html(text) => match marker(&text) {
            Some(Marker::Figure(name)) => Event::Html(CowStr::from(match figure(name) {
                Some(svg) => format!("<figure class=\"figure\">\n{svg}</figure>\n"),
                None => "<p class=\"no-figure\">(nothing to draw)</p>\n".to_string(),
            })),
            Some(Marker::BoxStart(name)) => {
                Event::Html(CowStr::from(format!("<section class=\"{name}\">\n")))
            }
            Some(Marker::BoxEnd) => Event::Html(CowStr::from("</section>\n")),
            Some(Marker::Page) => Event::Html(CowStr::from("<div class=\"new-page\"></div>\n")),
            None => Event::Text(text),
        },
        Event::InlineHtml(text) => Event::Text(text),
        Event::Start(Tag::Heading {
            level: HeadingLevel::H2,
            attrs,
            classes,
            ..
        }) => {
            section += 1;
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

/// The running header of every printed page: the document's identifier, version and title when
/// document control was given, else what the dossier is about.
fn running_header(finding: &Finding, study: &str) -> String {
    let document = finding.run.document.clone().unwrap_or_default();
    let mut parts = Vec::new();
    if let Some(id) = &document.id {
        parts.push(match &document.version {
            Some(version) => format!("{id} version {version}"),
            None => id.clone(),
        });
    } else if let Some(version) = &document.version {
        parts.push(format!("version {version}"));
    }
    parts.push(match &document.title {
        Some(title) => title.clone(),
        None => format!("forebear dossier · {study}"),
    });
    parts.join(" · ")
}

/// A marker line the template writes (an HTML comment: escaped user text cannot form one).
#[derive(Debug, PartialEq)]
enum Marker<'a> {
    Figure(&'a str),
    BoxStart(&'a str),
    BoxEnd,
    Page,
}

/// The marker of a line `<!-- figure:name -->`, `<!-- box:name -->`, `<!-- /box -->` or
/// `<!-- page -->`; names are lowercase letters and hyphens.
fn marker(text: &str) -> Option<Marker<'_>> {
    let inner = text
        .trim()
        .strip_prefix("<!--")?
        .strip_suffix("-->")?
        .trim();
    let named = |name: &str| {
        (!name.is_empty() && name.chars().all(|c| c.is_ascii_lowercase() || c == '-')).then_some(())
    };
    match inner {
        "/box" => Some(Marker::BoxEnd),
        "page" => Some(Marker::Page),
        _ => {
            if let Some(name) = inner.strip_prefix("figure:") {
                named(name).map(|_| Marker::Figure(name))
            } else if let Some(name) = inner.strip_prefix("box:") {
                named(name).map(|_| Marker::BoxStart(name))
            } else {
                None
            }
        }
    }
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
    fn box_and_page_markers_become_sections_and_breaks() {
        let html = markdown_to_html(
            "<!-- box:status -->\n\n**Outcome:** x.\n\n<!-- /box -->\n\n<!-- page -->\n\n<!-- box:Bad -->\n",
            |_| None,
        );
        assert!(
            html.contains(
                "<section class=\"status\">\n<p><strong>Outcome:</strong> x.</p>\n</section>"
            ),
            "{html}"
        );
        assert!(html.contains("<div class=\"new-page\"></div>"), "{html}");
        assert!(html.contains("&lt;!-- box:Bad --&gt;"), "{html}");
    }

    #[test]
    fn css_strings_cannot_escape() {
        assert_eq!(
            css_string("a\"b</style>"),
            "a\\000022 b\\00003c \\00002f style\\00003e "
        );
    }
}
