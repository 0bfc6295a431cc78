//! Renderers: each turns one [`Finding`] into one file. Nothing here recomputes statistics.

pub mod figures;
pub mod graph;
pub mod html;
pub mod json;
pub mod markdown;
pub mod svg_text;
pub mod tables;

use crate::error::Result;
use crate::finding::Analysed;
use crate::finding::Finding;
use crate::manifest::{Manifest, MANIFEST_FILE};
use crate::output::Claim;

/// One output format.
pub trait Renderer {
    /// File name inside the output directory.
    fn file_name(&self) -> &'static str;
    /// The file's text.
    fn render(&self, finding: &Finding) -> Result<String>;
}

/// Every renderer of the dossier, in writing order.
pub fn renderers() -> Vec<Box<dyn Renderer>> {
    vec![
        Box::new(json::Json),
        Box::new(markdown::Markdown),
        Box::new(html::Html),
        Box::new(tables::StabilityCsv),
        Box::new(tables::TraceCsv),
    ]
}

/// The edges of the member graph that come from mutual membership: `edges` lists them first,
/// then the pairs the collider test joined.
pub fn mutual_edges(finding: &Finding) -> &[[String; 2]] {
    let joined = finding.collider_tests.iter().filter(|t| t.joined).count();
    &finding.edges[..finding.edges.len().saturating_sub(joined)]
}

/// The edges of the member graph that the collider test added (calibrated rule).
pub fn collider_edges(finding: &Finding) -> &[[String; 2]] {
    &finding.edges[mutual_edges(finding).len()..]
}

/// Writes the dossier into the claimed output folder as one step: every file is rendered first,
/// then written into a staging folder beside the output folder and renamed into place
/// ([`crate::output`]). A failure at any point leaves no partial output.
///
/// The manifest (`manifest.json`) is written with them and holds the SHA-256 of every other file.
/// Returns where a former dossier it replaced is kept.
pub fn write_dossier(analysed: &Analysed, claim: Claim) -> Result<Option<std::path::PathBuf>> {
    let mut files = render_all(&analysed.finding)?;
    let manifest = Manifest::new(analysed, &files);
    files.push((MANIFEST_FILE, manifest.to_text()));
    claim.write_files(&files)
}

/// Every file of the dossier except the manifest, rendered, in writing order.
pub fn render_all(finding: &Finding) -> Result<Vec<(&'static str, String)>> {
    renderers()
        .iter()
        .map(|r| r.render(finding).map(|text| (r.file_name(), text)))
        .collect()
}
