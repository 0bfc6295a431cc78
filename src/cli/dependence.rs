//! `forebear dependence DATA --response COL --on COLS [--given COLS]`: prints T_n and the p-value
//! of the permutation test the calibrated selection uses (`measure::permutation`): the response
//! permuted over all rows without `--given`, locally within blocks of nearby rows of the `--given`
//! columns otherwise; every draw is made, so p = (G + 1)/(N + 1) with G of N draws at or above T_n.

use crate::data::checks::rounding_note;
use crate::data::DataReader;
use crate::error::{Error, Result};
use crate::measure::permutation::{max_statistic_test, NullScheme, Observed, TestPlan};
use crate::measure::TargetRanks;
use crate::search::rule::{DEFAULT_PERMUTATIONS, DEFAULT_SELECTION_ALPHA, MAX_PERMUTATIONS};
use crate::search::SearchData;
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
    let scaling = args.scaling;
    if !(1..=MAX_PERMUTATIONS).contains(&args.permutations) {
        return Err(Error::input(format!(
            "--permutations {} is not a number of draws: give one from 1 to {MAX_PERMUTATIONS}",
            args.permutations
        )));
    }
    let options = args.reader.load_options()?;
    // The file is opened once; the columns are checked against its header before the rows are read.
    let reader = DataReader::open(&args.data, &options)?;
    let header = reader.header();
    let response = header.require_column(&args.response, "response")?;
    let on = super::split_names(&args.on);
    let given = super::split_names(&args.given);
    if on.is_empty() {
        return Err(Error::input(
            "--on names no column; give at least one, as in --on x1,x2",
        ));
    }
    let mut used = vec![response];
    for (names, role) in [(&on, "--on"), (&given, "--given")] {
        for name in names {
            let j = header.require_column(name, role)?;
            if used.contains(&j) {
                return Err(Error::input(format!(
                    "column '{name}' is named twice among --response, --on and --given; each column may \
                     appear once"
                )));
            }
            used.push(j);
        }
    }
    let (raw, facts) = reader.read_rows()?;
    let (table, report) = raw.prepare(&used, response, Vec::new(), facts, &options)?;
    if let Some((c, original)) = report.duplicate_columns.iter().next() {
        return Err(Error::input(format!(
            "{}, column '{c}': the column repeats '{original}' exactly on the rows used; name only \
             one of them",
            report.file
        )));
    }
    if let Some(c) = report.constant_columns.first() {
        let rounding = report
            .constant_by_rounding
            .get(c)
            .map_or(String::new(), |texts| {
                format!(" ({})", rounding_note(texts))
            });
        return Err(Error::input(format!(
            "{}, column '{c}': the column is constant on the rows used{rounding}, so it carries no \
             information; leave it out",
            report.file
        )));
    }
    let data = SearchData::new(&table, scaling, args.seed, 0);
    let idx = |name: &String| {
        table
            .index_of(name)
            .expect("prepared table keeps every used column")
    };
    let y = idx(&args.response);
    let z: Vec<usize> = on.iter().map(idx).collect();
    let x: Vec<usize> = given.iter().map(idx).collect();
    let xz: Vec<usize> = x.iter().chain(&z).copied().collect();
    // The neighbours and keys of `conditional_dependence`, kept for the permutation test.
    let ranks = TargetRanks::new(data.raw(y));
    let conditioning = (!x.is_empty()).then(|| data.neighbours(y, &x));
    let joint = data.neighbours(y, &xz);
    let ratio = crate::measure::Ratio {
        numerator: ranks.numerator(conditioning.as_deref(), &joint),
        denominator: ranks.denominator(conditioning.as_deref()),
    };
    // One "candidate", the joint space of --given and --on; every draw is made (exhaustive), so
    // the level only sets the critical value, which is not printed.
    let test = (ratio.denominator != 0).then(|| {
        let observed = Observed {
            ranks: &ranks,
            conditioning: conditioning.as_deref(),
            joints: vec![&joint],
            numerator: ratio.numerator,
            denominator: ratio.denominator,
        };
        let blocks = (!x.is_empty()).then(|| data.permutation_blocks(&x));
        let plan = TestPlan {
            max_permutations: args.permutations,
            alpha: DEFAULT_SELECTION_ALPHA,
            exhaustive: true,
        };
        max_statistic_test(
            &observed,
            blocks.as_ref(),
            &data.permutation_key("dependence", y, &x, None),
            &plan,
        )
    });
    if args.json {
        let value = serde_json::json!({
            "response": args.response, "on": on, "given": given, "rows_used": report.rows_used,
            "t_n": ratio.value(), "numerator": ratio.numerator, "denominator": ratio.denominator,
            "response_is_function_of_given": ratio.denominator == 0,
            "p_value": test.as_ref().map(|t| t.p_value),
            "permutations": test.as_ref().map(|t| t.permutations),
            "exceedances": test.as_ref().map(|t| t.exceedances),
            "scheme": test.as_ref().map(|t| t.scheme),
            "seed": args.seed, "scaling": scaling.name(),
        });
        super::out::json(&serde_json::to_string_pretty(&value).expect("plain JSON"))?;
    } else {
        let given_text = if given.is_empty() {
            String::new()
        } else {
            format!(" | {}", given.join(", "))
        };
        match ratio.value() {
            Some(t) => {
                super::out::line(&format!(
                    "T_n({}, {}{given_text}) = {t:.6}   ({} / {}, n = {})",
                    args.response,
                    on.join(", "),
                    ratio.numerator,
                    ratio.denominator,
                    report.rows_used
                ))?;
                if let Some(test) = &test {
                    let how = match test.scheme {
                        NullScheme::Permutation => "over all rows".to_string(),
                        NullScheme::LocalPermutation => {
                            format!("within blocks of nearby rows of {}", given.join(", "))
                        }
                    };
                    super::out::line(&format!(
                        "p = {}   (permutation test: {} permuted {how}; {} of {} permutations at or \
                         above T_n; seed {})",
                        crate::report::markdown::p_value(test.p_value),
                        args.response,
                        test.exceedances,
                        test.permutations,
                        args.seed
                    ))?;
                }
            }
            None => super::out::line(&format!(
                "T_n({}, {}{given_text}) is undefined: '{}' is a function of the conditioning set on \
                 these data (denominator 0, n = {})",
                args.response,
                on.join(", "),
                args.response,
                report.rows_used
            ))?,
        }
    }
    Ok(())
}
