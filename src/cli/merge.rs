//! `forebear merge PARTS... --out DIR`: combines shards computed with `--replicate-range`.

use crate::analysis::{merge_parts, Partial, Progress};
use crate::error::{Error, Result};
use crate::output::{Claim, Kind};
use clap::Args;
use std::path::PathBuf;

/// Arguments of `merge`.
#[derive(Debug, Args)]
pub struct MergeArgs {
    /// Partial results: `partial.json` files or the folders that hold them.
    #[arg(required = true)]
    pub parts: Vec<PathBuf>,
    /// Output folder for the merged result.
    #[arg(long, default_value = "forebear-output")]
    pub out: PathBuf,
    /// Replace an existing output folder that holds a previous forebear result.
    #[arg(long)]
    pub force: bool,
}

/// Runs `merge`.
pub fn run(args: MergeArgs, argv: Vec<String>, progress: &dyn Progress) -> Result<()> {
    let claim = Claim::take(&args.out, Kind::Dossier, args.force, progress)?;
    let mut parts = Vec::new();
    for path in &args.parts {
        let file = if path.is_dir() {
            path.join("partial.json")
        } else {
            path.clone()
        };
        let text = std::fs::read_to_string(&file).map_err(|e| {
            Error::input(format!(
                "cannot read partial result '{}': {e}",
                file.display()
            ))
        })?;
        let part: Partial = serde_json::from_str(&text).map_err(|e| {
            Error::input(format!(
                "{}, line {}, column {}: not a forebear partial result ({e})",
                file.display(),
                e.line(),
                e.column()
            ))
        })?;
        parts.push((file.display().to_string(), part));
    }
    progress.say(&format!("merging {} parts", parts.len()));
    let analysed = merge_parts(parts, argv)?;
    crate::report::write_dossier(&analysed, claim)?;
    let finding = &analysed.finding;
    println!(
        "{}",
        crate::text::for_terminal(&format!(
            "{}: {} — {}",
            finding.target,
            finding.outcome.name(),
            args.out.join("dossier.md").display()
        ))
    );
    Ok(())
}
