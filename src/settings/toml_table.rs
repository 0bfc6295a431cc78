//! Settings from a TOML table — a study file, a plan's `[defaults]` or one `[[study]]` — read key
//! by key, so that every problem is found in one pass and each is placed at its key (line and
//! column, from the parser's spans).

use super::input::SettingsInput;
use super::key::{Key, Naming, SettingProblem};
use crate::text::quoted;
use serde::Deserialize;
use std::collections::BTreeMap;
use std::ops::Range;
use toml::de::{DeTable, DeValue, ValueDeserializer};
use toml::Spanned;

/// A problem in a TOML text, at a byte span where one is known.
#[derive(Clone, Debug, PartialEq)]
pub struct Placed {
    /// Bytes of the text at fault.
    pub span: Option<Range<usize>>,
    /// What is wrong, and what to do.
    pub message: String,
}

/// The settings of one table, with where each key was written.
#[derive(Clone, Debug, Default)]
pub struct SettingsTable {
    /// The values that read.
    pub input: SettingsInput,
    /// The span of each key written in the table.
    pub spans: BTreeMap<Key, Range<usize>>,
    /// The span of the first string equal to each text inside each key's value (the columns a
    /// list or the knowledge table names).
    pub value_spans: BTreeMap<(Key, String), Range<usize>>,
}

impl SettingsTable {
    /// Reads the setting keys of `table`; keys in `other_keys` belong to the caller and are
    /// skipped; any other key, and every value of the wrong type, is a problem (all of them).
    /// `place` names the table in messages (`[defaults]`, `[[study]] "line-a"`).
    pub fn read(
        table: &DeTable<'_>,
        other_keys: &[&str],
        place: &str,
        problems: &mut Vec<Placed>,
    ) -> SettingsTable {
        let mut read = SettingsTable::default();
        for (key, value) in table.iter() {
            let name = key.get_ref().as_ref();
            if other_keys.contains(&name) {
                continue;
            }
            if name == DOCUMENT_TABLE {
                read.read_document(value, other_keys, place, problems);
                continue;
            }
            let Some(setting) = Key::named(name) else {
                problems.push(Placed {
                    span: Some(key.span()),
                    message: unknown_key(name, other_keys, place),
                });
                continue;
            };
            let mut one = DeTable::new();
            one.insert(key.clone(), value.clone());
            let spanned = Spanned::new(value.span(), DeValue::Table(one));
            match SettingsInput::deserialize(ValueDeserializer::from(spanned)) {
                Ok(given) => {
                    read.input = given.over(&read.input);
                    read.spans.insert(setting, key.span());
                    strings_in(value, &mut |text, span| {
                        read.value_spans
                            .entry((setting, text.to_string()))
                            .or_insert(span);
                    });
                }
                Err(e) => problems.push(Placed {
                    span: Some(value.span()),
                    message: in_place(place, &format!("{name}: {}", bounded(e.message()))),
                }),
            }
        }
        read
    }

    /// The table `[document]`: each key its own setting (`document.title`, …), placed at its own
    /// line, so that a flag can override one field and a problem points at the field at fault.
    fn read_document(
        &mut self,
        value: &Spanned<DeValue<'_>>,
        other_keys: &[&str],
        place: &str,
        problems: &mut Vec<Placed>,
    ) {
        let DeValue::Table(fields) = value.get_ref() else {
            problems.push(Placed {
                span: Some(value.span()),
                message: in_place(
                    place,
                    "document must be a table: [document] with the keys title, id, purpose, \
                     version and prepared_by",
                ),
            });
            return;
        };
        for (field, field_value) in fields.iter() {
            let full = format!("{DOCUMENT_TABLE}.{}", field.get_ref());
            let Some(setting) = Key::named(&full) else {
                problems.push(Placed {
                    span: Some(field.span()),
                    message: unknown_key(&full, other_keys, place),
                });
                continue;
            };
            let mut inner = DeTable::new();
            inner.insert(field.clone(), field_value.clone());
            let mut one = DeTable::new();
            one.insert(
                Spanned::new(field.span(), DOCUMENT_TABLE.into()),
                Spanned::new(value.span(), DeValue::Table(inner)),
            );
            let spanned = Spanned::new(value.span(), DeValue::Table(one));
            match SettingsInput::deserialize(ValueDeserializer::from(spanned)) {
                Ok(given) => {
                    self.input = given.over(&self.input);
                    self.spans.insert(setting, field.span());
                    strings_in(field_value, &mut |text, span| {
                        self.value_spans
                            .entry((setting, text.to_string()))
                            .or_insert(span);
                    });
                }
                Err(e) => problems.push(Placed {
                    span: Some(field_value.span()),
                    message: in_place(place, &format!("{full}: {}", bounded(e.message()))),
                }),
            }
        }
    }

    /// A problem of the settings placed at its key (or at `fallback` when the key is not in this
    /// table), named as a study file or plan names it.
    pub fn place(
        &self,
        problem: &SettingProblem,
        fallback: Option<Range<usize>>,
        place: &str,
    ) -> Placed {
        let at_value = problem
            .value
            .as_ref()
            .and_then(|v| self.value_spans.get(&(problem.key, v.clone())));
        Placed {
            span: at_value
                .or(self.spans.get(&problem.key))
                .cloned()
                .or(fallback),
            message: in_place(place, &problem.render(Naming::Keys)),
        }
    }
}

/// The table of document control in a study file or plan table.
const DOCUMENT_TABLE: &str = "document";

/// Calls `found` with every string inside `value` (arrays and tables, at any depth) and its span.
fn strings_in(value: &Spanned<DeValue<'_>>, found: &mut impl FnMut(&str, Range<usize>)) {
    match value.get_ref() {
        DeValue::String(text) => found(text, value.span()),
        DeValue::Array(items) => items.iter().for_each(|v| strings_in(v, found)),
        DeValue::Table(table) => table.values().for_each(|v| strings_in(v, found)),
        _ => {}
    }
}

/// `message` after the name of the table it is about, when there is one (a plan has several
/// tables; a study file is one).
fn in_place(place: &str, message: &str) -> String {
    if place.is_empty() {
        message.to_string()
    } else {
        format!("{place}: {message}")
    }
}

/// The message for a key that a table does not take, with the closest known key.
fn unknown_key(name: &str, other_keys: &[&str], place: &str) -> String {
    let known: Vec<String> = other_keys
        .iter()
        .map(|k| k.to_string())
        .chain(Key::ALL.iter().map(|k| k.name().to_string()))
        .collect();
    let hint = match crate::data::load::closest_names(name, &known).first() {
        Some(close) => format!("did you mean {}? ", quoted(close)),
        None => String::new(),
    };
    let place = if place.is_empty() {
        String::new()
    } else {
        format!(" in {place}")
    };
    format!(
        "unknown key {}{place}; {hint}the keys are: {}",
        quoted(name),
        known.join(", ")
    )
}

/// 1-based line and column (in characters) of byte `offset` of `text`.
pub fn line_and_column(text: &str, offset: usize) -> (usize, usize) {
    let mut offset = offset.min(text.len());
    while !text.is_char_boundary(offset) {
        offset -= 1;
    }
    let before = &text[..offset];
    let line = before.matches('\n').count() + 1;
    let start = before.rfind('\n').map_or(0, |i| i + 1);
    (line, before[start..].chars().count() + 1)
}

/// A parser's message, on one line and of bounded length (it may quote the file's text).
pub fn bounded(message: &str) -> String {
    let line = message.split_whitespace().collect::<Vec<_>>().join(" ");
    crate::text::capped(&crate::text::escaped(&line), 2 * crate::text::ECHO_CHARS)
}

/// Problems of a TOML text as lines `FILE:LINE:COLUMN: message` (the form compilers use), in the
/// order of the text, problems without a place last.
pub fn located(file: &str, text: &str, mut problems: Vec<Placed>) -> Vec<String> {
    problems.sort_by_key(|p| p.span.as_ref().map_or(usize::MAX, |s| s.start));
    problems
        .into_iter()
        .map(|p| match p.span {
            Some(span) => {
                let (line, column) = line_and_column(text, span.start);
                format!("{file}:{line}:{column}: {}", p.message)
            }
            None => format!("{file}: {}", p.message),
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &str) -> (SettingsTable, Vec<String>) {
        let root = DeTable::parse(text).unwrap();
        let mut problems = Vec::new();
        let table = SettingsTable::read(root.get_ref(), &["name"], "study.toml", &mut problems);
        (table, located("study.toml", text, problems))
    }

    #[test]
    fn every_bad_key_and_value_is_reported_at_its_line_and_column() {
        let (table, problems) = read(
            "name = \"x\"\nalpha = \"high\"\nscaling = \"ranked\"\nseeds = 4\nreplicates = 10\n",
        );
        assert_eq!(problems.len(), 3, "{problems:#?}");
        assert!(problems[0].starts_with("study.toml:2:9: study.toml: alpha:"));
        assert!(problems[1].starts_with("study.toml:3:11: study.toml: scaling:"));
        assert!(problems[1].contains("ranked"), "{}", problems[1]);
        assert!(
            problems[2].starts_with("study.toml:4:1: unknown key 'seeds'")
                && problems[2].contains("did you mean 'seed'?"),
            "{}",
            problems[2]
        );
        assert_eq!(table.input.replicates, Some(10));
        assert_eq!(table.spans.len(), 1);
    }

    #[test]
    fn the_document_table_reads_field_by_field_and_places_each() {
        let (table, problems) =
            read("name = \"x\"\n[document]\ntitle = \"Kiln study\"\nauthor = \"A\"\nversion = 2\n");
        assert_eq!(problems.len(), 2, "{problems:#?}");
        assert!(
            problems[0].starts_with("study.toml:4:1: unknown key 'document.author'"),
            "{}",
            problems[0]
        );
        assert!(
            problems[1].starts_with("study.toml:5:11: study.toml: document.version:"),
            "{}",
            problems[1]
        );
        let document = table.input.document.unwrap();
        assert_eq!(document.title.as_deref(), Some("Kiln study"));
        assert_eq!(table.spans.keys().collect::<Vec<_>>(), [&Key::Title]);
        let (_, problems) = read("document = \"Kiln\"\n");
        assert!(
            problems[0].contains("document must be a table"),
            "{problems:?}"
        );
    }

    #[test]
    fn columns_count_characters_not_bytes() {
        assert_eq!(line_and_column("a = 'é'\nb = 1", 9), (2, 1));
        assert_eq!(line_and_column("é = 1", 2), (1, 2));
    }
}
