//! The conventions of a command-line tool (issue 16): `--version` names the method version, every
//! subcommand's `--help` ends with examples that parse, shell completions and manual pages are
//! generated from the definitions, and the library leaves a host program's signals and global
//! thread pool alone.

use crate::common::{assert_success, bin, lossy_stdout, write_demo_csv, Scratch};
use forebear::cli::examples::{arguments, EXAMPLES};

#[test]
fn version_names_the_build_and_the_method_version() {
    let output = bin().arg("--version").output().unwrap();
    assert_success(&output);
    let text = lossy_stdout(&output);
    assert!(text.starts_with("forebear 0."), "{text}");
    assert!(text.contains(forebear::finding::METHOD_VERSION), "{text}");
}

#[test]
fn every_subcommand_help_ends_with_examples_that_parse() {
    let command = forebear::cli::command();
    let names: Vec<String> = command
        .get_subcommands()
        .map(|c| c.get_name().to_string())
        .collect();
    let documented: Vec<&str> = EXAMPLES.iter().map(|(name, _)| *name).collect();
    assert_eq!(names, documented, "one entry of examples per subcommand");
    for (name, examples) in EXAMPLES {
        assert!(
            (2..=3).contains(&examples.len()),
            "{name}: two or three examples"
        );
        let output = bin().args([name, "--help"]).output().unwrap();
        assert_success(&output);
        let help = lossy_stdout(&output);
        let tail = &help[help
            .find("Examples:")
            .unwrap_or_else(|| panic!("{name}: {help}"))..];
        for (line, _) in examples {
            assert!(tail.contains(line), "{name} --help shows {line}");
            let args = arguments(line);
            assert_eq!(args[0], "forebear", "{line}");
            assert_eq!(args[1], name, "{line}");
            if let Err(e) = forebear::cli::parse(args.clone()) {
                panic!("the example '{line}' does not parse: {e}");
            }
        }
    }
    // The check can fail: a misspelt flag does not parse.
    assert!(forebear::cli::parse(arguments("forebear verify d --dta x.csv")).is_err());
}

#[test]
fn completions_and_manual_pages_are_generated_for_every_shell_and_subcommand() {
    for shell in ["bash", "zsh", "fish", "elvish", "powershell"] {
        let output = bin().args(["completions", shell]).output().unwrap();
        assert_success(&output);
        let script = lossy_stdout(&output);
        for word in ["analyze", "verify", "target", "replicates", "signers"] {
            assert!(script.contains(word), "{shell} completes {word}");
        }
    }
    let refused = bin().args(["completions", "tcsh"]).output().unwrap();
    assert_eq!(refused.status.code(), Some(2));

    let output = bin().arg("man").output().unwrap();
    assert_success(&output);
    let page = lossy_stdout(&output);
    assert!(page.contains(".TH forebear 1"), "{page}");
    assert!(page.contains(forebear::finding::METHOD_VERSION));
    for name in ["analyze", "verify", "sign", "qualify"] {
        assert!(page.contains(name), "forebear(1) lists {name}");
        let output = bin().args(["man", name]).output().unwrap();
        assert_success(&output);
        let page = lossy_stdout(&output);
        assert!(page.contains(&format!(".TH forebear-{name} 1")), "{page}");
        assert!(page.contains(&format!("forebear\\-{name} \\- ")), "{page}");
    }
    let analyze = lossy_stdout(&bin().args(["man", "analyze"]).output().unwrap());
    assert!(analyze.contains("\\-\\-target"), "{analyze}");
    let unknown = bin().args(["man", "analyse"]).output().unwrap();
    assert_eq!(unknown.status.code(), Some(2));
}

/// The disposition of SIGINT in this (test) process: true when it is the default.
fn sigint_is_default() -> bool {
    // SAFETY: with a null new action, sigaction only writes the current disposition into a zeroed
    // struct it owns for the call.
    unsafe {
        let mut current: libc::sigaction = std::mem::zeroed();
        libc::sigaction(libc::SIGINT, std::ptr::null(), &mut current) == 0
            && current.sa_sigaction == libc::SIG_DFL
    }
}

#[test]
fn the_library_leaves_the_host_signals_and_global_thread_pool_alone() {
    let scratch = Scratch::new("conventions-library");
    let data = write_demo_csv(&scratch);
    let out = scratch.path("out");
    assert!(sigint_is_default(), "nothing installed a handler before");
    let global = rayon::current_num_threads();
    // A whole analysis through the library, as a host program would call it, on one thread.
    let args = [
        "forebear",
        "--quiet",
        "--threads",
        "1",
        "analyze",
        data.to_str().unwrap(),
        "--target",
        "crush_strength",
        "--replicates",
        "4",
        "--out",
        out.to_str().unwrap(),
    ];
    let (cli, explicit) = forebear::cli::parse(args).unwrap();
    let argv = args.iter().map(|a| a.to_string()).collect();
    forebear::cli::run(cli, &explicit, argv).unwrap();
    let result: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out.join("result.json")).unwrap()).unwrap();
    assert_eq!(result["run"]["threads"], 1, "the call ran in its own pool");
    assert_eq!(
        rayon::current_num_threads(),
        global,
        "the host's global pool is untouched"
    );
    assert!(
        sigint_is_default(),
        "an embedded call installs no SIGINT handler: the host's next interrupt is its own"
    );
}

#[test]
fn the_demo_hint_runs_as_printed_once_forebear_is_on_the_path() {
    let scratch = Scratch::new("conventions-hint");
    let output = bin()
        .current_dir(scratch.path(""))
        .args(["--quiet", "demo"])
        .output()
        .unwrap();
    assert_success(&output);
    let said = lossy_stdout(&output);
    let hint = said
        .lines()
        .find_map(|l| l.strip_prefix("a reviewer checks a dossier with: "))
        .unwrap_or_else(|| panic!("the demo prints a verify hint:\n{said}"));
    assert!(hint.starts_with("forebear verify "), "{hint}");
    // As after `cargo install`: the binary's folder first on PATH, the hint run by a shell.
    let binary = std::path::PathBuf::from(env!("CARGO_BIN_EXE_forebear"));
    let path = format!(
        "{}:{}",
        binary.parent().unwrap().display(),
        std::env::var("PATH").unwrap_or_default()
    );
    let ran = std::process::Command::new("sh")
        .arg("-c")
        .arg(hint)
        .current_dir(scratch.path(""))
        .env("PATH", path)
        .output()
        .unwrap();
    assert_success(&ran);
    assert!(lossy_stdout(&ran).contains("VERIFIED"));
}
