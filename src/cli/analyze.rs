//! `forebear analyze DATA --target COL ...`

use crate::analysis::{analyze_file, Progress};
use crate::data::LoadOptions;
use crate::error::{Error, Result};
use crate::measure::Scaling;
use crate::output::{Claim, Kind};
use crate::resample::PlanKind;
use crate::search::rule::{DEFAULT_PERMUTATIONS, DEFAULT_SELECTION_ALPHA};
use crate::search::{SelectionRule, StoppingRule};
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
    /// Output folder for result.json, dossier.md, dossier.html, stability.csv, trace.csv and
    /// manifest.json.
    #[arg(long, default_value = "forebear-output")]
    pub out: PathBuf,
    /// Study seed for every random tie-break and resample.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Predictor scaling before nearest-neighbour search.
    #[arg(long, value_enum, default_value_t = Scaling::Rank)]
    pub scaling: Scaling,
    /// Level of the pairwise independence tests.
    #[arg(long, default_value_t = 0.05, allow_negative_numbers = true)]
    pub alpha: f64,
    /// Resampling replicates (0 disables resampling; even for complementary pairs).
    #[arg(long, default_value_t = 100)]
    pub replicates: u32,
    /// Resampling plan.
    #[arg(long, value_enum, default_value_t = PlanKind::ComplementaryPairs)]
    pub resample: PlanKind,
    /// Share of rows per replicate, for --resample subsample (default 0.5).
    #[arg(long)]
    pub fraction: Option<f64>,
    /// Frequency at which a finding counts as stable, in (0.5, 1].
    #[arg(long, default_value_t = 0.6)]
    pub stability_threshold: f64,
    /// When forward selection admits a column: calibrated (a permutation test at
    /// --selection-alpha, then a shrink phase) or natural (any positive T_n, the published rule).
    #[arg(long, value_enum, default_value_t = StoppingRule::Calibrated)]
    pub stopping_rule: StoppingRule,
    /// Level of the selection tests of the calibrated rule.
    #[arg(long, default_value_t = DEFAULT_SELECTION_ALPHA, allow_negative_numbers = true)]
    pub selection_alpha: f64,
    /// Most permutations per selection test (fewer when the decision is certain earlier).
    #[arg(long, default_value_t = DEFAULT_PERMUTATIONS)]
    pub permutations: u32,
    /// Compute only replicates a..b (0-based, half-open) into DIR/partial.json, for `merge`.
    #[arg(long, value_name = "A..B", value_parser = parse_range)]
    pub replicate_range: Option<std::ops::Range<u32>>,
    /// Columns to leave out entirely (comma-separated).
    #[arg(long, value_name = "COLS")]
    pub exclude: Vec<String>,
    /// The only columns to consider besides the target (comma-separated); every other column is
    /// left out, as with --exclude.
    #[arg(long, value_name = "COLS")]
    pub candidates: Option<Vec<String>>,
    /// How the file is read.
    #[command(flatten)]
    pub reader: super::reader::ReaderArgs,
    /// Replace an existing output folder that holds a previous forebear result.
    #[arg(long)]
    pub force: bool,
}

impl AnalyzeArgs {
    /// The study input these flags describe.
    pub fn study_input(&self) -> Result<StudyInput> {
        Ok(StudyInput {
            target: self.target.clone(),
            exclude: super::split_names(&self.exclude),
            candidates: self.candidates.as_deref().map(super::split_names),
            seed: self.seed,
            scaling: self.scaling,
            alpha: self.alpha,
            replicates: self.replicates,
            resample: self.resample,
            fraction: self.fraction,
            stability_threshold: self.stability_threshold,
            selection: SelectionRule {
                stopping_rule: self.stopping_rule,
                alpha: self.selection_alpha,
                permutations: self.permutations,
            },
        })
    }

    /// Reader options.
    pub fn load_options(&self) -> Result<LoadOptions> {
        self.reader.load_options()
    }
}

/// Parses the value of `--replicate-range`: `A..B`, whole numbers (whether A < B and B is within
/// the replicates is checked against the study).
pub fn parse_range(text: &str) -> std::result::Result<std::ops::Range<u32>, String> {
    let bad = || "not a range; write A..B with whole numbers A < B, e.g. 0..25".to_string();
    let (a, b) = text.split_once("..").ok_or_else(bad)?;
    let a: u32 = a.trim().parse().map_err(|_| bad())?;
    let b: u32 = b.trim().parse().map_err(|_| bad())?;
    Ok(a..b)
}

/// Runs `analyze`.
pub fn run(args: AnalyzeArgs, argv: Vec<String>, progress: &dyn Progress) -> Result<()> {
    let input = args.study_input()?;
    if let Some(range) = args.replicate_range.clone() {
        let claim = Claim::take(&args.out, Kind::Dossier, args.force, progress)?;
        let part = crate::analysis::analyze_part(
            &args.data,
            &input,
            &args.load_options()?,
            range,
            argv,
            progress,
        )?;
        let text = serde_json::to_string(&part)
            .map_err(|e| Error::internal(format!("partial result: {e}")))?;
        claim.write_files(&[("partial.json", text + "\n")])?;
        super::out::line(&args.out.join("partial.json").display().to_string())?;
        return Ok(());
    }
    analyze_into(
        &args.data,
        &input,
        &args.load_options()?,
        &args.out,
        args.force,
        argv,
        progress,
    )
}

/// Analyses one file into one output folder and reports where it went.
pub fn analyze_into(
    data: &Path,
    input: &StudyInput,
    options: &LoadOptions,
    out: &Path,
    force: bool,
    argv: Vec<String>,
    progress: &dyn Progress,
) -> Result<()> {
    // Refuse an unusable output folder before the work, not after it.
    let claim = Claim::take(out, Kind::Dossier, force, progress)?;
    let analysed = analyze_file(data, input, options, argv, progress)?;
    crate::report::write_dossier(&analysed, claim)?;
    progress.say(&format!(
        "wrote {}/ (result.json, dossier.md, dossier.html, stability.csv, trace.csv, manifest.json)",
        out.display()
    ));
    let finding = &analysed.finding;
    super::out::line(&format!(
        "{}: {} — {}",
        finding.target,
        finding.outcome.name(),
        out.join("dossier.md").display()
    ))?;
    Ok(())
}
