//! `result.json`: the finding for machines.

use super::Renderer;
use crate::error::{Error, Result};
use crate::finding::Finding;

/// Pretty-printed JSON of the whole finding, fields in model order.
pub struct Json;

impl Renderer for Json {
    fn file_name(&self) -> &'static str {
        "result.json"
    }

    fn render(&self, finding: &Finding) -> Result<String> {
        serde_json::to_string_pretty(finding)
            .map(|mut text| {
                text.push('\n');
                text
            })
            .map_err(|e| Error::internal(format!("cannot serialise the result: {e}")))
    }
}
