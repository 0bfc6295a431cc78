//! `forebear completions SHELL` and `forebear man [SUBCOMMAND]`: shell completions and manual
//! pages generated from the command-line definitions, so they cannot drift from the flags.

use crate::error::{Error, Result};
use clap::Args;
use clap_complete::Shell;

/// Arguments of `completions`.
#[derive(Debug, Args)]
pub struct CompletionsArgs {
    /// The shell: bash, zsh, fish, elvish or powershell.
    #[arg(value_enum)]
    pub shell: Shell,
}

/// Arguments of `man`.
#[derive(Debug, Args)]
pub struct ManArgs {
    /// A subcommand's page (forebear-SUBCOMMAND(1)) instead of forebear(1).
    pub subcommand: Option<String>,
}

/// Prints the completion script of `args.shell` to standard output.
pub fn completions(args: CompletionsArgs) -> Result<()> {
    let mut command = super::command();
    let mut script = Vec::new();
    clap_complete::generate(args.shell, &mut command, "forebear", &mut script);
    super::out::print(&String::from_utf8_lossy(&script))
}

/// Prints a manual page (roff) to standard output.
pub fn man(args: ManArgs) -> Result<()> {
    let command = super::command();
    let page = match &args.subcommand {
        None => command,
        Some(name) => {
            let names: Vec<String> = command
                .get_subcommands()
                .map(|c| c.get_name().to_string())
                .collect();
            let Some(sub) = command.find_subcommand(name).cloned() else {
                return Err(Error::input(format!(
                    "'{}' is not a forebear subcommand; one of: {}",
                    crate::text::for_terminal(name),
                    names.join(", ")
                )));
            };
            // forebear-analyze(1), as man pages of subcommands are named.
            let version = super::version_text();
            sub.name(format!("forebear-{name}")).version(version)
        }
    };
    let mut roff = Vec::new();
    clap_mangen::Man::new(page)
        .section("1")
        .manual("forebear manual")
        .render(&mut roff)
        .map_err(|e| Error::internal(format!("cannot render the manual page: {e}")))?;
    super::out::print(&String::from_utf8_lossy(&roff))
}
