//! The forebear binary: parse arguments, call one command, map errors to exit codes.

use clap::Parser;

fn main() {
    let argv: Vec<String> = std::env::args().collect();
    let cli = forebear::cli::Cli::parse();
    if let Err(error) = forebear::cli::run(cli, argv) {
        eprintln!("forebear: error: {error}");
        std::process::exit(error.exit_code());
    }
}
