//! The shell commands a dossier prints: the one that re-runs its analysis and the one that checks
//! it against the data. Words are quoted for a POSIX shell (IEEE Std 1003.1, Shell Command
//! Language, 2.2 Quoting).

use crate::finding::Finding;
use crate::settings::key::Key;

/// The shell command that re-runs this analysis (into a new folder).
pub fn reproduce_command(finding: &Finding) -> String {
    let s = &finding.settings;
    let flag = |key: Key, value: String| format!("{} {value}", key.flag());
    let mut parts = vec![
        "forebear analyze".to_string(),
        data_word(finding),
        flag(Key::Targets, shell_quote(&s.target)),
        flag(Key::Seed, s.seed.to_string()),
        flag(Key::Scaling, s.scaling.name().to_string()),
        flag(Key::Alpha, s.alpha.to_string()),
        flag(Key::Replicates, s.resampling.count.to_string()),
        flag(Key::Resample, s.resampling.kind.name().to_string()),
        flag(Key::StabilityThreshold, s.stability_threshold.to_string()),
        flag(
            Key::StoppingRule,
            s.selection.stopping_rule.name().to_string(),
        ),
        flag(Key::SelectionAlpha, s.selection.alpha.to_string()),
        flag(Key::Permutations, s.selection.permutations.to_string()),
    ];
    if s.resampling.kind == crate::resample::PlanKind::Subsample {
        parts.push(flag(Key::Fraction, s.resampling.fraction.to_string()));
    }
    if !s.excluded.is_empty() {
        parts.push(flag(Key::Exclude, shell_quote(&s.excluded.join(","))));
    }
    if let Some(named) = &s.candidates_named {
        parts.push(flag(Key::Candidates, shell_quote(&named.join(","))));
    }
    let data = &finding.data;
    if data.delimiter != crate::data::Delimiter::Comma {
        parts.push(flag(
            Key::Delimiter,
            data.delimiter.flag_value().to_string(),
        ));
    }
    if s.neighbourhood_orientation {
        parts.push(Key::NeighbourhoodOrientation.flag());
    }
    if data.decimal_comma {
        parts.push(Key::DecimalComma.flag());
    }
    if data.missing_policy != crate::data::MissingPolicy::DropRows {
        parts.push(flag(Key::Missing, data.missing_policy.name().to_string()));
    }
    let tokens = &finding.data.missing_tokens;
    if *tokens != crate::data::LoadOptions::default().missing_tokens {
        // `=` keeps a list that starts with an empty entry (",NA") attached to its flag.
        parts.push(format!(
            "{}={}",
            Key::MissingTokens.flag(),
            shell_quote(&tokens.join(","))
        ));
    }
    if s.knowledge.is_some() {
        // Knowledge has no flags: it comes from a study file (the flags above win over the rest
        // of the file). A plan's knowledge is written into a study file of its own first.
        let file = finding.run.study_file.as_ref().map_or_else(
            || "STUDY_FILE_WITH_THE_KNOWLEDGE".to_string(),
            |f| shell_quote(&f.path),
        );
        parts.push(format!("--config {file}"));
    }
    if let Some(document) = &finding.run.document {
        // Document control is not a setting, but the re-run's dossier should carry it too.
        for key in crate::settings::document::DOCUMENT_KEYS {
            if let Some(text) = document.field(key) {
                parts.push(flag(key, shell_quote(text)));
            }
        }
    }
    parts.push("--out rerun".to_string());
    one_line(&parts.join(" "))
}

/// The command that checks this dossier against the data.
pub fn verify_command(finding: &Finding) -> String {
    one_line(&format!(
        "forebear verify DOSSIER_FOLDER --data {}",
        data_word(finding)
    ))
}

/// The word a command should name the data by when the data were read from standard input: no
/// path was given, and `-` would not name the same bytes again.
pub const DATA_PLACEHOLDER: &str = "DATA_FILE";

/// Whether the analysis read its data from standard input (`-`).
pub fn data_from_stdin(finding: &Finding) -> bool {
    crate::data::source::is_stdin(std::path::Path::new(&finding.run.data_path))
}

/// How the dossier names the data file: its name, or "standard input" for data read from it.
pub fn data_shown(finding: &Finding) -> String {
    match data_from_stdin(finding) {
        true => crate::data::source::STDIN_NAME.to_string(),
        false => finding.data.file.clone(),
    }
}

/// The data path as one shell word, or [`DATA_PLACEHOLDER`] for data read from standard input.
fn data_word(finding: &Finding) -> String {
    match data_from_stdin(finding) {
        true => DATA_PLACEHOLDER.to_string(),
        false => shell_quote(&finding.run.data_path),
    }
}

/// Keeps a command on one line inside a code block (names with line breaks are rare but legal).
fn one_line(command: &str) -> String {
    command.replace(['\n', '\r'], "\u{FFFD}")
}

/// `text` as one word of a POSIX shell command (IEEE Std 1003.1-2024, Shell Command Language,
/// section 2.2): bare when it holds only characters no shell treats specially; in single quotes
/// (2.2.2, a quote inside written `'\''`) otherwise; and in dollar-single-quotes (2.2.4) when it
/// holds a control, bidirectional or invisible character ([`crate::text::hidden_character`]),
/// each byte of such a character written as a three-digit octal escape, so that the command
/// stays on one line, shows what it names, and names exactly that text.
pub fn shell_quote(text: &str) -> String {
    if !text.is_empty()
        && text
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || "-_./,=".contains(c))
    {
        return text.to_string();
    }
    if !text
        .chars()
        .any(|c| crate::text::hidden_character(c).is_some())
    {
        return format!("'{}'", text.replace('\'', r"'\''"));
    }
    let mut out = String::from("$'");
    for c in text.chars() {
        match c {
            '\\' | '\'' => {
                out.push('\\');
                out.push(c);
            }
            c if crate::text::hidden_character(c).is_some() => {
                for byte in c.encode_utf8(&mut [0; 4]).bytes() {
                    out.push_str(&format!("\\{byte:03o}"));
                }
            }
            c => out.push(c),
        }
    }
    out.push('\'');
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shell_words_name_exactly_their_text() {
        assert_eq!(shell_quote("data/x.csv"), "data/x.csv");
        assert_eq!(shell_quote("it's.csv"), r"'it'\''s.csv'");
        assert_eq!(shell_quote("a\nb.csv"), r"$'a\012b.csv'");
        assert_eq!(shell_quote("x\u{202e}'\\1"), r"$'x\342\200\256\'\\1'");
    }
}
