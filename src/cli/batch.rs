//! `forebear batch PLAN.toml --out DIR [--previous DIR] [--shard i/N | --collect DIRS...]
//! [--fail-on-drift]`: every study and target of a plan, an index, a summary, drift.

use crate::analysis::Progress;
use crate::batch::drift::compare;
use crate::batch::output::{collect, read_summary, write_index};
use crate::batch::plan::{Plan, Problem, Shard};
use crate::batch::run::{run_pairs, summary};
use crate::batch::{Summary, DEFAULT_DRIFT_THRESHOLD};
use crate::error::{Error, Result};
use crate::finding::ToolInfo;
use crate::output::{Claim, Kind, Staging};
use clap::Args;
use std::path::PathBuf;
use std::time::Instant;

/// Arguments of `batch`.
#[derive(Debug, Args)]
pub struct BatchArgs {
    /// The plan file (TOML; see examples/nightly-plan.toml).
    pub plan: PathBuf,
    /// Output folder: DIR/STUDY/TARGET/ dossiers, DIR/index.html, DIR/index.md,
    /// DIR/summary.json.
    #[arg(long, default_value = "forebear-batch")]
    pub out: PathBuf,
    /// A former batch output to compare with (drift).
    #[arg(long, value_name = "DIR", conflicts_with = "shard")]
    pub previous: Option<PathBuf>,
    /// A stability frequency that moves by more than this is drift.
    #[arg(long, default_value_t = DEFAULT_DRIFT_THRESHOLD, value_name = "F")]
    pub drift_threshold: f64,
    /// Exit with code 1 when anything drifted (needs --previous).
    #[arg(long, requires = "previous")]
    pub fail_on_drift: bool,
    /// Run only shard i of N (0 ≤ i < N): the pairs whose position in the plan modulo N is i.
    #[arg(long, value_name = "i/N", conflicts_with = "collect")]
    pub shard: Option<Shard>,
    /// Combine the outputs of every shard (made with --shard) into one output folder.
    #[arg(long, num_args = 1.., value_name = "SHARD_DIR")]
    pub collect: Vec<PathBuf>,
    /// Validate the plan (and that every data file exists) and stop; nothing runs.
    #[arg(long)]
    pub check: bool,
    /// Replace an existing output folder that holds a former batch output.
    #[arg(long)]
    pub force: bool,
}

/// Runs `batch`.
pub fn run(args: BatchArgs, argv: Vec<String>, progress: &dyn Progress) -> Result<()> {
    let started = Instant::now();
    if args.check {
        return check(&args);
    }
    let plan = load_plan(&args)?;
    if !(0.0..=1.0).contains(&args.drift_threshold) {
        return Err(Error::input(format!(
            "--drift-threshold {} is not a frequency difference: it must lie in [0, 1]",
            args.drift_threshold
        )));
    }
    let shard = args.shard;
    let previous = match &args.previous {
        Some(dir) => {
            let (summary, sha) = read_summary(dir, "--previous")?;
            if summary.shard.is_some() {
                return Err(Error::input(format!(
                    "--previous '{}' holds one shard only; compare with a whole or collected output",
                    dir.display()
                )));
            }
            Some((summary, sha))
        }
        None => None,
    };
    let claim = Claim::take(&args.out, Kind::Batch, args.force, progress)?;
    let staging = Staging::new(claim)?;
    let (tool, studies) = if args.collect.is_empty() {
        let pairs = plan
            .pairs()
            .iter()
            .filter(|p| shard.is_none_or(|s| s.holds(p.index)))
            .count();
        progress.say(&format!(
            "batch {}: {pairs} study–target pairs{}, one after another with all cores each",
            args.plan.display(),
            shard.map_or(String::new(), |s| format!(
                " (shard {}/{})",
                s.index, s.count
            ))
        ));
        let studies = run_pairs(&plan, shard, staging.path(), &argv, progress);
        (ToolInfo::current(), studies)
    } else {
        progress.say(&format!("collecting {} shard outputs", args.collect.len()));
        collect(&plan, &args.collect, staging.path())?
    };
    let draft = summary(&plan, shard, tool.clone(), studies, None);
    let drift = previous
        .as_ref()
        .map(|(p, sha)| compare(p, sha, &draft, args.drift_threshold));
    let result = summary(&plan, shard, tool, draft.studies, drift);
    write_index(staging.path(), &result)?;
    staging.finish()?;
    report(&args, &result, started, progress)
}

/// `--check`: every problem of the plan and of its data files' headers, or "valid".
fn check(args: &BatchArgs) -> Result<()> {
    let name = args.plan.display().to_string();
    let (problems, studies, pairs) = Plan::check(&args.plan);
    if problems.is_empty() {
        return super::out::line(&format!(
            "{name}: valid; {studies} studies, {pairs} study–target pairs; every data file's \
             header names the columns the plan uses"
        ));
    }
    Err(plan_problems(&name, &problems))
}

/// Each problem as `PLAN:LINE:COLUMN: message`, then the count.
fn plan_problems(name: &str, problems: &[Problem]) -> Error {
    let problems: Vec<String> = problems
        .iter()
        .map(|p| match p.place {
            Some((line, column)) => format!("{name}:{line}:{column}: {}", p.message),
            None => format!("{name}: {}", p.message),
        })
        .collect();
    Error::Problems {
        summary: format!(
            "{name}: {} problem(s), listed above; nothing was run",
            problems.len()
        ),
        problems,
    }
}

fn load_plan(args: &BatchArgs) -> Result<Plan> {
    let name = args.plan.display().to_string();
    let plan = Plan::load(&args.plan).map_err(|problems| plan_problems(&name, &problems))?;
    // Data files are refreshed by other systems: one late file must not cost the whole night, so
    // the study fails alone and the others run.
    for (study, path, why) in plan.missing_data() {
        eprintln!(
            "forebear: warning: {name}: study '{study}': the data file '{}' {why}; that study \
             will fail, the others run",
            path.display()
        );
    }
    Ok(plan)
}

/// The closing line on stderr, the index path on stdout, and the exit code: 3 when a pair failed
/// on an internal error, else 2 when a pair failed, else 1 when there is drift and
/// `--fail-on-drift` was given, else 0.
fn report(
    args: &BatchArgs,
    summary: &Summary,
    started: Instant,
    progress: &dyn Progress,
) -> Result<()> {
    let totals = &summary.totals;
    let drift = match &summary.drift {
        None => "drift not checked".to_string(),
        Some(d) if d.changes.is_empty() => "no drift".to_string(),
        Some(d) => format!("drift: {} change(s)", d.changes.len()),
    };
    let drift = match summary
        .drift
        .as_ref()
        .map_or(0, |d| d.unstable_outcomes.len())
    {
        0 => drift,
        n => format!("{drift}, {n} outcome change(s) between unstable headlines (not drift)"),
    };
    let index = args.out.join("index.html");
    progress.say(&format!(
        "batch finished in {:.1} s: {} pairs, {} analysed, {} failed; {drift}; index: {}",
        started.elapsed().as_secs_f64(),
        totals.pairs,
        totals.done,
        totals.failed,
        index.display()
    ));
    super::out::line(&index.display().to_string())?;
    let internal = summary
        .entries()
        .any(|(_, _, e)| e.failure == Some(crate::batch::Failure::Internal));
    if totals.failed > 0 {
        let message = format!(
            "{} of {} pairs failed (the others are complete); see {}",
            totals.failed,
            totals.pairs,
            index.display()
        );
        return Err(if internal {
            Error::internal(message)
        } else {
            Error::input(message)
        });
    }
    if args.fail_on_drift && totals.changes > 0 {
        return Err(Error::Mismatch(format!(
            "{drift} since '{}'; see {}",
            args.previous
                .as_ref()
                .map_or(String::new(), |p| p.display().to_string()),
            index.display()
        )));
    }
    Ok(())
}
