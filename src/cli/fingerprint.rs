//! `forebear fingerprint DATA`: both fingerprints of a data file and its shape.

use crate::data::fingerprint::content_index;
use crate::data::read_data;
use crate::error::{Error, Result};
use clap::Args;
use std::path::PathBuf;

/// Arguments of `fingerprint`.
#[derive(Debug, Args)]
pub struct FingerprintArgs {
    /// The data file: CSV, Parquet, SAS transport (XPT version 5) or a workbook, told by its
    /// first bytes.
    pub data: PathBuf,
    /// How the file is read, as for `analyze` (it decides the parsed content).
    #[command(flatten)]
    pub reader: super::reader::ReaderArgs,
    /// Print JSON instead of text.
    #[arg(long)]
    pub json: bool,
}

/// Runs `fingerprint`.
pub fn run(args: FingerprintArgs) -> Result<()> {
    let options = args.reader.load_options()?;
    let (table, facts) = read_data(&args.data, &options)?;
    let format = facts.format.as_deref().unwrap_or("csv");
    let (bytes, size) = (facts.sha256.as_str(), facts.size_bytes);
    let content = content_index(&table);
    if args.json {
        let mut value = serde_json::json!({
            "file": args.data.display().to_string(),
            "format": format,
            "size_bytes": size,
            "sha256": bytes,
            "content_sha256": content.sha256,
            "rows": content.rows,
            "columns": content.columns.len(),
            "reader": options,
        });
        if let Some(sheet) = &facts.sheet {
            value["sheet"] = serde_json::json!(sheet);
        }
        let text = serde_json::to_string_pretty(&value)
            .map_err(|e| Error::internal(format!("fingerprint: {e}")))?;
        super::out::json(&text)?;
    } else {
        super::out::line(&format!(
            "file            {}",
            crate::data::source::display_name(&args.data)
        ))?;
        match &facts.sheet {
            Some(sheet) => super::out::line(&format!("format          {format}, sheet {sheet}"))?,
            None => super::out::line(&format!("format          {format}"))?,
        }
        super::out::line(&format!("bytes sha256    {bytes}"))?;
        super::out::line(&format!("content sha256  {}", content.sha256))?;
        super::out::line(&format!(
            "shape           {} data rows × {} columns, {size} bytes",
            content.rows,
            content.columns.len()
        ))?;
    }
    Ok(())
}
