//! `forebear analyze DATA --target COL ...`

use crate::analysis::{analyze_file, Progress};
use crate::data::LoadOptions;
use crate::error::{Error, Result};
use crate::measure::Scaling;
use crate::study::StudyInput;
use clap::Args;
use std::path::{Path, PathBuf};

/// Arguments of `analyze`.
#[derive(Debug, Args)]
pub struct AnalyzeArgs {
    /// The CSV file (header row, numeric columns).
    pub data: PathBuf,
    /// The outcome column whose direct causes are sought.
    #[arg(long)]
    pub target: String,
    /// Output folder for result.json and dossier.md.
    #[arg(long, default_value = "forebear-output")]
    pub out: PathBuf,
    /// Study seed for every random tie-break and resample.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Predictor scaling before nearest-neighbour search: rank, standardize or none.
    #[arg(long, default_value = "rank")]
    pub scaling: String,
    /// Level of the pairwise independence tests.
    #[arg(long, default_value_t = 0.05)]
    pub alpha: f64,
    /// Resampling replicates (0 disables resampling).
    #[arg(long, default_value_t = 0)]
    pub replicates: u32,
    /// Columns to leave out entirely (comma-separated).
    #[arg(long, value_name = "COLS")]
    pub exclude: Vec<String>,
    /// Cell texts that mean "missing" (comma-separated; an empty entry stands for empty cells).
    #[arg(long, value_name = "TOKENS", default_value = ",NA,NaN,null", allow_hyphen_values = true)]
    pub missing_tokens: String,
}

impl AnalyzeArgs {
    /// The study input these flags describe.
    pub fn study_input(&self) -> Result<StudyInput> {
        Ok(StudyInput {
            target: self.target.clone(),
            exclude: super::split_names(&self.exclude),
            seed: self.seed,
            scaling: parse_scaling(&self.scaling)?,
            alpha: self.alpha,
            replicates: self.replicates,
        })
    }

    /// Reader options.
    pub fn load_options(&self) -> LoadOptions {
        LoadOptions { missing_tokens: self.missing_tokens.split(',').map(|t| t.trim().to_string()).collect() }
    }
}

/// Parses `--scaling`.
pub fn parse_scaling(name: &str) -> Result<Scaling> {
    Scaling::parse(name).ok_or_else(|| {
        Error::input(format!("--scaling '{name}' is not known; use rank, standardize or none"))
    })
}

/// Runs `analyze`.
pub fn run(args: AnalyzeArgs, argv: Vec<String>, progress: &dyn Progress) -> Result<()> {
    let input = args.study_input()?;
    analyze_into(&args.data, &input, &args.load_options(), &args.out, argv, progress)
}

/// Analyses one file into one output folder and reports where it went.
pub fn analyze_into(
    data: &Path,
    input: &StudyInput,
    options: &LoadOptions,
    out: &Path,
    argv: Vec<String>,
    progress: &dyn Progress,
) -> Result<()> {
    let finding = analyze_file(data, input, options, argv, progress)?;
    crate::report::write_dossier(&finding, out)?;
    progress.say(&format!("wrote {}/result.json and {}/dossier.md", out.display(), out.display()));
    println!("{}: {} — {}", finding.target, finding.outcome.name(), out.join("dossier.md").display());
    Ok(())
}
