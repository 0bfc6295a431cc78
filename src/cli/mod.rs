//! Command-line layer: argument definitions and one function per subcommand. No statistics here.

pub mod analyze;
pub mod batch;
pub mod completions;
pub mod demo;
pub mod dependence;
pub mod examples;
pub mod fingerprint;
pub mod merge;
pub mod out;
pub mod progress;
pub mod qualify;
pub mod reader;
pub mod sign;
pub mod trail;
pub mod verify;

use crate::settings::Key;
use clap::parser::ValueSource;
use clap::{CommandFactory, FromArgMatches, Parser, Subcommand};

/// forebear: which measured variables directly drive an outcome, how stable that is, and a dossier
/// a reviewer can re-run.
#[derive(Debug, Parser)]
#[command(name = "forebear", version, about, long_about = None)]
pub struct Cli {
    /// The subcommand.
    #[command(subcommand)]
    pub command: Command,
    /// Worker threads (default: all cores). Results do not depend on it.
    #[arg(long, global = true, value_name = "N")]
    pub threads: Option<usize>,
    /// No progress messages on stderr.
    #[arg(long, global = true)]
    pub quiet: bool,
    /// Who runs the command, as recorded in dossiers and the audit trail (default: the login
    /// name).
    #[arg(long, global = true, value_name = "NAME")]
    pub operator: Option<String>,
}

/// Subcommands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Search the direct causes (parents) of a target column and write the dossier.
    Analyze(Box<analyze::AnalyzeArgs>),
    /// Print the conditional dependence coefficient T_n(response, on | given).
    Dependence(dependence::DependenceArgs),
    /// Write the built-in demo data and analyse it.
    Demo(demo::DemoArgs),
    /// Run every study and target of a plan: dossiers, an index, a summary, drift.
    Batch(batch::BatchArgs),
    /// Combine partial results (from `analyze --replicate-range`) into one dossier.
    Merge(merge::MergeArgs),
    /// Check a dossier against the data: files, fingerprints, method version, then a re-run.
    Verify(verify::VerifyArgs),
    /// Sign a dossier with an Ed25519 SSH key: a statement of who, when and what it means, and
    /// its detached SSH signature in signatures/.
    Sign(sign::SignArgs),
    /// Print the SHA-256 of a data file's bytes and of its parsed content, and its shape.
    Fingerprint(fingerprint::FingerprintArgs),
    /// Show an audit trail (forebear-trail.jsonl) and check its hash chain.
    Trail(trail::TrailArgs),
    /// Run the built-in reference cases on this installation and write a qualification record.
    Qualify(qualify::QualifyArgs),
    /// Print a shell completion script (bash, zsh, fish, elvish, powershell).
    Completions(completions::CompletionsArgs),
    /// Print the manual page forebear(1), or a subcommand's, in roff.
    Man(completions::ManArgs),
}

pub use progress::Stderr;

/// Parses comma-separated names, dropping empty entries and surrounding spaces.
pub fn split_names(list: &[String]) -> Vec<String> {
    list.iter()
        .flat_map(|s| s.split(','))
        .map(|s| s.trim().to_string())
        .filter(|s| !s.is_empty())
        .collect()
}

/// Most worker threads `--threads` may ask for (a bound of our own: far above the cores of any
/// machine this runs on, far below what takes minutes to start).
pub const MAX_THREADS: usize = 256;

/// The version line: the crate version, the build commit and the method version (`verify`
/// compares dossiers by the method version).
pub fn version_text() -> String {
    let tool = crate::finding::ToolInfo::current();
    tool.describe()
        .strip_prefix("forebear ")
        .map_or_else(|| tool.describe(), str::to_string)
}

/// The command-line definition: the derived one with the version line and each subcommand's
/// examples after its help.
pub fn command() -> clap::Command {
    let mut command = Cli::command().version(version_text());
    for (name, examples) in examples::EXAMPLES {
        command =
            command.mut_subcommand(name, |sub| sub.after_help(examples::after_help(examples)));
    }
    command
}

/// Parses the command line. Returns the arguments and the settings whose flags were typed (not
/// defaulted): those win over a study file.
pub fn parse<I, T>(args: I) -> Result<(Cli, Vec<Key>), clap::Error>
where
    I: IntoIterator<Item = T>,
    T: Into<std::ffi::OsString> + Clone,
{
    let matches = command().try_get_matches_from(args)?;
    let cli = Cli::from_arg_matches(&matches)?;
    let explicit = match matches.subcommand() {
        Some(("analyze", sub)) => Key::ALL
            .into_iter()
            .filter(|k| k.has_flag())
            .filter(|k| sub.value_source(k.arg_id()) == Some(ValueSource::CommandLine))
            .collect(),
        _ => Vec::new(),
    };
    Ok((cli, explicit))
}

/// Runs the parsed command line; `explicit` lists the settings typed as flags ([`parse`]).
pub fn run(cli: Cli, explicit: &[Key], argv: Vec<String>) -> crate::error::Result<()> {
    if let Some(threads) = cli.threads {
        if threads == 0 {
            return Err(crate::error::Error::input("--threads must be at least 1"));
        }
        if threads > MAX_THREADS {
            return Err(crate::error::Error::input(format!(
                "--threads {threads} is above the limit of {MAX_THREADS}; results do not depend on \
                 the thread count, and more threads than cores only add overhead"
            )));
        }
    }
    // A pool of this call's own (`--threads`, else one thread per core), never rayon's global one:
    // a program that embeds the library keeps its global pool, and work runs in the pool it chose.
    let mut pool = rayon::ThreadPoolBuilder::new().thread_name(|i| format!("forebear-{i}"));
    if let Some(threads) = cli.threads {
        pool = pool.num_threads(threads);
    }
    let pool = pool.build().map_err(|e| {
        crate::error::Error::internal(format!("cannot start the worker threads: {e}"))
    })?;
    pool.install(move || run_command(cli, explicit, argv))
}

/// Runs the command inside the pool [`run`] built.
fn run_command(cli: Cli, explicit: &[Key], argv: Vec<String>) -> crate::error::Result<()> {
    let progress = Stderr::new(cli.quiet);
    let operator = match cli.operator.as_deref() {
        Some(given) => crate::trail::check_operator(given)
            .map_err(|e| crate::error::Error::input(format!("--operator: {e}")))?,
        None => crate::trail::operator(None),
    };
    let operator = operator.as_str();
    match cli.command {
        Command::Analyze(args) => analyze::run(*args, explicit, argv, operator, &progress),
        Command::Dependence(args) => dependence::run(args),
        Command::Demo(args) => demo::run(args, operator, &progress),
        Command::Batch(args) => batch::run(args, argv, operator, &progress),
        Command::Merge(args) => merge::run(args, argv, operator, &progress),
        Command::Verify(args) => verify::run(args, argv, operator, &progress),
        Command::Sign(args) => sign::run(args, operator),
        Command::Fingerprint(args) => fingerprint::run(args),
        Command::Trail(args) => trail::run(args),
        Command::Completions(args) => completions::completions(args),
        Command::Man(args) => completions::man(args),
        Command::Qualify(args) => {
            let operator = crate::qualify::record::Operator {
                name: Some(operator.to_string()),
                from: if cli.operator.is_some() {
                    "--operator".into()
                } else {
                    "the login name".into()
                },
            };
            qualify::run(args, argv, operator, &progress)
        }
    }
}
