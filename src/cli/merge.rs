//! `forebear merge PARTS... --out DIR`: combines shards computed with `--replicate-range`.

use crate::analysis::{merge_parts, read_parts, Progress};
use crate::error::Result;
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
    let parts = read_parts(&args.parts)?;
    progress.say(&format!("merging {} parts", parts.len()));
    let analysed = merge_parts(parts, argv)?;
    crate::report::write_dossier(&analysed, claim)?;
    let finding = &analysed.finding;
    super::out::line(&format!(
        "{}: {} — {}",
        finding.target,
        finding.outcome.name(),
        args.out.join("dossier.md").display()
    ))?;
    Ok(())
}
