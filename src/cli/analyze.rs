//! `forebear analyze DATA --target COL [--config study.toml] ...`

use crate::analysis::Progress;
use crate::dossier::{write_dossier, write_part, DossierRequest};
use crate::error::Result;
use crate::measure::Scaling;
use crate::resample::PlanKind;
use crate::search::StoppingRule;
use crate::settings::{
    DocumentControl, Key, SettingsInput, Sources, StudyFile, DEFAULT_ALPHA, DEFAULT_PERMUTATIONS,
    DEFAULT_REPLICATES, DEFAULT_SEED, DEFAULT_SELECTION_ALPHA, DEFAULT_STABILITY_THRESHOLD,
};
use crate::targets::output::{write_targets, TargetsRequest};
use crate::targets::TargetChoice;
use clap::Args;
use std::path::{Path, PathBuf};

/// Arguments of `analyze`. Every setting may also come from a study file (`--config`); a flag
/// typed here wins over the file, a default shown here applies only when neither gives it.
#[derive(Debug, Args)]
pub struct AnalyzeArgs {
    /// The CSV file (header row, numeric columns).
    pub data: PathBuf,
    /// The outcome column whose direct causes are sought (or `targets` in the study file).
    /// Repeat it to analyse several targets in one run: each gets a complete dossier in
    /// DIR/<target>/ (the same as its own run with the same settings, digest included) and DIR
    /// gets a study summary (summary.md, summary.html, summary.json); boundaries that several
    /// targets need are computed once and shared.
    #[arg(long, value_name = "COL")]
    pub target: Vec<String>,
    /// Analyse every column left after --exclude that varies on the rows used, as with one
    /// --target per column (DIR/<target>/ each, and a study summary). Not with --target or
    /// --candidates (every column is a target, so none can be limited to candidates).
    #[arg(long, conflicts_with_all = ["target", "candidates"])]
    pub all_targets: bool,
    /// A study file of settings (TOML; the keys are the flags' names with '_' for '-', as in
    /// examples/study.toml). Flags typed on the command line win over it.
    #[arg(long, value_name = "FILE")]
    pub config: Option<PathBuf>,
    /// Output folder for result.json, dossier.md, dossier.html, stability.csv, trace.csv and
    /// manifest.json.
    #[arg(long, default_value = "forebear-output")]
    pub out: PathBuf,
    /// Study seed for every random tie-break and resample.
    #[arg(long, default_value_t = DEFAULT_SEED)]
    pub seed: u64,
    /// Predictor scaling before nearest-neighbour search.
    #[arg(long, value_enum, default_value_t = Scaling::Rank)]
    pub scaling: Scaling,
    /// Level of the pairwise independence tests.
    #[arg(long, default_value_t = DEFAULT_ALPHA, allow_negative_numbers = true)]
    pub alpha: f64,
    /// Resampling replicates (0 disables resampling; even for complementary pairs).
    #[arg(long, default_value_t = DEFAULT_REPLICATES)]
    pub replicates: u32,
    /// Resampling plan.
    #[arg(long, value_enum, default_value_t = PlanKind::ComplementaryPairs)]
    pub resample: PlanKind,
    /// Share of rows per replicate, for --resample subsample (default 0.5).
    #[arg(long)]
    pub fraction: Option<f64>,
    /// Frequency at which a finding counts as stable, in (0.5, 1].
    #[arg(long, default_value_t = DEFAULT_STABILITY_THRESHOLD)]
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
    /// Orient edges at the target through the parent searches of its neighbours (Meek's first
    /// rule on a v-structure found at a neighbour); off by default.
    #[arg(long)]
    pub neighbourhood_orientation: bool,
    /// Compute only replicates a..b (0-based, half-open) into DIR/partial.json, for `merge`. One
    /// target only: run each target's range on its own.
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
    /// Document control: the dossier's title (or `title` in the study file's [document]).
    /// Printed on the first page and in the running header; not part of the result digest.
    #[arg(long, value_name = "TEXT", help_heading = "Document control")]
    pub title: Option<String>,
    /// Document control: the document or protocol identifier (`id` in [document]).
    #[arg(long, value_name = "TEXT", help_heading = "Document control")]
    pub document_id: Option<String>,
    /// Document control: what the analysis is for (`purpose` in [document]).
    #[arg(long, value_name = "TEXT", help_heading = "Document control")]
    pub purpose: Option<String>,
    /// Document control: the document's version (`version` in [document]).
    #[arg(long, value_name = "TEXT", help_heading = "Document control")]
    pub document_version: Option<String>,
    /// Document control: who prepared the dossier (`prepared_by` in [document]).
    #[arg(long, value_name = "NAME", help_heading = "Document control")]
    pub prepared_by: Option<String>,
    /// Replace an existing output folder that holds a previous forebear result (kept beside it as
    /// NAME.replaced-<UTC time>).
    #[arg(long)]
    pub force: bool,
}

impl AnalyzeArgs {
    /// The settings these flags give: only the flags in `explicit` (typed, not defaulted), so that
    /// a study file's values are not overridden by defaults.
    pub fn given(&self, explicit: &[Key]) -> SettingsInput {
        let given = |key: Key| explicit.contains(&key);
        let mut input = SettingsInput {
            targets: (!self.target.is_empty()).then(|| self.target.clone()),
            exclude: given(Key::Exclude).then(|| super::split_names(&self.exclude)),
            candidates: self.candidates.as_deref().map(super::split_names),
            seed: given(Key::Seed).then_some(self.seed),
            scaling: given(Key::Scaling).then_some(self.scaling),
            alpha: given(Key::Alpha).then_some(self.alpha),
            replicates: given(Key::Replicates).then_some(self.replicates),
            resample: given(Key::Resample).then_some(self.resample),
            fraction: self.fraction,
            stability_threshold: given(Key::StabilityThreshold).then_some(self.stability_threshold),
            stopping_rule: given(Key::StoppingRule).then_some(self.stopping_rule),
            selection_alpha: given(Key::SelectionAlpha).then_some(self.selection_alpha),
            permutations: given(Key::Permutations).then_some(self.permutations),
            neighbourhood_orientation: given(Key::NeighbourhoodOrientation)
                .then_some(self.neighbourhood_orientation),
            ..SettingsInput::default()
        };
        self.reader.give(&mut input, explicit);
        let document = DocumentControl {
            title: self.title.clone(),
            id: self.document_id.clone(),
            purpose: self.purpose.clone(),
            version: self.document_version.clone(),
            prepared_by: self.prepared_by.clone(),
        };
        input.document = (!document.is_empty()).then_some(document);
        input
    }
}

/// Parses the value of `--replicate-range`: `A..B`, whole numbers (whether A ≤ B and B is within
/// the replicates is checked against the study).
pub fn parse_range(text: &str) -> std::result::Result<std::ops::Range<u32>, String> {
    let bad = || "not a range; write A..B with whole numbers A ≤ B, e.g. 0..25".to_string();
    let (a, b) = text.split_once("..").ok_or_else(bad)?;
    let a: u32 = a.trim().parse().map_err(|_| bad())?;
    let b: u32 = b.trim().parse().map_err(|_| bad())?;
    Ok(a..b)
}

/// Runs `analyze`: the settings from the flags typed (`explicit`) over the study file, if any.
pub fn run(
    args: AnalyzeArgs,
    explicit: &[Key],
    argv: Vec<String>,
    operator: &str,
    progress: &dyn Progress,
) -> Result<()> {
    let file = args.config.as_deref().map(StudyFile::read).transpose()?;
    let sources = Sources::new(args.given(explicit), file);
    let settings = match args.all_targets {
        true => sources.check_for_all_targets()?,
        false => sources.check()?,
    };
    if args.all_targets || settings.targets().len() > 1 {
        return run_several(&args, &settings, &sources, argv, operator, progress);
    }
    let target = settings.single_target().map_err(|e| sources.explain(e))?;
    let request = DossierRequest {
        data: &args.data,
        settings: &settings,
        target: &target,
        study_file: sources.study_file(),
        out: &args.out,
        force: args.force,
        operator,
    };
    if let Some(range) = args.replicate_range.clone() {
        let written =
            write_part(&request, range, argv, progress).map_err(|e| sources.explain(e))?;
        return super::out::line(&written.display().to_string());
    }
    let finding = write_dossier(&request, argv, progress).map_err(|e| sources.explain(e))?;
    print_written(&finding, &args.out)
}

/// Several targets (`--target` repeated, `targets` in the study file, or `--all-targets`).
fn run_several(
    args: &AnalyzeArgs,
    settings: &crate::settings::Settings,
    sources: &Sources,
    argv: Vec<String>,
    operator: &str,
    progress: &dyn Progress,
) -> Result<()> {
    if args.replicate_range.is_some() {
        return Err(crate::error::Error::input(
            "--replicate-range computes part of one target's replicates; with several targets, \
             run each target's range on its own (--target COL --replicate-range A..B)",
        ));
    }
    let request = TargetsRequest {
        data: &args.data,
        settings,
        choice: match args.all_targets {
            true => TargetChoice::All,
            false => TargetChoice::Named(settings.targets().to_vec()),
        },
        study_file: sources.study_file(),
        out: &args.out,
        force: args.force,
        operator,
    };
    let (findings, _) = write_targets(&request, argv, progress).map_err(|e| sources.explain(e))?;
    for finding in &findings {
        print_written(finding, &args.out.join(&finding.target))?;
    }
    super::out::line(&format!(
        "study summary: {}",
        args.out.join("summary.md").display()
    ))
}

/// The line `analyze` and `demo` print for a written dossier: target, outcome, where.
pub fn print_written(finding: &crate::finding::Finding, out: &Path) -> Result<()> {
    super::out::line(&format!(
        "{}: {} — {}",
        finding.target,
        finding.outcome.name(),
        out.join("dossier.md").display()
    ))
}
