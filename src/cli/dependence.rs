//! `forebear dependence DATA --response COL --on COLS [--given COLS]`: prints T_n and the p-value
//! of its permutation test, as measured by [`crate::dependence`].

use crate::dependence::{
    check_permutations, measure_dependence, DependenceReport, DependenceRequest,
};
use crate::error::Result;
use crate::measure::permutation::NullScheme;
use crate::search::rule::DEFAULT_PERMUTATIONS;
use clap::Args;
use std::path::PathBuf;

/// Arguments of `dependence`.
#[derive(Debug, Args)]
pub struct DependenceArgs {
    /// The CSV file.
    pub data: PathBuf,
    /// The response column Y.
    #[arg(long)]
    pub response: String,
    /// The columns Z whose information about Y is measured (comma-separated).
    #[arg(long, required = true, value_name = "COLS")]
    pub on: Vec<String>,
    /// The conditioning columns X (comma-separated; none for the unconditional coefficient).
    #[arg(long, value_name = "COLS")]
    pub given: Vec<String>,
    /// Seed of the nearest-neighbour tie-breaks and of the permutations.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Permutations of the response for the p-value (all are made).
    #[arg(long, default_value_t = DEFAULT_PERMUTATIONS, value_name = "N")]
    pub permutations: u32,
    /// Predictor scaling.
    #[arg(long, value_enum, default_value_t = crate::measure::Scaling::Rank)]
    pub scaling: crate::measure::Scaling,
    /// How the file is read.
    #[command(flatten)]
    pub reader: super::reader::ReaderArgs,
    /// Print JSON instead of text.
    #[arg(long)]
    pub json: bool,
}

/// Runs `dependence`.
pub fn run(args: DependenceArgs) -> Result<()> {
    // Checked before the reader flags, as it always was, so that it is the error reported when
    // both are wrong.
    check_permutations(args.permutations)?;
    let request = DependenceRequest {
        options: args.reader.load_options()?,
        data: args.data,
        response: args.response,
        on: super::split_names(&args.on),
        given: super::split_names(&args.given),
        seed: args.seed,
        permutations: args.permutations,
        scaling: args.scaling,
    };
    let report = measure_dependence(&request)?;
    if args.json {
        super::out::json(&serde_json::to_string_pretty(&report).expect("plain JSON"))
    } else {
        print_text(&report)
    }
}

/// The report as lines of text: T_n with its parts, then the p-value and how it was drawn.
fn print_text(report: &DependenceReport) -> Result<()> {
    let given_text = if report.given.is_empty() {
        String::new()
    } else {
        format!(" | {}", report.given.join(", "))
    };
    let Some(t) = report.t_n else {
        return super::out::line(&format!(
            "T_n({}, {}{given_text}) is undefined: '{}' is a function of the conditioning set on \
             these data (denominator 0, n = {})",
            report.response,
            report.on.join(", "),
            report.response,
            report.rows_used
        ));
    };
    super::out::line(&format!(
        "T_n({}, {}{given_text}) = {t:.6}   ({} / {}, n = {})",
        report.response,
        report.on.join(", "),
        report.numerator,
        report.denominator,
        report.rows_used
    ))?;
    if let Some((p_value, exceedances, permutations, scheme)) = report.test() {
        let how = match scheme {
            NullScheme::Permutation => "over all rows".to_string(),
            NullScheme::LocalPermutation => {
                format!(
                    "within blocks of nearby rows of {}",
                    report.given.join(", ")
                )
            }
        };
        super::out::line(&format!(
            "p = {}   (permutation test: {} permuted {how}; {} of {} permutations at or above \
             T_n; seed {})",
            crate::report::markdown::p_value(p_value),
            report.response,
            exceedances,
            permutations,
            report.seed
        ))?;
    }
    Ok(())
}
