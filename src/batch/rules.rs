//! The rules a plan must follow: safe folder names, valid settings, unique study names. Used by
//! [`super::plan`] while it reads the file, so that every problem is reported at once.

use super::plan::{Collector, PlannedStudy, StudyHead, StudyPlaces, StudyTables, RESERVED_NAMES};
use crate::settings::toml_table::{line_and_column, Placed};
use crate::settings::{Key, Naming, SettingProblem, SettingsInput};
use crate::text::quoted;
use std::collections::BTreeMap;
use std::ops::Range;
use std::path::Path;

/// The device name `name` stands for under the Windows file naming rules (`CON`, `PRN`, `AUX`,
/// `NUL`, `COM0`–`COM9`, `LPT0`–`LPT9`, also with superscript digits 1–3, in any case, alone or
/// before an extension such as `nul.txt`), if it is one.
pub fn windows_device_name(name: &str) -> Option<String> {
    let stem = name.split('.').next().unwrap_or(name).trim_end_matches(' ');
    let upper = stem.to_uppercase();
    let plain = matches!(upper.as_str(), "CON" | "PRN" | "AUX" | "NUL");
    let numbered = ["COM", "LPT"].iter().any(|prefix| {
        upper.strip_prefix(prefix).is_some_and(|rest| {
            let mut digits = rest.chars();
            matches!(
                (digits.next(), digits.next()),
                (Some('0'..='9' | '\u{b9}' | '\u{b2}' | '\u{b3}'), None)
            )
        })
    });
    (plain || numbered).then_some(upper)
}

/// Why `name` cannot be a folder name inside the output folder, if it cannot.
pub fn unsafe_name(name: &str, strict: bool) -> Option<String> {
    if name.is_empty() {
        return Some("is empty".into());
    }
    if name.contains("..") {
        return Some("contains '..'".into());
    }
    if let Some(c) = name.chars().find(|c| matches!(c, '/' | '\\')) {
        return Some(format!("contains '{c}'"));
    }
    if let Some((c, what)) = name
        .chars()
        .find_map(|c| crate::text::hidden_character(c).map(|what| (c, what)))
    {
        return Some(format!("contains {what}, {}", crate::text::code_point(c)));
    }
    if let Some(device) = windows_device_name(name) {
        return Some(format!(
            "is the reserved device name {device} of the Windows file naming rules (with or \
             without an extension, in any case): such a folder cannot be created or copied there, \
             and dossiers must stay portable"
        ));
    }

    if name.starts_with('.') {
        return Some("starts with '.' (a hidden folder)".into());
    }
    if name.len() > 100 {
        return Some("is longer than 100 bytes".into());
    }
    if strict {
        if let Some(c) = name
            .chars()
            .find(|c| !(c.is_ascii_alphanumeric() || matches!(c, '-' | '_' | '.')))
        {
            return Some(format!(
                "contains '{}'; use letters, digits, '-', '_' and '.'",
                c.escape_debug()
            ));
        }
        if RESERVED_NAMES.contains(&name.to_ascii_lowercase().as_str()) {
            return Some("is the name of a file of the batch output".into());
        }
    }
    None
}

pub(super) fn check_study(
    c: &mut Collector,
    head: StudyHead,
    tables: StudyTables<'_>,
    dir: &Path,
    place: &str,
) -> Option<PlannedStudy> {
    let name = head.name.get_ref().clone();
    if let Some(why) = unsafe_name(&name, true) {
        c.at(
            Some(head.name.span()),
            format!(
                "the study name {} {why}: it is used as a folder name",
                quoted(&name)
            ),
        );
    }
    let data = head.data.get_ref().clone();
    if data.trim().is_empty() {
        c.at(
            Some(head.data.span()),
            format!("{place}: 'data' must name a CSV file (relative to the plan file)"),
        );
    } else if let Some((ch, what)) = data
        .chars()
        .find_map(|ch| crate::text::hidden_character(ch).map(|what| (ch, what)))
    {
        c.at(
            Some(head.data.span()),
            format!(
                "{place}: the data file name {} holds {what}, {}; rename the file without it",
                quoted(&data),
                crate::text::code_point(ch)
            ),
        );
    }
    let places = StudyPlaces {
        own: tables.own.spans.clone(),
        defaults: tables.defaults.spans.clone(),
        data: head.data.span(),
        name: head.name.span(),
    };
    let merged = tables.merged();
    let targets = merged.targets.clone().unwrap_or_default();
    let targets_at = Some(places.of(Key::Targets));
    let mut seen: BTreeMap<String, &str> = BTreeMap::new();
    for target in &targets {
        if let Some(why) = unsafe_name(target, false) {
            c.at(
                targets_at.clone(),
                format!(
                    "{place}: the target {} {why}: it is used as a folder name",
                    quoted(target)
                ),
            );
        }
        if let Some(other) = seen.insert(target.to_lowercase(), target) {
            c.at(
                targets_at.clone(),
                format!(
                    "{place}: the target {} is listed twice (as {}; folder names that differ \
                     only in case collide on some file systems)",
                    quoted(target),
                    quoted(other)
                ),
            );
        }
    }
    let settings = match merged.check() {
        Ok(settings) => settings,
        Err(problems) => {
            for p in &problems {
                let own = tables.own.spans.contains_key(&p.key);
                let at_defaults = tables.defaults.place(p, None, "[defaults]");
                // A problem of [defaults] alone is reported there once, not for every study.
                if !own && tables.default_problems.contains(&at_defaults.message) {
                    continue;
                }
                c.problems.push(Placed {
                    span: Some(places.of(p.key)),
                    message: format!("{place}: {}", p.render(Naming::Keys)),
                });
            }
            // The keys at fault at their defaults, so that the columns can still be checked
            // against the data file's header in the same round (`batch --check`).
            without(merged, &problems).check().ok()?
        }
    };
    Some(PlannedStudy {
        name,
        data_path: dir.join(&data),
        data,
        targets,
        settings,
        places,
    })
}

/// `input` without the keys of `problems` (their defaults apply instead); unchanged when a column
/// role is at fault, since the roles are what a header check is for.
fn without(input: SettingsInput, problems: &[SettingProblem]) -> SettingsInput {
    let roles = [Key::Targets, Key::Exclude, Key::Candidates];
    if problems.iter().any(|p| roles.contains(&p.key)) {
        return input;
    }
    problems.iter().fold(input, |input, p| input.without(p.key))
}

pub(super) fn check_duplicates(c: &mut Collector, names: &[(String, Range<usize>)], text: &str) {
    let mut seen: BTreeMap<String, (&str, &Range<usize>)> = BTreeMap::new();
    for (name, span) in names {
        let key = name.to_ascii_lowercase();
        if let Some((other, other_span)) = seen.get(&key) {
            c.problems.push(Placed {
                span: Some(span.clone()),
                message: format!(
                    "the study name {} is used twice (also {} on line {}); names must be unique, \
                     ignoring case, since each is a folder",
                    quoted(name),
                    quoted(other),
                    line_and_column(text, other_span.start).0
                ),
            });
        } else {
            seen.insert(key, (name, span));
        }
    }
}
