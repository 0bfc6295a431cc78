//! `forebear batch PLAN.toml --out DIR [--previous DIR] [--shard i/N | --collect DIRS...]
//! [--fail-on-drift]`: every study and target of a plan, an index, a summary, drift.

use crate::analysis::Progress;
use crate::batch::execute::{check_drift_threshold, execute, BatchRequest};
use crate::batch::outcome::{closing_line, index_path, result};
use crate::batch::plan::{Plan, Problem, Shard};
use crate::batch::DEFAULT_DRIFT_THRESHOLD;
use crate::error::{Error, Result};
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
    /// List the plan's (study, target) pairs and the shard of each (see --shards), and stop;
    /// nothing runs. One line per pair, `SHARD/SHARDS<TAB>STUDY<TAB>TARGET`, or JSON with --json.
    #[arg(long, conflicts_with_all = ["shard", "collect", "check", "previous"])]
    pub list: bool,
    /// With --list: the number of shards to assign the pairs to (as `--shard i/N`).
    #[arg(long, value_name = "N", default_value_t = 1, requires = "list",
          value_parser = clap::value_parser!(u32).range(1..))]
    pub shards: u32,
    /// With --list: print JSON (layout `forebear.batch-list/1`: plan, plan_sha256, shards, and
    /// pairs of index, study, target, shard).
    #[arg(long, requires = "list")]
    pub json: bool,
    /// Replace an existing output folder that holds a former batch output (kept beside it as
    /// NAME.replaced-<UTC time>).
    #[arg(long)]
    pub force: bool,
}

/// Runs `batch`: the closing line on stderr, the index path on stdout, and the result whose kind
/// sets the exit code ([`crate::batch::outcome::result`]).
pub fn run(
    args: BatchArgs,
    argv: Vec<String>,
    operator: &str,
    progress: &dyn Progress,
) -> Result<()> {
    let started = Instant::now();
    check_drift_threshold(args.drift_threshold)?;
    if args.check {
        return check(&args);
    }
    if args.list {
        return list(&args);
    }
    let plan = load_plan(&args)?;
    let request = BatchRequest {
        plan,
        plan_file: args.plan,
        out: args.out,
        previous: args.previous,
        drift_threshold: args.drift_threshold,
        fail_on_drift: args.fail_on_drift,
        shard: args.shard,
        collect: args.collect,
        force: args.force,
        operator: operator.to_string(),
    };
    let summary = execute(&request, &argv, progress)?;
    progress.say(&closing_line(&request, &summary, started.elapsed()));
    super::out::line(&index_path(&request).display().to_string())?;
    result(&request, &summary)
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

/// `--list`: the pairs and their shards, as text or JSON.
fn list(args: &BatchArgs) -> Result<()> {
    let plan = load_plan(args)?;
    let listed = crate::batch::list::list(&plan, args.shards);
    if args.json {
        let text = serde_json::to_string_pretty(&listed)
            .map_err(|e| Error::internal(format!("batch --list: {e}")))?;
        return super::out::json(&text);
    }
    super::out::print(&crate::batch::list::to_text(&listed))
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
