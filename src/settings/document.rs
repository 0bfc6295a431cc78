//! Document control: the title, identifier, purpose, version and author of a dossier, as a
//! controlled document carries them (table `[document]` of a study file or plan, or the flags
//! `--title`, `--document-id`, `--purpose`, `--document-version`, `--prepared-by`).
//!
//! They are metadata of the run, not findings: recorded in `result.json` at `run.document` and in
//! the manifest, printed on the dossier's first page and in its running header, and excluded from
//! the result digest with the rest of `run`.

use super::key::{Key, SettingProblem};
use crate::text::{hidden_character, quoted};
use serde::{Deserialize, Serialize};

/// Most characters of the purpose (a sentence or two).
pub const MAX_PURPOSE_CHARS: usize = 500;

/// Most characters of every other field (a title, an identifier, a version, a name).
pub const MAX_FIELD_CHARS: usize = 160;

/// The document control of a dossier: every field optional. As given it is unchecked; inside
/// [`super::Settings`] and in a record each field is checked text (trimmed, not empty, bounded,
/// no control or invisible character).
#[derive(Clone, Debug, Default, Serialize, Deserialize, PartialEq, Eq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct DocumentControl {
    /// The document's title.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub title: Option<String>,
    /// The document or protocol identifier.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub id: Option<String>,
    /// What the analysis is for.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub purpose: Option<String>,
    /// The document's version.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub version: Option<String>,
    /// Who prepared it.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub prepared_by: Option<String>,
}

/// The keys of document control, in the order the dossier prints them.
pub const DOCUMENT_KEYS: [Key; 5] = [
    Key::Title,
    Key::DocumentId,
    Key::Purpose,
    Key::DocumentVersion,
    Key::PreparedBy,
];

impl DocumentControl {
    /// Whether no field is set.
    pub fn is_empty(&self) -> bool {
        DOCUMENT_KEYS.iter().all(|&k| self.field(k).is_none())
    }

    /// The field of `key` (`None` for a key that is not one of document control).
    pub fn field(&self, key: Key) -> Option<&String> {
        self.slot_ref(key).and_then(Option::as_ref)
    }

    fn slot_ref(&self, key: Key) -> Option<&Option<String>> {
        match key {
            Key::Title => Some(&self.title),
            Key::DocumentId => Some(&self.id),
            Key::Purpose => Some(&self.purpose),
            Key::DocumentVersion => Some(&self.version),
            Key::PreparedBy => Some(&self.prepared_by),
            _ => None,
        }
    }

    /// The slot of `key`, for setting it (`None` for a key that is not one of document control).
    pub fn slot(&mut self, key: Key) -> Option<&mut Option<String>> {
        match key {
            Key::Title => Some(&mut self.title),
            Key::DocumentId => Some(&mut self.id),
            Key::Purpose => Some(&mut self.purpose),
            Key::DocumentVersion => Some(&mut self.version),
            Key::PreparedBy => Some(&mut self.prepared_by),
            _ => None,
        }
    }

    /// Each field of `self` where set, else that of `base`.
    pub fn over(self, base: &DocumentControl) -> DocumentControl {
        let b = base.clone();
        DocumentControl {
            title: self.title.or(b.title),
            id: self.id.or(b.id),
            purpose: self.purpose.or(b.purpose),
            version: self.version.or(b.version),
            prepared_by: self.prepared_by.or(b.prepared_by),
        }
    }

    /// The checked document control: every field trimmed, or a problem for each bad field.
    pub fn checked(&self, problems: &mut Vec<SettingProblem>) -> DocumentControl {
        let mut checked = DocumentControl::default();
        for key in DOCUMENT_KEYS {
            let Some(given) = self.field(key) else {
                continue;
            };
            match check_field(key, given) {
                Ok(text) => *checked.slot(key).expect("a document key") = Some(text),
                Err(problem) => problems.push(problem),
            }
        }
        checked
    }
}

/// One field: trimmed, not empty, at most its length, no hidden character.
fn check_field(key: Key, given: &str) -> Result<String, SettingProblem> {
    let text = given.trim();
    let limit = match key {
        Key::Purpose => MAX_PURPOSE_CHARS,
        _ => MAX_FIELD_CHARS,
    };
    let problem = |sentence: String| {
        Err(SettingProblem::of(key)
            .text(sentence)
            .at_value(given.to_string()))
    };
    if text.is_empty() {
        return problem(" is empty; give the text, or leave the key out".to_string());
    }
    if let Some((at, what)) = text
        .chars()
        .enumerate()
        .find_map(|(i, c)| hidden_character(c).map(|what| (i + 1, what)))
    {
        return problem(format!(
            " {} holds {what} at character {at}; document control is one line of visible text",
            quoted(given)
        ));
    }
    let count = text.chars().count();
    if count > limit {
        return problem(format!(
            " is {count} characters long, above the limit of {limit}; shorten it"
        ));
    }
    Ok(text.to_string())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::settings::Naming;

    fn check(key: Key, text: &str) -> Result<String, String> {
        check_field(key, text).map_err(|p| p.render(Naming::Keys))
    }

    #[test]
    fn fields_are_trimmed_and_kept() {
        assert_eq!(check(Key::Title, "  Kiln study  ").unwrap(), "Kiln study");
        assert_eq!(check(Key::DocumentId, "PR-0042").unwrap(), "PR-0042");
    }

    #[test]
    fn an_empty_or_blank_field_is_refused() {
        for text in ["", "   "] {
            let message = check(Key::Title, text).unwrap_err();
            assert!(message.starts_with("document.title is empty"), "{message}");
        }
    }

    #[test]
    fn control_and_invisible_characters_are_refused_and_named() {
        let message = check(Key::PreparedBy, "A. Analyst\u{7}").unwrap_err();
        assert!(
            message.starts_with(
                "document.prepared_by 'A. Analyst\\u{7}' holds a control character at character 11"
            ),
            "{message}"
        );
        assert!(check(Key::Title, "line\nbreak").is_err());
        assert!(check(Key::Title, "a\u{202e}b").is_err());
        assert!(check(Key::Title, "a\u{200b}b").is_err());
    }

    #[test]
    fn the_length_is_bounded_per_field() {
        let long = "x".repeat(MAX_FIELD_CHARS + 1);
        let message = check(Key::DocumentVersion, &long).unwrap_err();
        assert!(message.contains("161 characters long"), "{message}");
        assert!(check(Key::Purpose, &long).is_ok());
        assert!(check(Key::Purpose, &"é".repeat(MAX_PURPOSE_CHARS)).is_ok());
        assert!(check(Key::Purpose, &"é".repeat(MAX_PURPOSE_CHARS + 1)).is_err());
    }

    #[test]
    fn every_problem_is_collected_and_good_fields_kept() {
        let given = DocumentControl {
            title: Some("".into()),
            id: Some(" X-1 ".into()),
            version: Some("1\t2".into()),
            ..DocumentControl::default()
        };
        let mut problems = Vec::new();
        let checked = given.checked(&mut problems);
        assert_eq!(problems.len(), 2);
        assert_eq!(checked.id.as_deref(), Some("X-1"));
        assert!(checked.title.is_none());
    }

    #[test]
    fn fields_given_override_field_by_field() {
        let file = DocumentControl {
            title: Some("From the file".into()),
            id: Some("F-1".into()),
            ..DocumentControl::default()
        };
        let flags = DocumentControl {
            title: Some("From a flag".into()),
            ..DocumentControl::default()
        };
        let both = flags.over(&file);
        assert_eq!(both.title.as_deref(), Some("From a flag"));
        assert_eq!(both.id.as_deref(), Some("F-1"));
    }
}
