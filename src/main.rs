//! The forebear binary: parse arguments, call one command, map errors to exit codes.

fn main() {
    // A panic is a bug, not bad input: report it in one line and exit 3 as DESIGN.md promises,
    // instead of Rust's default message and exit code 101.
    std::panic::set_hook(Box::new(|info| {
        let message = info
            .payload()
            .downcast_ref::<&str>()
            .map(|s| s.to_string())
            .or_else(|| info.payload().downcast_ref::<String>().cloned())
            .unwrap_or_else(|| "unknown panic".to_string());
        let place = info
            .location()
            .map(|l| format!(" at {}:{}", l.file(), l.line()))
            .unwrap_or_default();
        eprintln!(
            "forebear: error: internal error: {}{place}; this is a bug, please report it",
            forebear::text::for_terminal(&one_line(&message))
        );
    }));
    // Arguments that are not valid Unicode are kept (lossily) for the record rather than panicking.
    let argv: Vec<String> = std::env::args_os()
        .map(|a| a.to_string_lossy().into_owned())
        .collect();
    let (cli, explicit) = match forebear::cli::parse(std::env::args_os()) {
        Ok(parsed) => parsed,
        Err(error) => usage_error(error),
    };
    // The binary, not the library, owns the process's signals: SIGINT, SIGTERM and SIGHUP remove
    // this run's staging folders and locks and exit with 128 + the signal's number.
    forebear::output::cleanup::install_signal_handler();
    let outcome = std::panic::catch_unwind(move || forebear::cli::run(cli, &explicit, argv));
    match outcome {
        Ok(Ok(())) => {}
        // The reader of our output went away: not a failure, and nothing left to say.
        Ok(Err(forebear::error::Error::ClosedPipe)) => {}
        Ok(Err(error)) => {
            if let forebear::error::Error::Problems { problems, .. } = &error {
                for problem in problems {
                    eprintln!(
                        "forebear: error: {}",
                        forebear::text::for_terminal(&one_line(problem))
                    );
                }
            }
            // Names, values and paths inside the message are the user's: no control sequence or
            // bidirectional control of theirs reaches the terminal.
            eprintln!(
                "forebear: error: {}",
                forebear::text::for_terminal(&one_line(&error.to_string()))
            );
            std::process::exit(error.exit_code());
        }
        Err(_) => std::process::exit(3),
    }
}

/// Help and version go to stdout as clap writes them; a usage error becomes the contract's one
/// line on stderr with exit code 2, pointing at `--help` instead of repeating the usage.
fn usage_error(error: clap::Error) -> ! {
    use clap::error::ErrorKind;
    if matches!(
        error.kind(),
        ErrorKind::DisplayHelp
            | ErrorKind::DisplayVersion
            | ErrorKind::DisplayHelpOnMissingArgumentOrSubcommand
    ) {
        error.exit();
    }
    let rendered = error.render().to_string();
    let message: Vec<&str> = rendered
        .lines()
        .map(str::trim)
        .take_while(|l| !l.starts_with("Usage:"))
        .filter(|l| !l.is_empty() && !l.starts_with("For more information"))
        .collect();
    let message = message.join(" ");
    let message = message.strip_prefix("error: ").unwrap_or(&message);
    use clap::CommandFactory;
    let command = std::env::args().skip(1).find(|name| {
        forebear::cli::Cli::command()
            .find_subcommand(name)
            .is_some()
    });
    let help = command.map_or_else(
        || "forebear --help".to_string(),
        |c| format!("forebear {c} --help"),
    );
    eprintln!(
        "forebear: error: {}; see '{help}'",
        forebear::text::for_terminal(message)
    );
    std::process::exit(2);
}

/// The contract is one line per error; a stray line break inside a message must not break it.
fn one_line(text: &str) -> String {
    text.lines()
        .map(str::trim)
        .filter(|l| !l.is_empty())
        .collect::<Vec<_>>()
        .join(" ")
}
