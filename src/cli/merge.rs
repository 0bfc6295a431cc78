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
    /// Replace an existing output folder that holds a previous forebear result (kept beside it as
    /// NAME.replaced-<UTC time>).
    #[arg(long)]
    pub force: bool,
}

/// Runs `merge`.
pub fn run(
    args: MergeArgs,
    argv: Vec<String>,
    operator: &str,
    progress: &dyn Progress,
) -> Result<()> {
    let claim = Claim::take(&args.out, Kind::Dossier, args.force, progress)?;
    let parts = read_parts(&args.parts)?;
    progress.say(&format!("merging {} parts", parts.len()));
    let mut analysed = merge_parts(parts, argv)?;
    analysed.finding.run.operator = operator.to_string();
    let kept = crate::report::write_dossier(&analysed, claim)?;
    crate::dossier::say_kept(kept.as_deref(), progress);
    let finding = &analysed.finding;
    crate::trail::append(
        &crate::trail::Record::dossier("merge", finding, &args.out, kept.as_deref()),
        operator,
    )?;
    super::out::line(&format!(
        "{}: {} — {}",
        finding.target,
        finding.outcome.name(),
        args.out.join("dossier.md").display()
    ))?;
    Ok(())
}
