//! The examples that end every subcommand's `--help`: real command lines on the demo scenario
//! (`forebear demo` writes its data to `forebear-demo/demo-data/filter_discs.csv`). A test parses
//! each with the command's own definition, so an example cannot name a flag that does not exist.

/// (subcommand, its examples: a command line and what it does).
pub const EXAMPLES: [(&str, &[(&str, &str)]); 12] = [
    (
        "analyze",
        &[
            (
                "forebear analyze filter_discs.csv --target crush_strength --out dossier",
                "the direct causes of crush_strength, with 100 resamples",
            ),
            (
                "forebear analyze filter_discs.csv --target crush_strength --config study.toml --out dossier",
                "the settings and stated knowledge of a study file",
            ),
            (
                "forebear analyze filter_discs.csv --all-targets --replicates 0 --out screen",
                "every column as a target, no resampling (a quick screen)",
            ),
        ],
    ),
    (
        "dependence",
        &[
            (
                "forebear dependence filter_discs.csv --response crush_strength --on kiln_peak_temp",
                "T_n of crush_strength on kiln_peak_temp",
            ),
            (
                "forebear dependence filter_discs.csv --response crush_strength --on pore_density --given kiln_peak_temp --json",
                "the same given another column, as JSON",
            ),
        ],
    ),
    (
        "demo",
        &[
            ("forebear demo", "the demo data and both dossiers in forebear-demo/"),
            (
                "forebear demo --out /tmp/demo --force",
                "again, replacing an earlier demo (kept under a dated name)",
            ),
        ],
    ),
    (
        "batch",
        &[
            (
                "forebear batch nightly.toml --out nightly/today --previous nightly/yesterday",
                "every study of a plan, with drift against last night",
            ),
            (
                "forebear batch nightly.toml --check",
                "check the plan and the data files' headers only",
            ),
            (
                "forebear batch nightly.toml --shard 0/3 --out nightly/shard-0",
                "the first of three shards of a scheduler's array",
            ),
        ],
    ),
    (
        "merge",
        &[
            (
                "forebear merge parts/shard-* --out dossier",
                "one dossier from the parts of a replicate-range array",
            ),
            (
                "forebear merge parts/shard-0/partial.json parts/shard-1/partial.json --out dossier",
                "the same, naming the files",
            ),
        ],
    ),
    (
        "verify",
        &[
            (
                "forebear verify dossier --data filter_discs.csv",
                "re-run the dossier and compare everything",
            ),
            (
                "forebear verify dossier --data filter_discs.csv --replicates-sample 10 --record",
                "re-run 10 replicates only, and write the verdict to the audit trail",
            ),
            (
                "forebear verify dossier --data filter_discs.csv --signers allowed_signers",
                "also require signatures by listed keys",
            ),
        ],
    ),
    (
        "sign",
        &[
            (
                "forebear sign dossier --key ~/.ssh/id_ed25519 --meaning prepared",
                "sign as the person who prepared the dossier",
            ),
            (
                "forebear sign dossier --key reviewer_key --meaning reviewed --signer 'Rui Reviewer'",
                "sign as reviewer, with the name to print",
            ),
        ],
    ),
    (
        "fingerprint",
        &[
            (
                "forebear fingerprint filter_discs.csv",
                "the SHA-256 of the bytes and of the parsed content",
            ),
            (
                "cat filter_discs.csv | forebear fingerprint /dev/stdin --json",
                "of exactly the bytes that arrive on standard input",
            ),
        ],
    ),
    (
        "trail",
        &[
            ("forebear trail .", "show and check forebear-trail.jsonl here"),
            (
                "forebear trail nightly/forebear-trail.jsonl --json",
                "the entries as JSON",
            ),
        ],
    ),
    (
        "qualify",
        &[
            (
                "forebear qualify --out qualification",
                "run every reference case and write the record",
            ),
            ("forebear qualify --list", "list the cases"),
        ],
    ),
    (
        "completions",
        &[
            (
                "forebear completions bash > ~/.local/share/bash-completion/completions/forebear",
                "completions for bash",
            ),
            (
                "forebear completions zsh > ~/.zfunc/_forebear",
                "completions for zsh",
            ),
        ],
    ),
    (
        "man",
        &[
            (
                "forebear man > ~/.local/share/man/man1/forebear.1",
                "install the manual page forebear(1)",
            ),
            (
                "forebear man analyze | man -l -",
                "read the page of one subcommand",
            ),
        ],
    ),
];

/// The text after a subcommand's help: its examples.
pub fn after_help(examples: &[(&str, &str)]) -> String {
    let mut text = String::from("Examples:\n");
    for (line, what) in examples {
        text.push_str(&format!("  {line}\n      {what}\n"));
    }
    text
}

/// The command line of an example as arguments: everything before a pipe or a redirection, split
/// at spaces, with single-quoted parts kept whole (enough for the examples above), starting at the
/// word `forebear`.
pub fn arguments(line: &str) -> Vec<String> {
    let command = line
        .split(" | ")
        .find(|part| part.trim_start().starts_with("forebear"))
        .unwrap_or(line);
    let command = command.split(" > ").next().unwrap_or(command);
    let mut words = Vec::new();
    let mut word = String::new();
    let mut quoted = false;
    for c in command.trim().chars() {
        match c {
            '\'' => quoted = !quoted,
            ' ' if !quoted => {
                if !word.is_empty() {
                    words.push(std::mem::take(&mut word));
                }
            }
            c => word.push(c),
        }
    }
    if !word.is_empty() {
        words.push(word);
    }
    words
}
